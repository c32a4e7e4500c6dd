using System;
using System.Collections.Generic;
using System.Collections.Immutable;
using System.IO;
using System.Linq;
using System.Text;
using DerivGen.Generator;
using Microsoft.CodeAnalysis;
using Microsoft.CodeAnalysis.CSharp;
using Xunit;

namespace DerivGen.Tests.Infrastructure;

/// <summary>
/// Runs <see cref="DerivativeGenerator"/> in-process over compilations built from source strings, checks that it
/// threw nothing and that the generated code compiles without a single error or warning, and loads the result so
/// that a test can call the generated methods.
/// </summary>
internal static class GeneratorHarness
{
    /// <summary>C# as the generator's users write it: latest language version, XML doc comments parsed and
    /// diagnosed (so a malformed doc comment in generated code is a warning and fails the test).</summary>
    public static readonly CSharpParseOptions ParseOptions =
        new(LanguageVersion.Latest, DocumentationMode.Diagnose);

    private static readonly Lazy<ImmutableArray<MetadataReference>> LazyReferences = new(LoadReferences);

    /// <summary>The running runtime's framework assemblies plus DerivGen.dll (the attribute).</summary>
    public static ImmutableArray<MetadataReference> References => LazyReferences.Value;

    /// <summary>Path of the attribute assembly the test compilations reference.</summary>
    public static string AttributeAssemblyPath => typeof(DifferentiateAttribute).Assembly.Location;

    private static ImmutableArray<MetadataReference> LoadReferences()
    {
        // Only the shared framework's assemblies (the directory System.Private.CoreLib lives in), not the test
        // host's own dependencies (Roslyn, xunit...), which user code never sees.
        string frameworkDir = Path.GetDirectoryName(typeof(object).Assembly.Location)!;
        string tpa = (string)AppContext.GetData("TRUSTED_PLATFORM_ASSEMBLIES")!;
        var paths = tpa.Split(Path.PathSeparator, StringSplitOptions.RemoveEmptyEntries)
            .Where(p => string.Equals(Path.GetDirectoryName(p), frameworkDir, StringComparison.Ordinal))
            .Append(AttributeAssemblyPath)
            .Distinct(StringComparer.Ordinal)
            .OrderBy(p => p, StringComparer.Ordinal);
        return paths.Select(p => (MetadataReference)MetadataReference.CreateFromFile(p)).ToImmutableArray();
    }

    /// <summary>A library compilation of the given sources (one syntax tree each, named Source0.cs, Source1.cs, ...).</summary>
    public static CSharpCompilation CreateCompilation(params string[] sources) =>
        CSharpCompilation.Create(
            "DerivGenTestInput",
            sources.Select((s, i) => CSharpSyntaxTree.ParseText(s, ParseOptions, path: $"Source{i}.cs", encoding: Encoding.UTF8)),
            References,
            new CSharpCompilationOptions(
                OutputKind.DynamicallyLinkedLibrary,
                nullableContextOptions: NullableContextOptions.Enable,
                optimizationLevel: OptimizationLevel.Release,
                deterministic: true));

    /// <summary>A driver holding one fresh generator instance, with step tracking on (for the incremental tests).</summary>
    public static GeneratorDriver CreateDriver() =>
        CSharpGeneratorDriver.Create(
            new[] { new DerivativeGenerator().AsSourceGenerator() },
            parseOptions: ParseOptions,
            driverOptions: new GeneratorDriverOptions(IncrementalGeneratorOutputKind.None, trackIncrementalGeneratorSteps: true));

    /// <summary>
    /// Runs the generator over <paramref name="sources"/>, asserts the generator threw nothing and reported nothing,
    /// and that the output compilation has no error or warning (CS1591, a missing doc comment on the test's own
    /// public members, is the one exception, and only outside generated files).
    /// </summary>
    public static GeneratedRun Run(params string[] sources)
    {
        CSharpCompilation input = CreateCompilation(sources);
        AssertNoDiagnostics(input.GetDiagnostics(), "the test's own source (before generation)", allowMissingDocs: true);

        GeneratorDriver driver = CreateDriver().RunGeneratorsAndUpdateCompilation(input, out Compilation output, out var driverDiagnostics);
        GeneratorDriverRunResult runResult = driver.GetRunResult();
        GeneratorRunResult result = Assert.Single(runResult.Results);
        Assert.True(result.Exception is null, $"The generator threw: {result.Exception}");
        AssertNoDiagnostics(driverDiagnostics, "the generator driver", allowMissingDocs: false);
        AssertNoDiagnostics(result.Diagnostics, "the generator", allowMissingDocs: false);
        AssertNoDiagnostics(output.GetDiagnostics(), "the compilation with generated code", allowMissingDocs: true);
        return new GeneratedRun(output, result);
    }

    /// <summary>Runs the generator and loads the output; dispose the result to unload it.</summary>
    public static CompiledAssembly CompileAndLoad(params string[] sources) => Run(sources).Load();

    internal static void AssertNoDiagnostics(IEnumerable<Diagnostic> diagnostics, string what, bool allowMissingDocs)
    {
        var bad = diagnostics
            .Where(d => d.Severity >= DiagnosticSeverity.Warning)
            .Where(d => !(allowMissingDocs && d.Id == "CS1591" && !IsGenerated(d.Location.SourceTree)))
            .ToList();
        if (bad.Count == 0)
        {
            return;
        }

        var message = new StringBuilder($"{bad.Count} diagnostic(s) in {what}:\n");
        foreach (Diagnostic d in bad)
        {
            message.Append("  ").Append(d.ToString()).Append('\n');
            if (d.Location.SourceTree is { } tree && IsGenerated(tree))
            {
                int line = d.Location.GetLineSpan().StartLinePosition.Line;
                string[] lines = tree.GetText().ToString().Split('\n');
                message.Append("    > ").Append(lines[line]).Append('\n');
            }
        }

        Assert.Fail(message.ToString());
    }

    private static bool IsGenerated(SyntaxTree? tree) =>
        tree is not null && tree.FilePath.EndsWith(".g.cs", StringComparison.Ordinal);
}

/// <summary>The outcome of one generator run that passed the harness's checks.</summary>
internal sealed class GeneratedRun
{
    public GeneratedRun(Compilation output, GeneratorRunResult result)
    {
        Output = output;
        Result = result;
    }

    public Compilation Output { get; }

    public GeneratorRunResult Result { get; }

    /// <summary>Hint names of every generated file, ordinal order.</summary>
    public IReadOnlyList<string> HintNames =>
        Result.GeneratedSources.Select(s => s.HintName).OrderBy(h => h, StringComparer.Ordinal).ToList();

    /// <summary>The text the generator added under <paramref name="hintName"/> (e.g. "Ns.Type.Method.g.cs").</summary>
    public string Source(string hintName)
    {
        var match = Result.GeneratedSources.Where(s => s.HintName == hintName).ToList();
        Assert.True(match.Count == 1,
            $"Expected one generated file named '{hintName}'; the generator produced: {string.Join(", ", HintNames)}");
        return match[0].SourceText.ToString();
    }

    /// <summary>Emits the output compilation to memory and loads it into a collectible load context.</summary>
    public CompiledAssembly Load()
    {
        using var pe = new MemoryStream();
        var emit = Output.Emit(pe);
        GeneratorHarness.AssertNoDiagnostics(emit.Diagnostics, "emit", allowMissingDocs: true);
        Assert.True(emit.Success, "Emit failed.");
        pe.Position = 0;
        return new CompiledAssembly(pe);
    }
}
