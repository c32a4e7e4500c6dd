using System.Collections.Immutable;
using System.Linq;
using System.Text;
using DerivGen.Generator;
using DerivGen.Generator.Diagnostics;
using DerivGen.Tests.Infrastructure;
using Microsoft.CodeAnalysis;
using Microsoft.CodeAnalysis.CSharp;
using Microsoft.CodeAnalysis.Diagnostics;
using Xunit;

namespace DerivGen.Tests.Robustness;

/// <summary>
/// Inputs that once overflowed a 1 MB stack inside the generator, crashing the process (found by the hostile-input
/// tests). On a thread with the 1 MB stack an editor's worker thread may have, the generator and the analyzer must now
/// return: with code, with a DG diagnostic, or with a generated <c>#error</c> that names the stack limit — never with
/// nothing at all.
/// </summary>
public sealed class DeepInputTests
{
    [Fact]
    public void LongBinaryChain() => OnSmallStack(string.Join(" + ", Enumerable.Repeat("x", 2_000)), expression: true);

    [Fact]
    public void FiveThousandStatements()
    {
        var body = new StringBuilder("{ double s = x;\n");
        for (int i = 0; i < 5000; i++)
        {
            body.Append("s = s * 0.5 + x;\n");
        }

        OnSmallStack(body.Append("return s; }").ToString(), expression: false);
    }

    [Fact]
    public void NestedCalls() => OnSmallStack(string.Concat(Enumerable.Repeat("Math.Sin(", 300)) + "x" + new string(')', 300), expression: true);

    // Deeper nesting used to end with neither code nor a DG diagnostic, and from about 410 nested calls the compiler's own
    // operation-tree builder overflowed the 1 MB stack (a crash of the test host). Now the depth is checked on the
    // syntax first: DG0001 from the analyzer, and nothing asked of the compiler that could overflow.
    [Theory]
    [InlineData(250)]
    [InlineData(399)]
    [InlineData(410)]
    [InlineData(1000)]
    public void DeeplyNestedCalls(int depth) =>
        OnSmallStack(string.Concat(Enumerable.Repeat("Math.Sin(", depth)) + "x" + new string(')', depth), expression: true);

    [Theory]
    [InlineData(299)]
    [InlineData(300)]
    [InlineData(2000)]
    public void DeeplyNestedParentheses(int depth) => OnSmallStack(new string('(', depth) + "x" + new string(')', depth), expression: true);

    [Fact]
    public async System.Threading.Tasks.Task NestingBeyondTheLimitIsDG0001OnAnyStack()
    {
        // The limit is a property of the source, not of the thread: the analyzer on its own (large) stack refuses the
        // same method, on the method's name.
        string source = "using System;\nusing DerivGen;\npublic static partial class Bug { [Differentiate] public static double M(double x) => "
            + string.Concat(Enumerable.Repeat("Math.Sin(", 410)) + "x" + new string(')', 410) + "; }";
        ImmutableArray<Diagnostic> analyzer = await HostileInputTests.Compile(new[] { source })
            .WithAnalyzers(ImmutableArray.Create<DiagnosticAnalyzer>(new DerivativeAnalyzer())).GetAnalyzerDiagnosticsAsync();
        Diagnostic error = Assert.Single(analyzer);
        Assert.Equal("DG0001", error.Id);
        Assert.Contains("nested more than 300 levels deep", error.GetMessage(System.Globalization.CultureInfo.InvariantCulture), System.StringComparison.Ordinal);
    }

    private static void OnSmallStack(string body, bool expression)
    {
        string source = "using System;\nusing DerivGen;\npublic static partial class Bug { [Differentiate] public static double M(double x) "
            + (expression ? "=> " + body + ";" : body) + " }";
        CSharpCompilation compilation = HostileInputTests.Compile(new[] { source });
        HostileInputTests.OnSmallStack(() =>
        {
            GeneratorDriver driver = CSharpGeneratorDriver.Create(new[] { new DerivativeGenerator().AsSourceGenerator() }, parseOptions: GeneratorHarness.ParseOptions)
                .RunGeneratorsAndUpdateCompilation(compilation, out _, out ImmutableArray<Diagnostic> driverDiagnostics);
            GeneratorRunResult result = Assert.Single(driver.GetRunResult().Results);
            Assert.Null(result.Exception);
            Assert.DoesNotContain(driverDiagnostics, d => d.Id == "CS8785");
            foreach (GeneratedSourceResult generated in result.GeneratedSources.Where(s => s.SourceText.ToString().Contains("#error", System.StringComparison.Ordinal)))
            {
                Assert.Contains("InsufficientExecutionStack", generated.SourceText.ToString(), System.StringComparison.Ordinal);
            }

            ImmutableArray<Diagnostic> analyzer = compilation.WithAnalyzers(ImmutableArray.Create<DiagnosticAnalyzer>(new DerivativeAnalyzer()))
                .GetAnalyzerDiagnosticsAsync().GetAwaiter().GetResult();
            Assert.DoesNotContain(analyzer, d => d.Id == "AD0001");

            // Never silent: generated code, a generated #error, or a DG error from the analyzer.
            Assert.True(result.GeneratedSources.Length > 0 || analyzer.Any(d => d.Id.StartsWith("DG", System.StringComparison.Ordinal) && d.Severity == DiagnosticSeverity.Error),
                "neither code, nor an #error, nor a DG error");
        });
    }
}
