using System;

namespace DerivGen.Minimization;

/// <summary>
/// The buffers of the minimisers in <see cref="Minimize"/> for problems with a given number of variables. Create it
/// once and pass it to every call: the minimisers then allocate nothing at all. Buffers used by one method only
/// (Newton's and BFGS's n×n matrices, L-BFGS's history) are allocated on that method's first use. Not thread-safe:
/// use one workspace per thread.
/// </summary>
public sealed class MinimizeWorkspace
{
    /// <summary>Creates the buffers for <paramref name="dimension"/> variables.</summary>
    public MinimizeWorkspace(int dimension)
    {
        if (dimension <= 0)
        {
            throw new ArgumentOutOfRangeException(nameof(dimension), dimension, "Must be positive.");
        }

        Dimension = dimension;
        Gradient = new double[dimension];
        Direction = new double[dimension];
        TrialPoint = new double[dimension];
        TrialGradient = new double[dimension];
        BestPoint = new double[dimension];
        BestGradient = new double[dimension];
        Difference = new double[dimension];
        GradientChange = new double[dimension];
    }

    /// <summary>The number of variables n.</summary>
    public int Dimension { get; }

    internal double[] Gradient { get; }

    internal double[] Direction { get; }

    internal double[] TrialPoint { get; }

    internal double[] TrialGradient { get; }

    internal double[] BestPoint { get; }

    internal double[] BestGradient { get; }

    internal double[] Difference { get; }

    internal double[] GradientChange { get; }

    internal double[]? Matrix { get; private set; }

    internal double[]? Factor { get; private set; }

    internal double[]? HistoryS { get; private set; }

    internal double[]? HistoryY { get; private set; }

    internal double[]? HistoryRho { get; private set; }

    internal double[]? HistoryAlpha { get; private set; }

    internal double[] EnsureMatrix() => Matrix ??= new double[Dimension * Dimension];

    internal double[] EnsureFactor() => Factor ??= new double[Dimension * Dimension];

    internal void EnsureHistory(int length)
    {
        if (HistoryRho is null || HistoryRho.Length != length)
        {
            HistoryS = new double[length * Dimension];
            HistoryY = new double[length * Dimension];
            HistoryRho = new double[length];
            HistoryAlpha = new double[length];
        }
    }

    internal static MinimizeWorkspace For(MinimizeWorkspace? workspace, int dimension)
    {
        if (dimension <= 0)
        {
            throw new ArgumentException("The point must have at least one element.", "x");
        }

        if (workspace is null)
        {
            return new MinimizeWorkspace(dimension);
        }

        return workspace.Dimension == dimension
            ? workspace
            : throw new ArgumentException($"The workspace is for {workspace.Dimension} variables, the point has {dimension}.", nameof(workspace));
    }
}

/// <summary>
/// The buffers of <see cref="LeastSquares.LevenbergMarquardt{TModel}"/> for m residuals and n parameters. Create it
/// once and pass it to every call: the solver then allocates nothing. Not thread-safe: use one per thread.
/// </summary>
public sealed class LeastSquaresWorkspace
{
    /// <summary>Creates the buffers for <paramref name="residualCount"/> residuals (m) and
    /// <paramref name="parameterCount"/> parameters (n).</summary>
    public LeastSquaresWorkspace(int residualCount, int parameterCount)
    {
        if (parameterCount <= 0)
        {
            throw new ArgumentOutOfRangeException(nameof(parameterCount), parameterCount, "Must be positive.");
        }

        if (residualCount <= 0)
        {
            throw new ArgumentOutOfRangeException(nameof(residualCount), residualCount, "Must be positive.");
        }

        ResidualCount = residualCount;
        ParameterCount = parameterCount;
        int m = residualCount, n = parameterCount;
        Residuals = new double[m];
        TrialResiduals = new double[m];
        Jacobian = new double[m * n];
        Augmented = new double[(m + n) * n];
        RightHandSide = new double[m + n];
        Step = new double[n];
        TrialPoint = new double[n];
        Scale = new double[n];
        Gradient = new double[n];
        ColumnNorms = new double[n];
    }

    /// <summary>m, the number of residuals.</summary>
    public int ResidualCount { get; }

    /// <summary>n, the number of parameters.</summary>
    public int ParameterCount { get; }

    internal double[] Residuals { get; }

    internal double[] TrialResiduals { get; }

    internal double[] Jacobian { get; }

    internal double[] Augmented { get; }

    internal double[] RightHandSide { get; }

    internal double[] Step { get; }

    internal double[] TrialPoint { get; }

    internal double[] Scale { get; }

    internal double[] Gradient { get; }

    internal double[] ColumnNorms { get; }

    internal static LeastSquaresWorkspace For(LeastSquaresWorkspace? workspace, int residualCount, int parameterCount)
    {
        if (parameterCount <= 0)
        {
            throw new ArgumentException("The parameter vector must have at least one element.", "x");
        }

        if (residualCount <= 0)
        {
            throw new ArgumentException($"The model's ResidualCount is {residualCount}; it must be positive.", "model");
        }

        if (workspace is null)
        {
            return new LeastSquaresWorkspace(residualCount, parameterCount);
        }

        return workspace.ResidualCount == residualCount && workspace.ParameterCount == parameterCount
            ? workspace
            : throw new ArgumentException(
                $"The workspace is for {workspace.ResidualCount} residuals and {workspace.ParameterCount} parameters; the problem has {residualCount} and {parameterCount}.",
                nameof(workspace));
    }
}
