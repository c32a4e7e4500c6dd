using System;
using System.Collections.Generic;
using System.Linq;
using MathNet.Numerics.Differentiation;
using Xunit;

namespace DerivGen.Tests.Randomized;

/// <summary>
/// The randomised suite's reference must itself be right: every function's first and second partial derivatives in
/// <see cref="ReferenceFunctions"/> against MathNet.Numerics' finite differences, and the <see cref="Jet"/> chain rule
/// against a Hessian worked out by hand.
/// </summary>
public sealed class ReferenceSelfCheckTests
{
    /// <summary>Points inside each function's domain, away from kinks and jumps.</summary>
    private static readonly Dictionary<Fn, double[]> Points = new()
    {
        [Fn.Atan2] = new[] { 0.7, 1.3 },
        [Fn.LogBase] = new[] { 2.5, 3.5 },
        [Fn.Pow] = new[] { 1.7, 2.3 },
        [Fn.Hypot] = new[] { 0.6, -1.1 },
        [Fn.FusedMultiplyAdd] = new[] { 0.4, -1.5, 2.0 },
        [Fn.Max] = new[] { 0.3, 1.1 },
        [Fn.Min] = new[] { 0.3, 1.1 },
        [Fn.Clamp] = new[] { 0.5, -1.0, 2.0 },
        [Fn.Acosh] = new[] { 1.8 },
        [Fn.Asin] = new[] { 0.35 },
        [Fn.Acos] = new[] { -0.45 },
        [Fn.Atanh] = new[] { 0.55 },
        [Fn.Cbrt] = new[] { -2.2 },
        [Fn.Floor] = new[] { 1.3 },
        [Fn.Ceiling] = new[] { 1.3 },
        [Fn.Round] = new[] { 1.3 },
        [Fn.Truncate] = new[] { 1.3 },
        [Fn.Sign] = new[] { 1.3 },
        [Fn.Abs] = new[] { -1.3 },
    };

    public static IEnumerable<object[]> AllFunctions() => Enum.GetValues<Fn>().Select(f => new object[] { f.ToString() });

    [Theory]
    [MemberData(nameof(AllFunctions))]
    public void PartialDerivativesMatchMathNetFiniteDifferences(string function)
    {
        Fn fn = Enum.Parse<Fn>(function);
        FunctionSpec spec = ReferenceFunctions.All[fn];
        double[] at = Points.TryGetValue(fn, out double[]? p) ? p : new[] { 0.8 };
        Assert.Equal(spec.Arity, at.Length);
        Host host = spec.HasMath ? Host.Math : Host.Double;
        Func<double[], double> f = x => spec.Value(host, x);
        double value = f(at);
        var stencil = new NumericalDerivative(5, 2) { StepType = StepType.Absolute, StepSize = 1.0 / 1024 };

        for (int i = 0; i < spec.Arity; i++)
        {
            // Five-point differences: about 1e-10 here (common practice); the tolerances leave a factor of 100.
            double numeric = stencil.EvaluatePartialDerivative(f, at, i, 1);
            Assert.True(Math.Abs(numeric - spec.First(at, value, i)) <= 1e-8 * (1 + Math.Abs(numeric)),
                $"{fn}: d/dx{i} reference {spec.First(at, value, i)}, MathNet {numeric}");
            for (int j = 0; j < spec.Arity; j++)
            {
                double mixed = stencil.EvaluateMixedPartialDerivative(f, at, new[] { i, j }, 2);
                Assert.True(Math.Abs(mixed - spec.Second(at, value, i, j)) <= 1e-5 * (1 + Math.Abs(mixed)),
                    $"{fn}: d2/dx{i}dx{j} reference {spec.Second(at, value, i, j)}, MathNet {mixed}");
            }
        }
    }

    [Fact]
    public void JetChainRuleGivesTheHandDerivedHessian()
    {
        // f(x, y) = x·y·sin(x) + exp(y)/x, by hand (plain calculus):
        // f_x = y sin x + x y cos x − e^y/x², f_y = x sin x + e^y/x,
        // f_xx = 2y cos x − x y sin x + 2e^y/x³, f_xy = sin x + x cos x − e^y/x², f_yy = e^y/x.
        const double x = 0.9, y = -0.4;
        Jet jx = Jet.Variable(x, 0, 2), jy = Jet.Variable(y, 1, 2);
        FunctionSpec sin = ReferenceFunctions.All[Fn.Sin], exp = ReferenceFunctions.All[Fn.Exp];
        Jet Call(FunctionSpec s, Jet u) => Jet.Unary(u, s.MathValue(new[] { u.Value }), s.First(new[] { u.Value }, 0, 0), s.Second(new[] { u.Value }, 0, 0, 0));
        Jet f = (jx * jy * Call(sin, jx)) + (Call(exp, jy) / jx);

        double ey = Math.Exp(y);
        double[] gradient = { (y * Math.Sin(x)) + (x * y * Math.Cos(x)) - (ey / (x * x)), (x * Math.Sin(x)) + (ey / x) };
        double fxy = Math.Sin(x) + (x * Math.Cos(x)) - (ey / (x * x));
        double[] hessian = { (2 * y * Math.Cos(x)) - (x * y * Math.Sin(x)) + (2 * ey / (x * x * x)), fxy, fxy, ey / x };
        Assert.Equal((x * y * Math.Sin(x)) + (ey / x), f.Value, 15);
        for (int i = 0; i < 2; i++)
        {
            Assert.Equal(gradient[i], f.Gradient[i], 13);
        }

        for (int i = 0; i < 4; i++)
        {
            Assert.Equal(hessian[i], f.Hessian[i], 13);
            Assert.True(f.HessianBound[i] >= Math.Abs(f.Hessian[i]), "the magnitude bound bounds the entry");
        }
    }

    [Fact]
    public void ConstantArgumentsDropTheirPartials()
    {
        // Pow(a, 3) with a negative constant-free base: ∂/∂p = aᵖ ln a is NaN but the exponent is constant, so it must
        // not reach the result (the README's convention, and the reason Jet tracks IsConstant).
        Jet a = Jet.Variable(-1.5, 0, 1);
        Jet p = Jet.Constant(3, 1);
        FunctionSpec pow = ReferenceFunctions.All[Fn.Pow];
        double[] args = { a.Value, p.Value };
        double value = pow.MathValue(args);
        Jet f = Jet.Apply(value, new[] { a, p }, i => pow.First(args, value, i), (i, j) => pow.Second(args, value, i, j));
        Assert.Equal(3 * 1.5 * 1.5, f.Gradient[0], 14);     // 3a² (plain calculus)
        Assert.Equal(6 * -1.5, f.Hessian[0], 14);           // 6a
    }
}
