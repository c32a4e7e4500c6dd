using System;
using System.Linq;
using DerivGen.Tests.Infrastructure;
using Xunit;

namespace DerivGen.Tests.Numerics.Loops;

public sealed class JumpFixture : CompiledFixture
{
    // The data are invented. Every method is written as a user would; the tests derive each closed form by plain
    // calculus over the same loops, run in the test itself.
    public const string Source = """
        using System;
        using DerivGen;

        public static partial class Jumps
        {
            public static readonly double[] T = { 0.5, -1.25, 2.0, 3.5, -0.75, 1.5, 4.0, 0.25 };
            public static readonly double[] Y = { 1.1, -0.4, 2.9, 4.6, 0.2, 2.4, 5.3, 0.8 };

            // continue: the points with t < 0 do not count.
            [Differentiate(nameof(a), nameof(b))]
            public static double SkipNegative(double a, double b)
            {
                double s = 0;
                for (int i = 0; i < T.Length; i++)
                {
                    if (T[i] < 0)
                    {
                        continue;
                    }

                    double r = a * T[i] + b - Y[i];
                    s += r * r;
                }

                return s;
            }

            // break: the sum stops at the first t above the limit.
            [Differentiate(nameof(a), nameof(b))]
            public static double UntilAbove(double a, double b, double limit)
            {
                double s = 0;
                foreach (double t in T)
                {
                    if (t > limit)
                    {
                        break;
                    }

                    s += b * Math.Exp(a * t);
                }

                return s;
            }

            // A return inside a loop: the first point above the limit decides the value.
            [Differentiate(nameof(a), nameof(b))]
            public static double FirstAbove(double a, double b, double limit)
            {
                for (int i = 0; i < T.Length; i++)
                {
                    if (T[i] > limit)
                    {
                        return a * T[i] * T[i] + b * b * Y[i];
                    }
                }

                return a * b;
            }

            // A do loop runs its body at least once: x^n for n >= 1, and x for n <= 0.
            [Differentiate(nameof(x))]
            public static double RepeatedProduct(double x, int n)
            {
                double p = 1;
                int k = 0;
                do
                {
                    p *= x;
                    k++;
                }
                while (k < n);

                return p;
            }

            // Loops inside both sides of an if on a flag.
            [Differentiate(nameof(a), nameof(b))]
            public static double EitherSum(double a, double b, bool squares)
            {
                double s = b;
                if (squares)
                {
                    for (int i = 0; i < T.Length; i++)
                    {
                        double r = a * T[i] - Y[i];
                        s += r * r;
                    }
                }
                else
                {
                    s += a * a;
                    foreach (double y in Y)
                    {
                        s -= b * y;
                    }
                }

                return s;
            }

            // A loop after an early return.
            [Differentiate(nameof(a), nameof(b))]
            public static double AfterEarlyReturn(double a, double b, int count)
            {
                if (count <= 0)
                {
                    return a * b;
                }

                double s = 0;
                for (int i = 0; i < count; i++)
                {
                    s += Math.Sin(a * T[i]) + b * Y[i];
                }

                return s;
            }

            // Horner's rule, a descending loop: p(x) = Σ Y[i] x^i.
            [Differentiate(nameof(x))]
            public static double Horner(double x)
            {
                double p = 0;
                for (int i = Y.Length - 1; i >= 0; i--)
                {
                    p = p * x + Y[i];
                }

                return p;
            }

            // A stride of two, then while (true) and for (;;) left by a break.
            [Differentiate(nameof(a))]
            public static double EveryOther(double a)
            {
                double s = 0;
                for (int i = 0; i < T.Length; i += 2)
                {
                    s += a * a * T[i];
                }

                int k = 0;
                while (true)
                {
                    if (k >= 3)
                    {
                        break;
                    }

                    s += Math.Exp(a * Y[k]);
                    k++;
                }

                for (int m = 0; ; m++)
                {
                    if (m == 2)
                    {
                        break;
                    }

                    s += a * T[m];
                }

                return s;
            }

            // Nested loops: the inner one broken early, the outer one skipping an iteration.
            [Differentiate(nameof(a), nameof(b))]
            public static double Nested(double a, double b)
            {
                double s = 0;
                for (int i = 0; i < 4; i++)
                {
                    if (i == 1)
                    {
                        continue;
                    }

                    for (int j = 0; j < T.Length; j++)
                    {
                        if (j > i + 2)
                        {
                            break;
                        }

                        s += a * T[j] * (i + 1) + b * b * Y[j];
                    }
                }

                return s;
            }

            // A switch on an int: sections with several labels, a default that is not last, a loop in one section, a
            // return in another.
            [Differentiate(nameof(a))]
            public static double Switched(double a, int mode)
            {
                double s = 0;
                switch (mode)
                {
                    case 0:
                    case 1:
                        s = a * a;
                        break;
                    default:
                        s = Math.Exp(a);
                        break;
                    case 2:
                        for (int i = 0; i < 3; i++)
                        {
                            s += a * T[i];
                        }

                        break;
                    case 3:
                        return Math.Sin(a);
                }

                return s + a;
            }

            // A return inside a nested loop leaves both loops; the statements after the inner loop are skipped.
            [Differentiate(nameof(a))]
            public static double FirstPairAbove(double a, double limit)
            {
                double s = 0;
                for (int i = 0; i < T.Length; i++)
                {
                    for (int j = i + 1; j < T.Length; j++)
                    {
                        if (T[i] + T[j] > limit)
                        {
                            return s + a * a * T[i] * T[j];
                        }
                    }

                    s += a * T[i];
                }

                return s;
            }
        }
        """;

    public JumpFixture()
        : base(Source)
    {
    }
}

/// <summary>break, continue, do loops, returns inside loops, loops inside branches and after early returns, and for
/// loops of any step, against closed forms (plain calculus) and MathNet's finite differences.</summary>
public sealed class JumpTests : IClassFixture<JumpFixture>
{
    private static readonly double[] T = { 0.5, -1.25, 2.0, 3.5, -0.75, 1.5, 4.0, 0.25 };
    private static readonly double[] Y = { 1.1, -0.4, 2.9, 4.6, 0.2, 2.4, 5.3, 0.8 };
    private readonly JumpFixture _fixture;

    public JumpTests(JumpFixture fixture) => _fixture = fixture;

    [Theory]
    [InlineData(0.8, -0.3)]
    [InlineData(1.7, 2.1)]
    public void ContinueSkipsThePointsItShould(double a, double b)
    {
        // Σ over t ≥ 0 of r², r = a t + b − y: ∂a = Σ 2 r t, ∂b = Σ 2 r; ∂²a = Σ 2 t², ∂a∂b = Σ 2 t, ∂²b = 2·count.
        var kept = Enumerable.Range(0, T.Length).Where(i => T[i] >= 0).ToArray();
        double ga = kept.Sum(i => 2 * (a * T[i] + b - Y[i]) * T[i]), gb = kept.Sum(i => 2 * (a * T[i] + b - Y[i]));
        double haa = kept.Sum(i => 2 * T[i] * T[i]), hab = kept.Sum(i => 2 * T[i]), hbb = 2.0 * kept.Length;
        Verify.At(Probe.Load(_fixture.Assembly, "Jumps", "SkipNegative", 2), new[] { a, b }, new[] { ga, gb }, new[] { haa, hab, hab, hbb }, "SkipNegative");
    }

    [Theory]
    [InlineData(0.3, 1.2, 1.0)] // stops at t = 2.0 (the third point)
    [InlineData(-0.2, 0.7, 10.0)] // never stops early
    [InlineData(0.4, -1.1, 0.1)] // stops at the first point
    public void BreakStopsTheSum(double a, double b, double limit)
    {
        // Σ over the points before the first t > limit of b·e^(a t).
        int stop = Array.FindIndex(T, t => t > limit);
        var used = T.Take(stop < 0 ? T.Length : stop).ToArray();
        double ga = used.Sum(t => b * t * Math.Exp(a * t)), gb = used.Sum(t => Math.Exp(a * t));
        double haa = used.Sum(t => b * t * t * Math.Exp(a * t)), hab = used.Sum(t => t * Math.Exp(a * t));
        var f = _fixture.Assembly.Method<F3>("Jumps", "UntilAbove");
        var g = _fixture.Assembly.Method<G3>("Jumps", "UntilAboveGradient");
        var h = _fixture.Assembly.Method<H3>("Jumps", "UntilAboveHessian");
        Probe probe = Probe.Of((F2)((p, q) => f(p, q, limit)), (G2)((p, q, gr) => g(p, q, limit, gr)), (H2)((p, q, gr, he) => h(p, q, limit, gr, he)));
        Verify.At(probe, new[] { a, b }, new[] { ga, gb }, new[] { haa, hab, hab, 0 }, $"UntilAbove(limit {limit})");
    }

    [Theory]
    [InlineData(0.6, 1.4, 1.8)] // returns at t = 2.0, y = 2.9
    [InlineData(-1.3, 0.9, 100.0)] // runs to the end: a·b
    public void ReturnInsideALoopReturnsTheFirstMatch(double a, double b, double limit)
    {
        int first = Array.FindIndex(T, t => t > limit);
        double[] gradient = first < 0 ? new[] { b, a } : new[] { T[first] * T[first], 2 * b * Y[first] };
        double[] hessian = first < 0 ? new[] { 0, 1.0, 1.0, 0 } : new[] { 0, 0, 0, 2 * Y[first] };
        var f = _fixture.Assembly.Method<F3>("Jumps", "FirstAbove");
        var g = _fixture.Assembly.Method<G3>("Jumps", "FirstAboveGradient");
        var h = _fixture.Assembly.Method<H3>("Jumps", "FirstAboveHessian");
        Probe probe = Probe.Of((F2)((p, q) => f(p, q, limit)), (G2)((p, q, gr) => g(p, q, limit, gr)), (H2)((p, q, gr, he) => h(p, q, limit, gr, he)));
        Verify.At(probe, new[] { a, b }, gradient, hessian, $"FirstAbove(limit {limit})");
        Check.SameBits(first < 0 ? a * b : (a * T[first] * T[first]) + (b * b * Y[first]), probe.Value(new[] { a, b }), "FirstAbove's value");
    }

    [Theory]
    [InlineData(1.3, 4)]
    [InlineData(-0.7, 1)]
    [InlineData(0.9, 0)] // the body runs once: x
    [InlineData(2.0, -3)]
    public void DoLoopRunsItsBodyAtLeastOnce(double x, int n)
    {
        // x^m with m = max(n, 1): d/dx = m x^(m−1), d²/dx² = m (m−1) x^(m−2).
        int m = Math.Max(n, 1);
        var f = _fixture.Assembly.Method<FI>("Jumps", "RepeatedProduct");
        var g = _fixture.Assembly.Method<GI>("Jumps", "RepeatedProductGradient");
        var h = _fixture.Assembly.Method<HI>("Jumps", "RepeatedProductHessian");
        Probe probe = Probe.Of((F1)(p => f(p, n)), (G1)((p, gr) => g(p, n, gr)), (H1)((p, gr, he) => h(p, n, gr, he)));
        Verify.At(probe, new[] { x }, new[] { m * Math.Pow(x, m - 1) }, new[] { m * (m - 1) * Math.Pow(x, m - 2) }, $"RepeatedProduct(n {n})");
    }

    [Theory]
    [InlineData(0.7, -0.4, true)]
    [InlineData(0.7, -0.4, false)]
    public void LoopsInsideBothSidesOfAnIf(double a, double b, bool squares)
    {
        // squares: b + Σ (a t − y)²;  otherwise: b + a² − b Σ y.
        double[] gradient = squares
            ? new[] { T.Select((t, i) => 2 * (a * t - Y[i]) * t).Sum(), 1.0 }
            : new[] { 2 * a, 1 - Y.Sum() };
        double[] hessian = squares ? new[] { T.Sum(t => 2 * t * t), 0, 0, 0 } : new[] { 2.0, 0, 0, 0 };
        var f = _fixture.Assembly.Method<FB>("Jumps", "EitherSum");
        var g = _fixture.Assembly.Method<GB>("Jumps", "EitherSumGradient");
        var h = _fixture.Assembly.Method<HB>("Jumps", "EitherSumHessian");
        Probe probe = Probe.Of((F2)((p, q) => f(p, q, squares)), (G2)((p, q, gr) => g(p, q, squares, gr)), (H2)((p, q, gr, he) => h(p, q, squares, gr, he)));
        Verify.At(probe, new[] { a, b }, gradient, hessian, $"EitherSum(squares {squares})", closedFormAbsolute: 1e-14);
    }

    [Theory]
    [InlineData(0.9, 1.6, 0)]
    [InlineData(0.9, 1.6, 5)]
    public void LoopAfterAnEarlyReturn(double a, double b, int count)
    {
        double[] gradient = count <= 0
            ? new[] { b, a }
            : new[] { T.Take(count).Sum(t => t * Math.Cos(a * t)), Y.Take(count).Sum() };
        double[] hessian = count <= 0
            ? new[] { 0, 1.0, 1.0, 0 }
            : new[] { T.Take(count).Sum(t => -t * t * Math.Sin(a * t)), 0, 0, 0 };
        var f = _fixture.Assembly.Method<FI2>("Jumps", "AfterEarlyReturn");
        var g = _fixture.Assembly.Method<GI2>("Jumps", "AfterEarlyReturnGradient");
        var h = _fixture.Assembly.Method<HI2>("Jumps", "AfterEarlyReturnHessian");
        Probe probe = Probe.Of((F2)((p, q) => f(p, q, count)), (G2)((p, q, gr) => g(p, q, count, gr)), (H2)((p, q, gr, he) => h(p, q, count, gr, he)));
        Verify.At(probe, new[] { a, b }, gradient, hessian, $"AfterEarlyReturn(count {count})", closedFormAbsolute: 1e-14);
    }

    [Theory]
    [InlineData(0.6)]
    [InlineData(-1.2)]
    public void HornerDescendingLoop(double x)
    {
        // p(x) = Σ Y[i] x^i: p' = Σ i Y[i] x^(i−1), p'' = Σ i (i−1) Y[i] x^(i−2).
        double d1 = Enumerable.Range(1, Y.Length - 1).Sum(i => i * Y[i] * Math.Pow(x, i - 1));
        double d2 = Enumerable.Range(2, Y.Length - 2).Sum(i => i * (i - 1) * Y[i] * Math.Pow(x, i - 2));
        Verify.At(Probe.Load(_fixture.Assembly, "Jumps", "Horner", 1), new[] { x }, new[] { d1 }, new[] { d2 }, "Horner");
    }

    [Theory]
    [InlineData(0.35)]
    [InlineData(-0.8)]
    public void StrideAndWhileTrueWithBreak(double a)
    {
        // a² Σ_{i even} t_i + Σ_{k<3} e^(a y_k) + a (t_0 + t_1).
        double evenSum = Enumerable.Range(0, T.Length).Where(i => i % 2 == 0).Sum(i => T[i]);
        double d1 = (2 * a * evenSum) + Y.Take(3).Sum(y => y * Math.Exp(a * y)) + T[0] + T[1];
        double d2 = (2 * evenSum) + Y.Take(3).Sum(y => y * y * Math.Exp(a * y));
        Verify.At(Probe.Load(_fixture.Assembly, "Jumps", "EveryOther", 1), new[] { a }, new[] { d1 }, new[] { d2 }, "EveryOther");
    }

    [Theory]
    [InlineData(0.5, 1.5)]
    [InlineData(-2.0, 0.25)]
    public void NestedLoopsWithBreakAndContinue(double a, double b)
    {
        // Σ over i ∈ {0, 2, 3}, j ≤ min(i + 2, 7) of a t_j (i + 1) + b² y_j.
        double ga = 0, gb = 0, hbb = 0;
        foreach (int i in new[] { 0, 2, 3 })
        {
            for (int j = 0; j <= Math.Min(i + 2, T.Length - 1); j++)
            {
                ga += T[j] * (i + 1);
                gb += 2 * b * Y[j];
                hbb += 2 * Y[j];
            }
        }

        Verify.At(Probe.Load(_fixture.Assembly, "Jumps", "Nested", 2), new[] { a, b }, new[] { ga, gb }, new[] { 0, 0, 0, hbb }, "Nested", closedFormAbsolute: 1e-14);
    }

    [Theory]
    [InlineData(0.75, 3.0)] // i = 0 (0.5), j = 3 (3.5): s = 0 at the return
    [InlineData(1.25, 5.0)] // first pair above 5: i = 2 (2.0), j = 3 (3.5), s = a (0.5 − 1.25)
    [InlineData(-0.5, 100.0)] // never: a Σ t
    public void ReturnInsideANestedLoopLeavesBothLoops(double a, double limit)
    {
        double d1 = 0, d2 = 0;
        bool found = false;
        for (int i = 0; i < T.Length && !found; i++)
        {
            for (int j = i + 1; j < T.Length && !found; j++)
            {
                if (T[i] + T[j] > limit)
                {
                    d1 += 2 * a * T[i] * T[j];
                    d2 += 2 * T[i] * T[j];
                    found = true;
                }
            }

            if (!found)
            {
                d1 += T[i];
            }
        }

        var f = _fixture.Assembly.Method<FI3>("Jumps", "FirstPairAbove");
        var g = _fixture.Assembly.Method<GI3>("Jumps", "FirstPairAboveGradient");
        var h = _fixture.Assembly.Method<HI3>("Jumps", "FirstPairAboveHessian");
        Probe probe = Probe.Of((F1)(p => f(p, limit)), (G1)((p, gr) => g(p, limit, gr)), (H1)((p, gr, he) => h(p, limit, gr, he)));
        Verify.At(probe, new[] { a }, new[] { d1 }, new[] { d2 }, $"FirstPairAbove(limit {limit})", closedFormAbsolute: 1e-14);
    }

    [Theory]
    [InlineData(0.7, 0)]
    [InlineData(0.7, 1)]
    [InlineData(0.7, 2)]
    [InlineData(0.7, 3)]
    [InlineData(0.7, 9)]
    public void SwitchTakesTheSectionItShould(double a, int mode)
    {
        // mode 0, 1: a² + a; 2: a (t0 + t1 + t2) + a; 3: sin a; otherwise e^a + a.
        double t3 = T[0] + T[1] + T[2];
        (double d1, double d2) = mode switch
        {
            0 or 1 => ((2 * a) + 1, 2.0),
            2 => (t3 + 1, 0.0),
            3 => (Math.Cos(a), -Math.Sin(a)),
            _ => (Math.Exp(a) + 1, Math.Exp(a)),
        };
        var f = _fixture.Assembly.Method<FI>("Jumps", "Switched");
        var g = _fixture.Assembly.Method<GI>("Jumps", "SwitchedGradient");
        var h = _fixture.Assembly.Method<HI>("Jumps", "SwitchedHessian");
        Probe probe = Probe.Of((F1)(p => f(p, mode)), (G1)((p, gr) => g(p, mode, gr)), (H1)((p, gr, he) => h(p, mode, gr, he)));
        Verify.At(probe, new[] { a }, new[] { d1 }, new[] { d2 }, $"Switched(mode {mode})", closedFormAbsolute: 1e-14);
    }

    private delegate double F3(double a, double b, double c);

    private delegate double G3(double a, double b, double c, Span<double> gradient);

    private delegate double H3(double a, double b, double c, Span<double> gradient, Span<double> hessian);

    private delegate double FI(double x, int n);

    private delegate double GI(double x, int n, Span<double> gradient);

    private delegate double HI(double x, int n, Span<double> gradient, Span<double> hessian);

    private delegate double FB(double a, double b, bool flag);

    private delegate double GB(double a, double b, bool flag, Span<double> gradient);

    private delegate double HB(double a, double b, bool flag, Span<double> gradient, Span<double> hessian);

    private delegate double FI2(double a, double b, int n);

    private delegate double GI2(double a, double b, int n, Span<double> gradient);

    private delegate double HI2(double a, double b, int n, Span<double> gradient, Span<double> hessian);

    private delegate double FI3(double a, double c);

    private delegate double GI3(double a, double c, Span<double> gradient);

    private delegate double HI3(double a, double c, Span<double> gradient, Span<double> hessian);
}
