using System;
using System.Collections.Generic;
using System.Globalization;
using System.Linq;
using DerivGen.Generator.Emit;
using DerivGen.Generator.Model;
using Microsoft.CodeAnalysis;
using Microsoft.CodeAnalysis.CSharp;
using Microsoft.CodeAnalysis.CSharp.Syntax;
using Microsoft.CodeAnalysis.Operations;

namespace DerivGen.Generator.Lowering;

// Checks that throw, used as guards: `if (c) throw new X(…);` (with or without an else), `ThrowIfNull`/`ThrowIf…`
// helpers of the exception types, a switch statement's default section that only throws, and LINQ's own checks
// (an empty source of Average/Max/Min, a negative count of Enumerable.Range). Each becomes an IrGuard, which every
// generated method runs first, in the user's order, before its span checks and before it writes anything.
//
// The rule that makes that exact: the user's method is pure apart from its exceptions, so it throws exactly the first
// exception its evaluation meets. A guard may therefore run first only if nothing the method evaluates before it can
// throw: it must sit in the method's own body (not in a loop, a branch, a local function or a helper), and every
// statement before it must be free of data reads that can fail, int divisions, Clamp and calls of other methods
// (MayThrow; guards before it are fine, they run first too, in order). Its condition and its throw must be
// expressible over the parameters, constants and data (the generated methods have the same parameter names); the
// exception is created by the same constructor or helper with every argument written out. Anything else is refused
// with a rewrite that is accepted: the check moved to the top of the method.
internal sealed partial class BodyLowerer
{
    private const string GuardAdvice =
        "checks are kept where nothing before them can throw: put it at the top of the method, before any other loop, branch or data read, as 'if (condition) throw new …(…);' or a ThrowIf… helper on the parameters and data, or, to check each element, as a loop of its own that only checks ('for (int i = 0; i < w.Length; i++) if (w[i] < 0) throw new …(…);')";

    /// <summary>The guards of the method, in source order.</summary>
    public List<IrGuard> Guards { get; } = new();

    /// <summary>The statement lists that enclose the one being lowered, outermost (the method's body) first.</summary>
    private readonly List<List<IrStatement>> _outerStatements = new();

    /// <summary>The counted loops being lowered (their headers, without bodies), outermost first; null for another loop.</summary>
    private readonly List<IrFor?> _countedLoops = new();

    /// <summary>While a LINQ call is lowered: how many statements there were before it.</summary>
    private int? _linqStatementsBefore;

    /// <summary>Depth of nested statement lists being lowered (loop and branch bodies); 0 in the method's own body.</summary>
    private int _nestedDepth;

    /// <summary>Static readonly arrays with an initializer of known length (their text as <see cref="DataText"/> gives it).</summary>
    private Dictionary<string, (int Length, string File)>? _knownLengths;

    /// <summary>Why a guard cannot run first here, or null where it can.</summary>
    private string? WhyNoGuardHere()
    {
        if (_helpers.Chain.Count > 1)
        {
            return "in a helper (a method without [Differentiate] called by one)";
        }

        if (_inlining.Count > 0)
        {
            return "in an inlined local function";
        }

        if (_nestedDepth > 0 || _loop is not null || _variableBranchDepth > 0)
        {
            return "inside a loop or branch";
        }

        // A LINQ call's own statements (the count of a Zip) come after its checks, which run first.
        int before = _linqStatementsBefore ?? _statements.Count;
        return _statements.Take(before).Any(MayThrow) ? "after a statement that can throw (a data read, a division of ints, a call)" : null;
    }

    /// <summary>Adds a guard once (a loop body is lowered twice; the same check twice would change nothing).</summary>
    private void AddGuard(IrGuard guard)
    {
        if (!Guards.Contains(guard))
        {
            Guards.Add(guard);
        }
    }

    /// <summary>
    /// The last arm of a switch expression, <c>_ =&gt; throw new X(…)</c>, in the method's body or in the body of one
    /// top-level counted loop: the guard "the loop runs and no other arm matches" — exact where the other arms'
    /// patterns read only parameters, constants and data (so the first evaluation decides), nothing before the
    /// expression can throw (before the loop, earlier in the iteration, earlier in the statement). Null where it cannot
    /// be a guard (reported), else true.
    /// </summary>
    private bool? TryGuardThrowingArm(ISwitchExpressionOperation switchExpression, IThrowOperation thrown, List<IrExpression?> earlier)
    {
        string? where = _helpers.Chain.Count > 1 ? "in a helper" : _inlining.Count > 0 ? "in an inlined local function"
            : _variableBranchDepth > 0 || _jumps > 0 || _returnFlag is not null ? "in a branch or after a jump"
            : _nestedDepth == 0 ? (_statements.Any(MayThrow) ? "after a statement that can throw" : null)
            : _nestedDepth == 1 && _countedLoops.Count == 1 && _countedLoops[0] is { } loop && _outerStatements.Count == 1
                ? (_outerStatements[0].Any(MayThrow) || _statements.Any(s => MayThrowInLoop(s, loop)) ? "after a statement that can throw" : null)
                : "in a nested loop or a branch";
        where ??= ThrowsBeforeInStatement(switchExpression) || WhyNotInlinedHere(switchExpression) is not null ? "after a part of its statement that can throw, or under a condition" : null;
        if (where is not null || earlier.Any(c => c is null))
        {
            return null;
        }

        IrExpression matched = earlier.Count == 0 ? False : earlier.Aggregate((a, b) => new IrLogical(LogicalOperator.Or, a!, b!))!;
        IrExpression condition = Not(matched);
        if (_nestedDepth == 1 && _countedLoops[0] is { } counted)
        {
            condition = new IrLogical(LogicalOperator.And,
                new IrCompare(counted.Inclusive ? ComparisonOperator.LessOrEqual : ComparisonOperator.Less, counted.Start, counted.End), condition);
        }

        if (IrText(condition) is not { } text || ThrowText(thrown) is not { } statement)
        {
            return null;
        }

        AddGuard(new IrGuard(text, statement));
        return true;
    }

    /// <summary><c>if (c) throw …;</c> (the throw alone in its branch): a guard, then the else branch (if any) as ordinary code.</summary>
    private bool TryLowerThrowingIf(IConditionalOperation branch)
    {
        if (SingleThrow(branch.WhenTrue) is not { } thrown)
        {
            return false;
        }

        if (WhyNoGuardHere() is { } where)
        {
            Unsupported(thrown, "the throw statement " + where, GuardAdvice);
            return true;
        }

        string? condition = LowerExpression(branch.Condition) is { } lowered ? GuardText(lowered, branch.Condition) : null;
        string? statement = ThrowText(thrown);
        if (condition is not null && statement is not null)
        {
            AddGuard(new IrGuard(condition, statement));
        }

        if (branch.WhenFalse is { } otherwise)
        {
            LowerStatements(otherwise is IBlockOperation block ? block.Operations : new[] { otherwise }, isTopLevel: false);
        }

        return true;
    }

    /// <summary>
    /// <c>for (int i = start; i &lt; end; i++) { if (c) throw …; … }</c> whose body only checks: one guard, the loop
    /// itself, run first like any other (its conditions may read the index). False for any other loop.
    /// </summary>
    private bool TryLowerCheckingLoop(IForLoopOperation loop)
    {
        IReadOnlyList<IOperation> body = loop.Body is IBlockOperation block ? block.Operations : new[] { loop.Body };
        if (body.Count == 0 || !body.All(s => s is IConditionalOperation { WhenFalse: null } check && SingleThrow(check.WhenTrue) is not null)
            || loop.Before.Length != 1 || loop.Before[0] is not IVariableDeclarationGroupOperation { Declarations.Length: 1 } group
            || group.Declarations[0].Declarators.Length != 1 || group.Declarations[0].Declarators[0] is not { } declarator
            || declarator.Symbol.Type.SpecialType != SpecialType.System_Int32 || declarator.GetVariableInitializer()?.Value is not { } startValue
            || loop.Condition is not IBinaryOperation { OperatorKind: BinaryOperatorKind.LessThan or BinaryOperatorKind.LessThanOrEqual, LeftOperand: ILocalReferenceOperation counter } condition
            || !SymbolEqualityComparer.Default.Equals(counter.Local, declarator.Symbol)
            || loop.AtLoopBottom.Length != 1 || !IsIncrementByOne(loop.AtLoopBottom[0], declarator.Symbol) || AssignsLocal(loop.Body, declarator.Symbol))
        {
            return false;
        }

        if (WhyNoGuardHere() is { } where)
        {
            Unsupported(loop, "the loop of checks that throw " + where, GuardAdvice);
            return true;
        }

        // The index gets a name of its own: the check runs in the generated methods' scope, next to their locals.
        string index = FreshName("checked" + char.ToUpperInvariant(declarator.Symbol.Name[0]) + declarator.Symbol.Name.Substring(1));
        _localNames[declarator.Symbol] = index;
        string? start = LowerExpression(startValue) is { } s ? GuardText(s, startValue) : null;
        string? end = LowerExpression(condition.RightOperand) is { } e ? GuardText(e, condition.RightOperand) : null;
        var checks = new List<string>();
        foreach (IConditionalOperation check in body.Cast<IConditionalOperation>())
        {
            string? text = LowerExpression(check.Condition) is { } c ? GuardText(c, check.Condition, index) : null;
            string? statement = ThrowText(SingleThrow(check.WhenTrue)!);
            if (text is null || statement is null)
            {
                return true;
            }

            checks.Add("if (" + text + ") { " + statement + " }");
        }

        if (start is not null && end is not null)
        {
            AddGuard(new IrGuard(null, "for (int " + index + " = " + start + "; " + index + (condition.OperatorKind == BinaryOperatorKind.LessThan ? " < " : " <= ")
                + end + "; " + index + "++) { " + string.Join(" ", checks) + " }"));
        }

        return true;
    }

    private static IThrowOperation? SingleThrow(IOperation? statement) => statement switch
    {
        IThrowOperation thrown => thrown,
        IExpressionStatementOperation { Operation: IThrowOperation thrown } => thrown,
        IBlockOperation { Operations.Length: 1 } block => SingleThrow(block.Operations[0]),
        _ => null,
    };

    /// <summary><c>ArgumentNullException.ThrowIfNull(x)</c>, <c>ArgumentOutOfRangeException.ThrowIfNegative(x)</c> and the like.</summary>
    private void LowerThrowHelper(IInvocationOperation invocation)
    {
        IMethodSymbol target = invocation.TargetMethod;
        if (WhyNoGuardHere() is { } where)
        {
            Unsupported(invocation, $"the throw helper '{target.ContainingType.Name}.{target.Name}' " + where, GuardAdvice);
            return;
        }

        var arguments = new List<string>();
        foreach (IArgumentOperation argument in invocation.Arguments.OrderBy(a => a.Parameter?.Ordinal ?? int.MaxValue))
        {
            if (ArgumentText(argument.Value) is not { } text)
            {
                Unsupported(argument.Value, $"the argument '{Text(argument.Value)}' of '{target.ContainingType.Name}.{target.Name}'",
                    "pass a parameter, a constant or data (its Length, an element at a constant index) so that the generated methods can make the same check");
                return;
            }

            arguments.Add(text);
        }

        string typeArguments = target.IsGenericMethod ? "<" + string.Join(", ", target.TypeArguments.Select(FullyQualified)) + ">" : "";
        AddGuard(new IrGuard(null, FullyQualified(target.ContainingType) + "." + target.Name + typeArguments + "(" + string.Join(", ", arguments) + ");"));
    }

    /// <summary>A switch statement whose default section only throws: the guard "no case matches".</summary>
    private bool TryGuardDefault(List<(IrExpression? Condition, List<IOperation> Body, ISwitchCaseOperation Case)> sections, ISwitchOperation switchStatement)
    {
        int index = sections.FindIndex(s => s.Condition is null && s.Body.Count == 1 && SingleThrow(s.Body[0]) is not null);
        if (index < 0 || sections.Count < 2)
        {
            return false;
        }

        IThrowOperation thrown = SingleThrow(sections[index].Body[0])!;
        if (WhyNoGuardHere() is { } where)
        {
            Unsupported(thrown, "the throw statement " + where, GuardAdvice);
            return true;
        }

        IrExpression? any = null;
        foreach (var section in sections.Where(s => s.Condition is not null))
        {
            any = any is null ? section.Condition! : new IrLogical(LogicalOperator.Or, any, section.Condition!);
        }

        string? condition = any is null ? null : GuardText(Not(any), switchStatement.Value);
        string? statement = ThrowText(thrown);
        if (condition is null || statement is null)
        {
            return true;
        }

        AddGuard(new IrGuard(condition, statement));
        // After the guard one of the other sections matches: the last of them needs no test.
        sections.RemoveAt(index);
        var last = sections[sections.Count - 1];
        sections[sections.Count - 1] = (null, last.Body, last.Case);
        return false;
    }

    /// <summary>The condition as C#, or null (reported) where it reads something the generated methods do not have.</summary>
    private string? GuardText(IrExpression condition, IOperation where, string? index = null)
    {
        string? text = IrText(condition, index);
        if (text is null)
        {
            Unsupported(where, $"the condition '{Text(where)}' of a check that throws",
                "a check that throws may read the parameters, constants and data (not locals or function calls); write it on the parameters at the top of the method");
        }

        return text;
    }

    /// <summary><c>throw new X(args);</c> with the constructor's type fully qualified and every argument written out, or null (reported).</summary>
    private string? ThrowText(IThrowOperation thrown)
    {
        IOperation? exception = thrown.Exception is IConversionOperation { IsImplicit: true } conversion ? conversion.Operand : thrown.Exception;
        if (exception is IObjectCreationOperation { Constructor: { } constructor, Initializer: null } creation)
        {
            var arguments = new List<string>();
            foreach (IArgumentOperation argument in creation.Arguments.OrderBy(a => a.Parameter?.Ordinal ?? int.MaxValue))
            {
                if (ArgumentText(argument.Value) is not { } text)
                {
                    Unsupported(argument.Value, $"the argument '{Text(argument.Value)}' of the exception",
                        "pass constants (a string, nameof(…)), parameters or data so that the generated methods create the same exception");
                    return null;
                }

                arguments.Add(text);
            }

            return "throw new " + FullyQualified(constructor.ContainingType) + "(" + string.Join(", ", arguments) + ");";
        }

        Unsupported(thrown, "the throw statement '" + Text(thrown) + "'", "throw a new exception there ('throw new ArgumentException(\"…\", nameof(x));') so that the generated methods can throw the same");
        return null;
    }

    /// <summary>An argument of an exception's constructor or a throw helper as C#: a constant, a parameter, an enum or number over them.</summary>
    private string? ArgumentText(IOperation value)
    {
        if (value.ConstantValue.HasValue)
        {
            return value.ConstantValue.Value switch
            {
                null => value.Type is { IsReferenceType: true } type ? "(" + FullyQualified(type) + "?)null" : "null", // the file is #nullable enable
                string s => SymbolDisplay.FormatLiteral(s, quote: true),
                bool b => b ? "true" : "false",
                int i => i.ToString(CultureInfo.InvariantCulture),
                double d => "(" + Literals.CSharp(d, ScalarType.Double) + ")",
                float f => "(" + Literals.CSharp(f, ScalarType.Single) + ")",
                _ => null,
            };
        }

        switch (value)
        {
            case IConversionOperation { IsImplicit: true } conversion:
                return ArgumentText(conversion.Operand); // the call converts it again, to the same parameter type
            case IParameterReferenceOperation { Parameter: var parameter } when SymbolEqualityComparer.Default.Equals(parameter.ContainingSymbol, _method)
                && !_boundParameters.ContainsKey(parameter.OriginalDefinition):
                return Identifiers.Escape(parameter.Name);
            case IFieldReferenceOperation or IPropertyReferenceOperation when DataText(value) is { } data:
                return data;
        }

        return value.Type is { } valueType && ValueTypeOf(valueType) is not null && LowerExpression(value) is { } lowered ? IrText(lowered) : null;
    }

    /// <summary>An IR expression as C# over parameters, constants and data (fully parenthesised), or null if it reads a local or calls a function.</summary>
    internal static string? IrText(IrExpression expression, string? index = null)
    {
        switch (expression)
        {
            case IrLocal local when local.Name == index:
                return local.Name;
            case IrConstant constant:
                string literal = constant.Type is ScalarType.Int32 or ScalarType.Boolean
                    ? Literals.CSharp(constant.Bits, constant.Type)
                    : Literals.CSharp(BitConverter.Int64BitsToDouble(constant.Bits), constant.Type);
                return literal.StartsWith("-", StringComparison.Ordinal) ? "(" + literal + ")" : literal;
            case IrParameter parameter:
                return parameter.Name;
            case IrExternal external:
                return external.Text;
            case IrNegate negate:
                return IrText(negate.Operand, index) is { } operand ? "(-" + operand + ")" : null;
            case IrConvert convert:
                return IrText(convert.Operand, index) is { } converted ? "((" + ExpressionWriter.TypeKeyword(convert.Type) + ")" + converted + ")" : null;
            case IrBinary binary:
                return Combine(binary.Left, binary.Operator switch
                {
                    BinaryOperator.Add => " + ",
                    BinaryOperator.Subtract => " - ",
                    BinaryOperator.Multiply => " * ",
                    _ => " / ",
                }, binary.Right);
            case IrCompare compare:
                return Combine(compare.Left, compare.Operator switch
                {
                    ComparisonOperator.Less => " < ",
                    ComparisonOperator.LessOrEqual => " <= ",
                    ComparisonOperator.Greater => " > ",
                    ComparisonOperator.GreaterOrEqual => " >= ",
                    ComparisonOperator.Equal => " == ",
                    _ => " != ",
                }, compare.Right);
            case IrLogical { Operator: LogicalOperator.Not } not:
                return IrText(not.Left, index) is { } negated ? "(!" + negated + ")" : null;
            case IrLogical logical when logical.Right is not null:
                return Combine(logical.Left, logical.Operator == LogicalOperator.And ? " && " : " || ", logical.Right);
            case IrConditional conditional:
                return IrText(conditional.Condition, index) is { } c && IrText(conditional.WhenTrue, index) is { } t && IrText(conditional.WhenFalse, index) is { } f
                    ? "(" + c + " ? " + t + " : " + f + ")" : null;
            case IrElement element:
                var indices = element.Indices.Select(i => IrText(i, index)).ToList();
                return indices.Any(i => i is null) ? null : element.Data + "[" + string.Join(", ", indices) + "]";
            default:
                return null;
        }

        string? Combine(IrExpression left, string op, IrExpression right) =>
            IrText(left, index) is { } l && IrText(right, index) is { } r ? "(" + l + op + r + ")" : null;
    }

    /// <summary>
    /// Whether evaluating the statement can throw: a data read not proven in range, a division of ints, Clamp, a call of
    /// another method, a Length of data that may be null. Conservative: false only where nothing can throw.
    /// </summary>
    private bool MayThrow(IrStatement statement) => statement switch
    {
        IrAssign assign => MayThrow(assign.Value, null),
        IrReturn returned => MayThrow(returned.Value, null),
        IrOutput output => MayThrow(output.Index, null) || MayThrow(output.Value, null),
        IrIf branch => MayThrow(branch.Condition, null) || branch.Then.Any(MayThrow) || branch.Else.Any(MayThrow),
        IrFor loop => MayThrow(loop.Start, null) || MayThrow(loop.End, null) || loop.Body.Any(s => MayThrowInLoop(s, loop)),
        IrWhile loop => loop.Setup.Any(MayThrow) || MayThrow(loop.Condition, null) || loop.Body.Any(MayThrow),
        _ => false,
    };

    private bool MayThrowInLoop(IrStatement statement, IrFor loop) => statement is IrAssign assign ? MayThrow(assign.Value, loop) : MayThrow(statement);

    private bool MayThrow(IrExpression expression, IrFor? loop) => expression switch
    {
        IrElement element => !InRange(element, loop) || element.Indices.Any(i => MayThrow(i, loop)),
        IrExternal external => (external.Text.EndsWith(".Length", StringComparison.Ordinal) && KnownLength(external.Text.Substring(0, external.Text.Length - 7)) is null)
            || external.Text.Contains(".GetLength("),
        IrBinary binary => (binary.Operator == BinaryOperator.Divide && binary.Type == ScalarType.Int32) || MayThrow(binary.Left, loop) || MayThrow(binary.Right, loop),
        IrNegate negate => MayThrow(negate.Operand, loop),
        IrConvert convert => MayThrow(convert.Operand, loop),
        IrCall call => call.Function == MathFunction.Clamp || call.Arguments.Any(a => MayThrow(a, loop)),
        IrUserCall => true,
        IrCompare compare => MayThrow(compare.Left, loop) || MayThrow(compare.Right, loop),
        IrLogical logical => MayThrow(logical.Left, loop) || (logical.Right is not null && MayThrow(logical.Right, loop)),
        IrConditional conditional => MayThrow(conditional.Condition, loop) || MayThrow(conditional.WhenTrue, loop) || MayThrow(conditional.WhenFalse, loop),
        _ => false,
    };

    /// <summary>
    /// An element provably in range: a constant index (or Length − c) into an array of known length, or the index of
    /// the loop <c>for (k = c ≥ 0; k &lt; data.Length; k++)</c> into that data.
    /// </summary>
    private bool InRange(IrElement element, IrFor? loop)
    {
        if (element.Indices.Count != 1)
        {
            return false;
        }

        IrExpression index = element.Indices[0];
        if (_safeReads.Contains(element))
        {
            return true;
        }

        if (loop is not null && index is IrLocal local && local.Name == loop.Index && !loop.Inclusive
            && loop.Start is IrConstant { Bits: >= 0 } && loop.End is IrExternal end && end.Text == element.Data + ".Length")
        {
            return true;
        }

        int? length = KnownLength(element.Data);
        if (loop is not null && index is IrLocal counter && counter.Name == loop.Index && !loop.Inclusive && loop.Start is IrConstant { Bits: >= 0 }
            && loop.End is IrExternal { Text: var bound } && bound.EndsWith(".Length", StringComparison.Ordinal)
            && KnownLength(bound.Substring(0, bound.Length - 7)) is { } boundLength && length is not null && boundLength <= length)
        {
            return true; // for (k = 0; k < Z.Length; k++) reading data[k], both static readonly arrays, Z no longer
        }

        return length is not null && index switch
        {
            IrConstant { Bits: var c } => c >= 0 && c < length,
            IrBinary { Operator: BinaryOperator.Subtract, Left: IrExternal lengthRead, Right: IrConstant { Bits: var c } } =>
                lengthRead.Text == element.Data + ".Length" && c >= 1 && c <= length,
            _ => false,
        };
    }

    /// <summary>The length of a static readonly array declared with an initializer in a type without a static constructor, else null.</summary>
    private int? KnownLength(string data)
    {
        if (_knownLengths is null)
        {
            _knownLengths = new Dictionary<string, (int, string)>(StringComparer.Ordinal);
            foreach (IFieldReferenceOperation reference in _root?.Descendants().OfType<IFieldReferenceOperation>() ?? Enumerable.Empty<IFieldReferenceOperation>())
            {
                IFieldSymbol field = reference.Field;
                if (field is { IsStatic: true, IsReadOnly: true, Type: IArrayTypeSymbol { Rank: 1 } } && DataText(reference) is { } text
                    && field.ContainingType.StaticConstructors.All(c => c.IsImplicitlyDeclared)
                    && field.DeclaringSyntaxReferences.Length == 1 && field.DeclaringSyntaxReferences[0].GetSyntax() is VariableDeclaratorSyntax { Initializer.Value: var value })
                {
                    InitializerExpressionSyntax? initializer = value switch
                    {
                        InitializerExpressionSyntax list => list,
                        ArrayCreationExpressionSyntax creation => creation.Initializer,
                        ImplicitArrayCreationExpressionSyntax implicitCreation => implicitCreation.Initializer,
                        _ => null,
                    };
                    if (initializer is not null)
                    {
                        _knownLengths[text] = (initializer.Expressions.Count, field.DeclaringSyntaxReferences[0].SyntaxTree.FilePath);
                    }
                }
            }
        }

        if (!_knownLengths.TryGetValue(data, out var known))
        {
            return null;
        }

        _helpers.Reads.Add(known.File); // the lowering depends on that initializer: an edit of its file lowers again
        return known.Length;
    }
}
