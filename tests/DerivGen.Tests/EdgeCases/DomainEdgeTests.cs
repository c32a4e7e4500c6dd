using System;
using DerivGen.Tests.Infrastructure;
using Xunit;

namespace DerivGen.Tests.EdgeCases;

public sealed class DomainEdgeFixture : CompiledFixture
{
    public const string Source = """
        using System;
        using DerivGen;

        namespace Edges;

        public static partial class At
        {
            [Differentiate] public static double Sqrt(double x) => Math.Sqrt(x);
            [Differentiate] public static double Log(double x) => Math.Log(x);
            [Differentiate] public static double Acosh(double x) => Math.Acosh(x);
            [Differentiate] public static double Asin(double x) => Math.Asin(x);
            [Differentiate] public static double Atanh(double x) => Math.Atanh(x);
            [Differentiate] public static double Atan2(double y, double x) => Math.Atan2(y, x);
            [Differentiate] public static double Hypot(double x, double y) => double.Hypot(x, y);
            [Differentiate] public static double PowBoth(double x, double y) => Math.Pow(x, y);
            [Differentiate(nameof(y))] public static double PowOfZero(double x, double y) => Math.Pow(x, y);
            [Differentiate] public static double PowHalf(double x) => Math.Pow(x, 0.5);
            [Differentiate] public static double Cube(double x) => Math.Pow(x, 3);
            [Differentiate] public static double InverseSquare(double x) => Math.Pow(x, -2);
            [Differentiate] public static double Exp(double x) => Math.Exp(x);
            [Differentiate] public static double Square(double x) => x * x;
            [Differentiate] public static double Sum(double x, double y) => x + y;
            [Differentiate] public static double Product(double x, double y) => x * y;
        }
        """;

    public DomainEdgeFixture()
        : base(Source)
    {
    }
}

/// <summary>
/// Derivatives at and near the edges of the functions' domains, overflow and NaN propagation: each test states the
/// result DerivGen gives and why it is the defensible one. The README ("Non-smooth points and domain edges") states the
/// rule: the derivative is what IEEE 754 arithmetic gives for the formula in the function table. Expected values are
/// worked out here from that formula (plain calculus and IEEE 754 rules: 1/0 = +∞, 0·∞ = NaN, 0/0 = NaN), never taken
/// from the generated code.
/// </summary>
public sealed class DomainEdgeTests : IClassFixture<DomainEdgeFixture>
{
    private const string Type = "Edges.At";
    private readonly DomainEdgeFixture _fixture;

    public DomainEdgeTests(DomainEdgeFixture fixture) => _fixture = fixture;

    private (double Value, double[] Gradient, double[] Hessian) At(string method, params double[] x)
    {
        Probe p = Probe.Load(_fixture.Assembly, Type, method, x.Length);
        var g = new double[x.Length];
        var h = new double[x.Length * x.Length];
        double value = p.Hessian!(x, new double[x.Length], h);
        Check.SameBits(value, p.Gradient(x, g), method + ": MGradient's value");
        Check.SameBits(p.Value(x), value, method + ": MHessian's value");
        return (value, g, h);
    }

    [Fact]
    public void SqrtAtZeroHasTheOneSidedLimits()
    {
        // √x at 0: value 0; (√x)' = 1/(2√x) → +∞ and (√x)'' = −1/(4x√x) → −∞ as x → 0⁺ (the only side in the domain).
        var (value, g, h) = At("Sqrt", 0.0);
        Assert.Equal(0.0, value);
        Assert.Equal(double.PositiveInfinity, g[0]);
        Assert.Equal(double.NegativeInfinity, h[0]);
    }

    [Fact]
    public void SqrtJustAboveZeroIsFiniteAndLarge()
    {
        // Near the edge the formula still holds: 1/(2√x) at x = 1e-300 is 0.5e150.
        var (_, g, h) = At("Sqrt", 1e-300);
        Check.Close(0.5 / Math.Sqrt(1e-300), g[0], 1e-15, 0, "Sqrt' at 1e-300");
        Assert.True(double.IsNegativeInfinity(h[0]) || h[0] < -1e300, "Sqrt'' at 1e-300 is huge and negative");
    }

    [Fact]
    public void LogAtZeroAndBelow()
    {
        // ln 0 = −∞, (ln x)' = 1/x = +∞ at 0⁺, (ln x)'' = −1/x² = −∞. Below 0: NaN everywhere (outside the domain).
        var (value, g, h) = At("Log", 0.0);
        Assert.Equal(double.NegativeInfinity, value);
        Assert.Equal(double.PositiveInfinity, g[0]);
        Assert.Equal(double.NegativeInfinity, h[0]);

        // Outside the domain the value is NaN, but the table's formula 1/x does not read the value and is finite:
        // the gradient is −1 at x = −1. Likewise atanh' = 1/((1−x)(1+x)) beyond ±1 and acosh' = 1/√((x−1)(x+1))
        // below −1. The README states this exception; a NaN value is the signal to check.
        (value, g, _) = At("Log", -1.0);
        Assert.True(double.IsNaN(value));
        Assert.Equal(-1.0, g[0]);

        (value, g, _) = At("Atanh", 2.0);
        Assert.True(double.IsNaN(value));
        Assert.Equal(1.0 / ((1 - 2.0) * (1 + 2.0)), g[0]);

        (value, g, _) = At("Acosh", -2.0);
        Assert.True(double.IsNaN(value));
        Assert.Equal(1.0 / Math.Sqrt((-2.0 - 1) * (-2.0 + 1)), g[0]);

        // Where the formula reads the value (√' = 1/(2√x)), the derivative is NaN too.
        (value, g, _) = At("Sqrt", -1.0);
        Assert.True(double.IsNaN(value) && double.IsNaN(g[0]));
    }

    [Fact]
    public void AcoshAtOneAndAsinAtOneAndAtanhAtOneAreInfinite()
    {
        // acosh' = 1/√((x−1)(x+1)) = 1/0 = +∞ at 1; asin' = 1/√(1−x²) = +∞ at 1; atanh' = 1/((1−x)(1+x)) = +∞ at 1.
        var (value, g, _) = At("Acosh", 1.0);
        Assert.Equal(0.0, value);
        Assert.Equal(double.PositiveInfinity, g[0]);

        (value, g, _) = At("Asin", 1.0);
        Assert.Equal(Math.PI / 2, value);
        Assert.Equal(double.PositiveInfinity, g[0]);

        (value, g, _) = At("Atanh", 1.0);
        Assert.Equal(double.PositiveInfinity, value);
        Assert.Equal(double.PositiveInfinity, g[0]);
    }

    [Fact]
    public void Atan2AtTheOriginIsNaN()
    {
        // atan2(0, 0) = 0 by IEEE/.NET convention, but the function has no limit there, so no derivative:
        // ∂/∂y = x/(x²+y²) = 0/0 = NaN and ∂/∂x = −y/(x²+y²) = NaN. NaN is the honest answer.
        var (value, g, _) = At("Atan2", 0.0, 0.0);
        Assert.Equal(0.0, value);
        Assert.True(double.IsNaN(g[0]) && double.IsNaN(g[1]), $"got ({g[0]}, {g[1]})");
    }

    [Fact]
    public void Atan2NearTheOriginFollowsTheFormula()
    {
        // At (y, x) = (1e-200, 1e-200): x² + y² underflows to 0, so the formula gives x/0 = +∞ and −y/0 = −∞ —
        // large derivatives of the right sign (the true ones are ±5e199).
        var (_, g, _) = At("Atan2", 1e-200, 1e-200);
        Assert.True(g[0] > 1e199, $"∂/∂y = {g[0]}");
        Assert.True(g[1] < -1e199, $"∂/∂x = {g[1]}");
    }

    [Fact]
    public void HypotAtTheOriginIsNaN()
    {
        // README: x/hypot(x, y) = 0/0 = NaN at (0, 0) (the cone's tip has no derivative).
        var (value, g, _) = At("Hypot", 0.0, 0.0);
        Assert.Equal(0.0, value);
        Assert.True(double.IsNaN(g[0]) && double.IsNaN(g[1]));
    }

    [Fact]
    public void PowOfZeroWithAVariableExponent()
    {
        // 0ʸ = 0 for y > 0, so mathematically ∂/∂y = 0; the table's formula xʸ ln x gives 0·(−∞) = NaN. The README
        // states this ("∂/∂y = xʸ ln x, which is NaN for x ≤ 0 even where the value is finite").
        var (value, g, _) = At("PowOfZero", 0.0, 2.0);
        Assert.Equal(0.0, value);
        Assert.True(double.IsNaN(g[0]));

        // ∂/∂x of 0ʸ: y·xʸ⁻¹ = 2·0 = 0 for y = 2 and 0.5·0^−0.5 = +∞ for y = 0.5 (the one-sided limit).
        (_, g, _) = At("PowBoth", 0.0, 2.0);
        Assert.Equal(0.0, g[0]);
        (_, g, _) = At("PowHalf", 0.0);
        Assert.Equal(double.PositiveInfinity, g[0]);
    }

    [Fact]
    public void PowOfANegativeBaseWithAConstantIntegerExponentIsFinite()
    {
        // README: the ln x term only appears for a variable exponent. (x³)' = 3x² = 12, (x³)'' = 6x = −12 at x = −2;
        // (x⁻²)' = −2x⁻³ = 0.25, (x⁻²)'' = 6x⁻⁴ = 0.375 at x = −2.
        var (value, g, h) = At("Cube", -2.0);
        Assert.Equal(-8.0, value);
        Assert.Equal(12.0, g[0]);
        Assert.Equal(-12.0, h[0]);

        (value, g, h) = At("InverseSquare", -2.0);
        Assert.Equal(0.25, value);
        Assert.Equal(0.25, g[0]);
        Assert.Equal(0.375, h[0]);
    }

    [Fact]
    public void PowOfANegativeBaseWithAVariableExponentIsNaNInTheExponentDirection()
    {
        // (−2)^3 = −8 is finite, but ∂/∂y = xʸ ln x = −8·NaN = NaN (README); ∂/∂x = y·xʸ⁻¹ = 3·4 = 12 stays finite.
        var (value, g, _) = At("PowBoth", -2.0, 3.0);
        Assert.Equal(-8.0, value);
        Assert.Equal(12.0, g[0]);
        Assert.True(double.IsNaN(g[1]));
    }

    [Fact]
    public void OverflowGivesInfinityNotNaN()
    {
        // exp(710) overflows to +∞, and so does its derivative exp(710); x² at 1e200 overflows while 2x = 2e200 does not.
        var (value, g, h) = At("Exp", 710.0);
        Assert.Equal(double.PositiveInfinity, value);
        Assert.Equal(double.PositiveInfinity, g[0]);
        Assert.Equal(double.PositiveInfinity, h[0]);

        (value, g, h) = At("Square", 1e200);
        Assert.Equal(double.PositiveInfinity, value);
        Assert.Equal(2e200, g[0]);
        Assert.Equal(2.0, h[0]);
    }

    [Fact]
    public void NaNPropagatesOnlyWhereTheFormulaReadsIt()
    {
        // x + y at x = NaN: the value is NaN, ∂/∂x = ∂/∂y = 1 (the formula does not read x or y). x·y at x = NaN:
        // ∂/∂x = y = 3 is finite and ∂/∂y = x = NaN.
        var (value, g, _) = At("Sum", double.NaN, 3.0);
        Assert.True(double.IsNaN(value));
        Assert.Equal(new[] { 1.0, 1.0 }, g);

        (value, g, _) = At("Product", double.NaN, 3.0);
        Assert.True(double.IsNaN(value));
        Assert.Equal(3.0, g[0]);
        Assert.True(double.IsNaN(g[1]));
    }
}
