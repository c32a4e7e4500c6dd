using System;
using System.Collections.Generic;
using System.Globalization;
using System.IO;
using System.Linq;
using System.Text;
using CsCheck;
using DerivGen.Generator;
using DerivGen.Tests.Infrastructure;
using MathNet.Numerics.Differentiation;
using Microsoft.CodeAnalysis;
using Microsoft.CodeAnalysis.CSharp;
using Microsoft.CodeAnalysis.Diagnostics;

namespace DerivGen.Tests.Randomized;

internal delegate double RandomValue(double x0, double x1, double x2, double c0, double c1, int k, double[] d);

internal delegate double RandomGradient(double x0, double x1, double x2, double c0, double c1, int k, double[] d, Span<double> gradient);

internal delegate void RandomJacobian(double x0, double x1, double x2, double c0, double c1, int k, double[] d, Span<double> outputs, Span<double> jacobian);

internal delegate double RandomHessianVector(double x0, double x1, double x2, double c0, double c1, int k, double[] d, ReadOnlySpan<double> direction,
    Span<double> gradient, Span<double> product);

internal delegate double RandomHessian(double x0, double x1, double x2, double c0, double c1, int k, double[] d, Span<double> gradient, Span<double> hessian);

/// <summary>A random case that failed, and why.</summary>
internal sealed record CaseFailure(RandomCase Case, string Reason);

/// <summary>What one batch did.</summary>
internal sealed class BatchOutcome
{
    public List<CaseFailure> Failures { get; } = new();

    /// <summary>Cases whose derivatives were checked (compiled, loaded and compared).</summary>
    public int Checked { get; set; }

    /// <summary>(case, point) pairs checked.</summary>
    public int Points { get; set; }

    /// <summary>Jacobian rows checked (variants with outputs, at every point).</summary>
    public int JacobianRows { get; set; }

    /// <summary>Variants with d as a vector variable that were generated and checked, and those DerivGen refused.</summary>
    public int VectorVariants { get; set; }

    public int VectorVariantsRefused { get; set; }

    /// <summary>Variants with the body in an inlined helper or local function that were generated and checked, and those refused.</summary>
    public int InlinedVariants { get; set; }

    public int InlinedVariantsRefused { get; set; }

    /// <summary>Generated gradients that go through their loops in reverse (a record and a reverse sweep) rather than
    /// with forward running derivatives (Differentiation/LoopReverse; the rule is ReverseLoopPolicy).</summary>
    public int ReverseLoopGradients { get; set; }

    /// <summary>MHessianVectorProduct calls checked against the reference (two random directions per point), and methods
    /// with a Hessian for which no product method was generated (those calling another generated method).</summary>
    public int HessianVectorProducts { get; set; }

    public int HessianVectorProductsNotGenerated { get; set; }

    /// <summary>Gradient or Hessian entries compared with MathNet's finite differences.</summary>
    public int OracleEntries { get; set; }

    /// <summary>Entries where two finite-difference step sizes disagreed with each other, so MathNet could not judge.</summary>
    public int OracleInconclusive { get; set; }

    /// <summary>Characters of the largest generated file (generated code that grows out of proportion shows here).</summary>
    public int LargestGeneratedFile { get; set; }

    /// <summary>The seed of the case with the largest generated file.</summary>
    public string LargestGeneratedSeed { get; set; } = "";

    /// <summary>Largest |generated − reference| / tolerance seen (how close the suite runs to its tolerance).</summary>
    public double WorstReferenceRatio { get; set; }

    /// <summary>Where the worst ratio was seen: the case's seed and the derivative compared.</summary>
    public string WorstReferenceWhere { get; set; } = "";

    /// <summary>The seed of the case being checked.</summary>
    public string CurrentSeed { get; set; } = "";
}

/// <summary>
/// Compiles many random methods into ONE compilation (generator run, emit and load once per batch), then checks each:
/// value bit-for-bit against the user's method; gradient and Hessian against the <see cref="Jet"/> reference (within a
/// few thousand ulps of the terms' magnitude bound) and against MathNet.Numerics' five-point finite differences; the
/// Hessian exactly symmetric; MGradient's and MHessian's gradients both checked.
/// </summary>
internal static class DifferentialRunner
{
    /// <summary>|generated − reference| ≤ ReferenceTolerance · (Σ|terms| + |reference|): about 4500 ulps of the terms
    /// a floating-point evaluation adds (rounding errors of a sum are a few ulps of Σ|terms| per operation on the
    /// way, common practice; the random expressions are at most a few dozen operations deep).</summary>
    public const double ReferenceTolerance = 1e-12;

    /// <summary>Five-point central differences with step 2⁻¹⁰: truncation O(h⁴), rounding ~ ε|f|/h for a first and
    /// ε|f|/h² for a second derivative (common practice), hence these tolerances relative to the scale of f.</summary>
    private const double OracleGradientTolerance = 1e-6, OracleHessianTolerance = 1e-4, OracleStep = 1.0 / 1024;

    private const string TypeName = "Rnd.R";

    private static readonly CSharpParseOptions Parse = GeneratorHarness.ParseOptions;

    /// <summary>
    /// The case whose generated methods are being called on this thread, rewritten before each one and deleted after
    /// the batch: if the test host dies (a stack overflow cannot be caught), the file names the case to replay with
    /// DERIVGEN_CASE. .ci/run prints these files when the test command fails.
    /// </summary>
    private static string CurrentCaseFile => Path.Combine(Path.GetTempPath(), "derivgen-randomized-current-case-"
        + Environment.CurrentManagedThreadId.ToString(CultureInfo.InvariantCulture) + ".txt"); // tests run in parallel

    public static BatchOutcome Run(IReadOnlyList<RandomCase> cases)
    {
        var outcome = new BatchOutcome();
        var pending = cases.ToList();
        while (pending.Count > 0)
        {
            List<CaseFailure> compileFailures = CompileAndCheck(pending, outcome);
            if (compileFailures.Count == 0)
            {
                break;
            }

            // Drop the cases that broke the batch and check the rest again.
            outcome.Failures.AddRange(compileFailures);
            var broken = new HashSet<RandomCase>(compileFailures.Select(f => f.Case), ReferenceEqualityComparer.Instance);
            pending = pending.Where(c => !broken.Contains(c)).ToList();
        }

        return outcome;
    }

    /// <summary>The name suffix of a case's variant with outputs (its <c>MJacobian</c> is checked against the gradient's reference).</summary>
    private const string OutputSuffix = "Out";

    /// <summary>The name suffix of a case's variant with the data d as a vector of variables (gradient only).</summary>
    private const string VectorSuffix = "Vec";

    private static string MethodName(int index) => "M" + index.ToString(CultureInfo.InvariantCulture);

    /// <summary>Compiles the batch; returns the cases that made it fail (nothing checked then), or checks them all.</summary>
    private static List<CaseFailure> CompileAndCheck(List<RandomCase> cases, BatchOutcome outcome)
    {
        var failures = new List<CaseFailure>();
        string[] units = cases.Select((c, i) => (c, i)).Chunk(64)
            .Select(chunk => RandomCase.Unit(chunk.Select(p => p.c.MethodSource(MethodName(p.i)) + "\n" + p.c.VectorVariantSource(MethodName(p.i) + VectorSuffix) + "\n" + p.c.InlinedVariantsSource(MethodName(p.i))
                + (p.c.OutputVariantSource(MethodName(p.i) + OutputSuffix) is { } variant ? "\n" + variant : ""))))
            .ToArray();
        CSharpCompilation input = CSharpCompilation.Create(
            "RandomBatch",
            units.Select((s, i) => CSharpSyntaxTree.ParseText(s, Parse, path: $"Random{i}.cs", encoding: Encoding.UTF8)),
            GeneratorHarness.References,
            new CSharpCompilationOptions(OutputKind.DynamicallyLinkedLibrary, optimizationLevel: OptimizationLevel.Release, deterministic: true));

        var inputErrors = input.GetDiagnostics().Where(d => d.Severity == DiagnosticSeverity.Error).ToList();
        if (inputErrors.Count > 0)
        {
            // The random generator wrote invalid C#: a bug of the test, reported as such.
            throw new InvalidOperationException("The random program generator wrote invalid C#:\n" + string.Join("\n", inputErrors.Take(5)) + "\n" + units[0]);
        }

        GeneratorDriver driver = CSharpGeneratorDriver.Create(new[] { new DerivativeGenerator().AsSourceGenerator() }, parseOptions: Parse)
            .RunGeneratorsAndUpdateCompilation(input, out Compilation output, out _);
        GeneratorRunResult result = driver.GetRunResult().Results.Single();
        if (result.Exception is not null)
        {
            if (cases.Count == 1)
            {
                failures.Add(new CaseFailure(cases[0], "the generator threw (CS8785): " + result.Exception));
                return failures;
            }

            // Find the culprit(s) by halves.
            int half = cases.Count / 2;
            foreach (List<RandomCase> part in new[] { cases.Take(half).ToList(), cases.Skip(half).ToList() })
            {
                var partOutcome = new BatchOutcome();
                failures.AddRange(CompileAndCheck(part, partOutcome).Where(f => f.Reason.StartsWith("the generator threw", StringComparison.Ordinal)));
            }

            return failures;
        }

        var byHint = result.GeneratedSources.ToDictionary(s => s.HintName, s => s, StringComparer.Ordinal);
        foreach (GeneratedSourceResult generated in result.GeneratedSources)
        {
            if (generated.SourceText.Length > outcome.LargestGeneratedFile)
            {
                outcome.LargestGeneratedFile = generated.SourceText.Length;
                outcome.LargestGeneratedSeed = cases[IndexFromHint(generated.HintName)].Seed;
            }
        }

        outcome.ReverseLoopGradients += byHint.Values.Count(g => g.SourceText.ToString().Contains("// Reverse sweep:", StringComparison.Ordinal));
        for (int i = 0; i < cases.Count; i++)
        {
            string hint = TypeName + "." + MethodName(i) + ".g.cs";
            if (!byHint.TryGetValue(hint, out GeneratedSourceResult generated))
            {
                failures.Add(new CaseFailure(cases[i], "nothing was generated (the method was refused): " + AnalyzerDiagnostics(cases[i])));
            }
            else if (generated.SourceText.ToString().Contains("#error", StringComparison.Ordinal))
            {
                failures.Add(new CaseFailure(cases[i], "the generated file is an #error (differentiation failed):\n" + generated.SourceText));
            }
            else if (byHint.TryGetValue(TypeName + "." + MethodName(i) + VectorSuffix + ".g.cs", out GeneratedSourceResult vector)
                && vector.SourceText.ToString().Contains("#error", StringComparison.Ordinal))
            {
                failures.Add(new CaseFailure(cases[i], "the variant with d as a vector variable's generated file is an #error:\n" + vector.SourceText));
            }
            else if (cases[i].HasOutputVariant)
            {
                string variantHint = TypeName + "." + MethodName(i) + OutputSuffix + ".g.cs";
                if (!byHint.TryGetValue(variantHint, out GeneratedSourceResult variant))
                {
                    failures.Add(new CaseFailure(cases[i], "nothing was generated for the variant with outputs (refused): " + AnalyzerDiagnostics(cases[i])));
                }
                else if (variant.SourceText.ToString().Contains("#error", StringComparison.Ordinal))
                {
                    failures.Add(new CaseFailure(cases[i], "the variant with outputs' generated file is an #error:\n" + variant.SourceText));
                }
            }
        }

        using var image = new MemoryStream();
        var emit = output.Emit(image);
        foreach (Diagnostic d in emit.Diagnostics.Where(d => d.Severity >= DiagnosticSeverity.Warning))
        {
            string path = d.Location.SourceTree?.FilePath ?? "";
            int index = IndexFromHint(Path.GetFileName(path));
            if (index >= 0)
            {
                string line = d.Location.SourceTree!.GetText().Lines[d.Location.GetLineSpan().StartLinePosition.Line].ToString().Trim();
                failures.Add(new CaseFailure(cases[index], $"the generated code does not compile cleanly: {d}\n    > {line}"));
            }
            else
            {
                throw new InvalidOperationException("Unexpected diagnostic outside generated code: " + d);
            }
        }

        if (failures.Count > 0)
        {
            return failures.GroupBy(f => f.Case, ReferenceEqualityComparer.Instance).Select(g => g.First()).ToList();
        }

        if (!emit.Success)
        {
            throw new InvalidOperationException("Emit failed: " + string.Join("\n", emit.Diagnostics.Take(5)));
        }

        image.Position = 0;
        using var assembly = new CompiledAssembly(image);
        for (int i = 0; i < cases.Count; i++)
        {
            string? reason;
            try
            {
                // A stack overflow ends the test host before any report: the case being run is on record in a file.
                File.WriteAllText(CurrentCaseFile, "DERIVGEN_CASE=" + cases[i].Seed + " (" + MethodName(i) + ")\n");
                outcome.CurrentSeed = cases[i].Seed;
                reason = CheckOne(assembly, MethodName(i), cases[i], outcome);
            }
            catch (Exception e)
            {
                reason = "calling the methods threw: " + e;
            }

            outcome.Checked++;
            if (reason is not null)
            {
                outcome.Failures.Add(new CaseFailure(cases[i], reason));
            }
        }

        File.Delete(CurrentCaseFile);

        return failures;
    }

    private static int IndexFromHint(string fileName)
    {
        string prefix = TypeName + ".M";
        if (!fileName.StartsWith(prefix, StringComparison.Ordinal) || !fileName.EndsWith(".g.cs", StringComparison.Ordinal))
        {
            return -1;
        }

        string digits = fileName.Substring(prefix.Length, fileName.Length - prefix.Length - ".g.cs".Length);
        foreach (string suffix in new[] { OutputSuffix, VectorSuffix, "Inl", "Loc" })
        {
            if (digits.EndsWith(suffix, StringComparison.Ordinal))
            {
                digits = digits.Substring(0, digits.Length - suffix.Length);
            }
        }

        return int.TryParse(digits, NumberStyles.None, CultureInfo.InvariantCulture, out int index) ? index : -1;
    }

    private static string AnalyzerDiagnostics(RandomCase c)
    {
        CSharpCompilation compilation = GeneratorHarness.CreateCompilation(c.Describe());
        var diagnostics = compilation
            .WithAnalyzers(System.Collections.Immutable.ImmutableArray.Create<DiagnosticAnalyzer>(new DerivGen.Generator.Diagnostics.DerivativeAnalyzer()))
            .GetAnalyzerDiagnosticsAsync().GetAwaiter().GetResult();
        return string.Join("; ", diagnostics.Where(d => d.Severity == DiagnosticSeverity.Error).Select(d => d.ToString()));
    }

    /// <summary>Checks one case; null when it passes, else what went wrong.</summary>
    private static string? CheckOne(CompiledAssembly assembly, string name, RandomCase c, BatchOutcome outcome)
    {
        RandomValue f = assembly.Method<RandomValue>(TypeName, name);
        RandomGradient g = assembly.Method<RandomGradient>(TypeName, name + "Gradient");
        RandomHessian? h = c.Hessian ? assembly.Method<RandomHessian>(TypeName, name + "Hessian") : null;
        RandomHessianVector? hv = c.Hessian && assembly.HasMethod(TypeName, name + "HessianVectorProduct")
            ? assembly.Method<RandomHessianVector>(TypeName, name + "HessianVectorProduct") : null;
        if (c.Hessian && hv is null)
        {
            outcome.HessianVectorProductsNotGenerated++;
        }
        RandomJacobian? jacobian = c.HasOutputVariant ? assembly.Method<RandomJacobian>(TypeName, name + OutputSuffix + "Jacobian") : null;

        // The variant with d as a vector variable: refused (no generated method) where a variable would decide control
        // flow (a data read in a loop condition, a break or a return in a loop) or for a foreach over it, and counted.
        RandomGradient? vector = null;
        if (assembly.HasMethod(TypeName, name + VectorSuffix + "Gradient"))
        {
            vector = assembly.Method<RandomGradient>(TypeName, name + VectorSuffix + "Gradient");
            outcome.VectorVariants++;
        }
        else
        {
            outcome.VectorVariantsRefused++;
        }
        // The variants with the body inlined (a helper taking d as a span, a local function): where generated (a body
        // inlined is refused where a jump's flag would decide a loop), the same checks against the same reference.
        foreach (string suffix in new[] { "Inl", "Loc" })
        {
            if (!assembly.HasMethod(TypeName, name + suffix + "Gradient"))
            {
                outcome.InlinedVariantsRefused++;
                continue;
            }

            outcome.InlinedVariants++;
            RandomValue fi = assembly.Method<RandomValue>(TypeName, name + suffix);
            RandomGradient gi = assembly.Method<RandomGradient>(TypeName, name + suffix + "Gradient");
            RandomHessian? hi = c.Hessian ? assembly.Method<RandomHessian>(TypeName, name + suffix + "Hessian") : null;
            foreach (CasePoint point in c.Points)
            {
                if (CheckAt(point, fi, gi, hi, null, c, outcome) is { } inlinedProblem)
                {
                    return "at " + point + ", the variant " + name + suffix + " (body inlined):\n" + inlinedProblem;
                }
            }
        }

        if (!c.Hessian && assembly.HasMethod(TypeName, name + "Hessian"))
        {
            return "Hessian = false, yet MHessian was generated";
        }

        foreach (CasePoint point in c.Points)
        {
            outcome.Points++;
            if (CheckAt(point, f, g, h, jacobian, c, outcome) is { } problem)
            {
                return "at " + point + ":\n" + problem;
            }

            if (hv is not null && CheckProductAt(point, f, hv, c, outcome) is { } productProblem)
            {
                return "at " + point + ", MHessianVectorProduct:\n" + productProblem;
            }

            if (vector is not null && CheckVectorVariantAt(point, f, vector, c, outcome) is { } vectorProblem)
            {
                return "at " + point + ", the variant with d as a vector variable:\n" + vectorProblem;
            }
        }

        return null;
    }

    private static string? CheckAt(CasePoint p, RandomValue f, RandomGradient g, RandomHessian? h, RandomJacobian? jacobianMethod, RandomCase c, BatchOutcome outcome)
    {
        double[] x = p.Doubles;
        int n = c.Variables.Length;
        double value = f(x[0], x[1], x[2], x[3], x[4], p.K, p.Data);
        Jet reference = new Interpreter(p, c.Variables).Run(c.Body);
        if (BitConverter.DoubleToInt64Bits(value) != BitConverter.DoubleToInt64Bits(reference.Value))
        {
            // The reference interpreter and C# disagree on the value itself: a bug of the test, not of DerivGen.
            throw new InvalidOperationException($"Reference interpreter value {R(reference.Value)} differs from the compiled method's {R(value)}:\n{c.Describe()}");
        }

        var gradient = new double[n];
        double gradientValue = g(x[0], x[1], x[2], x[3], x[4], p.K, p.Data, gradient);
        if (BitConverter.DoubleToInt64Bits(gradientValue) != BitConverter.DoubleToInt64Bits(value))
        {
            return $"MGradient returned {R(gradientValue)}, the method {R(value)} (must be bit-for-bit equal)";
        }

        var problems = new StringBuilder();
        CompareWithReference("MGradient gradient", gradient, reference.Gradient, reference.GradientBound, outcome, problems);

        if (jacobianMethod is not null)
        {
            // The variant with outputs: outputs[0] is the value, bit for bit, and its Jacobian row is the gradient.
            var outputs = new double[1];
            var row = new double[n];
            jacobianMethod(x[0], x[1], x[2], x[3], x[4], p.K, p.Data, outputs, row);
            if (BitConverter.DoubleToInt64Bits(outputs[0]) != BitConverter.DoubleToInt64Bits(value))
            {
                return $"MOutJacobian wrote outputs[0] = {R(outputs[0])}, the method returns {R(value)} (must be bit-for-bit equal)";
            }

            outcome.JacobianRows++;
            CompareWithReference("MOutJacobian row", row, reference.Gradient, reference.GradientBound, outcome, problems);
        }

        double[]? hessian = null;
        if (h is not null)
        {
            var gradient2 = new double[n];
            hessian = new double[n * n];
            double hessianValue = h(x[0], x[1], x[2], x[3], x[4], p.K, p.Data, gradient2, hessian);
            if (BitConverter.DoubleToInt64Bits(hessianValue) != BitConverter.DoubleToInt64Bits(value))
            {
                return $"MHessian returned {R(hessianValue)}, the method {R(value)} (must be bit-for-bit equal)";
            }

            CompareWithReference("MHessian gradient", gradient2, reference.Gradient, reference.GradientBound, outcome, problems);
            CompareWithReference("MHessian Hessian", hessian, reference.Hessian, reference.HessianBound, outcome, problems);
            for (int i = 0; i < n; i++)
            {
                for (int j = i + 1; j < n; j++)
                {
                    if (BitConverter.DoubleToInt64Bits(hessian[(i * n) + j]) != BitConverter.DoubleToInt64Bits(hessian[(j * n) + i]))
                    {
                        problems.Append($"  Hessian not exactly symmetric at [{i},{j}]: {R(hessian[(i * n) + j])} vs {R(hessian[(j * n) + i])}\n");
                    }
                }
            }
        }

        CompareWithFiniteDifferences(c, p, f, value, gradient, hessian, outcome, problems);
        return problems.Length == 0 ? null : problems.ToString();
    }

    /// <summary>MHessianVectorProduct at two random directions: the value bit for bit, the gradient and H·direction against
    /// the dual-number reference (its Hessian times the direction, the bound Σⱼ (bound + |H|)ᵢⱼ·|directionⱼ|).</summary>
    private static string? CheckProductAt(CasePoint p, RandomValue f, RandomHessianVector hv, RandomCase c, BatchOutcome outcome)
    {
        double[] x = p.Doubles;
        int n = c.Variables.Length;
        double value = f(x[0], x[1], x[2], x[3], x[4], p.K, p.Data);
        Jet reference = new Interpreter(p, c.Variables).Run(c.Body);
        var random = new Random(unchecked((int)BitConverter.DoubleToInt64Bits(x[0]) ^ (p.K * 7919)));
        var problems = new StringBuilder();
        for (int trial = 0; trial < 2; trial++)
        {
            var direction = new double[n];
            for (int j = 0; j < n; j++)
            {
                direction[j] = (2 * random.NextDouble()) - 1;
            }

            var gradient = new double[n];
            var product = new double[n];
            double returned = hv(x[0], x[1], x[2], x[3], x[4], p.K, p.Data, direction, gradient, product);
            if (BitConverter.DoubleToInt64Bits(returned) != BitConverter.DoubleToInt64Bits(value))
            {
                return $"MHessianVectorProduct returned {R(returned)}, the method {R(value)} (must be bit-for-bit equal)";
            }

            var expected = new double[n];
            var bound = new double[n];
            for (int i = 0; i < n; i++)
            {
                for (int j = 0; j < n; j++)
                {
                    expected[i] += reference.Hessian[(i * n) + j] * direction[j];
                    bound[i] += (reference.HessianBound[(i * n) + j] + Math.Abs(reference.Hessian[(i * n) + j])) * Math.Abs(direction[j]);
                }
            }

            outcome.HessianVectorProducts++;
            CompareWithReference("MHessianVectorProduct gradient", gradient, reference.Gradient, reference.GradientBound, outcome, problems);
            CompareWithReference("MHessianVectorProduct product", product, expected, bound, outcome, problems);
        }

        return problems.Length == 0 ? null : problems.ToString();
    }

    /// <summary>The variant with d as a vector variable: its value bit for bit, its gradient (the scalars, then one entry
    /// per element of d) against the dual-number reference with d's elements as variables.</summary>
    private static string? CheckVectorVariantAt(CasePoint p, RandomValue f, RandomGradient vector, RandomCase c, BatchOutcome outcome)
    {
        double[] x = p.Doubles;
        double value = f(x[0], x[1], x[2], x[3], x[4], p.K, p.Data);
        Jet reference = new Interpreter(p, c.Variables, dataIsVariable: true).Run(c.Body);
        var gradient = new double[c.Variables.Length + p.Data.Length];
        double returned = vector(x[0], x[1], x[2], x[3], x[4], p.K, p.Data, gradient);
        if (BitConverter.DoubleToInt64Bits(returned) != BitConverter.DoubleToInt64Bits(value))
        {
            return $"MVecGradient returned {R(returned)}, the method {R(value)} (must be bit-for-bit equal)";
        }

        var problems = new StringBuilder();
        CompareWithReference("MVecGradient gradient", gradient, reference.Gradient, reference.GradientBound, outcome, problems);
        return problems.Length == 0 ? null : problems.ToString();
    }

    private static void CompareWithReference(string what, double[] actual, double[] expected, double[] bound, BatchOutcome outcome, StringBuilder problems)
    {
        for (int i = 0; i < expected.Length; i++)
        {
            double allowed = ReferenceTolerance * (bound[i] + Math.Abs(expected[i]));
            double difference = Math.Abs(actual[i] - expected[i]);
            bool ok = actual[i] == expected[i] || difference <= allowed;
            if (allowed > 0 && double.IsFinite(difference))
            {
                if (difference / allowed > outcome.WorstReferenceRatio)
                {
                    outcome.WorstReferenceRatio = difference / allowed;
                    outcome.WorstReferenceWhere = what + "[" + i + "] of case " + outcome.CurrentSeed;
                }
            }

            if (!ok)
            {
                problems.Append($"  {what}[{i}] = {R(actual[i])}, reference (dual numbers) {R(expected[i])}, |difference| {R(difference)} > allowed {R(allowed)}\n");
            }
        }
    }

    /// <summary>The function of the variables alone (the other inputs fixed at the case's point).</summary>
    private static Func<double[], double> OfVariables(RandomCase c, CasePoint p, RandomValue f)
    {
        int[] positions = c.Variables.Select(v => Array.IndexOf(CasePoint.DoubleNames, v)).ToArray();
        return v =>
        {
            double[] x = (double[])p.Doubles.Clone();
            for (int i = 0; i < positions.Length; i++)
            {
                x[positions[i]] = v[i];
            }

            return f(x[0], x[1], x[2], x[3], x[4], p.K, p.Data);
        };
    }

    private static double[] Variables(RandomCase c, CasePoint p) =>
        c.Variables.Select(v => p.Doubles[Array.IndexOf(CasePoint.DoubleNames, v)]).ToArray();

    private static NumericalDerivative Stencil(double step) =>
        new(5, 2) { StepType = StepType.Absolute, StepSize = step };

    /// <summary>
    /// MathNet.Numerics five-point central differences (step 2⁻¹⁰). Where one disagrees with the generated derivative,
    /// it is recomputed with a quarter of the step: if the two estimates agree with each other the difference is
    /// reported, otherwise the finite differences are too noisy there to judge and the entry is counted as inconclusive.
    /// </summary>
    private static void CompareWithFiniteDifferences(RandomCase c, CasePoint p, RandomValue f, double value, double[] gradient, double[]? hessian,
        BatchOutcome outcome, StringBuilder problems)
    {
        Func<double[], double> fv = OfVariables(c, p, f);
        double[] at = Variables(c, p);
        int n = at.Length;
        double scale = 1 + Math.Abs(value) + gradient.Max(Math.Abs);

        for (int i = 0; i < n; i++)
        {
            int index = i;
            Judge($"gradient[{i}]", gradient[i], step => Stencil(step).EvaluatePartialDerivative(fv, at, index, 1), OracleGradientTolerance * scale, outcome, problems);
        }

        if (hessian is null)
        {
            return;
        }

        double hessianScale = scale + hessian.Max(Math.Abs);
        for (int i = 0; i < n; i++)
        {
            for (int j = 0; j <= i; j++)
            {
                int[] pair = { i, j };
                Judge($"Hessian[{i},{j}]", hessian[(i * n) + j], step => Stencil(step).EvaluateMixedPartialDerivative(fv, at, pair, 2),
                    OracleHessianTolerance * hessianScale, outcome, problems);
            }
        }
    }

    private static void Judge(string what, double generated, Func<double, double> estimate, double tolerance, BatchOutcome outcome, StringBuilder problems)
    {
        outcome.OracleEntries++;
        double coarse = estimate(OracleStep);
        if (Math.Abs(coarse - generated) <= tolerance)
        {
            return;
        }

        double fine = estimate(OracleStep / 4);
        if (Math.Abs(fine - coarse) > tolerance)
        {
            outcome.OracleInconclusive++;
            return;
        }

        if (Math.Abs(fine - generated) > tolerance)
        {
            problems.Append($"  {what} = {R(generated)}, MathNet finite differences {R(coarse)} (step 2^-10) and {R(fine)} (2^-12), allowed {R(tolerance)}\n");
        }
    }

    private static string R(double v) => v.ToString("R", CultureInfo.InvariantCulture);

    /// <summary>
    /// Shrinks a failing case the way CsCheck does — by generating fresh cases and keeping a smaller one that still
    /// fails — but checks the candidates in batches (one compilation per round instead of one per candidate).
    /// Returns the smallest failing case found and its failure.
    /// </summary>
    public static CaseFailure Shrink(CaseFailure failure, CaseGenerator generator, PCG source, int rounds, int candidatesPerRound)
    {
        CaseFailure best = failure;
        int idle = 0;
        for (int round = 0; round < rounds && idle < 4; round++)
        {
            var candidates = new List<RandomCase>();
            for (int attempt = 0; attempt < candidatesPerRound * 20 && candidates.Count < candidatesPerRound; attempt++)
            {
                var pcg = new PCG(source.Next(), source.Next64());
                string seed = pcg.ToString();
                RandomCase candidate = generator.Generate(pcg, null, out _);
                if (candidate.Size < best.Case.Size)
                {
                    candidate.Seed = seed;
                    candidates.Add(candidate);
                }
            }

            BatchOutcome outcome = Run(candidates);
            CaseFailure? smaller = outcome.Failures.OrderBy(f => f.Case.Size).FirstOrDefault();
            if (smaller is null)
            {
                idle++;
                continue;
            }

            best = smaller;
            idle = 0;
        }

        return best;
    }
}
