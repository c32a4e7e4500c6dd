using System;
using DerivGen.Tests.Infrastructure;
using Xunit;

namespace DerivGen.Tests.Numerics.Loops;

public sealed class WhileLoopFixture : CompiledFixture
{
    public const string Source = """
        using System;
        using DerivGen;

        public static partial class Decay
        {
            // Explicit Euler for x' = −k x from x(0) = c, stepping until the time reaches tEnd; the time and the step
            // count are carried locals that do not depend on the variables (their running derivatives are dropped).
            [Differentiate(nameof(c), nameof(k))]
            public static double Until(double c, double k, double dt, double tEnd)
            {
                double t = 0, x = c;
                int steps = 0;
                while (t < tEnd)
                {
                    x += -k * x * dt;
                    t += dt;
                    steps++;
                }

                return x;
            }
        }
        """;

    public WhileLoopFixture()
        : base(Source)
    {
    }
}

/// <summary>A while loop whose condition does not depend on the variables, against the closed form of explicit Euler.</summary>
public sealed class WhileLoopTests : IClassFixture<WhileLoopFixture>
{
    private readonly WhileLoopFixture _fixture;

    public WhileLoopTests(WhileLoopFixture fixture) => _fixture = fixture;

    [Theory]
    [InlineData(1.3, 0.7)]
    [InlineData(-0.4, 2.5)]
    public void EulerUntilAnEndTimeMatchesTheClosedForm(double c, double k)
    {
        const double dt = 0.01, tEnd = 1.5;

        // The number of steps n is fixed by the data (count the same loop on t alone).
        int n = 0;
        for (double t = 0; t < tEnd; t += dt)
        {
            n++;
        }

        // Explicit Euler (plain calculus, common practice): x_n = c·q^n with q = 1 − k·dt, so
        // ∂/∂c = q^n, ∂/∂k = −c·n·dt·q^(n−1), ∂²/∂c² = 0, ∂²/∂c∂k = −n·dt·q^(n−1), ∂²/∂k² = c·n·(n−1)·dt²·q^(n−2).
        double q = 1 - (k * dt);
        double[] gradient = { Math.Pow(q, n), -c * n * dt * Math.Pow(q, n - 1) };
        double mixed = -n * dt * Math.Pow(q, n - 1);
        double[] hessian = { 0, mixed, mixed, c * n * (n - 1) * dt * dt * Math.Pow(q, n - 2) };

        var f = _fixture.Assembly.Method<F>("Decay", "Until");
        var g = _fixture.Assembly.Method<G>("Decay", "UntilGradient");
        var h = _fixture.Assembly.Method<H>("Decay", "UntilHessian");
        Probe probe = Probe.Of(
            (F2)((p0, p1) => f(p0, p1, dt, tEnd)),
            (G2)((p0, p1, gr) => g(p0, p1, dt, tEnd, gr)),
            (H2)((p0, p1, gr, he) => h(p0, p1, dt, tEnd, gr, he)));
        Verify.At(probe, new[] { c, k }, gradient, hessian, "Until", closedFormAbsolute: 1e-13);
    }

    private delegate double F(double c, double k, double dt, double tEnd);

    private delegate double G(double c, double k, double dt, double tEnd, Span<double> gradient);

    private delegate double H(double c, double k, double dt, double tEnd, Span<double> gradient, Span<double> hessian);
}
