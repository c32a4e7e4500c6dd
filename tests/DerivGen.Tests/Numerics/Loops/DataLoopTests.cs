using System;
using System.Linq;
using DerivGen.Tests.Infrastructure;
using MathNet.Numerics.LinearAlgebra;
using Xunit;

namespace DerivGen.Tests.Numerics.Loops;

public sealed class DataLoopFixture : CompiledFixture
{
    // Losses that sum over data passed as arrays, spans and a 2-D array, written as a user would.
    public const string Source = """
        using System;
        using DerivGen;

        namespace DataLoops;

        public static partial class Fits
        {
            // Sum of squared residuals of y ~ a + b t + c t^2 over arrays.
            [Differentiate(nameof(a), nameof(b), nameof(c))]
            public static double Quadratic(double a, double b, double c, double[] t, double[] y)
            {
                double s = 0;
                for (int i = 0; i < t.Length; i++)
                {
                    double r = a + b * t[i] + c * t[i] * t[i] - y[i];
                    s += r * r;
                }

                return s;
            }

            // The same loss, gradient only.
            [Differentiate(nameof(a), nameof(b), nameof(c), Hessian = false)]
            public static double QuadraticGradientOnly(double a, double b, double c, double[] t, double[] y)
            {
                double s = 0;
                for (int i = 0; i < t.Length; i++)
                {
                    double r = a + b * t[i] + c * t[i] * t[i] - y[i];
                    s += r * r;
                }

                return s;
            }

            // Linear least squares through a design matrix (double[,], GetLength, m[i, j]) and a Span read only.
            [Differentiate(nameof(a), nameof(b), nameof(c))]
            public static double DesignMatrix(double a, double b, double c, double[,] x, Span<double> y)
            {
                var s = 0.0;
                int rows = x.GetLength(0);
                for (int i = 0; i < rows; i += 1)
                {
                    double r = x[i, 0] * a + x[i, 1] * b + x[i, 2] * c - y[i];
                    s += r * r;
                }

                return s;
            }

            // Trapezoid-rule integral of the squared residual over unequally spaced samples, with t measured from
            // the first sample: reads t[0], t[i] and t[i + 1] from ReadOnlySpans; loop with <= and ++i.
            [Differentiate(nameof(a), nameof(b), nameof(c))]
            public static double Trapezoid(double a, double b, double c, ReadOnlySpan<double> t, ReadOnlySpan<double> y)
            {
                double t0 = t[0];
                double s = 0;
                for (int i = 0; i <= t.Length - 2; ++i)
                {
                    double u = t[i] - t0, w = t[i + 1] - t0;
                    double r0 = a + b * u + c * u * u - y[i];
                    double r1 = a + b * w + c * w * w - y[i + 1];
                    s += 0.5 * (t[i + 1] - t[i]) * (r0 * r0 + r1 * r1);
                }

                return s;
            }

            // float data, read into double; a window [first, last] of the samples chosen by int parameters.
            [Differentiate(nameof(a), nameof(b), nameof(c))]
            public static double FloatWindow(double a, double b, double c, float[] t, float[] y, int first, int last)
            {
                double s = 0;
                for (int i = first; i <= last; i++)
                {
                    double ti = t[i];
                    double r = a + b * ti + c * ti * ti - y[i];
                    s += r * r;
                }

                return s;
            }

            // A float method over float data: FloatLineGradient and FloatLineHessian work in float.
            [Differentiate]
            public static float FloatLine(float a, float b, float[] t, float[] y)
            {
                float s = 0f;
                for (int i = 0; i < t.Length; i++)
                {
                    float r = a + b * t[i] - y[i];
                    s += r * r;
                }

                return s;
            }

        #pragma warning disable DG0007 // max(z, 0) and |z| have kinks at z = 0; their sum below is smooth
            // Negative log-likelihood of logistic regression, with the numerically stable
            // log(1 + e^z) = max(z, 0) + log(1 + e^-|z|) (common practice), and -= in the loop.
            [Differentiate(nameof(w0), nameof(w1), nameof(w2))]
            public static double LogisticNll(double w0, double w1, double w2, double[] x1, double[] x2, double[] y)
            {
                double nll = 0;
                for (int i = 0; i < y.Length; i++)
                {
                    double z = w0 + w1 * x1[i] + w2 * x2[i];
                    nll += Math.Max(z, 0.0) + Math.Log(1.0 + Math.Exp(-Math.Abs(z)));
                    nll -= y[i] * z;
                }

                return nll;
            }
        #pragma warning restore DG0007
        }

        // An instance method reading its own fields and properties: data arrays and scalars.
        public sealed partial class RidgeFit
        {
            private readonly double[] _t;
            private readonly double _weight;

            public RidgeFit(double[] t, double[] y, double weight, double lambda)
            {
                _t = t;
                Targets = y;
                _weight = weight;
                Lambda = lambda;
            }

            public double[] Targets { get; }

            public double Lambda { get; }

            [Differentiate]
            public double Loss(double a, double b, double c)
            {
                double s = 0;
                for (int i = 0; i < this._t.Length; i++)
                {
                    double r = a + b * _t[i] + c * _t[i] * _t[i] - Targets[i];
                    s += r * r;
                }

                return _weight * s + Lambda * (a * a + b * b + c * c);
            }
        }
        """;

    public DataLoopFixture()
        : base(Source)
    {
    }
}

/// <summary>
/// Losses that loop over data: linear least squares (closed forms of The Elements of Statistical Learning, Hastie,
/// Tibshirani &amp; Friedman, 2nd ed., "ESL" below; section numbers from memory; §3.2: the gradient of RSS(θ) = |y − Xθ|² is −2Xᵀ(y − Xθ) = 2Xᵀ(Xθ − y) and its
/// Hessian is 2XᵀX), weighted and penalised variants of it, and logistic regression (ESL §4.4.1: the gradient of the
/// negative log-likelihood is Σ (σ(zᵢ) − yᵢ) xᵢ and its Hessian is Σ σ(zᵢ)(1 − σ(zᵢ)) xᵢ xᵢᵀ). Every case also checks
/// the value bit for bit, MathNet's finite differences, an exactly symmetric Hessian, and the Hessian against
/// central differences of the generated gradient.
/// </summary>
public sealed class DataLoopTests : IClassFixture<DataLoopFixture>
{
    private const string Fits = "DataLoops.Fits";
    private readonly DataLoopFixture _fixture;

    public DataLoopTests(DataLoopFixture fixture) => _fixture = fixture;

    private delegate double ArrF(double a, double b, double c, double[] t, double[] y);

    private delegate double ArrG(double a, double b, double c, double[] t, double[] y, Span<double> g);

    private delegate double ArrH(double a, double b, double c, double[] t, double[] y, Span<double> g, Span<double> h);

    private delegate double MatF(double a, double b, double c, double[,] x, Span<double> y);

    private delegate double MatG(double a, double b, double c, double[,] x, Span<double> y, Span<double> g);

    private delegate double MatH(double a, double b, double c, double[,] x, Span<double> y, Span<double> g, Span<double> h);

    private delegate double RosF(double a, double b, double c, ReadOnlySpan<double> t, ReadOnlySpan<double> y);

    private delegate double RosG(double a, double b, double c, ReadOnlySpan<double> t, ReadOnlySpan<double> y, Span<double> g);

    private delegate double RosH(double a, double b, double c, ReadOnlySpan<double> t, ReadOnlySpan<double> y, Span<double> g, Span<double> h);

    private delegate double FltF(double a, double b, double c, float[] t, float[] y, int first, int last);

    private delegate double FltG(double a, double b, double c, float[] t, float[] y, int first, int last, Span<double> g);

    private delegate double FltH(double a, double b, double c, float[] t, float[] y, int first, int last, Span<double> g, Span<double> h);

    private delegate float LineFf(float a, float b, float[] t, float[] y);

    private delegate float LineGf(float a, float b, float[] t, float[] y, Span<float> g);

    private delegate float LineHf(float a, float b, float[] t, float[] y, Span<float> g, Span<float> h);

    private delegate double LogF(double w0, double w1, double w2, double[] x1, double[] x2, double[] y);

    private delegate double LogG(double w0, double w1, double w2, double[] x1, double[] x2, double[] y, Span<double> g);

    private delegate double LogH(double w0, double w1, double w2, double[] x1, double[] x2, double[] y, Span<double> g, Span<double> h);

    public static TheoryData<double, double, double> Parameters => new()
    {
        { 0.4, -1.1, 1.7 },
        { -2.0, 0.3, 0.05 },
    };

    [Theory]
    [MemberData(nameof(Parameters))]
    public void LeastSquaresOverInventedDataMatchesTheNormalEquations(double a, double b, double c)
    {
        (double[] t, double[] y) = InventedQuadraticData();
        Probe p = ArrayProbe("Quadratic", t, y, hessian: true);
        LeastSquares(p, new[] { a, b, c }, Design(t), y, "Quadratic (invented data)");
    }

    [Theory]
    [MemberData(nameof(Parameters))]
    public void LeastSquaresOverNistEckerle4ThroughADesignMatrix(double a, double b, double c)
    {
        // Data: the 35 observations of NIST StRD Eckerle4 (public domain, Data/nist), with the wavelength x
        // rescaled to t = (x - 450) / 50 so that t lies in [-1, 1] and the quadratic fit is well conditioned.
        NistDataset data = NistDataset.Load("Eckerle4");
        double[] t = Array.ConvertAll(data.X, x => (x - 450) / 50);
        double[,] design = Design(t).ToArray();
        var f = _fixture.Assembly.Method<MatF>(Fits, "DesignMatrix");
        var g = _fixture.Assembly.Method<MatG>(Fits, "DesignMatrixGradient");
        var h = _fixture.Assembly.Method<MatH>(Fits, "DesignMatrixHessian");
        double[] y = data.Y;
        Probe p = Probe.Of(
            (F3)((x0, x1, x2) => f(x0, x1, x2, design, y)),
            (G3)((x0, x1, x2, gr) => g(x0, x1, x2, design, y, gr)),
            (H3)((x0, x1, x2, gr, he) => h(x0, x1, x2, design, y, gr, he)));
        Assert.Equal(35, t.Length);
        LeastSquares(p, new[] { a, b, c }, Design(t), y, "DesignMatrix (NIST Eckerle4)");
    }

    [Fact]
    public void GradientOnlyVariantHasNoHessianAndTheSameGradient()
    {
        (double[] t, double[] y) = InventedQuadraticData();
        Assert.False(_fixture.Assembly.HasMethod(Fits, "QuadraticGradientOnlyHessian"));
        Assert.True(_fixture.Assembly.HasMethod(Fits, "QuadraticGradientOnlyGradient"));
        Probe p = ArrayProbe("QuadraticGradientOnly", t, y, hessian: false);
        LeastSquares(p, new[] { 1.25, -0.5, 0.75 }, Design(t), y, "QuadraticGradientOnly");
    }

    [Theory]
    [MemberData(nameof(Parameters))]
    public void TrapezoidIntegralIsWeightedLeastSquares(double a, double b, double c)
    {
        // Invented data: unequally spaced samples t_i = i + 0.3 sin(i) (i = 0..23), y_i = cos(t_i / 4) + t_i / 10.
        int n = 24;
        var t = new double[n];
        var y = new double[n];
        for (int i = 0; i < n; i++)
        {
            t[i] = i + (0.3 * Math.Sin(i));
            y[i] = Math.Cos(t[i] / 4) + (t[i] / 10);
        }

        // Trapezoid rule on unequal spacing (common practice): Σ_i (t_{i+1} − t_i)(g_i + g_{i+1})/2
        // = Σ_i w_i g_i with w_0 = (t_1 − t_0)/2, w_i = (t_{i+1} − t_{i−1})/2, w_{n−1} = (t_{n−1} − t_{n−2})/2. With
        // g_i = r_i², the loss is weighted least squares r(θ)ᵀ W r(θ): gradient 2XᵀW(Xθ − y), Hessian 2XᵀWX
        // (ESL §3.2 with rows scaled by √w_i). Columns of X: 1, u, u² with u = t − t_0.
        var weights = new double[n];
        for (int i = 0; i < n - 1; i++)
        {
            weights[i] += (t[i + 1] - t[i]) / 2;
            weights[i + 1] += (t[i + 1] - t[i]) / 2;
        }

        double[] u = Array.ConvertAll(t, v => v - t[0]);
        var f = _fixture.Assembly.Method<RosF>(Fits, "Trapezoid");
        var g = _fixture.Assembly.Method<RosG>(Fits, "TrapezoidGradient");
        var h = _fixture.Assembly.Method<RosH>(Fits, "TrapezoidHessian");
        Probe p = Probe.Of(
            (F3)((x0, x1, x2) => f(x0, x1, x2, t, y)),
            (G3)((x0, x1, x2, gr) => g(x0, x1, x2, t, y, gr)),
            (H3)((x0, x1, x2, gr, he) => h(x0, x1, x2, t, y, gr, he)));
        LeastSquares(p, new[] { a, b, c / 25 }, Design(u), y, "Trapezoid", weights);
    }

    [Fact]
    public void FloatDataInAWindowOfTheSamples()
    {
        // Invented data: t_i = i / 8 and y_i = 2 - t_i + 0.5 t_i² + 0.1 cos(5 i) as float (i = 0..39); the loss reads
        // only samples 5..31 (first = 5, last = 31 inclusive).
        int n = 40, first = 5, last = 31;
        var t = new float[n];
        var y = new float[n];
        for (int i = 0; i < n; i++)
        {
            t[i] = i / 8f;
            y[i] = (float)(2 - (i / 8.0) + (0.5 * (i / 8.0) * (i / 8.0)) + (0.1 * Math.Cos(5 * i)));
        }

        double[] tw = new double[last - first + 1], yw = new double[last - first + 1];
        for (int i = first; i <= last; i++)
        {
            tw[i - first] = t[i];
            yw[i - first] = y[i];
        }

        var f = _fixture.Assembly.Method<FltF>(Fits, "FloatWindow");
        var g = _fixture.Assembly.Method<FltG>(Fits, "FloatWindowGradient");
        var h = _fixture.Assembly.Method<FltH>(Fits, "FloatWindowHessian");
        Probe p = Probe.Of(
            (F3)((x0, x1, x2) => f(x0, x1, x2, t, y, first, last)),
            (G3)((x0, x1, x2, gr) => g(x0, x1, x2, t, y, first, last, gr)),
            (H3)((x0, x1, x2, gr, he) => h(x0, x1, x2, t, y, first, last, gr, he)));
        LeastSquares(p, new[] { 1.5, -0.7, 0.45 }, Design(tw), yw, "FloatWindow");
    }

    [Theory]
    [InlineData(0.5f, 1.25f)]
    [InlineData(-2f, 0.75f)]
    public void FloatMethodOverFloatData(float a, float b)
    {
        // Invented data: t_i = i/10, y_i = 1 − t_i + 0.2 sin(3i) as float, i = 0..24. Line fit (ESL §3.2):
        // grad = 2 Σ r_i (1, t_i), Hessian = 2 Σ [[1, t_i], [t_i, t_i²]], evaluated here in double. The generated
        // float code rounds every operation to float (ε_f ≈ 6e-8), so after 25 terms 1e-5 relative (plus a floor of
        // 1e-5 times the size of the terms) is a loose bound for rounding and far below any real error (common practice).
        const int n = 25;
        var t = new float[n];
        var y = new float[n];
        double ga = 0, gb = 0, haa = 0, hab = 0, hbb = 0, size = 0;
        for (int i = 0; i < n; i++)
        {
            t[i] = i / 10f;
            y[i] = (float)(1 - (i / 10.0) + (0.2 * Math.Sin(3 * i)));
            double r = a + ((double)b * t[i]) - y[i];
            ga += 2 * r;
            gb += 2 * r * t[i];
            haa += 2;
            hab += 2 * t[i];
            hbb += 2 * t[i] * t[i];
            size += 2 * Math.Abs(r) * (1 + t[i]);
        }

        var f = _fixture.Assembly.Method<LineFf>(Fits, "FloatLine");
        var g = _fixture.Assembly.Method<LineGf>(Fits, "FloatLineGradient");
        var h = _fixture.Assembly.Method<LineHf>(Fits, "FloatLineHessian");
        float value = f(a, b, t, y);
        var gr = new float[2];
        var gr2 = new float[2];
        var he = new float[4];
        Check.SameBits(value, g(a, b, t, y, gr), "FloatLineGradient value");
        Check.SameBits(value, h(a, b, t, y, gr2, he), "FloatLineHessian value");
        Check.SameBits(he[1], he[2], "FloatLine Hessian symmetry");
        const double rel = 1e-5;
        Check.Close(ga, gr[0], rel, rel * size, "FloatLine ∂/∂a");
        Check.Close(gb, gr[1], rel, rel * size, "FloatLine ∂/∂b");
        Check.Close(ga, gr2[0], rel, rel * size, "FloatLineHessian ∂/∂a");
        Check.Close(gb, gr2[1], rel, rel * size, "FloatLineHessian ∂/∂b");
        Check.Close(new[] { haa, hab, hab, hbb }, Array.ConvertAll(he, v => (double)v), rel, rel * hbb, "FloatLine Hessian");
    }

    [Theory]
    [MemberData(nameof(Parameters))]
    public void InstanceMethodReadsItsFieldsAndProperties(double a, double b, double c)
    {
        // Ridge regression (ESL §3.4.1): w·|Xθ − y|² + λ|θ|² has gradient 2w Xᵀ(Xθ − y) + 2λθ and Hessian
        // 2w XᵀX + 2λI. The data, w and λ live in the instance.
        (double[] t, double[] y) = InventedQuadraticData();
        const double weight = 0.3, lambda = 2.5;
        object instance = _fixture.Assembly.New("DataLoops.RidgeFit", t, y, weight, lambda);
        Probe p = Probe.Load(_fixture.Assembly, "DataLoops.RidgeFit", "Loss", 3, target: instance);

        Matrix<double> x = Design(t);
        Vector<double> theta = Vector<double>.Build.DenseOfArray(new[] { a, b, c });
        Vector<double> residual = (x * theta) - Vector<double>.Build.DenseOfArray(y);
        double[] gradient = ((x.TransposeThisAndMultiply(residual) * (2 * weight)) + (theta * (2 * lambda))).ToArray();
        double[] hessian = Flatten((x.TransposeThisAndMultiply(x) * (2 * weight)) + (Matrix<double>.Build.DenseIdentity(3) * (2 * lambda)));
        LoopCheck.At(p, new[] { a, b, c }, gradient, GradientFloor(x, residual) * weight, hessian, HessianFloor(x), "RidgeFit.Loss");
    }

    [Fact]
    public void InstanceMethodSeesTheDataOfItsOwnInstance()
    {
        // Two instances with different data must give different gradients: the generated method reads this's fields
        // at call time rather than anything fixed at generation.
        (double[] t, double[] y) = InventedQuadraticData();
        double[] y2 = Array.ConvertAll(y, v => v + 1);
        object one = _fixture.Assembly.New("DataLoops.RidgeFit", t, y, 1.0, 0.0);
        object two = _fixture.Assembly.New("DataLoops.RidgeFit", t, y2, 1.0, 0.0);
        var g1 = new double[3];
        var g2 = new double[3];
        Probe.Load(_fixture.Assembly, "DataLoops.RidgeFit", "Loss", 3, target: one).Gradient(new[] { 0.5, 0.5, 0.5 }, g1);
        Probe.Load(_fixture.Assembly, "DataLoops.RidgeFit", "Loss", 3, target: two).Gradient(new[] { 0.5, 0.5, 0.5 }, g2);

        // Shifting every target by +1 shifts each residual by −1, so ∂/∂a changes by −2n exactly (ESL §3.2 formula).
        Check.Close(g1[0] - (2.0 * t.Length), g2[0], 1e-12, 0, "∂/∂a after shifting y by 1");
    }

    [Theory]
    [InlineData(0.3, 1.2, -0.8)]
    [InlineData(-0.5, 0.4, 2.1)]
    public void LogisticRegressionMatchesTheScoreAndFisherInformation(double w0, double w1, double w2)
    {
        (double[] x1, double[] x2, double[] y) = InventedClassificationData();
        Probe p = LogisticProbe(x1, x2, y);
        var (gradient, hessian, minAbsZ) = LogisticClosedForm(new[] { w0, w1, w2 }, x1, x2, y);

        // The stable form's kinks (max and |·| at z = 0) cancel only away from z = 0 exactly; keep every z clear.
        Assert.True(minAbsZ > 1e-3, $"a sample lies at z = {Check.R(minAbsZ)}; choose other weights");
        LoopCheck.At(p, new[] { w0, w1, w2 }, gradient, 1e-13 * y.Length, hessian, 1e-13 * y.Length, "LogisticNll");
    }

    [Fact]
    public void LogisticRegressionStaysFiniteWhereTheNaiveFormOverflows()
    {
        // With weights this large |z| reaches ~1000, where e^|z| overflows to +inf: a naive log(1 + e^z) would give an
        // infinite loss; the stable form (common practice) stays finite and so must its derivatives.
        (double[] x1, double[] x2, double[] y) = InventedClassificationData();
        Probe p = LogisticProbe(x1, x2, y);
        double[] w = { 40.0, 300.0, -260.0 };
        var (gradient, hessian, minAbsZ) = LogisticClosedForm(w, x1, x2, y);
        Assert.True(minAbsZ > 1e-3);

        var g = new double[3];
        var h = new double[9];
        double value = p.Hessian!(w, g, h);
        Check.SameBits(p.Value(w), value, "LogisticNllHessian value");
        Assert.True(double.IsFinite(value), $"value {Check.R(value)}");
        Check.Close(gradient, g, LoopCheck.GradientRelative, 1e-10, "LogisticNll gradient at large weights vs ESL §4.4.1");
        Check.Close(hessian, h, LoopCheck.HessianClosedFormRelative, 1e-12, "LogisticNll Hessian at large weights vs ESL §4.4.1");
        Check.ExactlySymmetric(h, 3);
    }

    private Probe ArrayProbe(string method, double[] t, double[] y, bool hessian)
    {
        var f = _fixture.Assembly.Method<ArrF>(Fits, method);
        var g = _fixture.Assembly.Method<ArrG>(Fits, method + "Gradient");
        ArrH? h = hessian ? _fixture.Assembly.Method<ArrH>(Fits, method + "Hessian") : null;
        return Probe.Of(
            (F3)((x0, x1, x2) => f(x0, x1, x2, t, y)),
            (G3)((x0, x1, x2, gr) => g(x0, x1, x2, t, y, gr)),
            h is null ? null : (H3)((x0, x1, x2, gr, he) => h(x0, x1, x2, t, y, gr, he)));
    }

    private Probe LogisticProbe(double[] x1, double[] x2, double[] y)
    {
        var f = _fixture.Assembly.Method<LogF>(Fits, "LogisticNll");
        var g = _fixture.Assembly.Method<LogG>(Fits, "LogisticNllGradient");
        var h = _fixture.Assembly.Method<LogH>(Fits, "LogisticNllHessian");
        return Probe.Of(
            (F3)((a, b, c) => f(a, b, c, x1, x2, y)),
            (G3)((a, b, c, gr) => g(a, b, c, x1, x2, y, gr)),
            (H3)((a, b, c, gr, he) => h(a, b, c, x1, x2, y, gr, he)));
    }

    /// <summary>Linear least squares r = Xθ − y (rows optionally weighted): gradient 2XᵀW r and Hessian 2XᵀWX
    /// (ESL §3.2), computed with MathNet.Numerics' matrices.</summary>
    private static void LeastSquares(Probe p, double[] theta, Matrix<double> x, double[] y, string what, double[]? weights = null)
    {
        Matrix<double> w = weights is null
            ? Matrix<double>.Build.DenseIdentity(x.RowCount)
            : Matrix<double>.Build.DenseOfDiagonalArray(weights);
        Vector<double> residual = (x * Vector<double>.Build.DenseOfArray(theta)) - Vector<double>.Build.DenseOfArray(y);
        double[] gradient = (x.Transpose() * w * residual * 2).ToArray();
        double[] hessian = Flatten(x.Transpose() * w * x * 2);
        double scale = weights is null ? 1 : MaxAbs(weights);
        LoopCheck.At(p, theta, gradient, GradientFloor(x, residual) * scale, p.Hessian is null ? null : hessian, HessianFloor(x) * scale, what);
    }

    /// <summary>Rounding of a sum Σ_i 2 x_ij r_i is bounded by ~n·ε·Σ|terms| (common practice): the absolute floor
    /// for gradient entries where the terms cancel.</summary>
    private static double GradientFloor(Matrix<double> x, Vector<double> residual) =>
        1e-13 * 2 * (x.PointwiseAbs().TransposeThisAndMultiply(residual.PointwiseAbs())).AbsoluteMaximum();

    private static double HessianFloor(Matrix<double> x) =>
        1e-13 * 2 * x.PointwiseAbs().TransposeThisAndMultiply(x.PointwiseAbs()).Enumerate().Max();

    private static double MaxAbs(double[] values) => Vector<double>.Build.DenseOfArray(values).AbsoluteMaximum();

    private static double[] Flatten(Matrix<double> m)
    {
        var flat = new double[m.RowCount * m.ColumnCount];
        for (int i = 0; i < m.RowCount; i++)
        {
            for (int j = 0; j < m.ColumnCount; j++)
            {
                flat[(i * m.ColumnCount) + j] = m[i, j];
            }
        }

        return flat;
    }

    /// <summary>Rows (1, t, t²).</summary>
    private static Matrix<double> Design(double[] t) =>
        Matrix<double>.Build.Dense(t.Length, 3, (i, j) => j == 0 ? 1 : j == 1 ? t[i] : t[i] * t[i]);

    /// <summary>Invented data (a deterministic formula, not measurements): 30 points t_i = −1 + 2i/29,
    /// y_i = 0.7 − 1.3 t_i + 2.1 t_i² + 0.05 sin(17 i).</summary>
    private static (double[] T, double[] Y) InventedQuadraticData()
    {
        const int n = 30;
        var t = new double[n];
        var y = new double[n];
        for (int i = 0; i < n; i++)
        {
            t[i] = -1 + (2.0 * i / (n - 1));
            y[i] = 0.7 - (1.3 * t[i]) + (2.1 * t[i] * t[i]) + (0.05 * Math.Sin(17 * i));
        }

        return (t, y);
    }

    /// <summary>Invented data (a deterministic formula, not measurements): 40 samples with features
    /// x1 = 2 cos(1.3 i), x2 = 1.5 sin(0.7 i + 0.4) and label 1 where x1 − 0.5 x2 + 0.8 sin(5 i) > 0, else 0.</summary>
    internal static (double[] X1, double[] X2, double[] Y) InventedClassificationData()
    {
        const int n = 40;
        var x1 = new double[n];
        var x2 = new double[n];
        var y = new double[n];
        for (int i = 0; i < n; i++)
        {
            x1[i] = 2 * Math.Cos(1.3 * i);
            x2[i] = 1.5 * Math.Sin((0.7 * i) + 0.4);
            y[i] = x1[i] - (0.5 * x2[i]) + (0.8 * Math.Sin(5 * i)) > 0 ? 1 : 0;
        }

        return (x1, x2, y);
    }

    /// <summary>ESL §4.4.1 (Hastie, Tibshirani &amp; Friedman, 2nd ed.; section from memory): for the negative log-likelihood
    /// Σ log(1 + e^{zᵢ}) − yᵢ zᵢ with zᵢ = w·(1, x1ᵢ, x2ᵢ), gradient Σ (σ(zᵢ) − yᵢ) xᵢ and Hessian
    /// Σ σ(zᵢ)(1 − σ(zᵢ)) xᵢ xᵢᵀ. σ is evaluated without overflow: 1/(1 + e^{−z}) for z ≥ 0, e^z/(1 + e^z) otherwise
    /// (common practice); σ(1 − σ) = e^{−|z|}/(1 + e^{−|z|})².</summary>
    internal static (double[] Gradient, double[] Hessian, double MinAbsZ) LogisticClosedForm(double[] w, double[] x1, double[] x2, double[] y)
    {
        var g = new double[3];
        var h = new double[9];
        double minAbsZ = double.PositiveInfinity;
        for (int i = 0; i < y.Length; i++)
        {
            double[] xi = { 1, x1[i], x2[i] };
            double z = (w[0] * xi[0]) + (w[1] * xi[1]) + (w[2] * xi[2]);
            minAbsZ = Math.Min(minAbsZ, Math.Abs(z));
            double sigma = z >= 0 ? 1 / (1 + Math.Exp(-z)) : Math.Exp(z) / (1 + Math.Exp(z));
            double e = Math.Exp(-Math.Abs(z));
            double curvature = e / ((1 + e) * (1 + e));
            for (int j = 0; j < 3; j++)
            {
                g[j] += (sigma - y[i]) * xi[j];
                for (int k = 0; k < 3; k++)
                {
                    h[(j * 3) + k] += curvature * xi[j] * xi[k];
                }
            }
        }

        return (g, h, minAbsZ);
    }
}

public sealed class DataLoopNestedFixture : CompiledFixture
{
    // Loops inside loops (a grid of data, a per-row accumulator declared in the outer body, a triangular inner bound,
    // sub-steps of a simulation carrying state through both levels), and foreach with a tuple.
    public const string Source = """
        using System;
        using DerivGen;

        namespace NestedLoops;

        public static partial class Nested
        {
            // Plane z_ij ~ a + b x_i + c y_j fitted to a grid of data.
            [Differentiate(nameof(a), nameof(b), nameof(c))]
            public static double Plane(double a, double b, double c, double[] x, double[] y, double[,] z)
            {
                double s = 0;
                for (int i = 0; i < x.Length; i++)
                {
                    for (int j = 0; j < y.Length; j++)
                    {
                        double r = a + b * x[i] + c * y[j] - z[i, j];
                        s += r * r;
                    }
                }

                return s;
            }

            // Squared row sums: the row accumulator is declared in the outer body and carried by the inner loop.
            [Differentiate(nameof(a), nameof(b))]
            public static double RowSums(double a, double b, double[,] m)
            {
                double s = 0;
                for (int i = 0; i < m.GetLength(0); i++)
                {
                    double row = 0;
                    for (int j = 0; j < m.GetLength(1); j++)
                    {
                        row += a * m[i, j] + b;
                    }

                    s += row * row;
                }

                return s;
            }

            // Pairs j < i: the inner bound is the outer index.
            [Differentiate(nameof(x))]
            public static double Pairs(double x, double[] t)
            {
                double s = 0;
                for (int i = 0; i < t.Length; i++)
                {
                    for (int j = 0; j < i; j++)
                    {
                        double r = x * t[i] - t[j];
                        s += r * r;
                    }
                }

                return s;
            }

            // foreach over a span, with a tuple deconstructed into two locals.
            [Differentiate(nameof(a), nameof(b))]
            public static double ForeachTuple(double a, double b, ReadOnlySpan<double> t)
            {
                double s = 0;
                foreach (double v in t)
                {
                    var (p, q) = (a * v, b * v * v);
                    s += (p + q - 1) * (p + q - 1);
                }

                return s;
            }

            // The outer body saves s, the inner loop updates s, and the outer body then reads the saved value.
            [Differentiate(nameof(a), nameof(b))]
            public static double SavedAroundInner(double a, double b, double[,] m)
            {
                double s = 0;
                for (int i = 0; i < m.GetLength(0); i++)
                {
                    double before = s;
                    for (int j = 0; j < m.GetLength(1); j++)
                    {
                        s += a * m[i, j];
                    }

                    s += before * b;
                }

                return s;
            }

            // Explicit Euler with `sub` sub-steps per outer step: the state is carried through both loops.
            [Differentiate(nameof(speed), nameof(angle), nameof(g))]
            public static double SubSteps(double speed, double angle, double g, double targetX, double targetY, double dt, int outer, int sub)
            {
                double x = 0, y = 0;
                double vx = speed * Math.Cos(angle);
                double vy = speed * Math.Sin(angle);
                for (int k = 0; k < outer; k++)
                {
                    for (int m = 0; m < sub; m++)
                    {
                        x += vx * dt;
                        y += vy * dt;
                        vy -= g * dt;
                    }
                }

                double ex = x - targetX, ey = y - targetY;
                return 0.5 * (ex * ex + ey * ey);
            }
        }
        """;

    public DataLoopNestedFixture()
        : base(Source)
    {
    }
}

/// <summary>Nested loops, against the same closed forms as the single loops (ESL §3.2 for least squares; the
/// explicit-Euler closed form derived in <see cref="RecurrenceTests"/>).</summary>
public sealed class DataLoopNestedTests : IClassFixture<DataLoopNestedFixture>
{
    private const string Type = "NestedLoops.Nested";
    private readonly DataLoopNestedFixture _fixture;

    public DataLoopNestedTests(DataLoopNestedFixture fixture) => _fixture = fixture;

    private delegate double PlaneF(double a, double b, double c, double[] x, double[] y, double[,] z);

    private delegate double PlaneG(double a, double b, double c, double[] x, double[] y, double[,] z, Span<double> g);

    private delegate double PlaneH(double a, double b, double c, double[] x, double[] y, double[,] z, Span<double> g, Span<double> h);

    private delegate double RowF(double a, double b, double[,] m);

    private delegate double RowG(double a, double b, double[,] m, Span<double> g);

    private delegate double RowH(double a, double b, double[,] m, Span<double> g, Span<double> h);

    private delegate double PairF(double x, double[] t);

    private delegate double PairG(double x, double[] t, Span<double> g);

    private delegate double PairH(double x, double[] t, Span<double> g, Span<double> h);

    private delegate double SpanF(double a, double b, ReadOnlySpan<double> t);

    private delegate double SpanG(double a, double b, ReadOnlySpan<double> t, Span<double> g);

    private delegate double SpanH(double a, double b, ReadOnlySpan<double> t, Span<double> g, Span<double> h);

    private delegate double SubF(double s, double a, double g, double tx, double ty, double dt, int outer, int sub);

    private delegate double SubG(double s, double a, double g, double tx, double ty, double dt, int outer, int sub, Span<double> gr);

    private delegate double SubH(double s, double a, double g, double tx, double ty, double dt, int outer, int sub, Span<double> gr, Span<double> he);

    [Theory]
    [InlineData(0.3, -1.2, 0.8)]
    [InlineData(2.0, 0.5, -0.25)]
    public void PlaneOverAGridIsLinearLeastSquares(double a, double b, double c)
    {
        // Invented grid: x_i = i/3 (i = 0..6), y_j = 1 − j/4 (j = 0..4), z_ij = 0.5 + x_i − 2 y_j + 0.1 sin(i + 3j).
        // Rows (1, x_i, y_j) of the design matrix in the loops' order; ESL §3.2: gradient 2Xᵀ(Xθ − z), Hessian 2XᵀX.
        double[] x = new double[7], y = new double[5];
        var z = new double[7, 5];
        for (int i = 0; i < x.Length; i++)
        {
            x[i] = i / 3.0;
        }

        for (int j = 0; j < y.Length; j++)
        {
            y[j] = 1 - (j / 4.0);
        }

        var design = Matrix<double>.Build.Dense(35, 3);
        var target = new double[35];
        for (int i = 0; i < x.Length; i++)
        {
            for (int j = 0; j < y.Length; j++)
            {
                z[i, j] = 0.5 + x[i] - (2 * y[j]) + (0.1 * Math.Sin(i + (3 * j)));
                design.SetRow((i * 5) + j, new[] { 1, x[i], y[j] });
                target[(i * 5) + j] = z[i, j];
            }
        }

        var f = _fixture.Assembly.Method<PlaneF>(Type, "Plane");
        var g = _fixture.Assembly.Method<PlaneG>(Type, "PlaneGradient");
        var h = _fixture.Assembly.Method<PlaneH>(Type, "PlaneHessian");
        Probe p = Probe.Of(
            (F3)((p0, p1, p2) => f(p0, p1, p2, x, y, z)),
            (G3)((p0, p1, p2, gr) => g(p0, p1, p2, x, y, z, gr)),
            (H3)((p0, p1, p2, gr, he) => h(p0, p1, p2, x, y, z, gr, he)));
        Vector<double> residual = (design * Vector<double>.Build.DenseOfArray(new[] { a, b, c })) - Vector<double>.Build.DenseOfArray(target);
        double[] gradient = (design.TransposeThisAndMultiply(residual) * 2).ToArray();
        Matrix<double> hm = design.TransposeThisAndMultiply(design) * 2;
        double[] hessian = { hm[0, 0], hm[0, 1], hm[0, 2], hm[1, 0], hm[1, 1], hm[1, 2], hm[2, 0], hm[2, 1], hm[2, 2] };
        double floor = 1e-13 * 2 * design.PointwiseAbs().TransposeThisAndMultiply(residual.PointwiseAbs()).AbsoluteMaximum();
        LoopCheck.At(p, new[] { a, b, c }, gradient, floor, hessian, 1e-13 * hm.Enumerate().Max(Math.Abs), "Plane");
    }

    [Theory]
    [InlineData(0.7, -0.2)]
    [InlineData(-1.5, 1.1)]
    public void AccumulatorDeclaredInTheOuterBody(double a, double b)
    {
        // Invented 6×4 matrix m_ij = cos(i − 2j) + j/5. With R_i = Σ_j m_ij and J = 4 columns, row_i = a R_i + b J and
        // f = Σ_i (a R_i + b J)², i.e. least squares with rows (R_i, J) and target 0 (ESL §3.2):
        // gradient 2 Σ row_i (R_i, J), Hessian 2 Σ [[R_i², R_i J], [R_i J, J²]].
        var m = new double[6, 4];
        double ga = 0, gb = 0, haa = 0, hab = 0, hbb = 0, size = 0;
        for (int i = 0; i < 6; i++)
        {
            double rsum = 0;
            for (int j = 0; j < 4; j++)
            {
                m[i, j] = Math.Cos(i - (2 * j)) + (j / 5.0);
                rsum += m[i, j];
            }

            double row = (a * rsum) + (b * 4);
            ga += 2 * row * rsum;
            gb += 2 * row * 4;
            haa += 2 * rsum * rsum;
            hab += 2 * rsum * 4;
            hbb += 2 * 16;
            size += 2 * Math.Abs(row) * (Math.Abs(rsum) + 4);
        }

        var f = _fixture.Assembly.Method<RowF>(Type, "RowSums");
        var g = _fixture.Assembly.Method<RowG>(Type, "RowSumsGradient");
        var h = _fixture.Assembly.Method<RowH>(Type, "RowSumsHessian");
        Probe p = Probe.Of(
            (F2)((p0, p1) => f(p0, p1, m)),
            (G2)((p0, p1, gr) => g(p0, p1, m, gr)),
            (H2)((p0, p1, gr, he) => h(p0, p1, m, gr, he)));
        LoopCheck.At(p, new[] { a, b }, new[] { ga, gb }, 1e-13 * size, new[] { haa, hab, hab, hbb }, 1e-13 * (haa + hbb), "RowSums");
    }

    [Theory]
    [InlineData(0.8)]
    [InlineData(-1.3)]
    public void TriangularNestedLoop(double x)
    {
        // Invented data t_i = 1 + sin(i), i = 0..9. f = Σ_{j<i} (x t_i − t_j)² (plain calculus):
        // f' = Σ_{j<i} 2 (x t_i − t_j) t_i, f'' = Σ_{j<i} 2 t_i² = Σ_i 2 i t_i².
        var t = new double[10];
        double g1 = 0, h1 = 0, size = 0;
        for (int i = 0; i < t.Length; i++)
        {
            t[i] = 1 + Math.Sin(i);
        }

        for (int i = 0; i < t.Length; i++)
        {
            for (int j = 0; j < i; j++)
            {
                g1 += 2 * ((x * t[i]) - t[j]) * t[i];
                size += 2 * Math.Abs(((x * t[i]) - t[j]) * t[i]);
            }

            h1 += 2 * i * t[i] * t[i];
        }

        var f = _fixture.Assembly.Method<PairF>(Type, "Pairs");
        var g = _fixture.Assembly.Method<PairG>(Type, "PairsGradient");
        var h = _fixture.Assembly.Method<PairH>(Type, "PairsHessian");
        Probe p = Probe.Of((F1)(v => f(v, t)), (G1)((v, gr) => g(v, t, gr)), (H1)((v, gr, he) => h(v, t, gr, he)));
        LoopCheck.At(p, new[] { x }, new[] { g1 }, 1e-13 * size, new[] { h1 }, 1e-13 * h1, "Pairs");
    }

    [Theory]
    [InlineData(0.4, -0.9)]
    [InlineData(-2.0, 0.3)]
    public void ForeachWithATupleIsLinearLeastSquares(double a, double b)
    {
        // Invented samples v_k = k/4 − 1, k = 0..15. f = Σ (a v + b v² − 1)²: least squares with rows (v, v²) and
        // target 1 (ESL §3.2): gradient 2 Σ r (v, v²), Hessian 2 Σ [[v², v³], [v³, v⁴]].
        var t = new double[16];
        double ga = 0, gb = 0, haa = 0, hab = 0, hbb = 0, size = 0;
        for (int k = 0; k < t.Length; k++)
        {
            double v = (k / 4.0) - 1;
            t[k] = v;
            double r = (a * v) + (b * v * v) - 1;
            ga += 2 * r * v;
            gb += 2 * r * v * v;
            haa += 2 * v * v;
            hab += 2 * v * v * v;
            hbb += 2 * v * v * v * v;
            size += 2 * Math.Abs(r) * (Math.Abs(v) + (v * v));
        }

        var f = _fixture.Assembly.Method<SpanF>(Type, "ForeachTuple");
        var g = _fixture.Assembly.Method<SpanG>(Type, "ForeachTupleGradient");
        var h = _fixture.Assembly.Method<SpanH>(Type, "ForeachTupleHessian");
        Probe p = Probe.Of(
            (F2)((p0, p1) => f(p0, p1, t)),
            (G2)((p0, p1, gr) => g(p0, p1, t, gr)),
            (H2)((p0, p1, gr, he) => h(p0, p1, t, gr, he)));
        LoopCheck.At(p, new[] { a, b }, new[] { ga, gb }, 1e-13 * size, new[] { haa, hab, hab, hbb }, 1e-13 * (haa + hbb), "ForeachTuple");
    }

    [Theory]
    [InlineData(0.7, 0.3)]
    [InlineData(-1.2, -0.45)]
    public void ValueSavedBeforeAnInnerLoopKeepsItsValue(double a, double b)
    {
        // Invented 7×3 matrix m_ij = sin(i + j) + 0.5, row sums R_i. One outer step is s ← s + a R_i + b s =
        // (1 + b) s + a R_i, so s_N = a Σ_i R_i q^{N−1−i} with q = 1 + b (plain algebra). With e_i = N − 1 − i:
        // ∂a = Σ R_i q^{e_i}, ∂b = a Σ R_i e_i q^{e_i − 1}, ∂²/∂a² = 0, ∂²/∂a∂b = Σ R_i e_i q^{e_i − 1},
        // ∂²/∂b² = a Σ R_i e_i (e_i − 1) q^{e_i − 2}.
        const int rows = 7, cols = 3;
        var m = new double[rows, cols];
        double q = 1 + b, ga = 0, gab = 0, gbb = 0, size = 0;
        for (int i = 0; i < rows; i++)
        {
            double r = 0;
            for (int j = 0; j < cols; j++)
            {
                m[i, j] = Math.Sin(i + j) + 0.5;
                r += m[i, j];
            }

            int e = rows - 1 - i;
            ga += r * Math.Pow(q, e);
            gab += e == 0 ? 0 : r * e * Math.Pow(q, e - 1);
            gbb += e <= 1 ? 0 : r * e * (e - 1) * Math.Pow(q, e - 2);
            size += Math.Abs(r) * e * e * Math.Pow(Math.Abs(q) + 1, e);
        }

        var f = _fixture.Assembly.Method<RowF>(Type, "SavedAroundInner");
        var g = _fixture.Assembly.Method<RowG>(Type, "SavedAroundInnerGradient");
        var h = _fixture.Assembly.Method<RowH>(Type, "SavedAroundInnerHessian");
        Probe p = Probe.Of(
            (F2)((p0, p1) => f(p0, p1, m)),
            (G2)((p0, p1, gr) => g(p0, p1, m, gr)),
            (H2)((p0, p1, gr, he) => h(p0, p1, m, gr, he)));
        double floor = 1e-13 * size * (Math.Abs(a) + 1);
        LoopCheck.At(p, new[] { a, b }, new[] { ga, a * gab }, floor, new[] { 0, gab, gab, a * gbb }, floor, "SavedAroundInner");
    }

    [Theory]
    [InlineData(20.0, 0.7, 9.81, 20, 10)]
    [InlineData(35.0, 1.1, 3.7, 8, 25)]
    public void SubStepsCarryTheStateThroughBothLoops(double speed, double angle, double g, int outer, int sub)
    {
        // outer × sub inner steps of explicit Euler are N = outer·sub steps of the single loop, so the closed form of
        // RecurrenceTests.DragFreeProjectileMatchesTheClosedFormOfExplicitEuler applies with that N:
        // x_N = N dt s cos α, y_N = N dt s sin α − g dt² N(N−1)/2. Invented: dt = 0.01, target (30, 5).
        const double dt = 0.01, tx = 30, ty = 5;
        int n = outer * sub;
        double nd = n * dt, c = Math.Cos(angle), si = Math.Sin(angle), tri = n * (n - 1) / 2.0;
        double ex = (nd * speed * c) - tx, ey = (nd * speed * si) - (g * dt * dt * tri) - ty;
        double[] dx = { nd * c, -nd * speed * si, 0 };
        double[] dy = { nd * si, nd * speed * c, -dt * dt * tri };
        var gradient = new double[3];
        var hessian = new double[9];
        for (int i = 0; i < 3; i++)
        {
            gradient[i] = (ex * dx[i]) + (ey * dy[i]);
            for (int j = 0; j < 3; j++)
            {
                hessian[(i * 3) + j] = (dx[i] * dx[j]) + (dy[i] * dy[j]);
            }
        }

        hessian[1] += (ex * -nd * si) + (ey * nd * c);
        hessian[3] = hessian[1];
        hessian[4] += (ex * -nd * speed * c) + (ey * -nd * speed * si);

        var f = _fixture.Assembly.Method<SubF>(Type, "SubSteps");
        var gr = _fixture.Assembly.Method<SubG>(Type, "SubStepsGradient");
        var he = _fixture.Assembly.Method<SubH>(Type, "SubStepsHessian");
        Probe p = Probe.Of(
            (F3)((p0, p1, p2) => f(p0, p1, p2, tx, ty, dt, outer, sub)),
            (G3)((p0, p1, p2, gg) => gr(p0, p1, p2, tx, ty, dt, outer, sub, gg)),
            (H3)((p0, p1, p2, gg, hh) => he(p0, p1, p2, tx, ty, dt, outer, sub, gg, hh)));
        double scale = (Math.Abs(ex) + Math.Abs(ey) + 1) * ((nd * (speed + 1)) + (dt * dt * tri) + 1);
        LoopCheck.At(p, new[] { speed, angle, g }, gradient, 1e-13 * scale, hessian, 1e-13 * scale * scale, "SubSteps");
    }
}
