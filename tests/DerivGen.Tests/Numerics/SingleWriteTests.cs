using System;
using System.Linq;
using DerivGen.Tests.Infrastructure;
using Xunit;

namespace DerivGen.Tests.Numerics;

public sealed class SingleWriteFixture : CompiledFixture
{
    // Sums over a vector of variables whose loop reads each element in one iteration only (the gradient can be assigned
    // element by element, as by hand) next to shapes where it cannot: some elements never read, elements read by two
    // iterations, a bound that is not the vector's length. All data are invented.
    public const string Source = """
        using System;
        using DerivGen;

        public static partial class Single
        {
            // The extended Rosenbrock function (Moré, Garbow & Hillstrom, ACM TOMS 7(1), 1981, problem 21).
            [Differentiate(nameof(x), Hessian = false)]
            public static double ExtendedRosenbrock(double[] x)
            {
                double f = 0;
                for (int i = 0; i < x.Length / 2; i++)
                {
                    double a = x[(2 * i) + 1] - (x[2 * i] * x[2 * i]);
                    double b = 1 - x[2 * i];
                    f += (100 * a * a) + (b * b);
                }

                return f;
            }

            // Triples, offsets written in another order and as differences.
            [Differentiate(nameof(x), Hessian = false)]
            public static double Triples(double[] x)
            {
                double f = 0;
                for (int i = 0; i < x.Length / 3; i++)
                {
                    f += x[(3 * i) + 2] * x[(i * 3) - 0] * x[3 + (3 * i) - 2];
                }

                return f;
            }

            [Differentiate(nameof(x), Hessian = false)]
            public static double Squares(double[] x)
            {
                double f = 0;
                for (int i = 0; i < x.Length; i++)
                {
                    f += x[i] * x[i];
                }

                return f;
            }

            // Only the even elements are read: the odd ones must still be cleared.
            [Differentiate(nameof(x), Hessian = false)]
            public static double EvenOnly(double[] x)
            {
                double f = 0;
                for (int i = 0; i < x.Length / 2; i++)
                {
                    f += x[2 * i] * x[2 * i];
                }

                return f;
            }

            // Every element but the ends is read by two iterations.
            [Differentiate(nameof(x), Hessian = false)]
            public static double Chain(double[] x)
            {
                double f = 0;
                for (int i = 0; i < x.Length - 1; i++)
                {
                    f += x[i] * x[i + 1];
                }

                return f;
            }

            // The bound is not the vector's length.
            [Differentiate(nameof(x), Hessian = false)]
            public static double FirstPairs(double[] x, int m)
            {
                double f = 0;
                for (int i = 0; i < m / 2; i++)
                {
                    double d = x[2 * i] - x[(2 * i) + 1];
                    f += d * d;
                }

                return f;
            }
        }
        """;

    public SingleWriteFixture()
        : base(Source)
    {
    }
}

/// <summary>
/// The gradient of a sum whose loop reads each element of the vector in exactly one iteration is assigned element by
/// element (no clear of the whole slice first); any other shape keeps the clear and the additions. Gradients are
/// checked against derivatives by hand with the output filled with NaN first, so an element neither assigned nor
/// cleared shows.
/// </summary>
public sealed class SingleWriteTests : IClassFixture<SingleWriteFixture>
{
    private readonly SingleWriteFixture _fixture;

    public SingleWriteTests(SingleWriteFixture fixture) => _fixture = fixture;

    private delegate double VF(double[] x);

    private delegate double VG(double[] x, Span<double> gradient);

    private delegate double MF(double[] x, int m);

    private delegate double MG(double[] x, int m, Span<double> gradient);

    private string Text(string method) => _fixture.Run.Source("Single." + method + ".g.cs");

    [Theory]
    [InlineData("ExtendedRosenbrock", "for (int k = 2 * (x.Length / 2); k < x.Length; k++)")]
    [InlineData("Triples", "for (int k = 3 * (x.Length / 3); k < x.Length; k++)")]
    [InlineData("Squares", "// dF_dX is not cleared")]
    public void SingleWriteShapesAssignTheGradient(string method, string clear)
    {
        string text = Text(method);
        Assert.Contains(clear, text, StringComparison.Ordinal);
        Assert.DoesNotContain(".Clear();", text, StringComparison.Ordinal);
        Assert.DoesNotContain("] += ", text, StringComparison.Ordinal);
        Assert.Contains("dF_dX[", text, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("EvenOnly")]
    [InlineData("Chain")]
    [InlineData("FirstPairs")]
    public void OtherShapesKeepTheClearAndTheAdditions(string method)
    {
        string text = Text(method);
        Assert.Contains("dF_dX.Clear();", text, StringComparison.Ordinal);
        Assert.Contains("] += ", text, StringComparison.Ordinal);
        Assert.DoesNotContain("not cleared", text, StringComparison.Ordinal);
    }

    // An invented point with distinct, non-trivial elements.
    private static double[] Point(int n) => Enumerable.Range(0, n).Select(k => Math.Round(Math.Sin((1.7 * k) + 0.3) * 1.5, 3)).ToArray();

    private double[] Gradient(string method, double[] x)
    {
        var f = _fixture.Assembly.Method<VF>("Single", method);
        var g = _fixture.Assembly.Method<VG>("Single", method + "Gradient");
        var gradient = Enumerable.Repeat(double.NaN, x.Length + 1).ToArray(); // one more than needed: must stay untouched
        double value = g(x, gradient);
        Check.SameBits(f(x), value, "value");
        Assert.True(double.IsNaN(gradient[x.Length]), "an element past the gradient was written");
        return gradient.Take(x.Length).ToArray();
    }

    /// <summary>∂f/∂x₂ᵢ = −400·x₂ᵢ·(x₂ᵢ₊₁ − x₂ᵢ²) − 2(1 − x₂ᵢ), ∂f/∂x₂ᵢ₊₁ = 200(x₂ᵢ₊₁ − x₂ᵢ²) (by hand); an odd last element is not read: 0.</summary>
    [Theory]
    [InlineData(0)]
    [InlineData(1)]
    [InlineData(2)]
    [InlineData(7)]
    [InlineData(10)]
    public void ExtendedRosenbrockGradientMatchesTheClosedForm(int n)
    {
        double[] x = Point(n);
        double[] gradient = Gradient("ExtendedRosenbrock", x);
        var expected = new double[n];
        for (int i = 0; i < n / 2; i++)
        {
            double a = x[(2 * i) + 1] - (x[2 * i] * x[2 * i]);
            expected[2 * i] = (-400 * x[2 * i] * a) - (2 * (1 - x[2 * i]));
            expected[(2 * i) + 1] = 200 * a;
        }

        Check.Close(expected, gradient, 1e-14, 1e-13, "∂f/∂x");
    }

    /// <summary>f = Σ x₃ᵢx₃ᵢ₊₁x₃ᵢ₊₂: each partial is the product of the other two of its triple (by hand); a tail of n mod 3 is 0.</summary>
    [Theory]
    [InlineData(2)]
    [InlineData(6)]
    [InlineData(8)]
    public void TriplesGradientMatchesTheClosedForm(int n)
    {
        double[] x = Point(n);
        double[] gradient = Gradient("Triples", x);
        var expected = new double[n];
        for (int i = 0; i < n / 3; i++)
        {
            expected[3 * i] = x[(3 * i) + 1] * x[(3 * i) + 2];
            expected[(3 * i) + 1] = x[3 * i] * x[(3 * i) + 2];
            expected[(3 * i) + 2] = x[3 * i] * x[(3 * i) + 1];
        }

        Check.Close(expected, gradient, 1e-15, 1e-15, "∂f/∂x");
    }

    /// <summary>Σ xᵢ²: 2x; Σ x₂ᵢ²: 2x at the even indices of the pairs, 0 elsewhere; Σ xᵢxᵢ₊₁: xₖ₋₁ + xₖ₊₁ (by hand).</summary>
    [Theory]
    [InlineData(1)]
    [InlineData(5)]
    [InlineData(8)]
    public void SquaresEvenOnlyAndChainMatchTheirClosedForms(int n)
    {
        double[] x = Point(n);
        Check.Close(x.Select(v => 2 * v).ToArray(), Gradient("Squares", x), 1e-15, 1e-15, "Squares");
        Check.Close(x.Select((v, k) => k % 2 == 0 && k < 2 * (n / 2) ? 2 * v : 0).ToArray(), Gradient("EvenOnly", x), 1e-15, 1e-15, "EvenOnly");
        Check.Close(x.Select((_, k) => (k > 0 ? x[k - 1] : 0) + (k + 1 < n ? x[k + 1] : 0)).ToArray(), Gradient("Chain", x), 1e-15, 1e-15, "Chain");
    }

    /// <summary>Σ_{i &lt; m/2} (x₂ᵢ − x₂ᵢ₊₁)²: ±2(x₂ᵢ − x₂ᵢ₊₁) on the first m/2 pairs, 0 beyond (by hand).</summary>
    [Fact]
    public void FirstPairsGradientIsZeroBeyondTheBound()
    {
        double[] x = Point(8);
        var f = _fixture.Assembly.Method<MF>("Single", "FirstPairs");
        var g = _fixture.Assembly.Method<MG>("Single", "FirstPairsGradient");
        var gradient = Enumerable.Repeat(double.NaN, 8).ToArray();
        Check.SameBits(f(x, 5), g(x, 5, gradient), "value");
        var expected = new double[8];
        for (int i = 0; i < 2; i++)
        {
            double d = x[2 * i] - x[(2 * i) + 1];
            expected[2 * i] = 2 * d;
            expected[(2 * i) + 1] = -2 * d;
        }

        Check.Close(expected, gradient, 1e-15, 1e-15, "∂f/∂x");
    }
}
