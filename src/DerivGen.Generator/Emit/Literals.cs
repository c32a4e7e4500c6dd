using System;
using System.Globalization;
using DerivGen.Generator.Model;

namespace DerivGen.Generator.Emit;

/// <summary>Numeric literals: shortest round-trip form, invariant culture, so the text is the same on every machine.</summary>
internal static class Literals
{
    public static string CSharp(double value, ScalarType type)
    {
        switch (type)
        {
            case ScalarType.Int32:
                return ((int)value).ToString(CultureInfo.InvariantCulture);
            case ScalarType.Boolean:
                return value != 0 ? "true" : "false";
            case ScalarType.Generic:
                return Generic(value);
            case ScalarType.Single:
                float single = (float)value;
                if (float.IsNaN(single))
                {
                    return "float.NaN";
                }

                if (float.IsInfinity(single))
                {
                    return single > 0 ? "float.PositiveInfinity" : "float.NegativeInfinity";
                }

                return single.ToString("R", CultureInfo.InvariantCulture) + "f";
            default:
                if (double.IsNaN(value))
                {
                    return "double.NaN";
                }

                if (double.IsInfinity(value))
                {
                    return value > 0 ? "double.PositiveInfinity" : "double.NegativeInfinity";
                }

                string text = value.ToString("R", CultureInfo.InvariantCulture);
                return text.IndexOfAny(new[] { '.', 'E', 'e' }) >= 0 ? text : text + ".0";
        }
    }

    /// <summary>A constant in the plain notation of formulas: no suffixes, shortest round-trip digits.</summary>
    public static string Plain(double value, ScalarType type)
    {
        if (double.IsNaN(value) || double.IsInfinity(value))
        {
            return double.IsNaN(value) ? "NaN" : value > 0 ? "∞" : "-∞";
        }

        if (type == ScalarType.Boolean)
        {
            return value != 0 ? "true" : "false";
        }

        return type == ScalarType.Single
            ? ((float)value).ToString("R", CultureInfo.InvariantCulture)
            : value.ToString("R", CultureInfo.InvariantCulture);
    }

    /// <summary>
    /// A constant of the method's type parameter T: <c>T.Zero</c>, <c>T.One</c>, or <c>T.CreateTruncating(c)</c> with c
    /// an int literal where it is one and the shortest round-trip double otherwise — c rounded to T, the number a user's
    /// <c>T.CreateChecked(c)</c> gives (see ExpressionBuilder.IsFoldable for which constants are folded).
    /// </summary>
    private static string Generic(double value)
    {
        string sign = IsNegative(value) ? "-" : string.Empty;
        double magnitude = Math.Abs(value);
        if (magnitude == 0 || magnitude == 1)
        {
            return sign + (magnitude == 0 ? "T.Zero" : "T.One");
        }

        string text = magnitude == Math.Floor(magnitude) && magnitude <= int.MaxValue
            ? ((int)magnitude).ToString(CultureInfo.InvariantCulture)
            : CSharp(magnitude, ScalarType.Double);
        return sign + "T.CreateTruncating(" + text + ")";
    }

    public static bool IsNegative(double value) => value < 0 || (value == 0 && BitConverter.DoubleToInt64Bits(value) != 0);
}
