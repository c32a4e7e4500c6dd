using System;

namespace BeaconFixAot;

/// <summary>
/// The Newton step for three unknowns: solves (H + λI) d = −g by a Cholesky factorisation (Golub &amp; Van Loan,
/// <i>Matrix Computations</i>, §4.2), with λ = 0 when H is positive definite and otherwise raised from a small multiple
/// of H's largest diagonal entry by factors of 10 until the factorisation succeeds (a Levenberg-style damping, common
/// practice). Returns false, leaving d unset, when no damping up to ~1e29 times H's scale works (H not finite).
/// Allocates nothing.
/// </summary>
internal static class Newton3
{
    public static bool SolveDamped(ReadOnlySpan<double> h, ReadOnlySpan<double> g, Span<double> d)
    {
        double scale = Math.Max(Math.Max(Math.Abs(h[0]), Math.Abs(h[4])), Math.Max(Math.Abs(h[8]), 1e-12));
        double lambda = 0;
        for (int attempt = 0; attempt < 40; attempt++, lambda = lambda == 0 ? 1e-10 * scale : lambda * 10)
        {
            // Lower triangle of the symmetric 3x3 matrix, row-major: h[i * 3 + j].
            double a00 = h[0] + lambda, a10 = h[3], a11 = h[4] + lambda, a20 = h[6], a21 = h[7], a22 = h[8] + lambda;
            if (!(a00 > 0)) continue;
            double l00 = Math.Sqrt(a00), l10 = a10 / l00, l20 = a20 / l00;
            double p11 = a11 - l10 * l10;
            if (!(p11 > 0)) continue;
            double l11 = Math.Sqrt(p11), l21 = (a21 - l20 * l10) / l11;
            double p22 = a22 - l20 * l20 - l21 * l21;
            if (!(p22 > 0)) continue;
            double l22 = Math.Sqrt(p22);

            double z0 = -g[0] / l00;
            double z1 = (-g[1] - l10 * z0) / l11;
            double z2 = (-g[2] - l20 * z0 - l21 * z1) / l22;
            d[2] = z2 / l22;
            d[1] = (z1 - l21 * d[2]) / l11;
            d[0] = (z0 - l10 * d[1] - l20 * d[2]) / l00;
            return true;
        }

        return false; // H is not finite, or no damping up to 1e30 times its scale made it positive definite
    }

    public static bool SolveDamped(ReadOnlySpan<float> h, ReadOnlySpan<float> g, Span<float> d)
    {
        float scale = MathF.Max(MathF.Max(MathF.Abs(h[0]), MathF.Abs(h[4])), MathF.Max(MathF.Abs(h[8]), 1e-12f));
        float lambda = 0;
        for (int attempt = 0; attempt < 40; attempt++, lambda = lambda == 0 ? 1e-5f * scale : lambda * 10)
        {
            float a00 = h[0] + lambda, a10 = h[3], a11 = h[4] + lambda, a20 = h[6], a21 = h[7], a22 = h[8] + lambda;
            if (!(a00 > 0)) continue;
            float l00 = MathF.Sqrt(a00), l10 = a10 / l00, l20 = a20 / l00;
            float p11 = a11 - l10 * l10;
            if (!(p11 > 0)) continue;
            float l11 = MathF.Sqrt(p11), l21 = (a21 - l20 * l10) / l11;
            float p22 = a22 - l20 * l20 - l21 * l21;
            if (!(p22 > 0)) continue;
            float l22 = MathF.Sqrt(p22);

            float z0 = -g[0] / l00;
            float z1 = (-g[1] - l10 * z0) / l11;
            float z2 = (-g[2] - l20 * z0 - l21 * z1) / l22;
            d[2] = z2 / l22;
            d[1] = (z1 - l21 * d[2]) / l11;
            d[0] = (z0 - l10 * d[1] - l20 * d[2]) / l00;
            return true;
        }

        return false; // H is not finite, or no damping up to 1e30 times its scale made it positive definite
    }
}
