using System;
using DerivGen;

namespace BeaconFixAot;

/// <summary>
/// The misfit between measured and predicted ranges from a tag to fixed radio beacons on a plane. The unknowns are the
/// tag's position (x, y) in metres and a common range bias (metres) that every measurement shares, such as a constant
/// delay in the tag's receiver. Beacon positions and measured ranges are data (constants).
/// </summary>
/// <remarks>
/// The class is <c>partial</c> because DerivGen adds <c>MisfitGradient</c>, <c>MisfitHessian</c>,
/// <c>MisfitSingleGradient</c>, <c>MisfitSingleHessian</c> and <c>RangeResidualsJacobian</c> to it at compile time. The generated files are written to
/// <c>Generated/</c> beside this file and committed (see BeaconFixAot.csproj), so that a change here shows its
/// derivative change in review.
/// </remarks>
public static partial class RangeFix
{
    /// <summary>Sum of squared range residuals (m²), double precision.</summary>
    [Differentiate(nameof(x), nameof(y), nameof(bias))]
    public static double Misfit(
        double x, double y, double bias,
        ReadOnlySpan<double> beaconX, ReadOnlySpan<double> beaconY, ReadOnlySpan<double> range)
    {
        double sum = 0;
        for (int i = 0; i < range.Length; i++)
        {
            double dx = x - beaconX[i];
            double dy = y - beaconY[i];
            double residual = Math.Sqrt(dx * dx + dy * dy) + bias - range[i];
            sum += residual * residual;
        }

        return sum;
    }

    /// <summary>The same misfit in single precision, for a device whose floating-point unit only does float.</summary>
    [Differentiate(nameof(x), nameof(y), nameof(bias))]
    public static float MisfitSingle(
        float x, float y, float bias,
        ReadOnlySpan<float> beaconX, ReadOnlySpan<float> beaconY, ReadOnlySpan<float> range)
    {
        float sum = 0f;
        for (int i = 0; i < range.Length; i++)
        {
            float dx = x - beaconX[i];
            float dy = y - beaconY[i];
            float residual = MathF.Sqrt(dx * dx + dy * dy) + bias - range[i];
            sum += residual * residual;
        }

        return sum;
    }

    /// <summary>
    /// The range residuals (m), predicted minus measured range to each beacon, written into <paramref name="residuals"/>:
    /// the same fix as a least-squares problem, for Levenberg–Marquardt with the generated Jacobian.
    /// </summary>
    [Differentiate(nameof(x), nameof(y), nameof(bias))]
    public static void RangeResiduals(
        double x, double y, double bias,
        ReadOnlySpan<double> beaconX, ReadOnlySpan<double> beaconY, ReadOnlySpan<double> range, Span<double> residuals)
    {
        for (int i = 0; i < range.Length; i++)
        {
            double dx = x - beaconX[i];
            double dy = y - beaconY[i];
            residuals[i] = Math.Sqrt(dx * dx + dy * dy) + bias - range[i];
        }
    }
}
