using System;
using System.Globalization;
using MathNet.Numerics.Differentiation;
using Xunit;

namespace DerivGen.Tests.Infrastructure;

/// <summary>Numeric assertions and the MathNet.Numerics finite-difference oracle.</summary>
internal static class Check
{
    /// <summary>
    /// Tolerance for comparing a generated derivative with a closed form evaluated in double by the test: the two are
    /// algebraically equal but may be evaluated in a different order (e.g. 1/cos^2 vs 1 + tan^2), so they can differ
    /// by a few ulps, times the condition number of the expression. 1e-13 relative allows ~500 ulps, far below any
    /// real derivative error (common practice for comparing equal formulas evaluated differently).
    /// </summary>
    public const double ClosedFormRelative = 1e-13;

    /// <summary>
    /// MathNet's central-difference gradient (3 points): truncation error ~h^2 f''' plus rounding ~eps*|f|/h; with
    /// MathNet's default relative step this gives roughly 1e-8..1e-10 relative error for smooth functions of moderate
    /// curvature (common practice; checked against closed forms in OracleSelfCheckTests).
    /// </summary>
    public const double FiniteDifferenceGradientRelative = 1e-7;

    /// <summary>
    /// MathNet's central-difference Hessian: a second difference divides rounding error by h^2, so only ~5 digits
    /// survive (common practice; checked against closed forms in OracleSelfCheckTests).
    /// </summary>
    public const double FiniteDifferenceHessianRelative = 1e-4;

    /// <summary>Absolute floor for finite-difference comparisons of entries that are (near) zero, scaled by the
    /// largest entry of the quantity compared.</summary>
    public const double FiniteDifferenceAbsoluteFloor = 1e-7;

    public static string R(double v) => v.ToString("R", CultureInfo.InvariantCulture);

    /// <summary>|actual - expected| &lt;= relative * |expected| + absolute.</summary>
    public static void Close(double expected, double actual, double relative, double absolute, string what)
    {
        bool ok = expected.Equals(actual) // same infinity, or both NaN
            || Math.Abs(actual - expected) <= relative * Math.Abs(expected) + absolute;
        Assert.True(ok, $"{what}: expected {R(expected)}, got {R(actual)} (difference {R(actual - expected)}, allowed {R(relative * Math.Abs(expected) + absolute)})");
    }

    public static void Close(ReadOnlySpan<double> expected, ReadOnlySpan<double> actual, double relative, double absolute, string what)
    {
        Assert.Equal(expected.Length, actual.Length);
        for (int i = 0; i < expected.Length; i++)
        {
            Close(expected[i], actual[i], relative, absolute, $"{what}[{i}]");
        }
    }

    /// <summary>Exact equality of the bit patterns (so 0.0 vs -0.0 and NaN payloads count).</summary>
    public static void SameBits(double expected, double actual, string what) =>
        Assert.True(BitConverter.DoubleToInt64Bits(expected) == BitConverter.DoubleToInt64Bits(actual),
            $"{what}: expected bits of {R(expected)}, got {R(actual)}");

    public static void SameBits(float expected, float actual, string what) =>
        Assert.True(BitConverter.SingleToInt32Bits(expected) == BitConverter.SingleToInt32Bits(actual),
            $"{what}: expected bits of {expected.ToString("R", CultureInfo.InvariantCulture)}, got {actual.ToString("R", CultureInfo.InvariantCulture)}");

    /// <summary>Every h[i,j] has exactly the bits of h[j,i] (row-major n*n).</summary>
    public static void ExactlySymmetric(ReadOnlySpan<double> hessian, int n)
    {
        for (int i = 0; i < n; i++)
        {
            for (int j = i + 1; j < n; j++)
            {
                SameBits(hessian[(i * n) + j], hessian[(j * n) + i], $"hessian[{i},{j}] vs hessian[{j},{i}]");
            }
        }
    }

    /// <summary>MathNet.Numerics' numerical gradient (central differences, default step) of f at x.</summary>
    public static double[] NumericalGradient(Func<double[], double> f, double[] x) =>
        new NumericalJacobian().Evaluate(f, x);

    /// <summary>MathNet.Numerics' numerical Hessian (central differences, default step) of f at x, row-major.</summary>
    public static double[] NumericalHessian(Func<double[], double> f, double[] x)
    {
        double[,] h = new NumericalHessian().Evaluate(f, x);
        int n = x.Length;
        var flat = new double[n * n];
        for (int i = 0; i < n; i++)
        {
            for (int j = 0; j < n; j++)
            {
                flat[(i * n) + j] = h[i, j];
            }
        }

        return flat;
    }

    /// <summary>Compares a generated gradient with MathNet's at x (tolerances: see the constants above).</summary>
    public static void GradientMatchesOracle(Func<double[], double> f, double[] x, ReadOnlySpan<double> gradient, string what)
    {
        double[] reference = NumericalGradient(f, x);
        double scale = MaxAbs(reference);
        Close(reference, gradient, FiniteDifferenceGradientRelative, FiniteDifferenceAbsoluteFloor * Math.Max(1, scale), $"{what} gradient vs MathNet NumericalJacobian");
    }

    /// <summary>Compares a generated Hessian with MathNet's at x (tolerances: see the constants above).</summary>
    public static void HessianMatchesOracle(Func<double[], double> f, double[] x, ReadOnlySpan<double> hessian, string what)
    {
        double[] reference = NumericalHessian(f, x);
        // The differences' rounding error grows with |f| (about ε·|f|/h², common practice), so the floor does too.
        double scale = Math.Max(MaxAbs(reference), Math.Abs(f(x)));
        Close(reference, hessian, FiniteDifferenceHessianRelative, FiniteDifferenceHessianRelative * Math.Max(1, scale), $"{what} Hessian vs MathNet NumericalHessian");
    }

    private static double MaxAbs(double[] values)
    {
        double m = 0;
        foreach (double v in values)
        {
            m = Math.Max(m, Math.Abs(v));
        }

        return m;
    }
}
