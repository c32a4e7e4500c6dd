using System;
using System.Linq;
using DerivGen.Generator.Differentiation;
using DerivGen.Generator.Symbolic;
using DerivGen.Tests.Infrastructure;
using Xunit;

namespace DerivGen.Tests.Passes;

/// <summary>
/// The scheduling step (<see cref="Scheduling"/>): which nodes get a local, which loop-carried values are copied before
/// a loop updates them, and which calls fill derivative buffers under which condition. Decisions on small invented
/// methods, and the gradient of the snapshot case against its closed form.
/// </summary>
public sealed class SchedulingTests
{
    private const string Members = """
            // e = exp(x) is read twice (value and derivative); x·y once.
            [Differentiate(Hessian = false)]
            public static double Shared(double x, double y) => Math.Exp(x) + (x * y);

            // A named local read once still gets a local (the code shows the user's names).
            [Differentiate(Hessian = false)]
            public static double Named(double x, double y)
            {
                double product = x * y;
                return product + 1;
            }

            // exp(x) does not change in the loop: computed once before it.
            [Differentiate(nameof(x), Hessian = false)]
            public static double Invariant(double x, double[] t)
            {
                double s = 0;
                for (int i = 0; i < t.Length; i++)
                {
                    s += Math.Exp(x) * t[i];
                }

                return s;
            }

            // d[0] is read only where x > 0: never computed ahead of that condition.
            [Differentiate(nameof(x), Hessian = false)]
            public static double Guarded(double x, double[] d) => x > 0 ? (d[0] * x) + (d[0] * x * x) : 0;

            // s after the first loop is read inside the second, which updates s: the value there is a copy.
            [Differentiate(nameof(x), Hessian = false)]
            public static double TwoLoops(double x, double[] t)
            {
                double s = 0;
                for (int i = 0; i < t.Length; i++)
                {
                    s += x * t[i];
                }

                double first = s;
                for (int j = 0; j < t.Length; j++)
                {
                    s += first * s * t[j];
                }

                return s;
            }

            // p's update reads s: s is assigned after p's new value is computed from the old s; p alone is updated in place.
            [Differentiate(nameof(x), Hessian = false)]
            public static double Coupled(double x, double[] t)
            {
                double s = 1;
                double p = 1;
                for (int i = 0; i < t.Length; i++)
                {
                    p *= s;
                    s += x * t[i];
                }

                return p;
            }
        """;

    private delegate double G(double x, double[] t, Span<double> gradient);

    private static MethodPlan Plan(string method) => PassHarness.Plan(Members, method);

    [Fact]
    public void ANodeReadTwiceGetsALocalAndANodeReadOnceDoesNot()
    {
        MethodPlan plan = Plan("Shared");
        Assert.Contains(plan.Temporaries, n => n.Kind == NodeKind.Call && n.Function == Generator.Model.MathFunction.Exp);
        Assert.DoesNotContain(plan.Temporaries, n => n.Kind == NodeKind.Multiply);
    }

    [Fact]
    public void ANamedLocalGetsALocal()
    {
        MethodPlan plan = Plan("Named");
        Node product = Assert.Single(plan.Temporaries, n => n.Kind == NodeKind.Multiply);
        Assert.Equal("product", plan.Program.Names.LocalName(product));
    }

    [Fact]
    public void ALoopInvariantNodeIsComputedBeforeTheLoop()
    {
        MethodPlan plan = Plan("Invariant");
        Node exp = Assert.Single(plan.Temporaries, n => n.Kind == NodeKind.Call);
        Assert.Equal(0, exp.Stage);                               // before the loop
        Assert.True(plan.Program.Loops[0].InsideStage > exp.Stage); // and used inside it
    }

    [Fact]
    public void AReadUnderAConditionIsNeverComputedAhead()
    {
        MethodPlan plan = Plan("Guarded");
        Assert.Contains(plan.Roots, r => Graph.Reachable(new[] { r.Node }).Any(e => e.Kind == NodeKind.Element)); // it is needed

        // d[0]·x is read twice but gets no local; a local that reads d[0] is a selection whose own code keeps the guard
        // (x > 0 ? … : 0, see ConditionalEvaluation).
        Assert.DoesNotContain(plan.Temporaries, n => n.Kind == NodeKind.Element || n.Arguments.Any(a => a.Kind == NodeKind.Element));
        Assert.All(plan.Temporaries.Where(n => Graph.Reachable(new[] { n }).Any(r => r.Kind == NodeKind.Element)),
            n => Assert.Equal(NodeKind.Select, n.Kind));
    }

    [Fact]
    public void AValueReadAfterALoopThatUpdatesItIsCopied()
    {
        MethodPlan plan = Plan("TwoLoops");
        Assert.NotEmpty(plan.Snapshots);
        Assert.All(plan.Snapshots, leaf => Assert.Contains(leaf, plan.Temporaries));
        Assert.Empty(Plan("Invariant").Snapshots);
    }

    /// <summary>
    /// TwoLoops: after the first loop s = x·T with T = Σ tᵢ, and first = x·T; the second loop multiplies s by
    /// (1 + first·tⱼ) each time, so s = x·T·P with P = Πⱼ (1 + x·T·tⱼ) and
    /// ∂s/∂x = T·P + x·T·P·Σⱼ T·tⱼ / (1 + x·T·tⱼ) (plain calculus).
    /// </summary>
    [Fact]
    public void TheTwoLoopGradientMatchesTheClosedForm()
    {
        using CompiledAssembly assembly = GeneratorHarness.CompileAndLoad(PassHarness.Source(Members));
        double[] t = { 0.3, -0.2, 0.45, 0.1 }; // invented data
        double x = 0.8;
        var g = new double[1];
        assembly.Method<G>(PassHarness.Type, "TwoLoopsGradient")(x, t, g);
        double total = t.Sum();
        double product = t.Aggregate(1.0, (p, tj) => p * (1 + (x * total * tj)));
        double expected = (total * product) + (x * total * product * t.Sum(tj => total * tj / (1 + (x * total * tj))));
        Check.Close(expected, g[0], 1e-14, 1e-15, "∂TwoLoops/∂x");
    }

    [Fact]
    public void AnUpdateNoOtherReadsIsWrittenInPlace()
    {
        // s += exp(x)·t[i] and ∂s/∂x += exp(x)·t[i]: neither update reads the other's local.
        MethodPlan plan = Plan("Invariant");
        LoopSegment loop = plan.Program.Loops[0];
        Assert.Equal(new[] { ("s", AssignmentKind.InPlace, AssignmentForm.Add), ("dS_dX", AssignmentKind.InPlace, AssignmentForm.Add) },
            plan.Ends[loop].Select(a => (PassHarness.Name(plan, a.Update.Target), a.Kind, a.Form)));
        Assert.All(plan.Starts[loop], a => Assert.Equal(AssignmentKind.Declare, a.Kind)); // the first assignment of each declares it
    }

    [Fact]
    public void AnUpdateReadByAnotherGoesThroughALocalAssignedAfterAll()
    {
        // p ← p·s, s ← s + x·t[i], ∂p/∂x ← ∂p/∂x·s + p·∂s/∂x, ∂s/∂x ← ∂s/∂x + t[i]: p, s and ∂s/∂x are read by another
        // update, so they are computed into locals (pNext, …) from the old values and assigned after all; ∂p/∂x, read by
        // none, is assigned in turn.
        MethodPlan plan = Plan("Coupled");
        LoopSegment loop = plan.Program.Loops[0];
        var kinds = plan.Ends[loop].ToDictionary(a => PassHarness.Name(plan, a.Update.Target), a => a.Kind);
        Assert.Equal(AssignmentKind.ThroughLocal, kinds["p"]);
        Assert.Equal(AssignmentKind.ThroughLocal, kinds["s"]);
        Assert.Equal(AssignmentKind.ThroughLocal, kinds["dS_dX"]);
        Assert.Equal(AssignmentKind.InPlace, kinds["dP_dX"]);
    }

    /// <summary>
    /// Coupled: before iteration i, s = 1 + x·Σ_{k&lt;i} t_k, and p = Π_i s_i over those values, so
    /// ∂p/∂x = p · Σ_i (Σ_{k&lt;i} t_k) / s_i (logarithmic derivative, plain calculus).
    /// </summary>
    [Fact]
    public void TheCoupledGradientMatchesTheClosedForm()
    {
        using CompiledAssembly assembly = GeneratorHarness.CompileAndLoad(PassHarness.Source(Members));
        double[] t = { 0.3, -0.2, 0.45, 0.1 }; // invented data
        double x = 0.8;
        var g = new double[1];
        double value = assembly.Method<G>(PassHarness.Type, "CoupledGradient")(x, t, g);
        double p = 1, sum = 0, logDerivative = 0;
        for (int i = 0; i < t.Length; i++)
        {
            double si = 1 + (x * sum);
            p *= si;
            logDerivative += sum / si;
            sum += t[i];
        }

        Check.Close(p, value, 1e-15, 1e-15, "Coupled");
        Check.Close(p * logDerivative, g[0], 1e-14, 1e-15, "∂Coupled/∂x");
    }

}
