using System;
using System.Linq;
using DerivGen.Tests.Infrastructure;
using MathNet.Numerics.LinearAlgebra;
using Xunit;

namespace DerivGen.Tests.Numerics.Jacobians;

public sealed class JacobianFixture : CompiledFixture
{
    // Methods that write their values into a span of outputs, written as a user would. The scenarios and their
    // numbers are invented, except Misra1a (NIST StRD) and Powell's singular function (Moré, Garbow & Hillstrom 1981).
    public const string Source = """
        using System;
        using DerivGen;

        namespace Outputs;

        public static partial class Models
        {
            // NIST StRD Misra1a: y = b1*(1-exp[-b2*x]); residuals r_i = y_i - model.
            [Differentiate(nameof(b1), nameof(b2))]
            public static void Misra1a(double b1, double b2, ReadOnlySpan<double> x, ReadOnlySpan<double> y, Span<double> r)
            {
                for (int i = 0; i < y.Length; i++)
                {
                    r[i] = y[i] - b1 * (1 - Math.Exp(-b2 * x[i]));
                }
            }

            // Moré, Garbow & Hillstrom (1981), problem 13 (Powell singular function), its four residuals.
            [Differentiate]
            public static void PowellSingular(double x1, double x2, double x3, double x4, Span<double> f)
            {
                f[0] = x1 + 10 * x2;
                f[1] = Math.Sqrt(5) * (x3 - x4);
                double d = x2 - 2 * x3;
                f[2] = d * d;
                f[3] = Math.Sqrt(10) * (x1 - x4) * (x1 - x4);
            }

            // An invented linear recurrence x_{k+1} = a·x_k + c from x_0 = x0; the trajectory is the output.
            [Differentiate(nameof(a), nameof(c), nameof(x0))]
            public static void Recurrence(double a, double c, double x0, int steps, Span<double> xs)
            {
                double x = x0;
                for (int k = 0; k < steps; k++)
                {
                    x = a * x + c;
                    xs[k] = x;
                }
            }

            // Invented: a mixture of decays summed by an inner loop; outputs before, inside (after the inner loop)
            // and after the outer loop, one of them reading a local carried across the outer loop.
            [Differentiate(nameof(a), nameof(b))]
            public static void Mixture(double a, double b, ReadOnlySpan<double> t, ReadOnlySpan<double> w, Span<double> outputs)
            {
                outputs[0] = a * b;
                double total = 0;
                for (int i = 0; i < t.Length; i++)
                {
                    double s = 0;
                    for (int j = 0; j < w.Length; j++)
                    {
                        s += Math.Exp(-b * t[i] * w[j]);
                    }

                    total += a * s;
                    outputs[1 + i] = a * s;
                }

                outputs[t.Length + 1] = total * total;
            }

            // Invented, in float: an attenuation curve read at a few distances.
            [Differentiate(nameof(k), nameof(gain))]
            public static void Attenuation(float k, float gain, ReadOnlySpan<float> d, Span<float> level)
            {
                for (int i = 0; i < d.Length; i++)
                {
                    level[i] = gain * MathF.Exp(-k * d[i]);
                }
            }

            private static double Decay(double a, double b, double t) => a * Math.Exp(-b * t);

            // Invented: the model in an unmarked helper, the residuals in the marked method.
            [Differentiate(nameof(a), nameof(b))]
            public static void HelperResiduals(double a, double b, ReadOnlySpan<double> t, ReadOnlySpan<double> y, Span<double> r)
            {
                for (int i = 0; i < t.Length; i++)
                {
                    r[i] = Decay(a, b, t[i]) - y[i];
                }
            }

            // Invented: a polynomial fit with its coefficients as a vector of variables, evaluated by an inner loop.
            [Differentiate(nameof(c))]
            public static void Polynomial(ReadOnlySpan<double> c, ReadOnlySpan<double> t, ReadOnlySpan<double> y, Span<double> r)
            {
                for (int i = 0; i < t.Length; i++)
                {
                    double s = 0;
                    double power = 1;
                    for (int j = 0; j < c.Length; j++)
                    {
                        s += c[j] * power;
                        power *= t[i];
                    }

                    r[i] = y[i] - s;
                }
            }

            // Invented: a scalar and a vector of variables together, outputs before and inside a loop.
            [Differentiate(nameof(scale), nameof(p))]
            public static void Mixed(double scale, double[] p, ReadOnlySpan<double> t, Span<double> r)
            {
                r[0] = scale * p[0];
                for (int i = 0; i < t.Length; i++)
                {
                    r[1 + i] = scale * (p[0] + p[1] * Math.Exp(-p[2] * t[i]));
                }
            }

            // Invented: per sample a linear score z = w·x (inner loop), written out and also summed squared — the
            // running derivative of z is read both by the output's row and by the outer sum.
            [Differentiate(nameof(w))]
            public static void Scores(ReadOnlySpan<double> w, double[,] x, Span<double> outputs)
            {
                double total = 0;
                for (int i = 0; i < x.GetLength(0); i++)
                {
                    double z = 0;
                    for (int j = 0; j < w.Length; j++)
                    {
                        z += w[j] * x[i, j];
                    }

                    total += z * z;
                    outputs[i] = z;
                }

                outputs[x.GetLength(0)] = total;
            }

            // Writes only the even outputs.
            [Differentiate(nameof(a))]
            public static void EvenOnly(double a, int count, Span<double> r)
            {
                for (int i = 0; i < count; i++)
                {
                    r[2 * i] = a * i;
                }
            }
        }
        """;

    public JacobianFixture()
        : base(Source)
    {
    }
}

/// <summary>
/// Generated Jacobians (<c>MJacobian</c> of methods that write a span of outputs) against derivatives derived by hand
/// from closed forms, against MathNet.Numerics' central differences, and against NIST's certified standard
/// deviations. The outputs the Jacobian method writes are the method's own, bit for bit.
/// </summary>
public sealed class JacobianTests : IClassFixture<JacobianFixture>
{
    private const string Type = "Outputs.Models";

    private readonly JacobianFixture _fixture;

    public JacobianTests(JacobianFixture fixture) => _fixture = fixture;

    private delegate void Misra1aF(double b1, double b2, ReadOnlySpan<double> x, ReadOnlySpan<double> y, Span<double> r);

    private delegate void Misra1aJ(double b1, double b2, ReadOnlySpan<double> x, ReadOnlySpan<double> y, Span<double> r, Span<double> jacobian);

    private delegate void PowellF(double x1, double x2, double x3, double x4, Span<double> f);

    private delegate void PowellJ(double x1, double x2, double x3, double x4, Span<double> f, Span<double> jacobian);

    private delegate void RecurrenceF(double a, double c, double x0, int steps, Span<double> xs);

    private delegate void RecurrenceJ(double a, double c, double x0, int steps, Span<double> xs, Span<double> jacobian);

    private delegate void MixtureF(double a, double b, ReadOnlySpan<double> t, ReadOnlySpan<double> w, Span<double> outputs);

    private delegate void MixtureJ(double a, double b, ReadOnlySpan<double> t, ReadOnlySpan<double> w, Span<double> outputs, Span<double> jacobian);

    private delegate void AttenuationF(float k, float gain, ReadOnlySpan<float> d, Span<float> level);

    private delegate void AttenuationJ(float k, float gain, ReadOnlySpan<float> d, Span<float> level, Span<float> jacobian);

    private delegate void PolynomialJ(ReadOnlySpan<double> c, ReadOnlySpan<double> t, ReadOnlySpan<double> y, Span<double> r, Span<double> jacobian);

    private delegate void MixedF(double scale, double[] p, ReadOnlySpan<double> t, Span<double> r);

    private delegate void MixedJ(double scale, double[] p, ReadOnlySpan<double> t, Span<double> r, Span<double> jacobian);

    private delegate void ScoresJ(ReadOnlySpan<double> w, double[,] x, Span<double> outputs, Span<double> jacobian);

    private delegate void EvenOnlyF(double a, int count, Span<double> r);

    private delegate void EvenOnlyJ(double a, int count, Span<double> r, Span<double> jacobian);

    /// <summary>
    /// Misra1a at NIST's certified parameters: the linearised standard deviations sqrt(s² [(JᵀJ)⁻¹]ₖₖ),
    /// s² = RSS/(n − p), from the generated Jacobian equal NIST's certified ones (the usual asymptotic covariance of
    /// nonlinear least squares; common practice), and every entry equals the hand-derived partials
    /// ∂r/∂b1 = −(1 − e^(−b2·x)), ∂r/∂b2 = −b1·x·e^(−b2·x).
    /// </summary>
    [Fact]
    public void Misra1aJacobianReproducesNistCertifiedStandardDeviations()
    {
        NistDataset data = NistDataset.Load("Misra1a");
        var f = _fixture.Assembly.Method<Misra1aF>(Type, "Misra1a");
        var jf = _fixture.Assembly.Method<Misra1aJ>(Type, "Misra1aJacobian");
        double[] b = data.Certified;
        int n = data.Y.Length, p = b.Length;
        var r = new double[n];
        var rOwn = new double[n];
        var jacobian = new double[n * p];
        jf(b[0], b[1], data.X, data.Y, r, jacobian);
        f(b[0], b[1], data.X, data.Y, rOwn);
        for (int i = 0; i < n; i++)
        {
            Check.SameBits(rOwn[i], r[i], $"r[{i}] written by Misra1aJacobian vs Misra1a");
            double e = Math.Exp(-b[1] * data.X[i]);
            Check.Close(-(1 - e), jacobian[i * p], 1e-13, 0, $"∂r[{i}]/∂b1 vs hand-derived");
            Check.Close(-b[0] * data.X[i] * e, jacobian[(i * p) + 1], 1e-13, 0, $"∂r[{i}]/∂b2 vs hand-derived");
        }

        Matrix<double> j = Matrix<double>.Build.Dense(n, p, (i, k) => jacobian[(i * p) + k]);
        double rss = r.Sum(v => v * v);
        Check.Close(data.ResidualSumOfSquares, rss, 1e-8, 0, "RSS vs NIST certified");
        Matrix<double> covariance = j.TransposeThisAndMultiply(j).Inverse() * (rss / (n - p));
        for (int k = 0; k < p; k++)
        {
            Check.Close(data.StandardDeviations[k], Math.Sqrt(covariance[k, k]), 1e-8, 0, $"standard deviation of b{k + 1} vs NIST certified");
        }
    }

    /// <summary>
    /// Powell's singular function (Moré, Garbow &amp; Hillstrom 1981, problem 13), whose Jacobian at x* = 0 is
    /// singular; at the paper's standard start (3, −1, 0, 1) and at an invented point, against the partials
    /// derived by hand from the paper's four residuals.
    /// </summary>
    [Theory]
    [InlineData(3.0, -1.0, 0.0, 1.0)]
    [InlineData(0.7, 0.2, -1.3, 2.1)]
    public void PowellSingularJacobianMatchesHandDerivedPartials(double x1, double x2, double x3, double x4)
    {
        var jf = _fixture.Assembly.Method<PowellJ>(Type, "PowellSingularJacobian");
        var f = new double[4];
        var j = new double[16];
        jf(x1, x2, x3, x4, f, j);
        double s5 = Math.Sqrt(5), s10 = Math.Sqrt(10), d = x2 - (2 * x3), e = x1 - x4;
        double[] expected =
        {
            1, 10, 0, 0,
            0, 0, s5, -s5,
            0, 2 * d, -4 * d, 0,
            2 * s10 * e, 0, 0, -2 * s10 * e,
        };
        Check.Close(expected, j, 1e-15, 1e-15, "Powell singular Jacobian");
        Check.Close(new[] { x1 + (10 * x2), s5 * (x3 - x4), d * d, s10 * e * e }, f, 1e-15, 0, "Powell singular residuals");
    }

    /// <summary>
    /// A linear recurrence against its closed form x_k = aᵏ·x0 + c·(aᵏ − 1)/(a − 1) (geometric series; common
    /// practice), differentiated by hand: ∂x_k/∂x0 = aᵏ, ∂x_k/∂c = (aᵏ − 1)/(a − 1),
    /// ∂x_k/∂a = k·aᵏ⁻¹·x0 + c·(k·aᵏ⁻¹·(a − 1) − (aᵏ − 1))/(a − 1)². Each output row is read through the running
    /// derivatives of the carried x.
    /// </summary>
    [Fact]
    public void RecurrenceJacobianMatchesTheClosedForm()
    {
        var jf = _fixture.Assembly.Method<RecurrenceJ>(Type, "RecurrenceJacobian");
        var f = _fixture.Assembly.Method<RecurrenceF>(Type, "Recurrence");
        const double a = 0.93, c = 0.4, x0 = 2.5;
        const int steps = 40;
        var xs = new double[steps];
        var own = new double[steps];
        var j = new double[steps * 3];
        jf(a, c, x0, steps, xs, j);
        f(a, c, x0, steps, own);
        for (int k = 1; k <= steps; k++)
        {
            Check.SameBits(own[k - 1], xs[k - 1], $"xs[{k - 1}]");
            double ak = Math.Pow(a, k), ak1 = Math.Pow(a, k - 1);
            double dA = (k * ak1 * x0) + (c * ((k * ak1 * (a - 1)) - (ak - 1)) / ((a - 1) * (a - 1)));
            int row = (k - 1) * 3;
            Check.Close(dA, j[row], 1e-11, 1e-13, $"∂x{k}/∂a");
            Check.Close((ak - 1) / (a - 1), j[row + 1], 1e-11, 1e-13, $"∂x{k}/∂c");
            Check.Close(ak, j[row + 2], 1e-11, 1e-13, $"∂x{k}/∂x0");
        }
    }

    /// <summary>
    /// Outputs before a loop, after an inner loop and after the outer loop (reading a carried total), against
    /// derivatives written out by hand — s_i = Σⱼ e^(−b·tᵢ·wⱼ), ∂(a·s_i)/∂a = s_i, ∂(a·s_i)/∂b = −a·Σⱼ tᵢwⱼe^(−b·tᵢ·wⱼ),
    /// ∂T²/∂v = 2T·∂T/∂v for T = Σᵢ a·s_i — and against MathNet's central differences.
    /// </summary>
    [Fact]
    public void MixtureJacobianMatchesHandDerivedSumsAndCentralDifferences()
    {
        var jf = _fixture.Assembly.Method<MixtureJ>(Type, "MixtureJacobian");
        var f = _fixture.Assembly.Method<MixtureF>(Type, "Mixture");
        double[] t = { 0.3, 1.1, 2.0, 3.7 };
        double[] w = { 0.5, 1.0, 1.5 };
        const double a = 1.7, b = 0.45;
        int m = t.Length + 2;
        var outputs = new double[m];
        var own = new double[m];
        var j = new double[m * 2];
        jf(a, b, t, w, outputs, j);
        f(a, b, t, w, own);
        Check.Close(own, outputs, 0, 0, "outputs written by MixtureJacobian vs Mixture");

        var expected = new double[m * 2];
        expected[0] = b;
        expected[1] = a;
        double total = 0, dTotalA = 0, dTotalB = 0;
        for (int i = 0; i < t.Length; i++)
        {
            double s = 0, ds = 0;
            foreach (double wj in w)
            {
                double e = Math.Exp(-b * t[i] * wj);
                s += e;
                ds -= t[i] * wj * e;
            }

            expected[2 * (1 + i)] = s;
            expected[(2 * (1 + i)) + 1] = a * ds;
            total += a * s;
            dTotalA += s;
            dTotalB += a * ds;
        }

        expected[2 * (m - 1)] = 2 * total * dTotalA;
        expected[(2 * (m - 1)) + 1] = 2 * total * dTotalB;
        Check.Close(expected, j, 1e-13, 1e-15, "Mixture Jacobian vs hand-derived");

        for (int row = 0; row < m; row++)
        {
            int output = row;
            double[] reference = Check.NumericalGradient(v =>
            {
                var o = new double[m];
                f(v[0], v[1], t, w, o);
                return o[output];
            }, new[] { a, b });
            Check.Close(reference, j.AsSpan(row * 2, 2), Check.FiniteDifferenceGradientRelative, Check.FiniteDifferenceAbsoluteFloor, $"Mixture Jacobian row {row} vs MathNet central differences");
        }
    }

    /// <summary>A float method: outputs bit for bit as the method writes them; the Jacobian
    /// (∂/∂k = −gain·d·e^(−k·d), ∂/∂gain = e^(−k·d), by hand) to float precision against a double evaluation.</summary>
    [Fact]
    public void FloatJacobianMatchesHandDerivedPartialsToFloatPrecision()
    {
        var jf = _fixture.Assembly.Method<AttenuationJ>(Type, "AttenuationJacobian");
        var f = _fixture.Assembly.Method<AttenuationF>(Type, "Attenuation");
        float[] d = { 0f, 0.5f, 2f, 7.25f };
        const float k = 0.3f, gain = 4f;
        var level = new float[d.Length];
        var own = new float[d.Length];
        var j = new float[d.Length * 2];
        jf(k, gain, d, level, j);
        f(k, gain, d, own);
        for (int i = 0; i < d.Length; i++)
        {
            Check.SameBits(own[i], level[i], $"level[{i}]");
            double e = Math.Exp(-(double)k * d[i]);
            Check.Close(-gain * d[i] * e, j[2 * i], 1e-6, 1e-7, $"∂level[{i}]/∂k");
            Check.Close(e, j[(2 * i) + 1], 1e-6, 1e-7, $"∂level[{i}]/∂gain");
        }
    }

    /// <summary>The model in an unmarked helper: rows ∂r/∂a = e^(−b·t), ∂r/∂b = −a·t·e^(−b·t) (by hand).</summary>
    [Fact]
    public void JacobianThroughAnUnmarkedHelperMatchesHandDerivedPartials()
    {
        var jf = _fixture.Assembly.Method<Misra1aJ>(Type, "HelperResidualsJacobian");
        double[] t = { 0, 0.25, 1, 4 };
        double[] y = { 2, 1.5, 1, 0.1 };
        const double a = 2.2, b = 0.8;
        var r = new double[4];
        var j = new double[8];
        jf(a, b, t, y, r, j);
        for (int i = 0; i < t.Length; i++)
        {
            double e = Math.Exp(-b * t[i]);
            Check.Close((a * e) - y[i], r[i], 1e-15, 1e-15, $"r[{i}]");
            Check.Close(e, j[2 * i], 1e-14, 1e-15, $"∂r[{i}]/∂a");
            Check.Close(-a * t[i] * e, j[(2 * i) + 1], 1e-14, 1e-15, $"∂r[{i}]/∂b");
        }
    }

    /// <summary>
    /// A vector of variables: the Jacobian of polynomial residuals yᵢ − Σⱼ cⱼ·tᵢʲ with respect to the coefficients is
    /// minus the Vandermonde matrix, −tᵢʲ (common practice), through the inner loop's running derivatives.
    /// </summary>
    [Fact]
    public void PolynomialJacobianIsMinusTheVandermondeMatrix()
    {
        var jf = _fixture.Assembly.Method<PolynomialJ>(Type, "PolynomialJacobian");
        double[] c = { 0.5, -1.25, 0.75, 0.125 };
        double[] t = { -1.5, 0, 0.5, 2, 3.25 };
        double[] y = { 1, 2, 3, 4, 5 };
        var r = new double[t.Length];
        var j = Enumerable.Repeat(double.NaN, t.Length * c.Length).ToArray();
        jf(c, t, y, r, j);
        for (int i = 0; i < t.Length; i++)
        {
            double model = 0;
            for (int k = 0; k < c.Length; k++)
            {
                model += c[k] * Math.Pow(t[i], k);
                Check.Close(-Math.Pow(t[i], k), j[(i * c.Length) + k], 1e-15, 1e-15, $"∂r[{i}]/∂c[{k}]");
            }

            Check.Close(y[i] - model, r[i], 1e-14, 1e-14, $"r[{i}]");
        }
    }

    /// <summary>
    /// A scalar and a vector of variables: rows laid out (scale, p[0], p[1], p[2]), against the partials derived by
    /// hand — ∂r₀ = (p₀, scale, 0, 0); ∂rᵢ = (p₀ + p₁e, scale, scale·e, −scale·p₁·tᵢ·e) with e = e^(−p₂tᵢ) — and
    /// against MathNet's central differences.
    /// </summary>
    [Fact]
    public void MixedScalarAndVectorJacobianMatchesHandDerivedPartialsAndCentralDifferences()
    {
        var jf = _fixture.Assembly.Method<MixedJ>(Type, "MixedJacobian");
        var f = _fixture.Assembly.Method<MixedF>(Type, "Mixed");
        const double scale = 1.3;
        double[] p = { 0.4, 2.0, 0.7 };
        double[] t = { 0, 0.5, 1.5, 4 };
        int m = t.Length + 1, n = 4;
        var r = new double[m];
        var j = Enumerable.Repeat(double.NaN, m * n).ToArray();
        jf(scale, p, t, r, j);
        var expected = new double[m * n];
        expected[0] = p[0];
        expected[1] = scale;
        for (int i = 0; i < t.Length; i++)
        {
            double e = Math.Exp(-p[2] * t[i]);
            int row = (i + 1) * n;
            expected[row] = p[0] + (p[1] * e);
            expected[row + 1] = scale;
            expected[row + 2] = scale * e;
            expected[row + 3] = -scale * p[1] * t[i] * e;
        }

        Check.Close(expected, j, 1e-14, 1e-15, "Mixed Jacobian vs hand-derived");
        for (int row = 0; row < m; row++)
        {
            int output = row;
            double[] reference = Check.NumericalGradient(v =>
            {
                var o = new double[m];
                f(v[0], new[] { v[1], v[2], v[3] }, t, o);
                return o[output];
            }, new[] { scale, p[0], p[1], p[2] });
            Check.Close(reference, j.AsSpan(row * n, n), Check.FiniteDifferenceGradientRelative, Check.FiniteDifferenceAbsoluteFloor, $"Mixed Jacobian row {row} vs MathNet central differences");
        }
    }

    /// <summary>
    /// Linear scores zᵢ = Σⱼ wⱼxᵢⱼ and T = Σᵢ zᵢ²: ∂zᵢ/∂wⱼ = xᵢⱼ and ∂T/∂wⱼ = 2Σᵢ zᵢxᵢⱼ (by hand), with the inner loop's
    /// running derivative read both by the rows of zᵢ and by the outer sum's update.
    /// </summary>
    [Fact]
    public void ScoresJacobianReadsTheInnerLoopsRunningDerivativeInEveryRow()
    {
        var jf = _fixture.Assembly.Method<ScoresJ>(Type, "ScoresJacobian");
        double[] w = { 0.5, -1.0, 2.0 };
        double[,] x = { { 1, 2, 3 }, { -0.5, 0.25, 4 }, { 0, 1, -2 }, { 3, 3, 0.5 } };
        int m = x.GetLength(0) + 1, n = w.Length;
        var outputs = new double[m];
        var j = Enumerable.Repeat(double.NaN, m * n).ToArray();
        jf(w, x, outputs, j);
        var expected = new double[m * n];
        for (int i = 0; i < m - 1; i++)
        {
            double z = 0;
            for (int k = 0; k < n; k++)
            {
                z += w[k] * x[i, k];
            }

            for (int k = 0; k < n; k++)
            {
                expected[(i * n) + k] = x[i, k];
                expected[((m - 1) * n) + k] += 2 * z * x[i, k];
            }
        }

        Check.Close(expected, j, 1e-14, 1e-14, "Scores Jacobian vs hand-derived");
    }

    /// <summary>The Jacobian method writes the rows of the outputs the method writes and leaves the others alone.</summary>
    [Fact]
    public void RowsOfOutputsNeverWrittenAreLeftUntouched()
    {
        var jf = _fixture.Assembly.Method<EvenOnlyJ>(Type, "EvenOnlyJacobian");
        var r = Enumerable.Repeat(double.NaN, 6).ToArray();
        var j = Enumerable.Repeat(double.NaN, 6).ToArray();
        jf(5.0, 3, r, j);
        for (int i = 0; i < 6; i++)
        {
            if (i % 2 == 0)
            {
                Check.SameBits(5.0 * (i / 2), r[i], $"r[{i}]");
                Check.SameBits(i / 2, j[i], $"∂r[{i}]/∂a");
            }
            else
            {
                Assert.True(double.IsNaN(r[i]) && double.IsNaN(j[i]), $"output {i} is not written by the method, nor its row");
            }
        }
    }

    [Fact]
    public void AShortJacobianSpanThrowsBeforeAnythingIsWritten()
    {
        var jf = _fixture.Assembly.Method<EvenOnlyJ>(Type, "EvenOnlyJacobian");
        var r = new double[6];
        var j = new double[5];
        var exception = Assert.Throws<ArgumentException>(() => jf(1.0, 3, r, j));
        Assert.Equal("jacobian", exception.ParamName);
        Assert.All(r, v => Assert.Equal(0.0, v));
    }

    [Fact]
    public void AnOutputIndexOutOfRangeThrowsAsTheMethodDoes()
    {
        var jf = _fixture.Assembly.Method<EvenOnlyJ>(Type, "EvenOnlyJacobian");
        var f = _fixture.Assembly.Method<EvenOnlyF>(Type, "EvenOnly");
        Assert.Throws<IndexOutOfRangeException>(() => f(1.0, 4, new double[6]));
        Assert.Throws<IndexOutOfRangeException>(() => jf(1.0, 4, new double[6], new double[6]));
    }
}
