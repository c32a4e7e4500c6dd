using System;
using System.Collections.Generic;
using System.Linq;
using System.Text;
using DerivGen.Tests.Infrastructure;
using Xunit;

namespace DerivGen.Tests.Incremental;

/// <summary>
/// Generated files are meant to be committed and reviewed: a one-term edit of a loss must change only the generated
/// lines that depend on that term, so the pull request shows the derivative change next to the loss change and
/// nothing else. Each test generates the file before and after an edit, counts the changed lines with a line diff
/// (lines removed plus lines added, from a longest common subsequence of lines), and compares the count with a bound
/// derived by hand from the file's layout.
/// </summary>
/// <remarks>
/// Layout of a file with a Hessian (see Emit/DerivativeEmitter.cs and README "Reviewing derivatives in diffs"): the
/// loss and each derivative formula appear once in the comment header, once in the XML documentation of each method
/// that returns it (the loss and the gradient in both MGradient and MHessian, the Hessian in MHessian only), and once in
/// the code of each method that computes it. So a formula of the loss or of the gradient has 5 copies, a formula of the
/// Hessian 3. An edit replaces each affected copy by one new line: 2 changed lines (one removed, one added) per copy.
/// MHessianVectorProduct adds one copy in code of the loss, of each gradient entry and of each product entry (its XML
/// documentation shows no formula), and in a loop the updates of the carried locals and their tangents' derivatives.
/// </remarks>
public sealed class DiffStabilityTests
{
    private const string SixTerms = """
        using System;
        using DerivGen;

        namespace Review;

        public static partial class Terms
        {
            // Invented: a six-term objective in two variables.
            [Differentiate(nameof(a), nameof(b))]
            public static double Loss(double a, double b) =>
                1.5 * (a - 1) * (a - 1) + 0.5 * (b + 2) * (b + 2) + 0.25 * Math.Sin(a * b)
                + 2.0 * Math.Exp(-a * a) + 0.75 * Math.Cos(b) + 0.125 * a * b;
        }
        """;

    private const string DataLoop = """
        using System;
        using DerivGen;

        namespace Review;

        public static partial class Fit
        {
            // Invented: half the squared residuals of y ≈ a·exp(−k·t) plus a small penalty on a and k.
            [Differentiate(nameof(a), nameof(k))]
            public static double Loss(double a, double k, double[] t, double[] y)
            {
                double sum = 0;
                for (int i = 0; i < t.Length; i++)
                {
                    double r = a * Math.Exp(-k * t[i]) - y[i];
                    sum += r * r;
                }

                return 0.5 * sum + 0.01 * a * a + 0.02 * k * k;
            }
        }
        """;

    [Fact]
    public void ChangingOneCoefficientChangesOnlyTheFormulasOfThatTerm()
    {
        // 1.5·(a − 1)² depends on a only: the loss, ∂/∂a and ∂²/∂a² change; ∂/∂b, ∂²/∂a∂b and ∂²/∂b² do not.
        // Copies: loss 5, ∂/∂a 5, ∂²/∂a² 3 = 13 replaced lines, 26 changed lines; MHessianVectorProduct's value, ∂/∂a
        // and (H·d) for a: 3 more replaced lines, 32 changed.
        AssertChangedLinesAtMost(SixTerms, SixTerms.Replace("1.5 * (a - 1)", "1.6 * (a - 1)", StringComparison.Ordinal),
            "Review.Terms.Loss.g.cs", bound: 32);
    }

    [Fact]
    public void AddingASeventhTermChangesOnlyItsFormulasAndTheSubexpressionsItShares()
    {
        // + sin(b) depends on b only: the loss, ∂/∂b and ∂²/∂b² change (13 replaced lines, 26 changed). sin(b) and
        // cos(b) already occur (in ∂/∂b and in the loss, one call serving value and derivatives); used once more they
        // may each get a local in each method: at most 2 × 2 added lines. Temporaries are numbered in creation order,
        // so in MHessian the three created after the new one are renamed (t4 → t5, …): their 3 definitions and the 3
        // entries that read them, 6 replaced lines, 12 changed. MHessianVectorProduct: its value, ∂/∂b and (H·d) for
        // b, 3 replaced lines, 6 changed. Bound 26 + 4 + 12 + 6 = 48.
        AssertChangedLinesAtMost(SixTerms, SixTerms.Replace("+ 0.125 * a * b;", "+ 0.125 * a * b + Math.Sin(b);", StringComparison.Ordinal),
            "Review.Terms.Loss.g.cs", bound: 48);
    }

    [Fact]
    public void ChangingATermAfterALoopLeavesTheLoopAlone()
    {
        // 0.02·k² is outside the loop and depends on k only: the loss, ∂/∂k, ∂²/∂k² change (13 replaced lines, as
        // above), plus MHessianVectorProduct's value, ∂/∂k and (H·d) for k (3 more); the loop and its running
        // derivatives must not. Bound 32.
        AssertChangedLinesAtMost(DataLoop, DataLoop.Replace("0.02 * k * k", "0.03 * k * k", StringComparison.Ordinal),
            "Review.Fit.Loss.g.cs", bound: 32);
    }

    [Fact]
    public void ChangingTheLoopBodyChangesOnlyTheUpdatesOfTheCarriedSum()
    {
        // sum += r·r → sum += 2·r·r changes the update of sum and of its running derivatives. The header and both XML
        // docs show the updates of sum, dSum_dA and dSum_dK (3 × 3 lines), and the header and the Hessian method's docs
        // those of d2Sum_dA2, d2Sum_dKdA, d2Sum_dK2 (3 × 2); the gradient method's loop computes the first 3, the Hessian
        // method's loop all 6. 24 replaced lines (each one removed and one added), bound 48. MHessianVectorProduct: the
        // update of sum, the two factors applied to dSum_dA and dSum_dK, and the updates of dSumDot_dA and dSumDot_dK:
        // 5 more replaced lines, bound 58.
        // The loss and gradient formulas after the loop (0.5·sum, 0.5·dSum_dA, ...) do not change.
        AssertChangedLinesAtMost(DataLoop, DataLoop.Replace("sum += r * r;", "sum += 2 * r * r;", StringComparison.Ordinal),
            "Review.Fit.Loss.g.cs", bound: 58);
    }

    [Fact]
    public void LineDiffCountsWhatALongestCommonSubsequenceLeavesOut()
    {
        // Cormen, Leiserson, Rivest & Stein, Introduction to Algorithms, 3rd ed., §15.4: an LCS of ABCBDAB and BDCABA
        // has length 4, so 7 + 6 − 2·4 = 5 elements are removed or added.
        Assert.Equal(5, ChangedLines("ABCBDAB".Select(c => c.ToString()).ToArray(), "BDCABA".Select(c => c.ToString()).ToArray()));
        Assert.Equal(0, ChangedLines(["x", "y"], ["x", "y"]));
        Assert.Equal(2, ChangedLines(["x", "y", "z"], ["x", "w", "z"]));
        Assert.Equal(3, ChangedLines([], ["a", "b", "c"]));
    }

    private static void AssertChangedLinesAtMost(string before, string after, string hintName, int bound)
    {
        Assert.NotEqual(before, after); // the edit applied
        string[] old = Lines(GeneratorHarness.Run(before).Source(hintName));
        string[] @new = Lines(GeneratorHarness.Run(after).Source(hintName));
        int changed = ChangedLines(old, @new);
        Assert.True(changed > 0, "The edit changed nothing in the generated file.");
        Assert.True(changed <= bound,
            $"A one-term edit changed {changed} generated lines (bound {bound}) of {old.Length}:\n{Diff(old, @new)}");
    }

    private static string[] Lines(string text) => text.Replace("\r\n", "\n", StringComparison.Ordinal).Split('\n');

    /// <summary>Lines removed plus lines added: n + m − 2·|LCS| (dynamic programming over the two line lists).</summary>
    private static int ChangedLines(IReadOnlyList<string> a, IReadOnlyList<string> b) => a.Count + b.Count - 2 * Lcs(a, b)[0, 0];

    /// <summary>lcs[i, j] = length of a longest common subsequence of a[i..] and b[j..].</summary>
    private static int[,] Lcs(IReadOnlyList<string> a, IReadOnlyList<string> b)
    {
        var lcs = new int[a.Count + 1, b.Count + 1];
        for (int i = a.Count - 1; i >= 0; i--)
        {
            for (int j = b.Count - 1; j >= 0; j--)
            {
                lcs[i, j] = string.Equals(a[i], b[j], StringComparison.Ordinal)
                    ? lcs[i + 1, j + 1] + 1
                    : Math.Max(lcs[i + 1, j], lcs[i, j + 1]);
            }
        }

        return lcs;
    }

    /// <summary>The changed lines, "-" removed and "+" added, for the failure message.</summary>
    private static string Diff(IReadOnlyList<string> a, IReadOnlyList<string> b)
    {
        int[,] lcs = Lcs(a, b);
        var text = new StringBuilder();
        int i = 0, j = 0;
        while (i < a.Count || j < b.Count)
        {
            if (i < a.Count && j < b.Count && string.Equals(a[i], b[j], StringComparison.Ordinal))
            {
                i++;
                j++;
            }
            else if (j < b.Count && (i == a.Count || lcs[i, j + 1] >= lcs[i + 1, j]))
            {
                text.Append("+ ").Append(b[j++]).Append('\n');
            }
            else
            {
                text.Append("- ").Append(a[i++]).Append('\n');
            }
        }

        return text.ToString();
    }
}
