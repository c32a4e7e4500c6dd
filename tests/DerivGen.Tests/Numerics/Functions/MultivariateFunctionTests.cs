using System;
using DerivGen.Tests.Infrastructure;
using Xunit;

namespace DerivGen.Tests.Numerics.Functions;

public sealed class MultivariateFunctionFixture : CompiledFixture
{
    public const string Source = """
        using System;
        using DerivGen;

        namespace Features;

        public static partial class Shapes
        {
            [Differentiate] public static double PowVariable(double x, double y) => Math.Pow(x, y);
            [Differentiate] public static double Atan2(double y, double x) => Math.Atan2(y, x);
            [Differentiate] public static double Hypot(double x, double y) => double.Hypot(x, y);
            [Differentiate] public static double LogBase(double x, double b) => Math.Log(x, b);
            [Differentiate] public static double Fma(double x, double y, double z) => Math.FusedMultiplyAdd(x, y, z);
            [Differentiate] public static double Mixed3(double x, double y, double z) => x * y * z + Math.Exp(x * z) - y * y * Math.Cos(z);
        }
        """;

    public MultivariateFunctionFixture()
        : base(Source)
    {
    }
}

/// <summary>Functions of several variables (Pow with a variable exponent, Atan2, Hypot, Log with a base,
/// FusedMultiplyAdd, a three-variable mix): gradients and Hessians against closed forms and MathNet.</summary>
public sealed class MultivariateFunctionTests : IClassFixture<MultivariateFunctionFixture>
{
    private const string Shapes = "Features.Shapes";
    private readonly MultivariateFunctionFixture _fixture;

    public MultivariateFunctionTests(MultivariateFunctionFixture fixture) => _fixture = fixture;

    [Theory]
    [InlineData(1.7, 2.3)]
    [InlineData(0.4, -1.2)]
    public void PowWithAVariableExponent(double x, double y)
    {
        // f = x^y = e^(y ln x) (A&S §4.2, from memory): f_x = y x^(y-1), f_y = x^y ln x,
        // f_xx = y(y-1) x^(y-2), f_xy = x^(y-1)(1 + y ln x), f_yy = x^y ln^2 x.
        double lx = Math.Log(x);
        double[] grad = { y * Math.Pow(x, y - 1), Math.Pow(x, y) * lx };
        double fxy = Math.Pow(x, y - 1) * (1 + y * lx);
        double[] hess = { y * (y - 1) * Math.Pow(x, y - 2), fxy, fxy, Math.Pow(x, y) * lx * lx };
        Verify.At(Probe.Load(_fixture.Assembly, Shapes, "PowVariable", 2), new[] { x, y }, grad, hess, "Pow(x, y)");
    }

    [Theory]
    [InlineData(0.5, 1.5)]
    [InlineData(-2.0, -0.3)] // third quadrant, across from the branch cut of Atan2's value
    public void Atan2(double y, double x)
    {
        // d atan2(y, x) = (x dy - y dx) / (x^2 + y^2) (from memory; follows from A&S §4.4 arctan' = 1/(1+z^2)).
        // Second derivatives with r2 = x^2 + y^2: f_yy = -2xy/r2^2, f_xx = 2xy/r2^2, f_yx = (y^2 - x^2)/r2^2.
        double r2 = x * x + y * y;
        double[] grad = { x / r2, -y / r2 }; // variables in declaration order: (y, x)
        double fyx = (y * y - x * x) / (r2 * r2);
        double[] hess = { -2 * x * y / (r2 * r2), fyx, fyx, 2 * x * y / (r2 * r2) };
        Verify.At(Probe.Load(_fixture.Assembly, Shapes, "Atan2", 2), new[] { y, x }, grad, hess, "Atan2(y, x)");
    }

    [Theory]
    [InlineData(3.0, 4.0)]
    [InlineData(-1.5, 0.2)]
    public void Hypot(double x, double y)
    {
        // r = sqrt(x^2 + y^2) (plain calculus): r_x = x/r, r_y = y/r, r_xx = y^2/r^3, r_yy = x^2/r^3, r_xy = -xy/r^3.
        double r = Math.Sqrt(x * x + y * y), r3 = r * r * r;
        double[] grad = { x / r, y / r };
        double[] hess = { y * y / r3, -x * y / r3, -x * y / r3, x * x / r3 };
        Verify.At(Probe.Load(_fixture.Assembly, Shapes, "Hypot", 2), new[] { x, y }, grad, hess, "Hypot");
    }

    [Theory]
    [InlineData(5.0, 2.0)]
    [InlineData(0.3, 10.0)]
    public void LogWithABase(double x, double b)
    {
        // log_b x = ln x / ln b (A&S §4.1, change of base, from memory); with L = ln b:
        // f_x = 1/(x L), f_b = -ln x / (b L^2), f_xx = -1/(x^2 L), f_xb = -1/(x b L^2),
        // f_bb = ln x (L + 2) / (b^2 L^3).
        double lb = Math.Log(b), lx = Math.Log(x);
        double[] grad = { 1 / (x * lb), -lx / (b * lb * lb) };
        double fxb = -1 / (x * b * lb * lb);
        double[] hess = { -1 / (x * x * lb), fxb, fxb, lx * (lb + 2) / (b * b * lb * lb * lb) };
        Verify.At(Probe.Load(_fixture.Assembly, Shapes, "LogBase", 2), new[] { x, b }, grad, hess, "Log(x, b)");
    }

    [Fact]
    public void FusedMultiplyAdd()
    {
        // f = xy + z: grad (y, x, 1), Hessian [[0,1,0],[1,0,0],[0,0,0]] (plain calculus). The value must be the
        // fused (single-rounding) result; 0.1 * 10 - 1 is exactly 5.55e-17 fused and 0 unfused.
        double[] grad = { 10, 0.1, 1 };
        double[] hess = { 0, 1, 0, 1, 0, 0, 0, 0, 0 };
        Probe p = Probe.Load(_fixture.Assembly, Shapes, "Fma", 3);
        Verify.At(p, new[] { 0.1, 10.0, -1.0 }, grad, hess, "FusedMultiplyAdd", oracle: false);
        Verify.At(p, new[] { 1.5, -2.0, 0.25 }, new[] { -2.0, 1.5, 1.0 }, hess, "FusedMultiplyAdd");
        Assert.Equal(Math.FusedMultiplyAdd(0.1, 10.0, -1.0), p.Gradient(new[] { 0.1, 10.0, -1.0 }, new double[3]));
        Assert.NotEqual(0.0, p.Gradient(new[] { 0.1, 10.0, -1.0 }, new double[3]));
    }

    [Theory]
    [InlineData(0.3, -1.2, 0.8)]
    [InlineData(1.1, 0.5, -2.0)]
    public void ThreeVariablesWithMixedTerms(double x, double y, double z)
    {
        // f = xyz + e^(xz) - y^2 cos z (plain calculus):
        // f_x = yz + z e^(xz), f_y = xz - 2y cos z, f_z = xy + x e^(xz) + y^2 sin z
        // f_xx = z^2 e^(xz), f_xy = z, f_xz = y + e^(xz)(1 + xz), f_yy = -2 cos z, f_yz = x + 2y sin z,
        // f_zz = x^2 e^(xz) + y^2 cos z.
        double e = Math.Exp(x * z);
        double[] grad = { y * z + z * e, x * z - 2 * y * Math.Cos(z), x * y + x * e + y * y * Math.Sin(z) };
        double fxz = y + e * (1 + x * z), fyz = x + 2 * y * Math.Sin(z);
        double[] hess =
        {
            z * z * e, z, fxz,
            z, -2 * Math.Cos(z), fyz,
            fxz, fyz, x * x * e + y * y * Math.Cos(z),
        };
        Verify.At(Probe.Load(_fixture.Assembly, Shapes, "Mixed3", 3), new[] { x, y, z }, grad, hess, "Mixed3", closedFormAbsolute: 1e-14);
    }
}
