using System;
using System.Collections.Generic;
using System.Collections.Immutable;
using System.Diagnostics;
using System.Globalization;
using System.IO;
using System.Linq;
using System.Text;
using System.Threading;
using BenchmarkDotNet.Attributes;
using BenchmarkDotNet.Columns;
using BenchmarkDotNet.Configs;
using BenchmarkDotNet.Diagnosers;
using BenchmarkDotNet.Exporters;
using BenchmarkDotNet.Jobs;
using BenchmarkDotNet.Loggers;
using BenchmarkDotNet.Running;
using BenchmarkDotNet.Toolchains.InProcess.Emit;
using DerivGen.Generator;
using DerivGen.Generator.Diagnostics;
using Microsoft.CodeAnalysis;
using Microsoft.CodeAnalysis.CSharp;
using Microsoft.CodeAnalysis.CSharp.Syntax;
using Microsoft.CodeAnalysis.Diagnostics;
using Microsoft.CodeAnalysis.Operations;
using Perfolizer.Horology;

namespace DerivGen.Benchmarks;

/// <summary>
/// What DerivGen costs the compiler (or the editor) per edit: a <see cref="GeneratorDriver"/> holding the generator is
/// run on a new compilation after each edit of a synthetic project of 200 marked methods and 40 helpers, beside a
/// baseline generator that only finds the same 200 methods and binds their bodies (the "binding floor": any generator
/// that reads the bodies' meaning pays it). Three kinds of edit, each alternating between two texts of one file so that
/// every run sees a real change: a body in a file unrelated to DerivGen, the body of one marked method, and a new
/// declaration in the unrelated file. DerivGen takes over earlier lowerings after edits that only change bodies (so it
/// binds less than the baseline there); a new declaration makes it lower everything, its worst case.
/// <c>dotnet run -c Release --project tests/DerivGen.Benchmarks -- generator-cost</c> (BenchmarkDotNet, in process,
/// thread CPU time, MemoryDiagnoser; ratios against the binding floor per edit kind), or <c>generator-cost --probe</c>
/// for a fast look without BenchmarkDotNet.
/// </summary>
[GroupBenchmarksBy(BenchmarkLogicalGroupRule.ByCategory)]
[CategoriesColumn]
public class GeneratorCostBenchmark
{
    private EditLoop _derivGenUnrelated = null!;
    private EditLoop _bindingUnrelated = null!;
    private EditLoop _derivGenBody = null!;
    private EditLoop _bindingBody = null!;
    private EditLoop _derivGenDeclaration = null!;
    private EditLoop _bindingDeclaration = null!;

    [GlobalSetup]
    public void Setup()
    {
        SyntheticProject project = SyntheticProject.Create();
        project.CheckGeneratesEverything();
        _derivGenUnrelated = new EditLoop(project, project.UnrelatedEdit, new DerivativeGenerator());
        _bindingUnrelated = new EditLoop(project, project.UnrelatedEdit, new BindingOnlyGenerator());
        _derivGenBody = new EditLoop(project, project.BodyEdit, new DerivativeGenerator());
        _bindingBody = new EditLoop(project, project.BodyEdit, new BindingOnlyGenerator());
        _derivGenDeclaration = new EditLoop(project, project.DeclarationEdit, new DerivativeGenerator());
        _bindingDeclaration = new EditLoop(project, project.DeclarationEdit, new BindingOnlyGenerator());
    }

    [Benchmark(Baseline = true), BenchmarkCategory("UnrelatedEdit")]
    public int BindingOnly_UnrelatedEdit() => _bindingUnrelated.Next();

    [Benchmark, BenchmarkCategory("UnrelatedEdit")]
    public int DerivGen_UnrelatedEdit() => _derivGenUnrelated.Next();

    [Benchmark(Baseline = true), BenchmarkCategory("BodyEdit")]
    public int BindingOnly_BodyEdit() => _bindingBody.Next();

    [Benchmark, BenchmarkCategory("BodyEdit")]
    public int DerivGen_BodyEdit() => _derivGenBody.Next();

    [Benchmark(Baseline = true), BenchmarkCategory("DeclarationEdit")]
    public int BindingOnly_DeclarationEdit() => _bindingDeclaration.Next();

    [Benchmark, BenchmarkCategory("DeclarationEdit")]
    public int DerivGen_DeclarationEdit() => _derivGenDeclaration.Next();

    /// <summary>The <c>generator-cost</c> sub-command.</summary>
    public static int Run(string[] args)
    {
        if (args.Contains("--probe"))
        {
            int rounds = args.SkipWhile(a => a != "--rounds").Skip(1).Select(a => int.Parse(a, CultureInfo.InvariantCulture)).FirstOrDefault(20);
            return Probe(rounds);
        }

        Job job = Job.Default.WithToolchain(InProcessEmitToolchain.Instance)
            .WithLaunchCount(1).WithWarmupCount(3).WithIterationCount(15).WithInvocationCount(4).WithUnrollFactor(1)
            .WithId("GeneratorCost");
        if (ThreadCpuClock.Instance.IsAvailable)
        {
            job = job.WithClock(ThreadCpuClock.Instance);
        }

        IConfig config = ManualConfig.CreateEmpty()
            .AddJob(job)
            .AddDiagnoser(MemoryDiagnoser.Default)
            .AddColumnProvider(DefaultColumnProviders.Instance)
            .AddColumn(StatisticColumn.Median)
            .AddLogger(ConsoleLogger.Default)
            .AddExporter(MarkdownExporter.Console)
            .WithArtifactsPath(Path.Combine("BenchmarkDotNet.Artifacts", "generator-cost"))
            .WithOptions(ConfigOptions.DisableLogFile);
        BenchmarkRunner.Run<GeneratorCostBenchmark>(config);
        return 0;
    }

    /// <summary>Without BenchmarkDotNet: thread CPU time and bytes allocated per edit, medians of a number of edits.</summary>
    private static int Probe(int rounds)
    {
        var bench = new GeneratorCostBenchmark();
        bench.Setup();
        var rows = new (string Name, Func<int> Edit)[]
        {
            ("BindingOnly_UnrelatedEdit", bench.BindingOnly_UnrelatedEdit),
            ("DerivGen_UnrelatedEdit", bench.DerivGen_UnrelatedEdit),
            ("BindingOnly_BodyEdit", bench.BindingOnly_BodyEdit),
            ("DerivGen_BodyEdit", bench.DerivGen_BodyEdit),
            ("BindingOnly_DeclarationEdit", bench.BindingOnly_DeclarationEdit),
            ("DerivGen_DeclarationEdit", bench.DerivGen_DeclarationEdit),
        };
        var medians = new Dictionary<string, (double Ms, double Mb)>(StringComparer.Ordinal);
        foreach ((string name, Func<int> edit) in rows)
        {
            for (int i = 0; i < 4; i++)
            {
                edit();
            }

            var ms = new List<double>();
            var mb = new List<double>();
            for (int i = 0; i < rounds; i++)
            {
                long bytes = GC.GetAllocatedBytesForCurrentThread();
                long start = ThreadCpuClock.Instance.IsAvailable ? ThreadCpuClock.Instance.GetTimestamp() : Stopwatch.GetTimestamp();
                edit();
                long end = ThreadCpuClock.Instance.IsAvailable ? ThreadCpuClock.Instance.GetTimestamp() : Stopwatch.GetTimestamp();
                ms.Add((end - start) / (ThreadCpuClock.Instance.IsAvailable ? 1e6 : Stopwatch.Frequency / 1e3));
                mb.Add((GC.GetAllocatedBytesForCurrentThread() - bytes) / 1048576.0);
            }

            medians[name] = (Median(ms), Median(mb));
            Console.WriteLine(string.Create(CultureInfo.InvariantCulture, $"{name,-28} {medians[name].Ms,8:0.0} ms {medians[name].Mb,8:0.00} MB per edit (median of {rounds})"));
        }

        foreach (string kind in new[] { "UnrelatedEdit", "BodyEdit", "DeclarationEdit" })
        {
            var d = medians["DerivGen_" + kind];
            var b = medians["BindingOnly_" + kind];
            Console.WriteLine(string.Create(CultureInfo.InvariantCulture, $"{kind,-16} DerivGen / binding floor: time {d.Ms / b.Ms:0.00}x, allocated {d.Mb / b.Mb:0.00}x"));
        }

        return 0;
    }

    private static double Median(List<double> values)
    {
        values.Sort();
        return values.Count % 2 == 1 ? values[values.Count / 2] : (values[(values.Count / 2) - 1] + values[values.Count / 2]) / 2;
    }

    /// <summary>One driver and one file with two texts: each <see cref="Next"/> parses the file's other text into a new
    /// syntax tree, makes the new compilation with it (as the editor does after an edit: the other files' trees are
    /// kept, no symbols or bound bodies are carried over) and runs the driver on it. The parse (a fraction of a
    /// millisecond) is in the measured time of both generators.</summary>
    private sealed class EditLoop
    {
        private readonly Func<int, string> _text;
        private readonly string _path;
        private Compilation _current;
        private GeneratorDriver _driver;
        private int _turn;

        public EditLoop(SyntheticProject project, (string Path, Func<int, string> Text) edit, IIncrementalGenerator generator)
        {
            _text = edit.Text;
            _path = edit.Path;
            _current = project.Compilation.RemoveAllSyntaxTrees().AddSyntaxTrees(project.Compilation.SyntaxTrees);
            _driver = CSharpGeneratorDriver.Create(new[] { generator.AsSourceGenerator() }, parseOptions: SyntheticProject.ParseOptions);
            _driver = _driver.RunGenerators(_current);
        }

        public int Next()
        {
            _turn++;
            SyntaxTree old = _current.SyntaxTrees.Single(t => t.FilePath == _path);
            SyntaxTree edited = CSharpSyntaxTree.ParseText(_text(_turn), SyntheticProject.ParseOptions, path: _path, encoding: Encoding.UTF8);
            _current = _current.ReplaceSyntaxTree(old, edited);
            _driver = _driver.RunGenerators(_current);
            return _driver.GetRunResult().GeneratedTrees.Length;
        }
    }
}

/// <summary>
/// The baseline: finds the same [Differentiate] methods the same way (ForAttributeWithMetadataName) and binds each body
/// (SemanticModel.GetOperation), which is the least a generator that reads the bodies' meaning must do per edit.
/// </summary>
internal sealed class BindingOnlyGenerator : IIncrementalGenerator
{
    public void Initialize(IncrementalGeneratorInitializationContext context)
    {
        IncrementalValuesProvider<int> bound = context.SyntaxProvider.ForAttributeWithMetadataName(
            "DerivGen.DifferentiateAttribute",
            predicate: static (node, _) => node is MethodDeclarationSyntax,
            transform: static (ctx, ct) => ctx.SemanticModel.GetOperation(ctx.TargetNode, ct) is IMethodBodyOperation body
                ? body.Descendants().Count()
                : -1);
        context.RegisterSourceOutput(bound.Collect(), static (spc, counts) =>
        {
            if (counts.Contains(-1))
            {
                throw new InvalidOperationException("A marked method without an operation tree.");
            }
        });
    }
}

/// <summary>
/// The invented project the benchmark edits: 20 files of 10 marked methods (straight-line code, a data loop, an Euler
/// recurrence, a vector variable with an inner loop and a branch), every one calling two of 40 helpers in 4 files
/// (helpers with loops, helpers that call helpers), and one file unrelated to DerivGen. Every constant depends on the
/// method's index, so no two bodies are alike.
/// </summary>
internal sealed class SyntheticProject
{
    public const int MarkedFiles = 20;
    public const int MethodsPerFile = 10;
    public const int HelperFiles = 4;
    public const int HelpersPerFile = 10;
    public const int Helpers = HelperFiles * HelpersPerFile;

    public static readonly CSharpParseOptions ParseOptions = new(LanguageVersion.Latest, DocumentationMode.Parse);

    private SyntheticProject(Compilation compilation, (string, Func<int, string>) unrelatedEdit, (string, Func<int, string>) bodyEdit,
        (string, Func<int, string>) declarationEdit)
    {
        Compilation = compilation;
        UnrelatedEdit = unrelatedEdit;
        BodyEdit = bodyEdit;
        DeclarationEdit = declarationEdit;
    }

    public Compilation Compilation { get; }

    /// <summary>The unrelated file's text after edit n: a constant in a method DerivGen never sees, back and forth.</summary>
    public (string Path, Func<int, string> Text) UnrelatedEdit { get; }

    /// <summary>A file of marked methods after edit n: one constant in one body (Loss137) changed back and forth.</summary>
    public (string Path, Func<int, string> Text) BodyEdit { get; }

    /// <summary>The unrelated file after edit n: a method with a new name each time. A declaration may change what any name
    /// binds to, so DerivGen lowers every method again: its worst case per edit.</summary>
    public (string Path, Func<int, string> Text) DeclarationEdit { get; }

    public static SyntheticProject Create()
    {
        var trees = new List<SyntaxTree>();
        for (int file = 0; file < MarkedFiles; file++)
        {
            trees.Add(Parse(MarkedFile(file), $"Marked{file:D2}.cs"));
        }

        for (int file = 0; file < HelperFiles; file++)
        {
            trees.Add(Parse(HelperFile(file), $"Kernels{file}.cs"));
        }

        string unrelated = UnrelatedFile("17");
        trees.Add(Parse(unrelated, "Unrelated.cs"));

        const int editedFile = 13;
        string marked = MarkedFile(editedFile);
        string constant = Constant(137);
        string edited = marked.Replace($"- {constant} * y[i]", $"- {constant} * y[i] * y[i]", StringComparison.Ordinal);
        if (edited == marked)
        {
            throw new InvalidOperationException("The body edit did not apply.");
        }

        var references = ((string)AppContext.GetData("TRUSTED_PLATFORM_ASSEMBLIES")!)
            .Split(Path.PathSeparator, StringSplitOptions.RemoveEmptyEntries)
            .Where(p => string.Equals(Path.GetDirectoryName(p), Path.GetDirectoryName(typeof(object).Assembly.Location), StringComparison.Ordinal))
            .Append(typeof(DifferentiateAttribute).Assembly.Location)
            .Distinct(StringComparer.Ordinal)
            .OrderBy(p => p, StringComparer.Ordinal)
            .Select(p => (MetadataReference)MetadataReference.CreateFromFile(p));
        Compilation compilation = CSharpCompilation.Create("GeneratorCostInput", trees, references,
            new CSharpCompilationOptions(OutputKind.DynamicallyLinkedLibrary, optimizationLevel: OptimizationLevel.Release, deterministic: true));
        return new SyntheticProject(compilation,
            ("Unrelated.cs", n => n % 2 == 1 ? UnrelatedFile("19") : unrelated),
            ($"Marked{editedFile:D2}.cs", n => n % 2 == 1 ? edited : marked),
            ("Unrelated.cs", n => UnrelatedFile("17", "Extra" + n.ToString(CultureInfo.InvariantCulture))));
    }

    /// <summary>Fails unless the project compiles, the analyzer reports no error, and the generator writes a file for
    /// every marked method and helper with no #error: the benchmark must measure a project DerivGen fully accepts.</summary>
    public void CheckGeneratesEverything()
    {
        var errors = Compilation.GetDiagnostics().Where(d => d.Severity == DiagnosticSeverity.Error).ToList();
        var analyzer = Compilation.WithAnalyzers(ImmutableArray.Create<DiagnosticAnalyzer>(new DerivativeAnalyzer()));
        errors.AddRange(analyzer.GetAnalyzerDiagnosticsAsync(CancellationToken.None).Result.Where(d => d.Severity == DiagnosticSeverity.Error));
        GeneratorDriver driver = CSharpGeneratorDriver.Create(new[] { new DerivativeGenerator().AsSourceGenerator() }, parseOptions: ParseOptions)
            .RunGeneratorsAndUpdateCompilation(Compilation, out Compilation output, out _);
        errors.AddRange(output.GetDiagnostics().Where(d => d.Severity == DiagnosticSeverity.Error));
        int files = driver.GetRunResult().GeneratedTrees.Length;
        if (errors.Count > 0 || files != (MarkedFiles * MethodsPerFile) + Helpers)
        {
            throw new InvalidOperationException($"The synthetic project is not what the benchmark needs: {files} files, errors:\n"
                + string.Join("\n", errors.Take(10)));
        }
    }

    private static SyntaxTree Parse(string text, string path) =>
        CSharpSyntaxTree.ParseText(text, ParseOptions, path: path, encoding: Encoding.UTF8);

    private static string Constant(int index) => (1 + (index * 0.01)).ToString("R", CultureInfo.InvariantCulture);

    private static string HelperName(int helper) => $"Kernels{helper / HelpersPerFile}.K{helper:D2}";

    private static string UnrelatedFile(string value, string? extraDeclaration = null) => $$"""
        namespace Cost;

        public static class Unrelated
        {
            public static int Scale(int k) => {{value}} * k + 1;
        {{(extraDeclaration is null ? string.Empty : "\n    public static int " + extraDeclaration + "(int k) => 2 * k;\n")}}

            public static string Label(int k) => "item " + k.ToString(System.Globalization.CultureInfo.InvariantCulture);
        }

        """;

    private static string MarkedFile(int file)
    {
        var s = new StringBuilder();
        s.Append("using System;\nusing DerivGen;\n\nnamespace Cost;\n\npublic static partial class Group")
         .Append(file.ToString("D2", CultureInfo.InvariantCulture)).Append("\n{\n");
        for (int slot = 0; slot < MethodsPerFile; slot++)
        {
            int index = (file * MethodsPerFile) + slot;
            s.Append(MarkedMethod(index)).Append('\n');
        }

        return s.Append("}\n").ToString();
    }

    private static string MarkedMethod(int index)
    {
        string name = $"Loss{index:D3}";
        string c = Constant(index);
        string h1 = HelperName((index * 7) % Helpers);
        string h2 = HelperName(((index * 13) + 3) % Helpers);
        return (index % 4) switch
        {
            0 => $$"""
                    [Differentiate]
                    public static double {{name}}(double x, double y, double z) => Math.Sin(x * {{c}}) * y + {{h1}}(x, z) + x * y * {{h2}}(z, 1.5);

                """,
            1 => $$"""
                    [Differentiate(nameof(a), nameof(b))]
                    public static double {{name}}(double a, double b, double[] t, double[] y)
                    {
                        double s = 0;
                        for (int i = 0; i < t.Length; i++)
                        {
                            double r = a * Math.Exp(-b * t[i]) + {{h1}}(a, t[i]) - {{c}} * y[i];
                            s += r * r;
                        }

                        return 0.5 * s + {{h2}}(b, a);
                    }

                """,
            2 => $$"""
                    [Differentiate(nameof(v0), nameof(drag))]
                    public static double {{name}}(double v0, double drag, double dt, int steps)
                    {
                        double x = 0, v = v0;
                        for (int k = 0; k < steps; k++)
                        {
                            double a = -drag * v * {{h1}}(v, {{c}}) - {{c}};
                            x += v * dt;
                            v += a * dt;
                        }

                        return x * x + {{h2}}(drag, v0);
                    }

                """,
            _ => $$"""
                    [Differentiate(nameof(w), Hessian = false)]
                    public static double {{name}}(double[] w, double[,] x, double[] y)
                    {
                        double s = 0;
                        for (int i = 0; i < y.Length; i++)
                        {
                            double r = y[i];
                            for (int j = 0; j < w.Length; j++)
                            {
                                r -= w[j] * x[i, j];
                            }

                            s += r > {{c}} ? r * r : {{c}} * {{h1}}(r, {{c}});
                        }

                        return s + {{h2}}(w[0], w[1]);
                    }

                """,
        };
    }

    private static string HelperFile(int file)
    {
        var s = new StringBuilder();
        s.Append("using System;\n\nnamespace Cost;\n\npublic static partial class Kernels").Append(file.ToString(CultureInfo.InvariantCulture)).Append("\n{\n");
        for (int slot = 0; slot < HelpersPerFile; slot++)
        {
            int helper = (file * HelpersPerFile) + slot;
            string name = $"K{helper:D2}";
            string c = Constant(500 + helper);
            s.Append((helper % 4) switch
            {
                0 => $$"""
                        public static double {{name}}(double u, double v) => Math.Exp(-u * u * {{c}}) * v + Math.Log(1 + v * v);

                    """,
                1 => $$"""
                        public static double {{name}}(double u, double v)
                        {
                            double s = 0, p = 1;
                            for (int k = 0; k < 4; k++)
                            {
                                s += p / (k + {{c}});
                                p *= u * v;
                            }

                            return s;
                        }

                    """,
                2 => $$"""
                        public static double {{name}}(double u, double v) => {{HelperName(helper - 2)}}(u, {{c}}) * v + Math.Tanh(u - v);

                    """,
                _ => $$"""
                        public static double {{name}}(double u, double v)
                        {
                            double a = u * {{c}}, b = v;
                            if (a > b)
                            {
                                return a * b + {{HelperName(helper - 1)}}(b, a);
                            }

                            return Math.Sqrt(1 + a * a) * b;
                        }

                    """,
            }).Append('\n');
        }

        return s.Append("}\n").ToString();
    }
}
