using System.Collections.Generic;
using static DerivGen.Tests.PractitionerCorpus.Idiom;

namespace DerivGen.Tests.PractitionerCorpus;

// Cases that complete the idioms of issue 13: a switch statement with relational case labels and an enum local,
// index from end on data with LINQ Min, Select(...).Sum() and Enumerable.Range(0, n).Sum(i => …), a helper taking arrays.
internal static partial class CorpusCases
{
    private static IEnumerable<CorpusCase> Additional()
    {
        yield return Case(
            "HuberLocationCaseRelational", Field.Statistics, new[] { PatternSwitch, Enum },
            "A robust drift estimate: a switch statement with 'case < -Delta:' / 'case > Delta:' sets an enum local that picks the Huber branch.",
            """
            public enum Side { Below, Inside, Above }

            // Invented sensor drift readings with one outlier (made up for this corpus).
            public static partial class HuberLocation
            {
                public static readonly double[] Drift = { 0.12, -0.05, 0.31, 0.08, 1.9, 0.02, -0.11 };
                public const double Delta = 0.5;

                [Differentiate(nameof(location))]
                public static double Loss(double location)
                {
                    double loss = 0;
                    foreach (double d in Drift)
                    {
                        double r = d - location;
                        Side side;
                        switch (r)
                        {
                            case < -Delta:
                                side = Side.Below;
                                break;
                            case > Delta:
                                side = Side.Above;
                                break;
                            default:
                                side = Side.Inside;
                                break;
                        }

                        loss += side == Side.Inside ? 0.5 * r * r : Delta * (Math.Abs(r) - 0.5 * Delta);
                    }

                    return loss;
                }
            }
            """,
            "HuberLocation.Loss{M}(x[0]{E})",
            new[] { 0.1 },
            Hand("Huber's ψ (Huber, Robust Estimation of a Location Parameter, 1964): ∂/∂μ = −Σ ψ(r), ψ(r) = r for |r| ≤ δ, δ·sign(r) beyond", """
                g[0] = 0;
                foreach (double d in HuberLocation.Drift)
                {
                    double r = d - x[0];
                    g[0] -= Math.Abs(r) <= HuberLocation.Delta ? r : HuberLocation.Delta * Math.Sign(r);
                }
                """));

        yield return Case(
            "PathEndClearanceMin", Field.Robotics, new[] { IndexOrRange, Linq },
            "A mobile-robot planner scores a waypoint by the distance to the path's last point (PathX[^1]) and the clearance from Zip(...).Min().",
            """
            // Invented path and obstacles in metres (made up for this corpus).
            public static partial class Planner
            {
                public static readonly double[] PathX = { 0.0, 1.0, 2.0, 3.5 };
                public static readonly double[] PathY = { 0.0, 0.5, 1.5, 2.0 };
                public static readonly double[] ObstacleX = { 1.5, 3.0, 2.5 };
                public static readonly double[] ObstacleY = { 1.8, 0.5, 3.0 };

                [Differentiate(nameof(x), nameof(y))]
                public static double Score(double x, double y)
                {
                    double goal = (x - PathX[^1]) * (x - PathX[^1]) + (y - PathY[^1]) * (y - PathY[^1]);
                    double clearance = ObstacleX.Zip(ObstacleY, (ox, oy) => (x - ox) * (x - ox) + (y - oy) * (y - oy)).Min();
                    return goal + 0.5 / clearance;
                }
            }
            """,
            "Planner.Score{M}(x[0], x[1]{E})",
            new[] { 2.6, 1.6 },
            Hand("plain calculus with the nearest obstacle o (unique at this point): ∂/∂x = 2(x − x_end) − 0.5·2(x − o_x)/c², likewise y", """
                double best = double.PositiveInfinity, bx = 0, by = 0;
                for (int i = 0; i < Planner.ObstacleX.Length; i++)
                {
                    double c = (x[0] - Planner.ObstacleX[i]) * (x[0] - Planner.ObstacleX[i]) + (x[1] - Planner.ObstacleY[i]) * (x[1] - Planner.ObstacleY[i]);
                    if (c < best) { best = c; bx = Planner.ObstacleX[i]; by = Planner.ObstacleY[i]; }
                }

                g[0] = 2 * (x[0] - 3.5) - 0.5 * 2 * (x[0] - bx) / (best * best);
                g[1] = 2 * (x[1] - 2.0) - 0.5 * 2 * (x[1] - by) / (best * best);
                """));

        yield return Case(
            "LogisticRangeSumSelectPenalty", Field.MachineLearning, new[] { Linq, LocalArrayOrSpan },
            "A regularised logistic loss as Enumerable.Range(0, n).Sum(i => …) plus new[] { w0, w1 }.Select(v => v * v).Sum().",
            """
            // Invented one-feature classification data with ±1 labels (made up for this corpus).
            public static partial class Classifier
            {
                public static readonly double[] X = { -2.0, -1.1, -0.4, 0.3, 0.9, 1.7, 2.4 };
                public static readonly double[] Y = { -1, -1, 1, -1, 1, 1, 1 };

                [Differentiate(nameof(w0), nameof(w1))]
                public static double Loss(double w0, double w1, double lambda)
                {
                    double data = Enumerable.Range(0, Y.Length).Sum(i => Math.Log(1 + Math.Exp(-Y[i] * (w1 * X[i] + w0))));
                    double penalty = new[] { w0, w1 }.Select(v => v * v).Sum();
                    return data + lambda * penalty;
                }
            }
            """,
            "Classifier.Loss{M}(x[0], x[1], 0.05{E})",
            new[] { 0.2, 1.3 },
            Hand("the logistic loss's gradient −Σ y·σ(−y·z)·(1, x) (common formula) plus 2λw", """
                g[0] = 2 * 0.05 * x[0]; g[1] = 2 * 0.05 * x[1];
                for (int i = 0; i < Classifier.Y.Length; i++)
                {
                    double y = Classifier.Y[i], z = x[1] * Classifier.X[i] + x[0], s = 1 / (1 + Math.Exp(y * z));
                    g[0] -= y * s;
                    g[1] -= y * s * Classifier.X[i];
                }
                """));

        yield return Case(
            "SpectralUnmixingArrayHelper", Field.Chemistry, new[] { UnmarkedHelper },
            "Spectral unmixing (Beer–Lambert): concentrations are a vector variable passed with a data row to a private Dot(double[], double[]) helper.",
            """
            // Invented molar absorptivities of two dyes at four wavelengths and a measured mixture (made up for this corpus).
            public static partial class Unmixing
            {
                public static readonly double[][] Absorptivity =
                {
                    new[] { 1.2, 0.1 },
                    new[] { 0.8, 0.5 },
                    new[] { 0.3, 1.1 },
                    new[] { 0.1, 0.9 },
                };
                public static readonly double[] Measured = { 0.61, 0.55, 0.47, 0.33 };

                private static double Dot(double[] a, double[] b)
                {
                    double s = 0;
                    for (int i = 0; i < a.Length; i++)
                    {
                        s += a[i] * b[i];
                    }

                    return s;
                }

                [Differentiate(nameof(concentration))]
                public static double Residual(double[] concentration)
                {
                    double sum = 0;
                    for (int k = 0; k < Measured.Length; k++)
                    {
                        double r = Dot(Absorptivity[k], concentration) - Measured[k];
                        sum += r * r;
                    }

                    return sum;
                }
            }
            """,
            "Unmixing.Residual{M}(x{E})",
            new[] { 0.4, 0.3 },
            Hand("linear least squares (Beer–Lambert A = E·c): ∂/∂c_j = Σ_k 2r_k·E_kj", """
                g[0] = 0; g[1] = 0;
                for (int k = 0; k < Unmixing.Measured.Length; k++)
                {
                    double[] e = Unmixing.Absorptivity[k];
                    double r = e[0] * x[0] + e[1] * x[1] - Unmixing.Measured[k];
                    g[0] += 2 * r * e[0];
                    g[1] += 2 * r * e[1];
                }
                """));
    }
}
