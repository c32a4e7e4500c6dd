using System;
using DerivGen.Tests.Infrastructure;
using Xunit;

namespace DerivGen.Tests.Numerics.Regressions;

public sealed class VectorSpanSnapshotFixture : CompiledFixture
{
    // Minimal reproductions of one generator bug: the running derivative with respect to a vector of variables (a span,
    // dS_dW) of a carried local was read after a loop that updates the same local had changed it, where the code needed
    // its earlier value. Scalars already had copies (sBefore, dS_dXBefore); spans had none. Each method below gave a
    // wrong gradient before the fix.
    public const string Source = """
        using System;
        using DerivGen;

        public static partial class Spans
        {
            // Bug 1 (random case dccGHhGjQ2w9Fixw3): a nested loop reads the value s had at the top of the outer
            // iteration (start) while it updates s. Here the update is s += start·w[j] (the in-place path).
            [Differentiate(nameof(w), Hessian = false)]
            public static double StartOfIterationInNestedLoop(double[] w, int m)
            {
                double s = 0.0;
                for (int i = 0; i < w.Length; i++)
                {
                    s += w[i];
                }

                for (int r = 0; r < m; r++)
                {
                    double start = s;
                    for (int j = 0; j < w.Length; j++)
                    {
                        s += start * w[j];
                    }
                }

                return s;
            }

            // Bug 1 as the random case had it: s /= s + start + c inside a foreach (the path through a Next span).
            [Differentiate(nameof(w), Hessian = false)]
            public static double DividedInNestedLoop(double[] w, int m)
            {
                double s = 0.0;
                for (int i = 0; i < w.Length; i++)
                {
                    s += w[i] * w[i];
                }

                for (int r = 0; r < m; r++)
                {
                    double start = s;
                    foreach (double v in w)
                    {
                        s /= s + start + 1.5;
                    }
                }

                return -s;
            }

            // Bug 2 (random case dxNSt92ChSZfc5dW3): the outer iteration's update of p reads s at the top of the
            // iteration, and a nested loop updates s before the end of the iteration, where p's update is made.
            [Differentiate(nameof(w), Hessian = false)]
            public static double StartOfIterationAfterNestedLoop(double[] w, int m)
            {
                double p = 1.0, s = 0.0;
                for (int r = 0; r < m; r++)
                {
                    p *= 1.0 + s;
                    for (int j = 0; j < w.Length; j++)
                    {
                        s += w[j];
                    }
                }

                return p;
            }

            // The same cause without nesting (found while shrinking bug 1): the value after one loop is kept and a later
            // loop updates the local before the return reads both.
            [Differentiate(nameof(w), Hessian = false)]
            public static double KeptAcrossALaterLoop(double[] w)
            {
                double s = 0.0;
                for (int i = 0; i < w.Length; i++)
                {
                    s += w[i];
                }

                double kept = s;
                for (int r = 0; r < 2; r++)
                {
                    s *= s;
                }

                return kept * s;
            }

            // Bug 3 (found while fixing bugs 1 and 2, same family): before the second loop, dS_dW is scaled by 3 for
            // s's start, and t's start (t = s of before the scaling) then read the scaled span.
            [Differentiate(nameof(w), Hessian = false)]
            public static double StartReadsASpanScaledForTheSameLoop(double[] w)
            {
                double s = 0.0;
                for (int i = 0; i < w.Length; i++)
                {
                    s += w[i];
                }

                double t = s;
                s *= 3.0;
                for (int r = 0; r < 2; r++)
                {
                    t += s;
                    s += 1.0;
                }

                return t;
            }

            // The same with the other order of the loop's updates and a product at the end (through a Next span).
            [Differentiate(nameof(w), Hessian = false)]
            public static double StartReadsASpanScaledForTheSameLoopProduct(double[] w)
            {
                double s = 0.0;
                for (int i = 0; i < w.Length; i++)
                {
                    s += w[i];
                }

                double t = s;
                s *= 3.0;
                for (int r = 0; r < 2; r++)
                {
                    s += 1.0;
                    t += s;
                }

                return t * s;
            }

            // The same through a method with outputs (the Jacobian rows read the spans where the outputs are written).
            [Differentiate(nameof(w))]
            public static void KeptAcrossALaterLoopOutputs(double[] w, Span<double> outputs)
            {
                double s = 0.0;
                for (int i = 0; i < w.Length; i++)
                {
                    s += w[i];
                }

                double kept = s;
                for (int r = 0; r < 2; r++)
                {
                    s *= s;
                }

                outputs[0] = kept * s;
                outputs[1] = kept;
            }
        }
        """;

    public VectorSpanSnapshotFixture()
        : base(Source)
    {
    }
}

/// <summary>
/// Bug: a vector running derivative (the span ∂s/∂w of a carried local s) was read after a loop that updates s had
/// changed it, where the derivative of an earlier value of s was needed — by a nested loop reading the outer iteration's
/// start value, by the outer iteration's update after a nested loop, or after a later loop. Found by the randomised
/// suite's "d as a vector variable" variant (run seeds 3F6w5HTw9i-zRovcc and …dd at DERIVGEN_SOAK=8; cases
/// dccGHhGjQ2w9Fixw3 and dxNSt92ChSZfc5dW3), present before the Differentiation/Emit restructuring too. Fixed in
/// d483ab5: such terms read a copy of the span taken where the earlier value holds (MethodPlan.SpanSnapshots); bug 3
/// (a loop's start reading a span the same loop's start had already changed) in d912a62.
/// Expected values are derived by hand (plain calculus, shown in each test) or MathNet.Numerics central differences.
/// </summary>
public sealed class VectorSpanSnapshotRegressionTests : IClassFixture<VectorSpanSnapshotFixture>
{
    private static readonly double[] W = { 0.25, -0.5, 0.75 }; // invented data; S = Σw = 0.5

    private readonly VectorSpanSnapshotFixture _fixture;

    public VectorSpanSnapshotRegressionTests(VectorSpanSnapshotFixture fixture) => _fixture = fixture;

    private delegate double CountF(double[] w, int m);

    private delegate double CountG(double[] w, int m, Span<double> gradient);

    private delegate double PlainF(double[] w);

    private delegate double PlainG(double[] w, Span<double> gradient);

    private delegate void OutputsJ(double[] w, Span<double> outputs, Span<double> jacobian);

    private static double Sum(double[] w)
    {
        double s = 0;
        foreach (double v in w)
        {
            s += v;
        }

        return s;
    }

    /// <summary>
    /// Bug 1 (case dccGHhGjQ2w9Fixw3), closed form. With S = Σw: the first loop gives s = S; each outer iteration sets
    /// start = s and adds start·w[j] for every j, so s ← start + start·S = start·(1 + S). After m iterations
    /// f = S·(1 + S)^m, and since ∂S/∂wₖ = 1, ∂f/∂wₖ = (1 + S)^m + m·S·(1 + S)^(m−1) = (1 + S)^(m−1)·(1 + (m + 1)·S)
    /// for every k. m = 2: (1 + S)(1 + 3S) = 1.5 · 2.5 = 3.75. Before the fix: 2.25.
    /// </summary>
    [Theory]
    [InlineData(1)]
    [InlineData(2)]
    [InlineData(3)]
    public void ANestedLoopReadingTheIterationsStartValueHasTheHandDerivedGradient(int m)
    {
        var g = _fixture.Assembly.Method<CountG>("Spans", "StartOfIterationInNestedLoopGradient");
        double s = Sum(W);
        double expected = Math.Pow(1 + s, m - 1) * (1 + ((m + 1) * s));
        var gradient = new double[W.Length];
        Check.Close(s * Math.Pow(1 + s, m), g(W, m, gradient), 1e-14, 0, "value");
        Check.Close(new[] { expected, expected, expected }, gradient, 1e-14, 0, "gradient vs hand-derived");
    }

    /// <summary>
    /// Bug 1 in the random case's own form (s /= s + start + c, the update through a Next span), against MathNet.Numerics
    /// central differences; agreement to 1e-7 relative is what a central difference of this order reaches (common
    /// practice). Before the fix every entry had the wrong sign (−0.00184 for +0.00145 at w[0]).
    /// </summary>
    [Fact]
    public void ANestedLoopDividingByTheIterationsStartValueMatchesFiniteDifferences()
    {
        var f = _fixture.Assembly.Method<CountF>("Spans", "DividedInNestedLoop");
        var g = _fixture.Assembly.Method<CountG>("Spans", "DividedInNestedLoopGradient");
        const int m = 2;
        var gradient = new double[W.Length];
        Assert.Equal(BitConverter.DoubleToInt64Bits(f(W, m)), BitConverter.DoubleToInt64Bits(g(W, m, gradient)));
        var numerical = new MathNet.Numerics.Differentiation.NumericalDerivative();
        for (int k = 0; k < W.Length; k++)
        {
            double expected = numerical.EvaluatePartialDerivative(v => f(v, m), (double[])W.Clone(), k, 1);
            Check.Close(expected, gradient[k], 1e-7, 1e-10, $"DividedInNestedLoop ∂/∂w[{k}]");
        }
    }

    /// <summary>
    /// Bug 2 (case dxNSt92ChSZfc5dW3), closed form. At the top of outer iteration r, s = r·S (each nested loop adds S),
    /// so p = Πᵣ₌₀^(m−1) (1 + r·S). m = 3: p = (1 + S)(1 + 2S) = 1 + 3S + 2S², ∂p/∂wₖ = 3 + 4S = 5 for every k.
    /// m = 2: p = 1 + S, ∂p/∂wₖ = 1. Before the fix (m = 3): 11.5.
    /// </summary>
    [Theory]
    [InlineData(2, 1.0)]
    [InlineData(3, 5.0)]
    public void AnOuterUpdateReadingTheIterationsStartValueAfterANestedLoopHasTheHandDerivedGradient(int m, double expected)
    {
        var g = _fixture.Assembly.Method<CountG>("Spans", "StartOfIterationAfterNestedLoopGradient");
        double s = Sum(W);
        Assert.Equal(0.5, s);
        var gradient = new double[W.Length];
        Check.Close(m == 2 ? 1 + s : (1 + s) * (1 + (2 * s)), g(W, m, gradient), 1e-14, 0, "value");
        Check.Close(new[] { expected, expected, expected }, gradient, 1e-14, 0, "gradient vs hand-derived");
    }

    /// <summary>
    /// Bug 3 (same family, found while fixing bugs 1 and 2 by writing variants of them): the spans' starts before a loop
    /// are made one after another, and t's start read dS_dW after s's start had already scaled it by 3. Closed forms,
    /// S = Σw, ∂S/∂wₖ = 1: first method, t = S, s = 3S, then t ← t + s; s ← s + 1 twice: t = S + 3S + (3S + 1) = 7S + 1,
    /// ∂t/∂wₖ = 7 (before the fix: 9). Second method, s ← s + 1; t ← t + s twice: s = 3S + 2, t = S + (3S + 1) + (3S + 2)
    /// = 7S + 3, f = t·s, ∂f/∂wₖ = 7(3S + 2) + 3(7S + 3) = 42S + 23 = 44 at S = 0.5 (before the fix: 51).
    /// </summary>
    [Fact]
    public void AStartReadingASpanTheSameLoopRestartsHasTheHandDerivedGradient()
    {
        double s = Sum(W);
        var gradient = new double[W.Length];
        var g = _fixture.Assembly.Method<PlainG>("Spans", "StartReadsASpanScaledForTheSameLoopGradient");
        Check.Close((7 * s) + 1, g(W, gradient), 1e-14, 0, "value");
        Check.Close(new[] { 7.0, 7.0, 7.0 }, gradient, 1e-14, 0, "gradient vs hand-derived");

        var product = _fixture.Assembly.Method<PlainG>("Spans", "StartReadsASpanScaledForTheSameLoopProductGradient");
        double expected = (42 * s) + 23;
        Check.Close(((7 * s) + 3) * ((3 * s) + 2), product(W, gradient), 1e-14, 0, "value");
        Check.Close(new[] { expected, expected, expected }, gradient, 1e-14, 0, "gradient vs hand-derived");
    }

    /// <summary>
    /// The same cause without nesting, closed form: kept = S, then s ← s² twice gives S⁴, f = S·S⁴ = S⁵ and
    /// ∂f/∂wₖ = 5S⁴ = 0.3125 for every k (before the fix: 0.28125). The Jacobian of the outputs variant: row 0 is
    /// the same 5S⁴, row 1 (kept = S) is 1 for every k.
    /// </summary>
    [Fact]
    public void AValueKeptAcrossALaterLoopHasTheHandDerivedGradientAndJacobian()
    {
        var g = _fixture.Assembly.Method<PlainG>("Spans", "KeptAcrossALaterLoopGradient");
        double s = Sum(W);
        double row0 = 5 * Math.Pow(s, 4);
        var gradient = new double[W.Length];
        Check.Close(Math.Pow(s, 5), g(W, gradient), 1e-14, 0, "value");
        Check.Close(new[] { row0, row0, row0 }, gradient, 1e-14, 0, "gradient vs hand-derived");

        var j = _fixture.Assembly.Method<OutputsJ>("Spans", "KeptAcrossALaterLoopOutputsJacobian");
        var outputs = new double[2];
        var jacobian = new double[2 * W.Length];
        j(W, outputs, jacobian);
        Check.Close(new[] { Math.Pow(s, 5), s }, outputs, 1e-14, 0, "outputs");
        Check.Close(new[] { row0, row0, row0, 1.0, 1.0, 1.0 }, jacobian, 1e-14, 0, "Jacobian vs hand-derived");
    }
}
