using System;

namespace DerivGen.Minimization;

/// <summary>
/// Stopping rules and line-search parameters of the minimisers in <see cref="Minimize"/>. Create one, set what you
/// need, and pass it to every call; the defaults are listed on each property. A minimiser stops at the first rule
/// met, tested in this order: the gradient at the start or after a step (<see cref="GradientTolerance"/>), the
/// observer, the step (<see cref="StepTolerance"/>), the change of value (<see cref="ValueTolerance"/>), the
/// iteration limit and the evaluation limit; and whenever the line search finds no acceptable step
/// (<see cref="StopReason.NoProgress"/>). Newton–CG has no line search: a rejected trial step shrinks the trust region,
/// and it stops when a rejected trial step already meets the step test (<see cref="StopReason.StepSmall"/>) or
/// changes no component of x (<see cref="StopReason.NoProgress"/>).
/// </summary>
public sealed class MinimizeSettings
{
    private int _maxIterations = 1000;
    private int _maxEvaluations = 100_000;
    private double _gradientTolerance = 1e-8;
    private double _stepTolerance = 1e-12;
    private double _valueTolerance;
    private double _sufficientDecrease = 1e-4;
    private double _curvature = 0.9;
    private int _lineSearchLimit = 40;
    private int _historyLength = 8;
    private double _initialStep = 1;
    private double _trustRadius = 1;

    /// <summary>Stop after this many iterations (<see cref="StopReason.IterationLimit"/>). Default 1000.
    /// Gradient descent usually needs many more on curved problems.</summary>
    public int MaxIterations { get => _maxIterations; set => _maxIterations = Positive(value); }

    /// <summary>Stop once the objective has been called this many times, counting value, gradient, Hessian and
    /// Hessian–vector calls alike (<see cref="StopReason.EvaluationLimit"/>). Default 100 000.</summary>
    public int MaxEvaluations { get => _maxEvaluations; set => _maxEvaluations = Positive(value); }

    /// <summary>Converged (<see cref="StopReason.GradientSmall"/>) when max |∂f/∂xⱼ| ≤ GradientTolerance · max(1, |f|).
    /// Default 1e-8. 0 means: only an exactly zero gradient.</summary>
    public double GradientTolerance { get => _gradientTolerance; set => _gradientTolerance = NonNegative(value); }

    /// <summary>Converged (<see cref="StopReason.StepSmall"/>) when every component of the last step satisfies
    /// |Δxⱼ| ≤ StepTolerance · (1 + |xⱼ|) (for Newton–CG also a rejected trial step). Default 1e-12; 0 turns the test
    /// off.</summary>
    public double StepTolerance { get => _stepTolerance; set => _stepTolerance = NonNegative(value); }

    /// <summary>Converged (<see cref="StopReason.ValueChangeSmall"/>) when the last step changed f by at most
    /// ValueTolerance · max(1, |f|). Default 0: off (a slow method makes small changes far from a minimum).</summary>
    public double ValueTolerance { get => _valueTolerance; set => _valueTolerance = NonNegative(value); }

    /// <summary>c₁ of the sufficient-decrease (Armijo) condition f(x + αd) ≤ f(x) + c₁ α ∇f(x)ᵀd, in (0, 1).
    /// Default 1e-4 (Nocedal &amp; Wright, Numerical Optimization, 2nd ed., §3.1).</summary>
    public double SufficientDecrease
    {
        get => _sufficientDecrease;
        set => _sufficientDecrease = value > 0 && value < 1 ? value : throw new ArgumentOutOfRangeException(nameof(value), value, "Must be in (0, 1).");
    }

    /// <summary>c₂ of the strong Wolfe curvature condition |∇f(x + αd)ᵀd| ≤ c₂ |∇f(x)ᵀd| used by BFGS and L-BFGS,
    /// in (<see cref="SufficientDecrease"/>, 1). Default 0.9 (Nocedal &amp; Wright §3.1, for quasi-Newton methods).</summary>
    public double Curvature
    {
        get => _curvature;
        set => _curvature = value > 0 && value < 1 ? value : throw new ArgumentOutOfRangeException(nameof(value), value, "Must be in (0, 1).");
    }

    /// <summary>Objective calls one line search may make before giving up (<see cref="StopReason.NoProgress"/>).
    /// Default 40.</summary>
    public int LineSearchLimit { get => _lineSearchLimit; set => _lineSearchLimit = Positive(value); }

    /// <summary>Number of (s, y) pairs L-BFGS keeps. Default 8 (3 to 20 is usual: Nocedal &amp; Wright §7.2).</summary>
    public int HistoryLength { get => _historyLength; set => _historyLength = Positive(value); }

    /// <summary>The first trial step length of gradient descent's backtracking line search in the first iteration
    /// (later iterations start from twice the previous accepted length). Default 1.</summary>
    public double InitialStep
    {
        get => _initialStep;
        set => _initialStep = value > 0 && !double.IsInfinity(value) ? value : throw new ArgumentOutOfRangeException(nameof(value), value, "Must be positive and finite.");
    }

    /// <summary>Newton–CG's first trust-region radius Δ₀ (Euclidean norm of the step). Default 1. The radius is then
    /// adapted (Nocedal &amp; Wright, Algorithm 4.1): quartered when a step achieves less than a quarter of the
    /// reduction its model predicts, doubled when a step on the boundary achieves more than three quarters.</summary>
    public double TrustRadius
    {
        get => _trustRadius;
        set => _trustRadius = value > 0 && !double.IsInfinity(value) ? value : throw new ArgumentOutOfRangeException(nameof(value), value, "Must be positive and finite.");
    }

    internal void Validate()
    {
        if (_sufficientDecrease >= _curvature)
        {
            throw new ArgumentException($"SufficientDecrease ({_sufficientDecrease}) must be less than Curvature ({_curvature}).");
        }
    }

    internal static int Positive(int value) =>
        value > 0 ? value : throw new ArgumentOutOfRangeException(nameof(value), value, "Must be positive.");

    internal static double NonNegative(double value) =>
        value >= 0 && !double.IsInfinity(value) ? value : throw new ArgumentOutOfRangeException(nameof(value), value, "Must be zero or positive and finite.");
}

/// <summary>
/// Stopping rules of <see cref="LeastSquares.LevenbergMarquardt{TModel}"/>; the defaults are listed on each property.
/// The tests are those of Moré's MINPACK implementation (Moré, "The Levenberg–Marquardt algorithm: implementation
/// and theory", Lecture Notes in Mathematics 630, 1978), with tighter defaults, since the problems it is meant for
/// are small and evaluations cheap.
/// </summary>
public sealed class LeastSquaresSettings
{
    private int _maxIterations = 1000;
    private int _maxEvaluations = 10_000;
    private double _gradientTolerance = 1e-12;
    private double _stepTolerance = 1e-10;
    private double _valueTolerance;
    private double _initialDamping = 1e-3;
    private bool _geodesicAcceleration;

    /// <summary>Stop after this many accepted steps (<see cref="StopReason.IterationLimit"/>). Default 1000.</summary>
    public int MaxIterations { get => _maxIterations; set => _maxIterations = MinimizeSettings.Positive(value); }

    /// <summary>Converged (<see cref="StopReason.GradientSmall"/>) when every column of J is nearly orthogonal to the
    /// residuals: max |Jⱼᵀr| / (‖Jⱼ‖ ‖r‖) ≤ GradientTolerance (MINPACK's gtol test), or r = 0. Default 1e-12.</summary>
    public double GradientTolerance { get => _gradientTolerance; set => _gradientTolerance = MinimizeSettings.NonNegative(value); }

    /// <summary>Stop once the model has been called this many times, residuals and Jacobians alike
    /// (<see cref="StopReason.EvaluationLimit"/>). Default 10 000.</summary>
    public int MaxEvaluations { get => _maxEvaluations; set => _maxEvaluations = MinimizeSettings.Positive(value); }

    /// <summary>Converged (<see cref="StopReason.StepSmall"/>) when the accepted step is small in Moré's scaled norm:
    /// ‖DΔx‖₂ ≤ StepTolerance · ‖Dx‖₂. Default 1e-10.</summary>
    public double StepTolerance { get => _stepTolerance; set => _stepTolerance = MinimizeSettings.NonNegative(value); }

    /// <summary>Converged (<see cref="StopReason.ValueChangeSmall"/>) when both the actual and the predicted relative
    /// reduction of Σ rᵢ² in a step are at most ValueTolerance (MINPACK's ftol test). Default 0: off, because near a
    /// minimum Σ rᵢ² stops changing (to within its rounding) well before the parameters do.</summary>
    public double ValueTolerance { get => _valueTolerance; set => _valueTolerance = MinimizeSettings.NonNegative(value); }

    /// <summary>Geodesic acceleration (Transtrum &amp; Sethna, arXiv:1201.5885, 2012): each trial step v gets the
    /// second-order correction ½a, a solving the damped system for the residuals' second directional derivative along
    /// v (a finite difference, one extra residual call per trial), and a trial with 2‖Da‖ &gt; 0.75‖Dv‖ is refused
    /// like a rejected step. Default false: on the NIST problems (docs/nist-table.md) it reaches BoxBOD's certified
    /// values from start 1, where the plain method stops on a plateau, but from MGH17's start 1 it is still far from
    /// the solution after 1000 iterations, costs about twice the residual calls, and moves the digits of the
    /// ill-conditioned problems both ways.</summary>
    public bool GeodesicAcceleration { get => _geodesicAcceleration; set => _geodesicAcceleration = value; }

    /// <summary>The first damping λ₀, relative to the scaled JᵀJ (whose diagonal is 1 at the start). Default 1e-3
    /// (Marquardt's choice, common practice).</summary>
    public double InitialDamping
    {
        get => _initialDamping;
        set => _initialDamping = value > 0 && !double.IsInfinity(value) ? value : throw new ArgumentOutOfRangeException(nameof(value), value, "Must be positive and finite.");
    }
}
