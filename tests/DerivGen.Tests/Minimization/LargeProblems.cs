using System;
using DerivGen.Minimization;

namespace DerivGen.Tests.Minimization;

/// <summary>
/// Variable-dimension problems of Moré, Garbow &amp; Hillstrom, "Testing unconstrained optimization software",
/// ACM TOMS 7(1), 1981 (numbered as there; residuals, starting points and f* from memory of the paper), as
/// <see cref="IHessianVectorObjective"/> structs for any n. f = Σ rᵢ². The gradients and Hessian–vector products are
/// written by hand (plain calculus, derived in the comments; checked against MathNet.Numerics finite differences of
/// the hand gradient in <see cref="NewtonCgTests"/>). They become generated code (<c>MGradient</c>,
/// <c>MHessianVectorProduct</c>) once the generator emits Hessian–vector products (issue 15, item 1). Every
/// product is O(n) and allocates nothing.
/// </summary>
internal static class LargeProblems
{
    /// <summary>Runs a minimiser on problem <paramref name="number"/> (dispatch to the struct, so that the minimiser
    /// is called with the concrete type).</summary>
    public static MinimizeResult Run(int number, bool newtonCg, double[] x, MinimizeSettings settings, MinimizeWorkspace? workspace = null) => number switch
    {
        21 => Run(new ExtendedRosenbrock(), newtonCg, x, settings, workspace),
        22 => Run(new ExtendedPowell(), newtonCg, x, settings, workspace),
        23 => Run(new PenaltyOne(), newtonCg, x, settings, workspace),
        25 => Run(new VariablyDimensioned(), newtonCg, x, settings, workspace),
        30 => Run(new BroydenTridiagonal(), newtonCg, x, settings, workspace),
        31 => Run(new BroydenBanded(), newtonCg, x, settings, workspace),
        _ => throw new ArgumentOutOfRangeException(nameof(number)),
    };

    /// <summary>The problem's objective as the interface (for the derivative checks, where boxing does not matter).</summary>
    public static IHessianVectorObjective Objective(int number) => number switch
    {
        21 => new ExtendedRosenbrock(),
        22 => new ExtendedPowell(),
        23 => new PenaltyOne(),
        25 => new VariablyDimensioned(),
        30 => new BroydenTridiagonal(),
        31 => new BroydenBanded(),
        _ => throw new ArgumentOutOfRangeException(nameof(number)),
    };

    /// <summary>The paper's standard starting point for n variables.</summary>
    public static double[] Start(int number, int n)
    {
        var x = new double[n];
        for (int j = 0; j < n; j++)
        {
            x[j] = number switch
            {
                21 => j % 2 == 0 ? -1.2 : 1,
                22 => (j % 4) switch { 0 => 3, 1 => -1, 2 => 0, _ => 1 },
                23 => j + 1,
                25 => 1 - ((j + 1) / (double)n),
                30 or 31 => -1,
                _ => throw new ArgumentOutOfRangeException(nameof(number)),
            };
        }

        return x;
    }

    private static MinimizeResult Run<T>(T objective, bool newtonCg, double[] x, MinimizeSettings settings, MinimizeWorkspace? workspace)
        where T : struct, IHessianVectorObjective =>
        newtonCg ? Minimize.NewtonCg(objective, x, settings, workspace) : Minimize.LimitedMemoryBfgs(objective, x, settings, workspace);

    /// <summary>MGH 21, n even: r₂ₖ₋₁ = 10(x₂ₖ − x₂ₖ₋₁²), r₂ₖ = 1 − x₂ₖ₋₁. Per pair (a, b), t = b − a²:
    /// f = 100t² + (1 − a)², ∂f/∂a = −400at − 2(1 − a), ∂f/∂b = 200t, H = [[1200a² − 400b + 2, −400a], [−400a, 200]].</summary>
    public readonly struct ExtendedRosenbrock : IHessianVectorObjective
    {
        public double Value(ReadOnlySpan<double> x)
        {
            double f = 0;
            for (int k = 0; k + 1 < x.Length; k += 2)
            {
                double a = x[k], t = x[k + 1] - (a * a);
                f += (100 * t * t) + ((1 - a) * (1 - a));
            }

            return f;
        }

        public double ValueAndGradient(ReadOnlySpan<double> x, Span<double> g)
        {
            for (int k = 0; k + 1 < x.Length; k += 2)
            {
                double a = x[k], t = x[k + 1] - (a * a);
                g[k] = (-400 * a * t) - (2 * (1 - a));
                g[k + 1] = 200 * t;
            }

            return Value(x);
        }

        public double ValueGradientHessianVector(ReadOnlySpan<double> x, ReadOnlySpan<double> v, Span<double> g, Span<double> hv)
        {
            for (int k = 0; k + 1 < x.Length; k += 2)
            {
                double a = x[k], b = x[k + 1];
                double haa = (1200 * a * a) - (400 * b) + 2, hab = -400 * a;
                hv[k] = (haa * v[k]) + (hab * v[k + 1]);
                hv[k + 1] = (hab * v[k]) + (200 * v[k + 1]);
            }

            return ValueAndGradient(x, g);
        }
    }

    /// <summary>MGH 22, n a multiple of 4: per block (a, b, c, d), r = (a + 10b, √5(c − d), (b − 2c)², √10(a − d)²),
    /// so with u = b − 2c, w = a − d: f = (a + 10b)² + 5(c − d)² + u⁴ + 10w⁴; ∇f = (2(a + 10b) + 40w³,
    /// 20(a + 10b) + 4u³, 10(c − d) − 8u³, −10(c − d) − 40w³); H = the constant part (2, 20; 20, 200 on a, b and
    /// 10, −10; −10, 10 on c, d) + 12u² ∇u∇uᵀ + 120w² ∇w∇wᵀ, ∇u = (0, 1, −2, 0), ∇w = (1, 0, 0, −1).</summary>
    public readonly struct ExtendedPowell : IHessianVectorObjective
    {
        public double Value(ReadOnlySpan<double> x)
        {
            double f = 0;
            for (int k = 0; k + 3 < x.Length; k += 4)
            {
                double a = x[k], b = x[k + 1], c = x[k + 2], d = x[k + 3];
                double r1 = a + (10 * b), u = b - (2 * c), w = a - d;
                f += (r1 * r1) + (5 * (c - d) * (c - d)) + (u * u * u * u) + (10 * w * w * w * w);
            }

            return f;
        }

        public double ValueAndGradient(ReadOnlySpan<double> x, Span<double> g)
        {
            for (int k = 0; k + 3 < x.Length; k += 4)
            {
                double a = x[k], b = x[k + 1], c = x[k + 2], d = x[k + 3];
                double r1 = a + (10 * b), u = b - (2 * c), w = a - d;
                g[k] = (2 * r1) + (40 * w * w * w);
                g[k + 1] = (20 * r1) + (4 * u * u * u);
                g[k + 2] = (10 * (c - d)) - (8 * u * u * u);
                g[k + 3] = (-10 * (c - d)) - (40 * w * w * w);
            }

            return Value(x);
        }

        public double ValueGradientHessianVector(ReadOnlySpan<double> x, ReadOnlySpan<double> v, Span<double> g, Span<double> hv)
        {
            for (int k = 0; k + 3 < x.Length; k += 4)
            {
                double u = x[k + 1] - (2 * x[k + 2]), w = x[k] - x[k + 3];
                double cu = 12 * u * u * (v[k + 1] - (2 * v[k + 2]));
                double cw = 120 * w * w * (v[k] - v[k + 3]);
                hv[k] = (2 * v[k]) + (20 * v[k + 1]) + cw;
                hv[k + 1] = (20 * v[k]) + (200 * v[k + 1]) + cu;
                hv[k + 2] = (10 * (v[k + 2] - v[k + 3])) - (2 * cu);
                hv[k + 3] = (-10 * (v[k + 2] - v[k + 3])) - cw;
            }

            return ValueAndGradient(x, g);
        }
    }

    /// <summary>MGH 23: rⱼ = √a (xⱼ − 1), j = 1..n, a = 10⁻⁵, r_{n+1} = Σ xⱼ² − ¼. With S = Σ xⱼ² − ¼:
    /// f = a Σ (xⱼ − 1)² + S², ∂f/∂xⱼ = 2a(xⱼ − 1) + 4S xⱼ, H = (2a + 4S) I + 8 x xᵀ.</summary>
    public readonly struct PenaltyOne : IHessianVectorObjective
    {
        private const double A = 1e-5;

        public double Value(ReadOnlySpan<double> x)
        {
            double sum = 0, squares = 0;
            for (int j = 0; j < x.Length; j++)
            {
                sum += (x[j] - 1) * (x[j] - 1);
                squares += x[j] * x[j];
            }

            double s = squares - 0.25;
            return (A * sum) + (s * s);
        }

        public double ValueAndGradient(ReadOnlySpan<double> x, Span<double> g)
        {
            double s = DotSelf(x) - 0.25;
            for (int j = 0; j < x.Length; j++)
            {
                g[j] = (2 * A * (x[j] - 1)) + (4 * s * x[j]);
            }

            return Value(x);
        }

        public double ValueGradientHessianVector(ReadOnlySpan<double> x, ReadOnlySpan<double> v, Span<double> g, Span<double> hv)
        {
            double s = DotSelf(x) - 0.25, xv = 0;
            for (int j = 0; j < x.Length; j++)
            {
                xv += x[j] * v[j];
            }

            for (int j = 0; j < x.Length; j++)
            {
                hv[j] = (((2 * A) + (4 * s)) * v[j]) + (8 * xv * x[j]);
            }

            return ValueAndGradient(x, g);
        }

        private static double DotSelf(ReadOnlySpan<double> x)
        {
            double s = 0;
            for (int j = 0; j < x.Length; j++)
            {
                s += x[j] * x[j];
            }

            return s;
        }
    }

    /// <summary>MGH 25: rⱼ = xⱼ − 1, j = 1..n, r_{n+1} = s, r_{n+2} = s² with s = Σ j (xⱼ − 1). f = Σ (xⱼ − 1)² + s² + s⁴,
    /// ∂f/∂xⱼ = 2(xⱼ − 1) + j (2s + 4s³), H = 2I + (2 + 12s²) u uᵀ with uⱼ = j.</summary>
    public readonly struct VariablyDimensioned : IHessianVectorObjective
    {
        public double Value(ReadOnlySpan<double> x)
        {
            double sum = 0, s = Weighted(x);
            for (int j = 0; j < x.Length; j++)
            {
                sum += (x[j] - 1) * (x[j] - 1);
            }

            return sum + (s * s) + (s * s * s * s);
        }

        public double ValueAndGradient(ReadOnlySpan<double> x, Span<double> g)
        {
            double s = Weighted(x), c = (2 * s) + (4 * s * s * s);
            for (int j = 0; j < x.Length; j++)
            {
                g[j] = (2 * (x[j] - 1)) + ((j + 1) * c);
            }

            return Value(x);
        }

        public double ValueGradientHessianVector(ReadOnlySpan<double> x, ReadOnlySpan<double> v, Span<double> g, Span<double> hv)
        {
            double s = Weighted(x), uv = 0;
            for (int j = 0; j < x.Length; j++)
            {
                uv += (j + 1) * v[j];
            }

            double c = (2 + (12 * s * s)) * uv;
            for (int j = 0; j < x.Length; j++)
            {
                hv[j] = (2 * v[j]) + ((j + 1) * c);
            }

            return ValueAndGradient(x, g);
        }

        private static double Weighted(ReadOnlySpan<double> x)
        {
            double s = 0;
            for (int j = 0; j < x.Length; j++)
            {
                s += (j + 1) * (x[j] - 1);
            }

            return s;
        }
    }

    /// <summary>MGH 30: rᵢ = (3 − 2xᵢ)xᵢ − xᵢ₋₁ − 2xᵢ₊₁ + 1 (x₀ = x_{n+1} = 0), m = n. J is tridiagonal (∂rᵢ/∂xᵢ = 3 − 4xᵢ,
    /// ∂rᵢ/∂xᵢ₋₁ = −1, ∂rᵢ/∂xᵢ₊₁ = −2) and ∇²rᵢ has the single entry −4 at (i, i), so ∇f = 2Jᵀr and
    /// H v = 2(Jᵀ(Jv) − 4 diag(r) v).</summary>
    public readonly struct BroydenTridiagonal : IHessianVectorObjective
    {
        public double Value(ReadOnlySpan<double> x)
        {
            double f = 0;
            for (int i = 0; i < x.Length; i++)
            {
                double r = R(x, i);
                f += r * r;
            }

            return f;
        }

        public double ValueAndGradient(ReadOnlySpan<double> x, Span<double> g)
        {
            int n = x.Length;
            for (int j = 0; j < n; j++)
            {
                // (Jᵀr)ⱼ = (3 − 4xⱼ) rⱼ − rⱼ₊₁ − 2 rⱼ₋₁ (rⱼ₊₁ holds −xⱼ, rⱼ₋₁ holds −2xⱼ).
                double next = j + 1 < n ? R(x, j + 1) : 0, previous = j > 0 ? R(x, j - 1) : 0;
                g[j] = 2 * (((3 - (4 * x[j])) * R(x, j)) - next - (2 * previous));
            }

            return Value(x);
        }

        public double ValueGradientHessianVector(ReadOnlySpan<double> x, ReadOnlySpan<double> v, Span<double> g, Span<double> hv)
        {
            int n = x.Length;
            for (int j = 0; j < n; j++)
            {
                double next = j + 1 < n ? Jv(x, v, j + 1) : 0, previous = j > 0 ? Jv(x, v, j - 1) : 0;
                double jtjv = ((3 - (4 * x[j])) * Jv(x, v, j)) - next - (2 * previous);
                hv[j] = 2 * (jtjv - (4 * R(x, j) * v[j]));
            }

            return ValueAndGradient(x, g);
        }

        private static double At(ReadOnlySpan<double> x, int i) => i >= 0 && i < x.Length ? x[i] : 0;

        private static double R(ReadOnlySpan<double> x, int i) => ((3 - (2 * x[i])) * x[i]) - At(x, i - 1) - (2 * At(x, i + 1)) + 1;

        private static double Jv(ReadOnlySpan<double> x, ReadOnlySpan<double> v, int i) => ((3 - (4 * x[i])) * v[i]) - At(v, i - 1) - (2 * At(v, i + 1));
    }

    /// <summary>MGH 31: rᵢ = xᵢ(2 + 5xᵢ²) + 1 − Σ_{j ∈ Jᵢ} xⱼ(1 + xⱼ), Jᵢ = {j ≠ i : max(1, i − 5) ≤ j ≤ min(n, i + 1)},
    /// m = n. ∂rᵢ/∂xᵢ = 2 + 15xᵢ², ∂rᵢ/∂xⱼ = −(1 + 2xⱼ) for j ∈ Jᵢ; ∇²rᵢ is diagonal with 30xᵢ at (i, i) and −2 at
    /// (j, j), j ∈ Jᵢ. So ∇f = 2Jᵀr and H v = 2(Jᵀ(Jv) + Σᵢ rᵢ ∇²rᵢ v); column j of J has its entries in rows
    /// i ∈ [j − 1, j + 5] (j ∈ Jᵢ ⇔ i − 5 ≤ j ≤ i + 1).</summary>
    public readonly struct BroydenBanded : IHessianVectorObjective
    {
        public double Value(ReadOnlySpan<double> x)
        {
            double f = 0;
            for (int i = 0; i < x.Length; i++)
            {
                double r = R(x, i);
                f += r * r;
            }

            return f;
        }

        public double ValueAndGradient(ReadOnlySpan<double> x, Span<double> g)
        {
            int n = x.Length;
            for (int j = 0; j < n; j++)
            {
                double sum = 0;
                for (int i = Math.Max(0, j - 1); i <= Math.Min(n - 1, j + 5); i++)
                {
                    sum += Entry(x, i, j) * R(x, i);
                }

                g[j] = 2 * sum;
            }

            return Value(x);
        }

        public double ValueGradientHessianVector(ReadOnlySpan<double> x, ReadOnlySpan<double> v, Span<double> g, Span<double> hv)
        {
            int n = x.Length;
            for (int j = 0; j < n; j++)
            {
                double sum = 0, curvature = 0;
                for (int i = Math.Max(0, j - 1); i <= Math.Min(n - 1, j + 5); i++)
                {
                    sum += Entry(x, i, j) * Jv(x, v, i);
                    if (i != j)
                    {
                        curvature += -2 * R(x, i);
                    }
                }

                curvature += 30 * x[j] * R(x, j);
                hv[j] = 2 * (sum + (curvature * v[j]));
            }

            return ValueAndGradient(x, g);
        }

        /// <summary>∂rᵢ/∂xⱼ (0 outside the band).</summary>
        private static double Entry(ReadOnlySpan<double> x, int i, int j) =>
            i == j ? 2 + (15 * x[i] * x[i]) : j >= i - 5 && j <= i + 1 ? -(1 + (2 * x[j])) : 0;

        private static double R(ReadOnlySpan<double> x, int i)
        {
            double r = (x[i] * (2 + (5 * x[i] * x[i]))) + 1;
            for (int j = Math.Max(0, i - 5); j <= Math.Min(x.Length - 1, i + 1); j++)
            {
                if (j != i)
                {
                    r -= x[j] * (1 + x[j]);
                }
            }

            return r;
        }

        private static double Jv(ReadOnlySpan<double> x, ReadOnlySpan<double> v, int i)
        {
            double s = 0;
            for (int j = Math.Max(0, i - 5); j <= Math.Min(x.Length - 1, i + 1); j++)
            {
                s += Entry(x, i, j) * v[j];
            }

            return s;
        }
    }
}
