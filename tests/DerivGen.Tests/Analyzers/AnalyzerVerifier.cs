using System.Threading.Tasks;
using DerivGen.Generator.Diagnostics;
using DerivGen.Tests.Infrastructure;
using Microsoft.CodeAnalysis.CSharp.Testing;
using Microsoft.CodeAnalysis.Testing;

namespace DerivGen.Tests.Analyzers;

/// <summary>
/// Runs <see cref="DerivativeAnalyzer"/> through Microsoft.CodeAnalysis.CSharp.Analyzer.Testing on a source whose
/// expected diagnostics are marked inline as <c>{|DG0001:span|}</c>.
/// </summary>
/// <remarks>
/// Reference assemblies: the testing library's presets (ReferenceAssemblies.Net.*) download a targeting pack from
/// the package registry at test time. Instead we give it an empty <c>ReferenceAssemblies("net10.0")</c> (no package,
/// so nothing is resolved or downloaded) and pass the running runtime's own framework assemblies plus DerivGen.dll as
/// additional references, the same set the compile-and-run tests use. Verified to work offline on the build machine.
/// </remarks>
internal static class AnalyzerVerifier
{
    private static readonly ReferenceAssemblies NoDownload = new("net10.0");

    /// <summary>Checks the diagnostics and their spans. The testing library's extra pass that wraps the source in
    /// <c>#pragma warning disable</c> is skipped here and done once, on purpose, in
    /// <see cref="VerifySuppressibleAsync"/>, so a suppression bug fails one named test rather than all of them.</summary>
    public static Task VerifyAsync(string source, params DiagnosticResult[] expected) =>
        RunAsync(source, TestBehaviors.SkipSuppressionCheck, expected);

    /// <summary>As <see cref="VerifyAsync(string, DiagnosticResult[])"/> for a compilation of several files.</summary>
    public static Task VerifyAsync(string[] sources, params DiagnosticResult[] expected)
    {
        var test = new CSharpAnalyzerTest<DerivativeAnalyzer, DefaultVerifier>
        {
            ReferenceAssemblies = NoDownload,
            TestBehaviors = TestBehaviors.SkipSuppressionCheck,
        };
        foreach (string source in sources)
        {
            test.TestState.Sources.Add(source);
        }

        test.TestState.AdditionalReferences.AddRange(GeneratorHarness.References);
        test.ExpectedDiagnostics.AddRange(expected);
        return test.RunAsync();
    }

    /// <summary>As <see cref="VerifyAsync(string, DiagnosticResult[])"/>, and also checks that <c>#pragma warning disable</c> silences every
    /// diagnostic (the library's suppression pass).</summary>
    public static Task VerifySuppressibleAsync(string source, params DiagnosticResult[] expected) =>
        RunAsync(source, TestBehaviors.None, expected);

    private static Task RunAsync(string source, TestBehaviors behaviors, DiagnosticResult[] expected)
    {
        var test = new CSharpAnalyzerTest<DerivativeAnalyzer, DefaultVerifier>
        {
            TestCode = source,
            ReferenceAssemblies = NoDownload,
            TestBehaviors = behaviors,
        };
        test.TestState.AdditionalReferences.AddRange(GeneratorHarness.References);
        test.ExpectedDiagnostics.AddRange(expected);
        return test.RunAsync();
    }

    public static DiagnosticResult Diagnostic(string id) => new DiagnosticResult(id, Microsoft.CodeAnalysis.DiagnosticSeverity.Error);
}
