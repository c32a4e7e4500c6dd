using System;
using System.Collections.Concurrent;
using System.Collections.Generic;
using System.Globalization;
using System.Linq;
using System.Text;
using DerivGen.Minimization;
using Xunit;
using Xunit.Abstractions;

namespace DerivGen.Tests.Minimization;

internal delegate MinimizeResult MghRun(int method, double[] x, MinimizeSettings settings, double step);

internal delegate LeastSquaresResult MghFit(double[] x, LeastSquaresSettings settings);

internal delegate double MghHessian(double[] x, double[] gradient, double[] hessian);

/// <summary>One minimiser on one MGH problem from the standard start.</summary>
internal sealed record MghOutcome(double Value, int Iterations, int Evaluations, string Stop, bool Reached, double[] Point);

public sealed class MghFixture : UserCodeFixture
{
    private readonly ConcurrentDictionary<(int, int), MghOutcome> _cache = new();

    public MghFixture()
        : base(MghProblems.Source())
    {
    }

    /// <summary>Settings of the line-search methods: GradientTolerance 1e-10 (tighter than the default, so that f
    /// gets close to f* = 0 where that is the minimum), at most 2000 iterations (20 000 for gradient descent).</summary>
    internal static MinimizeSettings Settings(int method) => new()
    {
        GradientTolerance = 1e-10,
        MaxIterations = method <= 1 ? 20_000 : 2_000,
        MaxEvaluations = 1_000_000,
    };

    internal MghOutcome Outcome(MghProblems.Problem p, int method) => _cache.GetOrAdd((p.Number, method), key => Execute(p, key.Item2));

    /// <summary>The fixed step of plain gradient descent: 1 / ‖H(x0)‖_F, a bound on 1/L at the start (common
    /// practice: a step below 1/L, L the gradient's Lipschitz constant, cannot increase f on a quadratic).</summary>
    internal double FixedStep(MghProblems.Problem p)
    {
        var hessian = Assembly.Method<MghHessian>(p.TypeName + "Entry", "Hessian");
        var h = new double[p.N * p.N];
        hessian((double[])p.Start.Clone(), new double[p.N], h);
        return 1 / Math.Sqrt(h.Sum(v => v * v));
    }

    /// <summary>f at a point, through the user's method.</summary>
    internal double Value(MghProblems.Problem p, double[] x)
    {
        var hessian = Assembly.Method<MghHessian>(p.TypeName + "Entry", "Hessian");
        return hessian(x, new double[p.N], new double[p.N * p.N]);
    }

    /// <summary>Reached: |f − f*| ≤ 1e-5 |f*| + 1e-12 for one of the published f* (given to 6 significant digits).</summary>
    internal static bool Reached(MghProblems.Problem p, double f) =>
        !double.IsNaN(f) && p.Minima.Any(m => Math.Abs(f - m) <= (1e-5 * Math.Abs(m)) + 1e-12);

    private MghOutcome Execute(MghProblems.Problem p, int method)
    {
        double[] x = (double[])p.Start.Clone();
        if (method == 5)
        {
            var fit = Assembly.Method<MghFit>(p.TypeName + "Entry", "Fit");
            var settings = new LeastSquaresSettings { MaxIterations = 2_000, MaxEvaluations = 100_000 };
            LeastSquaresResult r = fit(x, settings);
            return new MghOutcome(r.ResidualSumOfSquares, r.Iterations, r.Evaluations, r.Reason.ToString(), Reached(p, r.ResidualSumOfSquares), x);
        }

        var run = Assembly.Method<MghRun>(p.TypeName + "Entry", "Run");
        MinimizeResult m = run(method, x, Settings(method), method == 0 ? FixedStep(p) : 0);
        return new MghOutcome(m.Value, m.Iterations, m.Evaluations, m.Reason.ToString(), Reached(p, m.Value), x);
    }
}

/// <summary>
/// Every minimiser on every MGH problem from the paper's standard starting point: it reaches a published minimum
/// value f* within the tolerance of <see cref="MghFixture.Reached"/>, or the case is listed in
/// <see cref="ExpectedFailures"/> with the reason and is asserted to miss (so the README table cannot go stale).
/// </summary>
public sealed class MghTests : IClassFixture<MghFixture>
{
    private const string Slow = "iteration limit (20 000): gradient descent converges linearly, at a rate set by the Hessian's condition number, which is large here";

    private const string TooLarge = "diverges: the fixed step 1/‖H(x₀)‖_F is too large once the iterate moves (f rose above f(x₀))";

    /// <summary>(MGH problem number, method index in <see cref="MghProblems.Methods"/>) → why it does not reach f*.</summary>
    internal static readonly Dictionary<(int Problem, int Method), string> ExpectedFailures = new()
    {
        [(1, 0)] = Slow,
        [(2, 0)] = Slow,
        [(3, 0)] = Slow,
        [(3, 1)] = Slow,
        [(4, 0)] = TooLarge,
        [(4, 1)] = Slow,
        [(7, 0)] = Slow,
        [(8, 0)] = Slow,
        [(10, 0)] = Slow,
        [(10, 1)] = Slow,
        [(12, 0)] = TooLarge,
        [(12, 1)] = Slow,
        [(13, 0)] = Slow,
        [(13, 1)] = Slow,
        [(14, 0)] = Slow,
        [(14, 1)] = Slow,
        [(17, 0)] = Slow,
        [(17, 1)] = Slow,
        [(18, 0)] = Slow,
        [(18, 1)] = Slow,
        [(18, 2)] = "stalls at f ≈ 0.2428 until the iteration limit (2000), near x1 = x5, x3 = x6, where two of the three exponentials coincide and the Hessian is nearly singular: the shifted-Hessian steps make almost no progress (measured; an unscaled shift, tried while writing this test, reached 0)",
        [(20, 0)] = Slow,
        [(20, 1)] = Slow,
        [(21, 0)] = Slow,
        [(22, 0)] = Slow,
        [(22, 1)] = Slow,
        [(23, 0)] = Slow,
        [(23, 1)] = Slow,
        [(24, 0)] = Slow,
        [(24, 1)] = Slow,
        [(25, 0)] = Slow,
    };

    private readonly MghFixture _fixture;
    private readonly ITestOutputHelper _output;

    public MghTests(MghFixture fixture, ITestOutputHelper output)
    {
        _fixture = fixture;
        _output = output;
    }

    public static TheoryData<int, int> Cases()
    {
        var data = new TheoryData<int, int>();
        foreach (var p in MghProblems.All)
        {
            for (int method = 0; method < MghProblems.Methods.Length; method++)
            {
                data.Add(p.Number, method);
            }
        }

        return data;
    }

    [Theory]
    [MemberData(nameof(Cases))]
    public void ReachesPublishedMinimum(int problem, int method)
    {
        var p = MghProblems.All.Single(q => q.Number == problem);
        MghOutcome o = _fixture.Outcome(p, method);
        _output.WriteLine($"{p.Label}, {MghProblems.Methods[method]}: f = {o.Value.ToString("R", CultureInfo.InvariantCulture)} ({string.Join(" or ", p.Minima.Select(m => m.ToString("R", CultureInfo.InvariantCulture)))} published; {p.Source}); {o.Iterations} iterations, {o.Evaluations} evaluations, {o.Stop}");
        _output.WriteLine("x = " + string.Join(", ", o.Point.Select(v => v.ToString("R", CultureInfo.InvariantCulture))));
        if (ExpectedFailures.TryGetValue((problem, method), out string? reason))
        {
            Assert.False(o.Reached, $"Listed as not reaching f* ({reason}) but it now does: update ExpectedFailures, docs/mgh-table.md and the README.");
        }
        else
        {
            Assert.True(o.Reached, $"{p.Label}, {MghProblems.Methods[method]}: f = {o.Value.ToString("R", CultureInfo.InvariantCulture)} is not within 1e-5 relative (+1e-12) of a published f* ({string.Join(", ", p.Minima)}); stop: {o.Stop}");
        }
    }

    /// <summary>The transcription of each problem: f is 0 (to rounding) at the minimiser the paper gives for it.</summary>
    [Fact]
    public void PublishedMinimisersHaveZeroValue()
    {
        foreach (var p in MghProblems.All.Where(q => q.Solution is not null))
        {
            double f = _fixture.Value(p, (double[])p.Solution!.Clone());
            Assert.True(f <= 1e-20, $"{p.Label}: f(x*) = {f.ToString("R", CultureInfo.InvariantCulture)} at the published minimiser (MGH 1981, from memory)");
        }
    }

    /// <summary>The table of all runs equals docs/mgh-table.md and the README's copy (regenerate with DERIVGEN_ACCEPT=1).</summary>
    [Fact]
    public void TableMatchesCommittedFileAndReadme()
    {
        var sb = new StringBuilder();
        sb.Append("| MGH problem | f* (published) | ").Append(string.Join(" | ", MghProblems.Methods)).Append(" |\n");
        sb.Append("| --- | --- |").Append(string.Concat(Enumerable.Repeat(" --- |", MghProblems.Methods.Length))).Append('\n');
        foreach (var p in MghProblems.All)
        {
            sb.Append($"| {p.Label} | {string.Join(" or ", p.Minima.Select(m => m.ToString("G6", CultureInfo.InvariantCulture)))} |");
            for (int method = 0; method < MghProblems.Methods.Length; method++)
            {
                MghOutcome o = _fixture.Outcome(p, method);
                sb.Append(o.Reached
                    ? $" ✓ {o.Iterations} / {o.Evaluations} |"
                    : $" ✗ f = {o.Value.ToString("G3", CultureInfo.InvariantCulture)} ({o.Stop}) |");
            }

            sb.Append('\n');
        }

        string table = sb.ToString();
        _output.WriteLine(table);
        DocumentTables.Verify("mgh-table.md", "mgh-table", table);
    }
}
