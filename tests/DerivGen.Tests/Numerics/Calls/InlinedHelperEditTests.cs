using System;
using System.Linq;
using DerivGen.Tests.Infrastructure;
using Microsoft.CodeAnalysis;
using Microsoft.CodeAnalysis.CSharp;
using Xunit;

namespace DerivGen.Tests.Numerics.Calls;

/// <summary>
/// An inlined method's body is part of its callers' lowering: after an edit of it in another file, a driver that saw the
/// earlier compilation writes exactly what a fresh driver writes, and the caller's file changes.
/// </summary>
public sealed class InlinedHelperEditTests
{
    private const string Marked = """
        using System;
        using DerivGen;

        namespace Edits;

        public static partial class Marked
        {
            public static readonly double[] C = { 1.0, 0.5, 0.25 };

            [Differentiate]
            public static double Poly(double x)
            {
                var (once, twice) = Helpers.Scaled(x);
                return Helpers.Horner(C, x) + twice * once;
            }

            [Differentiate]
            public static double Untouched(double x) => x * x;
        }
        """;

    private const string Others = """
        using System;

        namespace Edits;

        public static class Helpers
        {
            public static double Horner(ReadOnlySpan<double> c, double x)
            {
                double acc = c[^1];
                for (int k = c.Length - 2; k >= 0; k--)
                {
                    acc = acc * x + c[k];
                }

                return acc;
            }

            public static (double Once, double Twice) Scaled(double x) => (x, 2 * x);
        }
        """;

    [Theory]
    [InlineData("the loop of a span helper", "acc = acc * x + c[k];", "acc = acc * x - c[k];")]
    [InlineData("a tuple helper's result", "(x, 2 * x)", "(x, 3 * x)")]
    [InlineData("a helper's direction of iteration", "for (int k = c.Length - 2; k >= 0; k--)", "for (int k = 0; k <= c.Length - 2; k++)")]
    public void AnEditOfAnInlinedHelperInAnotherFileIsSeenByItsCaller(string what, string from, string to)
    {
        Compilation compilation = GeneratorHarness.CreateCompilation(Marked, Others);
        GeneratorDriver driver = GeneratorHarness.CreateDriver().RunGenerators(compilation);
        var before = driver.GetRunResult().Results.Single().GeneratedSources.ToDictionary(s => s.HintName, s => s.SourceText.ToString(), StringComparer.Ordinal);
        Assert.Equal(new[] { "Edits.Marked.Poly.g.cs", "Edits.Marked.Untouched.g.cs" }, before.Keys.OrderBy(k => k, StringComparer.Ordinal));

        SyntaxTree old = compilation.SyntaxTrees.Single(t => t.FilePath == "Source1.cs");
        string text = old.ToString();
        string changed = text.Replace(from, to, StringComparison.Ordinal);
        Assert.True(text != changed, "The edit '" + what + "' did not apply.");
        Compilation edited = compilation.ReplaceSyntaxTree(old, CSharpSyntaxTree.ParseText(changed, GeneratorHarness.ParseOptions, "Source1.cs"));

        GeneratorRunResult after = driver.RunGenerators(edited).GetRunResult().Results.Single();
        Assert.Null(after.Exception);
        Compilation reparsed = GeneratorHarness.CreateCompilation(edited.SyntaxTrees.Select(t => t.ToString()).ToArray());
        GeneratorRunResult fresh = GeneratorHarness.CreateDriver().RunGenerators(reparsed).GetRunResult().Results.Single();
        Assert.Equal(
            fresh.GeneratedSources.Select(s => (s.HintName, s.SourceText.ToString())).OrderBy(p => p.HintName, StringComparer.Ordinal),
            after.GeneratedSources.Select(s => (s.HintName, s.SourceText.ToString())).OrderBy(p => p.HintName, StringComparer.Ordinal));
        var textAfter = after.GeneratedSources.ToDictionary(s => s.HintName, s => s.SourceText.ToString(), StringComparer.Ordinal);
        Assert.NotEqual(before["Edits.Marked.Poly.g.cs"], textAfter["Edits.Marked.Poly.g.cs"]);
        Assert.Equal(before["Edits.Marked.Untouched.g.cs"], textAfter["Edits.Marked.Untouched.g.cs"]);
    }
}
