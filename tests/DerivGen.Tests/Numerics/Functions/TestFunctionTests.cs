using System;
using DerivGen.Tests.Infrastructure;
using Xunit;

namespace DerivGen.Tests.Numerics.Functions;

public sealed class TestFunctionFixture : CompiledFixture
{
    public const string Source = """
        using System;
        using DerivGen;

        namespace Optimization.Benchmarks;

        public static partial class TestFunctions
        {
            [Differentiate]
            public static double Rosenbrock(double x, double y) => (1 - x) * (1 - x) + 100 * (y - x * x) * (y - x * x);

            [Differentiate]
            public static double Beale(double x, double y)
            {
                double t1 = 1.5 - x + x * y;
                double t2 = 2.25 - x + x * y * y;
                double t3 = 2.625 - x + x * y * y * y;
                return t1 * t1 + t2 * t2 + t3 * t3;
            }

            [Differentiate]
            public static double Booth(double x, double y) => Math.Pow(x + 2 * y - 7, 2) + Math.Pow(2 * x + y - 5, 2);

            [Differentiate]
            public static double Himmelblau(double x, double y)
            {
                double a = x * x + y - 11;
                double b = x + y * y - 7;
                return a * a + b * b;
            }
        }
        """;

    public TestFunctionFixture()
        : base(Source)
    {
    }
}

/// <summary>Classic optimisation test functions with hand-derived gradients and Hessians.</summary>
public sealed class TestFunctionTests : IClassFixture<TestFunctionFixture>
{
    private const string Type = "Optimization.Benchmarks.TestFunctions";
    private readonly TestFunctionFixture _fixture;

    public TestFunctionTests(TestFunctionFixture fixture) => _fixture = fixture;

    [Theory]
    [InlineData(-1.2, 1.0)] // the classic starting point (Nocedal & Wright, ch. 2)
    [InlineData(0.3, -0.7)]
    [InlineData(2.0, 3.5)]
    public void RosenbrockMatchesNocedalWright(double x, double y)
    {
        // Nocedal & Wright, Numerical Optimization, 2nd ed., ch. 2, Exercise 2.1: for f = 100(y - x^2)^2 + (1 - x)^2,
        //   grad f = (-400x(y - x^2) - 2(1 - x), 200(y - x^2)),
        //   Hess f = [[1200x^2 - 400y + 2, -400x], [-400x, 200]].
        double[] grad = { -400 * x * (y - x * x) - 2 * (1 - x), 200 * (y - x * x) };
        double[] hess = { 1200 * x * x - 400 * y + 2, -400 * x, -400 * x, 200 };
        Verify.At(Probe.Load(_fixture.Assembly, Type, "Rosenbrock", 2), new[] { x, y }, grad, hess, "Rosenbrock");
    }

    [Fact]
    public void RosenbrockAtItsMinimiserHasZeroGradientAndTheTextbookHessian()
    {
        // Nocedal & Wright, ch. 2, Exercise 2.1: x* = (1, 1) is the unique minimiser and the Hessian there is
        // [[802, -400], [-400, 200]] (positive definite). All terms are small integers, so this is exact.
        Probe p = Probe.Load(_fixture.Assembly, Type, "Rosenbrock", 2);
        var g = new double[2];
        var h = new double[4];
        Assert.Equal(0.0, p.Hessian!(new[] { 1.0, 1.0 }, g, h));
        Assert.Equal(new[] { 0.0, 0.0 }, g);
        Assert.Equal(new[] { 802.0, -400.0, -400.0, 200.0 }, h);
    }

    [Theory]
    [InlineData(1.0, 1.0)]
    [InlineData(-0.5, 1.3)]
    [InlineData(3.0, 0.5)] // the global minimiser, f = 0 (Beale 1958; common practice)
    public void BealeMatchesTheHandDerivation(double x, double y)
    {
        // f = t1^2 + t2^2 + t3^2 with t1 = 1.5 - x + xy, t2 = 2.25 - x + xy^2, t3 = 2.625 - x + xy^3.
        // grad t1 = (y - 1, x), grad t2 = (y^2 - 1, 2xy), grad t3 = (y^3 - 1, 3xy^2);
        // Hess t1 = [[0, 1], [1, 0]], Hess t2 = [[0, 2y], [2y, 2x]], Hess t3 = [[0, 3y^2], [3y^2, 6xy]].
        // grad f = 2 sum t_i grad t_i;  Hess f = 2 sum (grad t_i grad t_i^T + t_i Hess t_i).
        double t1 = 1.5 - x + x * y, t2 = 2.25 - x + x * y * y, t3 = 2.625 - x + x * y * y * y;
        double[][] gt = { new[] { y - 1, x }, new[] { y * y - 1, 2 * x * y }, new[] { y * y * y - 1, 3 * x * y * y } };
        double[][] ht = { new[] { 0, 1, 1, 0.0 }, new[] { 0, 2 * y, 2 * y, 2 * x }, new[] { 0, 3 * y * y, 3 * y * y, 6 * x * y } };
        double[] t = { t1, t2, t3 };
        var grad = new double[2];
        var hess = new double[4];
        for (int i = 0; i < 3; i++)
        {
            for (int a = 0; a < 2; a++)
            {
                grad[a] += 2 * t[i] * gt[i][a];
                for (int b = 0; b < 2; b++)
                {
                    hess[(a * 2) + b] += 2 * ((gt[i][a] * gt[i][b]) + (t[i] * ht[i][(a * 2) + b]));
                }
            }
        }

        Verify.At(Probe.Load(_fixture.Assembly, Type, "Beale", 2), new[] { x, y }, grad, hess, "Beale", closedFormAbsolute: 1e-13);
    }

    [Theory]
    [InlineData(0.0, 0.0)]
    [InlineData(1.0, 3.0)] // the global minimiser, f = 0 (common practice)
    [InlineData(-2.5, 4.25)]
    public void BoothMatchesTheHandDerivation(double x, double y)
    {
        // f = (x + 2y - 7)^2 + (2x + y - 5)^2
        // f_x = 2(x + 2y - 7) + 4(2x + y - 5) = 10x + 8y - 34;  f_y = 4(x + 2y - 7) + 2(2x + y - 5) = 8x + 10y - 38
        // Hess = [[10, 8], [8, 10]] everywhere.
        double[] grad = { 10 * x + 8 * y - 34, 8 * x + 10 * y - 38 };
        double[] hess = { 10, 8, 8, 10 };
        Verify.At(Probe.Load(_fixture.Assembly, Type, "Booth", 2), new[] { x, y }, grad, hess, "Booth", closedFormAbsolute: 1e-13);
    }

    [Theory]
    [InlineData(3.0, 2.0)] // a minimiser, f = 0 (Himmelblau 1972; common practice)
    [InlineData(0.5, -1.5)]
    [InlineData(-3.7, 1.1)]
    public void HimmelblauMatchesTheHandDerivation(double x, double y)
    {
        // f = a^2 + b^2, a = x^2 + y - 11, b = x + y^2 - 7
        // f_x = 4xa + 2b;  f_y = 2a + 4yb
        // f_xx = 4a + 8x^2 + 2 = 12x^2 + 4y - 42;  f_yy = 2 + 4b + 8y^2 = 12y^2 + 4x - 26;  f_xy = 4x + 4y
        double a = x * x + y - 11, b = x + y * y - 7;
        double[] grad = { 4 * x * a + 2 * b, 2 * a + 4 * y * b };
        double[] hess = { 12 * x * x + 4 * y - 42, 4 * x + 4 * y, 4 * x + 4 * y, 12 * y * y + 4 * x - 26 };
        Verify.At(Probe.Load(_fixture.Assembly, Type, "Himmelblau", 2), new[] { x, y }, grad, hess, "Himmelblau", closedFormAbsolute: 1e-13);
    }
}
