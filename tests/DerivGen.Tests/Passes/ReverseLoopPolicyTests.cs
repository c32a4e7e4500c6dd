using System;
using System.Linq;
using DerivGen.Generator.Differentiation;
using DerivGen.Generator.Differentiation.LoopReverse;
using DerivGen.Generator.Model;
using Xunit;

namespace DerivGen.Tests.Passes;

/// <summary>
/// The rule of <see cref="ReverseLoopPolicy"/> (forward running derivatives or a reverse sweep through the loops) on
/// small programs, and what the reverse gradient records. The numbers of the reverse code are checked in
/// Numerics/Loops/Reverse*Tests.cs.
/// </summary>
public sealed class ReverseLoopPolicyTests
{
    private static DerivativeProgram Program(string members, string method)
    {
        MethodSpec spec = PassHarness.Spec(members, method);
        return DerivativeProgram.Create(spec with { EmitHessian = false }, default);
    }

    private const string Horizon = """
        [Differentiate(nameof(u), nameof(target), Hessian = false)]
        public static double M(double[] u, double dt, double target)
        {
            double x = 0, v = 0, cost = 0;
            for (int t = 0; t < u.Length; t++)
            {
                v = v + dt * (-x * x * x + u[t]);
                x = x + dt * v;
                cost += (x - target) * (x - target);
            }

            return cost;
        }
        """;

    [Fact]
    public void AStateDrivenByAVectorGoesReverse()
    {
        DerivativeProgram program = Program(Horizon, "M");
        ReverseGradient reverse = Assert.IsType<ReverseGradient>(program.Reverse);

        // What is recorded: x and v (their start values are read by the iteration's adjoint), not cost (an accumulator,
        // whose adjoint stays 1 and whose value nothing reads).
        TapeRecord tape = Assert.Single(reverse.Tapes.Values);
        Assert.Equal(new[] { "v", "x" }, tape.Recorded.Select(s => s.Name).OrderBy(n => n, StringComparer.Ordinal));
        Assert.False(tape.IsGrowable);

        // The sweep: the code after the loop, the loop backwards, its start values.
        Assert.Equal(3, reverse.Blocks.Count);
        Assert.Null(reverse.Blocks[0].Loop);
        Assert.NotNull(reverse.Blocks[1].Loop);
        Assert.Null(reverse.Blocks[2].Loop);

        // The iteration's adjoint assigns the new adjoints of x and v (cost's is unchanged, so not assigned) and adds
        // the u[t] contribution as a vector term.
        Assert.Equal(new[] { "vBar", "xBar" }, reverse.Blocks[1].Assignments.Select(a => reverse.Program.Locals.Hint(a.Target)).OrderBy(n => n, StringComparer.Ordinal));
        Assert.Single(reverse.Blocks[1].Terms);
    }

    [Fact]
    public void AnAccumulatorOfVectorReadsStaysForward()
    {
        // Extended Rosenbrock: f += g(x[2i], x[2i+1]); the running derivative is updated by single elements (factor 1 on
        // its own span), O(1) per iteration: forward is already the cheap choice.
        const string source = """
            [Differentiate(nameof(x), Hessian = false)]
            public static double M(double[] x)
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
            """;
        Assert.False(ReverseLoopPolicy.PrefersReverse(Program(source, "M")));
        Assert.Null(Program(source, "M").Reverse);
    }

    [Fact]
    public void FewScalarVariablesStayForward()
    {
        const string source = """
            [Differentiate(nameof(a), nameof(b), Hessian = false)]
            public static double M(double a, double b, double[] d)
            {
                double x = a;
                for (int i = 0; i < d.Length; i++)
                {
                    x = x * b + d[i];
                }

                return x;
            }
            """;
        Assert.Null(Program(source, "M").Reverse);
    }

    [Fact]
    public void ManyScalarRunningDerivativesGoReverse()
    {
        // 33 scalar variables × 2 active carried locals = 66 running derivatives, above the limit of 64.
        string parameters = string.Join(", ", Enumerable.Range(0, 33).Select(i => "double p" + i));
        string sum = string.Join(" + ", Enumerable.Range(0, 33).Select(i => "p" + i));
        string source = "[Differentiate(Hessian = false)]\npublic static double M(" + parameters + ", double[] d)\n{\n"
            + "    double x = " + sum + ", y = 0;\n"
            + "    for (int i = 0; i < d.Length; i++)\n    {\n        y = y + x * d[i];\n        x = x * 0.5 + p0 * y;\n    }\n\n    return x + y;\n}\n";
        Assert.Equal(33 * 2, Program(source, "M").States.Values.Sum(d => d.GradientNames.Length));
        Assert.True(ReverseLoopPolicy.RunningDerivativeLimit < 66);
        Assert.NotNull(Program(source, "M").Reverse);
    }

    [Fact]
    public void ALoopNestedTwoDeepKeepsForwardRunningDerivatives()
    {
        const string source = """
            [Differentiate(nameof(w), Hessian = false)]
            public static double M(double[] w)
            {
                double x = 1, s = 0;
                for (int h = 0; h < 2; h++)
                {
                    for (int i = 0; i < 3; i++)
                    {
                        for (int j = 0; j < w.Length; j++)
                        {
                            x = x * (1 + 0.1 * w[j]);
                        }

                        s += x;
                    }
                }

                return s;
            }
            """;
        DerivativeProgram program = Program(source, "M");
        Assert.True(ReverseLoopPolicy.PrefersReverse(program));
        Assert.Null(program.Reverse);
    }

    [Fact]
    public void AHelperCallInTheLoopKeepsForwardRunningDerivatives()
    {
        const string source = """
            static double Drift(double x) => -x * x * x;

            [Differentiate(nameof(u), Hessian = false)]
            public static double M(double[] u)
            {
                double x = 1, s = 0;
                for (int t = 0; t < u.Length; t++)
                {
                    x = x + 0.1 * (Drift(x) + u[t]);
                    s += x * x;
                }

                return s;
            }
            """;
        DerivativeProgram program = Program(source, "M");
        Assert.True(ReverseLoopPolicy.PrefersReverse(program));
        Assert.Null(program.Reverse);
    }

    [Theory]
    [InlineData("Discounted", true)]
    [InlineData("Product", true)]
    [InlineData("Huber", false)]
    [InlineData("Carried", false)]
    [InlineData("NotLast", false)]
    public void InnerRecurrencesOfTheReplayFixtureGoReverse(string method, bool reverse)
    {
        // An inner loop whose carried local is multiplied each step (z = 0.9 z + …, z += z·…) would update a span of n
        // elements in every inner iteration; sums over the inner loop (replayed, or read once per sample) stay forward.
        MethodSpec spec = PassHarness.SpecInSource(DerivGen.Tests.Passes.InnerLoopReplayFixture.Source, method);
        Assert.Equal(reverse, DerivativeProgram.Create(spec with { EmitHessian = false }, default).Reverse is not null);
    }

    [Fact]
    public void TheAttributeOverridesTheRule()
    {
        // The horizon would go reverse; RunningDerivatives keeps it forward.
        string forced = Horizon.Replace("Hessian = false)]", "Hessian = false, Loops = LoopDifferentiation.RunningDerivatives)]");
        Assert.Null(Program(forced, "M").Reverse);

        // A data fit with two scalar variables would stay forward; ReverseSweep takes it reverse.
        const string fit = """
            [Differentiate(nameof(a), nameof(b), Hessian = false, Loops = LoopDifferentiation.ReverseSweep)]
            public static double M(double a, double b, double[] d)
            {
                double x = a;
                for (int i = 0; i < d.Length; i++)
                {
                    x = x * b + d[i];
                }

                return x;
            }
            """;
        Assert.NotNull(Program(fit, "M").Reverse);

        // A shape the reverse sweep does not handle stays forward even when asked (never a wrong derivative).
        const string deep = """
            [Differentiate(nameof(w), Hessian = false, Loops = LoopDifferentiation.ReverseSweep)]
            public static double M(double[] w)
            {
                double x = 1;
                for (int h = 0; h < 2; h++)
                {
                    for (int i = 0; i < 2; i++)
                    {
                        for (int j = 0; j < w.Length; j++)
                        {
                            x = x * (1 + 0.1 * w[j]);
                        }
                    }
                }

                return x;
            }
            """;
        Assert.Null(Program(deep, "M").Reverse);
    }

    [Fact]
    public void AWhileLoopGetsAGrowableRecord()
    {
        const string source = """
            [Differentiate(nameof(u), Hessian = false)]
            public static double M(double[] u, double[] d)
            {
                double x = 1;
                for (int t = 0; t < u.Length; t++)
                {
                    if (d[t] < 0)
                    {
                        break;
                    }

                    x = x * (1 + 0.1 * u[t]);
                }

                return x;
            }
            """;
        ReverseGradient reverse = Assert.IsType<ReverseGradient>(Program(source, "M").Reverse);
        TapeRecord tape = Assert.Single(reverse.Tapes.Values);
        Assert.True(tape.IsGrowable);
        Assert.Contains(tape.Recorded, s => s.Type == ScalarType.Int32); // the counter the break made a while loop of: u[t] and d[t] read it
    }
}
