using System;
using System.Collections.Generic;
using System.Collections.Immutable;
using System.Linq;
using System.Text;
using System.Threading;
using System.Threading.Tasks;
using DerivGen.Generator;
using DerivGen.Generator.Diagnostics;
using DerivGen.Tests.Infrastructure;
using Microsoft.CodeAnalysis;
using Microsoft.CodeAnalysis.CSharp;
using Microsoft.CodeAnalysis.Diagnostics;
using Xunit;
using Xunit.Abstractions;

namespace DerivGen.Tests.Robustness;

/// <summary>
/// Hostile and odd input for the generator and the analyzer (common practice for compiler components, which see every
/// keystroke): syntax errors, a missing attribute assembly, wrong types, huge literals, deep nesting, long bodies, Unicode
/// and verbatim identifiers, names that collide with what the generator generates, generic, nested and file-local types,
/// partial methods, top-level programs. For each input: the generator throws nothing (no CS8785), the analyzer throws
/// nothing (no AD0001, no DG0010), and every <c>[Differentiate]</c> method of code that compiles either gets generated
/// code that compiles without warnings or a DG error. Deep inputs run on a thread with a 1 MB stack, like the compiler's.
/// </summary>
public sealed class HostileInputTests
{
    private static int _tried;
    private readonly ITestOutputHelper _output;

    public HostileInputTests(ITestOutputHelper output) => _output = output;

    private const string Usings = "using System;\nusing DerivGen;\n";

    /// <summary>Runs generator and analyzer over the sources and checks the contract above; returns what happened.</summary>
    internal static Outcome Check(string what, string[] sources, bool withAttributeReference = true, OutputKind kind = OutputKind.DynamicallyLinkedLibrary,
        bool requireOutcome = true) => Check(what, Compile(sources, withAttributeReference, kind), requireOutcome);

    /// <summary>The compilation of the sources, parsed (on the calling thread).</summary>
    internal static CSharpCompilation Compile(string[] sources, bool withAttributeReference = true, OutputKind kind = OutputKind.DynamicallyLinkedLibrary)
    {
        CSharpCompilation compilation = GeneratorHarness.CreateCompilation(sources)
            .WithOptions(new CSharpCompilationOptions(kind, nullableContextOptions: NullableContextOptions.Enable));
        if (!withAttributeReference)
        {
            compilation = compilation.RemoveReferences(compilation.References.Where(r => r.Display?.EndsWith("DerivGen.dll", StringComparison.Ordinal) == true));
        }

        foreach (SyntaxTree tree in compilation.SyntaxTrees)
        {
            tree.GetRoot();
        }

        return compilation;
    }

    internal static Outcome Check(string what, CSharpCompilation compilation, bool requireOutcome = true)
    {
        Interlocked.Increment(ref _tried);

        GeneratorDriver driver = CSharpGeneratorDriver.Create(new[] { new DerivativeGenerator().AsSourceGenerator() }, parseOptions: GeneratorHarness.ParseOptions)
            .RunGeneratorsAndUpdateCompilation(compilation, out Compilation output, out ImmutableArray<Diagnostic> driverDiagnostics);
        GeneratorRunResult result = Assert.Single(driver.GetRunResult().Results);
        Assert.True(result.Exception is null, $"{what}: the generator threw: {result.Exception}");
        Assert.DoesNotContain(driverDiagnostics, d => d.Id == "CS8785");

        ImmutableArray<Diagnostic> analyzer = compilation
            .WithAnalyzers(ImmutableArray.Create<DiagnosticAnalyzer>(new DerivativeAnalyzer()))
            .GetAnalyzerDiagnosticsAsync().GetAwaiter().GetResult();
        Assert.True(!analyzer.Any(d => d.Id is "AD0001" || d.Id == DiagnosticDescriptors.InternalError.Id),
            $"{what}: the analyzer failed: {string.Join("; ", analyzer.Where(d => d.Id is "AD0001" or "DG0010"))}");

        var outcome = new Outcome(result.GeneratedSources.Select(s => s.HintName).ToList(), analyzer.Where(d => d.Id.StartsWith("DG", StringComparison.Ordinal)).ToList());
        bool inputCompiles = !compilation.GetDiagnostics().Any(d => d.Severity == DiagnosticSeverity.Error);
        var generatedProblems = output.GetDiagnostics()
            .Where(d => d.Severity >= DiagnosticSeverity.Warning && d.Location.SourceTree?.FilePath.EndsWith(".g.cs", StringComparison.Ordinal) == true)
            .ToList();
        Assert.True(generatedProblems.Count == 0 || !inputCompiles,
            $"{what}: the generated code does not compile cleanly:\n{string.Join("\n", generatedProblems.Take(5))}");
        if (inputCompiles && requireOutcome)
        {
            foreach (MethodDeclarationSyntaxInfo method in MarkedMethods(compilation))
            {
                bool generated = outcome.HintNames.Any(h => h.EndsWith("." + method.Name + ".g.cs", StringComparison.Ordinal));
                bool refused = outcome.Diagnostics.Any(d => d.Severity == DiagnosticSeverity.Error && method.Span.Contains(d.Location.SourceSpan) && d.Location.SourceTree == method.Tree);
                Assert.True(generated || refused, $"{what}: '{method.Name}' got neither generated code nor a DG error");
            }
        }

        return outcome;
    }

    internal sealed record Outcome(List<string> HintNames, List<Diagnostic> Diagnostics)
    {
        public bool Has(string id) => Diagnostics.Any(d => d.Id == id);
    }

    private sealed record MethodDeclarationSyntaxInfo(string Name, Microsoft.CodeAnalysis.Text.TextSpan Span, SyntaxTree Tree);

    /// <summary>Methods carrying DerivGen's own attribute (resolved, not just by name).</summary>
    private static IEnumerable<MethodDeclarationSyntaxInfo> MarkedMethods(Compilation compilation) =>
        compilation.SyntaxTrees.SelectMany(t =>
        {
            SemanticModel model = compilation.GetSemanticModel(t);
            return t.GetRoot().DescendantNodes().OfType<Microsoft.CodeAnalysis.CSharp.Syntax.MethodDeclarationSyntax>()
                .Where(m => model.GetDeclaredSymbol(m)?.GetAttributes().Any(a => a.AttributeClass?.ToDisplayString() == "DerivGen.DifferentiateAttribute") == true)
                .Select(m => new MethodDeclarationSyntaxInfo(m.Identifier.ValueText, m.Span, t));
        });

    /// <summary>Runs <paramref name="action"/> on a thread with a 1 MB stack (the size csc gives its threads on 64-bit Windows, common practice).</summary>
    internal static void OnSmallStack(Action action) => OnStack(action, 1024 * 1024);

    internal static void OnStack(Action action, int stackBytes)
    {
        Exception? error = null;
        var thread = new Thread(() =>
        {
            try
            {
                action();
            }
            catch (Exception e)
            {
                error = e;
            }
        }, stackBytes);
        thread.Start();
        thread.Join();
        if (error is not null)
        {
            System.Runtime.ExceptionServices.ExceptionDispatchInfo.Capture(error).Throw();
        }
    }

    private static string Method(string signatureAndBody, string attribute = "[Differentiate]", string type = "public static partial class H") =>
        Usings + type + "\n{\n    " + attribute + "\n    " + signatureAndBody + "\n}\n";

    public static IEnumerable<object[]> Inputs()
    {
        // Syntax errors and half-written attributes.
        yield return new object[] { "missing semicolon", Method("public static double M(double x) { double y = x * x return y; }") };
        yield return new object[] { "unbalanced braces", Method("public static double M(double x) { if (x > 0) { return x; ") };
        yield return new object[] { "empty nameof", Method("public static double M(double x) => x;", "[Differentiate(nameof())]") };
        yield return new object[] { "int arguments", Method("public static double M(double x) => x;", "[Differentiate(1, 2)]") };
        yield return new object[] { "empty name", Method("public static double M(double x) => x;", "[Differentiate(\"\")]") };
        yield return new object[] { "Hessian not a bool", Method("public static double M(double x) => x;", "[Differentiate(Hessian = 3)]") };
        yield return new object[] { "attribute twice", Method("public static double M(double x) => x;", "[Differentiate, Differentiate]") };
        yield return new object[] { "attribute on nothing", Usings + "public static partial class H { [Differentiate] }" };
        yield return new object[] { "garbage", "[Differentiate] ) ) } double => ;; partial class { nameof(" };
        yield return new object[] { "empty file", "" };

        // Wrong types and shapes.
        yield return new object[] { "string return", Method("public static string M(double x) => x.ToString();") };
        yield return new object[] { "void return", Method("public static void M(double x) { }") };
        yield return new object[] { "decimal return", Method("public static decimal M(decimal x) => x * x;") };
        yield return new object[] { "decimal variable", Method("public static double M(decimal x, double y) => (double)x * y;", "[Differentiate(nameof(x))]") };
        yield return new object[] { "int variable", Method("public static double M(int n, double y) => n * y;", "[Differentiate(nameof(n))]") };
        yield return new object[] { "ref and out", Method("public static double M(ref double x, out double y) { y = x; return x * x; }") };
        yield return new object[] { "params array", Method("public static double M(double x, params double[] rest) => x * rest.Length;", "[Differentiate(nameof(x))]") };
        yield return new object[] { "generic method", Method("public static double M<T>(double x) => x * x;") };
        yield return new object[] { "async method", Method("public static async System.Threading.Tasks.Task<double> M(double x) { await System.Threading.Tasks.Task.Yield(); return x; }") };
        yield return new object[] { "iterator", Method("public static System.Collections.Generic.IEnumerable<double> M(double x) { yield return x; }") };
        yield return new object[] { "abstract method", Usings + "public abstract partial class H { [Differentiate] public abstract double M(double x); }" };
        yield return new object[] { "extern method", Usings + "public static partial class H { [Differentiate] public static extern double M(double x); }" };
        yield return new object[] { "interface default method", Usings + "public partial interface IH { [Differentiate] public static double M(double x) => x * x; }" };
        yield return new object[] { "struct", Usings + "public partial struct S { [Differentiate] public double M(double x) => x * x; }" };
        yield return new object[] { "readonly record struct", Usings + "public readonly partial record struct S(double K) { [Differentiate(nameof(x))] public double M(double x) => K * x * x; }" };
        yield return new object[] { "record class", Usings + "public partial record P(double K) { [Differentiate(nameof(x))] public double M(double x) => K * x * x; }" };
        yield return new object[] { "not partial", Usings + "public static class H { [Differentiate] public static double M(double x) => x * x; }" };
        yield return new object[] { "user type named Math", Usings + "namespace N { static class Math { public static double Sin(double x) => x; } public static partial class H { [Differentiate] public static double M(double x) => Math.Sin(x); } }" };
        yield return new object[] { "user DifferentiateAttribute elsewhere", "namespace Other { public sealed class DifferentiateAttribute : System.Attribute { } public static partial class H { [Differentiate] public static double M(double x) => x * x; } }" };

        // Huge and odd literals.
        yield return new object[] { "1e308", Method("public static double M(double x) => 1e308 * x * x;") };
        yield return new object[] { "1e309 (compile error)", Method("public static double M(double x) => 1e309 * x;") };
        yield return new object[] { "decimal literal", Method("public static double M(double x) => (double)(1e28m * 3m) * x;") };
        yield return new object[] { "decimal local", Method("public static double M(double x) { decimal m = 1e28m; return x * (double)m; }") };
        yield return new object[] { "MaxValue, Epsilon, NaN, infinities", Method("public static double M(double x) => double.MaxValue * x + double.Epsilon * x + double.NaN * 0.0 + 1.0 / 0.0 - double.NegativeInfinity;") };
        yield return new object[] { "negative zero and subnormal", Method("public static double M(double x) => -0.0 * x + 4.9e-324 * x * x;") };
        yield return new object[] { "long and hex literals", Method("public static double M(double x) => 0x7FFFFFFFFFFFFFFF * x + 0b1010 * x;") };
        yield return new object[] { "float overflow literal", Method("public static float M(float x) => 3.4e38f * x * x;") };

        // Identifiers.
        yield return new object[] { "verbatim parameters and locals", Method("public static double M(double @in, double @return) { double @var = @in * @return; return @var * @var; }") };
        yield return new object[] { "Unicode identifiers", Method("public static double Énergie(double λ, double μ₀) { double résumé = λ * μ₀; return résumé * résumé; }") };
        yield return new object[] { "Unicode escapes", Method("public static double \\u004D(double \\u0078) => x * \\u0078;") };
        yield return new object[] { "parameters named like generated ones", Method("public static double M(double value, double t1, double cosT1, double dValue_dT1) => Math.Cos(t1) * value * cosT1 + dValue_dT1;") };
        yield return new object[] { "locals named like generated ones", Method("public static double M(double x, double y) { double t1 = Math.Sin(x); double value = t1 * y; double sinX = value * value; double xAdjoint = sinX + x; return xAdjoint * t1; }") };
        yield return new object[] { "straight-line locals named gradient and hessian", Method("public static double M(double x) { double gradient = x * x; double hessian = gradient * x; return hessian + gradient; }") };
        yield return new object[] { "parameters named gradient and hessian", Method("public static double M(double gradient, double hessian) => gradient * hessian;") };
        yield return new object[] { "generated name already taken", Method("public static double M(double x) => x * x;\n    public static double MGradient(double x, Span<double> g) => 0;") };

        // Containing types.
        yield return new object[] { "generic containing type", Usings + "public partial class Box<T> where T : struct { [Differentiate] public static double M(double x) => x * x; }" };
        yield return new object[] { "nested generic types", Usings + "public partial class Outer<T> { public partial class Inner<U> where U : class { [Differentiate] public double M(double x) => x * x; } }" };
        yield return new object[] { "deeply nested types", Usings + "namespace A.B.C { public partial class O1 { internal partial class O2 { private partial struct O3 { [Differentiate] internal static double M(double x) => x * x * x; } } } }" };
        yield return new object[] { "partial method (attribute on the implementation)", Usings + "public static partial class P { public static partial double M(double x);\n public static partial double M(double x) => x * x; }\n".Replace("public static partial double M(double x) =>", "[Differentiate] public static partial double M(double x) =>", StringComparison.Ordinal) };
        yield return new object[] { "partial method without implementation", Usings + "public static partial class P { [Differentiate] public static partial double M(double x); }\n" };
        yield return new object[] { "partial method (attribute on the declaring part)", Usings + "public static partial class P { [Differentiate] public static partial double M(double x);\n public static partial double M(double x) => x * x; }\n" };
        yield return new object[] { "method named with a keyword", Method("public static double @double(double @in) => @in * @in;") };
        yield return new object[] { "file-local type", Usings + "file static partial class F { [Differentiate] public static double M(double x) => x * x; }\n" };
        yield return new object[] { "null list of names", Method("public static double M(double x) => x * x;", attribute: "[Differentiate(null!)]") };
        yield return new object[] { "local function", Usings + "public static partial class H { public static double Outer(double y) { [Differentiate] static double M(double x) => x * x; return M(y); } }" };
        yield return new object[] { "lambda", Usings + "public static partial class H { public static Func<double, double> F = [Differentiate] (double x) => x * x; }" };
        yield return new object[] { "type in the global namespace named like a namespace", Usings + "public static partial class System2 { [Differentiate] public static double M(double x) => x * x; }" };
    }

    [Theory]
    [MemberData(nameof(Inputs))]
    public void NeitherGeneratorNorAnalyzerFails(string what, string source)
    {
        Check(what, new[] { source });
    }

    [Fact]
    public void PartialMethodWithTheAttributeOnTheDeclaringPartAndTheBodyInAnotherFile()
    {
        Outcome outcome = Check("partial method, body in another file", new[]
        {
            Usings + "public static partial class P { [Differentiate] public static partial double M(double x); }\n",
            Usings + "public static partial class P { public static partial double M(double x) => x * x; }\n",
        }, requireOutcome: false); // both parts carry the attribute as symbols; the error is on the declaring part only
        Assert.Empty(outcome.HintNames);
        Diagnostic error = Assert.Single(outcome.Diagnostics);
        Assert.Equal("DG0001", error.Id);
        Assert.Equal("Source0.cs", error.Location.SourceTree?.FilePath);
    }

    [Fact]
    public void MissingAttributeAssemblyGeneratesNothing()
    {
        Outcome outcome = Check("no reference to DerivGen.dll", new[] { Method("public static double M(double x) => x * x;") }, withAttributeReference: false);
        Assert.Empty(outcome.HintNames);
    }

    [Fact]
    public void TopLevelStatementProgram()
    {
        // A program with top-level statements; the marked method lives in a partial class after them, and a local
        // function of the top-level code is marked too (local functions have no type to add methods to).
        string program = Usings + """
            Console.WriteLine(Fit.M(2.0));
            [Differentiate] static double Local(double x) => x * x;
            Console.WriteLine(Local(3.0));

            public static partial class Fit
            {
                [Differentiate]
                public static double M(double x) => x * x * x;
            }
            """;
        Outcome outcome = Check("top-level program", new[] { program }, kind: OutputKind.ConsoleApplication, requireOutcome: false);
        Assert.Contains(outcome.HintNames, h => h.EndsWith("Fit.M.g.cs", StringComparison.Ordinal));
    }

    [Fact]
    public void DeepParenthesesAndUnaryChainsOnASmallStack()
    {
        // Depth 60 is generated in full on a 1 MB stack. Deeper inputs (DeepInputTests) may end in a generated #error
        // (InsufficientExecutionStack), which this contract counts as code that does not compile, or beyond 300 levels
        // in DG0001; hence requireOutcome: false here.
        foreach ((int depth, int stack) in new[] { (60, 1024 * 1024) })
        {
            string parens = new string('(', depth) + "x" + new string(')', depth);
            string negations = string.Concat(Enumerable.Repeat("-(", depth)) + "x" + new string(')', depth);
            string calls = string.Concat(Enumerable.Repeat("Math.Sin(", depth)) + "x" + new string(')', depth);
            foreach ((string kind, string expression) in new[] { ("parentheses", parens), ("negations", negations), ("nested calls", calls) })
            {

                CSharpCompilation compilation = Compile(new[] { Method("public static double M(double x) => " + expression + ";") });
                OnStack(() => Check($"{kind} nested {depth} deep", compilation, requireOutcome: false), stack);
            }
        }

        _output.WriteLine($"hostile inputs tried so far in this class: {_tried}");
    }

    [Fact]
    public void LongBinaryChainsAndBodiesOnASmallStack()
    {
        // Sizes generated in full on a 1 MB stack, with a wide margin: unoptimised (tier-0) JIT code uses more stack per
        // call. Beyond them the generator guards its stack and stops with a build error instead of overflowing
        // (DeepInputTests): a binary chain of 275 terms or a body of 5,000 statements used to crash the process.
        const int chainTerms = 120, statements = 1500;
        string sum = string.Join(" + ", Enumerable.Repeat("x", chainTerms));
        string product = string.Join(" * ", Enumerable.Repeat("x", chainTerms));
        var body = new StringBuilder("public static double M(double x) { double s = x;\n");
        for (int i = 0; i < statements; i++)
        {
            body.Append("        s = s * 0.5 + x;\n");
        }

        body.Append("        return s; }");
        foreach ((string what, string source) in new[]
        {
            ($"sum of {chainTerms} terms", Method("public static double M(double x) => " + sum + ";")),
            ($"product of {chainTerms} factors", Method("public static double M(double x) => " + product + ";")),
            ($"{statements} statements", Method(body.ToString())),
        })
        {
            CSharpCompilation compilation = Compile(new[] { source });
            OnSmallStack(() => Check(what, compilation));
        }
        _output.WriteLine($"hostile inputs tried so far in this class: {_tried}");
    }

    [Fact]
    public void CancellationDuringALargeRunIsHonoured()
    {
        var body = new StringBuilder("public static double M(double x) { double s = x;\n");
        for (int i = 0; i < 2000; i++)
        {
            body.Append("        s = Math.Sin(s) * x;\n");
        }

        body.Append("        return s; }");
        CSharpCompilation compilation = GeneratorHarness.CreateCompilation(Method(body.ToString()));

        // Cancelled while the driver is running: a generator that runs before DerivGen cancels the token, so DerivGen's
        // own steps see it cancelled mid-run. The run must end in OperationCanceledException, not finish or fail otherwise.
        using var source = new CancellationTokenSource();
        var driver = CSharpGeneratorDriver.Create(
            new[] { new Canceller(source).AsSourceGenerator(), new DerivativeGenerator().AsSourceGenerator() },
            parseOptions: GeneratorHarness.ParseOptions);
        Assert.ThrowsAny<OperationCanceledException>(() => driver.RunGeneratorsAndUpdateCompilation(compilation, out _, out _, source.Token));
        Assert.True(source.IsCancellationRequested, "the canceller ran");

        using var analyzerSource = new CancellationTokenSource();
        analyzerSource.Cancel();
        Assert.ThrowsAny<OperationCanceledException>(() =>
            compilation.WithAnalyzers(ImmutableArray.Create<DiagnosticAnalyzer>(new DerivativeAnalyzer()))
                .GetAnalyzerDiagnosticsAsync(analyzerSource.Token).GetAwaiter().GetResult());
        Interlocked.Increment(ref _tried);
    }

    /// <summary>A generator whose only output cancels the run it is part of.</summary>
    private sealed class Canceller : IIncrementalGenerator
    {
        private readonly CancellationTokenSource _source;

        public Canceller(CancellationTokenSource source) => _source = source;

        public void Initialize(IncrementalGeneratorInitializationContext context) =>
            context.RegisterSourceOutput(context.CompilationProvider, (_, _) => _source.Cancel());
    }
}
