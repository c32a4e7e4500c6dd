using System;
using MathNet.Numerics.Differentiation;

namespace DerivGen.Benchmarks;

/// <summary>
/// What every loss benchmark shares: the output spans, and MathNet.Numerics central differences (3-point, the
/// library's default) applied to the user's value method at the same point — what a user without DerivGen would
/// reach for. Every derived class declares the same benchmark method names (see <see cref="MethodNames"/>), which is
/// what the report reads.
/// </summary>
public abstract class LossBenchmark
{
    /// <summary>Benchmark method names, in report order. A class declares those that apply to it.</summary>
    public static readonly string[] MethodNames =
    {
        "Value", "GeneratedGradient", "HandWrittenGradient", "FdGradient",
        "GeneratedHessian", "HandWrittenHessian", "FdHessian",
    };

    private readonly NumericalJacobian _jacobian = new(3, 1);
    private readonly NumericalHessian _hessian = new(3, 1);
    private Func<double[], double> _objective = _ => double.NaN;

    /// <summary>The number of variables n (gradient length).</summary>
    public int VariableCount { get; private set; }

    /// <summary>The variables at the benchmark point, flattened as the generated methods order them.</summary>
    public double[] Point { get; private set; } = Array.Empty<double>();

    /// <summary>Gradient output of the generated and hand-written methods (n elements).</summary>
    public double[] Gradient { get; private set; } = Array.Empty<double>();

    /// <summary>Hessian output of the generated and hand-written methods (n×n, row-major).</summary>
    public double[] Hessian { get; private set; } = Array.Empty<double>();

    /// <summary>The last finite-difference gradient.</summary>
    public double[] LastFdGradient { get; private set; } = Array.Empty<double>();

    /// <summary>The last finite-difference Hessian, row-major.</summary>
    public double[,] LastFdHessian { get; private set; } = new double[0, 0];

    /// <summary>Function evaluations of the last finite-difference call (counted by MathNet).</summary>
    public int LastFdEvaluations { get; private set; }

    /// <summary>MathNet.Numerics central-difference gradient of the user's value method (allocates, as the library does).</summary>
    protected double ComputeFdGradient()
    {
        _jacobian.ResetFunctionEvaluations();
        double[] g = _jacobian.Evaluate(_objective, Point);
        LastFdGradient = g;
        LastFdEvaluations = _jacobian.FunctionEvaluations;
        return g[0];
    }

    /// <summary>MathNet.Numerics central-difference Hessian of the user's value method.</summary>
    protected double ComputeFdHessian()
    {
        _hessian.ResetFunctionEvaluations();
        double[,] h = _hessian.Evaluate(_objective, Point);
        LastFdHessian = h;
        LastFdEvaluations = _hessian.FunctionEvaluations;
        return h[0, 0];
    }

    /// <summary>Sets the point and the objective for finite differences and sizes the output spans.</summary>
    /// <param name="point">The variables, flattened (scalars, then vector elements, in declaration order).</param>
    /// <param name="objective">The user's value method as a function of the flattened variables.</param>
    protected void Init(double[] point, Func<double[], double> objective)
    {
        VariableCount = point.Length;
        Point = point;
        _objective = objective;
        Gradient = new double[point.Length];
        Hessian = new double[point.Length * point.Length];
    }
}
