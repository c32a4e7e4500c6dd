using System.Threading.Tasks;
using DerivGen.CodeFixes.Tests.Infrastructure;
using Xunit;
using Verify = DerivGen.CodeFixes.Tests.Infrastructure.CodeFixVerifier<DerivGen.CodeFixes.MakeTypesPartialCodeFix>;

namespace DerivGen.CodeFixes.Tests;

/// <summary>DG0002 (containing type must be partial): the fix adds 'partial' where C# requires it.</summary>
public sealed class MakeTypesPartialTests
{
    [Fact]
    public Task StaticClassBecomesPartialAndTheGeneratedGradientIsCallable() => Verify.VerifyAsync(
        """
        using System;
        using DerivGen;

        public static class Fit
        {
            [Differentiate]
            public static double {|DG0002:Loss|}(double w) => (w - 3) * (w - 3);

            public static double Slope(double w)
            {
                Span<double> g = stackalloc double[1];
                {|CS0103:LossGradient|}(w, g);
                return g[0];
            }
        }
        """,
        """
        using System;
        using DerivGen;

        public static partial class Fit
        {
            [Differentiate]
            public static double Loss(double w) => (w - 3) * (w - 3);

            public static double Slope(double w)
            {
                Span<double> g = stackalloc double[1];
                LossGradient(w, g);
                return g[0];
            }
        }
        """);

    [Fact]
    public Task EveryEnclosingTypeThatLacksPartialGetsIt() => Verify.VerifyAsync(
        """
        using DerivGen;

        namespace Plant;

        public class Outer
        {
            internal sealed class Middle
            {
                public partial class Inner
                {
                    [Differentiate]
                    public double {|DG0002:{|DG0002:Energy|}|}(double q) => 0.5 * q * q;
                }
            }
        }
        """,
        """
        using DerivGen;

        namespace Plant;

        public partial class Outer
        {
            internal sealed partial class Middle
            {
                public partial class Inner
                {
                    [Differentiate]
                    public double Energy(double q) => 0.5 * q * q;
                }
            }
        }
        """);

    // C# requires 'ref partial struct'; the fixed code is compiled with the generator, which writes its part the same way.
    [Fact]
    public Task PartialGoesAfterRefInARefStruct() => Verify.VerifyAsync(
        """
        using DerivGen;

        public readonly ref struct Spring
        {
            private readonly double _k;

            public Spring(double k) => _k = k;

            [Differentiate]
            public double {|DG0002:Energy|}(double x) => 0.5 * _k * x * x;
        }
        """,
        """
        using DerivGen;

        public readonly ref partial struct Spring
        {
            private readonly double _k;

            public Spring(double k) => _k = k;

            [Differentiate]
            public double Energy(double x) => 0.5 * _k * x * x;
        }
        """);

    [Fact]
    public Task TypeWithoutModifiersKeepsItsCommentAndIndentation() => Verify.VerifyAsync(
        """
        using DerivGen;

        namespace N
        {
            // A record with a loss (invented).
            record Cell(double Scale)
            {
                [Differentiate]
                public double {|DG0002:Cost|}(double v) => Scale * v * v;
            }
        }
        """,
        """
        using DerivGen;

        namespace N
        {
            // A record with a loss (invented).
            partial record Cell(double Scale)
            {
                [Differentiate]
                public double Cost(double v) => Scale * v * v;
            }
        }
        """);

    [Fact]
    public Task FixAllAddsPartialOncePerType() => Verify.VerifyFixAllAsync(
        """
        using DerivGen;

        public static class A
        {
            [Differentiate]
            public static double {|DG0002:F|}(double x) => x * x;

            [Differentiate]
            public static double {|DG0002:G|}(double x) => x * x * x;
        }

        public class B
        {
            [Differentiate]
            public double {|DG0002:H|}(double y) => y + y * y;
        }
        """,
        """
        using DerivGen;

        public static partial class A
        {
            [Differentiate]
            public static double F(double x) => x * x;

            [Differentiate]
            public static double G(double x) => x * x * x;
        }

        public partial class B
        {
            [Differentiate]
            public double H(double y) => y + y * y;
        }
        """,
        MakeTypesPartialCodeFix.EquivalenceKey);
}
