using System;
using System.Collections.Generic;
using System.Globalization;
using System.Linq;
using System.Reflection;
using BenchmarkDotNet.Attributes;

namespace DerivGen.Benchmarks.Report;

/// <summary>
/// Accuracy of one benchmark case, computed once, outside any timed region: the case's class is set up exactly as
/// BenchmarkDotNet sets it up, and each method is called once. Digits are normwise:
/// −log10(max_i |approx_i − ref_i| / max_i |ref_i|), capped at <see cref="MaxDigits"/>, and +∞ for identical results
/// (a normwise relative error: common practice for comparing a vector against a reference).
/// </summary>
internal sealed class Accuracy
{
    /// <summary>The cap on reported digits (a double carries about 15.9 significant decimal digits).</summary>
    public const double MaxDigits = 16;

    public int VariableCount { get; init; }

    /// <summary>Generated vs hand-written gradient (two exact formulas: should agree to rounding).</summary>
    public double? GeneratedVsHandWrittenGradient { get; init; }

    /// <summary>Generated vs hand-written Hessian.</summary>
    public double? GeneratedVsHandWrittenHessian { get; init; }

    /// <summary>Central-difference gradient against the generated one.</summary>
    public double? FdGradient { get; init; }

    /// <summary>Central-difference Hessian against the generated one, or the hand-written one where the generator has none.</summary>
    public double? FdHessian { get; init; }

    /// <summary>"generated" or "hand-written": what <see cref="FdHessian"/> was compared with.</summary>
    public string FdHessianReference { get; init; } = "generated";

    public int FdGradientEvaluations { get; init; }

    public int FdHessianEvaluations { get; init; }

    /// <summary>Calls whose allocation is counted (after one warm call) for each method that is not a finite difference.</summary>
    public const int AllocationCalls = 8;

    /// <summary>Bytes allocated per call on the calling thread (GC.GetAllocatedBytesForCurrentThread), by method.</summary>
    public IReadOnlyDictionary<string, double> AllocatedBytesPerCall { get; init; } = new Dictionary<string, double>();

    /// <summary>A call slower than this (seconds) is made once only: its allocation and time are those of that call.</summary>
    public const double SlowCallSeconds = 1;

    /// <summary>Methods that took longer than <see cref="SlowCallSeconds"/> per call: the time of their one call
    /// (thread CPU time where available, else wall-clock), nanoseconds.</summary>
    public IReadOnlyDictionary<string, double> OneCallNanoseconds { get; init; } = new Dictionary<string, double>();

    /// <summary>True if every generated method returned exactly (bit for bit) the user's value.</summary>
    public bool? GeneratedValueBitExact { get; init; }

    /// <summary>Sets up <paramref name="type"/> with the given parameters and measures the methods in <paramref name="methods"/>.</summary>
    public static Accuracy Measure(Type type, IReadOnlyDictionary<string, string> parameters, ISet<string> methods)
    {
        var bench = (LossBenchmark)Activator.CreateInstance(type)!;
        foreach (var (name, text) in parameters)
        {
            PropertyInfo property = type.GetProperty(name)
                ?? throw new InvalidOperationException($"{type.Name} has no parameter {name}");
            property.SetValue(bench, Convert.ChangeType(text, property.PropertyType, CultureInfo.InvariantCulture));
        }

        type.GetMethods().Single(m => m.GetCustomAttribute<GlobalSetupAttribute>() is not null).Invoke(bench, null);
        var allocated = new Dictionary<string, double>(StringComparer.Ordinal);

        var oneCall = new Dictionary<string, double>(StringComparer.Ordinal);

        // Each method as a delegate (no boxing), and its allocation per call on this thread: a warm call, a full
        // collection, then the least bytes of three batches of AllocationCalls calls (an allocation the method makes
        // shows in every batch; the runtime's accounting of a collection that happens to fall in a batch does not).
        // Finite differences: one call, they are slow and allocate anyway. A method whose warm call takes longer than
        // SlowCallSeconds (the O(T²) generated gradient of a long control horizon) is counted on that call alone, and
        // its time (thread CPU time where available) is kept in OneCallNanoseconds.
        double Call(string name)
        {
            var f = type.GetMethod(name)!.CreateDelegate<Func<double>>(bench);
            bool slow = name.StartsWith("Fd", StringComparison.Ordinal);
            double result = 0;
            if (!slow)
            {
                GC.Collect();
                GC.WaitForPendingFinalizers();
                long bytes = GC.GetAllocatedBytesForCurrentThread();
                var (ns, r) = Timed(f);
                result = r;
                if (ns > SlowCallSeconds * 1e9)
                {
                    oneCall[name] = ns;
                    allocated[name] = GC.GetAllocatedBytesForCurrentThread() - bytes;
                    return result;
                }
            }

            int calls = slow ? 1 : AllocationCalls;
            double least = double.PositiveInfinity;
            GC.Collect();
            GC.WaitForPendingFinalizers();
            for (int batch = 0; batch < (slow ? 1 : 3); batch++)
            {
                long before = GC.GetAllocatedBytesForCurrentThread();
                for (int i = 0; i < calls; i++)
                {
                    result = f();
                }

                least = Math.Min(least, (GC.GetAllocatedBytesForCurrentThread() - before) / (double)calls);
            }

            allocated[name] = least;
            return result;
        }

        double value = Call("Value");
        bool? bitExact = null;
        double[]? gGen = null, gHand = null, hGen = null, hHand = null;
        if (methods.Contains("GeneratedGradient"))
        {
            bitExact = Same(value, Call("GeneratedGradient"));
            gGen = (double[])bench.Gradient.Clone();
        }

        if (methods.Contains("HandWrittenGradient"))
        {
            Call("HandWrittenGradient");
            gHand = (double[])bench.Gradient.Clone();
        }

        if (methods.Contains("GeneratedHessian"))
        {
            bool same = Same(value, Call("GeneratedHessian"));
            bitExact = (bitExact ?? true) && same;
            hGen = (double[])bench.Hessian.Clone();
        }

        if (methods.Contains("HandWrittenHessian"))
        {
            Call("HandWrittenHessian");
            hHand = (double[])bench.Hessian.Clone();
        }

        double? fdGradient = null, fdHessian = null;
        int fdGradientEvaluations = 0, fdHessianEvaluations = 0;
        if (methods.Contains("FdGradient") && (gGen ?? gHand) is { } gRef)
        {
            Call("FdGradient");
            fdGradient = Digits(bench.LastFdGradient, gRef);
            fdGradientEvaluations = bench.LastFdEvaluations;
        }

        double[]? hRef = hGen ?? hHand;
        if (methods.Contains("FdHessian") && hRef is not null)
        {
            Call("FdHessian");
            fdHessian = Digits(Flatten(bench.LastFdHessian), hRef);
            fdHessianEvaluations = bench.LastFdEvaluations;
        }

        return new Accuracy
        {
            VariableCount = bench.VariableCount,
            GeneratedVsHandWrittenGradient = gGen is not null && gHand is not null ? Digits(gHand, gGen) : null,
            GeneratedVsHandWrittenHessian = hGen is not null && hHand is not null ? Digits(hHand, hGen) : null,
            FdGradient = fdGradient,
            FdHessian = fdHessian,
            FdHessianReference = hGen is not null ? "generated" : "hand-written",
            FdGradientEvaluations = fdGradientEvaluations,
            FdHessianEvaluations = fdHessianEvaluations,
            GeneratedValueBitExact = bitExact,
            AllocatedBytesPerCall = allocated,
            OneCallNanoseconds = oneCall,
        };
    }

    /// <summary>Normwise correct digits of <paramref name="approx"/> against <paramref name="reference"/>.</summary>
    public static double Digits(ReadOnlySpan<double> approx, ReadOnlySpan<double> reference)
    {
        if (approx.Length != reference.Length)
        {
            throw new ArgumentException("Lengths differ.", nameof(approx));
        }

        double maxDiff = 0, maxRef = 0;
        for (int i = 0; i < approx.Length; i++)
        {
            double diff = Math.Abs(approx[i] - reference[i]);
            if (double.IsNaN(diff))
            {
                return 0;
            }

            maxDiff = Math.Max(maxDiff, diff);
            maxRef = Math.Max(maxRef, Math.Abs(reference[i]));
        }

        if (maxDiff == 0)
        {
            return double.PositiveInfinity;   // identical
        }

        if (maxRef == 0)
        {
            return 0;
        }

        return Math.Clamp(-Math.Log10(maxDiff / maxRef), 0, MaxDigits);
    }

    /// <summary>One call of <paramref name="f"/> and its time in nanoseconds (thread CPU time where available).</summary>
    private static (double Ns, double Result) Timed(Func<double> f)
    {
        if (ThreadCpuClock.Instance.IsAvailable)
        {
            long start = ThreadCpuClock.Instance.GetTimestamp();
            double r = f();
            return (ThreadCpuClock.Instance.GetTimestamp() - start, r);
        }

        long t0 = System.Diagnostics.Stopwatch.GetTimestamp();
        double result = f();
        return (System.Diagnostics.Stopwatch.GetElapsedTime(t0).TotalMilliseconds * 1e6, result);
    }

    private static bool Same(double a, double b) => BitConverter.DoubleToInt64Bits(a) == BitConverter.DoubleToInt64Bits(b);

    private static double[] Flatten(double[,] m)
    {
        int rows = m.GetLength(0), cols = m.GetLength(1);
        var flat = new double[rows * cols];
        for (int i = 0; i < rows; i++)
        {
            for (int j = 0; j < cols; j++)
            {
                flat[(i * cols) + j] = m[i, j];
            }
        }

        return flat;
    }
}
