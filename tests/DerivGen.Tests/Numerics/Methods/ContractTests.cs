using System;
using System.Linq;
using DerivGen.Tests.Infrastructure;
using Xunit;

namespace DerivGen.Tests.Numerics.Methods;

public sealed class ContractFixture : CompiledFixture
{
    public const string Source = """
        using System;
        using DerivGen;

        namespace Contracts;

        public static partial class Losses
        {
            [Differentiate]
            public static double Coupled(double x, double y, double z) =>
                Math.Sin(x * y) * Math.Exp(y - z) + x * x * z / (1 + y * y) + Math.Sqrt(1 + x * x + z * z) * Math.Atan(y * z);

            [Differentiate(Hessian = false)]
            public static double GradientOnly(double x, double y) => x * x * y + Math.Cos(y);
        }
        """;

    public ContractFixture()
        : base(Source)
    {
    }
}

/// <summary>The calling contract of the generated methods.</summary>
public sealed class ContractTests : IClassFixture<ContractFixture>
{
    private const string Type = "Contracts.Losses";
    private const double Sentinel = 12345.678;
    private readonly ContractFixture _fixture;

    public ContractTests(ContractFixture fixture) => _fixture = fixture;

    [Theory]
    [InlineData(0.3, -1.1, 0.7)]
    [InlineData(-2.0, 0.5, 1.9)]
    [InlineData(1e-3, 4.0, -3.0)]
    public void HessianIsExactlySymmetricAndEverythingMatchesFiniteDifferences(double x, double y, double z)
    {
        // No closed form written out: MathNet's finite differences are the reference here; Verify.At checks exact
        // (bitwise) symmetry of the Hessian and the bit-identical value.
        Verify.At(Probe.Load(_fixture.Assembly, Type, "Coupled", 3), new[] { x, y, z }, gradient: null, hessian: null, "Coupled");
    }

    [Theory]
    [InlineData(0)]
    [InlineData(2)]
    public void GradientShorterThanNThrowsBeforeWriting(int length)
    {
        var g = _fixture.Assembly.Method<G3>(Type, "CoupledGradient");
        double[] gradient = Enumerable.Repeat(Sentinel, length).ToArray();
        var e = Assert.Throws<ArgumentException>(() => g(0.3, 0.4, 0.5, gradient));
        Assert.Equal("gradient", e.ParamName);
        Assert.All(gradient, v => Assert.Equal(Sentinel, v));
    }

    [Fact]
    public void HessianMethodWithShortGradientThrowsBeforeWriting()
    {
        var h = _fixture.Assembly.Method<H3>(Type, "CoupledHessian");
        double[] gradient = { Sentinel, Sentinel };
        double[] hessian = Enumerable.Repeat(Sentinel, 9).ToArray();
        var e = Assert.Throws<ArgumentException>(() => h(0.3, 0.4, 0.5, gradient, hessian));
        Assert.Equal("gradient", e.ParamName);
        Assert.All(gradient, v => Assert.Equal(Sentinel, v));
        Assert.All(hessian, v => Assert.Equal(Sentinel, v));
    }

    [Theory]
    [InlineData(0)]
    [InlineData(3)]
    [InlineData(8)]
    public void HessianShorterThanNSquaredThrowsBeforeWriting(int length)
    {
        var h = _fixture.Assembly.Method<H3>(Type, "CoupledHessian");
        double[] gradient = { Sentinel, Sentinel, Sentinel };
        double[] hessian = Enumerable.Repeat(Sentinel, length).ToArray();
        var e = Assert.Throws<ArgumentException>(() => h(0.3, 0.4, 0.5, gradient, hessian));
        Assert.Equal("hessian", e.ParamName);
        Assert.All(gradient, v => Assert.Equal(Sentinel, v));
        Assert.All(hessian, v => Assert.Equal(Sentinel, v));
    }

    [Fact]
    public void LongerSpansAreAccepted()
    {
        var h = _fixture.Assembly.Method<H3>(Type, "CoupledHessian");
        var gradient = new double[5];
        var hessian = new double[12];
        double value = h(0.3, 0.4, 0.5, gradient, hessian);
        Check.SameBits(_fixture.Assembly.Method<F3>(Type, "Coupled")(0.3, 0.4, 0.5), value, "value");
    }

    [Fact]
    public void HessianFalseEmitsNoHessianMethod()
    {
        Assert.True(_fixture.Assembly.HasMethod(Type, "GradientOnlyGradient"));
        Assert.False(_fixture.Assembly.HasMethod(Type, "GradientOnlyHessian"), "Hessian = false must not generate GradientOnlyHessian");
        Assert.DoesNotContain("GradientOnlyHessian", _fixture.Run.Source("Contracts.Losses.GradientOnly.g.cs"));

        // f = x^2 y + cos y: grad (2xy, x^2 - sin y) (plain calculus).
        Probe p = Probe.Load(_fixture.Assembly, Type, "GradientOnly", 2, hessian: false);
        Verify.At(p, new[] { 1.5, -0.5 }, new[] { 2 * 1.5 * -0.5, 1.5 * 1.5 - Math.Sin(-0.5) }, hessian: null, "GradientOnly");
    }

    [Fact]
    public void GeneratedFilesHaveTheSpecifiedHintNamesAndDocumentation()
    {
        Assert.Equal(new[] { "Contracts.Losses.Coupled.g.cs", "Contracts.Losses.GradientOnly.g.cs" }, _fixture.Run.HintNames);
        string text = _fixture.Run.Source("Contracts.Losses.Coupled.g.cs");
        Assert.StartsWith("//", text);
        Assert.Contains("/// <summary>", text);
        Assert.Contains("CoupledGradient(", text);
        Assert.Contains("CoupledHessian(", text);
        Assert.DoesNotContain("\r", text);
    }
}
