using System;
using System.Globalization;
using System.Linq;
using System.Text;
using DerivGen.Tests.Infrastructure;
using Xunit;

namespace DerivGen.Tests.Determinism;

/// <summary>
/// The generated text must not depend on the culture of the machine that compiles: same bytes under cultures with
/// a decimal comma (de-DE), a dotless i (tr-TR), Arabic formatting (ar-SA), the invariant culture and a culture
/// whose minus sign is U+2212 (the trick one of .NET's own generator test suites uses to catch culture leaks).
/// </summary>
public sealed class CultureTests
{
    // Literals that format differently per culture: decimals, exponents, negatives, tiny and huge magnitudes, and
    // identifiers with 'i'/'I' (tr-TR casing).
    private const string Source = """
        using System;
        using DerivGen;

        namespace Invariance;

        public static partial class Literals
        {
            private static readonly double Tiny = 1.5e-300;

            [Differentiate]
            public static double Mixed(double index, double Item) =>
                -2.5 * index * index + 1e21 * Item - 0.1 * Math.Sin(-3.75 * index) + Tiny * Item * Item
                + Math.Pow(index, -1.5) - 1234567.890625 * Math.Exp(-0.001 * Item);

            [Differentiate]
            public static float Single(float iota) => -0.3f * iota * iota + 2.5e-8f * MathF.Cos(iota);
        }
        """;

    [Fact]
    public void GeneratedTextIsIdenticalUnderEveryCulture()
    {
        CultureInfo minus = (CultureInfo)CultureInfo.GetCultureInfo("en-US").Clone();
        minus.NumberFormat.NegativeSign = "\u2212";
        CultureInfo[] cultures =
        {
            CultureInfo.InvariantCulture,
            CultureInfo.GetCultureInfo("de-DE"),
            CultureInfo.GetCultureInfo("tr-TR"),
            CultureInfo.GetCultureInfo("ar-SA"),
            minus,
        };

        // Sanity: these cultures really do format differently here (so the test could fail).
        Assert.Equal("-1,5", (-1.5).ToString(CultureInfo.GetCultureInfo("de-DE")));
        Assert.Equal("\u22121.5", (-1.5).ToString(minus));

        string? reference = null;
        foreach (CultureInfo culture in cultures)
        {
            string text = GenerateUnder(culture);
            Assert.DoesNotContain("\r", text);
            Assert.DoesNotContain("\u2212", text);
            if (reference is null)
            {
                reference = text;
            }
            else
            {
                Assert.True(reference == text, $"Generated text under '{culture.Name}' differs from the invariant culture's:\n{FirstDifference(reference, text)}");
            }
        }
    }

    [Fact]
    public void RandomProgramsGenerateTheSameTextUnderEveryCulture()
    {
        // 60 random methods of the randomised suite (every function, loops, branches, odd literals and Unicode names),
        // generated under cultures with a decimal comma, a dotless i and Arabic digits.
        var generator = new Randomized.CaseGenerator(Randomized.CaseFamily.Program);
        var expressions = new Randomized.CaseGenerator(Randomized.CaseFamily.Expression);
        var master = CsCheck.PCG.Parse("9UTurB-iDMw5");
        string source = Randomized.RandomCase.Unit(Enumerable.Range(0, 60).Select(i =>
            (i % 2 == 0 ? generator : expressions).Generate(new CsCheck.PCG(master.Next(), master.Next64()), null, out _).MethodSource("M" + i.ToString(CultureInfo.InvariantCulture))));

        string? reference = null;
        foreach (string name in new[] { "", "de-DE", "tr-TR", "ar-SA" })
        {
            CultureInfo culture = name.Length == 0 ? CultureInfo.InvariantCulture : CultureInfo.GetCultureInfo(name);
            CultureInfo oldCulture = CultureInfo.CurrentCulture, oldUi = CultureInfo.CurrentUICulture;
            string text;
            try
            {
                CultureInfo.CurrentCulture = culture;
                CultureInfo.CurrentUICulture = culture;
                var driver = Microsoft.CodeAnalysis.CSharp.CSharpGeneratorDriver.Create(new DerivGen.Generator.DerivativeGenerator())
                    .RunGenerators(GeneratorHarness.CreateCompilation(source));
                text = string.Concat(driver.GetRunResult().Results.Single().GeneratedSources
                    .OrderBy(g => g.HintName, StringComparer.Ordinal)
                    .Select(g => "=== " + g.HintName + "\n" + g.SourceText));
            }
            finally
            {
                CultureInfo.CurrentCulture = oldCulture;
                CultureInfo.CurrentUICulture = oldUi;
            }

            Assert.Contains("=== Rnd.R.M59.g.cs", text);
            if (reference is null)
            {
                reference = text;
            }
            else
            {
                Assert.True(reference == text, $"Generated text of random methods under '{culture.Name}' differs:\n{FirstDifference(reference, text)}");
            }
        }
    }

    private static string GenerateUnder(CultureInfo culture)
    {
        CultureInfo oldCulture = CultureInfo.CurrentCulture, oldUi = CultureInfo.CurrentUICulture;
        try
        {
            CultureInfo.CurrentCulture = culture;
            CultureInfo.CurrentUICulture = culture;
            GeneratedRun run = GeneratorHarness.Run(Source);
            var all = new StringBuilder();
            foreach (string hint in run.HintNames)
            {
                all.Append("=== ").Append(hint).Append('\n').Append(run.Source(hint));
            }

            Assert.Equal(2, run.HintNames.Count);
            return all.ToString();
        }
        finally
        {
            CultureInfo.CurrentCulture = oldCulture;
            CultureInfo.CurrentUICulture = oldUi;
        }
    }

    private static string FirstDifference(string a, string b)
    {
        string[] la = a.Split('\n'), lb = b.Split('\n');
        for (int i = 0; i < Math.Min(la.Length, lb.Length); i++)
        {
            if (la[i] != lb[i])
            {
                return $"line {i + 1}:\n  invariant: {la[i]}\n  this:      {lb[i]}";
            }
        }

        return $"line counts {la.Length} vs {lb.Length}";
    }
}
