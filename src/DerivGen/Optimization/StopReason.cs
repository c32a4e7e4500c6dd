namespace DerivGen.Minimization;

/// <summary>Why a minimiser stopped. The first three are convergence; see <see cref="MinimizeResult.Converged"/>.</summary>
public enum StopReason
{
    /// <summary>The gradient is small: for the line-search methods max |∂f/∂xⱼ| ≤ GradientTolerance · max(1, |f|);
    /// for Levenberg–Marquardt every column of J is nearly orthogonal to r (|cos| ≤ GradientTolerance) or r = 0.</summary>
    GradientSmall,

    /// <summary>The last step was small: every |Δxⱼ| ≤ StepTolerance · (1 + |xⱼ|) (line-search methods; Newton–CG
    /// also for a rejected trial step, its trust region having shrunk to that size), or ‖DΔx‖ ≤ StepTolerance · ‖Dx‖
    /// in Moré's scaled norm (Levenberg–Marquardt).</summary>
    StepSmall,

    /// <summary>The value stopped changing: |f_old − f_new| ≤ ValueTolerance · max(1, |f_old|) (line-search
    /// methods), or both the actual and the predicted relative reduction of Σ rᵢ² are ≤ ValueTolerance
    /// (Levenberg–Marquardt).</summary>
    ValueChangeSmall,

    /// <summary>MaxIterations iterations were done without meeting a convergence test.</summary>
    IterationLimit,

    /// <summary>MaxEvaluations calls of the objective were made without meeting a convergence test.</summary>
    EvaluationLimit,

    /// <summary>No step along the search direction lowers the value enough (the line search, or for
    /// Levenberg–Marquardt the damping, ran out of tries; for Newton–CG the trust region shrank until a trial step
    /// no longer changes x). Usually the point is a minimum to within rounding error and the tolerances are tighter
    /// than the arithmetic allows; it can also mean a wrong gradient or Hessian–vector product.</summary>
    NoProgress,

    /// <summary>The value or gradient at the starting point is NaN or infinite (for Newton–CG also a Hessian–vector
    /// product, in which case the point returned is the last accepted one), or (fixed-step gradient descent,
    /// which has no line search to back off) the iteration diverged to NaN or infinity. The point returned is the
    /// last one with finite values.</summary>
    NotFinite,

    /// <summary>The observer returned <see langword="false"/>.</summary>
    ObserverStopped,

    /// <summary>Fixed-step gradient descent only: f rose above its value at the start, so the step is too large for
    /// this problem. The point returned is the last one with f at most f(x₀).</summary>
    Diverged,
}
