using System;
using System.Collections.Immutable;
using System.Linq;
using System.Threading;
using System.Threading.Tasks;
using DerivGen.Generator;
using DerivGen.Generator.Diagnostics;
using DerivGen.Tests.Infrastructure;
using Microsoft.CodeAnalysis;
using Microsoft.CodeAnalysis.CSharp;
using Microsoft.CodeAnalysis.Diagnostics;
using Xunit;

namespace DerivGen.Tests.Robustness;

/// <summary>
/// The generator and the analyzer run on every keystroke, so they must survive code as it is being typed: every prefix
/// of a real method is fed to both, and neither may throw (common practice for Roslyn components: an exception in a
/// generator is CS8785, in an analyzer AD0001, and both break the user's build). Cancellation must be honoured.
/// </summary>
public sealed class HalfTypedInputTests
{
    private const string Method = """
        using System;
        using DerivGen;

        public static partial class Fit
        {
            [Differentiate(nameof(a), nameof(k))]
            public static double Residual(double a, double k, double t, double y)
            {
                double model = a * Math.Exp(-k * t) + Math.Sqrt(1 + t * t);
                double r = model - y;
                r *= 0.5;
                return r * r + Math.Abs(a) * 1e-3;
            }
        }
        """;

    private const string LoopMethod = """
        using System;
        using DerivGen;

        public static partial class Fit
        {
            [Differentiate(nameof(a), nameof(b))]
            public static double Loss(double a, double b, double[] t, double[] y)
            {
                double s = 0;
                foreach (double ti in t) { s += Math.Tanh(a * ti); }
                for (int i = 0; i < t.Length; i++)
                {
                    double r = a * Math.Exp(-b * t[i]) - y[i];
                    var (p, q) = (r * r, Math.Abs(r));
                    if (q > 1) { s += 2 * q - 1; } else { s += p; }
                    double z = 0;
                    for (int j = 0; j < 3; j++) { z += j * r; }
                    s += i + 1 < t.Length ? 0.1 * z * t[i + 1] : 0.0;
                }
                return s;
            }
        }
        """;

    // A vector of variables (gradient only), a while loop with an explicit Euler step, a call between [Differentiate]
    // methods, an early return and a float method (invented models).
    private const string VectorAndCallMethod = """
        using System;
        using DerivGen;

        public static partial class Model
        {
            [Differentiate(nameof(w), Hessian = false)]
            public static double Score(double[] w, double[] x, double bias)
            {
                double z = bias;
                for (int j = 0; j < w.Length; j++) { z += w[j] * x[j]; }
                if (z > 30) return z;
                return Math.Log(1 + Math.Exp(z)) - 0.5 * z;
            }

            [Differentiate(nameof(k))]
            public static double Decay(double k, double y0, double tEnd)
            {
                double y = y0, t = 0;
                while (t < tEnd) { y += -k * y * 0.1; t += 0.1; }
                return y;
            }

            [Differentiate(nameof(k), nameof(c))]
            public static double Fit(double k, double c, double tEnd) => Decay(k, 1.0, tEnd) * c + Math.Pow(c, 2.0);

            [Differentiate]
            public static float Bump(float u) => MathF.Exp(-u * u) + float.Hypot(u, 1f);
        }
        """;

    [Theory]
    [InlineData(Method, 3)]
    [InlineData(LoopMethod, 3)]
    [InlineData(VectorAndCallMethod, 4)]
    public async Task EveryPrefixOfAMethodLeavesGeneratorAndAnalyzerStanding(string method, int step)
    {
        int tried = 0;
        for (int length = 0; length <= method.Length; length += step)
        {
            string prefix = method.Substring(0, length);
            CSharpCompilation compilation = GeneratorHarness.CreateCompilation(prefix);

            GeneratorDriver driver = GeneratorHarness.CreateDriver().RunGenerators(compilation);
            GeneratorRunResult result = Assert.Single(driver.GetRunResult().Results);
            Assert.True(result.Exception is null, $"The generator threw on a prefix of {length} characters: {result.Exception}");

            ImmutableArray<Diagnostic> analyzerDiagnostics = await compilation
                .WithAnalyzers(ImmutableArray.Create<DiagnosticAnalyzer>(new DerivativeAnalyzer()))
                .GetAllDiagnosticsAsync();
            Assert.DoesNotContain(analyzerDiagnostics, d => d.Id == "AD0001");
            Assert.DoesNotContain(analyzerDiagnostics, d => d.Id == DiagnosticDescriptors.InternalError.Id);
            tried++;
        }

        Assert.True(tried > 100, "the prefixes were actually tried");
    }

    [Fact]
    public void CancelledRunThrowsOperationCanceledAndProducesNothingHalfWritten()
    {
        CSharpCompilation compilation = GeneratorHarness.CreateCompilation(Method);
        using var cancelled = new CancellationTokenSource();
        cancelled.Cancel();

        Assert.ThrowsAny<OperationCanceledException>(() =>
            GeneratorHarness.CreateDriver().RunGenerators(compilation, cancelled.Token));

        // The same driver state, not cancelled, still generates the method's file.
        GeneratorDriver driver = GeneratorHarness.CreateDriver().RunGenerators(compilation);
        Assert.Contains(driver.GetRunResult().GeneratedTrees, t => t.FilePath.EndsWith("Fit.Residual.g.cs", StringComparison.Ordinal));
    }
}
