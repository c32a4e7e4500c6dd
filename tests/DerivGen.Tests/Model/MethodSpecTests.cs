using System;
using System.Collections;
using System.Collections.Generic;
using System.Collections.Immutable;
using System.Linq;
using System.Reflection;
using DerivGen.Generator;
using DerivGen.Generator.Model;
using DerivGen.Tests.Infrastructure;
using Microsoft.CodeAnalysis;
using Xunit;

namespace DerivGen.Tests.Model;

/// <summary>
/// The per-method model (<see cref="MethodSpec"/>) is the incremental cache boundary: it must hold no Roslyn object
/// (which would pin a compilation in memory and defeat caching) and must compare equal when built twice from the
/// same source.
/// </summary>
public sealed class MethodSpecTests
{
    private const string Source = """
        using System;
        using DerivGen;

        namespace Models
        {
            public static partial class Outer
            {
                private static readonly double Rate = 0.25;

                public partial class Inner
                {
                    [Differentiate(nameof(a), nameof(b))]
                    internal double Fit(double a, double b, double t, int n)
                    {
                        double r = a * Math.Exp(-b * t) - Rate;
                        r *= n;
                        return r * r + Math.Atan2(a, b) + Math.Pow(a, 3) + Math.Abs(b);
                    }
                }
            }
        }

        public partial class Top
        {
            [Differentiate(Hessian = false)]
            public static float Small(float x) => MathF.Log(1f + x * x);
        }
        """;

    private static readonly Type[] Forbidden =
    {
        typeof(ISymbol), typeof(SyntaxNode), typeof(SyntaxTree), typeof(Location), typeof(Compilation),
        typeof(SemanticModel), typeof(IOperation), typeof(SyntaxToken), typeof(SyntaxReference),
    };

    [Fact]
    public void NoRoslynObjectIsReachableFromTheLowerStepOutputs()
    {
        List<object> outputs = LowerOutputs(Source);
        Assert.NotEmpty(outputs);
        int specs = 0;
        foreach (object output in outputs)
        {
            specs += Walk(output, "output");
        }

        Assert.True(specs == 2, $"Expected the Lower outputs to contain 2 MethodSpecs (Fit, Small); found {specs}.");
    }

    [Fact]
    public void NoRawArrayOrImmutableArrayOutsideEquatableArray()
    {
        // Raw arrays and ImmutableArray compare by reference; the model must use EquatableArray (DESIGN §8).
        foreach (object output in LowerOutputs(Source))
        {
            WalkTypes(output, "output", new HashSet<object>(ReferenceEqualityComparer.Instance));
        }
    }

    [Fact]
    public void TheSameSourceCompiledTwiceGivesEqualModels()
    {
        List<object> first = LowerOutputs(Source);
        List<object> second = LowerOutputs(Source);
        Assert.Equal(first.Count, second.Count);
        for (int i = 0; i < first.Count; i++)
        {
            Assert.False(ReferenceEquals(first[i], second[i]));
            Assert.Equal(first[i], second[i]);
            Assert.Equal(first[i].GetHashCode(), second[i].GetHashCode());
        }

        List<MethodSpec> specs = first.SelectMany(o => SpecsIn(o)).ToList();
        Assert.Equal(new[] { "Fit", "Small" }, specs.Select(s => s.Name).OrderBy(n => n, StringComparer.Ordinal));
    }

    [Fact]
    public void DifferentBodiesGiveDifferentModels()
    {
        // Guards the equality test above against an Equals that always returns true.
        List<object> first = LowerOutputs(Source);
        List<object> second = LowerOutputs(Source.Replace("Math.Pow(a, 3)", "Math.Pow(a, 4)", StringComparison.Ordinal));
        Assert.Equal(first.Count, second.Count);
        Assert.Equal(1, first.Zip(second).Count(p => !p.First.Equals(p.Second)));
    }

    private static List<object> LowerOutputs(string source)
    {
        GeneratedRun run = GeneratorHarness.Run(source);
        Assert.True(run.Result.TrackedSteps.TryGetValue(DerivativeGenerator.LowerStep, out var steps),
            $"No tracked step '{DerivativeGenerator.LowerStep}'");
        return steps.SelectMany(s => s.Outputs).Select(o => o.Value).ToList();
    }

    private static IEnumerable<MethodSpec> SpecsIn(object output)
    {
        var found = new List<MethodSpec>();
        Collect(output, found, new HashSet<object>(ReferenceEqualityComparer.Instance));
        return found;

        static void Collect(object? o, List<MethodSpec> found, HashSet<object> seen)
        {
            if (o is null || o is string || o.GetType().IsPrimitive || o.GetType().IsEnum || (!o.GetType().IsValueType && !seen.Add(o)))
            {
                return;
            }

            if (o is MethodSpec spec)
            {
                found.Add(spec);
                return;
            }

            foreach (object? child in Children(o))
            {
                Collect(child, found, seen);
            }
        }
    }

    /// <summary>Walks every field (public or not) and every element of a collection; returns the number of
    /// MethodSpecs met. Fails on the first Roslyn object reached, naming the path to it.</summary>
    private static int Walk(object output, string root)
    {
        int specs = 0;
        var seen = new HashSet<object>(ReferenceEqualityComparer.Instance);
        var stack = new Stack<(object? Value, string Path)>();
        stack.Push((output, root));
        while (stack.Count > 0)
        {
            var (value, path) = stack.Pop();
            if (value is null)
            {
                continue;
            }

            Type type = value.GetType();
            foreach (Type bad in Forbidden)
            {
                Assert.False(bad.IsAssignableFrom(type), $"A {bad.Name} is reachable from the model: {path} ({type.FullName})");
            }

            Assert.False(type.Assembly == typeof(SyntaxNode).Assembly || type.Assembly == typeof(Microsoft.CodeAnalysis.CSharp.CSharpCompilation).Assembly,
                $"A Roslyn type is reachable from the model: {path} ({type.FullName})");

            if (value is string || type.IsPrimitive || type.IsEnum || (!type.IsValueType && !seen.Add(value)))
            {
                continue;
            }

            if (value is MethodSpec)
            {
                specs++;
            }

            int i = 0;
            foreach (object? child in Children(value))
            {
                stack.Push((child, $"{path}.{i++}"));
            }

            foreach (FieldInfo f in AllFields(type))
            {
                stack.Push((f.GetValue(value), $"{path}.{f.Name}"));
            }
        }

        return specs;
    }

    private static void WalkTypes(object? value, string path, HashSet<object> seen)
    {
        if (value is null || value is string)
        {
            return;
        }

        Type type = value.GetType();
        if (type.IsPrimitive || type.IsEnum || (!type.IsValueType && !seen.Add(value)))
        {
            return;
        }

        bool insideEquatableArray = type.IsGenericType && type.GetGenericTypeDefinition() == typeof(EquatableArray<>);
        foreach (FieldInfo f in AllFields(type))
        {
            Type ft = f.FieldType;
            bool rawCollection = ft.IsArray || (ft.IsGenericType && ft.GetGenericTypeDefinition() == typeof(ImmutableArray<>));
            Assert.False(rawCollection && !insideEquatableArray,
                $"{path}.{f.Name} is a {ft.Name}, which compares by reference; use EquatableArray<T>");
            if (!insideEquatableArray)
            {
                WalkTypes(f.GetValue(value), $"{path}.{f.Name}", seen);
            }
        }

        if (insideEquatableArray)
        {
            int i = 0;
            foreach (object? child in (IEnumerable)value)
            {
                WalkTypes(child, $"{path}[{i++}]", seen);
            }
        }
    }

    // Collections are walked through their elements; ImmutableArray (which throws when enumerated while default) is
    // walked through its one field, the underlying array.
    /// <summary>The elements of a collection, or the fields of one of the generator's own records (a lowering result).</summary>
    private static IEnumerable<object?> Children(object value) =>
        value is IEnumerable e and not string && !IsImmutableArray(value.GetType()) ? e.Cast<object?>()
        : value.GetType().Namespace?.StartsWith("DerivGen", StringComparison.Ordinal) == true ? AllFields(value.GetType()).Select(f => f.GetValue(value))
        : Array.Empty<object?>();

    private static bool IsImmutableArray(Type t) => t.IsGenericType && t.GetGenericTypeDefinition() == typeof(ImmutableArray<>);

    private static IEnumerable<FieldInfo> AllFields(Type type)
    {
        for (Type? t = type; t is not null && t != typeof(object) && t != typeof(ValueType); t = t.BaseType)
        {
            foreach (FieldInfo f in t.GetFields(BindingFlags.Instance | BindingFlags.Public | BindingFlags.NonPublic | BindingFlags.DeclaredOnly))
            {
                yield return f;
            }
        }
    }
}
