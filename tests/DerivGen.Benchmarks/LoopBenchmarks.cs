using System;
using BenchmarkDotNet.Attributes;

namespace DerivGen.Benchmarks;

// Gradients through loops at every size (issue 14, item 6): LoopLosses' three families beside their value method
// (Baseline) and the reverse sweeps of HandWrittenAdjoints. Method names as in LossBenchmark.MethodNames; no finite
// differences and no Hessians here (the question is the cost of a gradient as the loop grows). Points and data are
// invented (deterministic formulas); the hand-written adjoints' workspaces are allocated once in the setup.

/// <summary>
/// The loop families' shared setup: the size parameter's name, the workspace of the hand-written adjoint, and the
/// one-time check that the hand-written adjoint agrees with the generated gradient (plain calculus, adjoint
/// recurrence: two exact formulas, so they must agree to rounding).
/// </summary>
public abstract class LoopBenchmark : LossBenchmark
{
    /// <summary>Digits of agreement the setup requires of the hand-written adjoint (normwise, as the report counts).</summary>
    public const double RequiredDigits = 10;

    /// <summary>The hand-written adjoint's workspace (allocated once).</summary>
    protected double[] Workspace { get; private set; } = Array.Empty<double>();

    /// <summary>Sizes the workspace and, where the generated gradient is cheap enough to call at setup, checks the
    /// hand-written adjoint against it.</summary>
    protected void InitLoop(double[] point, Func<double[], double> objective, int workspace, bool check, Func<double> generated, Func<double> handWritten)
    {
        Init(point, objective);
        Workspace = new double[workspace];
        if (!check)
        {
            return;   // the report checks these once, outside the timed region (Report/Accuracy.cs)
        }

        double valueGenerated = generated();
        double[] g = (double[])Gradient.Clone();
        double valueHand = handWritten();
        double digits = Report.Accuracy.Digits(Gradient, g);
        if (digits < RequiredDigits || Math.Abs(valueGenerated - valueHand) > 1e-12 * Math.Max(1, Math.Abs(valueGenerated)))
        {
            throw new InvalidOperationException(
                $"{GetType().Name}: the hand-written adjoint agrees with the generated gradient to {digits:0.0} digits only (value {valueHand} vs {valueGenerated}).");
        }
    }
}

/// <summary>
/// A control horizon: T controls (one vector variable) drive a position and a velocity carried by the loop, the cost
/// sums over every step. The variables grow with the loop: the generated gradient keeps T-element running derivatives
/// today, O(T²). The sizes are the derived classes' parameters.
/// </summary>
public abstract class ControlHorizonCase : LoopBenchmark
{
    public const double Target = 0.8;

    private double[] _u = Array.Empty<double>();

    /// <summary>The horizon: number of steps and of controls.</summary>
    public abstract int T { get; set; }

    /// <summary>Whether the setup calls the generated gradient to check the hand-written one.</summary>
    protected abstract bool CheckAtSetup { get; }

    [GlobalSetup]
    public void Setup()
    {
        _u = new double[T];
        for (int t = 0; t < T; t++)
        {
            _u[t] = 0.1 + (0.3 * Math.Sin(0.05 * t));   // invented controls
        }

        InitLoop((double[])_u.Clone(), p => LoopLosses.ControlHorizon(p, Target), HandWrittenAdjoints.ControlHorizonWorkspace(T),
            CheckAtSetup, GeneratedGradient, HandWrittenGradient);
    }

    [Benchmark(Baseline = true)]
    public double Value() => LoopLosses.ControlHorizon(_u, Target);

    [Benchmark]
    public double GeneratedGradient() => LoopLosses.ControlHorizonGradient(_u, Target, Gradient);

    [Benchmark]
    public double HandWrittenGradient() => HandWrittenAdjoints.ControlHorizon(_u, Target, Gradient, Workspace);
}

/// <summary>The control horizon at T = 10, 100 and 1,000 (the default run).</summary>
[MemoryDiagnoser]
public class ControlHorizonBenchmark : ControlHorizonCase
{
    [Params(10, 100, 1000)]
    public override int T { get; set; }

    protected override bool CheckAtSetup => true;
}

/// <summary>
/// The control horizon at T = 10,000 and 100,000: opt-in (<c>report --large</c>, or
/// <c>--filter '*ControlHorizonLarge*'</c>), because the generated gradient is O(T²) today (a second or more per call
/// at 10,000, minutes at 100,000). <c>BenchConfig.Include</c> leaves the generated gradient at T = 100,000 out of
/// BenchmarkDotNet; the report times one call of it instead.
/// </summary>
[MemoryDiagnoser]
public class ControlHorizonLargeBenchmark : ControlHorizonCase
{
    [Params(10_000, 100_000)]
    public override int T { get; set; }

    protected override bool CheckAtSetup => false;
}

/// <summary>A damped pendulum integrated with RK4 over N steps against invented observations; 3 scalar variables.</summary>
[MemoryDiagnoser]
public class PendulumRk4Benchmark : LoopBenchmark
{
    private double _c = 0.15;
    private double _k = 3.5;
    private double _theta0 = 0.5;
    private double[] _observations = Array.Empty<double>();

    [Params(100, 1000, 10_000, 100_000)]
    public int Steps { get; set; }

    [GlobalSetup]
    public void Setup()
    {
        _observations = new double[Steps];
        for (int n = 0; n < Steps; n++)
        {
            double time = (n + 1) * LoopLosses.PendulumStep;
            _observations[n] = 0.6 * Math.Exp(-0.05 * time) * Math.Cos(1.9 * time);   // an invented damped swing
        }

        InitLoop(new[] { _c, _k, _theta0 }, p => LoopLosses.PendulumRk4(p[0], p[1], p[2], _observations),
            HandWrittenAdjoints.PendulumRk4Workspace(Steps), check: true, GeneratedGradient, HandWrittenGradient);
    }

    [Benchmark(Baseline = true)]
    public double Value() => LoopLosses.PendulumRk4(_c, _k, _theta0, _observations);

    [Benchmark]
    public double GeneratedGradient() => LoopLosses.PendulumRk4Gradient(_c, _k, _theta0, _observations, Gradient);

    [Benchmark]
    public double HandWrittenGradient() => HandWrittenAdjoints.PendulumRk4(_c, _k, _theta0, _observations, Gradient, Workspace);
}

/// <summary>A one-unit recurrent model over an invented sequence of the given length; a weight vector of 3.</summary>
[MemoryDiagnoser]
public class RecurrentBenchmark : LoopBenchmark
{
    private readonly double[] _w = { 0.6, 0.9, -0.1 };
    private double[] _x = Array.Empty<double>();
    private double[] _y = Array.Empty<double>();

    [Params(100, 1000, 10_000, 100_000)]
    public int Length { get; set; }

    [GlobalSetup]
    public void Setup()
    {
        _x = new double[Length];
        _y = new double[Length];
        for (int t = 0; t < Length; t++)
        {
            _x[t] = Math.Sin(0.07 * t) + (0.3 * Math.Cos(0.31 * t));   // invented inputs
            _y[t] = 0.5 * Math.Sin((0.07 * t) - 0.4);                  // invented targets
        }

        InitLoop((double[])_w.Clone(), p => LoopLosses.Recurrent(p, _x, _y), HandWrittenAdjoints.RecurrentWorkspace(Length),
            check: true, GeneratedGradient, HandWrittenGradient);
    }

    [Benchmark(Baseline = true)]
    public double Value() => LoopLosses.Recurrent(_w, _x, _y);

    [Benchmark]
    public double GeneratedGradient() => LoopLosses.RecurrentGradient(_w, _x, _y, Gradient);

    [Benchmark]
    public double HandWrittenGradient() => HandWrittenAdjoints.Recurrent(_w, _x, _y, Gradient, Workspace);
}
