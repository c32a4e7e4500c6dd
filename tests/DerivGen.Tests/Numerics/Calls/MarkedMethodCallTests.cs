using System;
using DerivGen.Tests.Infrastructure;
using Xunit;

namespace DerivGen.Tests.Numerics.Calls;

public sealed class MarkedMethodCallFixture : CompiledFixture
{
    // A marked model called by marked losses: the losses are differentiated through the model's own generated
    // MGradient/MHessian (chain rule), once directly and once per sample inside a data loop. The data are invented.
    public const string Source = """
        using System;
        using DerivGen;

        public static partial class Growth
        {
            // A logistic growth curve k / (1 + e^(−r t)).
            [Differentiate(nameof(k), nameof(r))]
            public static double Model(double k, double r, double t) => k / (1 + Math.Exp(-r * t));

            // The squared misfit of one observation, through the model.
            [Differentiate(nameof(k), nameof(r))]
            public static double Misfit(double k, double r, double t, double y)
            {
                double e = Model(k, r, t) - y;
                return e * e;
            }

            // Least squares over data: the model is called once per sample.
            [Differentiate(nameof(k), nameof(r))]
            public static double Loss(double k, double r, double[] t, double[] y)
            {
                double s = 0;
                for (int i = 0; i < t.Length; i++)
                {
                    double e = Model(k, r, t[i]) - y[i];
                    s += e * e;
                }

                return s;
            }
        }
        """;

    public MarkedMethodCallFixture()
        : base(Source)
    {
    }
}

/// <summary>
/// Calls of other <c>[Differentiate]</c> methods (the caller uses the callee's generated derivatives), against the
/// closed form of the logistic curve and MathNet's finite differences.
/// </summary>
public sealed class MarkedMethodCallTests : IClassFixture<MarkedMethodCallFixture>
{
    // Invented observations of a growth curve.
    private static readonly double[] T = { 0.5, 1.0, 2.0, 3.5, 5.0, 8.0 };
    private static readonly double[] Y = { 1.4, 1.9, 3.1, 4.6, 5.5, 6.1 };
    private readonly MarkedMethodCallFixture _fixture;

    public MarkedMethodCallTests(MarkedMethodCallFixture fixture) => _fixture = fixture;

    private delegate double MisfitF(double k, double r, double t, double y);

    private delegate double MisfitG(double k, double r, double t, double y, Span<double> gradient);

    private delegate double MisfitH(double k, double r, double t, double y, Span<double> gradient, Span<double> hessian);

    private delegate double LossF(double k, double r, double[] t, double[] y);

    private delegate double LossG(double k, double r, double[] t, double[] y, Span<double> gradient);

    private delegate double LossH(double k, double r, double[] t, double[] y, Span<double> gradient, Span<double> hessian);

    [Theory]
    [InlineData("Misfit")]
    [InlineData("Loss")]
    public void TheLossesCallTheModelsGeneratedDerivatives(string method)
    {
        // The chain rule goes through the callee's generated methods, not through a copy of its body.
        string text = _fixture.Run.Source("Growth." + method + ".g.cs");
        Assert.Contains("Growth.ModelGradient(", text, StringComparison.Ordinal);
        Assert.Contains("Growth.ModelHessian(", text, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData(6.5, 0.8, 2.0, 3.1)]
    [InlineData(4.0, -0.3, 1.5, 0.9)]
    public void MisfitThroughTheModelMatchesTheChainRule(double k, double r, double t, double y)
    {
        var f = _fixture.Assembly.Method<MisfitF>("Growth", "Misfit");
        var g = _fixture.Assembly.Method<MisfitG>("Growth", "MisfitGradient");
        var h = _fixture.Assembly.Method<MisfitH>("Growth", "MisfitHessian");
        Probe p = Probe.Of(
            (F2)((a, b) => f(a, b, t, y)),
            (G2)((a, b, gr) => g(a, b, t, y, gr)),
            (H2)((a, b, gr, he) => h(a, b, t, y, gr, he)));
        var gradient = new double[2];
        var hessian = new double[4];
        AddSquaredMisfit(k, r, t, y, gradient, hessian);
        Verify.At(p, new[] { k, r }, gradient, hessian, "Misfit", closedFormAbsolute: 1e-14);
    }

    [Theory]
    [InlineData(6.5, 0.8)]
    [InlineData(5.0, 1.3)]
    public void LossCallingTheModelInALoopMatchesTheChainRule(double k, double r)
    {
        var f = _fixture.Assembly.Method<LossF>("Growth", "Loss");
        var g = _fixture.Assembly.Method<LossG>("Growth", "LossGradient");
        var h = _fixture.Assembly.Method<LossH>("Growth", "LossHessian");
        Probe p = Probe.Of(
            (F2)((a, b) => f(a, b, T, Y)),
            (G2)((a, b, gr) => g(a, b, T, Y, gr)),
            (H2)((a, b, gr, he) => h(a, b, T, Y, gr, he)));
        var gradient = new double[2];
        var hessian = new double[4];
        for (int i = 0; i < T.Length; i++)
        {
            AddSquaredMisfit(k, r, T[i], Y[i], gradient, hessian);
        }

        LoopCheck.At(p, new[] { k, r }, gradient, 1e-13, hessian, 1e-13, "Loss");
    }

    /// <summary>
    /// Adds the derivatives of (M − y)² for the logistic curve M = k σ, σ = 1/(1 + e^(−r t)) (plain calculus, with
    /// σ' = σ(1 − σ)): M_k = σ, M_r = k t σ(1 − σ), M_kk = 0, M_kr = t σ(1 − σ), M_rr = k t² σ(1 − σ)(1 − 2σ); the
    /// squared misfit has gradient 2e∇M and Hessian 2(∇M∇Mᵀ + e∇²M), e = M − y (Gauss–Newton plus curvature).
    /// </summary>
    private static void AddSquaredMisfit(double k, double r, double t, double y, double[] gradient, double[] hessian)
    {
        double sigma = 1 / (1 + Math.Exp(-r * t)), slope = sigma * (1 - sigma);
        double e = (k * sigma) - y;
        double[] dm = { sigma, k * t * slope };
        double[] d2m = { 0, t * slope, t * slope, k * t * t * slope * (1 - (2 * sigma)) };
        for (int a = 0; a < 2; a++)
        {
            gradient[a] += 2 * e * dm[a];
            for (int b = 0; b < 2; b++)
            {
                hessian[(a * 2) + b] += 2 * ((dm[a] * dm[b]) + (e * d2m[(a * 2) + b]));
            }
        }
    }
}
