using System;
using MathNet.Numerics.Differentiation;

namespace DerivGen.Tests.PractitionerCorpus;

/// <summary>
/// The corpus's numerical reference: central differences from MathNet.Numerics
/// (<c>NumericalDerivative(3, 1)</c>, absolute step) at steps h, h/2 and h/4, combined by two steps of Richardson
/// extrapolation (D₁ = (4·D(h/2) − D(h))/3, then (16·D₁(h/4) − D₁(h/2))/15; the central difference's error is a
/// series in h², common practice). The truncation error is O(h⁶); with h = 10⁻²·|xᵢ| (10⁻² at 0; in float 4·10⁻²·max(|xᵢ|, 1), so that a small coordinate does not get a step its float noise swamps) the rounding error,
/// about ε·|f|/h, dominates: ~10⁻¹³·|f| in double and ~10⁻⁵·|f| in float.
/// </summary>
internal static class Richardson
{
    public static double[] Gradient(Func<double[], double> f, double[] x, Precision precision)
    {
        var g = new double[x.Length];
        for (int i = 0; i < x.Length; i++)
        {
            double h = precision == Precision.Single ? 4e-2 * Math.Max(Math.Abs(x[i]), 1) : 1e-2 * (x[i] != 0 ? Math.Abs(x[i]) : 1);
            double d0 = Central(f, x, i, h), d1 = Central(f, x, i, h / 2), d2 = Central(f, x, i, h / 4);
            double e0 = ((4 * d1) - d0) / 3, e1 = ((4 * d2) - d1) / 3;
            g[i] = ((16 * e1) - e0) / 15;
        }

        return g;
    }

    private static double Central(Func<double[], double> f, double[] x, int i, double h)
    {
        var derivative = new NumericalDerivative(3, 1) { StepType = StepType.Absolute, StepSize = h };
        return derivative.EvaluatePartialDerivative(f, (double[])x.Clone(), i, 1);
    }

    /// <summary>Relative tolerance (to max(|f|, largest |gᵢ|)) for comparing a gradient with this reference.</summary>
    public static double Tolerance(Precision precision) => precision == Precision.Single ? 2e-4 : 1e-7;
}
