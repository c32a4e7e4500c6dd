using System;
using System.Collections.Generic;
using System.Linq;

namespace DerivGen.Tests.Randomized;

/// <summary>
/// Keeps a random method at a smooth, well-conditioned point: every function argument inside its domain with a margin
/// (away from poles, branch points, kinks and jumps), every denominator away from zero, every value of moderate size.
/// The method is run at its point; the first node (in evaluation order) that breaks a rule is rewritten — its
/// offending argument mapped by an affine <c>a * s + c</c> into a safe interval over all the values it took (loops
/// evaluate a node several times), or its operands scaled down — and the run is repeated. A method that cannot be
/// repaired in a few rounds is discarded.
/// </summary>
internal static class Repair
{
    /// <summary>Largest magnitude any intermediate value may take.</summary>
    public const double Bound = 1e3;

    private const int MaxRounds = 40;

    /// <summary>The repaired body (safe at every point), or null when it could not be made safe.</summary>
    public static Stmt[]? MakeSafe(Stmt[] body, IReadOnlyList<CasePoint> points)
    {
        for (int round = 0; round < MaxRounds; round++)
        {
            Expr? first = null;
            var seen = new Dictionary<Expr, List<(double[] Operands, double Value)>>(ReferenceEqualityComparer.Instance);
            void Observe(Expr node, double[] operands, double value)
            {
                if (!seen.TryGetValue(node, out var list))
                {
                    seen[node] = list = new List<(double[], double)>();
                }

                list.Add((operands, value));
                if (first is null && !IsSafe(node, operands, value))
                {
                    first = node;
                }
            }

            try
            {
                foreach (CasePoint point in points)
                {
                    new Interpreter(point, Array.Empty<string>(), Observe).Run(body);
                }
            }
            catch (Exception e) when (e is IndexOutOfRangeException or ArgumentException or KeyNotFoundException)
            {
                return null; // ArgumentException: Math.Clamp with min > max; the others are bugs of the random generator caught below
            }

            if (first is null)
            {
                return body;
            }

            Expr replacement = Fix(first, seen[first]) ?? Fallback(first);
            body = body.Select(s => s.Replace(first, replacement)).ToArray();
        }

        return null;
    }

    private static bool IsFinite(double value) => double.IsFinite(value) && Math.Abs(value) <= Bound;

    /// <summary>Distance from u to the nearest integer (the jumps of Floor, Ceiling, Truncate).</summary>
    private static double FromInteger(double u) => Math.Abs(u - Math.Round(u));

    public static bool IsSafe(Expr node, double[] x, double value)
    {
        if (!IsFinite(value))
        {
            return false;
        }

        switch (node)
        {
            case Bin { Op: '/' }:
                return Math.Abs(x[1]) >= 0.25;
            case Call c:
                return c.Fn switch
                {
                    Fn.Tan => Math.Abs(x[0]) <= 1.2,
                    Fn.Asin or Fn.Acos or Fn.Atanh => Math.Abs(x[0]) <= 0.9,
                    Fn.Acosh => x[0] >= 1.1,
                    Fn.Sinh or Fn.Cosh or Fn.Exp => Math.Abs(x[0]) <= 6,
                    Fn.Log or Fn.Log10 or Fn.Log2 or Fn.Sqrt => x[0] >= 0.1,
                    Fn.LogBase => x[0] >= 0.1 && x[1] >= 1.2,
                    Fn.Cbrt => Math.Abs(x[0]) >= 0.1,
                    Fn.Pow => c.Args[1] is Lit { IsInteger: true }
                        ? Math.Abs(x[0]) is >= 0.2 and <= 20                    // a negative base is fine with an integer exponent
                        : x[0] >= 0.2 && x[0] <= 20 && Math.Abs(x[1]) <= 3,
                    Fn.Hypot => double.Hypot(x[0], x[1]) >= 0.2,
                    Fn.Atan2 => double.Hypot(x[0], x[1]) >= 0.2 && (x[1] > 0.05 || Math.Abs(x[0]) >= 0.1), // away from the origin and the cut x < 0, y = 0
                    Fn.Abs or Fn.Sign => Math.Abs(x[0]) >= 0.05,
                    Fn.Floor or Fn.Ceiling or Fn.Truncate => FromInteger(x[0]) >= 0.02,
                    Fn.Round => FromInteger(x[0] - 0.5) >= 0.02,
                    Fn.Max or Fn.Min => Math.Abs(x[0] - x[1]) >= 0.05,
                    Fn.Clamp => x[2] - x[1] >= 0.1 && Math.Abs(x[0] - x[1]) >= 0.05 && Math.Abs(x[0] - x[2]) >= 0.05,
                    _ => true,
                };
            default:
                return true;
        }
    }

    /// <summary>A rewrite of <paramref name="node"/> that is safe for every value it took, or null.</summary>
    private static Expr? Fix(Expr node, List<(double[] Operands, double Value)> evaluations)
    {
        double[] Column(int i) => evaluations.Select(e => e.Operands[i]).ToArray();
        bool domainOk = evaluations.All(e => IsSafe(node, e.Operands, double.IsFinite(e.Value) ? 0 : e.Value));

        switch (node)
        {
            case Bin { Op: '/' } b when !evaluations.All(e => Math.Abs(e.Operands[1]) >= 0.25):
            {
                double[] den = Column(1);
                return Map(b.Right, den, den.Average() < 0 ? (-3, -0.5) : (0.5, 3)) is { } d ? new Bin('/', b.Left, d) : null;
            }

            case Bin b when domainOk:
            {
                // Too large: scale the operands (a sum or difference both of them, a product or quotient its left one).
                double max = evaluations.Max(e => Math.Abs(e.Value));
                if (!double.IsFinite(max))
                {
                    return null;
                }

                Lit s = new(Scale(max));
                return b.Op is '+' or '-'
                    ? new Bin(b.Op, new Bin('*', b.Left, s), new Bin('*', b.Right, s))
                    : new Bin(b.Op, new Bin('*', b.Left, s), b.Right);
            }

            case Call c when domainOk:
            {
                double max = evaluations.Max(e => Math.Abs(e.Value));
                if (!double.IsFinite(max))
                {
                    return null;
                }

                Lit s = new(Scale(max));
                return c.Fn switch
                {
                    Fn.FusedMultiplyAdd => new Call(c.Fn, c.Host, c.Args[0], new Bin('*', c.Args[1], s), new Bin('*', c.Args[2], s)),
                    Fn.Hypot => new Call(c.Fn, c.Host, new Bin('*', c.Args[0], s), new Bin('*', c.Args[1], s)),
                    Fn.Pow => With(c, 0, Map(c.Args[0], Column(0), (0.5, 2))),
                    _ => null,
                };
            }

            case Call c:
                return c.Fn switch
                {
                    Fn.Tan => With(c, 0, Map(c.Args[0], Column(0), (-1, 1))),
                    Fn.Asin or Fn.Acos or Fn.Atanh => With(c, 0, Map(c.Args[0], Column(0), (-0.8, 0.8))),
                    Fn.Acosh => With(c, 0, Map(c.Args[0], Column(0), (1.2, 4))),
                    Fn.Sinh or Fn.Cosh or Fn.Exp => With(c, 0, Map(c.Args[0], Column(0), (-2, 2))),
                    Fn.Log or Fn.Log10 or Fn.Log2 or Fn.Sqrt => With(c, 0, Map(c.Args[0], Column(0), (0.5, 4))),
                    Fn.LogBase => With(With(c, 0, Map(c.Args[0], Column(0), (0.5, 4))), 1, Map(c.Args[1], Column(1), (1.5, 4))),
                    Fn.Cbrt or Fn.Abs or Fn.Sign => With(c, 0, Map(c.Args[0], Column(0), Column(0).Average() < 0 ? (-3, -0.5) : (0.5, 3))),
                    Fn.Pow when c.Args[1] is Lit { IsInteger: true } => With(c, 0, Map(c.Args[0], Column(0), Column(0).Average() < 0 ? (-2, -0.5) : (0.5, 2))),
                    Fn.Pow when c.Args[1] is Lit => With(c, 0, Map(c.Args[0], Column(0), (0.5, 2))),
                    Fn.Pow => With(With(c, 0, Map(c.Args[0], Column(0), (0.5, 2))), 1, Map(c.Args[1], Column(1), (-2, 2))),
                    Fn.Hypot => With(c, 0, Map(c.Args[0], Column(0), (0.5, 3))),
                    Fn.Atan2 => With(c, 1, Map(c.Args[1], Column(1), (0.5, 3))),
                    Fn.Floor or Fn.Ceiling or Fn.Truncate => With(c, 0, Shift(c.Args[0], Column(0).Select(u => (u, 0.0)).ToArray(), (u, _) => FromInteger(u) >= 0.05)),
                    Fn.Round => With(c, 0, Shift(c.Args[0], Column(0).Select(u => (u, 0.0)).ToArray(), (u, _) => FromInteger(u - 0.5) >= 0.05)),
                    Fn.Max or Fn.Min => With(c, 1, Shift(c.Args[1], evaluations.Select(e => (e.Operands[1], e.Operands[0])).ToArray(), (b, a) => Math.Abs(a - b) >= 0.1)),
                    Fn.Clamp => FixClamp(c, evaluations.Select(e => e.Operands).ToList()),
                    _ => null,
                };
            default:
                return null;
        }
    }

    /// <summary>A power of ten that brings values of magnitude up to <paramref name="max"/> down to about Bound/100.</summary>
    private static double Scale(double max) => Math.Pow(10, Math.Floor(Math.Log10(Bound / 100 / max)));

    private static Call? With(Call? c, int index, Expr? argument)
    {
        if (c is null || argument is null)
        {
            return null;
        }

        Expr[] args = (Expr[])c.Args.Clone();
        args[index] = argument;
        return new Call(c.Fn, c.Host, args);
    }

    /// <summary>
    /// <c>a * s + c</c> taking every value in <paramref name="values"/> into the target interval (s = 1 when the
    /// values fit, a power of ten otherwise; c rounded to two decimals).
    /// </summary>
    private static Expr? Map(Expr a, double[] values, (double Low, double High) target)
    {
        double min = values.Min(), max = values.Max();
        if (!double.IsFinite(min) || !double.IsFinite(max))
        {
            return null;
        }

        double width = target.High - target.Low;
        double s = max - min <= width * 0.8 ? 1 : Math.Pow(10, Math.Floor(Math.Log10(width * 0.8 / (max - min))));
        double c = Math.Round(((target.Low + target.High) / 2) - (s * (min + max) / 2), 2);
        if (values.Any(v => (s * v) + c < target.Low - 0.01 || (s * v) + c > target.High + 0.01))
        {
            return null;
        }

        Expr scaled = s == 1 ? a : new Bin('*', a, new Lit(s));
        return c == 0 ? scaled : c > 0 ? new Bin('+', scaled, new Lit(c)) : new Bin('-', scaled, new Lit(-c));
    }

    private static readonly double[] Shifts = { 0.5, -0.5, 0.25, -0.25, 1, -1, 0.125, 0.375, 2, -2, 0.625, 3 };

    /// <summary><c>a + c</c> for the first c in a short list that makes <paramref name="ok"/> hold for every evaluation.</summary>
    private static Expr? Shift(Expr a, (double Value, double Other)[] values, Func<double, double, bool> ok)
    {
        foreach (double c in Shifts)
        {
            if (values.All(v => ok(v.Value + c, v.Other)))
            {
                return c > 0 ? new Bin('+', a, new Lit(c)) : new Bin('-', a, new Lit(-c));
            }
        }

        return null;
    }

    /// <summary>Clamp(x, lo, hi): raise hi until hi − lo ≥ 0.5 everywhere, then move x off both bounds.</summary>
    private static Expr? FixClamp(Call c, List<double[]> x)
    {
        double gap = x.Min(v => v[2] - v[1]);
        double raise = gap >= 0.1 ? 0 : Math.Ceiling((0.5 - gap) * 4) / 4;
        Expr hi = raise == 0 ? c.Args[2] : new Bin('+', c.Args[2], new Lit(raise));
        if (x.All(v => Math.Abs(v[0] - v[1]) >= 0.05 && Math.Abs(v[0] - v[2] - raise) >= 0.05))
        {
            return new Call(c.Fn, c.Host, c.Args[0], c.Args[1], hi);
        }

        Expr? shifted = null;
        foreach (double s in Shifts)
        {
            if (x.All(v => Math.Abs(v[0] + s - v[1]) >= 0.05 && Math.Abs(v[0] + s - v[2] - raise) >= 0.05))
            {
                shifted = s > 0 ? new Bin('+', c.Args[0], new Lit(s)) : new Bin('-', c.Args[0], new Lit(-s));
                break;
            }
        }

        return shifted is null ? null : new Call(c.Fn, c.Host, shifted, c.Args[1], hi);
    }

    /// <summary>When no rewrite works: a bounded, smooth, total function of the node's first operand (or a constant).</summary>
    private static Expr Fallback(Expr node) =>
        node.Children.FirstOrDefault() is { } child ? new Call(Fn.Atan, Host.Math, child) : new Lit(0.5);
}
