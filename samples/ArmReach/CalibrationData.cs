using System;

namespace ArmReach;

/// <summary>
/// INVENTED calibration measurements: where the arm's tip was "measured" at a set of joint-angle poses. No arm was
/// measured. The tips are computed here from invented "true" link lengths and an invented shoulder-encoder zero
/// offset, and invented measurement noise (normally distributed, from a <see cref="Random"/> with a fixed seed, so
/// every run and every machine gets the same numbers) is added. The calibration in <see cref="Program"/> then has to
/// find the true values again from the poses and the noisy tips alone.
/// </summary>
public sealed class CalibrationData
{
    /// <summary>Invented "true" upper link length of the arm as built (m); its drawing says 0.9 m.</summary>
    public const double TrueUpperLength = 0.9123;

    /// <summary>Invented "true" forearm length of the arm as built (m); its drawing says 0.6 m.</summary>
    public const double TrueForeLength = 0.5941;

    /// <summary>Invented "true" error of the shoulder encoder's zero (rad, about 1°): the real shoulder angle is the
    /// reading plus this.</summary>
    public const double TrueShoulderOffset = 0.0174;

    /// <summary>Invented standard deviation of the tip measurement, in x and in y (m).</summary>
    public const double NoiseStandardDeviation = 0.002;

    /// <summary>Seed of the invented noise.</summary>
    public const int Seed = 20261202;

    /// <summary>Number of invented poses.</summary>
    public const int PoseCount = 16;

    private CalibrationData(double[] shoulder, double[] elbow, double[] measuredX, double[] measuredY)
    {
        Shoulder = shoulder;
        Elbow = elbow;
        MeasuredX = measuredX;
        MeasuredY = measuredY;
    }

    /// <summary>Shoulder encoder readings (rad), one per pose.</summary>
    public double[] Shoulder { get; }

    /// <summary>Elbow encoder readings (rad), one per pose.</summary>
    public double[] Elbow { get; }

    /// <summary>Measured tip x (m), one per pose.</summary>
    public double[] MeasuredX { get; }

    /// <summary>Measured tip y (m), one per pose.</summary>
    public double[] MeasuredY { get; }

    /// <summary>Makes up the poses and the noisy tip measurements (the same on every run).</summary>
    public static CalibrationData Invent()
    {
        var shoulder = new double[PoseCount];
        var elbow = new double[PoseCount];
        var measuredX = new double[PoseCount];
        var measuredY = new double[PoseCount];
        var random = new Random(Seed);
        for (int i = 0; i < PoseCount; i++)
        {
            // Poses spread over the workspace: the shoulder sweeps from −1.0 to 1.0 rad, the elbow visits 0.3 to 2.5 rad
            // in a shuffled order (5i mod 16 is a permutation of 0..15), so that the link lengths and the offset are
            // all determined by the data.
            shoulder[i] = -1.0 + 2.0 * i / (PoseCount - 1);
            elbow[i] = 0.3 + 2.2 * (5 * i % PoseCount) / (PoseCount - 1);

            double upperAngle = shoulder[i] + TrueShoulderOffset;
            double foreAngle = upperAngle + elbow[i];
            measuredX[i] = TrueUpperLength * Math.Cos(upperAngle) + TrueForeLength * Math.Cos(foreAngle)
                + NoiseStandardDeviation * StandardNormal(random);
            measuredY[i] = TrueUpperLength * Math.Sin(upperAngle) + TrueForeLength * Math.Sin(foreAngle)
                + NoiseStandardDeviation * StandardNormal(random);
        }

        return new CalibrationData(shoulder, elbow, measuredX, measuredY);
    }

    /// <summary>A standard normal deviate by the Box–Muller transform (common practice).</summary>
    private static double StandardNormal(Random random)
    {
        double u1 = 1.0 - random.NextDouble();   // in (0, 1], so the logarithm is finite
        double u2 = random.NextDouble();
        return Math.Sqrt(-2.0 * Math.Log(u1)) * Math.Cos(2.0 * Math.PI * u2);
    }
}
