using System;

namespace DerivGen.Minimization;

/// <summary>
/// Unconstrained minimisers of a smooth f: Rⁿ → R. Each takes the starting point in <c>x</c> and leaves the solution
/// there, and returns a <see cref="MinimizeResult"/>. They are generic over the objective (implement
/// <see cref="IGradientObjective"/>, <see cref="IHessianObjective"/> or <see cref="IHessianVectorObjective"/> on a
/// struct for direct, inlinable calls) and
/// over an optional <see cref="IIterationObserver"/>. With a <see cref="MinimizeWorkspace"/> passed in they allocate
/// nothing; without one they allocate it once per call. They use no reflection and are trimming- and AOT-safe.
/// </summary>
/// <remarks>
/// Stopping rules (all in <see cref="MinimizeSettings"/>): the gradient test is made at the start and after every
/// iteration; after every iteration the observer is called, then the gradient, step and value-change tests are
/// made, then the iteration limit. The evaluation limit is checked before every call of the objective.
/// </remarks>
public static partial class Minimize
{
    // Created on first use without settings, not in a static initialiser: a caller that passes its own settings (made
    // before its hot loop) never allocates, not even the first time.
    private static MinimizeSettings? s_defaults;

    /// <summary>Gradient descent with a fixed step: x ← x − α ∇f(x). No line search: too large a step diverges
    /// (<see cref="StopReason.Diverged"/> as soon as f exceeds f(x₀), or <see cref="StopReason.NotFinite"/>), too
    /// small a step crawls. Each iteration makes one gradient call.</summary>
    /// <param name="objective">The function to minimise.</param>
    /// <param name="x">The starting point on entry; the solution (the last point with finite value) on return.</param>
    /// <param name="stepSize">α &gt; 0.</param>
    /// <param name="settings">Stopping rules; null for the defaults.</param>
    /// <param name="workspace">Buffers for x.Length variables; null to allocate them for this call.</param>
    public static MinimizeResult GradientDescentFixedStep<TObjective>(TObjective objective, Span<double> x, double stepSize, MinimizeSettings? settings = null, MinimizeWorkspace? workspace = null)
        where TObjective : IGradientObjective =>
        GradientDescentFixedStep(objective, x, stepSize, default(NoObserver), settings, workspace);

    /// <inheritdoc cref="GradientDescentFixedStep{TObjective}(TObjective, Span{double}, double, MinimizeSettings?, MinimizeWorkspace?)"/>
    /// <param name="objective">The function to minimise.</param>
    /// <param name="x">The starting point on entry; the solution (the last point with finite value) on return.</param>
    /// <param name="stepSize">α &gt; 0.</param>
    /// <param name="observer">Called after every iteration; returns false to stop.</param>
    /// <param name="settings">Stopping rules; null for the defaults.</param>
    /// <param name="workspace">Buffers for x.Length variables; null to allocate them for this call.</param>
    public static MinimizeResult GradientDescentFixedStep<TObjective, TObserver>(TObjective objective, Span<double> x, double stepSize, TObserver observer, MinimizeSettings? settings = null, MinimizeWorkspace? workspace = null)
        where TObjective : IGradientObjective
        where TObserver : IIterationObserver
    {
        if (!(stepSize > 0) || double.IsInfinity(stepSize))
        {
            throw new ArgumentOutOfRangeException(nameof(stepSize), stepSize, "Must be positive and finite.");
        }

        var s = Prepare(settings);
        var w = MinimizeWorkspace.For(workspace, x.Length);
        var counters = new Counters { Limit = s.MaxEvaluations };
        Span<double> g = w.Gradient, trial = w.TrialPoint, trialGradient = w.TrialGradient;

        if (!Start(objective, x, g, ref counters, out double f, out var early))
        {
            return early;
        }

        if (Converged(g, f, s) is { } atStart)
        {
            return Result(f, DenseMath.MaxAbs(g), 0, counters, atStart);
        }

        double f0 = f;
        int iteration = 0;
        while (true)
        {
            double gradientNorm = DenseMath.MaxAbs(g);
            if (counters.Exhausted)
            {
                return Result(f, gradientNorm, iteration, counters, StopReason.EvaluationLimit);
            }

            DenseMath.Step(x, -stepSize, g, trial);
            double fNew = objective.ValueAndGradient(trial, trialGradient);
            counters.Gradients++;
            if (!DenseMath.IsFinite(fNew) || !DenseMath.AllFinite(trialGradient.Slice(0, x.Length)))
            {
                return Result(f, gradientNorm, iteration, counters, StopReason.NotFinite);
            }

            if (fNew > f0)
            {
                return Result(f, gradientNorm, iteration, counters, StopReason.Diverged);
            }

            iteration++;
            var stop = AfterStep(x, trial, ref f, fNew, g, trialGradient, stepSize, 0, iteration, counters, s, ref observer);
            if (stop is { } reason)
            {
                return Result(f, DenseMath.MaxAbs(g), iteration, counters, reason);
            }
        }
    }

    /// <summary>Gradient descent with a backtracking (Armijo) line search along −∇f: the first trial step of an
    /// iteration is twice the previous accepted one (at first <see cref="MinimizeSettings.InitialStep"/> ·
    /// min(1, 1 / max |∂f/∂xⱼ|), so that no coordinate moves by more than InitialStep), and
    /// is shrunk until f(x − α∇f) ≤ f(x) − c₁ α ‖∇f‖² (<see cref="MinimizeSettings.SufficientDecrease"/>). The value
    /// decreases at every iteration. Each iteration makes one gradient call and one or more value calls.</summary>
    /// <param name="objective">The function to minimise.</param>
    /// <param name="x">The starting point on entry; the solution on return.</param>
    /// <param name="settings">Stopping rules and line-search parameters; null for the defaults.</param>
    /// <param name="workspace">Buffers for x.Length variables; null to allocate them for this call.</param>
    public static MinimizeResult GradientDescent<TObjective>(TObjective objective, Span<double> x, MinimizeSettings? settings = null, MinimizeWorkspace? workspace = null)
        where TObjective : IGradientObjective =>
        GradientDescent(objective, x, default(NoObserver), settings, workspace);

    /// <inheritdoc cref="GradientDescent{TObjective}(TObjective, Span{double}, MinimizeSettings?, MinimizeWorkspace?)"/>
    /// <param name="objective">The function to minimise.</param>
    /// <param name="x">The starting point on entry; the solution on return.</param>
    /// <param name="observer">Called after every iteration; returns false to stop.</param>
    /// <param name="settings">Stopping rules and line-search parameters; null for the defaults.</param>
    /// <param name="workspace">Buffers for x.Length variables; null to allocate them for this call.</param>
    public static MinimizeResult GradientDescent<TObjective, TObserver>(TObjective objective, Span<double> x, TObserver observer, MinimizeSettings? settings = null, MinimizeWorkspace? workspace = null)
        where TObjective : IGradientObjective
        where TObserver : IIterationObserver
    {
        var s = Prepare(settings);
        var w = MinimizeWorkspace.For(workspace, x.Length);
        var counters = new Counters { Limit = s.MaxEvaluations };
        int n = x.Length;
        Span<double> g = w.Gradient, d = w.Direction, trial = w.TrialPoint, trialGradient = w.TrialGradient;

        if (!Start(objective, x, g, ref counters, out double f, out var early))
        {
            return early;
        }

        // The first trial moves no coordinate by more than InitialStep; later ones start from twice the last step.
        double alpha = 0.5 * s.InitialStep * Math.Min(1, 1 / DenseMath.MaxAbs(g));
        int iteration = 0;
        if (Converged(g, f, s) is { } atStart)
        {
            return Result(f, DenseMath.MaxAbs(g), 0, counters, atStart);
        }

        while (true)
        {
            for (int i = 0; i < n; i++)
            {
                d[i] = -g[i];
            }

            double slope = -DenseMath.Dot(g, g);
            var outcome = LineSearch.Backtracking(objective, x, f, d, slope, Math.Min(2 * alpha, double.MaxValue / 4), trial, s, ref counters, out alpha, out _);
            if (outcome != SearchOutcome.Accepted)
            {
                return Result(f, DenseMath.MaxAbs(g), iteration, counters, outcome == SearchOutcome.Budget ? StopReason.EvaluationLimit : StopReason.NoProgress);
            }

            if (counters.Exhausted)
            {
                return Result(f, DenseMath.MaxAbs(g), iteration, counters, StopReason.EvaluationLimit);
            }

            double fNew = objective.ValueAndGradient(trial, trialGradient);
            counters.Gradients++;
            iteration++;
            var stop = AfterStep(x, trial, ref f, fNew, g, trialGradient, alpha, 0, iteration, counters, s, ref observer);
            if (stop is { } reason)
            {
                return Result(f, DenseMath.MaxAbs(g), iteration, counters, reason);
            }
        }
    }

    /// <summary>
    /// Newton's method with a backtracking (Armijo) line search from the full step α = 1. The direction solves
    /// (H + τS) d = −∇f with S = diag(|Hᵢᵢ|) (floored at 10⁻⁶ max |Hᵢᵢ|), where τ ≥ 0 is the smallest of 0, 10⁻³,
    /// 2·10⁻³, 4·10⁻³… (starting from 1 + 10⁻³ when a diagonal entry is not positive) for which Cholesky factorisation
    /// succeeds (Nocedal &amp; Wright Algorithm 3.3 on the diagonally scaled Hessian, so the shift does not depend on
    /// the units of each variable): where the Hessian is positive definite this is the Newton step, elsewhere a
    /// step towards scaled steepest descent, so the value decreases at every iteration. Each iteration makes one Hessian call and one or
    /// more value calls, and solves one n×n system (n³/6 operations).
    /// </summary>
    /// <param name="objective">The function to minimise, with its Hessian.</param>
    /// <param name="x">The starting point on entry; the solution on return.</param>
    /// <param name="settings">Stopping rules and line-search parameters; null for the defaults.</param>
    /// <param name="workspace">Buffers for x.Length variables; null to allocate them for this call.</param>
    public static MinimizeResult Newton<TObjective>(TObjective objective, Span<double> x, MinimizeSettings? settings = null, MinimizeWorkspace? workspace = null)
        where TObjective : IHessianObjective =>
        Newton(objective, x, default(NoObserver), settings, workspace);

    /// <inheritdoc cref="Newton{TObjective}(TObjective, Span{double}, MinimizeSettings?, MinimizeWorkspace?)"/>
    /// <param name="objective">The function to minimise, with its Hessian.</param>
    /// <param name="x">The starting point on entry; the solution on return.</param>
    /// <param name="observer">Called after every iteration; returns false to stop.</param>
    /// <param name="settings">Stopping rules and line-search parameters; null for the defaults.</param>
    /// <param name="workspace">Buffers for x.Length variables; null to allocate them for this call.</param>
    public static MinimizeResult Newton<TObjective, TObserver>(TObjective objective, Span<double> x, TObserver observer, MinimizeSettings? settings = null, MinimizeWorkspace? workspace = null)
        where TObjective : IHessianObjective
        where TObserver : IIterationObserver
    {
        var s = Prepare(settings);
        var w = MinimizeWorkspace.For(workspace, x.Length);
        var counters = new Counters { Limit = s.MaxEvaluations };
        int n = x.Length;
        Span<double> g = w.Gradient, d = w.Direction, trial = w.TrialPoint, trialGradient = w.TrialGradient;
        Span<double> h = w.EnsureMatrix(), l = w.EnsureFactor();

        if (counters.Exhausted)
        {
            return Result(double.NaN, double.NaN, 0, counters, StopReason.EvaluationLimit);
        }

        double f = objective.ValueGradientHessian(x, g, h);
        counters.Hessians++;
        if (!DenseMath.IsFinite(f) || !DenseMath.AllFinite(g.Slice(0, n)) || !DenseMath.AllFinite(h.Slice(0, n * n)))
        {
            return Result(f, DenseMath.MaxAbs(g.Slice(0, n)), 0, counters, StopReason.NotFinite);
        }

        if (Converged(g, f, s) is { } atStart)
        {
            return Result(f, DenseMath.MaxAbs(g), 0, counters, atStart);
        }

        int iteration = 0;
        while (true)
        {
            double tau = ModifiedCholesky(h, l, w.Difference, n);
            for (int i = 0; i < n; i++)
            {
                d[i] = -g[i];
            }

            DenseMath.CholeskySolve(l, n, d);
            double slope = DenseMath.Dot(g, d);
            if (!(slope < 0) || !DenseMath.AllFinite(d))
            {
                // Rounding made the direction useless (a nearly singular factor): fall back to steepest descent.
                for (int i = 0; i < n; i++)
                {
                    d[i] = -g[i];
                }

                slope = -DenseMath.Dot(g, g);
            }

            var outcome = LineSearch.Backtracking(objective, x, f, d, slope, 1, trial, s, ref counters, out double alpha, out _);
            if (outcome != SearchOutcome.Accepted)
            {
                return Result(f, DenseMath.MaxAbs(g), iteration, counters, outcome == SearchOutcome.Budget ? StopReason.EvaluationLimit : StopReason.NoProgress);
            }

            if (counters.Exhausted)
            {
                return Result(f, DenseMath.MaxAbs(g), iteration, counters, StopReason.EvaluationLimit);
            }

            double fNew = objective.ValueGradientHessian(trial, trialGradient, h);
            counters.Hessians++;
            iteration++;
            var stop = AfterStep(x, trial, ref f, fNew, g, trialGradient, alpha, tau, iteration, counters, s, ref observer);
            if (stop is { } reason)
            {
                return Result(f, DenseMath.MaxAbs(g), iteration, counters, reason);
            }

            if (!DenseMath.AllFinite(h.Slice(0, n * n)))
            {
                return Result(f, DenseMath.MaxAbs(g), iteration, counters, StopReason.NotFinite);
            }
        }
    }

    /// <summary>
    /// BFGS quasi-Newton method: keeps an n×n approximation of the inverse Hessian, updated from the change of the
    /// gradient in every step (skipped when the curvature sᵀy is not positive), scaled by sᵀy / yᵀy before the first
    /// update (Nocedal &amp; Wright §6.1), with a line search for the strong Wolfe conditions
    /// (<see cref="MinimizeSettings.SufficientDecrease"/>, <see cref="MinimizeSettings.Curvature"/>). If the line
    /// search fails along the quasi-Newton direction, or the step test is met by a quasi-Newton step, the
    /// approximation is reset and the iteration goes on from steepest descent (the step test only stops a step taken
    /// from a fresh approximation).
    /// Each iteration makes one or more gradient calls and O(n²) work; no Hessian is needed.
    /// </summary>
    /// <param name="objective">The function to minimise.</param>
    /// <param name="x">The starting point on entry; the solution on return.</param>
    /// <param name="settings">Stopping rules and line-search parameters; null for the defaults.</param>
    /// <param name="workspace">Buffers for x.Length variables; null to allocate them for this call.</param>
    public static MinimizeResult Bfgs<TObjective>(TObjective objective, Span<double> x, MinimizeSettings? settings = null, MinimizeWorkspace? workspace = null)
        where TObjective : IGradientObjective =>
        Bfgs(objective, x, default(NoObserver), settings, workspace);

    /// <inheritdoc cref="Bfgs{TObjective}(TObjective, Span{double}, MinimizeSettings?, MinimizeWorkspace?)"/>
    /// <param name="objective">The function to minimise.</param>
    /// <param name="x">The starting point on entry; the solution on return.</param>
    /// <param name="observer">Called after every iteration; returns false to stop.</param>
    /// <param name="settings">Stopping rules and line-search parameters; null for the defaults.</param>
    /// <param name="workspace">Buffers for x.Length variables; null to allocate them for this call.</param>
    public static MinimizeResult Bfgs<TObjective, TObserver>(TObjective objective, Span<double> x, TObserver observer, MinimizeSettings? settings = null, MinimizeWorkspace? workspace = null)
        where TObjective : IGradientObjective
        where TObserver : IIterationObserver
    {
        var s = Prepare(settings);
        var w = MinimizeWorkspace.For(workspace, x.Length);
        var counters = new Counters { Limit = s.MaxEvaluations };
        int n = x.Length;
        Span<double> g = w.Gradient, d = w.Direction, trial = w.TrialPoint, trialGradient = w.TrialGradient;
        Span<double> point = w.BestPoint, pointGradient = w.BestGradient, sv = w.Difference, yv = w.GradientChange;
        Span<double> hInv = w.EnsureMatrix(), hy = w.EnsureFactor().AsSpan(0, n);

        if (!Start(objective, x, g, ref counters, out double f, out var early))
        {
            return early;
        }

        if (Converged(g, f, s) is { } atStart)
        {
            return Result(f, DenseMath.MaxAbs(g), 0, counters, atStart);
        }

        bool identity = true; // hInv is the identity (not yet updated)
        int iteration = 0;
        while (true)
        {
            if (identity)
            {
                for (int i = 0; i < n; i++)
                {
                    d[i] = -g[i];
                }
            }
            else
            {
                DenseMath.MultiplySquare(hInv, n, g, d);
                for (int i = 0; i < n; i++)
                {
                    d[i] = -d[i];
                }
            }

            double slope = DenseMath.Dot(g, d);
            if (!(slope < 0))
            {
                identity = true;
                for (int i = 0; i < n; i++)
                {
                    d[i] = -g[i];
                }

                slope = -DenseMath.Dot(g, g);
            }

            double alpha1 = identity ? Math.Min(1, 1 / DenseMath.MaxAbs(g)) : 1;
            bool stepFromIdentity = identity;
            var outcome = LineSearch.StrongWolfe(objective, x, f, d, slope, alpha1, trial, trialGradient, point, pointGradient, s, ref counters, out double alpha, out double fNew);
            if (outcome == SearchOutcome.Failed && !identity)
            {
                identity = true;
                continue;
            }

            if (outcome != SearchOutcome.Accepted)
            {
                return Result(f, DenseMath.MaxAbs(g), iteration, counters, outcome == SearchOutcome.Budget ? StopReason.EvaluationLimit : StopReason.NoProgress);
            }

            for (int i = 0; i < n; i++)
            {
                sv[i] = point[i] - x[i];
                yv[i] = pointGradient[i] - g[i];
            }

            double sy = DenseMath.Dot(sv, yv), yy = DenseMath.Dot(yv, yv);
            if (sy > 1e-12 * Math.Sqrt(DenseMath.Dot(sv, sv) * yy))
            {
                if (identity)
                {
                    // H0 = (sᵀy / yᵀy) I before the first update (N&W eq. 6.20).
                    hInv.Slice(0, n * n).Clear();
                    double gamma = sy / yy;
                    for (int i = 0; i < n; i++)
                    {
                        hInv[(i * n) + i] = gamma;
                    }

                    identity = false;
                }

                // H ← (I − ρsyᵀ) H (I − ρysᵀ) + ρssᵀ, ρ = 1/sᵀy, written as H + c ssᵀ − ρ(Hy sᵀ + s (Hy)ᵀ).
                DenseMath.MultiplySquare(hInv, n, yv, hy);
                double rho = 1 / sy;
                double c = (sy + DenseMath.Dot(yv, hy)) * rho * rho;
                for (int i = 0; i < n; i++)
                {
                    for (int j = 0; j < n; j++)
                    {
                        hInv[(i * n) + j] += (c * sv[i] * sv[j]) - (rho * ((hy[i] * sv[j]) + (sv[i] * hy[j])));
                    }
                }
            }

            iteration++;
            var stop = AfterStep(x, point, ref f, fNew, g, pointGradient, alpha, 0, iteration, counters, s, ref observer);
            if (stop == StopReason.StepSmall && !stepFromIdentity)
            {
                // A tiny step along a quasi-Newton direction may only mean the approximation has degenerated (on a
                // badly scaled problem): start it afresh once before believing the step test.
                identity = true;
                continue;
            }

            if (stop is { } reason)
            {
                return Result(f, DenseMath.MaxAbs(g), iteration, counters, reason);
            }
        }
    }

    /// <summary>
    /// Limited-memory BFGS: the inverse-Hessian approximation is applied by the two-loop recursion over the last
    /// <see cref="MinimizeSettings.HistoryLength"/> pairs (s, y), scaled by sᵀy / yᵀy of the newest pair (Nocedal &amp;
    /// Wright Algorithm 7.4), with the same strong Wolfe line search as <see cref="Bfgs{TObjective}"/>. Pairs with
    /// sᵀy ≤ 0 are not stored; on a failed line search, or a step test met by a quasi-Newton step, the history is
    /// cleared and the iteration goes on from steepest descent.
    /// O(mn) work and memory per iteration, so it suits large n.
    /// </summary>
    /// <param name="objective">The function to minimise.</param>
    /// <param name="x">The starting point on entry; the solution on return.</param>
    /// <param name="settings">Stopping rules, line-search parameters and history length; null for the defaults.</param>
    /// <param name="workspace">Buffers for x.Length variables; null to allocate them for this call.</param>
    public static MinimizeResult LimitedMemoryBfgs<TObjective>(TObjective objective, Span<double> x, MinimizeSettings? settings = null, MinimizeWorkspace? workspace = null)
        where TObjective : IGradientObjective =>
        LimitedMemoryBfgs(objective, x, default(NoObserver), settings, workspace);

    /// <inheritdoc cref="LimitedMemoryBfgs{TObjective}(TObjective, Span{double}, MinimizeSettings?, MinimizeWorkspace?)"/>
    /// <param name="objective">The function to minimise.</param>
    /// <param name="x">The starting point on entry; the solution on return.</param>
    /// <param name="observer">Called after every iteration; returns false to stop.</param>
    /// <param name="settings">Stopping rules, line-search parameters and history length; null for the defaults.</param>
    /// <param name="workspace">Buffers for x.Length variables; null to allocate them for this call.</param>
    public static MinimizeResult LimitedMemoryBfgs<TObjective, TObserver>(TObjective objective, Span<double> x, TObserver observer, MinimizeSettings? settings = null, MinimizeWorkspace? workspace = null)
        where TObjective : IGradientObjective
        where TObserver : IIterationObserver
    {
        var s = Prepare(settings);
        var w = MinimizeWorkspace.For(workspace, x.Length);
        var counters = new Counters { Limit = s.MaxEvaluations };
        int n = x.Length, m = s.HistoryLength;
        w.EnsureHistory(m);
        Span<double> g = w.Gradient, d = w.Direction, trial = w.TrialPoint, trialGradient = w.TrialGradient;
        Span<double> point = w.BestPoint, pointGradient = w.BestGradient;
        Span<double> sHistory = w.HistoryS, yHistory = w.HistoryY, rhoHistory = w.HistoryRho, alphaHistory = w.HistoryAlpha;

        if (!Start(objective, x, g, ref counters, out double f, out var early))
        {
            return early;
        }

        if (Converged(g, f, s) is { } atStart)
        {
            return Result(f, DenseMath.MaxAbs(g), 0, counters, atStart);
        }

        int stored = 0, newest = -1; // pairs in the circular history, index of the newest
        int iteration = 0;
        while (true)
        {
            // Two-loop recursion: d = −H g.
            for (int i = 0; i < n; i++)
            {
                d[i] = -g[i];
            }

            for (int k = 0; k < stored; k++)
            {
                int slot = (newest - k + m) % m;
                double a = rhoHistory[slot] * DenseMath.Dot(sHistory.Slice(slot * n, n), d);
                alphaHistory[slot] = a;
                DenseMath.Axpy(-a, yHistory.Slice(slot * n, n), d);
            }

            if (stored > 0)
            {
                var yNewest = yHistory.Slice(newest * n, n);
                double gamma = 1 / (rhoHistory[newest] * DenseMath.Dot(yNewest, yNewest));
                for (int i = 0; i < n; i++)
                {
                    d[i] *= gamma;
                }
            }

            for (int k = stored - 1; k >= 0; k--)
            {
                int slot = (newest - k + m) % m;
                double b = rhoHistory[slot] * DenseMath.Dot(yHistory.Slice(slot * n, n), d);
                DenseMath.Axpy(alphaHistory[slot] - b, sHistory.Slice(slot * n, n), d);
            }

            double slope = DenseMath.Dot(g, d);
            if (!(slope < 0))
            {
                stored = 0;
                for (int i = 0; i < n; i++)
                {
                    d[i] = -g[i];
                }

                slope = -DenseMath.Dot(g, g);
            }

            double alpha1 = stored == 0 ? Math.Min(1, 1 / DenseMath.MaxAbs(g)) : 1;
            bool stepFromIdentity = stored == 0;
            var outcome = LineSearch.StrongWolfe(objective, x, f, d, slope, alpha1, trial, trialGradient, point, pointGradient, s, ref counters, out double alpha, out double fNew);
            if (outcome == SearchOutcome.Failed && stored > 0)
            {
                stored = 0;
                continue;
            }

            if (outcome != SearchOutcome.Accepted)
            {
                return Result(f, DenseMath.MaxAbs(g), iteration, counters, outcome == SearchOutcome.Budget ? StopReason.EvaluationLimit : StopReason.NoProgress);
            }

            // Store the pair (s, y) if its curvature is positive.
            int next = (newest + 1) % m;
            var sNew = sHistory.Slice(next * n, n);
            var yNew = yHistory.Slice(next * n, n);
            for (int i = 0; i < n; i++)
            {
                sNew[i] = point[i] - x[i];
                yNew[i] = pointGradient[i] - g[i];
            }

            double sy = DenseMath.Dot(sNew, yNew);
            if (sy > 1e-12 * Math.Sqrt(DenseMath.Dot(sNew, sNew) * DenseMath.Dot(yNew, yNew)))
            {
                rhoHistory[next] = 1 / sy;
                newest = next;
                stored = Math.Min(stored + 1, m);
            }

            iteration++;
            var stop = AfterStep(x, point, ref f, fNew, g, pointGradient, alpha, 0, iteration, counters, s, ref observer);
            if (stop == StopReason.StepSmall && !stepFromIdentity)
            {
                // As in BFGS: clear the history once before believing the step test.
                stored = 0;
                continue;
            }

            if (stop is { } reason)
            {
                return Result(f, DenseMath.MaxAbs(g), iteration, counters, reason);
            }
        }
    }

    private static MinimizeSettings Prepare(MinimizeSettings? settings)
    {
        var s = settings ?? (s_defaults ??= new MinimizeSettings());
        s.Validate();
        return s;
    }

    /// <summary>Evaluates f and ∇f at the start; false (with the result to return) if the budget is zero or they are
    /// not finite.</summary>
    private static bool Start<TObjective>(TObjective objective, ReadOnlySpan<double> x, Span<double> g, ref Counters counters, out double f, out MinimizeResult early)
        where TObjective : IGradientObjective
    {
        early = default;
        f = objective.ValueAndGradient(x, g);
        counters.Gradients++;
        if (!DenseMath.IsFinite(f) || !DenseMath.AllFinite(g.Slice(0, x.Length)))
        {
            early = Result(f, DenseMath.MaxAbs(g.Slice(0, x.Length)), 0, counters, StopReason.NotFinite);
            return false;
        }

        return true;
    }

    private static StopReason? Converged(ReadOnlySpan<double> g, double f, MinimizeSettings s) =>
        DenseMath.MaxAbs(g) <= s.GradientTolerance * Math.Max(1, Math.Abs(f)) ? StopReason.GradientSmall : null;

    /// <summary>Moves to the new point (x, f, g ← new), reports to the observer and makes the stopping tests.</summary>
    private static StopReason? AfterStep<TObserver>(Span<double> x, ReadOnlySpan<double> xNew, ref double f, double fNew,
        Span<double> g, ReadOnlySpan<double> gNew, double stepLength, double regularization, int iteration,
        in Counters counters, MinimizeSettings s, ref TObserver observer)
        where TObserver : IIterationObserver
    {
        int n = x.Length;
        double stepNorm = 0;
        bool stepSmall = s.StepTolerance > 0;
        for (int i = 0; i < n; i++)
        {
            double dx = Math.Abs(xNew[i] - x[i]);
            stepNorm = Math.Max(stepNorm, dx);
            stepSmall &= dx <= s.StepTolerance * (1 + Math.Abs(xNew[i]));
        }

        double fOld = f;
        xNew.Slice(0, n).CopyTo(x);
        gNew.Slice(0, n).CopyTo(g);
        f = fNew;
        var gradient = g.Slice(0, n);
        double gradientNorm = DenseMath.MaxAbs(gradient);
        if (!observer.OnIteration(new IterationReport(iteration, f, gradientNorm, stepNorm, stepLength, regularization, counters.Total, x, gradient)))
        {
            return StopReason.ObserverStopped;
        }

        if (!DenseMath.IsFinite(fNew) || !DenseMath.AllFinite(gradient))
        {
            return StopReason.NotFinite;
        }

        if (gradientNorm <= s.GradientTolerance * Math.Max(1, Math.Abs(f)))
        {
            return StopReason.GradientSmall;
        }

        if (stepSmall)
        {
            return StopReason.StepSmall;
        }

        if (Math.Abs(fOld - f) <= s.ValueTolerance * Math.Max(1, Math.Abs(fOld)))
        {
            return StopReason.ValueChangeSmall;
        }

        if (iteration >= s.MaxIterations)
        {
            return StopReason.IterationLimit;
        }

        return counters.Exhausted ? StopReason.EvaluationLimit : null;
    }

    /// <summary>
    /// Factorises H + τS = LLᵀ into <paramref name="l"/>, where S = diag(sᵢ), sᵢ = max(|Hᵢᵢ|, 10⁻⁶ max |Hⱼⱼ|) makes the
    /// shift invariant to the scale of each variable, with the smallest τ of the sequence 0 (or 1 + 10⁻³ when a
    /// diagonal entry is not positive), then doubling from 10⁻³, for which Cholesky succeeds (Nocedal &amp; Wright
    /// Algorithm 3.3 applied to the diagonally scaled Hessian); returns τ.
    /// </summary>
    private static double ModifiedCholesky(ReadOnlySpan<double> h, Span<double> l, Span<double> shift, int n)
    {
        const double beta = 1e-3;
        double minDiagonal = double.PositiveInfinity, maxDiagonal = 0;
        for (int i = 0; i < n; i++)
        {
            double hii = h[(i * n) + i];
            minDiagonal = Math.Min(minDiagonal, hii);
            maxDiagonal = Math.Max(maxDiagonal, Math.Abs(hii));
        }

        double floor = maxDiagonal > 0 ? 1e-6 * maxDiagonal : 1;
        for (int i = 0; i < n; i++)
        {
            shift[i] = Math.Max(Math.Abs(h[(i * n) + i]), floor);
        }

        double tau = minDiagonal > 0 ? 0 : 1 + beta;
        while (true)
        {
            h.Slice(0, n * n).CopyTo(l);
            for (int i = 0; i < n; i++)
            {
                l[(i * n) + i] += tau * shift[i];
            }

            if (DenseMath.Cholesky(l, n))
            {
                return tau;
            }

            tau = Math.Max(2 * tau, beta);
            if (!DenseMath.IsFinite(tau))
            {
                // Cannot happen for a finite H (a large enough shift makes it diagonally dominant); keep going safely
                // with steepest descent (L = I) should rounding defeat it.
                l.Slice(0, n * n).Clear();
                for (int i = 0; i < n; i++)
                {
                    l[(i * n) + i] = 1;
                }

                return tau;
            }
        }
    }

    private static MinimizeResult Result(double f, double gradientNorm, int iterations, in Counters counters, StopReason reason) =>
        new(f, gradientNorm, iterations, counters.Values, counters.Gradients, counters.Hessians, counters.HessianVectors, reason);
}
