using System;
using DerivGen.Tests.Infrastructure;
using Xunit;

namespace DerivGen.Tests.Numerics.Vectors;

public sealed class VectorHessianFixture : CompiledFixture
{
    public const string Source = """
        using System;
        using DerivGen;

        public static partial class VectorHessians
        {
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

            // Logistic regression with a bias before the weights and a ridge weight after them (slots: bias, w…, ridge).
            [Differentiate(nameof(bias), nameof(w), nameof(ridge))]
            public static double Logistic(double bias, double[] w, double ridge, double[,] x, double[] y)
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

            // Two vectors and a float method: f = Σ exp(u_i v_i t_i) + c Σ u_i².
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
        }
        """;

    public VectorHessianFixture()
        : base(Source)
    {
    }
}

/// <summary>Hessians with respect to vector variables (assembled pair by pair), against closed forms.</summary>
public sealed class VectorHessianTests : IClassFixture<VectorHessianFixture>
{
    private readonly VectorHessianFixture _fixture;

    public VectorHessianTests(VectorHessianFixture fixture) => _fixture = fixture;

    [Theory]
    [InlineData(2)]
    [InlineData(10)]
    public void ExtendedRosenbrockHessianIsBlockDiagonal(int n)
    {
        var x = new double[n];
        for (int i = 0; i < n; i += 2)
        {
            x[i] = -1.2 + (0.01 * i); // near the standard start (MGH 1981), perturbed per pair (invented)
            x[i + 1] = 1 - (0.005 * i);
        }

        // Per pair (p, q) = (x_{2i}, x_{2i+1}): ∂²/∂p² = 1200 p² − 400 q + 2, ∂²/∂p∂q = −400 p, ∂²/∂q² = 200, zero
        // between pairs (plain calculus; the n = 2 case is Nocedal & Wright, Numerical Optimization, ch. 2).
        var expected = new double[n * n];
        for (int i = 0; i < n; i += 2)
        {
            expected[(i * n) + i] = (1200 * x[i] * x[i]) - (400 * x[i + 1]) + 2;
            expected[(i * n) + i + 1] = expected[((i + 1) * n) + i] = -400 * x[i];
            expected[((i + 1) * n) + i + 1] = 200;
        }

        var f = _fixture.Assembly.Method<SpanF>("VectorHessians", "ExtendedRosenbrock");
        var g = _fixture.Assembly.Method<SpanG>("VectorHessians", "ExtendedRosenbrockGradient");
        var h = _fixture.Assembly.Method<SpanH>("VectorHessians", "ExtendedRosenbrockHessian");
        var gradient = new double[n];
        var hessian = new double[n * n];
        Check.SameBits(f(x), h(x, gradient, hessian), "MHessian's value");
        var gradientOnly = new double[n];
        g(x, gradientOnly);
        Check.Close(gradientOnly, gradient, 0, 0, "MHessian's gradient vs MGradient's");
        Check.Close(expected, hessian, 1e-12, 1e-12, $"ExtendedRosenbrock n={n} Hessian");
        Check.ExactlySymmetric(hessian, n);
        Assert.Throws<ArgumentException>(() => h(x, gradient, new double[(n * n) - 1]));
    }

    [Fact]
    public void LogisticRegressionHessianIsTheFisherInformationPlusTheRidge()
    {
        // Invented data: five samples with three features.
        var x = new double[,] { { 0.5, -1.0, 0.2 }, { 1.5, 0.3, -0.7 }, { -0.2, 0.8, 1.1 }, { 0.9, -0.4, 0.6 }, { -1.1, 0.1, 0.4 } };
        double[] y = { 1, 0, 1, 0, 1 };
        double[] w = { 0.3, -0.2, 0.5 };
        const double bias = 0.1, ridge = 0.7;

        // With p_i = σ(z_i): ∂²/∂θ_a∂θ_b of the log-loss is Σ p_i (1 − p_i) x̃_ia x̃_ib, x̃ = (1, x_i) (Hastie, Tibshirani
        // & Friedman, The Elements of Statistical Learning, §4.4.1); the ridge term ½ r² Σ w² adds r² on the w diagonal,
        // 2 r w_j between w_j and r, and Σ w² on the r diagonal (plain calculus). Slots: bias, w_0..w_2, ridge.
        const int n = 5;
        var expected = new double[n * n];
        for (int i = 0; i < y.Length; i++)
        {
            double z = bias + (w[0] * x[i, 0]) + (w[1] * x[i, 1]) + (w[2] * x[i, 2]);
            double p = 1 / (1 + Math.Exp(-z));
            double[] features = { 1, x[i, 0], x[i, 1], x[i, 2] };
            for (int a = 0; a < 4; a++)
            {
                for (int b = 0; b < 4; b++)
                {
                    expected[(a * n) + b] += p * (1 - p) * features[a] * features[b];
                }
            }
        }

        for (int j = 0; j < 3; j++)
        {
            expected[((j + 1) * n) + j + 1] += ridge * ridge;
            expected[((j + 1) * n) + 4] = expected[(4 * n) + j + 1] = 2 * ridge * w[j];
        }

        expected[(4 * n) + 4] = (w[0] * w[0]) + (w[1] * w[1]) + (w[2] * w[2]);

        var h = _fixture.Assembly.Method<LogisticH>("VectorHessians", "LogisticHessian");
        var gradient = new double[n];
        var hessian = new double[n * n];
        h(bias, w, ridge, x, y, gradient, hessian);
        Check.Close(expected, hessian, 1e-12, 1e-14, "Logistic Hessian");
        Check.ExactlySymmetric(hessian, n);
    }

    [Fact]
    public void TwoFloatVectorsAroundAScalar()
    {
        float[] u = { 0.3f, -0.5f, 0.8f }, v = { 1.1f, 0.4f, -0.6f }, t = { 0.7f, 1.3f, -0.9f };
        const float c = 0.25f;

        // Slots: u_0..u_2 (0–2), c (3), v_0..v_2 (4–6). With e_i = exp(u_i v_i t_i) (plain calculus):
        // ∂²/∂u_i² = v_i² t_i² e_i + 2c, ∂²/∂v_i² = u_i² t_i² e_i, ∂²/∂u_i∂v_i = t_i e_i (1 + u_i v_i t_i),
        // ∂²/∂u_i∂c = 2 u_i, everything else zero.
        const int n = 7;
        var expected = new double[n * n];
        for (int i = 0; i < 3; i++)
        {
            double e = Math.Exp((double)u[i] * v[i] * t[i]);
            expected[(i * n) + i] = ((double)v[i] * v[i] * t[i] * t[i] * e) + (2 * c);
            expected[((i + 4) * n) + i + 4] = (double)u[i] * u[i] * t[i] * t[i] * e;
            expected[(i * n) + i + 4] = expected[((i + 4) * n) + i] = t[i] * e * (1 + ((double)u[i] * v[i] * t[i]));
            expected[(i * n) + 3] = expected[(3 * n) + i] = 2.0 * u[i];
        }

        var h = _fixture.Assembly.Method<FloatH>("VectorHessians", "TwoVectorsHessian");
        var gradient = new float[n];
        var hessian = new float[n * n];
        h(u, c, v, t, gradient, hessian);
        for (int k = 0; k < n * n; k++)
        {
            Check.Close(expected[k], hessian[k], 1e-5, 1e-6, $"TwoVectors Hessian[{k / n}, {k % n}] (float)");
        }

        for (int a = 0; a < n; a++)
        {
            for (int b = 0; b < n; b++)
            {
                Assert.Equal(BitConverter.SingleToInt32Bits(hessian[(a * n) + b]), BitConverter.SingleToInt32Bits(hessian[(b * n) + a]));
            }
        }
    }

    private delegate double SpanF(ReadOnlySpan<double> x);

    private delegate double SpanG(ReadOnlySpan<double> x, Span<double> gradient);

    private delegate double SpanH(ReadOnlySpan<double> x, Span<double> gradient, Span<double> hessian);

    private delegate double LogisticH(double bias, double[] w, double ridge, double[,] x, double[] y, Span<double> gradient, Span<double> hessian);

    private delegate float FloatH(float[] u, float c, ReadOnlySpan<float> v, float[] t, Span<float> gradient, Span<float> hessian);
}
