namespace DerivGen.Minimization;

/// <summary>What a minimiser of <see cref="Minimize"/> returns; the solution itself is written into the caller's span.</summary>
public readonly struct MinimizeResult
{
    /// <summary>Creates a result (the minimisers do this).</summary>
    public MinimizeResult(double value, double gradientNorm, int iterations, int valueEvaluations, int gradientEvaluations, int hessianEvaluations, StopReason reason)
        : this(value, gradientNorm, iterations, valueEvaluations, gradientEvaluations, hessianEvaluations, 0, reason)
    {
    }

    /// <summary>Creates a result with Hessian–vector products counted (the minimisers do this).</summary>
    public MinimizeResult(double value, double gradientNorm, int iterations, int valueEvaluations, int gradientEvaluations, int hessianEvaluations, int hessianVectorEvaluations, StopReason reason)
    {
        HessianVectorEvaluations = hessianVectorEvaluations;
        Value = value;
        GradientNorm = gradientNorm;
        Iterations = iterations;
        ValueEvaluations = valueEvaluations;
        GradientEvaluations = gradientEvaluations;
        HessianEvaluations = hessianEvaluations;
        Reason = reason;
    }

    /// <summary>f at the solution.</summary>
    public double Value { get; }

    /// <summary>max |∂f/∂xⱼ| at the solution.</summary>
    public double GradientNorm { get; }

    /// <summary>Iterations done (steps taken).</summary>
    public int Iterations { get; }

    /// <summary>Calls of <see cref="IGradientObjective.Value"/>.</summary>
    public int ValueEvaluations { get; }

    /// <summary>Calls of <see cref="IGradientObjective.ValueAndGradient"/>.</summary>
    public int GradientEvaluations { get; }

    /// <summary>Calls of <see cref="IHessianObjective.ValueGradientHessian"/>.</summary>
    public int HessianEvaluations { get; }

    /// <summary>Calls of <see cref="IHessianVectorObjective.ValueGradientHessianVector"/> (Newton–CG's
    /// Hessian–vector products).</summary>
    public int HessianVectorEvaluations { get; }

    /// <summary>All calls of the objective.</summary>
    public int Evaluations => ValueEvaluations + GradientEvaluations + HessianEvaluations + HessianVectorEvaluations;

    /// <summary>Why it stopped.</summary>
    public StopReason Reason { get; }

    /// <summary>Whether a convergence test was met (<see cref="StopReason.GradientSmall"/>,
    /// <see cref="StopReason.StepSmall"/> or <see cref="StopReason.ValueChangeSmall"/>).</summary>
    public bool Converged => Reason <= StopReason.ValueChangeSmall;
}

/// <summary>What <see cref="LeastSquares.LevenbergMarquardt{TModel}"/> returns; the fitted parameters are written into
/// the caller's span, their standard errors into another if one is given.</summary>
public readonly struct LeastSquaresResult
{
    /// <summary>Creates a result (the solver does this).</summary>
    public LeastSquaresResult(double residualSumOfSquares, double gradientNorm, int iterations, int residualEvaluations, int jacobianEvaluations, int degreesOfFreedom, StopReason reason)
    {
        ResidualSumOfSquares = residualSumOfSquares;
        GradientNorm = gradientNorm;
        Iterations = iterations;
        ResidualEvaluations = residualEvaluations;
        JacobianEvaluations = jacobianEvaluations;
        DegreesOfFreedom = degreesOfFreedom;
        Reason = reason;
    }

    /// <summary>Σ rᵢ² at the solution (the value minimised).</summary>
    public double ResidualSumOfSquares { get; }

    /// <summary>max |∂(Σ rᵢ²)/∂xⱼ| = max |2 (Jᵀr)ⱼ| at the solution.</summary>
    public double GradientNorm { get; }

    /// <summary>Accepted steps.</summary>
    public int Iterations { get; }

    /// <summary>Calls of <see cref="IResidualModel.Residuals"/> (one per trial step).</summary>
    public int ResidualEvaluations { get; }

    /// <summary>Calls of <see cref="IResidualModel.ResidualsAndJacobian"/> (the start and one per accepted step).</summary>
    public int JacobianEvaluations { get; }

    /// <summary>All calls of the model.</summary>
    public int Evaluations => ResidualEvaluations + JacobianEvaluations;

    /// <summary>m − n, the residual degrees of freedom.</summary>
    public int DegreesOfFreedom { get; }

    /// <summary>The residual variance estimate s² = Σ rᵢ² / (m − n) (NaN when m ≤ n).</summary>
    public double ResidualVariance => DegreesOfFreedom > 0 ? ResidualSumOfSquares / DegreesOfFreedom : double.NaN;

    /// <summary>Why it stopped.</summary>
    public StopReason Reason { get; }

    /// <summary>Whether a convergence test was met (<see cref="StopReason.GradientSmall"/>,
    /// <see cref="StopReason.StepSmall"/> or <see cref="StopReason.ValueChangeSmall"/>).</summary>
    public bool Converged => Reason <= StopReason.ValueChangeSmall;
}
