using System;
using System.Linq;
using DerivGen.Generator.Differentiation;
using DerivGen.Tests.Infrastructure;
using Xunit;

namespace DerivGen.Tests.Passes;

/// <summary>
/// <see cref="DeadDerivatives"/>: a running derivative that nothing reads (neither the results, nor a loop's header, nor
/// the update of a running derivative that is read) is not computed. The decision on small programs, and the gradient
/// of a program with a dropped derivative against its closed form.
/// </summary>
public sealed class DeadDerivativesTests
{
    // Invented sums over data; t is data, x the variable.
    private const string Members = """
            // unused depends on x but is never read after the loop: its running derivative is dead.
            [Differentiate(nameof(x), Hessian = false)]
            public static double Unused(double x, double[] t)
            {
                double s = 0;
                double unused = 0;
                for (int i = 0; i < t.Length; i++)
                {
                    unused += x * t[i];
                    s += x * x * t[i];
                }

                return s;
            }

            // a is read only by the update of b: its running derivative is live through b's.
            [Differentiate(nameof(x), Hessian = false)]
            public static double Chained(double x, double[] t)
            {
                double a = 0;
                double b = 0;
                for (int i = 0; i < t.Length; i++)
                {
                    b += a * t[i];
                    a += x;
                }

                return b;
            }
        """;

    private delegate double G(double x, double[] t, Span<double> gradient);

    [Fact]
    public void AnUnreadRunningDerivativeIsDropped()
    {
        MethodPlan plan = PassHarness.Plan(Members, "Unused");
        Assert.Contains(plan.Program.States.Values, d => d.GradientNames.Select(id => PassHarness.Name(plan, id)).Contains("dUnused_dX")); // differentiated, then dropped
        var targets = PassHarness.AllTargets(plan);
        Assert.DoesNotContain("dUnused_dX", targets);
        Assert.Contains("dS_dX", targets);
        Assert.Contains("unused", targets); // the user's own local is kept (the value is the user's code)
    }

    [Fact]
    public void ARunningDerivativeReadByALiveOneIsKept()
    {
        MethodPlan plan = PassHarness.Plan(Members, "Chained");
        var targets = PassHarness.AllTargets(plan);
        Assert.Contains("dA_dX", targets);
        Assert.Contains("dB_dX", targets);
    }

    /// <summary>
    /// Unused: f = Σ x²·tᵢ, ∂f/∂x = 2x·Σ tᵢ. Chained: after iteration i, a = i·x, so b = Σ i·x·tᵢ and ∂b/∂x = Σ i·tᵢ
    /// (plain calculus).
    /// </summary>
    [Fact]
    public void GradientsMatchTheClosedForms()
    {
        using CompiledAssembly assembly = GeneratorHarness.CompileAndLoad(PassHarness.Source(Members));
        double[] t = { 0.5, -1.25, 2.0, 0.75, -0.3 }; // invented data
        double x = 1.3;
        var g = new double[1];
        assembly.Method<G>(PassHarness.Type, "UnusedGradient")(x, t, g);
        Check.Close(2 * x * t.Sum(), g[0], 1e-15, 1e-15, "∂Unused/∂x");
        assembly.Method<G>(PassHarness.Type, "ChainedGradient")(x, t, g);
        Check.Close(t.Select((ti, i) => i * ti).Sum(), g[0], 1e-15, 1e-15, "∂Chained/∂x");
    }
}
