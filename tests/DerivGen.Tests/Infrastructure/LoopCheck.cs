using System;
using MathNet.Numerics.Differentiation;
using Xunit;

namespace DerivGen.Tests.Infrastructure;

/// <summary>
/// The checks shared by the loop, branch and recurrence tests, at one point: the value of MGradient and MHessian is
/// bit-identical to the user's method; the gradient matches a closed form (<see cref="GradientRelative"/>) and
/// MathNet's central differences (<see cref="Check.GradientMatchesOracle"/>); MHessian's gradient equals MGradient's;
/// the Hessian is exactly symmetric, matches a closed form (<see cref="HessianClosedFormRelative"/>) and central
/// differences of the generated gradient (<see cref="HessianVsGradientDifferencesRelative"/>).
/// </summary>
internal static class LoopCheck
{
    /// <summary>Gradient vs a closed form: the two are sums of the same terms evaluated in different orders and
    /// groupings (e.g. MathNet's matrix products vs the generated loop), so they agree to rounding times the
    /// cancellation of the sum; 1e-10 relative plus a per-test absolute floor of ~n·ε·Σ|terms| (common practice).</summary>
    public const double GradientRelative = 1e-10;

    /// <summary>Hessian vs a closed form: as for the gradient.</summary>
    public const double HessianClosedFormRelative = 1e-10;

    /// <summary>Hessian vs central differences of the generated (exact) gradient: a first difference of a smooth
    /// function keeps ~8 digits with MathNet's default step (truncation ~h², rounding ~ε/h; common practice), far
    /// better than a second difference of the value (<see cref="Check.FiniteDifferenceHessianRelative"/>).</summary>
    public const double HessianVsGradientDifferencesRelative = 1e-6;

    /// <param name="relativeStep">Null: MathNet's default step, (1 + |x_i|)·ε^(1/3), as everywhere in the suite.
    /// Otherwise a 3-point central difference with the absolute step relativeStep·|x_i| per variable, for a test that
    /// explains why the default step is too coarse for a variable of small magnitude.</param>
    public static void At(Probe p, double[] x, double[]? gradient, double gradientFloor, double[]? hessian, double hessianFloor, string what, bool oracle = true, double? relativeStep = null)
    {
        string at = $"{what} at ({string.Join(", ", Array.ConvertAll(x, Check.R))})";
        double value = p.Value(x);

        var g = new double[p.N];
        Check.SameBits(value, p.Gradient(x, g), $"{at}: MGradient's value vs the method's");
        if (gradient is not null)
        {
            Check.Close(gradient, g, GradientRelative, gradientFloor, $"{at}: gradient vs closed form");
        }

        if (oracle)
        {
            GradientMatchesDifferences(p.Value, x, g, at, relativeStep);
        }

        if (p.Hessian is null)
        {
            Assert.Null(hessian);
            return;
        }

        var g2 = new double[p.N];
        var h = new double[p.N * p.N];
        Check.SameBits(value, p.Hessian(x, g2, h), $"{at}: MHessian's value vs the method's");
        Check.Close(g, g2, Check.ClosedFormRelative, gradientFloor, $"{at}: MHessian's gradient vs MGradient's");
        Check.ExactlySymmetric(h, p.N);
        if (hessian is not null)
        {
            Check.Close(hessian, h, HessianClosedFormRelative, hessianFloor, $"{at}: Hessian vs closed form");
        }

        if (oracle)
        {
            HessianMatchesGradientDifferences(p, x, h, at, relativeStep);
        }
    }

    /// <summary>Row j of the Hessian vs MathNet's central-difference gradient of the generated ∂f/∂x_j.</summary>
    public static void HessianMatchesGradientDifferences(Probe p, double[] x, ReadOnlySpan<double> hessian, string what, double? relativeStep = null)
    {
        int n = p.N;
        var reference = new double[n * n];
        for (int j = 0; j < n; j++)
        {
            int row = j;
            double[] d = CentralDifferences(v => GradientAt(p, v)[row], x, relativeStep);
            Array.Copy(d, 0, reference, row * n, n);
        }

        double scale = 0;
        foreach (double v in reference)
        {
            scale = Math.Max(scale, Math.Abs(v));
        }

        Check.Close(reference, hessian, HessianVsGradientDifferencesRelative, HessianVsGradientDifferencesRelative * Math.Max(1, scale), $"{what}: Hessian vs central differences of the gradient (MathNet NumericalJacobian)");
    }

    /// <summary>As <see cref="Check.GradientMatchesOracle"/> (same tolerances), with the step chosen.</summary>
    public static void GradientMatchesDifferences(Func<double[], double> f, double[] x, ReadOnlySpan<double> gradient, string what, double? relativeStep)
    {
        if (relativeStep is null)
        {
            Check.GradientMatchesOracle(f, x, gradient, what);
            return;
        }

        double[] reference = CentralDifferences(f, x, relativeStep);
        double scale = 0;
        foreach (double v in reference)
        {
            scale = Math.Max(scale, Math.Abs(v));
        }

        Check.Close(reference, gradient, Check.FiniteDifferenceGradientRelative, Check.FiniteDifferenceAbsoluteFloor * Math.Max(1, scale), $"{what} gradient vs MathNet central differences (step {Check.R(relativeStep.Value)}·|x_i|)");
    }

    /// <summary>MathNet's 3-point central differences: NumericalJacobian's default step, or an absolute step
    /// relativeStep·|x_i| per variable.</summary>
    private static double[] CentralDifferences(Func<double[], double> f, double[] x, double? relativeStep)
    {
        if (relativeStep is null)
        {
            return new NumericalJacobian().Evaluate(f, x);
        }

        var result = new double[x.Length];
        for (int i = 0; i < x.Length; i++)
        {
            Assert.True(x[i] != 0, "a step relative to |x_i| needs x_i != 0");
            var derivative = new NumericalDerivative(3, 1) { StepType = StepType.Absolute, StepSize = relativeStep.Value * Math.Abs(x[i]) };
            result[i] = derivative.EvaluatePartialDerivative(f, (double[])x.Clone(), i, 1);
        }

        return result;
    }

    private static double[] GradientAt(Probe p, double[] x)
    {
        var g = new double[p.N];
        p.Gradient(x, g);
        return g;
    }
}
