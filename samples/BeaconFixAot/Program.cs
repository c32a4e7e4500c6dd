using System;
using System.Globalization;
using DerivGen.Minimization;

namespace BeaconFixAot;

/// <summary>
/// A tag moving through a hall fixes its position every tick from its measured ranges to five radio beacons, by Newton
/// steps on <see cref="RangeFix.Misfit"/> — in double precision and, as a device with a single-precision FPU would, in
/// float — and, as a cross-check, by the package's Levenberg–Marquardt on <see cref="RangeFix.RangeResiduals"/> with
/// its generated Jacobian. Only the methods DerivGen generated are used for derivatives; nothing here is
/// differentiated by hand.
/// </summary>
/// <remarks>
/// ALL NUMBERS IN THIS SAMPLE ARE INVENTED for illustration: the hall, the beacon positions, the tag's path, the range
/// bias and the measurement noise describe no real installation. The program is meant to be published as a native AOT
/// binary (no JIT, no reflection at run time) and exits with code 1 if any of its checks fails.
/// </remarks>
public static class Program
{
    // Invented beacon positions (metres) in a 24 m x 16 m hall.
    private static readonly double[] BeaconX = { 0.0, 24.0, 24.0, 0.0, 12.0 };
    private static readonly double[] BeaconY = { 0.0, 0.0, 16.0, 16.0, 8.5 };

    internal static ReadOnlySpan<double> BeaconXs => BeaconX;

    internal static ReadOnlySpan<double> BeaconYs => BeaconY;

    private const double TrueBias = 0.35;        // invented common range bias (m)
    private const double NoiseAmplitude = 0.02;  // invented range noise: uniform-like in [-0.02, 0.02] m
    private const int Ticks = 2000;              // position fixes in the run

    // Solver settings (invented, ordinary choices for Newton's method with a damped fallback).
    private const int MaxNewtonSteps = 100; // the cold first fix needs ~30; warm-started fixes 2-4
    private const double DoubleStepTolerance = 1e-7;  // m: a tenth of a micrometre
    private const float SingleStepTolerance = 1e-4f;   // m: float resolution at ~20 m is ~2e-6 m

    // Pass/fail bounds for this invented run, with their reasons.
    private const double MaxPositionError = 0.1;      // m: five ranges with at most 2 cm noise each
    private const double MaxBiasError = 0.05;         // m
    private const double MaxFloatDoubleGap = 1e-3;    // m: float agrees with double to a millimetre
    private const double MaxSolverGap = 1e-5;         // m: Newton and Levenberg–Marquardt find the same minimiser

    public static int Main()
    {
        Console.WriteLine("DerivGen native AOT sample: a tag fixes its position from ranges to five beacons.");
        Console.WriteLine("All data below are INVENTED for illustration; they describe no real installation.");
        Console.WriteLine(Invariant($"  {BeaconX.Length} beacons, range bias {TrueBias} m, range noise up to {NoiseAmplitude} m, {Ticks} ticks"));
        Console.WriteLine(Invariant($"  runtime: {(System.Runtime.CompilerServices.RuntimeFeature.IsDynamicCodeSupported ? "JIT available" : "no dynamic code (native AOT)")}"));
        Console.WriteLine();

        bool ok = CheckGradientAgainstCentralDifference();

        // Every buffer the hot loop needs, set up once before it.
        Span<double> range = stackalloc double[BeaconX.Length];
        Span<float> rangeF = stackalloc float[BeaconX.Length];
        Span<float> beaconXF = stackalloc float[BeaconX.Length];
        Span<float> beaconYF = stackalloc float[BeaconX.Length];
        for (int i = 0; i < BeaconX.Length; i++)
        {
            beaconXF[i] = (float)BeaconX[i];
            beaconYF[i] = (float)BeaconY[i];
        }

        Span<double> gradient = stackalloc double[3];
        Span<double> hessian = stackalloc double[9];
        Span<double> step = stackalloc double[3];
        Span<float> gradientF = stackalloc float[3];
        Span<float> hessianF = stackalloc float[9];
        Span<float> stepF = stackalloc float[3];
        Span<double> rows = stackalloc double[6 * 5]; // a few ticks to print after the loop

        // Levenberg–Marquardt on the residuals: its model reads the ranges from an array filled every tick, and its
        // workspace is made once, so a fit allocates nothing.
        var measured = new double[BeaconX.Length];
        var rangeModel = new RangeModel(measured);
        var workspace = new LeastSquaresWorkspace(BeaconX.Length, 3);
        var fitSettings = new LeastSquaresSettings();
        Span<double> fit = stackalloc double[] { 12.0, 8.0, 0.0 };
        Span<double> fitErrors = stackalloc double[3];
        long fitIterations = 0;
        int failedFits = 0;
        double worstSolverGap = 0;

        double x = 12.0, y = 8.0, bias = 0.0;      // double estimate, starting in the middle of the hall
        float xF = 12.0f, yF = 8.0f, biasF = 0.0f; // float estimate
        double worstError = 0, worstBiasError = 0, worstGap = 0;
        long newtonSteps = 0, newtonStepsF = 0;
        int failedFixes = 0, printed = 0;

        // ---- the hot loop: measured for allocations ------------------------------------------------------------
        long allocatedBefore = GC.GetAllocatedBytesForCurrentThread();
        for (int tick = 0; tick < Ticks; tick++)
        {
            TruePosition(tick, out double trueX, out double trueY);
            for (int i = 0; i < range.Length; i++)
            {
                range[i] = Math.Sqrt(Square(trueX - BeaconX[i]) + Square(trueY - BeaconY[i])) + TrueBias + Noise(tick, i);
                rangeF[i] = (float)range[i];
                measured[i] = range[i];
            }

            // Warm start from the previous fix, as a tracker does.
            int steps = FixDouble(ref x, ref y, ref bias, range, gradient, hessian, step);
            int stepsF = FixSingle(ref xF, ref yF, ref biasF, beaconXF, beaconYF, rangeF, gradientF, hessianF, stepF);
            if (steps < 0 || stepsF < 0)
            {
                failedFixes++;
            }

            LeastSquaresResult result = LeastSquares.LevenbergMarquardt(rangeModel, fit, fitErrors, fitSettings, workspace);
            failedFits += result.Converged ? 0 : 1;
            fitIterations += result.Iterations;
            worstSolverGap = Math.Max(worstSolverGap, Math.Sqrt(Square(fit[0] - x) + Square(fit[1] - y)));

            newtonSteps += Math.Abs(steps);
            newtonStepsF += Math.Abs(stepsF);
            worstError = Math.Max(worstError, Math.Sqrt(Square(x - trueX) + Square(y - trueY)));
            worstBiasError = Math.Max(worstBiasError, Math.Abs(bias - TrueBias));
            worstGap = Math.Max(worstGap, Math.Sqrt(Square(xF - x) + Square(yF - y)));

            if (tick % 400 == 0 && printed < 5)
            {
                Span<double> row = rows.Slice(printed++ * 6, 6);
                row[0] = tick; row[1] = trueX; row[2] = trueY; row[3] = x; row[4] = y; row[5] = bias;
            }
        }

        long allocated = GC.GetAllocatedBytesForCurrentThread() - allocatedBefore;
        // ---- end of the hot loop -----------------------------------------------------------------------------

        Console.WriteLine("  tick    true x    true y     fix x     fix y   fix bias");
        for (int r = 0; r < printed; r++)
        {
            ReadOnlySpan<double> row = rows.Slice(r * 6, 6);
            Console.WriteLine(Invariant($"  {row[0],4:F0}  {row[1],8:F3}  {row[2],8:F3}  {row[3],8:F3}  {row[4],8:F3}  {row[5],9:F4}"));
        }

        Console.WriteLine();
        Console.WriteLine("Result:");
        Console.WriteLine(Invariant($"  Newton steps per fix: double {(double)newtonSteps / Ticks:F2}, float {(double)newtonStepsF / Ticks:F2}; fixes that did not converge: {failedFixes}"));
        Console.WriteLine(Invariant($"  largest position error (double): {worstError:F4} m (bound {MaxPositionError} m)"));
        Console.WriteLine(Invariant($"  largest bias error (double): {worstBiasError:F4} m (bound {MaxBiasError} m)"));
        Console.WriteLine(Invariant($"  largest float-vs-double position gap: {worstGap:E2} m (bound {MaxFloatDoubleGap:E0} m)"));
        Console.WriteLine(Invariant($"  Levenberg–Marquardt (generated Jacobian): {(double)fitIterations / Ticks:F2} iterations per fix; fits that did not converge: {failedFits}"));
        Console.WriteLine(Invariant($"  largest Newton-vs-Levenberg–Marquardt position gap: {worstSolverGap:E2} m (bound {MaxSolverGap:E0} m)"));
        Console.WriteLine(Invariant($"  last fit's standard errors (x, y, bias): {fitErrors[0]:E2}, {fitErrors[1]:E2}, {fitErrors[2]:E2} m"));
        Console.WriteLine(Invariant($"  bytes allocated in the hot loop ({Ticks} double fixes + {Ticks} float fixes + {Ticks} least-squares fits): {allocated}"));

        ok &= Report(failedFixes == 0, "every fix converged");
        ok &= Report(worstError <= MaxPositionError, "position error within bound");
        ok &= Report(worstBiasError <= MaxBiasError, "bias error within bound");
        ok &= Report(worstGap <= MaxFloatDoubleGap, "float agrees with double");
        ok &= Report(failedFits == 0 && worstSolverGap <= MaxSolverGap, "Levenberg–Marquardt agrees with Newton");
        ok &= Report(allocated == 0, "no allocation in the hot loop");
        Console.WriteLine(ok ? "All checks passed." : "FAILED: see above.");
        return ok ? 0 : 1;
    }

    /// <summary>
    /// Newton's method in double precision from the current estimate; returns the number of steps taken, negated if it
    /// did not converge. A step that does not decrease the misfit is halved; when 30 halvings find no strict decrease the
    /// estimate is at the rounding floor of the arithmetic and the fix is done.
    /// </summary>
    private static int FixDouble(ref double x, ref double y, ref double bias, ReadOnlySpan<double> range,
        Span<double> gradient, Span<double> hessian, Span<double> step)
    {
        for (int k = 1; k <= MaxNewtonSteps; k++)
        {
            double misfit = RangeFix.MisfitHessian(x, y, bias, BeaconX, BeaconY, range, gradient, hessian);
            if (!Newton3.SolveDamped(hessian, gradient, step))
            {
                return -k;
            }

            double t = 1.0;
            int halvings = 0;
            while (RangeFix.Misfit(x + t * step[0], y + t * step[1], bias + t * step[2], BeaconX, BeaconY, range) >= misfit)
            {
                if (++halvings > 30)
                {
                    return k; // no decrease left at this precision: the rounding floor is reached
                }

                t *= 0.5;
            }

            x += t * step[0];
            y += t * step[1];
            bias += t * step[2];
            if (Math.Sqrt(Square(step[0]) + Square(step[1]) + Square(step[2])) < DoubleStepTolerance)
            {
                return k;
            }
        }

        return -MaxNewtonSteps;
    }

    /// <summary>The same in single precision, calling the float methods DerivGen generated for the float twin.</summary>
    private static int FixSingle(ref float x, ref float y, ref float bias, ReadOnlySpan<float> beaconX,
        ReadOnlySpan<float> beaconY, ReadOnlySpan<float> range, Span<float> gradient, Span<float> hessian, Span<float> step)
    {
        for (int k = 1; k <= MaxNewtonSteps; k++)
        {
            float misfit = RangeFix.MisfitSingleHessian(x, y, bias, beaconX, beaconY, range, gradient, hessian);
            if (!Newton3.SolveDamped(hessian, gradient, step))
            {
                return -k;
            }

            float t = 1f;
            int halvings = 0;
            while (RangeFix.MisfitSingle(x + t * step[0], y + t * step[1], bias + t * step[2], beaconX, beaconY, range) >= misfit)
            {
                if (++halvings > 30)
                {
                    return k; // no decrease left at this precision: the rounding floor is reached
                }

                t *= 0.5f;
            }

            x += t * step[0];
            y += t * step[1];
            bias += t * step[2];
            if (MathF.Sqrt(step[0] * step[0] + step[1] * step[1] + step[2] * step[2]) < SingleStepTolerance)
            {
                return k;
            }
        }

        return -MaxNewtonSteps;
    }

    /// <summary>The generated gradient against a central difference of the misfit itself, at one invented point.</summary>
    private static bool CheckGradientAgainstCentralDifference()
    {
        Span<double> range = stackalloc double[] { 13.1, 17.4, 15.2, 9.8, 6.3 };
        Span<double> gradient = stackalloc double[3];
        double x = 9.5, y = 6.0, bias = 0.2, h = 1e-6;
        RangeFix.MisfitGradient(x, y, bias, BeaconX, BeaconY, range, gradient);
        double worst = 0;
        for (int j = 0; j < 3; j++)
        {
            double plus = RangeFix.Misfit(x + (j == 0 ? h : 0), y + (j == 1 ? h : 0), bias + (j == 2 ? h : 0), BeaconX, BeaconY, range);
            double minus = RangeFix.Misfit(x - (j == 0 ? h : 0), y - (j == 1 ? h : 0), bias - (j == 2 ? h : 0), BeaconX, BeaconY, range);
            worst = Math.Max(worst, Math.Abs(gradient[j] - (plus - minus) / (2 * h)) / Math.Max(1.0, Math.Abs(gradient[j])));
        }

        Console.WriteLine(Invariant($"Generated gradient vs central difference (h = 1e-6) at an invented point: largest relative gap {worst:E2}"));
        Console.WriteLine();
        return Report(worst < 1e-6, "gradient matches central difference");
    }

    /// <summary>An invented path through the hall: two slow oscillations, one tick every 10 ms.</summary>
    private static void TruePosition(int tick, out double x, out double y)
    {
        double t = tick * 0.01;
        x = 12.0 + 8.0 * Math.Sin(2 * Math.PI * t / 13.0);
        y = 8.0 + 5.0 * Math.Sin(2 * Math.PI * t / 7.0 + 0.7);
    }

    /// <summary>Deterministic invented noise in [-NoiseAmplitude, NoiseAmplitude] (a hash of tick and beacon).</summary>
    private static double Noise(int tick, int beacon)
    {
        uint h = unchecked((uint)(tick * 73856093) ^ (uint)(beacon * 19349663) ^ 0x9E3779B9u);
        h ^= h >> 16;
        h = unchecked(h * 0x85EBCA6Bu);
        h ^= h >> 13;
        h = unchecked(h * 0xC2B2AE35u);
        h ^= h >> 16;
        return NoiseAmplitude * (2.0 * (h / (double)uint.MaxValue) - 1.0);
    }

    private static double Square(double v) => v * v;

    private static bool Report(bool passed, string what)
    {
        Console.WriteLine((passed ? "  ok:     " : "  FAILED: ") + what);
        return passed;
    }

    private static string Invariant(FormattableString text) => text.ToString(CultureInfo.InvariantCulture);
}

/// <summary>The range residuals of one tick for <see cref="LeastSquares"/>: the residuals and the generated Jacobian.</summary>
internal readonly struct RangeModel : IResidualModel
{
    private readonly double[] _range;

    public RangeModel(double[] range) => _range = range;

    public int ResidualCount => _range.Length;

    public void Residuals(ReadOnlySpan<double> p, Span<double> residuals) =>
        RangeFix.RangeResiduals(p[0], p[1], p[2], Program.BeaconXs, Program.BeaconYs, _range, residuals);

    public void ResidualsAndJacobian(ReadOnlySpan<double> p, Span<double> residuals, Span<double> jacobian) =>
        RangeFix.RangeResidualsJacobian(p[0], p[1], p[2], Program.BeaconXs, Program.BeaconYs, _range, residuals, jacobian);
}
