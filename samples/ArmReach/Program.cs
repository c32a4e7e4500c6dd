using System;
using System.Globalization;
using System.IO;
using System.Linq;
using System.Reflection;

namespace ArmReach;

/// <summary>
/// Moves a two-link planar arm so that its tip reaches a target point, by minimising the squared tip-to-target
/// distance first with gradient descent and then with Newton's method. Both use only the derivative methods that
/// DerivGen generated from <see cref="TwoLinkArm.Loss"/>; nothing here is differentiated by hand.
/// </summary>
/// <remarks>
/// ALL NUMBERS IN THIS SAMPLE ARE INVENTED for illustration: the link lengths, the target, the starting pose, the step
/// size and the iteration counts describe no real machine.
/// </remarks>
public static class Program
{
    // Invented arm and target (metres), and an invented starting pose (radians).
    private const double UpperLength = 0.9;
    private const double ForeLength = 0.6;
    private const double TargetX = 0.8;
    private const double TargetY = 0.7;
    private const double StartShoulder = -0.4;
    private const double StartElbow = 0.3;

    // Invented optimiser settings.
    private const double StepSize = 0.1;          // fixed gradient-descent step
    private const int GradientDescentSteps = 40;
    private const int MaxNewtonSteps = 20;
    private const double GradientTolerance = 1e-12; // stop Newton when the gradient norm falls below this
    private const double SuccessLoss = 1e-20;       // squared distance that counts as "reached" (1e-10 m)

    public static int Main()
    {
        Console.WriteLine("DerivGen sample: a two-link planar arm reaches for a target point.");
        Console.WriteLine("All data below are INVENTED for illustration; they describe no real arm.");
        Console.WriteLine(Invariant($"  upper link {UpperLength} m, forearm {ForeLength} m, target ({TargetX}, {TargetY}) m"));
        Console.WriteLine(Invariant($"  start: shoulder {StartShoulder} rad, elbow {StartElbow} rad"));
        Console.WriteLine();

        double shoulder = StartShoulder, elbow = StartElbow;
        Span<double> gradient = stackalloc double[2];
        Span<double> hessian = stackalloc double[4];

        // A sanity check a newcomer can read: the generated gradient against a central difference of the loss itself.
        double lossAtStart = TwoLinkArm.LossGradient(shoulder, elbow, UpperLength, ForeLength, TargetX, TargetY, gradient);
        double largestGap = Math.Max(
            Math.Abs(gradient[0] - CentralDifference(shoulder, elbow, 0)),
            Math.Abs(gradient[1] - CentralDifference(shoulder, elbow, 1)));
        Console.WriteLine(Invariant($"Generated gradient at the start: ({gradient[0]:G10}, {gradient[1]:G10}); loss {lossAtStart:G10}"));
        Console.WriteLine(Invariant($"  largest difference from a central-difference estimate (h = 1e-6): {largestGap:E2}"));
        Console.WriteLine();

        // Phase 1: gradient descent with a fixed step, using the generated LossGradient.
        Console.WriteLine(Invariant($"Gradient descent, fixed step {StepSize}:"));
        Console.WriteLine("  step      shoulder         elbow              loss     |gradient|");
        for (int step = 0; step <= GradientDescentSteps; step++)
        {
            double loss = TwoLinkArm.LossGradient(shoulder, elbow, UpperLength, ForeLength, TargetX, TargetY, gradient);
            if (step % 5 == 0)
            {
                PrintRow(step.ToString(CultureInfo.InvariantCulture), shoulder, elbow, loss, Norm(gradient));
            }

            if (step < GradientDescentSteps)
            {
                shoulder -= StepSize * gradient[0];
                elbow -= StepSize * gradient[1];
            }
        }

        Console.WriteLine();

        // Phase 2: Newton steps with the generated LossHessian; a gradient step when the Hessian is not positive definite.
        Console.WriteLine("Newton's method (gradient step where the Hessian is not positive definite):");
        Console.WriteLine("  step      shoulder         elbow              loss     |gradient|  kind");
        for (int step = 0; step <= MaxNewtonSteps; step++)
        {
            double loss = TwoLinkArm.LossHessian(shoulder, elbow, UpperLength, ForeLength, TargetX, TargetY, gradient, hessian);
            double gradientNorm = Norm(gradient);
            if (gradientNorm < GradientTolerance || step == MaxNewtonSteps)
            {
                PrintRow(step.ToString(CultureInfo.InvariantCulture), shoulder, elbow, loss, gradientNorm);
                break;
            }

            // Solve the 2x2 system H d = -g. H is symmetric: positive definite iff H00 > 0 and det H > 0.
            double h00 = hessian[0], h01 = hessian[1], h10 = hessian[2], h11 = hessian[3];
            double det = h00 * h11 - h01 * h10;
            string kind;
            double d0, d1;
            if (h00 > 0 && det > 0)
            {
                d0 = -(h11 * gradient[0] - h01 * gradient[1]) / det;
                d1 = -(h00 * gradient[1] - h10 * gradient[0]) / det;
                kind = "Newton";
            }
            else
            {
                d0 = -StepSize * gradient[0];
                d1 = -StepSize * gradient[1];
                kind = "gradient (Hessian not positive definite)";
            }

            PrintRow(step.ToString(CultureInfo.InvariantCulture), shoulder, elbow, loss, gradientNorm, kind);
            shoulder += d0;
            elbow += d1;
        }

        double finalLoss = TwoLinkArm.Loss(shoulder, elbow, UpperLength, ForeLength, TargetX, TargetY);
        var (tipX, tipY) = TwoLinkArm.Tip(shoulder, elbow, UpperLength, ForeLength);
        Console.WriteLine();
        Console.WriteLine("Result:");
        Console.WriteLine(Invariant($"  joint angles: shoulder {shoulder:F9} rad, elbow {elbow:F9} rad"));
        Console.WriteLine(Invariant($"  tip at ({tipX:F12}, {tipY:F12}) m, target ({TargetX}, {TargetY}) m"));
        Console.WriteLine(Invariant($"  distance to target: {Math.Sqrt(finalLoss):E3} m"));
        Console.WriteLine();

        bool headerPrinted = PrintGeneratedHeader();
        bool reached = finalLoss < SuccessLoss;
        if (!reached)
        {
            Console.WriteLine(Invariant($"FAILED: the arm did not reach the target (loss {finalLoss:E3} >= {SuccessLoss:E0})."));
        }

        return reached && headerPrinted ? 0 : 1;
    }

    /// <summary>Central difference of the loss in one joint angle (index 0: shoulder, 1: elbow).</summary>
    private static double CentralDifference(double shoulder, double elbow, int index)
    {
        const double h = 1e-6;
        double Loss(double s, double e) => TwoLinkArm.Loss(s, e, UpperLength, ForeLength, TargetX, TargetY);
        return index == 0
            ? (Loss(shoulder + h, elbow) - Loss(shoulder - h, elbow)) / (2 * h)
            : (Loss(shoulder, elbow + h) - Loss(shoulder, elbow - h)) / (2 * h);
    }

    /// <summary>
    /// Prints the comment header of the file DerivGen generated for <see cref="TwoLinkArm.Loss"/> — the signature,
    /// the loss and every partial derivative as formulas — read from Generated/ where the build wrote it.
    /// </summary>
    private static bool PrintGeneratedHeader()
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
            $"{typeof(TwoLinkArm).FullName}.{nameof(TwoLinkArm.Loss)}.g.cs");
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

    private static void PrintRow(string step, double shoulder, double elbow, double loss, double gradientNorm, string kind = "") =>
        Console.WriteLine(Invariant($"  {step,4}  {shoulder,12:F9}  {elbow,12:F9}  {loss,16:E6}  {gradientNorm,13:E3}  {kind}").TrimEnd());

    private static double Norm(ReadOnlySpan<double> v) => Math.Sqrt(v[0] * v[0] + v[1] * v[1]);

    private static string Invariant(FormattableString text) => text.ToString(CultureInfo.InvariantCulture);
}
