using System;
using System.Collections.Generic;
using System.Linq;
using System.Text;
using System.Threading;
using DerivGen.Generator.Diagnostics;
using DerivGen.Generator.Model;
using Microsoft.CodeAnalysis;
using Microsoft.CodeAnalysis.CSharp;
using Microsoft.CodeAnalysis.CSharp.Syntax;
using Microsoft.CodeAnalysis.Operations;

namespace DerivGen.Generator.Lowering;

/// <summary>
/// The outcome of lowering one method: its spec when it can be generated, its diagnostics, and the specs of the helper
/// methods it calls (static methods of the compilation that are not marked, whose derivatives are generated with it).
/// </summary>
internal sealed record LoweringResult(MethodSpec? Spec, EquatableArray<DiagnosticInfo> Diagnostics, EquatableArray<HelperRequest> Helpers,
    string? FailedHintName = null, string? Failure = null);

/// <summary>A helper a marked method calls (directly or through other helpers): its documentation ID, and whether the
/// caller needs its Hessian. The helper itself is lowered again from the current compilation when its file is written,
/// so that an edit of the helper alone is never missed.</summary>
internal sealed record HelperRequest(string DocumentationId, bool Hessian);

/// <summary>What the lowering of one marked method shares with the lowering of the helpers it calls.</summary>
internal sealed class HelperContext
{
    public HelperContext(Compilation compilation)
    {
        Compilation = compilation;
        Shared = CompilationLowerings.For(compilation);
    }

    public Compilation Compilation { get; }

    /// <summary>The helpers lowered cleanly in this compilation, shared by every method lowered in it.</summary>
    public CompilationLowerings Shared { get; }

    /// <summary>The helpers called so far, by documentation ID, and whether a Hessian is needed. While a helper is
    /// lowered this collects the helpers it calls (see <c>BodyLowerer.LowerHelperCall</c>), then they are added here.</summary>
    public Dictionary<string, bool> Requests { get; set; } = new(StringComparer.Ordinal);

    /// <summary>Helpers already lowered for this marked method, by documentation ID and whether a Hessian is needed, with
    /// the helpers each one calls (directly or not).</summary>
    public Dictionary<(string Id, bool Hessian), (MethodSpec? Spec, IReadOnlyList<DiagnosticInfo> Diagnostics, IReadOnlyList<string> Reaches, IReadOnlyCollection<string> ReadFiles)> Lowered { get; } = new();

    /// <summary>The files (paths) of every method the lowering called (helpers, directly or not, whose bodies it read,
    /// and marked methods); see <see cref="CompilationLowerings.FindReusable"/>.</summary>
    public HashSet<string> Reads { get; set; } = new(StringComparer.Ordinal);

    /// <summary>The methods being lowered, outermost first: a call back into one of them is recursion.</summary>
    public List<IMethodSymbol> Chain { get; } = new();

    /// <summary>Why the method could not be lowered, where that may depend on the thread's stack (so the analyzer, on
    /// another thread, may not report it): the generator then writes an #error file instead of nothing.</summary>
    public string? Failure { get; set; }
}

/// <summary>
/// The Lower stage for one <c>[Differentiate]</c> method: checks the declaration (return type, partial types,
/// variables, names) and lowers the body. Pure function of its inputs; shared by the generator and the analyzer.
/// </summary>
internal static class MethodParser
{
    public const string AttributeMetadataName = "DerivGen.DifferentiateAttribute";

    public static LoweringResult Lower(IMethodSymbol method, MethodDeclarationSyntax syntax, AttributeData attribute,
        SemanticModel semanticModel, CancellationToken cancellationToken) =>
        Lower(method, syntax, attribute, semanticModel, out _, cancellationToken);

    /// <summary>
    /// <see cref="Lower(IMethodSymbol, MethodDeclarationSyntax, AttributeData, SemanticModel, CancellationToken)"/>, with
    /// the files whose declarations the lowering read (<see cref="HelperContext.Reads"/>); null when the result may not be
    /// reused after an edit (the body is another part's, or the lowering failed inside DerivGen).
    /// </summary>
    public static LoweringResult Lower(IMethodSymbol method, MethodDeclarationSyntax syntax, AttributeData attribute,
        SemanticModel semanticModel, out IReadOnlyCollection<string>? reads, CancellationToken cancellationToken)
    {
        reads = null;
        var diagnostics = new List<DiagnosticInfo>();
        MethodDeclarationSyntax originalSyntax = syntax;
        try
        {
            // [Differentiate] on the declaring part of a partial method: the body is the implementing part's. It is used
            // when that part is in the same file (an edit of it then lowers the method again); in another file an edit of
            // the body would not, so the attribute must move there.
            if (syntax.Body is null && syntax.ExpressionBody is null && method.PartialImplementationPart is { } implementation
                && implementation.DeclaringSyntaxReferences.FirstOrDefault()?.GetSyntax(cancellationToken) is MethodDeclarationSyntax implementationSyntax)
            {
                if (implementationSyntax.SyntaxTree != syntax.SyntaxTree)
                {
                    diagnostics.Add(DiagnosticInfo.Create(DiagnosticDescriptors.UnsupportedConstruct, syntax.Identifier.GetLocation(),
                        "[Differentiate] on the declaring part of the partial method '" + method.Name + "', whose body is in another file,",
                        "put the attribute on the implementing part (the one with the body), so that an edit of the body regenerates the derivatives"));
                    return new LoweringResult(null, diagnostics.ToEquatableArray(), EquatableArray<HelperRequest>.Empty);
                }

                method = implementation;
                syntax = implementationSyntax;
            }

            bool ownBody = ReferenceEquals(syntax, originalSyntax);
            CompilationLowerings.CountMethod(semanticModel.Compilation, method);
            var helpers = new HelperContext(semanticModel.Compilation);
            helpers.Chain.Add(method);
            bool emitHessian = HasHessian(attribute);
            HashSet<string> variables = SelectVariables(method, attribute, diagnostics, syntax.Identifier.GetLocation(), cancellationToken);
            MethodSpec? spec = LowerCore(method, syntax, emitHessian, variables, semanticModel, helpers, diagnostics, cancellationToken);
            spec = spec is null ? null : spec with { Loops = LoopsOf(attribute) };
            bool hasErrors = diagnostics.Any(d => d.IsError);
            if (hasErrors && HasCompileError(syntax, semanticModel, cancellationToken))
            {
                // Roslyn already reports an error in the body (a typo, CS0103, lowers as an unsupported construct):
                // DerivGen adds nothing to it and generates nothing until the code compiles. Asked only for a method
                // DerivGen refuses, since the check binds the body once more (asked for every method, a declaration edit
                // that lowers 200 methods again went from 89 to 147 ms in `generator-cost --probe`). A DG0007 warning
                // beside a compile error elsewhere in the body is still reported: it is about a construct that lowered.
                return new LoweringResult(null, EquatableArray<DiagnosticInfo>.Empty, EquatableArray<HelperRequest>.Empty);
            }

            if (helpers.Failure is { } failure && hasErrors)
            {
                return new LoweringResult(null, diagnostics.ToEquatableArray(), EquatableArray<HelperRequest>.Empty, HintName(method),
                    method.ToDisplayString(HeaderFormat) + " (" + failure + ")");
            }

            reads = ownBody ? helpers.Reads : null;
            return new LoweringResult(hasErrors ? null : spec, diagnostics.ToEquatableArray(),
                hasErrors ? EquatableArray<HelperRequest>.Empty
                    : helpers.Requests.OrderBy(p => p.Key, StringComparer.Ordinal).Select(p => new HelperRequest(p.Key, p.Value)).ToEquatableArray());
        }
        catch (OperationCanceledException)
        {
            throw;
        }
        catch (Exception exception)
        {
            // A bug of ours must never crash the compiler: report it on the method and generate nothing.
            string failure = exception.GetType().Name + ": " + exception.Message;
            diagnostics.Add(DiagnosticInfo.Create(DiagnosticDescriptors.InternalError, syntax.Identifier.GetLocation(), method.Name, failure));
            return new LoweringResult(null, diagnostics.ToEquatableArray(), EquatableArray<HelperRequest>.Empty,
                HintName(method), method.ToDisplayString(HeaderFormat) + " (" + failure.Replace('\r', ' ').Replace('\n', ' ') + ")");
        }
    }

    /// <summary>Whether the compiler reports an error inside the method's body (only the body is bound: cheap, and the
    /// operation tree needs that binding anyway).</summary>
    private static bool HasCompileError(MethodDeclarationSyntax syntax, SemanticModel semanticModel, CancellationToken cancellationToken)
    {
        SyntaxNode? body = (SyntaxNode?)syntax.Body ?? syntax.ExpressionBody;
        if (body is null || body.SyntaxTree != semanticModel.SyntaxTree)
        {
            return false;
        }

        foreach (Diagnostic diagnostic in semanticModel.GetDiagnostics(body.Span, cancellationToken))
        {
            if (diagnostic.Severity == DiagnosticSeverity.Error)
            {
                return true;
            }
        }

        return false;
    }

    /// <summary>
    /// Lowers a helper — a static method of the compilation, not marked, called from a differentiated method — as if it
    /// were marked with all its double and float parameters as variables. Its diagnostics are returned for the caller
    /// to report at the call; the specs of the helpers it calls in turn go into <paramref name="helpers"/>.
    /// </summary>
    internal static MethodSpec? LowerHelper(IMethodSymbol method, MethodDeclarationSyntax syntax, bool emitHessian, HelperContext helpers,
        List<DiagnosticInfo> diagnostics, CancellationToken cancellationToken)
    {
        method = method.OriginalDefinition; // a generic helper is lowered once, over its T
        var variables = new HashSet<string>(method.Parameters.Where(IsDefaultVariable).Select(p => p.Name), StringComparer.Ordinal);
        if (variables.Count == 0)
        {
            diagnostics.Add(DiagnosticInfo.Create(DiagnosticDescriptors.NoVariables, syntax.Identifier.GetLocation(), method.Name));
            return null;
        }

        CompilationLowerings.CountHelper(helpers.Compilation, method);
        SemanticModel model = helpers.Shared.SemanticModel(helpers.Compilation, syntax.SyntaxTree);
        helpers.Chain.Add(method);
        try
        {
            return LowerCore(method, syntax, emitHessian, variables, model, helpers, diagnostics, cancellationToken) is { } spec
                ? spec with { IsHelper = true }
                : null;
        }
        finally
        {
            helpers.Chain.RemoveAt(helpers.Chain.Count - 1);
        }
    }

    /// <summary>
    /// The specs of the requested helpers in <paramref name="compilation"/>, each once (with a Hessian if any caller
    /// needs one), in hint-name order. The callers' lowering put them in the compilation's table
    /// (<see cref="CompilationLowerings"/>); one that is not there is lowered from the compilation. A helper that no
    /// longer lowers cleanly is left out: the analyzer reports it at the call, and the caller's call of its missing
    /// derivative method fails to compile rather than go wrong.
    /// </summary>
    internal static IEnumerable<MethodSpec> LowerHelpers(IEnumerable<HelperRequest> requests, Compilation compilation, CancellationToken cancellationToken)
    {
        var specs = new SortedDictionary<string, MethodSpec>(StringComparer.Ordinal);
        CompilationLowerings shared = CompilationLowerings.For(compilation);
        foreach (IGrouping<string, HelperRequest> group in requests.GroupBy(r => r.DocumentationId, StringComparer.Ordinal))
        {
            cancellationToken.ThrowIfCancellationRequested();
            if (shared.TryGetHelper(group.Key, group.Any(r => r.Hessian)) is { } lowered)
            {
                // Lowered cleanly by a caller: the same spec as lowering it alone here (its chain is only itself).
                specs[lowered.Spec.HintName] = lowered.Spec;
                continue;
            }

            if (DocumentationCommentId.GetFirstSymbolForDeclarationId(group.Key, compilation) is not IMethodSymbol method
                || method.DeclaringSyntaxReferences.Length != 1
                || method.DeclaringSyntaxReferences[0].GetSyntax(cancellationToken) is not MethodDeclarationSyntax syntax)
            {
                continue;
            }

            var diagnostics = new List<DiagnosticInfo>();
            try
            {
                MethodSpec? spec = LowerHelper(method, syntax, group.Any(r => r.Hessian), new HelperContext(compilation), diagnostics, cancellationToken);
                if (spec is not null && !diagnostics.Any(d => d.IsError))
                {
                    specs[spec.HintName] = spec;
                }
            }
            catch (OperationCanceledException)
            {
                throw;
            }
            catch (Exception)
            {
                // Never crash the compiler: the analyzer reports the same failure at the call (DG0010).
            }
        }

        return specs.Values;
    }

    private static MethodSpec? LowerCore(IMethodSymbol method, MethodDeclarationSyntax syntax, bool emitHessian, HashSet<string> variables,
        SemanticModel semanticModel, HelperContext helpers, List<DiagnosticInfo> diagnostics, CancellationToken cancellationToken)
    {
        Location nameLocation = syntax.Identifier.GetLocation();

        // A void method whose last parameter is a Span<double> (Span<float>) writes its values there: its Jacobian is generated.
        IParameterSymbol? output = OutputParameter(method);
        if (output is not null)
        {
            emitHessian = false;
            CheckOutputVariables(output, variables, nameLocation, diagnostics);
        }

        ScalarType? returnType = output is not null ? BodyLowerer.ScalarTypeOf(ElementType(output.Type)) : BodyLowerer.ScalarTypeOf(method.ReturnType);
        if (!BodyLowerer.IsFloating(returnType))
        {
            diagnostics.Add(DiagnosticInfo.Create(DiagnosticDescriptors.ReturnTypeNotFloatingPoint, syntax.ReturnType.GetLocation(),
                method.Name, method.ReturnType.ToDisplayString()));
        }

        foreach (TypeDeclarationSyntax type in syntax.Ancestors().OfType<TypeDeclarationSyntax>())
        {
            if (!type.Modifiers.Any(SyntaxKind.PartialKeyword))
            {
                diagnostics.Add(DiagnosticInfo.Create(DiagnosticDescriptors.TypeNotPartial, nameLocation, type.Identifier.ValueText, method.Name));
            }
        }

        for (INamedTypeSymbol? type = method.ContainingType; type is not null; type = type.ContainingType)
        {
            if (type.IsFileLocal)
            {
                // C# lets only the file that declares a file-local type add to it; the derivatives are in a file of their own.
                diagnostics.Add(DiagnosticInfo.Create(DiagnosticDescriptors.UnsupportedConstruct, nameLocation,
                    "A method of the file-local type '" + type.Name + "'",
                    "the generated derivatives are in a file of their own, and C# lets only the declaring file add members to a file-local type; declare the type 'internal' (or nest it as a private type) instead of 'file'"));
            }
        }

        string? genericConstraints = null;
        if (method.IsGenericMethod)
        {
            if (BodyLowerer.GenericDeclarationProblem(method, out string constraints) is { } problem)
            {
                diagnostics.Add(DiagnosticInfo.Create(DiagnosticDescriptors.UnsupportedConstruct, syntax.TypeParameterList?.GetLocation() ?? nameLocation,
                    "The generic method '" + method.Name + "', which " + problem + ",", BodyLowerer.GenericRule));
            }
            else if (returnType is not ScalarType.Generic)
            {
                diagnostics.Add(DiagnosticInfo.Create(DiagnosticDescriptors.UnsupportedConstruct, syntax.ReturnType.GetLocation(),
                    "The generic method '" + method.Name + "', which returns " + (output is null ? method.ReturnType : ElementType(output.Type)).ToDisplayString() + ",", BodyLowerer.GenericRule));
            }

            genericConstraints = constraints;
        }

        BodyLowerer.CheckContainingTypeParameter(method, nameLocation, diagnostics);

        foreach (IParameterSymbol parameter in method.Parameters.Where(p => p.RefKind == RefKind.Out))
        {
            diagnostics.Add(DiagnosticInfo.Create(DiagnosticDescriptors.UnsupportedConstruct, parameter.Locations.FirstOrDefault(),
                "The out parameter '" + parameter.Name + "'", "a differentiated method returns its one value"));
        }

        CheckGeneratedNames(method, emitHessian, emitHessian && method.Parameters.Any(p => variables.Contains(p.Name) && IsFloatingPointVector(p.Type)),
            output is not null, nameLocation, diagnostics);

        EquatableArray<IrStatement> body = EquatableArray<IrStatement>.Empty;
        EquatableArray<IrGuard> guards = EquatableArray<IrGuard>.Empty;
        if (syntax.Body is null && syntax.ExpressionBody is null)
        {
            diagnostics.Add(DiagnosticInfo.Create(DiagnosticDescriptors.UnsupportedConstruct, nameLocation,
                "The method '" + method.Name + "' without a body", "DerivGen differentiates the body of the method it is applied to"));
        }
        else if (BodyLowerer.IsFloating(returnType) && ExpressionDepth(syntax, BodyLowerer.MaxDepth, cancellationToken) > BodyLowerer.MaxDepth)
        {
            // Refused from the syntax, before the compiler builds the operation tree: its builder recurses once per level
            // and overflows a 1 MB stack (an editor's worker thread) at about 410 nested calls, a crash no code can catch.
            diagnostics.Add(DiagnosticInfo.Create(DiagnosticDescriptors.UnsupportedConstruct, nameLocation,
                "An expression nested more than " + BodyLowerer.MaxDepth.ToString(System.Globalization.CultureInfo.InvariantCulture) + " levels deep", "split it into locals"));
        }
        else if (BodyLowerer.IsFloating(returnType))
        {
            if (semanticModel.GetOperation(syntax, cancellationToken) is IMethodBodyOperation { BlockBody: var block, ExpressionBody: var expression }
                && (block ?? expression) is { } bodyOperation)
            {
                var lowerer = new BodyLowerer(method, emitHessian, new HashSet<string>(method.Parameters.Where(p => variables.Contains(p.Name))
                    .SelectMany(p => StructLayout.VariableComponents(p) ?? new[] { Identifiers.Escape(p.Name) }), StringComparer.Ordinal), helpers, diagnostics,
                    cancellationToken, output);
                body = lowerer.Lower(bodyOperation);
                guards = lowerer.Guards.ToEquatableArray();
                if (output is not null)
                {
                    CheckOutputsUnconditional(body, lowerer.OutputLocations, insideBranch: false, diagnostics);
                }
            }
            else
            {
                // The compiler gave no operation tree for the body (it can stop binding a body nested too deeply). That can
                // depend on the thread's stack, so the analyzer may not see it: the generator writes an #error too.
                diagnostics.Add(DiagnosticInfo.Create(DiagnosticDescriptors.UnsupportedConstruct, nameLocation,
                    "The body of '" + method.Name + "'", "the compiler gave no analysable body (is it nested very deeply?); split it into locals"));
                helpers.Failure ??= "the compiler gave no analysable body for '" + method.Name + "' (is it nested very deeply?); split it into locals";
            }
        }

        if (!BodyLowerer.IsFloating(returnType) || diagnostics.Any(d => d.IsError))
        {
            return null;
        }

        return new MethodSpec(
            HintName: HintName(method),
            Namespace: method.ContainingNamespace is { IsGlobalNamespace: false } ns ? ns.ToDisplayString() : null,
            ContainingTypes: helpers.Shared.Memo(method.ContainingType, ContainingTypesOf),
            Name: Identifiers.Escape(method.Name),
            Accessibility: AccessibilityText(method.DeclaredAccessibility),
            IsStatic: method.IsStatic,
            ReturnType: returnType!.Value,
            Parameters: method.Parameters.Select(p => new ParameterSpec(
                Identifiers.Escape(p.Name),
                Modifiers(p, method),
                helpers.Shared.Memo(p.Type, ParameterTypeOf),
                variables.Contains(p.Name),
                variables.Contains(p.Name) && IsFloatingPointVector(p.Type),
                variables.Contains(p.Name) ? (StructLayout.VariableComponents(p) ?? Array.Empty<string>()).ToEquatableArray() : default)).ToEquatableArray(),
            EmitHessian: emitHessian,
            DisplayName: method.ToDisplayString(HeaderFormat),
            Cref: Identifiers.Escape(method.Name) + (method.IsGenericMethod ? "{T}" : string.Empty) + "(" + string.Join(", ", method.Parameters.Select(p => RefKindPrefix(p) + helpers.Shared.Memo(p.Type, CrefTypeOf))) + ")",
            Body: body,
            OutputName: output is null ? null : Identifiers.Escape(output.Name),
            HasSinCos: helpers.Shared.HasSinCos(semanticModel.Compilation, HasSinCosOf),
            GenericConstraints: genericConstraints,
            Guards: guards);
    }

    /// <summary>
    /// The span of outputs of a method that returns void and takes a <c>Span&lt;double&gt;</c> or <c>Span&lt;float&gt;</c>
    /// (passed by value) last; null for any other method.
    /// </summary>
    internal static IParameterSymbol? OutputParameter(IMethodSymbol method) =>
        method.ReturnsVoid && method.Parameters.Length > 0 && method.Parameters[method.Parameters.Length - 1] is
        {
            RefKind: RefKind.None,
            Type: INamedTypeSymbol { Name: "Span", TypeArguments.Length: 1 } span,
        } last
        && span.ContainingNamespace?.ToDisplayString() == "System" && IsFloatingPoint(span.TypeArguments[0])
            ? last
            : null;

    /// <summary>The variables of a method with outputs never include the outputs themselves.</summary>
    private static void CheckOutputVariables(IParameterSymbol output, HashSet<string> variables, Location nameLocation, List<DiagnosticInfo> diagnostics)
    {
        if (variables.Contains(output.Name))
        {
            diagnostics.Add(DiagnosticInfo.Create(DiagnosticDescriptors.UnsupportedConstruct, output.Locations.FirstOrDefault() ?? nameLocation,
                "The outputs '" + output.Name + "' as a variable",
                "the last parameter holds the outputs, whose Jacobian is generated; name the parameters to differentiate with respect to"));
        }
    }

    /// <summary>Outputs are written unconditionally: a write inside an if, a switch or after a jump would leave its Jacobian row stale.</summary>
    private static void CheckOutputsUnconditional(EquatableArray<IrStatement> statements, List<Location> locations, bool insideBranch, List<DiagnosticInfo> diagnostics)
    {
        foreach (IrStatement statement in statements)
        {
            switch (statement)
            {
                case IrOutput output when insideBranch:
                    diagnostics.Add(DiagnosticInfo.Create(DiagnosticDescriptors.UnsupportedConstruct, locations[output.Ordinal],
                        "An output written under a condition (in an if or a switch, or after a break, continue or return)",
                        "write every output unconditionally, choosing its value with ?: (outputs[i] = c ? a : b)"));
                    break;
                case IrIf branch:
                    CheckOutputsUnconditional(branch.Then, locations, true, diagnostics);
                    CheckOutputsUnconditional(branch.Else, locations, true, diagnostics);
                    break;
                case IrFor loop:
                    CheckOutputsUnconditional(loop.Body, locations, insideBranch, diagnostics);
                    break;
                case IrWhile loop:
                    CheckOutputsUnconditional(loop.Body, locations, insideBranch, diagnostics);
                    break;
            }
        }
    }

    /// <summary>Whether the target framework has Math.SinCos and MathF.SinCos (.NET 7 and later; not netstandard2.0).</summary>
    private static bool HasSinCos(Compilation compilation) =>
        compilation.GetTypeByMetadataName("System.Math")?.GetMembers("SinCos").Length > 0
        && compilation.GetTypeByMetadataName("System.MathF")?.GetMembers("SinCos").Length > 0;

    /// <summary>
    /// The deepest nesting of expressions in the method's body (each expression inside another counts one level), found
    /// without recursion; stops counting once past <paramref name="limit"/>.
    /// </summary>
    internal static int ExpressionDepth(MethodDeclarationSyntax syntax, int limit, CancellationToken cancellationToken)
    {
        SyntaxNode? body = (SyntaxNode?)syntax.Body ?? syntax.ExpressionBody;
        if (body is null)
        {
            return 0;
        }

        int deepest = 0;
        var stack = new Stack<(SyntaxNode Node, int Depth)>();
        stack.Push((body, 0));
        while (stack.Count > 0)
        {
            (SyntaxNode node, int depth) = stack.Pop();
            if ((stack.Count & 0xFFF) == 0)
            {
                cancellationToken.ThrowIfCancellationRequested();
            }

            foreach (SyntaxNodeOrToken item in node.ChildNodesAndTokens())
            {
                if (item.AsNode() is not { } child)
                {
                    continue;
                }

                int childDepth = child is ExpressionSyntax ? depth + 1 : depth;
                if (childDepth > deepest)
                {
                    deepest = childDepth;
                    if (deepest > limit)
                    {
                        return deepest;
                    }
                }

                stack.Push((child, childDepth));
            }
        }

        return deepest;
    }

    private static HashSet<string> SelectVariables(IMethodSymbol method, AttributeData attribute, List<DiagnosticInfo> diagnostics,
        Location nameLocation, CancellationToken cancellationToken)
    {
        var variables = new HashSet<string>(StringComparer.Ordinal);
        var names = new List<(string? Name, int Index)>();
        if (attribute.ConstructorArguments.Length == 1 && attribute.ConstructorArguments[0].Kind == TypedConstantKind.Array && !attribute.ConstructorArguments[0].IsNull)
        {
            ImmutableArrayIndexed(attribute.ConstructorArguments[0], names);
        }

        IReadOnlyList<AttributeArgumentSyntax> argumentSyntax =
            (attribute.ApplicationSyntaxReference?.GetSyntax(cancellationToken) as AttributeSyntax)?.ArgumentList?.Arguments
            .Where(a => a.NameEquals is null).ToList() ?? (IReadOnlyList<AttributeArgumentSyntax>)Array.Empty<AttributeArgumentSyntax>();

        if (names.Count == 0)
        {
            foreach (IParameterSymbol parameter in method.Parameters.Where(IsDefaultVariable))
            {
                variables.Add(parameter.Name);
            }
        }

        foreach ((string? name, int index) in names)
        {
            Location location = index < argumentSyntax.Count ? argumentSyntax[index].GetLocation() : nameLocation;
            IParameterSymbol? parameter = method.Parameters.FirstOrDefault(p => p.Name == name);
            if (name is null || parameter is null)
            {
                diagnostics.Add(DiagnosticInfo.Create(DiagnosticDescriptors.UnknownVariable, location, name ?? "null", method.Name));
            }
            else if (IsVectorOfT(parameter.Type))
            {
                diagnostics.Add(DiagnosticInfo.Create(DiagnosticDescriptors.UnsupportedConstruct, location,
                    "The vector variable '" + parameter.Name + "' of T",
                    "vectors of variables are differentiated in double and float methods in this version: write this method for double (a double[] variable) or float, or take the elements as T parameters"));
            }
            else if (IsFloatingPointVector(parameter.Type))
            {
                if (ElementType(parameter.Type).SpecialType != (OutputParameter(method) is { } output ? ElementType(output.Type) : method.ReturnType).SpecialType)
                {
                    diagnostics.Add(DiagnosticInfo.Create(DiagnosticDescriptors.UnsupportedConstruct, location,
                        "The vector variable '" + parameter.Name + "' of " + ElementType(parameter.Type).ToDisplayString(),
                        "a vector variable's elements must have the method's return type (double elements for a double method, float for float)"));
                }
                else if (!variables.Add(name))
                {
                    diagnostics.Add(DiagnosticInfo.Create(DiagnosticDescriptors.DuplicateVariable, location, name));
                }
            }
            else if (StructLayout.IsStructVariable(parameter, out string? structProblem) || structProblem is not null)
            {
                // A System.Numerics vector or user struct of float/double fields: one variable per field (StructLayout.cs).
                diagnostics.AddRange(structProblem is null ? Enumerable.Empty<DiagnosticInfo>() : new[] { DiagnosticInfo.Create(DiagnosticDescriptors.UnsupportedConstruct, location,
                    "The struct variable '" + parameter.Name + "'", structProblem) });
                if (structProblem is null && !variables.Add(name))
                {
                    diagnostics.Add(DiagnosticInfo.Create(DiagnosticDescriptors.DuplicateVariable, location, name));
                }
            }
            else if (!IsFloatingPoint(parameter.Type) || parameter.RefKind is not (RefKind.None or RefKind.In))
            {
                string refKind = parameter.RefKind is RefKind.None or RefKind.In ? string.Empty
                    : " and is passed by " + parameter.RefKind.ToString().ToLowerInvariant();
                diagnostics.Add(DiagnosticInfo.Create(DiagnosticDescriptors.VariableNotFloatingPoint, location,
                    parameter.Name, parameter.Type.ToDisplayString(), refKind));
            }
            else if (!variables.Add(name))
            {
                diagnostics.Add(DiagnosticInfo.Create(DiagnosticDescriptors.DuplicateVariable, location, name));
            }
        }

        if (names.Count == 0 && variables.Count == 0)
        {
            diagnostics.Add(DiagnosticInfo.Create(DiagnosticDescriptors.NoVariables, nameLocation, method.Name));
        }

        return variables;
    }

    /// <summary>Without names in the attribute, every double or float parameter passed by value or 'in' is a variable.</summary>
    internal static bool IsDefaultVariable(IParameterSymbol parameter) =>
        IsFloatingPoint(parameter.Type) && parameter.RefKind is RefKind.None or RefKind.In;

    /// <summary>The differentiation variables of another [Differentiate] method, in order (for calls between them).</summary>
    internal static IReadOnlyList<IParameterSymbol> VariablesOf(IMethodSymbol method, AttributeData attribute)
    {
        var names = new HashSet<string>(StringComparer.Ordinal);
        if (attribute.ConstructorArguments.Length == 1 && attribute.ConstructorArguments[0].Kind == TypedConstantKind.Array && !attribute.ConstructorArguments[0].IsNull)
        {
            foreach (TypedConstant value in attribute.ConstructorArguments[0].Values)
            {
                if (value.Value is string name)
                {
                    names.Add(name);
                }
            }
        }

        return method.Parameters.Where(p => names.Count == 0 ? IsDefaultVariable(p) : names.Contains(p.Name) && IsFloatingPoint(p.Type)).ToList();
    }

    /// <summary>The attribute's <c>Loops</c> property (Automatic when absent or out of range).</summary>
    private static LoopPreference LoopsOf(AttributeData attribute) =>
        attribute.NamedArguments.FirstOrDefault(a => a.Key == "Loops").Value.Value is int value && value is >= 0 and <= 2 ? (LoopPreference)value : LoopPreference.Automatic;

    /// <summary>Whether a [Differentiate] method generates its Hessian method.</summary>
    internal static bool HasHessian(AttributeData attribute) =>
        attribute.NamedArguments.FirstOrDefault(a => a.Key == "Hessian").Value.Value is not false;

    private static void ImmutableArrayIndexed(TypedConstant array, List<(string? Name, int Index)> names)
    {
        for (int i = 0; i < array.Values.Length; i++)
        {
            names.Add((array.Values[i].Value as string, i));
        }
    }

    private static void CheckGeneratedNames(IMethodSymbol method, bool emitHessian, bool pairwise, bool jacobian, Location location, List<DiagnosticInfo> diagnostics)
    {
        INamedTypeSymbol type = method.ContainingType;
        foreach (string name in GeneratedNames.AllFor(method.Name, jacobian, emitHessian, pairwise))
        {
            // The analyzer sees the compilation with our own output in it: those members are ours, not a collision.
            if (type.GetMembers(name).Any(member => !IsGeneratedByUs(member)))
            {
                // The taken name travels as a property too, so that the code fix does not have to parse the message.
                diagnostics.Add(DiagnosticInfo.Create(DiagnosticDescriptors.GeneratedNameTaken, location,
                    new[] { new DiagnosticProperty(DiagnosticProperties.TakenName, name) }.ToEquatableArray(), type.Name, name, method.Name));
            }
        }
    }

    private static bool IsGeneratedByUs(ISymbol member) => member.GetAttributes().Any(a =>
        a.AttributeClass?.ToDisplayString() == "System.CodeDom.Compiler.GeneratedCodeAttribute"
        && a.ConstructorArguments.Length > 0 && a.ConstructorArguments[0].Value is GeneratedNames.ToolName);

    private static ITypeSymbol ElementType(ITypeSymbol type) =>
        type is IArrayTypeSymbol array ? array.ElementType : ((INamedTypeSymbol)type).TypeArguments[0];

    private static bool IsFloatingPointVector(ITypeSymbol type) =>
        (type is IArrayTypeSymbol { Rank: 1 } array && IsDoubleOrFloat(array.ElementType))
        || (type is INamedTypeSymbol { Name: "Span" or "ReadOnlySpan", TypeArguments.Length: 1 } span
            && span.ContainingNamespace?.ToDisplayString() == "System" && IsDoubleOrFloat(span.TypeArguments[0]));

    private static bool IsVectorOfT(ITypeSymbol type) =>
        (type is IArrayTypeSymbol { Rank: 1 } array && BodyLowerer.IsMethodTypeParameter(array.ElementType))
        || (type is INamedTypeSymbol { Name: "Span" or "ReadOnlySpan", TypeArguments.Length: 1 } span
            && span.ContainingNamespace?.ToDisplayString() == "System" && BodyLowerer.IsMethodTypeParameter(span.TypeArguments[0]));

    /// <summary>double, float, or the T of a generic method (vectors of variables are double or float only).</summary>
    private static bool IsFloatingPoint(ITypeSymbol type) => IsDoubleOrFloat(type) || BodyLowerer.IsMethodTypeParameter(type);

    private static bool IsDoubleOrFloat(ITypeSymbol type) => type.SpecialType is SpecialType.System_Double or SpecialType.System_Single;

    private static string Modifiers(IParameterSymbol parameter, IMethodSymbol method)
    {
        var text = new StringBuilder();
        if (parameter.Ordinal == 0 && method.IsExtensionMethod)
        {
            text.Append("this ");
        }

        return text.Append(RefKindPrefix(parameter)).ToString();
    }

    private static string RefKindPrefix(IParameterSymbol parameter) => parameter.RefKind switch
    {
        RefKind.Ref => "ref ",
        RefKind.In => "in ",
        RefKind.RefReadOnlyParameter => "ref readonly ",
        _ => string.Empty,
    };

    /// <summary>A parameter's type as the generated signatures write it (fully qualified, with nullable annotations).</summary>
    private static string ParameterTypeText(ITypeSymbol type) => type.ToDisplayString(ParameterTypeFormat);

    /// <summary>A parameter's type as a doc-comment cref writes it (after the ref kind).</summary>
    private static string CrefTypeText(ITypeSymbol type) =>
        type.ToDisplayString(SymbolDisplayFormat.FullyQualifiedFormat).Replace('<', '{').Replace('>', '}');

    // One delegate each, so that CompilationLowerings.Memo finds its entries again (it compares them by reference).
    private static readonly Func<INamedTypeSymbol, EquatableArray<ContainingTypeSpec>> ContainingTypesOf = ContainingTypes;
    private static readonly Func<ITypeSymbol, string> ParameterTypeOf = ParameterTypeText;
    private static readonly Func<ITypeSymbol, string> CrefTypeOf = CrefTypeText;
    private static readonly Func<Compilation, bool> HasSinCosOf = HasSinCos;

    private static readonly SymbolDisplayFormat ParameterTypeFormat =
        SymbolDisplayFormat.FullyQualifiedFormat.AddMiscellaneousOptions(SymbolDisplayMiscellaneousOptions.IncludeNullableReferenceTypeModifier);

    private static EquatableArray<ContainingTypeSpec> ContainingTypes(INamedTypeSymbol innermost)
    {
        var types = new List<ContainingTypeSpec>();
        for (INamedTypeSymbol? type = innermost; type is not null; type = type.ContainingType)
        {
            string keyword = type switch
            {
                { IsRecord: true, TypeKind: TypeKind.Struct } => "record struct",
                { IsRecord: true } => "record",
                { TypeKind: TypeKind.Interface } => "interface",
                { TypeKind: TypeKind.Struct, IsRefLikeType: true } => "ref struct",
                { TypeKind: TypeKind.Struct } => "struct",
                _ => "class",
            };
            string name = Identifiers.Escape(type.Name);
            if (type.TypeParameters.Length > 0)
            {
                name += "<" + string.Join(", ", type.TypeParameters.Select(t => Identifiers.Escape(t.Name))) + ">";
            }

            types.Insert(0, new ContainingTypeSpec(keyword, name));
        }

        return types.ToEquatableArray();
    }

    private static string AccessibilityText(Accessibility accessibility) => accessibility switch
    {
        Accessibility.Public => "public",
        Accessibility.Internal => "internal",
        Accessibility.Protected => "protected",
        Accessibility.ProtectedOrInternal => "protected internal",
        Accessibility.ProtectedAndInternal => "private protected",
        _ => "private",
    };

    private static readonly SymbolDisplayFormat HeaderFormat = new(
        globalNamespaceStyle: SymbolDisplayGlobalNamespaceStyle.Omitted,
        typeQualificationStyle: SymbolDisplayTypeQualificationStyle.NameAndContainingTypesAndNamespaces,
        genericsOptions: SymbolDisplayGenericsOptions.IncludeTypeParameters,
        memberOptions: SymbolDisplayMemberOptions.IncludeContainingType | SymbolDisplayMemberOptions.IncludeParameters,
        parameterOptions: SymbolDisplayParameterOptions.IncludeType | SymbolDisplayParameterOptions.IncludeName | SymbolDisplayParameterOptions.IncludeParamsRefOut,
        miscellaneousOptions: SymbolDisplayMiscellaneousOptions.UseSpecialTypes | SymbolDisplayMiscellaneousOptions.EscapeKeywordIdentifiers);

    /// <summary>
    /// "Namespace.Outer.Inner.Method.g.cs"; when the type has overloads of the method, the parameter types are appended
    /// so that every marked overload gets its own file.
    /// </summary>
    private static string HintName(IMethodSymbol method)
    {
        var name = new StringBuilder();
        if (method.ContainingNamespace is { IsGlobalNamespace: false } ns)
        {
            name.Append(ns.ToDisplayString()).Append('.');
        }

        var types = new List<string>();
        for (INamedTypeSymbol? type = method.ContainingType; type is not null; type = type.ContainingType)
        {
            types.Insert(0, type.TypeParameters.Length > 0 ? type.Name + "_" + type.TypeParameters.Length.ToString(System.Globalization.CultureInfo.InvariantCulture) : type.Name);
        }

        name.Append(string.Join(".", types)).Append('.').Append(method.Name);
        if (method.ContainingType.GetMembers(method.Name).Length > 1)
        {
            foreach (IParameterSymbol parameter in method.Parameters)
            {
                name.Append('_').Append(parameter.Type.ToDisplayString(SymbolDisplayFormat.MinimallyQualifiedFormat));
            }
        }

        var safe = new StringBuilder(name.Length + 5);
        foreach (char c in name.ToString())
        {
            safe.Append(char.IsLetterOrDigit(c) || c is '.' or '_' ? c : '_');
        }

        return safe.Append(".g.cs").ToString();
    }
}
