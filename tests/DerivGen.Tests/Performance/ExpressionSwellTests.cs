using System;
using System.Collections.Generic;
using System.Globalization;
using System.Linq;
using System.Text;
using DerivGen.Tests.Infrastructure;
using Microsoft.CodeAnalysis;
using Xunit;
using Xunit.Abstractions;

namespace DerivGen.Tests.Performance;

/// <summary>
/// No expression swell: the size of the generated gradient grows linearly with the size of the differentiated
/// expression, and the Hessian's at most (n + 1) times that. Size is counted in C# tokens of the generated method
/// bodies (<see cref="GeneratedCodeSize"/>), for three families whose naive symbolic derivatives grow faster than the
/// expression: nested compositions sin(sin(…sin(x))) (the chain rule repeats every inner function), products of k
/// distinct variables (each of the k partial derivatives is a product of k − 1 factors: k² tokens if written out),
/// and sums of k terms of two variables.
/// </summary>
/// <remarks>
/// The bounds asserted, with k the family's size and B(k) the tokens of the user's expression:
/// <list type="bullet">
/// <item>Gradient, G(k) ≤ 2 · ĉ · B(k), where ĉ = max G(k)/B(k) over the two smallest k of the family: the gradient
/// of reverse accumulation costs a small constant times the expression it differentiates (the cheap gradient
/// principle: Griewank &amp; Walther, Evaluating Derivatives, 2nd ed., SIAM 2008, ch. 4, from memory); the constant is
/// fitted from small k
/// and the factor 2 leaves room for rounding effects of naming and constant overhead, while a quadratic term would
/// exceed it by a factor of k/4 or more at k = 64.</item>
/// <item>Hessian, H(k) ≤ (n + 1) · 2 · ĉ · B(k): the Hessian method computes the value and gradient (one sweep) and
/// one tangent sweep of the gradient per variable (n sweeps, forward-over-reverse: common practice, ibid. ch. 5, from
/// memory), each bounded like the gradient.</item>
/// <item>Both strictly increasing in k (a larger expression never gives less code).</item>
/// </list>
/// </remarks>
public sealed class ExpressionSwellTests
{
    private const double Factor = 2.0;

    private static readonly int[] Sizes = { 2, 4, 8, 16, 32, 64 };

    private readonly ITestOutputHelper _output;

    public ExpressionSwellTests(ITestOutputHelper output) => _output = output;

    [Fact]
    public void NestedCompositionsGrowLinearly() => AssertLinear(
        "Nest",
        k => "double x",
        k => Enumerable.Range(0, k).Aggregate("x", (inner, _) => $"Math.Sin({inner})"),
        k => 1);

    [Fact]
    public void ProductsOfDistinctVariablesGrowLinearly() => AssertLinear(
        "Product",
        k => string.Join(", ", Enumerable.Range(0, k).Select(i => $"double x{i}")),
        k => string.Join(" * ", Enumerable.Range(0, k).Select(i => $"x{i}")),
        k => k);

    [Fact]
    public void SumsOfTermsGrowLinearly() => AssertLinear(
        "Sum",
        k => "double x, double y",
        k => string.Join(" + ", Enumerable.Range(0, k).Select(i =>
            $"Math.Exp({L(0.125 * (i + 1))} * x) * Math.Sin(y + {L(0.5 + i)})")),
        k => 2);

    private void AssertLinear(string family, Func<int, string> parameters, Func<int, string> expression, Func<int, int> variables)
    {
        var source = new StringBuilder();
        source.Append("using System;\nusing DerivGen;\n\nnamespace Swell;\n\npublic static partial class F\n{\n");
        foreach (int k in Sizes)
        {
            source.Append(CultureInfo.InvariantCulture, $"    [Differentiate]\n    public static double {family}{k}({parameters(k)}) => {expression(k)};\n\n");
        }

        source.Append("}\n");

        // Generation only: compiling the 64-variable Hessians would take most of this test's time, and the code these
        // shapes produce is compiled and run by the numeric tests. A failure here would be a generator exception or a
        // missing file, both asserted.
        GeneratorRunResult run = GeneratorHarness.CreateDriver()
            .RunGenerators(GeneratorHarness.CreateCompilation(source.ToString()))
            .GetRunResult().Results.Single();
        Assert.Null(run.Exception);
        Assert.Empty(run.Diagnostics);

        var rows = new List<(int K, int N, int B, int G, int H)>();
        foreach (int k in Sizes)
        {
            string generated = run.GeneratedSources.Single(g => g.HintName == $"Swell.F.{family}{k}.g.cs").SourceText.ToString();
            Assert.DoesNotContain("#error", generated, StringComparison.Ordinal);
            rows.Add((k, variables(k), GeneratedCodeSize.ExpressionTokens(expression(k)),
                GeneratedCodeSize.BodyTokens(generated, $"{family}{k}Gradient"),
                GeneratedCodeSize.BodyTokens(generated, $"{family}{k}Hessian")));
        }

        double c = rows.Take(2).Max(r => (double)r.G / r.B);
        _output.WriteLine($"{family}: tokens of the expression B, of the gradient body G and of the Hessian body H; fitted ĉ = {c:0.00}");
        _output.WriteLine("    k     n       B       G       H   G/B   H/B   bound G  bound H");
        foreach (var r in rows)
        {
            _output.WriteLine(string.Create(CultureInfo.InvariantCulture,
                $"{r.K,5} {r.N,5} {r.B,7} {r.G,7} {r.H,7} {(double)r.G / r.B,5:0.00} {(double)r.H / r.B,5:0.0} {Factor * c * r.B,9:0} {(r.N + 1) * Factor * c * r.B,8:0}"));
        }

        var failures = new List<string>();
        for (int i = 0; i < rows.Count; i++)
        {
            var r = rows[i];
            if (r.G > Factor * c * r.B)
            {
                failures.Add($"k = {r.K}: gradient {r.G} tokens > {Factor} · {c:0.00} · {r.B} (superlinear growth)");
            }

            if (r.H > (r.N + 1) * Factor * c * r.B)
            {
                failures.Add($"k = {r.K}: Hessian {r.H} tokens > ({r.N} + 1) · {Factor} · {c:0.00} · {r.B}");
            }

            if (i > 0 && (r.G <= rows[i - 1].G || r.H <= rows[i - 1].H))
            {
                failures.Add($"k = {r.K}: not larger than k = {rows[i - 1].K} (G {rows[i - 1].G} → {r.G}, H {rows[i - 1].H} → {r.H})");
            }
        }

        Assert.True(failures.Count == 0, $"{family}: " + string.Join("; ", failures));
    }

    private static string L(double v) => v.ToString("R", CultureInfo.InvariantCulture);
}
