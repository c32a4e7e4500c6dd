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
}
