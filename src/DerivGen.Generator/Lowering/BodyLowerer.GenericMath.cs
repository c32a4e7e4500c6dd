using System;
using System.Collections.Generic;
using System.Linq;
using DerivGen.Generator.Diagnostics;
using DerivGen.Generator.Model;
using Microsoft.CodeAnalysis;
using Microsoft.CodeAnalysis.Operations;

namespace DerivGen.Generator.Lowering;

// Generic math: a method generic over one type parameter T constrained to the floating-point interfaces of
// System.Numerics. Its T values are ScalarType.Generic in the IR, and its generated methods are generic over the same T
// with the same constraints, so one loss serves float and double. What maps onto the IR:
//   T.Exp, T.Log, T.Sqrt, T.Sin, … (the functions of MathFunctions)  → IrCall on MathHost.Generic (written T.Exp)
//   T.One, T.Zero, T.NegativeOne, T.NaN, T.PositiveInfinity, …        → constants of T
//   T.Pi, T.E, T.Tau and other static properties of T                 → read as written (constant in the variables)
//   T.CreateChecked / CreateTruncating / CreateSaturating(c or e)     → a constant of T, or a conversion to T
//   + - * / unary -, comparisons, ==, T.IsNaN / IsFinite / …          → as for double
// Exactness of the value: the generated code calls what the user's code calls (T.Exp is float.Exp at T = float, which
// is MathF.Exp), with the user's grouping; constants are written T.CreateTruncating(c), c rounded to T, which is what
// the user's T.CreateChecked(c) gives for float and double. Derivative constants: see ExpressionBuilder.IsFoldable.
// Generated code names the type parameter T, so the user's must be called T too.
internal sealed partial class BodyLowerer
{
    /// <summary>The interfaces of System.Numerics that make T a floating-point type (one of them is needed).</summary>
    private static readonly string[] FloatingInterfaces =
    {
        "IFloatingPointIeee754", "IBinaryFloatingPointIeee754", "IFloatingPoint", "IFloatingPointConstants", "IRootFunctions",
        "IExponentialFunctions", "ILogarithmicFunctions", "ITrigonometricFunctions", "IHyperbolicFunctions", "IPowerFunctions",
    };

    /// <summary>How a generic method's T must be declared; the advice of every refusal of a declaration.</summary>
    internal const string GenericRule =
        "a differentiated generic method has one type parameter, named T, constrained to IFloatingPointIeee754<T> (or to INumberBase<T> with the System.Numerics function interfaces it uses), and returns T";

    /// <summary>Whether the type is a type parameter of a method (the T of a generic method or helper).</summary>
    internal static bool IsMethodTypeParameter(ITypeSymbol? type) => type is ITypeParameterSymbol { TypeParameterKind: TypeParameterKind.Method };

    /// <summary>Whether the IR type is a floating-point one (the types a method may return and differentiate in).</summary>
    internal static bool IsFloating(ScalarType? type) => type is ScalarType.Double or ScalarType.Single or ScalarType.Generic;

    /// <summary>
    /// Why a generic method cannot be differentiated (null when it can), and the constraints its generated methods
    /// declare: its one type parameter, named T, constrained to make it a floating-point type.
    /// </summary>
    internal static string? GenericDeclarationProblem(IMethodSymbol method, out string constraints)
    {
        constraints = string.Empty;
        if (method.TypeParameters.Length != 1)
        {
            return "has " + method.TypeParameters.Length.ToString(System.Globalization.CultureInfo.InvariantCulture) + " type parameters";
        }

        ITypeParameterSymbol t = method.TypeParameters[0];
        if (t.Name != "T")
        {
            return "names its type parameter '" + t.Name + "' (the generated methods declare T: rename it T)";
        }

        HashSet<string> interfaces = NumericsInterfaces(t);
        if (!interfaces.Contains("INumberBase") || !FloatingInterfaces.Any(interfaces.Contains))
        {
            return "constrains T to " + (t.ConstraintTypes.Length == 0 ? "nothing" : string.Join(", ", t.ConstraintTypes.Select(c => c.ToDisplayString())))
                + ", which does not make it a floating-point type (add IFloatingPointIeee754<T>)";
        }

        if (t.ConstraintTypes.FirstOrDefault(c => c is not INamedTypeSymbol { TypeKind: TypeKind.Interface }) is { } other)
        {
            return "constrains T to the class '" + other.ToDisplayString() + "' (the generated methods copy interface constraints only)";
        }

        var parts = new List<string>();
        if (t.HasUnmanagedTypeConstraint)
        {
            parts.Add("unmanaged");
        }
        else if (t.HasValueTypeConstraint)
        {
            parts.Add("struct");
        }
        else if (t.HasReferenceTypeConstraint)
        {
            parts.Add("class");
        }
        else if (t.HasNotNullConstraint)
        {
            parts.Add("notnull");
        }

        parts.AddRange(t.ConstraintTypes.Select(c => c.ToDisplayString(SymbolDisplayFormat.FullyQualifiedFormat)));
        if (t.HasConstructorConstraint)
        {
            parts.Add("new()");
        }

        constraints = string.Join(", ", parts);
        return null;
    }

    /// <summary>The names (without arity) of the System.Numerics interfaces T is constrained to, directly or not.</summary>
    private static HashSet<string> NumericsInterfaces(ITypeParameterSymbol t)
    {
        var names = new HashSet<string>(StringComparer.Ordinal);
        foreach (INamedTypeSymbol constraint in t.ConstraintTypes.OfType<INamedTypeSymbol>())
        {
            foreach (INamedTypeSymbol type in new[] { constraint }.Concat(constraint.AllInterfaces))
            {
                if (type.ContainingNamespace?.ToDisplayString() == "System.Numerics" && type.TypeArguments.Length > 0
                    && SymbolEqualityComparer.Default.Equals(type.TypeArguments[0], t))
                {
                    names.Add(type.Name);
                }
            }
        }

        return names;
    }

    /// <summary>A member of a System.Numerics interface reached through T (<c>T.Exp</c>, <c>T.One</c>, <c>a * b</c> on T).</summary>
    private static bool IsGenericMathMember(ISymbol? member) =>
        member is { IsStatic: true, ContainingType: { TypeKind: TypeKind.Interface, TypeArguments.Length: > 0 } type }
        && IsMethodTypeParameter(type.TypeArguments[0]) && type.ContainingNamespace?.ToDisplayString() == "System.Numerics";

    /// <summary>An operator of T (its operands T): lowered as the built-in operator of double is.</summary>
    private static bool IsGenericOperator(IMethodSymbol? method) => method is { MethodKind: MethodKind.UserDefinedOperator } && IsGenericMathMember(method);

    /// <summary>A declaration whose differentiated values are of a containing type's type parameter: refused with advice
    /// that works (the type parameter moves to the method).</summary>
    internal static void CheckContainingTypeParameter(IMethodSymbol method, Location location, List<DiagnosticInfo> diagnostics)
    {
        if (method.Parameters.Select(p => p.Type).Concat(new[] { method.ReturnType })
            .FirstOrDefault(t => t is ITypeParameterSymbol { TypeParameterKind: TypeParameterKind.Type }) is ITypeParameterSymbol typeParameter)
        {
            diagnostics.Add(DiagnosticInfo.Create(DiagnosticDescriptors.UnsupportedConstruct, location,
                "The type parameter '" + typeParameter.Name + "' of the containing type '" + method.ContainingType.ToDisplayString() + "'",
                "a generic type is not differentiated over its type parameter; declare it on the method instead, in a type that is not generic: static T "
                + method.Name + "<T>(T x, …) where T : IFloatingPointIeee754<T>"));
        }
    }

    /// <summary>T.One, T.Zero, T.NegativeOne and the IEEE specials as constants of T; any other static property of T
    /// (T.Pi, T.E, T.Epsilon, …) read as written.</summary>
    private IrExpression? LowerGenericProperty(IPropertyReferenceOperation property)
    {
        if (!IsMethodTypeParameter(property.Property.Type))
        {
            return Unsupported(property, $"the property 'T.{property.Property.Name}'", "only the static properties of T that are T values are read");
        }

        double? value = property.Property.Name switch
        {
            "Zero" or "AdditiveIdentity" => 0.0,
            "One" or "MultiplicativeIdentity" => 1.0,
            "NegativeOne" => -1.0,
            "NegativeZero" => -0.0,
            "NaN" => double.NaN,
            "PositiveInfinity" => double.PositiveInfinity,
            "NegativeInfinity" => double.NegativeInfinity,
            _ => null,
        };
        return value is { } constant
            ? new IrConstant(BitConverter.DoubleToInt64Bits(constant), ScalarType.Generic)
            : new IrExternal("T." + Identifiers.Escape(property.Property.Name), ScalarType.Generic);
    }

    /// <summary>Unary minus and plus on T.</summary>
    private IrExpression? LowerGenericUnary(IUnaryOperation unary)
    {
        IrExpression? operand = LowerExpression(unary.Operand);
        return operand is null ? null
            : unary.OperatorKind == UnaryOperatorKind.Minus ? new IrNegate(operand, ScalarType.Generic)
            : operand;
    }

    /// <summary>A static method of T: T.CreateChecked & co., the supported math functions; null with
    /// <paramref name="handled"/> false when the call is not one of T's.</summary>
    private IrExpression? TryLowerGenericCall(IInvocationOperation invocation, out bool handled)
    {
        IMethodSymbol target = invocation.TargetMethod;
        handled = IsGenericMathMember(target);
        if (!handled)
        {
            return null;
        }

        if (target.Name is "CreateChecked" or "CreateTruncating" or "CreateSaturating" && invocation.Arguments.Length == 1)
        {
            return LowerGenericCreate(invocation, invocation.Arguments[0].Value);
        }

        if (!MathFunctions.TryGet(target.Name, invocation.Arguments.Length, out MathFunction function)
            || ScalarTypeOf(target.ReturnType) is not ({ } returnType and (ScalarType.Generic or ScalarType.Int32))
            || invocation.Arguments.Any(a => a.Parameter is null || !IsMethodTypeParameter(a.Parameter.Type)))
        {
            return Unsupported(invocation, $"the call to 'T.{target.Name}'",
                "the functions of T that are differentiated are those named like the functions of System.Math listed in the README (T.Exp, T.Log, T.Sqrt, T.Sin, T.Pow, …), and T.CreateChecked, T.CreateTruncating and T.CreateSaturating; '"
                + target.Name + "' is not one of them: compute it with those functions of T in this method");
        }

        if (MissingDerivativeInterface(function, invocation) is { } missing)
        {
            return Unsupported(invocation, $"the call to 'T.{target.Name}'",
                "its derivative needs " + missing + " of T; add that interface to T's constraints (or constrain T to IFloatingPointIeee754<T>)");
        }

        var arguments = new IrExpression[invocation.Arguments.Length];
        bool ok = true;
        foreach (IArgumentOperation argument in invocation.Arguments)
        {
            if (LowerExpression(argument.Value) is { } lowered)
            {
                arguments[argument.Parameter!.Ordinal] = lowered;
            }
            else
            {
                ok = false;
            }
        }

        if (!ok)
        {
            return null;
        }

        var call = new IrCall(function, MathHost.Generic, arguments.ToEquatableArray(), returnType);
        if (MathFunctions.NonSmoothConvention(function) is { } convention && DependsOnVariable(call))
        {
            _diagnostics.Add(DiagnosticInfo.Create(DiagnosticDescriptors.NonSmoothFunction, invocation.Syntax.GetLocation(), "T." + target.Name, convention));
        }

        return call;
    }

    /// <summary>T.CreateChecked(v) and its siblings: a constant of T for a constant v (c rounded to T), else the
    /// conversion of an int, float or double value (which rounds alike for float and double whichever of the three).</summary>
    private IrExpression? LowerGenericCreate(IInvocationOperation invocation, IOperation value)
    {
        if (value.ConstantValue.HasValue && value.ConstantValue.Value is double or float or int)
        {
            double constant = value.ConstantValue.Value switch
            {
                double d => d,
                float f => f,
                _ => (int)value.ConstantValue.Value!,
            };
            return new IrConstant(BitConverter.DoubleToInt64Bits(constant), ScalarType.Generic);
        }

        if (value.Type is null || ScalarTypeOf(value.Type) is not (ScalarType.Int32 or ScalarType.Single or ScalarType.Double or ScalarType.Generic))
        {
            return Unsupported(invocation, $"the conversion '{Text(invocation)}'", "convert an int, float or double value to T");
        }

        return LowerExpression(value) is { } operand ? Convert(operand, ScalarType.Generic) : null;
    }

    /// <summary>The System.Numerics interface the derivative of <paramref name="function"/> calls into that T's constraints
    /// lack (T.Sqrt for asin′, T.Log for ∂aᵇ/∂b, comparisons for the kinks), or null.</summary>
    private string? MissingDerivativeInterface(MathFunction function, IInvocationOperation invocation)
    {
        if (_method.TypeParameters.Length != 1)
        {
            return null;
        }

        (string Interface, string Member)? needed = function switch
        {
            MathFunction.Asin or MathFunction.Acos or MathFunction.Asinh or MathFunction.Acosh => ("IRootFunctions", "T.Sqrt"),
            MathFunction.Pow when invocation.Arguments.Length == 2 && !invocation.Arguments[1].Value.ConstantValue.HasValue => ("ILogarithmicFunctions", "T.Log"),
            MathFunction.Abs or MathFunction.Max or MathFunction.Min or MathFunction.Clamp => ("IComparisonOperators", "the comparisons"),
            _ => null,
        };
        return needed is { } need && !NumericsInterfaces(_method.TypeParameters[0]).Contains(need.Interface)
            ? need.Member + " (" + need.Interface + "<T>" + (need.Interface == "IComparisonOperators" ? ", in INumber<T>" : string.Empty) + ")"
            : null;
    }

    /// <summary>A call from a generic method whose derivatives are read from buffers of T on the stack needs T unmanaged.</summary>
    private IrExpression? GenericCallBufferProblem(IInvocationOperation invocation)
    {
        if (!IsMethodTypeParameter(invocation.TargetMethod.ReturnType) || _method.TypeParameters.Length != 1
            || _method.TypeParameters[0].HasUnmanagedTypeConstraint)
        {
            return null;
        }

        return Unsupported(invocation, $"the call to '{invocation.TargetMethod.Name}' with T values",
            "its derivatives are read from buffers of T on the stack, which needs T unmanaged: declare 'where T : unmanaged, IFloatingPointIeee754<T>'");
    }
}
