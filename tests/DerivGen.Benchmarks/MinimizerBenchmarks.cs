using System;
using BenchmarkDotNet.Attributes;
using DerivGen.Minimization;

namespace DerivGen.Benchmarks;

/// <summary>
/// The package's minimisers on generated derivatives, each solve from the same start with a workspace and settings
/// made once (as a hot loop would): BenchmarkDotNet's MemoryDiagnoser shows the bytes a whole solve allocates, which
/// must be 0. Not part of the report (<c>report</c> runs the loss corpus); run with
/// <c>dotnet run -c Release --project tests/DerivGen.Benchmarks -- --filter '*MinimizerBenchmarks*'</c>.
/// The baseline is one generated value + gradient of the Rosenbrock function, so the ratios read as "solves cost this
/// many gradient calls". Data are invented.
/// </summary>
[MemoryDiagnoser]
public class MinimizerBenchmarks
{
    private static readonly double[] RosenbrockStart = { -1.2, 1.0 };   // the customary start (Moré, Garbow & Hillstrom 1981)
    private static readonly double[] DecayStart = { 1.0, 0.1 };

    private readonly double[] _x = new double[2];
    private readonly double[] _gradient = new double[2];
    private readonly double[] _errors = new double[2];
    private readonly MinimizeWorkspace _workspace = new(2);
    private readonly MinimizeSettings _settings = new();
    private readonly LeastSquaresSettings _fitSettings = new();
    private LeastSquaresWorkspace _fitWorkspace = null!;
    private DecayModel _decay;

    [GlobalSetup]
    public void Setup()
    {
        // Invented readings of a decay y = 2.5·exp(−0.35·t) with a small deterministic wobble, 200 points.
        var t = new double[200];
        var y = new double[200];
        for (int i = 0; i < t.Length; i++)
        {
            t[i] = 0.05 * i;
            y[i] = (2.5 * Math.Exp(-0.35 * t[i])) + (0.01 * Math.Sin(7.0 * i));
        }

        _decay = new DecayModel(t, y);
        _fitWorkspace = new LeastSquaresWorkspace(t.Length, 2);
    }

    [Benchmark(Baseline = true)]
    public double OneGradient() => Losses.RosenbrockGradient(-1.2, 1.0, _gradient);

    [Benchmark]
    public double NewtonRosenbrock()
    {
        RosenbrockStart.CopyTo(_x, 0);
        return Minimize.Newton(default(RosenbrockObjective), _x, _settings, _workspace).Value;
    }

    [Benchmark]
    public double BfgsRosenbrock()
    {
        RosenbrockStart.CopyTo(_x, 0);
        return Minimize.Bfgs(default(RosenbrockObjective), _x, _settings, _workspace).Value;
    }

    [Benchmark]
    public double LimitedMemoryBfgsRosenbrock()
    {
        RosenbrockStart.CopyTo(_x, 0);
        return Minimize.LimitedMemoryBfgs(default(RosenbrockObjective), _x, _settings, _workspace).Value;
    }

    [Benchmark]
    public double LevenbergMarquardtDecay()
    {
        DecayStart.CopyTo(_x, 0);
        return LeastSquares.LevenbergMarquardt(_decay, _x, _errors, _fitSettings, _fitWorkspace).ResidualSumOfSquares;
    }

    private readonly struct RosenbrockObjective : IHessianObjective
    {
        public double Value(ReadOnlySpan<double> x) => Losses.Rosenbrock(x[0], x[1]);

        public double ValueAndGradient(ReadOnlySpan<double> x, Span<double> gradient) => Losses.RosenbrockGradient(x[0], x[1], gradient);

        public double ValueGradientHessian(ReadOnlySpan<double> x, Span<double> gradient, Span<double> hessian) =>
            Losses.RosenbrockHessian(x[0], x[1], gradient, hessian);
    }

    private readonly struct DecayModel : IResidualModel
    {
        private readonly double[] _t;
        private readonly double[] _y;

        public DecayModel(double[] t, double[] y)
        {
            _t = t;
            _y = y;
        }

        public int ResidualCount => _t.Length;

        public void Residuals(ReadOnlySpan<double> p, Span<double> residuals) => Losses.DecayResiduals(p[0], p[1], _t, _y, residuals);

        public void ResidualsAndJacobian(ReadOnlySpan<double> p, Span<double> residuals, Span<double> jacobian) =>
            Losses.DecayResidualsJacobian(p[0], p[1], _t, _y, residuals, jacobian);
    }
}

/// <summary>The residuals the least-squares benchmark fits (kept beside it, outside the loss corpus of the report).</summary>
public static partial class Losses
{
    /// <summary>Residuals yᵢ − a·exp(−b·tᵢ) of an invented decay, written into <paramref name="r"/> (generated Jacobian).</summary>
    [Differentiate(nameof(a), nameof(b))]
    public static void DecayResiduals(double a, double b, ReadOnlySpan<double> t, ReadOnlySpan<double> y, Span<double> r)
    {
        for (int i = 0; i < t.Length; i++)
        {
            r[i] = y[i] - (a * Math.Exp(-b * t[i]));
        }
    }
}
