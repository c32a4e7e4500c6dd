using System;
using DerivGen;

namespace DerivGen.Benchmarks;

/// <summary>The losses measured. All data are invented (deterministic formulas).</summary>
public static partial class Losses
{
    // Least squares of y ≈ a·exp(−b·t) + c over a data set.
    [Differentiate(nameof(a), nameof(b), nameof(c))]
    public static double DecayFit(double a, double b, double c, double[] t, double[] y)
    {
        double s = 0;
        for (int i = 0; i < t.Length; i++)
        {
            double r = (a * Math.Exp(-b * t[i])) + c - y[i];
            s += r * r;
        }

        return s;
    }

    // Logistic regression negative log-likelihood, weight vector w and bias.
    [Differentiate(nameof(bias), nameof(w), Hessian = false)]
    public static double Logistic(double bias, double[] w, double[,] x, double[] y)
    {
        double s = 0;
        for (int i = 0; i < y.Length; i++)
        {
            double z = bias;
            for (int j = 0; j < w.Length; j++)
            {
                z += w[j] * x[i, j];
            }

            s += Math.Log(1 + Math.Exp(-z)) + ((1 - y[i]) * z);
        }

        return s;
    }

    // Rosenbrock's function (Nocedal & Wright, ch. 2).
    [Differentiate]
    public static double Rosenbrock(double x, double y) => ((1 - x) * (1 - x)) + (100 * (y - (x * x)) * (y - (x * x)));
}

/// <summary>Gradients written by hand, the way a careful engineer would: one pass, shared subexpressions.</summary>
public static class HandWritten
{
    public static double DecayFit(double a, double b, double c, double[] t, double[] y, Span<double> g)
    {
        double s = 0, ga = 0, gb = 0, gc = 0;
        for (int i = 0; i < t.Length; i++)
        {
            double e = Math.Exp(-b * t[i]);
            double r = (a * e) + c - y[i];
            s += r * r;
            ga += 2 * r * e;
            gb -= 2 * r * a * t[i] * e;
            gc += 2 * r;
        }

        g[0] = ga;
        g[1] = gb;
        g[2] = gc;
        return s;
    }

    public static double Logistic(double bias, double[] w, double[,] x, double[] y, Span<double> g)
    {
        double s = 0;
        g.Slice(0, w.Length + 1).Clear();
        for (int i = 0; i < y.Length; i++)
        {
            double z = bias;
            for (int j = 0; j < w.Length; j++)
            {
                z += w[j] * x[i, j];
            }

            double e = Math.Exp(-z);
            s += Math.Log(1 + e) + ((1 - y[i]) * z);
            double d = (1 - y[i]) - (e / (1 + e));
            g[0] += d;
            for (int j = 0; j < w.Length; j++)
            {
                g[1 + j] += d * x[i, j];
            }
        }

        return s;
    }

    public static double Rosenbrock(double x, double y, Span<double> g)
    {
        double u = 1 - x, v = y - (x * x);
        g[0] = (-2 * u) - (400 * x * v);
        g[1] = 200 * v;
        return (u * u) + (100 * v * v);
    }
}
