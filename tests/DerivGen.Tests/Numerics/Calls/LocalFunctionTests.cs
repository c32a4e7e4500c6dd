using System;
using DerivGen.Tests.Infrastructure;
using Xunit;

namespace DerivGen.Tests.Numerics.Calls;

public sealed class LocalFunctionFixture : CompiledFixture
{
    // Local functions declared in [Differentiate] methods, inlined at each call. The constants are invented.
    public const string Source = """
        using System;
        using DerivGen;

        public static partial class Local
        {
            // A static, expression-bodied local function, called twice with different arguments.
            [Differentiate]
            public static double Static(double x, double y)
            {
                static double Sq(double u) => u * u;
                return Sq(x) + 3 * Sq(x * y);
            }

            // A local function that captures a local and a parameter.
            [Differentiate]
            public static double Capturing(double k)
            {
                double scale = 1.7 * k;
                double Model(double t) => scale * Math.Exp(-k * t);
                return Model(1) + Model(2.5);
            }

            // A block body with a local of its own (the same name as a local of the method), called twice.
            [Differentiate(Hessian = false)]
            public static double Block(double x, double y)
            {
                double m = 0.5;
                double Soft(double u, double v)
                {
                    double m = u * v;
                    m += Math.Sin(u);
                    return m / (1 + v * v);
                }

                return Soft(x, y) - (m * Soft(y, x));
            }

            // A call of a local function in the argument of another; F's local shadows the method's parameter.
            [Differentiate]
            public static double Nested(double x)
            {
                double G(double u) => Math.Sin(u) + u;
                double F(double u)
                {
                    double x = Math.Exp(u); // shadows the parameter x (C# 8 and later)
                    return x * x;
                }

                return F(G(x));
            }

            // A block body declared outside a loop and called in it, with data arguments.
            [Differentiate]
            public static double LoopBlock(double a, double b)
            {
                double Residual(double t, double y)
                {
                    double p = a * Math.Exp(-b * t);
                    double r = p - y;
                    return r * r;
                }

                double s = 0;
                for (int i = 0; i < 4; i++)
                {
                    s += Residual(0.5 * i, 1.0 / (1 + i));
                }

                return s;
            }

            // Called in a loop with the counter as argument (an int converted to the double parameter).
            [Differentiate]
            public static double InLoop(double a)
            {
                double Term(double t) => (a * t - 1) * (a * t - 1);
                double s = 0;
                for (int i = 1; i <= 3; i++)
                {
                    s += Term(i);
                }

                return s;
            }
        }
        """;

    public LocalFunctionFixture()
        : base(Source)
    {
    }
}

/// <summary>Local functions inlined at each call: gradients and Hessians against hand derivatives (plain calculus).</summary>
public sealed class LocalFunctionTests : IClassFixture<LocalFunctionFixture>
{
    private readonly LocalFunctionFixture _fixture;

    public LocalFunctionTests(LocalFunctionFixture fixture) => _fixture = fixture;

    [Fact]
    public void NoHelperFileIsGeneratedForALocalFunction() =>
        Assert.Equal(new[] { "Local.Block.g.cs", "Local.Capturing.g.cs", "Local.InLoop.g.cs", "Local.LoopBlock.g.cs", "Local.Nested.g.cs", "Local.Static.g.cs" }, _fixture.Run.HintNames);

    [Theory]
    [InlineData(0.7, -1.3)]
    [InlineData(-2.0, 0.4)]
    public void StaticExpressionBodied(double x, double y)
    {
        // x² + 3 (xy)² = x² + 3x²y²: ∂x = 2x + 6xy², ∂y = 6x²y; ∂xx = 2 + 6y², ∂xy = 12xy, ∂yy = 6x².
        double[] gradient = { (2 * x) + (6 * x * y * y), 6 * x * x * y };
        double[] hessian = { 2 + (6 * y * y), 12 * x * y, 12 * x * y, 6 * x * x };
        Verify.At(Probe.Load(_fixture.Assembly, "Local", "Static", 2), new[] { x, y }, gradient, hessian, "Static");
    }

    [Theory]
    [InlineData(0.3)]
    [InlineData(1.9)]
    public void CapturingALocalAndAParameter(double k)
    {
        // f = 1.7k (e^(−k) + e^(−2.5k)): f' = 1.7 (e^(−k) + e^(−2.5k)) − 1.7k (e^(−k) + 2.5 e^(−2.5k)),
        // f'' = −3.4 (e^(−k) + 2.5 e^(−2.5k)) + 1.7k (e^(−k) + 6.25 e^(−2.5k)).
        double e1 = Math.Exp(-k), e2 = Math.Exp(-2.5 * k);
        double d1 = (1.7 * (e1 + e2)) - (1.7 * k * (e1 + (2.5 * e2)));
        double d2 = (-3.4 * (e1 + (2.5 * e2))) + (1.7 * k * (e1 + (6.25 * e2)));
        Verify.At(Probe.Load(_fixture.Assembly, "Local", "Capturing", 1), new[] { k }, new[] { d1 }, new[] { d2 }, "Capturing");
    }

    [Theory]
    [InlineData(0.8, 1.1)]
    [InlineData(-1.4, 0.25)]
    public void BlockBodiedCalledTwiceWithDifferentArguments(double x, double y)
    {
        // f = S(x, y) − 0.5 S(y, x) with S(u, v) = (uv + sin u) / (1 + v²):
        // S_u = (v + cos u) / (1 + v²), S_v = u / (1 + v²) − 2v (uv + sin u) / (1 + v²)²;
        // ∂x f = S_u(x, y) − 0.5 S_v(y, x), ∂y f = S_v(x, y) − 0.5 S_u(y, x).
        static double Su(double u, double v) => (v + Math.Cos(u)) / (1 + (v * v));
        static double Sv(double u, double v) => (u / (1 + (v * v))) - (2 * v * ((u * v) + Math.Sin(u)) / ((1 + (v * v)) * (1 + (v * v))));
        double[] gradient = { Su(x, y) - (0.5 * Sv(y, x)), Sv(x, y) - (0.5 * Su(y, x)) };
        Verify.At(Probe.Load(_fixture.Assembly, "Local", "Block", 2, hessian: false), new[] { x, y }, gradient, null, "Block");
    }

    [Theory]
    [InlineData(0.4)]
    [InlineData(-0.9)]
    public void NestedCall(double x)
    {
        // F(G(x)) = e^(2(sin x + x)): f' = 2 (cos x + 1) f, f'' = (4 (cos x + 1)² − 2 sin x) f.
        double f = Math.Exp(2 * (Math.Sin(x) + x)), c = Math.Cos(x) + 1;
        Verify.At(Probe.Load(_fixture.Assembly, "Local", "Nested", 1), new[] { x }, new[] { 2 * c * f }, new[] { ((4 * c * c) - (2 * Math.Sin(x))) * f }, "Nested");
    }

    [Theory]
    [InlineData(1.3, 0.7)]
    [InlineData(0.4, -0.2)]
    public void BlockBodiedCalledInALoop(double a, double b)
    {
        // Σ r², r = a e^(−bt) − y, t = i/2, y = 1/(1 + i), i = 0..3: with E = e^(−bt),
        // ∂a = Σ 2r E, ∂b = −Σ 2r a t E; ∂aa = Σ 2E², ∂ab = −Σ (2a t E² + 2r t E), ∂bb = Σ (2a²t²E² + 2r a t² E).
        double ga = 0, gb = 0, haa = 0, hab = 0, hbb = 0;
        for (int i = 0; i < 4; i++)
        {
            double t = 0.5 * i, e = Math.Exp(-b * t), r = (a * e) - (1.0 / (1 + i));
            ga += 2 * r * e;
            gb -= 2 * r * a * t * e;
            haa += 2 * e * e;
            hab -= (2 * a * t * e * e) + (2 * r * t * e);
            hbb += (2 * a * a * t * t * e * e) + (2 * r * a * t * t * e);
        }

        Verify.At(Probe.Load(_fixture.Assembly, "Local", "LoopBlock", 2), new[] { a, b }, new[] { ga, gb }, new[] { haa, hab, hab, hbb }, "LoopBlock");
    }

    [Theory]
    [InlineData(0.6)]
    [InlineData(2.3)]
    public void CalledInALoop(double a)
    {
        // Σ_{i=1..3} (a i − 1)²: f' = Σ 2i (a i − 1), f'' = Σ 2i² = 28.
        double d1 = 0;
        for (int i = 1; i <= 3; i++)
        {
            d1 += 2 * i * ((a * i) - 1);
        }

        Verify.At(Probe.Load(_fixture.Assembly, "Local", "InLoop", 1), new[] { a }, new[] { d1 }, new[] { 28.0 }, "InLoop");
    }
}
