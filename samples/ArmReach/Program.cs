using System;
using System.Globalization;
using System.IO;
using System.Linq;
using System.Reflection;
using DerivGen.Minimization;

namespace ArmReach;

/// <summary>
/// The DerivGen sample, in two parts, both driven by the package's minimisers (namespace DerivGen.Minimization) on
/// derivatives DerivGen generated; nothing here is differentiated by hand.
/// <list type="number">
/// <item>Reach: move a two-link planar arm so that its tip reaches a target point, by minimising the squared
/// tip-to-target distance <see cref="TwoLinkArm.Loss"/> — gradient descent with an Armijo line search to get close,
/// then Newton's method on the generated Hessian to finish.</item>
/// <item>Calibrate: fit the arm's two link lengths and its shoulder encoder's zero offset to measured tip positions
/// by Levenberg–Marquardt on <see cref="TwoLinkArm.TipResiduals"/> and its generated Jacobian, print the fitted values
/// with their standard errors next to the true ones, and plot measurements against the fitted model to an SVG file.</item>
/// </list>
/// The program exits with code 1 if a check fails: a generated derivative disagrees with a central difference, the
/// arm does not reach the target, the generated files cannot be read, the fit does not converge, or a fitted value
/// is more than 3 standard errors from the true value.
/// </summary>
/// <remarks>
/// ALL NUMBERS IN THIS SAMPLE ARE INVENTED for illustration: the link lengths, the target, the starting pose, the
/// calibration poses, the "measured" tips and their noise describe no real machine. Do not use them, or this program,
/// to control a real arm.
/// </remarks>
public static class Program
{
    // Part 1. Invented arm and target (metres), and an invented starting pose (radians).
    private const double UpperLength = 0.9;
    private const double ForeLength = 0.6;
    private const double TargetX = 0.8;
    private const double TargetY = 0.7;
    private const double StartShoulder = -0.4;
    private const double StartElbow = 0.3;

    // Part 1. Invented optimiser settings.
    private const double CloseEnoughGradient = 1e-2;  // gradient descent hands over to Newton below this gradient
    private const int MaxGradientDescentIterations = 100;
    private const double NewtonGradientTolerance = 1e-12;
    private const double SuccessLoss = 1e-20;          // squared distance that counts as "reached" (1e-10 m)

    // Both parts: how far a generated derivative may be from a central difference (h = 1e-6: error about 1e-10).
    private const double DerivativeCheckTolerance = 1e-6;

    // Part 2. The calibration starts from the lengths on the (invented) drawing and a zero offset.
    private const double NominalShoulderOffset = 0;
    private const double StandardErrorsAllowed = 3;
    private const int PoseDrawn = 11;                  // the pose at which the plot draws the arm (0-based)
    private const string PlotFileName = "arm-calibration.svg";

    public static int Main()
    {
        Console.WriteLine("DerivGen sample: a two-link planar arm reaches for a target point, then is calibrated.");
        Console.WriteLine("All data below are INVENTED for illustration; they describe no real arm.");
        Console.WriteLine("Do not use these numbers, or this program, to control a real machine.");
        Console.WriteLine();

        bool reached = Reach();
        bool lossHeader = PrintGeneratedHeader(nameof(TwoLinkArm.Loss));
        Console.WriteLine();
        bool calibrated = Calibrate();

        bool ok = reached && lossHeader && calibrated;
        Console.WriteLine();
        Console.WriteLine(ok ? "All checks passed." : "FAILED: see the messages above.");
        return ok ? 0 : 1;
    }

    /// <summary>Part 1: gradient descent (Armijo) then Newton on the generated LossGradient/LossHessian.</summary>
    private static bool Reach()
    {
        Console.WriteLine("=== Part 1: reach a target ===");
        Console.WriteLine(Invariant($"  upper link {UpperLength} m, forearm {ForeLength} m, target ({TargetX}, {TargetY}) m"));
        Console.WriteLine(Invariant($"  start: shoulder {StartShoulder} rad, elbow {StartElbow} rad"));
        Console.WriteLine();

        var objective = new ReachObjective(UpperLength, ForeLength, TargetX, TargetY);
        Span<double> x = stackalloc double[] { StartShoulder, StartElbow };
        Span<double> gradient = stackalloc double[2];

        // A sanity check a newcomer can read: the generated gradient against a central difference of the loss itself.
        double lossAtStart = objective.ValueAndGradient(x, gradient);
        double largestGap = 0;
        for (int j = 0; j < 2; j++)
        {
            largestGap = Math.Max(largestGap, Math.Abs(gradient[j] - CentralDifference(objective, x, j)));
        }

        bool gradientOk = largestGap <= DerivativeCheckTolerance;
        Console.WriteLine(Invariant($"Generated gradient at the start: ({gradient[0]:G10}, {gradient[1]:G10}); loss {lossAtStart:G10}"));
        Console.WriteLine(Invariant($"  largest difference from a central-difference estimate (h = 1e-6): {largestGap:0.00E+00}{(gradientOk ? "" : "  FAILED")}"));
        Console.WriteLine();

        // One workspace for both minimisers: no buffers are allocated during the iterations.
        var workspace = new MinimizeWorkspace(2);
        var descentProgress = new ProgressPrinter(null, "shoulder (rad)", "elbow (rad)");
        var newtonProgress = new ProgressPrinter("shift", "shoulder (rad)", "elbow (rad)");   // shift: see IterationReport.Regularization

        Console.WriteLine(Invariant($"Gradient descent with an Armijo line search (Minimize.GradientDescent) until max|gradient| <= {CloseEnoughGradient}:"));
        descentProgress.PrintHeader("loss (m^2)");
        descentProgress.PrintStart(lossAtStart, gradient, x);
        var descentSettings = new MinimizeSettings { GradientTolerance = CloseEnoughGradient, MaxIterations = MaxGradientDescentIterations };
        MinimizeResult descent = Minimize.GradientDescent(objective, x, descentProgress, descentSettings, workspace);
        PrintStop(descent);
        Console.WriteLine();

        Console.WriteLine(Invariant($"Newton's method on the generated Hessian (Minimize.Newton) until max|gradient| <= {NewtonGradientTolerance:0E+00}:"));
        newtonProgress.PrintHeader("loss (m^2)");
        objective.ValueAndGradient(x, gradient);
        newtonProgress.PrintStart(descent.Value, gradient, x);
        var newtonSettings = new MinimizeSettings { GradientTolerance = NewtonGradientTolerance };
        MinimizeResult newton = Minimize.Newton(objective, x, newtonProgress, newtonSettings, workspace);
        PrintStop(newton);

        var (tipX, tipY) = TwoLinkArm.Tip(x[0], x[1], UpperLength, ForeLength);
        Console.WriteLine();
        Console.WriteLine("Result:");
        Console.WriteLine(Invariant($"  joint angles: shoulder {x[0]:F9} rad, elbow {x[1]:F9} rad"));
        Console.WriteLine(Invariant($"  tip at ({tipX:F12}, {tipY:F12}) m, target ({TargetX}, {TargetY}) m"));
        Console.WriteLine(Invariant($"  distance to target: {Math.Sqrt(newton.Value):0.000E+00} m"));
        Console.WriteLine();

        bool reached = newton.Converged && newton.Value < SuccessLoss;
        if (!reached)
        {
            Console.WriteLine(Invariant($"FAILED: the arm did not reach the target (Newton: {newton.Reason}, loss {newton.Value:0.000E+00}; needed a convergence test met and loss < {SuccessLoss:0E+00})."));
        }

        return gradientOk && reached;
    }

    /// <summary>Part 2: Levenberg–Marquardt on the generated TipResidualsJacobian, standard errors, the SVG plot.</summary>
    private static bool Calibrate()
    {
        Console.WriteLine("=== Part 2: calibrate the arm from measured tip positions ===");
        Console.WriteLine("The measurements are INVENTED: computed from invented true values (below) plus invented noise");
        Console.WriteLine(Invariant($"(normal, standard deviation {CalibrationData.NoiseStandardDeviation} m in x and y, System.Random seed {CalibrationData.Seed})."));
        CalibrationData data = CalibrationData.Invent();
        int poses = data.Shoulder.Length, m = 2 * poses;
        Console.WriteLine("  pose  shoulder (rad)  elbow (rad)  measured x (m)  measured y (m)");
        for (int i = 0; i < poses; i++)
        {
            Console.WriteLine(Invariant($"  {i + 1,4}  {data.Shoulder[i],14:F4}  {data.Elbow[i],11:F4}  {data.MeasuredX[i],14:F5}  {data.MeasuredY[i],14:F5}"));
        }

        Console.WriteLine();
        bool header = PrintGeneratedHeader(nameof(TwoLinkArm.TipResiduals));
        Console.WriteLine();

        var model = new ArmCalibrationModel(data.Shoulder, data.Elbow, data.MeasuredX, data.MeasuredY);
        double[] p = { UpperLength, ForeLength, NominalShoulderOffset };   // start: the drawing's lengths, no offset
        var residuals = new double[m];
        var jacobian = new double[m * 3];
        model.ResidualsAndJacobian(p, residuals, jacobian);

        // The generated Jacobian against central differences of TipResiduals, column by column; and the residuals it
        // writes must be exactly those of TipResiduals.
        var plain = new double[m];
        model.Residuals(p, plain);
        bool sameResiduals = plain.AsSpan().SequenceEqual(residuals);
        double largestGap = 0;
        var plus = new double[m];
        var minus = new double[m];
        for (int j = 0; j < 3; j++)
        {
            const double h = 1e-6;
            double[] shifted = (double[])p.Clone();
            shifted[j] = p[j] + h;
            model.Residuals(shifted, plus);
            shifted[j] = p[j] - h;
            model.Residuals(shifted, minus);
            for (int i = 0; i < m; i++)
            {
                largestGap = Math.Max(largestGap, Math.Abs(jacobian[i * 3 + j] - (plus[i] - minus[i]) / (2 * h)));
            }
        }

        bool jacobianOk = sameResiduals && largestGap <= DerivativeCheckTolerance;
        Console.WriteLine(Invariant($"Generated Jacobian ({m}x3) at the start against central differences (h = 1e-6): largest difference {largestGap:0.00E+00}{(largestGap <= DerivativeCheckTolerance ? "" : "  FAILED")}"));
        Console.WriteLine($"  residuals written by TipResidualsJacobian equal those of TipResiduals bit for bit: {(sameResiduals ? "yes" : "NO (FAILED)")}");
        Console.WriteLine();

        // Σ rᵢ² and its gradient 2Jᵀr at the start, for the first row of the progress table.
        double startRss = 0;
        Span<double> startGradient = stackalloc double[3];
        for (int i = 0; i < m; i++)
        {
            startRss += residuals[i] * residuals[i];
            for (int j = 0; j < 3; j++)
            {
                startGradient[j] += 2 * jacobian[i * 3 + j] * residuals[i];
            }
        }

        Console.WriteLine(Invariant($"Levenberg-Marquardt (LeastSquares.LevenbergMarquardt), {m} residuals, 3 parameters:"));
        var progress = new ProgressPrinter("lambda", "upper (m)", "fore (m)", "offset (rad)");
        progress.PrintHeader("sum r^2 (m^2)");
        progress.PrintStart(startRss, startGradient, p);
        var standardErrors = new double[3];
        LeastSquaresResult fit = LeastSquares.LevenbergMarquardt(model, p, standardErrors, progress, settings: null, workspace: new LeastSquaresWorkspace(m, 3));
        Console.WriteLine(Invariant($"  stopped: {fit.Reason} ({(fit.Converged ? "converged" : "NOT converged")}) after {fit.Iterations} iterations, {fit.ResidualEvaluations} residual + {fit.JacobianEvaluations} Jacobian evaluations"));
        double residualStandardDeviation = Math.Sqrt(fit.ResidualVariance);
        Console.WriteLine(Invariant($"  sum r^2 = {fit.ResidualSumOfSquares:0.0000E+00} m^2; residual standard deviation {residualStandardDeviation * 1000:F3} mm ({fit.DegreesOfFreedom} degrees of freedom; invented noise: {CalibrationData.NoiseStandardDeviation * 1000:F3} mm)"));
        Console.WriteLine();

        // The fitted values against the invented truth.
        double[] truth = { CalibrationData.TrueUpperLength, CalibrationData.TrueForeLength, CalibrationData.TrueShoulderOffset };
        string[] names = { "upper link (m)", "forearm (m)", "shoulder offset (rad)" };
        bool recovered = true;
        Console.WriteLine("Fitted parameters (start: the drawing's 0.9 m, 0.6 m and 0 rad):");
        Console.WriteLine("  parameter                 fitted    std error   true (invented)   (fitted - true) / std error");
        for (int j = 0; j < 3; j++)
        {
            double z = (p[j] - truth[j]) / standardErrors[j];
            bool within = standardErrors[j] > 0 && Math.Abs(z) <= StandardErrorsAllowed;   // false for NaN too
            recovered &= within;
            Console.WriteLine(Invariant($"  {names[j],-21}  {p[j],10:F6}  {standardErrors[j],11:0.00E+00}  {truth[j],16:F6}  {z,12:F2}{(within ? "" : "  FAILED")}"));
        }

        if (!fit.Converged)
        {
            Console.WriteLine(Invariant($"FAILED: Levenberg-Marquardt did not converge ({fit.Reason})."));
        }

        if (!recovered)
        {
            Console.WriteLine(Invariant($"FAILED: a fitted value is not within {StandardErrorsAllowed} standard errors of the true (invented) value."));
        }
        else
        {
            Console.WriteLine(Invariant($"  every fitted value is within {StandardErrorsAllowed} standard errors of the true (invented) value"));
        }

        string plotPath = Path.GetFullPath(PlotFileName);
        CalibrationPlot.Write(data, p, PoseDrawn, plotPath);
        Console.WriteLine();
        Console.WriteLine($"Plot of the measured tips against the fitted model's tips (invented data): {plotPath}");
        return header && jacobianOk && fit.Converged && recovered;
    }

    private static void PrintStop(in MinimizeResult result) =>
        Console.WriteLine(Invariant($"  stopped: {result.Reason} ({(result.Converged ? "converged" : "not converged")}) after {result.Iterations} iterations; evaluations: {result.ValueEvaluations} value, {result.GradientEvaluations} gradient, {result.HessianEvaluations} Hessian"));

    /// <summary>Central difference of the objective in coordinate <paramref name="index"/>.</summary>
    private static double CentralDifference(ReachObjective objective, ReadOnlySpan<double> x, int index)
    {
        const double h = 1e-6;
        Span<double> shifted = stackalloc double[2];
        x.CopyTo(shifted);
        shifted[index] = x[index] + h;
        double up = objective.Value(shifted);
        shifted[index] = x[index] - h;
        double down = objective.Value(shifted);
        return (up - down) / (2 * h);
    }

    /// <summary>
    /// Prints the comment header of the file DerivGen generated for <see cref="TwoLinkArm"/>'s method
    /// <paramref name="method"/> — the signature, the statements and every partial derivative as formulas — read from
    /// Generated/ where the build wrote it.
    /// </summary>
    private static bool PrintGeneratedHeader(string method)
    {
        string? projectDirectory = typeof(Program).Assembly
            .GetCustomAttributes<AssemblyMetadataAttribute>()
            .FirstOrDefault(a => a.Key == "ArmReach.ProjectDirectory")?.Value;
        if (projectDirectory is null)
        {
            Console.WriteLine("FAILED: the build did not record the project directory (AssemblyMetadata ArmReach.ProjectDirectory).");
            return false;
        }

        // Hint name: <Namespace>.<Type>.<Method>.g.cs, in the folder named after the generator's assembly and type.
        string path = Path.Combine(
            projectDirectory, "Generated", "DerivGen.Generator", "DerivGen.Generator.DerivativeGenerator",
            $"{typeof(TwoLinkArm).FullName}.{method}.g.cs");
        if (!File.Exists(path))
        {
            Console.WriteLine($"FAILED: the generated file was not found at {path}. Build the project to create it.");
            return false;
        }

        string[] lines = File.ReadAllLines(path);
        int start = Array.FindIndex(lines, l => l.Trim() == "// <auto-generated/>");
        if (start < 0)
        {
            Console.WriteLine($"FAILED: {path} has no '// <auto-generated/>' line.");
            return false;
        }

        Console.WriteLine($"Derivative formulas, from the header of the generated file {Path.GetFileName(path)}:");
        int printed = 0;
        for (int i = start + 1; i < lines.Length && lines[i].TrimStart().StartsWith("//", StringComparison.Ordinal); i++)
        {
            Console.WriteLine("  " + lines[i]);
            printed++;
        }

        if (printed == 0)
        {
            Console.WriteLine("FAILED: the generated file has no comment header after '// <auto-generated/>'.");
            return false;
        }

        return true;
    }

    private static string Invariant(FormattableString text) => text.ToString(CultureInfo.InvariantCulture);
}
