using System;
using System.Collections.Generic;
using System.Linq;
using DerivGen.Generator.Differentiation;
using DerivGen.Generator.Model;
using DerivGen.Generator.Symbolic;
using DerivGen.Tests.Infrastructure;
using Xunit;

namespace DerivGen.Tests.Passes;

public sealed class SinCosFixture : CompiledFixture
{
    // A planar two-link arm's squared miss distance (invented link lengths and target) in double and float: the value
    // reads cos and sin of both joint angles, the gradient the other one of each pair, so the generated code computes
    // each pair with one SinCos call.
    public const string Source = """
        using System;
        using DerivGen;

        public static partial class Arm
        {
            [Differentiate]
            public static double Miss(double q1, double q2)
            {
                double ex = 0.8 * Math.Cos(q1) + 0.5 * Math.Cos(q1 + q2) - 0.9;
                double ey = 0.8 * Math.Sin(q1) + 0.5 * Math.Sin(q1 + q2) - 0.4;
                return ex * ex + ey * ey;
            }

            [Differentiate]
            public static float MissSingle(float q1, float q2)
            {
                float ex = 0.8f * MathF.Cos(q1) + 0.5f * MathF.Cos(q1 + q2) - 0.9f;
                float ey = 0.8f * MathF.Sin(q1) + 0.5f * MathF.Sin(q1 + q2) - 0.4f;
                return ex * ex + ey * ey;
            }
        }
        """;

    public SinCosFixture()
        : base(Source)
    {
    }
}

/// <summary>
/// One Math.SinCos call where a method needs both the sine and the cosine of one argument. The value stays bit for bit
/// the user's only if SinCos returns exactly Math.Sin and Math.Cos, which these tests check on the platform they run on.
/// </summary>
public sealed class MathCallSharingTests : IClassFixture<SinCosFixture>
{
    private readonly SinCosFixture _fixture;

    public MathCallSharingTests(SinCosFixture fixture) => _fixture = fixture;

    [Fact]
    public void SinCosIsBitForBitSinAndCos()
    {
        // Arguments over many magnitudes (random, seeded), near multiples of π/2 (where the reduction is hardest), and
        // the special values.
        var random = new Random(20261202);
        var arguments = Enumerable.Range(0, 200_000).Select(i => (random.NextDouble() - 0.5) * Math.Pow(10, random.Next(-12, 23)))
            .Concat(Enumerable.Range(-2000, 4001).Select(k => (k * Math.PI / 2) + (k % 7 * 1e-9)))
            .Concat(new[] { 0.0, -0.0, double.Epsilon, double.MaxValue, double.MinValue, double.PositiveInfinity, double.NegativeInfinity, double.NaN, 1e300 });
        foreach (double x in arguments)
        {
            (double sin, double cos) = Math.SinCos(x);
            Check.SameBits(Math.Sin(x), sin, $"Math.SinCos({Check.R(x)}).Sin");
            Check.SameBits(Math.Cos(x), cos, $"Math.SinCos({Check.R(x)}).Cos");
            float f = (float)x;
            (float sinF, float cosF) = MathF.SinCos(f);
            Check.SameBits(MathF.Sin(f), sinF, $"MathF.SinCos({f}).Sin");
            Check.SameBits(MathF.Cos(f), cosF, $"MathF.SinCos({f}).Cos");
        }
    }

    [Fact]
    public void EachPairIsOneCall()
    {
        string source = _fixture.Run.Source(_fixture.Run.HintNames.Single(h => h == "Arm.Miss.g.cs"));
        Assert.Equal(6, Count(source, "global::System.Math.SinCos(")); // q1 and q1 + q2, in MGradient, MHessian and MHessianVectorProduct
        Assert.Equal(0, Count(source, "global::System.Math.Sin(") + Count(source, "global::System.Math.Cos("));
        string single = _fixture.Run.Source(_fixture.Run.HintNames.Single(h => h == "Arm.MissSingle.g.cs"));
        Assert.Equal(6, Count(single, "global::System.MathF.SinCos("));
    }

    [Theory]
    [InlineData(0.3, 1.1)]
    [InlineData(-2.0, 0.4)]
    public void ValueIsBitForBitAndDerivativesMatchTheClosedForm(double q1, double q2)
    {
        var f = _fixture.Assembly.Method<F>("Arm", "Miss");
        var g = _fixture.Assembly.Method<G>("Arm", "MissGradient");
        var h = _fixture.Assembly.Method<H>("Arm", "MissHessian");
        var gradient = new double[2];
        var hessian = new double[4];
        Check.SameBits(f(q1, q2), g(q1, q2, gradient), "Miss value (gradient method)");
        Check.SameBits(f(q1, q2), h(q1, q2, gradient, hessian), "Miss value (Hessian method)");

        // f = ex² + ey², ex = a cos q1 + b cos(q1 + q2) − px, ey = a sin q1 + b sin(q1 + q2) − py (plain calculus):
        // ∂f/∂q1 = 2(−ex·ey' + ey·ex') with ex' = a cos q1 + b cos s, ey' = a sin q1 + b sin s, s = q1 + q2, i.e.
        // ∂f/∂q1 = 2(ey (a cos q1 + b cos s) − ex (a sin q1 + b sin s)), ∂f/∂q2 = 2 b (ey cos s − ex sin s).
        const double a = 0.8, b = 0.5;
        double s = q1 + q2;
        double ex = (a * Math.Cos(q1)) + (b * Math.Cos(s)) - 0.9, ey = (a * Math.Sin(q1)) + (b * Math.Sin(s)) - 0.4;
        double[] expected =
        {
            2 * ((ey * ((a * Math.Cos(q1)) + (b * Math.Cos(s)))) - (ex * ((a * Math.Sin(q1)) + (b * Math.Sin(s))))),
            2 * b * ((ey * Math.Cos(s)) - (ex * Math.Sin(s))),
        };
        Check.Close(expected, gradient, Check.ClosedFormRelative, 1e-15, "Miss gradient");
        Check.HessianMatchesOracle(p => f(p[0], p[1]), new[] { q1, q2 }, hessian, "Miss");
    }

    private static int Count(string text, string what)
    {
        int count = 0;
        for (int i = text.IndexOf(what, StringComparison.Ordinal); i >= 0; i = text.IndexOf(what, i + 1, StringComparison.Ordinal))
        {
            count++;
        }

        return count;
    }

    private delegate double F(double q1, double q2);


    // The pass's decision on small invented methods (x, y variables; c and d data).
    private const string Members = """
            [Differentiate(Hessian = false)]
            public static double Both(double x, double y) => Math.Sin(x) * y;

            [Differentiate(nameof(x), Hessian = false)]
            public static double SineOnly(double x, double c) => x * Math.Sin(c);

            [Differentiate(Hessian = false)]
            public static double Different(double x, double y) => Math.Sin(x) * Math.Cos(y);

            [Differentiate(nameof(x), Hessian = false)]
            public static double Guarded(double x, double[] d) => x > 0 ? Math.Sin(d[0] * x) : 0;
        """;

    private static List<(MathFunction Function, Node Argument)> Pairs(string method, bool hasSinCos = true) =>
        PassHarness.Plan(Members, method, hasSinCos: hasSinCos).SinCos.Partner.Keys.Select(n => (n.Function, n.Arguments[0])).OrderBy(p => p.Function).ToList();

    [Fact]
    public void TheSineOfTheValueAndTheCosineOfTheDerivativeArePaired()
    {
        var pairs = Pairs("Both");
        Assert.Equal(new[] { MathFunction.Sin, MathFunction.Cos }.OrderBy(f => f), pairs.Select(p => p.Function));
        Assert.Same(pairs[0].Argument, pairs[1].Argument);
        Assert.Equal(NodeKind.Parameter, pairs[0].Argument.Kind);
        Assert.Equal("x", pairs[0].Argument.Text);
    }

    [Fact]
    public void WithoutSinCosInTheCompilationNothingIsPaired() => Assert.Empty(Pairs("Both", hasSinCos: false));

    [Theory]
    [InlineData("SineOnly")]   // the cosine of c is never needed
    [InlineData("Guarded")]    // sin(d[0]·x) is evaluated only where x > 0: written inline under that condition, not in a local
    public void ASineWithoutItsCosineIsNotPaired(string method) => Assert.Empty(Pairs(method));

    [Fact]
    public void OnlyTheSameArgumentIsPaired()
    {
        // sin x and cos y are both needed with their partners (cos x in ∂/∂x, sin y in ∂/∂y): two pairs, one per argument.
        var pairs = Pairs("Different");
        Assert.Equal(4, pairs.Count);
        Assert.Equal(2, pairs.Select(p => p.Argument).Distinct().Count());
    }

    private delegate double G(double q1, double q2, Span<double> gradient);

    private delegate double H(double q1, double q2, Span<double> gradient, Span<double> hessian);
}
