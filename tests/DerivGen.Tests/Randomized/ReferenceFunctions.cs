using System;
using System.Collections.Generic;
using System.Linq;

namespace DerivGen.Tests.Randomized;

/// <summary>Every function of the README's function table that the random programs call.</summary>
internal enum Fn
{
    Sin, Cos, Tan, Asin, Acos, Atan, Atan2, Sinh, Cosh, Tanh, Asinh, Acosh, Atanh, Exp, Log, LogBase, Log10, Log2,
    Sqrt, Cbrt, Pow, Hypot, FusedMultiplyAdd, Abs, Max, Min, Clamp, Sign, Floor, Ceiling, Round, Truncate,
}

/// <summary>Where a function is called from: <c>Math.Sin</c> or <c>double.Sin</c> (the generic-math statics).</summary>
internal enum Host
{
    Math,
    Double,
}

/// <summary>
/// One function: its C# name and arity, its value exactly as C# computes it (the same BCL call, so the reference's
/// value is bit-for-bit the compiled method's), and its first and second partial derivatives, written out here
/// independently of the generator from plain calculus (Abramowitz &amp; Stegun, Handbook of Mathematical Functions,
/// ch. 4, for the elementary functions; formulas from memory, each one also checked against MathNet.Numerics'
/// finite differences in <see cref="ReferenceSelfCheckTests"/>).
/// </summary>
internal sealed class FunctionSpec
{
    public FunctionSpec(Fn fn, int arity, Func<double[], double> math, Func<double[], double>? onDouble,
        Func<double[], double, int, double> first, Func<double[], double, int, int, double> second)
    {
        Fn = fn;
        Arity = arity;
        MathValue = math;
        DoubleValue = onDouble;
        First = first;
        Second = second;
    }

    public Fn Fn { get; }

    public int Arity { get; }

    /// <summary>The C# method name (Log with a base is "Log").</summary>
    public string Name => Fn == Fn.LogBase ? "Log" : Fn.ToString();

    public Func<double[], double> MathValue { get; }

    /// <summary>The value through double.Name, or null where only Math has it (or, for Hypot, only double).</summary>
    public Func<double[], double>? DoubleValue { get; }

    /// <summary>∂f/∂x_i given the arguments x and the value f.</summary>
    public Func<double[], double, int, double> First { get; }

    /// <summary>∂²f/∂x_i∂x_j given the arguments x and the value f.</summary>
    public Func<double[], double, int, int, double> Second { get; }

    public bool HasMath => Fn != Fn.Hypot; // Math has no Hypot (README).

    /// <summary>
    /// Where the derivative formulas of the README's table cancel — tanh′ = 1 − tanh² near saturation, and the second
    /// derivatives obtained by differentiating x/hypot, x/(x²+y²) or p·aᵖ⁻¹ once more — the size of the terms that
    /// cancel: a correct implementation of those formulas is off by a few ulps of that, not of the result (common
    /// practice in error analysis). Added to the magnitude bounds of the first and second partial derivatives.
    /// </summary>
    public (double First, double Second) Slack(double[] x)
    {
        switch (Fn)
        {
            case Fn.Tanh:
                return (1, 2 * Math.Abs(Math.Tanh(x[0])));
            case Fn.Hypot:
                return (0, 1 / double.Hypot(x[0], x[1]));
            case Fn.Atan2:
                return (0, 2 / ((x[0] * x[0]) + (x[1] * x[1])));
            case Fn.Pow when x[0] > 0:
                double log = Math.Log(x[0]);
                return (0, (Math.Abs(Math.Pow(x[0], x[1] - 1)) * (1 + Math.Abs(x[1] * log) + Math.Abs(x[1] * (x[1] - 1)))) + Math.Abs(Math.Pow(x[0], x[1]) * log * log));
            default:
                return (0, 0);
        }
    }

    public double Value(Host host, double[] x) => host == Host.Math ? MathValue(x) : DoubleValue!(x);
}

internal static class ReferenceFunctions
{
    private static readonly double Ln10 = Math.Log(10), Ln2 = Math.Log(2);

    public static readonly IReadOnlyDictionary<Fn, FunctionSpec> All = Build().ToDictionary(s => s.Fn);

    private static FunctionSpec U(Fn fn, Func<double, double> math, Func<double, double>? onDouble, Func<double, double, double> d1, Func<double, double, double> d2) =>
        new(fn, 1, x => math(x[0]), onDouble is null ? null : x => onDouble(x[0]), (x, f, _) => d1(x[0], f), (x, f, _, _) => d2(x[0], f));

    private static IEnumerable<FunctionSpec> Build()
    {
        // Circular functions (A&S §4.3): sin' = cos, cos' = -sin, tan' = 1/cos², tan'' = 2 sin/cos³.
        yield return U(Fn.Sin, Math.Sin, double.Sin, (u, f) => Math.Cos(u), (u, f) => -Math.Sin(u));
        yield return U(Fn.Cos, Math.Cos, double.Cos, (u, f) => -Math.Sin(u), (u, f) => -Math.Cos(u));
        yield return U(Fn.Tan, Math.Tan, double.Tan, (u, f) => 1 / (Math.Cos(u) * Math.Cos(u)),
            (u, f) => 2 * Math.Sin(u) / (Math.Cos(u) * Math.Cos(u) * Math.Cos(u)));

        // Inverse circular functions (A&S §4.4): asin' = 1/√(1−u²), asin'' = u/(1−u²)^{3/2}; acos = π/2 − asin; atan' = 1/(1+u²), atan'' = −2u/(1+u²)².
        yield return U(Fn.Asin, Math.Asin, double.Asin, (u, f) => 1 / Math.Sqrt(1 - (u * u)), (u, f) => u / Math.Pow(1 - (u * u), 1.5));
        yield return U(Fn.Acos, Math.Acos, double.Acos, (u, f) => -1 / Math.Sqrt(1 - (u * u)), (u, f) => -u / Math.Pow(1 - (u * u), 1.5));
        yield return U(Fn.Atan, Math.Atan, double.Atan, (u, f) => 1 / (1 + (u * u)), (u, f) => -2 * u / ((1 + (u * u)) * (1 + (u * u))));

        // atan2(y, x), r = x² + y²: ∂/∂y = x/r, ∂/∂x = −y/r; ∂²/∂y² = −2xy/r², ∂²/∂x² = 2xy/r², ∂²/∂x∂y = (y² − x²)/r².
        yield return new FunctionSpec(Fn.Atan2, 2, a => Math.Atan2(a[0], a[1]), a => double.Atan2(a[0], a[1]),
            (a, f, i) =>
            {
                double y = a[0], x = a[1], r = (x * x) + (y * y);
                return i == 0 ? x / r : -y / r;
            },
            (a, f, i, j) =>
            {
                double y = a[0], x = a[1], r = (x * x) + (y * y);
                return (i, j) switch
                {
                    (0, 0) => -2 * x * y / (r * r),
                    (1, 1) => 2 * x * y / (r * r),
                    _ => ((y * y) - (x * x)) / (r * r),
                };
            });

        // Hyperbolic functions (A&S §4.5): sinh' = cosh, cosh' = sinh, tanh' = 1/cosh², tanh'' = −2 sinh/cosh³.
        yield return U(Fn.Sinh, Math.Sinh, double.Sinh, (u, f) => Math.Cosh(u), (u, f) => Math.Sinh(u));
        yield return U(Fn.Cosh, Math.Cosh, double.Cosh, (u, f) => Math.Sinh(u), (u, f) => Math.Cosh(u));
        yield return U(Fn.Tanh, Math.Tanh, double.Tanh, (u, f) => 1 / (Math.Cosh(u) * Math.Cosh(u)),
            (u, f) => -2 * Math.Sinh(u) / (Math.Cosh(u) * Math.Cosh(u) * Math.Cosh(u)));

        // Inverse hyperbolic functions (A&S §4.6): asinh' = (u²+1)^{-1/2}, acosh' = (u²−1)^{-1/2}, atanh' = 1/(1−u²).
        yield return U(Fn.Asinh, Math.Asinh, double.Asinh, (u, f) => 1 / Math.Sqrt((u * u) + 1), (u, f) => -u / Math.Pow((u * u) + 1, 1.5));
        yield return U(Fn.Acosh, Math.Acosh, double.Acosh, (u, f) => 1 / Math.Sqrt((u * u) - 1), (u, f) => -u / Math.Pow((u * u) - 1, 1.5));
        yield return U(Fn.Atanh, Math.Atanh, double.Atanh, (u, f) => 1 / (1 - (u * u)), (u, f) => 2 * u / ((1 - (u * u)) * (1 - (u * u))));

        // Exponential and logarithms (A&S §4.2, §4.1): exp' = exp; ln' = 1/u, ln'' = −1/u²; log_b u = ln u / ln b.
        yield return U(Fn.Exp, Math.Exp, double.Exp, (u, f) => Math.Exp(u), (u, f) => Math.Exp(u));
        yield return U(Fn.Log, Math.Log, double.Log, (u, f) => 1 / u, (u, f) => -1 / (u * u));
        yield return U(Fn.Log10, Math.Log10, double.Log10, (u, f) => 1 / (u * Ln10), (u, f) => -1 / (u * u * Ln10));
        yield return U(Fn.Log2, Math.Log2, double.Log2, (u, f) => 1 / (u * Ln2), (u, f) => -1 / (u * u * Ln2));

        // log(a, b) = ln a / ln b: ∂/∂a = 1/(a ln b), ∂/∂b = −ln a/(b ln²b); ∂²/∂a² = −1/(a² ln b),
        // ∂²/∂a∂b = −1/(a b ln²b), ∂²/∂b² = ln a (ln b + 2)/(b² ln³b).
        yield return new FunctionSpec(Fn.LogBase, 2, a => Math.Log(a[0], a[1]), a => double.Log(a[0], a[1]),
            (a, f, i) => i == 0 ? 1 / (a[0] * Math.Log(a[1])) : -Math.Log(a[0]) / (a[1] * Math.Log(a[1]) * Math.Log(a[1])),
            (a, f, i, j) =>
            {
                double la = Math.Log(a[0]), lb = Math.Log(a[1]);
                return (i, j) switch
                {
                    (0, 0) => -1 / (a[0] * a[0] * lb),
                    (1, 1) => la * (lb + 2) / (a[1] * a[1] * lb * lb * lb),
                    _ => -1 / (a[0] * a[1] * lb * lb),
                };
            });

        // Roots: √' = 1/(2√u), √'' = −1/(4 u√u); ∛' = 1/(3c²), ∛'' = −2/(9c⁵) with c = ∛u.
        yield return U(Fn.Sqrt, Math.Sqrt, double.Sqrt, (u, f) => 0.5 / Math.Sqrt(u), (u, f) => -0.25 / (u * Math.Sqrt(u)));
        yield return U(Fn.Cbrt, Math.Cbrt, double.Cbrt, (u, f) => 1 / (3 * Math.Cbrt(u) * Math.Cbrt(u)), (u, f) => -2 / (9 * Math.Pow(Math.Cbrt(u), 5)));

        // aᵖ: ∂/∂a = p aᵖ⁻¹, ∂/∂p = aᵖ ln a; ∂²/∂a² = p(p−1) aᵖ⁻², ∂²/∂p² = aᵖ ln²a, ∂²/∂a∂p = aᵖ⁻¹(1 + p ln a).
        yield return new FunctionSpec(Fn.Pow, 2, a => Math.Pow(a[0], a[1]), a => double.Pow(a[0], a[1]),
            (a, f, i) => i == 0 ? a[1] * Math.Pow(a[0], a[1] - 1) : Math.Pow(a[0], a[1]) * Math.Log(a[0]),
            (a, f, i, j) => (i, j) switch
            {
                (0, 0) => a[1] * (a[1] - 1) * Math.Pow(a[0], a[1] - 2),
                (1, 1) => Math.Pow(a[0], a[1]) * Math.Log(a[0]) * Math.Log(a[0]),
                _ => Math.Pow(a[0], a[1] - 1) * (1 + (a[1] * Math.Log(a[0]))),
            });

        // hypot(x, y) = h: ∂/∂x = x/h; ∂²/∂x² = y²/h³, ∂²/∂y² = x²/h³, ∂²/∂x∂y = −xy/h³.
        yield return new FunctionSpec(Fn.Hypot, 2, a => throw new InvalidOperationException("Math has no Hypot"), a => double.Hypot(a[0], a[1]),
            (a, f, i) => a[i] / Math.Sqrt((a[0] * a[0]) + (a[1] * a[1])),
            (a, f, i, j) =>
            {
                double h = Math.Sqrt((a[0] * a[0]) + (a[1] * a[1]));
                return i == j ? a[1 - i] * a[1 - i] / (h * h * h) : -a[0] * a[1] / (h * h * h);
            });

        // a·b + c: ∂/∂a = b, ∂/∂b = a, ∂/∂c = 1, ∂²/∂a∂b = 1.
        yield return new FunctionSpec(Fn.FusedMultiplyAdd, 3, a => Math.FusedMultiplyAdd(a[0], a[1], a[2]), a => double.FusedMultiplyAdd(a[0], a[1], a[2]),
            (a, f, i) => i switch { 0 => a[1], 1 => a[0], _ => 1 },
            (a, f, i, j) => (i, j) is (0, 1) or (1, 0) ? 1 : 0);

        // Not smooth everywhere; used only away from their kinks and jumps, where these are the derivatives.
        yield return U(Fn.Abs, Math.Abs, double.Abs, (u, f) => u > 0 ? 1 : -1, (u, f) => 0);
        yield return new FunctionSpec(Fn.Max, 2, a => Math.Max(a[0], a[1]), a => double.Max(a[0], a[1]),
            (a, f, i) => (a[0] > a[1]) == (i == 0) ? 1 : 0, (a, f, i, j) => 0);
        yield return new FunctionSpec(Fn.Min, 2, a => Math.Min(a[0], a[1]), a => double.Min(a[0], a[1]),
            (a, f, i) => (a[0] < a[1]) == (i == 0) ? 1 : 0, (a, f, i, j) => 0);
        yield return new FunctionSpec(Fn.Clamp, 3, a => Math.Clamp(a[0], a[1], a[2]), a => double.Clamp(a[0], a[1], a[2]),
            (a, f, i) =>
            {
                int returned = a[0] < a[1] ? 1 : a[0] > a[2] ? 2 : 0;
                return i == returned ? 1 : 0;
            },
            (a, f, i, j) => 0);
        yield return U(Fn.Sign, u => Math.Sign(u), u => double.Sign(u), (u, f) => 0, (u, f) => 0);
        yield return U(Fn.Floor, Math.Floor, double.Floor, (u, f) => 0, (u, f) => 0);
        yield return U(Fn.Ceiling, Math.Ceiling, double.Ceiling, (u, f) => 0, (u, f) => 0);
        yield return U(Fn.Round, Math.Round, double.Round, (u, f) => 0, (u, f) => 0);
        yield return U(Fn.Truncate, Math.Truncate, double.Truncate, (u, f) => 0, (u, f) => 0);
    }
}
