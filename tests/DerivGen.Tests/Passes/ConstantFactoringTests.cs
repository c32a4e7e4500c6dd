using System;
using System.Collections.Generic;
using System.Linq;
using DerivGen.Generator.Differentiation;
using DerivGen.Tests.Infrastructure;
using Xunit;

namespace DerivGen.Tests.Passes;

/// <summary>
/// <see cref="ConstantFactoring"/>: a running derivative d = Σ c·y (starts at 0, |c| &gt; 1, read by nothing else) is
/// accumulated as d += y in the loop and multiplied by c once after it. The decision on small programs (taken and
/// refused shapes), and the gradient of a taken shape against its closed form.
/// </summary>
public sealed class ConstantFactoringTests
{
    // Invented sums over data; t is data, x the variable.
    private const string Members = """
            [Differentiate(nameof(x), Hessian = false)]
            public static double Scaled(double x, double[] t)
            {
                double s = 0;
                for (int i = 0; i < t.Length; i++)
                {
                    s += 3.0 * x * t[i];
                }

                return s;
            }

            // |c| <= 1: nothing to gain, kept as written.
            [Differentiate(nameof(x), Hessian = false)]
            public static double Halved(double x, double[] t)
            {
                double s = 0;
                for (int i = 0; i < t.Length; i++)
                {
                    s += 0.5 * x * t[i];
                }

                return s;
            }

            // Starts from x: the running derivative starts at 1, not 0.
            [Differentiate(nameof(x), Hessian = false)]
            public static double StartsAtX(double x, double[] t)
            {
                double s = x;
                for (int i = 0; i < t.Length; i++)
                {
                    s += 3.0 * x * t[i];
                }

                return s;
            }

            // The running derivative of s is read by the update of p in the same loop: it must hold the true sum there.
            [Differentiate(nameof(x), Hessian = false)]
            public static double ReadInLoop(double x, double[] t)
            {
                double s = 0;
                double p = 0;
                for (int i = 0; i < t.Length; i++)
                {
                    s += 3.0 * x * t[i];
                    p += s * t[i];
                }

                return p;
            }
        """;

    private delegate double G(double x, double[] t, Span<double> gradient);

    private static List<(string Target, double Factor)> Factors(string method)
    {
        MethodPlan plan = PassHarness.Plan(Members, method);
        return plan.Factored.Values.SelectMany(f => f).Select(f => (PassHarness.Name(plan, f.Target), f.Factor.Value)).ToList();
    }

    [Fact]
    public void ASumWithAConstantFactorIsFactoredOut()
    {
        var factors = Factors("Scaled");
        Assert.Equal(new[] { ("dS_dX", 3.0) }, factors);

        // The update inside the loop no longer multiplies by the constant.
        MethodPlan plan = PassHarness.Plan(Members, "Scaled");
        StateUpdate update = plan.Next[plan.Program.Loops[0]].Single(u => PassHarness.Name(plan, u.Target) == "dS_dX");
        Assert.Equal(Generator.Symbolic.NodeKind.Add, update.Value.Kind);
        Assert.DoesNotContain(update.Value.Arguments, a => a.Kind == Generator.Symbolic.NodeKind.Multiply);
    }

    [Theory]
    [InlineData("Halved")]
    [InlineData("StartsAtX")]
    [InlineData("ReadInLoop")]
    public void OtherShapesAreLeftAsTheyAre(string method) => Assert.Empty(Factors(method));

    /// <summary>∂/∂x Σ 3·x·tᵢ = 3·Σ tᵢ (plain calculus); the factored code rounds differently from the sum of 3·tᵢ, so a
    /// relative tolerance of a few ulps per term.</summary>
    [Theory]
    [InlineData(0)]
    [InlineData(1)]
    [InlineData(17)]
    public void TheFactoredGradientMatchesTheClosedForm(int n)
    {
        using CompiledAssembly assembly = GeneratorHarness.CompileAndLoad(PassHarness.Source(Members));
        var gradient = assembly.Method<G>(PassHarness.Type, "ScaledGradient");
        double[] t = Enumerable.Range(0, n).Select(k => Math.Round(Math.Cos((0.9 * k) + 0.2) * 2.5, 4)).ToArray(); // invented data
        var g = new double[1];
        double x = 0.75;
        double value = gradient(x, t, g);
        double expected = 3 * t.Sum();
        Check.Close(expected, g[0], 1e-14, 1e-15, "∂s/∂x");
        Assert.Equal(t.Aggregate(0.0, (s, ti) => s + (3.0 * x * ti)), value); // the value exactly as written
    }
}
