using System;
using System.CodeDom.Compiler;
using System.Collections.Generic;
using System.Collections.Immutable;
using System.IO;
using System.Linq;
using System.Reflection;
using System.Text.RegularExpressions;
using System.Threading;
using System.Threading.Tasks;
using DerivGen.CodeFixes.Tests.Infrastructure;
using DerivGen.Generator.Diagnostics;
using Microsoft.CodeAnalysis;
using Microsoft.CodeAnalysis.CodeActions;
using Microsoft.CodeAnalysis.CodeFixes;
using Microsoft.CodeAnalysis.Diagnostics;
using Xunit;

namespace DerivGen.CodeFixes.Tests;

/// <summary>
/// DG0006 as data for the fix: the analyzer puts the taken name in the diagnostic's properties
/// (<see cref="DiagnosticProperties.TakenName"/>), and <see cref="RenameCollidingMemberCodeFix"/> reads it from there,
/// not from the message. Also the tool name and version the generated members are stamped with, which the fix relies on
/// to tell DerivGen's own members from the user's.
/// </summary>
public sealed class GeneratedNameTakenPropertyTests
{
    // One source per shape of generated members; the expected names follow the naming stated in README.md (MGradient,
    // MHessian; MJacobian for a method with outputs; MPairHessian for the Hessian of a method with a vector variable).
    public static TheoryData<string, string[]> Shapes => new()
    {
        {
            """
            using DerivGen;
            public static partial class C
            {
                public static int FGradient() => 0;
                public static int FHessian() => 0;
                [Differentiate]
                public static double F(double x) => x * x;
            }
            """,
            new[] { "FGradient", "FHessian" }
        },
        {
            """
            using System;
            using DerivGen;
            public static partial class C
            {
                public static int FJacobian = 0;
                [Differentiate(nameof(a))]
                public static void F(double a, Span<double> r) { r[0] = a * a; }
            }
            """,
            new[] { "FJacobian" }
        },
        {
            """
            using DerivGen;
            public static partial class C
            {
                private static int FPairHessian() => 0;
                [Differentiate(nameof(w))]
                public static double F(double[] w) => w[0] * w[0];
            }
            """,
            new[] { "FPairHessian" }
        },
    };

    [Theory]
    [MemberData(nameof(Shapes))]
    public async Task EachTakenNameIsAPropertyOfItsDiagnostic(string source, string[] expected)
    {
        Document document = WorkspaceHarness.CreateDocument(source);
        ImmutableArray<Diagnostic> diagnostics = await AnalyzerDiagnosticsAsync(document);
        var taken = diagnostics.Where(d => d.Id == "DG0006").ToList();
        Assert.Equal(expected, taken.Select(d => d.Properties[DiagnosticProperties.TakenName]).ToArray());

        // The property and the message agree (the message is for people; it still names the member).
        Assert.All(taken, d => Assert.Contains("'" + d.Properties[DiagnosticProperties.TakenName] + "'", d.GetMessage(), StringComparison.Ordinal));

        // Every taken name gets its rename.
        var offers = await WorkspaceHarness.FixesAsync(new RenameCollidingMemberCodeFix(), document);
        Assert.Equal(expected.Select(n => $"Rename the existing '{n}' to '{n}ByHand'"), offers.Select(o => o.Action.Title));
    }

    [Fact]
    public async Task OtherDiagnosticsCarryNoProperties()
    {
        Document document = WorkspaceHarness.CreateDocument("""
            using System;
            using DerivGen;
            public static class C
            {
                [Differentiate("y")]
                public static double F(double x) => Math.Abs(x);
            }
            """);
        ImmutableArray<Diagnostic> diagnostics = await AnalyzerDiagnosticsAsync(document);
        Assert.Contains(diagnostics, d => d.Id == "DG0002");
        Assert.Contains(diagnostics, d => d.Id == "DG0003");
        Assert.All(diagnostics.Where(d => d.Id.StartsWith("DG", StringComparison.Ordinal)), d => Assert.Empty(d.Properties));
    }

    // The fix must work from the property alone: a DG0006 whose message names nothing still gets its rename, and one
    // without the property gets none (the fix no longer guesses from the message).
    [Fact]
    public async Task TheFixReadsThePropertyNotTheMessage()
    {
        const string Source = """
            using DerivGen;
            public static partial class C
            {
                [Differentiate]
                public static double Loss(double x) => x * x;

                public static double LossHessian() => 2;

                public static double Use() => LossHessian();
            }
            """;
        Document document = WorkspaceHarness.CreateDocument(Source);
        string text = (await document.GetTextAsync()).ToString();
        Location at = Location.Create((await document.GetSyntaxTreeAsync())!, new Microsoft.CodeAnalysis.Text.TextSpan(text.IndexOf("Loss(", StringComparison.Ordinal), 4));
        var silent = new DiagnosticDescriptor("DG0006", "title", "a message that names no member", "DerivGen", DiagnosticSeverity.Error, isEnabledByDefault: true);

        var withProperty = Diagnostic.Create(silent, at, ImmutableDictionary<string, string?>.Empty.Add(DiagnosticProperties.TakenName, "LossHessian"));
        CodeAction action = Assert.Single(await OffersAsync(document, withProperty));
        Assert.Equal("Rename the existing 'LossHessian' to 'LossHessianByHand'", action.Title);
        string renamed = await WorkspaceHarness.ApplyAsync(action, document);
        Assert.Equal(Source.Replace("LossHessian", "LossHessianByHand", StringComparison.Ordinal), renamed);

        var withoutProperty = Diagnostic.Create(DescriptorOfTheAnalyzer("DG0006"), at, "C", "LossHessian", "Loss");
        Assert.Empty(await OffersAsync(document, withoutProperty));
    }

    // [GeneratedCode(tool, version)] on generated members: the tool is the name the DG0006 check and the fix use to
    // recognise DerivGen's own members, and the version is the build's (Version in Directory.Build.props), without the
    // "+commit" metadata the SDK may add to the informational version.
    [Fact]
    public void GeneratedMembersCarryTheToolNameAndTheBuildVersion()
    {
        using LoadedAssembly assembly = WorkspaceHarness.CompileWithGenerator("""
            using DerivGen;
            public static partial class C
            {
                [Differentiate]
                public static double F(double x) => x * x;
            }
            """);
        Type type = assembly.Assembly.GetType("C")!;
        var stamps = type.GetMethods(BindingFlags.Public | BindingFlags.Static)
            .Where(m => m.Name is "FGradient" or "FHessian")
            .Select(m => m.GetCustomAttribute<GeneratedCodeAttribute>())
            .ToList();
        Assert.Equal(2, stamps.Count);

        string version = BuildVersion();
        Assert.DoesNotContain("+", version, StringComparison.Ordinal);
        Assert.All(stamps, s =>
        {
            Assert.NotNull(s);
            Assert.Equal(Generator.Model.GeneratedNames.ToolName, s!.Tool);
            Assert.Equal("DerivGen", s.Tool);
            Assert.Equal(version, s.Version);
        });
    }

    /// <summary>The Version property of Directory.Build.props at the repository's root.</summary>
    private static string BuildVersion()
    {
        DirectoryInfo? directory = new(AppContext.BaseDirectory);
        while (directory is not null && !File.Exists(Path.Combine(directory.FullName, "DerivGen.sln")))
        {
            directory = directory.Parent;
        }

        Assert.NotNull(directory);
        string props = File.ReadAllText(Path.Combine(directory!.FullName, "Directory.Build.props"));
        Match match = Regex.Match(props, "<Version>([^<]+)</Version>");
        Assert.True(match.Success, "Directory.Build.props sets no Version");
        return match.Groups[1].Value.Trim();
    }

    private static DiagnosticDescriptor DescriptorOfTheAnalyzer(string id) =>
        new DerivativeAnalyzer().SupportedDiagnostics.Single(d => d.Id == id);

    private static async Task<ImmutableArray<Diagnostic>> AnalyzerDiagnosticsAsync(Document document)
    {
        Compilation compilation = (await document.Project.GetCompilationAsync())!;
        return await compilation.WithAnalyzers(ImmutableArray.Create<DiagnosticAnalyzer>(new DerivativeAnalyzer())).GetAnalyzerDiagnosticsAsync();
    }

    private static async Task<IReadOnlyList<CodeAction>> OffersAsync(Document document, Diagnostic diagnostic)
    {
        var actions = new List<CodeAction>();
        var context = new CodeFixContext(document, diagnostic, (action, _) => actions.Add(action), CancellationToken.None);
        await new RenameCollidingMemberCodeFix().RegisterCodeFixesAsync(context);
        return actions;
    }
}
