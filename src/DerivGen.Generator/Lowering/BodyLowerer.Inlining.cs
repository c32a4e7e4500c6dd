using System.Collections.Generic;
using System.Linq;
using DerivGen.Generator.Model;
using Microsoft.CodeAnalysis;
using Microsoft.CodeAnalysis.CSharp.Syntax;
using Microsoft.CodeAnalysis.Operations;

namespace DerivGen.Generator.Lowering;

// Inlining: calls of local functions, and of the unmarked methods of the compilation that are not called helpers (see
// IsCalledHelper, the one rule), are replaced by the callee's statements. Each scalar argument is evaluated once, in
// order, into a fresh IR local bound to the parameter; an array or span argument binds the parameter to the caller's
// data, vector variable or local array (BodyLowerer.LocalArrays.cs), read and written by element; the callee's locals
// get fresh names at every call; what a local function captures is read as it is at the call. A body that is
// declarations and assignments ending in one return is inlined as its value; any other body (loops, branches, early
// returns) assigns a result local per returned value, with a flag for the returns before its end, exactly as the
// method body's own returns are lowered (BodyLowerer.ControlFlow.cs).
internal sealed partial class BodyLowerer
{
    private const string LocalFunctionRewrite =
        "inlined methods take double, float, int or bool parameters by value or 'in', or one-dimensional arrays or spans of them, or double[,]/float[,]/int[,] data, return one of those scalar types, a tuple of them or nothing, are not generic or recursive, and do not assign what they capture";

    /// <summary>
    /// The rule for unmarked methods of the compilation — which are called, which are inlined (README "Helpers").
    /// A static method that returns double or float, takes only double, float, int or bool parameters (by value or
    /// <c>in</c>) and whose types are partial is a <em>called helper</em>: it is differentiated once, as its own
    /// generated methods next to it, and called through the chain rule (BodyLowerer.Helpers.cs). Every other unmarked
    /// method with a body in this compilation — instance methods of this object, methods taking arrays, spans or 2-D
    /// arrays, returning a tuple or nothing, or declared in a type that is not partial — is inlined at each call, like a
    /// local function. Generic methods, recursion, virtual and interface calls and methods of other assemblies are refused.
    /// </summary>
    private bool IsCalledHelper(IMethodSymbol target) =>
        target.IsStatic && (target.IsGenericMethod
            || (ScalarTypeOf(target.ReturnType) is ScalarType.Double or ScalarType.Single
                && target.Parameters.All(p => ScalarTypeOf(p.Type) is not null && p.RefKind is RefKind.None or RefKind.In)
                && _helpers.Shared.Target(target, _cancellationToken).NotPartialType is null));

    /// <summary>The body being lowered, to find the declarations of the local functions it calls.</summary>
    private IBlockOperation? _root;

    /// <summary>Parameters of the methods being inlined, bound to the IR locals holding their arguments.</summary>
    private readonly Dictionary<IParameterSymbol, IrExpression> _boundParameters = new(SymbolEqualityComparer.Default);

    /// <summary>The methods being inlined (a call of one of them again is recursion).</summary>
    private readonly List<IMethodSymbol> _inlining = new();

    /// <summary>The inlined body being lowered with result locals (null in the method's own body).</summary>
    private InlineFrame? _inline;

    /// <summary>How many loops (not unrolled) enclose the statement being lowered.</summary>
    private int _loopNesting;

    private int _frames;

    /// <summary>Where the returns of an inlined body go: one result local per returned value.</summary>
    private sealed class InlineFrame
    {
        public InlineFrame(int id, string name, List<(string Local, ScalarType Type)> results, int loopNesting)
        {
            Id = id;
            Name = name;
            Results = results;
            LoopNesting = loopNesting;
        }

        public int Id { get; }

        public string Name { get; }

        public List<(string Local, ScalarType Type)> Results { get; }

        public int LoopNesting { get; }
    }

    /// <summary>A call in an expression: a local function or an inlined helper that returns one scalar.</summary>
    private IrExpression? LowerInlinedCallExpression(IInvocationOperation invocation, IMethodSymbol target)
    {
        if (ScalarTypeOf(target.ReturnType) is null && target.MethodKind != MethodKind.LocalFunction && (target.ReturnsVoid || target.ReturnType.IsTupleType))
        {
            return Unsupported(invocation, "the call to " + DisplayName(target) + " in an expression",
                target.ReturnsVoid
                    ? "it returns nothing; call it as a statement ('" + target.Name + "(…);') and read what it writes"
                    : "it returns a tuple; deconstruct it into locals first ('var (a, b) = " + target.Name + "(…);') and use them");
        }

        return InlineCall(invocation, target) is { Count: 1 } values ? values[0] : null;
    }

    private static string DisplayName(IMethodSymbol target) => target.MethodKind == MethodKind.LocalFunction
        ? "the local function '" + target.Name + "'"
        : "'" + target.ContainingType?.Name + "." + target.Name + "'";

    /// <summary>Whether a call is inlined: a local function, or an unmarked method of this compilation that is not a called helper.</summary>
    private bool IsInlined(IMethodSymbol target) =>
        target.MethodKind == MethodKind.LocalFunction
        || (target.MethodKind == MethodKind.Ordinary && target.DeclaringSyntaxReferences.Length == 1
            && target.ContainingType?.SpecialType == SpecialType.None && MathTypeHost(target.ContainingType) is null
            && SymbolEqualityComparer.Default.Equals(target.ContainingAssembly, _helpers.Compilation.Assembly)
            && !IsCalledHelper(target) && !IsMarked(target));

    private static bool IsMarked(IMethodSymbol target) =>
        target.GetAttributes().Any(a => a.AttributeClass is { Name: "DifferentiateAttribute" } type && type.ToDisplayString() == MethodParser.AttributeMetadataName);

    /// <summary>
    /// Inlines a call: the values it returns (none for a method that returns nothing, one scalar, or one per element of
    /// a tuple), or null after a diagnostic.
    /// </summary>
    private List<IrExpression>? InlineCall(IInvocationOperation invocation, IMethodSymbol target)
    {
        bool isLocal = target.MethodKind == MethodKind.LocalFunction;
        string call = isLocal ? "the call of the local function '" + target.Name + "'" : "the call to " + DisplayName(target);
        if (_inlining.Contains(target.OriginalDefinition, SymbolEqualityComparer.Default)
            || (!isLocal && _helpers.Chain.Contains(target.OriginalDefinition, SymbolEqualityComparer.Default)))
        {
            Unsupported(invocation, isLocal ? "the recursive call of the local function '" + target.Name + "'" : "the recursive call " + DisplayName(target),
                isLocal ? "a local function is inlined at each call, so it cannot call itself; write the recursion as a loop in the method"
                    : "it is inlined at each call, so it cannot call itself (directly or through another method); write the recursion as a loop");
            return null;
        }

        if (!isLocal && WhyNotInlinable(invocation, target) is { } refusal)
        {
            Unsupported(invocation, call, refusal);
            return null;
        }

        bool failed = false;
        IBlockOperation? body = isLocal ? FindLocalFunction(target)?.Body : HelperBody(invocation, target, out failed);
        if (failed)
        {
            return null;
        }

        if (body is null || target.IsGenericMethod || !InlinableSignature(target))
        {
            Unsupported(invocation, call, LocalFunctionRewrite + SignatureProblem(target, body is null));
            return null;
        }

        if (WhyNotInlinedHere(invocation) is { } where)
        {
            string type = ScalarTypeOf(target.ReturnType) is { } returnType ? DerivGen.Generator.Emit.ExpressionWriter.TypeKeyword(returnType) : "var";
            Unsupported(invocation, call + " " + where,
                "its statements would run where the expression is not evaluated; call it before, into a local ('" + type + " v = " + target.Name + "(…);'), and use the local");
            return null;
        }

        if (isLocal && AssignsCaptured(invocation, target, body, call))
        {
            return null;
        }

        if (!isLocal)
        {
            RecordReads(target);
            if (InaccessibleMember(body) is { } member)
            {
                Unsupported(invocation, call, "it reads '" + member.Name + "', which the generated methods of '" + _method.ContainingType.Name
                    + "' cannot access; make '" + member.Name + "' internal, or pass its value as an argument");
                return null;
            }
        }

        var bound = new List<IParameterSymbol>();
        var boundArrays = new List<IParameterSymbol>();
        try
        {
            if (!BindArguments(invocation, bound, boundArrays))
            {
                return null;
            }

            foreach (IParameterSymbol outer in _method.Parameters)
            {
                _usedLocalNames.Add(outer.Name); // a local of the inlined body may shadow a parameter of the method
            }

            int diagnosticsBefore = _diagnostics.Count;
            _inlining.Add(target.OriginalDefinition);
            try
            {
                return IsStraightLine(body, target) ? LowerStraightLine(body, ScalarTypeOf(target.ReturnType)!.Value) : LowerInlinedBody(body, target);
            }
            finally
            {
                _inlining.RemoveAt(_inlining.Count - 1);
                DropRepeatedDiagnostics(diagnosticsBefore);
            }
        }
        finally
        {
            Unbind(bound);
            foreach (IParameterSymbol parameter in boundArrays)
            {
                _arrays.Remove(parameter);
            }
        }
    }

    /// <summary>The arguments, in order: scalars evaluated once each into fresh locals, arrays and spans bound to what they view.</summary>
    private bool BindArguments(IInvocationOperation invocation, List<IParameterSymbol> bound, List<IParameterSymbol> boundArrays)
    {
        foreach (IArgumentOperation argument in invocation.Arguments)
        {
            if (argument.Parameter is not { } parameter)
            {
                return false;
            }

            if (ScalarTypeOf(parameter.Type) is { } parameterType)
            {
                if (LowerExpression(argument.Value) is not { } lowered)
                {
                    return false;
                }

                string local = FreshName(parameter.Name + "Arg");
                AssignLocal(local, Convert(lowered, parameterType));
                _boundParameters[parameter.OriginalDefinition] = new IrLocal(local, parameterType);
                bound.Add(parameter.OriginalDefinition);
                continue;
            }

            if (BindArrayArgument(argument, parameter) is not { } binding)
            {
                return false;
            }

            _arrays[parameter.OriginalDefinition] = binding;
            boundArrays.Add(parameter.OriginalDefinition);
        }

        return true;
    }

    /// <summary>What of the signature keeps a method from being inlined, with the rewrite (empty when nothing specific).</summary>
    private static string SignatureProblem(IMethodSymbol target, bool noBody)
    {
        const string Rewrite = ": write its computation in this method with double and float locals, or pass and return those";
        if (noBody)
        {
            return "; '" + target.Name + "' has no body in this compilation" + Rewrite;
        }

        if (target.IsGenericMethod)
        {
            return "; '" + target.Name + "' is generic" + Rewrite;
        }

        if (!target.ReturnsVoid && ScalarTypeOf(target.ReturnType) is null && TupleElementTypes(target.ReturnType) is null)
        {
            return "; '" + target.Name + "' returns '" + target.ReturnType.ToDisplayString() + "'" + Rewrite;
        }

        IParameterSymbol? parameter = target.Parameters.FirstOrDefault(p => !(p.RefKind is RefKind.None or RefKind.In
            && (ScalarTypeOf(p.Type) is not null || ArrayShape(p.Type) is not null) && !p.IsParams));
        return parameter is null ? ""
            : "; '" + target.Name + "' takes '" + (parameter.RefKind is RefKind.Ref or RefKind.Out ? parameter.RefKind.ToString().ToLowerInvariant() + " " : "")
                + parameter.Type.ToDisplayString() + " " + parameter.Name + "'" + Rewrite;
    }

    private static bool InlinableSignature(IMethodSymbol target) =>
        (target.ReturnsVoid || ScalarTypeOf(target.ReturnType) is not null || TupleElementTypes(target.ReturnType) is not null)
        && target.Parameters.All(p => p.RefKind is RefKind.None or RefKind.In
            && (ScalarTypeOf(p.Type) is not null || ArrayShape(p.Type) is not null) && !p.IsParams);

    /// <summary>The element types of a tuple of scalars, or null.</summary>
    private static List<ScalarType>? TupleElementTypes(ITypeSymbol type)
    {
        if (type is not INamedTypeSymbol { IsTupleType: true } tuple)
        {
            return null;
        }

        var types = new List<ScalarType>();
        foreach (IFieldSymbol element in tuple.TupleElements)
        {
            if (ScalarTypeOf(element.Type) is not { } elementType)
            {
                return null;
            }

            types.Add(elementType);
        }

        return types;
    }

    /// <summary>Why a method of the compilation cannot be inlined at this call (null where it can), as advice that works.</summary>
    private string? WhyNotInlinable(IInvocationOperation invocation, IMethodSymbol target)
    {
        if (target.IsVirtual || target.IsAbstract || (target.IsOverride && !target.IsSealed && target.ContainingType.IsSealed is false)
            || target.ContainingType.TypeKind == TypeKind.Interface)
        {
            return "which override runs is decided at run time, so it cannot be inlined; make '" + target.Name
                + "' a non-virtual method (no virtual, abstract or override) or a static method: such a method is inlined";
        }

        if (!target.IsStatic && invocation.Instance is not IInstanceReferenceOperation)
        {
            return "'" + target.Name + "' is called on another object than this one; make it a static method that takes what it reads as parameters: a static method is inlined (or called as a helper)";
        }

        return null;
    }

    /// <summary>The body of a helper to inline, from the compilation's semantic model for its file.</summary>
    private IBlockOperation? HelperBody(IInvocationOperation invocation, IMethodSymbol target, out bool failed)
    {
        failed = false;
        if (target.DeclaringSyntaxReferences.Length != 1
            || target.DeclaringSyntaxReferences[0].GetSyntax(_cancellationToken) is not MethodDeclarationSyntax syntax
            || (syntax.Body is null && syntax.ExpressionBody is null))
        {
            return null;
        }

        if (MethodParser.ExpressionDepth(syntax, MaxDepth, _cancellationToken) > MaxDepth)
        {
            failed = true;
            Unsupported(invocation, "the call to " + DisplayName(target) + ", whose body has an expression nested more than "
                + MaxDepth.ToString(System.Globalization.CultureInfo.InvariantCulture) + " levels deep", "split it into locals");
            return null;
        }

        return _helpers.Compilation.GetSemanticModel(syntax.SyntaxTree).GetOperation(syntax, _cancellationToken) is IMethodBodyOperation { BlockBody: var block, ExpressionBody: var expression }
            ? block ?? expression
            : null;
    }

    private ILocalFunctionOperation? FindLocalFunction(IMethodSymbol target)
    {
        IMethodSymbol definition = target.OriginalDefinition;
        if (_root?.Descendants().OfType<ILocalFunctionOperation>().FirstOrDefault(f => SymbolEqualityComparer.Default.Equals(f.Symbol, definition)) is { } found)
        {
            return found;
        }

        // A local function of an inlined helper: found from its own syntax.
        return definition.DeclaringSyntaxReferences.Length == 1 && definition.DeclaringSyntaxReferences[0].GetSyntax(_cancellationToken) is LocalFunctionStatementSyntax syntax
            ? _helpers.Compilation.GetSemanticModel(syntax.SyntaxTree).GetOperation(syntax, _cancellationToken) as ILocalFunctionOperation
            : null;
    }

    /// <summary>A member the inlined body reads that the marked method's type cannot access (the generated code sits there).</summary>
    private ISymbol? InaccessibleMember(IBlockOperation body)
    {
        foreach (IOperation operation in body.Descendants())
        {
            ISymbol? member = operation switch
            {
                IMemberReferenceOperation { ConstantValue.HasValue: false } reference => reference.Member,
                IInvocationOperation { TargetMethod: { MethodKind: not MethodKind.LocalFunction } called } => called,
                _ => null,
            };
            if (member is not null && !_helpers.Compilation.IsSymbolAccessibleWithin(member, _method.ContainingType))
            {
                return member;
            }
        }

        return null;
    }

    /// <summary>A local function that assigns what it captures is refused (it would need to write back at the call).</summary>
    private bool AssignsCaptured(IInvocationOperation invocation, IMethodSymbol target, IBlockOperation body, string call)
    {
        foreach (IOperation operation in body.Descendants())
        {
            IOperation? assigned = operation switch
            {
                IAssignmentOperation assignment => assignment.Target,
                IIncrementOrDecrementOperation increment => increment.Target,
                _ => null,
            };
            if (assigned is ILocalReferenceOperation { Local: var local } && !local.IsConst && !_arrays.ContainsKey(local)
                && !SymbolEqualityComparer.Default.Equals(local.ContainingSymbol, target.OriginalDefinition)
                && !(local.ContainingSymbol is IMethodSymbol { MethodKind: MethodKind.LocalFunction } owner && IsNestedIn(owner, target.OriginalDefinition)))
            {
                Unsupported(invocation, call + ", which assigns the captured local '" + local.Name + "'",
                    "let it return the new value and assign that at the call ('" + local.Name + " = " + target.Name + "(…);')");
                return true;
            }
        }

        return false;
    }

    private static bool IsNestedIn(IMethodSymbol inner, IMethodSymbol outer)
    {
        for (ISymbol? symbol = inner; symbol is not null; symbol = symbol.ContainingSymbol)
        {
            if (SymbolEqualityComparer.Default.Equals(symbol, outer))
            {
                return true;
            }
        }

        return false;
    }

    /// <summary>Declarations and assignments ending in one return of a scalar: inlined as its value.</summary>
    private static bool IsStraightLine(IBlockOperation body, IMethodSymbol target)
    {
        if (ScalarTypeOf(target.ReturnType) is null || body.Operations.Length == 0)
        {
            return false;
        }

        for (int i = 0; i < body.Operations.Length; i++)
        {
            IOperation statement = body.Operations[i];
            bool allowed = i == body.Operations.Length - 1
                ? statement is IReturnOperation { ReturnedValue: not null }
                : statement is IVariableDeclarationGroupOperation or IExpressionStatementOperation { Operation: not IInvocationOperation } or ILocalFunctionOperation;
            if (!allowed)
            {
                return false;
            }
        }

        return true;
    }

    private List<IrExpression>? LowerStraightLine(IBlockOperation body, ScalarType returnType)
    {
        for (int i = 0; i < body.Operations.Length - 1; i++)
        {
            switch (body.Operations[i])
            {
                case IVariableDeclarationGroupOperation group:
                    foreach (IVariableDeclaratorOperation declarator in group.Declarations.SelectMany(d => d.Declarators))
                    {
                        LowerDeclarator(declarator); // a fresh name at every call (DeclareLocal makes it unique)
                    }

                    break;
                case IExpressionStatementOperation { Operation: var expression }:
                    LowerExpressionStatement(expression);
                    break;
            }
        }

        IrExpression? value = LowerExpression(((IReturnOperation)body.Operations[body.Operations.Length - 1]).ReturnedValue!);
        return value is null ? null : new List<IrExpression> { Convert(value, returnType) };
    }

    /// <summary>
    /// Any other body: result locals (zero until a return assigns them), and where a return comes before the end a flag
    /// under which the rest runs only while nothing has returned (loops it may leave test it too).
    /// </summary>
    private List<IrExpression>? LowerInlinedBody(IBlockOperation body, IMethodSymbol target)
    {
        string stem = char.ToLowerInvariant(target.Name[0]) + target.Name.Substring(1);
        var results = new List<(string, ScalarType)>();
        if (ScalarTypeOf(target.ReturnType) is { } scalar)
        {
            results.Add((FreshName(stem + "Result"), scalar));
        }
        else if (TupleElementTypes(target.ReturnType) is { } types)
        {
            var elements = ((INamedTypeSymbol)target.ReturnType).TupleElements;
            for (int i = 0; i < types.Count; i++)
            {
                string element = elements[i].Name;
                results.Add((FreshName(stem + char.ToUpperInvariant(element[0]) + element.Substring(1)), types[i]));
            }
        }

        IOperation? last = body.Operations.LastOrDefault(o => o is not ILocalFunctionOperation);
        bool returnsEarly = body.Descendants().OfType<IReturnOperation>().Any(r => r != last && !InsideNestedFunction(r, body));

        (string? returnFlag, string? returnValue, LoopExits? loop, int jumps, InlineFrame? outerFrame) = (_returnFlag, _returnValue, _loop, _jumps, _inline);
        _inline = new InlineFrame(++_frames, target.Name, results, _loopNesting);
        _returnValue = null;
        _loop = null;
        _returnFlag = returnsEarly ? FreshName(stem + "Returned") : null;
        try
        {
            foreach ((string local, ScalarType type) in results)
            {
                _statements.Add(new IrAssign(local, Zero(type)));
            }

            if (_returnFlag is not null)
            {
                _statements.Add(new IrAssign(_returnFlag, False));
            }

            int diagnostics = _diagnostics.Count;
            LowerStatements(body.Operations, isTopLevel: true);
            return _diagnostics.Skip(diagnostics).Any(d => d.IsError) ? null : results.Select(r => (IrExpression)new IrLocal(r.Item1, r.Item2)).ToList();
        }
        finally
        {
            (_returnFlag, _returnValue, _loop, _jumps, _inline) = (returnFlag, returnValue, loop, jumps, outerFrame);
        }
    }

    /// <summary><c>var (a, b) = H(…);</c> and <c>(a, b) = H(…);</c> of an inlined method returning a tuple (<c>_</c> discards).</summary>
    private void LowerInlinedDeconstruction(ITupleOperation targets, IInvocationOperation call)
    {
        var locals = new List<ILocalSymbol?>();
        foreach (IOperation element in targets.Elements)
        {
            ILocalSymbol? local = element switch
            {
                ILocalReferenceOperation reference => reference.Local,
                IDeclarationExpressionOperation { Expression: ILocalReferenceOperation declared } => declared.Local,
                _ => null,
            };
            if (element is not IDiscardOperation && (local is null || ScalarTypeOf(local.Type) is null))
            {
                Unsupported(element, $"the deconstruction target '{Text(element)}'", "deconstruct into double, float, int or bool locals, or _");
                return;
            }

            locals.Add(local);
        }

        if (TupleElementTypes(call.TargetMethod.ReturnType)?.Count != locals.Count)
        {
            Unsupported(call, "the deconstruction of '" + Text(call) + "'", "deconstruct a tuple of double, float, int or bool values");
            return;
        }

        if (InlineCall(call, call.TargetMethod) is not { } values)
        {
            return;
        }

        for (int i = 0; i < locals.Count; i++)
        {
            if (locals[i] is { } local)
            {
                AssignLocal(LocalName(local), Convert(values[i], ScalarTypeOf(local.Type)!.Value));
            }
        }
    }

    /// <summary><c>H(…).Name</c> of an inlined method returning a tuple: the call inlined, that element taken.</summary>
    private IrExpression? LowerTupleElementOfCall(IInvocationOperation call, IFieldSymbol element)
    {
        if (call.TargetMethod.ReturnType is not INamedTypeSymbol { IsTupleType: true } tuple || TupleElementTypes(tuple) is null)
        {
            return Unsupported(call, "the call to " + DisplayName(call.TargetMethod), "return a tuple of double, float, int or bool values");
        }

        IFieldSymbol wanted = element.CorrespondingTupleField ?? element;
        int index = -1;
        for (int i = 0; i < tuple.TupleElements.Length; i++)
        {
            if (SymbolEqualityComparer.Default.Equals(tuple.TupleElements[i].CorrespondingTupleField ?? tuple.TupleElements[i], wanted))
            {
                index = i;
            }
        }

        return index >= 0 && InlineCall(call, call.TargetMethod) is { } values && index < values.Count ? values[index] : null;
    }

    private static bool InsideNestedFunction(IOperation operation, IOperation root) =>
        Ancestors(operation, root).Any(a => a is ILocalFunctionOperation or IAnonymousFunctionOperation);

    /// <summary>A return in an inlined body: its values into the result locals; before the end, the flag too.</summary>
    private void LowerInlinedReturn(IReturnOperation statement, bool isFinal)
    {
        InlineFrame frame = _inline!;
        if (!isFinal && _loop is not null && _variableBranchDepth > 0)
        {
            Unsupported(statement, "the return inside a loop under a condition that depends on a differentiation variable",
                "the number of iterations would depend on a variable; let the loop run its course and select the result after it");
            return;
        }

        if (statement.ReturnedValue is { } value && LowerReturnedValues(value, frame.Results.Count) is { } values)
        {
            for (int i = 0; i < values.Count; i++)
            {
                AssignLocal(frame.Results[i].Local, Convert(values[i], frame.Results[i].Type));
            }
        }

        if (!isFinal && _returnFlag is not null)
        {
            AssignLocal(_returnFlag, True);
            _jumps++;
            if (_loop is not null)
            {
                _loop.ExitsByReturn = true;
            }
        }
    }

    /// <summary>The values of a returned expression: one scalar, or the elements of a tuple literal or of an inlined call's tuple.</summary>
    private List<IrExpression>? LowerReturnedValues(IOperation value, int count)
    {
        if (count == 1)
        {
            return LowerExpression(value) is { } single ? new List<IrExpression> { single } : null;
        }

        return LowerTupleValues(value, count);
    }

    private List<IrExpression>? LowerTupleValues(IOperation value, int count)
    {
        IOperation tuple = value is IConversionOperation { Operand: var operand } ? operand : value;
        switch (tuple)
        {
            case ITupleOperation literal when literal.Elements.Length == count:
            {
                var values = new List<IrExpression>();
                foreach (IOperation element in literal.Elements)
                {
                    if (LowerExpression(element) is not { } lowered)
                    {
                        return null;
                    }

                    values.Add(lowered);
                }

                return values;
            }

            case IInvocationOperation invocation when IsInlined(invocation.TargetMethod) && TupleElementTypes(invocation.TargetMethod.ReturnType)?.Count == count:
                return InlineCall(invocation, invocation.TargetMethod);

            default:
                Unsupported(value, "the tuple '" + Text(value) + "'", "return a tuple literal of values, (a, b), or the result of another inlined method that returns one");
                return null;
        }
    }

    /// <summary>Drops diagnostics an inlined body repeats (a body inlined at several calls reports each problem once).</summary>
    private void DropRepeatedDiagnostics(int from)
    {
        var seen = new HashSet<Diagnostics.DiagnosticInfo>(_diagnostics.Take(from));
        int kept = from;
        for (int i = from; i < _diagnostics.Count; i++)
        {
            if (seen.Add(_diagnostics[i]))
            {
                _diagnostics[kept++] = _diagnostics[i];
            }
        }

        _diagnostics.RemoveRange(kept, _diagnostics.Count - kept);
    }

    private void Unbind(List<IParameterSymbol> bound)
    {
        foreach (IParameterSymbol parameter in bound)
        {
            _boundParameters.Remove(parameter);
        }
    }

    /// <summary>
    /// Where the statements of an inlined call, placed before the statement that contains it, would not run exactly once
    /// when the call is evaluated: an arm of ?:, a switch expression, the right of &amp;&amp;/||, a loop's condition or
    /// step. Null where they do.
    /// </summary>
    private static string? WhyNotInlinedHere(IOperation call)
    {
        for (IOperation? child = call, parent = call.Parent; parent is not null; child = parent, parent = parent.Parent)
        {
            switch (parent)
            {
                case IConditionalOperation conditional when conditional.Type is not null && conditional.Type.SpecialType != SpecialType.System_Void && child != conditional.Condition:
                    return "in an arm of the conditional operator";
                case ISwitchExpressionArmOperation:
                    return "in an arm of a switch expression";
                case IBinaryOperation { OperatorKind: BinaryOperatorKind.ConditionalAnd or BinaryOperatorKind.ConditionalOr } logical when child == logical.RightOperand:
                    return "on the right of && or ||";
                case ICoalesceOperation:
                    return "in a ?? expression";
                case ILoopOperation loop when child != loop.Body:
                    return "in the condition or step of a loop";
                case ISwitchCaseOperation:
                    return "in a case guard";
                case IVariableDeclarationGroupOperation or IExpressionStatementOperation or IReturnOperation:
                    return null;
                case IConditionalOperation or ISwitchOperation or ILocalFunctionOperation or IBlockOperation:
                    return null; // an if condition or a switch value: evaluated once, before the branches
            }
        }

        return null;
    }

    /// <summary>What in a body that is inlined only as straight-line code stops it (lambdas, struct members).</summary>
    private static string DescribeInlinedStatement(IOperation statement) => statement switch
    {
        ILoopOperation => "a loop",
        IConditionalOperation or ISwitchOperation => "a branch",
        IReturnOperation => "an early return",
        IExpressionStatementOperation or IVariableDeclarationGroupOperation => "no return at its end",
        _ => DescribeStatement(statement),
    };
}
