using System.Collections.Generic;
using static DerivGen.Tests.PractitionerCorpus.Idiom;

namespace DerivGen.Tests.PractitionerCorpus;

internal static partial class CorpusCases
{
    private static IEnumerable<CorpusCase> CurveFitting()
    {
        yield return Case(
            "ExpDecayZipSum", Field.CurveFitting, new[] { Linq },
            "A lab analyst fits a tracer's decay a0·e^(−k·t) with one LINQ line.",
            """
            // Invented data: count rate of a tracer sampled every half hour (made up for this corpus).
            public static partial class TracerFit
            {
                public static readonly double[] Hours = { 0.0, 0.5, 1.0, 1.5, 2.0, 2.5, 3.0 };
                public static readonly double[] Counts = { 101.2, 78.9, 61.0, 47.8, 37.1, 29.0, 22.4 };

                [Differentiate(nameof(a0), nameof(k))]
                public static double Loss(double a0, double k) =>
                    0.5 * Hours.Zip(Counts, (t, y) => Math.Pow(a0 * Math.Exp(-k * t) - y, 2)).Sum();
            }
            """,
            "TracerFit.Loss{M}(x[0], x[1]{E})",
            new[] { 100.0, 0.5 },
            Hand("plain calculus: ∂/∂a0 = Σ r·e^(−kt), ∂/∂k = −Σ r·a0·t·e^(−kt), r = a0·e^(−kt) − y", """
                g[0] = 0; g[1] = 0;
                for (int i = 0; i < TracerFit.Hours.Length; i++)
                {
                    double t = TracerFit.Hours[i], e = Math.Exp(-x[1] * t), r = x[0] * e - TracerFit.Counts[i];
                    g[0] += r * e;
                    g[1] -= r * x[0] * t * e;
                }
                """));

        yield return Case(
            "LogisticGrowthLocalFunction", Field.CurveFitting, new[] { LocalFunction },
            "A microbiologist fits a logistic growth curve; the model is a capturing expression-bodied local function.",
            """
            // Invented data: optical density of a culture every two hours (made up for this corpus).
            public static partial class GrowthCurve
            {
                public static readonly double[] T = { 0, 2, 4, 6, 8, 10, 12 };
                public static readonly double[] Od = { 0.05, 0.11, 0.24, 0.46, 0.71, 0.86, 0.93 };
                private const double N0 = 0.05;

                [Differentiate(nameof(capacity), nameof(rate))]
                public static double Sse(double capacity, double rate)
                {
                    double Model(double t) => capacity / (1 + (capacity / N0 - 1) * Math.Exp(-rate * t));

                    double sse = 0;
                    for (int i = 0; i < T.Length; i++)
                    {
                        double r = Model(T[i]) - Od[i];
                        sse += r * r;
                    }

                    return sse;
                }
            }
            """,
            "GrowthCurve.Sse{M}(x[0], x[1]{E})",
            new[] { 1.0, 0.45 },
            Numeric);

        yield return Case(
            "GaussianPeakHelper", Field.CurveFitting, new[] { UnmarkedHelper },
            "A chromatographer fits one Gaussian peak; the peak shape is a private static helper of doubles.",
            """
            // Invented data: one chromatography peak (made up for this corpus).
            public static partial class PeakFit
            {
                public static readonly double[] Minutes = { 4.0, 4.2, 4.4, 4.6, 4.8, 5.0, 5.2 };
                public static readonly double[] Signal = { 0.8, 2.9, 7.1, 9.8, 7.4, 3.1, 0.9 };

                private static double Gaussian(double t, double height, double center, double width)
                {
                    double z = (t - center) / width;
                    return height * Math.Exp(-0.5 * z * z);
                }

                [Differentiate(nameof(height), nameof(center), nameof(width))]
                public static double Loss(double height, double center, double width)
                {
                    double loss = 0;
                    for (int i = 0; i < Minutes.Length; i++)
                    {
                        double r = Gaussian(Minutes[i], height, center, width) - Signal[i];
                        loss += r * r;
                    }

                    return loss;
                }
            }
            """,
            "PeakFit.Loss{M}(x[0], x[1], x[2]{E})",
            new[] { 10.0, 4.6, 0.25 },
            Hand("plain calculus: G = h·e^(−z²/2), z = (t − c)/w; ∂G/∂h = e^(−z²/2), ∂G/∂c = G·z/w, ∂G/∂w = G·z²/w", """
                g[0] = 0; g[1] = 0; g[2] = 0;
                for (int i = 0; i < PeakFit.Minutes.Length; i++)
                {
                    double z = (PeakFit.Minutes[i] - x[1]) / x[2], e = Math.Exp(-0.5 * z * z), model = x[0] * e;
                    double r2 = 2 * (model - PeakFit.Signal[i]);
                    g[0] += r2 * e;
                    g[1] += r2 * model * z / x[2];
                    g[2] += r2 * model * z * z / x[2];
                }
                """));

        yield return Case(
            "PolynomialHornerSpanHelper", Field.CurveFitting, new[] { UnmarkedHelper, IndexOrRange },
            "A calibration engineer fits a polynomial; Horner's rule is a helper over a span that starts from c[^1].",
            """
            // Invented data: thermistor calibration ratio against scaled temperature (made up for this corpus).
            public static partial class Calibration
            {
                public static readonly double[] X = { -1.0, -0.5, 0.0, 0.5, 1.0, 1.5 };
                public static readonly double[] Y = { 2.9, 1.6, 1.0, 0.9, 1.4, 2.6 };

                static double Horner(ReadOnlySpan<double> c, double x)
                {
                    double acc = c[^1];
                    for (int k = c.Length - 2; k >= 0; k--)
                    {
                        acc = acc * x + c[k];
                    }

                    return acc;
                }

                [Differentiate(nameof(coefficients))]
                public static double Loss(double[] coefficients)
                {
                    double sum = 0;
                    for (int i = 0; i < X.Length; i++)
                    {
                        double r = Horner(coefficients, X[i]) - Y[i];
                        sum += r * r;
                    }

                    return sum / X.Length;
                }
            }
            """,
            "Calibration.Loss{M}(x{E})",
            new[] { 1.0, -0.2, 1.1 },
            Hand("plain calculus (linear least squares): ∂/∂c_k = (2/n)·Σ r·x^k", """
                for (int k = 0; k < x.Length; k++) g[k] = 0;
                int n = Calibration.X.Length;
                for (int i = 0; i < n; i++)
                {
                    double xi = Calibration.X[i], p = 0, power = 1;
                    for (int k = 0; k < x.Length; k++) { p += x[k] * power; power *= xi; }
                    double r = p - Calibration.Y[i];
                    power = 1;
                    for (int k = 0; k < x.Length; k++) { g[k] += 2.0 / n * r * power; power *= xi; }
                }
                """));

        yield return Case(
            "RobustLossEnumSwitch", Field.CurveFitting, new[] { Enum, PatternSwitch, ThrowGuard },
            "A metrologist picks a robust loss by enum in a switch expression whose default arm throws.",
            """
            public enum LossKind { Squared, Cauchy, SoftL1 }

            // Invented data: a line through sensor readings with one outlier (made up for this corpus).
            public static partial class RobustLine
            {
                public static readonly double[] X = { 0, 1, 2, 3, 4, 5 };
                public static readonly double[] Y = { 0.1, 1.9, 4.2, 5.8, 15.0, 10.1 };

                [Differentiate(nameof(slope), nameof(intercept))]
                public static double Loss(double slope, double intercept, LossKind kind, double scale)
                {
                    double total = 0;
                    for (int i = 0; i < X.Length; i++)
                    {
                        double r = (slope * X[i] + intercept - Y[i]) / scale;
                        total += kind switch
                        {
                            LossKind.Squared => 0.5 * r * r,
                            LossKind.Cauchy => 0.5 * Math.Log(1 + r * r),
                            LossKind.SoftL1 => Math.Sqrt(1 + r * r) - 1,
                            _ => throw new ArgumentOutOfRangeException(nameof(kind)),
                        };
                    }

                    return scale * scale * total;
                }
            }
            """,
            "RobustLine.Loss{M}(x[0], x[1], LossKind.Cauchy, 1.5{E})",
            new[] { 2.0, 0.1 },
            Hand("plain calculus: d/dr ½·ln(1 + r²) = r/(1 + r²), r = (a·x + b − y)/s", """
                g[0] = 0; g[1] = 0;
                const double s = 1.5;
                for (int i = 0; i < RobustLine.X.Length; i++)
                {
                    double r = (x[0] * RobustLine.X[i] + x[1] - RobustLine.Y[i]) / s, d = s * s * r / (1 + r * r) / s;
                    g[0] += d * RobustLine.X[i];
                    g[1] += d;
                }
                """));
    }

    private static IEnumerable<CorpusCase> Robotics()
    {
        yield return Case(
            "TwoLinkReachVector2", Field.Robotics, new[] { NumericsVector },
            "A robotics developer writes two-link inverse kinematics with System.Numerics.Vector2 and Vector2.DistanceSquared.",
            """
            // Invented arm: link lengths and target made up for this corpus.
            public static partial class PlanarArm
            {
                private const float Upper = 0.35f, Fore = 0.25f;
                private static readonly Vector2 Target = new(0.30f, 0.32f);

                [Differentiate(nameof(shoulder), nameof(elbow))]
                public static float ReachError(float shoulder, float elbow)
                {
                    var elbowPosition = Upper * new Vector2(MathF.Cos(shoulder), MathF.Sin(shoulder));
                    var tip = elbowPosition + Fore * new Vector2(MathF.Cos(shoulder + elbow), MathF.Sin(shoulder + elbow));
                    return Vector2.DistanceSquared(tip, Target);
                }
            }
            """,
            "PlanarArm.ReachError{M}((float)x[0], (float)x[1]{E})",
            new[] { 0.6, 0.9 },
            Hand("plain calculus: tip = (U·cos a + F·cos(a+b), U·sin a + F·sin(a+b)), f = |tip − T|²", """
                double a = x[0], b = x[1], U = 0.35, F = 0.25;
                double dx = U * Math.Cos(a) + F * Math.Cos(a + b) - 0.30, dy = U * Math.Sin(a) + F * Math.Sin(a + b) - 0.32;
                g[0] = 2 * (dx * (-U * Math.Sin(a) - F * Math.Sin(a + b)) + dy * (U * Math.Cos(a) + F * Math.Cos(a + b)));
                g[1] = 2 * (dx * -F * Math.Sin(a + b) + dy * F * Math.Cos(a + b));
                """),
            Precision.Single);

        yield return Case(
            "ThreeLinkStackalloc", Field.Robotics, new[] { LocalArrayOrSpan },
            "A manipulator's joint angles are a span; the cumulative angles go into a stackalloc'd span local.",
            """
            // Invented three-link planar manipulator (link lengths and target made up for this corpus).
            public static partial class ThreeLink
            {
                public static readonly double[] Lengths = { 0.4, 0.3, 0.2 };
                public const double TargetX = 0.45, TargetY = 0.50, Regularization = 1e-2;

                [Differentiate(nameof(q))]
                public static double Cost(ReadOnlySpan<double> q)
                {
                    Span<double> cumulative = stackalloc double[3];
                    double angle = 0;
                    for (int j = 0; j < 3; j++)
                    {
                        angle += q[j];
                        cumulative[j] = angle;
                    }

                    double x = 0, y = 0;
                    for (int j = 0; j < 3; j++)
                    {
                        x += Lengths[j] * Math.Cos(cumulative[j]);
                        y += Lengths[j] * Math.Sin(cumulative[j]);
                    }

                    double ex = x - TargetX, ey = y - TargetY, reg = 0;
                    for (int j = 0; j < 3; j++)
                    {
                        reg += q[j] * q[j];
                    }

                    return ex * ex + ey * ey + Regularization * reg;
                }
            }
            """,
            "ThreeLink.Cost{M}(x{E})",
            new[] { 0.3, 0.5, 0.4 },
            Numeric);

        yield return Case(
            "SerialChainPoseStruct", Field.Robotics, new[] { UserStruct, UnmarkedHelper },
            "Forward kinematics as a chain of readonly record struct poses, advanced by a helper taking 'in Link'.",
            """
            public readonly record struct Pose(double X, double Y, double Heading);

            public readonly struct Link
            {
                public Link(double length) => Length = length;

                public double Length { get; }
            }

            // Invented link lengths (made up for this corpus).
            public static partial class SerialChain
            {
                private static readonly Link[] Links = { new(0.5), new(0.4), new(0.25) };

                private static Pose Advance(in Link link, Pose p, double joint)
                {
                    double heading = p.Heading + joint;
                    return new Pose(p.X + link.Length * Math.Cos(heading), p.Y + link.Length * Math.Sin(heading), heading);
                }

                [Differentiate(nameof(q0), nameof(q1), nameof(q2))]
                public static double PoseError(double q0, double q1, double q2, double targetX, double targetY)
                {
                    var p = new Pose(0, 0, 0);
                    p = Advance(Links[0], p, q0);
                    p = Advance(Links[1], p, q1);
                    p = Advance(Links[2], p, q2);
                    double dx = p.X - targetX, dy = p.Y - targetY;
                    return dx * dx + dy * dy + 0.1 * (p.Heading - 1.2) * (p.Heading - 1.2);
                }
            }
            """,
            "SerialChain.PoseError{M}(x[0], x[1], x[2], 0.6, 0.7{E})",
            new[] { 0.4, 0.3, 0.2 },
            Numeric);

        yield return Case(
            "PanTiltAimVector3", Field.Robotics, new[] { NumericsVector },
            "A pan-tilt camera is aimed with Vector3.Normalize, Dot, Cross and Length.",
            """
            // Invented pan-tilt head and target (made up for this corpus).
            public static partial class PanTilt
            {
                private static readonly Vector3 Target = new(2.0f, 0.5f, 1.2f);
                private static readonly Vector3 Up = Vector3.UnitZ;

                [Differentiate(nameof(pan), nameof(tilt))]
                public static float AimCost(float pan, float tilt)
                {
                    var forward = new Vector3(MathF.Cos(tilt) * MathF.Cos(pan), MathF.Cos(tilt) * MathF.Sin(pan), MathF.Sin(tilt));
                    var toTarget = Vector3.Normalize(Target);
                    float alignment = Vector3.Dot(forward, toTarget);
                    float roll = Vector3.Cross(forward, Up).Length();
                    return 1f - alignment + 0.01f * roll * roll;
                }
            }
            """,
            "PanTilt.AimCost{M}((float)x[0], (float)x[1]{E})",
            new[] { 0.3, 0.4 },
            Numeric,
            Precision.Single);

        yield return Case(
            "JointLimitPenaltyGuards", Field.Robotics, new[] { ThrowGuard, PatternSwitch },
            "Joint-limit penalties with relational patterns (> Limit, < -Limit) after ThrowIfNull / ThrowIfNotEqual guards.",
            """
            // Invented joint limits of a four-axis arm (made up for this corpus).
            public static partial class JointLimits
            {
                public const double Limit = 2.0;

                [Differentiate(nameof(q))]
                public static double Penalty(double[] q, double[] home)
                {
                    ArgumentNullException.ThrowIfNull(q);
                    ArgumentOutOfRangeException.ThrowIfNotEqual(q.Length, home.Length);
                    double cost = 0;
                    for (int i = 0; i < q.Length; i++)
                    {
                        double d = q[i] - home[i];
                        cost += 0.5 * d * d;
                        cost += q[i] switch
                        {
                            > Limit => 10 * (q[i] - Limit) * (q[i] - Limit),
                            < -Limit => 10 * (q[i] + Limit) * (q[i] + Limit),
                            _ => 0.0,
                        };
                    }

                    return cost;
                }
            }
            """,
            "JointLimits.Penalty{M}(x, new[] { 0.0, 0.5, -0.5, 1.0 }{E})",
            new[] { 2.3, 0.4, -2.2, 1.1 },
            Hand("plain calculus: ∂/∂q_i = (q_i − home_i) + 20·(q_i ∓ Limit) beyond a limit", """
                double[] home = { 0.0, 0.5, -0.5, 1.0 };
                for (int i = 0; i < x.Length; i++)
                {
                    g[i] = x[i] - home[i] + (x[i] > JointLimits.Limit ? 20 * (x[i] - JointLimits.Limit) : x[i] < -JointLimits.Limit ? 20 * (x[i] + JointLimits.Limit) : 0);
                }
                """));
    }
}
