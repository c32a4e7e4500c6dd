using DerivGen.Tests.Infrastructure;
using Xunit;

namespace DerivGen.Tests.Approved;

/// <summary>
/// The generated text of representative methods, reviewed by a person and kept as baselines in this folder.
/// A change to the emitter shows up here as a readable diff.
/// </summary>
public sealed class ApprovedOutputTests
{
    [Fact]
    public void Rosenbrock() => Approvals.Verify(nameof(Rosenbrock), GeneratorHarness.Run("""
        using DerivGen;

        namespace Samples.Optimization;

        public static partial class TestFunctions
        {
            /// <summary>Rosenbrock's banana function (Nocedal &amp; Wright, ch. 2).</summary>
            [Differentiate]
            public static double Rosenbrock(double x, double y) => (1 - x) * (1 - x) + 100 * (y - x * x) * (y - x * x);
        }
        """).Source("Samples.Optimization.TestFunctions.Rosenbrock.g.cs"));

    [Fact]
    public void TrigExpWithLocals() => Approvals.Verify(nameof(TrigExpWithLocals), GeneratorHarness.Run("""
        using System;
        using DerivGen;

        namespace Samples.Signals;

        public static partial class Damped
        {
            [Differentiate(nameof(amplitude), nameof(decay), nameof(phase))]
            public static double Residual(double amplitude, double decay, double phase, double t, double observed)
            {
                double envelope = amplitude * Math.Exp(-decay * t);
                double wave = Math.Cos(2.0 * Math.PI * t + phase);
                double r = envelope * wave - observed;
                r *= 0.5;
                return r * r;
            }
        }
        """).Source("Samples.Signals.Damped.Residual.g.cs"));

    [Fact]
    public void Jacobian() => Approvals.Verify(nameof(Jacobian), GeneratorHarness.Run("""
        using System;
        using DerivGen;

        namespace Samples.Fitting;

        public static partial class Kinetics
        {
            // Invented: first-order uptake toward a plateau, c(t) = cMax·(1 − exp(−k·t)), with a lag.
            [Differentiate(nameof(cMax), nameof(k))]
            public static void Residuals(double cMax, double k, double lag, ReadOnlySpan<double> t, ReadOnlySpan<double> observed, Span<double> r)
            {
                for (int i = 0; i < t.Length; i++)
                {
                    double elapsed = t[i] - lag;
                    r[i] = observed[i] - cMax * (1 - Math.Exp(-k * elapsed));
                }
            }
        }
        """).Source("Samples.Fitting.Kinetics.Residuals.g.cs"));

    [Fact]
    public void FloatMethod() => Approvals.Verify(nameof(FloatMethod), GeneratorHarness.Run("""
        using System;
        using DerivGen;

        namespace Samples.Graphics;

        internal static partial class Falloff
        {
            [Differentiate(Hessian = false)]
            internal static float Light(float x, float y) => 1f / (1f + x * x + y * y) + 0.25f * MathF.Tanh(x - y);
        }
        """).Source("Samples.Graphics.Falloff.Light.g.cs"));

    [Fact]
    public void InstanceMethodInNestedType() => Approvals.Verify(nameof(InstanceMethodInNestedType), GeneratorHarness.Run("""
        using System;
        using DerivGen;

        namespace Samples.Robotics;

        public partial class Arm
        {
            private static readonly double Link1 = 1.0;
            private static readonly double Link2 = 0.8;

            public partial struct Target
            {
                // Squared distance from the tip of a two-link planar arm to the point (px, py).
                [Differentiate(nameof(q1), nameof(q2))]
                public double Miss(double q1, double q2, double px, double py)
                {
                    double ex = Link1 * Math.Cos(q1) + Link2 * Math.Cos(q1 + q2) - px;
                    double ey = Link1 * Math.Sin(q1) + Link2 * Math.Sin(q1 + q2) - py;
                    return ex * ex + ey * ey;
                }
            }
        }
        """).Source("Samples.Robotics.Arm.Target.Miss.g.cs"));

    [Fact]
    public void DataLoop() => Approvals.Verify(nameof(DataLoop), GeneratorHarness.Run("""
        using System;
        using DerivGen;

        namespace Samples.Fitting;

        public static partial class Decay
        {
            // Half the sum of squared residuals of y ≈ a·exp(−b·t) over a data set.
            [Differentiate(nameof(a), nameof(b))]
            public static double HalfSquaredError(double a, double b, double[] t, ReadOnlySpan<double> y)
            {
                double sum = 0;
                for (int i = 0; i < t.Length; i++)
                {
                    double r = a * Math.Exp(-b * t[i]) - y[i];
                    sum += r * r;
                }

                return 0.5 * sum;
            }
        }
        """).Source("Samples.Fitting.Decay.HalfSquaredError.g.cs"));

    [Fact]
    public void Call() => Approvals.Verify(nameof(Call), GeneratorHarness.Run("""
        using System;
        using DerivGen;

        namespace Samples.Calls;

        public static partial class Growth
        {
            // A logistic growth model, differentiated on its own.
            [Differentiate(nameof(k), nameof(r))]
            public static double Model(double k, double r, double t) => k / (1 + Math.Exp(-r * t));

            // A loss that calls the model: differentiated through the model's own generated derivatives.
            [Differentiate(nameof(k), nameof(r))]
            public static double Misfit(double k, double r, double t, double y)
            {
                double e = Model(k, r, t) - y;
                return e * e;
            }
        }
        """).Source("Samples.Calls.Growth.Misfit.g.cs"));

    [Fact]
    public void Branch() => Approvals.Verify(nameof(Branch), GeneratorHarness.Run("""
        using System;
        using DerivGen;

        namespace Samples.Robust;

        public static partial class Losses
        {
            // The Huber loss of one residual: quadratic near zero, linear beyond delta.
            [Differentiate(nameof(r))]
            public static double Huber(double r, double delta)
            {
        #pragma warning disable DG0007 // the kink at |r| = delta is intended
                double loss;
                if (Math.Abs(r) <= delta)
                {
                    loss = 0.5 * r * r;
                }
                else
                {
                    loss = delta * (Math.Abs(r) - 0.5 * delta);
                }
        #pragma warning restore DG0007
                return loss;
            }
        }
        """).Source("Samples.Robust.Losses.Huber.g.cs"));

    /// <summary>
    /// A Hessian with respect to a vector variable next to scalar ones: the pair method (<c>VectorHessian</c>,
    /// <c>Emit/PairedHessianWriter</c>), whose text no other approved file shows. The approved file is the generator's output
    /// as of this commit, reviewed and kept as a regression baseline while the emitter is refactored, not an expected
    /// value derived independently. Its numbers are checked by compile-and-run tests of the same source against closed
    /// forms: <c>Numerics/Vectors/VectorHessianTests.LogisticRegressionHessianIsTheFisherInformationPlusTheRidge</c>.
    /// </summary>
    [Fact]
    public void VectorHessian() => Approvals.Verify(nameof(VectorHessian), GeneratorHarness.Run("""
        using System;
        using DerivGen;

        namespace Samples.Classification;

        public static partial class Logistic
        {
            // Logistic regression with a bias before the weights and a ridge weight after them (slots: bias, w…, ridge).
            [Differentiate(nameof(bias), nameof(w), nameof(ridge))]
            public static double Loss(double bias, double[] w, double ridge, double[,] x, double[] y)
            {
                double s = 0;
                for (int i = 0; i < y.Length; i++)
                {
                    double z = bias;
                    for (int j = 0; j < w.Length; j++)
                    {
                        z += w[j] * x[i, j];
                    }

                    s += Math.Log(1 + Math.Exp(-z)) + (1 - y[i]) * z;
                }

                double penalty = 0;
                foreach (double wj in w)
                {
                    penalty += wj * wj;
                }

                return s + 0.5 * ridge * ridge * penalty;
            }
        }
        """).Source("Samples.Classification.Logistic.Loss.g.cs"));

    /// <summary>
    /// Reverse mode over an inner loop (<c>Passes/ReverseReplay</c>): the running derivative of z with respect to w is not
    /// stored; the inner loop is replayed with z's adjoint. A regression baseline of the generator's current output (see
    /// <see cref="VectorHessian"/>); the numbers are checked by
    /// <c>Numerics/Vectors/VectorVariableTests.LogisticRegressionGradientIsTheScore</c> (the same source, against the
    /// score of ESL §4.4.1).
    /// </summary>
    [Fact]
    public void InnerLoopReplay() => Approvals.Verify(nameof(InnerLoopReplay), GeneratorHarness.Run("""
        using System;
        using DerivGen;

        namespace Samples.Classification;

        public static partial class Logistic
        {
            // Logistic regression negative log-likelihood with weights w and bias b, rows of x as features.
            [Differentiate(nameof(bias), nameof(w), Hessian = false)]
            public static double Nll(double bias, double[] w, double[,] x, double[] y)
            {
                double s = 0;
                for (int i = 0; i < y.Length; i++)
                {
                    double z = bias;
                    for (int j = 0; j < w.Length; j++)
                    {
                        z += w[j] * x[i, j];
                    }

                    s += Math.Log(1 + Math.Exp(-z)) + (1 - y[i]) * z;
                }

                return s;
            }
        }
        """).Source("Samples.Classification.Logistic.Nll.g.cs"));

    /// <summary>
    /// A loop that writes each gradient element exactly once (<c>SingleWriteLoop</c>): assigned, not cleared and added
    /// to, with only the tail after the last pair cleared. A regression baseline of the generator's current output (see
    /// <see cref="VectorHessian"/>); the numbers are checked by
    /// <c>Numerics/Vectors/VectorVariableTests.ExtendedRosenbrockGradientMatchesTheClosedForm</c> (the same source,
    /// against the partials of Moré, Garbow &amp; Hillstrom's problem 21).
    /// </summary>
    [Fact]
    public void SingleWriteLoop() => Approvals.Verify(nameof(SingleWriteLoop), GeneratorHarness.Run("""
        using System;
        using DerivGen;

        namespace Samples.Optimization;

        public static partial class TestFunctions
        {
            // The extended Rosenbrock function (Moré, Garbow & Hillstrom, ACM TOMS 7(1), 1981, problem 21).
            [Differentiate(nameof(x), Hessian = false)]
            public static double ExtendedRosenbrock(ReadOnlySpan<double> x)
            {
                double f = 0;
                for (int i = 0; i < x.Length / 2; i++)
                {
                    double a = x[2 * i + 1] - x[2 * i] * x[2 * i];
                    double b = 1 - x[2 * i];
                    f += 100 * a * a + b * b;
                }

                return f;
            }
        }
        """).Source("Samples.Optimization.TestFunctions.ExtendedRosenbrock.g.cs"));

    [Fact]
    public void GenericMethod() => Approvals.Verify(nameof(GenericMethod), GeneratorHarness.Run("""
        using System;
        using System.Numerics;
        using DerivGen;

        namespace Samples.Chemistry;

        // Invented titration: fraction deprotonated against pH (made up for this test).
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
        """).Source("Samples.Chemistry.Titration.Loss.g.cs"));
}
