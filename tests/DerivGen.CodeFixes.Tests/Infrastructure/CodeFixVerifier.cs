using System;
using System.Collections.Generic;
using System.Threading.Tasks;
using DerivGen.Generator;
using DerivGen.Generator.Diagnostics;
using Microsoft.CodeAnalysis.CodeFixes;
using Microsoft.CodeAnalysis.CSharp.Testing;
using Microsoft.CodeAnalysis.Testing;

namespace DerivGen.CodeFixes.Tests.Infrastructure;

/// <summary>
/// Runs one code fix through Microsoft.CodeAnalysis.CSharp.CodeFix.Testing: DerivGen's own analyzer reports the
/// diagnostics marked in the source (<c>{|DG0002:span|}</c>), the fix is applied, and the result must equal the
/// expected text, have no diagnostic left and no compiler error. DerivGen's generator runs on both states, so code in
/// the fixed source that calls the generated <c>MGradient</c>/<c>MHessian</c> compiles only if the fix really lets
/// DerivGen generate them.
/// </summary>
/// <remarks>
/// Reference assemblies as in tests/DerivGen.Tests (AnalyzerVerifier): an empty <c>ReferenceAssemblies("net10.0")</c>
/// (nothing is resolved or downloaded) plus the running framework's assemblies and DerivGen.dll.
/// </remarks>
internal static class CodeFixVerifier<TCodeFix>
    where TCodeFix : CodeFixProvider, new()
{
    private static readonly ReferenceAssemblies NoDownload = new("net10.0");

    /// <summary>Applies the code action with <paramref name="equivalenceKey"/> (or the first one) to every marked
    /// diagnostic, one at a time, and compares with <paramref name="fixedSource"/>.</summary>
    public static Task VerifyAsync(string source, string fixedSource, string? equivalenceKey = null, int? codeActionIndex = null,
        int? iterations = null, bool runGenerator = true)
    {
        Test test = Create(source, fixedSource, equivalenceKey, codeActionIndex, iterations);
        test.RunGenerator = runGenerator;
        return test.RunAsync();
    }

    /// <summary>Checks that no fix is offered for the marked diagnostics (the source must stay as it is).</summary>
    public static Task VerifyNoFixAsync(string source) => Create(source, source, null, null, null).RunAsync();

    /// <summary>As <see cref="VerifyAsync"/> through the fix's "fix all in document" provider.</summary>
    public static Task VerifyFixAllAsync(string source, string fixedSource, string equivalenceKey)
    {
        Test test = Create(source, fixedSource, equivalenceKey, null, null);
        test.CodeFixTestBehaviors = CodeFixTestBehaviors.SkipFixAllInProjectCheck | CodeFixTestBehaviors.SkipFixAllInSolutionCheck;
        test.NumberOfFixAllInDocumentIterations = 1;
        return test.RunAsync();
    }

    private static Test Create(string source, string fixedSource, string? equivalenceKey, int? codeActionIndex, int? iterations)
    {
        var test = new Test
        {
            TestCode = source,
            FixedCode = fixedSource,
            ReferenceAssemblies = NoDownload,
            CodeActionEquivalenceKey = equivalenceKey,
            CodeActionIndex = codeActionIndex,
            // The generator's output is not compared here (tests/DerivGen.Tests does that); it only has to compile.
            TestBehaviors = TestBehaviors.SkipGeneratedSourcesCheck,
        };
        if (iterations is { } n)
        {
            test.NumberOfIncrementalIterations = n;
            test.NumberOfFixAllIterations = n;
        }

        test.TestState.AdditionalReferences.AddRange(TestReferences.All);
        test.FixedState.AdditionalReferences.AddRange(TestReferences.All);
        return test;
    }

    private sealed class Test : CSharpCodeFixTest<DerivativeAnalyzer, TCodeFix, DefaultVerifier>
    {
        public bool RunGenerator { get; set; } = true;

        protected override IEnumerable<Type> GetSourceGenerators() => RunGenerator ? [typeof(DerivativeGenerator)] : [];
    }
}
