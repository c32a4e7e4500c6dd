using System;
using DerivGen.Tests.Infrastructure;
using Microsoft.CodeAnalysis;
using Xunit;

namespace DerivGen.Tests.Minimization;

/// <summary>
/// Compiles sources written as a user writes them — code that calls the generated <c>MGradient</c>/<c>MHessian</c>
/// and DerivGen's minimisers — through the generator, and loads the result. Unlike <see cref="CompiledFixture"/> it
/// cannot check the sources alone before generation (they need the generated members); it checks that the
/// generator threw and reported nothing and that the compilation with the generated code has no error or warning.
/// </summary>
public abstract class UserCodeFixture : IDisposable
{
    protected UserCodeFixture(params string[] sources)
    {
        var input = GeneratorHarness.CreateCompilation(sources);
        var driver = GeneratorHarness.CreateDriver().RunGeneratorsAndUpdateCompilation(input, out Compilation output, out var driverDiagnostics);
        GeneratorRunResult result = Assert.Single(driver.GetRunResult().Results);
        Assert.True(result.Exception is null, $"The generator threw: {result.Exception}");
        GeneratorHarness.AssertNoDiagnostics(driverDiagnostics, "the generator driver", allowMissingDocs: false);
        GeneratorHarness.AssertNoDiagnostics(result.Diagnostics, "the generator", allowMissingDocs: false);
        GeneratorHarness.AssertNoDiagnostics(output.GetDiagnostics(), "the compilation with generated code", allowMissingDocs: true);
        Run = new GeneratedRun(output, result);
        Assembly = Run.Load();
    }

    internal GeneratedRun Run { get; }

    internal CompiledAssembly Assembly { get; }

    public void Dispose() => Assembly.Dispose();
}
