using System;
using DerivGen.Tests.Infrastructure;
using Xunit;

namespace DerivGen.Tests.Numerics.LocalArrays;

public sealed class LocalArrayFixture : CompiledFixture
{
    // Local arrays, stackalloc spans and collection expressions replaced by scalars. Constants are invented.
    public const string Source = """
        using System;
        using DerivGen;

        public static partial class Arr
        {
            // The right-hand side of x' = a·x, written into a span (the shape of an ODE right-hand side).
            private static void Rhs(ReadOnlySpan<double> s, double a, Span<double> ds)
            {
                for (int i = 0; i < s.Length; i++)
                {
                    ds[i] = a * s[i];
                }
            }

            // One classical RK4 step of x' = a·x with stages in stackalloc'd spans.
            [Differentiate]
            public static double Rk4Step(double x, double a)
            {
                const double h = 0.1;
                Span<double> s = stackalloc double[1];
                s[0] = x;
                Span<double> k1 = stackalloc double[1], k2 = stackalloc double[1], k3 = stackalloc double[1], k4 = stackalloc double[1], tmp = stackalloc double[1];
                Rhs(s, a, k1);
                for (int j = 0; j < 1; j++) tmp[j] = s[j] + 0.5 * h * k1[j];
                Rhs(tmp, a, k2);
                for (int j = 0; j < 1; j++) tmp[j] = s[j] + 0.5 * h * k2[j];
                Rhs(tmp, a, k3);
                for (int j = 0; j < 1; j++) tmp[j] = s[j] + h * k3[j];
                Rhs(tmp, a, k4);
                for (int j = 0; j < 1; j++) s[j] += h / 6 * (k1[j] + 2 * k2[j] + 2 * k3[j] + k4[j]);
                return s[0];
            }

            // Twenty RK4 steps of a two-state system (new double[n] and an initialiser), the steps not unrolled.
            [Differentiate]
            public static double Rk4Decay(double x, double a)
            {
                const double h = 0.05;
                double[] s = { x, 2 * x };
                double[] k1 = new double[2], k2 = new double[2], k3 = new double[2], k4 = new double[2], tmp = new double[2];
                for (int step = 0; step < 20; step++)
                {
                    Rhs(s, a, k1);
                    for (int j = 0; j < s.Length; j++) tmp[j] = s[j] + 0.5 * h * k1[j];
                    Rhs(tmp, a, k2);
                    for (int j = 0; j < s.Length; j++) tmp[j] = s[j] + 0.5 * h * k2[j];
                    Rhs(tmp, a, k3);
                    for (int j = 0; j < s.Length; j++) tmp[j] = s[j] + h * k3[j];
                    Rhs(tmp, a, k4);
                    for (int j = 0; j < s.Length; j++) s[j] += h / 6 * (k1[j] + 2 * k2[j] + 2 * k3[j] + k4[j]);
                }

                return s[0] + s[1];
            }

            // A collection expression, Fill, CopyTo from a slice, Slice, foreach, an int array, Length and Clear.
            [Differentiate]
            public static double Ops(double x, double y)
            {
                double[] v = [x, y, x * y];
                Span<double> w = stackalloc double[4];
                w.Fill(1.5);
                v.AsSpan(1, 2).CopyTo(w);
                Span<double> tail = w.Slice(2);
                tail[1] = x;
                double s = 0;
                foreach (double e in w)
                {
                    s += e * e;
                }

                int[] counts = { 1, 2, 3 };
                s += counts[2] * v[0] * v.Length;
                w.Clear();
                return s + w[0];
            }

            // Loops unrolled for their indices, a step of −2, and branches on the index decided in each copy.
            [Differentiate]
            public static double Unrolled(double a, double b)
            {
                var u = new double[5];
                for (int i = 0; i < 5; i++)
                {
                    u[i] = a * i + b;
                }

                double s = 0;
                for (int i = 1; i < u.Length; i++)
                {
                    double d = u[i] - u[i - 1];
                    s += i > 2 ? d * d * b : d * d;
                }

                for (int i = 4; i >= 0; i -= 2)
                {
                    s += u[i] * u[i];
                }

                return s;
            }
        }
        """;

    public LocalArrayFixture()
        : base(Source)
    {
    }
}

/// <summary>
/// Local arrays by scalar replacement: gradients and Hessians against hand derivatives and MathNet finite differences,
/// values bit for bit (Verify.At). The RK4 update of x' = a·x is x·P(ha) with P(z) = 1 + z + z²/2 + z³/6 + z⁴/24
/// (common practice: RK4 reproduces the Taylor series of e^z to fourth order on a linear equation).
/// </summary>
public sealed class LocalArrayTests : IClassFixture<LocalArrayFixture>
{
    private readonly LocalArrayFixture _fixture;

    public LocalArrayTests(LocalArrayFixture fixture) => _fixture = fixture;

    private static double P(double z) => 1 + z + (z * z / 2) + (z * z * z / 6) + (z * z * z * z / 24);

    private static double P1(double z) => 1 + z + (z * z / 2) + (z * z * z / 6);

    private static double P2(double z) => 1 + z + (z * z / 2);

    [Theory]
    [InlineData(1.3, -0.7)]
    [InlineData(-0.4, 2.1)]
    public void Rk4StepOfALinearEquation(double x, double a)
    {
        // x₁ = x P(ha): ∂x = P(ha), ∂a = x h P'(ha); ∂x² = 0, ∂x∂a = h P'(ha), ∂a² = x h² P''(ha).
        const double h = 0.1;
        double z = h * a;
        double[] gradient = { P(z), x * h * P1(z) };
        double[] hessian = { 0, h * P1(z), h * P1(z), x * h * h * P2(z) };
        Verify.At(Probe.Load(_fixture.Assembly, "Arr", "Rk4Step", 2), new[] { x, a }, gradient, hessian, "Rk4Step", closedFormAbsolute: 1e-14);
    }

    [Theory]
    [InlineData(0.8, -1.2)]
    [InlineData(-1.5, 0.6)]
    public void TwentyRk4StepsOfATwoStateSystem(double x, double a)
    {
        // Both states decay alike: s₀ + s₁ = 3x P(ha)^20. ∂x = 3 P^20, ∂a = 60 x h P^19 P';
        // ∂x² = 0, ∂x∂a = 60 h P^19 P', ∂a² = 60 x h² (19 P^18 P'² + P^19 P'').
        const double h = 0.05;
        double z = h * a, p = P(z), p1 = P1(z), p2 = P2(z);
        double[] gradient = { 3 * Math.Pow(p, 20), 60 * x * h * Math.Pow(p, 19) * p1 };
        double cross = 60 * h * Math.Pow(p, 19) * p1;
        double[] hessian = { 0, cross, cross, 60 * x * h * h * ((19 * Math.Pow(p, 18) * p1 * p1) + (Math.Pow(p, 19) * p2)) };
        Verify.At(Probe.Load(_fixture.Assembly, "Arr", "Rk4Decay", 2), new[] { x, a }, gradient, hessian, "Rk4Decay", closedFormAbsolute: 1e-12);
    }

    [Theory]
    [InlineData(0.7, -1.2)]
    [InlineData(-2.0, 0.5)]
    public void SpanOperationsAndCollectionExpressions(double x, double y)
    {
        // w = [y, xy, 1.5, x], so f = y² + x²y² + 2.25 + x² + 9x:
        // ∂x = 2xy² + 2x + 9, ∂y = 2y + 2x²y; H = [[2y² + 2, 4xy], [4xy, 2 + 2x²]].
        double[] gradient = { (2 * x * y * y) + (2 * x) + 9, (2 * y) + (2 * x * x * y) };
        double[] hessian = { (2 * y * y) + 2, 4 * x * y, 4 * x * y, 2 + (2 * x * x) };
        Verify.At(Probe.Load(_fixture.Assembly, "Arr", "Ops", 2), new[] { x, y }, gradient, hessian, "Ops");
    }

    [Theory]
    [InlineData(0.6, 1.3)]
    [InlineData(-1.1, -0.4)]
    public void UnrolledLoopsWithBranchesOnTheIndex(double a, double b)
    {
        // u_i = a i + b, consecutive differences a: f = 2a² + 2a²b + (4a + b)² + (2a + b)² + b².
        // ∂a = 4a + 4ab + 8(4a + b) + 4(2a + b), ∂b = 2a² + 2(4a + b) + 2(2a + b) + 2b;
        // H = [[44 + 4b, 4a + 12], [4a + 12, 6]].
        double[] gradient = { (4 * a) + (4 * a * b) + (8 * ((4 * a) + b)) + (4 * ((2 * a) + b)), (2 * a * a) + (2 * ((4 * a) + b)) + (2 * ((2 * a) + b)) + (2 * b) };
        double[] hessian = { 44 + (4 * b), (4 * a) + 12, (4 * a) + 12, 6 };
        Verify.At(Probe.Load(_fixture.Assembly, "Arr", "Unrolled", 2), new[] { a, b }, gradient, hessian, "Unrolled", closedFormAbsolute: 1e-13);
    }
}
