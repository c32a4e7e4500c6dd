using System;
using DerivGen.Tests.Infrastructure;
using Xunit;

namespace DerivGen.Tests.Numerics.Methods;

public sealed class LanguageFeatureFixture : CompiledFixture
{
    public const string Features = """
        using System;
        using DerivGen;

        namespace Features
        {
            public static partial class Shapes
            {
                private const double Shift = 0.75;
                private static readonly double Scale = 2.5;
                public static double Gain { get; } = 3.0;

                // Non-variable parameters of other types (int n) and double parameters not listed as variables
                // (t, y) are constants of the call; n also goes through an int -> double conversion.
                [Differentiate(nameof(a), nameof(b))]
                public static double Residual(double a, double b, double t, double y, int n) =>
                    n * (a * Math.Exp(-b * t) - y) * (a * Math.Exp(-b * t) - y);

                // const, static readonly field and static property, all read as constants.
                [Differentiate]
                public static double Constants(double x, double y) => Scale * x * x + Gain * Math.Sin(y) - Shift * x * y;

                // Locals and every compound assignment.
                [Differentiate]
                public static double Compound(double x, double y)
                {
                    double s = x * y;
                    s += Math.Sin(x);
                    s -= y / 3.0;
                    s *= x + 2.0;
                    s /= 1.0 + y * y;
                    double u = s;
                    u = u - 0.5 * x;
                    return -u;
                }

            }

            public partial class Outer
            {
                internal partial struct Inner
                {
                    // An instance method in a nested partial type.
                    [Differentiate]
                    public double Energy(double p, double q) => 0.5 * p * p + (1 - Math.Cos(q));
                }
            }
        }
        """;

    public const string GlobalNamespace = """
        using System;
        using DerivGen;

        // A type in the global namespace.
        public partial class NoNamespace
        {
            [Differentiate]
            internal static double Bowl(double x, double y) => x * x + 4 * y * y + x * y;
        }
        """;

    public LanguageFeatureFixture()
        : base(Features, GlobalNamespace)
    {
    }
}

public sealed class LanguageFeatureTests : IClassFixture<LanguageFeatureFixture>
{
    private const string Shapes = "Features.Shapes";
    private readonly LanguageFeatureFixture _fixture;

    public LanguageFeatureTests(LanguageFeatureFixture fixture) => _fixture = fixture;

    private delegate double ResidualF(double a, double b, double t, double y, int n);

    private delegate double ResidualG(double a, double b, double t, double y, int n, Span<double> gradient);

    private delegate double ResidualH(double a, double b, double t, double y, int n, Span<double> gradient, Span<double> hessian);

    [Theory]
    [InlineData(2.0, 0.3, 1.5, 1.2, 3)]
    [InlineData(-1.0, 1.1, 0.2, 0.4, 1)]
    public void NonVariableParametersAreConstants(double a, double b, double t, double y, int n)
    {
        var f = _fixture.Assembly.Method<ResidualF>(Shapes, "Residual");
        var g = _fixture.Assembly.Method<ResidualG>(Shapes, "ResidualGradient");
        var h = _fixture.Assembly.Method<ResidualH>(Shapes, "ResidualHessian");

        // f = n r^2, r = a e^(-bt) - y; r_a = e^(-bt), r_b = -a t e^(-bt);  (plain calculus)
        // f_a = 2n r r_a, f_b = 2n r r_b;
        // f_aa = 2n r_a^2;  f_ab = 2n (r_a r_b + r (-t e^(-bt)));  f_bb = 2n (r_b^2 + r a t^2 e^(-bt)).
        double e = Math.Exp(-b * t), r = a * e - y, ra = e, rb = -a * t * e;
        double[] grad = { 2 * n * r * ra, 2 * n * r * rb };
        double fab = 2 * n * (ra * rb - r * t * e);
        double[] hess = { 2 * n * ra * ra, fab, fab, 2 * n * (rb * rb + r * a * t * t * e) };

        Probe p = Probe.Of(
            (F2)((x0, x1) => f(x0, x1, t, y, n)),
            (G2)((x0, x1, gr) => g(x0, x1, t, y, n, gr)),
            (H2)((x0, x1, gr, he) => h(x0, x1, t, y, n, gr, he)));
        Verify.At(p, new[] { a, b }, grad, hess, "Residual", closedFormAbsolute: 1e-14);
    }

    [Theory]
    [InlineData(1.2, -0.4)]
    [InlineData(-3.0, 2.0)]
    public void ConstantsFieldsAndPropertiesAreReadAsConstants(double x, double y)
    {
        // f = 2.5x^2 + 3 sin y - 0.75xy (plain calculus).
        double[] grad = { 5 * x - 0.75 * y, 3 * Math.Cos(y) - 0.75 * x };
        double[] hess = { 5, -0.75, -0.75, -3 * Math.Sin(y) };
        Verify.At(Probe.Load(_fixture.Assembly, Shapes, "Constants", 2), new[] { x, y }, grad, hess, "Constants", closedFormAbsolute: 1e-14);
    }

    [Theory]
    [InlineData(0.7, 1.3)]
    [InlineData(-1.9, -0.2)]
    public void LocalsAndCompoundAssignments(double x, double y)
    {
        // f = -[(xy + sin x - y/3)(x + 2)/(1 + y^2) - x/2]. Let p = xy + sin x - y/3, q = x + 2, w = 1 + y^2:
        //   f_x = -[((y + cos x) q + p) / w - 1/2]
        //   f_y = -[(x - 1/3) q / w - p q 2y / w^2]
        // (quotient and product rules, plain calculus). The Hessian is checked against MathNet only.
        double p = x * y + Math.Sin(x) - y / 3, q = x + 2, w = 1 + y * y;
        double[] grad = { -(((y + Math.Cos(x)) * q + p) / w - 0.5), -((x - 1.0 / 3) * q / w - p * q * 2 * y / (w * w)) };
        Verify.At(Probe.Load(_fixture.Assembly, Shapes, "Compound", 2), new[] { x, y }, grad, hessian: null, "Compound", closedFormAbsolute: 1e-14);
    }

    [Theory]
    [InlineData(0.8, 0.6)]
    [InlineData(-1.0, 2.5)]
    public void InstanceMethodInANestedPartialType(double p, double q)
    {
        // H = p^2/2 + (1 - cos q) (a pendulum's energy): H_p = p, H_q = sin q, H_pp = 1, H_qq = cos q, H_pq = 0.
        Type inner = _fixture.Assembly.Type("Features.Outer+Inner");
        object instance = Activator.CreateInstance(inner)!;
        Probe probe = Probe.Load(_fixture.Assembly, "Features.Outer+Inner", "Energy", 2, target: instance);
        Verify.At(probe, new[] { p, q }, new[] { p, Math.Sin(q) }, new[] { 1, 0, 0, Math.Cos(q) }, "Outer.Inner.Energy");
        Assert.Contains("Features.Outer.Inner.Energy.g.cs", _fixture.Run.HintNames);
    }

    [Theory]
    [InlineData(1.0, -2.0)]
    [InlineData(0.25, 0.5)]
    public void TypeInTheGlobalNamespace(double x, double y)
    {
        // f = x^2 + 4y^2 + xy: grad (2x + y, 8y + x), Hessian [[2, 1], [1, 8]].
        Probe p = Probe.Load(_fixture.Assembly, "NoNamespace", "Bowl", 2);
        Verify.At(p, new[] { x, y }, new[] { 2 * x + y, 8 * y + x }, new double[] { 2, 1, 1, 8 }, "NoNamespace.Bowl");
        Assert.Contains("NoNamespace.Bowl.g.cs", _fixture.Run.HintNames);
    }

    [Fact]
    public void GeneratedMethodsKeepAccessibilityAndStaticness()
    {
        // The spec: same accessibility and static-ness as the user's method.
        const System.Reflection.BindingFlags all = System.Reflection.BindingFlags.Public | System.Reflection.BindingFlags.NonPublic | System.Reflection.BindingFlags.Static | System.Reflection.BindingFlags.Instance;
        var bowl = _fixture.Assembly.Type("NoNamespace").GetMethod("BowlGradient", all)!;
        Assert.True(bowl.IsStatic && bowl.IsAssembly, "NoNamespace.BowlGradient should be internal static");
        var energy = _fixture.Assembly.Type("Features.Outer+Inner").GetMethod("EnergyHessian", all)!;
        Assert.True(!energy.IsStatic && energy.IsPublic, "Inner.EnergyHessian should be a public instance method");
    }
}
