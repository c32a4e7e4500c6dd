using System;
using BenchmarkDotNet.Attributes;

namespace DerivGen.Benchmarks;

// One class per loss. Each has the user's value method as Baseline, so BenchmarkDotNet's Ratio column is "× the
// value", and declares the methods of LossBenchmark.MethodNames that apply: the generated value+gradient (and
// value+gradient+Hessian where the generator supports it), the hand-written ones, and MathNet.Numerics central
// differences. Points and data are invented (deterministic formulas); variables live in fields so that the JIT
// cannot fold a call away.

/// <summary>
/// Rosenbrock's function: straight-line code, 2 scalar variables. One call takes about a nanosecond, below what a
/// single measurement resolves, so each invocation evaluates at <see cref="Points"/> different points and the times
/// are per call (OperationsPerInvoke). Finite differences run at the last point (their own cost per call).
/// </summary>
[MemoryDiagnoser]
public class RosenbrockBenchmark : LossBenchmark
{
    public const int Points = 16;
    private readonly double[] _x = new double[Points];
    private readonly double[] _y = new double[Points];

    [GlobalSetup]
    public void Setup()
    {
        for (int i = 0; i < Points; i++)
        {
            _x[i] = -1.2 + (0.15 * i);
            _y[i] = 1.0 - (0.05 * i);
        }

        Init(new[] { _x[Points - 1], _y[Points - 1] }, p => Losses.Rosenbrock(p[0], p[1]));
    }

    [Benchmark(Baseline = true, OperationsPerInvoke = Points)]
    public double Value()
    {
        double sum = 0;
        for (int i = 0; i < Points; i++)
        {
            sum += Losses.Rosenbrock(_x[i], _y[i]);
        }

        return sum;
    }

    [Benchmark(OperationsPerInvoke = Points)]
    public double GeneratedGradient()
    {
        double sum = 0;
        for (int i = 0; i < Points; i++)
        {
            sum += Losses.RosenbrockGradient(_x[i], _y[i], Gradient);
        }

        return sum;
    }

    [Benchmark(OperationsPerInvoke = Points)]
    public double HandWrittenGradient()
    {
        double sum = 0;
        for (int i = 0; i < Points; i++)
        {
            sum += HandWritten.Rosenbrock(_x[i], _y[i], Gradient);
        }

        return sum;
    }

    [Benchmark]
    public double FdGradient() => ComputeFdGradient();

    [Benchmark(OperationsPerInvoke = Points)]
    public double GeneratedHessian()
    {
        double sum = 0;
        for (int i = 0; i < Points; i++)
        {
            sum += Losses.RosenbrockHessian(_x[i], _y[i], Gradient, Hessian);
        }

        return sum;
    }

    [Benchmark(OperationsPerInvoke = Points)]
    public double HandWrittenHessian()
    {
        double sum = 0;
        for (int i = 0; i < Points; i++)
        {
            sum += HandWritten.RosenbrockHessian(_x[i], _y[i], Gradient, Hessian);
        }

        return sum;
    }

    [Benchmark]
    public double FdHessian() => ComputeFdHessian();
}

/// <summary>A trigonometric/exponential mix: straight-line code, 3 scalar variables.</summary>
[MemoryDiagnoser]
public class TrigExpBenchmark : LossBenchmark
{
    private double _x = 0.7;
    private double _y = -0.4;
    private double _z = 0.3;

    [GlobalSetup]
    public void Setup() => Init(new[] { _x, _y, _z }, p => Losses.TrigExp(p[0], p[1], p[2]));

    [Benchmark(Baseline = true)]
    public double Value() => Losses.TrigExp(_x, _y, _z);

    [Benchmark]
    public double GeneratedGradient() => Losses.TrigExpGradient(_x, _y, _z, Gradient);

    [Benchmark]
    public double HandWrittenGradient() => HandWritten.TrigExp(_x, _y, _z, Gradient);

    [Benchmark]
    public double FdGradient() => ComputeFdGradient();

    [Benchmark]
    public double GeneratedHessian() => Losses.TrigExpHessian(_x, _y, _z, Gradient, Hessian);

    [Benchmark]
    public double HandWrittenHessian() => HandWritten.TrigExpHessian(_x, _y, _z, Gradient, Hessian);

    [Benchmark]
    public double FdHessian() => ComputeFdHessian();
}

/// <summary>Least squares over 10,000 invented points, 3 scalar parameters of a·exp(−b·t) + c.</summary>
[MemoryDiagnoser]
public class DecayFitBenchmark : LossBenchmark
{
    private readonly double[] _t = new double[10_000];
    private readonly double[] _y = new double[10_000];
    private double _a = 1.9;
    private double _b = 1.2;
    private double _c = 0.45;

    [GlobalSetup]
    public void Setup()
    {
        for (int i = 0; i < _t.Length; i++)
        {
            _t[i] = i * 0.001;
            _y[i] = (2 * Math.Exp(-1.3 * _t[i])) + 0.5 + (0.01 * Math.Sin(i));
        }

        Init(new[] { _a, _b, _c }, p => Losses.DecayFit(p[0], p[1], p[2], _t, _y));
    }

    [Benchmark(Baseline = true)]
    public double Value() => Losses.DecayFit(_a, _b, _c, _t, _y);

    [Benchmark]
    public double GeneratedGradient() => Losses.DecayFitGradient(_a, _b, _c, _t, _y, Gradient);

    [Benchmark]
    public double HandWrittenGradient() => HandWritten.DecayFit(_a, _b, _c, _t, _y, Gradient);

    [Benchmark]
    public double FdGradient() => ComputeFdGradient();

    [Benchmark]
    public double GeneratedHessian() => Losses.DecayFitHessian(_a, _b, _c, _t, _y, Gradient, Hessian);

    [Benchmark]
    public double HandWrittenHessian() => HandWritten.DecayFitHessian(_a, _b, _c, _t, _y, Gradient, Hessian);

    [Benchmark]
    public double FdHessian() => ComputeFdHessian();
}

/// <summary>
/// Logistic regression over 10,000 invented samples with 20 or 50 features: a bias and a vector of weights
/// (n = features + 1). No generated Hessian in the corpus: the pairwise Hessian takes about a second per call here.
/// </summary>
[MemoryDiagnoser]
public class LogisticBenchmark : LossBenchmark
{
    private double[,] _x = new double[0, 0];
    private double[] _y = Array.Empty<double>();
    private double[] _w = Array.Empty<double>();
    private double[] _wScratch = Array.Empty<double>();
    private double _bias = 0.1;

    [Params(20, 50)]
    public int Features { get; set; }

    [GlobalSetup]
    public void Setup()
    {
        const int samples = 10_000;
        _x = new double[samples, Features];
        _y = new double[samples];
        _w = new double[Features];
        _wScratch = new double[Features];
        for (int i = 0; i < samples; i++)
        {
            for (int j = 0; j < Features; j++)
            {
                _x[i, j] = Math.Sin((i * 0.7) + (j * 1.3));
            }

            _y[i] = (i % 3) == 0 ? 1 : 0;
        }

        var point = new double[Features + 1];
        point[0] = _bias;
        for (int j = 0; j < Features; j++)
        {
            _w[j] = 0.05 * (j - (Features / 2));
            point[j + 1] = _w[j];
        }

        Init(point, p =>
        {
            Array.Copy(p, 1, _wScratch, 0, Features);
            return Losses.Logistic(p[0], _wScratch, _x, _y);
        });
    }

    [Benchmark(Baseline = true)]
    public double Value() => Losses.Logistic(_bias, _w, _x, _y);

    [Benchmark]
    public double GeneratedGradient() => Losses.LogisticGradient(_bias, _w, _x, _y, Gradient);

    [Benchmark]
    public double HandWrittenGradient() => HandWritten.Logistic(_bias, _w, _x, _y, Gradient);

    [Benchmark]
    public double FdGradient() => ComputeFdGradient();

    [Benchmark]
    public double HandWrittenHessian() => HandWritten.LogisticHessian(_bias, _w, _x, _y, Gradient, Hessian);

    [Benchmark]
    public double FdHessian() => ComputeFdHessian();
}

/// <summary>
/// A two-layer tanh network (4 inputs, 8 hidden units, 1 output: 49 weights in one vector variable) fitted to
/// 1,000 invented samples. No generated Hessian in the corpus (pairwise, too slow at this size).
/// </summary>
[MemoryDiagnoser]
public class TanhNetBenchmark : LossBenchmark
{
    private const int Inputs = 4;
    private const int Hidden = 8;
    private const int Samples = 1_000;
    private readonly double[,] _x = new double[Samples, Inputs];
    private readonly double[] _y = new double[Samples];
    private readonly double[] _w = new double[(Hidden * Inputs) + Hidden + Hidden + 1];

    [GlobalSetup]
    public void Setup()
    {
        for (int i = 0; i < Samples; i++)
        {
            for (int j = 0; j < Inputs; j++)
            {
                _x[i, j] = Math.Cos((0.37 * i) + (1.1 * j));
            }

            _y[i] = Math.Sin(_x[i, 0] + (0.5 * _x[i, 1])) - (0.3 * _x[i, 2] * _x[i, 3]);
        }

        for (int k = 0; k < _w.Length; k++)
        {
            _w[k] = 0.3 * Math.Sin(1.7 * (k + 1));
        }

        Init((double[])_w.Clone(), p => Losses.TanhNet(p, _x, _y, Hidden));
    }

    [Benchmark(Baseline = true)]
    public double Value() => Losses.TanhNet(_w, _x, _y, Hidden);

    [Benchmark]
    public double GeneratedGradient() => Losses.TanhNetGradient(_w, _x, _y, Hidden, Gradient);

    [Benchmark]
    public double HandWrittenGradient() => HandWritten.TanhNet(_w, _x, _y, Hidden, Gradient);

    [Benchmark]
    public double FdGradient() => ComputeFdGradient();

    [Benchmark]
    public double HandWrittenHessian() => HandWritten.TanhNetHessian(_w, _x, _y, Hidden, Gradient, Hessian);

    [Benchmark]
    public double FdHessian() => ComputeFdHessian();
}

/// <summary>
/// The extended Rosenbrock function at n = 10, 100, 1000 (one vector variable). The generated Hessian is the pairwise
/// one (n(n + 1)/2 passes); the Hessian rows run for n ≤ 100 only (see Program.cs).
/// </summary>
[MemoryDiagnoser]
public class ExtendedRosenbrockBenchmark : LossBenchmark
{
    private double[] _x = Array.Empty<double>();

    [Params(10, 100, 1000)]
    public int N { get; set; }

    [GlobalSetup]
    public void Setup()
    {
        // The standard start of Moré, Garbow & Hillstrom (x_{2i} = −1.2, x_{2i+1} = 1), perturbed per pair (invented).
        _x = new double[N];
        for (int i = 0; i < N; i += 2)
        {
            _x[i] = -1.2 + (0.001 * i);
            _x[i + 1] = 1 - (0.0005 * i);
        }

        Init((double[])_x.Clone(), p => Losses.ExtendedRosenbrock(p));
    }

    [Benchmark(Baseline = true)]
    public double Value() => Losses.ExtendedRosenbrock(_x);

    [Benchmark]
    public double GeneratedGradient() => Losses.ExtendedRosenbrockGradient(_x, Gradient);

    [Benchmark]
    public double HandWrittenGradient() => HandWritten.ExtendedRosenbrock(_x, Gradient);

    [Benchmark]
    public double FdGradient() => ComputeFdGradient();

    [Benchmark]
    public double GeneratedHessian() => Losses.ExtendedRosenbrockHessian(_x, Gradient, Hessian);

    [Benchmark]
    public double HandWrittenHessian() => HandWritten.ExtendedRosenbrockHessian(_x, Gradient, Hessian);

    [Benchmark]
    public double FdHessian() => ComputeFdHessian();
}

/// <summary>200 explicit Euler steps of a projectile with quadratic drag; 3 scalar variables (launch velocity, drag).</summary>
[MemoryDiagnoser]
public class TrajectoryBenchmark : LossBenchmark
{
    private double _vx0 = 9.0;
    private double _vy0 = 11.0;
    private double _k = 0.02;
    private double _targetX = 14.0;
    private double _targetY = 1.5;

    [GlobalSetup]
    public void Setup() => Init(new[] { _vx0, _vy0, _k }, p => Losses.Trajectory(p[0], p[1], p[2], _targetX, _targetY));

    [Benchmark(Baseline = true)]
    public double Value() => Losses.Trajectory(_vx0, _vy0, _k, _targetX, _targetY);

    [Benchmark]
    public double GeneratedGradient() => Losses.TrajectoryGradient(_vx0, _vy0, _k, _targetX, _targetY, Gradient);

    [Benchmark]
    public double HandWrittenGradient() => HandWritten.Trajectory(_vx0, _vy0, _k, _targetX, _targetY, Gradient);

    [Benchmark]
    public double FdGradient() => ComputeFdGradient();

    [Benchmark]
    public double GeneratedHessian() => Losses.TrajectoryHessian(_vx0, _vy0, _k, _targetX, _targetY, Gradient, Hessian);

    [Benchmark]
    public double HandWrittenHessian() => HandWritten.TrajectoryHessian(_vx0, _vy0, _k, _targetX, _targetY, Gradient, Hessian);

    [Benchmark]
    public double FdHessian() => ComputeFdHessian();
}

/// <summary>
/// Huber regression over 10,000 invented samples, 8 coefficients in one vector variable, a branch on |r| per
/// sample (about a fifth of the residuals fall in the linear part). No generated Hessian in the corpus (pairwise, too slow at this size).
/// </summary>
[MemoryDiagnoser]
public class HuberBenchmark : LossBenchmark
{
    private const int Samples = 10_000;
    private const int Coefficients = 8;
    private const double Delta = 1.0;
    private readonly double[,] _x = new double[Samples, Coefficients];
    private readonly double[] _y = new double[Samples];
    private readonly double[] _w = new double[Coefficients];

    [GlobalSetup]
    public void Setup()
    {
        for (int i = 0; i < Samples; i++)
        {
            double truth = 0;
            for (int j = 0; j < Coefficients; j++)
            {
                _x[i, j] = Math.Sin((0.91 * i) + (0.53 * j * j));
                truth += (j + 1) * 0.25 * _x[i, j];
            }

            // Heavy-tailed invented noise: mostly small, every fifth sample an outlier.
            _y[i] = truth + (0.3 * Math.Sin(2.3 * i)) + ((i % 5) == 0 ? 4 * Math.Cos(i) : 0);
        }

        for (int j = 0; j < Coefficients; j++)
        {
            _w[j] = 0.2 * (j + 1);
        }

        Init((double[])_w.Clone(), p => Losses.Huber(p, _x, _y, Delta));
    }

    [Benchmark(Baseline = true)]
    public double Value() => Losses.Huber(_w, _x, _y, Delta);

    [Benchmark]
    public double GeneratedGradient() => Losses.HuberGradient(_w, _x, _y, Delta, Gradient);

    [Benchmark]
    public double HandWrittenGradient() => HandWritten.Huber(_w, _x, _y, Delta, Gradient);

    [Benchmark]
    public double FdGradient() => ComputeFdGradient();

    [Benchmark]
    public double HandWrittenHessian() => HandWritten.HuberHessian(_w, _x, _y, Delta, Gradient, Hessian);

    [Benchmark]
    public double FdHessian() => ComputeFdHessian();
}
