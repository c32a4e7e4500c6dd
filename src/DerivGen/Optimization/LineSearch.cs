using System;

namespace DerivGen.Minimization;

/// <summary>Calls of the objective so far, and the budget.</summary>
internal struct Counters
{
    public int Values;
    public int Gradients;
    public int Hessians;
    public int HessianVectors;
    public int Limit;

    public readonly int Total => Values + Gradients + Hessians + HessianVectors;

    public readonly bool Exhausted => Total >= Limit;
}

internal enum SearchOutcome
{
    /// <summary>A step was accepted.</summary>
    Accepted,

    /// <summary>No acceptable step within the line search's limit.</summary>
    Failed,

    /// <summary>The evaluation budget ran out first.</summary>
    Budget,
}

/// <summary>The line searches (Nocedal &amp; Wright, Numerical Optimization, 2nd ed., 2006, ch. 3).</summary>
internal static class LineSearch
{
    /// <summary>
    /// Backtracking line search for the sufficient-decrease (Armijo) condition f(x + αd) ≤ f + c₁ α slope, from α₀,
    /// shrinking by the minimiser of the quadratic through f, slope and the trial value, safeguarded to
    /// [0.1α, 0.5α] (N&amp;W §3.5). A trial with a non-finite value shrinks α tenfold. Only values are evaluated; on
    /// success <paramref name="trial"/> holds x + αd and <paramref name="value"/> its value.
    /// </summary>
    public static SearchOutcome Backtracking<TObjective>(
        TObjective objective, ReadOnlySpan<double> x, double f, ReadOnlySpan<double> d, double slope, double alpha0,
        Span<double> trial, MinimizeSettings settings, ref Counters counters, out double alpha, out double value)
        where TObjective : IGradientObjective
    {
        double c1 = settings.SufficientDecrease;
        alpha = alpha0;
        value = f;
        for (int k = 0; k < settings.LineSearchLimit; k++)
        {
            if (counters.Exhausted)
            {
                return SearchOutcome.Budget;
            }

            DenseMath.Step(x, alpha, d, trial);
            double ft = objective.Value(trial);
            counters.Values++;
            if (ft <= f + (c1 * alpha * slope))
            {
                value = ft;
                return SearchOutcome.Accepted;
            }

            if (DenseMath.IsFinite(ft))
            {
                double denominator = 2 * (ft - f - (slope * alpha));
                double quadratic = denominator > 0 ? -slope * alpha * alpha / denominator : 0.5 * alpha;
                alpha = Math.Min(Math.Max(quadratic, 0.1 * alpha), 0.5 * alpha);
            }
            else
            {
                alpha *= 0.1;
            }
        }

        return SearchOutcome.Failed;
    }

    /// <summary>
    /// Line search for the strong Wolfe conditions f(x + αd) ≤ f + c₁ α slope and |∇f(x + αd)ᵀd| ≤ c₂ |slope|
    /// (N&amp;W Algorithms 3.5 and 3.6): a bracketing phase that grows α fourfold, then a zoom that takes the minimiser
    /// of the cubic interpolating the values and slopes at the ends of the bracket, kept at least a tenth of the
    /// bracket from either end (bisection where the cubic has no minimiser or an end has no finite value). If the
    /// limit is reached after a point with sufficient decrease was found, that point is accepted (the caller then
    /// checks the curvature sᵀy itself). On success <paramref name="point"/> and <paramref name="gradient"/> hold
    /// x + αd and its gradient.
    /// </summary>
    public static SearchOutcome StrongWolfe<TObjective>(
        TObjective objective, ReadOnlySpan<double> x, double f, ReadOnlySpan<double> d, double slope, double alpha1,
        Span<double> trial, Span<double> trialGradient, Span<double> point, Span<double> gradient,
        MinimizeSettings settings, ref Counters counters, out double alpha, out double value)
        where TObjective : IGradientObjective
    {
        double c1 = settings.SufficientDecrease, c2 = settings.Curvature;
        int budget = settings.LineSearchLimit;

        // The best point so far with sufficient decrease ("lo"); alpha 0 is x itself.
        double aLo = 0, fLo = f, dLo = slope;
        double aHi = 0, fHi = 0, dHi = 0;
        bool hiFinite = false;
        alpha = 0;
        value = f;

        double a = alpha1;
        bool zoom = false;
        for (int i = 0; !zoom; i++)
        {
            if (budget-- <= 0)
            {
                return Finish(aLo, fLo, out alpha, out value);
            }

            if (counters.Exhausted)
            {
                return SearchOutcome.Budget;
            }

            double fa = Evaluate(objective, x, a, d, trial, trialGradient, ref counters, out double da);
            if (!DenseMath.IsFinite(fa) || !DenseMath.IsFinite(da) || fa > f + (c1 * a * slope) || (i > 0 && fa >= fLo))
            {
                aHi = a;
                fHi = fa;
                dHi = da;
                hiFinite = DenseMath.IsFinite(fa) && DenseMath.IsFinite(da);
                zoom = true;
                continue;
            }

            if (Math.Abs(da) <= -c2 * slope)
            {
                trial.CopyTo(point);
                trialGradient.CopyTo(gradient);
                alpha = a;
                value = fa;
                return SearchOutcome.Accepted;
            }

            trial.CopyTo(point);
            trialGradient.CopyTo(gradient);
            if (da >= 0)
            {
                // The minimiser is between the previous lo and a: a becomes lo, the previous lo the other end.
                aHi = aLo;
                fHi = fLo;
                dHi = dLo;
                hiFinite = true;
                aLo = a;
                fLo = fa;
                dLo = da;
                zoom = true;
                continue;
            }

            aLo = a;
            fLo = fa;
            dLo = da;
            a *= 4;
            if (!DenseMath.IsFinite(a))
            {
                return Finish(aLo, fLo, out alpha, out value);
            }
        }

        while (true)
        {
            double lower = Math.Min(aLo, aHi), upper = Math.Max(aLo, aHi), width = upper - lower;
            if (width <= 1e-15 * upper || budget-- <= 0)
            {
                return Finish(aLo, fLo, out alpha, out value);
            }

            if (counters.Exhausted)
            {
                return SearchOutcome.Budget;
            }

            double aj = 0.5 * (aLo + aHi);
            if (hiFinite)
            {
                double cubic = CubicMinimizer(aLo, fLo, dLo, aHi, fHi, dHi);
                if (cubic >= lower + (0.1 * width) && cubic <= upper - (0.1 * width))
                {
                    aj = cubic;
                }
            }

            double fj = Evaluate(objective, x, aj, d, trial, trialGradient, ref counters, out double dj);
            if (!DenseMath.IsFinite(fj) || !DenseMath.IsFinite(dj) || fj > f + (c1 * aj * slope) || fj >= fLo)
            {
                aHi = aj;
                fHi = fj;
                dHi = dj;
                hiFinite = DenseMath.IsFinite(fj) && DenseMath.IsFinite(dj);
                continue;
            }

            trial.CopyTo(point);
            trialGradient.CopyTo(gradient);
            if (Math.Abs(dj) <= -c2 * slope)
            {
                alpha = aj;
                value = fj;
                return SearchOutcome.Accepted;
            }

            if (dj * (aHi - aLo) >= 0)
            {
                aHi = aLo;
                fHi = fLo;
                dHi = dLo;
                hiFinite = true;
            }

            aLo = aj;
            fLo = fj;
            dLo = dj;
        }
    }

    /// <summary>Out of tries: accept the best point with sufficient decrease if there is one (it is already in the
    /// output buffers), otherwise fail.</summary>
    private static SearchOutcome Finish(double aLo, double fLo, out double alpha, out double value)
    {
        alpha = aLo;
        value = fLo;
        return aLo > 0 ? SearchOutcome.Accepted : SearchOutcome.Failed;
    }

    private static double Evaluate<TObjective>(TObjective objective, ReadOnlySpan<double> x, double a, ReadOnlySpan<double> d,
        Span<double> trial, Span<double> trialGradient, ref Counters counters, out double slope)
        where TObjective : IGradientObjective
    {
        DenseMath.Step(x, a, d, trial);
        double value = objective.ValueAndGradient(trial, trialGradient);
        counters.Gradients++;
        slope = DenseMath.Dot(trialGradient, d);
        return value;
    }

    /// <summary>The minimiser of the cubic with values fa, fb and slopes da, db at a and b (N&amp;W eq. 3.59), or NaN.</summary>
    private static double CubicMinimizer(double a, double fa, double da, double b, double fb, double db)
    {
        double d1 = da + db - (3 * (fa - fb) / (a - b));
        double discriminant = (d1 * d1) - (da * db);
        if (!(discriminant >= 0))
        {
            return double.NaN;
        }

        double d2 = Math.Sqrt(discriminant) * (b > a ? 1 : -1);
        return b - ((b - a) * (db + d2 - d1) / (db - da + (2 * d2)));
    }
}
