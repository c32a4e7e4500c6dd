using System;
using DerivGen.Tests.Infrastructure;
using Xunit;

namespace DerivGen.Tests.Numerics.Loops;

public sealed class PassiveStateFixture : CompiledFixture
{
    // Loop-carried doubles that do not depend on the variables (a power of the data, a Fibonacci pair) next to ones that
    // do, one of them only through another carried local (a coupled recurrence). All data are invented.
    public const string Source = """
        using System;
        using DerivGen;

        public static partial class Passive
        {
            // Least squares of a polynomial whose coefficients are a vector of variables, evaluated by an inner loop:
            // power = t[i]^j does not depend on c.
            [Differentiate(nameof(c), Hessian = false)]
            public static double PolynomialFit(double[] c, double[] t, double[] y)
            {
                double sum = 0;
                for (int i = 0; i < t.Length; i++)
                {
                    double s = 0;
                    double power = 1;
                    for (int j = 0; j < c.Length; j++)
                    {
                        s += c[j] * power;
                        power *= t[i];
                    }

                    double r = y[i] - s;
                    sum += r * r;
                }

                return sum;
            }

            // u depends on x only through v (found on the second round of the fixed point); p, q depend on nothing.
            [Differentiate(nameof(x))]
            public static double Coupled(double x, int n)
            {
                double u = 0, v = 0;
                double p = 1, q = 1;
                for (int i = 0; i < n; i++)
                {
                    u += v;
                    v += x;
                    double next = p + q;
                    p = q;
                    q = next;
                }

                return u * q;
            }
        }
        """;

    public PassiveStateFixture()
        : base(Source)
    {
    }
}

/// <summary>
/// Loop-carried locals that do not depend on the variables get no running derivatives (no span cleared and updated
/// every iteration), while a local that depends on them only through another carried local still does.
/// </summary>
public sealed class PassiveStateTests : IClassFixture<PassiveStateFixture>
{
    private readonly PassiveStateFixture _fixture;

    public PassiveStateTests(PassiveStateFixture fixture) => _fixture = fixture;

    private delegate double PolyF(double[] c, double[] t, double[] y);

    private delegate double PolyG(double[] c, double[] t, double[] y, Span<double> gradient);

    private delegate double CoupledF(double x, int n);

    private delegate double CoupledH(double x, int n, Span<double> gradient, Span<double> hessian);

    [Fact]
    public void APowerOfTheDataHasNoRunningDerivativeSpan()
    {
        string text = _fixture.Run.Source("Passive.PolynomialFit.g.cs");
        Assert.DoesNotContain("dPower_d", text, StringComparison.Ordinal);
        Assert.Contains("dS_dC", text, StringComparison.Ordinal); // s does depend on c (a span or its replay)
    }

    /// <summary>
    /// ∂/∂c_k Σᵢ (yᵢ − Σⱼ cⱼ tᵢʲ)² = −2 Σᵢ rᵢ tᵢᵏ: the Jacobian of the residuals is minus the Vandermonde matrix (common
    /// practice, linear least squares).
    /// </summary>
    [Fact]
    public void PolynomialFitGradientIsMinusTwiceVandermondeTransposedTimesResiduals()
    {
        double[] c = { 0.5, -1.25, 0.75, 0.125 };
        double[] t = { -1.5, 0, 0.5, 2, 3.25 };
        double[] y = { 1, 2, 3, 4, 5 };
        var f = _fixture.Assembly.Method<PolyF>("Passive", "PolynomialFit");
        var g = _fixture.Assembly.Method<PolyG>("Passive", "PolynomialFitGradient");
        var gradient = new double[c.Length];
        double value = g(c, t, y, gradient);
        Check.SameBits(f(c, t, y), value, "value");
        var expected = new double[c.Length];
        double sum = 0;
        for (int i = 0; i < t.Length; i++)
        {
            double model = 0;
            for (int k = 0; k < c.Length; k++)
            {
                model += c[k] * Math.Pow(t[i], k);
            }

            double r = y[i] - model;
            sum += r * r;
            for (int k = 0; k < c.Length; k++)
            {
                expected[k] -= 2 * r * Math.Pow(t[i], k);
            }
        }

        Check.Close(sum, value, 1e-14, 1e-14, "f");
        Check.Close(expected, gradient, 1e-13, 1e-13, "∂f/∂c");
    }

    [Fact]
    public void OnlyTheLocalsThatDependOnTheVariableGetRunningDerivatives()
    {
        string text = _fixture.Run.Source("Passive.Coupled.g.cs");
        Assert.DoesNotContain("dP_dX", text, StringComparison.Ordinal);
        Assert.DoesNotContain("dQ_dX", text, StringComparison.Ordinal);
        Assert.Contains("dU_dX", text, StringComparison.Ordinal);
        Assert.Contains("dV_dX", text, StringComparison.Ordinal);
    }

    /// <summary>
    /// After n steps v = n·x, u = Σ_{k&lt;n} k·x = x·n(n−1)/2 and q = F(n+2) (Fibonacci, F(1) = F(2) = 1; by hand), so
    /// f = x·n(n−1)/2·F(n+2), f' = n(n−1)/2·F(n+2), f'' = 0.
    /// </summary>
    [Theory]
    [InlineData(0)]
    [InlineData(1)]
    [InlineData(7)]
    [InlineData(30)]
    public void CoupledRecurrenceMatchesTheClosedForm(int n)
    {
        const double x = 0.7;
        double fibPrevious = 1, fib = 1; // F(1), F(2)
        for (int k = 0; k < n; k++)
        {
            (fibPrevious, fib) = (fib, fibPrevious + fib);
        }

        double slope = n * (n - 1) / 2.0 * fib;
        var f = _fixture.Assembly.Method<CoupledF>("Passive", "Coupled");
        var h = _fixture.Assembly.Method<CoupledH>("Passive", "CoupledHessian");
        var gradient = new double[1];
        var hessian = new double[] { double.NaN };
        double value = h(x, n, gradient, hessian);
        Check.SameBits(f(x, n), value, "value");
        Check.Close(slope * x, value, 1e-15, 1e-15, "f");
        Check.Close(slope, gradient[0], 1e-15, 1e-15, "f'");
        Assert.Equal(0.0, hessian[0]);
    }
}
