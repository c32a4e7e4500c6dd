using System;
using System.Linq;
using DerivGen.Tests.Infrastructure;
using MathNet.Numerics.LinearAlgebra;
using Xunit;

namespace DerivGen.Tests.Numerics.Loops;

public sealed class RecurrenceFixture : CompiledFixture
{
    // Loop-carried state: explicit Euler simulations with coupled states, a running product, and two loops in a row
    // sharing locals. Every physical constant and target below is invented for the test.
    public const string Source = """
        using System;
        using DerivGen;

        namespace Recurrences;

        public static partial class Simulations
        {
            // Drag-free projectile, explicit Euler: position with the old velocity, then the velocity.
            [Differentiate(nameof(speed), nameof(angle), nameof(g))]
            public static double Projectile(double speed, double angle, double g, double targetX, double targetY, double dt, int steps)
            {
                double x = 0, y = 0;
                double vx = speed * Math.Cos(angle);
                double vy = speed * Math.Sin(angle);
                for (int k = 0; k < steps; k++)
                {
                    x += vx * dt;
                    y += vy * dt;
                    vy -= g * dt;
                }

                double ex = x - targetX, ey = y - targetY;
                return 0.5 * (ex * ex + ey * ey);
            }

            // The same projectile with semi-implicit (symplectic) Euler: the velocity first, then the position with
            // the new velocity.
            [Differentiate(nameof(speed), nameof(angle), nameof(g))]
            public static double ProjectileSemiImplicit(double speed, double angle, double g, double targetX, double targetY, double dt, int steps)
            {
                double x = 0, y = 0;
                double vx = speed * Math.Cos(angle);
                double vy = speed * Math.Sin(angle);
                for (int k = 0; k < steps; k++)
                {
                    vy -= g * dt;
                    x += vx * dt;
                    y += vy * dt;
                }

                double ex = x - targetX, ey = y - targetY;
                return 0.5 * (ex * ex + ey * ey);
            }

            // Semi-implicit Euler for the first half of the steps and explicit Euler for the rest, the update order
            // chosen by a branch on the index.
            [Differentiate(nameof(speed), nameof(angle), nameof(g))]
            public static double ProjectileMixed(double speed, double angle, double g, double targetX, double targetY, double dt, int steps)
            {
                double x = 0, y = 0;
                double vx = speed * Math.Cos(angle);
                double vy = speed * Math.Sin(angle);
                int half = steps / 2;
                for (int k = 0; k < steps; k++)
                {
                    if (k < half)
                    {
                        vy -= g * dt;
                        y += vy * dt;
                    }
                    else
                    {
                        y += vy * dt;
                        vy -= g * dt;
                    }

                    x += vx * dt;
                }

                double ex = x - targetX, ey = y - targetY;
                return 0.5 * (ex * ex + ey * ey);
            }

            // Harmonic oscillator with velocity Verlet (leapfrog, kick-drift-kick): v is updated twice per step and
            // x in between, each update reading the newest values.
            [Differentiate(nameof(x0), nameof(v0), nameof(w2))]
            public static double Verlet(double x0, double v0, double w2, double dt, int steps)
            {
                double x = x0, v = v0;
                for (int i = 0; i < steps; i++)
                {
                    v -= 0.5 * dt * w2 * x;
                    x += dt * v;
                    v -= 0.5 * dt * w2 * x;
                }

                return x;
            }

            // Projectile with quadratic drag (acceleration -k |v| v - g e_y), explicit Euler, four coupled states.
            [Differentiate(nameof(speed), nameof(angle), nameof(k))]
            public static double Drag(double speed, double angle, double k, double g, double targetX, double dt, int steps)
            {
                double x = 0, y = 0;
                double vx = speed * Math.Cos(angle), vy = speed * Math.Sin(angle);
                for (int i = 0; i < steps; i++)
                {
                    double v = Math.Sqrt(vx * vx + vy * vy);
                    double ax = -k * v * vx;
                    double ay = -g - k * v * vy;
                    x += vx * dt;
                    y += vy * dt;
                    vx += ax * dt;
                    vy += ay * dt;
                }

                return (x - targetX) * (x - targetX) + y * y;
            }

            // Damped linear oscillator theta'' = -w2 theta - c theta', explicit Euler with a temporary declared in
            // the body; the loss is the final angle.
            [Differentiate(nameof(theta0), nameof(omega0), nameof(c))]
            public static double Oscillator(double theta0, double omega0, double c, double w2, double dt, int steps)
            {
                double theta = theta0, omega = omega0;
                for (int i = 0; i < steps; i++)
                {
                    double next = theta + dt * omega;
                    omega = omega - dt * (w2 * theta + c * omega);
                    theta = next;
                }

                return theta;
            }

            // The damped pendulum (sin theta instead of theta).
            [Differentiate(nameof(theta0), nameof(omega0), nameof(c))]
            public static double Pendulum(double theta0, double omega0, double c, double w2, double dt, int steps)
            {
                double theta = theta0, omega = omega0;
                for (int i = 0; i < steps; i++)
                {
                    double next = theta + dt * omega;
                    omega = omega - dt * (w2 * Math.Sin(theta) + c * omega);
                    theta = next;
                }

                return theta;
            }

            // A running product: principal * prod_i (1 + r_i x).
            [Differentiate(nameof(x), nameof(principal))]
            public static double Compound(double x, double principal, double[] r)
            {
                double p = 1;
                for (int i = 0; i < r.Length; i++)
                {
                    p *= 1 + r[i] * x;
                }

                return principal * p;
            }

            // A running quotient: principal / prod_i (1 + r_i x), with /= on the carried local.
            [Differentiate(nameof(x), nameof(principal))]
            public static double Discount(double x, double principal, double[] r)
            {
                double p = principal;
                for (int i = 0; i < r.Length; i++)
                {
                    p /= 1 + r[i] * x;
                }

                return p;
            }

            // Two loops in a row: the first computes the mean of the predictions a t_i + b, the second their
            // sum of squared deviations from it.
            [Differentiate(nameof(a), nameof(b))]
            public static double Spread(double a, double b, double[] t)
            {
                double mean = 0;
                for (int i = 0; i < t.Length; i++)
                {
                    mean += a * t[i] + b;
                }

                mean /= t.Length;
                double v = 0;
                for (int i = 0; i < t.Length; i++)
                {
                    double d = a * t[i] + b - mean;
                    v += d * d;
                }

                // A third loop reusing the body local's name d and the index i as a value: adds
                // sum_i (i - i) * d = 0, so the loss is unchanged, but the code must compile and keep its value.
                for (int i = 0; i < t.Length; i++)
                {
                    double d = (i - i) * (a + b);
                    v += d;
                }

                return v;
            }

            // Exponential moving average of a * t_i: two updates of the same local in one iteration.
            [Differentiate(nameof(a), nameof(beta))]
            public static double MovingAverage(double a, double beta, double[] t)
            {
                double m = 0;
                for (int i = 0; i < t.Length; i++)
                {
                    m *= beta;
                    m += (1 - beta) * (a * t[i]);
                }

                return m;
            }

        #pragma warning disable DG0007 // the speed limit is a kink on purpose
            // A speed-limited run: the velocity grows by a dt per step but is clipped at vmax (a branch on
            // loop-carried state); the position integrates the clipped velocity.
            [Differentiate(nameof(a), nameof(vmax))]
            public static double Saturated(double a, double vmax, double dt, int steps)
            {
                double v = 0, x = 0;
                for (int i = 0; i < steps; i++)
                {
                    v += a * dt;
                    if (v > vmax)
                    {
                        v = vmax;
                    }

                    x += v * dt;
                }

                return x;
            }
        #pragma warning restore DG0007

            // Horner's rule for sum_k c_k x^k, reading the coefficients from the highest down.
            [Differentiate(nameof(x))]
            public static double Horner(double x, double[] c)
            {
                double p = 0;
                for (int i = 0; i < c.Length; i++)
                {
                    p = p * x + c[c.Length - 1 - i];
                }

                return p;
            }

            // The value of s between two loops is saved in s1 and read while the second loop updates s.
            [Differentiate(nameof(a), nameof(b))]
            public static double SavedBetweenLoops(double a, double b, double[] t)
            {
                double s = 0;
                for (int i = 0; i < t.Length; i++)
                {
                    s += a * t[i];
                }

                double s1 = s;
                for (int i = 0; i < t.Length; i++)
                {
                    s += s1 * b * t[i];
                }

                return s;
            }

            // A copy of the carried local taken in the body before it is updated, read after the update.
            [Differentiate(nameof(a), nameof(b))]
            public static double CopyInBody(double a, double b, double[] t)
            {
                double s = 0;
                for (int i = 0; i < t.Length; i++)
                {
                    double old = s;
                    s = s * b + a * t[i];
                    s += old * 0.5;
                }

                return s;
            }

            // A copy taken before the loop and read after it.
            [Differentiate(nameof(a), nameof(b))]
            public static double CopyBeforeLoop(double a, double b, int n)
            {
                double s = a;
                double s0 = s;
                for (int i = 0; i < n; i++)
                {
                    s *= b;
                }

                return s - s0;
            }

            // A second-order recurrence: two carried locals shifted each step (next = b cur + prev).
            [Differentiate(nameof(a), nameof(b))]
            public static double SecondOrder(double a, double b, int n)
            {
                double prev = 0, cur = a;
                for (int i = 0; i < n; i++)
                {
                    double next = cur * b + prev;
                    prev = cur;
                    cur = next;
                }

                return cur;
            }

            // A loop whose carried state does not depend on the variables.
            [Differentiate(nameof(a), nameof(b))]
            public static double ConstantState(double a, double b, double[] t)
            {
                double st = 0;
                for (int i = 0; i < t.Length; i++)
                {
                    st += t[i] * t[i];
                }

                return a * a * st + b * st;
            }

            // Two loops in a row carrying the same state: a vertical rocket under thrust for `burn` steps, then coasting.
            [Differentiate(nameof(thrust), nameof(g))]
            public static double TwoPhase(double thrust, double g, double target, double dt, int burn, int steps)
            {
                double y = 0, vy = 0;
                for (int i = 0; i < burn; i++)
                {
                    y += vy * dt;
                    vy += (thrust - g) * dt;
                }

                for (int i = burn; i < steps; i++)
                {
                    y += vy * dt;
                    vy -= g * dt;
                }

                double e = y - target;
                return 0.5 * e * e;
            }
        }
        """;

    public RecurrenceFixture()
        : base(Source)
    {
    }
}

/// <summary>
/// Loop-carried state beyond sums: explicit Euler trajectories (closed forms of the discrete recurrence derived below,
/// MathNet finite differences where no closed form exists), a running product (logarithmic differentiation) and
/// loops in sequence sharing locals.
/// </summary>
public sealed class RecurrenceTests : IClassFixture<RecurrenceFixture>
{
    private const string Sim = "Recurrences.Simulations";
    private const int Steps = 200;
    private readonly RecurrenceFixture _fixture;

    public RecurrenceTests(RecurrenceFixture fixture) => _fixture = fixture;

    private delegate double ProjF(double s, double a, double g, double tx, double ty, double dt, int steps);

    private delegate double ProjG(double s, double a, double g, double tx, double ty, double dt, int steps, Span<double> gr);

    private delegate double ProjH(double s, double a, double g, double tx, double ty, double dt, int steps, Span<double> gr, Span<double> he);

    private delegate double OscF(double t0, double w0, double c, double w2, double dt, int steps);

    private delegate double OscG(double t0, double w0, double c, double w2, double dt, int steps, Span<double> gr);

    private delegate double OscH(double t0, double w0, double c, double w2, double dt, int steps, Span<double> gr, Span<double> he);

    private delegate double CompF(double x, double principal, double[] r);

    private delegate double CompG(double x, double principal, double[] r, Span<double> gr);

    private delegate double CompH(double x, double principal, double[] r, Span<double> gr, Span<double> he);

    private delegate double SpreadF(double a, double b, double[] t);

    private delegate double SpreadG(double a, double b, double[] t, Span<double> gr);

    private delegate double SpreadH(double a, double b, double[] t, Span<double> gr, Span<double> he);

    private delegate double SatF(double a, double vmax, double dt, int steps);

    private delegate double SatG(double a, double vmax, double dt, int steps, Span<double> gr);

    private delegate double SatH(double a, double vmax, double dt, int steps, Span<double> gr, Span<double> he);

    private delegate double VerletF(double x0, double v0, double w2, double dt, int steps);

    private delegate double VerletG(double x0, double v0, double w2, double dt, int steps, Span<double> gr);

    private delegate double VerletH(double x0, double v0, double w2, double dt, int steps, Span<double> gr, Span<double> he);

    private delegate double HornerF(double x, double[] c);

    private delegate double HornerG(double x, double[] c, Span<double> gr);

    private delegate double HornerH(double x, double[] c, Span<double> gr, Span<double> he);

    private delegate double CountF(double a, double b, int n);

    private delegate double CountG(double a, double b, int n, Span<double> gr);

    private delegate double CountH(double a, double b, int n, Span<double> gr, Span<double> he);

    private delegate double PhaseF(double thrust, double g, double target, double dt, int burn, int steps);

    private delegate double PhaseG(double thrust, double g, double target, double dt, int burn, int steps, Span<double> gr);

    private delegate double PhaseH(double thrust, double g, double target, double dt, int burn, int steps, Span<double> gr, Span<double> he);

    [Theory]
    [InlineData(20.0, 0.7, 9.81, Steps)]
    [InlineData(35.0, 1.1, 3.7, Steps)]
    [InlineData(20.0, 0.7, 9.81, 1)]
    [InlineData(20.0, 0.7, 9.81, 0)] // no step at all: L = ½(X² + Y²) and every derivative is 0
    public void DragFreeProjectileMatchesTheClosedFormOfExplicitEuler(double speed, double angle, double g, int n)
    {
        // Closed form of the recurrence (derived here; plain algebra on the update rule):
        //   vy_k = vy_0 − k g dt  (k = 0..N),  y_N = Σ_{k=0}^{N−1} vy_k dt = N dt vy_0 − g dt² N(N−1)/2,
        //   x_N = N dt vx_0,  with vx_0 = s cos α, vy_0 = s sin α.
        // L = ½(ex² + ey²), ex = x_N − X, ey = y_N − Y. With J = ∂(x_N, y_N)/∂(s, α, g):
        //   ∂x_N = N dt (cos α, −s sin α, 0),  ∂y_N = (N dt sin α, N dt s cos α, −dt² N(N−1)/2),
        //   ∇L = ex ∂x_N + ey ∂y_N,  ∇²L = JᵀJ + ex ∇²x_N + ey ∇²y_N (Gauss–Newton plus curvature; chain rule), where
        //   ∇²x_N has (s,α) = −N dt sin α, (α,α) = −N dt s cos α, and ∇²y_N has (s,α) = N dt cos α,
        //   (α,α) = −N dt s sin α; every other entry of both is 0.
        ProjectileAgainstClosedForm("Projectile", speed, angle, g, n, n * (n - 1) / 2.0);
    }

    [Theory]
    [InlineData(20.0, 0.7, 9.81, Steps)]
    [InlineData(35.0, 1.1, 3.7, Steps)]
    [InlineData(20.0, 0.7, 9.81, 1)]
    public void SemiImplicitProjectileMatchesItsClosedForm(double speed, double angle, double g, int n)
    {
        // Velocity first: vy_k = vy_0 − k g dt, and y_N = Σ_{k=1}^{N} vy_k dt = N dt vy_0 − g dt² N(N+1)/2; x_N as in
        // explicit Euler. The derivatives are those of the explicit case with N(N−1)/2 replaced by N(N+1)/2.
        ProjectileAgainstClosedForm("ProjectileSemiImplicit", speed, angle, g, n, n * (n + 1) / 2.0);
    }

    [Theory]
    [InlineData(20.0, 0.7, 9.81, Steps)]
    [InlineData(35.0, 1.1, 3.7, 7)]
    public void UpdateOrderChosenByABranchOnTheIndex(double speed, double angle, double g, int n)
    {
        // B = N/2 semi-implicit steps (y += vy_{k+1} dt) then explicit ones (y += vy_k dt), with vy_k = vy_0 − k g dt:
        // y_N = N dt vy_0 − g dt² (Σ_{k<B} (k + 1) + Σ_{k=B}^{N−1} k) = N dt vy_0 − g dt² (N(N−1)/2 + B) (plain
        // algebra): the explicit-Euler derivatives with N(N−1)/2 replaced by N(N−1)/2 + B.
        ProjectileAgainstClosedForm("ProjectileMixed", speed, angle, g, n, (n * (n - 1) / 2.0) + (n / 2));
    }

    [Theory]
    [InlineData(1.0, 0.0, 4.0)]
    [InlineData(-0.3, 0.8, 2.5)]
    public void VelocityVerletMatchesTheMatrixPowerOfItsStep(double x0, double v0, double w2)
    {
        // One kick-drift-kick step is linear in z = (x, v) (e.g. Hairer, Lubich & Wanner, Geometric Numerical
        // Integration, 2nd ed., §I.1.4, Störmer–Verlet; section from memory): z ← K D K z with K = [[1, 0], [−w2 dt/2, 1]] and
        // D = [[1, dt], [0, 1]]. So x_N = e₀ᵀ M^N z₀ with M = K D K (plain linear algebra):
        //   ∂x_N/∂x₀ = (M^N)₀₀, ∂x_N/∂v₀ = (M^N)₀₁, ∂x_N/∂w2 = e₀ᵀ (M^N)' z₀, (M^N)' = Σ_k M^k M' M^{N−1−k},
        //   M' = K' D K + K D K' with K' = [[0, 0], [−dt/2, 0]];
        //   Hessian: 0 in (x₀, v₀) (linear), (x₀, w2) = (M^N)'₀₀, (v₀, w2) = (M^N)'₀₁; (w2, w2) against central
        //   differences of the gradient only. Invented: dt = 0.05, 200 steps.
        const double dt = 0.05;
        const int n = Steps;
        MatrixBuilder<double> mb = Matrix<double>.Build;
        Matrix<double> k = mb.DenseOfArray(new[,] { { 1, 0 }, { -w2 * dt / 2, 1 } });
        Matrix<double> kp = mb.DenseOfArray(new[,] { { 0, 0 }, { -dt / 2, 0 } });
        Matrix<double> d = mb.DenseOfArray(new[,] { { 1, dt }, { 0, 1 } });
        Matrix<double> m = k * d * k;
        Matrix<double> mp = (kp * d * k) + (k * d * kp);
        Matrix<double> power = mb.DenseIdentity(2), dpower = mb.Dense(2, 2);
        for (int i = 0; i < n; i++)
        {
            dpower = (dpower * m) + (power * mp);
            power *= m;
        }

        double[] gradient = { power[0, 0], power[0, 1], (dpower[0, 0] * x0) + (dpower[0, 1] * v0) };
        var f = _fixture.Assembly.Method<VerletF>(Sim, "Verlet");
        var g = _fixture.Assembly.Method<VerletG>(Sim, "VerletGradient");
        var h = _fixture.Assembly.Method<VerletH>(Sim, "VerletHessian");
        Probe p = Probe.Of(
            (F3)((a, b, c) => f(a, b, c, dt, n)),
            (G3)((a, b, c, gr) => g(a, b, c, dt, n, gr)),
            (H3)((a, b, c, gr, he) => h(a, b, c, dt, n, gr, he)));
        double scale = 1 + power.Enumerate().Max(Math.Abs) + dpower.Enumerate().Max(Math.Abs);
        LoopCheck.At(p, new[] { x0 == 0 ? 1e-3 : x0, v0 == 0 ? 1e-3 : v0, w2 }, null, 0, null, 0, "Verlet (oracles)");

        var gr2 = new double[3];
        var hess = new double[9];
        Check.SameBits(f(x0, v0, w2, dt, n), h(x0, v0, w2, dt, n, gr2, hess), "VerletHessian value");
        Check.Close(gradient, gr2, LoopCheck.GradientRelative, 1e-12 * scale, "Verlet gradient vs matrix power");
        double[] known = { hess[0], hess[1], hess[4], hess[2], hess[5] };
        double[] expected = { 0, 0, 0, dpower[0, 0], dpower[0, 1] };
        Check.Close(expected, known, LoopCheck.HessianClosedFormRelative, 1e-12 * scale, "Verlet Hessian (x0x0, x0v0, v0v0, x0w2, v0w2) vs matrix power");
    }

    /// <summary>L = ½(ex² + ey²) with x_N = N dt s cos α and y_N = N dt s sin α − g dt² T, T the triangular number
    /// of the scheme, checked with the derivatives derived in the explicit-Euler test. Invented scenario: dt = 0.01,
    /// target (30, 5).</summary>
    private void ProjectileAgainstClosedForm(string method, double speed, double angle, double g, int n, double triangular)
    {
        const double dt = 0.01, tx = 30, ty = 5;
        double nd = n * dt, c = Math.Cos(angle), si = Math.Sin(angle);
        double xn = nd * speed * c, yn = (nd * speed * si) - (g * dt * dt * triangular);
        double ex = xn - tx, ey = yn - ty;
        double[] dx = { nd * c, -nd * speed * si, 0 };
        double[] dy = { nd * si, nd * speed * c, -dt * dt * triangular };
        var gradient = new double[3];
        var hessian = new double[9];
        for (int i = 0; i < 3; i++)
        {
            gradient[i] = (ex * dx[i]) + (ey * dy[i]);
            for (int j = 0; j < 3; j++)
            {
                hessian[(i * 3) + j] = (dx[i] * dx[j]) + (dy[i] * dy[j]);
            }
        }

        hessian[1] += (ex * -nd * si) + (ey * nd * c);
        hessian[3] = hessian[1];
        hessian[4] += (ex * -nd * speed * c) + (ey * -nd * speed * si);

        var f = _fixture.Assembly.Method<ProjF>(Sim, method);
        var gr = _fixture.Assembly.Method<ProjG>(Sim, method + "Gradient");
        var he = _fixture.Assembly.Method<ProjH>(Sim, method + "Hessian");
        Probe p = Probe.Of(
            (F3)((a, b, d) => f(a, b, d, tx, ty, dt, n)),
            (G3)((a, b, d, gg) => gr(a, b, d, tx, ty, dt, n, gg)),
            (H3)((a, b, d, gg, hh) => he(a, b, d, tx, ty, dt, n, gg, hh)));

        // The simulation accumulates ~N roundings; the floors allow ~N·ε relative to the size of the terms.
        double scale = (Math.Abs(ex) + Math.Abs(ey) + 1) * (nd * (speed + 1) + (dt * dt * triangular) + 1);
        LoopCheck.At(p, new[] { speed, angle, g }, gradient, 1e-13 * scale, hessian, 1e-13 * scale * scale, $"{method} ({n} steps)");
    }

    [Theory]
    [InlineData(20.0, 0.7, 0.02)]
    [InlineData(35.0, 1.1, 0.005)]
    public void QuadraticDragMatchesFiniteDifferences(double speed, double angle, double k)
    {
        // No closed form: the gradient is checked against MathNet's central differences of the loss (1e-7 relative)
        // and the Hessian against central differences of the generated gradient (1e-6 relative; see LoopCheck).
        // The loss is smooth (|v| stays far from 0), but it changes on a scale much smaller than 1 in the drag
        // coefficient k, and MathNet's default step (1 + |k|)·ε^(1/3) ≈ 8e-6 does not shrink with k: its h² truncation
        // error in ∂L/∂k was measured at ~7e-7 relative at k = 0.02, while central differences with halved steps
        // converge to the generated value. So each variable gets the step 1e-4·|x_i| (a step proportional to the
        // variable's own size; common practice): truncation ~1e-8, rounding ~ε|L|/h ~1e-10 relative here.
        // Invented scenario: g = 9.81, dt = 0.01, 200 steps, target x = 25.
        const double g = 9.81, tx = 25, dt = 0.01;
        Probe p = DragProbe(g, tx, dt);
        LoopCheck.At(p, new[] { speed, angle, k }, null, 0, null, 0, "Drag", relativeStep: 1e-4);
    }

    [Theory]
    [InlineData(20.0, 0.7)]
    [InlineData(35.0, 1.1)]
    public void QuadraticDragWithoutDragReducesToTheDragFreeClosedForm(double speed, double angle)
    {
        // At k = 0 the drag model is the drag-free projectile, so ∂L/∂s and ∂L/∂α follow the closed form of explicit
        // Euler (derived in DragFreeProjectileMatchesTheClosedFormOfExplicitEuler) with L = (x_N − X)² + y_N².
        const double g = 9.81, tx = 25, dt = 0.01;
        const int n = Steps;
        double nd = n * dt, c = Math.Cos(angle), si = Math.Sin(angle);
        double xn = nd * speed * c, yn = (nd * speed * si) - (g * dt * dt * n * (n - 1) / 2);
        double gs = (2 * (xn - tx) * nd * c) + (2 * yn * nd * si);
        double ga = (2 * (xn - tx) * -nd * speed * si) + (2 * yn * nd * speed * c);

        var gradient = new double[3];
        Probe p = DragProbe(g, tx, dt);
        Check.SameBits(p.Value(new[] { speed, angle, 0.0 }), p.Gradient(new[] { speed, angle, 0.0 }, gradient), "Drag value at k = 0");
        double floor = 1e-12 * (Math.Abs(xn - tx) + Math.Abs(yn) + 1) * nd * (speed + 1);
        Check.Close(gs, gradient[0], LoopCheck.GradientRelative, floor, "Drag ∂L/∂s at k = 0 vs explicit-Euler closed form");
        Check.Close(ga, gradient[1], LoopCheck.GradientRelative, floor, "Drag ∂L/∂α at k = 0 vs explicit-Euler closed form");

        // ∂L/∂k at k = 0 has no closed form here; MathNet's central differences (k = ±h is as smooth as k = 0).
        Check.GradientMatchesOracle(p.Value, new[] { speed, angle, 0.0 }, gradient, "Drag at k = 0");
    }

    [Theory]
    [InlineData(0.8, -0.3, 0.3)]
    [InlineData(-0.2, 1.5, 0.05)]
    public void DampedOscillatorMatchesTheMatrixPowerOfTheEulerStep(double theta0, double omega0, double c)
    {
        // Invented scenario: w2 = 4, dt = 0.05, 200 steps. One explicit Euler step is linear, z_{k+1} = A z_k with
        // z = (θ, ω) and A = [[1, dt], [−dt w2, 1 − dt c]], so θ_N = e₀ᵀ A^N z₀ (plain linear algebra):
        //   ∂θ_N/∂θ₀ = (A^N)₀₀, ∂θ_N/∂ω₀ = (A^N)₀₁, ∂θ_N/∂c = e₀ᵀ D z₀ with D = d(A^N)/dc
        //   = Σ_{k=0}^{N−1} A^k A' A^{N−1−k} (product rule), A' = [[0, 0], [0, −dt]];
        //   the Hessian has (θ₀, c) = D₀₀, (ω₀, c) = D₀₁, (c, c) = e₀ᵀ D' z₀ with
        //   D' = Σ_k [(A^k)' A' A^{N−1−k} + A^k A' (A^{N−1−k})'], (A^{m+1})' = (A^m)' A + A^m A', and 0 elsewhere
        //   (θ_N is linear in z₀).
        const double w2 = 4, dt = 0.05;
        const int n = Steps;
        MatrixBuilder<double> mb = Matrix<double>.Build;
        Matrix<double> a = mb.DenseOfArray(new[,] { { 1, dt }, { -dt * w2, 1 - (dt * c) } });
        Matrix<double> ap = mb.DenseOfArray(new[,] { { 0, 0 }, { 0, -dt } });
        var powers = new Matrix<double>[n + 1];
        var dpowers = new Matrix<double>[n + 1];
        powers[0] = mb.DenseIdentity(2);
        dpowers[0] = mb.Dense(2, 2);
        for (int m = 0; m < n; m++)
        {
            powers[m + 1] = powers[m] * a;
            dpowers[m + 1] = (dpowers[m] * a) + (powers[m] * ap);
        }

        Matrix<double> d2 = mb.Dense(2, 2);
        for (int k = 0; k < n; k++)
        {
            d2 += (dpowers[k] * ap * powers[n - 1 - k]) + (powers[k] * ap * dpowers[n - 1 - k]);
        }

        Matrix<double> d = dpowers[n];
        double[] gradient = { powers[n][0, 0], powers[n][0, 1], (d[0, 0] * theta0) + (d[0, 1] * omega0) };
        double hcc = (d2[0, 0] * theta0) + (d2[0, 1] * omega0);
        double[] hessian = { 0, 0, d[0, 0], 0, 0, d[0, 1], d[0, 0], d[0, 1], hcc };

        Probe p = OscillatorProbe("Oscillator", w2, dt, n);
        double scale = 1 + powers[n].Enumerate().Max(Math.Abs) + d.Enumerate().Max(Math.Abs) + d2.Enumerate().Max(Math.Abs);
        LoopCheck.At(p, new[] { theta0, omega0, c }, gradient, 1e-12 * scale, hessian, 1e-12 * scale, "Oscillator");
    }

    [Theory]
    [InlineData(0.8, -0.3, 0.3)]
    [InlineData(2.5, 1.0, 0.1)]
    public void DampedPendulumMatchesFiniteDifferences(double theta0, double omega0, double c)
    {
        // No closed form (sin θ): MathNet central differences of the loss for the gradient (1e-7 relative) and of the
        // generated gradient for the Hessian (1e-6 relative), as for the drag projectile. Invented: w2 = 4, dt = 0.05.
        Probe p = OscillatorProbe("Pendulum", 4, 0.05, Steps);
        LoopCheck.At(p, new[] { theta0, omega0, c }, null, 0, null, 0, "Pendulum");
    }

    [Theory]
    [InlineData(0.5, 1000.0)]
    [InlineData(-1.5, 250.0)]
    public void RunningProductMatchesLogarithmicDifferentiation(double x, double principal)
    {
        // Invented rates r_i = 0.01 (1 + sin i), i = 0..29. With Π = Π_i (1 + r_i x), S₁ = Σ r_i/(1 + r_i x),
        // S₂ = Σ r_i²/(1 + r_i x)² (logarithmic differentiation, any calculus text: (ln Π)' = S₁, (ln Π)'' = −S₂):
        //   f = P Π,  ∂f/∂x = P Π S₁,  ∂f/∂P = Π,  ∂²f/∂x² = P Π (S₁² − S₂),  ∂²f/∂x∂P = Π S₁,  ∂²f/∂P² = 0.
        var r = new double[30];
        double prod = 1, s1 = 0, s2 = 0;
        for (int i = 0; i < r.Length; i++)
        {
            r[i] = 0.01 * (1 + Math.Sin(i));
            double q = 1 + (r[i] * x);
            prod *= q;
            s1 += r[i] / q;
            s2 += r[i] * r[i] / (q * q);
        }

        double[] gradient = { principal * prod * s1, prod };
        double[] hessian = { principal * prod * ((s1 * s1) - s2), prod * s1, prod * s1, 0 };

        var f = _fixture.Assembly.Method<CompF>(Sim, "Compound");
        var g = _fixture.Assembly.Method<CompG>(Sim, "CompoundGradient");
        var h = _fixture.Assembly.Method<CompH>(Sim, "CompoundHessian");
        Probe p = Probe.Of(
            (F2)((a, b) => f(a, b, r)),
            (G2)((a, b, gr) => g(a, b, r, gr)),
            (H2)((a, b, gr, he) => h(a, b, r, gr, he)));
        LoopCheck.At(p, new[] { x, principal }, gradient, 0, hessian, 0, "Compound");
    }

    [Theory]
    [InlineData(0.5, 1000.0)]
    [InlineData(-1.5, 250.0)]
    public void RunningQuotientMatchesLogarithmicDifferentiation(double x, double principal)
    {
        // Same invented rates as the running product; f = P / Π with (ln f)' = −S₁ in x (logarithmic
        // differentiation): ∂f/∂x = −f S₁, ∂f/∂P = 1/Π, ∂²f/∂x² = f (S₁² + S₂), ∂²f/∂x∂P = −S₁/Π, ∂²f/∂P² = 0.
        var r = new double[30];
        double prod = 1, s1 = 0, s2 = 0;
        for (int i = 0; i < r.Length; i++)
        {
            r[i] = 0.01 * (1 + Math.Sin(i));
            double q = 1 + (r[i] * x);
            prod *= q;
            s1 += r[i] / q;
            s2 += r[i] * r[i] / (q * q);
        }

        double f0 = principal / prod;
        double[] gradient = { -f0 * s1, 1 / prod };
        double[] hessian = { f0 * ((s1 * s1) + s2), -s1 / prod, -s1 / prod, 0 };

        var f = _fixture.Assembly.Method<CompF>(Sim, "Discount");
        var g = _fixture.Assembly.Method<CompG>(Sim, "DiscountGradient");
        var h = _fixture.Assembly.Method<CompH>(Sim, "DiscountHessian");
        Probe p = Probe.Of(
            (F2)((a, b) => f(a, b, r)),
            (G2)((a, b, gr) => g(a, b, r, gr)),
            (H2)((a, b, gr, he) => h(a, b, r, gr, he)));
        LoopCheck.At(p, new[] { x, principal }, gradient, 0, hessian, 0, "Discount");
    }

    [Theory]
    [InlineData(1.3, 0.4)]
    [InlineData(-0.6, -2.0)]
    public void TwoLoopsInSequenceSharingTheMean(double a, double b)
    {
        // (A third loop adds exactly 0; see the source.) Invented samples t_i = i²/10 − sin i, i = 0..24. With t̄ the mean and S = Σ (t_i − t̄)², the predictions'
        // spread is v = a² S (b cancels; plain algebra): ∂v/∂a = 2aS, ∂v/∂b = 0, Hessian [[2S, 0], [0, 0]].
        var t = new double[25];
        for (int i = 0; i < t.Length; i++)
        {
            t[i] = (i * i / 10.0) - Math.Sin(i);
        }

        double mean = 0;
        foreach (double v in t)
        {
            mean += v / t.Length;
        }

        double s = 0, absDev = 0;
        foreach (double v in t)
        {
            s += (v - mean) * (v - mean);
            absDev += Math.Abs(v - mean);
        }

        var f = _fixture.Assembly.Method<SpreadF>(Sim, "Spread");
        var g = _fixture.Assembly.Method<SpreadG>(Sim, "SpreadGradient");
        var h = _fixture.Assembly.Method<SpreadH>(Sim, "SpreadHessian");
        Probe p = Probe.Of(
            (F2)((x0, x1) => f(x0, x1, t)),
            (G2)((x0, x1, gr) => g(x0, x1, t, gr)),
            (H2)((x0, x1, gr, he) => h(x0, x1, t, gr, he)));

        // ∂v/∂b is a sum of 2 d_i (1 − 1) or of 2 d_i (which cancel, Σ d_i = 0 up to rounding), depending on how
        // the derivative is grouped: allow n·ε times the size of its terms, 2|a|Σ|t_i − t̄| (and the Hessian likewise).
        double floor = 1e-13 * t.Length * 2 * (Math.Abs(a) * absDev + Math.Abs(b) + 1);
        LoopCheck.At(p, new[] { a, b }, new[] { 2 * a * s, 0 }, floor, new[] { 2 * s, 0, 0, 0 }, 1e-13 * t.Length * 2 * (absDev + t.Length), "Spread");
    }

    [Theory]
    [InlineData(1.7, 0.9)]
    [InlineData(-0.6, 0.35)]
    public void MovingAverageWithTwoUpdatesPerIteration(double a, double beta)
    {
        // Invented samples t_i = cos(i) + i/10, i = 0..29. Unrolling m ← β m + (1 − β) a t_i (plain algebra):
        // m_N = (1 − β) a P(β), P(β) = Σ_i β^{N−1−i} t_i, so ∂/∂a = (1 − β) P, ∂/∂β = a((1 − β) P' − P),
        // ∂²/∂a² = 0, ∂²/∂a∂β = (1 − β) P' − P, ∂²/∂β² = a((1 − β) P'' − 2P'), with P', P'' the term-by-term
        // derivatives of the polynomial.
        const int n = 30;
        var t = new double[n];
        double pv = 0, p1 = 0, p2 = 0, size = 0;
        for (int i = 0; i < n; i++)
        {
            t[i] = Math.Cos(i) + (i / 10.0);
            int e = n - 1 - i;
            pv += Math.Pow(beta, e) * t[i];
            p1 += e == 0 ? 0 : e * Math.Pow(beta, e - 1) * t[i];
            p2 += e <= 1 ? 0 : e * (e - 1) * Math.Pow(beta, e - 2) * t[i];
            size += e * e * Math.Abs(t[i]);
        }

        double mixed = ((1 - beta) * p1) - pv;
        double[] gradient = { (1 - beta) * pv, a * mixed };
        double[] hessian = { 0, mixed, mixed, a * (((1 - beta) * p2) - (2 * p1)) };

        var f = _fixture.Assembly.Method<SpreadF>(Sim, "MovingAverage");
        var g = _fixture.Assembly.Method<SpreadG>(Sim, "MovingAverageGradient");
        var h = _fixture.Assembly.Method<SpreadH>(Sim, "MovingAverageHessian");
        Probe p = Probe.Of(
            (F2)((x0, x1) => f(x0, x1, t)),
            (G2)((x0, x1, gr) => g(x0, x1, t, gr)),
            (H2)((x0, x1, gr, he) => h(x0, x1, t, gr, he)));
        double floor = 1e-13 * n * (Math.Abs(a) + 1) * size;
        LoopCheck.At(p, new[] { a, beta }, gradient, floor, hessian, floor, "MovingAverage");
    }

    [Theory]
    [InlineData(2.3, 1.0)] // clipped from step 44 on (44 · 0.023 > 1)
    [InlineData(0.7, 3.0)] // never clipped in 200 steps (200 · 0.007 = 1.4)
    public void BranchOnLoopCarriedState(double a, double vmax)
    {
        // dt = 0.01, N = 200 (invented). Unclipped, v_k = k a dt after k steps; the branch clips it to vmax once
        // k a dt > vmax, and then it stays clipped. So x_N = dt Σ_{k=1}^{N} v_k with v_k = k a dt for k a dt <= vmax
        // and vmax otherwise (plain algebra): ∂x_N/∂a = dt² Σ_{unclipped k} k, ∂x_N/∂vmax = dt · #clipped steps, and
        // the Hessian is 0 (x_N is piecewise linear in (a, vmax)); the derivative is that of the branch taken.
        const double dt = 0.01;
        const int n = Steps;
        double ga = 0, gv = 0, margin = double.PositiveInfinity;
        double v = 0;
        for (int k = 1; k <= n; k++)
        {
            v += a * dt;
            margin = Math.Min(margin, Math.Abs(v - vmax));
            if (v > vmax)
            {
                v = vmax;
                gv += dt;
            }
            else
            {
                ga += k * dt * dt;
            }
        }

        // The velocity passes vmax cleanly (not within rounding of it), so the branch taken is unambiguous.
        Assert.True(margin > 1e-6, $"v came within {Check.R(margin)} of vmax");

        var fs = _fixture.Assembly.Method<SatF>(Sim, "Saturated");
        var gs = _fixture.Assembly.Method<SatG>(Sim, "SaturatedGradient");
        var hs = _fixture.Assembly.Method<SatH>(Sim, "SaturatedHessian");
        Probe p = Probe.Of(
            (F2)((x0, x1) => fs(x0, x1, dt, n)),
            (G2)((x0, x1, gr) => gs(x0, x1, dt, n, gr)),
            (H2)((x0, x1, gr, he) => hs(x0, x1, dt, n, gr, he)));
        LoopCheck.At(p, new[] { a, vmax }, new[] { ga, gv }, 1e-13 * n, new double[4], 1e-13, "Saturated");
    }

    [Theory]
    [InlineData(0.7)]
    [InlineData(-1.3)]
    public void HornerRecurrenceMatchesThePolynomialsDerivatives(double x)
    {
        // Invented coefficients c_k = (−1)^k (k + 1)/3, k = 0..8. p(x) = Σ c_k x^k, p' = Σ k c_k x^{k−1},
        // p'' = Σ k(k−1) c_k x^{k−2} (plain calculus; Horner's rule p ← p x + c_k from the top coefficient down is
        // the same polynomial, e.g. Knuth, TAOCP vol. 2, §4.6.4, from memory).
        var c = new double[9];
        double d1 = 0, d2 = 0, size = 0;
        for (int k = 0; k < c.Length; k++)
        {
            c[k] = (k % 2 == 0 ? 1 : -1) * (k + 1) / 3.0;
            d1 += k == 0 ? 0 : k * c[k] * Math.Pow(x, k - 1);
            d2 += k <= 1 ? 0 : k * (k - 1) * c[k] * Math.Pow(x, k - 2);
            size += k * k * Math.Abs(c[k]) * Math.Pow(Math.Abs(x) + 1, k);
        }

        var f = _fixture.Assembly.Method<HornerF>(Sim, "Horner");
        var g = _fixture.Assembly.Method<HornerG>(Sim, "HornerGradient");
        var h = _fixture.Assembly.Method<HornerH>(Sim, "HornerHessian");
        Probe p = Probe.Of((F1)(v => f(v, c)), (G1)((v, gr) => g(v, c, gr)), (H1)((v, gr, he) => h(v, c, gr, he)));
        LoopCheck.At(p, new[] { x }, new[] { d1 }, 1e-13 * size, new[] { d2 }, 1e-13 * size, "Horner");
    }

    [Theory]
    [InlineData(1.5, -0.5)]
    [InlineData(-0.25, 3.0)]
    public void ValueSavedBetweenLoopsKeepsItsValueWhileTheSecondLoopUpdatesTheOriginal(double a, double b)
    {
        // Invented samples t_i = 0.5 + i/7, i = 0..19, T = Σ t_i. After the first loop s = aT; s1 keeps aT while the
        // second loop adds s1 b t_i: f = aT (1 + bT) (plain algebra). grad (T(1 + bT), aT²), Hessian [[0, T²], [T², 0]].
        var t = new double[20];
        double tt = 0;
        for (int i = 0; i < t.Length; i++)
        {
            t[i] = 0.5 + (i / 7.0);
            tt += t[i];
        }

        var f = _fixture.Assembly.Method<SpreadF>(Sim, "SavedBetweenLoops");
        var g = _fixture.Assembly.Method<SpreadG>(Sim, "SavedBetweenLoopsGradient");
        var h = _fixture.Assembly.Method<SpreadH>(Sim, "SavedBetweenLoopsHessian");
        Probe p = Probe.Of(
            (F2)((x0, x1) => f(x0, x1, t)),
            (G2)((x0, x1, gr) => g(x0, x1, t, gr)),
            (H2)((x0, x1, gr, he) => h(x0, x1, t, gr, he)));
        double scale = 1e-13 * t.Length * tt * tt * (Math.Abs(a) + Math.Abs(b) + 1);
        LoopCheck.At(p, new[] { a, b }, new[] { tt * (1 + (b * tt)), a * tt * tt }, scale, new[] { 0, tt * tt, tt * tt, 0 }, scale, "SavedBetweenLoops");
    }

    [Theory]
    [InlineData(0.7, 0.3)]
    [InlineData(-1.2, -0.95)]
    public void CopyTakenInTheBodyBeforeTheUpdate(double a, double b)
    {
        // Invented t_i = sin(i) + 0.5, i = 0..11. One step is s ← b s + a t_i + s/2 = q s + a t_i with q = b + ½, so
        // s_N = a Σ_i t_i q^{e_i}, e_i = N − 1 − i (plain algebra), and with ∂q/∂b = 1:
        // ∂a = Σ t_i q^{e_i}, ∂b = a Σ t_i e_i q^{e_i − 1}, ∂²/∂a∂b = Σ t_i e_i q^{e_i − 1},
        // ∂²/∂b² = a Σ t_i e_i (e_i − 1) q^{e_i − 2}, ∂²/∂a² = 0.
        var t = new double[12];
        double q = b + 0.5, ga = 0, gab = 0, gbb = 0, size = 0;
        for (int i = 0; i < t.Length; i++)
        {
            t[i] = Math.Sin(i) + 0.5;
            int e = t.Length - 1 - i;
            ga += t[i] * Math.Pow(q, e);
            gab += e == 0 ? 0 : t[i] * e * Math.Pow(q, e - 1);
            gbb += e <= 1 ? 0 : t[i] * e * (e - 1) * Math.Pow(q, e - 2);
            size += Math.Abs(t[i]) * e * e * Math.Pow(Math.Abs(q) + 1, e);
        }

        var f = _fixture.Assembly.Method<SpreadF>(Sim, "CopyInBody");
        var g = _fixture.Assembly.Method<SpreadG>(Sim, "CopyInBodyGradient");
        var h = _fixture.Assembly.Method<SpreadH>(Sim, "CopyInBodyHessian");
        Probe p = Probe.Of(
            (F2)((x0, x1) => f(x0, x1, t)),
            (G2)((x0, x1, gr) => g(x0, x1, t, gr)),
            (H2)((x0, x1, gr, he) => h(x0, x1, t, gr, he)));
        double floor = 1e-13 * size * (Math.Abs(a) + 1);
        LoopCheck.At(p, new[] { a, b }, new[] { ga, a * gab }, floor, new[] { 0, gab, gab, a * gbb }, floor, "CopyInBody");
    }

    [Theory]
    [InlineData(1.3, 0.9, 12)]
    [InlineData(-0.4, 1.1, 5)]
    public void CopyTakenBeforeTheLoopKeepsTheInitialValue(double a, double b, int n)
    {
        // f = a bⁿ − a (plain calculus): grad (bⁿ − 1, a n bⁿ⁻¹), Hessian [[0, n bⁿ⁻¹], [n bⁿ⁻¹, a n (n − 1) bⁿ⁻²]].
        double bn1 = Math.Pow(b, n - 1);
        var f = _fixture.Assembly.Method<CountF>(Sim, "CopyBeforeLoop");
        var g = _fixture.Assembly.Method<CountG>(Sim, "CopyBeforeLoopGradient");
        var h = _fixture.Assembly.Method<CountH>(Sim, "CopyBeforeLoopHessian");
        Probe p = Probe.Of(
            (F2)((x0, x1) => f(x0, x1, n)),
            (G2)((x0, x1, gr) => g(x0, x1, n, gr)),
            (H2)((x0, x1, gr, he) => h(x0, x1, n, gr, he)));
        double[] gradient = { (bn1 * b) - 1, a * n * bn1 };
        double[] hessian = { 0, n * bn1, n * bn1, a * n * (n - 1) * Math.Pow(b, n - 2) };
        LoopCheck.At(p, new[] { a, b }, gradient, 1e-14, hessian, 1e-14, "CopyBeforeLoop");
    }

    [Theory]
    [InlineData(0.8, 1.2, 15)]
    [InlineData(-1.5, 0.6, 30)]
    public void SecondOrderRecurrenceMatchesItsMatrixPower(double a, double b, int n)
    {
        // (cur, prev) ← A (cur, prev) with A = [[b, 1], [1, 0]] (a Fibonacci-type recurrence), z₀ = (a, 0), f = cur_N
        // = a (A^N)₀₀ (plain linear algebra). With A' = [[1, 0], [0, 0]] and A'' = 0, as in the oscillator test:
        // ∂a = (A^N)₀₀, ∂b = a D₀₀, ∂²/∂a∂b = D₀₀, ∂²/∂b² = a D'₀₀, ∂²/∂a² = 0, where D = (A^N)' and D' = (A^N)''.
        MatrixBuilder<double> mb = Matrix<double>.Build;
        Matrix<double> am = mb.DenseOfArray(new[,] { { b, 1 }, { 1, 0 } });
        Matrix<double> ap = mb.DenseOfArray(new[,] { { 1.0, 0 }, { 0, 0 } });
        var powers = new Matrix<double>[n + 1];
        var dpowers = new Matrix<double>[n + 1];
        powers[0] = mb.DenseIdentity(2);
        dpowers[0] = mb.Dense(2, 2);
        for (int m = 0; m < n; m++)
        {
            powers[m + 1] = powers[m] * am;
            dpowers[m + 1] = (dpowers[m] * am) + (powers[m] * ap);
        }

        Matrix<double> d2 = mb.Dense(2, 2);
        for (int k = 0; k < n; k++)
        {
            d2 += (dpowers[k] * ap * powers[n - 1 - k]) + (powers[k] * ap * dpowers[n - 1 - k]);
        }

        double d = dpowers[n][0, 0];
        var f = _fixture.Assembly.Method<CountF>(Sim, "SecondOrder");
        var g = _fixture.Assembly.Method<CountG>(Sim, "SecondOrderGradient");
        var h = _fixture.Assembly.Method<CountH>(Sim, "SecondOrderHessian");
        Probe p = Probe.Of(
            (F2)((x0, x1) => f(x0, x1, n)),
            (G2)((x0, x1, gr) => g(x0, x1, n, gr)),
            (H2)((x0, x1, gr, he) => h(x0, x1, n, gr, he)));
        double scale = 1e-12 * (1 + Math.Abs(a)) * (1 + powers[n].Enumerate().Max(Math.Abs) + Math.Abs(d) + d2.Enumerate().Max(Math.Abs));
        LoopCheck.At(p, new[] { a, b }, new[] { powers[n][0, 0], a * d }, scale, new[] { 0, d, d, a * d2[0, 0] }, scale, "SecondOrder");
    }

    [Theory]
    [InlineData(1.5, -0.5)]
    [InlineData(-0.25, 3.0)]
    public void LoopStateThatDoesNotDependOnTheVariables(double a, double b)
    {
        // Invented samples t_i = 0.5 + i/7, i = 0..19; S = Σ t_i². f = a² S + b S: grad (2aS, S), Hessian [[2S, 0], [0, 0]].
        var t = new double[20];
        double st = 0;
        for (int i = 0; i < t.Length; i++)
        {
            t[i] = 0.5 + (i / 7.0);
            st += t[i] * t[i];
        }

        var f = _fixture.Assembly.Method<SpreadF>(Sim, "ConstantState");
        var g = _fixture.Assembly.Method<SpreadG>(Sim, "ConstantStateGradient");
        var h = _fixture.Assembly.Method<SpreadH>(Sim, "ConstantStateHessian");
        Probe p = Probe.Of(
            (F2)((x0, x1) => f(x0, x1, t)),
            (G2)((x0, x1, gr) => g(x0, x1, t, gr)),
            (H2)((x0, x1, gr, he) => h(x0, x1, t, gr, he)));
        LoopCheck.At(p, new[] { a, b }, new[] { 2 * a * st, st }, 0, new[] { 2 * st, 0, 0, 0 }, 0, "ConstantState");
    }

    [Theory]
    [InlineData(25.0, 9.81, 60)]
    [InlineData(14.0, 3.7, 150)]
    public void TwoLoopsInSequenceCarryingTheSameTrajectory(double thrust, double g, int burn)
    {
        // Invented scenario: dt = 0.01, 200 steps in all, target altitude 40. With a = thrust − g, B = burn,
        // C = N − B (closed form of the recurrences, plain algebra as in the projectile test):
        //   phase 1: vy_B = B dt a, y_B = a dt² B(B−1)/2; phase 2: y_N = y_B + C dt vy_B − g dt² C(C−1)/2.
        // y_N = thrust·p − g·(p + q) with p = dt²(B(B−1)/2 + BC), q = dt² C(C−1)/2; L = ½(y_N − Y)²:
        //   ∇L = e (p, −(p + q)), ∇²L = (p, −(p + q))ᵀ(p, −(p + q)).
        const double dt = 0.01, target = 40;
        const int n = Steps;
        int cc = n - burn;
        double pp = dt * dt * ((burn * (burn - 1) / 2.0) + (burn * (double)cc));
        double qq = dt * dt * cc * (cc - 1) / 2.0;
        double yn = (thrust * pp) - (g * (pp + qq));
        double e = yn - target;
        double[] dy = { pp, -(pp + qq) };
        double[] gradient = { e * dy[0], e * dy[1] };
        double[] hessian = { dy[0] * dy[0], dy[0] * dy[1], dy[1] * dy[0], dy[1] * dy[1] };

        var f = _fixture.Assembly.Method<PhaseF>(Sim, "TwoPhase");
        var gr = _fixture.Assembly.Method<PhaseG>(Sim, "TwoPhaseGradient");
        var he = _fixture.Assembly.Method<PhaseH>(Sim, "TwoPhaseHessian");
        Probe p = Probe.Of(
            (F2)((x0, x1) => f(x0, x1, target, dt, burn, n)),
            (G2)((x0, x1, gg) => gr(x0, x1, target, dt, burn, n, gg)),
            (H2)((x0, x1, gg, hh) => he(x0, x1, target, dt, burn, n, gg, hh)));
        double scale = (Math.Abs(e) + 1) * (pp + qq);
        LoopCheck.At(p, new[] { thrust, g }, gradient, 1e-13 * n * scale, hessian, 1e-13 * n * (pp + qq) * (pp + qq), "TwoPhase");
    }

    private Probe DragProbe(double g, double tx, double dt)
    {
        var f = _fixture.Assembly.Method<ProjF>(Sim, "Drag");
        var gr = _fixture.Assembly.Method<ProjG>(Sim, "DragGradient");
        var he = _fixture.Assembly.Method<ProjH>(Sim, "DragHessian");
        return Probe.Of(
            (F3)((a, b, k) => f(a, b, k, g, tx, dt, Steps)),
            (G3)((a, b, k, gg) => gr(a, b, k, g, tx, dt, Steps, gg)),
            (H3)((a, b, k, gg, hh) => he(a, b, k, g, tx, dt, Steps, gg, hh)));
    }

    private Probe OscillatorProbe(string method, double w2, double dt, int steps)
    {
        var f = _fixture.Assembly.Method<OscF>(Sim, method);
        var g = _fixture.Assembly.Method<OscG>(Sim, method + "Gradient");
        var h = _fixture.Assembly.Method<OscH>(Sim, method + "Hessian");
        return Probe.Of(
            (F3)((a, b, c) => f(a, b, c, w2, dt, steps)),
            (G3)((a, b, c, gr) => g(a, b, c, w2, dt, steps, gr)),
            (H3)((a, b, c, gr, he) => h(a, b, c, w2, dt, steps, gr, he)));
    }
}
