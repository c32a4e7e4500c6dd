// Part of scripts/check-package.sh: losses with data loops, branches, a recurrence and a call between
// [Differentiate] methods, written independently of the test suite, each with a hand-derived exact gradient.
// All data here are invented.
using System;
using DerivGen;

namespace Consumer;

public static partial class Fits
{
    public static readonly double[] T = { 0.0, 0.4, 0.9, 1.5, 2.2, 3.0 };
    public static readonly double[] Y = { 1.1, 1.5, 2.3, 2.8, 3.9, 4.6 };

    // Sum of squared residuals of the line a + b t.
    [Differentiate(nameof(a), nameof(b))]
    public static double Line(double a, double b, double[] t, double[] y)
    {
        double s = 0;
        for (int i = 0; i < t.Length; i++)
        {
            double r = a + b * t[i] - y[i];
            s += r * r;
        }

        return s;
    }

    // ∂/∂a = Σ 2r, ∂/∂b = Σ 2r t; Hessian [[2n, 2Σt], [2Σt, 2Σt²]].
    public static void LineExact(double a, double b, double[] g, double[] h)
    {
        g[0] = g[1] = 0;
        h[0] = h[1] = h[3] = 0;
        for (int i = 0; i < T.Length; i++)
        {
            double r = a + b * T[i] - Y[i];
            g[0] += 2 * r;
            g[1] += 2 * r * T[i];
            h[0] += 2;
            h[1] += 2 * T[i];
            h[3] += 2 * T[i] * T[i];
        }

        h[2] = h[1];
    }

    // Quadratic for small residuals, linear beyond 1 (a branch whose condition depends on the variables).
    [Differentiate(nameof(a), nameof(b))]
    public static double Robust(double a, double b, double[] t, double[] y)
    {
        double s = 0;
        foreach (double ti in t)
        {
            double r = a * ti + b - 2 * ti;
#pragma warning disable DG0007 // the switch between the pieces is intended
            if (Math.Abs(r) > 1)
            {
                s += 2 * Math.Abs(r) - 1;
            }
            else
            {
                s += r * r;
            }
#pragma warning restore DG0007
        }

        return s;
    }

    // Per point: ∂/∂r = 2 sign(r) beyond 1, else 2r; ∂r/∂a = t, ∂r/∂b = 1.
    public static void RobustExact(double a, double b, double[] g)
    {
        g[0] = g[1] = 0;
        foreach (double ti in T)
        {
            double r = a * ti + b - 2 * ti;
            double d = Math.Abs(r) > 1 ? 2 * Math.Sign(r) : 2 * r;
            g[0] += d * ti;
            g[1] += d;
        }
    }

    // A model function, differentiated on its own and called from the loss below.
    [Differentiate(nameof(a), nameof(k))]
    public static double Growth(double a, double k, double t) => a * Math.Exp(k * t);

    [Differentiate(nameof(a), nameof(k))]
    public static double GrowthFit(double a, double k, double[] t, double[] y)
    {
        double s = 0;
        for (int i = 0; i < t.Length; i++)
        {
            double r = Growth(a, k, t[i]) - y[i];
            s += r * r;
        }

        return s;
    }

    // ∂/∂a = Σ 2r e^{kt}, ∂/∂k = Σ 2r a t e^{kt}.
    public static void GrowthFitExact(double a, double k, double[] g)
    {
        g[0] = g[1] = 0;
        for (int i = 0; i < T.Length; i++)
        {
            double e = Math.Exp(k * T[i]), r = a * e - Y[i];
            g[0] += 2 * r * e;
            g[1] += 2 * r * a * T[i] * e;
        }
    }

    // Explicit Euler for x' = −k x from x(0) = c: after n steps x = c (1 − k dt)^n.
    [Differentiate(nameof(c), nameof(k))]
    public static double Decay(double c, double k, double dt, int n)
    {
        double x = c;
        for (int i = 0; i < n; i++)
        {
            x += -k * x * dt;
        }

        return x;
    }

    // ∂/∂c = (1 − k dt)^n, ∂/∂k = −c n dt (1 − k dt)^(n−1).
    public static void DecayExact(double c, double k, double dt, int n, double[] g)
    {
        g[0] = Math.Pow(1 - k * dt, n);
        g[1] = -c * n * dt * Math.Pow(1 - k * dt, n - 1);
    }

    // A polynomial fit with a vector of coefficients w (a vector variable): Σ_i (Σ_j w_j t_i^j − y_i)².
    [Differentiate(nameof(w))]
    public static double Poly(double[] w, double[] t, double[] y)
    {
        double s = 0;
        for (int i = 0; i < t.Length; i++)
        {
            double model = 0, power = 1;
            for (int j = 0; j < w.Length; j++)
            {
                model += w[j] * power;
                power *= t[i];
            }

            double r = model - y[i];
            s += r * r;
        }

        return s;
    }

    // ∂²/∂w_j∂w_k = Σ_i 2 t_i^(j+k).
    public static void PolyHessianExact(double[] w, double[] h)
    {
        int n = w.Length;
        Array.Clear(h, 0, h.Length);
        foreach (double t in T)
        {
            for (int j = 0; j < n; j++)
            {
                for (int k = 0; k < n; k++)
                {
                    h[j * n + k] += 2 * Math.Pow(t, j + k);
                }
            }
        }
    }

    private static double Squared(double v) => v * v;

    // Least squares of the line a + b t over the points before the first t ≥ stopAt, skipping points with y < 2
    // (break and continue on data), through a helper that is not marked [Differentiate].
    [Differentiate(nameof(a), nameof(b))]
    public static double Trimmed(double a, double b, double[] t, double[] y, double stopAt)
    {
        double s = 0;
        for (int i = 0; i < t.Length; i++)
        {
            if (t[i] >= stopAt)
            {
                break;
            }

            if (y[i] < 2)
            {
                continue;
            }

            s += Squared(a + b * t[i] - y[i]);
        }

        return s;
    }

    // Over the points kept: ∂/∂a = Σ 2r, ∂/∂b = Σ 2r t; Hessian [[2m, 2Σt], [2Σt, 2Σt²]].
    public static void TrimmedExact(double a, double b, double stopAt, double[] g, double[] h)
    {
        Array.Clear(g, 0, g.Length);
        Array.Clear(h, 0, h.Length);
        for (int i = 0; i < T.Length && T[i] < stopAt; i++)
        {
            if (Y[i] >= 2)
            {
                double r = a + b * T[i] - Y[i];
                g[0] += 2 * r;
                g[1] += 2 * r * T[i];
                h[0] += 2;
                h[1] += 2 * T[i];
                h[3] += 2 * T[i] * T[i];
            }
        }

        h[2] = h[1];
    }

    // ∂/∂w_j = Σ_i 2 r_i t_i^j.
    public static void PolyExact(double[] w, double[] g)
    {
        Array.Clear(g, 0, g.Length);
        for (int i = 0; i < T.Length; i++)
        {
            double model = 0;
            for (int j = 0; j < w.Length; j++)
            {
                model += w[j] * Math.Pow(T[i], j);
            }

            for (int j = 0; j < w.Length; j++)
            {
                g[j] += 2 * (model - Y[i]) * Math.Pow(T[i], j);
            }
        }
    }
}
