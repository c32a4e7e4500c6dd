using System;

namespace DerivGen.Minimization;

public static partial class Minimize
{
    /// <summary>A trial step is accepted when it achieves more than this fraction of the reduction its model
    /// predicts (η of Nocedal &amp; Wright Algorithm 4.1, which asks for η ∈ [0, 1/4); MINPACK's 10⁻⁴).</summary>
    private const double TrustAcceptRatio = 1e-4;

    /// <summary>
    /// Newton's method with a trust region on Hessian–vector products (truncated Newton, "Newton–CG"): each step
    /// approximately minimises the quadratic model m(p) = f + ∇fᵀp + ½pᵀHp within ‖p‖₂ ≤ Δ by conjugate gradients
    /// (Steihaug, SIAM J. Numer. Anal. 20(3), 1983; Nocedal &amp; Wright, Numerical Optimization, 2nd ed.,
    /// Algorithm 7.2): CG from p = 0 stops at the boundary, along a direction of non-positive curvature (to the point
    /// of the boundary with the lower model value), after n iterations, or when the model's residual
    /// ‖∇f + Hp‖ ≤ min(0.5, √‖∇f‖) ‖∇f‖ (N&amp;W eq. 7.3, a superlinear forcing sequence). The step is accepted if
    /// ρ = (f(x) − f(x + p)) / (m(0) − m(p)) &gt; 10⁻⁴; the radius starts at <see cref="MinimizeSettings.TrustRadius"/>
    /// and is updated as in N&amp;W Algorithm 4.1 (ρ &lt; ¼: Δ ← ¼‖p‖; ρ &gt; ¾ with p on the boundary: Δ ← 2Δ). The Hessian
    /// is never formed: each CG iteration makes one call of
    /// <see cref="IHessianVectorObjective.ValueGradientHessianVector"/>, each trial step one value call and each
    /// accepted one a gradient call, and the work and memory besides are O(n) (eight vectors of the workspace). Where H
    /// is indefinite the negative curvature is followed to the boundary, so the value decreases at every iteration.
    /// </summary>
    /// <param name="objective">The function to minimise, with its Hessian–vector products.</param>
    /// <param name="x">The starting point on entry; the solution on return.</param>
    /// <param name="settings">Stopping rules and the first radius; null for the defaults.</param>
    /// <param name="workspace">Buffers for x.Length variables; null to allocate them for this call.</param>
    public static MinimizeResult NewtonCg<TObjective>(TObjective objective, Span<double> x, MinimizeSettings? settings = null, MinimizeWorkspace? workspace = null)
        where TObjective : IHessianVectorObjective =>
        NewtonCg(objective, x, default(NoObserver), settings, workspace);

    /// <inheritdoc cref="NewtonCg{TObjective}(TObjective, Span{double}, MinimizeSettings?, MinimizeWorkspace?)"/>
    /// <param name="objective">The function to minimise, with its Hessian–vector products.</param>
    /// <param name="x">The starting point on entry; the solution on return.</param>
    /// <param name="observer">Called after every accepted step (with the radius Δ as the report's
    /// <see cref="IterationReport.Regularization"/>); returns false to stop.</param>
    /// <param name="settings">Stopping rules and the first radius; null for the defaults.</param>
    /// <param name="workspace">Buffers for x.Length variables; null to allocate them for this call.</param>
    public static MinimizeResult NewtonCg<TObjective, TObserver>(TObjective objective, Span<double> x, TObserver observer, MinimizeSettings? settings = null, MinimizeWorkspace? workspace = null)
        where TObjective : IHessianVectorObjective
        where TObserver : IIterationObserver
    {
        var s = Prepare(settings);
        var w = MinimizeWorkspace.For(workspace, x.Length);
        var counters = new Counters { Limit = s.MaxEvaluations };
        int n = x.Length;
        Span<double> g = w.Gradient, trial = w.TrialPoint, trialGradient = w.TrialGradient;
        var cg = new SteihaugBuffers(w.BestPoint, w.BestGradient, w.Direction, w.Difference, w.GradientChange);

        if (!Start(objective, x, g, ref counters, out double f, out var early))
        {
            return early;
        }

        if (Converged(g, f, s) is { } atStart)
        {
            return Result(f, DenseMath.MaxAbs(g), 0, counters, atStart);
        }

        double radius = s.TrustRadius;
        int iteration = 0;
        while (true)
        {
            var outcome = Steihaug(objective, x, g, radius, cg, ref counters, out double predicted, out double stepNorm, out bool boundary);
            if (outcome != SearchOutcome.Accepted)
            {
                return Result(f, DenseMath.MaxAbs(g), iteration, counters, outcome == SearchOutcome.Budget ? StopReason.EvaluationLimit : StopReason.NotFinite);
            }

            if (counters.Exhausted)
            {
                return Result(f, DenseMath.MaxAbs(g), iteration, counters, StopReason.EvaluationLimit);
            }

            Span<double> p = cg.Step;
            bool moves = false, small = s.StepTolerance > 0;
            for (int i = 0; i < n; i++)
            {
                trial[i] = x[i] + p[i];
                moves |= trial[i] != x[i];
                small &= Math.Abs(p[i]) <= s.StepTolerance * (1 + Math.Abs(trial[i]));
            }

            double fTrial = objective.Value(trial);
            counters.Values++;
            double actual = DenseMath.IsFinite(fTrial) ? f - fTrial : double.NegativeInfinity;
            double ratio = predicted > 0 ? actual / predicted : 0;
            double usedRadius = radius;
            if (ratio < 0.25)
            {
                radius = 0.25 * stepNorm;
            }
            else if (ratio > 0.75 && boundary)
            {
                radius = Math.Min(2 * radius, double.MaxValue / 4);
            }

            if (!(ratio > TrustAcceptRatio))
            {
                // Rejected: a region this small around x means x is as good as the step test asks (as MINPACK
                // tests its trial steps); a step that changes nothing means no further progress is possible.
                if (small || !moves)
                {
                    return Result(f, DenseMath.MaxAbs(g), iteration, counters, small ? StopReason.StepSmall : StopReason.NoProgress);
                }

                continue;
            }

            if (counters.Exhausted)
            {
                return Result(f, DenseMath.MaxAbs(g), iteration, counters, StopReason.EvaluationLimit);
            }

            double fNew = objective.ValueAndGradient(trial, trialGradient);
            counters.Gradients++;
            iteration++;
            var stop = AfterStep(x, trial, ref f, fNew, g, trialGradient, 1, usedRadius, iteration, counters, s, ref observer);
            if (stop is { } reason)
            {
                return Result(f, DenseMath.MaxAbs(g), iteration, counters, reason);
            }
        }
    }

    /// <summary>
    /// Steihaug's truncated conjugate gradients (N&amp;W Algorithm 7.2) for min gᵀp + ½pᵀHp, ‖p‖₂ ≤ Δ, with H applied
    /// by the objective. Leaves p in <see cref="SteihaugBuffers.Step"/> and returns the predicted reduction
    /// m(0) − m(p) = −½(gᵀp + rᵀp), r = g + Hp being kept up to date along the way. <see cref="SearchOutcome.Failed"/>
    /// means a product was not finite.
    /// </summary>
    private static SearchOutcome Steihaug<TObjective>(TObjective objective, ReadOnlySpan<double> x, ReadOnlySpan<double> g, double radius,
        in SteihaugBuffers b, ref Counters counters, out double predicted, out double stepNorm, out bool boundary)
        where TObjective : IHessianVectorObjective
    {
        int n = x.Length;
        Span<double> p = b.Step, r = b.Residual, d = b.Direction, hd = b.Product, scratch = b.Scratch;
        predicted = 0;
        stepNorm = 0;
        boundary = false;
        p.Slice(0, n).Clear();
        for (int i = 0; i < n; i++)
        {
            r[i] = g[i];
            d[i] = -g[i];
        }

        double rr = DenseMath.Dot(r, r);
        double gNorm = Math.Sqrt(rr);
        double tolerance = Math.Min(0.5, Math.Sqrt(gNorm)) * gNorm;
        for (int j = 0; j < n; j++)
        {
            if (counters.Exhausted)
            {
                return SearchOutcome.Budget;
            }

            objective.ValueGradientHessianVector(x, d, scratch, hd);
            counters.HessianVectors++;
            double curvature = DenseMath.Dot(d, hd);
            if (!DenseMath.IsFinite(curvature))
            {
                return SearchOutcome.Failed;
            }

            double pp = DenseMath.Dot(p, p), pd = DenseMath.Dot(p, d), dd = DenseMath.Dot(d, d);
            double alpha = rr / curvature;
            if (curvature <= 0 || pp + (alpha * ((2 * pd) + (alpha * dd))) >= radius * radius)
            {
                // To the boundary: along non-positive curvature to the root with the lower model value
                // τ rᵀd + ½τ² dᵀHd (both ends are candidates), otherwise to the positive root.
                BoundaryRoots(pp, pd, dd, radius, out double tauMinus, out double tauPlus);
                double tau = tauPlus;
                if (curvature <= 0)
                {
                    double rd = DenseMath.Dot(r, d);
                    double mMinus = (tauMinus * rd) + (0.5 * tauMinus * tauMinus * curvature);
                    double mPlus = (tauPlus * rd) + (0.5 * tauPlus * tauPlus * curvature);
                    tau = mMinus < mPlus ? tauMinus : tauPlus;
                }

                DenseMath.Axpy(tau, d, p);
                DenseMath.Axpy(tau, hd, r);
                boundary = true;
                break;
            }

            DenseMath.Axpy(alpha, d, p);
            DenseMath.Axpy(alpha, hd, r);
            double rrNew = DenseMath.Dot(r, r);
            if (Math.Sqrt(rrNew) <= tolerance)
            {
                break;
            }

            double beta = rrNew / rr;
            rr = rrNew;
            for (int i = 0; i < n; i++)
            {
                d[i] = -r[i] + (beta * d[i]);
            }
        }

        predicted = -0.5 * (DenseMath.Dot(g, p) + DenseMath.Dot(r, p));
        stepNorm = DenseMath.Norm2(p);
        return SearchOutcome.Accepted;
    }

    /// <summary>The roots τ₋ ≤ 0 ≤ τ₊ of ‖p + τd‖² = Δ² for ‖p‖ ≤ Δ (the stable form of the quadratic formula).</summary>
    private static void BoundaryRoots(double pp, double pd, double dd, double radius, out double tauMinus, out double tauPlus)
    {
        double c = Math.Min(pp - (radius * radius), 0);
        double root = Math.Sqrt((pd * pd) - (dd * c));
        double q = pd >= 0 ? -(pd + root) : -(pd - root); // −(b + sign(b)√(b² − ac)) with b = pᵀd
        if (q == 0)
        {
            tauMinus = tauPlus = 0;
            return;
        }

        double t1 = q / dd, t2 = c / q;
        tauMinus = Math.Min(t1, t2);
        tauPlus = Math.Max(t1, t2);
    }

    /// <summary>The vectors of the CG iteration, taken from the workspace: the step p, the model's residual
    /// r = g + Hp, the CG direction, its product H·d, and a scratch buffer for the product call's gradient.</summary>
    private readonly ref struct SteihaugBuffers
    {
        public SteihaugBuffers(Span<double> step, Span<double> residual, Span<double> direction, Span<double> product, Span<double> scratch)
        {
            Step = step;
            Residual = residual;
            Direction = direction;
            Product = product;
            Scratch = scratch;
        }

        public Span<double> Step { get; }

        public Span<double> Residual { get; }

        public Span<double> Direction { get; }

        public Span<double> Product { get; }

        public Span<double> Scratch { get; }
    }
}
