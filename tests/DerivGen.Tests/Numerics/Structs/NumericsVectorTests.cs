using System;
using System.Numerics;
using DerivGen.Tests.Infrastructure;
using DerivGen.Tests.Minimization;
using Xunit;

namespace DerivGen.Tests.Numerics.Structs;

public sealed class NumericsVectorFixture : UserCodeFixture
{
    // System.Numerics vectors as locals, data and variables. The constants are invented. Wrappers (…At) take floats so
    // the tests can bind them to delegates.
    public const string Source = """
        using System;
        using System.Numerics;
        using DerivGen;

        public static partial class Geo
        {
            private static readonly Vector3 C = new(0.3f, -0.4f, 1.2f);
            private static readonly Vector3 W = new(0.5f, 0.25f, -2f);

            // Every supported Vector3 operation, in one value that is compared bit for bit on random inputs.
            [Differentiate(nameof(p), nameof(s))]
            public static float All3(Vector3 p, Vector3 q, float s)
            {
                var a = p + q;
                var b = p - q * s;
                var c = -a / s;
                var d = s * b / q;
                float r = Vector3.Dot(a, b) + c.Length() + d.LengthSquared() + Vector3.Distance(p, q) + Vector3.DistanceSquared(a, c);
                var n = Vector3.Normalize(b);
                var x = Vector3.Cross(n, a);
                var l = Vector3.Lerp(p, q, s);
                var m = Vector3.Min(a, b) + Vector3.Max(c, Vector3.One) + Vector3.Abs(d) + Vector3.UnitY * 2f;
                m.X += 1f;
                return r + x.X + x.Y * x.Z + l.X + l.Y + l.Z + m.X + m.Y + m.Z;
            }

            public static float All3At(float px, float py, float pz, float qx, float qy, float qz, float s) => All3(new(px, py, pz), new(qx, qy, qz), s);

            public static float All3AtGradient(float px, float py, float pz, float qx, float qy, float qz, float s, Span<float> g) =>
                All3Gradient(new(px, py, pz), new(qx, qy, qz), s, g);

            [Differentiate(nameof(s))]
            public static float All2(Vector2 p, Vector2 q, float s)
            {
                var a = p + q * s;
                var b = Vector2.Normalize(p - q);
                var l = Vector2.Lerp(a, b, s);
                var m = Vector2.Max(Vector2.Abs(a), Vector2.Min(b, Vector2.UnitX)) / s;
                return Vector2.Dot(a, b) + a.Length() + Vector2.Distance(a, q) + Vector2.DistanceSquared(p, b) + l.X * l.Y + m.X + m.Y;
            }

            public static float All2At(float px, float py, float qx, float qy, float s) => All2(new(px, py), new(qx, qy), s);

            public static float All2AtGradient(float px, float py, float qx, float qy, float s, Span<float> g) => All2Gradient(new(px, py), new(qx, qy), s, g);

            [Differentiate(nameof(s))]
            public static float All4(Vector4 p, Vector4 q, float s)
            {
                var a = p - q / s;
                var b = Vector4.Normalize(p * q);
                var l = Vector4.Lerp(a, b, s);
                var m = Vector4.Min(a, Vector4.One) - Vector4.Max(b, Vector4.Zero) + Vector4.Abs(q);
                return Vector4.Dot(a, b) + a.LengthSquared() + b.Length() + Vector4.Distance(a, p) + Vector4.DistanceSquared(q, b) + l.W * l.X + m.Z + m.W;
            }

            public static float All4At(float px, float py, float pz, float pw, float s) => All4(new(px, py, pz, pw), new(pw, pz, py, px), s);

            public static float All4AtGradient(float px, float py, float pz, float pw, float s, Span<float> g) => All4Gradient(new(px, py, pz, pw), new(pw, pz, py, px), s, g);

            // A Vector3 variable of a float method: float derivatives in 3 slots (X, Y, Z).
            [Differentiate(nameof(p))]
            public static float Aim(Vector3 p) => Vector3.Distance(p, C) + Vector3.Dot(p, W);

            public static float AimAt(float x, float y, float z) => Aim(new(x, y, z));

            public static float AimAtGradient(float x, float y, float z, Span<float> g) => AimGradient(new(x, y, z), g);

            public static float AimAtHessian(float x, float y, float z, Span<float> g, Span<float> h) => AimHessian(new(x, y, z), g, h);

            // A Vector3 variable of a double method (an 'in' parameter): double derivatives of float components.
            [Differentiate(nameof(p))]
            public static double Mixed(in Vector3 p) => Math.Sin(p.X) * p.Y + (double)p.Z * p.Z;

            public static double MixedAtGradient(float x, float y, float z, Span<double> g) => MixedGradient(new Vector3(x, y, z), g);

            public static double MixedAtHessian(float x, float y, float z, Span<double> g, Span<double> h) => MixedHessian(new Vector3(x, y, z), g, h);

            // A Vector3 variable beside a vector of variables: slots p.X, p.Y, p.Z, then w[0], w[1] (the Hessian comes
            // from the pair method).
            [Differentiate(nameof(p), nameof(w))]
            public static double WithVector(Vector3 p, double[] w) => p.X * w[0] + (double)p.Y * p.Z * w[1] + w[0] * w[1];

            public static double WithVectorAtHessian(float x, float y, float z, double[] w, Span<double> g, Span<double> h) =>
                WithVectorHessian(new Vector3(x, y, z), w, g, h);
        }
        """;

    public NumericsVectorFixture()
        : base(Source)
    {
    }
}

/// <summary>System.Numerics vectors by scalar replacement: the value bit for bit on random inputs (the component
/// formulas reproduce the runtime's SIMD order), float derivatives against plain calculus.</summary>
public sealed class NumericsVectorTests : IClassFixture<NumericsVectorFixture>
{
    private readonly NumericsVectorFixture _fixture;

    public NumericsVectorTests(NumericsVectorFixture fixture) => _fixture = fixture;

    /// <summary>A float with a random sign and an exponent from 2⁻¹² to 2¹², zero now and then.</summary>
    private static float Next(Random random) =>
        random.Next(16) == 0 ? (random.Next(2) == 0 ? 0f : -0f) : (float)((random.NextDouble() * 2 - 1) * Math.Pow(2, random.Next(-12, 13)));

    [Fact]
    public void ValuesAreBitForBitOnRandomInputs()
    {
        var all3 = _fixture.Assembly.Method<F7>("Geo", "All3At");
        var all3Gradient = _fixture.Assembly.Method<G7>("Geo", "All3AtGradient");
        var all2 = _fixture.Assembly.Method<F5>("Geo", "All2At");
        var all2Gradient = _fixture.Assembly.Method<G5>("Geo", "All2AtGradient");
        var all4 = _fixture.Assembly.Method<F5>("Geo", "All4At");
        var all4Gradient = _fixture.Assembly.Method<G5>("Geo", "All4AtGradient");
        var random = new Random(20261205);
        var g = new float[4];
        for (int trial = 0; trial < 20000; trial++)
        {
            float[] v = new float[7];
            for (int i = 0; i < v.Length; i++)
            {
                v[i] = Next(random);
            }

            string at = "at (" + string.Join(", ", Array.ConvertAll(v, x => x.ToString("R", System.Globalization.CultureInfo.InvariantCulture))) + ")";
            Check.SameBits(all3(v[0], v[1], v[2], v[3], v[4], v[5], v[6]), all3Gradient(v[0], v[1], v[2], v[3], v[4], v[5], v[6], g), "All3 " + at);
            Check.SameBits(all2(v[0], v[1], v[2], v[3], v[6]), all2Gradient(v[0], v[1], v[2], v[3], v[6], g), "All2 " + at);
            Check.SameBits(all4(v[0], v[1], v[2], v[3], v[6]), all4Gradient(v[0], v[1], v[2], v[3], v[6], g), "All4 " + at);
        }
    }

    [Theory]
    [InlineData(1.5f, 0.2f, -0.7f)]
    [InlineData(-2.0f, 1.0f, 3.0f)]
    public void Vector3VariableGetsFloatDerivatives(float x, float y, float z)
    {
        // f = |p − c| + p·w (plain calculus): ∇f = u + w with u = (p − c)/|p − c|, H = (I − u uᵀ)/|p − c|.
        double[] c = { 0.3f, -0.4f, 1.2f }, w = { 0.5, 0.25, -2 }, p = { x, y, z };
        double[] d = { p[0] - c[0], p[1] - c[1], p[2] - c[2] };
        double r = Math.Sqrt(d[0] * d[0] + d[1] * d[1] + d[2] * d[2]);
        var g = new float[3];
        var h = new float[9];
        float value = _fixture.Assembly.Method<G3f>("Geo", "AimAtGradient")(x, y, z, g);
        Check.SameBits(_fixture.Assembly.Method<F3f>("Geo", "AimAt")(x, y, z), value, "value");
        Check.SameBits(value, _fixture.Assembly.Method<H3f>("Geo", "AimAtHessian")(x, y, z, g, h), "MHessian value");
        for (int i = 0; i < 3; i++)
        {
            Check.Close(d[i] / r + w[i], g[i], 1e-5, 1e-6, $"∂f/∂p[{i}]");
            for (int j = 0; j < 3; j++)
            {
                Check.Close(((i == j ? 1 : 0) - d[i] * d[j] / (r * r)) / r, h[3 * i + j], 1e-5, 1e-6, $"H[{i},{j}]");
            }
        }
    }

    [Fact]
    public void Vector3VariableOfADoubleMethod()
    {
        // f = sin(x)·y + z² in double of float components (plain calculus).
        float x = 0.8f, y = -1.3f, z = 2.5f;
        var g = new double[3];
        var h = new double[9];
        _fixture.Assembly.Method<G3fd>("Geo", "MixedAtGradient")(x, y, z, g);
        Check.Close(new[] { Math.Cos(x) * y, Math.Sin(x), 2.0 * z }, g, 1e-15, 1e-15, "gradient");
        _fixture.Assembly.Method<H3fd>("Geo", "MixedAtHessian")(x, y, z, g, h);
        Check.Close(new[] { -Math.Sin(x) * y, Math.Cos(x), 0, Math.Cos(x), 0, 0, 0, 0, 2.0 }, h, 1e-15, 1e-15, "Hessian");
    }

    [Fact]
    public void Vector3VariableBesideAVectorOfVariables()
    {
        // f = x·w₀ + y·z·w₁ + w₀·w₁ (plain calculus), slots (x, y, z, w₀, w₁).
        float x = 0.5f, y = -1.5f, z = 2.25f;
        double w0 = 0.75, w1 = -2.0;
        var g = new double[5];
        var h = new double[25];
        _fixture.Assembly.Method<HVec>("Geo", "WithVectorAtHessian")(x, y, z, new[] { w0, w1 }, g, h);
        Check.Close(new[] { w0, z * w1, y * w1, x + w1, (double)y * z + w0 }, g, 1e-15, 1e-15, "gradient");
        Check.Close(new double[]
        {
            0, 0, 0, 1, 0,
            0, 0, w1, 0, z,
            0, w1, 0, 0, y,
            1, 0, 0, 0, 1,
            0, z, y, 1, 0,
        }, h, 1e-15, 1e-15, "Hessian");
    }

    [Fact]
    public void All3GradientMatchesFiniteDifferences()
    {
        // The gradient of the value with every operation, against MathNet's central differences in double of the
        // same formulas written with doubles would need the formulas again; instead the float gradient is checked
        // against a Richardson-extrapolated central difference of the float method itself (step 2⁻⁶), loosely.
        var f = _fixture.Assembly.Method<F7>("Geo", "All3At");
        var gradient = _fixture.Assembly.Method<G7>("Geo", "All3AtGradient");
        float[] v = { 0.7f, -0.3f, 1.1f, 0.4f, 0.9f, -0.6f, 0.35f };
        var g = new float[4];
        gradient(v[0], v[1], v[2], v[3], v[4], v[5], v[6], g);
        int[] slots = { 0, 1, 2, 6 };
        for (int k = 0; k < 4; k++)
        {
            double Shifted(double delta)
            {
                float[] u = (float[])v.Clone();
                u[slots[k]] = (float)(v[slots[k]] + delta);
                return f(u[0], u[1], u[2], u[3], u[4], u[5], u[6]);
            }

            double h = 1.0 / 64;
            double d1 = (Shifted(h) - Shifted(-h)) / (2 * h), d2 = (Shifted(h / 2) - Shifted(-h / 2)) / h;
            double richardson = (4 * d2 - d1) / 3;
            Check.Close(richardson, g[k], 2e-3, 2e-3, $"∂All3/∂slot{k}");
        }
    }

    [Fact]
    public void RuntimeSimdOrderIsTheOneTheLoweringWrites()
    {
        // What the lowering's component formulas assume about this runtime (BodyLowerer.Structs.Values.cs): checked
        // here directly so that a runtime that sums differently fails this test rather than a user's value.
        var random = new Random(7);
        for (int trial = 0; trial < 100000; trial++)
        {
            var a = new Vector4(Next(random), Next(random), Next(random), Next(random));
            var b = new Vector4(Next(random), Next(random), Next(random), Next(random));
            float p0 = a.X * b.X, p1 = a.Y * b.Y, p2 = a.Z * b.Z, p3 = a.W * b.W;
            Check.SameBits((p0 + p1) + (p2 + p3), Vector4.Dot(a, b), "Vector4.Dot pairwise");
            Check.SameBits((p0 + p1) + (p2 + 0f), Vector3.Dot(new Vector3(a.X, a.Y, a.Z), new Vector3(b.X, b.Y, b.Z)), "Vector3.Dot");
            Check.SameBits((p0 + p1) + 0f, Vector2.Dot(new Vector2(a.X, a.Y), new Vector2(b.X, b.Y)), "Vector2.Dot");
        }

        Check.SameBits(0f, Vector3.Dot(new Vector3(-1f, 1f, -1f), new Vector3(0f, -0f, 0f)), "three −0 products sum to +0");
    }

    private delegate double HVec(float x, float y, float z, double[] w, Span<double> g, Span<double> h);

    private delegate float F3f(float x, float y, float z);

    private delegate float G3f(float x, float y, float z, Span<float> g);

    private delegate float H3f(float x, float y, float z, Span<float> g, Span<float> h);

    private delegate double G3fd(float x, float y, float z, Span<double> g);

    private delegate double H3fd(float x, float y, float z, Span<double> g, Span<double> h);

    private delegate float F5(float a, float b, float c, float d, float e);

    private delegate float G5(float a, float b, float c, float d, float e, Span<float> g);

    private delegate float F7(float a, float b, float c, float d, float e, float f, float s);

    private delegate float G7(float a, float b, float c, float d, float e, float f, float s, Span<float> g);
}
