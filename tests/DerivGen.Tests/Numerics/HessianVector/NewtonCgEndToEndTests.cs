using System;
using DerivGen.Tests.Infrastructure;
using DerivGen.Tests.Minimization;
using Xunit;

namespace DerivGen.Tests.Numerics.HessianVector;

public sealed class NewtonCgEndToEndFixture : UserCodeFixture
{
    public const string Source = """
        using System;
        using DerivGen;
        using DerivGen.Minimization;

        public static partial class Model
        {
            // The extended Rosenbrock function (Moré, Garbow & Hillstrom, ACM TOMS 7(1), 1981, problem 21).
            [Differentiate(nameof(x))]
            public static double ExtendedRosenbrock(ReadOnlySpan<double> x)
            {
                double f = 0;
                for (int i = 0; i < x.Length / 2; i++)
                {
                    double a = x[2 * i + 1] - x[2 * i] * x[2 * i];
                    double b = 1 - x[2 * i];
                    f += 100 * a * a + b * b;
                }

                return f;
            }
        }

        // The generated product method has the layout Newton–CG asks for.
        public readonly struct Rosenbrock : IHessianVectorObjective
        {
            public double Value(ReadOnlySpan<double> x) => Model.ExtendedRosenbrock(x);

            public double ValueAndGradient(ReadOnlySpan<double> x, Span<double> gradient) => Model.ExtendedRosenbrockGradient(x, gradient);

            public double ValueGradientHessianVector(ReadOnlySpan<double> x, ReadOnlySpan<double> direction, Span<double> gradient, Span<double> product) =>
                Model.ExtendedRosenbrockHessianVectorProduct(x, direction, gradient, product);
        }

        public static class Solver
        {
            // From the standard start (−1.2, 1, −1.2, 1, …) of MGH 1981; returns f, ‖∇f‖, max |x_i − 1|, iterations,
            // products, converged (1 or 0).
            public static double[] Solve(int n)
            {
                var x = new double[n];
                for (int i = 0; i < n; i += 2)
                {
                    x[i] = -1.2;
                    x[i + 1] = 1;
                }

                MinimizeResult result = Minimize.NewtonCg(new Rosenbrock(), x, new MinimizeSettings { GradientTolerance = 1e-10 });
                double distance = 0;
                foreach (double xi in x)
                {
                    distance = Math.Max(distance, Math.Abs(xi - 1));
                }

                return new[] { result.Value, result.GradientNorm, distance, result.Iterations, result.HessianVectorEvaluations, result.Converged ? 1 : 0 };
            }
        }
        """;

    public NewtonCgEndToEndFixture()
        : base(Source)
    {
    }
}

/// <summary>Newton–CG on a generated MHessianVectorProduct, end to end: extended Rosenbrock at n = 1000 from the standard
/// start reaches f* = 0 at x* = (1, …, 1) (Moré, Garbow &amp; Hillstrom 1981, problem 21).</summary>
public sealed class NewtonCgEndToEndTests : IClassFixture<NewtonCgEndToEndFixture>
{
    private readonly NewtonCgEndToEndFixture _fixture;

    public NewtonCgEndToEndTests(NewtonCgEndToEndFixture fixture) => _fixture = fixture;

    [Fact]
    public void ExtendedRosenbrockAtOneThousandReachesZero()
    {
        double[] r = _fixture.Assembly.Method<Func<int, double[]>>("Solver", "Solve")(1000);
        Assert.True(r[5] == 1, $"not converged: f = {r[0]:R}, |g| = {r[1]:R} after {r[3]} iterations");
        Assert.True(r[0] <= 1e-16, $"f = {r[0]:R} (f* = 0)");
        Assert.True(r[2] <= 1e-7, $"max |x_i - 1| = {r[2]:R}");
        Assert.True(r[4] > 0, "no Hessian–vector product was used");
    }
}
