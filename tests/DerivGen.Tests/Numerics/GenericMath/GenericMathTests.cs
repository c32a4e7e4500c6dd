using System;
using DerivGen.Tests.Infrastructure;
using Xunit;

namespace DerivGen.Tests.Numerics.GenericMath;

public sealed class GenericMathFixture : CompiledFixture
{
    public const string Source = """
        using System;
        using System.Numerics;
        using DerivGen;

        namespace GenericLosses;

        public static partial class Smooth
        {
            // f = sin x · e^(y/2) + x·y² − 0.1·ln(1 + x²)
            [Differentiate]
            public static T Wave<T>(T x, T y) where T : IFloatingPointIeee754<T>
            {
                T half = T.CreateChecked(0.5);
                return T.Sin(x) * T.Exp(half * y) + x * y * y - T.CreateChecked(0.1) * T.Log(T.One + x * x);
            }

            // One loss written three times: generic, float and double. Its derivative constants (log₁₀e, 1/3, 0.1) are
            // not all floats.
            [Differentiate]
            public static T Decibels<T>(T x, T y) where T : IFloatingPointIeee754<T> =>
                T.CreateChecked(3) * T.Log10(x) + T.CreateChecked(0.1) * x * y - T.Sqrt(y) / T.CreateChecked(3);

            [Differentiate]
            public static float DecibelsFloat(float x, float y) => 3f * MathF.Log10(x) + (float)0.1 * x * y - MathF.Sqrt(y) / 3f;

            [Differentiate]
            public static double DecibelsDouble(double x, double y) => 3.0 * Math.Log10(x) + 0.1 * x * y - Math.Sqrt(y) / 3.0;
        }

        // Invented lifetimes (made up for this test); NaN marks a missing reading.
        public static partial class Lifetimes
        {
            static T LogPdf<T>(T x, T shape, T scale) where T : IFloatingPointIeee754<T>
            {
                T z = x / scale;
                return T.Log(shape / scale) + (shape - T.One) * T.Log(z) - T.Pow(z, shape);
            }

            [Differentiate(nameof(shape), nameof(scale))]
            public static T NegLogLikelihood<T>(ReadOnlySpan<T> hours, T shape, T scale) where T : unmanaged, IFloatingPointIeee754<T>
            {
                T nll = T.Zero;
                foreach (T h in hours)
                {
                    if (T.IsNaN(h))
                    {
                        continue;
                    }

                    nll -= LogPdf(h, shape, scale);
                }

                return nll;
            }
        }

        public static partial class Calls
        {
            [Differentiate]
            public static T Model<T>(T a, T t) where T : IFloatingPointIeee754<T> => a * T.Exp(-t);

            [Differentiate(nameof(a))]
            public static double FromDouble(double a) => Model(a, 0.5) * a;

            [Differentiate(nameof(a))]
            public static float FromFloat(float a) => Model(a, 0.5f) * a;

            [Differentiate]
            public static T FromGeneric<T>(T a) where T : unmanaged, IFloatingPointIeee754<T>
            {
                static T Square(T v) => v * v;
                return Model(a, T.One) * a + Square(a) * T.Max(a, T.Zero);
            }
        }

        public static partial class Decay
        {
            // r_i = a·e^(−b·t_i) − 0.1·t_i with t_i = i/4.
            [Differentiate(nameof(a), nameof(b))]
            public static void Residuals<T>(T a, T b, Span<T> r) where T : IFloatingPointIeee754<T>
            {
                for (int i = 0; i < r.Length; i++)
                {
                    T t = T.CreateTruncating(i) / T.CreateChecked(4);
                    r[i] = a * T.Exp(-b * t) - T.CreateChecked(0.1) * t;
                }
            }
        }
        """;

    public GenericMathFixture()
        : base(Source)
    {
    }
}

/// <summary>
/// A loss generic over T : IFloatingPointIeee754&lt;T&gt;, instantiated at float and at double: the value bit for bit
/// the user's generic method at that T, the derivatives against hand derivatives and MathNet.Numerics.
/// </summary>
public sealed class GenericMathTests : IClassFixture<GenericMathFixture>
{
    /// <summary>float code against closed forms in double: a few float roundings, well inside 2e-5 relative (common practice).</summary>
    private const double FloatRelative = 2e-5;

    private static readonly double[] Hours = { 1.2, 2.5, double.NaN, 3.1, 3.8, 4.4, 5.9, 7.3 };

    private readonly GenericMathFixture _fixture;

    public GenericMathTests(GenericMathFixture fixture) => _fixture = fixture;

    [Theory]
    [InlineData(0.7, -0.4)]
    [InlineData(-2.1, 1.3)]
    public void WaveAtDoubleAndFloat(double x, double y)
    {
        // Plain calculus (A&S §4.1–4.3 for ln′, exp′, sin′): f_x = cos x e^(y/2) + y² − 0.2x/(1 + x²),
        // f_y = sin x e^(y/2)/2 + 2xy, f_xx = −sin x e^(y/2) − 0.2(1 − x²)/(1 + x²)², f_xy = cos x e^(y/2)/2 + 2y,
        // f_yy = sin x e^(y/2)/4 + 2x.
        double e = Math.Exp(y / 2), q = 1 + (x * x);
        double[] gradient = { (Math.Cos(x) * e) + (y * y) - (0.2 * x / q), (Math.Sin(x) * e / 2) + (2 * x * y) };
        double fxy = (Math.Cos(x) * e / 2) + (2 * y);
        double[] hessian = { (-Math.Sin(x) * e) - (0.2 * (1 - (x * x)) / (q * q)), fxy, fxy, (Math.Sin(x) * e / 4) + (2 * x) };

        double[] g = new double[2], g2 = new double[2], h = new double[4];
        double value = Bind<GF2<double>>("Smooth", "Wave", typeof(double))(x, y);
        Check.SameBits(value, Bind<GG2<double>>("Smooth", "WaveGradient", typeof(double))(x, y, g), "double WaveGradient value");
        Check.SameBits(value, Bind<GH2<double>>("Smooth", "WaveHessian", typeof(double))(x, y, g2, h), "double WaveHessian value");
        Check.Close(gradient, g, 1e-13, 1e-14, "double gradient");
        Check.Close(gradient, g2, 1e-13, 1e-14, "double MHessian gradient");
        Check.Close(hessian, h, 1e-13, 1e-14, "double Hessian");
        Check.GradientMatchesOracle(v => Bind<GF2<double>>("Smooth", "Wave", typeof(double))(v[0], v[1]), new[] { x, y }, g, "double");
        Check.HessianMatchesOracle(v => Bind<GF2<double>>("Smooth", "Wave", typeof(double))(v[0], v[1]), new[] { x, y }, h, "double");

        float xf = (float)x, yf = (float)y;
        float[] gf = new float[2], gf2 = new float[2], hf = new float[4];
        float valueF = Bind<GF2<float>>("Smooth", "Wave", typeof(float))(xf, yf);
        Check.SameBits(valueF, Bind<GG2<float>>("Smooth", "WaveGradient", typeof(float))(xf, yf, gf), "float WaveGradient value");
        Check.SameBits(valueF, Bind<GH2<float>>("Smooth", "WaveHessian", typeof(float))(xf, yf, gf2, hf), "float WaveHessian value");
        Check.SameBits(hf[1], hf[2], "float Hessian symmetry");
        double scale = Math.Max(1, Math.Abs(gradient[0]) + Math.Abs(gradient[1]));
        for (int i = 0; i < 2; i++)
        {
            Check.Close(gradient[i], gf[i], FloatRelative, 1e-6 * scale, $"float gradient[{i}]");
            Check.Close(gradient[i], gf2[i], FloatRelative, 1e-6 * scale, $"float MHessian gradient[{i}]");
        }

        for (int i = 0; i < 4; i++)
        {
            Check.Close(hessian[i], hf[i], FloatRelative, 1e-6 * scale, $"float Hessian[{i}]");
        }
    }

    /// <summary>
    /// The rule for derivative constants of T: folded only where both are floats, otherwise T.CreateTruncating(c) each
    /// and the operation in T. Here that gives, at T = float, exactly the derivatives the float method gets (and at
    /// T = double exactly the double method's): the same numbers, computed the same way.
    /// </summary>
    [Theory]
    [InlineData(0.8, 2.5)]
    [InlineData(3.7, 0.6)]
    public void GenericDerivativesAreTheFloatAndDoubleMethodsBitForBit(double x, double y)
    {
        float xf = (float)x, yf = (float)y;
        float[] g = new float[2], h = new float[4], gTwin = new float[2], hTwin = new float[4];
        float value = Bind<GH2<float>>("Smooth", "DecibelsHessian", typeof(float))(xf, yf, g, h);
        float twin = _fixture.Assembly.Method<H2f>("GenericLosses.Smooth", "DecibelsFloatHessian")(xf, yf, gTwin, hTwin);
        Check.SameBits(Bind<GF2<float>>("Smooth", "Decibels", typeof(float))(xf, yf), value, "float value (the user's generic method at float)");
        Check.SameBits(twin, value, "float value (the float method)");
        for (int i = 0; i < 2; i++)
        {
            Check.SameBits(gTwin[i], g[i], $"float gradient[{i}]");
        }

        for (int i = 0; i < 4; i++)
        {
            Check.SameBits(hTwin[i], h[i], $"float Hessian[{i}]");
        }

        double[] gd = new double[2], hd = new double[4], gdTwin = new double[2], hdTwin = new double[4];
        double valueD = Bind<GH2<double>>("Smooth", "DecibelsHessian", typeof(double))(x, y, gd, hd);
        Check.SameBits(_fixture.Assembly.Method<H2>("GenericLosses.Smooth", "DecibelsDoubleHessian")(x, y, gdTwin, hdTwin), valueD, "double value");
        for (int i = 0; i < 2; i++)
        {
            Check.SameBits(gdTwin[i], gd[i], $"double gradient[{i}]");
        }

        for (int i = 0; i < 4; i++)
        {
            Check.SameBits(hdTwin[i], hd[i], $"double Hessian[{i}]");
        }

        // And the derivative itself (plain calculus: ∂/∂x = 3 log₁₀e/x + 0.1y, ∂/∂y = 0.1x − 1/(6√y)).
        Check.Close(new[] { (3 / (x * Math.Log(10))) + (0.1 * y), (0.1 * x) - (1 / (6 * Math.Sqrt(y))) }, gd, 1e-14, 1e-15, "double gradient");
    }

    [Theory]
    [InlineData(1.8, 4.5)]
    [InlineData(0.9, 3.0)]
    public void WeibullLikelihoodThroughAGenericHelper(double shape, double scale)
    {
        // The Weibull log-likelihood's score (common formula, e.g. Lawless, Statistical Models and Methods for Lifetime
        // Data, from memory), over the readings that are not NaN, z = h/λ:
        // ∂ℓ/∂k = Σ (1/k + ln z − z^k ln z),  ∂ℓ/∂λ = Σ (k/λ)(z^k − 1); the loss is −ℓ.
        double dk = 0, dl = 0;
        foreach (double hour in Hours)
        {
            if (double.IsNaN(hour))
            {
                continue;
            }

            double z = hour / scale, zk = Math.Pow(z, shape);
            dk -= (1 / shape) + Math.Log(z) - (zk * Math.Log(z));
            dl -= shape / scale * (zk - 1);
        }

        double[] g = new double[2], h = new double[4];
        var f = Bind<GFData<double>>("Lifetimes", "NegLogLikelihood", typeof(double));
        double value = Bind<GHData<double>>("Lifetimes", "NegLogLikelihoodHessian", typeof(double))(Hours, shape, scale, g, h);
        Check.SameBits(f(Hours, shape, scale), value, "double value");
        Check.Close(new[] { dk, dl }, g, 1e-12, 1e-13, "double gradient");
        Check.ExactlySymmetric(h, 2);
        Check.HessianMatchesOracle(v => f(Hours, v[0], v[1]), new[] { shape, scale }, h, "double");

        float[] hoursF = Array.ConvertAll(Hours, v => (float)v);
        float[] gf = new float[2], hf = new float[4];
        float valueF = Bind<GHData<float>>("Lifetimes", "NegLogLikelihoodHessian", typeof(float))(hoursF, (float)shape, (float)scale, gf, hf);
        Check.SameBits(Bind<GFData<float>>("Lifetimes", "NegLogLikelihood", typeof(float))(hoursF, (float)shape, (float)scale), valueF, "float value");
        double gScale = Math.Abs(dk) + Math.Abs(dl);
        Check.Close(dk, gf[0], 1e-4, 1e-5 * gScale, "float gradient[0]");
        Check.Close(dl, gf[1], 1e-4, 1e-5 * gScale, "float gradient[1]");
        double hScale = Math.Abs(h[0]) + Math.Abs(h[3]);
        for (int i = 0; i < 4; i++)
        {
            // The float Hessian against the double one (itself checked against MathNet above).
            Check.Close(h[i], hf[i], 1e-4, 1e-5 * hScale, $"float Hessian[{i}]");
        }
    }

    [Fact]
    public void JacobianOfGenericResiduals()
    {
        // Plain calculus: ∂r_i/∂a = e^(−b t_i), ∂r_i/∂b = −a t_i e^(−b t_i), t_i = i/4.
        const int m = 5;
        double a = 1.7, b = 0.6;
        double[] r = new double[m], rPlain = new double[m], j = new double[2 * m];
        Bind<GR2<double>>("Decay", "Residuals", typeof(double))(a, b, rPlain);
        Bind<GJ2<double>>("Decay", "ResidualsJacobian", typeof(double))(a, b, r, j);
        float[] rf = new float[m], rfPlain = new float[m], jf = new float[2 * m];
        Bind<GR2<float>>("Decay", "Residuals", typeof(float))((float)a, (float)b, rfPlain);
        Bind<GJ2<float>>("Decay", "ResidualsJacobian", typeof(float))((float)a, (float)b, rf, jf);
        for (int i = 0; i < m; i++)
        {
            double t = i / 4.0, e = Math.Exp(-b * t);
            Check.SameBits(rPlain[i], r[i], $"double r[{i}]");
            Check.SameBits(rfPlain[i], rf[i], $"float r[{i}]");
            Check.Close(e, j[2 * i], 1e-15, 1e-16, $"double ∂r[{i}]/∂a");
            Check.Close(-a * t * e, j[(2 * i) + 1], 1e-15, 1e-16, $"double ∂r[{i}]/∂b");
            Check.Close(e, jf[2 * i], FloatRelative, 1e-7, $"float ∂r[{i}]/∂a");
            Check.Close(-a * t * e, jf[(2 * i) + 1], FloatRelative, 1e-7, $"float ∂r[{i}]/∂b");
        }
    }

    [Theory]
    [InlineData(0.8)]
    [InlineData(-1.3)]
    public void MarkedGenericMethodCalledAtFloatDoubleAndT(double a)
    {
        // Plain calculus: d/da (a·e^(−1/2)·a) = 2a·e^(−1/2); d/da (a·e^(−1)·a + a²·max(a, 0)) = 2a·e^(−1) + (a > 0 ? 3a² : 0).
        double[] g = new double[1];
        double value = _fixture.Assembly.Method<G1>("GenericLosses.Calls", "FromDoubleGradient")(a, g);
        Check.SameBits(_fixture.Assembly.Method<F1>("GenericLosses.Calls", "FromDouble")(a), value, "FromDouble value");
        Check.Close(2 * a * Math.Exp(-0.5), g[0], 1e-15, 1e-16, "FromDouble gradient");

        float[] gf = new float[1];
        float valueF = _fixture.Assembly.Method<G1f>("GenericLosses.Calls", "FromFloatGradient")((float)a, gf);
        Check.SameBits(_fixture.Assembly.Method<F1f>("GenericLosses.Calls", "FromFloat")((float)a), valueF, "FromFloat value");
        Check.Close(2 * a * Math.Exp(-0.5), gf[0], FloatRelative, 1e-7, "FromFloat gradient");

        double expected = (2 * a * Math.Exp(-1)) + (a > 0 ? 3 * a * a : 0);
        double[] gt = new double[1];
        double valueT = Bind<GG1<double>>("Calls", "FromGenericGradient", typeof(double))(a, gt);
        Check.SameBits(Bind<GF1<double>>("Calls", "FromGeneric", typeof(double))(a), valueT, "FromGeneric<double> value");
        Check.Close(expected, gt[0], 1e-15, 1e-16, "FromGeneric<double> gradient");
        float[] gtf = new float[1];
        float valueTf = Bind<GG1<float>>("Calls", "FromGenericGradient", typeof(float))((float)a, gtf);
        Check.SameBits(Bind<GF1<float>>("Calls", "FromGeneric", typeof(float))((float)a), valueTf, "FromGeneric<float> value");
        Check.Close(expected, gtf[0], FloatRelative, 1e-7, "FromGeneric<float> gradient");
    }

    private TDelegate Bind<TDelegate>(string type, string method, Type typeArgument)
        where TDelegate : Delegate =>
        GenericBinding.Bind<TDelegate>(_fixture.Assembly, "GenericLosses." + type, method, typeArgument);
}
