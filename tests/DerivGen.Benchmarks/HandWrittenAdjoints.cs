using System;

namespace DerivGen.Benchmarks;

/// <summary>
/// Reverse sweeps written by hand for <see cref="LoopLosses"/>, the limit the generated gradients through loops are
/// measured against (issue 14, item 6). Each runs the loop forward once, recording in a caller-supplied workspace only
/// what an iteration overwrites and the reverse sweep needs, then runs the loop backwards accumulating adjoints (plain
/// calculus, adjoint recurrence). The workspace is allocated once by the caller, so a call allocates nothing. Same
/// contract as the generated methods otherwise: return the value, write one gradient entry per variable.
/// </summary>
public static class HandWrittenAdjoints
{
    /// <summary>Workspace length <see cref="ControlHorizon"/> needs for <paramref name="steps"/> controls.</summary>
    public static int ControlHorizonWorkspace(int steps) => steps;

    /// <summary>Workspace length <see cref="PendulumRk4"/> needs for <paramref name="steps"/> steps.</summary>
    public static int PendulumRk4Workspace(int steps) => PendulumRecord * steps;

    /// <summary>Workspace length <see cref="Recurrent"/> needs for a sequence of <paramref name="steps"/>.</summary>
    public static int RecurrentWorkspace(int steps) => steps;

    // ---- Control horizon ----
    // Step t: a = −x³ − c·v + u_t, v' = v + dt·a, x' = x + dt·v', e = x' − target, cost += e² + ρ·u_t².
    // Reverse, with x̄, v̄ the adjoints of x', v': x̄ += 2e; v̄ += dt·x̄; ā = dt·v̄; ∂/∂u_t = ā + 2ρ·u_t;
    // x̄ += −3x²·ā; v̄ += −c·ā. Only x before each step is recorded (the step is linear in v).

    public static double ControlHorizon(ReadOnlySpan<double> u, double target, Span<double> g, Span<double> workspace)
    {
        const double dt = LoopLosses.ControlStep, c = LoopLosses.ControlDamping, rho = LoopLosses.ControlEffort;
        Span<double> xs = workspace[..u.Length];
        double x = 0.5, v = 0, cost = 0;
        for (int t = 0; t < u.Length; t++)
        {
            xs[t] = x;
            double a = -(x * x * x) - (c * v) + u[t];
            v += dt * a;
            x += dt * v;
            double e = x - target;
            cost += (e * e) + (rho * u[t] * u[t]);
        }

        double xb = 0, vb = 0;
        for (int t = u.Length - 1; t >= 0; t--)
        {
            double xt = xs[t];
            xb += 2 * (x - target);   // x is x' of step t here
            vb += dt * xb;
            double ab = dt * vb;
            g[t] = ab + (2 * rho * u[t]);
            xb -= 3 * xt * xt * ab;
            vb -= c * ab;
            x = xt;
        }

        return cost;
    }

    // ---- Pendulum, classical RK4 ----
    // f(θ, ω) = (ω, −c·ω − k·sin θ). The forward sweep records the state before each step and the sine and cosine of
    // the four stage angles (one SinCos each), so the reverse sweep needs no trigonometry: it rebuilds the stage
    // velocities from the recorded sines and takes the stages back in reverse order. For a stage (θs, ωs) with stage
    // adjoints (k̄θ, k̄ω): ω̄s = k̄θ − c·k̄ω, θ̄s = −k·cos θs·k̄ω, c̄ −= ωs·k̄ω, k̄ −= sin θs·k̄ω.

    /// <summary>Doubles recorded per RK4 step: θ, ω, then sin and cos of the four stage angles.</summary>
    private const int PendulumRecord = 10;

    public static double PendulumRk4(double c, double k, double theta0, double[] observations, Span<double> g, Span<double> workspace)
    {
        const double h = LoopLosses.PendulumStep;
        int steps = observations.Length;
        Span<double> rec = workspace[..(PendulumRecord * steps)];
        double theta = theta0, omega = 0, loss = 0;
        for (int n = 0; n < steps; n++)
        {
            Span<double> r = rec.Slice(PendulumRecord * n, PendulumRecord);
            r[0] = theta;
            r[1] = omega;
            (r[2], r[3]) = Math.SinCos(theta);
            double k1t = omega, k1w = (-c * omega) - (k * r[2]);
            double t2 = theta + (0.5 * h * k1t), w2 = omega + (0.5 * h * k1w);
            (r[4], r[5]) = Math.SinCos(t2);
            double k2t = w2, k2w = (-c * w2) - (k * r[4]);
            double t3 = theta + (0.5 * h * k2t), w3 = omega + (0.5 * h * k2w);
            (r[6], r[7]) = Math.SinCos(t3);
            double k3t = w3, k3w = (-c * w3) - (k * r[6]);
            double t4 = theta + (h * k3t), w4 = omega + (h * k3w);
            (r[8], r[9]) = Math.SinCos(t4);
            double k4t = w4, k4w = (-c * w4) - (k * r[8]);
            theta += h / 6 * (k1t + (2 * k2t) + (2 * k3t) + k4t);
            omega += h / 6 * (k1w + (2 * k2w) + (2 * k3w) + k4w);
            double e = theta - observations[n];
            loss += e * e;
        }

        double tb = 0, wb = 0, cb = 0, kb = 0;
        for (int n = steps - 1; n >= 0; n--)
        {
            tb += 2 * (theta - observations[n]);   // theta is the state after step n here
            ReadOnlySpan<double> r = rec.Slice(PendulumRecord * n, PendulumRecord);
            double th = r[0], om = r[1];
            double k1w = (-c * om) - (k * r[2]);
            double w2 = om + (0.5 * h * k1w);
            double k2w = (-c * w2) - (k * r[4]);
            double w3 = om + (0.5 * h * k2w);
            double k3w = (-c * w3) - (k * r[6]);
            double w4 = om + (h * k3w);

            // θ' = θ + h/6·(k1 + 2k2 + 2k3 + k4), the same for ω.
            double k1tb = h / 6 * tb, k2tb = h / 3 * tb, k3tb = h / 3 * tb, k4tb = h / 6 * tb;
            double k1wb = h / 6 * wb, k2wb = h / 3 * wb, k3wb = h / 3 * wb, k4wb = h / 6 * wb;

            // Stage 4 at (θ + h·k3θ, ω + h·k3ω).
            double w4b = k4tb - (c * k4wb), t4b = -k * r[9] * k4wb;
            cb -= w4 * k4wb;
            kb -= r[8] * k4wb;
            tb += t4b;
            wb += w4b;
            k3tb += h * t4b;
            k3wb += h * w4b;

            // Stage 3 at (θ + h/2·k2θ, ω + h/2·k2ω).
            double w3b = k3tb - (c * k3wb), t3b = -k * r[7] * k3wb;
            cb -= w3 * k3wb;
            kb -= r[6] * k3wb;
            tb += t3b;
            wb += w3b;
            k2tb += 0.5 * h * t3b;
            k2wb += 0.5 * h * w3b;

            // Stage 2 at (θ + h/2·k1θ, ω + h/2·k1ω).
            double w2b = k2tb - (c * k2wb), t2b = -k * r[5] * k2wb;
            cb -= w2 * k2wb;
            kb -= r[4] * k2wb;
            tb += t2b;
            wb += w2b;
            k1tb += 0.5 * h * t2b;
            k1wb += 0.5 * h * w2b;

            // Stage 1 at (θ, ω).
            wb += k1tb - (c * k1wb);
            tb -= k * r[3] * k1wb;
            cb -= om * k1wb;
            kb -= r[2] * k1wb;
            theta = th;
        }

        g[0] = cb;
        g[1] = kb;
        g[2] = tb;   // ω starts at 0, a constant: its adjoint is dropped
        return loss;
    }

    // ---- Recurrent model ----
    // Step t: z = w0·h + w1·x_t + w2, h' = tanh z, loss += (h' − y_t)². Reverse with h̄ the adjoint of h':
    // h̄ += 2(h' − y_t); z̄ = (1 − h'²)·h̄; w̄ += z̄·(h, x_t, 1); h̄ = w0·z̄. The states h' are recorded.

    public static double Recurrent(ReadOnlySpan<double> w, double[] x, double[] y, Span<double> g, Span<double> workspace)
    {
        int steps = x.Length;
        Span<double> hs = workspace[..steps];
        double w0 = w[0], w1 = w[1], w2 = w[2];
        double h = 0, loss = 0;
        for (int t = 0; t < steps; t++)
        {
            h = Math.Tanh((w0 * h) + (w1 * x[t]) + w2);
            hs[t] = h;
            double r = h - y[t];
            loss += r * r;
        }

        double hb = 0, g0 = 0, g1 = 0, g2 = 0;
        for (int t = steps - 1; t >= 0; t--)
        {
            double ht = hs[t];
            double hPrev = t > 0 ? hs[t - 1] : 0;
            hb += 2 * (ht - y[t]);
            double zb = (1 - (ht * ht)) * hb;
            g0 += zb * hPrev;
            g1 += zb * x[t];
            g2 += zb;
            hb = w0 * zb;
        }

        g[0] = g0;
        g[1] = g1;
        g[2] = g2;
        return loss;
    }
}
