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
/// return: with code, with a DG diagnostic, or with a generated <c>#error</c> that names the stack limit.
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
        });
    }
}
