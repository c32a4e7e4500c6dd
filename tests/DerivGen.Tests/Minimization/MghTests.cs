using System;
using System.Collections.Concurrent;
using System.Globalization;
using System.Linq;
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

public sealed class MghTests : IClassFixture<MghFixture>
{
    private readonly MghFixture _fixture;
    private readonly ITestOutputHelper _output;

    public MghTests(MghFixture fixture, ITestOutputHelper output)
    {
        _fixture = fixture;
        _output = output;
    }

    [Fact]
    public void Measure()
    {
        foreach (var p in MghProblems.All)
        {
            for (int method = 0; method < MghProblems.Methods.Length; method++)
            {
                var o = _fixture.Outcome(p, method);
                _output.WriteLine($"{p.Number,2} {p.Name,-26} {MghProblems.Methods[method],-30} {(o.Reached ? "yes" : "NO "),-3} f = {o.Value.ToString("G6", CultureInfo.InvariantCulture),-12} it {o.Iterations,6} ev {o.Evaluations,7} {o.Stop}");
            }
        }
    }
}
