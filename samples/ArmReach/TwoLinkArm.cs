using System;
using DerivGen;

namespace ArmReach;

/// <summary>
/// A two-link planar arm: a shoulder joint at the origin, an upper link, an elbow joint and a forearm. The joint
/// angles are measured in radians, the shoulder from the x axis and the elbow relative to the upper link.
/// </summary>
/// <remarks>
/// The class is <c>partial</c> because DerivGen adds <c>LossGradient</c> and <c>LossHessian</c> to it at compile time.
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

    /// <summary>Where the tip of the arm is for the given joint angles (plain forward kinematics, not differentiated).</summary>
    public static (double X, double Y) Tip(double shoulder, double elbow, double upperLength, double foreLength) =>
        (upperLength * Math.Cos(shoulder) + foreLength * Math.Cos(shoulder + elbow),
         upperLength * Math.Sin(shoulder) + foreLength * Math.Sin(shoulder + elbow));
}
