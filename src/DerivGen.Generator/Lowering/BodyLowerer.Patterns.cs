using System;
using System.Collections.Generic;
using DerivGen.Generator.Diagnostics;
using DerivGen.Generator.Model;
using Microsoft.CodeAnalysis;
using Microsoft.CodeAnalysis.Operations;

namespace DerivGen.Generator.Lowering;

// Patterns, switch expressions, enums and the floating-point predicates, desugared into the IR's core: a pattern is a
// bool expression of comparisons (IrCompare, IrLogical), a switch expression a chain of IrConditional, an enum value
// its underlying int constant, double.IsNaN & co. comparisons with ±∞. Nothing here is new to Differentiation.
//
// Exactness: the IR has no side effects, so testing the switched-on value in several comparisons (instead of once, as
// C# does) gives the same result; the comparisons keep C#'s order and short-circuit (`and` is &&, `or` is ||), and an
// arm's value is selected only where its arm is the first that matches, so it is evaluated only there (the scheduler
// never computes a throwing node ahead of its guard).
internal sealed partial class BodyLowerer
{
    /// <summary>The IR type of a value: a scalar, or an <c>enum</c> whose underlying type is int (its value is that int).</summary>
    internal static ScalarType? ValueTypeOf(ITypeSymbol type) =>
        ScalarTypeOf(type) ?? (IsIntEnum(type) ? ScalarType.Int32 : null);

    private static bool IsIntEnum(ITypeSymbol type) =>
        type is INamedTypeSymbol { TypeKind: TypeKind.Enum, EnumUnderlyingType.SpecialType: SpecialType.System_Int32 };

    /// <summary>A read of an enum parameter: its int value, <c>((int)p)</c> (a constant of the call).</summary>
    private static IrExpression EnumParameter(IParameterSymbol parameter) =>
        new IrExternal("((int)" + Identifiers.Escape(parameter.Name) + ")", ScalarType.Int32);

    /// <summary><c>value is pattern</c>: a bool expression (a condition on a variable is a kink where it is used as one).</summary>
    private IrExpression? LowerIsPattern(IIsPatternOperation isPattern)
    {
        IrExpression? subject = LowerExpression(isPattern.Value);
        return subject is null ? null : LowerPattern(isPattern.Pattern, subject);
    }

    /// <summary>The condition under which <paramref name="subject"/> matches <paramref name="pattern"/>, or null (reported).</summary>
    private IrExpression? LowerPattern(IPatternOperation pattern, IrExpression subject)
    {
        switch (pattern)
        {
            case IDiscardPatternOperation:
                return True;

            case IConstantPatternOperation { Value: var constant }:
            {
                IrExpression? value = LowerExpression(constant);
                if (value is null)
                {
                    return null;
                }

                if (value is not IrConstant)
                {
                    return Unsupported(constant, "the pattern '" + Text(pattern) + "'", "use constants in patterns");
                }

                // C#: a floating-point constant pattern that is NaN matches NaN (double.IsNaN); any other, x == c.
                return IsNaNConstant((IrConstant)value)
                    ? new IrCompare(ComparisonOperator.NotEqual, subject, subject)
                    : new IrCompare(ComparisonOperator.Equal, subject, Convert(value, subject.Type));
            }

            case IRelationalPatternOperation { Value: var bound } relational when ComparisonOf(relational.OperatorKind) is { } comparison:
            {
                IrExpression? value = LowerExpression(bound);
                return value is null ? null : new IrCompare(comparison, subject, Convert(value, subject.Type));
            }

            case IBinaryPatternOperation { OperatorKind: BinaryOperatorKind.And or BinaryOperatorKind.Or } binary:
            {
                IrExpression? left = LowerPattern(binary.LeftPattern, subject);
                IrExpression? right = LowerPattern(binary.RightPattern, subject);
                return left is null || right is null ? null
                    : new IrLogical(binary.OperatorKind == BinaryOperatorKind.And ? LogicalOperator.And : LogicalOperator.Or, left, right);
            }

            case INegatedPatternOperation negated:
                return LowerPattern(negated.Pattern, subject) is { } inner ? new IrLogical(LogicalOperator.Not, inner, null) : null;

            default:
                return Unsupported(pattern, "the pattern '" + Text(pattern) + "'",
                    "use constant (1, Kind.A), relational (< 0, >= 1), and/or/not and discard (_) patterns; bind the value to a local before the switch instead of in the pattern");
        }
    }

    private static bool IsNaNConstant(IrConstant constant) =>
        constant.Type is ScalarType.Double or ScalarType.Single && double.IsNaN(BitConverter.Int64BitsToDouble(constant.Bits));

    /// <summary>
    /// <c>value switch { p1 when g1 => v1, …, _ => vn }</c> as <c>c1 ? v1 : c2 ? v2 : … : vn</c>. A switch expression
    /// that can find no arm (it would throw) is refused unless the compiler proves it exhaustive; then the last arm is
    /// taken wherever the others are not.
    /// </summary>
    private IrExpression? LowerSwitchExpression(ISwitchExpressionOperation switchExpression, ScalarType type)
    {
        IrExpression? subject = LowerExpression(switchExpression.Value);
        if (subject is null)
        {
            return null;
        }

        int count = switchExpression.Arms.Length;
        if (count == 0)
        {
            return Unsupported(switchExpression, "the switch expression '" + Text(switchExpression) + "'", "give it arms, the last one '_ => …'");
        }

        var conditions = new List<IrExpression?>();
        var values = new List<IrExpression?>();
        bool ok = true;
        bool dependsOnVariable = false;
        bool dropsThrowingArm = false;
        foreach (ISwitchExpressionArmOperation arm in switchExpression.Arms)
        {
            IrExpression? condition = LowerPattern(arm.Pattern, subject);
            if (arm.Guard is { } guard)
            {
                IrExpression? loweredGuard = LowerExpression(guard);
                condition = condition is null || loweredGuard is null ? null : new IrLogical(LogicalOperator.And, condition, loweredGuard);
            }

            if ((arm.Value is IConversionOperation { Operand: IThrowOperation armThrow } ? armThrow : arm.Value) is IThrowOperation guarded
                && arm == switchExpression.Arms[count - 1] && arm.Pattern is IDiscardPatternOperation && arm.Guard is null && count > 1
                && TryGuardThrowingArm(switchExpression, guarded, conditions) == true)
            {
                // A check run first (BodyLowerer.Throws.cs): where it passes, one of the other arms matches.
                dropsThrowingArm = true;
                break;
            }

            IrExpression? value = (arm.Value is IConversionOperation { Operand: IThrowOperation thrown } ? thrown : arm.Value) is IThrowOperation throwing
                ? Unsupported(throwing, "the arm that throws ('" + Text(throwing) + "')",
                    "the generated methods make a check that throws only at the top of the method, before anything that can throw: check the value there ('if (" + Text(switchExpression.Value) + " is not (…)) throw …;', the patterns of the other arms) and give this arm a value ('_ => double.NaN')")
                : LowerExpression(arm.Value);
            ok &= condition is not null && value is not null;
            dependsOnVariable |= condition is not null && DependsOnVariable(condition);
            conditions.Add(condition);
            values.Add(value is null ? null : Convert(value, type));
        }

        if (!ok)
        {
            return null;
        }

        ISwitchExpressionArmOperation last = switchExpression.Arms[count - 1];
        bool lastAlwaysMatches = (last.Pattern is IDiscardPatternOperation && last.Guard is null) || switchExpression.IsExhaustive;
        if (dropsThrowingArm)
        {
            count--; // the guard threw wherever no other arm matches
        }
        if (!lastAlwaysMatches)
        {
            return Unsupported(switchExpression, "the switch expression '" + Text(switchExpression) + "', which throws where no arm matches,",
                "end it with a discard arm '_ => …' so that every value finds an arm");
        }

        if (dependsOnVariable)
        {
            _diagnostics.Add(DiagnosticInfo.Create(DiagnosticDescriptors.NonSmoothFunction, switchExpression.Syntax.GetLocation(),
                Text(switchExpression.Value) + " switch { … }",
                "an arm's condition depends on a differentiation variable, so the derivative is that of the arm taken and jumps where the arm changes"));
        }

        IrExpression result = values[count - 1]!;
        for (int i = count - 2; i >= 0; i--)
        {
            result = new IrConditional(conditions[i]!, values[i]!, result, type);
        }

        return result;
    }

    /// <summary>
    /// <c>double.IsNaN</c>, <c>IsFinite</c>, <c>IsInfinity</c>, <c>IsPositiveInfinity</c>, <c>IsNegativeInfinity</c> (and
    /// float's) as comparisons that give the same bool for every value, NaN and ±∞ included (IEEE 754: NaN compares
    /// unequal and unordered to everything, itself included). Null when the call is not one of them.
    /// </summary>
    private IrExpression? TryLowerPredicate(IInvocationOperation invocation, out bool handled)
    {
        IMethodSymbol target = invocation.TargetMethod;
        handled = false;
        if (!target.IsStatic || invocation.Arguments.Length != 1
            || (target.ContainingType?.SpecialType is not (SpecialType.System_Double or SpecialType.System_Single) && !IsGenericMathMember(target))
            || target.Name is not ("IsNaN" or "IsFinite" or "IsInfinity" or "IsPositiveInfinity" or "IsNegativeInfinity")
            || ScalarTypeOf(target.Parameters[0].Type) is not ({ } type and (ScalarType.Double or ScalarType.Single or ScalarType.Generic)))
        {
            return null;
        }

        handled = true;
        if (LowerExpression(invocation.Arguments[0].Value) is not { } operand)
        {
            return null;
        }

        IrExpression x = Convert(operand, type);
        var positive = new IrConstant(BitConverter.DoubleToInt64Bits(double.PositiveInfinity), type);
        var negative = new IrConstant(BitConverter.DoubleToInt64Bits(double.NegativeInfinity), type);
        return target.Name switch
        {
            "IsNaN" => new IrCompare(ComparisonOperator.NotEqual, x, x),
            "IsPositiveInfinity" => new IrCompare(ComparisonOperator.Equal, x, positive),
            "IsNegativeInfinity" => new IrCompare(ComparisonOperator.Equal, x, negative),
            "IsInfinity" => new IrLogical(LogicalOperator.Or, new IrCompare(ComparisonOperator.Equal, x, positive),
                new IrCompare(ComparisonOperator.Equal, x, negative)),
            _ => new IrLogical(LogicalOperator.And, new IrCompare(ComparisonOperator.Greater, x, negative),  // IsFinite: NaN and ±∞ fail one of them
                new IrCompare(ComparisonOperator.Less, x, positive)),
        };
    }

    /// <summary>
    /// Whether a condition on a variable can change its value at a finite point (a kink, DG0007). A comparison with ±∞
    /// or of a value with itself (what double.IsNaN/IsFinite/IsInfinity lower to) changes only where the value is NaN
    /// or infinite, where there is no derivative to speak of; any other condition on a variable is a kink.
    /// </summary>
    private bool IsKink(IrExpression condition) => condition switch
    {
        IrCompare compare when IsInfinite(compare.Left) || IsInfinite(compare.Right) || compare.Left.Equals(compare.Right) => false,
        IrLogical logical => IsKink(logical.Left) || (logical.Right is not null && IsKink(logical.Right)),
        _ => DependsOnVariable(condition),
    };

    private static bool IsInfinite(IrExpression expression) =>
        expression is IrConstant { Type: ScalarType.Double or ScalarType.Single or ScalarType.Generic } constant
        && double.IsInfinity(BitConverter.Int64BitsToDouble(constant.Bits));
}
