using System;
using DerivGen.Tests.Infrastructure;
using Xunit;

namespace DerivGen.Tests.Numerics.Vectors;

public sealed class TanhNetworkFixture : CompiledFixture
{
    // A two-layer network with one tanh hidden layer and a linear output, all weights in one vector variable:
    // w = [W (hidden × d, row-major), b (hidden), v (hidden), c]; the loss is the sum of squared errors.
    public const string Source = """
        using System;
        using DerivGen;

        public static partial class Network
        {
            [Differentiate(nameof(w))]
            public static double Loss(double[] w, double[,] x, double[] y, int hidden)
            {
                int d = x.GetLength(1);
                double loss = 0;
                for (int i = 0; i < y.Length; i++)
                {
                    double output = w[hidden * (d + 2)];
                    for (int h = 0; h < hidden; h++)
                    {
                        double z = w[hidden * d + h];
                        for (int j = 0; j < d; j++)
                        {
                            z += w[h * d + j] * x[i, j];
                        }

                        output += w[hidden * (d + 1) + h] * Math.Tanh(z);
                    }

                    double r = output - y[i];
                    loss += r * r;
                }

                return loss;
            }
        }
        """;

    public TanhNetworkFixture()
        : base(Source)
    {
    }
}

/// <summary>The network's gradient against back-propagation written by hand, its Hessian against central differences
/// of that hand-written gradient.</summary>
public sealed class TanhNetworkTests : IClassFixture<TanhNetworkFixture>
{
    // Invented data: six samples of two features.
    private static readonly double[,] X = { { 0.5, -1.0 }, { 1.5, 0.3 }, { -0.2, 0.8 }, { 0.9, -0.4 }, { -1.1, 0.1 }, { 0.3, 1.2 } };
    private static readonly double[] Y = { 0.4, 1.1, -0.3, 0.6, -0.9, 0.2 };
    private const int Hidden = 3;
    private readonly TanhNetworkFixture _fixture;

    public TanhNetworkTests(TanhNetworkFixture fixture) => _fixture = fixture;

    [Fact]
    public void GradientIsBackPropagationAndHessianMatchesItsDifferences()
    {
        int d = X.GetLength(1), n = (Hidden * (d + 2)) + 1;
        var w = new double[n];
        for (int k = 0; k < n; k++)
        {
            w[k] = 0.3 * Math.Sin(1.7 * k + 0.4); // invented weights
        }

        var g = _fixture.Assembly.Method<G>("Network", "LossGradient");
        var h = _fixture.Assembly.Method<H>("Network", "LossHessian");
        var gradient = new double[n];
        g(w, X, Y, Hidden, gradient);
        Check.Close(BackPropagation(w), gradient, 1e-12, 1e-13, "network gradient vs back-propagation");

        var gradient2 = new double[n];
        var hessian = new double[n * n];
        h(w, X, Y, Hidden, gradient2, hessian);
        Check.ExactlySymmetric(hessian, n);
        for (int k = 0; k < n; k++)
        {
            // Central differences of the hand-written gradient along w_k (common practice; step 1e-5).
            const double step = 1e-5;
            double[] plus = (double[])w.Clone(), minus = (double[])w.Clone();
            plus[k] += step;
            minus[k] -= step;
            double[] gp = BackPropagation(plus), gm = BackPropagation(minus);
            for (int l = 0; l < n; l++)
            {
                Check.Close((gp[l] - gm[l]) / (2 * step), hessian[(l * n) + k], 1e-6, 1e-8, $"network Hessian[{l}, {k}]");
            }
        }
    }

    /// <summary>Back-propagation (the chain rule through the layers, written out by hand; common practice).</summary>
    private static double[] BackPropagation(double[] w)
    {
        int d = X.GetLength(1);
        var grad = new double[w.Length];
        for (int i = 0; i < Y.Length; i++)
        {
            var a = new double[Hidden];
            double output = w[Hidden * (d + 2)];
            for (int hu = 0; hu < Hidden; hu++)
            {
                double z = w[(Hidden * d) + hu];
                for (int j = 0; j < d; j++)
                {
                    z += w[(hu * d) + j] * X[i, j];
                }

                a[hu] = Math.Tanh(z);
                output += w[(Hidden * (d + 1)) + hu] * a[hu];
            }

            double dr = 2 * (output - Y[i]);
            grad[Hidden * (d + 2)] += dr;
            for (int hu = 0; hu < Hidden; hu++)
            {
                grad[(Hidden * (d + 1)) + hu] += dr * a[hu];
                double dz = dr * w[(Hidden * (d + 1)) + hu] * (1 - (a[hu] * a[hu]));
                grad[(Hidden * d) + hu] += dz;
                for (int j = 0; j < d; j++)
                {
                    grad[(hu * d) + j] += dz * X[i, j];
                }
            }
        }

        return grad;
    }

    private delegate double G(double[] w, double[,] x, double[] y, int hidden, Span<double> gradient);

    private delegate double H(double[] w, double[,] x, double[] y, int hidden, Span<double> gradient, Span<double> hessian);
}
