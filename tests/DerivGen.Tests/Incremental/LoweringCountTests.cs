using System;
using System.Collections.Generic;
using System.Collections.Immutable;
using System.Linq;
using DerivGen.Generator;
using DerivGen.Generator.Lowering;
using DerivGen.Tests.Infrastructure;
using Microsoft.CodeAnalysis;
using Microsoft.CodeAnalysis.CSharp;
using Xunit;

namespace DerivGen.Tests.Incremental;

/// <summary>
/// Counts the lowerings one driver run does (the lowering's own counter, kept per compilation by
/// <see cref="CompilationLowerings"/>), rather than trusting the tracked steps' reasons alone.
/// What Roslyn forces: <c>ForAttributeWithMetadataName</c> finds the attributed nodes incrementally per syntax tree, but
/// combines them with the whole compilation before it calls the transform, so after any change of the compilation (any
/// edit, even of a file unrelated to DerivGen) the transform — the Lower step — runs again for every marked method.
/// The transform then takes over the earlier compilation's lowering when the edit cannot have changed it (only bodies
/// changed, and neither the method's own nor that of a helper it calls): such edits lower nothing, or the edited method
/// only; an edit that adds a file or changes a declaration lowers every method once; a helper is lowered once per edit
/// however many methods call it.
/// </summary>
public sealed class LoweringCountTests
{
    private const string Kernels = """
        using System;

        namespace Count;

        public static partial class Kernels
        {
            public static double Shared(double v, double s) => Inner(v) * s + Math.Exp(-v * s);

            public static double Inner(double v) => v * v + 1.0;

            public static double Lonely(double v) => Math.Sin(v) * v;
        }
        """;

    private const string First = """
        using System;
        using DerivGen;

        namespace Count;

        public static partial class A
        {
            [Differentiate]
            public static double A1(double x, double y) => Kernels.Shared(x, y) + x * y;

            [Differentiate]
            public static double A2(double x) => Kernels.Shared(x, 2.0) * Kernels.Shared(x, 3.0);

            [Differentiate]
            public static double A3(double x, double[] t)
            {
                double s = 0;
                for (int i = 0; i < t.Length; i++)
                {
                    s += Kernels.Shared(x, t[i]);
                }

                return s;
            }
        }
        """;

    private const string Second = """
        using System;
        using DerivGen;

        namespace Count;

        public static partial class B
        {
            [Differentiate]
            public static double B1(double u) => Kernels.Shared(u, u) - u;

            [Differentiate]
            public static double B2(double u, double v) => Kernels.Shared(v, u) + Kernels.Lonely(u);

            [Differentiate]
            public static double B3(double u) => Math.Exp(-u * u);
        }
        """;

    private const string Unrelated = """
        namespace Count;

        public static class Unrelated
        {
            public static int Twice(int k) => 2 * k;
        }
        """;

    private static readonly string[] Marked =
    {
        "Count.A.A1(double, double)", "Count.A.A2(double)", "Count.A.A3(double, double[])",
        "Count.B.B1(double)", "Count.B.B2(double, double)", "Count.B.B3(double)",
    };

    private const string SharedId = "M:Count.Kernels.Shared(System.Double,System.Double)";
    private const string InnerId = "M:Count.Kernels.Inner(System.Double)";
    private const string LonelyId = "M:Count.Kernels.Lonely(System.Double)";

    public LoweringCountTests()
    {
        // Counting is off in production; turning it on only counts (tests running in parallel are not disturbed).
        CompilationLowerings.CountLowerings = true;
    }

    [Fact]
    public void TheFirstRunLowersEachMethodAndEachHelperOnce()
    {
        var (_, compilation) = RunOnce();
        CompilationLowerings counts = CompilationLowerings.Find(compilation)!;
        AssertEachOnce(counts.MethodLowerings, Marked);

        // Shared is called by five methods (A2 twice, A3 in a loop) and calls Inner: before the table of lowered helpers,
        // it was lowered once per calling method plus once more by the Helpers step (6 times), Inner as often.
        AssertEachOnce(counts.HelperLowerings, SharedId, InnerId, LonelyId);
    }

    [Fact]
    public void AnEditOfAnUnrelatedBodyLowersNothingAndWritesNothing()
    {
        var (driver, compilation) = RunOnce();
        SyntaxTree old = compilation.SyntaxTrees.Single(t => t.FilePath == "Source3.cs");
        Compilation edited = compilation.ReplaceSyntaxTree(old, Parse(Unrelated.Replace("2 * k", "3 * k + 1", StringComparison.Ordinal), "Source3.cs"));
        GeneratorRunResult after = Rerun(driver, edited);

        // The transform runs for every marked method (Unchanged: it ran, and gave an equal model) but lowers none.
        CompilationLowerings counts = CompilationLowerings.Find(edited)!;
        Assert.Empty(counts.MethodLowerings);
        Assert.Empty(counts.HelperLowerings);
        Assert.All(Reasons(after, DerivativeGenerator.LowerStep), r => Assert.Equal(IncrementalStepRunReason.Unchanged, r));
        Assert.All(Reasons(after, DerivativeGenerator.EmitStep), r => Assert.Equal(IncrementalStepRunReason.Cached, r));
        Assert.All(Reasons(after, DerivativeGenerator.EmitHelperStep), r => Assert.Contains(r, new[] { IncrementalStepRunReason.Cached, IncrementalStepRunReason.Unchanged }));
        AssertTextsChanged(driver, after, edited);
    }

    [Fact]
    public void AddingAFileLowersEachMarkedMethodOnceAndEachHelperOnce()
    {
        // A new file may declare anything (a type that changes what a name in a body binds to): nothing is taken over.
        var (driver, compilation) = RunOnce();
        Compilation edited = compilation.AddSyntaxTrees(Parse("namespace Count;\n\npublic static class More\n{\n    public static int Three() => 3;\n}\n", "Source4.cs"));
        GeneratorRunResult after = Rerun(driver, edited);

        CompilationLowerings counts = CompilationLowerings.Find(edited)!;
        AssertEachOnce(counts.MethodLowerings, Marked);
        AssertEachOnce(counts.HelperLowerings, SharedId, InnerId, LonelyId);
        AssertTextsChanged(driver, after, edited);
    }

    [Fact]
    public void AnEditOfOneBodyLowersThatMethodOnly()
    {
        var (driver, compilation) = RunOnce();
        SyntaxTree old = compilation.SyntaxTrees.Single(t => t.FilePath == "Source1.cs");
        Compilation edited = compilation.ReplaceSyntaxTree(old, Parse(Second.Replace("Math.Exp(-u * u)", "Math.Exp(-u * u * 0.5)", StringComparison.Ordinal), "Source1.cs"));
        GeneratorRunResult after = Rerun(driver, edited);

        CompilationLowerings counts = CompilationLowerings.Find(edited)!;
        AssertEachOnce(counts.MethodLowerings, "Count.B.B3(double)");
        Assert.Empty(counts.HelperLowerings);

        var lower = Outputs(after, DerivativeGenerator.LowerStep);
        var changed = lower.Where(o => o.Reason is IncrementalStepRunReason.Modified or IncrementalStepRunReason.New).ToList();
        Assert.Equal("Count.B.B3.g.cs", Assert.Single(changed).HintName);
        var emitted = Outputs(after, DerivativeGenerator.EmitStep).Where(o => o.Reason is IncrementalStepRunReason.Modified or IncrementalStepRunReason.New).ToList();
        Assert.Equal("Count.B.B3.g.cs", Assert.Single(emitted).HintName);
        AssertTextsChanged(driver, after, edited, "Count.B.B3.g.cs");
    }

    [Fact]
    public void AnEditOfASharedHelperLowersItOnceAndItsCallersOnceAndRewritesOnlyItsFile()
    {
        var (driver, compilation) = RunOnce();
        SyntaxTree old = compilation.SyntaxTrees.Single(t => t.FilePath == "Source2.cs");
        Compilation edited = compilation.ReplaceSyntaxTree(old, Parse(Kernels.Replace("Math.Exp(-v * s)", "Math.Exp(-2.0 * v * s)", StringComparison.Ordinal), "Source2.cs"));
        GeneratorRunResult after = Rerun(driver, edited);

        // Every method that calls a helper of the edited file is lowered again (B3 calls none); each helper once.
        CompilationLowerings counts = CompilationLowerings.Find(edited)!;
        AssertEachOnce(counts.MethodLowerings, Marked.Where(m => !m.StartsWith("Count.B.B3", StringComparison.Ordinal)).ToArray());
        AssertEachOnce(counts.HelperLowerings, SharedId, InnerId, LonelyId);
        AssertTextsChanged(driver, after, edited, "Count.Kernels.Shared.g.cs");
        Assert.Contains("2.0 * v", after.GeneratedSources.Single(s => s.HintName == "Count.Kernels.Shared.g.cs").SourceText.ToString(), StringComparison.Ordinal);
    }

    [Fact]
    public void AHelperThatStopsLoweringTakesItsCallerWithItAsAFreshRunWould()
    {
        // Lonely's body (only its body) gets an object creation and a call DerivGen cannot differentiate (DG0001): B2,
        // which calls it, is generated no more, exactly as a driver that never saw the earlier compilation decides; B2's
        // earlier lowering is not taken over, since it read Lonely's file.
        var (driver, compilation) = RunOnce();
        SyntaxTree old = compilation.SyntaxTrees.Single(t => t.FilePath == "Source2.cs");
        string broken = Kernels.Replace("Lonely(double v) => Math.Sin(v) * v;", "Lonely(double v) => Math.Sin(v) * v + new Random(1).Next();", StringComparison.Ordinal);
        Assert.NotEqual(Kernels, broken);
        Compilation edited = compilation.ReplaceSyntaxTree(old, Parse(broken, "Source2.cs"));
        GeneratorRunResult after = Rerun(driver, edited);

        Assert.DoesNotContain(after.GeneratedSources, s => s.HintName is "Count.B.B2.g.cs" or "Count.Kernels.Lonely.g.cs");
        GeneratorRunResult fresh = FreshRun(edited);
        Assert.Equal(
            fresh.GeneratedSources.Select(s => (s.HintName, s.SourceText.ToString())).OrderBy(p => p.HintName, StringComparer.Ordinal),
            after.GeneratedSources.Select(s => (s.HintName, s.SourceText.ToString())).OrderBy(p => p.HintName, StringComparer.Ordinal));
    }

    [Fact]
    public void AnEditOfAHelperInItsCallersFileLowersTheCallerAgain()
    {
        // The caller's own body is unchanged, but it reads a helper whose body changed in the same file: nothing of the
        // earlier lowering may be taken over (whether the helper still lowers cleanly decides whether the caller does).
        const string together = """
            using System;
            using DerivGen;

            namespace Count;

            public static partial class Together
            {
                [Differentiate]
                public static double Caller(double x) => Near(x) * x;

                public static double Near(double v) => Math.Sin(v) + v;
            }
            """;
        GeneratorHarness.Run(together);
        Compilation compilation = GeneratorHarness.CreateCompilation(together);
        GeneratorDriver driver = GeneratorHarness.CreateDriver().RunGenerators(compilation);
        SyntaxTree old = compilation.SyntaxTrees.Single();
        Compilation edited = compilation.ReplaceSyntaxTree(old, Parse(together.Replace("Math.Sin(v) + v", "Math.Sin(v) * v", StringComparison.Ordinal), old.FilePath));
        GeneratorRunResult after = Rerun(driver, edited);

        CompilationLowerings counts = CompilationLowerings.Find(edited)!;
        AssertEachOnce(counts.MethodLowerings, "Count.Together.Caller(double)");
        AssertEachOnce(counts.HelperLowerings, "M:Count.Together.Near(System.Double)");
        AssertTextsChanged(driver, after, edited, "Count.Together.Near.g.cs");
    }

    [Fact]
    public void AnEditOfAConstantOrADefaultValueElsewhereIsNeverMissed()
    {
        // Constants and default parameter values are declarations (Roslyn's top-level comparison sees them), so an edit of
        // either lowers every method again, and the derivatives follow. Worked by hand: d/dx (K * x * x) = 2 K x.
        const string marked = """
            using DerivGen;

            namespace Count;

            public static partial class UsesOthers
            {
                [Differentiate]
                public static double Scaled(double x) => Settings.K * x * x;

                [Differentiate]
                public static double Defaulted(double x) => Shapes.Power(x);
            }
            """;
        const string others = """
            namespace Count;

            public static class Settings
            {
                public const double K = 3.0;
            }

            public static partial class Shapes
            {
                public static double Power(double v, int n = 2)
                {
                    double p = 1;
                    for (int i = 0; i < n; i++)
                    {
                        p *= v;
                    }

                    return p;
                }
            }
            """;
        GeneratorHarness.Run(marked, others);
        Compilation compilation = GeneratorHarness.CreateCompilation(marked, others);
        GeneratorDriver driver = GeneratorHarness.CreateDriver().RunGenerators(compilation);
        GeneratorRunResult before = driver.GetRunResult().Results.Single();
        SyntaxTree old = compilation.SyntaxTrees.Single(t => t.FilePath == "Source1.cs");
        string changed = others.Replace("K = 3.0", "K = 5.0", StringComparison.Ordinal).Replace("int n = 2", "int n = 3", StringComparison.Ordinal);
        Compilation edited = compilation.ReplaceSyntaxTree(old, Parse(changed, "Source1.cs"));
        GeneratorRunResult after = Rerun(driver, edited);

        CompilationLowerings counts = CompilationLowerings.Find(edited)!;
        AssertEachOnce(counts.MethodLowerings, "Count.UsesOthers.Scaled(double)", "Count.UsesOthers.Defaulted(double)");
        string scaledBefore = before.GeneratedSources.Single(s => s.HintName == "Count.UsesOthers.Scaled.g.cs").SourceText.ToString();
        string scaledAfter = after.GeneratedSources.Single(s => s.HintName == "Count.UsesOthers.Scaled.g.cs").SourceText.ToString();
        Assert.NotEqual(scaledBefore, scaledAfter);
        string defaultedBefore = before.GeneratedSources.Single(s => s.HintName == "Count.UsesOthers.Defaulted.g.cs").SourceText.ToString();
        string defaultedAfter = after.GeneratedSources.Single(s => s.HintName == "Count.UsesOthers.Defaulted.g.cs").SourceText.ToString();
        Assert.NotEqual(defaultedBefore, defaultedAfter);

        // The same texts as a driver that never saw the earlier compilation writes.
        GeneratorRunResult fresh = FreshRun(edited);
        Assert.Equal(
            fresh.GeneratedSources.Select(s => (s.HintName, s.SourceText.ToString())).OrderBy(p => p.HintName, StringComparer.Ordinal),
            after.GeneratedSources.Select(s => (s.HintName, s.SourceText.ToString())).OrderBy(p => p.HintName, StringComparer.Ordinal));
    }

    [Fact]
    public void AHelperWantedWithAndWithoutItsHessianIsLoweredOncePerKind()
    {
        // G wants Shared's Hessian, H (Hessian = false) does not: two lowerings (their models differ), and one file,
        // with the Hessian, as before.
        const string mixed = """
            using DerivGen;

            namespace Count;

            public static partial class Mixed
            {
                [Differentiate]
                public static double G(double x) => Kernels.Shared(x, x);

                [Differentiate(Hessian = false)]
                public static double H(double x) => Kernels.Shared(x, 1.0);
            }
            """;
        GeneratorHarness.Run(mixed, Kernels);
        Compilation compilation = GeneratorHarness.CreateCompilation(mixed, Kernels);
        GeneratorDriver driver = GeneratorHarness.CreateDriver().RunGenerators(compilation);
        CompilationLowerings counts = CompilationLowerings.Find(compilation)!;
        Assert.Equal(2, counts.HelperLowerings[SharedId]);
        Assert.Equal(2, counts.HelperLowerings[InnerId]);
        string shared = driver.GetRunResult().GeneratedTrees.Single(t => t.FilePath.EndsWith("Count.Kernels.Shared.g.cs", StringComparison.Ordinal)).ToString();
        Assert.Contains("SharedHessian", shared, StringComparison.Ordinal);
    }

    /// <summary>
    /// Edits chosen to tempt a wrong takeover of an earlier lowering; after each, the driver that saw the earlier
    /// compilation must write exactly what a fresh driver writes. (Source0 holds the marked methods, Source1 the rest.)
    /// </summary>
    [Theory]
    [InlineData("a body of a marked method that another one calls", "Source1.cs", "return 2.0 * v;", "return 3.0 * v;")]
    [InlineData("a preprocessor symbol tested by a helper", "Source1.cs", "#if FAST", "#if !FAST")]
    [InlineData("a nested type that captures the name Math", "Source0.cs", "public static partial class Marked\n{", "public static partial class Marked\n{\n    private static class Math\n    {\n        public static double Sin(double v) => v;\n    }\n")]
    [InlineData("a comment in a marked method's file", "Source0.cs", "namespace Count;", "namespace Count; // a note")]
    [InlineData("a directive outside the method that changes its nullable context", "Source0.cs", "namespace Count;", "namespace Count;\n#nullable disable")]
    [InlineData("a helper's parameter from double to int", "Source1.cs", "Twist(double v, double w)", "Twist(double v, int w)")]
    [InlineData("a body that stops compiling", "Source1.cs", "return 2.0 * v;", "return 2.0 * undefined;")]
    [InlineData("a helper's body that stops lowering", "Source1.cs", "return Math.Cos(v) * w;", "return Math.Cos(v) * w + new Random(1).Next();")]
    [InlineData("a helper's body that changes", "Source1.cs", "return Math.Cos(v) * w;", "return Math.Sin(v) * w;")]
    public void TemptingEditsNeverMakeTheOutputDifferFromAFreshRun(string what, string file, string from, string to)
    {
        const string marked = """
            using System;
            using DerivGen;

            namespace Count;

            public static partial class Marked
            {
                [Differentiate]
                public static double Outer(double x) => Other.Doubled(x) + Math.Sin(x);

                [Differentiate]
                public static double UsesHelper(double x, double y) => Other.Twist(x, y) * y;

                [Differentiate(nameof(x))]
                public static double WithData(double x, double[]? t) => x * t!.Length;
            }
            """;
        const string others = """
            using System;
            using DerivGen;

            namespace Count;

            public static partial class Other
            {
                [Differentiate]
                public static double Doubled(double v)
                {
                    return 2.0 * v;
                }

                public static double Twist(double v, double w)
                {
            #if FAST
                    return v * w;
            #else
                    return Math.Cos(v) * w;
            #endif
                }
            }
            """;
        Compilation compilation = GeneratorHarness.CreateCompilation(marked, others);
        GeneratorDriver driver = GeneratorHarness.CreateDriver().RunGenerators(compilation);
        Assert.Equal(5, driver.GetRunResult().GeneratedTrees.Length);
        SyntaxTree old = compilation.SyntaxTrees.Single(t => t.FilePath == file);
        string text = old.ToString();
        string changed = text.Replace(from.Replace("\\n", "\n", StringComparison.Ordinal), to.Replace("\\n", "\n", StringComparison.Ordinal), StringComparison.Ordinal);
        Assert.True(text != changed, "The edit '" + what + "' did not apply.");
        Compilation edited = compilation.ReplaceSyntaxTree(old, Parse(changed, file));
        GeneratorRunResult after = Rerun(driver, edited);
        GeneratorRunResult fresh = FreshRun(edited);
        Assert.Equal(
            fresh.GeneratedSources.Select(s => (s.HintName, s.SourceText.ToString())).OrderBy(p => p.HintName, StringComparer.Ordinal),
            after.GeneratedSources.Select(s => (s.HintName, s.SourceText.ToString())).OrderBy(p => p.HintName, StringComparer.Ordinal));
    }

    /// <summary>Only the named files' texts differ from the driver's previous run, and every text equals what a fresh
    /// driver (which never saw an earlier compilation) writes for the same compilation.</summary>
    private static void AssertTextsChanged(GeneratorDriver before, GeneratorRunResult after, Compilation edited, params string[] changedHints)
    {
        GeneratorRunResult fresh = FreshRun(edited);
        Assert.Equal(
            fresh.GeneratedSources.Select(s => (s.HintName, s.SourceText.ToString())).OrderBy(p => p.HintName, StringComparer.Ordinal),
            after.GeneratedSources.Select(s => (s.HintName, s.SourceText.ToString())).OrderBy(p => p.HintName, StringComparer.Ordinal));
        var textBefore = before.GetRunResult().Results.Single().GeneratedSources.ToDictionary(s => s.HintName, s => s.SourceText.ToString(), StringComparer.Ordinal);
        var textAfter = after.GeneratedSources.ToDictionary(s => s.HintName, s => s.SourceText.ToString(), StringComparer.Ordinal);
        Assert.Equal(textBefore.Keys.OrderBy(k => k, StringComparer.Ordinal), textAfter.Keys.OrderBy(k => k, StringComparer.Ordinal));
        Assert.Equal(changedHints.OrderBy(h => h, StringComparer.Ordinal), textBefore.Keys.Where(k => textBefore[k] != textAfter[k]).OrderBy(k => k, StringComparer.Ordinal));
    }

    /// <summary>
    /// A fresh driver's run on the same sources parsed again: new syntax trees and a new compilation share nothing with
    /// any earlier run (running a new driver on <paramref name="edited"/> itself would find the lowerings recorded for
    /// that compilation object, and so would not be independent).
    /// </summary>
    private static GeneratorRunResult FreshRun(Compilation edited)
    {
        Compilation reparsed = GeneratorHarness.CreateCompilation(edited.SyntaxTrees.Select(t => t.ToString()).ToArray());
        Assert.Equal(edited.SyntaxTrees.Select(t => t.FilePath), reparsed.SyntaxTrees.Select(t => t.FilePath));
        GeneratorRunResult fresh = GeneratorHarness.CreateDriver().RunGenerators(reparsed).GetRunResult().Results.Single();
        Assert.Null(fresh.Exception);
        Assert.DoesNotContain(CompilationLowerings.Find(reparsed)!.MethodLowerings, m => m.Value != 1);
        return fresh;
    }

    private static (GeneratorDriver Driver, Compilation Compilation) RunOnce()
    {
        string[] sources = { First, Second, Kernels, Unrelated };
        GeneratorHarness.Run(sources);
        Compilation compilation = GeneratorHarness.CreateCompilation(sources);
        GeneratorDriver driver = GeneratorHarness.CreateDriver().RunGenerators(compilation);
        Assert.Null(driver.GetRunResult().Results.Single().Exception);
        return (driver, compilation);
    }

    private static GeneratorRunResult Rerun(GeneratorDriver driver, Compilation edited)
    {
        GeneratorRunResult result = driver.RunGenerators(edited).GetRunResult().Results.Single();
        Assert.Null(result.Exception);
        return result;
    }

    private static void AssertEachOnce(IReadOnlyDictionary<string, int> counts, params string[] expected)
    {
        Assert.Equal(expected.OrderBy(k => k, StringComparer.Ordinal), counts.Keys.OrderBy(k => k, StringComparer.Ordinal));
        Assert.All(expected, key => Assert.True(counts[key] == 1, $"{key} was lowered {counts[key]} times"));
    }

    private static SyntaxTree Parse(string text, string path) => CSharpSyntaxTree.ParseText(text, GeneratorHarness.ParseOptions, path);

    private static List<(string HintName, IncrementalStepRunReason Reason)> Outputs(GeneratorRunResult result, string step)
    {
        Assert.True(result.TrackedSteps.TryGetValue(step, out ImmutableArray<IncrementalGeneratorRunStep> runs), $"No tracked step '{step}'");
        return runs.SelectMany(r => r.Outputs).Select(o => (HintNameOf(o.Value), o.Reason)).ToList();
    }

    private static List<IncrementalStepRunReason> Reasons(GeneratorRunResult result, string step) =>
        Outputs(result, step).Select(o => o.Reason).ToList();

    /// <summary>The hint name carried by a Lower output (the lowering result's Spec) or an Emit output (the file).</summary>
    private static string HintNameOf(object? output)
    {
        if (output is null)
        {
            return string.Empty;
        }

        object carrier = output.GetType().GetProperty("Spec")?.GetValue(output) ?? output;
        return carrier.GetType().GetProperty("HintName")?.GetValue(carrier) as string ?? string.Empty;
    }
}
