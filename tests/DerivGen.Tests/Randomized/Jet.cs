using System;

namespace DerivGen.Tests.Randomized;

/// <summary>
/// A second-order forward-mode number: a value together with its gradient and Hessian with respect to n seed
/// variables (a truncated Taylor expansion of order 2, the "hyper-dual" idea). It is the test suite's own reference
/// for derivatives of random programs and shares no code with the generator: every operation goes through one
/// chain rule, <see cref="Apply"/>, given the operation's first and second partial derivatives written out in
/// <see cref="ReferenceFunctions"/> (plain calculus).
/// <para>
/// Alongside each derivative it carries a magnitude bound — the same chain rule evaluated with absolute values of
/// every factor — which bounds the terms a floating-point evaluation of that derivative adds up. Rounding errors are
/// a few ulps of that bound, so comparisons are made relative to it (common practice in error analysis: the
/// condition number of a sum is Σ|terms| / |Σ terms|).
/// </para>
/// </summary>
internal sealed class Jet
{
    private Jet(double value, double[] gradient, double[] hessian, double[] gradientBound, double[] hessianBound, bool isConstant)
    {
        Value = value;
        Gradient = gradient;
        Hessian = hessian;
        GradientBound = gradientBound;
        HessianBound = hessianBound;
        IsConstant = isConstant;
    }

    public double Value { get; }

    /// <summary>∂/∂v_i, i &lt; n.</summary>
    public double[] Gradient { get; }

    /// <summary>∂²/∂v_i∂v_j, row-major n×n.</summary>
    public double[] Hessian { get; }

    /// <summary>Σ|terms| of each gradient entry (see the class summary).</summary>
    public double[] GradientBound { get; }

    /// <summary>Σ|terms| of each Hessian entry.</summary>
    public double[] HessianBound { get; }

    /// <summary>True when the number does not depend on any seed variable (all derivatives are structurally zero).
    /// Terms multiplying such a number's derivatives are dropped, not multiplied by zero, so that a partial that is
    /// NaN or infinite where it does not matter (∂aᵖ/∂p for a negative base a and a constant p) cannot leak in.</summary>
    public bool IsConstant { get; }

    public int N => Gradient.Length;

    public static Jet Constant(double value, int n) =>
        new(value, new double[n], new double[n * n], new double[n], new double[n * n], isConstant: true);

    /// <summary>The seed variable number <paramref name="index"/> at <paramref name="value"/>.</summary>
    public static Jet Variable(double value, int index, int n)
    {
        Jet jet = new(value, new double[n], new double[n * n], new double[n], new double[n * n], isConstant: false);
        jet.Gradient[index] = 1;
        jet.GradientBound[index] = 1;
        return jet;
    }

    /// <summary>
    /// f(u₀, …, u_{k−1}) with value <paramref name="value"/>, first partials p_a = ∂f/∂u_a and second partials
    /// q_ab = ∂²f/∂u_a∂u_b (row-major k×k, symmetric). The second-order chain rule:
    /// ∇f = Σ_a p_a ∇u_a, ∇²f = Σ_a p_a ∇²u_a + Σ_ab q_ab ∇u_a ∇u_bᵀ.
    /// Partials of arguments that are constant are never read (they may be NaN: see <see cref="IsConstant"/>).
    /// <paramref name="slack"/> widens the magnitude bounds where the partials themselves are evaluated with cancellation.
    /// </summary>
    public static Jet Apply(double value, Jet[] arguments, Func<int, double> first, Func<int, int, double> second, (double First, double Second) slack = default)
    {
        int n = arguments[0].N;
        int k = arguments.Length;
        bool isConstant = true;
        foreach (Jet argument in arguments)
        {
            isConstant &= argument.IsConstant;
        }

        if (isConstant)
        {
            return Constant(value, n);
        }

        var p = new double[k];
        var q = new double[k * k];
        for (int a = 0; a < k; a++)
        {
            if (arguments[a].IsConstant)
            {
                continue;
            }

            p[a] = first(a);
            for (int b = 0; b < k; b++)
            {
                if (!arguments[b].IsConstant)
                {
                    q[(a * k) + b] = second(a, b);
                }
            }
        }

        var g = new double[n];
        var h = new double[n * n];
        var gb = new double[n];
        var hb = new double[n * n];
        for (int a = 0; a < k; a++)
        {
            Jet u = arguments[a];
            if (u.IsConstant)
            {
                continue;
            }

            double pa = p[a], pab = Math.Abs(pa) + slack.First;
            for (int i = 0; i < n; i++)
            {
                g[i] += pa * u.Gradient[i];
                gb[i] += pab * u.GradientBound[i];
            }

            for (int ij = 0; ij < n * n; ij++)
            {
                h[ij] += pa * u.Hessian[ij];
                hb[ij] += pab * u.HessianBound[ij];
            }

            for (int b = 0; b < k; b++)
            {
                Jet w = arguments[b];
                double qab = q[(a * k) + b];
                if (w.IsConstant || (qab == 0 && slack.Second == 0))
                {
                    continue;
                }

                double qabs = Math.Abs(qab) + slack.Second;
                for (int i = 0; i < n; i++)
                {
                    for (int j = 0; j < n; j++)
                    {
                        h[(i * n) + j] += qab * u.Gradient[i] * w.Gradient[j];
                        hb[(i * n) + j] += qabs * u.GradientBound[i] * w.GradientBound[j];
                    }
                }
            }
        }

        return new Jet(value, g, h, gb, hb, isConstant: false);
    }

    /// <summary>A one-argument function with value f, f′ and f″ at the argument.</summary>
    public static Jet Unary(Jet u, double value, double d1, double d2) =>
        Apply(value, new[] { u }, _ => d1, (_, _) => d2);

    // The four arithmetic operations, as functions of two arguments (plain calculus).
    public static Jet operator +(Jet a, Jet b) => Apply(a.Value + b.Value, new[] { a, b }, _ => 1, (_, _) => 0);

    public static Jet operator -(Jet a, Jet b) => Apply(a.Value - b.Value, new[] { a, b }, i => i == 0 ? 1 : -1, (_, _) => 0);

    public static Jet operator -(Jet a) => Apply(-a.Value, new[] { a }, _ => -1, (_, _) => 0);

    // ∂(ab)/∂a = b, ∂(ab)/∂b = a, ∂²(ab)/∂a∂b = 1.
    public static Jet operator *(Jet a, Jet b) =>
        Apply(a.Value * b.Value, new[] { a, b }, i => i == 0 ? b.Value : a.Value, (i, j) => i != j ? 1 : 0);

    // ∂(a/b)/∂a = 1/b, ∂/∂b = −a/b², ∂²/∂a∂b = −1/b², ∂²/∂b² = 2a/b³, ∂²/∂a² = 0.
    public static Jet operator /(Jet a, Jet b)
    {
        double x = a.Value, y = b.Value;
        return Apply(x / y, new[] { a, b },
            i => i == 0 ? 1 / y : -x / (y * y),
            (i, j) => (i, j) switch
            {
                (0, 0) => 0,
                (1, 1) => 2 * x / (y * y * y),
                _ => -1 / (y * y),
            });
    }

    /// <summary>The same number seen as a value of another (converted) type: derivatives unchanged.</summary>
    public Jet WithValue(double value) => new(value, Gradient, Hessian, GradientBound, HessianBound, IsConstant);
}
