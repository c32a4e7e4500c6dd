using System;
using System.Collections.Generic;
using System.Linq;
using DerivGen.Generator.Diagnostics;
using DerivGen.Generator.Model;
using Microsoft.CodeAnalysis;
using Microsoft.CodeAnalysis.Operations;

namespace DerivGen.Generator.Lowering;

// LINQ over arrays in its numeric forms, lowered to loops: Sum, Average, Max and Min (with or without a selector) over
// an array of data or variables, Enumerable.Range(start, count), Select(x => …) and Zip(ys, (x, y) => …) or Zip(ys)
// (tuples read as .First/.Second). The loop is an IrFor placed before the statement that contains the call (where its
// statements run exactly once, as an inlined local function's: WhyNotInlinedHere), accumulating into a fresh local
// that the expression reads. Lambdas are inlined like local functions: their parameters bound to fresh locals.
//
// Exactness, against .NET 10's System.Linq (checked bit for bit on random arrays in Numerics/Linq):
// - Sum: from +0.0, left to right (no vectorised path for double: the runtime's vectorised Sum is for int and long);
// - Average of an array itself: that sum / count; with a selector, or over Select/Zip/Range: the sum starts from the
//   first element (so the mean of {-0.0} is -0.0 there and +0.0 for the array), / count;
// - Max: NaN is below every number (NaN only if all are), the first of equal values is kept (-0.0 before 0.0);
// - Min: any NaN gives NaN (LINQ stops at it: refused where a later element could throw), the first of equal values;
// - Average, Max and Min of an empty source throw InvalidOperationException, Enumerable.Range a negative count
//   ArgumentOutOfRangeException: proven impossible (a static readonly array of known length), or a guard that calls
//   the same LINQ method on an empty array (BodyLowerer.Throws.cs), so the type and message are LINQ's own;
// - Zip stops at the shorter source; when the first is longer LINQ computes one more element of it (refused where
//   that element could throw).
internal sealed partial class BodyLowerer
{
    /// <summary>A sequence: how many elements, and how to lower element k (into the current statements).</summary>
    /// <param name="Count">The number of elements (a local where it is computed).</param>
    /// <param name="CountSource">The same number over parameters, constants and data, for a guard.</param>
    private sealed record LinqSequence(IrExpression Count, IrExpression CountSource, Func<IrExpression, IrExpression[]?> Element, bool IsArray, bool ElementMayThrow, int? KnownCount);

    /// <summary>Tuple-typed lambda parameters (Zip without a selector), bound to their elements.</summary>
    private readonly Dictionary<IParameterSymbol, IrExpression[]> _boundTuples = new(SymbolEqualityComparer.Default);

    /// <summary>Reads a LINQ loop makes with its own index, below the count: in range by construction.</summary>
    private readonly HashSet<IrElement> _safeReads = new();

    private static bool IsEnumerable(INamedTypeSymbol? type) => type is { Name: "Enumerable" } && type.ToDisplayString() == "System.Linq.Enumerable";

    /// <summary>Sum, Average, Max or Min of a supported sequence as a loop; <paramref name="handled"/> is false for any other shape.</summary>
    private IrExpression? TryLowerLinq(IInvocationOperation invocation, out bool handled)
    {
        IMethodSymbol target = invocation.TargetMethod;
        handled = false;
        bool hasSelector = invocation.Arguments.Length == 2;
        if (target.Name is not ("Sum" or "Average" or "Max" or "Min") || target.ReturnType.SpecialType != SpecialType.System_Double
            || invocation.Arguments.Length is not (1 or 2)
            || (hasSelector ? target.Parameters[1].Type is not INamedTypeSymbol { TypeArguments.Length: 2 } func || func.TypeArguments[1].SpecialType != SpecialType.System_Double
                : target.Parameters[0].Type is not INamedTypeSymbol { TypeArguments.Length: 1 } enumerable || enumerable.TypeArguments[0].SpecialType != SpecialType.System_Double))
        {
            return null;
        }

        string name = "Enumerable." + target.Name;
        if (WhyNotInlinedHere(invocation) is { } where)
        {
            handled = true;
            return Unsupported(invocation, "the call to '" + name + "' " + where,
                "its loop would run where the expression is not evaluated; compute it before, into a local ('double v = …;'), and use the local");
        }

        int? outerStart = _linqStatementsBefore;
        _linqStatementsBefore = _statements.Count;
        try
        {
            return LowerLinqLoop(invocation, target, name, hasSelector, out handled);
        }
        finally
        {
            _linqStatementsBefore = outerStart;
        }
    }

    private IrExpression? LowerLinqLoop(IInvocationOperation invocation, IMethodSymbol target, string name, bool hasSelector, out bool handled)
    {
        handled = false;
        LinqSequence? source = Sequence(invocation.Arguments[0].Value, out string? refusal);
        IAnonymousFunctionOperation? selector = hasSelector ? Lambda(invocation.Arguments[1].Value) : null;
        if (source is null || (hasSelector && (selector is null || selector.Symbol.Parameters.Length != 1)))
        {
            if (refusal is not null || (hasSelector && selector is null))
            {
                handled = true;
                return Unsupported(invocation, "the call to '" + name + "'", refusal ?? "pass the selector as a lambda written in the call ('x => …'), or " + LinqAdvice(invocation, target.Name).Replace(LinqPrefix, ""));
            }

            return null;
        }

        bool mayThrow = source.ElementMayThrow || (selector is not null && LambdaMayThrow(selector));
        if (target.Name == "Min" && mayThrow)
        {
            handled = true;
            return Unsupported(invocation, "the call to '" + name + "' over elements that can throw",
                "LINQ's Min stops at the first NaN and does not compute the elements after it; " + LinqAdvice(invocation, target.Name).Replace(LinqPrefix, ""));
        }

        handled = true;
        bool needsElement = target.Name != "Sum";
        if (needsElement && (source.KnownCount ?? 0) == 0 && !EmptyGuard(invocation, source, target.Name))
        {
            return null;
        }

        // The loop: acc = 0; for (k = 0; k < count; k++) { element; acc = combine(acc, element); }
        string accumulator = FreshName(target.Name == "Average" ? "mean" : target.Name.ToLowerInvariant());
        string index = FreshName("k");
        var k = new IrLocal(index, ScalarType.Int32);
        AssignLocal(accumulator, Zero(ScalarType.Double));
        List<IrStatement> outer = _statements;
        _statements = new List<IrStatement>();
        _nestedDepth++;
        IrExpression? value;
        try
        {
            IrExpression[]? element = source.Element(k);
            value = element is null ? null : selector is null ? element[0] : InlineLambda(selector, new[] { element });
            if (value is not null)
            {
                value = Convert(value, ScalarType.Double);
                var acc = new IrLocal(accumulator, ScalarType.Double);
                IrExpression first = new IrCompare(ComparisonOperator.Equal, k, new IrConstant(0, ScalarType.Int32));
                IrExpression sum = new IrBinary(BinaryOperator.Add, acc, value, ScalarType.Double);
                AssignLocal(accumulator, target.Name switch
                {
                    "Sum" => sum,
                    "Average" when source.IsArray && selector is null => sum,
                    "Average" => new IrConditional(first, value, sum, ScalarType.Double),
                    "Max" => new IrConditional(
                        new IrLogical(LogicalOperator.Or, new IrLogical(LogicalOperator.Or, first, new IrCompare(ComparisonOperator.Greater, value, acc)),
                            new IrCompare(ComparisonOperator.NotEqual, acc, acc)), value, acc, ScalarType.Double),
                    _ => new IrConditional(
                        new IrLogical(LogicalOperator.Or, first, new IrLogical(LogicalOperator.And, new IrCompare(ComparisonOperator.Equal, acc, acc),
                            new IrLogical(LogicalOperator.Or, new IrCompare(ComparisonOperator.Less, value, acc), new IrCompare(ComparisonOperator.NotEqual, value, value)))),
                        value, acc, ScalarType.Double),
                });
            }

            if (value is not null)
            {
                outer.Add(new IrFor(index, Zero(ScalarType.Int32), source.Count, false, _statements.ToEquatableArray()));
            }
        }
        finally
        {
            _nestedDepth--;
            _statements = outer;
        }

        if (value is null)
        {
            return null;
        }

        if (target.Name is "Max" or "Min" && DependsOnVariable(value))
        {
            _diagnostics.Add(DiagnosticInfo.Create(DiagnosticDescriptors.NonSmoothFunction, invocation.Syntax.GetLocation(), name,
                "the derivative is that of the element selected (the first of equal ones) and jumps where another element takes over"));
        }

        IrExpression result = new IrLocal(accumulator, ScalarType.Double);
        return target.Name == "Average" ? new IrBinary(BinaryOperator.Divide, result, new IrConvert(source.Count, ScalarType.Double), ScalarType.Double) : result;
    }

    /// <summary>The guard of an empty source (LINQ's own exception, from the same method on an empty array); false if refused (reported).</summary>
    private bool EmptyGuard(IInvocationOperation invocation, LinqSequence source, string method)
    {
        string? where = WhyNoGuardHere() ?? (ThrowsBeforeInStatement(invocation) ? "after a part of its statement that can throw" : null);
        string? count = IrText(source.CountSource);
        if (where is not null || count is null)
        {
            Unsupported(invocation, "the call to 'Enumerable." + method + "' " + (where ?? "over a source whose length is not known here"),
                "LINQ throws on an empty source, and the generated methods make that check first, where nothing before it can throw: "
                + "compute it at the top of the method, over data or parameters, or " + LinqAdvice(invocation, method).Replace(LinqPrefix, ""));
            return false;
        }

        Guards.Add(new IrGuard(count + " == 0", "global::System.Linq.Enumerable." + method + "(global::System.Array.Empty<double>());"));
        return true;
    }

    /// <summary>The sequence an operation stands for, or null (with a refusal, or null for a shape that is not LINQ over arrays).</summary>
    private LinqSequence? Sequence(IOperation operation, out string? refusal)
    {
        refusal = null;
        while (operation is IConversionOperation { IsImplicit: true } conversion)
        {
            operation = conversion.Operand;
        }

        if (operation.Type is IArrayTypeSymbol { Rank: 1, ElementType: var elementType } && ScalarTypeOf(elementType) is (ScalarType.Double or ScalarType.Int32) and var type
            && DataText(operation) is { } data)
        {
            var length = new IrExternal(data + ".Length", ScalarType.Int32);
            return new LinqSequence(length, length, k =>
            {
                var read = new IrElement(data, new[] { k }.ToEquatableArray(), type);
                _safeReads.Add(read);
                return new IrExpression[] { read };
            }, IsArray: true, ElementMayThrow: false, KnownLength(data));
        }

        if (operation is IArrayCreationOperation { DimensionSizes.Length: 1, Initializer: { } initializer, Type: IArrayTypeSymbol { ElementType: var createdType } }
            && ScalarTypeOf(createdType) is (ScalarType.Double or ScalarType.Int32) and var created)
        {
            return WrittenArray(initializer, created, out refusal);
        }

        if (operation is not IInvocationOperation { TargetMethod: { } method } invocation || !IsEnumerable(method.ContainingType))
        {
            return null;
        }

        switch (method.Name)
        {
            case "Range" when invocation.Arguments.Length == 2:
            {
                IrExpression? start = LowerExpression(invocation.Arguments[0].Value);
                IrExpression? count = LowerExpression(invocation.Arguments[1].Value);
                if (start is null || count is null)
                {
                    refusal = "Enumerable.Range's start and count must be int expressions of parameters, constants and data";
                    return null;
                }

                int? known = count is IrConstant { Bits: var c } ? (int)c : count is IrExternal { Text: var t } && t.EndsWith(".Length", StringComparison.Ordinal) ? KnownLength(t.Substring(0, t.Length - 7)) : null;
                bool cannotThrow = start is IrConstant { Bits: >= 0 and <= 1 << 20 } && (count is IrConstant { Bits: >= 0 and <= 1 << 20 } || (count is IrExternal e && e.Text.EndsWith(".Length", StringComparison.Ordinal)));
                if (!cannotThrow)
                {
                    string? where = WhyNoGuardHere() ?? (ThrowsBeforeInStatement(invocation) ? "after a part of its statement that can throw" : null);
                    if (where is not null || IrText(start) is not { } startText || IrText(count) is not { } countText)
                    {
                        refusal = "Enumerable.Range throws for a negative count, and that check is kept only where nothing before it can throw "
                            + "(it is " + (where ?? "over locals") + "); use Enumerable.Range(0, data.Length) or write the for loop: `for (int i = start; i < start + count; i++)`";
                        return null;
                    }

                    Guards.Add(new IrGuard(countText + " < 0 || (long)" + startText + " + " + countText + " - 1 > int.MaxValue",
                        "global::System.Linq.Enumerable.Range(" + startText + ", " + countText + ");"));
                }

                return new LinqSequence(count, count, k => new[] { new IrBinary(BinaryOperator.Add, start, k, ScalarType.Int32) }, IsArray: false, ElementMayThrow: false, known);
            }

            case "Select" when invocation.Arguments.Length == 2:
            {
                LinqSequence? inner = Sequence(invocation.Arguments[0].Value, out refusal);
                IAnonymousFunctionOperation? lambda = Lambda(invocation.Arguments[1].Value);
                if (inner is null || lambda is null || lambda.Symbol.Parameters.Length != 1)
                {
                    return null; // Select((x, i) => …) and the like: the advice is the for loop
                }

                return new LinqSequence(inner.Count, inner.CountSource, k => inner.Element(k) is { } element ? InlineLambda(lambda, new[] { element }) is { } value ? new[] { value } : null : null,
                    IsArray: false, inner.ElementMayThrow || LambdaMayThrow(lambda), inner.KnownCount);
            }

            case "Zip" when invocation.Arguments.Length is 2 or 3:
            {
                LinqSequence? first = Sequence(invocation.Arguments[0].Value, out refusal);
                LinqSequence? second = first is null ? null : Sequence(invocation.Arguments[1].Value, out refusal);
                IAnonymousFunctionOperation? lambda = invocation.Arguments.Length == 3 ? Lambda(invocation.Arguments[2].Value) : null;
                if (first is null || second is null || (invocation.Arguments.Length == 3 && lambda is null))
                {
                    refusal ??= first is null || second is null ? null : "Zip takes its result selector as a lambda written in the call ('(x, y) => …')";
                    return null;
                }

                if (first.ElementMayThrow)
                {
                    refusal = "when its first source is the longer, Zip computes one more element of it, which here could throw; write the for loop over the shorter length";
                    return null;
                }

                // Zip stops at the shorter source: the count is kept in a local, computed before the loop.
                IrExpression countSource = new IrConditional(new IrCompare(ComparisonOperator.LessOrEqual, first.CountSource, second.CountSource),
                    first.CountSource, second.CountSource, ScalarType.Int32);
                IrExpression count = BindToLocal("count", new IrConditional(new IrCompare(ComparisonOperator.LessOrEqual, first.Count, second.Count),
                    first.Count, second.Count, ScalarType.Int32));
                int? known = first.KnownCount is { } a && second.KnownCount is { } b ? Math.Min(a, b) : null;
                return new LinqSequence(count, countSource, k =>
                {
                    IrExpression[]? x = first.Element(k);
                    IrExpression[]? y = x is null ? null : second.Element(k);
                    if (x is null || y is null || x.Length != 1 || y.Length != 1)
                    {
                        return null;
                    }

                    return lambda is null ? new[] { x[0], y[0] } : InlineLambda(lambda, new[] { x, y }) is { } value ? new[] { value } : null;
                }, IsArray: false, first.ElementMayThrow || second.ElementMayThrow || (lambda is not null && LambdaMayThrow(lambda)), known);
            }

            default:
                return null;
        }
    }

    /// <summary>
    /// An array written in the call (<c>new[] { w0, w1 }</c>): its values computed once each, in order, into locals
    /// before the loop (where C# creates the array, before LINQ starts), element k read as
    /// <c>k == 0 ? e0 : k == 1 ? e1 : …</c> (nothing allocated).
    /// </summary>
    private LinqSequence? WrittenArray(IArrayInitializerOperation initializer, ScalarType type, out string? refusal)
    {
        refusal = initializer.ElementValues.Length == 0 ? "an empty array written in the call: write the value itself (0 for a sum)" : null;
        if (refusal is not null)
        {
            return null;
        }

        var values = new List<IrExpression>();
        foreach (IOperation element in initializer.ElementValues)
        {
            if (LowerExpression(element) is not { } value)
            {
                refusal = "the elements of an array written in the call must be double or int values of parameters, locals, constants and data";
                return null;
            }

            values.Add(BindToLocal("element", Convert(value, type)));
        }

        var count = new IrConstant(values.Count, ScalarType.Int32);
        return new LinqSequence(count, count, k =>
        {
            if (values.Count == 0)
            {
                return null;
            }

            IrExpression chosen = values[values.Count - 1];
            for (int i = values.Count - 2; i >= 0; i--)
            {
                chosen = new IrConditional(new IrCompare(ComparisonOperator.Equal, k, new IrConstant(i, ScalarType.Int32)), values[i], chosen, type);
            }

            return new[] { chosen };
        }, IsArray: true, ElementMayThrow: false, values.Count);
    }

    private static IAnonymousFunctionOperation? Lambda(IOperation argument) => argument switch
    {
        IDelegateCreationOperation { Target: IAnonymousFunctionOperation lambda } => lambda,
        IConversionOperation { IsImplicit: true } conversion => Lambda(conversion.Operand),
        _ => null,
    };

    /// <summary>Whether a lambda's body may throw: it reads elements, divides ints or calls anything but Math and the floating-point types.</summary>
    private static bool LambdaMayThrow(IAnonymousFunctionOperation lambda) => lambda.Body.Descendants().Any(operation => operation switch
    {
        IArrayElementReferenceOperation or IPropertyReferenceOperation { Property.IsIndexer: true } => true,
        IPropertyReferenceOperation { Property.Name: "Length" } => true,
        IBinaryOperation { OperatorKind: BinaryOperatorKind.Divide or BinaryOperatorKind.Remainder, Type.SpecialType: SpecialType.System_Int32 } => true,
        IInvocationOperation { TargetMethod: var called } => called.Name == "Clamp"
            || !(MathTypeHost(called.ContainingType) is not null || called.ContainingType?.SpecialType is SpecialType.System_Double or SpecialType.System_Single),
        IObjectCreationOperation or IThrowOperation => true,
        _ => false,
    });

    /// <summary>Whether a part of the statement evaluated before <paramref name="operation"/> may throw (reads, int divisions, calls).</summary>
    private static bool ThrowsBeforeInStatement(IOperation operation)
    {
        IOperation statement = operation;
        while (statement.Parent is { } parent && parent is not IBlockOperation)
        {
            statement = parent;
        }

        foreach (IOperation before in statement.DescendantsAndSelf())
        {
            if (before == operation)
            {
                return false;
            }

            if (before is IArrayElementReferenceOperation or IPropertyReferenceOperation { Property.IsIndexer: true }
                || before is IBinaryOperation { OperatorKind: BinaryOperatorKind.Divide or BinaryOperatorKind.Remainder, Type.SpecialType: SpecialType.System_Int32 }
                || (before is IInvocationOperation { TargetMethod: var called } && MathTypeHost(called.ContainingType) is null && !operation.Syntax.Span.Contains(before.Syntax.Span)
                    && !before.Syntax.Span.Contains(operation.Syntax.Span)))
            {
                return true;
            }
        }

        return false;
    }

    /// <summary>
    /// A lambda inlined with its parameters bound to <paramref name="arguments"/> (one value, or a tuple's two): an
    /// expression body, or a block of local declarations and assignments of its own locals ending in one return.
    /// </summary>
    private IrExpression? InlineLambda(IAnonymousFunctionOperation lambda, IrExpression[][] arguments)
    {
        var parameters = lambda.Symbol.Parameters;
        IBlockOperation body = lambda.Body;
        for (int i = 0; i < body.Operations.Length; i++)
        {
            IOperation statement = body.Operations[i];
            bool allowed = i == body.Operations.Length - 1
                ? statement is IReturnOperation { ReturnedValue: not null }
                : statement is IVariableDeclarationGroupOperation or IExpressionStatementOperation;
            if (!allowed)
            {
                return Unsupported(lambda, "the lambda, whose body has " + DescribeInlinedStatement(statement),
                    "write it as an expression lambda ('x => …'), or a block of local declarations ending in one return");
            }
        }

        foreach (IOperation operation in body.Descendants())
        {
            if ((operation as IAssignmentOperation)?.Target is ILocalReferenceOperation { Local: var local }
                && !SymbolEqualityComparer.Default.Equals(local.ContainingSymbol, lambda.Symbol))
            {
                return Unsupported(operation, "the assignment of the captured local '" + local.Name + "' in a lambda", "compute the value in the lambda and use the LINQ result instead");
            }
        }

        for (int i = 0; i < parameters.Length; i++)
        {
            IParameterSymbol parameter = parameters[i].OriginalDefinition;
            IrExpression[] bound = arguments[i].Select(a => a is IrLocal or IrConstant or IrParameter ? a : BindToLocal(parameter.Name, a)).ToArray();
            if (bound.Length == 1)
            {
                _boundParameters[parameter] = bound[0];
            }
            else
            {
                _boundTuples[parameter] = bound;
            }
        }

        try
        {
            for (int i = 0; i < body.Operations.Length - 1; i++)
            {
                switch (body.Operations[i])
                {
                    case IVariableDeclarationGroupOperation group:
                        foreach (IVariableDeclaratorOperation declarator in group.Declarations.SelectMany(d => d.Declarators))
                        {
                            LowerDeclarator(declarator);
                        }

                        break;
                    case IExpressionStatementOperation { Operation: var expression }:
                        LowerExpressionStatement(expression);
                        break;
                }
            }

            return LowerExpression(((IReturnOperation)body.Operations[body.Operations.Length - 1]).ReturnedValue!);
        }
        finally
        {
            foreach (IParameterSymbol parameter in parameters)
            {
                _boundParameters.Remove(parameter.OriginalDefinition);
                _boundTuples.Remove(parameter.OriginalDefinition);
            }
        }
    }

    private IrExpression BindToLocal(string name, IrExpression value)
    {
        string local = FreshName(name);
        AssignLocal(local, value);
        return new IrLocal(local, value.Type);
    }

    /// <summary>A tuple element of a bound lambda parameter (<c>pair.First</c>, <c>pair.Item2</c>), or null.</summary>
    private IrExpression? BoundTupleElement(IFieldReferenceOperation field)
    {
        if (field.Instance is not IParameterReferenceOperation { Parameter: var parameter } || !_boundTuples.TryGetValue(parameter.OriginalDefinition, out IrExpression[]? elements))
        {
            return null;
        }

        string name = (field.Field.CorrespondingTupleField ?? field.Field).Name;
        return name switch
        {
            "Item1" => elements[0],
            "Item2" => elements[1],
            _ => null,
        };
    }
}
