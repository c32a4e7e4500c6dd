using System;
using DerivGen.Tests.Infrastructure;
using Xunit;

namespace DerivGen.Tests.Numerics.Functions;

public sealed class ConventionFixture : CompiledFixture
{
    public const string Source = """
        using System;
        using DerivGen;

        namespace Conventions;

        public static partial class NonSmooth
        {
            [Differentiate] public static double Abs(double x) => Math.Abs(x);
            [Differentiate] public static double Max(double x, double y) => Math.Max(x, y);
            [Differentiate] public static double Min(double x, double y) => Math.Min(x, y);
            [Differentiate] public static double Clamp(double x) => Math.Clamp(x, -1.0, 2.0);
            [Differentiate] public static double ClampAll(double x, double lo, double hi) => Math.Clamp(x, lo, hi);
            [Differentiate] public static double Steps(double x) =>
                x * (Math.Sign(x) + Math.Floor(x) + Math.Ceiling(x) + Math.Round(x) + Math.Truncate(x));
            [Differentiate] public static double Sqrt(double x) => Math.Sqrt(x);
            [Differentiate] public static double Log(double x) => Math.Log(x);
        }
        """;

    public ConventionFixture()
        : base(Source)
    {
    }
}

/// <summary>The conventions of the spec at non-smooth points and domain edges.</summary>
public sealed class ConventionTests : IClassFixture<ConventionFixture>
{
    private const string Type = "Conventions.NonSmooth";
    private readonly ConventionFixture _fixture;

    public ConventionTests(ConventionFixture fixture) => _fixture = fixture;

    private Probe Load(string method, int n) => Probe.Load(_fixture.Assembly, Type, method, n);

    [Theory]
    [InlineData(-2.0, -1.0)]
    [InlineData(3.0, 1.0)]
    [InlineData(0.0, 0.0)] // the convention Abs'(0) = 0
    public void AbsHasSlopeSignXAndZeroAtZero(double x, double slope)
    {
        Verify.At(Load("Abs", 1), new[] { x }, new[] { slope }, new[] { 0.0 }, "Abs", oracle: x != 0);
    }

    [Fact]
    public void AbsAtNegativeZeroIsZeroToo()
    {
        // xunit treats 0.0 and -0.0 as the same InlineData, so negative zero gets its own test.
        Verify.At(Load("Abs", 1), new[] { -0.0 }, new[] { 0.0 }, new[] { 0.0 }, "Abs", oracle: false);
    }

    [Theory]
    [InlineData(2.0, 1.0, 1.0, 0.0)]
    [InlineData(1.0, 2.0, 0.0, 1.0)]
    [InlineData(1.5, 1.5, 1.0, 0.0)] // tie: the first argument's derivative
    public void MaxTakesTheLargerArgumentAndTheFirstOnTies(double x, double y, double gx, double gy)
    {
        Verify.At(Load("Max", 2), new[] { x, y }, new[] { gx, gy }, new double[4], "Max", oracle: x != y);
    }

    [Theory]
    [InlineData(2.0, 1.0, 0.0, 1.0)]
    [InlineData(1.0, 2.0, 1.0, 0.0)]
    [InlineData(1.5, 1.5, 1.0, 0.0)] // tie: the first argument's derivative
    public void MinTakesTheSmallerArgumentAndTheFirstOnTies(double x, double y, double gx, double gy)
    {
        Verify.At(Load("Min", 2), new[] { x, y }, new[] { gx, gy }, new double[4], "Min", oracle: x != y);
    }

    [Theory]
    [InlineData(0.5, 1.0)]
    [InlineData(-3.0, 0.0)]
    [InlineData(5.0, 0.0)]
    [InlineData(-1.0, 1.0)] // at a bound: x's derivative
    [InlineData(2.0, 1.0)]
    public void ClampWithConstantBounds(double x, double slope)
    {
        Verify.At(Load("Clamp", 1), new[] { x }, new[] { slope }, new[] { 0.0 }, "Clamp", oracle: x is not -1.0 and not 2.0);
    }

    [Theory]
    [InlineData(0.5, 0.0, 1.0, 1.0, 0.0, 0.0)]
    [InlineData(-0.5, 0.0, 1.0, 0.0, 1.0, 0.0)]
    [InlineData(1.5, 0.0, 1.0, 0.0, 0.0, 1.0)]
    [InlineData(0.0, 0.0, 1.0, 1.0, 0.0, 0.0)] // x on the lower bound: x's derivative
    [InlineData(1.0, 0.0, 1.0, 1.0, 0.0, 0.0)] // x on the upper bound: x's derivative
    public void ClampWithVariableBounds(double x, double lo, double hi, double gx, double glo, double ghi)
    {
        Verify.At(Load("ClampAll", 3), new[] { x, lo, hi }, new[] { gx, glo, ghi }, new double[9], "ClampAll", oracle: x != lo && x != hi);
    }

    [Theory]
    [InlineData(1.3)]
    [InlineData(-2.6)]
    public void SignFloorCeilingRoundTruncateHaveDerivativeZero(double x)
    {
        // f = x * k(x) with k piecewise constant; with k' = 0 by convention, f' = k(x) and f'' = 0.
        double k = Math.Sign(x) + Math.Floor(x) + Math.Ceiling(x) + Math.Round(x) + Math.Truncate(x);
        Verify.At(Load("Steps", 1), new[] { x }, new[] { k }, new[] { 0.0 }, "Steps");
    }

    [Fact]
    public void SqrtAndLogAtZeroFollowIeee()
    {
        // Spec: Sqrt'(0) = +inf, Log'(0) = +inf (IEEE: 0.5 / sqrt(0) = 1 / 0 = +inf).
        var g = new double[1];
        Assert.Equal(0.0, Load("Sqrt", 1).Gradient(new[] { 0.0 }, g));
        Assert.Equal(double.PositiveInfinity, g[0]);
        Assert.Equal(double.NegativeInfinity, Load("Log", 1).Gradient(new[] { 0.0 }, g));
        Assert.Equal(double.PositiveInfinity, g[0]);
    }
}
