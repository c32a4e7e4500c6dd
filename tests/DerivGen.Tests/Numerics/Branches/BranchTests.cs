using System;
using DerivGen.Tests.Infrastructure;
using DerivGen.Tests.Numerics.Loops;
using Xunit;

namespace DerivGen.Tests.Numerics.Branches;

public sealed class BranchFixture : CompiledFixture
{
    // Losses with if / else if / else, ?:, comparisons, && || !, bool and int locals and var.
    // A condition that depends on a variable is a kink (DG0007); the pragmas below say the kinks are intended.
    public const string Source = """
        using System;
        using DerivGen;

        namespace Branches;

        public static partial class Robust
        {
        #pragma warning disable DG0007 // |r| <= delta switches between the quadratic and the linear piece on purpose
            // Huber's loss of the residuals of the line y ~ a + b t, with if / else inside the loop.
            [Differentiate(nameof(a), nameof(b))]
            public static double Huber(double a, double b, double[] t, double[] y, double delta)
            {
                double s = 0;
                for (int i = 0; i < t.Length; i++)
                {
                    double r = y[i] - (a + b * t[i]);
                    if (Math.Abs(r) <= delta)
                    {
                        s += 0.5 * r * r;
                    }
                    else
                    {
                        s += delta * (Math.Abs(r) - 0.5 * delta);
                    }
                }

                return s;
            }

            // The same loss with a bool local, var and ?:, gradient only.
            [Differentiate(nameof(a), nameof(b), Hessian = false)]
            public static double HuberConditional(double a, double b, double[] t, double[] y, double delta)
            {
                var s = 0.0;
                for (int i = 0; i < t.Length; i++)
                {
                    var r = y[i] - (a + b * t[i]);
                    bool inlier = Math.Abs(r) <= delta;
                    s += inlier ? 0.5 * r * r : delta * (Math.Abs(r) - 0.5 * delta);
                }

                return s;
            }

            // Logistic negative log-likelihood through branches: a data condition picks the sign (no kink), and a
            // variable condition picks the overflow-free form of log(1 + e^m) (common practice).
            [Differentiate(nameof(w0), nameof(w1), nameof(w2))]
            public static double LogisticByBranches(double w0, double w1, double w2, double[] x1, double[] x2, double[] y)
            {
                double nll = 0;
                for (int i = 0; i < y.Length; i++)
                {
                    double z = w0 + w1 * x1[i] + w2 * x2[i];
                    double m = y[i] > 0.5 ? -z : z;
                    if (m > 0)
                    {
                        nll += m + Math.Log(1 + Math.Exp(-m));
                    }
                    else
                    {
                        nll += Math.Log(1 + Math.Exp(m));
                    }
                }

                return nll;
            }

            // The untaken branch is not differentiable here (log of a negative number): its derivatives must not
            // leak into the result.
            [Differentiate]
            public static double Guarded(double x, double y)
            {
                double r = x > 0 ? x * Math.Log(x) + y * y : -x * y;
                return r;
            }

            // The square root is taken only where its argument is positive.
            [Differentiate]
            public static double SafeSqrt(double x, double y) => x > 0 ? Math.Sqrt(x) * y : y * y;

            // Ties at the switching point: the branch C# takes decides.
            [Differentiate] public static double ReluStrict(double x) => x > 0 ? x : 0.0;
            [Differentiate] public static double ReluInclusive(double x) => x >= 0 ? x : 0.0;

            // else-if chain with && || and !.
            [Differentiate]
            public static double Quadrants(double x, double y)
            {
                double f;
                if (x > 0 && y > 0)
                {
                    f = x * x * y;
                }
                else if (!(x <= 0) || y > 0)
                {
                    f = x + y * y;
                }
                else
                {
                    f = Math.Exp(x * y);
                }

                return f;
            }

            // An int local chosen by a variable condition, an if without else, == and !=.
            [Differentiate]
            public static double IntChosenByBranch(double x, double y)
            {
                int k;
                if (x > 1)
                {
                    k = 3;
                }
                else
                {
                    k = 1;
                }

                double f = k * x * x;
                if (k == 3)
                {
                    f += y * x;
                }

                if (k != 3)
                {
                    f -= y * y;
                }

                return f;
            }

            // Asymmetric least squares: a weight chosen by the sign of the residual, assigned by an if without else
            // to a local declared in the loop body.
            [Differentiate(nameof(a), nameof(b))]
            public static double Expectile(double a, double b, double[] t, double[] y, double tau)
            {
                double s = 0;
                for (int i = 0; i < t.Length; i++)
                {
                    double r = y[i] - a - b * t[i];
                    double w = 1 - tau;
                    if (r > 0)
                    {
                        w = tau;
                    }

                    s += w * r * r;
                }

                return s;
            }
        #pragma warning restore DG0007

            // Branches on the index guard reads of the neighbours: t[i + 1] and t[i - 1] exist only where the
            // condition holds, so the untaken branch must not be evaluated at all (it would index out of range).
            [Differentiate(nameof(a))]
            public static double Neighbours(double a, double[] t)
            {
                double s = 0;
                int n = t.Length;
                for (int i = 0; i < n; i++)
                {
                    if (i + 1 < n)
                    {
                        double u = a * t[i] * t[i + 1];
                        s += u;
                    }
                    else
                    {
                        double u = a * a * t[i];
                        s += u;
                    }

                    double prev = i > 0 ? t[i - 1] : 0.0;
                    s += a * prev;
                }

                return s;
            }

            // Outside any loop: t[0] is read only when t is not empty.
            [Differentiate(nameof(a))]
            public static double FirstOrOne(double a, double[] t)
            {
                double s = a;
                if (t.Length > 0)
                {
                    s = a * t[0];
                }

                return s * s;
            }

            // A local assigned only in the iterations where a data condition holds: the last such sample decides.
            [Differentiate(nameof(a), nameof(b))]
            public static double LastPositive(double a, double b, double[] t, double[] y)
            {
                double last = 0;
                for (int i = 0; i < t.Length; i++)
                {
                    if (y[i] > 0)
                    {
                        last = a * t[i] + b;
                    }
                }

                return last * last;
            }

            // Conditions on data and on int locals only (no kink, no pragma): a sentinel marks missing samples,
            // one index is skipped, and the second half of the samples weighs double; the mean is taken over the
            // samples used (an int counter carried through the loop).
            [Differentiate(nameof(a), nameof(b))]
            public static double MaskedLine(double a, double b, double[] t, double[] y, int skip)
            {
                double s = 0;
                int used = 0;
                int n = t.Length;
                for (int i = 0; i < n; i++)
                {
                    bool keep = y[i] > -50.0 && !(i == skip);
                    if (keep)
                    {
                        double r = a + b * t[i] - y[i];
                        double w = i < n / 2 ? 1.0 : 2.0;
                        s += w * r * r;
                        used += 1;
                    }
                }

                return s / used;
            }
        }
        """;

    public BranchFixture()
        : base(Source)
    {
    }
}

public sealed class BranchEarlyReturnFixture : CompiledFixture
{
    // Early returns: the rest of the method is the other branch.
    public const string Source = """
        using System;
        using DerivGen;

        namespace Branches;

        public static partial class Returns
        {
        #pragma warning disable DG0007 // the switch at x = 0 is intended
            // Returns in a variable-dependent branch, then in an else, then at the end.
            [Differentiate]
            public static double Piecewise(double x, double y)
            {
                if (x < 0)
                {
                    return -x * y;
                }

                double u = x * x;
                if (u > 4)
                {
                    return u + y;
                }
                else if (y > 1)
                {
                    double w = y * y;
                    return u * w;
                }

                return Math.Log(1 + u) * y;
            }
        #pragma warning restore DG0007

            // A guard on data: the untaken rest would divide by zero and read past the end.
            [Differentiate(nameof(a))]
            public static double Guarded(double a, double[] t, int k)
            {
                if (k >= t.Length)
                {
                    return a * a;
                }

                double r = a * t[k] - 1;
                return r * r / t.Length;
            }
        }
        """;

    public BranchEarlyReturnFixture()
        : base(Source)
    {
    }
}

/// <summary>Early returns: the derivative of the branch that returned (plain calculus for each piece).</summary>
public sealed class BranchEarlyReturnTests : IClassFixture<BranchEarlyReturnFixture>
{
    private readonly BranchEarlyReturnFixture _fixture;

    public BranchEarlyReturnTests(BranchEarlyReturnFixture fixture) => _fixture = fixture;

    private delegate double GuardF(double a, double[] t, int k);

    private delegate double GuardG(double a, double[] t, int k, Span<double> g);

    private delegate double GuardH(double a, double[] t, int k, Span<double> g, Span<double> h);

    [Theory]
    // x < 0: f = −xy, grad (−y, −x), Hessian [[0, −1], [−1, 0]]
    [InlineData(-1.5, 2.0, -2.0, 1.5, 0.0, -1.0, 0.0)]
    // x² > 4: f = x² + y, grad (2x, 1), Hessian [[2, 0], [0, 0]]
    [InlineData(2.5, 0.5, 5.0, 1.0, 2.0, 0.0, 0.0)]
    // x² <= 4 and y > 1: f = x² y², grad (2xy², 2x²y), Hessian [[2y², 4xy], [4xy, 2x²]]
    [InlineData(1.5, 2.0, 12.0, 9.0, 8.0, 12.0, 4.5)]
    public void ReturnsInBranches(double x, double y, double gx, double gy, double hxx, double hxy, double hyy)
    {
        Probe p = Probe.Load(_fixture.Assembly, "Branches.Returns", "Piecewise", 2);
        LoopCheck.At(p, new[] { x, y }, new[] { gx, gy }, 1e-14, new[] { hxx, hxy, hxy, hyy }, 1e-14, "Piecewise");
    }

    [Theory]
    [InlineData(1.5, 0.5)]
    [InlineData(0.3, -2.0)]
    public void ReturnAtTheEnd(double x, double y)
    {
        // x² <= 4, y <= 1: f = ln(1 + x²) y (plain calculus): grad (2xy/(1 + x²), ln(1 + x²)),
        // Hessian [[2y(1 − x²)/(1 + x²)², 2x/(1 + x²)], [2x/(1 + x²), 0]].
        double q = 1 + (x * x);
        Probe p = Probe.Load(_fixture.Assembly, "Branches.Returns", "Piecewise", 2);
        double hxy = 2 * x / q;
        LoopCheck.At(p, new[] { x, y }, new[] { 2 * x * y / q, Math.Log(q) }, 1e-15, new[] { 2 * y * (1 - (x * x)) / (q * q), hxy, hxy, 0 }, 1e-15, "Piecewise (end)");
    }

    [Theory]
    [InlineData(0, 1.25)] // empty data: the guard returns a²; the rest would read t[k] past the end
    [InlineData(3, 1.25)]
    public void GuardOnDataReturnsEarly(int length, double a)
    {
        // k = 1. If k >= n: f = a², f' = 2a, f'' = 2. Otherwise f = (a t_k − 1)²/n, f' = 2(a t_k − 1) t_k / n,
        // f'' = 2 t_k² / n (plain calculus).
        const int k = 1;
        double[] t = length == 0 ? Array.Empty<double>() : new[] { 0.5, -2.0, 3.0 };
        double g1, h1;
        if (k >= t.Length)
        {
            (g1, h1) = (2 * a, 2);
        }
        else
        {
            (g1, h1) = (2 * ((a * t[k]) - 1) * t[k] / t.Length, 2 * t[k] * t[k] / t.Length);
        }

        var f = _fixture.Assembly.Method<GuardF>("Branches.Returns", "Guarded");
        var g = _fixture.Assembly.Method<GuardG>("Branches.Returns", "GuardedGradient");
        var h = _fixture.Assembly.Method<GuardH>("Branches.Returns", "GuardedHessian");
        Probe p = Probe.Of((F1)(v => f(v, t, k)), (G1)((v, gr) => g(v, t, k, gr)), (H1)((v, gr, he) => h(v, t, k, gr, he)));
        LoopCheck.At(p, new[] { a }, new[] { g1 }, 1e-15, new[] { h1 }, 1e-15, "Guarded");
    }
}

/// <summary>
/// Branches: the derivative is that of the branch taken (spec of the generator), checked against piecewise closed
/// forms at points away from the switching surfaces, plus the value bit for bit, an exactly symmetric Hessian,
/// MathNet's finite differences, and that nothing from the untaken branch leaks into the result.
/// </summary>
public sealed class BranchTests : IClassFixture<BranchFixture>
{
    private const string Robust = "Branches.Robust";
    private const double Delta = 1.0;
    private readonly BranchFixture _fixture;

    public BranchTests(BranchFixture fixture) => _fixture = fixture;

    private delegate double LineF(double a, double b, double[] t, double[] y, double delta);

    private delegate double LineG(double a, double b, double[] t, double[] y, double delta, Span<double> g);

    private delegate double LineH(double a, double b, double[] t, double[] y, double delta, Span<double> g, Span<double> h);

    private delegate double Data1F(double a, double[] t);

    private delegate double Data1G(double a, double[] t, Span<double> g);

    private delegate double Data1H(double a, double[] t, Span<double> g, Span<double> h);

    private delegate double Data2F(double a, double b, double[] t, double[] y);

    private delegate double Data2G(double a, double b, double[] t, double[] y, Span<double> g);

    private delegate double Data2H(double a, double b, double[] t, double[] y, Span<double> g, Span<double> h);

    private delegate double MaskF(double a, double b, double[] t, double[] y, int skip);

    private delegate double MaskG(double a, double b, double[] t, double[] y, int skip, Span<double> g);

    private delegate double MaskH(double a, double b, double[] t, double[] y, int skip, Span<double> g, Span<double> h);

    private delegate double LogF(double w0, double w1, double w2, double[] x1, double[] x2, double[] y);

    private delegate double LogG(double w0, double w1, double w2, double[] x1, double[] x2, double[] y, Span<double> g);

    private delegate double LogH(double w0, double w1, double w2, double[] x1, double[] x2, double[] y, Span<double> g, Span<double> h);

    [Theory]
    [InlineData(1.1, 0.45)]
    [InlineData(0.5, 0.7)]
    [InlineData(1.5, 0.3)]
    public void HuberLossMatchesThePiecewiseClosedForm(double a, double b)
    {
        (double[] t, double[] y) = HuberData();
        var (gradient, hessian, inliers, margin) = HuberClosedForm(a, b, t, y);

        // Every residual must be clear of the kink |r| = δ, and both pieces must be used, or the test proves little.
        Assert.True(margin > 1e-3, $"a residual lies within {Check.R(margin)} of the kink; choose another point");
        Assert.InRange(inliers, 3, t.Length - 3);

        var f = _fixture.Assembly.Method<LineF>(Robust, "Huber");
        var g = _fixture.Assembly.Method<LineG>(Robust, "HuberGradient");
        var h = _fixture.Assembly.Method<LineH>(Robust, "HuberHessian");
        Probe p = Probe.Of(
            (F2)((x0, x1) => f(x0, x1, t, y, Delta)),
            (G2)((x0, x1, gr) => g(x0, x1, t, y, Delta, gr)),
            (H2)((x0, x1, gr, he) => h(x0, x1, t, y, Delta, gr, he)));
        LoopCheck.At(p, new[] { a, b }, gradient, 1e-13 * t.Length * 10, hessian, 1e-13 * t.Length * 40, "Huber");
    }

    [Fact]
    public void HuberOnTheKinkTakesTheQuadraticPieceAsWritten()
    {
        // At (a, b) = (2, 0.2) the first residual is exactly r_0 = 1 − 2 = −1 = −δ: the condition |r| <= δ holds, so
        // the quadratic piece is taken. ψ is continuous (Huber 1964), so the gradient is the same from both sides; the
        // Hessian counts sample 0 as inside (ρ'' = 1), which is the derivative of the branch taken. MathNet's finite
        // differences straddle the kink here and are not used.
        (double[] t, double[] y) = HuberData();
        var (gradient, hessian, inliers, margin) = HuberClosedForm(2.0, 0.2, t, y);
        Assert.Equal(0.0, margin);
        Assert.Equal(-1.0, y[0] - (2.0 + (0.2 * t[0])));

        var f = _fixture.Assembly.Method<LineF>(Robust, "Huber");
        var g = _fixture.Assembly.Method<LineG>(Robust, "HuberGradient");
        var h = _fixture.Assembly.Method<LineH>(Robust, "HuberHessian");
        Probe p = Probe.Of(
            (F2)((x0, x1) => f(x0, x1, t, y, Delta)),
            (G2)((x0, x1, gr) => g(x0, x1, t, y, Delta, gr)),
            (H2)((x0, x1, gr, he) => h(x0, x1, t, y, Delta, gr, he)));
        LoopCheck.At(p, new[] { 2.0, 0.2 }, gradient, 1e-13 * t.Length * 10, hessian, 1e-13 * t.Length * 40, "Huber on the kink", oracle: false);
        Assert.InRange(inliers, 3, t.Length - 3);
    }

    [Theory]
    [InlineData(1.1, 0.45)]
    [InlineData(1.5, 0.3)]
    public void HuberWithConditionalOperatorAndBoolLocalIsTheSameLoss(double a, double b)
    {
        (double[] t, double[] y) = HuberData();
        var (gradient, _, _, margin) = HuberClosedForm(a, b, t, y);
        Assert.True(margin > 1e-3);
        Assert.False(_fixture.Assembly.HasMethod(Robust, "HuberConditionalHessian"));

        var f = _fixture.Assembly.Method<LineF>(Robust, "HuberConditional");
        var g = _fixture.Assembly.Method<LineG>(Robust, "HuberConditionalGradient");
        Probe p = Probe.Of(
            (F2)((x0, x1) => f(x0, x1, t, y, Delta)),
            (G2)((x0, x1, gr) => g(x0, x1, t, y, Delta, gr)),
            null);
        LoopCheck.At(p, new[] { a, b }, gradient, 1e-13 * t.Length * 10, null, 0, "HuberConditional");
    }

    [Theory]
    [InlineData(0.3, 1.2, -0.8)]
    [InlineData(-0.5, 0.4, 2.1)]
    public void LogisticThroughBranchesMatchesTheScoreAndFisherInformation(double w0, double w1, double w2)
    {
        // Same data and closed forms (ESL §4.4.1) as DataLoopTests; here log(1 + e^z) − y z is written as
        // log(1 + e^m) with m = z for y = 0 and m = −z for y = 1, since log(1 + e^−z) = log(1 + e^z) − z.
        (double[] x1, double[] x2, double[] y) = DataLoopTests.InventedClassificationData();
        var (gradient, hessian, minAbsZ) = DataLoopTests.LogisticClosedForm(new[] { w0, w1, w2 }, x1, x2, y);
        Assert.True(minAbsZ > 1e-3);

        var f = _fixture.Assembly.Method<LogF>(Robust, "LogisticByBranches");
        var g = _fixture.Assembly.Method<LogG>(Robust, "LogisticByBranchesGradient");
        var h = _fixture.Assembly.Method<LogH>(Robust, "LogisticByBranchesHessian");
        Probe p = Probe.Of(
            (F3)((a, b, c) => f(a, b, c, x1, x2, y)),
            (G3)((a, b, c, gr) => g(a, b, c, x1, x2, y, gr)),
            (H3)((a, b, c, gr, he) => h(a, b, c, x1, x2, y, gr, he)));
        LoopCheck.At(p, new[] { w0, w1, w2 }, gradient, 1e-13 * y.Length, hessian, 1e-13 * y.Length, "LogisticByBranches");
    }

    [Theory]
    [InlineData(-2.0, 1.5)] // x * log(x) is NaN here, and so are its derivatives: the branch is not taken
    [InlineData(-0.25, -3.0)]
    public void UntakenBranchDoesNotLeakIntoTheDerivatives(double x, double y)
    {
        // x <= 0: f = −xy, grad (−y, −x), Hessian [[0, −1], [−1, 0]] (plain calculus).
        Probe p = Probe.Load(_fixture.Assembly, Robust, "Guarded", 2);
        LoopCheck.At(p, new[] { x, y }, new[] { -y, -x }, 0, new double[] { 0, -1, -1, 0 }, 0, "Guarded (x <= 0)");
    }

    [Theory]
    [InlineData(1.5)]
    [InlineData(-2.0)]
    public void UntakenBranchAtItsBoundaryDoesNotLeakIntoTheDerivatives(double y)
    {
        // x = 0: "x > 0" is false, so f = −xy with grad (−y, −x) = (−y, −0) and Hessian [[0, −1], [−1, 0]], even
        // though ln x = −∞ and x·(1/x) = 0/0 in the untaken branch. MathNet's differences straddle the switch: not used.
        Probe p = Probe.Load(_fixture.Assembly, Robust, "Guarded", 2);
        LoopCheck.At(p, new[] { 0.0, y }, new[] { -y, -0.0 }, 0, new double[] { 0, -1, -1, 0 }, 0, "Guarded (x = 0)", oracle: false);
    }

    [Theory]
    [InlineData(-1.0, 2.0)] // √x is NaN here
    [InlineData(-0.5, -0.3)]
    public void SquareRootGuardedByItsBranchHasFiniteDerivatives(double x, double y)
    {
        // x <= 0: f = y², grad (0, 2y), Hessian [[0, 0], [0, 2]] (plain calculus).
        Probe p = Probe.Load(_fixture.Assembly, Robust, "SafeSqrt", 2);
        LoopCheck.At(p, new[] { x, y }, new[] { 0, 2 * y }, 0, new double[] { 0, 0, 0, 2 }, 0, "SafeSqrt (x <= 0)");
    }

    [Fact]
    public void SquareRootGuardedByItsBranchAtZero()
    {
        // x = 0 takes the y² branch: grad (0, 2y), Hessian [[0, 0], [0, 2]], although 1/(2√0) = +∞ in the other.
        Probe p = Probe.Load(_fixture.Assembly, Robust, "SafeSqrt", 2);
        LoopCheck.At(p, new[] { 0.0, 1.25 }, new[] { 0, 2.5 }, 0, new double[] { 0, 0, 0, 2 }, 0, "SafeSqrt (x = 0)", oracle: false);
    }

    [Theory]
    [InlineData(2.0, 0.5)]
    [InlineData(0.25, -1.5)]
    public void SquareRootBranchTaken(double x, double y)
    {
        // x > 0: f = √x·y, grad (y/(2√x), √x), Hessian [[−y/(4x√x), 1/(2√x)], [1/(2√x), 0]] (plain calculus).
        double r = Math.Sqrt(x);
        Probe p = Probe.Load(_fixture.Assembly, Robust, "SafeSqrt", 2);
        LoopCheck.At(p, new[] { x, y }, new[] { y / (2 * r), r }, 1e-15, new[] { -y / (4 * x * r), 1 / (2 * r), 1 / (2 * r), 0 }, 1e-15, "SafeSqrt (x > 0)");
    }

    [Theory]
    [InlineData(1.5)]
    [InlineData(-0.4)]
    public void BranchesGuardingDataReadsAreNotEvaluatedWhenNotTaken(double a)
    {
        // Invented data t_i = 2 − i/4, i = 0..11. f = a Σ_{i<n−1} t_i t_{i+1} + a² t_{n−1} + a Σ_{i≥1} t_{i−1}
        // (plain algebra): f' = Σ_{i<n−1} t_i t_{i+1} + 2a t_{n−1} + Σ_{i<n−1} t_i, f'' = 2 t_{n−1}.
        // A generated method that read t[i + 1] at i = n − 1 or t[i − 1] at i = 0 would throw.
        var t = new double[12];
        for (int i = 0; i < t.Length; i++)
        {
            t[i] = 2 - (i / 4.0);
        }

        double pairs = 0, before = 0;
        for (int i = 0; i + 1 < t.Length; i++)
        {
            pairs += t[i] * t[i + 1];
            before += t[i];
        }

        double last = t[^1];
        var f = _fixture.Assembly.Method<Data1F>(Robust, "Neighbours");
        var g = _fixture.Assembly.Method<Data1G>(Robust, "NeighboursGradient");
        var h = _fixture.Assembly.Method<Data1H>(Robust, "NeighboursHessian");
        Probe p = Probe.Of(
            (F1)(x => f(x, t)),
            (G1)((x, gr) => g(x, t, gr)),
            (H1)((x, gr, he) => h(x, t, gr, he)));
        LoopCheck.At(p, new[] { a }, new[] { pairs + (2 * a * last) + before }, 1e-13 * 50, new[] { 2 * last }, 1e-14, "Neighbours");
    }

    [Theory]
    [InlineData(0)]
    [InlineData(3)]
    public void BranchGuardingAReadOutsideALoopIsNotEvaluatedWhenNotTaken(int length)
    {
        // t empty: f = a², f' = 2a, f'' = 2; otherwise f = a² t₀², f' = 2a t₀², f'' = 2 t₀² (plain calculus).
        // With t empty a generated method that read t[0] anyway would throw.
        const double a = 1.25;
        double[] t = length == 0 ? Array.Empty<double>() : new[] { -0.5, 2.0, 3.0 };
        double c = length == 0 ? 1 : t[0] * t[0];
        var f = _fixture.Assembly.Method<Data1F>(Robust, "FirstOrOne");
        var g = _fixture.Assembly.Method<Data1G>(Robust, "FirstOrOneGradient");
        var h = _fixture.Assembly.Method<Data1H>(Robust, "FirstOrOneHessian");
        Probe p = Probe.Of(
            (F1)(x => f(x, t)),
            (G1)((x, gr) => g(x, t, gr)),
            (H1)((x, gr, he) => h(x, t, gr, he)));
        LoopCheck.At(p, new[] { a }, new[] { 2 * a * c }, 1e-15, new[] { 2 * c }, 1e-15, "FirstOrOne");
    }

    [Theory]
    [InlineData(1.1, 0.45)]
    [InlineData(0.2, 0.9)]
    public void AsymmetricLeastSquaresWeighsBySign(double a, double b)
    {
        // Asymmetric least squares (Newey & Powell 1987, Econometrica 55(4), from memory): ρ(r) = |τ − 1(r < 0)| r²,
        // here weight τ for r > 0 and 1 − τ otherwise. For r_i = y_i − a − b t_i: gradient −2 Σ w_i r_i (1, t_i),
        // Hessian 2 Σ w_i [[1, t_i], [t_i, t_i²]] (plain calculus), away from r = 0 where the weight switches.
        const double tau = 0.8;
        (double[] t, double[] y) = HuberData();
        double ga = 0, gb = 0, haa = 0, hab = 0, hbb = 0, margin = double.PositiveInfinity;
        for (int i = 0; i < t.Length; i++)
        {
            double r = y[i] - a - (b * t[i]);
            double w = r > 0 ? tau : 1 - tau;
            margin = Math.Min(margin, Math.Abs(r));
            ga -= 2 * w * r;
            gb -= 2 * w * r * t[i];
            haa += 2 * w;
            hab += 2 * w * t[i];
            hbb += 2 * w * t[i] * t[i];
        }

        Assert.True(margin > 1e-3, $"a residual lies within {Check.R(margin)} of 0");
        var f = _fixture.Assembly.Method<LineF>(Robust, "Expectile");
        var g = _fixture.Assembly.Method<LineG>(Robust, "ExpectileGradient");
        var h = _fixture.Assembly.Method<LineH>(Robust, "ExpectileHessian");
        Probe p = Probe.Of(
            (F2)((x0, x1) => f(x0, x1, t, y, tau)),
            (G2)((x0, x1, gr) => g(x0, x1, t, y, tau, gr)),
            (H2)((x0, x1, gr, he) => h(x0, x1, t, y, tau, gr, he)));
        LoopCheck.At(p, new[] { a, b }, new[] { ga, gb }, 1e-13 * t.Length * 20, new[] { haa, hab, hab, hbb }, 1e-13 * hbb, "Expectile");
    }

    [Theory]
    [InlineData(0.7, -0.4, false)]
    [InlineData(-1.3, 2.2, true)]
    public void LocalAssignedOnlyWhereADataConditionHolds(double a, double b, bool noneQualifies)
    {
        // Invented data: t_i = 1 + i/3, y_i = sin(2i) for i = 0..14 (the last positive y is at i = 14: sin 28 > 0);
        // or every y_i negative. With j the last index with y_j > 0: f = (a t_j + b)², grad 2(a t_j + b)(t_j, 1),
        // Hessian 2[[t_j², t_j], [t_j, 1]]; with no such j, f = 0 and every derivative is 0 (plain calculus).
        const int n = 15;
        var t = new double[n];
        var y = new double[n];
        int j = -1;
        for (int i = 0; i < n; i++)
        {
            t[i] = 1 + (i / 3.0);
            y[i] = noneQualifies ? -1 - Math.Abs(Math.Sin(2 * i)) : Math.Sin(2 * i);
            if (y[i] > 0)
            {
                j = i;
            }
        }

        Assert.Equal(noneQualifies ? -1 : 14, j);
        double[] gradient = new double[2], hessian = new double[4];
        if (j >= 0)
        {
            double u = (a * t[j]) + b;
            gradient = new[] { 2 * u * t[j], 2 * u };
            hessian = new[] { 2 * t[j] * t[j], 2 * t[j], 2 * t[j], 2 };
        }

        var f = _fixture.Assembly.Method<Data2F>(Robust, "LastPositive");
        var g = _fixture.Assembly.Method<Data2G>(Robust, "LastPositiveGradient");
        var h = _fixture.Assembly.Method<Data2H>(Robust, "LastPositiveHessian");
        Probe p = Probe.Of(
            (F2)((x0, x1) => f(x0, x1, t, y)),
            (G2)((x0, x1, gr) => g(x0, x1, t, y, gr)),
            (H2)((x0, x1, gr, he) => h(x0, x1, t, y, gr, he)));
        LoopCheck.At(p, new[] { a, b }, gradient, 1e-15, hessian, 1e-15, "LastPositive");
    }

    [Theory]
    [InlineData(2.0, 1.5)]
    [InlineData(0.5, -0.75)]
    public void TakenBranchOfGuardedIsDifferentiated(double x, double y)
    {
        // x > 0: f = x ln x + y², grad (ln x + 1, 2y), Hessian [[1/x, 0], [0, 2]] (plain calculus).
        Probe p = Probe.Load(_fixture.Assembly, Robust, "Guarded", 2);
        LoopCheck.At(p, new[] { x, y }, new[] { Math.Log(x) + 1, 2 * y }, 1e-15, new[] { 1 / x, 0, 0, 2 }, 1e-15, "Guarded (x > 0)");
    }

    [Fact]
    public void AtTheSwitchingPointTheBranchTakenDecides()
    {
        // At x = 0, "x > 0" is false (slope of the constant 0) and "x >= 0" is true (slope of x): C# semantics.
        var g = new double[1];
        var h = new double[1];
        Probe strict = Probe.Load(_fixture.Assembly, Robust, "ReluStrict", 1);
        Probe inclusive = Probe.Load(_fixture.Assembly, Robust, "ReluInclusive", 1);

        Check.SameBits(strict.Value(new[] { 0.0 }), strict.Hessian!(new[] { 0.0 }, g, h), "ReluStrict value at 0");
        Assert.Equal(0.0, g[0]);
        Assert.Equal(0.0, h[0]);
        Check.SameBits(inclusive.Value(new[] { 0.0 }), inclusive.Hessian!(new[] { 0.0 }, g, h), "ReluInclusive value at 0");
        Assert.Equal(1.0, g[0]);
        Assert.Equal(0.0, h[0]);

        // Away from 0 both are max(x, 0): slope 1 for x > 0 and 0 for x < 0.
        foreach (Probe p in new[] { strict, inclusive })
        {
            LoopCheck.At(p, new[] { 0.7 }, new[] { 1.0 }, 0, new[] { 0.0 }, 0, "Relu at 0.7");
            LoopCheck.At(p, new[] { -0.7 }, new[] { 0.0 }, 0, new[] { 0.0 }, 0, "Relu at -0.7");
        }
    }

    [Theory]
    // x > 0 && y > 0: f = x²y, grad (2xy, x²), Hessian [[2y, 2x], [2x, 0]]
    [InlineData(1.5, 0.5, 1.5, 2.25, 1.0, 3.0, 0.0)]
    // otherwise, x > 0 || y > 0 (here x > 0, y <= 0): f = x + y², grad (1, 2y), Hessian [[0, 0], [0, 2]]
    [InlineData(1.5, -0.5, 1.0, -1.0, 0.0, 0.0, 2.0)]
    // otherwise (x <= 0, y > 0): same piece
    [InlineData(-0.8, 0.3, 1.0, 0.6, 0.0, 0.0, 2.0)]
    public void ElseIfChainWithAndOrNot(double x, double y, double gx, double gy, double hxx, double hxy, double hyy)
    {
        Probe p = Probe.Load(_fixture.Assembly, Robust, "Quadrants", 2);
        LoopCheck.At(p, new[] { x, y }, new[] { gx, gy }, 1e-15, new[] { hxx, hxy, hxy, hyy }, 1e-15, "Quadrants");
    }

    [Theory]
    [InlineData(-0.8, -0.3)]
    [InlineData(-1.5, -2.0)]
    public void ElseIfChainFinalElse(double x, double y)
    {
        // x <= 0 and y <= 0: f = e^{xy}, grad e^{xy}(y, x), Hessian e^{xy}[[y², 1 + xy], [1 + xy, x²]] (plain calculus).
        double e = Math.Exp(x * y);
        Probe p = Probe.Load(_fixture.Assembly, Robust, "Quadrants", 2);
        LoopCheck.At(p, new[] { x, y }, new[] { e * y, e * x }, 1e-15, new[] { e * y * y, e * (1 + (x * y)), e * (1 + (x * y)), e * x * x }, 1e-15, "Quadrants (else)");
    }

    [Theory]
    // x > 1: k = 3, f = 3x² + yx: grad (6x + y, x), Hessian [[6, 1], [1, 0]]
    [InlineData(1.5, 0.4, 9.4, 1.5, 6.0, 1.0, 0.0)]
    // x <= 1: k = 1, f = x² − y²: grad (2x, −2y), Hessian [[2, 0], [0, −2]]
    [InlineData(0.5, 0.4, 1.0, -0.8, 2.0, 0.0, -2.0)]
    public void IntLocalChosenByAVariableCondition(double x, double y, double gx, double gy, double hxx, double hxy, double hyy)
    {
        Probe p = Probe.Load(_fixture.Assembly, Robust, "IntChosenByBranch", 2);
        LoopCheck.At(p, new[] { x, y }, new[] { gx, gy }, 1e-14, new[] { hxx, hxy, hxy, hyy }, 1e-15, "IntChosenByBranch");
    }

    [Theory]
    [InlineData(0.6, -0.2, 7)]
    [InlineData(-1.0, 0.9, -1)] // no index skipped
    public void ConditionsOnDataAndIntLocalsSelectAndWeighTheSamples(double a, double b, int skip)
    {
        // Invented data: t_i = i/5, y_i = 0.4 + 0.3 t_i + 0.2 cos(3i) for i = 0..25, with y = −99 (a "missing"
        // sentinel) at i = 4 and 19. Weighted least squares over the samples used, divided by their number m:
        // f = (1/m) Σ w_i (a + b t_i − y_i)², w_i = 1 for i < 13 and 2 otherwise, so (plain calculus, as ESL §3.2)
        // grad = (2/m) Σ w_i r_i (1, t_i), Hessian = (2/m) Σ w_i [[1, t_i], [t_i, t_i²]].
        const int n = 26;
        var t = new double[n];
        var y = new double[n];
        for (int i = 0; i < n; i++)
        {
            t[i] = i / 5.0;
            y[i] = i is 4 or 19 ? -99 : 0.4 + (0.3 * t[i]) + (0.2 * Math.Cos(3 * i));
        }

        double ga = 0, gb = 0, haa = 0, hab = 0, hbb = 0;
        int m = 0;
        for (int i = 0; i < n; i++)
        {
            if (i is 4 or 19 || i == skip)
            {
                continue;
            }

            double w = i < n / 2 ? 1 : 2, r = a + (b * t[i]) - y[i];
            ga += 2 * w * r;
            gb += 2 * w * r * t[i];
            haa += 2 * w;
            hab += 2 * w * t[i];
            hbb += 2 * w * t[i] * t[i];
            m++;
        }

        Assert.Equal(skip < 0 ? 24 : 23, m);
        var f = _fixture.Assembly.Method<MaskF>(Robust, "MaskedLine");
        var g = _fixture.Assembly.Method<MaskG>(Robust, "MaskedLineGradient");
        var h = _fixture.Assembly.Method<MaskH>(Robust, "MaskedLineHessian");
        Probe p = Probe.Of(
            (F2)((x0, x1) => f(x0, x1, t, y, skip)),
            (G2)((x0, x1, gr) => g(x0, x1, t, y, skip, gr)),
            (H2)((x0, x1, gr, he) => h(x0, x1, t, y, skip, gr, he)));
        LoopCheck.At(p, new[] { a, b }, new[] { ga / m, gb / m }, 1e-13 * n, new[] { haa / m, hab / m, hab / m, hbb / m }, 1e-13 * n, "MaskedLine");
    }

    /// <summary>Invented data (a deterministic formula, not measurements): t_i = i/4 for i = 0..23 and
    /// y_i = 1 + 0.5 t_i + 0.3 sin(2.3 i), plus 4 at i = 3, 10, 17 (outliers).</summary>
    private static (double[] T, double[] Y) HuberData()
    {
        const int n = 24;
        var t = new double[n];
        var y = new double[n];
        for (int i = 0; i < n; i++)
        {
            t[i] = i / 4.0;
            y[i] = 1 + (0.5 * t[i]) + (0.3 * Math.Sin(2.3 * i)) + (i % 7 == 3 ? 4 : 0);
        }

        return (t, y);
    }

    /// <summary>
    /// Huber (1964), "Robust Estimation of a Location Parameter", Ann. Math. Statist. 35(1) (from memory): ρ(r) = r²/2 for |r| ≤ k,
    /// k|r| − k²/2 beyond, with ψ = ρ' = r on the inside and k·sign(r) outside (ρ'' = 1 inside, 0 outside). For
    /// r_i = y_i − a − b t_i: ∂/∂a = −Σ ψ(r_i), ∂/∂b = −Σ ψ(r_i) t_i, Hessian Σ_inside [[1, t_i], [t_i, t_i²]].
    /// Also returns how many residuals are inside and the smallest distance ||r_i| − k| to the kink.
    /// </summary>
    private static (double[] Gradient, double[] Hessian, int Inliers, double Margin) HuberClosedForm(double a, double b, double[] t, double[] y)
    {
        double ga = 0, gb = 0, haa = 0, hab = 0, hbb = 0, margin = double.PositiveInfinity;
        int inliers = 0;
        for (int i = 0; i < t.Length; i++)
        {
            double r = y[i] - (a + (b * t[i]));
            margin = Math.Min(margin, Math.Abs(Math.Abs(r) - Delta));
            double psi = Math.Abs(r) <= Delta ? r : Delta * Math.Sign(r);
            ga -= psi;
            gb -= psi * t[i];
            if (Math.Abs(r) <= Delta)
            {
                inliers++;
                haa += 1;
                hab += t[i];
                hbb += t[i] * t[i];
            }
        }

        return (new[] { ga, gb }, new[] { haa, hab, hab, hbb }, inliers, margin);
    }
}
