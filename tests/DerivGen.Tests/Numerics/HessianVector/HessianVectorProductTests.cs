using System;
using DerivGen.Tests.Infrastructure;
using Xunit;

namespace DerivGen.Tests.Numerics.HessianVector;

public sealed class HessianVectorFixture : CompiledFixture
{
    public const string Source = """
        using System;
        using DerivGen;

        public static partial class Products
        {
            // Rosenbrock's function in two variables (Moré, Garbow & Hillstrom, ACM TOMS 7(1), 1981, problem 1); loop-free.
            [Differentiate]
            public static double Rosen(double x, double y) => 100 * (y - x * x) * (y - x * x) + (1 - x) * (1 - x);

            // A loop with running derivatives and a product of two carried locals (invented).
            [Differentiate(nameof(a), nameof(b))]
            public static double Waves(double a, double b, double[] t)
            {
                double s = 0;
                double p = 1;
                for (int i = 0; i < t.Length; i++)
                {
                    s += Math.Sin(a * t[i]) * b;
                    p *= 1 + 0.1 * Math.Cos(b * t[i]);
                }

                return s * s + p;
            }

            // The extended Rosenbrock function (Moré, Garbow & Hillstrom, ACM TOMS 7(1), 1981, problem 21).
            [Differentiate(nameof(x))]
            public static double ExtendedRosenbrock(ReadOnlySpan<double> x)
            {
                double f = 0;
                for (int i = 0; i < x.Length / 2; i++)
                {
                    double a = x[2 * i + 1] - x[2 * i] * x[2 * i];
                    double b = 1 - x[2 * i];
                    f += 100 * a * a + b * b;
                }

                return f;
            }

            // Ridge-penalised logistic regression negative log-likelihood; rows of x are the samples.
            [Differentiate(nameof(w))]
            public static double Logistic(double[] w, double lambda, double[,] x, double[] y)
            {
                double s = 0;
                for (int i = 0; i < y.Length; i++)
                {
                    double z = 0;
                    for (int j = 0; j < w.Length; j++)
                    {
                        z += w[j] * x[i, j];
                    }

                    s += Math.Log(1 + Math.Exp(-z)) + (1 - y[i]) * z;
                }

                double penalty = 0;
                foreach (double wj in w)
                {
                    penalty += wj * wj;
                }

                return s + 0.5 * lambda * penalty;
            }

            // Scalars around a vector (slots: bias, w…, ridge), nested loops.
            [Differentiate(nameof(bias), nameof(w), nameof(ridge))]
            public static double Mixed(double bias, double[] w, double ridge, double[,] x, double[] y)
            {
                double s = 0;
                for (int i = 0; i < y.Length; i++)
                {
                    double z = bias;
                    for (int j = 0; j < w.Length; j++)
                    {
                        z += w[j] * x[i, j];
                    }

                    s += Math.Log(1 + Math.Exp(-z)) + (1 - y[i]) * z;
                }

                double penalty = 0;
                foreach (double wj in w)
                {
                    penalty += wj * wj;
                }

                return s + 0.5 * ridge * ridge * penalty;
            }

            // Two vectors and a float method: f = Σ exp(u_i v_i t_i) + c Σ u_i² (invented).
            [Differentiate(nameof(u), nameof(c), nameof(v))]
            public static float TwoVectors(float[] u, float c, ReadOnlySpan<float> v, float[] t)
            {
                float s = 0;
                for (int i = 0; i < u.Length; i++)
                {
                    s += MathF.Exp(u[i] * v[i] * t[i]) + c * u[i] * u[i];
                }

                return s;
            }

            // Calls another marked method: no product is generated for it (see HessianVectorProgram).
            [Differentiate]
            public static double Caller(double x, double y) => Rosen(x, y) * x;
        }
        """;

    public HessianVectorFixture()
        : base(Source)
    {
    }
}

internal delegate double HvScalar2(double x, double y, ReadOnlySpan<double> d, Span<double> g, Span<double> hv);
internal delegate double HScalar2(double x, double y, Span<double> g, Span<double> h);
internal delegate double WavesF(double a, double b, double[] t);
internal delegate double WavesH(double a, double b, double[] t, Span<double> g, Span<double> h);
internal delegate double WavesHv(double a, double b, double[] t, ReadOnlySpan<double> d, Span<double> g, Span<double> hv);
internal delegate double SpanValue(ReadOnlySpan<double> x);
internal delegate double SpanG(ReadOnlySpan<double> x, Span<double> g);
internal delegate double SpanH(ReadOnlySpan<double> x, Span<double> g, Span<double> h);
internal delegate double SpanHv(ReadOnlySpan<double> x, ReadOnlySpan<double> d, Span<double> g, Span<double> hv);
internal delegate double LogisticF(double[] w, double lambda, double[,] x, double[] y);
internal delegate double LogisticG(double[] w, double lambda, double[,] x, double[] y, Span<double> g);
internal delegate double LogisticHv(double[] w, double lambda, double[,] x, double[] y, ReadOnlySpan<double> d, Span<double> g, Span<double> hv);
internal delegate double MixedF(double bias, double[] w, double ridge, double[,] x, double[] y);
internal delegate double MixedH(double bias, double[] w, double ridge, double[,] x, double[] y, Span<double> g, Span<double> h);
internal delegate double MixedHv(double bias, double[] w, double ridge, double[,] x, double[] y, ReadOnlySpan<double> d, Span<double> g, Span<double> hv);
internal delegate float TwoF(float[] u, float c, ReadOnlySpan<float> v, float[] t);
internal delegate float TwoH(float[] u, float c, ReadOnlySpan<float> v, float[] t, Span<float> g, Span<float> h);
internal delegate float TwoHv(float[] u, float c, ReadOnlySpan<float> v, float[] t, ReadOnlySpan<float> d, Span<float> g, Span<float> hv);

/// <summary>
/// MHessianVectorProduct: H·d against a hand Hessian (extended Rosenbrock, logistic regression), against the generated
/// dense MHessian times d (every shape: loop-free, loops with running derivatives, nested loops, scalars around a vector,
/// two vectors, float), symmetry, the value bit for bit, the gradient equal to MGradient's, and the span checks.
/// </summary>
public sealed class HessianVectorProductTests : IClassFixture<HessianVectorFixture>
{
    private readonly HessianVectorFixture _fixture;

    public HessianVectorProductTests(HessianVectorFixture fixture) => _fixture = fixture;

    private T M<T>(string name) where T : Delegate => _fixture.Assembly.Method<T>("Products", name);

    internal static double[] Times(double[] hessian, double[] d)
    {
        int n = d.Length;
        var product = new double[n];
        for (int i = 0; i < n; i++)
        {
            double sum = 0;
            for (int j = 0; j < n; j++)
            {
                sum += hessian[(i * n) + j] * d[j];
            }

            product[i] = sum;
        }

        return product;
    }

    internal static double[] Direction(int n, int seed)
    {
        var random = new Random(seed);
        var d = new double[n];
        for (int i = 0; i < n; i++)
        {
            d[i] = (2 * random.NextDouble()) - 1;
        }

        return d;
    }

    [Fact]
    public void LoopFreeScalarsMatchTheHandHessianAndTheDenseOne()
    {
        double x = -1.2, y = 1; // the standard start (MGH 1981)
        double[] d = { 0.7, -0.3 };
        var hv = new double[2];
        var g = new double[2];
        double value = M<HvScalar2>("RosenHessianVectorProduct")(x, y, d, g, hv);
        Check.SameBits(M<F2>("Rosen")(x, y), value, "value");

        // ∂²/∂x² = 1200x² − 400y + 2, ∂²/∂x∂y = −400x, ∂²/∂y² = 200 (plain calculus).
        double[] hand = { (1200 * x * x) - (400 * y) + 2, -400 * x, -400 * x, 200 };
        Check.Close(Times(hand, d), hv, 1e-14, 1e-12, "Rosenbrock H·d vs the hand Hessian");
        var dense = new double[4];
        var denseGradient = new double[2];
        M<HScalar2>("RosenHessian")(x, y, denseGradient, dense);
        Check.Close(Times(dense, d), hv, 1e-14, 1e-12, "Rosenbrock H·d vs MHessian·d");
        Check.Close(denseGradient, g, 0, 0, "gradient");
    }

    [Fact]
    public void LoopWithRunningDerivativesMatchesTheDenseHessian()
    {
        double[] t = { 0.3, -1.1, 0.8, 2.0, 0.05 };
        const double a = 0.9, b = -0.4;
        var dense = new double[4];
        var denseGradient = new double[2];
        M<WavesH>("WavesHessian")(a, b, t, denseGradient, dense);
        for (int seed = 1; seed <= 5; seed++)
        {
            double[] d = Direction(2, seed);
            var g = new double[2];
            var hv = new double[2];
            Check.SameBits(M<WavesF>("Waves")(a, b, t), M<WavesHv>("WavesHessianVectorProduct")(a, b, t, d, g, hv), "value");
            Check.Close(Times(dense, d), hv, 1e-13, 1e-13, "Waves H·d vs MHessian·d");
            Check.Close(denseGradient, g, 1e-15, 0, "gradient");
        }
    }

    [Theory]
    [InlineData(2)]
    [InlineData(10)]
    [InlineData(1000)]
    public void ExtendedRosenbrockMatchesTheHandHessian(int n)
    {
        var x = new double[n];
        for (int i = 0; i < n; i += 2)
        {
            x[i] = -1.2 + (0.001 * i); // near the standard start (MGH 1981), perturbed per pair (invented)
            x[i + 1] = 1 - (0.0005 * i);
        }

        double[] d = Direction(n, n);
        // Per pair (p, q) = (x_{2i}, x_{2i+1}), block [[1200p² − 400q + 2, −400p], [−400p, 200]], zero between pairs (plain calculus).
        var expected = new double[n];
        for (int i = 0; i < n; i += 2)
        {
            double p = x[i], q = x[i + 1];
            expected[i] = (((1200 * p * p) - (400 * q) + 2) * d[i]) - (400 * p * d[i + 1]);
            expected[i + 1] = (-400 * p * d[i]) + (200 * d[i + 1]);
        }

        var g = new double[n];
        var hv = new double[n];
        double value = M<SpanHv>("ExtendedRosenbrockHessianVectorProduct")(x, d, g, hv);
        Check.SameBits(M<SpanValue>("ExtendedRosenbrock")(x), value, "value");
        Check.Close(expected, hv, 1e-13, 1e-10, $"extended Rosenbrock n={n} H·d");
        var gradient = new double[n];
        M<SpanG>("ExtendedRosenbrockGradient")(x, gradient);
        Check.Close(gradient, g, 0, 0, "gradient vs MGradient");
        if (n <= 10)
        {
            var dense = new double[n * n];
            M<SpanH>("ExtendedRosenbrockHessian")(x, new double[n], dense);
            Check.Close(Times(dense, d), hv, 1e-13, 1e-10, "H·d vs MHessian·d");
        }
    }

    [Fact]
    public void LogisticRegressionMatchesXTransposeDiagXPlusLambda()
    {
        // Invented data: 30 samples, 20 features. H = Xᵀ diag(p(1 − p)) X + λI with p = σ(Xw) (common practice).
        const int m = 30, n = 20;
        var random = new Random(20);
        var x = new double[m, n];
        var y = new double[m];
        for (int i = 0; i < m; i++)
        {
            for (int j = 0; j < n; j++)
            {
                x[i, j] = (2 * random.NextDouble()) - 1;
            }

            y[i] = random.NextDouble() < 0.5 ? 0 : 1;
        }

        double[] w = Direction(n, 7);
        double[] d = Direction(n, 8);
        const double lambda = 0.3;
        var expected = new double[n];
        for (int i = 0; i < m; i++)
        {
            double z = 0, xd = 0;
            for (int j = 0; j < n; j++)
            {
                z += w[j] * x[i, j];
                xd += x[i, j] * d[j];
            }

            double p = 1 / (1 + Math.Exp(-z));
            for (int j = 0; j < n; j++)
            {
                expected[j] += x[i, j] * p * (1 - p) * xd;
            }
        }

        for (int j = 0; j < n; j++)
        {
            expected[j] += lambda * d[j];
        }

        var g = new double[n];
        var hv = new double[n];
        double value = M<LogisticHv>("LogisticHessianVectorProduct")(w, lambda, x, y, d, g, hv);
        Check.SameBits(M<LogisticF>("Logistic")(w, lambda, x, y), value, "value");
        Check.Close(expected, hv, 1e-12, 1e-13, "logistic H·d");
        var gradient = new double[n];
        M<LogisticG>("LogisticGradient")(w, lambda, x, y, gradient);
        Check.Close(gradient, g, 0, 0, "gradient vs MGradient");
    }

    private static (double[,] X, double[] Y, double[] W) MixedData()
    {
        // Invented data: five samples with three features.
        var x = new double[,] { { 0.5, -1.0, 0.2 }, { 1.5, 0.3, -0.7 }, { -0.2, 0.8, 1.1 }, { 0.9, -0.4, 0.6 }, { -1.1, 0.1, 0.4 } };
        return (x, new double[] { 1, 0, 1, 0, 1 }, new[] { 0.3, -0.2, 0.5 });
    }

    [Fact]
    public void ScalarsAroundAVectorMatchTheDenseHessianAndAreSymmetric()
    {
        (double[,] x, double[] y, double[] w) = MixedData();
        const double bias = 0.1, ridge = 0.7;
        const int n = 5;
        var dense = new double[n * n];
        M<MixedH>("MixedHessian")(bias, w, ridge, x, y, new double[n], dense);
        var hv = M<MixedHv>("MixedHessianVectorProduct");
        double[] u = Direction(n, 11), v = Direction(n, 12);
        var g = new double[n];
        var hu = new double[n];
        var hvv = new double[n];
        Check.SameBits(M<MixedF>("Mixed")(bias, w, ridge, x, y), hv(bias, w, ridge, x, y, u, g, hu), "value");
        hv(bias, w, ridge, x, y, v, g, hvv);
        Check.Close(Times(dense, u), hu, 1e-13, 1e-14, "H·u vs MHessian·u");
        Check.Close(Times(dense, v), hvv, 1e-13, 1e-14, "H·v vs MHessian·v");

        // Symmetry of the Hessian seen through products: uᵀ(Hv) = vᵀ(Hu) to rounding.
        double uHv = 0, vHu = 0, scale = 0;
        for (int i = 0; i < n; i++)
        {
            uHv += u[i] * hvv[i];
            vHu += v[i] * hu[i];
            scale += Math.Abs(u[i] * hvv[i]) + Math.Abs(v[i] * hu[i]);
        }

        Assert.True(Math.Abs(uHv - vHu) <= 1e-14 * scale, $"uᵀHv = {uHv:R}, vᵀHu = {vHu:R}");
    }

    [Fact]
    public void FloatTwoVectorsMatchTheDenseHessian()
    {
        float[] u = { 0.3f, -0.5f, 0.8f }, t = { 0.9f, 1.1f, -0.4f }, v = { 0.2f, 0.7f, -1.3f };
        const float c = 0.6f;
        const int n = 7; // u…, c, v…
        var dense = new float[n * n];
        M<TwoH>("TwoVectorsHessian")(u, c, v, t, new float[n], dense);
        var d = new float[n];
        double[] dd = Direction(n, 3);
        for (int i = 0; i < n; i++)
        {
            d[i] = (float)dd[i];
        }

        var g = new float[n];
        var hv = new float[n];
        Check.SameBits(M<TwoF>("TwoVectors")(u, c, v, t), M<TwoHv>("TwoVectorsHessianVectorProduct")(u, c, v, t, d, g, hv), "value");
        var expected = Times(Array.ConvertAll(dense, e => (double)e), Array.ConvertAll(d, e => (double)e));
        Check.Close(expected, Array.ConvertAll(hv, e => (double)e), 1e-5, 1e-5, "float H·d vs MHessian·d");
    }

    [Theory]
    [InlineData("direction")]
    [InlineData("gradient")]
    [InlineData("product")]
    public void ShortSpansThrowBeforeAnythingIsWritten(string shortOne)
    {
        var x = new double[] { -1.2, 1, -1.2, 1 };
        var d = new double[shortOne == "direction" ? 3 : 4];
        var g = new double[shortOne == "gradient" ? 3 : 4];
        var hv = new double[shortOne == "product" ? 3 : 4];
        Array.Fill(g, double.NaN);
        Array.Fill(hv, double.NaN);
        var method = M<SpanHv>("ExtendedRosenbrockHessianVectorProduct");
        var thrown = Assert.Throws<ArgumentException>(() => method(x, d, g, hv));
        Assert.Equal(shortOne, thrown.ParamName);
        Assert.All(g, e => Assert.True(double.IsNaN(e)));
        Assert.All(hv, e => Assert.True(double.IsNaN(e)));

        var scalar = M<HvScalar2>("RosenHessianVectorProduct");
        var scalarThrown = Assert.Throws<ArgumentException>(() => scalar(1, 1, new double[shortOne == "direction" ? 1 : 2], new double[shortOne == "gradient" ? 1 : 2],
            new double[shortOne == "product" ? 1 : 2]));
        Assert.Equal(shortOne, scalarThrown.ParamName);
    }

    [Fact]
    public void NoProductForAMethodCallingAnotherMarkedMethod()
    {
        Assert.True(_fixture.Assembly.HasMethod("Products", "CallerHessian"));
        Assert.False(_fixture.Assembly.HasMethod("Products", "CallerHessianVectorProduct"));
    }
}
