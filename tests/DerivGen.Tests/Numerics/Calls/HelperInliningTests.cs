using System;
using DerivGen.Tests.Infrastructure;
using Xunit;

namespace DerivGen.Tests.Numerics.Calls;

public sealed class HelperInliningFixture : CompiledFixture
{
    // Unmarked methods that are inlined at the call (a loop, early returns, a tuple, an instance method, spans and a
    // 2-D array) and block-bodied local functions with loops. Coefficients and data are invented.
    public const string Source = """
        using System;
        using DerivGen;

        public sealed partial class Inl
        {
            public static readonly double[] Coeffs = { 0.5, -1.25, 2.0, 0.75 };
            public static readonly double[] Levels = { 0.2, 0.9, 1.7, 2.4 };
            public static readonly double[,] M = { { 2.0, 0.3 }, { 0.3, 1.5 } };

            // Horner's rule over a span, with a loop counting down and c[^1].
            private static double Horner(ReadOnlySpan<double> c, double x)
            {
                double acc = c[^1];
                for (int k = c.Length - 2; k >= 0; k--)
                {
                    acc = acc * x + c[k];
                }

                return acc;
            }

            [Differentiate]
            public static double Poly(double x) => Horner(Coeffs, x) * Math.Sin(x);

            // A return inside a loop (its condition reads data only), and one after the loop.
            private static double FirstAbove(ReadOnlySpan<double> levels, double threshold, double x)
            {
                for (int i = 0; i < levels.Length; i++)
                {
                    if (levels[i] > threshold)
                    {
                        return x * x * levels[i];
                    }
                }

                return -x;
            }

            [Differentiate]
            public static double Above(double x, double y) => FirstAbove(Levels, 1.0, x) + FirstAbove(Levels, 5.0, y) * x;

            // The same helper called in a loop: its result and flag are assigned before its own loop in every iteration.
            [Differentiate]
            public static double AboveInALoop(double x)
            {
                double s = 0;
                for (int r = 0; r < 2; r++)
                {
                    s += FirstAbove(Levels, 1.0 + r, x);
                }

                return s;
            }

            // A local function with an early return under a condition on the variable (a branch, no loop after it).
            [Differentiate]
            public static double Clip(double x)
            {
        #pragma warning disable DG0007 // the switch of pieces at u = 1 is intended
                double SoftClip(double u)
                {
                    if (u > 1)
                    {
                        return 1 + Math.Log(u);
                    }

                    double v = u * u;
                    return 0.5 * (v + 1);
                }
        #pragma warning restore DG0007

                return SoftClip(x) * SoftClip(2 * x);
            }

            // A tuple result, deconstructed with var (…) and into existing locals; a foreach over the span.
            private static (double Sum, double SumOfSquares) Moments(ReadOnlySpan<double> values, double shift)
            {
                double s = 0, q = 0;
                foreach (double v in values)
                {
                    double d = v - shift;
                    s += d;
                    q += d * d;
                }

                return (s, q);
            }

            [Differentiate]
            public static double Spread(double shift, double scale)
            {
                var (s, q) = Moments(Levels, shift);
                double s2, q2;
                (s2, q2) = Moments(Coeffs, scale);
                return scale * q + s + 0 * (s2 + q2) + s2 * 0.25;
            }

            // One element of a tuple result read at the call.
            [Differentiate]
            public static double TupleElement(double x) => Moments(Levels, x).Sum * x;

            // A 2-D array and a span of the variables (a local array, so both loops are unrolled).
            private static double Quadratic(double[,] m, ReadOnlySpan<double> w)
            {
                double s = 0;
                for (int i = 0; i < w.Length; i++)
                {
                    for (int j = 0; j < w.Length; j++)
                    {
                        s += w[i] * m[i, j] * w[j];
                    }
                }

                return s;
            }

            [Differentiate]
            public static double Form(double a, double b)
            {
                Span<double> w = stackalloc double[] { a, b };
                return Quadratic(M, w);
            }

            // A local function with a loop.
            [Differentiate]
            public static double LocalLoop(double x, double y)
            {
                double Power(double b, int n)
                {
                    double p = 1;
                    for (int i = 0; i < n; i++)
                    {
                        p *= b;
                    }

                    return p;
                }

                return Power(x, 3) + 2 * Power(y, 2) * x;
            }

            // A helper of a type that is not partial (inlined), and an inlined helper calling a called one (Sq).
            [Differentiate]
            public static double Mixed(double x) => Outside.Cube(x) + SumSq(Levels, x);

            private static double Sq(double u) => u * u;

            private static double SumSq(ReadOnlySpan<double> v, double x)
            {
                double s = 0;
                for (int i = 0; i < v.Length; i++)
                {
                    s += Sq(v[i] - x);
                }

                return s;
            }
        }

        public sealed partial class InlModel
        {
            private readonly double _gain = 1.5;

            // An instance method of this object reading a field.
            private double Scaled(double u) => _gain * u * u;

            [Differentiate]
            public double Instance(double x) => Scaled(x) + Scaled(x + 1);
        }

        public static class Outside
        {
            internal static double Cube(double u) => u * u * u;
        }
        """;

    public HelperInliningFixture()
        : base(Source)
    {
    }
}

/// <summary>
/// Unmarked methods inlined at the call: gradients and Hessians against hand derivatives (plain calculus; Horner's rule
/// evaluates the polynomial p) and MathNet finite differences, values bit for bit (Verify.At).
/// </summary>
public sealed class HelperInliningTests : IClassFixture<HelperInliningFixture>
{
    private static readonly double[] Levels = { 0.2, 0.9, 1.7, 2.4 };
    private static readonly double[] Coeffs = { 0.5, -1.25, 2.0, 0.75 };

    private readonly HelperInliningFixture _fixture;

    public HelperInliningTests(HelperInliningFixture fixture) => _fixture = fixture;

    [Fact]
    public void OnlyTheCalledHelperGetsAFileOfItsOwn() =>
        Assert.Equal(
            new[] { "Inl.Above.g.cs", "Inl.AboveInALoop.g.cs", "Inl.Clip.g.cs", "Inl.Form.g.cs", "Inl.LocalLoop.g.cs", "Inl.Mixed.g.cs", "Inl.Poly.g.cs", "Inl.Spread.g.cs", "Inl.Sq.g.cs", "Inl.TupleElement.g.cs", "InlModel.Instance.g.cs" },
            _fixture.Run.HintNames);

    [Theory]
    [InlineData(0.7)]
    [InlineData(-1.3)]
    public void HornerOverASpanWithALoopCountingDown(double x)
    {
        // p = 0.5 − 1.25x + 2x² + 0.75x³, f = p sin x: f' = p' sin x + p cos x, f'' = p'' sin x + 2p' cos x − p sin x.
        double p = Coeffs[0] + (x * (Coeffs[1] + (x * (Coeffs[2] + (x * Coeffs[3])))));
        double dp = Coeffs[1] + (2 * Coeffs[2] * x) + (3 * Coeffs[3] * x * x);
        double ddp = (2 * Coeffs[2]) + (6 * Coeffs[3] * x);
        double s = Math.Sin(x), c = Math.Cos(x);
        Verify.At(Probe.Load(_fixture.Assembly, "Inl", "Poly", 1), new[] { x }, new[] { (dp * s) + (p * c) }, new[] { (ddp * s) + (2 * dp * c) - (p * s) }, "Poly");
    }

    [Theory]
    [InlineData(0.6, -0.4)]
    [InlineData(-2.0, 1.5)]
    public void ReturnInsideALoopAndAfterIt(double x, double y)
    {
        // The first level above 1 is 1.7; none is above 5: f = 1.7x² − yx. ∂x = 3.4x − y, ∂y = −x; H = [[3.4, −1], [−1, 0]].
        Verify.At(Probe.Load(_fixture.Assembly, "Inl", "Above", 2), new[] { x, y }, new[] { (3.4 * x) - y, -x }, new[] { 3.4, -1, -1, 0 }, "Above");
    }

    [Theory]
    [InlineData(0.6)]
    [InlineData(-1.9)]
    public void HelperWithAReturnInALoopCalledInALoop(double x)
    {
        // Thresholds 1 and 2 find the levels 1.7 and 2.4: f = (1.7 + 2.4) x², f' = 8.2x, f'' = 8.2.
        Verify.At(Probe.Load(_fixture.Assembly, "Inl", "AboveInALoop", 1), new[] { x }, new[] { 8.2 * x }, new[] { 8.2 }, "AboveInALoop", closedFormAbsolute: 1e-13);
    }

    [Theory]
    [InlineData(0.3)]
    [InlineData(0.8)]
    [InlineData(1.4)]
    public void EarlyReturnInABranchOnTheVariable(double x)
    {
        // s(u) = 1 + ln u for u > 1, (u² + 1)/2 otherwise; f = s(x) s(2x):
        // f' = s'(x) s(2x) + 2 s(x) s'(2x), f'' = s''(x) s(2x) + 4 s'(x) s'(2x) + 4 s(x) s''(2x).
        static double S(double u) => u > 1 ? 1 + Math.Log(u) : 0.5 * ((u * u) + 1);
        static double S1(double u) => u > 1 ? 1 / u : u;
        static double S2(double u) => u > 1 ? -1 / (u * u) : 1;
        double d1 = (S1(x) * S(2 * x)) + (2 * S(x) * S1(2 * x));
        double d2 = (S2(x) * S(2 * x)) + (4 * S1(x) * S1(2 * x)) + (4 * S(x) * S2(2 * x));
        Verify.At(Probe.Load(_fixture.Assembly, "Inl", "Clip", 1), new[] { x }, new[] { d1 }, new[] { d2 }, "Clip");
    }

    [Theory]
    [InlineData(0.5, 2.0)]
    [InlineData(1.1, -0.3)]
    public void TupleResultDeconstructed(double shift, double scale)
    {
        // f = scale Σ(v − shift)² + Σ(v − shift) + 0.25 Σ(c − scale) over the levels v and coefficients c:
        // ∂shift = −2 scale Σ(v − shift) − n, ∂scale = Σ(v − shift)² − 0.25 m; ∂shift² = 2 scale n, ∂shift∂scale = −2 Σ(v − shift), ∂scale² = 0.
        double s = 0, q = 0;
        foreach (double v in Levels)
        {
            s += v - shift;
            q += (v - shift) * (v - shift);
        }

        int n = Levels.Length;
        double[] gradient = { (-2 * scale * s) - n, q - (0.25 * Coeffs.Length) };
        double[] hessian = { 2 * scale * n, -2 * s, -2 * s, 0 };
        Verify.At(Probe.Load(_fixture.Assembly, "Inl", "Spread", 2), new[] { shift, scale }, gradient, hessian, "Spread", closedFormAbsolute: 1e-13);
    }

    [Theory]
    [InlineData(0.45)]
    [InlineData(-1.2)]
    public void TupleElementReadAtTheCall(double x)
    {
        // x Σ(v − x) = x Σv − n x²: f' = Σv − 2n x, f'' = −2n.
        double sum = 0;
        foreach (double v in Levels)
        {
            sum += v;
        }

        int n = Levels.Length;
        Verify.At(Probe.Load(_fixture.Assembly, "Inl", "TupleElement", 1), new[] { x }, new[] { sum - (2 * n * x) }, new[] { -2.0 * n }, "TupleElement", closedFormAbsolute: 1e-13);
    }

    [Theory]
    [InlineData(0.4)]
    [InlineData(-1.7)]
    public void InstanceMethodOfThisObject(double x)
    {
        // 1.5x² + 1.5(x + 1)²: f' = 3x + 3(x + 1), f'' = 6.
        object model = _fixture.Assembly.New("InlModel");
        Verify.At(Probe.Load(_fixture.Assembly, "InlModel", "Instance", 1, target: model), new[] { x }, new[] { (3 * x) + (3 * (x + 1)) }, new[] { 6.0 }, "Instance");
    }

    [Theory]
    [InlineData(0.3, -0.8)]
    [InlineData(1.2, 2.5)]
    public void QuadraticFormOverATwoDimensionalArray(double a, double b)
    {
        // wᵀMw with M symmetric: gradient 2Mw, Hessian 2M.
        double[] gradient = { 2 * ((2.0 * a) + (0.3 * b)), 2 * ((0.3 * a) + (1.5 * b)) };
        Verify.At(Probe.Load(_fixture.Assembly, "Inl", "Form", 2), new[] { a, b }, gradient, new[] { 4.0, 0.6, 0.6, 3.0 }, "Form");
    }

    [Theory]
    [InlineData(0.9, -1.1)]
    [InlineData(-0.5, 0.7)]
    public void LocalFunctionWithALoop(double x, double y)
    {
        // x³ + 2y²x: ∂x = 3x² + 2y², ∂y = 4xy; H = [[6x, 4y], [4y, 4x]].
        Verify.At(Probe.Load(_fixture.Assembly, "Inl", "LocalLoop", 2), new[] { x, y }, new[] { (3 * x * x) + (2 * y * y), 4 * x * y },
            new[] { 6 * x, 4 * y, 4 * y, 4 * x }, "LocalLoop");
    }

    [Theory]
    [InlineData(0.35)]
    [InlineData(-2.2)]
    public void InlinedHelperCallingACalledHelper(double x)
    {
        // x³ + Σ(l − x)²: f' = 3x² − 2Σ(l − x), f'' = 6x + 2n.
        double s = 0;
        foreach (double l in Levels)
        {
            s += l - x;
        }

        Verify.At(Probe.Load(_fixture.Assembly, "Inl", "Mixed", 1), new[] { x }, new[] { (3 * x * x) - (2 * s) }, new[] { (6 * x) + (2 * Levels.Length) }, "Mixed", closedFormAbsolute: 1e-13);
    }
}
