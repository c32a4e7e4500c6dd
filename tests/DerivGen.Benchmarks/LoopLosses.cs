using System;
using DerivGen;

namespace DerivGen.Benchmarks;

/// <summary>
/// Gradients through long loops (issue 14, item 6): three families whose cost grows with a length the user picks —
/// a control horizon (one control per step, so the variables grow with the loop), an RK4 simulation (a few parameters,
/// many steps) and a small recurrent model over a sequence (a weight vector, many steps). Each is written the way a
/// user would write the value; DerivGen generates the gradient; <see cref="HandWrittenAdjoints"/> holds reverse sweeps
/// written by hand. All constants and data are invented.
/// </summary>
public static partial class LoopLosses
{
    /// <summary>Time step of <see cref="ControlHorizon"/> (invented).</summary>
    public const double ControlStep = 0.05;

    /// <summary>Velocity damping of <see cref="ControlHorizon"/> (invented).</summary>
    public const double ControlDamping = 0.4;

    /// <summary>Weight of the control effort in <see cref="ControlHorizon"/> (invented).</summary>
    public const double ControlEffort = 0.01;

    /// <summary>Time step of <see cref="PendulumRk4"/> (invented).</summary>
    public const double PendulumStep = 0.01;

    // A control horizon: a point with position x and velocity v under a cubic restoring force, driven by one control
    // per step; semi-implicit Euler steps; the cost is the squared distance to a target at every step plus a small
    // control effort. Variables: all T controls (a vector variable).
    [Differentiate(nameof(u), Hessian = false)]
    public static double ControlHorizon(ReadOnlySpan<double> u, double target)
    {
        double x = 0.5, v = 0, cost = 0;
        for (int t = 0; t < u.Length; t++)
        {
            double a = -(x * x * x) - (ControlDamping * v) + u[t];
            v += ControlStep * a;
            x += ControlStep * v;
            double e = x - target;
            cost += (e * e) + (ControlEffort * u[t] * u[t]);
        }

        return cost;
    }

    // A damped pendulum θ'' = −c·θ' − k·sin θ, started at rest from θ0, integrated with the classical fourth-order
    // Runge–Kutta method (common practice) over observations.Length steps; the loss is the squared misfit of θ to the
    // observations after every step. Variables: damping c, stiffness k and the initial angle θ0.
    // The state is written as scalar locals (θ, ω and the stages); once local arrays are accepted, the state and the
    // four stages become `Span<double> s = stackalloc double[2]` and `k1..k4` of the same shape.
    [Differentiate(nameof(c), nameof(k), nameof(theta0), Hessian = false)]
    public static double PendulumRk4(double c, double k, double theta0, double[] observations)
    {
        const double h = PendulumStep;
        double theta = theta0, omega = 0, loss = 0;
        for (int n = 0; n < observations.Length; n++)
        {
            double k1t = omega;
            double k1w = (-c * omega) - (k * Math.Sin(theta));
            double t2 = theta + (0.5 * h * k1t), w2 = omega + (0.5 * h * k1w);
            double k2t = w2;
            double k2w = (-c * w2) - (k * Math.Sin(t2));
            double t3 = theta + (0.5 * h * k2t), w3 = omega + (0.5 * h * k2w);
            double k3t = w3;
            double k3w = (-c * w3) - (k * Math.Sin(t3));
            double t4 = theta + (h * k3t), w4 = omega + (h * k3w);
            double k4t = w4;
            double k4w = (-c * w4) - (k * Math.Sin(t4));
            theta += h / 6 * (k1t + (2 * k2t) + (2 * k3t) + k4t);
            omega += h / 6 * (k1w + (2 * k2w) + (2 * k3w) + k4w);
            double r = theta - observations[n];
            loss += r * r;
        }

        return loss;
    }

    // A one-unit recurrent model h ← tanh(w0·h + w1·x_t + w2) over a sequence, squared error of h against targets
    // after every step. Variables: the weight vector w (3 elements).
    [Differentiate(nameof(w), Hessian = false)]
    public static double Recurrent(ReadOnlySpan<double> w, double[] x, double[] y)
    {
        double h = 0, loss = 0;
        for (int t = 0; t < x.Length; t++)
        {
            h = Math.Tanh((w[0] * h) + (w[1] * x[t]) + w[2]);
            double r = h - y[t];
            loss += r * r;
        }

        return loss;
    }
}
