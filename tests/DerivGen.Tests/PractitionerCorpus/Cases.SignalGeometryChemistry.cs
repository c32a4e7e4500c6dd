using System.Collections.Generic;
using static DerivGen.Tests.PractitionerCorpus.Idiom;

namespace DerivGen.Tests.PractitionerCorpus;

internal static partial class CorpusCases
{
    private static IEnumerable<CorpusCase> Signal()
    {
        yield return Case(
            "SineFitSpanSlice", Field.Signal, new[] { IndexOrRange, LocalArrayOrSpan },
            "A power engineer fits a 50 Hz sine to a window taken with Samples.AsSpan().Slice(Start, Count) into a span local.",
            """
            // Invented mains samples at 1 kHz (made up for this corpus).
            public static partial class MainsFit
            {
                public static readonly double[] Samples = { 0.02, 0.33, 0.59, 0.80, 0.94, 1.00, 0.95, 0.81, 0.58, 0.30, 0.01, -0.30, -0.58, -0.81, -0.95, -0.99, -0.95, -0.80, -0.59, -0.31 };
                public const int Start = 4, Count = 12;
                public const double SampleRate = 1000;

                [Differentiate(nameof(amplitude), nameof(frequency), nameof(phase))]
                public static double Residual(double amplitude, double frequency, double phase)
                {
                    ReadOnlySpan<double> window = Samples.AsSpan().Slice(Start, Count);
                    double sum = 0;
                    for (int n = 0; n < window.Length; n++)
                    {
                        double t = (Start + n) / SampleRate;
                        double r = amplitude * Math.Sin(2 * Math.PI * frequency * t + phase) - window[n];
                        sum += r * r;
                    }

                    return sum;
                }
            }
            """,
            "MainsFit.Residual{M}(x[0], x[1], x[2]{E})",
            new[] { 1.0, 50.0, 0.0 },
            Hand("plain calculus: θ = 2πft + φ; ∂/∂A = Σ 2r·sin θ, ∂/∂f = Σ 2r·A·cos θ·2πt, ∂/∂φ = Σ 2r·A·cos θ", """
                g[0] = 0; g[1] = 0; g[2] = 0;
                for (int n = 0; n < MainsFit.Count; n++)
                {
                    double t = (MainsFit.Start + n) / MainsFit.SampleRate, th = 2 * Math.PI * x[1] * t + x[2];
                    double r = x[0] * Math.Sin(th) - MainsFit.Samples[MainsFit.Start + n];
                    g[0] += 2 * r * Math.Sin(th);
                    g[1] += 2 * r * x[0] * Math.Cos(th) * 2 * Math.PI * t;
                    g[2] += 2 * r * x[0] * Math.Cos(th);
                }
                """));

        yield return Case(
            "FirEqualizerStackalloc", Field.Signal, new[] { LocalArrayOrSpan },
            "An FIR equalizer's taps are fitted; the filter output goes into a stackalloc'd span before the error is summed.",
            """
            // Invented channel input and desired output (made up for this corpus).
            public static partial class Equalizer
            {
                public static readonly double[] Input = { 1.0, 0.5, -0.3, 0.8, -0.6, 0.2, 0.9, -0.4 };
                public static readonly double[] Desired = { 0.9, 0.8, -0.1, 0.5, -0.2, -0.1, 0.8, 0.1 };

                [Differentiate(nameof(taps))]
                public static double Mse(ReadOnlySpan<double> taps)
                {
                    Span<double> output = stackalloc double[Input.Length];
                    for (int n = 0; n < Input.Length; n++)
                    {
                        double acc = 0;
                        for (int k = 0; k < taps.Length; k++)
                        {
                            if (n - k >= 0) acc += taps[k] * Input[n - k];
                        }

                        output[n] = acc;
                    }

                    double mse = 0;
                    for (int n = 0; n < output.Length; n++)
                    {
                        mse += (output[n] - Desired[n]) * (output[n] - Desired[n]);
                    }

                    return mse / output.Length;
                }
            }
            """,
            "Equalizer.Mse{M}(x{E})",
            new[] { 0.8, 0.2, -0.1 },
            Hand("the least-mean-squares gradient (plain calculus): ∂/∂h_k = (2/N)·Σ_n e_n·x_(n−k)", """
                int N = Equalizer.Input.Length;
                for (int k = 0; k < x.Length; k++) g[k] = 0;
                for (int n = 0; n < N; n++)
                {
                    double y = 0;
                    for (int k = 0; k < x.Length; k++) if (n - k >= 0) y += x[k] * Equalizer.Input[n - k];
                    double e = y - Equalizer.Desired[n];
                    for (int k = 0; k < x.Length; k++) if (n - k >= 0) g[k] += 2.0 / N * e * Equalizer.Input[n - k];
                }
                """));

        yield return Case(
            "RingDownStaticLocalFunction", Field.Signal, new[] { LocalFunction, FinitePredicate },
            "A ring-down fit whose envelope is a static expression-bodied local function; dropouts are skipped with !double.IsFinite.",
            """
            // Invented ring-down of a sensor with one dropout stored as NaN (made up for this corpus).
            public static partial class RingDown
            {
                public static readonly double[] Time = { 0.00, 0.01, 0.02, 0.03, 0.04, 0.05, 0.06, 0.07 };
                public static readonly double[] Level = { 1.00, 0.62, double.NaN, -0.45, -0.52, -0.18, 0.21, 0.34 };

                [Differentiate(nameof(decay), nameof(omega))]
                public static double Loss(double decay, double omega)
                {
                    static double Envelope(double t, double rate) => Math.Exp(-rate * t);

                    double loss = 0;
                    for (int i = 0; i < Time.Length; i++)
                    {
                        if (!double.IsFinite(Level[i])) continue;
                        double model = Envelope(Time[i], decay) * Math.Cos(omega * Time[i]);
                        loss += (model - Level[i]) * (model - Level[i]);
                    }

                    return loss;
                }
            }
            """,
            "RingDown.Loss{M}(x[0], x[1]{E})",
            new[] { 10.0, 60.0 },
            Numeric);

        yield return Case(
            "EdgeFitWindowEnumSwitch", Field.Signal, new[] { Enum, PatternSwitch },
            "A logistic edge fitted with a window chosen by an enum parameter in a switch statement with constant cases.",
            """
            public enum Window { Rectangular, Hann, Hamming }

            // Invented samples across a blurred edge (made up for this corpus).
            public static partial class EdgeFit
            {
                public static readonly double[] Samples = { 0.02, 0.05, 0.11, 0.35, 0.70, 0.90, 0.96, 0.99 };

                [Differentiate(nameof(position), nameof(sharpness))]
                public static double Loss(double position, double sharpness, Window window)
                {
                    int n = Samples.Length;
                    double loss = 0;
                    for (int i = 0; i < n; i++)
                    {
                        double weight;
                        switch (window)
                        {
                            case Window.Hann:
                                weight = 0.5 - 0.5 * Math.Cos(2 * Math.PI * (i + 0.5) / n);
                                break;
                            case Window.Hamming:
                                weight = 0.54 - 0.46 * Math.Cos(2 * Math.PI * (i + 0.5) / n);
                                break;
                            default:
                                weight = 1.0;
                                break;
                        }

                        double model = 1 / (1 + Math.Exp(-sharpness * (i - position)));
                        loss += weight * (model - Samples[i]) * (model - Samples[i]);
                    }

                    return loss;
                }
            }
            """,
            "EdgeFit.Loss{M}(x[0], x[1], Window.Hann{E})",
            new[] { 3.5, 2.0 },
            Hand("plain calculus: m = σ(s·(i − p)); ∂m/∂p = −s·m(1 − m), ∂m/∂s = (i − p)·m(1 − m); Hann weights", """
                int n = EdgeFit.Samples.Length;
                g[0] = 0; g[1] = 0;
                for (int i = 0; i < n; i++)
                {
                    double w = 0.5 - 0.5 * Math.Cos(2 * Math.PI * (i + 0.5) / n);
                    double m = 1 / (1 + Math.Exp(-x[1] * (i - x[0])));
                    double d = 2 * w * (m - EdgeFit.Samples[i]) * m * (1 - m);
                    g[0] += d * -x[1];
                    g[1] += d * (i - x[0]);
                }
                """));
    }

    private static IEnumerable<CorpusCase> Geometry()
    {
        yield return Case(
            "CircleFitVector2", Field.Geometry, new[] { NumericsVector },
            "A machine-vision developer fits a circle to edge points held as Vector2 data, with Vector2.Distance.",
            """
            // Invented edge points of a drilled hole in mm (made up for this corpus).
            public static partial class HoleFit
            {
                public static readonly Vector2[] Points = { new(10.9f, 5.1f), new(8.1f, 7.9f), new(5.0f, 5.2f), new(7.9f, 2.0f), new(10.1f, 3.0f) };

                [Differentiate(nameof(cx), nameof(cy), nameof(radius))]
                public static float GeometricLoss(float cx, float cy, float radius)
                {
                    var center = new Vector2(cx, cy);
                    float loss = 0f;
                    foreach (Vector2 p in Points)
                    {
                        float r = Vector2.Distance(p, center) - radius;
                        loss += r * r;
                    }

                    return loss;
                }
            }
            """,
            "HoleFit.GeometricLoss{M}((float)x[0], (float)x[1], (float)x[2]{E})",
            new[] { 8.0, 5.0, 3.0 },
            Hand("geometric circle fit (plain calculus): r_i = |p_i − c| − R; ∂/∂c = Σ 2r_i·(c − p_i)/|p_i − c|, ∂/∂R = −Σ 2r_i", """
                g[0] = 0; g[1] = 0; g[2] = 0;
                foreach (Vector2 p in HoleFit.Points)
                {
                    double dx = x[0] - p.X, dy = x[1] - p.Y, d = Math.Sqrt(dx * dx + dy * dy), r = d - x[2];
                    g[0] += 2 * r * dx / d;
                    g[1] += 2 * r * dy / d;
                    g[2] -= 2 * r;
                }
                """),
            Precision.Single);

        yield return Case(
            "BezierControlPointLerp", Field.Geometry, new[] { NumericsVector, UnmarkedHelper },
            "A graphics programmer moves a Bézier control point (a Vector3 variable); the curve is a helper built from Vector3.Lerp.",
            """
            // Invented camera-path keyframes (made up for this corpus).
            public static partial class CameraPath
            {
                private static readonly Vector3 From = new(0f, 0f, 0f), To = new(4f, 0f, 1f);
                private static readonly Vector3[] Samples = { new(1f, 1.1f, 0.3f), new(2f, 1.5f, 0.5f), new(3f, 1.0f, 0.8f) };

                static Vector3 Quadratic(Vector3 a, Vector3 control, Vector3 b, float t) =>
                    Vector3.Lerp(Vector3.Lerp(a, control, t), Vector3.Lerp(control, b, t), t);

                [Differentiate(nameof(control))]
                public static float Loss(Vector3 control)
                {
                    float loss = 0f;
                    for (int i = 0; i < Samples.Length; i++)
                    {
                        loss += Vector3.DistanceSquared(Quadratic(From, control, To, (i + 1) / 4f), Samples[i]);
                    }

                    return loss;
                }
            }
            """,
            "CameraPath.Loss{M}(new Vector3((float)x[0], (float)x[1], (float)x[2]){E})",
            new[] { 2.0, 2.0, 0.5 },
            Numeric,
            Precision.Single);

        yield return Case(
            "MeshSmoothingMutableStruct", Field.Geometry, new[] { UserStruct, UnmarkedHelper },
            "Mesh smoothing of one free vertex: a mutable Vertex struct, and a signed-area helper taking 'in Vertex' arguments.",
            """
            public struct Vertex
            {
                public double X;
                public double Y;

                public Vertex(double x, double y)
                {
                    X = x;
                    Y = y;
                }
            }

            // Invented ring of neighbours around one free vertex (made up for this corpus).
            public static partial class MeshSmoothing
            {
                private static readonly Vertex[] Ring = { new(1, 0), new(0.4, 0.9), new(-0.6, 0.8), new(-1, -0.1), new(-0.3, -0.9), new(0.7, -0.7) };

                static double SignedArea(in Vertex a, in Vertex b, in Vertex c) =>
                    0.5 * ((b.X - a.X) * (c.Y - a.Y) - (c.X - a.X) * (b.Y - a.Y));

                [Differentiate(nameof(x), nameof(y))]
                public static double Energy(double x, double y)
                {
                    var free = new Vertex(x, y);
                    double energy = 0;
                    for (int i = 0; i < Ring.Length; i++)
                    {
                        Vertex a = Ring[i], b = Ring[(i + 1) % Ring.Length];
                        double area = SignedArea(free, a, b);
                        double edges = (a.X - x) * (a.X - x) + (a.Y - y) * (a.Y - y) + (b.X - x) * (b.X - x) + (b.Y - y) * (b.Y - y);
                        energy += edges / area;
                    }

                    return energy;
                }
            }
            """,
            "MeshSmoothing.Energy{M}(x[0], x[1]{E})",
            new[] { 0.05, 0.02 },
            Numeric);

        yield return Case(
            "KeepOutBoxComponentwise", Field.Geometry, new[] { NumericsVector },
            "A keep-out box penalty from Vector3.Abs, Vector3.Max and LengthSquared, with the point a Vector3 variable.",
            """
            // Invented collision box of a robot cell (made up for this corpus).
            public static partial class KeepOut
            {
                private static readonly Vector3 Center = new(1.0f, 0.5f, 0.8f);
                private static readonly Vector3 HalfSize = new(0.3f, 0.2f, 0.4f);

                [Differentiate(nameof(p))]
                public static float OutsideDistanceSquared(Vector3 p)
                {
                    Vector3 q = Vector3.Abs(p - Center) - HalfSize;
                    Vector3 outside = Vector3.Max(q, Vector3.Zero);
                    float inside = MathF.Min(MathF.Max(q.X, MathF.Max(q.Y, q.Z)), 0f);
                    return outside.LengthSquared() + inside * inside;
                }
            }
            """,
            "KeepOut.OutsideDistanceSquared{M}(new Vector3((float)x[0], (float)x[1], (float)x[2]){E})",
            new[] { 1.6, 0.9, 1.5 },
            Hand("plain calculus outside the box: f = Σ q_k², q_k = |p_k − c_k| − h_k, ∂f/∂p_k = 2q_k·sign(p_k − c_k)", """
                double[] c = { 1.0, 0.5, 0.8 }, h = { 0.3, 0.2, 0.4 };
                for (int k = 0; k < 3; k++) g[k] = 2 * (Math.Abs(x[k] - c[k]) - h[k]) * Math.Sign(x[k] - c[k]);
                """),
            Precision.Single);

        yield return Case(
            "ColourGradeVector4", Field.Geometry, new[] { NumericsVector },
            "A colour grade (gain, gamma) fitted to reference patches held as Vector4 RGBA, with Vector4.Min and DistanceSquared.",
            """
            // Invented colour patches: measured and reference RGBA (made up for this corpus).
            public static partial class ColourGrade
            {
                private static readonly Vector4[] Measured = { new(0.20f, 0.30f, 0.40f, 1f), new(0.60f, 0.55f, 0.50f, 1f), new(0.90f, 0.85f, 0.70f, 1f) };
                private static readonly Vector4[] Reference = { new(0.22f, 0.31f, 0.37f, 1f), new(0.65f, 0.57f, 0.47f, 1f), new(0.97f, 0.88f, 0.66f, 1f) };

                [Differentiate(nameof(gain), nameof(gamma))]
                public static float Loss(float gain, float gamma)
                {
                    float loss = 0f;
                    for (int i = 0; i < Measured.Length; i++)
                    {
                        Vector4 m = Measured[i];
                        var graded = new Vector4(gain * MathF.Pow(m.X, gamma), gain * MathF.Pow(m.Y, gamma), gain * MathF.Pow(m.Z, gamma), m.W);
                        Vector4 clipped = Vector4.Min(graded, Vector4.One);
                        loss += Vector4.DistanceSquared(clipped, Reference[i]);
                    }

                    return loss;
                }
            }
            """,
            "ColourGrade.Loss{M}((float)x[0], (float)x[1]{E})",
            new[] { 1.05, 0.95 },
            Numeric,
            Precision.Single);
    }

    private static IEnumerable<CorpusCase> Chemistry()
    {
        yield return Case(
            "ArrheniusZipTuples", Field.Chemistry, new[] { Linq },
            "An Arrhenius fit in log space over Kelvin.Zip(Rate) tuples (pair.First, pair.Second) with a block-bodied lambda.",
            """
            // Invented rate constants of a decomposition at five temperatures (made up for this corpus).
            public static partial class Arrhenius
            {
                public static readonly double[] Kelvin = { 300, 320, 340, 360, 380 };
                public static readonly double[] Rate = { 0.0021, 0.0105, 0.043, 0.151, 0.46 };
                public const double R = 8.314;

                [Differentiate(nameof(lnA), nameof(activation))]
                public static double LogResidual(double lnA, double activation) =>
                    Kelvin.Zip(Rate).Sum(pair =>
                    {
                        double r = lnA - activation / (R * pair.First) - Math.Log(pair.Second);
                        return r * r;
                    });
            }
            """,
            "Arrhenius.LogResidual{M}(x[0], x[1]{E})",
            new[] { 15.0, 54000.0 },
            Hand("plain calculus: r = ln A − Ea/(R·T) − ln k; ∂/∂lnA = Σ 2r, ∂/∂Ea = −Σ 2r/(R·T)", """
                g[0] = 0; g[1] = 0;
                for (int i = 0; i < Arrhenius.Kelvin.Length; i++)
                {
                    double r = x[0] - x[1] / (Arrhenius.R * Arrhenius.Kelvin[i]) - Math.Log(Arrhenius.Rate[i]);
                    g[0] += 2 * r;
                    g[1] -= 2 * r / (Arrhenius.R * Arrhenius.Kelvin[i]);
                }
                """));

        yield return Case(
            "ConsecutiveReactionRk4", Field.Chemistry, new[] { SpanWritingHelper, UnmarkedHelper, LocalArrayOrSpan },
            "A → B → C kinetics integrated with RK4: Rhs(ReadOnlySpan c, k1, k2, Span dc) and local arrays for the state and stages.",
            """
            // Invented concentration of the intermediate B (mol/L) every half minute (made up for this corpus).
            public static partial class Consecutive
            {
                public static readonly double[] Intermediate = { 0.0, 0.30, 0.42, 0.45, 0.43, 0.39, 0.34 };
                private const double H = 0.05;

                static void Rhs(ReadOnlySpan<double> c, double k1, double k2, Span<double> dc)
                {
                    dc[0] = -k1 * c[0];
                    dc[1] = k1 * c[0] - k2 * c[1];
                    dc[2] = k2 * c[1];
                }

                [Differentiate(nameof(k1), nameof(k2))]
                public static double Sse(double k1, double k2)
                {
                    double[] c = { 1.0, 0.0, 0.0 };
                    double[] s1 = new double[3], s2 = new double[3], s3 = new double[3], s4 = new double[3], tmp = new double[3];
                    double sse = 0;
                    for (int obs = 1; obs < Intermediate.Length; obs++)
                    {
                        for (int step = 0; step < 10; step++)
                        {
                            Rhs(c, k1, k2, s1);
                            for (int j = 0; j < 3; j++) tmp[j] = c[j] + 0.5 * H * s1[j];
                            Rhs(tmp, k1, k2, s2);
                            for (int j = 0; j < 3; j++) tmp[j] = c[j] + 0.5 * H * s2[j];
                            Rhs(tmp, k1, k2, s3);
                            for (int j = 0; j < 3; j++) tmp[j] = c[j] + H * s3[j];
                            Rhs(tmp, k1, k2, s4);
                            for (int j = 0; j < 3; j++) c[j] += H / 6 * (s1[j] + 2 * s2[j] + 2 * s3[j] + s4[j]);
                        }

                        double r = c[1] - Intermediate[obs];
                        sse += r * r;
                    }

                    return sse;
                }
            }
            """,
            "Consecutive.Sse{M}(x[0], x[1]{E})",
            new[] { 1.2, 0.5 },
            Numeric);

        yield return Case(
            "TitrationGenericLoss", Field.Chemistry, new[] { GenericMath },
            "A titration curve fitted by a loss that is itself generic over T : IFloatingPointIeee754<T> (T.Pow, T.CreateChecked).",
            """
            // Invented titration: fraction deprotonated against pH (made up for this corpus).
            public static partial class Titration
            {
                public static readonly double[] PH = { 3.0, 3.5, 4.0, 4.5, 5.0, 5.5, 6.0 };
                public static readonly double[] Fraction = { 0.02, 0.05, 0.15, 0.36, 0.64, 0.85, 0.95 };

                [Differentiate(nameof(pKa), nameof(hill))]
                public static T Loss<T>(T pKa, T hill) where T : IFloatingPointIeee754<T>
                {
                    T ten = T.CreateChecked(10);
                    T sum = T.Zero;
                    for (int i = 0; i < PH.Length; i++)
                    {
                        T ph = T.CreateChecked(PH[i]);
                        T model = T.One / (T.One + T.Pow(ten, hill * (pKa - ph)));
                        T r = model - T.CreateChecked(Fraction[i]);
                        sum += r * r;
                    }

                    return sum;
                }
            }
            """,
            "Titration.Loss{M}(x[0], x[1]{E})",
            new[] { 4.7, 1.0 },
            Numeric);

        yield return Case(
            "ConversionFilterPredicates", Field.Chemistry, new[] { FinitePredicate, PatternSwitch },
            "A first-order conversion fit that drops glitches with !double.IsFinite(y) || y is not (> 0 and < 1).",
            """
            // Invented conversion readings of a first-order reaction, with glitches (made up for this corpus).
            public static partial class Conversion
            {
                public static readonly double[] Minutes = { 1, 2, 3, 4, 5, 6 };
                public static readonly double[] Converted = { 0.18, 0.33, 1.7, 0.55, 0.63, double.PositiveInfinity };

                [Differentiate(nameof(k))]
                public static double Sse(double k)
                {
                    double sse = 0;
                    for (int i = 0; i < Minutes.Length; i++)
                    {
                        double y = Converted[i];
                        if (!double.IsFinite(y) || y is not (> 0 and < 1)) continue;
                        double r = 1 - Math.Exp(-k * Minutes[i]) - y;
                        sse += r * r;
                    }

                    return sse;
                }
            }
            """,
            "Conversion.Sse{M}(x[0]{E})",
            new[] { 0.2 },
            Hand("plain calculus: r = 1 − e^(−kt) − y, ∂/∂k = Σ 2r·t·e^(−kt) over the readings in (0, 1)", """
                g[0] = 0;
                for (int i = 0; i < Conversion.Minutes.Length; i++)
                {
                    double y = Conversion.Converted[i], t = Conversion.Minutes[i];
                    if (!(y > 0 && y < 1)) continue;
                    g[0] += 2 * (1 - Math.Exp(-x[0] * t) - y) * t * Math.Exp(-x[0] * t);
                }
                """));
    }
}
