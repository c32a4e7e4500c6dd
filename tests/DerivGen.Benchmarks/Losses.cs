using System;
using DerivGen;

namespace DerivGen.Benchmarks;

/// <summary>
/// The benchmark corpus: eight losses that differ in shape (straight-line code, data sums, vector variables, nested
/// loops, a recurrence, a branch). Each is written the way a user would write the value; DerivGen generates the
/// derivatives. All data and constants are invented.
/// </summary>
public static partial class Losses
{
    /// <summary>Gravitational acceleration used by <see cref="Trajectory"/> (m/s², common practice).</summary>
    public const double Gravity = 9.81;

    /// <summary>Time step of <see cref="Trajectory"/> (s).</summary>
    public const double TimeStep = 0.01;

    /// <summary>Number of explicit Euler steps of <see cref="Trajectory"/>.</summary>
    public const int TrajectorySteps = 200;

    // Rosenbrock's function (Nocedal & Wright, Numerical Optimization, 2nd ed., ch. 2): 2 scalar variables.
    [Differentiate]
    public static double Rosenbrock(double x, double y) => ((1 - x) * (1 - x)) + (100 * (y - (x * x)) * (y - (x * x)));

    // A trigonometric/exponential mix of three scalars, straight-line code (invented).
    [Differentiate]
    public static double TrigExp(double x, double y, double z) =>
        (Math.Sin(x * y) * Math.Exp(-0.5 * z * z)) + (Math.Cos(x + z) * Math.Log(1 + (y * y))) + (Math.Tanh(x - y) * Math.Exp(z));

    // Least squares of y ≈ a·exp(−b·t) + c over a data set (10,000 points in the benchmark).
    [Differentiate(nameof(a), nameof(b), nameof(c))]
    public static double DecayFit(double a, double b, double c, double[] t, double[] y)
    {
        double s = 0;
        for (int i = 0; i < t.Length; i++)
        {
            double r = (a * Math.Exp(-b * t[i])) + c - y[i];
            s += r * r;
        }

        return s;
    }

    // Logistic regression negative log-likelihood, weight vector w and bias (Hastie, Tibshirani & Friedman, The
    // Elements of Statistical Learning, §4.4.1).
    [Differentiate(nameof(bias), nameof(w), Hessian = false)]
    public static double Logistic(double bias, double[] w, double[,] x, double[] y)
    {
        double s = 0;
        for (int i = 0; i < y.Length; i++)
        {
            double z = bias;
            for (int j = 0; j < w.Length; j++)
            {
                z += w[j] * x[i, j];
            }

            s += Math.Log(1 + Math.Exp(-z)) + ((1 - y[i]) * z);
        }

        return s;
    }

    // A two-layer network o = c + Σ_h v_h tanh(b_h + Σ_j W_hj x_j), half the squared error over a data set.
    // Layout of the weight vector w: W (hidden × inputs, row-major), then b (hidden), then v (hidden), then c.
    [Differentiate(nameof(w), Hessian = false)]
    public static double TanhNet(double[] w, double[,] x, double[] y, int hidden)
    {
        int inputs = x.GetLength(1);
        int bOffset = hidden * inputs;
        int vOffset = bOffset + hidden;
        int cOffset = vOffset + hidden;
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

                o += w[vOffset + h] * Math.Tanh(a);
            }

            double r = o - y[i];
            s += 0.5 * r * r;
        }

        return s;
    }

    // The extended Rosenbrock function (Moré, Garbow & Hillstrom, ACM TOMS 7(1), 1981, problem 21):
    // f(x) = Σ_{i<n/2} 100 (x_{2i+1} − x_{2i}²)² + (1 − x_{2i})².
    [Differentiate(nameof(x))]
    public static double ExtendedRosenbrock(ReadOnlySpan<double> x)
    {
        double f = 0;
        for (int i = 0; i < x.Length / 2; i++)
        {
            double a = x[(2 * i) + 1] - (x[2 * i] * x[2 * i]);
            double b = 1 - x[2 * i];
            f += (100 * a * a) + (b * b);
        }

        return f;
    }

    // A simulated trajectory: 200 explicit Euler steps of a projectile with quadratic drag (acceleration
    // −k·|v|·v − g·ŷ), launched from the origin with velocity (vx0, vy0); the loss is the squared distance of the end
    // point to a target. Variables: the launch velocity and the drag coefficient.
    [Differentiate(nameof(vx0), nameof(vy0), nameof(k))]
    public static double Trajectory(double vx0, double vy0, double k, double targetX, double targetY)
    {
        double x = 0, y = 0, vx = vx0, vy = vy0;
        for (int step = 0; step < TrajectorySteps; step++)
        {
            double speed = Math.Sqrt((vx * vx) + (vy * vy));
            double ax = -k * speed * vx;
            double ay = (-k * speed * vy) - Gravity;
            x += TimeStep * vx;
            y += TimeStep * vy;
            vx += TimeStep * ax;
            vy += TimeStep * ay;
        }

        double dx = x - targetX, dy = y - targetY;
        return (dx * dx) + (dy * dy);
    }

#pragma warning disable DG0007 // the Huber loss has a kink on purpose: the branch on |r| is the point of this case.
    // Huber's robust regression loss (Huber, Ann. Math. Statist. 35(1), 1964) of a linear model with a coefficient
    // vector w: quadratic for |r| ≤ delta, linear beyond.
    [Differentiate(nameof(w), Hessian = false)]
    public static double Huber(double[] w, double[,] x, double[] y, double delta)
    {
        double s = 0;
        for (int i = 0; i < y.Length; i++)
        {
            double r = y[i];
            for (int j = 0; j < w.Length; j++)
            {
                r -= w[j] * x[i, j];
            }

            if (Math.Abs(r) <= delta)
            {
                s += 0.5 * r * r;
            }
            else
            {
                s += delta * (Math.Abs(r) - (0.5 * delta));
            }
        }

        return s;
    }
#pragma warning restore DG0007
}
