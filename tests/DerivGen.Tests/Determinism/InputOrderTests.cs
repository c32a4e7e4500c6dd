using System;
using System.Collections.Generic;
using System.Linq;
using System.Text;
using DerivGen.Tests.Infrastructure;
using Microsoft.CodeAnalysis;
using Xunit;

namespace DerivGen.Tests.Determinism;

/// <summary>
/// The same sources give byte-identical generated files with identical hint names whatever the order of the syntax
/// trees in the compilation and however often the generator runs (common practice for deterministic builds: the
/// compiler itself promises the same output for the same inputs).
/// </summary>
public sealed class InputOrderTests
{
    private static readonly string[] Sources =
    {
        """
        using System;
        using DerivGen;

        namespace Order.A;

        public static partial class Model
        {
            [Differentiate(nameof(a), nameof(b))]
            public static double Decay(double a, double b, double t) => a * Math.Exp(-b * t);
        }
        """,
        """
        using System;
        using DerivGen;

        namespace Order.B;

        public static partial class Loss
        {
            // Calls a [Differentiate] method declared in another file.
            [Differentiate(nameof(a), nameof(b))]
            public static double Squared(double a, double b, double[] t, double[] y)
            {
                double s = 0;
                for (int i = 0; i < t.Length; i++)
                {
                    double r = Order.A.Model.Decay(a, b, t[i]) - y[i];
                    s += r * r;
                }

                return s;
            }
        }
        """,
        """
        using System;
        using DerivGen;

        public partial class Outer<T>
        {
            internal partial struct Inner
            {
                [Differentiate]
                internal static float Bump(float x, float y) => MathF.Exp(-(x * x) - (y * y)) + float.Hypot(x, y);
            }
        }

        public static partial class Model
        {
            [Differentiate(Hessian = false)]
            public static double Decay(double a) => Math.Tanh(a) * Math.Atan2(a, 2.0);
        }
        """,
    };

    private static IEnumerable<int[]> Permutations(int[] items) =>
        items.Length <= 1
            ? new[] { items }
            : items.SelectMany((first, i) => Permutations(items.Where((_, j) => j != i).ToArray()).Select(rest => new[] { first }.Concat(rest).ToArray()));

    /// <summary>Hint name → exact UTF-8 bytes of every generated file.</summary>
    private static SortedDictionary<string, byte[]> Generate(string[] sources)
    {
        GeneratedRun run = GeneratorHarness.Run(sources);
        var files = new SortedDictionary<string, byte[]>(StringComparer.Ordinal);
        foreach (GeneratedSourceResult file in run.Result.GeneratedSources)
        {
            Assert.True(files.TryAdd(file.HintName, Encoding.UTF8.GetBytes(file.SourceText.ToString())), $"hint name {file.HintName} used twice");
        }

        return files;
    }

    [Fact]
    public void EveryOrderOfTheSyntaxTreesGivesTheSameFilesAndHintNames()
    {
        SortedDictionary<string, byte[]> reference = Generate(Sources);
        Assert.Equal(4, reference.Count);
        int orders = 0;
        foreach (int[] order in Permutations(new[] { 0, 1, 2 }))
        {
            SortedDictionary<string, byte[]> files = Generate(order.Select(i => Sources[i]).ToArray());
            Assert.Equal(reference.Keys, files.Keys);
            foreach (string hint in reference.Keys)
            {
                Assert.True(reference[hint].AsSpan().SequenceEqual(files[hint]), $"{hint} differs for the order {string.Join(", ", order)}");
            }

            orders++;
        }

        Assert.Equal(6, orders);
    }

    [Fact]
    public void RepeatedRunsWithFreshGeneratorsGiveTheSameBytes()
    {
        SortedDictionary<string, byte[]> first = Generate(Sources);
        for (int run = 0; run < 3; run++)
        {
            SortedDictionary<string, byte[]> again = Generate(Sources);
            Assert.Equal(first.Keys, again.Keys);
            foreach (string hint in first.Keys)
            {
                Assert.True(first[hint].AsSpan().SequenceEqual(again[hint]), $"{hint} differs on run {run + 2}");
            }
        }
    }
}
