using System;
using BenchmarkDotNet.Attributes;

namespace DerivGen.Benchmarks;

/// <summary>Least squares over 10,000 invented points, 3 parameters.</summary>
[MemoryDiagnoser]
public class DecayFitBenchmark
{
    private readonly double[] _t = new double[10_000];
    private readonly double[] _y = new double[10_000];
    private readonly double[] _g = new double[3];

    public DecayFitBenchmark()
    {
        for (int i = 0; i < _t.Length; i++)
        {
            _t[i] = i * 0.001;
            _y[i] = (2 * Math.Exp(-1.3 * _t[i])) + 0.5 + (0.01 * Math.Sin(i));
        }
    }

    [Benchmark(Baseline = true)]
    public double Value() => Losses.DecayFit(1.9, 1.2, 0.45, _t, _y);

    [Benchmark]
    public double GeneratedGradient() => Losses.DecayFitGradient(1.9, 1.2, 0.45, _t, _y, _g);

    [Benchmark]
    public double HandWrittenGradient() => HandWritten.DecayFit(1.9, 1.2, 0.45, _t, _y, _g);
}

/// <summary>Logistic regression over 10,000 invented samples with 20 or 50 features (a vector of weights + bias).</summary>
[MemoryDiagnoser]
public class LogisticBenchmark
{
    private double[,] _x = new double[0, 0];
    private double[] _y = Array.Empty<double>();
    private double[] _w = Array.Empty<double>();
    private double[] _g = Array.Empty<double>();

    [Params(20, 50)]
    public int Features { get; set; }

    [GlobalSetup]
    public void Setup()
    {
        _x = new double[10_000, Features];
        _y = new double[10_000];
        _w = new double[Features];
        _g = new double[Features + 1];
        for (int i = 0; i < _y.Length; i++)
        {
            for (int j = 0; j < Features; j++)
            {
                _x[i, j] = Math.Sin((i * 0.7) + (j * 1.3));
            }

            _y[i] = (i % 3) == 0 ? 1 : 0;
        }

        for (int j = 0; j < Features; j++)
        {
            _w[j] = 0.05 * (j - (Features / 2));
        }
    }

    [Benchmark(Baseline = true)]
    public double Value() => Losses.Logistic(0.1, _w, _x, _y);

    [Benchmark]
    public double GeneratedGradient() => Losses.LogisticGradient(0.1, _w, _x, _y, _g);

    [Benchmark]
    public double HandWrittenGradient() => HandWritten.Logistic(0.1, _w, _x, _y, _g);
}

/// <summary>Rosenbrock's function: straight-line code, 2 variables.</summary>
[MemoryDiagnoser]
public class RosenbrockBenchmark
{
    private readonly double[] _g = new double[2];
    private readonly double[] _h = new double[4];

    // Fields, not constants, so that the JIT cannot fold the whole call away.
    private double _x = -1.2;
    private double _y = 1.0;

    [Benchmark(Baseline = true)]
    public double Value() => Losses.Rosenbrock(_x, _y);

    [Benchmark]
    public double GeneratedGradient() => Losses.RosenbrockGradient(_x, _y, _g);

    [Benchmark]
    public double HandWrittenGradient() => HandWritten.Rosenbrock(_x, _y, _g);

    [Benchmark]
    public double GeneratedHessian() => Losses.RosenbrockHessian(_x, _y, _g, _h);
}
