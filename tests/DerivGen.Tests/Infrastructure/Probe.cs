using System;
using Xunit;

namespace DerivGen.Tests.Infrastructure;

/// <summary>
/// A user method and its generated MGradient / MHessian, seen through arrays so that one set of checks
/// (<see cref="Verify"/>) serves methods of any arity.
/// </summary>
internal sealed class Probe
{
    private Probe(int n, Func<double[], double> value, Func<double[], double[], double> gradient, Func<double[], double[], double[], double>? hessian)
    {
        N = n;
        Value = value;
        Gradient = gradient;
        Hessian = hessian;
    }

    public int N { get; }

    /// <summary>The user's method.</summary>
    public Func<double[], double> Value { get; }

    /// <summary>MGradient(x..., gradient) → value.</summary>
    public Func<double[], double[], double> Gradient { get; }

    /// <summary>MHessian(x..., gradient, hessian) → value.</summary>
    public Func<double[], double[], double[], double>? Hessian { get; }

    public static Probe Of(F1 f, G1 g, H1? h) =>
        new(1, x => f(x[0]), (x, gr) => g(x[0], gr), h is null ? null : (x, gr, he) => h(x[0], gr, he));

    public static Probe Of(F2 f, G2 g, H2? h) =>
        new(2, x => f(x[0], x[1]), (x, gr) => g(x[0], x[1], gr), h is null ? null : (x, gr, he) => h(x[0], x[1], gr, he));

    public static Probe Of(F3 f, G3 g, H3? h) =>
        new(3, x => f(x[0], x[1], x[2]), (x, gr) => g(x[0], x[1], x[2], gr), h is null ? null : (x, gr, he) => h(x[0], x[1], x[2], gr, he));

    /// <summary>Binds T.M, T.MGradient and T.MHessian of a static method with N double parameters.</summary>
    public static Probe Load(CompiledAssembly asm, string type, string method, int n, bool hessian = true, object? target = null) => n switch
    {
        1 => Of(asm.Method<F1>(type, method, target), asm.Method<G1>(type, method + "Gradient", target), hessian ? asm.Method<H1>(type, method + "Hessian", target) : null),
        2 => Of(asm.Method<F2>(type, method, target), asm.Method<G2>(type, method + "Gradient", target), hessian ? asm.Method<H2>(type, method + "Hessian", target) : null),
        3 => Of(asm.Method<F3>(type, method, target), asm.Method<G3>(type, method + "Gradient", target), hessian ? asm.Method<H3>(type, method + "Hessian", target) : null),
        _ => throw new ArgumentOutOfRangeException(nameof(n)),
    };
}

internal static class Verify
{
    /// <summary>
    /// At point <paramref name="x"/>: MGradient's and MHessian's values are bit-identical to the user's method; the
    /// gradient (from both methods) and the Hessian match the closed forms given (tolerance
    /// <see cref="Check.ClosedFormRelative"/>, absolute floor <paramref name="closedFormAbsolute"/> for entries that
    /// are exactly zero) and MathNet's finite differences; the Hessian is exactly symmetric.
    /// </summary>
    public static void At(Probe p, double[] x, double[]? gradient, double[]? hessian, string what, double closedFormAbsolute = 1e-15, bool oracle = true)
    {
        string at = $"{what} at ({string.Join(", ", Array.ConvertAll(x, Check.R))})";
        double value = p.Value(x);

        var g = new double[p.N];
        Check.SameBits(value, p.Gradient(x, g), $"{at}: MGradient's value vs the method's");
        if (gradient is not null)
        {
            Check.Close(gradient, g, Check.ClosedFormRelative, closedFormAbsolute, $"{at}: MGradient gradient vs closed form");
        }

        if (oracle)
        {
            Check.GradientMatchesOracle(p.Value, x, g, at);
        }

        if (p.Hessian is null)
        {
            Assert.Null(hessian);
            return;
        }

        var g2 = new double[p.N];
        var h = new double[p.N * p.N];
        Check.SameBits(value, p.Hessian(x, g2, h), $"{at}: MHessian's value vs the method's");
        Check.Close(g, g2, Check.ClosedFormRelative, closedFormAbsolute, $"{at}: MHessian gradient vs MGradient gradient");
        Check.ExactlySymmetric(h, p.N);
        if (hessian is not null)
        {
            Check.Close(hessian, h, Check.ClosedFormRelative, closedFormAbsolute, $"{at}: Hessian vs closed form");
        }

        if (oracle)
        {
            Check.HessianMatchesOracle(p.Value, x, h, at);
        }
    }
}

/// <summary>Compiles a test class's sources once (generator run, checks, load) and unloads them at the end.</summary>
public abstract class CompiledFixture : IDisposable
{
    protected CompiledFixture(params string[] sources)
    {
        Run = GeneratorHarness.Run(sources);
        Assembly = Run.Load();
    }

    internal GeneratedRun Run { get; }

    internal CompiledAssembly Assembly { get; }

    public void Dispose() => Assembly.Dispose();
}
