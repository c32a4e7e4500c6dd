using System;
using System.Numerics;
using DerivGen.Tests.Infrastructure;
using Xunit;

namespace DerivGen.Tests.Numerics.GenericMath;

/// <summary>
/// The generated generic code calls T.Exp, T.Sin, … where the float and double methods' derivative code calls MathF.Exp
/// and Math.Exp. Checked empirically on this runtime: at T = float and T = double each function of T gives the bits of
/// MathF's and Math's (so a generic loss at float is computed as a float loss written with MathF would be).
/// </summary>
public sealed class GenericHostTests
{
    private static readonly double[] Points = Grid();

    [Fact]
    public void FunctionsOfTAreMathFAtFloatAndMathAtDouble()
    {
        foreach (double x in Points)
        {
            float f = (float)x, g = (float)(0.37 + (x / 7));
            Same(MathF.Exp(f), Exp(f), Math.Exp(x), Exp(x), "Exp", x);
            Same(MathF.Log(f), Log(f), Math.Log(x), Log(x), "Log", x);
            Same(MathF.Log10(f), Log10(f), Math.Log10(x), Log10(x), "Log10", x);
            Same(MathF.Log2(f), Log2(f), Math.Log2(x), Log2(x), "Log2", x);
            Same(MathF.Sqrt(f), Sqrt(f), Math.Sqrt(x), Sqrt(x), "Sqrt", x);
            Same(MathF.Cbrt(f), Cbrt(f), Math.Cbrt(x), Cbrt(x), "Cbrt", x);
            Same(MathF.Sin(f), Sin(f), Math.Sin(x), Sin(x), "Sin", x);
            Same(MathF.Cos(f), Cos(f), Math.Cos(x), Cos(x), "Cos", x);
            Same(MathF.Tan(f), Tan(f), Math.Tan(x), Tan(x), "Tan", x);
            Same(MathF.Asin(f), Asin(f), Math.Asin(x), Asin(x), "Asin", x);
            Same(MathF.Acos(f), Acos(f), Math.Acos(x), Acos(x), "Acos", x);
            Same(MathF.Atan(f), Atan(f), Math.Atan(x), Atan(x), "Atan", x);
            Same(MathF.Sinh(f), Sinh(f), Math.Sinh(x), Sinh(x), "Sinh", x);
            Same(MathF.Cosh(f), Cosh(f), Math.Cosh(x), Cosh(x), "Cosh", x);
            Same(MathF.Tanh(f), Tanh(f), Math.Tanh(x), Tanh(x), "Tanh", x);
            Same(MathF.Asinh(f), Asinh(f), Math.Asinh(x), Asinh(x), "Asinh", x);
            Same(MathF.Acosh(f), Acosh(f), Math.Acosh(x), Acosh(x), "Acosh", x);
            Same(MathF.Atanh(f), Atanh(f), Math.Atanh(x), Atanh(x), "Atanh", x);
            Same(MathF.Pow(f, g), Pow(f, g), Math.Pow(x, g), Pow(x, (double)g), "Pow", x);
            Same(MathF.Atan2(f, g), Atan2(f, g), Math.Atan2(x, g), Atan2(x, (double)g), "Atan2", x);
            Same(MathF.Log(f, g), LogBase(f, g), Math.Log(x, g), LogBase(x, (double)g), "Log(x, b)", x);
            Same(MathF.FusedMultiplyAdd(f, g, f), Fma(f, g, f), Math.FusedMultiplyAdd(x, g, x), Fma(x, (double)g, x), "FusedMultiplyAdd", x);
        }
    }

    private static void Same(float mathF, float ofT, double math, double ofTDouble, string name, double x)
    {
        Check.SameBits(mathF, ofT, "float." + name + "(" + Check.R(x) + ") vs MathF");
        Check.SameBits(math, ofTDouble, "double." + name + "(" + Check.R(x) + ") vs Math");
    }

    /// <summary>Points across the domains (negative, tiny, near 1, large), and a few outside some of them (NaN alike).</summary>
    private static double[] Grid()
    {
        var points = new System.Collections.Generic.List<double> { 0, -0.0, 1e-300, 1e-30, 0.5, 1, 1.5, 2, Math.PI, 100, 1e10, 88.5, 710 };
        for (int i = -200; i <= 200; i++)
        {
            points.Add(i * 0.0731);
            points.Add(Math.Pow(1.37, i / 4.0));
        }

        return points.ToArray();
    }

    private static T Exp<T>(T x) where T : IFloatingPointIeee754<T> => T.Exp(x);

    private static T Log<T>(T x) where T : IFloatingPointIeee754<T> => T.Log(x);

    private static T Log10<T>(T x) where T : IFloatingPointIeee754<T> => T.Log10(x);

    private static T Log2<T>(T x) where T : IFloatingPointIeee754<T> => T.Log2(x);

    private static T Sqrt<T>(T x) where T : IFloatingPointIeee754<T> => T.Sqrt(x);

    private static T Cbrt<T>(T x) where T : IFloatingPointIeee754<T> => T.Cbrt(x);

    private static T Sin<T>(T x) where T : IFloatingPointIeee754<T> => T.Sin(x);

    private static T Cos<T>(T x) where T : IFloatingPointIeee754<T> => T.Cos(x);

    private static T Tan<T>(T x) where T : IFloatingPointIeee754<T> => T.Tan(x);

    private static T Asin<T>(T x) where T : IFloatingPointIeee754<T> => T.Asin(x);

    private static T Acos<T>(T x) where T : IFloatingPointIeee754<T> => T.Acos(x);

    private static T Atan<T>(T x) where T : IFloatingPointIeee754<T> => T.Atan(x);

    private static T Sinh<T>(T x) where T : IFloatingPointIeee754<T> => T.Sinh(x);

    private static T Cosh<T>(T x) where T : IFloatingPointIeee754<T> => T.Cosh(x);

    private static T Tanh<T>(T x) where T : IFloatingPointIeee754<T> => T.Tanh(x);

    private static T Asinh<T>(T x) where T : IFloatingPointIeee754<T> => T.Asinh(x);

    private static T Acosh<T>(T x) where T : IFloatingPointIeee754<T> => T.Acosh(x);

    private static T Atanh<T>(T x) where T : IFloatingPointIeee754<T> => T.Atanh(x);

    private static T Pow<T>(T x, T y) where T : IFloatingPointIeee754<T> => T.Pow(x, y);

    private static T Atan2<T>(T y, T x) where T : IFloatingPointIeee754<T> => T.Atan2(y, x);

    private static T LogBase<T>(T x, T b) where T : IFloatingPointIeee754<T> => T.Log(x, b);

    private static T Fma<T>(T a, T b, T c) where T : IFloatingPointIeee754<T> => T.FusedMultiplyAdd(a, b, c);
}
