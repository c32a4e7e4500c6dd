using System;
using DerivGen.Tests.Infrastructure;
using Xunit;

namespace DerivGen.Tests.Numerics.Branches;

public sealed class PatternFixture : CompiledFixture
{
    // Switch expressions, switch statements with relational/logical/constant/discard patterns and guards, and `is`
    // patterns, on variables (kinks, DG0007, intended here) and on data.
    public const string Source = """
        using System;
        using DerivGen;

        namespace Branches;

        public static partial class Patterns
        {
        #pragma warning disable DG0007 // the pieces switch on x on purpose
            // Four pieces chosen by relational, and, not and discard patterns; NaN fails < and >=, and matches not (> 5).
            [Differentiate]
            public static double Piecewise(double x, double y) => x switch
            {
                < -1 => -x * y,
                >= -1 and < 1 => x * x * y,
                not (> 5) => Math.Exp(x) + y,
                _ => Math.Sin(x) * y,
            };

            // An `is` pattern in an if, and the constant pattern 0.0 (which -0.0 matches, as == does).
            [Differentiate]
            public static double Window(double x, double y)
            {
                double f;
                if (x is > 0 and < 1)
                {
                    f = x * x * y;
                }
                else
                {
                    f = x is 0.0 ? y * y : x * y;
                }

                return f;
            }

            // A switch statement on a computed value (kept in a double local) with relational cases.
            [Differentiate]
            public static double Product(double x, double y)
            {
                double f;
                switch (x * y)
                {
                    case > 1:
                        f = x * x;
                        break;
                    case < -1:
                        f = y * y;
                        break;
                    default:
                        f = x + y;
                        break;
                }

                return f;
            }

            // float: a ramp continued by its tangent line (value and slope continuous at 1).
            [Differentiate]
            public static float Ramp(float x) => x switch
            {
                < 0f => 0f,
                < 1f => x * x,
                _ => 2f * x - 1f,
            };
        #pragma warning restore DG0007

            // A switch expression on data (an int): constant, or, relational patterns and a guard.
            [Differentiate]
            public static double ByMode(double x, double y, int k) => k switch
            {
                0 => x * y,
                1 or 2 => x + y * y,
                > 2 when k < 10 => x * x,
                _ => y,
            };

            // A switch statement over a data value with relational cases, a guard, the NaN constant pattern and default.
            [Differentiate(nameof(a), nameof(b))]
            public static double Banded(double a, double b, double[] t)
            {
                double s = 0;
                for (int i = 0; i < t.Length; i++)
                {
                    switch (t[i])
                    {
                        case < 0:
                            s += a * t[i];
                            break;
                        case >= 0 and < 1 when i > 0:
                            s += a * b * t[i];
                            break;
                        case double.NaN:
                            break;
                        default:
                            s += b * b;
                            break;
                    }
                }

                return s;
            }

            // Constant case labels only, one of them NaN (C# matches NaN with double.IsNaN, not ==).
            [Differentiate(nameof(x))]
            public static double NaNLabel(double x, double c)
            {
                double f;
                switch (c)
                {
                    case 1.0:
                        f = x * x;
                        break;
                    case double.NaN:
                        f = 5 * x;
                        break;
                    default:
                        f = x;
                        break;
                }

                return f;
            }

            // A bool-valued switch expression and an `is` pattern kept in bool locals.
            [Differentiate]
            public static double BoolArms(double x, int k)
            {
                bool big = k switch { > 2 => true, _ => false };
                bool odd = k is 1 or 3 or 5;
                return big ? 2 * x : odd ? x * x * x : x * x;
            }

            // An arm's value is evaluated only where the arm is selected: t[i] out of range is never read.
            [Differentiate]
            public static double GuardedRead(double x, double[] t, int i) => i switch
            {
                < 0 => x,
                _ when i >= t.Length => 2 * x,
                _ => x * t[i],
            };
        }
        """;

    public PatternFixture()
        : base(Source)
    {
    }
}

/// <summary>
/// Patterns and switch expressions lowered to conditionals: the derivative of the arm taken (plain calculus, per
/// piece, derived in the comments), the value bit for bit against the user's method (also at NaN and −0.0, where the
/// patterns' IEEE semantics matter), an exactly symmetric Hessian and MathNet's finite differences away from the kinks.
/// </summary>
public sealed class PatternTests : IClassFixture<PatternFixture>
{
    private const string Type = "Branches.Patterns";
    private readonly PatternFixture _fixture;

    public PatternTests(PatternFixture fixture) => _fixture = fixture;

    private delegate double ModeF(double x, double y, int k);

    private delegate double ModeG(double x, double y, int k, Span<double> g);

    private delegate double ModeH(double x, double y, int k, Span<double> g, Span<double> h);

    private delegate double BandF(double a, double b, double[] t);

    private delegate double BandG(double a, double b, double[] t, Span<double> g);

    private delegate double BandH(double a, double b, double[] t, Span<double> g, Span<double> h);

    private delegate double G1c(double x, double c, Span<double> g);

    private delegate double H1c(double x, double c, Span<double> g, Span<double> h);

    private delegate double BoolF(double x, int k);

    private delegate double BoolG(double x, int k, Span<double> g);

    private delegate double BoolH(double x, int k, Span<double> g, Span<double> h);

    private delegate double ReadF(double x, double[] t, int i);

    private delegate double ReadG(double x, double[] t, int i, Span<double> g);

    private delegate double ReadH(double x, double[] t, int i, Span<double> g, Span<double> h);

    [Theory]
    [InlineData(-2.5, 1.5)] // x < −1:  f = −xy,      ∇f = (−y, −x),        H = [[0, −1], [−1, 0]]
    [InlineData(0.5, -0.7)] // −1 ≤ x < 1: f = x²y,   ∇f = (2xy, x²),       H = [[2y, 2x], [2x, 0]]
    [InlineData(3.0, 0.4)]  // 1 ≤ x ≤ 5: f = eˣ + y, ∇f = (eˣ, 1),         H = [[eˣ, 0], [0, 0]]
    [InlineData(6.5, 1.2)]  // x > 5:  f = y sin x,   ∇f = (y cos x, sin x), H = [[−y sin x, cos x], [cos x, 0]]
    public void PiecewiseSwitchExpressionIsTheArmTaken(double x, double y)
    {
        (double[] g, double[] h) = x switch
        {
            < -1 => (new[] { -y, -x }, new[] { 0.0, -1, -1, 0 }),
            < 1 => (new[] { 2 * x * y, x * x }, new[] { 2 * y, 2 * x, 2 * x, 0 }),
            <= 5 => (new[] { Math.Exp(x), 1.0 }, new[] { Math.Exp(x), 0, 0, 0 }),
            _ => (new[] { y * Math.Cos(x), Math.Sin(x) }, new[] { -y * Math.Sin(x), Math.Cos(x), Math.Cos(x), 0 }),
        };
        Verify.At(Probe.Load(_fixture.Assembly, Type, "Piecewise", 2), new[] { x, y }, g, h, "Piecewise");
    }

    [Theory]
    [InlineData(0.25, 2.0, false)] // inside (0, 1): f = x²y, ∇f = (2xy, x²), H = [[2y, 2x], [2x, 0]]
    [InlineData(1.5, 2.0, false)]  // outside, x ≠ 0: f = xy, ∇f = (y, x),   H = [[0, 1], [1, 0]]
    [InlineData(0.0, 3.0, false)]  // x is 0.0:  f = y²,  ∇f = (0, 2y),      H = [[0, 0], [0, 2]]
    [InlineData(0.0, 3.0, true)]   // −0.0 matches the constant pattern 0.0 (C#: x == 0.0), same piece
    public void IsPatternsTakeTheBranchCSharpTakes(double x, double y, bool negate)
    {
        x = negate ? -x : x;
        (double[] g, double[] h) = x switch
        {
            > 0 and < 1 => (new[] { 2 * x * y, x * x }, new[] { 2 * y, 2 * x, 2 * x, 0 }),
            0.0 => (new[] { 0.0, 2 * y }, new[] { 0.0, 0, 0, 2 }),
            _ => (new[] { y, x }, new[] { 0.0, 1, 1, 0 }),
        };
        Verify.At(Probe.Load(_fixture.Assembly, Type, "Window", 2), new[] { x, y }, g, h, "Window", oracle: x != 0);
    }

    [Theory]
    [InlineData(double.NaN, 1.5)]
    [InlineData(double.PositiveInfinity, 1.5)]
    [InlineData(double.NegativeInfinity, 1.5)]
    [InlineData(-1.0, 1.5)]
    [InlineData(1.0, 1.5)]
    [InlineData(5.0, 1.5)]
    [InlineData(0.0, 1.5)]
    public void ValueIsBitForBitAtTheEdgesOfThePatterns(double x, double y)
    {
        ValueIsBitForBitAt(x, y);
        ValueIsBitForBitAt(-x, y); // −0.0, and the mirrored point
    }

    private void ValueIsBitForBitAt(double x, double y)
    {
        foreach (string method in new[] { "Piecewise", "Window" })
        {
            Probe p = Probe.Load(_fixture.Assembly, Type, method, 2);
            double value = p.Value(new[] { x, y });
            Check.SameBits(value, p.Gradient(new[] { x, y }, new double[2]), $"{method}({x}, {y}): MGradient's value");
            Check.SameBits(value, p.Hessian!(new[] { x, y }, new double[2], new double[4]), $"{method}({x}, {y}): MHessian's value");
        }
    }

    [Theory]
    [InlineData(2.0, 1.0)]  // xy > 1:  f = x²,    ∇f = (2x, 0),  H = [[2, 0], [0, 0]]
    [InlineData(-2.0, 1.5)] // xy < −1: f = y²,    ∇f = (0, 2y),  H = [[0, 0], [0, 2]]
    [InlineData(0.5, 0.5)]  // default: f = x + y, ∇f = (1, 1),   H = 0 (plain calculus)
    public void SwitchStatementOnAComputedValue(double x, double y)
    {
        (double[] g, double[] h) = (x * y) switch
        {
            > 1 => (new[] { 2 * x, 0.0 }, new[] { 2.0, 0, 0, 0 }),
            < -1 => (new[] { 0.0, 2 * y }, new[] { 0.0, 0, 0, 2 }),
            _ => (new[] { 1.0, 1.0 }, new[] { 0.0, 0, 0, 0 }),
        };
        Verify.At(Probe.Load(_fixture.Assembly, Type, "Product", 2), new[] { x, y }, g, h, "Product");
    }

    [Theory]
    [InlineData(-0.5f, 0f)]   // f = 0:       f' = 0
    [InlineData(0.75f, 1.5f)] // f = x²:      f' = 2x (plain calculus)
    [InlineData(3f, 2f)]      // f = 2x − 1:  f' = 2
    [InlineData(float.NaN, 0f)] // NaN fails < 0 and < 1: the discard arm, f = 2x − 1 = NaN, f' = 2
    public void FloatSwitchExpression(float x, float derivative)
    {
        var f = _fixture.Assembly.Method<F1f>(Type, "Ramp");
        var g = _fixture.Assembly.Method<G1f>(Type, "RampGradient");
        var h = _fixture.Assembly.Method<H1f>(Type, "RampHessian");
        var gradient = new float[1];
        var hessian = new float[1];
        float value = f(x);
        Check.SameBits(value, g(x, gradient), "RampGradient's value");
        Check.SameBits(value, h(x, new float[1], hessian), "RampHessian's value");
        Assert.Equal(float.IsNaN(x) ? 2f : derivative, gradient[0]);
        Assert.Equal(x is >= 0f and < 1f ? 2f : 0f, hessian[0]); // f'' = 2 on the square piece, 0 elsewhere
    }

    [Theory]
    [InlineData(0)]  // f = xy:     ∇f = (y, x),   H = [[0, 1], [1, 0]]
    [InlineData(2)]  // f = x + y²: ∇f = (1, 2y),  H = [[0, 0], [0, 2]]
    [InlineData(7)]  // f = x²:     ∇f = (2x, 0),  H = [[2, 0], [0, 0]]
    [InlineData(12)] // f = y (the guard k < 10 fails): ∇f = (0, 1), H = 0
    [InlineData(-3)] // f = y (no arm but the discard)
    public void SwitchExpressionOnDataSelectsTheArm(int k)
    {
        const double x = 1.3, y = -0.6;
        (double[] g, double[] h) = k switch
        {
            0 => (new[] { y, x }, new[] { 0.0, 1, 1, 0 }),
            1 or 2 => (new[] { 1.0, 2 * y }, new[] { 0.0, 0, 0, 2 }),
            > 2 and < 10 => (new[] { 2 * x, 0.0 }, new[] { 2.0, 0, 0, 0 }),
            _ => (new[] { 0.0, 1.0 }, new[] { 0.0, 0, 0, 0 }),
        };
        var f = _fixture.Assembly.Method<ModeF>(Type, "ByMode");
        var gm = _fixture.Assembly.Method<ModeG>(Type, "ByModeGradient");
        var hm = _fixture.Assembly.Method<ModeH>(Type, "ByModeHessian");
        Probe p = Probe.Of((F2)((a, b) => f(a, b, k)), (G2)((a, b, gr) => gm(a, b, k, gr)), (H2)((a, b, gr, he) => hm(a, b, k, gr, he)));
        Verify.At(p, new[] { x, y }, g, h, $"ByMode k = {k}");
    }

    [Fact]
    public void SwitchStatementWithRelationalCasesGuardsAndNaN()
    {
        // s = a·Σ₁ t + a·b·Σ₂ t + b²·m, where Σ₁ runs over t < 0, Σ₂ over 0 ≤ t < 1 with i > 0, m counts the rest
        // except NaN (plain calculus): ∇s = (Σ₁ + b Σ₂, a Σ₂ + 2 b m), H = [[0, Σ₂], [Σ₂, 2m]].
        double[] t = { 0.5, -1.25, 0.75, double.NaN, 2.0, 0.25, -0.5, 1.0 }; // invented data
        double sum1 = -1.25 - 0.5, sum2 = 0.75 + 0.25;
        const int m = 3; // t[0] = 0.5 (guard i > 0 fails), 2.0, 1.0
        const double a = 0.8, b = -1.7;
        var f = _fixture.Assembly.Method<BandF>(Type, "Banded");
        var g = _fixture.Assembly.Method<BandG>(Type, "BandedGradient");
        var h = _fixture.Assembly.Method<BandH>(Type, "BandedHessian");
        Probe p = Probe.Of((F2)((x0, x1) => f(x0, x1, t)), (G2)((x0, x1, gr) => g(x0, x1, t, gr)), (H2)((x0, x1, gr, he) => h(x0, x1, t, gr, he)));
        Verify.At(p, new[] { a, b }, new[] { sum1 + (b * sum2), (a * sum2) + (2 * b * m) }, new[] { 0, sum2, sum2, 2.0 * m }, "Banded", closedFormAbsolute: 1e-14);
    }

    [Theory]
    [InlineData(1.0, 2 * 1.5, 2.0)]      // f = x²: f' = 2x, f'' = 2
    [InlineData(double.NaN, 5.0, 0.0)]   // f = 5x: f' = 5
    [InlineData(2.0, 1.0, 0.0)]          // f = x:  f' = 1
    public void ConstantNaNCaseLabelMatchesNaN(double c, double derivative, double second)
    {
        var f = _fixture.Assembly.Method<F2>(Type, "NaNLabel");
        var g = _fixture.Assembly.Method<G1c>(Type, "NaNLabelGradient");
        var h = _fixture.Assembly.Method<H1c>(Type, "NaNLabelHessian");
        Probe p = Probe.Of((F1)(x => f(x, c)), (G1)((x, gr) => g(x, c, gr)), (H1)((x, gr, he) => h(x, c, gr, he)));
        Verify.At(p, new[] { 1.5 }, new[] { derivative }, new[] { second }, $"NaNLabel c = {c}");
    }

    [Theory]
    [InlineData(4, 2.0, 0.0)]            // big:  f = 2x, f' = 2, f'' = 0
    [InlineData(1, 3 * 1.5 * 1.5, 9.0)]  // odd:  f = x³, f' = 3x², f'' = 6x (plain calculus)
    [InlineData(0, 2 * 1.5, 2.0)]        // else: f = x², f' = 2x, f'' = 2
    public void BoolValuedSwitchExpressionAndIsPattern(int k, double derivative, double second)
    {
        var f = _fixture.Assembly.Method<BoolF>(Type, "BoolArms");
        var g = _fixture.Assembly.Method<BoolG>(Type, "BoolArmsGradient");
        var h = _fixture.Assembly.Method<BoolH>(Type, "BoolArmsHessian");
        Probe p = Probe.Of((F1)(x => f(x, k)), (G1)((x, gr) => g(x, k, gr)), (H1)((x, gr, he) => h(x, k, gr, he)));
        Verify.At(p, new[] { 1.5 }, new[] { derivative }, new[] { second }, $"BoolArms k = {k}");
    }

    [Theory]
    [InlineData(-1, 1.0)]   // f = x: derivative 1
    [InlineData(5, 2.0)]    // i ≥ t.Length: f = 2x, t[5] never read
    [InlineData(1, 0.75)]   // f = x·t[1]: derivative t[1]
    public void AnArmIsEvaluatedOnlyWhereItIsSelected(int i, double derivative)
    {
        double[] t = { 0.5, 0.75, 1.25 }; // invented data
        var f = _fixture.Assembly.Method<ReadF>(Type, "GuardedRead");
        var g = _fixture.Assembly.Method<ReadG>(Type, "GuardedReadGradient");
        var h = _fixture.Assembly.Method<ReadH>(Type, "GuardedReadHessian");
        Probe p = Probe.Of((F1)(x => f(x, t, i)), (G1)((x, gr) => g(x, t, i, gr)), (H1)((x, gr, he) => h(x, t, i, gr, he)));
        Verify.At(p, new[] { 1.5 }, new[] { derivative }, new[] { 0.0 }, $"GuardedRead i = {i}");
    }
}
