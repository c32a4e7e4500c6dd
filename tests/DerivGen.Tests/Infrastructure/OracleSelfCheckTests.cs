using System;
using Xunit;

namespace DerivGen.Tests.Infrastructure;

/// <summary>
/// The finite-difference oracle checked on its own against closed forms, so that the tolerances in
/// <see cref="Check"/> are shown to hold for MathNet.Numerics before they are used to judge the generator.
/// </summary>
public sealed class OracleSelfCheckTests
{
    [Fact]
    public void MathNetGradientAndHessianOfRosenbrockAreWithinTheStatedTolerances()
    {
        // Rosenbrock f = (1-x)^2 + 100(y-x^2)^2; gradient and Hessian from Nocedal & Wright, Numerical Optimization,
        // 2nd ed., ch. 2 (Exercise 2.1): grad = (-2(1-x) - 400x(y-x^2), 200(y-x^2)),
        // Hessian = [[1200x^2 - 400y + 2, -400x], [-400x, 200]].
        Func<double[], double> f = v => Math.Pow(1 - v[0], 2) + 100 * Math.Pow(v[1] - v[0] * v[0], 2);
        foreach (double[] p in new[] { new[] { -1.2, 1.0 }, new[] { 0.3, -0.7 }, new[] { 2.0, 3.5 } })
        {
            double x = p[0], y = p[1];
            double[] grad = { -2 * (1 - x) - 400 * x * (y - x * x), 200 * (y - x * x) };
            double[] hess = { 1200 * x * x - 400 * y + 2, -400 * x, -400 * x, 200 };
            Check.GradientMatchesOracle(f, p, grad, "closed-form Rosenbrock");
            Check.HessianMatchesOracle(f, p, hess, "closed-form Rosenbrock");
        }
    }

    [Fact]
    public void MathNetGradientAndHessianOfATranscendentalMixAreWithinTheStatedTolerances()
    {
        // f = sin(x) e^y + ln(1 + x^2 y^2); derivatives by the chain and product rules (plain calculus):
        //   f_x = cos(x) e^y + 2 x y^2 / q,       q = 1 + x^2 y^2
        //   f_y = sin(x) e^y + 2 x^2 y / q
        //   f_xx = -sin(x) e^y + (2 y^2 q - 4 x^2 y^4) / q^2 = -sin(x) e^y + 2y^2 (1 - x^2 y^2) / q^2
        //   f_yy =  sin(x) e^y + 2x^2 (1 - x^2 y^2) / q^2
        //   f_xy =  cos(x) e^y + (4 x y q - 4 x^3 y^3) / q^2 = cos(x) e^y + 4xy / q^2
        Func<double[], double> f = v => Math.Sin(v[0]) * Math.Exp(v[1]) + Math.Log(1 + v[0] * v[0] * v[1] * v[1]);
        foreach (double[] p in new[] { new[] { 0.4, -0.3 }, new[] { 1.7, 0.9 }, new[] { -2.2, 0.25 } })
        {
            double x = p[0], y = p[1], q = 1 + x * x * y * y, e = Math.Exp(y);
            double[] grad = { Math.Cos(x) * e + 2 * x * y * y / q, Math.Sin(x) * e + 2 * x * x * y / q };
            double fxy = Math.Cos(x) * e + 4 * x * y / (q * q);
            double[] hess =
            {
                -Math.Sin(x) * e + 2 * y * y * (1 - x * x * y * y) / (q * q), fxy,
                fxy, Math.Sin(x) * e + 2 * x * x * (1 - x * x * y * y) / (q * q),
            };
            Check.GradientMatchesOracle(f, p, grad, "closed-form transcendental mix");
            Check.HessianMatchesOracle(f, p, hess, "closed-form transcendental mix");
        }
    }
}
