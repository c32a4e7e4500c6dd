using System;
using System.Linq;
using DerivGen.Tests.Infrastructure;
using MathNet.Numerics.Differentiation;
using Xunit;

namespace DerivGen.Tests.Numerics.Linq;

public sealed class LinqLoopFixture : CompiledFixture
{
    // LINQ over arrays in its numeric forms, lowered to loops. The scenarios and their numbers are invented for these tests.
    public const string Source = """
        using System;
        using System.Linq;
        using DerivGen;

        public static partial class Fits
        {
            [Differentiate(nameof(a), nameof(b))]
            public static double ZipSum(double a, double b, double[] xs, double[] ys) =>
                xs.Zip(ys, (x, y) => (a * x + b - y) * (a * x + b - y)).Sum();

            [Differentiate(nameof(a))]
            public static double SelectSum(double a, double[] xs) => xs.Select(x => Math.Exp(a * x)).Sum();

            [Differentiate(nameof(a), nameof(b))]
            public static double ZipTuples(double a, double b, double[] xs, double[] ys) =>
                xs.Zip(ys).Sum(p =>
                {
                    double r = a * p.First + b - p.Second;
                    return r * r;
                });

            [Differentiate(nameof(a))]
            public static double RangeSum(double a, double[] xs, int n) => Enumerable.Range(1, n).Sum(i => a * a * xs[i - 1] / i);

            [Differentiate(nameof(a))]
            public static double AverageOf(double a, double[] xs) => xs.Average(x => a * x);

            [Differentiate(nameof(a))]
            public static double MaxOf(double a, double[] xs) => xs.Max(x => a * x);

            [Differentiate(nameof(a))]
            public static double MinOf(double a, double[] xs) => xs.Min(x => a * x);

            [Differentiate(nameof(a), nameof(b))]
            public static double WorstPair(double a, double b, double[] xs, double[] ys) =>
                xs.Zip(ys, (x, y) => (a * x + b - y) * (a * x + b - y)).Max();
        }

        public static partial class Written
        {
            [Differentiate]
            public static double Penalty(double w0, double w1) => new[] { w0, w1 }.Select(v => v * v).Sum() + new[] { w0, 2 * w1, 1.0 }.Max();
        }

        public static partial class Vectors
        {
            [Differentiate(nameof(w))]
            public static double Sum(double[] w) => w.Sum();

            [Differentiate(nameof(w))]
            public static double Average(double[] w) => w.Average();

            [Differentiate(nameof(w))]
            public static double Max(double[] w) => w.Max();

            [Differentiate(nameof(w))]
            public static double Min(double[] w) => w.Min();

            [Differentiate(nameof(w))]
            public static double SquaresMean(double[] w) => w.Select(v => v * v).Average();
        }
        """;

    public LinqLoopFixture()
        : base(Source)
    {
    }
}

/// <summary>
/// LINQ lowered to loops (Lowering/BodyLowerer.Linq.cs): values bit for bit with the user's LINQ on random arrays (with
/// NaN, ±0 and empty arrays, where LINQ throws and the generated methods throw the same), gradients and Hessians against
/// hand derivatives (plain calculus) and MathNet's central differences, and no allocation per generated gradient call.
/// </summary>
public sealed class LinqLoopTests : IClassFixture<LinqLoopFixture>
{
    private readonly LinqLoopFixture _fixture;

    public LinqLoopTests(LinqLoopFixture fixture) => _fixture = fixture;

    private delegate double Pair(double a, double b, double[] xs, double[] ys);

    private delegate double PairG(double a, double b, double[] xs, double[] ys, Span<double> gradient);

    private delegate double PairH(double a, double b, double[] xs, double[] ys, Span<double> gradient, Span<double> hessian);

    private delegate double One(double a, double[] xs);

    private delegate double OneG(double a, double[] xs, Span<double> gradient);

    private delegate double OneH(double a, double[] xs, Span<double> gradient, Span<double> hessian);

    private delegate double RangeF(double a, double[] xs, int n);

    private delegate double RangeG(double a, double[] xs, int n, Span<double> gradient);

    private delegate double Vec(double[] w);

    private delegate double VecG(double[] w, Span<double> gradient);

    private static long Bits(double v) => BitConverter.DoubleToInt64Bits(v);

    /// <summary>Random arrays with special values: NaN, +0, −0 and magnitudes over 17 decades.</summary>
    private static double[] RandomArray(Random random, int length, bool specials)
    {
        var a = new double[length];
        for (int i = 0; i < length; i++)
        {
            a[i] = (random.NextDouble() - 0.5) * Math.Pow(10, random.Next(-6, 11));
            int r = specials ? random.Next(30) : 99;
            a[i] = r switch { 0 => double.NaN, 1 => -0.0, 2 => 0.0, _ => a[i] };
        }

        return a;
    }

    [Theory]
    [InlineData(1.3, 0.4)]
    [InlineData(-0.7, 2.5)]
    public void ZipSumGradientAndHessianByHand(double a, double b)
    {
        double[] xs = { 0.5, 1.25, 2.0, 3.5, 4.0 };
        double[] ys = { 1.1, 2.0, 2.9, 5.2 }; // shorter: Zip stops at 4 pairs
        var f = _fixture.Assembly.Method<Pair>("Fits", "ZipSum");
        var h = _fixture.Assembly.Method<PairH>("Fits", "ZipSumHessian");
        var gradient = new double[2];
        var hessian = new double[4];
        Assert.Equal(Bits(f(a, b, xs, ys)), Bits(h(a, b, xs, ys, gradient, hessian)));

        // Plain calculus: f = Σ r², r = a·x + b − y over the 4 pairs; ∇f = Σ 2r·(x, 1), ∇²f = Σ 2·[[x², x], [x, 1]].
        double ga = 0, gb = 0, haa = 0, hab = 0, hbb = 0;
        for (int i = 0; i < 4; i++)
        {
            double r = a * xs[i] + b - ys[i];
            ga += 2 * r * xs[i];
            gb += 2 * r;
            haa += 2 * xs[i] * xs[i];
            hab += 2 * xs[i];
            hbb += 2;
        }

        Check.Close(new[] { ga, gb }, gradient, 1e-13, 1e-13, "ZipSum gradient");
        Check.Close(new[] { haa, hab, hab, hbb }, hessian, 1e-13, 1e-13, "ZipSum Hessian");
    }

    [Fact]
    public void ZipOfTuplesWithABlockLambdaMatchesTheSelectorForm()
    {
        double[] xs = { 0.5, 1.25, 2.0 };
        double[] ys = { 1.1, 2.0, 2.9, 4.4 };
        var f = _fixture.Assembly.Method<Pair>("Fits", "ZipTuples");
        var g = _fixture.Assembly.Method<PairG>("Fits", "ZipTuplesGradient");
        var gradient = new double[2];
        Assert.Equal(Bits(f(0.8, -0.3, xs, ys)), Bits(g(0.8, -0.3, xs, ys, gradient)));
        double ga = 0, gb = 0;
        for (int i = 0; i < 3; i++)
        {
            double r = 0.8 * xs[i] - 0.3 - ys[i];
            ga += 2 * r * xs[i];
            gb += 2 * r;
        }

        Check.Close(new[] { ga, gb }, gradient, 1e-13, 1e-13, "ZipTuples gradient (plain calculus)");
    }

    [Theory]
    [InlineData(0.3)]
    [InlineData(-1.2)]
    public void SelectSumAgainstHandAndMathNet(double a)
    {
        double[] xs = { -0.4, 0.1, 0.9, 1.6 };
        var f = _fixture.Assembly.Method<One>("Fits", "SelectSum");
        var h = _fixture.Assembly.Method<OneH>("Fits", "SelectSumHessian");
        var gradient = new double[1];
        var hessian = new double[1];
        Assert.Equal(Bits(f(a, xs)), Bits(h(a, xs, gradient, hessian)));

        // Plain calculus: d/da Σ e^(a·x) = Σ x·e^(a·x), d²/da² = Σ x²·e^(a·x).
        Check.Close(xs.Select(x => x * Math.Exp(a * x)).Sum(), gradient[0], 1e-13, 1e-15, "SelectSum gradient");
        Check.Close(xs.Select(x => x * x * Math.Exp(a * x)).Sum(), hessian[0], 1e-13, 1e-15, "SelectSum Hessian");
        double numerical = new NumericalDerivative().EvaluateDerivative(v => f(v, xs), a, 1);
        Check.Close(numerical, gradient[0], Check.FiniteDifferenceGradientRelative, 1e-9, "SelectSum against MathNet");
    }

    [Fact]
    public void RangeSumReadsAndThrowsAsEnumerableRangeDoes()
    {
        double[] xs = { 2.0, 3.0, 5.0 };
        var f = _fixture.Assembly.Method<RangeF>("Fits", "RangeSum");
        var g = _fixture.Assembly.Method<RangeG>("Fits", "RangeSumGradient");
        var gradient = new double[1];
        Assert.Equal(Bits(f(0.7, xs, 3)), Bits(g(0.7, xs, 3, gradient)));

        // Plain calculus: f = a²·Σᵢ xs[i−1]/i, f' = 2a·Σ xs[i−1]/i = 2·0.7·(2 + 3/2 + 5/3).
        Check.Close(2 * 0.7 * (2 + 3.0 / 2 + 5.0 / 3), gradient[0], 1e-14, 1e-15, "RangeSum gradient");

        // A negative count: Enumerable.Range's ArgumentOutOfRangeException (ParamName "count"); the gradient is untouched.
        var user = Assert.Throws<ArgumentOutOfRangeException>(() => f(0.7, xs, -1));
        gradient[0] = double.NaN;
        var generated = Assert.Throws<ArgumentOutOfRangeException>(() => g(0.7, xs, -1, gradient));
        Assert.Equal(user.ParamName, generated.ParamName);
        Assert.Equal(user.Message, generated.Message);
        Assert.True(double.IsNaN(gradient[0]));

        // A count past the data: the read throws IndexOutOfRangeException in both.
        Assert.Throws<IndexOutOfRangeException>(() => f(0.7, xs, 4));
        Assert.Throws<IndexOutOfRangeException>(() => g(0.7, xs, 4, new double[1]));
    }

    [Fact]
    public void ValuesAreBitForBitWithLinqOnRandomArrays()
    {
        var random = new Random(20261205);
        var sum = _fixture.Assembly.Method<VecG>("Vectors", "SumGradient");
        var average = _fixture.Assembly.Method<VecG>("Vectors", "AverageGradient");
        var max = _fixture.Assembly.Method<VecG>("Vectors", "MaxGradient");
        var min = _fixture.Assembly.Method<VecG>("Vectors", "MinGradient");
        var squaresMean = _fixture.Assembly.Method<VecG>("Vectors", "SquaresMeanGradient");
        var averageOf = _fixture.Assembly.Method<OneG>("Fits", "AverageOfGradient");
        var maxOf = _fixture.Assembly.Method<OneG>("Fits", "MaxOfGradient");
        var minOf = _fixture.Assembly.Method<OneG>("Fits", "MinOfGradient");
        int compared = 0;
        for (int trial = 0; trial < 3000; trial++)
        {
            double[] w = RandomArray(random, random.Next(1, 80), specials: trial % 2 == 0);
            var gradient = new double[w.Length];
            var one = new double[1];
            Assert.Equal(Bits(w.Sum()), Bits(sum(w, gradient)));
            Assert.Equal(Bits(w.Average()), Bits(average(w, gradient)));
            Assert.Equal(Bits(w.Max()), Bits(max(w, gradient)));
            Assert.Equal(Bits(w.Min()), Bits(min(w, gradient)));
            Assert.Equal(Bits(w.Select(v => v * v).Average()), Bits(squaresMean(w, gradient)));
            Assert.Equal(Bits(w.Average(x => 1.0 * x)), Bits(averageOf(1.0, w, one)));
            Assert.Equal(Bits(w.Max(x => -1.5 * x)), Bits(maxOf(-1.5, w, one)));
            Assert.Equal(Bits(w.Min(x => 0.5 * x)), Bits(minOf(0.5, w, one)));
            compared += 8;
        }

        // The cases where the two means differ: the array's own Average sums from +0.0, the selector form from the first element.
        Assert.Equal(Bits(0.0), Bits(average(new[] { -0.0 }, new double[1])));
        Assert.Equal(Bits(-0.0), Bits(averageOf(1.0, new[] { -0.0 }, new double[1])));
        Assert.Equal(Bits(-0.0), Bits(max(new[] { -0.0, 0.0 }, new double[2])));
        Assert.Equal(Bits(0.0), Bits(min(new[] { 0.0, -0.0 }, new double[2])));
        Assert.True(compared > 20000);
    }

    [Fact]
    public void AnEmptySourceThrowsLinqsExceptionAndWritesNothing()
    {
        var empty = Array.Empty<double>();
        foreach (string name in new[] { "Average", "Max", "Min", "SquaresMean" })
        {
            var f = _fixture.Assembly.Method<Vec>("Vectors", name);
            var g = _fixture.Assembly.Method<VecG>("Vectors", name + "Gradient");
            var user = Assert.Throws<InvalidOperationException>(() => f(empty));
            var generated = Assert.Throws<InvalidOperationException>(() => g(empty, Span<double>.Empty));
            Assert.Equal(user.Message, generated.Message);
        }

        foreach (string name in new[] { "AverageOf", "MaxOf", "MinOf" })
        {
            var f = _fixture.Assembly.Method<One>("Fits", name);
            var h = _fixture.Assembly.Method<OneH>("Fits", name + "Hessian");
            var gradient = new[] { double.NaN };
            var hessian = new[] { double.NaN };
            var user = Assert.Throws<InvalidOperationException>(() => f(2.0, empty));
            var generated = Assert.Throws<InvalidOperationException>(() => h(2.0, empty, gradient, hessian));
            Assert.Equal(user.Message, generated.Message);
            Assert.True(double.IsNaN(gradient[0]) && double.IsNaN(hessian[0]), name + " wrote an output before throwing");
        }

        // Zip of two sources, one empty: Max throws LINQ's exception, nothing written.
        var worst = _fixture.Assembly.Method<Pair>("Fits", "WorstPair");
        var worstH = _fixture.Assembly.Method<PairH>("Fits", "WorstPairHessian");
        var pairGradient = new[] { double.NaN, double.NaN };
        var userZip = Assert.Throws<InvalidOperationException>(() => worst(1.0, 2.0, new[] { 1.0 }, empty));
        var generatedZip = Assert.Throws<InvalidOperationException>(() => worstH(1.0, 2.0, new[] { 1.0 }, empty, pairGradient, new double[4]));
        Assert.Equal(userZip.Message, generatedZip.Message);
        Assert.True(double.IsNaN(pairGradient[0]) && double.IsNaN(pairGradient[1]));

        // The largest of (a·x + b − y)² is at the pair (3, 1) for a = 1, b = 0.5: r = 2.5, ∇ = 2r·(x, 1) (plain calculus).
        Assert.Equal(6.25, worstH(1.0, 0.5, new[] { 1.0, 3.0, 7.0 }, new[] { 1.0, 1.0 }, pairGradient, new double[4]));
        Assert.Equal(new[] { 15.0, 5.0 }, pairGradient);

        // Sum of nothing is 0 (no exception), as in LINQ.
        Assert.Equal(Bits(0.0), Bits(_fixture.Assembly.Method<VecG>("Vectors", "SumGradient")(empty, Span<double>.Empty)));
    }

    [Fact]
    public void MaxAndMinDifferentiateTheSelectedElement()
    {
        // Plain calculus: away from ties the maximum is one element, so its gradient is 1 there and 0 elsewhere; the
        // mean's gradient is 1/n everywhere; Σ w's is 1 everywhere; the mean of squares' is 2w/n.
        double[] w = { 0.5, 3.0, -2.0, 1.0 };
        var g = new double[4];
        _fixture.Assembly.Method<VecG>("Vectors", "MaxGradient")(w, g);
        Assert.Equal(new[] { 0.0, 1.0, 0.0, 0.0 }, g);
        _fixture.Assembly.Method<VecG>("Vectors", "MinGradient")(w, g);
        Assert.Equal(new[] { 0.0, 0.0, 1.0, 0.0 }, g);
        _fixture.Assembly.Method<VecG>("Vectors", "AverageGradient")(w, g);
        Assert.Equal(new[] { 0.25, 0.25, 0.25, 0.25 }, g);
        _fixture.Assembly.Method<VecG>("Vectors", "SumGradient")(w, g);
        Assert.Equal(new[] { 1.0, 1.0, 1.0, 1.0 }, g);
        _fixture.Assembly.Method<VecG>("Vectors", "SquaresMeanGradient")(w, g);
        Check.Close(w.Select(v => 2 * v / 4).ToArray(), g, 1e-15, 1e-15, "mean of squares gradient");

        // max/min of a·x: d/da = the selected x (3.0 for a > 0, where the max of a·x is at x = 3).
        var one = new double[1];
        _fixture.Assembly.Method<OneG>("Fits", "MaxOfGradient")(2.0, w, one);
        Assert.Equal(3.0, one[0]);
        _fixture.Assembly.Method<OneG>("Fits", "MinOfGradient")(2.0, w, one);
        Assert.Equal(-2.0, one[0]);
    }

    private delegate double Two(double w0, double w1);

    private delegate double TwoH(double w0, double w1, Span<double> gradient, Span<double> hessian);

    [Theory]
    [InlineData(3.0, 1.0, 7.0, 2.0)]  // max(w0, 2w1, 1) = w0: ∇ = 2w + (1, 0)
    [InlineData(0.5, 1.0, 1.0, 4.0)]  // max = 2w1: ∇ = 2w + (0, 2)
    [InlineData(0.25, 0.25, 0.5, 0.5)] // max = 1 (a constant): ∇ = 2w
    public void ArraysWrittenInTheCall(double w0, double w1, double g0, double g1)
    {
        var f = _fixture.Assembly.Method<Two>("Written", "Penalty");
        var h = _fixture.Assembly.Method<TwoH>("Written", "PenaltyHessian");
        var gradient = new double[2];
        var hessian = new double[4];
        double linq = new[] { w0, w1 }.Select(v => v * v).Sum() + new[] { w0, 2 * w1, 1.0 }.Max();
        Assert.Equal(BitConverter.DoubleToInt64Bits(linq), BitConverter.DoubleToInt64Bits(f(w0, w1)));
        Assert.Equal(BitConverter.DoubleToInt64Bits(linq), BitConverter.DoubleToInt64Bits(h(w0, w1, gradient, hessian)));

        // Plain calculus: ∇(w0² + w1²) = 2w, ∇² = 2I; the maximum adds the gradient of the element selected.
        Assert.Equal(new[] { g0, g1 }, gradient);
        Assert.Equal(new[] { 2.0, 0.0, 0.0, 2.0 }, hessian);
    }

    [Fact]
    public void TheGeneratedGradientAllocatesNothingWhereTheUsersLinqDoes()
    {
        double[] xs = { 0.5, 1.25, 2.0, 3.5 };
        double[] ys = { 1.1, 2.0, 2.9, 5.2 };
        var f = _fixture.Assembly.Method<Pair>("Fits", "ZipSum");
        var g = _fixture.Assembly.Method<PairG>("Fits", "ZipSumGradient");
        var tuples = _fixture.Assembly.Method<PairG>("Fits", "ZipTuplesGradient");
        var gradient = new double[2];
        double sink = 0;
        for (int i = 0; i < 10; i++)
        {
            sink += f(1.0, 0.5, xs, ys) + g(1.0, 0.5, xs, ys, gradient) + tuples(1.0, 0.5, xs, ys, gradient);
        }

        long before = GC.GetAllocatedBytesForCurrentThread();
        for (int i = 0; i < 1000; i++)
        {
            sink += g(1.0, 0.5, xs, ys, gradient) + tuples(1.0, 0.5, xs, ys, gradient);
        }

        long generated = GC.GetAllocatedBytesForCurrentThread() - before;
        before = GC.GetAllocatedBytesForCurrentThread();
        sink += f(1.0, 0.5, xs, ys);
        long user = GC.GetAllocatedBytesForCurrentThread() - before;
        Assert.Equal(0, generated);
        Assert.True(user > 0, "the user's LINQ was expected to allocate (its enumerators and delegate)");
        Assert.False(double.IsNaN(sink));
    }
}
