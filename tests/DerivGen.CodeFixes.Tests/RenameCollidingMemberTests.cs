using System.Threading.Tasks;
using Xunit;
using Verify = DerivGen.CodeFixes.Tests.Infrastructure.CodeFixVerifier<DerivGen.CodeFixes.RenameCollidingMemberCodeFix>;

namespace DerivGen.CodeFixes.Tests;

/// <summary>DG0006 (generated name already taken): the existing member is renamed with its references.</summary>
public sealed class RenameCollidingMemberTests
{
    // The fixed state is compiled with the generator: that it has no error shows the generated LossGradient now sits
    // beside LossGradientByHand without a clash.
    [Fact]
    public Task HandWrittenGradientIsRenamedWithItsCallersAndTheGeneratedOneTakesTheName() => Verify.VerifyAsync(
        """
        using System;
        using DerivGen;

        public static partial class Line
        {
            [Differentiate(Hessian = false)]
            public static double {|DG0006:Loss|}(double w, double b) => (2 * w + b - 1) * (2 * w + b - 1);

            // Written by hand before DerivGen.
            public static double LossGradient(double w, double b, Span<double> g)
            {
                double r = 2 * w + b - 1;
                g[0] = 4 * r;
                g[1] = 2 * r;
                return r * r;
            }

            public static bool Agree(double w, double b)
            {
                Span<double> mine = stackalloc double[2];
                LossGradient(w, b, mine);
                return mine[0] == 4 * (2 * w + b - 1);
            }
        }
        """,
        """
        using System;
        using DerivGen;

        public static partial class Line
        {
            [Differentiate(Hessian = false)]
            public static double Loss(double w, double b) => (2 * w + b - 1) * (2 * w + b - 1);

            // Written by hand before DerivGen.
            public static double LossGradientByHand(double w, double b, Span<double> g)
            {
                double r = 2 * w + b - 1;
                g[0] = 4 * r;
                g[1] = 2 * r;
                return r * r;
            }

            public static bool Agree(double w, double b)
            {
                Span<double> mine = stackalloc double[2];
                LossGradientByHand(w, b, mine);
                return mine[0] == 4 * (2 * w + b - 1);
            }
        }
        """);

    [Fact]
    public Task BothTakenNamesAreRenamedOneAfterTheOtherAndAFreeNameIsChosen() => Verify.VerifyAsync(
        """
        using DerivGen;

        public partial class Cell
        {
            private double LossGradientByHand;

            [Differentiate]
            public double {|DG0006:{|DG0006:Loss|}|}(double v) => v * v * v;

            public double LossGradient => 3.0;

            public double LossHessian() => 6.0;

            public double Sum() => LossGradient + LossHessian() + LossGradientByHand;
        }
        """,
        """
        using DerivGen;

        public partial class Cell
        {
            private double LossGradientByHand;

            [Differentiate]
            public double Loss(double v) => v * v * v;

            public double LossGradientByHand2 => 3.0;

            public double LossHessianByHand() => 6.0;

            public double Sum() => LossGradientByHand2 + LossHessianByHand() + LossGradientByHand;
        }
        """,
        iterations: 2);

    [Fact]
    public Task AllOverloadsOfTheTakenNameAreRenamed() => Verify.VerifyAsync(
        """
        using DerivGen;

        public static partial class Tank
        {
            [Differentiate(Hessian = false)]
            public static double {|DG0006:Level|}(double inflow) => 2.0 * inflow - 0.1 * inflow * inflow;

            public static double LevelGradient(double inflow) => 2.0 - 0.2 * inflow;

            public static double LevelGradient(float inflow) => 2.0 - 0.2 * inflow;

            public static double Use() => LevelGradient(1.0) + LevelGradient(1.0f);
        }
        """,
        """
        using DerivGen;

        public static partial class Tank
        {
            [Differentiate(Hessian = false)]
            public static double Level(double inflow) => 2.0 * inflow - 0.1 * inflow * inflow;

            public static double LevelGradientByHand(double inflow) => 2.0 - 0.2 * inflow;

            public static double LevelGradientByHand(float inflow) => 2.0 - 0.2 * inflow;

            public static double Use() => LevelGradientByHand(1.0) + LevelGradientByHand(1.0f);
        }
        """);
    // A method with outputs generates MJacobian (DEVELOPERS "Jacobians of methods with outputs"), which the fix did not
    // offer to rename while it looked for MGradient and MHessian in the message. The fixed state is compiled with the
    // generator: the generated ResidualsJacobian then sits beside ResidualsJacobianByHand.
    [Fact]
    public Task HandWrittenJacobianIsRenamed() => Verify.VerifyAsync(
        """
        using System;
        using DerivGen;

        public static partial class Fit
        {
            [Differentiate(nameof(a), nameof(b))]
            public static void {|DG0006:Residuals|}(double a, double b, Span<double> r)
            {
                r[0] = a - 1;
                r[1] = a * b - 2;
            }

            // Written by hand: the 2×2 Jacobian, row-major.
            public static void ResidualsJacobian(double a, double b, Span<double> j)
            {
                j[0] = 1;
                j[1] = 0;
                j[2] = b;
                j[3] = a;
            }

            public static double Corner(double a, double b)
            {
                Span<double> j = stackalloc double[4];
                ResidualsJacobian(a, b, j);
                return j[3];
            }
        }
        """,
        """
        using System;
        using DerivGen;

        public static partial class Fit
        {
            [Differentiate(nameof(a), nameof(b))]
            public static void Residuals(double a, double b, Span<double> r)
            {
                r[0] = a - 1;
                r[1] = a * b - 2;
            }

            // Written by hand: the 2×2 Jacobian, row-major.
            public static void ResidualsJacobianByHand(double a, double b, Span<double> j)
            {
                j[0] = 1;
                j[1] = 0;
                j[2] = b;
                j[3] = a;
            }

            public static double Corner(double a, double b)
            {
                Span<double> j = stackalloc double[4];
                ResidualsJacobianByHand(a, b, j);
                return j[3];
            }
        }
        """);

    // The Hessian of a method with a vector variable goes through a private pair method MPair whose MPairHessian is
    // generated too (DEVELOPERS "Hessians w.r.t. vectors"); a member with that name is a clash like the others.
    [Fact]
    public Task MemberNamedLikeThePairHessianIsRenamed() => Verify.VerifyAsync(
        """
        using DerivGen;

        public static partial class Ridge
        {
            [Differentiate(nameof(w))]
            public static double {|DG0006:Loss|}(double[] w)
            {
                double s = 0;
                for (int i = 0; i < w.Length; i++)
                {
                    s += w[i] * w[i] * w[i];
                }

                return s;
            }

            public static int LossPairHessian() => 2;
        }
        """,
        """
        using DerivGen;

        public static partial class Ridge
        {
            [Differentiate(nameof(w))]
            public static double Loss(double[] w)
            {
                double s = 0;
                for (int i = 0; i < w.Length; i++)
                {
                    s += w[i] * w[i] * w[i];
                }

                return s;
            }

            public static int LossPairHessianByHand() => 2;
        }
        """);
}
