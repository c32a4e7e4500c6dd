using System;
using System.Collections.Concurrent;
using System.Collections.Generic;
using System.Globalization;
using System.Linq;
using System.Text;
using DerivGen.Minimization;
using DerivGen.Tests.Infrastructure;
using MathNet.Numerics.Differentiation;
using MathNet.Numerics.RootFinding;
using Xunit;
using Xunit.Abstractions;

namespace DerivGen.Tests.Minimization;

/// <summary>One minimiser on one large problem from the standard start.</summary>
internal sealed record LargeOutcome(double Value, double Minimum, MinimizeResult Result, bool Reached, double[] Point);

/// <summary>Runs every (problem, n, method) once; the assertions and the table share the runs.</summary>
public sealed class LargeProblemFixture
{
    private readonly ConcurrentDictionary<(int, int, bool), LargeOutcome> _cache = new();

    /// <summary>Settings of both methods: gradient tolerance 10⁻¹², at most 2000 iterations.</summary>
    internal static MinimizeSettings Settings() => new()
    {
        GradientTolerance = 1e-12,
        MaxIterations = 2_000,
        MaxEvaluations = 1_000_000,
    };

    internal LargeOutcome Outcome(int problem, int n, bool newtonCg) => _cache.GetOrAdd((problem, n, newtonCg), key =>
    {
        double[] x = LargeProblems.Start(key.Item1, key.Item2);
        MinimizeResult r = LargeProblems.Run(key.Item1, key.Item3, x, Settings());
        double minimum = NewtonCgTests.Minimum(key.Item1, key.Item2);
        return new LargeOutcome(r.Value, minimum, r, NewtonCgTests.Reached(minimum, r.Value, key.Item2), x);
    });
}

/// <summary>
/// Newton–CG (<see cref="Minimize.NewtonCg{TObjective}"/>) and L-BFGS on Moré, Garbow &amp; Hillstrom's
/// variable-dimension problems (ACM TOMS 7(1), 1981) at n = 1,000 and n = 100,000 from the paper's standard start:
/// Newton–CG reaches the published f* on every one; L-BFGS runs beside it for the table (docs/newton-cg-table.md).
/// The objectives' hand-written gradients and Hessian–vector products are checked first against MathNet.Numerics
/// finite differences.
/// </summary>
public sealed class NewtonCgTests : IClassFixture<LargeProblemFixture>
{
    /// <summary>(MGH number, name, where f* comes from).</summary>
    internal static readonly (int Number, string Name, string Source)[] Problems =
    {
        (21, "Extended Rosenbrock", "f* = 0: MGH 1981 (from memory)"),
        (22, "Extended Powell singular", "f* = 0: MGH 1981 (from memory)"),
        (23, "Penalty I", "MGH 1981 publish f* for n = 4 and 10 only (2.24997·10⁻⁵, 7.08765·10⁻⁵, from memory); for other n, f* of the one-variable reduction at xⱼ = t (plain calculus; root by MathNet's Brent), which reproduces both published values"),
        (25, "Variably dimensioned", "f* = 0: MGH 1981 (from memory)"),
        (30, "Broyden tridiagonal", "f* = 0: MGH 1981 (from memory)"),
        (31, "Broyden banded", "f* = 0: MGH 1981 (from memory)"),
    };

    internal static readonly int[] Sizes = { 1_000, 100_000 };

    /// <summary>(problem, n) where L-BFGS does not reach f*, with the reason (asserted, so the table cannot go stale).</summary>
    internal static readonly Dictionary<(int Problem, int N), string> LbfgsMisses = new()
    {
        [(30, 100_000)] = "stops (no change of f in a step) at a local minimum, f = 1.41, max |∂f/∂xⱼ| ≈ 4·10⁻⁸: xⱼ ≈ −0.707 inside but x₁ ≈ 0.89, x₂ ≈ 1.45 and the last components off that profile; Newton–CG started there does not lower f (asserted)",
        [(31, 1_000)] = "stops (no acceptable step) at a local minimum, f = 3.08, max |∂f/∂xⱼ| ≈ 5·10⁻⁸, xⱼ ≈ 0.2 inside; Newton–CG started there does not lower f (asserted)",
        [(31, 100_000)] = "the same local minimum, f = 3.08 (asserted as at n = 1,000)",
    };

    private readonly LargeProblemFixture _fixture;
    private readonly ITestOutputHelper _output;

    public NewtonCgTests(LargeProblemFixture fixture, ITestOutputHelper output)
    {
        _fixture = fixture;
        _output = output;
    }

    public static TheoryData<int, int> Cases()
    {
        var data = new TheoryData<int, int>();
        foreach (var p in Problems)
        {
            foreach (int n in Sizes)
            {
                data.Add(p.Number, n);
            }
        }

        return data;
    }

    public static TheoryData<int> Numbers()
    {
        var data = new TheoryData<int>();
        foreach (var p in Problems)
        {
            data.Add(p.Number);
        }

        return data;
    }

    /// <summary>f* of problem <paramref name="number"/> with n variables (see <see cref="Problems"/>).</summary>
    internal static double Minimum(int number, int n) => number == 23 ? PenaltyOneMinimum(n) : 0;

    /// <summary>Reached: |f − f*| ≤ 10⁻⁵ |f*| + 10⁻¹² (as the MGH suite).</summary>
    internal static bool Reached(double minimum, double f, int n) =>
        !double.IsNaN(f) && Math.Abs(f - minimum) <= (1e-5 * Math.Abs(minimum)) + 1e-12;

    /// <summary>
    /// Penalty I's minimum: at fixed ‖x‖ the term Σ (xⱼ − 1)² = ‖x‖² − 2Σxⱼ + n is smallest for x parallel to
    /// (1, …, 1), so the minimiser is xⱼ = t with t the minimiser of φ(t) = a n (t − 1)² + (n t² − ¼)² (plain
    /// calculus). φ′(t)/(2n) = a(t − 1) + 2t(n t² − ¼) is negative at t = 1/√(4n) (it is a(t − 1) there) and positive
    /// at t = 1, and φ′ is increasing beyond 1/√(12n), so the root in between, found by MathNet's Brent, is the minimum.
    /// </summary>
    internal static double PenaltyOneMinimum(int n)
    {
        const double a = 1e-5;
        double t = Brent.FindRoot(s => (a * (s - 1)) + (2 * s * ((n * s * s) - 0.25)), 1 / Math.Sqrt(4.0 * n), 1, 1e-15, 200);
        double q = (n * t * t) - 0.25;
        return (a * n * (t - 1) * (t - 1)) + (q * q);
    }

    [Fact]
    public void PenaltyOneReductionReproducesThePublishedMinima()
    {
        // MGH 1981 (from memory): f* = 2.24997·10⁻⁵ for n = 4 and 7.08765·10⁻⁵ for n = 10, given to six digits.
        Check.Close(2.24997e-5, PenaltyOneMinimum(4), 5e-6, 0, "Penalty I, n = 4");
        Check.Close(7.08765e-5, PenaltyOneMinimum(10), 5e-6, 0, "Penalty I, n = 10");
    }

    /// <summary>
    /// The hand-written gradient against MathNet's central differences of the value, and the hand-written H·v against
    /// MathNet's central differences of the hand gradient along v (d/dt ∇f(x + tv) at t = 0), at n = 12 (three Powell
    /// blocks, two full bands of Broyden banded) at a seeded random point and direction.
    /// </summary>
    [Theory]
    [MemberData(nameof(Numbers))]
    public void HandDerivativesMatchFiniteDifferences(int number)
    {
        const int n = 12;
        var random = new Random(number);
        double[] x = Enumerable.Range(0, n).Select(_ => (2 * random.NextDouble()) - 1).ToArray();
        double[] v = Enumerable.Range(0, n).Select(_ => (2 * random.NextDouble()) - 1).ToArray();
        IHessianVectorObjective objective = LargeProblems.Objective(number);
        var g = new double[n];
        var hv = new double[n];
        var gScratch = new double[n];
        double f = objective.ValueGradientHessianVector(x, v, gScratch, hv);
        Assert.Equal(objective.Value(x), f);
        Assert.Equal(objective.ValueAndGradient(x, g), f);
        Assert.Equal(g, gScratch);

        var numerical = new NumericalDerivative(5, 2);
        for (int j = 0; j < n; j++)
        {
            int k = j;
            double dj = numerical.EvaluatePartialDerivative(p => objective.Value(p), x, k, 1);
            Check.Close(dj, g[k], 1e-7, 1e-7, $"problem {number}: ∂f/∂x{k}");

            double hvj = numerical.EvaluateDerivative(
                t =>
                {
                    var shifted = new double[n];
                    var gt = new double[n];
                    for (int i = 0; i < n; i++)
                    {
                        shifted[i] = x[i] + (t * v[i]);
                    }

                    objective.ValueAndGradient(shifted, gt);
                    return gt[k];
                },
                0,
                1);
            Check.Close(hvj, hv[k], 1e-7, 1e-7, $"problem {number}: (Hv){k}");
        }
    }

    [Theory]
    [MemberData(nameof(Cases))]
    public void NewtonCgReachesThePublishedMinimum(int number, int n)
    {
        LargeOutcome o = _fixture.Outcome(number, n, newtonCg: true);
        LargeOutcome l = _fixture.Outcome(number, n, newtonCg: false);
        _output.WriteLine($"Newton–CG: f = {Check.R(o.Value)} (f* = {Check.R(o.Minimum)}), {Describe(o.Result)}");
        _output.WriteLine($"L-BFGS:    f = {Check.R(l.Value)}, {Describe(l.Result)}");
        Assert.True(o.Reached, $"MGH {number}, n = {n}: Newton–CG stops at f = {Check.R(o.Value)}, f* = {Check.R(o.Minimum)} ({o.Result.Reason})");
        Assert.Equal(o.Result.Evaluations, o.Result.ValueEvaluations + o.Result.GradientEvaluations + o.Result.HessianVectorEvaluations);
        Assert.Equal(0, o.Result.HessianEvaluations);
        if (LbfgsMisses.TryGetValue((number, n), out string? why))
        {
            Assert.False(l.Reached, $"Listed as an L-BFGS miss ({why}) but it now reaches f*: update LbfgsMisses and the table.");

            // The point is a local minimum: Newton–CG, which follows negative curvature, does not lower f from it.
            double[] x = (double[])l.Point.Clone();
            MinimizeResult fromThere = LargeProblems.Run(number, true, x, LargeProblemFixture.Settings());
            _output.WriteLine($"Newton–CG from L-BFGS's point: f = {Check.R(fromThere.Value)}, {Describe(fromThere)}");
            Assert.True(fromThere.Value >= l.Value * (1 - 1e-10), $"Newton–CG lowers f from L-BFGS's point to {Check.R(fromThere.Value)}: not a local minimum");
        }
        else
        {
            Assert.True(l.Reached, $"MGH {number}, n = {n}: L-BFGS stops at f = {Check.R(l.Value)} ({l.Result.Reason})");
        }
    }

    /// <summary>The table equals docs/newton-cg-table.md (regenerate with DERIVGEN_ACCEPT=1).</summary>
    [Fact]
    public void TableMatchesCommittedFile()
    {
        var sb = new StringBuilder();
        sb.Append("| MGH problem | n | f* | Newton–CG: iterations | gradients | H·v products | values | stop | L-BFGS: iterations | gradients | values | stop |\n");
        sb.Append("| --- | --- | --- | --- | --- | --- | --- | --- | --- | --- | --- | --- |\n");
        foreach (var p in Problems)
        {
            foreach (int n in Sizes)
            {
                LargeOutcome o = _fixture.Outcome(p.Number, n, true), l = _fixture.Outcome(p.Number, n, false);
                string lbfgs = l.Reached ? $"{l.Result.Iterations} | {l.Result.GradientEvaluations} | {l.Result.ValueEvaluations} | {l.Result.Reason}"
                    : $"✗ {l.Result.Iterations} | {l.Result.GradientEvaluations} | {l.Result.ValueEvaluations} | {l.Result.Reason}, f = {l.Value.ToString("G3", CultureInfo.InvariantCulture)}";
                sb.Append($"| {p.Number}. {p.Name} | {n.ToString("N0", CultureInfo.InvariantCulture)} | {o.Minimum.ToString("G6", CultureInfo.InvariantCulture)} | ")
                    .Append($"{(o.Reached ? string.Empty : "✗ ")}{o.Result.Iterations} | {o.Result.GradientEvaluations} | {o.Result.HessianVectorEvaluations} | {o.Result.ValueEvaluations} | {o.Result.Reason} | {lbfgs} |\n");
            }
        }

        string table = sb.ToString();
        _output.WriteLine(table);
        DocumentTables.Verify("newton-cg-table.md", null, Page(table));
    }

    private static string Page(string table)
    {
        var sb = new StringBuilder();
        sb.Append("# Newton–CG beside L-BFGS on large Moré–Garbow–Hillstrom problems\n\n");
        sb.Append("Produced by `tests/DerivGen.Tests/Minimization/NewtonCgTests.cs` (do not edit by hand; regenerate with\n");
        sb.Append("`DERIVGEN_ACCEPT=1 dotnet test tests/DerivGen.Tests -c Release --filter \"FullyQualifiedName~Minimization\"`).\n\n");
        sb.Append("Variable-dimension problems of Moré, Garbow & Hillstrom, *ACM TOMS* 7(1), 1981, from the paper's standard start,\n");
        sb.Append("with `Minimize.NewtonCg` (Steihaug's truncated CG in a trust region, on Hessian–vector products) and\n");
        sb.Append("`Minimize.LimitedMemoryBfgs` (history 8), both with gradient tolerance 10⁻¹² and at most 2000 iterations. A run\n");
        sb.Append("reaches f* when |f − f*| ≤ 10⁻⁵ |f*| + 10⁻¹²; ✗ marks one that does not. Each count is calls of the objective:\n");
        sb.Append("gradients (value and gradient), H·v products (value, gradient and H·v in one call, the layout of a generated\n");
        sb.Append("`MHessianVectorProduct`) and values. The gradients and products are written by hand for now (plain calculus,\n");
        sb.Append("checked against finite differences); time is measured by the benchmarks, not here.\n\n");
        sb.Append("Where f* comes from:\n\n");
        foreach (var p in Problems)
        {
            sb.Append($"- {p.Number}. {p.Name}: {p.Source}.\n");
        }

        foreach (var miss in LbfgsMisses)
        {
            sb.Append($"- L-BFGS on problem {miss.Key.Problem}, n = {miss.Key.N.ToString("N0", CultureInfo.InvariantCulture)}: {miss.Value}.\n");
        }

        sb.Append('\n').Append(table);
        return sb.ToString();
    }

    private static string Describe(MinimizeResult r) =>
        $"{r.Iterations} iterations, {r.GradientEvaluations} gradients, {r.HessianVectorEvaluations} H·v, {r.ValueEvaluations} values, {r.Reason}, max |∂f/∂xⱼ| = {Check.R(r.GradientNorm)}";
}
