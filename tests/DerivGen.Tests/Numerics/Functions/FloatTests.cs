using System;
using DerivGen.Tests.Infrastructure;
using Xunit;

namespace DerivGen.Tests.Numerics.Functions;

public sealed class FloatFixture : CompiledFixture
{
    public const string Source = """
        using System;
        using DerivGen;

        namespace Floats;

        public static partial class Single
        {
            [Differentiate]
            public static float Wave(float x, float y) => MathF.Sin(x) * MathF.Exp(0.5f * y) + x * y * y;

            [Differentiate]
            public static float Radial(float x) => float.Sqrt(1f + x * x);
        }
        """;

    public FloatFixture()
        : base(Source)
    {
    }
}

/// <summary>float methods: float results and Span&lt;float&gt; buffers.</summary>
public sealed class FloatTests : IClassFixture<FloatFixture>
{
    /// <summary>
    /// The generated code computes in float (eps = 6e-8); the closed forms are evaluated in double. A handful of
    /// float operations each rounding by half an ulp stays well inside 1e-5 relative (common practice).
    /// </summary>
    private const double FloatRelative = 1e-5;

    private readonly FloatFixture _fixture;

    public FloatTests(FloatFixture fixture) => _fixture = fixture;

    [Theory]
    [InlineData(0.7f, -0.4f)]
    [InlineData(-2.1f, 1.3f)]
    public void WaveInFloat(float x, float y)
    {
        var f = _fixture.Assembly.Method<F2f>("Floats.Single", "Wave");
        var g = _fixture.Assembly.Method<G2f>("Floats.Single", "WaveGradient");
        var h = _fixture.Assembly.Method<H2f>("Floats.Single", "WaveHessian");
        var grad = new float[2];
        var grad2 = new float[2];
        var hess = new float[4];
        float value = f(x, y);
        Check.SameBits(value, g(x, y, grad), "WaveGradient value");
        Check.SameBits(value, h(x, y, grad2, hess), "WaveHessian value");
        Check.SameBits(hess[1], hess[2], "Hessian symmetry");

        // f = sin(x) e^(y/2) + xy^2 (plain calculus; A&S §4.2-4.3 for sin' and exp'):
        // f_x = cos x e^(y/2) + y^2, f_y = sin x e^(y/2)/2 + 2xy,
        // f_xx = -sin x e^(y/2), f_xy = cos x e^(y/2)/2 + 2y, f_yy = sin x e^(y/2)/4 + 2x.
        double dx = x, dy = y, e = Math.Exp(dy / 2);
        double[] expectedGrad = { Math.Cos(dx) * e + dy * dy, Math.Sin(dx) * e / 2 + 2 * dx * dy };
        double fxy = Math.Cos(dx) * e / 2 + 2 * dy;
        double[] expectedHess = { -Math.Sin(dx) * e, fxy, fxy, Math.Sin(dx) * e / 4 + 2 * dx };
        for (int i = 0; i < 2; i++)
        {
            Check.Close(expectedGrad[i], grad[i], FloatRelative, 1e-6, $"gradient[{i}]");
            Check.Close(expectedGrad[i], grad2[i], FloatRelative, 1e-6, $"MHessian gradient[{i}]");
        }

        for (int i = 0; i < 4; i++)
        {
            Check.Close(expectedHess[i], hess[i], FloatRelative, 1e-6, $"hessian[{i}]");
        }
    }

    [Theory]
    [InlineData(0.75f)]
    [InlineData(-3f)]
    public void RadialInFloat(float x)
    {
        var f = _fixture.Assembly.Method<F1f>("Floats.Single", "Radial");
        var h = _fixture.Assembly.Method<H1f>("Floats.Single", "RadialHessian");
        var grad = new float[1];
        var hess = new float[1];
        Check.SameBits(f(x), h(x, grad, hess), "RadialHessian value");

        // r = sqrt(1 + x^2): r' = x / r, r'' = 1 / r^3 (power rule, plain calculus).
        double r = Math.Sqrt(1 + (double)x * x);
        Check.Close(x / r, grad[0], FloatRelative, 1e-6, "gradient");
        Check.Close(1 / (r * r * r), hess[0], FloatRelative, 1e-6, "hessian");
    }

    [Fact]
    public void ShortFloatSpanThrows()
    {
        var g = _fixture.Assembly.Method<G2f>("Floats.Single", "WaveGradient");
        var e = Assert.Throws<ArgumentException>(() => g(1f, 2f, new float[1]));
        Assert.Equal("gradient", e.ParamName);
    }
}
