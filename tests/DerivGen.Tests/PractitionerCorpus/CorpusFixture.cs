using System;
using System.Collections.Generic;
using System.Collections.Immutable;
using System.Globalization;
using System.IO;
using System.Linq;
using System.Reflection;
using System.Text;
using DerivGen.Generator;
using DerivGen.Generator.Diagnostics;
using DerivGen.Tests.Infrastructure;
using Microsoft.CodeAnalysis;
using Microsoft.CodeAnalysis.CSharp;
using Microsoft.CodeAnalysis.CSharp.Syntax;
using Microsoft.CodeAnalysis.Diagnostics;

namespace DerivGen.Tests.PractitionerCorpus;

/// <summary>
/// Compiles the whole corpus once: one compilation with one file per case (the plain C#, as the user wrote it), the
/// analyzer run once over it, the generator run once, then one more file of adapters (array-in, array-out wrappers
/// of each case's method, its generated members where there are any, and its hand reference) emitted and loaded.
/// Nothing here asserts: what went wrong is kept and each case's test reports its own part.
/// </summary>
public sealed class CorpusFixture : IDisposable
{
    private readonly Dictionary<string, CaseRun> _runs = new(StringComparer.Ordinal);

    public CorpusFixture()
    {
        Cases = CorpusCases.All;
        var trees = Cases.Select(c => CSharpSyntaxTree.ParseText(c.Source, GeneratorHarness.ParseOptions, path: PathOf(c), encoding: Encoding.UTF8)).ToList();
        var options = new CSharpCompilationOptions(
            OutputKind.DynamicallyLinkedLibrary,
            nullableContextOptions: NullableContextOptions.Enable,
            optimizationLevel: OptimizationLevel.Release,
            deterministic: true);
        CSharpCompilation input = CSharpCompilation.Create("PractitionerCorpus", trees, GeneratorHarness.References, options);

        var sourceDiagnostics = input.GetDiagnostics()
            .Where(d => d.Severity >= DiagnosticSeverity.Warning && d.Id != "CS1591")
            .ToLookup(d => d.Location.SourceTree?.FilePath ?? "");
        var analyzerDiagnostics = input.WithAnalyzers(ImmutableArray.Create<DiagnosticAnalyzer>(new DerivativeAnalyzer()))
            .GetAnalyzerDiagnosticsAsync().GetAwaiter().GetResult()
            .ToLookup(d => d.Location.SourceTree?.FilePath ?? "");

        GeneratorDriver driver = CSharpGeneratorDriver.Create(new[] { new DerivativeGenerator().AsSourceGenerator() }, parseOptions: GeneratorHarness.ParseOptions)
            .RunGeneratorsAndUpdateCompilation(input, out Compilation output, out var driverDiagnostics);
        GeneratorRunResult result = driver.GetRunResult().Results.Single();
        GeneratorProblem = result.Exception?.ToString()
            ?? (driverDiagnostics.Concat(result.Diagnostics).Any() ? string.Join("\n", driverDiagnostics.Concat(result.Diagnostics)) : null);

        foreach (var (c, tree) in Cases.Zip(trees))
        {
            var run = new CaseRun(c)
            {
                SourceDiagnostics = sourceDiagnostics[tree.FilePath].Select(d => d.ToString()).ToList(),
            };
            var dg = analyzerDiagnostics[tree.FilePath].OrderBy(d => d.Location.SourceSpan.Start).ThenBy(d => d.Id, StringComparer.Ordinal).ToList();
            run.AnalyzerErrors = dg.Count(d => d.Severity == DiagnosticSeverity.Error);
            var marked = MarkedMethod(input, tree);
            run.MarkedMethod = marked is null ? null : marked.ContainingType.ToDisplayString() + "." + marked.Name;
            INamedTypeSymbol? typeAfter = marked is null ? null : output.GetTypeByMetadataName(MetadataName(marked.ContainingType));
            bool hasGradient = typeAfter?.GetMembers(marked!.Name + "Gradient").Any() == true;
            bool hasHessian = typeAfter?.GetMembers(marked!.Name + "Hessian").Any() == true;
            run.Observed = new Observation(hasGradient && run.AnalyzerErrors == 0, hasHessian, dg.Select(d => d.Id + ": " + d.GetMessage(CultureInfo.InvariantCulture)).ToList());
            run.GeneratedWithoutAnalyzerAgreement = hasGradient != (run.AnalyzerErrors == 0);
            _runs.Add(c.Name, run);
        }

        Advice = RunAdviceEdits(Cases.Where(c => c.AdviceEdit.Length > 0), options);

        string adapters = Adapters(Cases, _runs);
        Compilation withAdapters = output.AddSyntaxTrees(CSharpSyntaxTree.ParseText(adapters, GeneratorHarness.ParseOptions, path: "CorpusAdapters.cs", encoding: Encoding.UTF8));
        using var image = new MemoryStream();
        var emit = withAdapters.Emit(image);
        var emitProblems = emit.Diagnostics.Where(d => d.Severity == DiagnosticSeverity.Error).ToList();
        if (!emit.Success || emitProblems.Count > 0)
        {
            LoadProblem = "The corpus (with the generated code and the adapters) did not compile:\n" + string.Join("\n", emitProblems.Take(30));
            return;
        }

        image.Position = 0;
        Assembly = new CompiledAssembly(image);
        foreach (CorpusCase c in Cases)
        {
            CaseRun run = _runs[c.Name];
            Type type = Assembly.Type(AdapterType(c));
            run.Value = (Func<double[], double>)type.GetMethod("V")!.CreateDelegate(typeof(Func<double[], double>));
            if (type.GetMethod("R") is { } r)
            {
                run.HandReference = (Action<double[], double[]>)r.CreateDelegate(typeof(Action<double[], double[]>));
            }

            if (type.GetMethod("G") is { } g)
            {
                run.Gradient = (Func<double[], double[], double>)g.CreateDelegate(typeof(Func<double[], double[], double>));
            }

            if (type.GetMethod("H") is { } h)
            {
                run.Hessian = (Func<double[], double[], double[], double>)h.CreateDelegate(typeof(Func<double[], double[], double[], double>));
            }
        }
    }

    public IReadOnlyList<CorpusCase> Cases { get; }

    /// <summary>The generator threw or reported something (it must not; every case fails then).</summary>
    public string? GeneratorProblem { get; }

    /// <summary>The corpus could not be emitted and loaded (every case fails then).</summary>
    public string? LoadProblem { get; }

    internal CompiledAssembly? Assembly { get; }

    /// <summary>For each case with an <see cref="CorpusCase.AdviceEdit"/>: what its edited source gives.</summary>
    internal IReadOnlyDictionary<string, AdviceRun> Advice { get; } = new Dictionary<string, AdviceRun>();

    internal CaseRun Run(string name) => _runs[name];

    public void Dispose() => Assembly?.Dispose();

    /// <summary>Applies each case's advice edit (in its own namespace, CorpusAdvice.Name) and compiles all of them in one
    /// more compilation, with the analyzer and the generator.</summary>
    private static Dictionary<string, AdviceRun> RunAdviceEdits(IEnumerable<CorpusCase> cases, CSharpCompilationOptions options)
    {
        var runs = new Dictionary<string, AdviceRun>(StringComparer.Ordinal);
        var trees = new List<SyntaxTree>();
        foreach (CorpusCase c in cases)
        {
            string source = c.Source.Replace("namespace " + c.Namespace + ";", "namespace CorpusAdvice." + c.Name + ";", StringComparison.Ordinal);
            var run = new AdviceRun(c);
            foreach (var (find, replace) in c.AdviceEdit)
            {
                if (!source.Contains(find, StringComparison.Ordinal))
                {
                    run.MissingEdits.Add(find);
                }

                source = source.Replace(find, replace, StringComparison.Ordinal);
            }

            run.Source = source;
            trees.Add(CSharpSyntaxTree.ParseText(source, GeneratorHarness.ParseOptions, path: "Advice/" + c.Name + ".cs", encoding: Encoding.UTF8));
            runs.Add(c.Name, run);
        }

        CSharpCompilation input = CSharpCompilation.Create("PractitionerCorpusAdvice", trees, GeneratorHarness.References, options);
        var errors = input.GetDiagnostics().Where(d => d.Severity == DiagnosticSeverity.Error).ToLookup(d => d.Location.SourceTree?.FilePath ?? "");
        var analyzer = input.WithAnalyzers(ImmutableArray.Create<DiagnosticAnalyzer>(new DerivativeAnalyzer()))
            .GetAnalyzerDiagnosticsAsync().GetAwaiter().GetResult()
            .ToLookup(d => d.Location.SourceTree?.FilePath ?? "");
        CSharpGeneratorDriver.Create(new[] { new DerivativeGenerator().AsSourceGenerator() }, parseOptions: GeneratorHarness.ParseOptions)
            .RunGeneratorsAndUpdateCompilation(input, out Compilation output, out _);
        foreach (AdviceRun run in runs.Values)
        {
            string path = "Advice/" + run.Case.Name + ".cs";
            run.CSharpErrors = errors[path].Select(d => d.ToString()).ToList();
            var dg = analyzer[path].OrderBy(d => d.Location.SourceSpan.Start).ToList();
            run.Diagnostics = dg.Select(d => d.Id + ": " + d.GetMessage(CultureInfo.InvariantCulture)).ToList();
            string marked = MarkedMethodName(run.Case.Source);
            bool generated = output.GetSymbolsWithName(marked + "Gradient", SymbolFilter.Member)
                .Any(m => m.ContainingNamespace.ToDisplayString() == "CorpusAdvice." + run.Case.Name);
            run.Accepted = generated && run.CSharpErrors.Count == 0 && dg.All(d => d.Severity != DiagnosticSeverity.Error);
        }

        return runs;
    }

    /// <summary>The name of the method after the [Differentiate(...)] line in a case's source.</summary>
    private static string MarkedMethodName(string source)
    {
        var tree = CSharpSyntaxTree.ParseText(source, GeneratorHarness.ParseOptions);
        return tree.GetRoot().DescendantNodes().OfType<MethodDeclarationSyntax>()
            .Single(m => m.AttributeLists.SelectMany(l => l.Attributes).Any(a => a.Name.ToString() == "Differentiate"))
            .Identifier.ValueText;
    }

    private static string PathOf(CorpusCase c) => "PractitionerCorpus/" + c.Name + ".cs";

    private static string AdapterType(CorpusCase c) => "CorpusAdapters." + c.Name + ".A";

    private static string MetadataName(INamedTypeSymbol type) =>
        type.ContainingType is { } outer ? MetadataName(outer) + "+" + type.MetadataName
        : (type.ContainingNamespace.IsGlobalNamespace ? "" : type.ContainingNamespace.ToDisplayString() + ".") + type.MetadataName;

    private static IMethodSymbol? MarkedMethod(Compilation compilation, SyntaxTree tree)
    {
        SemanticModel model = compilation.GetSemanticModel(tree);
        var marked = tree.GetRoot().DescendantNodes().OfType<MethodDeclarationSyntax>()
            .Select(m => model.GetDeclaredSymbol(m))
            .Where(m => m is not null && m.GetAttributes().Any(a => a.AttributeClass?.ToDisplayString() == "DerivGen.DifferentiateAttribute"))
            .ToList();
        return marked.Count == 1 ? marked[0] : null;
    }

    /// <summary>One namespace per case: V(x) calls the user's method, G and H its generated gradient and Hessian
    /// (only where the generator made them), R the hand reference. Float methods are called with float arguments
    /// and float spans, copied to and from the double arrays.</summary>
    private static string Adapters(IEnumerable<CorpusCase> cases, Dictionary<string, CaseRun> runs)
    {
        var s = new StringBuilder("// Adapters of the practitioner corpus (test code, not a case).\n#nullable disable\n");
        foreach (CorpusCase c in cases)
        {
            CaseRun run = runs[c.Name];
            bool single = c.Precision == Precision.Single;
            string Call(string m, string e) => c.Call.Replace("{M}", m, StringComparison.Ordinal).Replace("{E}", e, StringComparison.Ordinal);
            s.Append("namespace CorpusAdapters.").Append(c.Name).Append("\n{\n")
                .Append("    using System;\n    using System.Linq;\n    using System.Numerics;\n    using global::").Append(c.Namespace).Append(";\n\n")
                .Append("    public static class A\n    {\n")
                .Append("        public static double V(double[] x) => ").Append(Call("", "")).Append(";\n");
            if (run.Observed.Accepted)
            {
                s.Append(single
                    ? "        public static double G(double[] x, double[] g) { var gf = new float[g.Length]; double v = " + Call("Gradient", ", gf") + "; for (int i = 0; i < g.Length; i++) g[i] = gf[i]; return v; }\n"
                    : "        public static double G(double[] x, double[] g) => " + Call("Gradient", ", g") + ";\n");
                if (run.Observed.Hessian)
                {
                    s.Append(single
                        ? "        public static double H(double[] x, double[] g, double[] h) { var gf = new float[g.Length]; var hf = new float[h.Length]; double v = " + Call("Hessian", ", gf, hf") + "; for (int i = 0; i < g.Length; i++) g[i] = gf[i]; for (int i = 0; i < h.Length; i++) h[i] = hf[i]; return v; }\n"
                        : "        public static double H(double[] x, double[] g, double[] h) => " + Call("Hessian", ", g, h") + ";\n");
                }
            }

            if (c.Reference.HandCode is { } hand)
            {
                s.Append("        public static void R(double[] x, double[] g)\n        {\n").Append(hand).Append("\n        }\n");
            }

            s.Append("    }\n}\n\n");
        }

        return s.ToString();
    }
}

/// <summary>What a case's source gives once its refusal's advice is followed.</summary>
internal sealed class AdviceRun
{
    public AdviceRun(CorpusCase c) => Case = c;

    public CorpusCase Case { get; }

    public string Source { get; set; } = "";

    /// <summary>Edit texts not found in the source (a stale edit: the test fails).</summary>
    public List<string> MissingEdits { get; } = new();

    public List<string> CSharpErrors { get; set; } = new();

    public List<string> Diagnostics { get; set; } = new();

    /// <summary>MGradient was generated for the case's method, without C# or DG errors: the advice works.</summary>
    public bool Accepted { get; set; }
}

/// <summary>What the fixture found for one case.</summary>
internal sealed class CaseRun
{
    public CaseRun(CorpusCase c) => Case = c;

    public CorpusCase Case { get; }

    public List<string> SourceDiagnostics { get; init; } = new();

    public string? MarkedMethod { get; set; }

    public int AnalyzerErrors { get; set; }

    public Observation Observed { get; set; } = new(false, false, Array.Empty<string>());

    /// <summary>The generator made MGradient although the analyzer reported an error, or made nothing without one.</summary>
    public bool GeneratedWithoutAnalyzerAgreement { get; set; }

    public Func<double[], double>? Value { get; set; }

    public Func<double[], double[], double>? Gradient { get; set; }

    public Func<double[], double[], double[], double>? Hessian { get; set; }

    public Action<double[], double[]>? HandReference { get; set; }
}
