using System;
using System.Linq;
using System.Threading.Tasks;
using DerivGen.CodeFixes.Tests.Infrastructure;
using Microsoft.CodeAnalysis;
using Xunit;
using Verify = DerivGen.CodeFixes.Tests.Infrastructure.CodeFixVerifier<DerivGen.CodeFixes.SmoothReplacementCodeFix>;

namespace DerivGen.CodeFixes.Tests;

/// <summary>DG0007 (not differentiable everywhere): Abs, Max and Min replaced by their smooth √(u² + ε²) forms.</summary>
public sealed class SmoothReplacementTests
{
    [Fact]
    public Task AbsOfADifferenceBecomesTheSmoothAbsoluteValue() => Verify.VerifyAsync(
        """
        using System;
        using DerivGen;

        public static partial class Track
        {
            [Differentiate]
            public static double Error(double x, double target) => 3.0 * {|DG0007:Math.Abs(x - target)|};
        }
        """,
        """
        using System;
        using DerivGen;

        public static partial class Track
        {
            [Differentiate]
            public static double Error(double x, double target) => 3.0 * Math.Sqrt((x - target) * (x - target) + 1e-6 * 1e-6);
        }
        """);

    [Fact]
    public Task MaxInADenominatorKeepsItsParentheses() => Verify.VerifyAsync(
        """
        using System;
        using DerivGen;

        public static partial class Ratio
        {
            [Differentiate]
            public static double F(double a, double b) => 1.0 / {|DG0007:Math.Max(a, b)|};
        }
        """,
        """
        using System;
        using DerivGen;

        public static partial class Ratio
        {
            [Differentiate]
            public static double F(double a, double b) => 1.0 / ((a + b + Math.Sqrt((a - b) * (a - b) + 1e-6 * 1e-6)) / 2);
        }
        """);

    [Fact]
    public Task FloatMinUsesMathFAndFloatLiterals() => Verify.VerifyAsync(
        """
        using System;
        using DerivGen;

        public static partial class Valve
        {
            [Differentiate]
            public static float Flow(float u, float limit)
            {
                float opening = {|DG0007:MathF.Min(u, limit)|};
                return opening * opening;
            }
        }
        """,
        """
        using System;
        using DerivGen;

        public static partial class Valve
        {
            [Differentiate]
            public static float Flow(float u, float limit)
            {
                float opening = (u + limit - MathF.Sqrt((u - limit) * (u - limit) + 1e-6f * 1e-6f)) / 2;
                return opening * opening;
            }
        }
        """);

    [Fact]
    public Task DoubleAbsWithoutUsingSystemIsQualified() => Verify.VerifyAsync(
        """
        using DerivGen;

        public static partial class Track
        {
            [Differentiate]
            public static double Error(double x) => {|DG0007:double.Abs(x)|} + x;
        }
        """,
        """
        using DerivGen;

        public static partial class Track
        {
            [Differentiate]
            public static double Error(double x) => System.Math.Sqrt(x * x + 1e-6 * 1e-6) + x;
        }
        """);

    [Fact]
    public Task NoFixForFloorClampOrABranchCondition() => Verify.VerifyNoFixAsync(
        """
        using System;
        using DerivGen;

        public static partial class Steps
        {
            [Differentiate]
            public static double F(double x, double y)
            {
                double s = {|DG0007:Math.Floor(x)|} + {|DG0007:Math.Clamp(y, 0.0, 1.0)|};
                if ({|DG0007:x > y|})
                {
                    s += x;
                }

                return s;
            }
        }
        """);

    /// <summary>
    /// Applies each fix to a loss, compiles the result with DerivGen and checks, on a grid, the documented bounds of
    /// the smooth forms against the original function and the generated derivative against the closed form of the
    /// smooth function (plain calculus: d/du √(u² + ε²) = u/√(u² + ε²); for the smooth max and min, ∂/∂a = (1 ± (a − b)/√((a − b)² + ε²))/2).
    /// </summary>
    [Fact]
    public async Task FixedLossesStayWithinTheDocumentedBoundsAndDifferentiateToTheClosedForms()
    {
        const string source = """
            using System;
            using DerivGen;

            public static partial class Kinks
            {
                [Differentiate]
                public static double A(double u) => Math.Abs(u);

                [Differentiate]
                public static double Hi(double a, double b) => Math.Max(a, b);

                [Differentiate]
                public static double Lo(double a, double b) => Math.Min(a, b);
            }
            """;
        string text = source;
        for (int round = 0; round < 3; round++)
        {
            Document document = WorkspaceHarness.CreateDocument(text);
            var offer = (await WorkspaceHarness.FixesAsync(new SmoothReplacementCodeFix(), document)).First();
            text = await WorkspaceHarness.ApplyAsync(offer.Action, document);
        }

        Assert.DoesNotContain("Math.Abs", text);
        Assert.DoesNotContain("Math.Max", text);
        Assert.DoesNotContain("Math.Min", text);
        Document done = WorkspaceHarness.CreateDocument(text);
        Assert.Empty(await WorkspaceHarness.FixesAsync(new SmoothReplacementCodeFix(), done));

        using LoadedAssembly compiled = WorkspaceHarness.CompileWithGenerator(text);
        var abs = compiled.Static<Gradient1>("Kinks", "AGradient");
        var hi = compiled.Static<Gradient2>("Kinks", "HiGradient");
        var lo = compiled.Static<Gradient2>("Kinks", "LoGradient");
        const double eps = 1e-6;
        double[] grid = [-2.5, -1.0, -1e-5, -1e-7, 0.0, 3e-7, 2e-6, 0.25, 4.0];
        var g = new double[2];
        foreach (double u in grid)
        {
            double value = abs(u, g);
            Assert.InRange(value - Math.Abs(u), 0.0, eps * (1 + 1e-12));
            Assert.Equal(u / Math.Sqrt(u * u + eps * eps), g[0], 12);

            foreach (double v in grid)
            {
                double root = Math.Sqrt((u - v) * (u - v) + eps * eps);
                double max = hi(u, v, g);
                Assert.InRange(max - Math.Max(u, v), -1e-15 * (1 + Math.Abs(u) + Math.Abs(v)), eps / 2 * (1 + 1e-9));
                Assert.Equal((1 + (u - v) / root) / 2, g[0], 12);
                Assert.Equal((1 - (u - v) / root) / 2, g[1], 12);

                double min = lo(u, v, g);
                Assert.InRange(Math.Min(u, v) - min, -1e-15 * (1 + Math.Abs(u) + Math.Abs(v)), eps / 2 * (1 + 1e-9));
                Assert.Equal((1 - (u - v) / root) / 2, g[0], 12);
                Assert.Equal((1 + (u - v) / root) / 2, g[1], 12);
            }
        }
    }

    public delegate double Gradient1(double u, Span<double> gradient);

    public delegate double Gradient2(double a, double b, Span<double> gradient);
}
