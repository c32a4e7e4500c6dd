using DerivGen.Tests.Infrastructure;
using Xunit;

namespace DerivGen.Tests.Numerics.Regressions;

public sealed class FoundByRandomTestsFixture : CompiledFixture
{
    // Minimal reproductions of generator bugs found by the randomised differential tests, kept as regressions.
    public const string Source = """
        using System;
        using DerivGen;

        public static partial class Found
        {
            // Bug: loop-carried locals named like the generated span parameters were declared under the same names.
            [Differentiate]
            public static double CarriedLocalsNamedLikeTheSpans(double x)
            {
                double gradient = 0, hessian = 1;
                for (int i = 0; i < 3; i++)
                {
                    gradient += x * i;
                    hessian *= x;
                }

                return gradient + hessian;
            }

            // Bug: loop-invariant code that can throw (Clamp with reversed bounds, a data read) was computed before a loop
            // that runs zero times, so the generated methods threw where the method does not.
            [Differentiate(nameof(x))]
            public static double InvariantThrowingCodeInAnEmptyLoop(double x, double lo, double hi, double[] t, int k, int n)
            {
                double s = x;
                for (int i = 0; i < n; i++)
                {
                    s += Math.Clamp(x, lo, hi) * t[k];
                }

                return s;
            }

            // Bug: Math.Sign, which throws for NaN, was evaluated on the side of a ?: the method does not take.
            [Differentiate(nameof(x))]
            public static double SignOnTheSideNotTaken(double x, double y)
            {
        #pragma warning disable DG0007
                return y > 0 ? Math.Sign(x) * x : 2 * x;
        #pragma warning restore DG0007
            }

            // Bug: a loop-carried local named like a C# keyword was declared unescaped.
            [Differentiate(nameof(x))]
            public static double KeywordNamedCarriedLocal(double x)
            {
                double @double = 1;
                for (int i = 0; i < 3; i++)
                {
                    @double *= x;
                }

                return @double;
            }

            // Bug: a null list of names was an internal error (DG0010); it means no names, as [Differentiate] does.
            [Differentiate(null!)]
            public static double NullNames(double x, double y) => x * y;

            // Bug: a tuple literal with a bare name as an element (inferred element name, so a tuple conversion) was refused.
            [Differentiate]
            public static double TupleWithABareName(double x, double y)
            {
                var (a, b) = (x, y * y);
                return a * b;
            }
        }
        """;

    public FoundByRandomTestsFixture()
        : base(Source)
    {
    }
}

/// <summary>Bug pins found by the randomised differential tests (Randomized/); each test names its bug.</summary>
public sealed class FoundByRandomTestsRegressionTests : IClassFixture<FoundByRandomTestsFixture>
{
    private readonly FoundByRandomTestsFixture _fixture;

    public FoundByRandomTestsRegressionTests(FoundByRandomTestsFixture fixture) => _fixture = fixture;

    /// <summary>
    /// Bug: loop-carried locals named like the generated span parameters (gradient, hessian) were declared under the
    /// same names, so the generated code did not compile. Found by the randomised tests; fixed in ecb8efb.
    /// </summary>
    [Theory]
    [InlineData(0.7)]
    [InlineData(-1.3)]
    public void CarriedLocalsNamedLikeTheSpans(double x)
    {
        // (0 + 1 + 2) x + x³: derivatives 3 + 3x² and 6x (plain calculus).
        Verify.At(Probe.Load(_fixture.Assembly, "Found", "CarriedLocalsNamedLikeTheSpans", 1), new[] { x }, new[] { 3 + (3 * x * x) }, new[] { 6 * x },
            "CarriedLocalsNamedLikeTheSpans");
    }

    /// <summary>
    /// Bug: loop-invariant code that can throw (Clamp with reversed bounds, a data read past the end) was computed ahead
    /// of a loop that runs zero times, so the generated methods threw where the method does not. Found by the randomised
    /// soak run; fixed in 100a536.
    /// </summary>
    [Fact]
    public void InvariantThrowingCodeInAnEmptyLoop()
    {
        var f = _fixture.Assembly.Method<Invariant>("Found", "InvariantThrowingCodeInAnEmptyLoop");
        var g = _fixture.Assembly.Method<InvariantG>("Found", "InvariantThrowingCodeInAnEmptyLoopGradient");
        var h = _fixture.Assembly.Method<InvariantH>("Found", "InvariantThrowingCodeInAnEmptyLoopHessian");
        double[] t = { 2.0 };

        // n = 0: the loop never runs, so neither Clamp(x, 1, 0) (reversed bounds) nor t[5] is evaluated; s = x.
        Assert.Equal(0.3, f(0.3, 1, 0, t, 5, 0));
        var gradient = new double[1];
        var hessian = new double[1];
        Assert.Equal(0.3, g(0.3, 1, 0, t, 5, 0, gradient));
        Assert.Equal(1.0, gradient[0]);
        Assert.Equal(0.3, h(0.3, 1, 0, t, 5, 0, gradient, hessian));
        Assert.Equal(0.0, hessian[0]);

        // n = 3 inside the bounds: s = x + 3·x·t[0], ds/dx = 1 + 3 t[0] (plain calculus).
        Assert.Equal(0.3 + (3 * 0.3 * 2.0), g(0.3, 0, 1, t, 0, 3, gradient), 12);
        Assert.Equal(1 + (3 * 2.0), gradient[0], 12);
    }

    /// <summary>
    /// Bug: a loop-carried local named like a C# keyword (@double) was declared unescaped, so the generated code did not
    /// compile. Found by the randomised and hostile-input runs; fixed in 6d1fca0.
    /// </summary>
    [Theory]
    [InlineData(0.7)]
    [InlineData(-1.3)]
    public void KeywordNamedCarriedLocal(double x)
    {
        // x³: 3x² and 6x (plain calculus).
        Verify.At(Probe.Load(_fixture.Assembly, "Found", "KeywordNamedCarriedLocal", 1), new[] { x }, new[] { 3 * x * x }, new[] { 6 * x }, "KeywordNamedCarriedLocal");
    }

    /// <summary>
    /// Bug: [Differentiate(null!)] was an internal error (DG0010); a null list of names now means no names, as
    /// [Differentiate] does. Filed with the randomised tests' findings; the fixing commit (c764016) does not say how it
    /// was found.
    /// </summary>
    [Theory]
    [InlineData(0.7, 2.5)]
    public void NullNames(double x, double y) =>
        // x y: gradient (y, x), Hessian [[0, 1], [1, 0]] (plain calculus).
        Verify.At(Probe.Load(_fixture.Assembly, "Found", "NullNames", 2), new[] { x, y }, new[] { y, x }, new[] { 0, 1.0, 1.0, 0 }, "NullNames");

    /// <summary>
    /// Bug: Math.Sign, which throws for NaN, was evaluated on the side of a ?: the method does not take, so the generated
    /// method threw ArithmeticException where the method returns NaN. Filed with the randomised tests' findings; fixed in
    /// af313da.
    /// </summary>
    [Fact]
    public void SignOnTheSideNotTaken()
    {
        // y ≤ 0 takes 2x, so Sign(NaN) is never evaluated: value NaN, derivative 2 (the constant factor).
        var g = _fixture.Assembly.Method<SignG>("Found", "SignOnTheSideNotTakenGradient");
        var gradient = new double[1];
        Assert.True(double.IsNaN(g(double.NaN, -1, gradient)));
        Assert.Equal(2.0, gradient[0]);
    }

    private delegate double SignG(double x, double y, System.Span<double> gradient);

    private delegate double Invariant(double x, double lo, double hi, double[] t, int k, int n);

    private delegate double InvariantG(double x, double lo, double hi, double[] t, int k, int n, System.Span<double> gradient);

    private delegate double InvariantH(double x, double lo, double hi, double[] t, int k, int n, System.Span<double> gradient, System.Span<double> hessian);

    /// <summary>
    /// Bug: a tuple literal with a bare name as an element (an inferred element name, so Roslyn inserts a tuple
    /// conversion) was refused with DG0001. Found by the randomised tests; fixed in ecb8efb.
    /// </summary>
    [Theory]
    [InlineData(0.7, 2.5)]
    [InlineData(-1.3, 0.4)]
    public void TupleWithABareName(double x, double y)
    {
        // x y²: gradient (y², 2xy), Hessian [[0, 2y], [2y, 2x]] (plain calculus).
        Verify.At(Probe.Load(_fixture.Assembly, "Found", "TupleWithABareName", 2), new[] { x, y }, new[] { y * y, 2 * x * y },
            new[] { 0, 2 * y, 2 * y, 2 * x }, "TupleWithABareName");
    }
}
