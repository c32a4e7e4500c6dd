using System;
using DerivGen.Tests.Infrastructure;
using Xunit;

namespace DerivGen.Tests.Numerics.Guards;

public sealed class GuardFixture : CompiledFixture
{
    // Checks that throw, as practitioners write them at the top of a method. Invented for these tests.
    public const string Source = """
        using System;
        using System.Linq;
        using DerivGen;

        public static partial class Checked
        {
            [Differentiate(nameof(a), nameof(b))]
            public static double Fit(double a, double b, double[] d)
            {
                ArgumentNullException.ThrowIfNull(d);
                ArgumentOutOfRangeException.ThrowIfNegativeOrZero(b);
                if (d.Length < 2)
                {
                    throw new ArgumentException("need two samples", nameof(d));
                }

                return a * d[0] + b * b * d[1];
            }

            [Differentiate(nameof(w))]
            public static double Norm(double[] w, double scale)
            {
                ArgumentNullException.ThrowIfNull(w);
                ArgumentOutOfRangeException.ThrowIfGreaterThan(scale, 10.0);
                if (!double.IsFinite(scale)) throw new ArgumentOutOfRangeException(nameof(scale), scale, "must be finite");
                return scale * w.Sum(v => v * v);
            }

            [Differentiate(nameof(x))]
            public static double Power(double x, int shape)
            {
                double y;
                switch (shape)
                {
                    case 0:
                        y = x * x;
                        break;
                    case 1:
                        y = x * x * x;
                        break;
                    default:
                        throw new ArgumentOutOfRangeException(nameof(shape), shape, null);
                }

                return y;
            }

            // The last arm throws, inside the loop: the check runs first, where the loop runs at least once.
            [Differentiate(nameof(a))]
            public static double Robust(double a, double[] r, int kind)
            {
                double s = 0;
                for (int i = 0; i < r.Length; i++)
                {
                    double e = a - r[i];
                    s += kind switch
                    {
                        0 => e * e,
                        1 => Math.Sqrt(e * e + 1e-6),
                        _ => throw new ArgumentOutOfRangeException(nameof(kind), kind, "unknown loss"),
                    };
                }

                return s;
            }
        }
        """;

    public GuardFixture()
        : base(Source)
    {
    }
}

/// <summary>
/// Checks that throw (Lowering/BodyLowerer.Throws.cs): every generated method throws the user's exception — same type,
/// ParamName and message — under the same inputs, before it writes any output; where nothing throws, the derivatives
/// are the hand ones (plain calculus).
/// </summary>
public sealed class GuardTests : IClassFixture<GuardFixture>
{
    private readonly GuardFixture _fixture;

    public GuardTests(GuardFixture fixture) => _fixture = fixture;

    private delegate double FitF(double a, double b, double[] d);

    private delegate double FitG(double a, double b, double[] d, Span<double> gradient);

    private delegate double FitH(double a, double b, double[] d, Span<double> gradient, Span<double> hessian);

    private delegate double NormF(double[] w, double scale);

    private delegate double NormG(double[] w, double scale, Span<double> gradient);

    private delegate double NormP(double[] w, double scale, ReadOnlySpan<double> direction, Span<double> gradient, Span<double> product);

    private delegate double NormH(double[] w, double scale, Span<double> gradient, Span<double> hessian);

    private delegate double PowerF(double x, int shape);

    private static void SameException(Action user, params Action[] generated)
    {
        Exception expected = Record.Exception(user) ?? throw new InvalidOperationException("the user's method did not throw");
        foreach (Action call in generated)
        {
            Exception actual = Record.Exception(call) ?? throw new InvalidOperationException("a generated method did not throw " + expected.GetType());
            Assert.Equal(expected.GetType(), actual.GetType());
            Assert.Equal(expected.Message, actual.Message);
            Assert.Equal((expected as ArgumentException)?.ParamName, (actual as ArgumentException)?.ParamName);
        }
    }

    [Theory]
    [InlineData(1.0, 2.0, 2, false)]  // fine
    [InlineData(1.0, 2.0, 0, true)]   // d is null: ArgumentNullException("d")
    [InlineData(1.0, 0.0, 2, false)]  // b = 0: ArgumentOutOfRangeException("b")
    [InlineData(1.0, -1.0, 2, false)] // b < 0
    [InlineData(1.0, double.NaN, 2, false)] // NaN is not ≤ 0: no throw, as in the method
    [InlineData(1.0, 2.0, 1, false)]  // one sample: ArgumentException("d")
    public void EveryGeneratedMethodThrowsWhereTheMethodDoes(double a, double b, int samples, bool isNull)
    {
        double[]? d = isNull ? null : new[] { 0.5, 1.5 }[..samples];
        var f = _fixture.Assembly.Method<FitF>("Checked", "Fit");
        var g = _fixture.Assembly.Method<FitG>("Checked", "FitGradient");
        var h = _fixture.Assembly.Method<FitH>("Checked", "FitHessian");
        var gradient = new[] { double.NaN, double.NaN };
        var hessian = new double[4];
        Array.Fill(hessian, double.NaN);
        if (Record.Exception(() => f(a, b, d!)) is null)
        {
            Assert.Equal(BitConverter.DoubleToInt64Bits(f(a, b, d!)), BitConverter.DoubleToInt64Bits(h(a, b, d!, gradient, hessian)));

            // Plain calculus: f = a·d0 + b²·d1; ∇f = (d0, 2b·d1), ∇²f = [[0, 0], [0, 2·d1]].
            Check.Close(new[] { d![0], 2 * b * d[1] }, gradient, 1e-15, 1e-15, "gradient");
            Check.Close(new[] { 0, 0, 0, 2 * d[1] }, hessian, 1e-15, 1e-15, "Hessian");
            return;
        }

        SameException(() => f(a, b, d!), () => g(a, b, d!, gradient), () => h(a, b, d!, gradient, hessian));
        Assert.All(gradient, v => Assert.True(double.IsNaN(v)));
        Assert.All(hessian, v => Assert.True(double.IsNaN(v)));

        // The user's check comes before the generated span check: a short span still gets the user's exception.
        SameException(() => f(a, b, d!), () => g(a, b, d!, Span<double>.Empty));
    }

    [Fact]
    public void ChecksOnAVectorOfVariablesRunInEveryGeneratedMethodIncludingTheAssembledHessianAndTheProduct()
    {
        var f = _fixture.Assembly.Method<NormF>("Checked", "Norm");
        var g = _fixture.Assembly.Method<NormG>("Checked", "NormGradient");
        var h = _fixture.Assembly.Method<NormH>("Checked", "NormHessian");
        var p = _fixture.Assembly.Method<NormP>("Checked", "NormHessianVectorProduct");
        double[] w = { 1.0, -2.0, 0.5 };
        var gradient = new double[3];
        var hessian = new double[9];
        Assert.Equal(BitConverter.DoubleToInt64Bits(f(w, 2.0)), BitConverter.DoubleToInt64Bits(h(w, 2.0, gradient, hessian)));

        // Plain calculus: f = s·Σ w², ∇f = 2s·w, ∇²f = 2s·I.
        Check.Close(new[] { 4.0, -8.0, 2.0 }, gradient, 1e-15, 1e-15, "gradient");
        Check.Close(new[] { 4.0, 0, 0, 0, 4.0, 0, 0, 0, 4.0 }, hessian, 1e-15, 1e-15, "Hessian");

        foreach ((double[]? vector, double scale) in new (double[]?, double)[] { (null, 1.0), (w, 11.0), (w, double.NaN), (w, double.NegativeInfinity) })
        {
            var untouched = new[] { double.NaN, double.NaN, double.NaN };
            var product = new[] { double.NaN, double.NaN, double.NaN };
            SameException(() => f(vector!, scale), () => g(vector!, scale, untouched), () => h(vector!, scale, untouched, new double[9]),
                () => p(vector!, scale, new double[3], untouched, product));
            Assert.All(untouched, v => Assert.True(double.IsNaN(v)));
            Assert.All(product, v => Assert.True(double.IsNaN(v)));
        }
    }

    [Fact]
    public void ASwitchWhoseDefaultThrowsThrowsTheSameForAValueNoCaseMatches()
    {
        var f = _fixture.Assembly.Method<PowerF>("Checked", "Power");
        var g = _fixture.Assembly.Method<Delegates.PowerG>("Checked", "PowerGradient");
        var h = _fixture.Assembly.Method<Delegates.PowerH>("Checked", "PowerHessian");
        double[] gradient = { double.NaN }, hessian = { double.NaN };
        foreach (int shape in new[] { -1, 2, 7 })
        {
            SameException(() => f(2.0, shape), () => g(2.0, shape, gradient), () => h(2.0, shape, gradient, hessian));
            Assert.True(double.IsNaN(gradient[0]) && double.IsNaN(hessian[0]));
        }

        // Cube: d/dx x³ = 3x², d²/dx² = 6x; square: 2x and 2 (plain calculus).
        Assert.Equal(8.0, h(2.0, 1, gradient, hessian));
        Assert.Equal(12.0, gradient[0]);
        Assert.Equal(12.0, hessian[0]);
        Assert.Equal(4.0, h(2.0, 0, gradient, hessian));
        Assert.Equal(4.0, gradient[0]);
        Assert.Equal(2.0, hessian[0]);
    }

    [Fact]
    public void AThrowingLastArmInALoopThrowsWhereTheLoopEvaluatesIt()
    {
        var f = _fixture.Assembly.Method<RobustF>("Checked", "Robust");
        var h = _fixture.Assembly.Method<RobustH>("Checked", "RobustHessian");
        double[] r = { 1.0, 4.0 };
        var gradient = new[] { double.NaN };
        var hessian = new[] { double.NaN };
        SameException(() => f(2.0, r, 5), () => h(2.0, r, 5, gradient, hessian));
        Assert.True(double.IsNaN(gradient[0]) && double.IsNaN(hessian[0]));

        // No element: the switch is never evaluated, so neither throws.
        Assert.Equal(BitConverter.DoubleToInt64Bits(f(2.0, Array.Empty<double>(), 5)), BitConverter.DoubleToInt64Bits(h(2.0, Array.Empty<double>(), 5, gradient, hessian)));
        Assert.Equal(0.0, gradient[0]);

        // kind 0: f = Σ (a − r)², f' = Σ 2(a − r), f'' = 2n (plain calculus).
        Assert.Equal(BitConverter.DoubleToInt64Bits(f(2.0, r, 0)), BitConverter.DoubleToInt64Bits(h(2.0, r, 0, gradient, hessian)));
        Assert.Equal(2 * (2.0 - 1.0) + 2 * (2.0 - 4.0), gradient[0], 1e-14);
        Assert.Equal(4.0, hessian[0], 1e-14);
    }

    private delegate double RobustF(double a, double[] r, int kind);

    private delegate double RobustH(double a, double[] r, int kind, Span<double> gradient, Span<double> hessian);

    internal static class Delegates
    {
        public delegate double PowerG(double x, int shape, Span<double> gradient);

        public delegate double PowerH(double x, int shape, Span<double> gradient, Span<double> hessian);
    }
}
