using System.Collections.Generic;
using static DerivGen.Tests.PractitionerCorpus.Idiom;

namespace DerivGen.Tests.PractitionerCorpus;

internal static partial class CorpusCases
{
    private static IEnumerable<CorpusCase> Dynamics()
    {
        yield return Case(
            "ProjectileRk4Drag", Field.Dynamics, new[] { SpanWritingHelper, UnmarkedHelper, LocalArrayOrSpan },
            "A ballistics engineer integrates a drag model with RK4: an ODE right-hand side writing a Span, stackalloc'd state and stages.",
            """
            // Invented shot: quadratic drag, made-up target point after 2 s (made up for this corpus).
            public static partial class DragShot
            {
                private const double G = 9.81, Dt = 0.01, TargetRange = 45.0;

                static void Rhs(ReadOnlySpan<double> s, double drag, Span<double> ds)
                {
                    double speed = Math.Sqrt(s[2] * s[2] + s[3] * s[3]);
                    ds[0] = s[2];
                    ds[1] = s[3];
                    ds[2] = -drag * speed * s[2];
                    ds[3] = -G - drag * speed * s[3];
                }

                [Differentiate(nameof(speed), nameof(drag))]
                public static double Miss(double speed, double drag, double elevation)
                {
                    Span<double> s = stackalloc double[4];
                    s[0] = 0;
                    s[1] = 0;
                    s[2] = speed * Math.Cos(elevation);
                    s[3] = speed * Math.Sin(elevation);
                    Span<double> k1 = stackalloc double[4], k2 = stackalloc double[4], k3 = stackalloc double[4], k4 = stackalloc double[4], tmp = stackalloc double[4];
                    for (int step = 0; step < 200; step++)
                    {
                        Rhs(s, drag, k1);
                        for (int j = 0; j < 4; j++) tmp[j] = s[j] + 0.5 * Dt * k1[j];
                        Rhs(tmp, drag, k2);
                        for (int j = 0; j < 4; j++) tmp[j] = s[j] + 0.5 * Dt * k2[j];
                        Rhs(tmp, drag, k3);
                        for (int j = 0; j < 4; j++) tmp[j] = s[j] + Dt * k3[j];
                        Rhs(tmp, drag, k4);
                        for (int j = 0; j < 4; j++) s[j] += Dt / 6 * (k1[j] + 2 * k2[j] + 2 * k3[j] + k4[j]);
                    }

                    double miss = s[0] - TargetRange;
                    return miss * miss + s[1] * s[1];
                }
            }
            """,
            "DragShot.Miss{M}(x[0], x[1], 0.6{E})",
            new[] { 30.0, 0.01 },
            Numeric);

        yield return Case(
            "PendulumLocalFunction", Field.Dynamics, new[] { LocalFunction },
            "A physics teacher fits a damped pendulum with semi-implicit Euler; the acceleration is a capturing block-bodied local function.",
            """
            // Invented swing angles sampled every 0.1 s (made up for this corpus).
            public static partial class Pendulum
            {
                public static readonly double[] Observed = { 0.50, 0.46, 0.36, 0.21, 0.04, -0.13, -0.28, -0.39, -0.44, -0.43 };
                private const double Dt = 0.01;

                [Differentiate(nameof(length), nameof(damping))]
                public static double Misfit(double length, double damping)
                {
                    double theta = 0.5, omega = 0.0;
                    double Acceleration(double th, double om)
                    {
                        double gravity = -9.81 / length * Math.Sin(th);
                        return gravity - damping * om;
                    }

                    double misfit = 0;
                    for (int k = 0; k < Observed.Length; k++)
                    {
                        for (int sub = 0; sub < 10; sub++)
                        {
                            omega += Dt * Acceleration(theta, omega);
                            theta += Dt * omega;
                        }

                        double r = theta - Observed[k];
                        misfit += r * r;
                    }

                    return misfit;
                }
            }
            """,
            "Pendulum.Misfit{M}(x[0], x[1]{E})",
            new[] { 1.0, 0.1 },
            Numeric);

        yield return Case(
            "OrbitLeapfrogVector3", Field.Dynamics, new[] { NumericsVector },
            "A mission analyst shoots for a rendezvous with leapfrog steps on Vector3 positions and velocities.",
            """
            // Invented units (GM = 1) and a made-up rendezvous point (made up for this corpus).
            public static partial class Transfer
            {
                private static readonly Vector3 Start = new(1f, 0f, 0f);
                private static readonly Vector3 Rendezvous = new(0.2f, 1.05f, 0.05f);
                private const float Dt = 0.02f;

                [Differentiate(nameof(vy), nameof(vz))]
                public static float MissDistance(float vy, float vz)
                {
                    Vector3 r = Start;
                    Vector3 v = new(0f, vy, vz);
                    for (int step = 0; step < 80; step++)
                    {
                        float d2 = r.LengthSquared();
                        Vector3 a = -r / (d2 * MathF.Sqrt(d2));
                        v += 0.5f * Dt * a;
                        r += Dt * v;
                        d2 = r.LengthSquared();
                        a = -r / (d2 * MathF.Sqrt(d2));
                        v += 0.5f * Dt * a;
                    }

                    return Vector3.Distance(r, Rendezvous);
                }
            }
            """,
            "Transfer.MissDistance{M}((float)x[0], (float)x[1]{E})",
            new[] { 1.0, 0.05 },
            Numeric,
            Precision.Single);

        yield return Case(
            "SpringMassRecordStruct", Field.Dynamics, new[] { UserStruct, UnmarkedHelper },
            "A vehicle engineer steps a spring-damper State record struct with a helper that returns the next State.",
            """
            public record struct State(double Position, double Velocity);

            // Invented displacement record of a damped spring (made up for this corpus).
            public static partial class Suspension
            {
                public static readonly double[] Measured = { 0.80, 0.52, 0.18, -0.08, -0.21, -0.22, -0.14, -0.04, 0.04, 0.07 };
                private const double Dt = 0.05;

                static State Step(State s, double stiffness, double damping)
                {
                    double a = -stiffness * s.Position - damping * s.Velocity;
                    double v = s.Velocity + Dt * a;
                    return new State(s.Position + Dt * v, v);
                }

                [Differentiate(nameof(stiffness), nameof(damping))]
                public static double Loss(double stiffness, double damping)
                {
                    var state = new State(1.0, 0.0);
                    double loss = 0;
                    foreach (double y in Measured)
                    {
                        for (int i = 0; i < 4; i++)
                        {
                            state = Step(state, stiffness, damping);
                        }

                        loss += (state.Position - y) * (state.Position - y);
                    }

                    return loss;
                }
            }
            """,
            "Suspension.Loss{M}(x[0], x[1]{E})",
            new[] { 25.0, 1.5 },
            Numeric);

        yield return Case(
            "BallisticRangeFiniteGuard", Field.Dynamics, new[] { FinitePredicate, ThrowGuard },
            "A drag-free range formula guarded by double.IsFinite and a throw, with an IsNaN check on the result.",
            """
            // Invented launcher and target distance (made up for this corpus).
            public static partial class Launcher
            {
                private const double G = 9.81;

                [Differentiate(nameof(speed), nameof(angle))]
                public static double RangeError(double speed, double angle, double target)
                {
                    if (!double.IsFinite(speed) || speed <= 0)
                    {
                        throw new ArgumentOutOfRangeException(nameof(speed), speed, "launch speed must be positive and finite");
                    }

                    double range = speed * speed * Math.Sin(2 * angle) / G;
                    if (double.IsNaN(range))
                    {
                        return double.PositiveInfinity;
                    }

                    double e = range - target;
                    return e * e;
                }
            }
            """,
            "Launcher.RangeError{M}(x[0], x[1], 30.0{E})",
            new[] { 18.0, 0.5 },
            Hand("plain calculus (drag-free range R = v²·sin 2θ / g): ∂/∂v = 2e·2v·sin 2θ/g, ∂/∂θ = 2e·2v²·cos 2θ/g", """
                double v = x[0], th = x[1], e = v * v * Math.Sin(2 * th) / 9.81 - 30.0;
                g[0] = 2 * e * 2 * v * Math.Sin(2 * th) / 9.81;
                g[1] = 2 * e * 2 * v * v * Math.Cos(2 * th) / 9.81;
                """));
    }

    private static IEnumerable<CorpusCase> MachineLearning()
    {
        yield return Case(
            "SoftmaxCrossEntropyLinq", Field.MachineLearning, new[] { Linq, LocalArrayOrSpan },
            "A data scientist writes softmax cross-entropy with a local logits array, logits.Max() and logits.Sum(z => …).",
            """
            // Invented three-class sample with two features (made up for this corpus).
            public static partial class Softmax
            {
                public static readonly double[] Features = { 0.8, -1.2 };
                public const int Label = 2;

                [Differentiate(nameof(weights))]
                public static double CrossEntropy(double[] weights)
                {
                    var logits = new double[3];
                    for (int c = 0; c < 3; c++)
                    {
                        logits[c] = weights[2 * c] * Features[0] + weights[2 * c + 1] * Features[1];
                    }

                    double max = logits.Max();
                    double logSumExp = max + Math.Log(logits.Sum(z => Math.Exp(z - max)));
                    return logSumExp - logits[Label];
                }
            }
            """,
            "Softmax.CrossEntropy{M}(x{E})",
            new[] { 0.1, -0.2, 0.3, 0.05, -0.4, 0.2 },
            Hand("softmax cross-entropy gradient (p_c − [c = label])·x_j, common formula", """
                double[] z = new double[3];
                for (int c = 0; c < 3; c++) z[c] = x[2 * c] * Softmax.Features[0] + x[2 * c + 1] * Softmax.Features[1];
                double m = Math.Max(z[0], Math.Max(z[1], z[2])), s = 0;
                for (int c = 0; c < 3; c++) s += Math.Exp(z[c] - m);
                for (int c = 0; c < 3; c++)
                {
                    double p = Math.Exp(z[c] - m) / s - (c == Softmax.Label ? 1 : 0);
                    g[2 * c] = p * Softmax.Features[0];
                    g[2 * c + 1] = p * Softmax.Features[1];
                }
                """));

        yield return Case(
            "LogisticRegressionTupleHelper", Field.MachineLearning, new[] { UnmarkedHelper, IndexOrRange },
            "Logistic regression with a helper over spans that returns a (probability, logit) tuple; rows are X.AsSpan().Slice(i·D, D).",
            """
            // Invented data: five samples of two features, row-major, with 0/1 labels (made up for this corpus).
            public static partial class Logistic
            {
                public static readonly double[] X = { 0.5, 1.2, -0.3, 0.8, 1.5, -0.7, -1.1, 0.2, 0.9, 0.4 };
                public static readonly double[] Y = { 1, 0, 1, 0, 1 };
                private const int D = 2;

                static (double Probability, double Logit) Predict(ReadOnlySpan<double> w, double bias, ReadOnlySpan<double> row)
                {
                    double z = bias;
                    for (int j = 0; j < row.Length; j++)
                    {
                        z += w[j] * row[j];
                    }

                    return (1 / (1 + Math.Exp(-z)), z);
                }

                [Differentiate(nameof(w), nameof(bias))]
                public static double NegLogLikelihood(double[] w, double bias)
                {
                    double nll = 0;
                    for (int i = 0; i < Y.Length; i++)
                    {
                        var (p, _) = Predict(w, bias, X.AsSpan().Slice(i * D, D));
                        nll -= Y[i] * Math.Log(p) + (1 - Y[i]) * Math.Log(1 - p);
                    }

                    return nll;
                }
            }
            """,
            "Logistic.NegLogLikelihood{M}(new[] { x[0], x[1] }, x[2]{E})",
            new[] { 0.3, -0.5, 0.1 },
            Hand("logistic regression score Σ(p − y)·x (common formula)", """
                g[0] = 0; g[1] = 0; g[2] = 0;
                for (int i = 0; i < Logistic.Y.Length; i++)
                {
                    double z = x[2] + x[0] * Logistic.X[2 * i] + x[1] * Logistic.X[2 * i + 1];
                    double d = 1 / (1 + Math.Exp(-z)) - Logistic.Y[i];
                    g[0] += d * Logistic.X[2 * i];
                    g[1] += d * Logistic.X[2 * i + 1];
                    g[2] += d;
                }
                """));

        yield return Case(
            "TinyNetworkGenericActivation", Field.MachineLearning, new[] { GenericMath, UnmarkedHelper, LocalArrayOrSpan },
            "A 2-2-1 network whose activation is a generic-math helper over T : IFloatingPointIeee754<T>, hidden units in a local array.",
            """
            // A 2-2-1 network on invented XOR-like points (made up for this corpus).
            public static partial class TinyNet
            {
                public static readonly double[,] Inputs = { { 0, 0 }, { 0, 1 }, { 1, 0 }, { 1, 1 } };
                public static readonly double[] Targets = { 0.1, 0.9, 0.9, 0.1 };

                static T Activation<T>(T x) where T : IFloatingPointIeee754<T> => T.Tanh(x);

                // parameters: W1 (2×2, row-major), b1 (2), w2 (2), b2
                [Differentiate(nameof(parameters))]
                public static double Loss(double[] parameters)
                {
                    double loss = 0;
                    var hidden = new double[2];
                    for (int n = 0; n < Targets.Length; n++)
                    {
                        for (int h = 0; h < 2; h++)
                        {
                            hidden[h] = Activation(parameters[2 * h] * Inputs[n, 0] + parameters[2 * h + 1] * Inputs[n, 1] + parameters[4 + h]);
                        }

                        double output = parameters[6] * hidden[0] + parameters[7] * hidden[1] + parameters[8];
                        loss += 0.5 * (output - Targets[n]) * (output - Targets[n]);
                    }

                    return loss;
                }
            }
            """,
            "TinyNet.Loss{M}(x{E})",
            new[] { 0.5, -0.4, 0.3, 0.8, 0.1, -0.2, 0.7, -0.6, 0.05 },
            Numeric);

        yield return Case(
            "RidgeEnumerableRangeAverage", Field.MachineLearning, new[] { Linq },
            "Ridge regression's mean squared error as Enumerable.Range(0, n).Average(i => …).",
            """
            // Invented data: floor area (100 m²) against price (made up for this corpus).
            public static partial class Ridge
            {
                public static readonly double[] Size = { 0.6, 0.8, 1.0, 1.3, 1.7, 2.1 };
                public static readonly double[] Price = { 1.9, 2.4, 3.1, 3.8, 5.0, 6.1 };

                [Differentiate(nameof(slope), nameof(intercept))]
                public static double Objective(double slope, double intercept, double lambda)
                {
                    double mse = Enumerable.Range(0, Size.Length)
                        .Average(i => (slope * Size[i] + intercept - Price[i]) * (slope * Size[i] + intercept - Price[i]));
                    return mse + lambda * slope * slope;
                }
            }
            """,
            "Ridge.Objective{M}(x[0], x[1], 0.1{E})",
            new[] { 2.5, 0.4 },
            Hand("plain calculus: ∂/∂a = (2/n)·Σ r·x + 2λa, ∂/∂b = (2/n)·Σ r", """
                int n = Ridge.Size.Length;
                g[0] = 2 * 0.1 * x[0]; g[1] = 0;
                for (int i = 0; i < n; i++)
                {
                    double r = x[0] * Ridge.Size[i] + x[1] - Ridge.Price[i];
                    g[0] += 2.0 / n * r * Ridge.Size[i];
                    g[1] += 2.0 / n * r;
                }
                """));

        yield return Case(
            "ActivationEnumSwitchThrow", Field.MachineLearning, new[] { Enum, ThrowGuard },
            "One neuron whose activation is chosen by an enum in a switch statement; the default section throws.",
            """
            public enum Activation { Tanh, Sigmoid, Softplus }

            // One neuron fitted to two invented points (made up for this corpus).
            public static partial class Neuron
            {
                [Differentiate(nameof(w), nameof(b))]
                public static double Loss(double w, double b, Activation activation)
                {
                    double z1 = w * 0.5 + b, z2 = w * -1.0 + b;
                    double a1, a2;
                    switch (activation)
                    {
                        case Activation.Tanh:
                            a1 = Math.Tanh(z1);
                            a2 = Math.Tanh(z2);
                            break;
                        case Activation.Sigmoid:
                            a1 = 1 / (1 + Math.Exp(-z1));
                            a2 = 1 / (1 + Math.Exp(-z2));
                            break;
                        case Activation.Softplus:
                            a1 = Math.Log(1 + Math.Exp(z1));
                            a2 = Math.Log(1 + Math.Exp(z2));
                            break;
                        default:
                            throw new ArgumentOutOfRangeException(nameof(activation), activation, null);
                    }

                    return (a1 - 0.7) * (a1 - 0.7) + (a2 - 0.2) * (a2 - 0.2);
                }
            }
            """,
            "Neuron.Loss{M}(x[0], x[1], Activation.Sigmoid{E})",
            new[] { 0.8, 0.1 },
            Hand("plain calculus with σ' = σ(1 − σ)", """
                double s1 = 1 / (1 + Math.Exp(-(x[0] * 0.5 + x[1]))), s2 = 1 / (1 + Math.Exp(-(x[0] * -1.0 + x[1])));
                double d1 = 2 * (s1 - 0.7) * s1 * (1 - s1), d2 = 2 * (s2 - 0.2) * s2 * (1 - s2);
                g[0] = d1 * 0.5 - d2;
                g[1] = d1 + d2;
                """));
    }
}
