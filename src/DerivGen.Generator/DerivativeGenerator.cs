using System;
using System.Linq;
using System.Collections.Immutable;
using System.Text;
using System.Threading;
using DerivGen.Generator.Differentiation;
using DerivGen.Generator.Emit;
using DerivGen.Generator.Lowering;
using DerivGen.Generator.Model;
using Microsoft.CodeAnalysis;
using Microsoft.CodeAnalysis.CSharp.Syntax;
using Microsoft.CodeAnalysis.Text;

namespace DerivGen.Generator;

/// <summary>
/// The pipeline, top to bottom. Diagnostics are reported by <see cref="Diagnostics.DerivativeAnalyzer"/>, which runs
/// the same Lower step; the generator only generates, and generates nothing for a method with an error.
/// </summary>
[Generator(LanguageNames.CSharp)]
public sealed class DerivativeGenerator : IIncrementalGenerator
{
    /// <summary>Tracking name of the step that lowers each marked method to its <see cref="MethodSpec"/>.</summary>
    public const string LowerStep = "Lower";

    /// <summary>Tracking name of the step that differentiates a spec and writes its file.</summary>
    public const string EmitStep = "Emit";

    /// <summary>Tracking name of the step that gathers the helpers the marked methods call, each once.</summary>
    public const string HelperStep = "Helpers";

    /// <summary>Tracking name of the step that differentiates a helper's spec and writes its file.</summary>
    public const string EmitHelperStep = "EmitHelper";

    public void Initialize(IncrementalGeneratorInitializationContext context)
    {
        // Discover + Lower: only methods carrying [Differentiate]; each becomes an equatable spec (the cache boundary),
        // with the specs of the unmarked helpers it calls.
        IncrementalValuesProvider<LoweringResult> lowered = context.SyntaxProvider
            .ForAttributeWithMetadataName(
                MethodParser.AttributeMetadataName,
                predicate: static (node, _) => node is MethodDeclarationSyntax,
                transform: static (ctx, ct) => LowerMethod(ctx, ct))
            .Where(static result => result?.Spec is not null)
            .Select(static (result, _) => result!)
            .WithTrackingName(LowerStep);

        // Differentiate + Simplify + Emit: runs again only for a spec that changed.
        IncrementalValuesProvider<GeneratedFile> files = lowered
            .Select(static (result, ct) => EmitFile(result.Spec!, ct))
            .WithTrackingName(EmitStep);

        // A helper called from several methods is generated once (with its Hessian if any caller needs one). Helpers are
        // lowered again from the current compilation, so an edit of a helper in another file is never missed; their
        // files are rewritten only when a helper's spec changes.
        IncrementalValuesProvider<GeneratedFile> helperFiles = lowered
            .Select(static (result, _) => result.Helpers)
            .Collect()
            .Combine(context.CompilationProvider)
            .SelectMany(static (pair, ct) => MethodParser.LowerHelpers(pair.Left.SelectMany(h => h), pair.Right, ct).ToImmutableArray())
            .WithTrackingName(HelperStep)
            .Select(static (spec, ct) => EmitFile(spec, ct))
            .WithTrackingName(EmitHelperStep);

        context.RegisterSourceOutput(files, static (spc, file) =>
            spc.AddSource(file.HintName, SourceText.From(file.Text, Encoding.UTF8)));
        context.RegisterSourceOutput(helperFiles, static (spc, file) =>
            spc.AddSource(file.HintName, SourceText.From(file.Text, Encoding.UTF8)));
    }

    private static LoweringResult? LowerMethod(GeneratorAttributeSyntaxContext context, CancellationToken cancellationToken)
    {
        if (context.TargetSymbol is not IMethodSymbol method || context.TargetNode is not MethodDeclarationSyntax syntax || context.Attributes.IsEmpty)
        {
            return null;
        }

        LoweringResult result = MethodParser.Lower(method, syntax, context.Attributes[0], context.SemanticModel, cancellationToken);
        return result with { Diagnostics = EquatableArray<Diagnostics.DiagnosticInfo>.Empty }; // The analyzer reports them.
    }

    private static GeneratedFile EmitFile(MethodSpec spec, CancellationToken cancellationToken)
    {
        try
        {
            // With vector variables the Hessian is assembled from a pair method (see PairHessian); otherwise it is one program.
            bool pairwise = spec.EmitHessian && spec.Parameters.Any(p => p.IsVector);
            DerivativeProgram program = DerivativeProgram.Create(pairwise ? spec with { EmitHessian = false } : spec, cancellationToken);
            PairHessian? pairs = pairwise ? PairHessian.Create(spec, cancellationToken) : null;
            return new GeneratedFile(spec.HintName, DerivativeEmitter.Emit(spec, program, pairs));
        }
        catch (OperationCanceledException)
        {
            throw;
        }
        catch (Exception exception)
        {
            // Never crash the compiler, never emit a wrong derivative: make the failure a visible build error instead.
            string message = (exception.GetType().Name + ": " + exception.Message).Replace('\r', ' ').Replace('\n', ' ');
            return new GeneratedFile(spec.HintName,
                "// <auto-generated/>\n#error DerivGen could not differentiate " + spec.DisplayName + " (" + message + "). Please report this with the method's source.\n");
        }
    }

    /// <summary>One generated file: the output of the Emit step.</summary>
    private sealed record GeneratedFile(string HintName, string Text);
}
