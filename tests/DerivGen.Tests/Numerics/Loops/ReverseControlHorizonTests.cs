using System;
using DerivGen.Tests.Infrastructure;
using Xunit;

namespace DerivGen.Tests.Numerics.Loops;

internal delegate double HorizonValue(double[] u, double x0, double v0, double dt, double target, double rho);

internal delegate double HorizonGradient(double[] u, double x0, double v0, double dt, double target, double rho, Span<double> gradient);

internal delegate float HorizonValueF(float[] u, float x0, float v0, float dt, float target, float rho);

internal delegate float HorizonGradientF(float[] u, float x0, float v0, float dt, float target, float rho, Span<float> gradient);

internal delegate double TrackedValue(double[] u, double[] reference, double x0, double dt);

internal delegate double TrackedGradient(double[] u, double[] reference, double x0, double dt, Span<double> gradient);

public sealed class ReverseControlHorizonFixture : CompiledFixture
{
    // A control horizon: controls u[0..T) drive a nonlinear state (x, v) carried by the loop — x'' = −x³ + u, stepped
    // with semi-implicit Euler — and the cost is Σ (x − target)² + ρ·u². The shape of tuning a controller or calibrating
    // a time-stepping simulation (invented model and numbers).
    public const string Source = """
        using System;
        using DerivGen;

        public static partial class Horizons
        {
            [Differentiate(nameof(u), nameof(target), Hessian = false)]
            public static double Cost(double[] u, double x0, double v0, double dt, double target, double rho)
            {
                double x = x0, v = v0, cost = 0;
                for (int t = 0; t < u.Length; t++)
                {
                    v = v + dt * (-x * x * x + u[t]);
                    x = x + dt * v;
                    cost += (x - target) * (x - target) + rho * u[t] * u[t];
                }

                return cost;
            }

            // The same cost with forward running derivatives forced (the choice before the reverse sweep existed).
            [Differentiate(nameof(u), nameof(target), Hessian = false, Loops = LoopDifferentiation.RunningDerivatives)]
            public static double CostRunning(double[] u, double x0, double v0, double dt, double target, double rho)
            {
                double x = x0, v = v0, cost = 0;
                for (int t = 0; t < u.Length; t++)
                {
                    v = v + dt * (-x * x * x + u[t]);
                    x = x + dt * v;
                    cost += (x - target) * (x - target) + rho * u[t] * u[t];
                }

                return cost;
            }

            [Differentiate(nameof(u), nameof(target), Hessian = false)]
            public static float CostSingle(float[] u, float x0, float v0, float dt, float target, float rho)
            {
                float x = x0, v = v0, cost = 0f;
                for (int t = 0; t < u.Length; t++)
                {
                    v = v + dt * (-x * x * x + u[t]);
                    x = x + dt * v;
                    cost += (x - target) * (x - target) + rho * u[t] * u[t];
                }

                return cost;
            }

            // Tracking a reference path read from data, which is shorter than u when the caller passes it so: the
            // read reference[t] then throws mid-loop, after the record was taken.
            [Differentiate(nameof(u), Hessian = false)]
            public static double Tracked(double[] u, double[] reference, double x0, double dt)
            {
                double x = x0, cost = 0;
                for (int t = 0; t < u.Length; t++)
                {
                    x = x + dt * (Math.Sin(x) + u[t]);
                    double e = x - reference[t];
                    cost += e * e;
                }

                return cost;
            }
        }
        """;

    public ReverseControlHorizonFixture()
        : base(Source)
    {
    }
}

/// <summary>
/// The control horizon through the reverse sweep (Differentiation/LoopReverse): the gradient against the adjoint
/// recurrence derived by hand below and against MathNet's central differences, the value bit for bit, and no
/// allocation per call once warm.
/// </summary>
public sealed class ReverseControlHorizonTests : IClassFixture<ReverseControlHorizonFixture>
{
    private const double X0 = 0.5, V0 = -0.2, Dt = 0.05, Target = 0.8, Rho = 0.01;
    private readonly ReverseControlHorizonFixture _fixture;

    public ReverseControlHorizonTests(ReverseControlHorizonFixture fixture) => _fixture = fixture;

    private HorizonValue Value => _fixture.Assembly.Method<HorizonValue>("Horizons", "Cost");

    private HorizonGradient Gradient => _fixture.Assembly.Method<HorizonGradient>("Horizons", "CostGradient");

    /// <summary>Invented controls: a slow sine.</summary>
    private static double[] Controls(int t)
    {
        var u = new double[t];
        for (int i = 0; i < t; i++)
        {
            u[i] = 0.3 * Math.Sin(0.1 * i) - 0.1;
        }

        return u;
    }

    /// <summary>
    /// The gradient by hand (plain calculus, adjoint recurrence). Forward: v' = v + dt(−x³ + u_t), x' = x + dt·v',
    /// c += (x' − T)² + ρu_t². Backwards from x̄ = v̄ = 0 after the last step: x̄' = x̄ + 2(x' − T) (the cost term),
    /// v̄' = v̄ + dt·x̄' (through x' = x + dt·v'), then ū_t = dt·v̄' + 2ρu_t, x̄ = x̄' − 3dt·x²·v̄', v̄ = v̄'; and
    /// ∂c/∂T = Σ −2(x' − T).
    /// </summary>
    private static (double Value, double[] Gradient) ByHand(double[] u, double x0, double v0, double dt, double target, double rho)
    {
        int steps = u.Length;
        var x = new double[steps + 1];
        var v = new double[steps + 1];
        x[0] = x0;
        v[0] = v0;
        double cost = 0;
        for (int t = 0; t < steps; t++)
        {
            v[t + 1] = v[t] + dt * (-x[t] * x[t] * x[t] + u[t]);
            x[t + 1] = x[t] + dt * v[t + 1];
            cost += (x[t + 1] - target) * (x[t + 1] - target) + rho * u[t] * u[t];
        }

        var gradient = new double[steps + 1];
        double xBar = 0, vBar = 0;
        for (int t = steps - 1; t >= 0; t--)
        {
            double xNextBar = xBar + 2 * (x[t + 1] - target);
            double vNextBar = vBar + dt * xNextBar;
            gradient[t] = dt * vNextBar + 2 * rho * u[t];
            gradient[steps] += -2 * (x[t + 1] - target);
            xBar = xNextBar - 3 * dt * x[t] * x[t] * vNextBar;
            vBar = vNextBar;
        }

        return (cost, gradient);
    }

    [Theory]
    [InlineData(1)]
    [InlineData(2)]
    [InlineData(10)]
    [InlineData(1000)]
    public void GradientIsTheAdjointRecurrence(int steps)
    {
        double[] u = Controls(steps);
        var gradient = new double[steps + 1];
        double value = Gradient(u, X0, V0, Dt, Target, Rho, gradient);

        Check.SameBits(Value(u, X0, V0, Dt, Target, Rho), value, $"T = {steps}: value");
        (double _, double[] expected) = ByHand(u, X0, V0, Dt, Target, Rho);
        Check.Close(expected, gradient, Check.ClosedFormRelative, 1e-15 * steps, $"T = {steps}: gradient vs the adjoint recurrence by hand");
    }

    [Theory]
    [InlineData(1)]
    [InlineData(2)]
    [InlineData(10)]
    [InlineData(1000)]
    public void GradientMatchesCentralDifferences(int steps)
    {
        double[] u = Controls(steps);
        var gradient = new double[steps + 1];
        Gradient(u, X0, V0, Dt, Target, Rho, gradient);
        double[] point = new double[steps + 1];
        u.CopyTo(point, 0);
        point[steps] = Target;
        HorizonValue f = Value;
        Check.GradientMatchesOracle(p => f(p[..steps], X0, V0, Dt, p[steps], Rho), point, gradient, $"T = {steps}");
    }

    [Theory]
    [InlineData(10)]
    [InlineData(200)]
    public void ForwardRunningDerivativesAgree(int steps)
    {
        // Two independent routes through the same loop: running derivatives carried forward (forced by the attribute)
        // and the reverse sweep; both against the adjoint recurrence by hand above.
        double[] u = Controls(steps);
        var reverse = new double[steps + 1];
        var forward = new double[steps + 1];
        Gradient(u, X0, V0, Dt, Target, Rho, reverse);
        _fixture.Assembly.Method<HorizonGradient>("Horizons", "CostRunningGradient")(u, X0, V0, Dt, Target, Rho, forward);
        Assert.DoesNotContain("// Reverse sweep:", _fixture.Run.Source("Horizons.CostRunning.g.cs"), StringComparison.Ordinal);
        (double _, double[] expected) = ByHand(u, X0, V0, Dt, Target, Rho);
        Check.Close(expected, forward, Check.ClosedFormRelative, 1e-15 * steps, $"T = {steps}: forward running derivatives vs the adjoint recurrence by hand");
        Check.Close(forward, reverse, Check.ClosedFormRelative, 1e-15 * steps, $"T = {steps}: reverse sweep vs forward running derivatives");
    }

    [Fact]
    public void TheGeneratedCodeGoesReverse()
    {
        string text = _fixture.Run.Source("Horizons.Cost.g.cs");
        Assert.Contains("// Reverse sweep:", text, StringComparison.Ordinal);
        Assert.Contains("ArrayPool<double>.Shared.Rent", text, StringComparison.Ordinal);
        Assert.DoesNotContain("new double[", text, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData(10)]
    [InlineData(5000)]
    public void AllocatesNothingOnceWarm(int steps)
    {
        double[] u = Controls(steps);
        var gradient = new double[steps + 1];
        HorizonGradient g = Gradient;
        g(u, X0, V0, Dt, Target, Rho, gradient); // JIT, and the pool's first array of this size
        g(u, X0, V0, Dt, Target, Rho, gradient);
        long before = GC.GetAllocatedBytesForCurrentThread();
        for (int i = 0; i < 5; i++)
        {
            g(u, X0, V0, Dt, Target, Rho, gradient);
        }

        long allocated = GC.GetAllocatedBytesForCurrentThread() - before;
        Assert.Equal(0, allocated);
    }

    [Theory]
    [InlineData(10)]
    [InlineData(1000)]
    public void FloatFollowsTheDoubleAdjoint(int steps)
    {
        double[] u = Controls(steps);
        float[] uf = Array.ConvertAll(u, c => (float)c);
        var gradient = new float[steps + 1];
        float value = _fixture.Assembly.Method<HorizonGradientF>("Horizons", "CostSingleGradient")(uf, (float)X0, (float)V0, (float)Dt, (float)Target, (float)Rho, gradient);

        float direct = _fixture.Assembly.Method<HorizonValueF>("Horizons", "CostSingle")(uf, (float)X0, (float)V0, (float)Dt, (float)Target, (float)Rho);
        Check.SameBits(direct, value, $"T = {steps}: float value");

        // The hand adjoint in double at the float inputs; float keeps about 7 digits, lost further over a long horizon.
        (double _, double[] expected) = ByHand(Array.ConvertAll(uf, c => (double)c), (float)X0, (float)V0, (float)Dt, (float)Target, (float)Rho);
        double scale = 0;
        foreach (double e in expected)
        {
            scale = Math.Max(scale, Math.Abs(e));
        }

        Check.Close(expected, Array.ConvertAll(gradient, c => (double)c), 1e-3, 1e-4 * scale, $"T = {steps}: float gradient vs the double adjoint by hand");
    }

    [Fact]
    public void AnExceptionMidLoopReturnsThePooledRecord()
    {
        const int steps = 5000;
        double[] u = Controls(steps);
        var reference = new double[steps];
        var gradient = new double[steps];
        var g = _fixture.Assembly.Method<TrackedGradient>("Horizons", "TrackedGradient");
        g(u, reference, X0, Dt, gradient);
        g(u, reference, X0, Dt, gradient);

        // reference is too short: the user's method throws at reference[2500], and so does the generated one.
        var shortReference = new double[steps / 2];
        Assert.Throws<IndexOutOfRangeException>(() => _fixture.Assembly.Method<TrackedValue>("Horizons", "Tracked")(u, shortReference, X0, Dt));
        Assert.Throws<IndexOutOfRangeException>(() => g(u, shortReference, X0, Dt, gradient));

        // Had the rented record not been returned in the finally, this call would rent (allocate) a new one.
        long before = GC.GetAllocatedBytesForCurrentThread();
        g(u, reference, X0, Dt, gradient);
        Assert.Equal(0, GC.GetAllocatedBytesForCurrentThread() - before);
    }
}
