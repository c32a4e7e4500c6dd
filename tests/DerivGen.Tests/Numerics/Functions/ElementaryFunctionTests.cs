using System;
using System.Collections.Generic;
using DerivGen.Tests.Infrastructure;
using Xunit;

namespace DerivGen.Tests.Numerics.Functions;

public sealed class ElementaryFunctionFixture : CompiledFixture
{
    public const string Source = """
        using System;
        using DerivGen;

        public static partial class Elementary
        {
            [Differentiate] public static double Sin(double x) => Math.Sin(x);
            [Differentiate] public static double Cos(double x) => Math.Cos(x);
            [Differentiate] public static double Tan(double x) => Math.Tan(x);
            [Differentiate] public static double Asin(double x) => Math.Asin(x);
            [Differentiate] public static double Acos(double x) => Math.Acos(x);
            [Differentiate] public static double Atan(double x) => Math.Atan(x);
            [Differentiate] public static double Sinh(double x) => Math.Sinh(x);
            [Differentiate] public static double Cosh(double x) => Math.Cosh(x);
            [Differentiate] public static double Tanh(double x) => Math.Tanh(x);
            [Differentiate] public static double Asinh(double x) => Math.Asinh(x);
            [Differentiate] public static double Acosh(double x) => Math.Acosh(x);
            [Differentiate] public static double Atanh(double x) => Math.Atanh(x);
            [Differentiate] public static double Exp(double x) => Math.Exp(x);
            [Differentiate] public static double Log(double x) => Math.Log(x);
            [Differentiate] public static double Log10(double x) => Math.Log10(x);
            [Differentiate] public static double Log2(double x) => Math.Log2(x);
            [Differentiate] public static double Sqrt(double x) => Math.Sqrt(x);
            [Differentiate] public static double Cbrt(double x) => Math.Cbrt(x);
            [Differentiate] public static double PowInteger(double x) => Math.Pow(x, 3);
            [Differentiate] public static double PowNegativeInteger(double x) => Math.Pow(x, -2);
            [Differentiate] public static double PowReal(double x) => Math.Pow(x, 2.5);
            [Differentiate] public static double PowConstantBase(double x) => Math.Pow(2.0, x);
            // The same functions called on double (the generic-math statics) instead of Math.
            [Differentiate] public static double DoubleSin(double x) => double.Sin(x);
            [Differentiate] public static double DoubleExp(double x) => double.Exp(x);
            [Differentiate] public static double DoubleSqrt(double x) => double.Sqrt(x);
            [Differentiate] public static double DoubleAtan(double x) => double.Atan(x);
        }
        """;

    public ElementaryFunctionFixture()
        : base(Source)
    {
    }
}

/// <summary>
/// First and second derivatives of every supported one-argument elementary function, each against its closed form
/// and against MathNet's finite differences, at points inside the domain.
/// </summary>
public sealed class ElementaryFunctionTests : IClassFixture<ElementaryFunctionFixture>
{
    private readonly ElementaryFunctionFixture _fixture;

    public ElementaryFunctionTests(ElementaryFunctionFixture fixture) => _fixture = fixture;

    /// <summary>f', f'' of each method, with the source of the formula. "A&amp;S" = Abramowitz &amp; Stegun,
    /// Handbook of Mathematical Functions (1964), ch. 4; section numbers are certain, formula numbers are given
    /// only where noted and are from memory.</summary>
    private static readonly Dictionary<string, (Func<double, double> D1, Func<double, double> D2)> ClosedForms = new()
    {
        // A&S §4.3 (circular functions; 4.3.105-4.3.107 from memory): sin' = cos, cos' = -sin, tan' = sec^2.
        ["Sin"] = (Math.Cos, x => -Math.Sin(x)),
        ["Cos"] = (x => -Math.Sin(x), x => -Math.Cos(x)),
        ["Tan"] = (x => 1 / (Math.Cos(x) * Math.Cos(x)), x => 2 * Math.Tan(x) / (Math.Cos(x) * Math.Cos(x))),
        // A&S §4.4 (inverse circular functions; 4.4.52-4.4.54 from memory).
        ["Asin"] = (x => 1 / Math.Sqrt(1 - x * x), x => x / Math.Pow(1 - x * x, 1.5)),
        ["Acos"] = (x => -1 / Math.Sqrt(1 - x * x), x => -x / Math.Pow(1 - x * x, 1.5)),
        ["Atan"] = (x => 1 / (1 + x * x), x => -2 * x / ((1 + x * x) * (1 + x * x))),
        // A&S §4.5 (hyperbolic functions): sinh' = cosh, cosh' = sinh, tanh' = sech^2 (from memory).
        ["Sinh"] = (Math.Cosh, Math.Sinh),
        ["Cosh"] = (Math.Sinh, Math.Cosh),
        ["Tanh"] = (x => 1 / (Math.Cosh(x) * Math.Cosh(x)), x => -2 * Math.Tanh(x) / (Math.Cosh(x) * Math.Cosh(x))),
        // A&S §4.6 (inverse hyperbolic functions; from memory).
        ["Asinh"] = (x => 1 / Math.Sqrt(x * x + 1), x => -x / Math.Pow(x * x + 1, 1.5)),
        ["Acosh"] = (x => 1 / Math.Sqrt(x * x - 1), x => -x / Math.Pow(x * x - 1, 1.5)),
        ["Atanh"] = (x => 1 / (1 - x * x), x => 2 * x / ((1 - x * x) * (1 - x * x))),
        // A&S §4.2 (exponential function): exp' = exp.
        ["Exp"] = (Math.Exp, Math.Exp),
        // A&S §4.1 (logarithmic function): ln' x = 1/x; log_b x = ln x / ln b (change of base, from memory).
        ["Log"] = (x => 1 / x, x => -1 / (x * x)),
        ["Log10"] = (x => 1 / (x * Math.Log(10)), x => -1 / (x * x * Math.Log(10))),
        ["Log2"] = (x => 1 / (x * Math.Log(2)), x => -1 / (x * x * Math.Log(2))),
        // Power rule, d/dx x^a = a x^(a-1) (plain calculus); sqrt = x^(1/2); cbrt = x^(1/3), also for x < 0.
        ["Sqrt"] = (x => 0.5 / Math.Sqrt(x), x => -0.25 / (x * Math.Sqrt(x))),
        ["Cbrt"] = (x => 1 / (3 * Math.Cbrt(x) * Math.Cbrt(x)), x => -2 / (9 * Math.Pow(Math.Cbrt(x), 5))),
        ["PowInteger"] = (x => 3 * x * x, x => 6 * x),
        ["PowNegativeInteger"] = (x => -2 / (x * x * x), x => 6 / (x * x * x * x)),
        ["PowReal"] = (x => 2.5 * Math.Pow(x, 1.5), x => 3.75 * Math.Sqrt(x)),
        // A&S §4.2 (a^x = e^(x ln a)): d/dx 2^x = 2^x ln 2.
        ["PowConstantBase"] = (x => Math.Pow(2, x) * Math.Log(2), x => Math.Pow(2, x) * Math.Log(2) * Math.Log(2)),
        ["DoubleSin"] = (Math.Cos, x => -Math.Sin(x)),
        ["DoubleExp"] = (Math.Exp, Math.Exp),
        ["DoubleSqrt"] = (x => 0.5 / Math.Sqrt(x), x => -0.25 / (x * Math.Sqrt(x))),
        ["DoubleAtan"] = (x => 1 / (1 + x * x), x => -2 * x / ((1 + x * x) * (1 + x * x))),
    };

    [Theory]
    [InlineData("Sin", 0.7)]
    [InlineData("Sin", -2.9)]
    [InlineData("Cos", 0.7)]
    [InlineData("Cos", 4.1)]
    [InlineData("Tan", 0.4)]
    [InlineData("Tan", -1.2)]
    [InlineData("Asin", 0.3)]
    [InlineData("Asin", -0.8)]
    [InlineData("Acos", 0.3)]
    [InlineData("Acos", -0.8)]
    [InlineData("Atan", 0.5)]
    [InlineData("Atan", -3.0)]
    [InlineData("Sinh", 0.9)]
    [InlineData("Sinh", -2.0)]
    [InlineData("Cosh", 0.9)]
    [InlineData("Cosh", -2.0)]
    [InlineData("Tanh", 0.6)]
    [InlineData("Tanh", -1.5)]
    [InlineData("Asinh", 0.6)]
    [InlineData("Asinh", -4.0)]
    [InlineData("Acosh", 1.5)]
    [InlineData("Acosh", 6.0)]
    [InlineData("Atanh", 0.2)]
    [InlineData("Atanh", -0.7)]
    [InlineData("Exp", 0.3)]
    [InlineData("Exp", -2.5)]
    [InlineData("Log", 0.5)]
    [InlineData("Log", 7.0)]
    [InlineData("Log10", 0.5)]
    [InlineData("Log10", 120.0)]
    [InlineData("Log2", 0.5)]
    [InlineData("Log2", 9.0)]
    [InlineData("Sqrt", 2.25)]
    [InlineData("Sqrt", 0.01)]
    [InlineData("Cbrt", 2.0)]
    [InlineData("Cbrt", -3.0)]
    [InlineData("PowInteger", 1.3)]
    [InlineData("PowInteger", -2.0)]
    [InlineData("PowNegativeInteger", 1.3)]
    [InlineData("PowNegativeInteger", -2.0)]
    [InlineData("PowReal", 1.7)]
    [InlineData("PowConstantBase", 1.5)]
    [InlineData("PowConstantBase", -0.5)]
    [InlineData("DoubleSin", 0.7)]
    [InlineData("DoubleExp", -1.1)]
    [InlineData("DoubleSqrt", 3.0)]
    [InlineData("DoubleAtan", 0.5)]
    public void DerivativesMatchTheClosedFormAndFiniteDifferences(string method, double x)
    {
        var (d1, d2) = ClosedForms[method];
        Probe probe = Probe.Load(_fixture.Assembly, "Elementary", method, 1);
        Verify.At(probe, new[] { x }, new[] { d1(x) }, new[] { d2(x) }, method);
    }

    [Fact]
    public void EveryElementaryMethodHasAClosedFormAndAGeneratedFile()
    {
        // Guards against a method of the source being silently left out of the theory above.
        foreach (string method in ClosedForms.Keys)
        {
            Assert.Contains($"Elementary.{method}.g.cs", _fixture.Run.HintNames);
        }

        Assert.Equal(ClosedForms.Count, _fixture.Run.HintNames.Count);
    }
}
