using System;
using DerivGen.Tests.Infrastructure;
using Xunit;

namespace DerivGen.Tests.Numerics.Methods;

public sealed class IndexFromEndFixture : CompiledFixture
{
    // Index-from-end reads of data (arrays, spans, fields) and of a vector of variables. The scenarios and their
    // numbers are invented for these tests.
    public const string Source = """
        using System;
        using DerivGen;

        public static partial class FromEnd
        {
            private static readonly double[] Weights = { 0.5, 1.5, 2.0 };

            // The last sample of t and the second-to-last of y, a data array and a data span.
            [Differentiate(nameof(a), nameof(b))]
            public static double Tail(double a, double b, double[] t, ReadOnlySpan<double> y)
            {
                double r = a * Math.Exp(-b * t[^1]) - y[^2];
                return Weights[^1] * r * r;
            }

            // ^k with k a parameter, and ^0 when k is 0 (out of range, as in C#).
            [Differentiate(nameof(a))]
            public static double FromEndBy(double a, double[] t, int k) => a * t[^k];

            // A vector of variables read from its end: x[^1] and x[^2].
            [Differentiate(nameof(x))]
            public static double LastTwo(double[] x) => x[^1] * x[^1] * x[^2] + x[0];
        }
        """;

    public IndexFromEndFixture()
        : base(Source)
    {
    }
}

public sealed class IndexFromEndTests : IClassFixture<IndexFromEndFixture>
{
    private readonly IndexFromEndFixture _fixture;

    public IndexFromEndTests(IndexFromEndFixture fixture) => _fixture = fixture;

    private delegate double TailF(double a, double b, double[] t, ReadOnlySpan<double> y);

    private delegate double TailG(double a, double b, double[] t, ReadOnlySpan<double> y, Span<double> gradient);

    private delegate double TailH(double a, double b, double[] t, ReadOnlySpan<double> y, Span<double> gradient, Span<double> hessian);

    private delegate double ByF(double a, double[] t, int k);

    private delegate double ByG(double a, double[] t, int k, Span<double> gradient);

    private delegate double VecF(double[] x);

    private delegate double VecG(double[] x, Span<double> gradient);

    [Theory]
    [InlineData(2.0, 0.3)]
    [InlineData(-1.5, 1.1)]
    public void ReadsFromTheEndOfDataAsCSharpDoes(double a, double b)
    {
        double[] t = { 0.25, 1.0, 1.75 };
        double[] y = { 0.9, 0.6, 0.4, 0.1 };
        var f = _fixture.Assembly.Method<TailF>("FromEnd", "Tail");
        var g = _fixture.Assembly.Method<TailG>("FromEnd", "TailGradient");
        var h = _fixture.Assembly.Method<TailH>("FromEnd", "TailHessian");

        // f = W r², r = a e^(−b T) − Y with T = t[^1] = 1.75, Y = y[^2] = 0.4, W = Weights[^1] = 2 (plain calculus):
        //   f_a = 2W r e^(−bT),  f_b = −2W r a T e^(−bT),
        //   f_aa = 2W e^(−2bT),  f_ab = 2W (−a T e^(−2bT) − r T e^(−bT)),  f_bb = 2W (a² T² e^(−2bT) + r a T² e^(−bT)).
        const double T = 1.75, Y = 0.4, W = 2.0;
        double e = Math.Exp(-b * T), r = a * e - Y;
        double[] grad = { 2 * W * r * e, -2 * W * r * a * T * e };
        double fab = 2 * W * (-a * T * e * e - r * T * e);
        double[] hess = { 2 * W * e * e, fab, fab, 2 * W * (a * a * T * T * e * e + r * a * T * T * e) };

        double value = f(a, b, t, y);
        var gradient = new double[2];
        Assert.Equal(BitConverter.DoubleToInt64Bits(value), BitConverter.DoubleToInt64Bits(g(a, b, t, y, gradient)));
        var gradient2 = new double[2];
        var hessian = new double[4];
        Assert.Equal(BitConverter.DoubleToInt64Bits(value), BitConverter.DoubleToInt64Bits(h(a, b, t, y, gradient2, hessian)));
        for (int i = 0; i < 2; i++)
        {
            Assert.Equal(grad[i], gradient[i], 1e-12 * Math.Max(1, Math.Abs(grad[i])));
            Assert.Equal(grad[i], gradient2[i], 1e-12 * Math.Max(1, Math.Abs(grad[i])));
        }

        for (int i = 0; i < 4; i++)
        {
            Assert.Equal(hess[i], hessian[i], 1e-12 * Math.Max(1, Math.Abs(hess[i])));
        }
    }

    [Fact]
    public void AnIndexFromEndByAParameterReadsTheSameElement()
    {
        double[] t = { 3.0, 5.0, 7.0 };
        var f = _fixture.Assembly.Method<ByF>("FromEnd", "FromEndBy");
        var g = _fixture.Assembly.Method<ByG>("FromEnd", "FromEndByGradient");
        for (int k = 1; k <= 3; k++)
        {
            // f = a·t[n − k]: f_a = t[n − k].
            var gradient = new double[1];
            Assert.Equal(BitConverter.DoubleToInt64Bits(f(1.25, t, k)), BitConverter.DoubleToInt64Bits(g(1.25, t, k, gradient)));
            Assert.Equal(t[t.Length - k], gradient[0]);
        }
    }

    [Theory]
    [InlineData(0)]
    [InlineData(4)]
    [InlineData(-1)]
    public void AnIndexFromEndOutOfRangeThrowsAsTheMethodDoes(int k)
    {
        // ^0 is t[t.Length], past the end; ^4 of three elements is t[-1]; C# throws IndexOutOfRangeException for both.
        double[] t = { 3.0, 5.0, 7.0 };
        var f = _fixture.Assembly.Method<ByF>("FromEnd", "FromEndBy");
        var g = _fixture.Assembly.Method<ByG>("FromEnd", "FromEndByGradient");
        Exception user = Assert.ThrowsAny<Exception>(() => f(1.0, t, k));
        Exception generated = Assert.ThrowsAny<Exception>(() => g(1.0, t, k, new double[1]));
        Assert.Equal(user.GetType(), generated.GetType());
        if (k is 0 or 4)
        {
            Assert.IsType<IndexOutOfRangeException>(generated);
        }
    }

    [Theory]
    [InlineData(1.5, -0.5, 2.0)]
    [InlineData(0.3, 1.2, -0.7)]
    public void AVectorOfVariablesReadFromItsEnd(double x0, double x1, double x2)
    {
        // f = x2² x1 + x0 (x[^1] = x2, x[^2] = x1): ∇f = (1, x2², 2 x1 x2) (plain calculus).
        double[] x = { x0, x1, x2 };
        var f = _fixture.Assembly.Method<VecF>("FromEnd", "LastTwo");
        var g = _fixture.Assembly.Method<VecG>("FromEnd", "LastTwoGradient");
        var gradient = new double[3];
        Assert.Equal(BitConverter.DoubleToInt64Bits(f(x)), BitConverter.DoubleToInt64Bits(g(x, gradient)));
        double[] expected = { 1, x2 * x2, 2 * x1 * x2 };
        for (int i = 0; i < 3; i++)
        {
            Assert.Equal(expected[i], gradient[i], 1e-14);
        }
    }
}
