using System;
using DerivGen.Tests.Infrastructure;
using DerivGen.Tests.Minimization;
using Xunit;

namespace DerivGen.Tests.Numerics.Methods;

public sealed class EnumAndPredicateFixture : UserCodeFixture
{
    // Enum parameters and locals used as constants, and double/float IsNaN, IsFinite, IsInfinity,
    // IsPositiveInfinity, IsNegativeInfinity as conditions. The adapters pass the enum as an int (the test cannot
    // name the compiled enum type in a delegate).
    public const string Source = """
        using System;
        using DerivGen;

        namespace Methods;

        public enum Penalty { Square, Absolute = 5, Cauchy }

        public enum Side { Below, Inside, Above }

        public static partial class Enums
        {
            // A robust loss chosen by an enum: a switch statement over the parameter, an enum local, == and a cast.
            [Differentiate(nameof(r), nameof(c))]
            public static double Robust(double r, double c, Penalty kind)
            {
                double u = r / c;
                double f;
                switch (kind)
                {
                    case Penalty.Square:
                        f = 0.5 * u * u;
                        break;
                    case Penalty.Cauchy:
                        f = 0.5 * Math.Log(1 + u * u);
                        break;
                    default:
                        f = Math.Sqrt(1 + u * u) - 1;
                        break;
                }

                Penalty chosen = kind;
                double w = chosen == Penalty.Absolute ? 2.0 : 1.0 + (int)kind;
                return w * f;
            }

            // An enum local chosen by a switch expression on the variable, then compared: x³ inside [−1, 1], continued
            // by its tangent lines outside (value and slope continuous at ±1).
        #pragma warning disable DG0007 // the pieces switch at ±1 on purpose
            [Differentiate]
            public static double Extended(double x)
            {
                Side side = x switch { < -1 => Side.Below, > 1 => Side.Above, _ => Side.Inside };
                return side == Side.Inside ? x * x * x : side == Side.Below ? -1 + 3 * (x + 1) : 1 + 3 * (x - 1);
            }
        #pragma warning restore DG0007

            // A switch expression over an enum parameter.
            [Differentiate]
            public static double Scaled(double x, Penalty kind) => kind switch
            {
                Penalty.Square => x * x,
                Penalty.Absolute => 3 * x,
                _ => -x,
            };
        }

        public static class Adapters
        {
            public static double Robust(double r, double c, int kind) => Enums.Robust(r, c, (Penalty)kind);
            public static double RobustGradient(double r, double c, int kind, Span<double> g) => Enums.RobustGradient(r, c, (Penalty)kind, g);
            public static double RobustHessian(double r, double c, int kind, Span<double> g, Span<double> h) => Enums.RobustHessian(r, c, (Penalty)kind, g, h);
            public static double Scaled(double x, int kind) => Enums.Scaled(x, (Penalty)kind);
            public static double ScaledGradient(double x, int kind, Span<double> g) => Enums.ScaledGradient(x, (Penalty)kind, g);
            public static double ScaledHessian(double x, int kind, Span<double> g, Span<double> h) => Enums.ScaledHessian(x, (Penalty)kind, g, h);
        }

        public static partial class Predicates
        {
            // Missing readings (NaN) and non-finite times are skipped: conditions on data.
            [Differentiate(nameof(a), nameof(b))]
            public static double SkipMissing(double a, double b, double[] t, double[] y)
            {
                double s = 0;
                for (int i = 0; i < t.Length; i++)
                {
                    if (double.IsNaN(y[i]) || !double.IsFinite(t[i]))
                    {
                        continue;
                    }

                    double r = a * t[i] + b - y[i];
                    s += r * r;
                }

                return s;
            }

            // Conditions on variables that change only at NaN or ±∞: no kink, no DG0007.
            [Differentiate]
            public static double Overflow(double x, double y) =>
                double.IsInfinity(x * y) || double.IsPositiveInfinity(y) || double.IsNegativeInfinity(x) || double.IsNaN(x) ? 0.0 : x * y * y;

            [Differentiate]
            public static float OverflowSingle(float x) => float.IsFinite(x * x) && !float.IsNaN(x) ? x * x : 0f;
        }
        """;

    public EnumAndPredicateFixture()
        : base(Source)
    {
    }
}

/// <summary>
/// An enum value is its underlying int constant; the floating-point predicates are conditions. Derivatives against
/// closed forms (plain calculus, derived in the comments) and MathNet's differences, values bit for bit, including at
/// NaN and ±∞ where the predicates decide.
/// </summary>
public sealed class EnumAndPredicateTests : IClassFixture<EnumAndPredicateFixture>
{
    private readonly EnumAndPredicateFixture _fixture;

    public EnumAndPredicateTests(EnumAndPredicateFixture fixture) => _fixture = fixture;

    private delegate double KindF2(double x, double y, int kind);

    private delegate double KindG2(double x, double y, int kind, Span<double> g);

    private delegate double KindH2(double x, double y, int kind, Span<double> g, Span<double> h);

    private delegate double KindF1(double x, int kind);

    private delegate double KindG1(double x, int kind, Span<double> g);

    private delegate double KindH1(double x, int kind, Span<double> g, Span<double> h);

    private delegate double DataF(double a, double b, double[] t, double[] y);

    private delegate double DataG(double a, double b, double[] t, double[] y, Span<double> g);

    private delegate double DataH(double a, double b, double[] t, double[] y, Span<double> g, Span<double> h);

    [Theory]
    [InlineData(0, 1.0)] // Square (0):   f = u²/2,        f_u = u,             f_uu = 1;             w = 1 + 0
    [InlineData(5, 2.0)] // Absolute (5): f = √(1+u²) − 1, f_u = u/√(1+u²),     f_uu = (1+u²)^(−3/2); w = 2
    [InlineData(6, 7.0)] // Cauchy (6):   f = ½ ln(1+u²),  f_u = u/(1+u²),      f_uu = (1−u²)/(1+u²)²; w = 1 + 6
    public void EnumSelectsThePenalty(int kind, double w)
    {
        const double r = 0.9, c = 1.4;
        double u = r / c, q = 1 + (u * u);
        (double fu, double fuu) = kind switch
        {
            0 => (u, 1.0),
            5 => (u / Math.Sqrt(q), Math.Pow(q, -1.5)),
            _ => (u / q, (1 - (u * u)) / (q * q)),
        };

        // Chain rule through u = r/c (plain calculus): u_r = 1/c, u_c = −u/c, u_rr = 0, u_rc = −1/c², u_cc = 2u/c².
        double gr = fu / c, gc = -fu * u / c;
        double hrr = fuu / (c * c), hrc = (-fuu * u / (c * c)) - (fu / (c * c)), hcc = (fuu * u * u / (c * c)) + (fu * 2 * u / (c * c));
        const string adapters = "Methods.Adapters";
        var f = _fixture.Assembly.Method<KindF2>(adapters, "Robust");
        var g = _fixture.Assembly.Method<KindG2>(adapters, "RobustGradient");
        var h = _fixture.Assembly.Method<KindH2>(adapters, "RobustHessian");
        Probe probe = Probe.Of((F2)((x0, x1) => f(x0, x1, kind)), (G2)((x0, x1, gr) => g(x0, x1, kind, gr)), (H2)((x0, x1, gr, he) => h(x0, x1, kind, gr, he)));
        Verify.At(probe, new[] { r, c }, new[] { w * gr, w * gc }, new[] { w * hrr, w * hrc, w * hrc, w * hcc }, $"Robust kind = {kind}");
    }

    [Theory]
    [InlineData(0, 2 * 1.25, 2.0)]
    [InlineData(5, 3.0, 0.0)]
    [InlineData(6, -1.0, 0.0)]
    [InlineData(42, -1.0, 0.0)] // a value no member names: the discard arm
    public void SwitchExpressionOverAnEnum(int kind, double derivative, double second)
    {
        // f = x² (Square), 3x (Absolute), −x otherwise (plain calculus).
        const string adapters = "Methods.Adapters";
        var f = _fixture.Assembly.Method<KindF1>(adapters, "Scaled");
        var g = _fixture.Assembly.Method<KindG1>(adapters, "ScaledGradient");
        var h = _fixture.Assembly.Method<KindH1>(adapters, "ScaledHessian");
        Probe probe = Probe.Of((F1)(x => f(x, kind)), (G1)((x, gr) => g(x, kind, gr)), (H1)((x, gr, he) => h(x, kind, gr, he)));
        Verify.At(probe, new[] { 1.25 }, new[] { derivative }, new[] { second }, $"Scaled kind = {kind}");
    }

    [Theory]
    [InlineData(-2.5)] // below: f = −1 + 3(x + 1), f' = 3, f'' = 0
    [InlineData(0.4)]  // inside: f = x³, f' = 3x², f'' = 6x (plain calculus)
    [InlineData(1.0)]  // on the edge, inside (x > 1 fails): f' = 3, f'' = 6
    [InlineData(1.75)] // above: f = 1 + 3(x − 1), f' = 3, f'' = 0
    public void EnumLocalFromASwitchExpression(double x)
    {
        bool inside = x is >= -1 and <= 1;
        Verify.At(Probe.Load(_fixture.Assembly, "Methods.Enums", "Extended", 1), new[] { x }, new[] { inside ? 3 * x * x : 3 },
            new[] { inside ? 6 * x : 0 }, "Extended", oracle: x != 1.0);
    }

    [Fact]
    public void PredicatesOnDataSkipMissingReadings()
    {
        // Linear least squares over the kept points K (plain calculus): ∇s = (Σ 2r t, Σ 2r), H = [[2Σt², 2Σt], [2Σt, 2|K|]].
        double[] t = { 0.0, 1.0, double.PositiveInfinity, 2.0, double.NaN, 3.0, 4.0 }; // invented data
        double[] y = { 1.1, double.NaN, 3.0, 2.9, 1.0, 4.2, double.NaN };
        const double a = 0.95, b = 1.05;
        double ga = 0, gb = 0, stt = 0, st = 0;
        int n = 0;
        foreach (int i in new[] { 0, 3, 5 })
        {
            double r = (a * t[i]) + b - y[i];
            ga += 2 * r * t[i];
            gb += 2 * r;
            stt += t[i] * t[i];
            st += t[i];
            n++;
        }

        var f = _fixture.Assembly.Method<DataF>("Methods.Predicates", "SkipMissing");
        var g = _fixture.Assembly.Method<DataG>("Methods.Predicates", "SkipMissingGradient");
        var h = _fixture.Assembly.Method<DataH>("Methods.Predicates", "SkipMissingHessian");
        Probe p = Probe.Of((F2)((x0, x1) => f(x0, x1, t, y)), (G2)((x0, x1, gr) => g(x0, x1, t, y, gr)), (H2)((x0, x1, gr, he) => h(x0, x1, t, y, gr, he)));
        Verify.At(p, new[] { a, b }, new[] { ga, gb }, new[] { 2 * stt, 2 * st, 2 * st, 2.0 * n }, "SkipMissing", closedFormAbsolute: 1e-14);
    }

    [Theory]
    [InlineData(1.5, -0.5)]
    [InlineData(1e200, 1e200)]
    [InlineData(double.PositiveInfinity, 1.0)]
    [InlineData(1.0, double.PositiveInfinity)]
    [InlineData(double.NegativeInfinity, 1.0)]
    [InlineData(double.NaN, 1.0)]
    [InlineData(2.0, double.NaN)]
    public void PredicatesOnVariablesGiveTheValueBitForBitAndTheBranchTaken(double x, double y)
    {
        Probe p = Probe.Load(_fixture.Assembly, "Methods.Predicates", "Overflow", 2);
        bool zero = double.IsInfinity(x * y) || double.IsPositiveInfinity(y) || double.IsNegativeInfinity(x) || double.IsNaN(x);
        double value = p.Value(new[] { x, y });
        var g = new double[2];
        var h = new double[4];
        Check.SameBits(value, p.Gradient(new[] { x, y }, g), "MGradient's value");
        Check.SameBits(value, p.Hessian!(new[] { x, y }, new double[2], h), "MHessian's value");
        if (zero)
        {
            // The constant branch: derivative 0 (nothing of x·y² leaks in).
            Assert.Equal(new[] { 0.0, 0.0 }, g);
            Assert.Equal(new[] { 0.0, 0.0, 0.0, 0.0 }, h);
        }
        else if (double.IsFinite(y))
        {
            // f = x y² (plain calculus): ∇f = (y², 2xy), H = [[0, 2y], [2y, 2x]].
            Verify.At(p, new[] { x, y }, new[] { y * y, 2 * x * y }, new[] { 0, 2 * y, 2 * y, 2 * x }, "Overflow");
        }
    }

    [Theory]
    [InlineData(1.5f)]
    [InlineData(3e19f)] // x² overflows float: the constant branch
    [InlineData(float.NaN)]
    [InlineData(float.NegativeInfinity)]
    public void FloatPredicates(float x)
    {
        var f = _fixture.Assembly.Method<F1f>("Methods.Predicates", "OverflowSingle");
        var g = _fixture.Assembly.Method<G1f>("Methods.Predicates", "OverflowSingleGradient");
        var gradient = new float[1];
        float value = f(x);
        Check.SameBits(value, g(x, gradient), "MGradient's value");
        float expected = float.IsFinite(x * x) && !float.IsNaN(x) ? 2 * x : 0f; // d/dx x² = 2x (plain calculus)
        Assert.Equal(expected, gradient[0]);
    }
}
