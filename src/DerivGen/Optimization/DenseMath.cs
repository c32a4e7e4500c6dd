using System;

namespace DerivGen.Minimization;

/// <summary>The small dense linear algebra the minimisers need, on spans (row-major matrices), allocating nothing.</summary>
internal static class DenseMath
{
    public static bool IsFinite(double v) => !double.IsNaN(v) && !double.IsInfinity(v);

    public static bool AllFinite(ReadOnlySpan<double> v)
    {
        for (int i = 0; i < v.Length; i++)
        {
            if (!IsFinite(v[i]))
            {
                return false;
            }
        }

        return true;
    }

    public static double Dot(ReadOnlySpan<double> a, ReadOnlySpan<double> b)
    {
        double s = 0;
        for (int i = 0; i < a.Length; i++)
        {
            s += a[i] * b[i];
        }

        return s;
    }

    public static double MaxAbs(ReadOnlySpan<double> v)
    {
        double m = 0;
        for (int i = 0; i < v.Length; i++)
        {
            double a = Math.Abs(v[i]);
            if (a > m || double.IsNaN(a))
            {
                m = a;
            }
        }

        return m;
    }

    /// <summary>The Euclidean norm, scaled so that it neither overflows nor underflows for representable results.</summary>
    public static double Norm2(ReadOnlySpan<double> v)
    {
        double scale = MaxAbs(v);
        if (scale == 0 || !IsFinite(scale))
        {
            return scale;
        }

        double s = 0;
        for (int i = 0; i < v.Length; i++)
        {
            double t = v[i] / scale;
            s += t * t;
        }

        return scale * Math.Sqrt(s);
    }

    /// <summary>y ← y + a·x.</summary>
    public static void Axpy(double a, ReadOnlySpan<double> x, Span<double> y)
    {
        for (int i = 0; i < y.Length; i++)
        {
            y[i] += a * x[i];
        }
    }

    /// <summary>result ← x + a·d.</summary>
    public static void Step(ReadOnlySpan<double> x, double a, ReadOnlySpan<double> d, Span<double> result)
    {
        for (int i = 0; i < x.Length; i++)
        {
            result[i] = x[i] + (a * d[i]);
        }
    }

    /// <summary>y ← A x for an n×n row-major A.</summary>
    public static void MultiplySquare(ReadOnlySpan<double> a, int n, ReadOnlySpan<double> x, Span<double> y)
    {
        for (int i = 0; i < n; i++)
        {
            y[i] = Dot(a.Slice(i * n, n), x);
        }
    }

    /// <summary>
    /// In-place Cholesky factorisation A = L Lᵀ of the n×n symmetric row-major matrix (lower triangle read, L written
    /// there). Returns false, leaving <paramref name="a"/> partly overwritten, if A is not numerically positive
    /// definite (a pivot ≤ 0 or not finite).
    /// </summary>
    public static bool Cholesky(Span<double> a, int n)
    {
        for (int j = 0; j < n; j++)
        {
            double d = a[(j * n) + j];
            for (int k = 0; k < j; k++)
            {
                double l = a[(j * n) + k];
                d -= l * l;
            }

            if (!(d > 0) || !IsFinite(d))
            {
                return false;
            }

            double root = Math.Sqrt(d);
            a[(j * n) + j] = root;
            for (int i = j + 1; i < n; i++)
            {
                double s = a[(i * n) + j];
                for (int k = 0; k < j; k++)
                {
                    s -= a[(i * n) + k] * a[(j * n) + k];
                }

                a[(i * n) + j] = s / root;
            }
        }

        return true;
    }

    /// <summary>Solves L Lᵀ x = b in place (b becomes x) with the factor from <see cref="Cholesky"/>.</summary>
    public static void CholeskySolve(ReadOnlySpan<double> l, int n, Span<double> b)
    {
        for (int i = 0; i < n; i++)
        {
            double s = b[i];
            for (int k = 0; k < i; k++)
            {
                s -= l[(i * n) + k] * b[k];
            }

            b[i] = s / l[(i * n) + i];
        }

        for (int i = n - 1; i >= 0; i--)
        {
            double s = b[i];
            for (int k = i + 1; k < n; k++)
            {
                s -= l[(k * n) + i] * b[k];
            }

            b[i] = s / l[(i * n) + i];
        }
    }

    /// <summary>
    /// Householder QR of the rows×cols row-major matrix A (rows ≥ cols), in place: R is left in the upper triangle
    /// and Qᵀ is applied to <paramref name="b"/> (rows elements, or empty) as it goes (Golub &amp; Van Loan, Matrix
    /// Computations, 4th ed., §5.2). Returns false if a column is (numerically) zero, i.e. R is singular.
    /// </summary>
    public static bool HouseholderQr(Span<double> a, int rows, int cols, Span<double> b)
    {
        bool fullRank = true;
        for (int k = 0; k < cols; k++)
        {
            // Scaled norm of a[k.., k].
            double scale = 0;
            for (int i = k; i < rows; i++)
            {
                scale = Math.Max(scale, Math.Abs(a[(i * cols) + k]));
            }

            if (scale == 0)
            {
                fullRank = false;
                continue;
            }

            double sum = 0;
            for (int i = k; i < rows; i++)
            {
                double t = a[(i * cols) + k] / scale;
                sum += t * t;
            }

            double sigma = scale * Math.Sqrt(sum);
            double akk = a[(k * cols) + k];
            double alpha = akk > 0 ? -sigma : sigma;

            // v = a[k.., k] - alpha e1, kept in place; vᵀv = 2 sigma (sigma + |akk|).
            a[(k * cols) + k] = akk - alpha;
            double vtv = 2 * sigma * (sigma + Math.Abs(akk));
            for (int j = k + 1; j < cols; j++)
            {
                double s = 0;
                for (int i = k; i < rows; i++)
                {
                    s += a[(i * cols) + k] * a[(i * cols) + j];
                }

                double f = 2 * s / vtv;
                for (int i = k; i < rows; i++)
                {
                    a[(i * cols) + j] -= f * a[(i * cols) + k];
                }
            }

            if (!b.IsEmpty)
            {
                double sb = 0;
                for (int i = k; i < rows; i++)
                {
                    sb += a[(i * cols) + k] * b[i];
                }

                double fb = 2 * sb / vtv;
                for (int i = k; i < rows; i++)
                {
                    b[i] -= fb * a[(i * cols) + k];
                }
            }

            a[(k * cols) + k] = alpha;
        }

        return fullRank;
    }

    /// <summary>Solves R x = b for the upper-triangular R left by <see cref="HouseholderQr"/> (cols×cols block of a
    /// rows×cols row-major array); x overwrites the first cols elements of b.</summary>
    public static void BackSubstitute(ReadOnlySpan<double> r, int cols, Span<double> b)
    {
        for (int i = cols - 1; i >= 0; i--)
        {
            double s = b[i];
            for (int k = i + 1; k < cols; k++)
            {
                s -= r[(i * cols) + k] * b[k];
            }

            b[i] = s / r[(i * cols) + i];
        }
    }
}
