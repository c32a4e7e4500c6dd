using System;
using System.Linq;
using DerivGen.Generator.Differentiation;
using DerivGen.Generator.Emit;
using DerivGen.Tests.Infrastructure;
using Microsoft.CodeAnalysis.CSharp;
using Xunit;

namespace DerivGen.Tests.Passes;

/// <summary>
/// The running derivatives are symbolic ids in the derivative program (<see cref="DerivativeLocals"/>), never names:
/// Emit's NameScope names them from their hints, clear of the user's locals. A method whose own locals take the hints'
/// names gets the next free names, and its gradient is still right.
/// </summary>
public sealed class RunningDerivativeNamesTests
{
    // Invented: the user's locals dS_dX and dS_dW take the names the hints give ∂s/∂x and ∂s/∂w.
    private const string Members = """
            [Differentiate(nameof(x), nameof(w), Hessian = false)]
            public static double Clash(double x, double[] w)
            {
                double dS_dX = 2.0 * x;
                double dS_dW = 0.5;
                double s = 0;
                for (int i = 0; i < w.Length; i++)
                {
                    s += dS_dX * w[i] * w[i] + dS_dW;
                }

                return s;
            }
        """;

    private delegate double G(double x, double[] w, Span<double> gradient);

    [Fact]
    public void TheProgramHoldsIdsAndNameScopeNamesThemClearOfTheUsersLocals()
    {
        MethodPlan plan = PassHarness.Plan(Members, "Clash");
        StateDerivatives d = plan.Program.States.Values.Single(s => s.State.Name == "s");
        string[] ids = d.GradientNames.Concat(d.VectorNames).ToArray();
        Assert.All(ids, id => Assert.False(SyntaxFacts.IsValidIdentifier(id), id + " is a C# name"));
        Assert.Equal(new[] { "dS_dX", "dS_dW" }, ids.Select(id => plan.Program.Locals.Hint(id)));

        var context = new EmitContext(PassHarness.Spec(Members, "Clash"), plan.Program);
        Assert.Equal(new[] { "dS_dX2", "dS_dW2" }, ids.Select(context.Name));
    }

    /// <summary>∂/∂x Σ (2x·wᵢ² + 0.5) = 2·Σ wᵢ², ∂/∂wⱼ = 4x·wⱼ (plain calculus).</summary>
    [Fact]
    public void TheGradientOfTheClashingMethodMatchesItsClosedForm()
    {
        using CompiledAssembly assembly = GeneratorHarness.CompileAndLoad(PassHarness.Source(Members));
        var gradient = assembly.Method<G>(PassHarness.Type, "ClashGradient");
        double[] w = { 0.5, -1.25, 2.0 }; // invented
        double x = 0.75;
        var g = new double[1 + w.Length];
        gradient(x, w, g);
        Check.Close(2 * w.Sum(v => v * v), g[0], 1e-15, 1e-15, "∂s/∂x");
        for (int j = 0; j < w.Length; j++)
        {
            Check.Close(4 * x * w[j], g[1 + j], 1e-15, 1e-15, "∂s/∂w" + j);
        }
    }
}
