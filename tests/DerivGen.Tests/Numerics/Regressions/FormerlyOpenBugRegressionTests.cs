using System;
using DerivGen.Tests.Infrastructure;
using Xunit;

namespace DerivGen.Tests.Numerics.Regressions;

public sealed class FormerlyOpenBugFixture : CompiledFixture
{
    // Minimal reproductions of generator bugs that were listed as open (README "Known limitations found by these tests"),
    // kept as regressions now that they are fixed. The harness compiles the generated code with warnings as failures.
    public const string Source = """
        using System;
        using DerivGen;

        public static partial class Open
        {
            // Bug: the locals were substituted and the generated code read 10 / 0 (CS0020, division by constant zero),
            // although the method compiles and throws DivideByZeroException when it runs.
            [Differentiate(nameof(x))]
            public static double IntDivisionByALocalZero(double x, int k)
            {
                int n = 0;
                int q = k / n;
                return x * q;
            }

            // The same under a condition: only the side that is taken divides, so only k > 0 throws.
            [Differentiate(nameof(x))]
            public static double GuardedIntDivisionByALocalZero(double x, int k)
            {
                int n = 0;
                return k > 0 ? x * (10 / n) : x * x;
            }

            // The same family: int arithmetic C# evaluates at compile time once locals are substituted
            // (2147483647 + 1 is CS0220, (int)1E+20 is CS0221); the method's own code wraps at run time.
            [Differentiate]
            public static double IntOverflowThroughLocals(double x)
            {
                int a = int.MaxValue;
                int b = a + 1;
                int m = -a - 2;
                return x * b + x * x * m;
            }

            // Bug: the doc comments' cref of a method named with a keyword was written unescaped, <see cref="double(double)"/>,
            // which C# cannot resolve (CS1574; the harness fails on any warning in generated code).
            [Differentiate]
            public static double @double(double x) => x * x * x;

            // Bug: [Differentiate] on the declaring part of a partial method generated nothing. The implementing part's
            // body (in the same file) is differentiated.
            [Differentiate]
            public static partial double DeclaringPart(double x, double y);

            public static partial double DeclaringPart(double x, double y) => x * Math.Sin(y);

            // The attribute on the implementing part.
            public static partial double ImplementingPart(double x);

            [Differentiate]
            public static partial double ImplementingPart(double x) => Math.Exp(2 * x);

            // Bug: the side of a ?: not taken passed on its derivative as 0 · ∞ = NaN (x / 0.0 has the partial ∞).
            [Differentiate(nameof(x))]
            public static double InfinitePartialOnTheSideNotTaken(double x, int k) => k > 0 ? x / 0.0 : x - x;

            // The same with a node shared by two conditions, both false: its adjoint is 0 + 0, its partial NaN (√ of a
            // negative number), and the contribution is selected by "either condition", not multiplied.
            [Differentiate(nameof(x))]
            public static double NaNPartialUnderTwoConditionsNotTaken(double x, int k)
            {
                double y = x;
                return (k > 0 ? Math.Sqrt(-y) : 1.0) + (k > 1 ? Math.Sqrt(-y) : 2.0) + x * x;
            }

            // Found by a soak run: the second derivative of the side not taken folded 0 · ∞ into NaN (the tangent of
            // x / 0.0 is the constant ∞, times the 0 of the side's selection).
            [Differentiate(nameof(x))]
            public static double InfiniteTangentOnTheSideNotTaken(double x, int k) => k > 0 ? Math.Sin(x / 0.0) : x * x;

            // Found by a soak run once guarded reads were generated again: a derivative written inline (it reads a guarded
            // value) read the running derivative of s after the second loop had changed it, instead of a copy.
            [Differentiate(nameof(x))]
            public static double GuardedReadAfterTwoLoops(double x, double[] d, int k)
            {
                double s = x;
                for (int i = 0; i < d.Length; i++)
                {
                    s = s * x;
                }

                double w = s / 3.0;
                for (int j = 0; j < k; j++)
                {
                    s = Math.Sin(x);
                }

                return (2 < d.Length ? d[2] : -2.5) / (w * x);
            }

            // Found by a soak run while fixing the above: a selection with the same value on both sides (c ? s : s) must
            // pass its derivative on whichever side is taken (the guard of s is "c or not c", not "c").
            [Differentiate(nameof(x))]
            public static double SameValueOnBothSides(double x, double c)
            {
                double s = x * x;
                return (c > 0 ? s : s) * 3;
            }

            // Bug (found when the randomised suite generated untaken sides again): a local carried from one loop into the
            // next, changed in between, had its running derivative before the second loop computed from its new value
            // (z was assigned before dZ_dX = x * dZ_dX + z read it).
            [Differentiate(nameof(x))]
            public static double CarriedOnIntoASecondLoop(double x, int n)
            {
                double z = x;
                for (int i = 0; i < n; i++)
                {
                    z += x;
                }

                z *= x;
                for (int i = 0; i < n; i++)
                {
                    z += 1;
                }

                return z;
            }
        }
        """;

    public FormerlyOpenBugFixture()
        : base(Source)
    {
    }
}

/// <summary>
/// Bug pins of generator bugs once listed as open in the README ("Known limitations found by these tests": found by the
/// randomised, soak and hostile-input runs), kept now that they are fixed; each test names its bug.
/// </summary>
public sealed class FormerlyOpenBugRegressionTests : IClassFixture<FormerlyOpenBugFixture>
{
    private readonly FormerlyOpenBugFixture _fixture;

    public FormerlyOpenBugRegressionTests(FormerlyOpenBugFixture fixture) => _fixture = fixture;

    /// <summary>
    /// Bug: int locals holding constants were substituted, so the generated code read 10 / 0 and did not compile (CS0020)
    /// although the method compiles and throws at run time. Found by the randomised and hostile-input runs (listed open
    /// in the README); fixed in d32228f.
    /// </summary>
    [Fact]
    public void IntDivisionByALocalZeroCompilesAndThrowsAtRunTime()
    {
        // The fixture compiled the generated code without error (CS0020 before the fix). At run time the method and both
        // generated methods throw DivideByZeroException (C# specification, integer division operator), before writing
        // anything into the spans.
        var f = _fixture.Assembly.Method<FInt>("Open", "IntDivisionByALocalZero");
        var g = _fixture.Assembly.Method<GInt>("Open", "IntDivisionByALocalZeroGradient");
        var h = _fixture.Assembly.Method<HInt>("Open", "IntDivisionByALocalZeroHessian");
        var gradient = new[] { 7.0 };
        var hessian = new[] { 7.0 };
        Assert.Throws<DivideByZeroException>(() => f(1.5, 3));
        Assert.Throws<DivideByZeroException>(() => g(1.5, 3, gradient));
        Assert.Throws<DivideByZeroException>(() => h(1.5, 3, gradient, hessian));
        Assert.Equal(7.0, gradient[0]);
        Assert.Equal(7.0, hessian[0]);
    }

    /// <summary>
    /// Bug: as <see cref="IntDivisionByALocalZeroCompilesAndThrowsAtRunTime"/>, under a condition: only the side taken
    /// may divide. Pinned with the same fix (d32228f).
    /// </summary>
    [Fact]
    public void GuardedIntDivisionByALocalZeroThrowsOnlyWhereTheMethodDoes()
    {
        var f = _fixture.Assembly.Method<FInt>("Open", "GuardedIntDivisionByALocalZero");
        var g = _fixture.Assembly.Method<GInt>("Open", "GuardedIntDivisionByALocalZeroGradient");
        var h = _fixture.Assembly.Method<HInt>("Open", "GuardedIntDivisionByALocalZeroHessian");
        var gradient = new double[1];
        var hessian = new double[1];

        // k > 0 takes the division: DivideByZeroException, as in the method.
        Assert.Throws<DivideByZeroException>(() => f(1.5, 1));
        Assert.Throws<DivideByZeroException>(() => g(1.5, 1, gradient));
        Assert.Throws<DivideByZeroException>(() => h(1.5, 1, gradient, hessian));

        // k ≤ 0 takes x²: value bit-for-bit, derivative 2x, second derivative 2 (plain calculus).
        Assert.Equal(f(1.5, 0), g(1.5, 0, gradient));
        Assert.Equal(3.0, gradient[0]);
        Assert.Equal(f(1.5, 0), h(1.5, 0, gradient, hessian));
        Assert.Equal(3.0, gradient[0]);
        Assert.Equal(2.0, hessian[0]);
    }

    /// <summary>
    /// Bug: the same substitution made C# evaluate int arithmetic at compile time (int.MaxValue + 1 is CS0220), where the
    /// method's own code wraps at run time. Pinned with the fix of the int-division bug (d32228f).
    /// </summary>
    [Theory]
    [InlineData(0.5)]
    [InlineData(-2.0)]
    public void IntOverflowThroughLocalsWrapsAsTheMethodDoes(double x)
    {
        // Unchecked int arithmetic wraps (C# specification, checked and unchecked contexts; the test compilation is
        // unchecked): int.MaxValue + 1 = int.MinValue and −int.MaxValue − 2 = int.MaxValue. So f = b x + m x² with
        // b = −2³¹, m = 2³¹ − 1: f' = b + 2 m x, f'' = 2 m (plain calculus).
        double b = int.MinValue, m = int.MaxValue;
        Verify.At(Probe.Load(_fixture.Assembly, "Open", "IntOverflowThroughLocals", 1), new[] { x }, new[] { b + (2 * m * x) }, new[] { 2 * m },
            "IntOverflowThroughLocals");
    }

    /// <summary>
    /// Bug: the doc comments' cref of a method named with a keyword was written unescaped (cref="double(double)"), which
    /// C# cannot resolve (CS1574; the harness fails on any warning in generated code). Found with the hostile inputs;
    /// fixed in 7425852. This test checks the derivatives of the method that now compiles.
    /// </summary>
    [Theory]
    [InlineData(0.5)]
    [InlineData(-1.25)]
    public void MethodNamedWithAKeyword(double x) =>
        // x³: 3x², 6x (plain calculus). The fixture compiled the doc comments with no CS1574.
        Verify.At(Probe.Load(_fixture.Assembly, "Open", "double", 1), new[] { x }, new[] { 3 * x * x }, new[] { 6 * x }, "@double");

    /// <summary>The same bug as <see cref="MethodNamedWithAKeyword"/>: the cref is written escaped (7425852).</summary>
    [Fact]
    public void KeywordNamedMethodCrefIsEscaped()
    {
        string text = _fixture.Run.Source("Open.double.g.cs");
        Assert.Contains("<see cref=\"@double(double)\"/>", text, StringComparison.Ordinal);
    }

    /// <summary>
    /// Bug: [Differentiate] on the declaring part of a partial method generated nothing; the implementing part's body (in
    /// the same file) is now differentiated. Found with the hostile inputs; fixed in 7425852.
    /// </summary>
    [Theory]
    [InlineData(0.5, 0.3)]
    [InlineData(-2.0, 1.7)]
    public void AttributeOnTheDeclaringPartOfAPartialMethod(double x, double y) =>
        // x sin y: gradient (sin y, x cos y), Hessian [[0, cos y], [cos y, −x sin y]] (plain calculus).
        Verify.At(Probe.Load(_fixture.Assembly, "Open", "DeclaringPart", 2), new[] { x, y }, new[] { Math.Sin(y), x * Math.Cos(y) },
            new[] { 0, Math.Cos(y), Math.Cos(y), -x * Math.Sin(y) }, "DeclaringPart");

    /// <summary>
    /// Companion pin of <see cref="AttributeOnTheDeclaringPartOfAPartialMethod"/> (7425852): the attribute on the
    /// implementing part keeps working after the fix.
    /// </summary>
    [Theory]
    [InlineData(0.5)]
    [InlineData(-1.5)]
    public void AttributeOnTheImplementingPartOfAPartialMethod(double x) =>
        // e^{2x}: 2e^{2x}, 4e^{2x} (plain calculus).
        Verify.At(Probe.Load(_fixture.Assembly, "Open", "ImplementingPart", 1), new[] { x }, new[] { 2 * Math.Exp(2 * x) }, new[] { 4 * Math.Exp(2 * x) },
            "ImplementingPart");

    /// <summary>
    /// Bug: the side of a ?: not taken passed on its derivative as 0 · ∞ = NaN (x / 0.0 has the partial ∞), so the
    /// gradient was NaN instead of 0. Found by the randomised runs (listed open in the README); fixed in b6be9fe.
    /// </summary>
    [Theory]
    [InlineData(1.5, 0)]
    [InlineData(-0.5, -3)]
    public void InfinitePartialOnTheSideNotTaken(double x, int k)
    {
        // k ≤ 0 takes x − x = 0: the derivative is exactly 0, the second derivative 0 (plain calculus; it was NaN).
        var g = _fixture.Assembly.Method<GInt>("Open", "InfinitePartialOnTheSideNotTakenGradient");
        var h = _fixture.Assembly.Method<HInt>("Open", "InfinitePartialOnTheSideNotTakenHessian");
        var gradient = new double[1];
        var hessian = new double[1];
        Assert.Equal(0.0, g(x, k, gradient));
        Assert.Equal(0.0, gradient[0]);
        Assert.Equal(0.0, h(x, k, gradient, hessian));
        Assert.Equal(0.0, gradient[0]);
        Assert.Equal(0.0, hessian[0]);

        // k > 0 takes x / 0.0: value and derivative +∞ for x > 0 (IEEE 754 division by zero), as before.
        Assert.Equal(double.PositiveInfinity, g(1.5, 1, gradient));
        Assert.Equal(double.PositiveInfinity, gradient[0]);
    }

    /// <summary>
    /// Bug: as <see cref="InfinitePartialOnTheSideNotTaken"/> with a node shared by two conditions, both false (its partial
    /// NaN): the gradient was NaN. Pinned with the same fix (b6be9fe).
    /// </summary>
    [Theory]
    [InlineData(1.5)]
    [InlineData(0.25)]
    public void NaNPartialUnderTwoConditionsNotTaken(double x)
    {
        // k = 0 takes neither square root: f = 3 + x², f' = 2x, f'' = 2 (plain calculus; the gradient was NaN).
        var f = _fixture.Assembly.Method<FInt>("Open", "NaNPartialUnderTwoConditionsNotTaken");
        var h = _fixture.Assembly.Method<HInt>("Open", "NaNPartialUnderTwoConditionsNotTakenHessian");
        var gradient = new double[1];
        var hessian = new double[1];
        Assert.Equal(f(x, 0), h(x, 0, gradient, hessian));
        Assert.Equal(2 * x, gradient[0]);
        Assert.Equal(2.0, hessian[0]);

        // k = 2 takes both square roots; at y = −x < 0: f = 2√(−y) + y², f' = −1/√(−y) + 2y, f'' = −1/(2 (−y)^{3/2}) + 2
        // (plain calculus), with −y = x.
        double y = -x;
        Assert.Equal(f(y, 2), h(y, 2, gradient, hessian));
        Check.Close(new[] { (-1 / Math.Sqrt(x)) + (2 * y) }, gradient, Check.ClosedFormRelative, 1e-15, "two sides taken: gradient");
        Check.Close(new[] { (-1 / (2 * Math.Pow(x, 1.5))) + 2 }, hessian, Check.ClosedFormRelative, 1e-15, "two sides taken: Hessian");
    }

    /// <summary>
    /// Bug: a derivative written inline (it reads a guarded value) read the running derivative of s after the second loop
    /// had changed it, instead of a copy: a wrong derivative. Found by a soak run of the randomised suite once guarded
    /// reads were generated again; fixed in 6938dad.
    /// </summary>
    [Theory]
    [InlineData(0.8, 2)]
    [InlineData(1.3, 0)]
    public void GuardedReadAfterTwoLoops(double x, int k)
    {
        // d has 3 elements: s = x⁴ after the first loop, w = x⁴/3, f = 3 d₂ / x⁵, f' = −15 d₂ / x⁶, f'' = 90 d₂ / x⁷
        // (plain calculus); the second loop changes s but not f.
        double[] d = { 0.5, 0.25, 1.5 };
        var h = _fixture.Assembly.Method<HData>("Open", "GuardedReadAfterTwoLoopsHessian");
        var gradient = new double[1];
        var hessian = new double[1];
        h(x, d, k, gradient, hessian);
        Check.Close(new[] { -15 * d[2] / Math.Pow(x, 6) }, gradient, Check.ClosedFormRelative, 1e-15, "GuardedReadAfterTwoLoops gradient");
        Check.Close(new[] { 90 * d[2] / Math.Pow(x, 7) }, hessian, Check.ClosedFormRelative, 1e-15, "GuardedReadAfterTwoLoops Hessian");
    }

    private delegate double HData(double x, double[] d, int k, Span<double> gradient, Span<double> hessian);

    /// <summary>
    /// Bug: the second derivative of the side not taken folded 0 · ∞ into NaN (the tangent of x / 0.0 is the constant ∞,
    /// times the 0 of the side's selection). Found by a soak run of the randomised suite; fixed in 5de141e.
    /// </summary>
    [Theory]
    [InlineData(0.5)]
    [InlineData(-2.0)]
    public void InfiniteTangentOnTheSideNotTaken(double x)
    {
        // k = 0 takes x²: 2x and 2 (plain calculus); the second derivative was NaN.
        var h = _fixture.Assembly.Method<HInt>("Open", "InfiniteTangentOnTheSideNotTakenHessian");
        var gradient = new double[1];
        var hessian = new double[1];
        Assert.Equal(x * x, h(x, 0, gradient, hessian));
        Assert.Equal(2 * x, gradient[0]);
        Assert.Equal(2.0, hessian[0]);
    }

    /// <summary>
    /// Bug: a selection with the same value on both sides (c ? s : s) guarded s by the first side only, so the gradient
    /// was 0 where c ≤ 0. Found by a soak run of the randomised suite; fixed in 5de141e.
    /// </summary>
    [Theory]
    [InlineData(0.5, 1.0)]
    [InlineData(0.5, -1.0)]
    public void SameValueOnBothSides(double x, double c)
    {
        // 3x² whatever c: 6x and 6 (plain calculus); the gradient was 0 where c ≤ 0.
        var h = _fixture.Assembly.Method<HDouble>("Open", "SameValueOnBothSidesHessian");
        var gradient = new double[1];
        var hessian = new double[1];
        Assert.Equal(3 * x * x, h(x, c, gradient, hessian));
        Assert.Equal(6 * x, gradient[0]);
        Assert.Equal(6.0, hessian[0]);
    }

    private delegate double HDouble(double x, double c, Span<double> gradient, Span<double> hessian);

    /// <summary>
    /// Bug: a local carried from one loop into the next and changed in between had its running derivative before the
    /// second loop computed from its new value (z was assigned before dZ_dX = x * dZ_dX + z read it): a wrong
    /// derivative. Found when the randomised suite generated untaken sides again; fixed in b6be9fe.
    /// </summary>
    [Theory]
    [InlineData(1.5, 3)]
    [InlineData(-0.7, 5)]
    [InlineData(2.0, 0)]
    public void CarriedOnIntoASecondLoop(double x, int n)
    {
        // z = (n + 1) x after the first loop, (n + 1) x² after z *= x, (n + 1) x² + n at the end: f' = 2 (n + 1) x,
        // f'' = 2 (n + 1) (plain calculus).
        var g = _fixture.Assembly.Method<GInt>("Open", "CarriedOnIntoASecondLoopGradient");
        var h = _fixture.Assembly.Method<HInt>("Open", "CarriedOnIntoASecondLoopHessian");
        var gradient = new double[1];
        var hessian = new double[1];
        g(x, n, gradient);
        Check.Close(new[] { 2.0 * (n + 1) * x }, gradient, Check.ClosedFormRelative, 1e-15, "CarriedOnIntoASecondLoop gradient");
        h(x, n, gradient, hessian);
        Check.Close(new[] { 2.0 * (n + 1) * x }, gradient, Check.ClosedFormRelative, 1e-15, "CarriedOnIntoASecondLoop MHessian gradient");
        Check.Close(new[] { 2.0 * (n + 1) }, hessian, Check.ClosedFormRelative, 1e-15, "CarriedOnIntoASecondLoop Hessian");
    }

    private delegate double FInt(double x, int k);

    private delegate double GInt(double x, int k, Span<double> gradient);

    private delegate double HInt(double x, int k, Span<double> gradient, Span<double> hessian);
}
