using System;
using System.Collections.Generic;
using System.Collections.Immutable;
using System.Linq;
using DerivGen.Generator;
using DerivGen.Tests.Infrastructure;
using Microsoft.CodeAnalysis;
using Microsoft.CodeAnalysis.CSharp;
using Xunit;

namespace DerivGen.Tests.Incremental;

/// <summary>
/// Reruns one driver on an edited compilation and reads the tracked steps: an unrelated edit must leave every
/// "Lower" and "Emit" output Cached or Unchanged, and an edit to one method's body must regenerate that method only.
/// </summary>
public sealed class IncrementalCacheTests
{
    private const string First = """
        using System;
        using DerivGen;

        namespace Cache;

        public static partial class A
        {
            [Differentiate]
            public static double Alpha(double x, double y) => Math.Sin(x) * y + x * x;
        }
        """;

    private const string Second = """
        using System;
        using DerivGen;

        namespace Cache;

        public static partial class B
        {
            [Differentiate]
            public static double Beta(double u) => Math.Exp(-u * u);

            [Differentiate]
            public static double Gamma(double u, double v) => u * v;
        }
        """;

    private const string Unrelated = """
        namespace Cache;

        public static class Helpers
        {
            public static int Twice(int k) => 2 * k;
        }
        """;

    private static readonly IncrementalStepRunReason[] CachedOrUnchanged =
    {
        IncrementalStepRunReason.Cached, IncrementalStepRunReason.Unchanged,
    };

    [Fact]
    public void EveryPublicStepNameIsAStepThatRuns()
    {
        // The constants are what tests and users filter tracked steps by: each must name a step of a real run (one with a
        // marked method and an unmarked helper, so the helper steps run too), or a filter on it silently sees nothing.
        const string marked = """
            using DerivGen;

            namespace Cache;

            public static partial class Loss
            {
                [Differentiate]
                public static double Total(double x) => Kernels.Bump(x) + x;
            }
            """;
        const string helper = """
            using System;

            namespace Cache;

            public static partial class Kernels
            {
                public static double Bump(double v) => Math.Exp(-v * v);
            }
            """;
        var (driver, _) = RunOnce(marked, helper);
        GeneratorRunResult result = driver.GetRunResult().Results.Single();
        foreach (string step in new[] { DerivativeGenerator.LowerStep, DerivativeGenerator.EmitStep, DerivativeGenerator.HelperStep, DerivativeGenerator.EmitHelperStep })
        {
            Assert.True(result.TrackedSteps.TryGetValue(step, out ImmutableArray<IncrementalGeneratorRunStep> runs) && !runs.IsEmpty,
                $"No tracked step named '{step}' ran; tracked: {string.Join(", ", result.TrackedSteps.Keys)}");
        }
    }

    [Fact]
    public void AddingAnUnrelatedFileRegeneratesNothing()
    {
        var (driver, compilation) = RunOnce(First, Second);
        var edited = compilation.AddSyntaxTrees(Parse(Unrelated, "Source2.cs"));
        GeneratorRunResult result = driver.RunGenerators(edited).GetRunResult().Results.Single();
        AssertAllOutputs(result, CachedOrUnchanged);
    }

    [Fact]
    public void EditingAnUnrelatedFileRegeneratesNothing()
    {
        var (driver, compilation) = RunOnce(First, Second, Unrelated);
        SyntaxTree old = compilation.SyntaxTrees.Single(t => t.FilePath == "Source2.cs");
        var edited = compilation.ReplaceSyntaxTree(old, Parse(Unrelated.Replace("2 * k", "3 * k + 1", StringComparison.Ordinal), "Source2.cs"));
        GeneratorRunResult result = driver.RunGenerators(edited).GetRunResult().Results.Single();
        AssertAllOutputs(result, CachedOrUnchanged);
    }

    [Fact]
    public void EditingCommentsInAMarkedMethodsFileRegeneratesNothing()
    {
        // The lowered model of Alpha does not change when only trivia in its file changes.
        var (driver, compilation) = RunOnce(First, Second);
        SyntaxTree old = compilation.SyntaxTrees.Single(t => t.FilePath == "Source0.cs");
        var edited = compilation.ReplaceSyntaxTree(old, Parse("// a comment\n" + First, "Source0.cs"));
        GeneratorRunResult result = driver.RunGenerators(edited).GetRunResult().Results.Single();
        AssertStep(result, DerivativeGenerator.EmitStep, CachedOrUnchanged);
    }

    [Fact]
    public void EditingOneMethodBodyRegeneratesOnlyThatMethod()
    {
        var (driver, compilation) = RunOnce(First, Second);
        GeneratorRunResult before = driver.GetRunResult().Results.Single();
        SyntaxTree old = compilation.SyntaxTrees.Single(t => t.FilePath == "Source1.cs");
        string changed = Second.Replace("Math.Exp(-u * u)", "Math.Exp(-u * u * 0.5)", StringComparison.Ordinal);
        var edited = compilation.ReplaceSyntaxTree(old, Parse(changed, "Source1.cs"));
        GeneratorRunResult after = driver.RunGenerators(edited).GetRunResult().Results.Single();

        // Exactly one Emit output changed ...
        var emitReasons = OutputReasons(after, DerivativeGenerator.EmitStep);
        Assert.Equal(1, emitReasons.Count(r => r == IncrementalStepRunReason.Modified || r == IncrementalStepRunReason.New));
        Assert.All(emitReasons.Where(r => r != IncrementalStepRunReason.Modified && r != IncrementalStepRunReason.New),
            r => Assert.Contains(r, CachedOrUnchanged));

        // ... and it is Beta's: its text changed, every other file is byte-identical.
        var textBefore = before.GeneratedSources.ToDictionary(s => s.HintName, s => s.SourceText.ToString());
        var textAfter = after.GeneratedSources.ToDictionary(s => s.HintName, s => s.SourceText.ToString());
        Assert.Equal(textBefore.Keys.OrderBy(k => k, StringComparer.Ordinal), textAfter.Keys.OrderBy(k => k, StringComparer.Ordinal));
        foreach (string hint in textBefore.Keys)
        {
            if (hint == "Cache.B.Beta.g.cs")
            {
                Assert.NotEqual(textBefore[hint], textAfter[hint]);
            }
            else
            {
                Assert.Equal(textBefore[hint], textAfter[hint]);
            }
        }

        // Lower: Beta's model changed; Alpha (other file) is cached; Gamma (same file) is re-lowered but Unchanged.
        var lowerReasons = OutputReasons(after, DerivativeGenerator.LowerStep);
        Assert.Equal(1, lowerReasons.Count(r => r == IncrementalStepRunReason.Modified || r == IncrementalStepRunReason.New));
    }

    [Fact]
    public void EditingAHelperInAnotherFileRegeneratesTheHelperOnly()
    {
        const string caller = """
            using DerivGen;

            namespace Cache;

            public static partial class Loss
            {
                [Differentiate]
                public static double Total(double x) => Kernels.Bump(x) + x;
            }
            """;
        const string helper = """
            using System;

            namespace Cache;

            public static partial class Kernels
            {
                public static double Bump(double v) => Math.Exp(-v * v);
            }
            """;
        var (driver, compilation) = RunOnce(caller, helper);
        GeneratorRunResult before = driver.GetRunResult().Results.Single();
        SyntaxTree old = compilation.SyntaxTrees.Single(t => t.FilePath == "Source1.cs");
        var edited = compilation.ReplaceSyntaxTree(old, Parse(helper.Replace("-v * v", "-2.0 * v * v", StringComparison.Ordinal), "Source1.cs"));
        GeneratorRunResult after = driver.RunGenerators(edited).GetRunResult().Results.Single();

        // The caller is lowered again (Roslyn reruns the Lower transform after any change of the compilation) to an equal
        // model, so its file is not written again; the helper's derivatives follow its new body.
        Assert.All(OutputReasons(after, DerivativeGenerator.LowerStep), r => Assert.Contains(r, CachedOrUnchanged));
        string bumpBefore = before.GeneratedSources.Single(s => s.HintName == "Cache.Kernels.Bump.g.cs").SourceText.ToString();
        string bumpAfter = after.GeneratedSources.Single(s => s.HintName == "Cache.Kernels.Bump.g.cs").SourceText.ToString();
        Assert.DoesNotContain("2.0 * v", bumpBefore, StringComparison.Ordinal);
        Assert.Contains("2.0 * v", bumpAfter, StringComparison.Ordinal);
        Assert.Equal(
            before.GeneratedSources.Single(s => s.HintName == "Cache.Loss.Total.g.cs").SourceText.ToString(),
            after.GeneratedSources.Single(s => s.HintName == "Cache.Loss.Total.g.cs").SourceText.ToString());
    }

    private static (GeneratorDriver Driver, Compilation Compilation) RunOnce(params string[] sources)
    {
        // GeneratorHarness.Run first checks the sources generate cleanly; then a tracking driver is run for real.
        GeneratorHarness.Run(sources);
        Compilation compilation = GeneratorHarness.CreateCompilation(sources);
        GeneratorDriver driver = GeneratorHarness.CreateDriver().RunGenerators(compilation);
        GeneratorRunResult first = driver.GetRunResult().Results.Single();
        Assert.Null(first.Exception);
        Assert.NotEmpty(first.TrackedSteps[DerivativeGenerator.LowerStep]);
        Assert.NotEmpty(first.TrackedSteps[DerivativeGenerator.EmitStep]);
        return (driver, compilation);
    }

    private static SyntaxTree Parse(string text, string path) =>
        CSharpSyntaxTree.ParseText(text, GeneratorHarness.ParseOptions, path);

    private static List<IncrementalStepRunReason> OutputReasons(GeneratorRunResult result, string step)
    {
        Assert.True(result.TrackedSteps.TryGetValue(step, out ImmutableArray<IncrementalGeneratorRunStep> runs),
            $"No tracked step named '{step}'; tracked: {string.Join(", ", result.TrackedSteps.Keys)}");
        return runs.SelectMany(r => r.Outputs).Select(o => o.Reason).ToList();
    }

    private static void AssertStep(GeneratorRunResult result, string step, IncrementalStepRunReason[] allowed)
    {
        var reasons = OutputReasons(result, step);
        Assert.NotEmpty(reasons);
        Assert.All(reasons, r => Assert.True(allowed.Contains(r), $"Step '{step}' has an output with reason {r}"));
    }

    private static void AssertAllOutputs(GeneratorRunResult result, IncrementalStepRunReason[] allowed)
    {
        AssertStep(result, DerivativeGenerator.LowerStep, allowed);
        AssertStep(result, DerivativeGenerator.EmitStep, allowed);
    }
}
