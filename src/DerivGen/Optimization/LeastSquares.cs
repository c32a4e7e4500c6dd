using System;

namespace DerivGen.Minimization;

/// <summary>
/// Nonlinear least squares: minimise Σ rᵢ(x)² over x ∈ Rⁿ for residuals r ∈ Rᵐ with their Jacobian
/// (<see cref="IResidualModel"/>). Allocation-free with a <see cref="LeastSquaresWorkspace"/>; generic over the model
/// and an optional observer; no reflection (trimming- and AOT-safe).
/// </summary>
public static class LeastSquares
{
    /// <summary>The smallest damping kept (relative to the scaled JᵀJ): small enough to leave Gauss–Newton steps
    /// undisturbed, large enough to keep the augmented system of a rank-deficient Jacobian solvable.</summary>
    private const double MinimumDamping = 1e-30;

    /// <summary>Damping beyond which no step can help: the solver stops with <see cref="StopReason.NoProgress"/>.</summary>
    private const double MaximumDamping = 1e300;

    /// <summary>A trial step is accepted when it achieves at least this fraction of the predicted reduction
    /// (MINPACK's 10⁻⁴).</summary>
    private const double AcceptRatio = 1e-4;

    /// <summary>Gauss–Newton polishing steps tried after convergence (see <see cref="Polish"/>).</summary>
    private const int PolishSteps = 3;

    /// <summary>The relative rise of Σ rᵢ² a polishing step may cause: rounding noise, not a real increase.</summary>
    private const double PolishRise = 1e-10;

    /// <summary>The finite-difference step t (along the velocity) of geodesic acceleration: Transtrum &amp; Sethna's 0.1.</summary>
    private const double AccelerationStep = 0.1;

    /// <summary>The largest 2‖Da‖ / ‖Dv‖ accepted with geodesic acceleration: Transtrum &amp; Sethna's α = 0.75.</summary>
    private const double AccelerationRatio = 0.75;

    // Created on first use without settings, not in a static initialiser: a caller that passes its own settings (made
    // before its hot loop) never allocates, not even the first time.
    private static LeastSquaresSettings? s_defaults;

    /// <summary>
    /// Levenberg–Marquardt with Moré's diagonal scaling. Each trial step h solves the damped problem
    /// min ‖r + Jh‖² + λ‖Dh‖² by Householder QR of the (m+n)×n matrix [J; √λ D] (never forming JᵀJ, so the
    /// condition number is not squared), where D = diag(dⱼ) and dⱼ is the largest norm column j of J has had so far
    /// (Moré 1978, which makes the method invariant to the scale of each parameter). A step is accepted when the
    /// actual reduction of Σ rᵢ² is more than 10⁻⁴ of the predicted one, ρ = actual / predicted; then
    /// λ ← λ · max(1/3, 1 − (2ρ − 1)³), otherwise λ grows by a factor that doubles with every consecutive rejection
    /// (Nielsen's update: Madsen, Nielsen &amp; Tingleff, Methods for Non-Linear Least Squares Problems, 2004, §3.2).
    /// With <see cref="LeastSquaresSettings.GeodesicAcceleration"/> each trial step gets Transtrum &amp; Sethna's
    /// second-order correction (one more residual call per trial). Stopping rules: <see cref="LeastSquaresSettings"/>.
    /// </summary>
    /// <param name="model">The residuals and their Jacobian.</param>
    /// <param name="x">The starting parameters on entry; the fitted parameters on return.</param>
    /// <param name="standardErrors">Empty, or at least n elements to receive the parameters' standard errors
    /// √(s² [(JᵀJ)⁻¹]ⱼⱼ), s² = Σ rᵢ² / (m − n), from the Jacobian at the solution (the usual linearised estimate,
    /// valid when the model is nearly linear over the parameters' uncertainty). They are NaN when m ≤ n or JᵀJ is
    /// singular.</param>
    /// <param name="settings">Stopping rules; null for the defaults.</param>
    /// <param name="workspace">Buffers for m residuals and n parameters; null to allocate them for this call.</param>
    public static LeastSquaresResult LevenbergMarquardt<TModel>(TModel model, Span<double> x, Span<double> standardErrors = default, LeastSquaresSettings? settings = null, LeastSquaresWorkspace? workspace = null)
        where TModel : IResidualModel =>
        LevenbergMarquardt(model, x, standardErrors, default(NoObserver), settings, workspace);

    /// <inheritdoc cref="LevenbergMarquardt{TModel}(TModel, Span{double}, Span{double}, LeastSquaresSettings?, LeastSquaresWorkspace?)"/>
    /// <param name="model">The residuals and their Jacobian.</param>
    /// <param name="x">The starting parameters on entry; the fitted parameters on return.</param>
    /// <param name="standardErrors">Empty, or at least n elements to receive the parameters' standard errors.</param>
    /// <param name="observer">Called after every accepted step with Σ rᵢ², the gradient 2Jᵀr and the damping λ;
    /// returns false to stop.</param>
    /// <param name="settings">Stopping rules; null for the defaults.</param>
    /// <param name="workspace">Buffers for m residuals and n parameters; null to allocate them for this call.</param>
    public static LeastSquaresResult LevenbergMarquardt<TModel, TObserver>(TModel model, Span<double> x, Span<double> standardErrors, TObserver observer, LeastSquaresSettings? settings = null, LeastSquaresWorkspace? workspace = null)
        where TModel : IResidualModel
        where TObserver : IIterationObserver
    {
        var s = settings ?? (s_defaults ??= new LeastSquaresSettings());
        int n = x.Length, m = model.ResidualCount;
        var w = LeastSquaresWorkspace.For(workspace, m, n);
        if (!standardErrors.IsEmpty && standardErrors.Length < n)
        {
            throw new ArgumentException($"Needs at least {n} elements (one per parameter), or none.", nameof(standardErrors));
        }

        Span<double> r = w.Residuals, rTrial = w.TrialResiduals, jacobian = w.Jacobian, augmented = w.Augmented, rhs = w.RightHandSide;
        Span<double> h = w.Step, xTrial = w.TrialPoint, scale = w.Scale, g = w.Gradient, columnNorms = w.ColumnNorms;
        int residualEvaluations = 0, jacobianEvaluations = 0, iteration = 0;

        model.ResidualsAndJacobian(x, r, jacobian);
        jacobianEvaluations++;
        double rss = SumOfSquares(r);
        ColumnNormsAndGradient(jacobian, r, m, n, columnNorms, g);
        if (!DenseMath.IsFinite(rss) || !DenseMath.AllFinite(jacobian.Slice(0, m * n)))
        {
            return Finish(rss, StopReason.NotFinite, standardErrors, w, m, n, iteration, residualEvaluations, jacobianEvaluations);
        }

        for (int j = 0; j < n; j++)
        {
            scale[j] = columnNorms[j] > 0 ? columnNorms[j] : 1;
        }

        double lambda = s.InitialDamping, nu = 2;
        while (true)
        {
            // Gradient test: every column of J (nearly) orthogonal to r (MINPACK's gtol), or r = 0.
            double cosine = Cosine(g, columnNorms, rss, n);
            if (rss == 0 || cosine <= s.GradientTolerance)
            {
                return Finish(rss, StopReason.GradientSmall, standardErrors, w, m, n, iteration, residualEvaluations, jacobianEvaluations);
            }

            if (iteration >= s.MaxIterations)
            {
                return Finish(rss, StopReason.IterationLimit, standardErrors, w, m, n, iteration, residualEvaluations, jacobianEvaluations);
            }

            for (int j = 0; j < n; j++)
            {
                scale[j] = Math.Max(scale[j], columnNorms[j]);
            }

            while (true)
            {
                // A trial costs one residual call (two with geodesic acceleration), and an accepted one a Jacobian
                // call: keep room for them.
                if (residualEvaluations + jacobianEvaluations + (s.GeodesicAcceleration ? 3 : 2) > s.MaxEvaluations)
                {
                    return Finish(rss, StopReason.EvaluationLimit, standardErrors, w, m, n, iteration, residualEvaluations, jacobianEvaluations);
                }

                SolveDamped(jacobian, r, scale, lambda, m, n, augmented, rhs);
                rhs.Slice(0, n).CopyTo(h);

                // Predicted reduction ‖Jh‖² + 2λ‖Dh‖² (= Σr² − ‖r + Jh‖² for the exact solution; no cancellation).
                double dh = ScaledNorm(scale, h, n), dx = ScaledNorm(scale, x, n);
                double predicted = SquaredNormOfProduct(jacobian, h, m, n) + (2 * lambda * dh * dh);
                bool tooCurved = false;
                if (s.GeodesicAcceleration && dh > 0 && DenseMath.AllFinite(h.Slice(0, n)))
                {
                    residualEvaluations++;
                    tooCurved = !Accelerate(model, x, r, jacobian, scale, lambda, m, n, w, ref predicted);
                    dh = ScaledNorm(scale, h, n);
                }

                for (int j = 0; j < n; j++)
                {
                    xTrial[j] = x[j] + h[j];
                }

                double rssTrial = double.NaN;
                if (DenseMath.AllFinite(h) && !tooCurved)
                {
                    model.Residuals(xTrial, rTrial);
                    residualEvaluations++;
                    rssTrial = SumOfSquares(rTrial);
                }

                double actual = DenseMath.IsFinite(rssTrial) ? rss - rssTrial : double.NegativeInfinity;
                double ratio = predicted > 0 ? actual / predicted : 0;
                double relativeActual = actual / rss, relativePredicted = predicted / rss;

                if (ratio > AcceptRatio)
                {
                    xTrial.Slice(0, n).CopyTo(x);
                    model.ResidualsAndJacobian(x, r, jacobian);
                    jacobianEvaluations++;
                    rss = SumOfSquares(r);
                    ColumnNormsAndGradient(jacobian, r, m, n, columnNorms, g);
                    double factor = (2 * ratio) - 1;
                    double acceptedLambda = lambda;
                    lambda = Math.Max(lambda * Math.Max(1.0 / 3, 1 - (factor * factor * factor)), MinimumDamping);
                    nu = 2;
                    iteration++;

                    if (!observer.OnIteration(new IterationReport(iteration, rss, DenseMath.MaxAbs(g.Slice(0, n)), DenseMath.MaxAbs(h.Slice(0, n)), 1, acceptedLambda,
                        residualEvaluations + jacobianEvaluations, x, g.Slice(0, n))))
                    {
                        return Finish(rss, StopReason.ObserverStopped, standardErrors, w, m, n, iteration, residualEvaluations, jacobianEvaluations);
                    }

                    if (!DenseMath.IsFinite(rss) || !DenseMath.AllFinite(jacobian.Slice(0, m * n)))
                    {
                        return Finish(rss, StopReason.NotFinite, default, w, m, n, iteration, residualEvaluations, jacobianEvaluations);
                    }

                    if (Math.Abs(relativeActual) <= s.ValueTolerance && relativePredicted <= s.ValueTolerance && ratio <= 2)
                    {
                        return Polish(model, x, rss, StopReason.ValueChangeSmall, standardErrors, s, w, m, n, iteration, residualEvaluations, jacobianEvaluations);
                    }

                    if (dh <= s.StepTolerance * ScaledNorm(scale, x, n)) // the new point's scaled norm
                    {
                        return Polish(model, x, rss, StopReason.StepSmall, standardErrors, s, w, m, n, iteration, residualEvaluations, jacobianEvaluations);
                    }

                    break;
                }

                // Rejected. MINPACK makes its convergence tests on every trial: a region this small around x, or
                // reductions this small, mean x is as good as the tolerances ask.
                if (Math.Abs(relativeActual) <= s.ValueTolerance && relativePredicted <= s.ValueTolerance)
                {
                    return Polish(model, x, rss, StopReason.ValueChangeSmall, standardErrors, s, w, m, n, iteration, residualEvaluations, jacobianEvaluations);
                }

                if (dh <= s.StepTolerance * dx)
                {
                    return Polish(model, x, rss, StopReason.StepSmall, standardErrors, s, w, m, n, iteration, residualEvaluations, jacobianEvaluations);
                }

                lambda *= nu;
                nu *= 2;
                if (!(lambda <= MaximumDamping))
                {
                    return Finish(rss, StopReason.NoProgress, standardErrors, w, m, n, iteration, residualEvaluations, jacobianEvaluations);
                }
            }
        }
    }

    /// <summary>
    /// Geodesic acceleration (Transtrum &amp; Sethna, "Improvements to the Levenberg–Marquardt algorithm for nonlinear
    /// least-squares minimization", arXiv:1201.5885, 2012): the second directional derivative of the residuals along
    /// the velocity v = h, r_vv ≈ (2/t)((r(x + tv) − r(x))/t − Jv) with t = <see cref="AccelerationStep"/> (their finite
    /// difference), gives the acceleration a = −(JᵀJ + λD²)⁻¹Jᵀr_vv (the same damped system, solved by QR), and the
    /// step becomes h = v + ½a. The step is refused (false) when 2‖Da‖ / ‖Dv‖ &gt; <see cref="AccelerationRatio"/>,
    /// their bound for the second-order term to be a correction. On success h holds the step and
    /// <paramref name="predicted"/> the linear model's reduction Σr² − ‖r + Jh‖² for it.
    /// </summary>
    private static bool Accelerate<TModel>(TModel model, ReadOnlySpan<double> x, ReadOnlySpan<double> r, ReadOnlySpan<double> jacobian, ReadOnlySpan<double> scale,
        double lambda, int m, int n, LeastSquaresWorkspace w, ref double predicted)
        where TModel : IResidualModel
    {
        Span<double> h = w.Step, xShift = w.TrialPoint, rvv = w.TrialResiduals, augmented = w.Augmented, rhs = w.RightHandSide;
        const double t = AccelerationStep;
        for (int j = 0; j < n; j++)
        {
            xShift[j] = x[j] + (t * h[j]);
        }

        model.Residuals(xShift, rvv);
        for (int i = 0; i < m; i++)
        {
            double jv = DenseMath.Dot(jacobian.Slice(i * n, n), h.Slice(0, n));
            rvv[i] = (2 / t) * (((rvv[i] - r[i]) / t) - jv);
        }

        if (!DenseMath.AllFinite(rvv.Slice(0, m)))
        {
            return false;
        }

        SolveDamped(jacobian, rvv, scale, lambda, m, n, augmented, rhs);
        double velocity = ScaledNorm(scale, h, n), acceleration = ScaledNorm(scale, rhs, n);
        if (!(2 * acceleration <= AccelerationRatio * velocity))
        {
            return false;
        }

        for (int j = 0; j < n; j++)
        {
            h[j] += 0.5 * rhs[j];
        }

        // Σr² − ‖r + Jh‖² = −Σ (Jh)ᵢ (2rᵢ + (Jh)ᵢ).
        double sum = 0;
        for (int i = 0; i < m; i++)
        {
            double jh = DenseMath.Dot(jacobian.Slice(i * n, n), h.Slice(0, n));
            sum += jh * ((2 * r[i]) + jh);
        }

        predicted = -sum;
        return true;
    }

    /// <summary>‖D v‖ for the diagonal scaling D, summed in index order.</summary>
    private static double ScaledNorm(ReadOnlySpan<double> scale, ReadOnlySpan<double> v, int n)
    {
        double sum = 0;
        for (int j = 0; j < n; j++)
        {
            double a = scale[j] * v[j];
            sum += a * a;
        }

        return Math.Sqrt(sum);
    }

    /// <summary>‖J h‖² for the row-major m × n matrix J, summed row by row.</summary>
    private static double SquaredNormOfProduct(ReadOnlySpan<double> jacobian, ReadOnlySpan<double> h, int m, int n)
    {
        double sum = 0;
        for (int i = 0; i < m; i++)
        {
            double t = DenseMath.Dot(jacobian.Slice(i * n, n), h);
            sum += t * t;
        }

        return sum;
    }

    /// <summary>
    /// After a step or value test has passed, Σ rᵢ² may be flat to within its rounding error while Jᵀr, computed
    /// without that cancellation, still shows the way to the stationary point. Up to
    /// <see cref="PolishSteps"/> Gauss–Newton steps (λ = <see cref="MinimumDamping"/>) are tried; each is kept only
    /// if it at least halves the largest cosine between r and a column of J and raises Σ rᵢ² by no more than
    /// <see cref="PolishRise"/> relative (rounding noise), and polishing stops at the first that is not.
    /// </summary>
    private static LeastSquaresResult Polish<TModel>(TModel model, Span<double> x, double rss, StopReason reason, Span<double> standardErrors,
        LeastSquaresSettings s, LeastSquaresWorkspace w, int m, int n, int iterations, int residualEvaluations, int jacobianEvaluations)
        where TModel : IResidualModel
    {
        Span<double> r = w.Residuals, rTrial = w.TrialResiduals, jacobian = w.Jacobian, augmented = w.Augmented, rhs = w.RightHandSide;
        Span<double> xTrial = w.TrialPoint, scale = w.Scale, g = w.Gradient, columnNorms = w.ColumnNorms;
        double cosine = Cosine(g, columnNorms, rss, n);
        for (int k = 0; k < PolishSteps && rss > 0 && residualEvaluations + jacobianEvaluations < s.MaxEvaluations; k++)
        {
            SolveDamped(jacobian, r, scale, MinimumDamping, m, n, augmented, rhs);
            if (!DenseMath.AllFinite(rhs.Slice(0, n)))
            {
                break;
            }

            for (int j = 0; j < n; j++)
            {
                xTrial[j] = x[j] + rhs[j];
            }

            // The trial's Jacobian goes into the (now free) augmented buffer, its gradient and norms into rhs.
            Span<double> trialJacobian = augmented.Slice(0, m * n);
            model.ResidualsAndJacobian(xTrial, rTrial, trialJacobian);
            jacobianEvaluations++;
            double rssTrial = SumOfSquares(rTrial.Slice(0, m));
            if (!DenseMath.IsFinite(rssTrial) || !DenseMath.AllFinite(trialJacobian) || rssTrial > rss * (1 + PolishRise))
            {
                break;
            }

            Span<double> trialNorms = rhs.Slice(0, n), trialGradient = rhs.Slice(n, n);
            ColumnNormsAndGradient(trialJacobian, rTrial, m, n, trialNorms, trialGradient);
            double trialCosine = Cosine(trialGradient, trialNorms, rssTrial, n);
            if (!(trialCosine <= 0.5 * cosine))
            {
                break;
            }

            xTrial.Slice(0, n).CopyTo(x);
            rTrial.Slice(0, m).CopyTo(r);
            trialJacobian.CopyTo(jacobian);
            trialNorms.CopyTo(columnNorms);
            trialGradient.CopyTo(g);
            rss = rssTrial;
            cosine = trialCosine;
        }

        return Finish(rss, reason, standardErrors, w, m, n, iterations, residualEvaluations, jacobianEvaluations);
    }

    private static double Cosine(ReadOnlySpan<double> g, ReadOnlySpan<double> columnNorms, double rss, int n)
    {
        double cosine = 0;
        for (int j = 0; j < n; j++)
        {
            if (columnNorms[j] > 0)
            {
                cosine = Math.Max(cosine, Math.Abs(0.5 * g[j]) / (columnNorms[j] * Math.Sqrt(rss)));
            }
        }

        return cosine;
    }

    /// <summary>Solves min ‖[J; √λ D] h + [r; 0]‖ by QR; h is left in the first n elements of rhs.</summary>
    private static void SolveDamped(ReadOnlySpan<double> jacobian, ReadOnlySpan<double> r, ReadOnlySpan<double> scale, double lambda, int m, int n, Span<double> augmented, Span<double> rhs)
    {
        double root = Math.Sqrt(lambda);
        jacobian.Slice(0, m * n).CopyTo(augmented);
        augmented.Slice(m * n, n * n).Clear();
        for (int j = 0; j < n; j++)
        {
            augmented[((m + j) * n) + j] = root * scale[j];
            rhs[m + j] = 0;
        }

        for (int i = 0; i < m; i++)
        {
            rhs[i] = -r[i];
        }

        DenseMath.HouseholderQr(augmented, m + n, n, rhs);
        DenseMath.BackSubstitute(augmented, n, rhs);
    }

    private static LeastSquaresResult Finish(double rss, StopReason reason, Span<double> standardErrors, LeastSquaresWorkspace w, int m, int n,
        int iterations, int residualEvaluations, int jacobianEvaluations)
    {
        if (!standardErrors.IsEmpty)
        {
            StandardErrors(w.Jacobian, m, n, rss, w.Augmented, standardErrors);
        }

        return new LeastSquaresResult(rss, DenseMath.MaxAbs(w.Gradient), iterations, residualEvaluations, jacobianEvaluations, m - n, reason);
    }

    private static double SumOfSquares(ReadOnlySpan<double> r)
    {
        double s = 0;
        for (int i = 0; i < r.Length; i++)
        {
            s += r[i] * r[i];
        }

        return s;
    }

    /// <summary>‖J_:j‖ for every column, and g = 2Jᵀr.</summary>
    private static void ColumnNormsAndGradient(ReadOnlySpan<double> jacobian, ReadOnlySpan<double> r, int m, int n, Span<double> columnNorms, Span<double> g)
    {
        for (int j = 0; j < n; j++)
        {
            double scale = 0;
            for (int i = 0; i < m; i++)
            {
                scale = Math.Max(scale, Math.Abs(jacobian[(i * n) + j]));
            }

            double sum = 0, dot = 0;
            for (int i = 0; i < m; i++)
            {
                double v = jacobian[(i * n) + j];
                double t = scale > 0 ? v / scale : 0;
                sum += t * t;
                dot += v * r[i];
            }

            columnNorms[j] = scale * Math.Sqrt(sum);
            g[j] = 2 * dot;
        }
    }

    /// <summary>
    /// sⱼ = √(s² [(JᵀJ)⁻¹]ⱼⱼ) with s² = rss / (m − n), from the QR factorisation of J with unit-norm columns
    /// (J C⁻¹ = QR, so (JᵀJ)⁻¹ = C⁻¹ R⁻¹R⁻ᵀ C⁻¹ and its diagonal is the squared row norms of R⁻¹ over cⱼ²).
    /// NaN everywhere when m ≤ n or R is singular.
    /// </summary>
    private static void StandardErrors(ReadOnlySpan<double> jacobian, int m, int n, double rss, Span<double> work, Span<double> errors)
    {
        if (m <= n)
        {
            errors.Slice(0, n).Fill(double.NaN);
            return;
        }

        // work ((m + n)·n): rows 0..m-1 the copy of J with unit columns (R ends up in its first n rows), then n×n for
        // R⁻¹. The column norms cⱼ wait in errors until the end.
        Span<double> a = work.Slice(0, m * n);
        jacobian.Slice(0, m * n).CopyTo(a);
        for (int j = 0; j < n; j++)
        {
            double c = 0, scale = 0;
            for (int i = 0; i < m; i++)
            {
                scale = Math.Max(scale, Math.Abs(a[(i * n) + j]));
            }

            if (scale == 0)
            {
                errors.Slice(0, n).Fill(double.NaN);
                return;
            }

            for (int i = 0; i < m; i++)
            {
                double t = a[(i * n) + j] / scale;
                c += t * t;
            }

            c = scale * Math.Sqrt(c);
            errors[j] = c;
            for (int i = 0; i < m; i++)
            {
                a[(i * n) + j] /= c;
            }
        }

        Span<double> inverse = work.Slice(m * n, n * n);
        bool ok = DenseMath.HouseholderQr(a, m, n, default);
        double variance = rss / (m - n);
        inverse.Clear();
        for (int j = 0; j < n && ok; j++)
        {
            double rjj = a[(j * n) + j];
            if (rjj == 0 || !DenseMath.IsFinite(rjj))
            {
                ok = false;
                break;
            }

            // Column j of R⁻¹: solve R x = e_j (x_i = 0 for i > j).
            inverse[(j * n) + j] = 1 / rjj;
            for (int i = j - 1; i >= 0; i--)
            {
                double sum = 0;
                for (int k = i + 1; k <= j; k++)
                {
                    sum += a[(i * n) + k] * inverse[(k * n) + j];
                }

                inverse[(i * n) + j] = -sum / a[(i * n) + i];
            }
        }

        for (int j = 0; j < n; j++)
        {
            if (!ok)
            {
                errors[j] = double.NaN;
                continue;
            }

            double sum = 0;
            for (int k = j; k < n; k++)
            {
                double v = inverse[(j * n) + k];
                sum += v * v;
            }

            errors[j] = Math.Sqrt(variance * sum) / errors[j];
        }
    }

}
