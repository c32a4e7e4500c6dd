using System;
using DerivGen.Tests.Infrastructure;
using Xunit;

namespace DerivGen.Tests.Numerics.Loops;

internal delegate double ShapeValue(double[] w, double[] d, double a);

internal delegate double ShapeGradient(double[] w, double[] d, double a, Span<double> gradient);

internal delegate float ShapeValueF(float[] w, float[] d, float a);

internal delegate float ShapeGradientF(float[] w, float[] d, float a, Span<float> gradient);

public sealed class ReverseShapesFixture : CompiledFixture
{
    // Loop shapes whose carried state a vector of variables drives, each checked against MathNet's central differences
    // (invented formulas; the shapes are what matters). Every method has the variables (w, a) and data d.
    public const string Source = """
        using System;
        using DerivGen;

        public static partial class Shapes
        {
            // Two loops one after another carrying the same local, with a value between them that the second loop reads.
            [Differentiate(nameof(w), nameof(a), Hessian = false)]
            public static double InSequence(double[] w, double[] d, double a)
            {
                double x = a, s = 0;
                for (int i = 0; i < w.Length; i++)
                {
                    x = x * Math.Cos(w[i]) + d[i];
                }

                double mid = x * x;
                for (int j = 0; j < w.Length; j++)
                {
                    x = x + 0.1 * Math.Tanh(x * w[j]);
                    s += x * mid;
                }

                return s + x * a;
            }

            // Branches on data inside the loop, a guarded read of the next element, and a branch on the loop's own value.
        #pragma warning disable DG0007
            [Differentiate(nameof(w), nameof(a), Hessian = false)]
            public static double Branches(double[] w, double[] d, double a)
            {
                double x = a, s = 0;
                for (int i = 0; i < w.Length; i++)
                {
                    if (d[i] > 0)
                    {
                        x = x + 0.2 * w[i] * x;
                    }
                    else
                    {
                        x = x - 0.5 * w[i] + 0.1 * Math.Sin(x);
                    }

                    double next = i + 1 < w.Length ? w[i + 1] : 0.0;
                    s += x > 1.5 ? x * next : Math.Exp(x - 1.5) * next;
                }

                return s;
            }
        #pragma warning restore DG0007

            // A loop over a window of the data with an inclusive bound and a start other than 0.
            [Differentiate(nameof(w), nameof(a), Hessian = false)]
            public static double Window(double[] w, double[] d, double a)
            {
                double x = a;
                double y = 0;
                for (int i = 2; i <= w.Length - 2; i++)
                {
                    double z = Math.Sqrt(1 + x * x) * w[i - 1] + d[i];
                    y = y * 0.5 + z * w[i + 1];
                    x = z;
                }

                return x + y;
            }

            // A loop that a break may leave (lowered to a while loop with a flag).
            [Differentiate(nameof(w), nameof(a), Hessian = false)]
            public static double Break(double[] w, double[] d, double a)
            {
                double x = a;
                for (int i = 0; i < w.Length; i++)
                {
                    if (d[i] < -0.9)
                    {
                        break;
                    }

                    x = x + 0.1 * Math.Sin(x * w[i]);
                }

                return x * x;
            }

            // An early return from inside the loop.
            [Differentiate(nameof(w), nameof(a), Hessian = false)]
            public static double EarlyReturn(double[] w, double[] d, double a)
            {
                double x = a;
                for (int i = 0; i < w.Length; i++)
                {
                    x = x * (1 + 0.1 * w[i]);
                    if (d[i] < -0.9)
                    {
                        return x * 2;
                    }
                }

                return x;
            }

            // A loop nested in another, the inner one reading the vector too.
            [Differentiate(nameof(w), nameof(a), Hessian = false)]
            public static double Nested(double[] w, double[] d, double a)
            {
                double x = a, s = 0;
                for (int i = 0; i < 4; i++)
                {
                    double y = x;
                    for (int j = 0; j < w.Length; j++)
                    {
                        y = y + 0.05 * Math.Sin(y * w[j]) + d[j] * 0.01;
                    }

                    x = 0.5 * (x + y);
                    s += x * x;
                }

                return s;
            }

            // Two loops nested in one, one after the other: the first a while loop (a break), the second reading the
            // first one's result and the outer loop's index; the outer loop's state is updated from both.
            [Differentiate(nameof(w), nameof(a), Hessian = false)]
            public static double NestedTwo(double[] w, double[] d, double a)
            {
                double x = a, s = 0;
                for (int i = 0; i < 3; i++)
                {
                    double y = x * 0.5;
                    for (int j = 0; j < w.Length; j++)
                    {
                        if (d[j] < -0.9)
                        {
                            break;
                        }

                        y = y + 0.05 * Math.Sin(y * w[j]);
                    }

                    double z = 0;
                    for (int k = i; k < w.Length; k++)
                    {
                        z = z * 0.9 + w[k] * y;
                    }

                    x = x + 0.1 * Math.Tanh(z) * y;
                    s += x * w[i];
                }

                return s + x * x;
            }

            // A scalar recurrence the rule keeps forward, forced through the reverse sweep by the attribute.
            [Differentiate(nameof(w), nameof(a), Hessian = false, Loops = LoopDifferentiation.ReverseSweep)]
            public static double Forced(double[] w, double[] d, double a)
            {
                double x = a;
                for (int i = 0; i < d.Length; i++)
                {
                    x = x * a + d[i];
                }

                return x * x + w[0] * a;
            }

            // An iteration of a loop with a loop nested in it that overwrites the carried local with a value of the
            // data alone: the adjoint of x before the loop is 0 (found by the randomised suite, soak, seed
            // 0v9YXzJTAy-KLDzt2: the reverse iteration was skipped as if it changed nothing).
            [Differentiate(nameof(w), nameof(a), Hessian = false, Loops = LoopDifferentiation.ReverseSweep)]
            public static double Overwritten(double[] w, double[] d, double a)
            {
                double x = a * w[0];
                for (int i = 0; i < w.Length; i++)
                {
                    double q = 0;
                    for (int j = 0; j < d.Length; j++)
                    {
                        q += d[j];
                    }

                    x = Math.Floor(q + 0.5);
                }

                return x + a;
            }

            // The branches' shape in float.
            [Differentiate(nameof(w), nameof(a), Hessian = false)]
            public static float BranchesSingle(float[] w, float[] d, float a)
            {
                float x = a, s = 0f;
                for (int i = 0; i < w.Length; i++)
                {
                    if (d[i] > 0f)
                    {
                        x = x + 0.2f * w[i] * x;
                    }
                    else
                    {
                        x = x - 0.5f * w[i] + 0.1f * MathF.Sin(x);
                    }

                    s += x * x * w[i];
                }

                return s;
            }
        }
        """;

    public ReverseShapesFixture()
        : base(Source)
    {
    }
}

/// <summary>Loop shapes through the reverse sweep (or kept forward, where the rule says so), against MathNet's central
/// differences, value bit for bit.</summary>
public sealed class ReverseShapesTests : IClassFixture<ReverseShapesFixture>
{
    private readonly ReverseShapesFixture _fixture;

    public ReverseShapesTests(ReverseShapesFixture fixture) => _fixture = fixture;

    /// <summary>Invented inputs: w small, d alternating in sign with one entry below −0.9 at index <paramref name="stop"/>.</summary>
    private static (double[] W, double[] D) Inputs(int n, int stop)
    {
        var w = new double[n];
        var d = new double[n];
        for (int i = 0; i < n; i++)
        {
            w[i] = 0.4 * Math.Cos(0.7 * i) + 0.05;
            d[i] = i == stop ? -0.95 : 0.5 * Math.Sin(1.3 * i);
        }

        return (w, d);
    }

    public static TheoryData<string, int, bool> Cases => new()
    {
        { "InSequence", 1, true }, { "InSequence", 7, true }, { "InSequence", 40, true },
        { "Branches", 1, true }, { "Branches", 9, true }, { "Branches", 60, true },
        { "Window", 4, true }, { "Window", 5, true }, { "Window", 30, true },
        { "Forced", 1, true }, { "Forced", 9, true },
        { "Overwritten", 1, true }, { "Overwritten", 6, true },
        { "Window", 3, true }, // no iteration at all: the record is empty and the gradient comes from the code after it
        { "Break", 10, true }, { "Break", 30, true }, { "Break", 600, true },
        { "EarlyReturn", 10, true }, { "EarlyReturn", 30, true }, { "EarlyReturn", 600, true },
        { "Nested", 3, true }, { "Nested", 12, true }, { "Nested", 300, true },
        { "NestedTwo", 3, true }, { "NestedTwo", 12, true }, { "NestedTwo", 200, true },
    };

    [Theory]
    [MemberData(nameof(Cases))]
    public void GradientMatchesCentralDifferences(string method, int n, bool reverse)
    {
        (double[] w, double[] d) = Inputs(n, stop: n / 2);
        const double a = 0.7;
        var f = _fixture.Assembly.Method<ShapeValue>("Shapes", method);
        var g = _fixture.Assembly.Method<ShapeGradient>("Shapes", method + "Gradient");
        var gradient = new double[n + 1];
        double value = g(w, d, a, gradient);

        Check.SameBits(f(w, d, a), value, $"{method}, n = {n}: value");
        var point = new double[n + 1];
        w.CopyTo(point, 0);
        point[n] = a;
        Check.GradientMatchesOracle(p => f(p[..n], d, p[n]), point, gradient, $"{method}, n = {n}");
        Assert.Equal(reverse, _fixture.Run.Source("Shapes." + method + ".g.cs").Contains("// Reverse sweep:", StringComparison.Ordinal));
    }

    [Theory]
    [InlineData(1)]
    [InlineData(20)]
    public void FloatBranchesFollowTheDoubleMethod(int n)
    {
        (double[] w, double[] d) = Inputs(n, stop: -1);
        float[] wf = Array.ConvertAll(w, c => (float)c), df = Array.ConvertAll(d, c => (float)c);
        var gradient = new float[n + 1];
        float value = _fixture.Assembly.Method<ShapeGradientF>("Shapes", "BranchesSingleGradient")(wf, df, 0.7f, gradient);
        Check.SameBits(_fixture.Assembly.Method<ShapeValueF>("Shapes", "BranchesSingle")(wf, df, 0.7f), value, $"n = {n}: float value");

        // Central differences (MathNet) of the float method evaluated in double arithmetic: the same formula, so the float
        // gradient must agree to float precision.
        var point = new double[n + 1];
        Array.ConvertAll(wf, c => (double)c).CopyTo(point, 0);
        point[n] = 0.7f;
        double[] dd = Array.ConvertAll(df, c => (double)c);
        double[] reference = Check.NumericalGradient(p => InDouble(p[..n], dd, p[n]), point);
        double scale = 0;
        foreach (double r in reference)
        {
            scale = Math.Max(scale, Math.Abs(r));
        }

        Check.Close(reference, Array.ConvertAll(gradient, c => (double)c), 1e-4, 1e-5 * scale, $"n = {n}: float gradient");
        Assert.Contains("// Reverse sweep:", _fixture.Run.Source("Shapes.BranchesSingle.g.cs"), StringComparison.Ordinal);
    }

    /// <summary>BranchesSingle written again in double (the test's copy of the formula).</summary>
    private static double InDouble(double[] w, double[] d, double a)
    {
        double x = a, s = 0;
        for (int i = 0; i < w.Length; i++)
        {
            x = d[i] > 0 ? x + ((double)0.2f * w[i] * x) : x - ((double)0.5f * w[i]) + ((double)0.1f * Math.Sin(x));
            s += x * x * w[i];
        }

        return s;
    }
}
