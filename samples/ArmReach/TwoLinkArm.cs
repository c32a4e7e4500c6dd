using System;
using DerivGen;

namespace ArmReach;

/// <summary>
/// A two-link planar arm: a shoulder joint at the origin, an upper link, an elbow joint and a forearm. The joint
/// angles are measured in radians, the shoulder from the x axis and the elbow relative to the upper link.
/// </summary>
/// <remarks>
/// The class is <c>partial</c> because DerivGen adds <c>LossGradient</c>, <c>LossHessian</c> and
/// <c>TipResidualsJacobian</c> to it at compile time.
/// The generated source is written to <c>Generated/</c> beside this file (see ArmReach.csproj).
/// </remarks>
public static partial class TwoLinkArm
{
    /// <summary>
    /// The squared distance between the arm's tip and a target point. Only the two joint angles are differentiation
    /// variables; the link lengths and the target are ordinary parameters and are treated as constants.
    /// </summary>
    [Differentiate(nameof(shoulder), nameof(elbow))]
    public static double Loss(
        double shoulder, double elbow,
        double upperLength, double foreLength,
        double targetX, double targetY)
    {
        double elbowX = upperLength * Math.Cos(shoulder);
        double elbowY = upperLength * Math.Sin(shoulder);
        double tipX = elbowX + foreLength * Math.Cos(shoulder + elbow);
        double tipY = elbowY + foreLength * Math.Sin(shoulder + elbow);
        double dx = tipX - targetX;
        double dy = tipY - targetY;
        return dx * dx + dy * dy;
    }

    /// <summary>
    /// The misfits of a calibration: for pose i (joint angles <c>shoulder[i]</c>, <c>elbow[i]</c> as the encoders read
    /// them) the tip the model predicts minus the tip that was measured, x in <c>r[2i]</c> and y in <c>r[2i + 1]</c>.
    /// The model has three unknowns: the two link lengths and <paramref name="shoulderOffset"/>, the angle the
    /// shoulder encoder reads wrong by (its zero is off), added to every shoulder reading. DerivGen generates
    /// <c>TipResidualsJacobian</c>, which also writes the 2m×3 Jacobian ∂r/∂(upperLength, foreLength, shoulderOffset).
    /// </summary>
    [Differentiate(nameof(upperLength), nameof(foreLength), nameof(shoulderOffset))]
    public static void TipResiduals(
        double upperLength, double foreLength, double shoulderOffset,
        ReadOnlySpan<double> shoulder, ReadOnlySpan<double> elbow,
        ReadOnlySpan<double> measuredX, ReadOnlySpan<double> measuredY,
        Span<double> r)
    {
        for (int i = 0; i < shoulder.Length; i++)
        {
            double upperAngle = shoulder[i] + shoulderOffset;
            double foreAngle = upperAngle + elbow[i];
            r[2 * i] = upperLength * Math.Cos(upperAngle) + foreLength * Math.Cos(foreAngle) - measuredX[i];
            r[2 * i + 1] = upperLength * Math.Sin(upperAngle) + foreLength * Math.Sin(foreAngle) - measuredY[i];
        }
    }

    /// <summary>Where the tip of the arm is for the given joint angles (plain forward kinematics, not differentiated).</summary>
    public static (double X, double Y) Tip(double shoulder, double elbow, double upperLength, double foreLength) =>
        (upperLength * Math.Cos(shoulder) + foreLength * Math.Cos(shoulder + elbow),
         upperLength * Math.Sin(shoulder) + foreLength * Math.Sin(shoulder + elbow));
}
