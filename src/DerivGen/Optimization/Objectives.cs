using System;

namespace DerivGen.Minimization;

/// <summary>
/// A smooth function f: Rⁿ → R to minimise, with its gradient. Implement it on a <see langword="struct"/> that calls
/// the user's method and its generated <c>MGradient</c>: the minimisers are generic over the objective's type, so the
/// calls are direct (no boxing, no delegate) and can be inlined.
/// </summary>
/// <example>
/// <code>
/// readonly struct Fit : IGradientObjective
/// {
///     public double Value(ReadOnlySpan&lt;double&gt; x) =&gt; Model.Loss(x[0], x[1]);
///     public double ValueAndGradient(ReadOnlySpan&lt;double&gt; x, Span&lt;double&gt; gradient) =&gt; Model.LossGradient(x[0], x[1], gradient);
/// }
/// </code>
/// </example>
public interface IGradientObjective
{
    /// <summary>f(x). Return NaN or an infinity where f is not defined: the minimisers treat such a point as too far.</summary>
    double Value(ReadOnlySpan<double> x);

    /// <summary>f(x), and ∇f(x) written into the first n elements of <paramref name="gradient"/>.</summary>
    double ValueAndGradient(ReadOnlySpan<double> x, Span<double> gradient);
}

/// <summary>An objective that also provides its Hessian (for <see cref="Minimize.Newton{TObjective}"/>).</summary>
public interface IHessianObjective : IGradientObjective
{
    /// <summary>f(x); ∇f(x) into <paramref name="gradient"/> (n elements) and the n×n Hessian, row-major, into
    /// <paramref name="hessian"/> — the layout of a generated <c>MHessian</c>.</summary>
    double ValueGradientHessian(ReadOnlySpan<double> x, Span<double> gradient, Span<double> hessian);
}

/// <summary>
/// An objective that provides Hessian–vector products H(x)·v (for <see cref="Minimize.NewtonCg{TObjective}"/>), so
/// that second-order steps cost a few gradients and the n×n Hessian is never formed. The method has the layout of a
/// generated <c>MHessianVectorProduct(…, direction, gradient, product)</c>, so a struct wraps it in one line.
/// </summary>
/// <example>
/// <code>
/// readonly struct Loss : IHessianVectorObjective
/// {
///     public double Value(ReadOnlySpan&lt;double&gt; w) =&gt; Model.Loss(w);
///     public double ValueAndGradient(ReadOnlySpan&lt;double&gt; w, Span&lt;double&gt; gradient) =&gt; Model.LossGradient(w, gradient);
///     public double ValueGradientHessianVector(ReadOnlySpan&lt;double&gt; w, ReadOnlySpan&lt;double&gt; direction, Span&lt;double&gt; gradient, Span&lt;double&gt; product) =&gt;
///         Model.LossHessianVectorProduct(w, direction, gradient, product);
/// }
/// </code>
/// </example>
public interface IHessianVectorObjective : IGradientObjective
{
    /// <summary>f(x); ∇f(x) into <paramref name="gradient"/> and H(x)·<paramref name="direction"/> into
    /// <paramref name="product"/> (n elements each). Newton–CG calls it once per CG iteration at the same x with a
    /// scratch buffer as <paramref name="gradient"/>, and reads only <paramref name="product"/>.</summary>
    double ValueGradientHessianVector(ReadOnlySpan<double> x, ReadOnlySpan<double> direction, Span<double> gradient, Span<double> product);
}

/// <summary>
/// The residuals r(x) ∈ Rᵐ of a nonlinear least-squares problem, minimise Σ rᵢ(x)², and their m×n Jacobian
/// (for <see cref="LeastSquares.LevenbergMarquardt{TModel}"/>). For a model y ≈ g(t; b) fitted to data (tᵢ, yᵢ) write
/// rᵢ = yᵢ − g(tᵢ; b) as a <c>[Differentiate(Hessian = false)]</c> method of b at one data point: its generated gradient
/// is row i of the Jacobian.
/// </summary>
public interface IResidualModel
{
    /// <summary>m, the number of residuals (observations). Must not change during a fit.</summary>
    int ResidualCount { get; }

    /// <summary>Writes r(x) into <paramref name="residuals"/> (m elements).</summary>
    void Residuals(ReadOnlySpan<double> x, Span<double> residuals);

    /// <summary>Writes r(x) into <paramref name="residuals"/> and the Jacobian ∂rᵢ/∂xⱼ into
    /// <paramref name="jacobian"/>, m×n row-major (row i at <c>i * n</c>).</summary>
    void ResidualsAndJacobian(ReadOnlySpan<double> x, Span<double> residuals, Span<double> jacobian);
}

/// <summary>
/// Called once after every iteration of a minimiser, for progress reports or to stop early. Implement it on a
/// struct (or a class, to keep state across calls).
/// </summary>
public interface IIterationObserver
{
    /// <summary>Return <see langword="true"/> to go on, <see langword="false"/> to stop now
    /// (<see cref="StopReason.ObserverStopped"/>; the point reported is the solution returned).</summary>
    bool OnIteration(in IterationReport report);
}

/// <summary>The observer that never stops anything (used by the overloads without an observer).</summary>
public readonly struct NoObserver : IIterationObserver
{
    /// <inheritdoc/>
    public bool OnIteration(in IterationReport report) => true;
}

/// <summary>The state after one iteration. The spans are the minimiser's own buffers: read them during the call only.</summary>
public readonly ref struct IterationReport
{
    /// <summary>Creates a report (the minimisers do this; public for tests of observers).</summary>
    public IterationReport(int iteration, double value, double gradientNorm, double stepNorm, double stepLength,
        double regularization, int evaluations, ReadOnlySpan<double> point, ReadOnlySpan<double> gradient)
    {
        Iteration = iteration;
        Value = value;
        GradientNorm = gradientNorm;
        StepNorm = stepNorm;
        StepLength = stepLength;
        Regularization = regularization;
        Evaluations = evaluations;
        Point = point;
        Gradient = gradient;
    }

    /// <summary>Iterations completed so far (1 for the first report).</summary>
    public int Iteration { get; }

    /// <summary>f at the new point; for least squares the residual sum of squares Σ rᵢ².</summary>
    public double Value { get; }

    /// <summary>max |∂f/∂xⱼ| at the new point (for least squares, of the gradient of Σ rᵢ², which is 2Jᵀr).</summary>
    public double GradientNorm { get; }

    /// <summary>max |Δxⱼ| of the step just taken.</summary>
    public double StepNorm { get; }

    /// <summary>The line search's step length α (x ← x + α d); 1 for Levenberg–Marquardt and Newton–CG and a fixed
    /// step's size for fixed-step gradient descent.</summary>
    public double StepLength { get; }

    /// <summary>Newton: the multiple τ of diag(|Hᵢᵢ|) added to the Hessian to make it positive definite (0 when it
    /// already was). Levenberg–Marquardt: the damping λ of the accepted step. Newton–CG: the trust-region radius Δ
    /// the accepted step was computed in. Otherwise 0.</summary>
    public double Regularization { get; }

    /// <summary>Calls of the objective so far (of any kind).</summary>
    public int Evaluations { get; }

    /// <summary>The new point x.</summary>
    public ReadOnlySpan<double> Point { get; }

    /// <summary>The gradient at the new point (for least squares, 2Jᵀr, the gradient of Σ rᵢ²).</summary>
    public ReadOnlySpan<double> Gradient { get; }
}
