using System;
using System.Collections.Generic;
using System.Collections.Immutable;
using System.Diagnostics;
using System.Globalization;
using System.Linq;
using System.Text;
using DerivGen.Generator;
using DerivGen.Generator.Lowering;
using DerivGen.Tests.Infrastructure;
using Microsoft.CodeAnalysis;
using Microsoft.CodeAnalysis.CSharp;
using Xunit;
using Xunit.Abstractions;

namespace DerivGen.Tests.Performance;

/// <summary>
/// A compilation with 200 marked methods (20 files of 10, four shapes: straight-line code, a data loop, an Euler
/// recurrence, a vector variable with a branch), generated once and shared by the tests below.
/// </summary>
public sealed class TwoHundredMethodsFixture
{
    public const int Files = 20;
    public const int MethodsPerFile = 10;
    public const int Methods = Files * MethodsPerFile;

    public TwoHundredMethodsFixture()
    {
        Sources = Enumerable.Range(0, Files).Select(SourceOfFile).ToArray();

        // The harness checks that the first file's 10 methods (all four shapes) generate code that compiles without
        // a warning; compiling all 200 would take most of this class's time. It also warms up the generator's code.
        var check = Stopwatch.StartNew();
        GeneratedRun run = GeneratorHarness.Run(Sources[0]);
        Assert.Equal(MethodsPerFile, run.HintNames.Count);
        CheckSeconds = check.Elapsed.TotalSeconds;

        Compilation = GeneratorHarness.CreateCompilation(Sources);
        var first = Stopwatch.StartNew();
        Driver = GeneratorHarness.CreateDriver().RunGenerators(Compilation);
        FirstRunSeconds = first.Elapsed.TotalSeconds;
        FirstRun = Driver.GetRunResult().Results.Single();
        Assert.Null(FirstRun.Exception);
    }

    public string[] Sources { get; }

    public Compilation Compilation { get; }

    /// <summary>The driver after its first run over <see cref="Compilation"/> (drivers are immutable: each test
    /// continues from this state).</summary>
    public GeneratorDriver Driver { get; }

    public GeneratorRunResult FirstRun { get; }

    public double FirstRunSeconds { get; }

    public double CheckSeconds { get; }

    public static string MethodName(int file, int slot) => $"Loss{(file * MethodsPerFile) + slot:D3}";

    public static string HintName(int file, int slot) => $"Cost.Group{file:D2}.{MethodName(file, slot)}.g.cs";

    /// <summary>The source of file <paramref name="file"/>. Every constant depends on the method's index, so no two
    /// methods are alike. The losses are invented.</summary>
    public static string SourceOfFile(int file)
    {
        var s = new StringBuilder();
        s.Append("using System;\nusing DerivGen;\n\nnamespace Cost;\n\npublic static partial class Group")
         .Append(file.ToString("D2", CultureInfo.InvariantCulture)).Append("\n{\n");
        for (int slot = 0; slot < MethodsPerFile; slot++)
        {
            int index = (file * MethodsPerFile) + slot;
            string name = MethodName(file, slot);
            string c = (1 + (index * 0.01)).ToString("R", CultureInfo.InvariantCulture);
            s.Append(MethodSource(index % 4, name, c)).Append('\n');
        }

        s.Append("}\n");
        return s.ToString();
    }

    private static string MethodSource(int shape, string name, string c) => shape switch
    {
        0 => $$"""
                [Differentiate]
                public static double {{name}}(double x, double y, double z) => Math.Sin(x * {{c}}) * y + Math.Exp(-z * z * {{c}}) + x * y * z;

            """,
        1 => $$"""
                [Differentiate(nameof(a), nameof(b))]
                public static double {{name}}(double a, double b, double[] t, double[] y)
                {
                    double s = 0;
                    for (int i = 0; i < t.Length; i++)
                    {
                        double r = a * Math.Exp(-b * t[i]) - {{c}} * y[i];
                        s += r * r;
                    }

                    return 0.5 * s;
                }

            """,
        2 => $$"""
                [Differentiate(nameof(v0), nameof(drag))]
                public static double {{name}}(double v0, double drag, double dt, int steps)
                {
                    double x = 0, v = v0;
                    for (int k = 0; k < steps; k++)
                    {
                        double a = -drag * v * Math.Abs(v) - {{c}};
                        x += v * dt;
                        v += a * dt;
                    }

                    return x * x;
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

                        s += r > {{c}} ? r * r : {{c}} * r;
                    }

                    return s;
                }

            """,
    };
}

/// <summary>
/// The generator's cost on 200 marked methods (reported, never asserted: machines are shared) and its incremental
/// behaviour on that compilation: an edit in one method body regenerates that method's file only; an unrelated edit
/// regenerates nothing; a new file (or a changed declaration) lowers every method exactly once, an edit of one body
/// lowers that method only (see Incremental/LoweringCountTests). Read from the tracked steps
/// "Lower" and "Emit", the lowering's counter, and the generated texts.
/// </summary>
public sealed class GeneratorCostTests : IClassFixture<TwoHundredMethodsFixture>
{
    private static readonly IncrementalStepRunReason[] CachedOrUnchanged =
    {
        IncrementalStepRunReason.Cached, IncrementalStepRunReason.Unchanged,
    };

    /// <summary>The compilation of the last <see cref="Rerun"/> (xunit makes one instance per test).</summary>
    private Compilation? _edited;

    private readonly TwoHundredMethodsFixture _fixture;
    private readonly ITestOutputHelper _output;

    public GeneratorCostTests(TwoHundredMethodsFixture fixture, ITestOutputHelper output)
    {
        _fixture = fixture;
        _output = output;
    }

    [Fact]
    public void ReportsTheCostPerMethod()
    {
        GeneratorRunResult first = _fixture.FirstRun;
        Assert.Equal(TwoHundredMethodsFixture.Methods, first.GeneratedSources.Length);
        Assert.All(Reasons(first, DerivativeGenerator.LowerStep), r => Assert.Equal(IncrementalStepRunReason.New, r));
        Assert.All(Reasons(first, DerivativeGenerator.EmitStep), r => Assert.Equal(IncrementalStepRunReason.New, r));

        // Running again on the same compilation: everything comes from the cache.
        var again = Stopwatch.StartNew();
        GeneratorRunResult second = _fixture.Driver.RunGenerators(_fixture.Compilation).GetRunResult().Results.Single();
        double againSeconds = again.Elapsed.TotalSeconds;
        Assert.All(Reasons(second, DerivativeGenerator.LowerStep), r => Assert.Equal(IncrementalStepRunReason.Cached, r));
        Assert.All(Reasons(second, DerivativeGenerator.EmitStep), r => Assert.Equal(IncrementalStepRunReason.Cached, r));

        const int n = TwoHundredMethodsFixture.Methods;
        double emit = StepSeconds(first, DerivativeGenerator.EmitStep);
        double lower = _fixture.FirstRunSeconds - emit;
        long bytes = first.GeneratedSources.Sum(s => (long)s.SourceText.Length);
        _output.WriteLine(string.Create(CultureInfo.InvariantCulture, $"""
            Generator on {n} marked methods (one measurement on a shared machine: indicative only)
              first run on a new compilation: {_fixture.FirstRunSeconds * 1000:0} ms = {_fixture.FirstRunSeconds * 1e6 / n:0} μs per method
                of which step Emit:           {emit * 1000:0} ms = {emit * 1e6 / n:0} μs per method (differentiate, simplify, write)
                the rest:                     {lower * 1000:0} ms = {lower * 1e6 / n:0} μs per method (find the attribute, bind, lower)
              rerun, nothing changed:         {againSeconds * 1000:0} ms (all outputs cached)
              generated text:                 {bytes / 1024.0:0} KiB in {first.GeneratedSources.Length} files
              warm-up (10 methods generated and compiled by the harness): {_fixture.CheckSeconds:0.0} s
            """));
    }

    [Fact]
    public void EditingOneMethodBodyRegeneratesOnlyThatMethodsFile()
    {
        const int file = 13, slot = 7;   // Loss137: shape 1, the data loop
        string before = _fixture.Sources[file];
        string constant = (1 + (137 * 0.01)).ToString("R", CultureInfo.InvariantCulture);
        string edited = before.Replace($"- {constant} * y[i]", $"- {constant} * y[i] * y[i]", StringComparison.Ordinal);
        Assert.NotEqual(before, edited);

        GeneratorRunResult after = Rerun(ReplaceFile(file, edited));

        // Emit: exactly one output changed, and it is Loss137's file.
        var emit = Outputs(after, DerivativeGenerator.EmitStep);
        var changed = emit.Where(o => o.Reason is IncrementalStepRunReason.Modified or IncrementalStepRunReason.New).ToList();
        Assert.Single(changed);
        Assert.Equal(TwoHundredMethodsFixture.HintName(file, slot), HintNameOf(changed[0].Value));
        Assert.All(emit.Except(changed), o => Assert.Contains(o.Reason, CachedOrUnchanged));

        // Lower: only the edited method's model changed (it carries the same hint name); Roslyn reruns the transform
        // for every method after any change of the compilation, but the other 199 take over their earlier lowering (the
        // edit changed one body only), so they are Unchanged, never Modified; the counter shows one lowering, Loss137's.
        IReadOnlyDictionary<string, int> counts = CompilationLowerings.Find(_edited!)!.MethodLowerings;
        Assert.Equal(1, Assert.Single(counts, c => c.Key.Contains("Loss137", StringComparison.Ordinal)).Value);
        Assert.Single(counts);
        var lowerOutputs = Outputs(after, DerivativeGenerator.LowerStep);
        var lowerChanged = lowerOutputs.Where(o => o.Reason is IncrementalStepRunReason.Modified or IncrementalStepRunReason.New).ToList();
        Assert.Single(lowerChanged);
        Assert.Equal(TwoHundredMethodsFixture.HintName(file, slot), HintNameOf(lowerChanged[0].Value));
        Assert.All(lowerOutputs.Except(lowerChanged), o => Assert.Contains(o.Reason, CachedOrUnchanged));
        _output.WriteLine($"Lower after editing one body: {Describe(lowerOutputs.Select(o => o.Reason))}; Emit: {Describe(emit.Select(o => o.Reason))}");

        // The generated texts: Loss137's differs, the other 199 are byte for byte the same.
        AssertOnlyTheseChanged(after, TwoHundredMethodsFixture.HintName(file, slot));
    }

    [Fact]
    public void AddingAnUnrelatedClassRegeneratesNothing()
    {
        const string unrelated = "namespace Cost;\n\npublic static class Unrelated\n{\n    public static double Twice(double v) => 2 * v;\n}\n";
        Compilation edited = _fixture.Compilation.AddSyntaxTrees(
            CSharpSyntaxTree.ParseText(unrelated, GeneratorHarness.ParseOptions, path: "Unrelated.cs"));
        GeneratorRunResult after = Rerun(edited);
        AssertNothingRegenerated(after);
        _output.WriteLine($"New file: Lower {Describe(Reasons(after, DerivativeGenerator.LowerStep))}; Emit {Describe(Reasons(after, DerivativeGenerator.EmitStep))}");
    }

    [Fact]
    public void AddingAnUnrelatedClassToAFileWithMarkedMethodsRegeneratesNothing()
    {
        const int file = 4;
        string edited = _fixture.Sources[file] + "\npublic static class Helper04\n{\n    public static int Next(int k) => k + 1;\n}\n";
        GeneratorRunResult after = Rerun(ReplaceFile(file, edited));
        AssertNothingRegenerated(after);
        _output.WriteLine($"Same file: Lower {Describe(Reasons(after, DerivativeGenerator.LowerStep))}; Emit {Describe(Reasons(after, DerivativeGenerator.EmitStep))}");
    }

    private void AssertNothingRegenerated(GeneratorRunResult after)
    {
        AssertEachMethodLoweredOnce(after);
        Assert.All(Reasons(after, DerivativeGenerator.LowerStep), r => Assert.Contains(r, CachedOrUnchanged));
        Assert.All(Reasons(after, DerivativeGenerator.EmitStep), r => Assert.Contains(r, CachedOrUnchanged));
        AssertOnlyTheseChanged(after);
    }

    /// <summary>Each of the 200 methods was lowered once in the run's compilation (no method twice, none skipped): these
    /// edits add a declaration, so no earlier lowering may be taken over.</summary>
    private void AssertEachMethodLoweredOnce(GeneratorRunResult after)
    {
        Assert.NotNull(_edited);
        IReadOnlyDictionary<string, int> counts = CompilationLowerings.Find(_edited!)!.MethodLowerings;
        Assert.Equal(TwoHundredMethodsFixture.Methods, counts.Count);
        Assert.All(counts, c => Assert.Equal(1, c.Value));
        Assert.Null(after.Exception);
    }

    private void AssertOnlyTheseChanged(GeneratorRunResult after, params string[] changedHints)
    {
        var before = _fixture.FirstRun.GeneratedSources.ToDictionary(s => s.HintName, s => s.SourceText.ToString(), StringComparer.Ordinal);
        var now = after.GeneratedSources.ToDictionary(s => s.HintName, s => s.SourceText.ToString(), StringComparer.Ordinal);
        Assert.Equal(before.Keys.OrderBy(k => k, StringComparer.Ordinal), now.Keys.OrderBy(k => k, StringComparer.Ordinal));
        var differing = before.Keys.Where(h => before[h] != now[h]).OrderBy(h => h, StringComparer.Ordinal).ToList();
        Assert.Equal(changedHints.OrderBy(h => h, StringComparer.Ordinal), differing);
    }

    private Compilation ReplaceFile(int file, string text)
    {
        string path = $"Source{file}.cs";
        SyntaxTree old = _fixture.Compilation.SyntaxTrees.Single(t => t.FilePath == path);
        return _fixture.Compilation.ReplaceSyntaxTree(old, CSharpSyntaxTree.ParseText(text, GeneratorHarness.ParseOptions, path: path, encoding: Encoding.UTF8));
    }

    private GeneratorRunResult Rerun(Compilation edited)
    {
        CompilationLowerings.CountLowerings = true;
        _edited = edited;
        GeneratorRunResult result = _fixture.Driver.RunGenerators(edited).GetRunResult().Results.Single();
        Assert.Null(result.Exception);
        return result;
    }

    private static List<(object Value, IncrementalStepRunReason Reason)> Outputs(GeneratorRunResult result, string step)
    {
        Assert.True(result.TrackedSteps.TryGetValue(step, out ImmutableArray<IncrementalGeneratorRunStep> runs),
            $"No tracked step named '{step}'; tracked: {string.Join(", ", result.TrackedSteps.Keys)}");
        var outputs = runs.SelectMany(r => r.Outputs).ToList();
        Assert.Equal(TwoHundredMethodsFixture.Methods, outputs.Count);
        return outputs;
    }

    private static List<IncrementalStepRunReason> Reasons(GeneratorRunResult result, string step) =>
        Outputs(result, step).Select(o => o.Reason).ToList();

    private static double StepSeconds(GeneratorRunResult result, string step) =>
        result.TrackedSteps[step].Sum(r => r.ElapsedTime.TotalSeconds);

    /// <summary>The hint name carried by a Lower output (its lowering result's Spec.HintName) or an Emit output (the
    /// generator's private file record's HintName).</summary>
    private static string HintNameOf(object output)
    {
        object carrier = output.GetType().GetProperty("Spec")?.GetValue(output) ?? output;
        return carrier.GetType().GetProperty("HintName")?.GetValue(carrier) as string
            ?? throw new InvalidOperationException($"An output of type {output.GetType().Name} has no HintName.");
    }

    private static string Describe(IEnumerable<IncrementalStepRunReason> reasons) =>
        string.Join(", ", reasons.GroupBy(r => r).OrderBy(g => g.Key).Select(g => $"{g.Count()} {g.Key}"));
}
