using System.Linq;
using System.Threading.Tasks;
using DerivGen.CodeFixes.Tests.Infrastructure;
using Microsoft.CodeAnalysis;
using Microsoft.CodeAnalysis.CodeActions;
using Xunit;
using Verify = DerivGen.CodeFixes.Tests.Infrastructure.CodeFixVerifier<DerivGen.CodeFixes.UseNameofCodeFix>;

namespace DerivGen.CodeFixes.Tests;

/// <summary>
/// DG0003 (variable is not a parameter): nameof(...) of a close parameter name; and the refactoring that turns correct
/// string names into nameof(...).
/// </summary>
public sealed class UseNameofTests
{
    [Fact]
    public Task MisspeltNameBecomesNameofOfTheParameter() => Verify.VerifyAsync(
        """
        using System;
        using DerivGen;

        public static partial class Arm
        {
            [Differentiate({|DG0003:"shouldr"|}, nameof(elbow))]
            public static double Reach(double shoulder, double elbow, double length) =>
                length * Math.Cos(shoulder) + length * Math.Cos(shoulder + elbow);
        }
        """,
        """
        using System;
        using DerivGen;

        public static partial class Arm
        {
            [Differentiate(nameof(shoulder), nameof(elbow))]
            public static double Reach(double shoulder, double elbow, double length) =>
                length * Math.Cos(shoulder) + length * Math.Cos(shoulder + elbow);
        }
        """);

    [Fact]
    public Task WrongCaseIsTheClosestMatch() => Verify.VerifyAsync(
        """
        using DerivGen;

        public static partial class Line
        {
            [Differentiate({|DG0003:"W"|}, "b")]
            public static double Loss(double w, double b, double x, double y) => (w * x + b - y) * (w * x + b - y);
        }
        """,
        """
        using DerivGen;

        public static partial class Line
        {
            [Differentiate(nameof(w), "b")]
            public static double Loss(double w, double b, double x, double y) => (w * x + b - y) * (w * x + b - y);
        }
        """);

    [Fact]
    public Task SeveralCloseNamesAreOfferedClosestFirst()
    {
        // "gain3" is one edit from gain1 and gain2 (and they are equally close): both offered, in declaration order;
        // gain1 is already named, so it is not offered again.
        const string source = """
            using DerivGen;

            public static partial class Tuning
            {
                [Differentiate(nameof(gain1), {|DG0003:"gain3"|})]
                public static double Cost(double gain1, double gain2, double gain4) => gain1 * gain1 + gain2 * gain2 + gain4;
            }
            """;
        return Task.WhenAll(
            Verify.VerifyAsync(source, source.Replace("{|DG0003:\"gain3\"|}", "nameof(gain2)"), codeActionIndex: 0),
            Verify.VerifyAsync(source, source.Replace("{|DG0003:\"gain3\"|}", "nameof(gain4)"), codeActionIndex: 1));
    }

    [Fact]
    public Task NothingIsOfferedWhenNoParameterIsClose() => Verify.VerifyNoFixAsync(
        """
        using DerivGen;

        public static partial class Line
        {
            [Differentiate(nameof(w), {|DG0003:"intercept"|})]
            public static double Loss(double w, double b) => (w - 1) * (w - 1) + b * b;
        }
        """);

    [Fact]
    public Task AKeywordParameterNameIsEscaped() => Verify.VerifyAsync(
        """
        using DerivGen;

        public static partial class K
        {
            [Differentiate({|DG0003:"Fixed"|})]
            public static double F(double @fixed, double y) => @fixed * @fixed * y;
        }
        """,
        """
        using DerivGen;

        public static partial class K
        {
            [Differentiate(nameof(@fixed))]
            public static double F(double @fixed, double y) => @fixed * @fixed * y;
        }
        """);

    [Fact]
    public void EditDistanceIsLevenshtein()
    {
        // Levenshtein 1966; the kitten/sitting example is the textbook one (distance 3), common practice.
        Assert.Equal(3, UseNameofCodeFix.EditDistance("kitten", "sitting"));
        Assert.Equal(0, UseNameofCodeFix.EditDistance("gain", "gain"));
        Assert.Equal(1, UseNameofCodeFix.EditDistance("shoulder", "shouldr"));
        Assert.Equal(5, UseNameofCodeFix.EditDistance("", "bias1"));
    }

    [Fact]
    public async Task RefactoringTurnsStringNamesIntoNameofAndTheResultCompilesWithItsGeneratedMethods()
    {
        const string source = """
            using System;
            using DerivGen;

            public static partial class Decay
            {
                [Differentiate("a", "rate", Hessian = false)]
                public static double Model(double a, double rate, double t) => a * Math.Exp(-rate * t);

                public static double SlopeInA(double t)
                {
                    Span<double> g = stackalloc double[2];
                    ModelGradient(2.0, 0.5, t, g);
                    return g[0];
                }
            }
            """;
        Document document = WorkspaceHarness.CreateDocument(source);
        CodeAction action = Assert.Single(await WorkspaceHarness.RefactoringsAsync(new UseNameofRefactoring(), document, "\"rate\""));
        Assert.Equal(UseNameofRefactoring.Title, action.Title);

        string fixedText = await WorkspaceHarness.ApplyAsync(action, document);
        Assert.Equal(source.Replace("[Differentiate(\"a\", \"rate\", Hessian = false)]", "[Differentiate(nameof(a), nameof(rate), Hessian = false)]"), fixedText);

        using LoadedAssembly compiled = WorkspaceHarness.CompileWithGenerator(fixedText);
        var slope = compiled.Static<System.Func<double, double>>("Decay", "SlopeInA");
        // d/da of a·exp(−rate·t) is exp(−rate·t) (plain calculus).
        Assert.Equal(System.Math.Exp(-0.5 * 3.0), slope(3.0), 15);
    }

    [Fact]
    public async Task RefactoringIsNotOfferedOutsideDifferentiateOrWhenNoStringNamesAParameter()
    {
        Document document = WorkspaceHarness.CreateDocument("""
            using System;
            using DerivGen;

            public static partial class C
            {
                [Obsolete("x")]
                [Differentiate(nameof(x))]
                public static double F(double x, double y) => x * y;
            }
            """);
        Assert.Empty(await WorkspaceHarness.RefactoringsAsync(new UseNameofRefactoring(), document, "\"x\""));
        Assert.Empty(await WorkspaceHarness.RefactoringsAsync(new UseNameofRefactoring(), document, "nameof(x)"));
    }
}
