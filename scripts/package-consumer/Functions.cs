// Functions for the package-consumer check (scripts/check-package.sh). They are written for this check alone, apart
// from the project's test suite, and each comes with its partial derivatives derived by hand (plain calculus: the
// product, quotient and chain rules with the standard derivatives of the elementary functions, as tabulated e.g. in
// Abramowitz & Stegun, Handbook of Mathematical Functions, ch. 4). The closed forms are the reference the generated
// methods are checked against; none of them is copied from generated output.
using System;
using DerivGen;

namespace Consumer;

public static partial class Smooth
{
    // f = x e^(-y^2)
    [Differentiate]
    public static double Bump(double x, double y) => x * double.Exp(-y * y);

    public static void BumpExact(double x, double y, double[] g, double[] h)
    {
        double e = Math.Exp(-y * y);
        g[0] = e;
        g[1] = -2 * x * y * e;
        h[0] = 0; h[1] = -2 * y * e;
        h[2] = h[1]; h[3] = x * e * (4 * y * y - 2);
    }

    // f = ln(1 + x^2) cos y
    [Differentiate]
    public static double LogCos(double x, double y) => Math.Log(1 + x * x) * Math.Cos(y);

    public static void LogCosExact(double x, double y, double[] g, double[] h)
    {
        double l = Math.Log(1 + x * x), d = 1 + x * x;
        g[0] = 2 * x * Math.Cos(y) / d;
        g[1] = -l * Math.Sin(y);
        h[0] = 2 * Math.Cos(y) * (1 - x * x) / (d * d);
        h[1] = -2 * x * Math.Sin(y) / d;
        h[2] = h[1];
        h[3] = -l * Math.Cos(y);
    }

    // f = r = sqrt(x^2 + y^2 + z^2 + 1): df/dx_i = x_i / r, d2f/dx_i dx_j = (delta_ij r^2 - x_i x_j) / r^3
    [Differentiate]
    public static double Radius(double x, double y, double z) => Math.Sqrt(x * x + y * y + z * z + 1);

    public static void RadiusExact(double x, double y, double z, double[] g, double[] h)
    {
        double[] v = { x, y, z };
        double r = Math.Sqrt(x * x + y * y + z * z + 1);
        for (int i = 0; i < 3; i++)
        {
            g[i] = v[i] / r;
            for (int j = 0; j < 3; j++)
            {
                h[3 * i + j] = ((i == j ? r * r : 0) - v[i] * v[j]) / (r * r * r);
            }
        }
    }

    // A block body with locals and compound assignments; a is a constant, not a variable.
    // f = N / D with N = (a x - y)^2 + tanh(x y), D = 1 + x^2
    [Differentiate(nameof(x), nameof(y))]
    public static double Blend(double x, double y, double a)
    {
        double u = a * x - y;
        double v = u * u;
        v += Math.Tanh(x * y);
        v /= 1 + x * x;
        return v;
    }

    public static void BlendExactGradient(double x, double y, double a, double[] g)
    {
        double u = a * x - y, t = Math.Tanh(x * y), s2 = 1 - t * t;
        double n = u * u + t, d = 1 + x * x;
        double nx = 2 * a * u + y * s2, ny = -2 * u + x * s2;
        g[0] = nx / d - 2 * x * n / (d * d);
        g[1] = ny / d;
    }

    // f = x^2.5 atan2(y, x) + hypot(x, y), for x > 0
    [Differentiate]
    public static double PowerAngle(double x, double y) => Math.Pow(x, 2.5) * Math.Atan2(y, x) + double.Hypot(x, y);

    public static void PowerAngleExactGradient(double x, double y, double[] g)
    {
        double s = x * x + y * y, r = Math.Sqrt(s), a = Math.Atan2(y, x);
        g[0] = 2.5 * Math.Pow(x, 1.5) * a - Math.Pow(x, 2.5) * y / s + x / r;
        g[1] = Math.Pow(x, 2.5) * x / s + y / r;
    }

    // f = tan x asin y + acosh(1 + x^2 + y^2) + fma(x, y, atanh(y / 2)), for |y| < 1 and (x, y) != 0
    [Differentiate]
    public static double Trig(double x, double y) =>
        Math.Tan(x) * Math.Asin(y) + Math.Acosh(1 + x * x + y * y) + Math.FusedMultiplyAdd(x, y, Math.Atanh(0.5 * y));

    public static void TrigExactGradient(double x, double y, double[] g)
    {
        double t = Math.Tan(x), u = 1 + x * x + y * y, q = Math.Sqrt(u * u - 1);
        g[0] = (1 + t * t) * Math.Asin(y) + 2 * x / q + y;
        g[1] = t / Math.Sqrt(1 - y * y) + 2 * y / q + x + 0.5 / (1 - 0.25 * y * y);
    }

    // Only the gradient is generated. f = log10 x + log2 y + log_3(x y), for x, y > 0
    [Differentiate(Hessian = false)]
    public static double Logs(double x, double y) => Math.Log10(x) + Math.Log2(y) + Math.Log(x * y, 3);

    public static void LogsExactGradient(double x, double y, double[] g)
    {
        g[0] = 1 / (x * Math.Log(10)) + 1 / (x * Math.Log(3));
        g[1] = 1 / (y * Math.Log(2)) + 1 / (y * Math.Log(3));
    }

    // float: f = sin x e^(y/2) / (1 + x^2)
    [Differentiate]
    public static float Wave(float x, float y) => MathF.Sin(x) * MathF.Exp(0.5f * y) / (1f + x * x);

    public static void WaveExactGradient(double x, double y, double[] g)
    {
        double e = Math.Exp(0.5 * y), d = 1 + x * x;
        g[0] = e * (Math.Cos(x) / d - 2 * x * Math.Sin(x) / (d * d));
        g[1] = 0.5 * Math.Sin(x) * e / d;
    }
}

public static partial class Kinks
{
    // Non-smooth on purpose. The project builds with warnings as errors, so this also checks that DG0007 can be
    // suppressed with #pragma like any compiler warning.
#pragma warning disable DG0007 // the kinks of |x| and max are intended here
    [Differentiate]
    public static double Kink(double x, double y) => Math.Abs(x) * y + Math.Max(x, y);
#pragma warning restore DG0007
}

public partial class Outer
{
    /// <summary>An instance method in a nested partial type, with an int constant and a static readonly field.</summary>
    public partial class Spring
    {
        private static readonly double Scale = 1.5;

        // f = Scale k sinh(p) cbrt(q) + asinh(p q); k is an int constant converted to double
        [Differentiate(nameof(p), nameof(q))]
        internal double Energy(double p, double q, int k) => Scale * k * Math.Sinh(p) * Math.Cbrt(q) + Math.Asinh(p * q);

        internal static void EnergyExact(double p, double q, int k, double[] g, double[] h)
        {
            double c = Math.Cbrt(q), w = 1 / Math.Sqrt(1 + p * p * q * q), w3 = w * w * w;
            double sk = Scale * k, c1 = 1 / (3 * c * c), c2 = -2 / (9 * Math.Pow(c, 5));
            g[0] = sk * Math.Cosh(p) * c + q * w;
            g[1] = sk * Math.Sinh(p) * c1 + p * w;
            h[0] = sk * Math.Sinh(p) * c - p * q * q * q * w3;
            h[1] = sk * Math.Cosh(p) * c1 + w - p * p * q * q * w3;
            h[2] = h[1];
            h[3] = sk * Math.Sinh(p) * c2 - p * p * p * q * w3;
        }
    }
}
