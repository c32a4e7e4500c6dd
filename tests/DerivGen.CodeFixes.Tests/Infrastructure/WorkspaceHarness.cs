using System;
using System.Collections.Generic;
using System.Collections.Immutable;
using System.IO;
using System.Linq;
using System.Reflection;
using System.Runtime.Loader;
using System.Text;
using System.Threading;
using System.Threading.Tasks;
using DerivGen.Generator;
using DerivGen.Generator.Diagnostics;
using Microsoft.CodeAnalysis;
using Microsoft.CodeAnalysis.CodeActions;
using Microsoft.CodeAnalysis.CodeFixes;
using Microsoft.CodeAnalysis.CodeRefactorings;
using Microsoft.CodeAnalysis.CSharp;
using Microsoft.CodeAnalysis.Diagnostics;
using Microsoft.CodeAnalysis.Text;
using Xunit;

namespace DerivGen.CodeFixes.Tests.Infrastructure;

/// <summary>
/// A Roslyn workspace around one source file, for what the CodeFix testing package does not cover: running a
/// refactoring (which has no diagnostic), applying a fix to get the fixed text, and compiling that text with DerivGen's
/// generator into an assembly a test can call.
/// </summary>
internal static class WorkspaceHarness
{
    private static readonly CSharpParseOptions ParseOptions = new(LanguageVersion.Latest);

    public static Document CreateDocument(string source)
    {
        var workspace = new AdhocWorkspace();
        var projectId = ProjectId.CreateNewId();
        Solution solution = workspace.CurrentSolution.AddProject(ProjectInfo.Create(
            projectId, VersionStamp.Create(), "FixTest", "FixTest", LanguageNames.CSharp,
            compilationOptions: new CSharpCompilationOptions(OutputKind.DynamicallyLinkedLibrary, nullableContextOptions: NullableContextOptions.Enable),
            parseOptions: ParseOptions,
            metadataReferences: TestReferences.All));
        DocumentId documentId = DocumentId.CreateNewId(projectId);
        solution = solution.AddDocument(documentId, "Test.cs", SourceText.From(source, Encoding.UTF8));
        Assert.True(workspace.TryApplyChanges(solution));
        return workspace.CurrentSolution.GetDocument(documentId)!;
    }

    /// <summary>The refactorings <paramref name="provider"/> offers with the caret at the first occurrence of
    /// <paramref name="caretAt"/> in the document.</summary>
    public static async Task<IReadOnlyList<CodeAction>> RefactoringsAsync(CodeRefactoringProvider provider, Document document, string caretAt)
    {
        string text = (await document.GetTextAsync()).ToString();
        int position = text.IndexOf(caretAt, StringComparison.Ordinal);
        Assert.True(position >= 0, $"'{caretAt}' is not in the source");
        var actions = new List<CodeAction>();
        var context = new CodeRefactoringContext(document, new TextSpan(position + 1, 0), actions.Add, CancellationToken.None);
        await provider.ComputeRefactoringsAsync(context);
        return actions;
    }

    /// <summary>DerivGen's analyzer diagnostics on the document and, for those <paramref name="provider"/> fixes,
    /// the code actions it offers.</summary>
    public static async Task<IReadOnlyList<(Diagnostic Diagnostic, CodeAction Action)>> FixesAsync(CodeFixProvider provider, Document document)
    {
        Compilation compilation = (await document.Project.GetCompilationAsync())!;
        ImmutableArray<Diagnostic> diagnostics = await compilation
            .WithAnalyzers(ImmutableArray.Create<DiagnosticAnalyzer>(new DerivativeAnalyzer()))
            .GetAnalyzerDiagnosticsAsync();
        var offers = new List<(Diagnostic, CodeAction)>();
        foreach (Diagnostic diagnostic in diagnostics.Where(d => provider.FixableDiagnosticIds.Contains(d.Id)))
        {
            var context = new CodeFixContext(document, diagnostic, (action, _) => offers.Add((diagnostic, action)), CancellationToken.None);
            await provider.RegisterCodeFixesAsync(context);
        }

        return offers;
    }

    /// <summary>Applies a code action as an editor would (with its simplification and formatting) and returns the
    /// new text of the document.</summary>
    public static async Task<string> ApplyAsync(CodeAction action, Document document)
    {
        ImmutableArray<CodeActionOperation> operations = await action.GetOperationsAsync(CancellationToken.None);
        Solution changed = Assert.Single(operations.OfType<ApplyChangesOperation>()).ChangedSolution;
        return (await changed.GetDocument(document.Id)!.GetTextAsync()).ToString();
    }

    /// <summary>
    /// Compiles <paramref name="source"/> with DerivGen's generator, asserts that neither the generator nor the
    /// compiler reports an error or warning (CS1591 on the test's own code aside), and loads the assembly.
    /// </summary>
    public static LoadedAssembly CompileWithGenerator(string source)
    {
        CSharpCompilation input = CSharpCompilation.Create(
            "FixedSource", [CSharpSyntaxTree.ParseText(source, ParseOptions, path: "Fixed.cs", encoding: Encoding.UTF8)], TestReferences.All,
            new CSharpCompilationOptions(OutputKind.DynamicallyLinkedLibrary, nullableContextOptions: NullableContextOptions.Enable));
        GeneratorDriver driver = CSharpGeneratorDriver.Create([new DerivativeGenerator().AsSourceGenerator()], parseOptions: ParseOptions)
            .RunGeneratorsAndUpdateCompilation(input, out Compilation output, out ImmutableArray<Diagnostic> generatorDiagnostics);
        GeneratorRunResult run = Assert.Single(driver.GetRunResult().Results);
        Assert.Null(run.Exception);
        Assert.Empty(generatorDiagnostics);
        Assert.NotEmpty(run.GeneratedSources);

        using var image = new MemoryStream();
        var emit = output.Emit(image);
        var problems = emit.Diagnostics.Where(d => d.Severity >= DiagnosticSeverity.Warning && d.Id != "CS1591").ToList();
        Assert.True(emit.Success && problems.Count == 0, "The fixed source does not compile cleanly:\n" + string.Join("\n", problems));
        image.Position = 0;
        return new LoadedAssembly(image);
    }
}

/// <summary>An assembly compiled by the harness, in its own collectible load context.</summary>
internal sealed class LoadedAssembly : IDisposable
{
    private readonly AssemblyLoadContext _context = new("DerivGenCodeFixTest", isCollectible: true);

    public LoadedAssembly(Stream image) => Assembly = _context.LoadFromStream(image);

    public Assembly Assembly { get; }

    /// <summary>A static method bound to a delegate type of the test (generated methods take spans, which
    /// reflection's Invoke cannot pass).</summary>
    public TDelegate Static<TDelegate>(string typeName, string methodName)
        where TDelegate : Delegate
    {
        Type type = Assembly.GetType(typeName) ?? throw new Xunit.Sdk.XunitException($"No type {typeName}");
        Type[] parameters = typeof(TDelegate).GetMethod("Invoke")!.GetParameters().Select(p => p.ParameterType).ToArray();
        MethodInfo method = type.GetMethod(methodName, BindingFlags.Public | BindingFlags.Static, parameters)
            ?? throw new Xunit.Sdk.XunitException($"No static {typeName}.{methodName} matching {typeof(TDelegate).Name}");
        return (TDelegate)method.CreateDelegate(typeof(TDelegate));
    }

    public void Dispose() => _context.Unload();
}
