using System;

namespace DerivGen.Benchmarks;

/// <summary>
/// Derivatives written by hand, the way a careful engineer would: one pass over the data, shared subexpressions,
/// accumulators in locals, reverse mode (back-propagation) where it pays, forward sensitivities for the recurrence,
/// Hessian symmetry used (upper triangle accumulated, then mirrored). They are the reference "limit" the generated
/// code is measured against; the report checks that they agree with the generated derivatives before it quotes a
/// ratio. Same contract as the generated methods: return the value, write n gradient entries and n×n Hessian
/// entries (row-major).
/// </summary>
public static class HandWritten
{
    // ---- Rosenbrock: f = (1 − x)² + 100 (y − x²)² ----

    public static double Rosenbrock(double x, double y, Span<double> g)
    {
        double u = 1 - x, v = y - (x * x);
        g[0] = (-2 * u) - (400 * x * v);
        g[1] = 200 * v;
        return (u * u) + (100 * v * v);
    }

    public static double RosenbrockHessian(double x, double y, Span<double> g, Span<double> h)
    {
        double u = 1 - x, v = y - (x * x);
        g[0] = (-2 * u) - (400 * x * v);
        g[1] = 200 * v;
        h[0] = 2 - (400 * v) + (800 * x * x);
        h[1] = -400 * x;
        h[2] = h[1];
        h[3] = 200;
        return (u * u) + (100 * v * v);
    }

    // ---- TrigExp: f = sin(xy)·E + cos(x + z)·L + tanh(x − y)·e^z, E = exp(−z²/2), L = log(1 + y²) ----

    public static double TrigExp(double x, double y, double z, Span<double> g)
    {
        (double s1, double c1) = Math.SinCos(x * y);
        double e = Math.Exp(-0.5 * z * z);
        (double su, double cu) = Math.SinCos(x + z);
        double q = 1 + (y * y);
        double l = Math.Log(q);
        double t = Math.Tanh(x - y);
        double d = 1 - (t * t);
        double ez = Math.Exp(z);
        double c1e = c1 * e, dez = d * ez, sul = su * l;
        g[0] = (y * c1e) - sul + dez;
        g[1] = (x * c1e) + (cu * 2 * y / q) - dez;
        g[2] = (-z * s1 * e) - sul + (t * ez);
        return (s1 * e) + (cu * l) + (t * ez);
    }

    public static double TrigExpHessian(double x, double y, double z, Span<double> g, Span<double> h)
    {
        (double s1, double c1) = Math.SinCos(x * y);
        double e = Math.Exp(-0.5 * z * z);
        (double su, double cu) = Math.SinCos(x + z);
        double q = 1 + (y * y);
        double l = Math.Log(q);
        double t = Math.Tanh(x - y);
        double d = 1 - (t * t);
        double ez = Math.Exp(z);
        double c1e = c1 * e, s1e = s1 * e, dez = d * ez, sul = su * l, cul = cu * l, tdez = 2 * t * dez;
        double ly = 2 * y / q;
        g[0] = (y * c1e) - sul + dez;
        g[1] = (x * c1e) + (cu * ly) - dez;
        g[2] = (-z * s1e) - sul + (t * ez);
        double hxx = (-y * y * s1e) - cul - tdez;
        double hxy = ((c1 - (x * y * s1)) * e) - (su * ly) + tdez;
        double hxz = (-z * y * c1e) - cul + dez;
        double hyy = (-x * x * s1e) + (cu * 2 * (1 - (y * y)) / (q * q)) - tdez;
        double hyz = (-z * x * c1e) - (su * ly) - dez;
        double hzz = (s1e * ((z * z) - 1)) - cul + (t * ez);
        h[0] = hxx; h[1] = hxy; h[2] = hxz;
        h[3] = hxy; h[4] = hyy; h[5] = hyz;
        h[6] = hxz; h[7] = hyz; h[8] = hzz;
        return s1e + cul + (t * ez);
    }

    // ---- DecayFit: s = Σ r², r = a·exp(−b t) + c − y ----

    public static double DecayFit(double a, double b, double c, double[] t, double[] y, Span<double> g)
    {
        double s = 0, ga = 0, gb = 0, gc = 0;
        for (int i = 0; i < t.Length; i++)
        {
            double e = Math.Exp(-b * t[i]);
            double r = (a * e) + c - y[i];
            s += r * r;
            ga += r * e;
            gb -= r * t[i] * e;
            gc += r;
        }

        g[0] = 2 * ga;
        g[1] = 2 * a * gb;
        g[2] = 2 * gc;
        return s;
    }

    public static double DecayFitHessian(double a, double b, double c, double[] t, double[] y, Span<double> g, Span<double> h)
    {
        double s = 0, ga = 0, gb = 0, gc = 0;
        double haa = 0, hab = 0, hac = 0, hbb = 0, hbc = 0;
        for (int i = 0; i < t.Length; i++)
        {
            double ti = t[i];
            double e = Math.Exp(-b * ti);
            double r = (a * e) + c - y[i];
            double te = ti * e;
            double w = (a * e) + r;
            s += r * r;
            ga += r * e;
            gb -= r * te;
            gc += r;
            haa += e * e;
            hab -= te * w;
            hac += e;
            hbb += ti * te * w;
            hbc -= te;
        }

        g[0] = 2 * ga;
        g[1] = 2 * a * gb;
        g[2] = 2 * gc;
        h[0] = 2 * haa; h[1] = 2 * hab; h[2] = 2 * hac;
        h[3] = h[1]; h[4] = 2 * a * hbb; h[5] = 2 * a * hbc;
        h[6] = h[2]; h[7] = h[5]; h[8] = 2.0 * t.Length;
        return s;
    }

    // ---- Logistic regression: s = Σ log(1 + e^{−z}) + (1 − y) z, z = bias + w·x_i; layout [bias, w...] ----

    public static double Logistic(double bias, double[] w, double[,] x, double[] y, Span<double> g)
    {
        int m = w.Length;
        g = g.Slice(0, m + 1);
        g.Clear();
        double s = 0, g0 = 0;
        for (int i = 0; i < y.Length; i++)
        {
            double z = bias;
            for (int j = 0; j < m; j++)
            {
                z += w[j] * x[i, j];
            }

            double e = Math.Exp(-z);
            s += Math.Log(1 + e) + ((1 - y[i]) * z);
            double d = (1 - y[i]) - (e / (1 + e));      // ∂s_i/∂z = σ(z) − y
            g0 += d;
            for (int j = 0; j < m; j++)
            {
                g[1 + j] += d * x[i, j];
            }
        }

        g[0] = g0;
        return s;
    }

    public static double LogisticHessian(double bias, double[] w, double[,] x, double[] y, Span<double> g, Span<double> h)
    {
        int m = w.Length, n = m + 1;
        g = g.Slice(0, n);
        h = h.Slice(0, n * n);
        g.Clear();
        h.Clear();
        double s = 0;
        for (int i = 0; i < y.Length; i++)
        {
            double z = bias;
            for (int j = 0; j < m; j++)
            {
                z += w[j] * x[i, j];
            }

            double e = Math.Exp(-z);
            double onePlusE = 1 + e;
            s += Math.Log(onePlusE) + ((1 - y[i]) * z);
            double d = (1 - y[i]) - (e / onePlusE);      // σ(z) − y
            double curvature = e / (onePlusE * onePlusE); // σ(z)(1 − σ(z))
            g[0] += d;
            h[0] += curvature;
            for (int j = 0; j < m; j++)
            {
                double xij = x[i, j];
                g[1 + j] += d * xij;
                double cx = curvature * xij;
                h[1 + j] += cx;                             // row 0 (bias)
                Span<double> row = h.Slice((1 + j) * n, n);
                for (int k = j; k < m; k++)
                {
                    row[1 + k] += cx * x[i, k];
                }
            }
        }

        Mirror(h, n);
        return s;
    }

    // ---- Two-layer tanh network: s = Σ ½ (o − y)², o = c + Σ_h v_h tanh(a_h), a_h = b_h + Σ_j W_hj x_j ----

    public static double TanhNet(double[] w, double[,] x, double[] y, int hidden, Span<double> g)
    {
        int inputs = x.GetLength(1);
        int bOffset = hidden * inputs, vOffset = bOffset + hidden, cOffset = vOffset + hidden, n = cOffset + 1;
        g = g.Slice(0, n);
        g.Clear();
        Span<double> th = stackalloc double[hidden];
        double s = 0, gc = 0;
        for (int i = 0; i < y.Length; i++)
        {
            double o = w[cOffset];
            for (int h = 0; h < hidden; h++)
            {
                double a = w[bOffset + h];
                for (int j = 0; j < inputs; j++)
                {
                    a += w[(h * inputs) + j] * x[i, j];
                }

                th[h] = Math.Tanh(a);
                o += w[vOffset + h] * th[h];
            }

            double r = o - y[i];
            s += 0.5 * r * r;
            gc += r;
            for (int h = 0; h < hidden; h++)
            {
                double t = th[h];
                g[vOffset + h] += r * t;
                double delta = r * w[vOffset + h] * (1 - (t * t));
                g[bOffset + h] += delta;
                int row = h * inputs;
                for (int j = 0; j < inputs; j++)
                {
                    g[row + j] += delta * x[i, j];
                }
            }
        }

        g[cOffset] = gc;
        return s;
    }

    public static double TanhNetHessian(double[] w, double[,] x, double[] y, int hidden, Span<double> g, Span<double> hess)
    {
        // H = Σ_i ∇o ∇oᵀ + r ∇²o (the Hessian of ½ r², r = o − y); ∇²o is block diagonal per hidden unit.
        int inputs = x.GetLength(1);
        int bOffset = hidden * inputs, vOffset = bOffset + hidden, cOffset = vOffset + hidden, n = cOffset + 1;
        g = g.Slice(0, n);
        hess = hess.Slice(0, n * n);
        g.Clear();
        hess.Clear();
        Span<double> th = stackalloc double[hidden];
        Span<double> go = n <= 512 ? stackalloc double[n] : new double[n];
        double s = 0;
        for (int i = 0; i < y.Length; i++)
        {
            double o = w[cOffset];
            for (int h = 0; h < hidden; h++)
            {
                double a = w[bOffset + h];
                for (int j = 0; j < inputs; j++)
                {
                    a += w[(h * inputs) + j] * x[i, j];
                }

                th[h] = Math.Tanh(a);
                o += w[vOffset + h] * th[h];
            }

            double r = o - y[i];
            s += 0.5 * r * r;

            // ∇o, and r ∇²o into the upper triangle.
            for (int h = 0; h < hidden; h++)
            {
                double t = th[h], d = 1 - (t * t), v = w[vOffset + h];
                double vd = v * d;
                double rvdd = r * v * (-2 * t * d);   // r v tanh''(a)
                double rd = r * d;
                int row = h * inputs, bh = bOffset + h, vh = vOffset + h;
                for (int j = 0; j < inputs; j++)
                {
                    double xj = x[i, j];
                    go[row + j] = vd * xj;
                    double c = rvdd * xj;
                    Span<double> hr = hess.Slice((row + j) * n, n);
                    for (int k = j; k < inputs; k++)
                    {
                        hr[row + k] += c * x[i, k];
                    }

                    hr[bh] += c;
                    hr[vh] += rd * xj;
                }

                go[bh] = vd;
                go[vh] = t;
                hess[(bh * n) + bh] += rvdd;
                hess[(bh * n) + vh] += rd;
            }

            go[cOffset] = 1;

            // ∇o ∇oᵀ into the upper triangle; the gradient r ∇o.
            for (int p = 0; p < n; p++)
            {
                double gp = go[p];
                g[p] += r * gp;
                Span<double> hr = hess.Slice(p * n, n);
                for (int q = p; q < n; q++)
                {
                    hr[q] += gp * go[q];
                }
            }
        }

        Mirror(hess, n);
        return s;
    }

    // ---- Extended Rosenbrock (Moré, Garbow & Hillstrom 1981, problem 21) ----

    public static double ExtendedRosenbrock(ReadOnlySpan<double> x, Span<double> g)
    {
        int n = x.Length;
        g = g.Slice(0, n);
        double f = 0;
        for (int i = 0; i + 1 < n; i += 2)
        {
            double x0 = x[i];
            double a = x[i + 1] - (x0 * x0);
            double b = 1 - x0;
            f += (100 * a * a) + (b * b);
            g[i] = (-400 * x0 * a) - (2 * b);
            g[i + 1] = 200 * a;
        }

        return f;
    }

    public static double ExtendedRosenbrockHessian(ReadOnlySpan<double> x, Span<double> g, Span<double> h)
    {
        int n = x.Length;
        g = g.Slice(0, n);
        h = h.Slice(0, n * n);
        h.Clear();
        double f = 0;
        for (int i = 0; i + 1 < n; i += 2)
        {
            double x0 = x[i];
            double a = x[i + 1] - (x0 * x0);
            double b = 1 - x0;
            f += (100 * a * a) + (b * b);
            g[i] = (-400 * x0 * a) - (2 * b);
            g[i + 1] = 200 * a;
            h[(i * n) + i] = (1200 * x0 * x0) - (400 * x[i + 1]) + 2;
            h[(i * n) + i + 1] = -400 * x0;
            h[((i + 1) * n) + i] = -400 * x0;
            h[((i + 1) * n) + i + 1] = 200;
        }

        return f;
    }

    // ---- Trajectory: forward sensitivities through the explicit Euler recurrence, p = (vx0, vy0, k) ----
    // Step: x' = x + dt vx, y' = y + dt vy, vx' = vx − dt k qx, vy' = vy − dt (k qy + g) with qx = s vx, qy = s vy,
    // s = |v|. ∂qx/∂vx = s + vx²/s, ∂qx/∂vy = ∂qy/∂vx = vx vy / s, ∂qy/∂vy = s + vy²/s (plain calculus).

    public static double Trajectory(double vx0, double vy0, double k, double targetX, double targetY, Span<double> g)
    {
        const double dt = Losses.TimeStep;
        double x = 0, y = 0, vx = vx0, vy = vy0;
        // Sensitivities ∂state/∂(vx0, vy0, k).
        double x0 = 0, x1 = 0, x2 = 0, y0 = 0, y1 = 0, y2 = 0;
        double u0 = 1, u1 = 0, u2 = 0, w0 = 0, w1 = 1, w2 = 0;   // u = ∂vx, w = ∂vy
        for (int step = 0; step < Losses.TrajectorySteps; step++)
        {
            double speed = Math.Sqrt((vx * vx) + (vy * vy));
            double inv = 1 / speed;
            double kdt = k * dt;
            double qa = speed + (vx * vx * inv), qb = vx * vy * inv, qc = speed + (vy * vy * inv);
            double qx = speed * vx, qy = speed * vy;

            x0 += dt * u0; x1 += dt * u1; x2 += dt * u2;
            y0 += dt * w0; y1 += dt * w1; y2 += dt * w2;
            double nu0 = u0 - (kdt * ((qa * u0) + (qb * w0)));
            double nu1 = u1 - (kdt * ((qa * u1) + (qb * w1)));
            double nu2 = u2 - (kdt * ((qa * u2) + (qb * w2))) - (dt * qx);
            double nw0 = w0 - (kdt * ((qb * u0) + (qc * w0)));
            double nw1 = w1 - (kdt * ((qb * u1) + (qc * w1)));
            double nw2 = w2 - (kdt * ((qb * u2) + (qc * w2))) - (dt * qy);
            u0 = nu0; u1 = nu1; u2 = nu2; w0 = nw0; w1 = nw1; w2 = nw2;

            double ax = -k * speed * vx;
            double ay = (-k * speed * vy) - Losses.Gravity;
            x += dt * vx;
            y += dt * vy;
            vx += dt * ax;
            vy += dt * ay;
        }

        double dx = x - targetX, dy = y - targetY;
        g[0] = 2 * ((dx * x0) + (dy * y0));
        g[1] = 2 * ((dx * x1) + (dy * y1));
        g[2] = 2 * ((dx * x2) + (dy * y2));
        return (dx * dx) + (dy * dy);
    }

    public static double TrajectoryHessian(double vx0, double vy0, double k, double targetX, double targetY, Span<double> g, Span<double> h)
    {
        // First-order sensitivities S[state, a] and second-order T[state, pair(a, b)] (a ≤ b; pairs 00 01 02 11 12 22),
        // states x, y, vx, vy. Second derivatives of q: ∂²qx/∂vx² = 3vx/s − vx³/s³, ∂²qx/∂vx∂vy = vy/s − vx² vy/s³,
        // ∂²qx/∂vy² = vx/s − vx vy²/s³; qy the same with vx and vy swapped (plain calculus).
        const double dt = Losses.TimeStep;
        Span<double> sx = stackalloc double[3], sy = stackalloc double[3], su = stackalloc double[3], sw = stackalloc double[3];
        Span<double> tx = stackalloc double[6], ty = stackalloc double[6], tu = stackalloc double[6], tw = stackalloc double[6];
        sx.Clear(); sy.Clear(); su.Clear(); sw.Clear(); tx.Clear(); ty.Clear(); tu.Clear(); tw.Clear();
        su[0] = 1;
        sw[1] = 1;
        double x = 0, y = 0, vx = vx0, vy = vy0;
        for (int step = 0; step < Losses.TrajectorySteps; step++)
        {
            double speed = Math.Sqrt((vx * vx) + (vy * vy));
            double inv = 1 / speed, inv3 = inv * inv * inv;
            double kdt = k * dt;
            double qa = speed + (vx * vx * inv), qb = vx * vy * inv, qc = speed + (vy * vy * inv);
            double qx = speed * vx, qy = speed * vy;
            double pxx = (3 * vx * inv) - (vx * vx * vx * inv3);   // ∂²qx/∂vx²
            double pxy = (vy * inv) - (vx * vx * vy * inv3);       // ∂²qx/∂vx∂vy = ∂²qy/∂vx²
            double pyy = (vx * inv) - (vx * vy * vy * inv3);       // ∂²qx/∂vy² = ∂²qy/∂vx∂vy
            double ryy = (3 * vy * inv) - (vy * vy * vy * inv3);   // ∂²qy/∂vy²

            int pair = 0;
            for (int a = 0; a < 3; a++)
            {
                for (int b = a; b < 3; b++, pair++)
                {
                    double ua = su[a], ub = su[b], wa = sw[a], wb = sw[b];
                    double uu = ua * ub, uw = (ua * wb) + (wa * ub), ww = wa * wb;
                    double tua = tu[pair], twa = tw[pair];
                    double nx = (pxx * uu) + (pxy * uw) + (pyy * ww) + (qa * tua) + (qb * twa);
                    double ny = (pxy * uu) + (pyy * uw) + (ryy * ww) + (qb * tua) + (qc * twa);
                    double cross = 0, crossY = 0;
                    if (a == 2)
                    {
                        cross += (qa * ub) + (qb * wb);
                        crossY += (qb * ub) + (qc * wb);
                    }

                    if (b == 2)
                    {
                        cross += (qa * ua) + (qb * wa);
                        crossY += (qb * ua) + (qc * wa);
                    }

                    tx[pair] += dt * tua;
                    ty[pair] += dt * twa;
                    tu[pair] = tua - (kdt * nx) - (dt * cross);
                    tw[pair] = twa - (kdt * ny) - (dt * crossY);
                }
            }

            for (int a = 0; a < 3; a++)
            {
                double ua = su[a], wa = sw[a];
                sx[a] += dt * ua;
                sy[a] += dt * wa;
                su[a] = ua - (kdt * ((qa * ua) + (qb * wa))) - (a == 2 ? dt * qx : 0);
                sw[a] = wa - (kdt * ((qb * ua) + (qc * wa))) - (a == 2 ? dt * qy : 0);
            }

            double ax = -k * speed * vx;
            double ay = (-k * speed * vy) - Losses.Gravity;
            x += dt * vx;
            y += dt * vy;
            vx += dt * ax;
            vy += dt * ay;
        }

        double dx = x - targetX, dy = y - targetY;
        int p = 0;
        for (int a = 0; a < 3; a++)
        {
            g[a] = 2 * ((dx * sx[a]) + (dy * sy[a]));
            for (int b = a; b < 3; b++, p++)
            {
                double v = 2 * ((sx[a] * sx[b]) + (sy[a] * sy[b]) + (dx * tx[p]) + (dy * ty[p]));
                h[(a * 3) + b] = v;
                h[(b * 3) + a] = v;
            }
        }

        return (dx * dx) + (dy * dy);
    }

    // ---- Huber regression: quadratic for |r| ≤ δ, linear beyond; r = y − w·x_i ----

    public static double Huber(double[] w, double[,] x, double[] y, double delta, Span<double> g)
    {
        int m = w.Length;
        g = g.Slice(0, m);
        g.Clear();
        double s = 0;
        for (int i = 0; i < y.Length; i++)
        {
            double r = y[i];
            for (int j = 0; j < m; j++)
            {
                r -= w[j] * x[i, j];
            }

            double d;   // ∂s_i/∂r
            if (Math.Abs(r) <= delta)
            {
                s += 0.5 * r * r;
                d = r;
            }
            else
            {
                s += delta * (Math.Abs(r) - (0.5 * delta));
                d = r > 0 ? delta : -delta;
            }

            for (int j = 0; j < m; j++)
            {
                g[j] -= d * x[i, j];
            }
        }

        return s;
    }

    public static double HuberHessian(double[] w, double[,] x, double[] y, double delta, Span<double> g, Span<double> h)
    {
        int m = w.Length;
        g = g.Slice(0, m);
        h = h.Slice(0, m * m);
        g.Clear();
        h.Clear();
        double s = 0;
        for (int i = 0; i < y.Length; i++)
        {
            double r = y[i];
            for (int j = 0; j < m; j++)
            {
                r -= w[j] * x[i, j];
            }

            if (Math.Abs(r) <= delta)
            {
                s += 0.5 * r * r;
                for (int j = 0; j < m; j++)
                {
                    double xij = x[i, j];
                    g[j] -= r * xij;
                    Span<double> row = h.Slice(j * m, m);
                    for (int k = j; k < m; k++)
                    {
                        row[k] += xij * x[i, k];
                    }
                }
            }
            else
            {
                s += delta * (Math.Abs(r) - (0.5 * delta));
                double d = r > 0 ? delta : -delta;
                for (int j = 0; j < m; j++)
                {
                    g[j] -= d * x[i, j];
                }
            }
        }

        Mirror(h, m);
        return s;
    }

    /// <summary>Copies the upper triangle of the row-major n×n matrix into the lower one.</summary>
    private static void Mirror(Span<double> h, int n)
    {
        for (int i = 1; i < n; i++)
        {
            for (int j = 0; j < i; j++)
            {
                h[(i * n) + j] = h[(j * n) + i];
            }
        }
    }
}
