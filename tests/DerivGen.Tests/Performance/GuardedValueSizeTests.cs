using System;
using System.Collections.Generic;
using System.Globalization;
using System.Linq;
using System.Text;
using DerivGen.Tests.Infrastructure;
using Xunit;
using Xunit.Abstractions;

namespace DerivGen.Tests.Performance;

/// <summary>
/// Values computed after a guarded data read (<c>i &lt; d.Length ? d[i] * x : x</c>) or after an <c>if</c> in a loop body
/// that reads data on one side get locals in the generated code: they used to be written out as trees at every use, so
/// that each later statement using such a value twice (<c>t = 0.5 * (t * t) + 0.25;</c>) multiplied the generated code by
/// about 2.3. For n = 4, 8 and 16 such statements the size (C# tokens of the generated bodies,
/// <see cref="GeneratedCodeSize"/>) must grow linearly: with S(n) = a + b·n, S(16) − S(8) = 2 (S(8) − S(4)); asserted with
/// room for naming effects (at most 2.5 times), where quadratic growth would give 4 times and the old growth about 2.3⁸.
/// The n = 16 methods are also compiled and run: value bit-for-bit, derivatives against MathNet finite differences, and
/// no exception where the guard keeps the read out of range.
/// </summary>
public sealed class GuardedValueSizeTests : IClassFixture<GuardedValueSizeTests.Fixture>
{
    private static readonly int[] Counts = { 4, 8, 16 };

    private readonly Fixture _fixture;
    private readonly ITestOutputHelper _output;

    public GuardedValueSizeTests(Fixture fixture, ITestOutputHelper output)
    {
        _fixture = fixture;
        _output = output;
    }

    public sealed class Fixture : CompiledFixture
    {
        public Fixture()
            : base(Source())
        {
        }
    }

    private static string Statements(int n, string name, string indent) =>
        string.Concat(Enumerable.Repeat(indent + name + " = 0.5 * (" + name + " * " + name + ") + 0.25;\n", n));

    private static string Source()
    {
        var source = new StringBuilder("using System;\nusing DerivGen;\n\nnamespace Size;\n\npublic static partial class G\n{\n");
        foreach (int n in Counts)
        {
            source.Append(CultureInfo.InvariantCulture, $$"""
                    [Differentiate(nameof(x))]
                    public static double Guarded{{n}}(double x, double[] d, int i)
                    {
                        double t = i < d.Length ? d[i] * x : x;

                """).Append(Statements(n, "t", "        ")).Append("""
                        return t;
                    }

                """).Append(CultureInfo.InvariantCulture, $$"""
                    [Differentiate(nameof(x))]
                    public static double BranchInLoop{{n}}(double x, double[] d)
                    {
                        double s = x;
                        for (int i = 0; i < d.Length; i++)
                        {
                            if (i + 1 < d.Length)
                            {
                                s = s * d[i + 1];
                            }

                """).Append(Statements(n, "s", "            ")).Append("""
                        }

                        return s;
                    }

                """);
        }

        return source.Append("}\n").ToString();
    }

    [Theory]
    [InlineData("Guarded")]
    [InlineData("BranchInLoop")]
    public void GeneratedSizeGrowsLinearly(string family)
    {
        var rows = new List<(int N, int G, int H)>();
        foreach (int n in Counts)
        {
            string generated = _fixture.Run.Source($"Size.G.{family}{n}.g.cs");
            rows.Add((n, GeneratedCodeSize.BodyTokens(generated, $"{family}{n}Gradient"), GeneratedCodeSize.BodyTokens(generated, $"{family}{n}Hessian")));
            _output.WriteLine($"{family}, n = {n}: gradient body {rows[^1].G} tokens, Hessian body {rows[^1].H} tokens, file {generated.Length} characters");
        }

        foreach ((string what, Func<(int N, int G, int H), int> size) in new (string, Func<(int N, int G, int H), int>)[] { ("gradient", r => r.G), ("Hessian", r => r.H) })
        {
            int first = size(rows[1]) - size(rows[0]), second = size(rows[2]) - size(rows[1]);
            Assert.True(first > 0, $"{family} {what}: 8 statements give no more code than 4 ({size(rows[0])} → {size(rows[1])} tokens)");
            Assert.True(second <= 2.5 * first,
                $"{family} {what}: S(16) − S(8) = {second} tokens > 2.5 · (S(8) − S(4)) = 2.5 · {first} (superlinear growth)");
        }
    }

    [Theory]
    [InlineData(0.6, 1)]
    [InlineData(-0.4, 0)]
    [InlineData(0.7, 5)]   // out of range: the guard keeps d[5] unread, in the method and in the generated code
    public void GuardedValuesAreRight(double x, int i)
    {
        double[] d = { 0.9, 0.8 };
        var f = _fixture.Assembly.Method<F>("Size.G", "Guarded16");
        var g = _fixture.Assembly.Method<Grad>("Size.G", "Guarded16Gradient");
        var h = _fixture.Assembly.Method<Hess>("Size.G", "Guarded16Hessian");
        CheckAgainstOracle(v => f(v, d, i), (v, gr) => g(v, d, i, gr), (v, gr, he) => h(v, d, i, gr, he), x, $"Guarded16 at i = {i}");
    }

    [Theory]
    [InlineData(0.6)]
    [InlineData(-0.9)]
    public void BranchInLoopValuesAreRight(double x)
    {
        double[] d = { 0.9, 0.8, -0.7 };
        var f = _fixture.Assembly.Method<FLoop>("Size.G", "BranchInLoop16");
        var g = _fixture.Assembly.Method<GradLoop>("Size.G", "BranchInLoop16Gradient");
        var h = _fixture.Assembly.Method<HessLoop>("Size.G", "BranchInLoop16Hessian");
        CheckAgainstOracle(v => f(v, d), (v, gr) => g(v, d, gr), (v, gr, he) => h(v, d, gr, he), x, "BranchInLoop16");
    }

    private static void CheckAgainstOracle(Func<double, double> f, Func<double, double[], double> g, Func<double, double[], double[], double> h, double x, string what)
    {
        var gradient = new double[1];
        var hessian = new double[1];
        double value = f(x);
        Check.SameBits(value, g(x, gradient), what + ": MGradient's value");
        Check.SameBits(value, h(x, gradient, hessian), what + ": MHessian's value");
        Check.GradientMatchesOracle(v => f(v[0]), new[] { x }, gradient, what);
        Check.HessianMatchesOracle(v => f(v[0]), new[] { x }, hessian, what);
    }

    private delegate double F(double x, double[] d, int i);

    private delegate double Grad(double x, double[] d, int i, Span<double> gradient);

    private delegate double Hess(double x, double[] d, int i, Span<double> gradient, Span<double> hessian);

    private delegate double FLoop(double x, double[] d);

    private delegate double GradLoop(double x, double[] d, Span<double> gradient);

    private delegate double HessLoop(double x, double[] d, Span<double> gradient, Span<double> hessian);
}
