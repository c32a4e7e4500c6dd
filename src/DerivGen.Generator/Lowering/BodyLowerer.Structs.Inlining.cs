using System.Collections.Generic;
using System.Linq;
using DerivGen.Generator.Diagnostics;
using DerivGen.Generator.Model;
using Microsoft.CodeAnalysis;
using Microsoft.CodeAnalysis.CSharp.Syntax;
using Microsoft.CodeAnalysis.Operations;

namespace DerivGen.Generator.Lowering;

// Calls that take or return structs, inlined at each call: static helpers of the compilation and local functions with
// struct parameters or a struct result, instance methods and computed properties of user structs (with 'this' bound to
// the receiver's components), and user struct constructors. The rule is that of local functions: each argument is
// evaluated once, in order, into fresh locals; the body is local declarations and assignments ending in one return
// (a constructor: assignments of its fields); its locals get fresh names at every call.
internal sealed partial class BodyLowerer
{
    private const string InlinedBodyRewrite =
        "a method that takes or returns a struct is inlined at each call: give it an expression body, or a block of local declarations and assignments ending in one return (use ?: for choices); "
        + "or pass the struct's fields as double or float parameters and return a double, which is differentiated as a helper";

    /// <summary>The body of a method, local function, accessor or constructor of this compilation, or null.</summary>
    private IOperation? BodyOf(IMethodSymbol method)
    {
        if (method.MethodKind == MethodKind.LocalFunction)
        {
            return _root?.Descendants().OfType<ILocalFunctionOperation>()
                .FirstOrDefault(f => SymbolEqualityComparer.Default.Equals(f.Symbol, method.OriginalDefinition))?.Body;
        }

        if (method.DeclaringSyntaxReferences.Length != 1 || !SymbolEqualityComparer.Default.Equals(method.ContainingAssembly, _helpers.Compilation.Assembly))
        {
            return null;
        }

        SyntaxNode syntax = method.DeclaringSyntaxReferences[0].GetSyntax(_cancellationToken);
        SemanticModel model = _helpers.Shared.SemanticModel(_helpers.Compilation, syntax.SyntaxTree);
        return model.GetOperation(syntax, _cancellationToken) switch
        {
            IMethodBodyOperation body => (IOperation?)body.BlockBody ?? body.ExpressionBody,
            IConstructorBodyOperation { Initializer: null } body => (IOperation?)body.BlockBody ?? body.ExpressionBody,
            IBlockOperation block => block,
            _ => null,
        };
    }

    /// <summary>
    /// Inlines a call: returns the <see cref="IrExpression"/> of a scalar result or the <see cref="StructValue"/> of a
    /// struct result, or null after reporting.
    /// </summary>
    private object? InlineCall(IOperation site, IMethodSymbol target, StructValue? receiver)
    {
        string name = "'" + (target.AssociatedSymbol?.Name ?? target.Name) + "'";
        if (_inlining.Contains(target.OriginalDefinition, SymbolEqualityComparer.Default))
        {
            return Refuse(site, "the recursive call of " + name, "a method that takes or returns a struct is inlined at each call, so it cannot call itself; write the recursion as a loop");
        }

        StructLayout? resultLayout = LayoutOf(target.ReturnType);
        bool scalarResult = ScalarTypeOf(target.ReturnType) is ScalarType.Double or ScalarType.Single or ScalarType.Int32;
        if (BodyOf(target) is not IBlockOperation body || target.IsGenericMethod || (resultLayout is null && !scalarResult)
            || target.Parameters.Any(p => (LayoutOf(p.Type) is null && ScalarTypeOf(p.Type) is null) || p.RefKind is RefKind.Ref or RefKind.Out))
        {
            return Refuse(site, "the call to " + name, target.DeclaringSyntaxReferences.IsEmpty
                ? "only methods with a body in this compilation are inlined; compute the value with the components and the supported vector functions"
                : "an inlined method takes double, float, int or struct parameters (by value, in or ref readonly), returns one of those, and is not generic; " + InlinedBodyRewrite);
        }

        if (WhyNotInlinedHere(site) is { } where)
        {
            return Refuse(site, "the call to " + name + " " + where,
                "its statements would run where the expression is not evaluated; call it before, into a local, and use the local");
        }

        for (int i = 0; i < body.Operations.Length; i++)
        {
            IOperation statement = body.Operations[i];
            bool allowed = i == body.Operations.Length - 1
                ? statement is IReturnOperation { ReturnedValue: not null }
                : statement is IVariableDeclarationGroupOperation or IExpressionStatementOperation;
            if (!allowed)
            {
                return Refuse(site, "the call to " + name + ", whose body has " + DescribeInlinedStatement(statement), InlinedBodyRewrite);
            }
        }

        if (target.MethodKind == MethodKind.LocalFunction && AssignedCapture(body, target) is { } captured)
        {
            // Its statements are placed before the expression that calls it, which may read the local before the call.
            return Refuse(site, "the call to " + name + ", which assigns the captured local '" + captured.Name + "'",
                "let it return the new value and assign that at the call ('" + captured.Name + " = " + target.Name + "(…);')");
        }

        RecordSymbolReads(target);
        int diagnosticsBefore = _diagnostics.Count;
        var bound = new List<IParameterSymbol>();
        foreach (IArgumentOperation argument in (site as IInvocationOperation)?.Arguments ?? System.Collections.Immutable.ImmutableArray<IArgumentOperation>.Empty)
        {
            if (argument.Parameter is not { } parameter || !BindArgument(parameter, argument.Value, bound))
            {
                UnbindAll(bound);
                return null;
            }
        }

        foreach (IParameterSymbol outer in _method.Parameters)
        {
            _usedLocalNames.Add(outer.Name); // a local of the inlined body may have the name of a parameter of the method
        }

        _inlining.Add(target.OriginalDefinition);
        if (receiver is not null)
        {
            _structThis.Add(receiver);
        }

        try
        {
            LowerInlinedStatements(body.Operations.Take(body.Operations.Length - 1));
            IOperation returned = ((IReturnOperation)body.Operations[body.Operations.Length - 1]).ReturnedValue!;
            object? result = resultLayout is not null ? LowerStruct(returned)
                : LowerExpression(returned) is { } scalar ? Convert(scalar, ScalarTypeOf(target.ReturnType)!.Value) : null;
            RelocateDiagnostics(site, name, diagnosticsBefore);
            return result;
        }
        finally
        {
            if (receiver is not null)
            {
                _structThis.RemoveAt(_structThis.Count - 1);
            }

            _inlining.RemoveAt(_inlining.Count - 1);
            UnbindAll(bound);
        }
    }

    /// <summary>Struct parameters of a constructor being inlined, bound to their arguments' values.</summary>
    private readonly Dictionary<IParameterSymbol, StructValue> _boundStructValues = new(SymbolEqualityComparer.Default);

    /// <summary>A local of the enclosing method that a local function assigns (directly or through a field), or null.</summary>
    private static ILocalSymbol? AssignedCapture(IOperation body, IMethodSymbol function)
    {
        foreach (IOperation operation in body.Descendants())
        {
            IOperation? assigned = operation switch
            {
                IAssignmentOperation assignment => assignment.Target,
                IIncrementOrDecrementOperation increment => increment.Target,
                _ => null,
            };
            while (assigned is IMemberReferenceOperation { Instance: { } instance })
            {
                assigned = instance; // v.X = … assigns v
            }

            if (assigned is ILocalReferenceOperation { Local: var local } && !SymbolEqualityComparer.Default.Equals(local.ContainingSymbol, function.OriginalDefinition))
            {
                return local;
            }
        }

        return null;
    }

    /// <summary>Evaluates an argument once, into fresh locals bound to the parameter; with <paramref name="direct"/>
    /// (a constructor, whose body only assigns fields: nothing is hoisted before the expression) the parameter is bound
    /// to the argument's value itself, so a constructor in an arm of ?: evaluates nothing outside it.</summary>
    private bool BindArgument(IParameterSymbol parameter, IOperation value, List<IParameterSymbol> bound, bool direct = false)
    {
        if (direct)
        {
            object? lowered = LayoutOf(parameter.Type) is not null ? LowerStruct(value) : LowerExpression(value);
            switch (lowered)
            {
                case StructValue structValue:
                    _boundStructValues[parameter.OriginalDefinition] = structValue;
                    break;
                case IrExpression scalar:
                    _boundParameters[parameter.OriginalDefinition] = Convert(scalar, ScalarTypeOf(parameter.Type)!.Value);
                    break;
                default:
                    return false;
            }

            bound.Add(parameter.OriginalDefinition);
            return true;
        }

        if (LayoutOf(parameter.Type) is { } layout)
        {
            if (LowerStruct(value) is not { } lowered)
            {
                return false;
            }

            StructValue local = Materialize(parameter.Name + "Arg", lowered);
            _structLocals[parameter.OriginalDefinition] = local.Parts.Select(p => ((IrLocal)p).Name).ToArray();
        }
        else
        {
            if (LowerExpression(value) is not { } scalar)
            {
                return false;
            }

            ScalarType type = ScalarTypeOf(parameter.Type)!.Value;
            string name = FreshName(parameter.Name + "Arg");
            AssignLocal(name, Convert(scalar, type));
            _boundParameters[parameter.OriginalDefinition] = new IrLocal(name, type);
        }

        bound.Add(parameter.OriginalDefinition);
        return true;
    }

    private void UnbindAll(List<IParameterSymbol> bound)
    {
        foreach (IParameterSymbol parameter in bound)
        {
            _boundParameters.Remove(parameter);
            _structLocals.Remove(parameter);
            _boundStructValues.Remove(parameter);
        }
    }

    private void LowerInlinedStatements(IEnumerable<IOperation> statements)
    {
        foreach (IOperation statement in statements)
        {
            switch (statement)
            {
                case IVariableDeclarationGroupOperation group:
                    foreach (IVariableDeclaratorOperation declarator in group.Declarations.SelectMany(d => d.Declarators))
                    {
                        LowerDeclarator(declarator); // a fresh name at every call
                    }

                    break;
                case IExpressionStatementOperation { Operation: var expression }:
                    LowerExpressionStatement(expression);
                    break;
            }
        }
    }

    /// <summary>Problems found inside a body in another file are reported at the call (the analyzer reports in the
    /// method's file), naming the inlined method.</summary>
    private void RelocateDiagnostics(IOperation site, string name, int from)
    {
        Location location = site.Syntax.GetLocation();
        string path = location.SourceTree?.FilePath ?? string.Empty;
        for (int i = from; i < _diagnostics.Count; i++)
        {
            DiagnosticInfo diagnostic = _diagnostics[i];
            if (diagnostic.FilePath == path)
            {
                continue;
            }

            string[] arguments = diagnostic.Arguments.ToArray();
            if (arguments.Length > 0)
            {
                arguments[0] = "In the inlined " + name + ": " + arguments[0];
            }

            DiagnosticInfo moved = DiagnosticInfo.Create(DiagnosticDescriptors.UnsupportedConstruct, location, arguments);
            _diagnostics[i] = diagnostic with { FilePath = moved.FilePath, Span = moved.Span, LineSpan = moved.LineSpan, Arguments = arguments.ToEquatableArray() };
        }
    }

    /// <summary>A user struct's constructor: a record struct's positional parameters, or a body of field assignments.</summary>
    private IrExpression[]? InlineConstructor(IObjectCreationOperation creation, IMethodSymbol constructor, StructLayout layout)
    {
        int diagnosticsBefore = _diagnostics.Count;
        IrExpression[]? parts = InlineConstructorCore(creation, constructor, layout);
        RelocateDiagnostics(creation, "constructor of '" + layout.Type.Name + "'", diagnosticsBefore);
        return parts;
    }

    private IrExpression[]? InlineConstructorCore(IObjectCreationOperation creation, IMethodSymbol constructor, StructLayout layout)
    {
        RecordSymbolReads(constructor);
        bool positional = constructor.DeclaringSyntaxReferences.Length == 1
            && constructor.DeclaringSyntaxReferences[0].GetSyntax(_cancellationToken) is RecordDeclarationSyntax;
        IOperation? body = positional ? null : BodyOf(constructor);
        string name = "the constructor '" + Text(creation) + "'";
        const string advice = "a struct's constructor is inlined when it only assigns fields or properties from its parameters (X = x;); otherwise build the value with an object initializer (new T { X = x })";
        if (!positional && body is not IBlockOperation)
        {
            Refuse(creation, name, advice);
            return null;
        }

        if (positional && constructor.ContainingType.GetMembers().OfType<IPropertySymbol>().Any(p => !p.IsStatic && p.DeclaringSyntaxReferences.Any(r => r.GetSyntax() is PropertyDeclarationSyntax { Initializer: not null })))
        {
            Refuse(creation, name, "properties with initializers beside the positional ones are not inlined; " + advice);
            return null;
        }

        var bound = new List<IParameterSymbol>();
        foreach (IArgumentOperation argument in creation.Arguments)
        {
            if (argument.Parameter is not { } parameter || !BindArgument(parameter, argument.Value, bound, direct: true))
            {
                UnbindAll(bound);
                return null;
            }
        }

        var self = new StructValue(layout, Zeros(layout).Parts);
        try
        {
            if (positional)
            {
                foreach (IParameterSymbol parameter in constructor.Parameters)
                {
                    if (layout.Members.FirstOrDefault(m => m.Name == parameter.Name) is not { } member)
                    {
                        Refuse(creation, name, advice);
                        return null;
                    }

                    IrExpression[] value = _boundStructValues.TryGetValue(parameter.OriginalDefinition, out StructValue? nested)
                        ? nested.Parts
                        : new[] { Convert(_boundParameters[parameter.OriginalDefinition], layout.Components[member.Offset].Type) };
                    System.Array.Copy(value, 0, self.Parts, member.Offset, member.Count);
                }

                return self.Parts;
            }

            _structThis.Add(self);
            try
            {
                foreach (IOperation statement in ((IBlockOperation)body!).Operations)
                {
                    if (statement is not IExpressionStatementOperation { Operation: ISimpleAssignmentOperation { Target: var target, Value: var value } }
                        || (target as IMemberReferenceOperation)?.Instance is not IInstanceReferenceOperation
                        || layout.Member(((IMemberReferenceOperation)target).Member) is not { } member)
                    {
                        if (statement is not IReturnOperation { ReturnedValue: null })
                        {
                            string what = statement switch
                            {
                                ILoopOperation => "a loop",
                                IConditionalOperation or ISwitchOperation => "a branch",
                                _ => "the statement '" + Text(statement) + "'",
                            };
                            Refuse(creation, name + ", whose body has " + what, advice);
                            return null;
                        }

                        continue;
                    }

                    IrExpression[]? assigned = member.Nested is not null ? LowerStruct(value)?.Parts
                        : LowerExpression(value) is { } scalar ? new[] { Convert(scalar, layout.Components[member.Offset].Type) } : null;
                    if (assigned is null)
                    {
                        return null;
                    }

                    System.Array.Copy(assigned, 0, self.Parts, member.Offset, member.Count);
                }
            }
            finally
            {
                _structThis.RemoveAt(_structThis.Count - 1);
            }

            return self.Parts;
        }
        finally
        {
            UnbindAll(bound);
        }
    }
}
