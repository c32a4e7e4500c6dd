using System;
using DerivGen.Tests.Infrastructure;
using Xunit;

namespace DerivGen.Tests.Numerics.Regressions;

public sealed class VectorVariableRegressionFixture : CompiledFixture
{
    // Minimal reproductions of generator bugs in methods with a vector of variables, found by the randomised tests; each
    // test below names its bug.
    public const string Source = """
        using System;
        using DerivGen;

        public static partial class Guarded
        {
            // Found by the randomised suite once the data became a vector of variables (seed 3-NZoWKxGlRGWNb13).
            [Differentiate(nameof(x), nameof(w), Hessian = false)]
            public static double ReadIfPresent(double x, double[] w) => x * (3 < w.Length ? w[3] : -2.5) + w[0];

            // Found the same way (seed 2yuzwNnzWm-u4u02): a sum carried from one loop into the next, scaled in between.
            // Its running derivative with respect to w was cleared before the second loop and then "scaled" from the
            // cleared values: a zero gradient.
            [Differentiate(nameof(w), Hessian = false)]
            public static double ScaledBetweenLoops(double[] w, double c)
            {
                double s = 0;
                for (int i = 0; i < w.Length; i++)
                {
                    s += w[i];
                }

                s *= c;
                for (int j = 0; j < 2; j++)
                {
                    s *= 1.5;
                }

                return s * s;
            }

            // Found by the randomised suite (seed cb2B-AsuChLwFVBC): Clamp reading the outer loop's index, inside an inner
            // loop that runs zero times, was computed ahead of the inner loop and threw (lo > hi) where the method does not.
            [Differentiate(nameof(x))]
            public static double ClampInAnInnerLoopThatDoesNotRun(double x, double[] lo)
            {
                double s = 0;
                for (int i = 0; i < lo.Length; i++)
                {
                    for (int j = 1; j < lo.Length; j++)
                    {
                        s += Math.Atan(Math.Clamp(x, lo[i], x + 1));
                    }
                }

                return s + x;
            }

            // The same read inside a loop that is replayed (reverse mode over the inner loop) where it is unguarded.
            [Differentiate(nameof(w), Hessian = false)]
            public static double GuardedInInnerLoop(double[] w, double[,] x, int skip)
            {
                double total = 0;
                for (int i = 0; i < x.GetLength(0); i++)
                {
                    double z = 0;
                    for (int j = 0; j < x.GetLength(1); j++)
                    {
                        z += (j + skip < w.Length ? w[j + skip] : 0) * x[i, j];
                    }

                    total += z * z;
                }

                return total;
            }

            // Found by a randomised differential run: the running derivative's own factor is a selection, which the
            // generated code must parenthesize when it multiplies the span.
            [Differentiate(nameof(w), Hessian = false)]
            public static double BranchyRecurrence(double[] w, double[] x)
            {
                double s = w[2];
                for (int i = 0; i < x.Length; i++)
                {
                    if (x[i] > 0.2)
                    {
                        s += w[1];
                    }
                    else
                    {
                        s -= Math.Cos(Math.Tanh(s));
                    }
                }

                return s;
            }
        }
        """;

    public VectorVariableRegressionFixture()
        : base(Source)
    {
    }
}

/// <summary>Bug pins for methods with a vector of variables, each against partials derived by hand or MathNet.</summary>
public sealed class VectorVariableRegressionTests : IClassFixture<VectorVariableRegressionFixture>
{
    private readonly VectorVariableRegressionFixture _fixture;

    public VectorVariableRegressionTests(VectorVariableRegressionFixture fixture) => _fixture = fixture;

    private delegate double ReadIfPresentG(double x, double[] w, Span<double> gradient);

    private delegate double ClampH(double x, double[] lo, Span<double> gradient, Span<double> hessian);

    private delegate double ScaledG(double[] w, double c, Span<double> gradient);

    private delegate double InnerLoopG(double[] w, double[,] x, int skip, Span<double> gradient);

    /// <summary>
    /// Bug: a read of w[3] guarded by 3 &lt; w.Length had its derivative added to gradient[3] unconditionally, so for a
    /// shorter w the generated method threw IndexOutOfRangeException (or, with a longer gradient span, would have written
    /// another variable's entry). Found by the randomised suite's vector-variable variant (seed 3-NZoWKxGlRGWNb13);
    /// fixed in aa4271e.
    /// </summary>
    [Fact]
    public void AGuardedReadOfAMissingElementContributesNothingAndDoesNotThrow()
    {
        var g = _fixture.Assembly.Method<ReadIfPresentG>("Guarded", "ReadIfPresentGradient");

        // w has 3 elements: w[3] is not read; f = −2.5·x + w[0], so ∂f/∂x = −2.5, ∂f/∂w = (1, 0, 0).
        var gradient = new double[4];
        Assert.Equal((-2.5 * 2.0) + 0.5, g(2.0, new[] { 0.5, 1.0, 1.5 }, gradient));
        Assert.Equal(new[] { -2.5, 1.0, 0.0, 0.0 }, gradient);

        // w has 4 elements: f = x·w[3] + w[0], so ∂f/∂x = w[3], ∂f/∂w = (1, 0, 0, x).
        gradient = new double[5];
        Assert.Equal((2.0 * 4.0) + 0.5, g(2.0, new[] { 0.5, 1.0, 1.5, 4.0 }, gradient));
        Assert.Equal(new[] { 4.0, 1.0, 0.0, 0.0, 2.0 }, gradient);
    }

    /// <summary>
    /// Bug: Clamp(x, lo[i], x + 1), which reads the outer loop's index, was computed ahead of an inner loop that runs
    /// zero times and threw ArgumentException (lo &gt; hi) where the method does not. Found by the randomised suite
    /// (seed cb2B-AsuChLwFVBC); fixed in b982fa5.
    /// </summary>
    [Fact]
    public void ClampInAnInnerLoopThatRunsZeroTimesDoesNotThrow()
    {
        var h = _fixture.Assembly.Method<ClampH>("Guarded", "ClampInAnInnerLoopThatDoesNotRunHessian");
        var gradient = new double[1];
        var hessian = new double[1];

        // One element: the inner loop never runs, so Clamp(x, 5, x + 1) with lo > hi is never called; f = x.
        Assert.Equal(1.0, h(1.0, new[] { 5.0 }, gradient, hessian));
        Assert.Equal(1.0, gradient[0]);
        Assert.Equal(0.0, hessian[0]);
    }

    /// <summary>
    /// Bug: a sum of w carried from one loop into the next and scaled in between had its vector running derivative
    /// cleared before the second loop and then "scaled" from the cleared values: a zero gradient. Found by the
    /// randomised suite's vector-variable variant (seed 2yuzwNnzWm-u4u02); fixed in 67f2b48.
    /// f = (2.25·c·Σw)², so ∂f/∂wᵢ = 2·(2.25·c·Σw)·2.25·c for every i (by hand).
    /// </summary>
    [Fact]
    public void ASumScaledBetweenTwoLoopsKeepsItsGradient()
    {
        var g = _fixture.Assembly.Method<ScaledG>("Guarded", "ScaledBetweenLoopsGradient");
        double[] w = { 0.5, -1.25, 2.0 };
        const double c = 0.8;
        double inner = 2.25 * c * (0.5 - 1.25 + 2.0);
        var gradient = new double[3];
        Check.Close(inner * inner, g(w, c, gradient), 1e-14, 0, "value");
        Check.Close(new[] { 2 * inner * 2.25 * c, 2 * inner * 2.25 * c, 2 * inner * 2.25 * c }, gradient, 1e-14, 0, "gradient vs hand-derived");
    }

    /// <summary>
    /// Bug: the same unconditional gradient update as in <see cref="AGuardedReadOfAMissingElementContributesNothingAndDoesNotThrow"/>,
    /// on the path that replays an inner loop in reverse mode (<c>WriteReplay</c>); pinned with the fix of the randomised
    /// suite's finding (aa4271e). T = Σᵢ zᵢ², zᵢ = Σⱼ w[j+s]·xᵢⱼ over the j with j + s &lt; w.Length:
    /// ∂T/∂w[j+s] = 2Σᵢ zᵢxᵢⱼ (by hand).
    /// </summary>
    [Fact]
    public void AGuardedReadInAnInnerLoopMatchesTheHandDerivedGradient()
    {
        var g = _fixture.Assembly.Method<InnerLoopG>("Guarded", "GuardedInInnerLoopGradient");
        double[] w = { 0.5, -1.0, 2.0 };
        double[,] x = { { 1, 2, 3 }, { -0.5, 0.25, 4 } };
        const int skip = 1;
        var expected = new double[w.Length];
        double total = 0;
        for (int i = 0; i < x.GetLength(0); i++)
        {
            double z = 0;
            for (int j = 0; j + skip < w.Length; j++)
            {
                z += w[j + skip] * x[i, j];
            }

            total += z * z;
            for (int j = 0; j + skip < w.Length; j++)
            {
                expected[j + skip] += 2 * z * x[i, j];
            }
        }

        var gradient = new double[w.Length];
        Check.Close(total, g(w, x, skip, gradient), 1e-15, 0, "value");
        Check.Close(expected, gradient, 1e-14, 1e-14, "gradient vs hand-derived");
    }

    /// <summary>
    /// Bug: a running derivative's own factor that is a selection (c ? 1 : …) was printed bare where it multiplies the
    /// span, which changed the meaning of the generated expression. Found by a randomised differential run over
    /// vector-variable programs; fixed in 0c040b4. Reference: MathNet.Numerics central differences (smooth here: the
    /// branch depends on data only); agreement to 1e-7 relative is what a central difference of this order reaches
    /// (common practice).
    /// </summary>
    [Fact]
    public void SelectedRecurrenceMatchesFiniteDifferences()
    {
        double[] x = { 0.7, -0.4, 1.1, 0.1, -0.9 }; // invented data
        double[] w = { 0.37, -0.52, 0.81 };
        var f = _fixture.Assembly.Method<ArrF>("Guarded", "BranchyRecurrence");
        var g = _fixture.Assembly.Method<ArrG>("Guarded", "BranchyRecurrenceGradient");
        var gradient = new double[3];
        Assert.Equal(BitConverter.DoubleToInt64Bits(f(w, x)), BitConverter.DoubleToInt64Bits(g(w, x, gradient)));
        var numerical = new MathNet.Numerics.Differentiation.NumericalDerivative();
        for (int k = 0; k < 3; k++)
        {
            double expected = numerical.EvaluatePartialDerivative(v => f(v, x), (double[])w.Clone(), k, 1);
            Check.Close(expected, gradient[k], 1e-7, 1e-9, $"BranchyRecurrence ∂/∂w[{k}]");
        }
    }

    private delegate double ArrF(double[] w, double[] x);

    private delegate double ArrG(double[] w, double[] x, Span<double> gradient);
}
