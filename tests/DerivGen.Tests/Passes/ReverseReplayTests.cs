using System;
using System.Linq;
using DerivGen.Generator.Differentiation;
using DerivGen.Tests.Infrastructure;
using Xunit;

namespace DerivGen.Tests.Passes;

public sealed class InnerLoopReplayFixture : CompiledFixture
{
    // Losses over invented data with a vector variable w and a local re-initialised per sample and summed over an inner
    // loop. The first group has the shape the generator differentiates in reverse mode over the inner loop (the loop's
    // reads of w replayed after it with the local's adjoint); the second differs from it in one way each, so the
    // generator must keep forward mode there. All must give the same derivatives as the outside references.
    public const string Source = """
        using System;
        using DerivGen;

        public static partial class Replay
        {
        #pragma warning disable DG0007 // the Huber loss has its kink on purpose
            // Huber's loss of a linear model: the adjoint of r is a selection, the coefficient of w[j] is negated data.
            [Differentiate(nameof(w), Hessian = false)]
            public static double Huber(double[] w, double[,] x, double[] y, double delta)
            {
                double s = 0;
                for (int i = 0; i < y.Length; i++)
                {
                    double r = y[i];
                    for (int j = 0; j < w.Length; j++)
                    {
                        r -= w[j] * x[i, j];
                    }

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
        #pragma warning restore DG0007

            // Two accumulators read z (two replays), z starts from an element of w (a term before the loop), the inner
            // loop is inclusive and reads w at an offset, and its coefficient reads w itself (w[j + 1]², not changed by
            // the loop). Layout: w[0] is the intercept, w[1..m] the squared weights.
            [Differentiate(nameof(w), Hessian = false)]
            public static double TwoReaders(double[] w, double[,] x, int m)
            {
                double s = 0, u = 0;
                for (int i = 0; i < x.GetLength(0); i++)
                {
                    double z = w[0];
                    for (int j = 0; j <= m - 1; j++)
                    {
                        z += w[j + 1] * w[j + 1] * x[i, j];
                    }

                    s += z * z;
                    u += Math.Sin(z);
                }

                return s + u * u;
            }

            // A continue inside the inner loop (a data-dependent skip): the replay must skip the same reads.
            [Differentiate(nameof(w), Hessian = false)]
            public static double Skipping(double[] w, double[,] x)
            {
                double s = 0;
                for (int i = 0; i < x.GetLength(0); i++)
                {
                    double z = 0;
                    for (int j = 0; j < w.Length; j++)
                    {
                        if (x[i, j] < 0)
                        {
                            continue;
                        }

                        z += w[j] * x[i, j];
                    }

                    s += Math.Exp(0.5 * z);
                }

                return s;
            }

            // float, a span vector and a scalar variable next to two vectors: the inner loop reads both vectors, so two
            // spans of z are replayed; the bias is a scalar (its running derivative stays a scalar).
            [Differentiate(nameof(bias), nameof(u), nameof(v), Hessian = false)]
            public static float TwoVectors(float bias, ReadOnlySpan<float> u, float[] v, float[,] x)
            {
                float s = 0;
                for (int i = 0; i < x.GetLength(0); i++)
                {
                    float z = bias;
                    for (int j = 0; j < u.Length; j++)
                    {
                        z += u[j] * v[j] * x[i, j];
                    }

                    s += MathF.Log(1 + z * z);
                }

                return s;
            }

            // Refused: z's running derivative carries on with a factor 0.5, not 1 (a discounted sum).
            [Differentiate(nameof(w), Hessian = false)]
            public static double Discounted(double[] w, double[,] x)
            {
                double s = 0;
                for (int i = 0; i < x.GetLength(0); i++)
                {
                    double z = 0;
                    for (int j = 0; j < w.Length; j++)
                    {
                        z = 0.5 * z + w[j] * x[i, j];
                    }

                    s += z * z;
                }

                return s;
            }

            // Refused: the coefficient of w[j] reads z, which the loop changes (a product).
            [Differentiate(nameof(w), Hessian = false)]
            public static double Product(double[] w, double[,] x)
            {
                double s = 0;
                for (int i = 0; i < x.GetLength(0); i++)
                {
                    double z = 1;
                    for (int j = 0; j < w.Length; j++)
                    {
                        z += z * w[j] * x[i, j];
                    }

                    s += z;
                }

                return s;
            }

            // Refused: another loop follows the inner loop in the sample's body.
            [Differentiate(nameof(w), Hessian = false)]
            public static double NotLast(double[] w, double[,] x)
            {
                double s = 0;
                for (int i = 0; i < x.GetLength(0); i++)
                {
                    double z = 0;
                    for (int j = 0; j < w.Length; j++)
                    {
                        z += w[j] * x[i, j];
                    }

                    double q = 0;
                    for (int j = 0; j < w.Length; j++)
                    {
                        q += w[j] * w[j];
                    }

                    s += z * z + q;
                }

                return s;
            }

            // Refused: z is declared before the sample loop, so its running derivative is carried through both loops.
            [Differentiate(nameof(w), Hessian = false)]
            public static double Carried(double[] w, double[,] x)
            {
                double s = 0, z = 0;
                for (int i = 0; i < x.GetLength(0); i++)
                {
                    for (int j = 0; j < w.Length; j++)
                    {
                        z += w[j] * x[i, j];
                    }

                    s += z * z;
                }

                return s;
            }
        }
        """;

    public InnerLoopReplayFixture()
        : base(Source)
    {
    }
}

/// <summary>
/// Reverse mode over an inner loop (the pass <c>Differentiation/Passes/ReverseReplay</c>): the shapes it takes and the shapes it must
/// refuse, each against a closed form or MathNet.Numerics central differences, and whether the replay was used.
/// </summary>
public sealed class ReverseReplayTests : IClassFixture<InnerLoopReplayFixture>
{
    private const string ReplayMarker = "(reverse mode)";

    // Invented data: five samples of three features, with negative entries for the skipping loss.
    private static readonly double[,] X = { { 0.5, -1.0, 0.2 }, { 1.5, 0.3, -0.7 }, { -0.2, 0.8, 1.1 }, { 0.9, -0.4, 0.6 }, { -1.1, 0.1, 0.4 } };
    private static readonly double[] Y = { 0.4, 1.9, -0.3, 0.6, -0.9 };
    private readonly InnerLoopReplayFixture _fixture;

    public ReverseReplayTests(InnerLoopReplayFixture fixture) => _fixture = fixture;

    [Theory]
    [InlineData("Huber", "dR_dW", 1)]
    [InlineData("TwoReaders", "dZ_dW", 2)]
    [InlineData("Skipping", "dZ_dW", 1)]
    [InlineData("TwoVectors", "dZ_dU", 1)]
    [InlineData("TwoVectors", "dZ_dV", 1)]
    // Discounted and Product (an inner recurrence with a factor on z) go through their loops in reverse instead: see
    // Passes/ReverseLoopPolicyTests.InnerRecurrencesOfTheReplayFixtureGoReverse.
    [InlineData("NotLast", "dZ_dW", 0)] // the loop of q, which is last, is replayed (dQ_dW)
    [InlineData("Carried", "dZ_dW", 0)]
    public void ReplayIsUsedExactlyForTheSimpleShape(string method, string span, int replays)
    {
        string hint = _fixture.Run.HintNames.Single(h => h == "Replay." + method + ".g.cs");
        string source = _fixture.Run.Source(hint);
        int count = source.Split('\n').Count(line => line.Contains(ReplayMarker, StringComparison.Ordinal) && line.Contains(span + " not stored", StringComparison.Ordinal));
        Assert.Equal(replays, count);
        Assert.Equal(replays == 0, source.Contains(" " + span + " = ", StringComparison.Ordinal)); // the span is declared only when it is stored
    }

    /// <summary>The pass's decision itself: the spans it replays (by name), for each shape of the fixture.</summary>
    [Theory]
    [InlineData("Huber", "dR_dW")]
    [InlineData("TwoReaders", "dZ_dW")]
    [InlineData("Skipping", "dZ_dW")]
    [InlineData("TwoVectors", "dZ_dU,dZ_dV")]
    [InlineData("Discounted", "")]
    [InlineData("Product", "")]
    [InlineData("NotLast", "dQ_dW")]
    [InlineData("Carried", "")]
    public void ThePassReplaysExactlyTheseSpans(string method, string spans)
    {
        MethodPlan plan = PassHarness.PlanInSource(InnerLoopReplayFixture.Source, method);
        Assert.Equal(spans, string.Join(",", plan.Replayed.Keys.Select(k => PassHarness.Name(plan, k)).OrderBy(k => k, StringComparer.Ordinal)));
        foreach (ReverseReplay replay in plan.Replayed.Values)
        {
            // The inner loop replayed is the last loop of its parent's body (nothing runs between it and the replay).
            Assert.NotNull(replay.Loop.Parent);
            Assert.Same(replay.Loop, replay.Loop.Parent!.Children[^1]);
        }
    }

    [Fact]
    public void HuberGradientIsThePsiWeightedResidualSum()
    {
        double[] w = { 0.3, -0.2, 0.5 };
        const double delta = 0.5;
        var f = _fixture.Assembly.Method<DataF>("Replay", "Huber");
        var g = _fixture.Assembly.Method<DataG>("Replay", "HuberGradient");

        // ∂/∂w_j Σ ρ(r_i) = −Σ ψ(r_i) x_ij with ψ(r) = r for |r| ≤ δ and δ·sign(r) beyond (Huber, Ann. Math. Statist.
        // 35(1), 1964); r_i = y_i − w·x_i. The data put residuals on both sides of δ.
        var expected = new double[3];
        int beyond = 0;
        for (int i = 0; i < Y.Length; i++)
        {
            double r = Y[i];
            for (int j = 0; j < 3; j++)
            {
                r -= w[j] * X[i, j];
            }

            beyond += Math.Abs(r) > delta ? 1 : 0;
            double psi = Math.Abs(r) <= delta ? r : delta * Math.Sign(r);
            for (int j = 0; j < 3; j++)
            {
                expected[j] -= psi * X[i, j];
            }
        }

        Assert.InRange(beyond, 1, Y.Length - 1);
        var gradient = new double[3];
        Check.SameBits(f(w, X, Y, delta), g(w, X, Y, delta, gradient), "Huber value");
        Check.Close(expected, gradient, Check.ClosedFormRelative, 1e-15, "Huber ∂/∂w");
        Check.GradientMatchesOracle(v => f(v, X, Y, delta), w, gradient, "Huber");
    }

    [Fact]
    public void TwoReadersMatchTheClosedForm()
    {
        double[] w = { 0.1, 0.7, -0.4, 0.9 };
        const int m = 3;
        var f = _fixture.Assembly.Method<MF>("Replay", "TwoReaders");
        var g = _fixture.Assembly.Method<MG>("Replay", "TwoReadersGradient");

        // f = S + U² with S = Σ z_i², U = Σ sin z_i, z_i = w_0 + Σ_j w_{j+1}² x_ij; by the chain rule (plain calculus)
        // ∂f/∂w_0 = Σ (2 z_i + 2U cos z_i), ∂f/∂w_{j+1} = Σ (2 z_i + 2U cos z_i) · 2 w_{j+1} x_ij.
        int n = X.GetLength(0);
        var z = new double[n];
        double u = 0;
        for (int i = 0; i < n; i++)
        {
            z[i] = w[0];
            for (int j = 0; j < m; j++)
            {
                z[i] += w[j + 1] * w[j + 1] * X[i, j];
            }

            u += Math.Sin(z[i]);
        }

        var expected = new double[4];
        for (int i = 0; i < n; i++)
        {
            double a = (2 * z[i]) + (2 * u * Math.Cos(z[i]));
            expected[0] += a;
            for (int j = 0; j < m; j++)
            {
                expected[j + 1] += a * 2 * w[j + 1] * X[i, j];
            }
        }

        var gradient = new double[4];
        Check.SameBits(f(w, X, m), g(w, X, m, gradient), "TwoReaders value");
        Check.Close(expected, gradient, 1e-12, 1e-14, "TwoReaders ∂/∂w");
        Check.GradientMatchesOracle(v => f(v, X, m), w, gradient, "TwoReaders");
    }

    [Theory]
    [InlineData("Skipping")]
    [InlineData("Discounted")]
    [InlineData("Product")]
    [InlineData("NotLast")]
    [InlineData("Carried")]
    public void GradientMatchesCentralDifferences(string method)
    {
        double[] w = { 0.35, -0.25, 0.45 }; // invented point
        var f = _fixture.Assembly.Method<PlainF>("Replay", method);
        var g = _fixture.Assembly.Method<PlainG>("Replay", method + "Gradient");
        var gradient = new double[3];
        Check.SameBits(f(w, X), g(w, X, gradient), method + " value");
        Check.GradientMatchesOracle(v => f(v, X), w, gradient, method);
    }

    [Fact]
    public void TwoVectorsInFloatMatchTheClosedForm()
    {
        // s = Σ log(1 + z_i²), z_i = bias + Σ_j u_j v_j x_ij (invented data and point); by the chain rule (plain calculus)
        // ∂s/∂bias = Σ a_i, ∂s/∂u_j = Σ a_i v_j x_ij, ∂s/∂v_j = Σ a_i u_j x_ij with a_i = 2 z_i / (1 + z_i²).
        const float bias = 0.2f;
        float[] u = { 0.5f, -0.3f, 0.8f };
        float[] v = { 1.1f, 0.4f, -0.6f };
        var x = new float[X.GetLength(0), 3];
        for (int i = 0; i < X.GetLength(0); i++)
        {
            for (int j = 0; j < 3; j++)
            {
                x[i, j] = (float)X[i, j];
            }
        }

        var expected = new double[7];
        for (int i = 0; i < X.GetLength(0); i++)
        {
            double z = bias;
            for (int j = 0; j < 3; j++)
            {
                z += (double)u[j] * v[j] * x[i, j];
            }

            double a = 2 * z / (1 + (z * z));
            expected[0] += a;
            for (int j = 0; j < 3; j++)
            {
                expected[1 + j] += a * v[j] * x[i, j];
                expected[4 + j] += a * u[j] * x[i, j];
            }
        }

        var f = _fixture.Assembly.Method<TwoF>("Replay", "TwoVectors");
        var g = _fixture.Assembly.Method<TwoG>("Replay", "TwoVectorsGradient");
        var gradient = new float[7];
        Check.SameBits(f(bias, u, v, x), g(bias, u, v, x, gradient), "TwoVectors value");

        // float arithmetic (eps 6e-8) over a few dozen operations against a double evaluation: 1e-5 relative (common
        // practice, as in FloatTests).
        Check.Close(expected, gradient.Select(e => (double)e).ToArray(), 1e-5, 1e-6, "TwoVectors ∂/∂(bias, u, v)");
    }

    [Fact]
    public void SkippingGradientSkipsTheSameReads()
    {
        // s = Σ exp(z_i / 2), z_i = Σ_{j: x_ij ≥ 0} w_j x_ij, so ∂s/∂w_j = Σ_{i: x_ij ≥ 0} ½ exp(z_i / 2) x_ij (plain calculus).
        double[] w = { 0.35, -0.25, 0.45 };
        var expected = new double[3];
        for (int i = 0; i < X.GetLength(0); i++)
        {
            double z = 0;
            for (int j = 0; j < 3; j++)
            {
                z += X[i, j] < 0 ? 0 : w[j] * X[i, j];
            }

            for (int j = 0; j < 3; j++)
            {
                expected[j] += X[i, j] < 0 ? 0 : 0.5 * Math.Exp(0.5 * z) * X[i, j];
            }
        }

        var g = _fixture.Assembly.Method<PlainG>("Replay", "SkippingGradient");
        var gradient = new double[3];
        g(w, X, gradient);
        Check.Close(expected, gradient, 1e-13, 1e-15, "Skipping ∂/∂w");
    }

    [Fact]
    public void AnEmptyVectorAndNoSamplesGiveZeroGradients()
    {
        // Edge cases of the replayed loops: no weights (the inner loop and its replay run zero times) and no samples.
        var huber = _fixture.Assembly.Method<DataG>("Replay", "HuberGradient");
        var gradient = new double[] { 7, 7, 7 };
        huber(Array.Empty<double>(), new double[Y.Length, 0], Y, 0.5, gradient);
        Assert.Equal(new double[] { 7, 7, 7 }, gradient);

        Assert.Equal(0, huber(new double[] { 1, 2, 3 }, new double[0, 3], Array.Empty<double>(), 0.5, gradient));
        Assert.Equal(new double[] { 0, 0, 0 }, gradient);
    }

    private delegate double DataF(double[] w, double[,] x, double[] y, double delta);

    private delegate double DataG(double[] w, double[,] x, double[] y, double delta, Span<double> gradient);

    private delegate double MF(double[] w, double[,] x, int m);

    private delegate double MG(double[] w, double[,] x, int m, Span<double> gradient);

    private delegate float TwoF(float bias, ReadOnlySpan<float> u, float[] v, float[,] x);

    private delegate float TwoG(float bias, ReadOnlySpan<float> u, float[] v, float[,] x, Span<float> gradient);

    private delegate double PlainF(double[] w, double[,] x);

    private delegate double PlainG(double[] w, double[,] x, Span<double> gradient);
}
