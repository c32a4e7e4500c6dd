using System;
using DerivGen.Tests.Infrastructure;
using Xunit;

namespace DerivGen.Tests.Passes;

/// <summary>
/// The pair method of a Hessian over vectors shifts each element read by its slot in the gradient span: a typed slot
/// offset in its IR (<c>IrSlotOffset</c>), printed by Emit. Here the second vector's slots start after the scalar
/// and the first vector, a run-time offset, and the Hessian is checked against its closed form. The pair method is used
/// only for a method without MHessianVectorProduct (one that calls another generated method), so Bilinear calls Same.
/// </summary>
public sealed class PairOffsetTests
{
    // Invented: f = Σᵢ s·uᵢ·vᵢ.
    private const string Members = """
            [Differentiate(nameof(s), nameof(u), nameof(v))]
            public static double Bilinear(double s, double[] u, double[] v)
            {
                double f = 0;
                for (int i = 0; i < u.Length; i++)
                {
                    f += s * u[i] * v[i];
                }

                return Same(f);
            }

            [Differentiate]
            public static double Same(double x) => x;
        """;

    private delegate double H(double s, double[] u, double[] v, Span<double> gradient, Span<double> hessian);

    /// <summary>∂²f/∂s∂uᵢ = vᵢ, ∂²f/∂s∂vᵢ = uᵢ, ∂²f/∂uᵢ∂vⱼ = s·δᵢⱼ, every other entry 0 (plain calculus).</summary>
    [Fact]
    public void TheHessianOverTwoVectorsMatchesItsClosedForm()
    {
        GeneratedRun run = GeneratorHarness.Run(PassHarness.Source(Members));
        Assert.Contains("== row ? tRow : 0", run.Source(PassHarness.Type + ".Bilinear.g.cs"), StringComparison.Ordinal);
        Assert.Contains("i + (u.Length + 1) == row", run.Source(PassHarness.Type + ".Bilinear.g.cs"), StringComparison.Ordinal);
        using CompiledAssembly assembly = run.Load();
        var hessian = assembly.Method<H>(PassHarness.Type, "BilinearHessian");
        double s = 1.5;
        double[] u = { 0.5, -2.0, 0.25 }, v = { 3.0, 0.75, -1.0 }; // invented
        int m = u.Length, n = 1 + (2 * m);
        var g = new double[n];
        var h = new double[n * n];
        hessian(s, u, v, g, h);
        var expected = new double[n * n];
        for (int i = 0; i < m; i++)
        {
            expected[(0 * n) + 1 + i] = expected[((1 + i) * n) + 0] = v[i];
            expected[(0 * n) + 1 + m + i] = expected[((1 + m + i) * n) + 0] = u[i];
            expected[((1 + i) * n) + 1 + m + i] = expected[((1 + m + i) * n) + 1 + i] = s;
        }

        for (int k = 0; k < n * n; k++)
        {
            Check.Close(expected[k], h[k], 1e-15, 1e-15, "H[" + (k / n) + ", " + (k % n) + "]");
        }
    }
}
