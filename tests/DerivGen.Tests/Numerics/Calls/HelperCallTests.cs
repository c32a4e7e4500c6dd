using System;
using System.Linq;
using DerivGen.Tests.Infrastructure;
using Xunit;

namespace DerivGen.Tests.Numerics.Calls;

public sealed class HelperCallFixture : CompiledFixture
{
    // Helpers that are not marked [Differentiate], called from marked methods. The data are invented.
    public const string Source = """
        using System;
        using DerivGen;

        public static partial class Fit
        {
            public static readonly double[] T = { 0.5, 1.0, 1.5, 2.0, 3.0 };
            public static readonly double[] Y = { 1.2, 1.9, 3.1, 3.9, 6.2 };

            private static double Square(double v) => v * v;

            // Least squares through a helper, called in a loop, plus a helper of another type.
            [Differentiate(nameof(a), nameof(b))]
            public static double Loss(double a, double b)
            {
                double s = 0;
                for (int i = 0; i < T.Length; i++)
                {
                    s += Square(a * T[i] + b - Y[i]);
                }

                return s + Kernels.NormalDensity(a, 0.5, b);
            }

            // A second caller of the same helpers, gradient only.
            [Differentiate(nameof(x), Hessian = false)]
            public static double Other(double x) => Square(x) * Kernels.NormalDensity(x, 1.0, 2.0);

            // A call after a continue and a break on data: the call's arguments read data the user's code reads only
            // where it did not jump, so the generated code calls it only there too.
            [Differentiate(nameof(a), nameof(b))]
            public static double Trimmed(double a, double b, double stopAt)
            {
                double s = 0;
                for (int i = 0; i < T.Length; i++)
                {
                    if (T[i] >= stopAt)
                    {
                        break;
                    }

                    if (Y[i] < 2)
                    {
                        continue;
                    }

                    s += Square(a * T[i] + b - Y[i]);
                }

                return s;
            }

            // A helper that calls a helper, with an int parameter and a loop.
            [Differentiate]
            public static double Chain(double x) => Kernels.Power(Math.Sin(x), 3) + Kernels.Cube(x);
        }

        public static partial class Kernels
        {
            // The normal density with mean mu and standard deviation sigma.
            public static double NormalDensity(double x, double mu, double sigma)
            {
                double z = (x - mu) / sigma;
                return Math.Exp(-0.5 * z * z) / (sigma * Math.Sqrt(2 * Math.PI));
            }

            internal static double Power(double v, int n)
            {
                double p = 1;
                for (int k = 0; k < n; k++)
                {
                    p *= v;
                }

                return p;
            }

            internal static double Cube(double v) => Power(v, 3);
        }
        """;

    public HelperCallFixture()
        : base(Source)
    {
    }
}

/// <summary>Calls of unmarked static helpers: derivatives generated once per helper and used by the chain rule.</summary>
public sealed class HelperCallTests : IClassFixture<HelperCallFixture>
{
    private static readonly double[] T = { 0.5, 1.0, 1.5, 2.0, 3.0 };
    private static readonly double[] Y = { 1.2, 1.9, 3.1, 3.9, 6.2 };
    private readonly HelperCallFixture _fixture;

    public HelperCallTests(HelperCallFixture fixture) => _fixture = fixture;

    [Fact]
    public void EachHelperGetsOneFileWhateverTheNumberOfCallers()
    {
        Assert.Equal(
            new[] { "Fit.Chain.g.cs", "Fit.Loss.g.cs", "Fit.Other.g.cs", "Fit.Square.g.cs", "Fit.Trimmed.g.cs", "Kernels.Cube.g.cs", "Kernels.NormalDensity.g.cs", "Kernels.Power.g.cs" },
            _fixture.Run.HintNames);

        // Loss needs the helpers' Hessians, Other only their gradients: the one file has both.
        Assert.Contains("SquareHessian(", _fixture.Run.Source("Fit.Square.g.cs"), StringComparison.Ordinal);
        Assert.Contains("generated because a [Differentiate] method calls it", _fixture.Run.Source("Kernels.NormalDensity.g.cs"), StringComparison.OrdinalIgnoreCase);
    }

    [Theory]
    [InlineData(1.9, 0.4)]
    [InlineData(2.2, 0.8)]
    public void LeastSquaresThroughHelpers(double a, double b)
    {
        // Σ (a t + b − y)² + φ(a; 0.5, b), φ the normal density (standard results, e.g. any statistics text):
        // ∂φ/∂x = −z φ / σ, ∂φ/∂σ = (z² − 1) φ / σ, with z = (x − μ)/σ; second derivatives:
        // ∂²φ/∂x² = (z² − 1) φ / σ², ∂²φ/∂x∂σ = z (3 − z²) φ / σ², ∂²φ/∂σ² = (z⁴ − 5 z² + 2) φ / σ².
        double z = (a - 0.5) / b;
        double phi = Math.Exp(-0.5 * z * z) / (b * Math.Sqrt(2 * Math.PI));
        double ga = T.Select((t, i) => 2 * (a * t + b - Y[i]) * t).Sum() + (-z * phi / b);
        double gb = T.Select((t, i) => 2 * (a * t + b - Y[i])).Sum() + ((z * z - 1) * phi / b);
        double haa = T.Sum(t => 2 * t * t) + ((z * z - 1) * phi / (b * b));
        double hab = T.Sum(t => 2 * t) + (z * (3 - (z * z)) * phi / (b * b));
        double hbb = (2.0 * T.Length) + ((Math.Pow(z, 4) - (5 * z * z) + 2) * phi / (b * b));
        Verify.At(Probe.Load(_fixture.Assembly, "Fit", "Loss", 2), new[] { a, b }, new[] { ga, gb }, new[] { haa, hab, hab, hbb }, "Loss");
    }

    [Theory]
    [InlineData(0.3)]
    [InlineData(-1.7)]
    public void SecondCallerGradientOnly(double x)
    {
        // x² φ(x; 1, 2): d/dx = 2x φ + x² (−z φ / σ), z = (x − 1)/2, σ = 2.
        double z = (x - 1) / 2, phi = Math.Exp(-0.5 * z * z) / (2 * Math.Sqrt(2 * Math.PI));
        double d1 = (2 * x * phi) + (x * x * (-z * phi / 2));
        Verify.At(Probe.Load(_fixture.Assembly, "Fit", "Other", 1, hessian: false), new[] { x }, new[] { d1 }, null, "Other");
    }

    [Theory]
    [InlineData(1.9, 0.4, 2.5)]
    [InlineData(2.2, 0.8, 10.0)]
    public void HelperCalledOnlyWhereTheLoopDidNotJump(double a, double b, double stopAt)
    {
        // Σ over the points before the first t ≥ stopAt with y ≥ 2 of (a t + b − y)².
        int[] kept = Enumerable.Range(0, T.Length).TakeWhile(i => T[i] < stopAt).Where(i => Y[i] >= 2).ToArray();
        double ga = kept.Sum(i => 2 * (a * T[i] + b - Y[i]) * T[i]), gb = kept.Sum(i => 2 * (a * T[i] + b - Y[i]));
        double haa = kept.Sum(i => 2 * T[i] * T[i]), hab = kept.Sum(i => 2 * T[i]), hbb = 2.0 * kept.Length;
        var f = _fixture.Assembly.Method<F3>("Fit", "Trimmed");
        var g = _fixture.Assembly.Method<G3>("Fit", "TrimmedGradient");
        var h = _fixture.Assembly.Method<H3>("Fit", "TrimmedHessian");
        Probe probe = Probe.Of((F2)((p, q) => f(p, q, stopAt)), (G2)((p, q, gr) => g(p, q, stopAt, gr)), (H2)((p, q, gr, he) => h(p, q, stopAt, gr, he)));
        Verify.At(probe, new[] { a, b }, new[] { ga, gb }, new[] { haa, hab, hab, hbb }, $"Trimmed(stopAt {stopAt})");
    }

    [Theory]
    [InlineData(0.7)]
    [InlineData(-2.1)]
    public void HelperCallingAHelper(double x)
    {
        // sin³x + x³: 3 sin²x cos x + 3x², and 6 sin x cos²x − 3 sin³x + 6x.
        double s = Math.Sin(x), c = Math.Cos(x);
        double d1 = (3 * s * s * c) + (3 * x * x);
        double d2 = (6 * s * c * c) - (3 * s * s * s) + (6 * x);
        Verify.At(Probe.Load(_fixture.Assembly, "Fit", "Chain", 1), new[] { x }, new[] { d1 }, new[] { d2 }, "Chain");
    }

    private delegate double F3(double a, double b, double c);

    private delegate double G3(double a, double b, double c, Span<double> gradient);

    private delegate double H3(double a, double b, double c, Span<double> gradient, Span<double> hessian);
}
