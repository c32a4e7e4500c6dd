using System;
using DerivGen.Tests.Infrastructure;
using Xunit;

namespace DerivGen.Tests.Numerics.Vectors;

public sealed class VectorVariableFixture : CompiledFixture
{
    public const string Source = """
        using System;
        using DerivGen;

        public static partial class Vectors
        {
            // The extended Rosenbrock function (Moré, Garbow & Hillstrom, ACM TOMS 7(1), 1981, problem 21):
            // f(x) = Σ_{i<n/2} 100 (x_{2i+1} − x_{2i}²)² + (1 − x_{2i})².
            [Differentiate(nameof(x), Hessian = false)]
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

            // Logistic regression negative log-likelihood with weights w and bias b, rows of x as features.
            [Differentiate(nameof(bias), nameof(w), Hessian = false)]
            public static double Logistic(double bias, double[] w, double[,] x, double[] y)
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

                return s;
            }
        }
        """;

    public VectorVariableFixture()
        : base(Source)
    {
    }
}

/// <summary>Vectors of variables (arrays and spans named in [Differentiate]) against published closed forms.</summary>
public sealed class VectorVariableTests : IClassFixture<VectorVariableFixture>
{
    private readonly VectorVariableFixture _fixture;

    public VectorVariableTests(VectorVariableFixture fixture) => _fixture = fixture;

    [Theory]
    [InlineData(10)]
    [InlineData(100)]
    public void ExtendedRosenbrockGradientMatchesTheClosedForm(int n)
    {
        // Point: the standard start of Moré, Garbow & Hillstrom (x_{2i} = −1.2, x_{2i+1} = 1), perturbed so that
        // every pair differs (i-dependent offsets; invented).
        var x = new double[n];
        for (int i = 0; i < n; i += 2)
        {
            x[i] = -1.2 + (0.01 * i);
            x[i + 1] = 1 - (0.005 * i);
        }

        // ∂f/∂x_{2i} = −400 x_{2i} (x_{2i+1} − x_{2i}²) − 2 (1 − x_{2i}), ∂f/∂x_{2i+1} = 200 (x_{2i+1} − x_{2i}²)
        // (plain calculus on the definition above; the n = 2 case is Nocedal & Wright, ch. 2).
        var expected = new double[n];
        for (int i = 0; i < n; i += 2)
        {
            double a = x[i + 1] - (x[i] * x[i]);
            expected[i] = (-400 * x[i] * a) - (2 * (1 - x[i]));
            expected[i + 1] = 200 * a;
        }

        var f = _fixture.Assembly.Method<SpanF>("Vectors", "ExtendedRosenbrock");
        var g = _fixture.Assembly.Method<SpanG>("Vectors", "ExtendedRosenbrockGradient");
        var gradient = new double[n];
        double value = g(x, gradient);
        Assert.Equal(BitConverter.DoubleToInt64Bits(f(x)), BitConverter.DoubleToInt64Bits(value));
        for (int i = 0; i < n; i++)
        {
            Check.Close(expected[i], gradient[i], 1e-12, 1e-12, $"ExtendedRosenbrock n={n}, ∂f/∂x[{i}]");
        }

        Assert.Throws<ArgumentException>(() => g(x, new double[n - 1]));
    }

    [Fact]
    public void LogisticRegressionGradientIsTheScore()
    {
        // Invented data: four samples with three features.
        var x = new double[,] { { 0.5, -1.0, 0.2 }, { 1.5, 0.3, -0.7 }, { -0.2, 0.8, 1.1 }, { 0.9, -0.4, 0.6 } };
        double[] y = { 1, 0, 1, 0 };
        double[] w = { 0.3, -0.2, 0.5 };
        const double bias = 0.1;

        // With z = bias + w·x_i and the loss log(1 + e^{−z}) + (1 − y) z = −[y log σ(z) + (1 − y) log(1 − σ(z))],
        // ∂/∂bias = Σ (σ(z_i) − y_i) and ∂/∂w_j = Σ (σ(z_i) − y_i) x_ij (Hastie, Tibshirani & Friedman, The
        // Elements of Statistical Learning, §4.4.1). The gradient layout is [bias, w_0, w_1, w_2].
        var expected = new double[4];
        for (int i = 0; i < y.Length; i++)
        {
            double z = bias;
            for (int j = 0; j < 3; j++)
            {
                z += w[j] * x[i, j];
            }

            double residual = (1 / (1 + Math.Exp(-z))) - y[i];
            expected[0] += residual;
            for (int j = 0; j < 3; j++)
            {
                expected[1 + j] += residual * x[i, j];
            }
        }

        var f = _fixture.Assembly.Method<LogF>("Vectors", "Logistic");
        var g = _fixture.Assembly.Method<LogG>("Vectors", "LogisticGradient");
        var gradient = new double[4];
        double value = g(bias, w, x, y, gradient);
        Assert.Equal(BitConverter.DoubleToInt64Bits(f(bias, w, x, y)), BitConverter.DoubleToInt64Bits(value));
        for (int k = 0; k < 4; k++)
        {
            Check.Close(expected[k], gradient[k], 1e-12, 1e-14, $"Logistic ∂/∂v[{k}]");
        }
    }

    private delegate double SpanF(ReadOnlySpan<double> x);

    private delegate double SpanG(ReadOnlySpan<double> x, Span<double> gradient);

    private delegate double LogF(double bias, double[] w, double[,] x, double[] y);

    private delegate double LogG(double bias, double[] w, double[,] x, double[] y, Span<double> gradient);
}
