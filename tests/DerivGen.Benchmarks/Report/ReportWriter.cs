using System;
using System.Collections.Generic;
using System.Globalization;
using System.Linq;
using System.Text;

namespace DerivGen.Benchmarks.Report;

/// <summary>One loss at one parameter setting: its measurements and its accuracy.</summary>
internal sealed class Case
{
    public required Type Type { get; init; }

    public required string Parameters { get; init; }

    public required Dictionary<string, Measurement> Methods { get; init; }

    public required Accuracy Accuracy { get; init; }

    public int N => Accuracy.VariableCount;

    public string Title => Describe.Title(Type, Parameters);

    public double? Median(string method) => Methods.TryGetValue(method, out Measurement? m) ? m.MedianNs : null;

    /// <summary>Bytes allocated per call, counted exactly on the calling thread by the accuracy pass.</summary>
    public double? Allocated(string method) => Accuracy.AllocatedBytesPerCall.TryGetValue(method, out double b) ? b : null;

    public double? Ratio(string method, string over) =>
        Median(method) is double a && Median(over) is double b && b > 0 ? a / b : null;

    /// <summary>What a generated/finite-difference row is compared with: generated → hand-written, FD → generated
    /// (or hand-written where nothing was generated).</summary>
    public string? Reference(string method) => method switch
    {
        "GeneratedGradient" => "HandWrittenGradient",
        "GeneratedHessian" => "HandWrittenHessian",
        "FdGradient" => Methods.ContainsKey("GeneratedGradient") ? "GeneratedGradient" : "HandWrittenGradient",
        "FdHessian" => Methods.ContainsKey("GeneratedHessian") ? "GeneratedHessian" : "HandWrittenHessian",
        _ => null,
    };
}

/// <summary>Names and descriptions of the corpus, for the report.</summary>
internal static class Describe
{
    public static string Loss(Type type) => type.Name switch
    {
        nameof(RosenbrockBenchmark) => "Rosenbrock",
        nameof(TrigExpBenchmark) => "Trigonometric/exponential mix",
        nameof(DecayFitBenchmark) => "Least squares a·exp(−b·t) + c",
        nameof(LogisticBenchmark) => "Logistic regression",
        nameof(TanhNetBenchmark) => "Two-layer tanh network",
        nameof(ExtendedRosenbrockBenchmark) => "Extended Rosenbrock",
        nameof(TrajectoryBenchmark) => "Simulated trajectory",
        nameof(HuberBenchmark) => "Huber regression",
        nameof(ControlHorizonBenchmark) or nameof(ControlHorizonLargeBenchmark) => "Control horizon",
        nameof(PendulumRk4Benchmark) => "RK4 pendulum",
        nameof(RecurrentBenchmark) => "Recurrent model",
        _ => type.Name,
    };

    public static string Shape(Type type) => type.Name switch
    {
        nameof(RosenbrockBenchmark) => "straight-line code, 2 scalar variables",
        nameof(TrigExpBenchmark) => "straight-line code with sin, cos, exp, log and tanh, 3 scalar variables",
        nameof(DecayFitBenchmark) => "a sum over 10,000 data points, 3 scalar variables",
        nameof(LogisticBenchmark) => "10,000 samples, a scalar bias and a vector of weights (`double[]`), nested loop",
        nameof(TanhNetBenchmark) => "1,000 samples, 4 inputs, 8 hidden units: 49 weights in one vector variable, triply nested loop",
        nameof(ExtendedRosenbrockBenchmark) => "one vector variable (`ReadOnlySpan<double>`), a loop over pairs",
        nameof(TrajectoryBenchmark) => "a recurrence: 200 explicit Euler steps of a projectile with quadratic drag, 3 scalar variables",
        nameof(HuberBenchmark) => "10,000 samples, a vector of 8 coefficients, a branch (|r| ≤ δ) per sample",
        nameof(ControlHorizonBenchmark) or nameof(ControlHorizonLargeBenchmark) => "T controls in one vector variable (`ReadOnlySpan<double>`) drive a position and a velocity carried by the loop (semi-implicit Euler, cubic restoring force), cost summed over every step; compared with a hand-written reverse sweep",
        nameof(PendulumRk4Benchmark) => "a damped pendulum, classical RK4 over N steps with the state as scalar locals, squared misfit to observations after every step; 3 scalar variables (damping, stiffness, initial angle); compared with a hand-written reverse sweep",
        nameof(RecurrentBenchmark) => "a one-unit recurrent model h ← tanh(w₀h + w₁xₜ + w₂) over a sequence, squared error after every step; a weight vector of 3; compared with a hand-written reverse sweep",
        _ => string.Empty,
    };

    public static string Title(Type type, string parameters)
    {
        var p = BdnResults.ParseParameters(parameters);
        string suffix = type.Name switch
        {
            nameof(LogisticBenchmark) when p.TryGetValue("Features", out string? f) => $", {f} features",
            nameof(ExtendedRosenbrockBenchmark) when p.TryGetValue("N", out string? n) => $", n = {n}",
            nameof(ControlHorizonBenchmark) or nameof(ControlHorizonLargeBenchmark) when p.TryGetValue("T", out string? t) => $", T = {Thousands(t)}",
            nameof(PendulumRk4Benchmark) when p.TryGetValue("Steps", out string? n) => $", N = {Thousands(n)}",
            nameof(RecurrentBenchmark) when p.TryGetValue("Length", out string? n) => $", length {Thousands(n)}",
            _ => string.Empty,
        };
        return Loss(type) + suffix;
    }

    private static string Thousands(string n) =>
        int.TryParse(n, NumberStyles.Integer, CultureInfo.InvariantCulture, out int v) ? v.ToString("N0", CultureInfo.InvariantCulture) : n;

    public static string Method(string method) => method switch
    {
        "Value" => "value (the user's method; baseline)",
        "GeneratedGradient" => "generated value + gradient",
        "HandWrittenGradient" => "hand-written value + gradient",
        "FdGradient" => "central differences, gradient (MathNet)",
        "GeneratedHessian" => "generated value + gradient + Hessian",
        "HandWrittenHessian" => "hand-written value + gradient + Hessian",
        "FdHessian" => "central differences, Hessian (MathNet)",
        _ => method,
    };

    public static string Short(string method) => method switch
    {
        "GeneratedGradient" or "GeneratedHessian" => "generated",
        "HandWrittenGradient" or "HandWrittenHessian" => "hand-written",
        _ => method,
    };
}

/// <summary>Writes RESULTS.md from the cases.</summary>
internal static class ReportWriter
{
    private static readonly CultureInfo Inv = CultureInfo.InvariantCulture;

    public static string Write(IReadOnlyList<Case> cases, Machine machine, bool quick, int rounds, DateTime date, string chartFile, string? label = null)
    {
        var md = new StringBuilder();
        md.Append("# DerivGen benchmark results\n\n");
        md.Append("<!-- Written by scripts/bench-report.sh (tests/DerivGen.Benchmarks, `report` command). Do not edit by hand. -->\n\n");
        md.Append(Inv, $"- **Date:** {date:yyyy-MM-dd} (UTC)\n");
        if (label is not null)
        {
            md.Append(Inv, $"- **Code:** {label}\n");
        }

        md.Append(Inv, $"- **Machine:** {machine.Processor}; {Cores(machine)}; {machine.Os}\n");
        md.Append(Inv, $"- **Runtime:** {machine.Runtime}; BenchmarkDotNet {machine.BenchmarkDotNet}, MemoryDiagnoser\n");
        md.Append(quick
            ? "- **Job:** quick (`--quick`): in process, 2 warm-up and 5 measured iterations of about 25 ms each per benchmark. Indicative figures.\n"
            : "- **Job:** full: BenchmarkDotNet's default iteration counts and times, in process.\n");
        md.Append("- **JIT:** tiered compilation off (`<TieredCompilation>false</TieredCompilation>` in the benchmark project): every method runs fully optimised from its first call, so short in-process iterations never measure unoptimised code.\n");
        md.Append(ThreadCpuClock.Instance.IsAvailable
            ? "- **Clock:** the benchmark thread's CPU time (`clock_gettime(CLOCK_THREAD_CPUTIME_ID)`), not wall-clock time, so that time spent waiting for a shared core is not counted (see Noise).\n"
            : "- **Clock:** wall-clock time (BenchmarkDotNet's default; the thread CPU-time clock is available on Linux only).\n");
        md.Append(rounds > 1
            ? string.Create(Inv, $"- **Rounds:** the whole corpus ran {rounds} times one after the other; each figure is the smallest of the rounds' medians (other processes can only add time), and the spread column shows how far the rounds' medians lie apart.\n")
            : "- **Rounds:** one; the spread column is the interquartile range of the measured iterations relative to their median.\n");
        md.Append("- **Noise:** the build machine's 2 cores are shared with other engineers' builds and tests while this runs " +
                  "(often several processes per core). CPU time removes most of that, but caches and memory bandwidth are " +
                  "shared too, so single figures can still be off by tens of percent, and more for calls of a few " +
                  "nanoseconds. Ratios of methods measured next to each other are more stable than absolute times; " +
                  "re-run before trusting a difference under about 20 %.\n");
        md.Append("- **What is quoted:** medians of the measured iterations, and ratios of medians within one loss (same run, same " +
                  "data, same point). All data and points are invented.\n\n");

        // The summary and the first targets are those of the original corpus; the loop families have their own section.
        var corpus = cases.Where(c => !LoopReport.IsLoop(c)).ToList();
        WriteSummary(md, corpus);
        WriteTargets(md, corpus);

        md.Append("## Cost versus n (extended Rosenbrock)\n\n");
        md.Append(Inv, $"![Median time per call versus n for the extended Rosenbrock function]({chartFile})\n\n");
        WriteChartTable(md, cases);
        LoopReport.Write(md, cases, chartFile);

        md.Append("## Per loss\n\n");
        md.Append("Columns: median time per call; the spread (largest minus smallest median of the rounds, relative to the " +
                  "smallest; with one round, the interquartile range of the iterations relative to the median); the ratio to the " +
                  "value method; the ratio to what the row is compared with (generated → hand-written, finite " +
                  "differences → generated, or hand-written where nothing is generated); bytes allocated per call (counted exactly " +
                  "on the calling thread, see below); and " +
                  "correct digits against that reference.\n\n");
        foreach (var group in cases.GroupBy(c => Describe.Loss(c.Type)))
        {
            md.Append(Inv, $"### {group.Key}\n\n");
            md.Append(Inv, $"{Capitalise(Describe.Shape(group.First().Type))}.\n\n");
            foreach (Case c in group)
            {
                WriteCase(md, c, quick);
            }
        }

        WriteMethod(md);
        return md.ToString();
    }

    private static void WriteSummary(StringBuilder md, IReadOnlyList<Case> cases)
    {
        md.Append("## Summary\n\n");
        md.Append("| Loss | n | generated gradient / value | hand-written gradient / value | generated / hand-written gradient | generated Hessian / value | generated / hand-written Hessian | FD / generated gradient | FD digits (gradient, Hessian) | allocated by generated (gradient / Hessian) |\n");
        md.Append("| --- | ---: | ---: | ---: | ---: | ---: | ---: | ---: | --- | --- |\n");
        foreach (Case c in cases)
        {
            string hessValue = c.Ratio("GeneratedHessian", "Value") is double hv ? X(hv) : "—";
            string hessHand = c.Ratio("GeneratedHessian", "HandWrittenHessian") is double hh ? X(hh) : "—";
            string fdGrad = c.Ratio("FdGradient", "GeneratedGradient") is double fg ? X(fg) : "—";
            string digits = $"{Digits(c.Accuracy.FdGradient)}, {Digits(c.Accuracy.FdHessian)}";
            var allocated = new[] { "GeneratedGradient", "GeneratedHessian" }
                .Where(c.Methods.ContainsKey)
                .Select(m => Bytes(c.Allocated(m)));
            md.Append(Inv, $"| {c.Title} | {c.N} | {Opt(c.Ratio("GeneratedGradient", "Value"))} | {Opt(c.Ratio("HandWrittenGradient", "Value"))} | {Opt(c.Ratio("GeneratedGradient", "HandWrittenGradient"))} | {hessValue} | {hessHand} | {fdGrad} | {digits} | {string.Join(" / ", allocated)} |\n");
        }

        md.Append("\n\"—\": not measured; the data losses with a vector variable are marked `Hessian = false` in the corpus (their " +
                  "pairwise generated Hessian takes about a second per call; see the notes under each loss). FD = MathNet.Numerics central differences; its digits are against the generated " +
                  "result (the Hessian's against the hand-written one where nothing is generated).\n\n");
    }

    private static void WriteTargets(StringBuilder md, IReadOnlyList<Case> cases)
    {
        md.Append("## Against the targets of the performance issue\n\n");
        md.Append("| Target | Measured | Met? |\n| --- | --- | --- |\n");

        var genHand = cases.Where(c => c.Ratio("GeneratedGradient", "HandWrittenGradient") is not null)
            .Select(c => (c.Title, R: c.Ratio("GeneratedGradient", "HandWrittenGradient")!.Value)).ToList();
        if (genHand.Count > 0)
        {
            double median = MedianOf(genHand.Select(x => x.R));
            var worst = genHand.MaxBy(x => x.R);
            md.Append(Inv, $"| generated / hand-written gradient: median ≤ 1.05 | median {X(median)} over {genHand.Count} cases | {Met(median <= 1.05)} |\n");
            md.Append(Inv, $"| generated / hand-written gradient: none above 1.25 | worst {X(worst.R)} ({worst.Title}); above 1.25: {Count(genHand, 1.25)} | {Met(worst.R <= 1.25)} |\n");
        }

        var genValue = cases.Where(c => c.Ratio("GeneratedGradient", "Value") is not null)
            .Select(c => (c.Title, R: c.Ratio("GeneratedGradient", "Value")!.Value)).ToList();
        if (genValue.Count > 0)
        {
            double median = MedianOf(genValue.Select(x => x.R));
            var worst = genValue.MaxBy(x => x.R);
            md.Append(Inv, $"| generated gradient / value ≤ 4 for every loss | worst {X(worst.R)} ({worst.Title}); above 4: {Count(genValue, 4)} | {Met(worst.R <= 4)} |\n");
            md.Append(Inv, $"| generated gradient / value: median ≤ 3 | median {X(median)} | {Met(median <= 3)} |\n");
        }

        var hess = cases.Where(c => c.Ratio("GeneratedHessian", "HandWrittenHessian") is not null)
            .Select(c => c.Ratio("GeneratedHessian", "HandWrittenHessian")!.Value).ToList();
        if (hess.Count > 0)
        {
            double median = MedianOf(hess);
            md.Append(Inv, $"| generated / hand-written Hessian: median ≤ 1.25 | median {X(median)} over the {hess.Count} cases that have a generated Hessian | {Met(median <= 1.25)} |\n");
        }

        var allocating = cases.SelectMany(c => new[] { "GeneratedGradient", "GeneratedHessian" }
                .Where(c.Methods.ContainsKey)
                .Where(m => (c.Allocated(m) ?? 0) > 0)
                .Select(m => $"{c.Title} ({Describe.Short(m)} {(m.EndsWith("Hessian", StringComparison.Ordinal) ? "Hessian" : "gradient")}: {Bytes(c.Allocated(m))})"))
            .ToList();
        md.Append(Inv, $"| 0 bytes allocated per call by every generated method | {(allocating.Count == 0 ? "0 B everywhere" : string.Join("; ", allocating))} | {Met(allocating.Count == 0)} |\n");

        var fdSpeed = cases.Where(c => c.Ratio("FdGradient", "GeneratedGradient") is not null)
            .Select(c => (c.Title, c.N, R: c.Ratio("FdGradient", "GeneratedGradient")!.Value)).ToList();
        if (fdSpeed.Count > 0)
        {
            var slow = fdSpeed.Where(x => x.R < x.N / 2.0).ToList();
            md.Append(Inv, $"| finite differences ≥ n/2 times slower than the generated gradient | {(slow.Count == 0 ? "every case" : "missed by: " + string.Join("; ", slow.Select(x => $"{x.Title} ({X(x.R)} < {X(x.N / 2.0)})")))} | {Met(slow.Count == 0)} |\n");
        }

        var extra = cases.Where(c => c.Accuracy.FdGradient is not null && c.Accuracy.GeneratedVsHandWrittenGradient is not null)
            .Select(c => (c.Title, Gen: Cap(c.Accuracy.GeneratedVsHandWrittenGradient!.Value), Fd: c.Accuracy.FdGradient!.Value)).ToList();
        if (extra.Count > 0)
        {
            var fewer = extra.Where(x => x.Gen - x.Fd < 5).ToList();
            double least = extra.Min(x => x.Gen - x.Fd);
            md.Append(Inv, $"| at least 5 more correct digits than finite differences (gradient) | fewest extra digits {least.ToString("0.0", Inv)}{(fewer.Count == 0 ? string.Empty : " (" + string.Join("; ", fewer.Select(x => x.Title)) + ")")} | {Met(fewer.Count == 0)} |\n");
        }

        md.Append("\nThe generated gradient's correct digits are taken as its agreement with the independently written " +
                  "hand-written gradient (two exact formulas agree to rounding); the finite differences' as their agreement " +
                  "with the generated gradient.\n\n");
    }

    private static void WriteChartTable(StringBuilder md, IReadOnlyList<Case> cases)
    {
        var rosen = cases.Where(c => c.Type == typeof(ExtendedRosenbrockBenchmark)).OrderBy(c => c.N).ToList();
        if (rosen.Count == 0)
        {
            return;
        }

        md.Append("| n | value | generated gradient | hand-written gradient | FD gradient | generated / value | FD / generated |\n");
        md.Append("| ---: | ---: | ---: | ---: | ---: | ---: | ---: |\n");
        foreach (Case c in rosen)
        {
            md.Append(Inv, $"| {c.N} | {Time(c.Median("Value"))} | {Time(c.Median("GeneratedGradient"))} | {Time(c.Median("HandWrittenGradient"))} | {Time(c.Median("FdGradient"))} | {Opt(c.Ratio("GeneratedGradient", "Value"))} | {Opt(c.Ratio("FdGradient", "GeneratedGradient"))} |\n");
        }

        md.Append("\nMedians; the chart's axes are logarithmic. Central differences cost 2n value evaluations, so their line " +
                  "is one power of n steeper than the others.\n\n");
    }

    private static void WriteCase(StringBuilder md, Case c, bool quick)
    {
        md.Append(Inv, $"#### {c.Title}{(c.Title.Contains("n =", StringComparison.Ordinal) ? string.Empty : $" (n = {c.N})")}\n\n");
        md.Append("| Method | median | spread | × value | compared with | allocated | correct digits |\n");
        md.Append("| --- | ---: | ---: | ---: | --- | ---: | --- |\n");
        var notes = new List<string>();
        foreach (string method in LossBenchmark.MethodNames)
        {
            if (!c.Methods.TryGetValue(method, out Measurement? m))
            {
                if (c.Accuracy.OneCallNanoseconds.TryGetValue(method, out double once))
                {
                    string onceCompared = c.Reference(method) is string rr && c.Median(rr) is double refNs ? $"{X(once / refNs)} {Describe.Short(rr)}" : string.Empty;
                    string onceValue = c.Median("Value") is double v ? X(once / v) : "—";
                    md.Append(Inv, $"| {Describe.Method(method)} | {Time(once)} (one call) | — | {onceValue} | {onceCompared} | {Bytes(c.Allocated(method))} | {DigitsCell(c, method)} |\n");
                    notes.Add($"The {Describe.Method(method)} is too slow for BenchmarkDotNet at this size: one call, timed in the accuracy pass ({BenchConfig.ExclusionNote(c.Type.Name, c.N, method, quick)}).");
                    continue;
                }

                string? why = MissingReason(c, method, quick);
                if (why is not null)
                {
                    md.Append(Inv, $"| {Describe.Method(method)} | — | | | | | {why} |\n");
                }

                continue;
            }

            string spread = m.RoundMedians.Count > 1
                ? Pct((m.RoundMedians.Max() - m.RoundMedians.Min()) / m.RoundMedians.Min())
                : m.MedianNs > 0 ? Pct((m.Q3Ns - m.Q1Ns) / m.MedianNs) : "—";
            string times = method == "Value" ? "1" : Opt(c.Ratio(method, "Value"));
            string compared = c.Reference(method) is string r && c.Ratio(method, r) is double ratio
                ? $"{X(ratio)} {Describe.Short(r)}"
                : string.Empty;
            md.Append(Inv, $"| {Describe.Method(method)} | {Time(m.MedianNs)} | {spread} | {times} | {compared} | {Bytes(c.Allocated(method))} | {DigitsCell(c, method)} |\n");
        }

        md.Append('\n');
        if (c.Accuracy.GeneratedValueBitExact is bool exact)
        {
            notes.Add(exact
                ? "The generated methods return the user's value bit for bit."
                : "**The generated methods do not return the user's value bit for bit.**");
        }

        if (c.Accuracy.FdGradientEvaluations > 0)
        {
            notes.Add($"Central differences: {c.Accuracy.FdGradientEvaluations} value evaluations per gradient" +
                      (c.Accuracy.FdHessianEvaluations > 0 ? $", {c.Accuracy.FdHessianEvaluations} per Hessian." : "."));
        }

        if (notes.Count > 0)
        {
            md.Append(string.Join(" ", notes)).Append("\n\n");
        }
    }

    private static string? MissingReason(Case c, string method, bool quick)
    {
        if (LoopReport.IsLoop(c) && c.Type.GetMethod(method) is null)
        {
            return null;   // the loop families measure gradients only
        }

        if (method == "GeneratedHessian" && c.Type.GetMethod(method) is null)
        {
            return "not generated in the corpus (`Hessian = false`): a Hessian with respect to a vector variable is assembled pair by pair, n(n + 1)/2 passes over the loss, about a second per call at this size";
        }

        if (c.Type.GetMethod(method) is null)
        {
            return null;
        }

        string note = BenchConfig.ExclusionNote(c.Type.Name, c.N, method, quick);
        return note.Length > 0 ? "not run: " + note : "not run (filtered out)";
    }

    private static string DigitsCell(Case c, string method)
    {
        Accuracy a = c.Accuracy;
        return method switch
        {
            "GeneratedGradient" => a.GeneratedVsHandWrittenGradient is double d ? $"{Digits(d)} vs hand-written" : string.Empty,
            "GeneratedHessian" => a.GeneratedVsHandWrittenHessian is double h ? $"{Digits(h)} vs hand-written" : string.Empty,
            "FdGradient" => a.FdGradient is double f ? $"{Digits(f)} vs {(c.Methods.ContainsKey("GeneratedGradient") ? "generated" : "hand-written")}" : string.Empty,
            "FdHessian" => a.FdHessian is double fh ? $"{Digits(fh)} vs {a.FdHessianReference}" : string.Empty,
            _ => string.Empty,
        };
    }

    private static void WriteMethod(StringBuilder md)
    {
        md.Append("## How these figures are made\n\n");
        md.Append("- `tests/DerivGen.Benchmarks` holds the corpus (`Losses.cs`, the user's code with `[Differentiate]`), the " +
                  "hand-written derivatives (`HandWritten.cs`: reverse accumulation or forward sensitivities, shared " +
                  "subexpressions, symmetric Hessians filled from one triangle) and one benchmark class per loss " +
                  "(`Benchmarks.cs`).\n");
        md.Append("- Finite differences: `MathNet.Numerics.Differentiation.NumericalJacobian` and `NumericalHessian` with " +
                  "3-point central differences (the library's default step) on the user's value method, as a user without " +
                  "DerivGen would call them; they allocate their result arrays, as the library does.\n");
        md.Append("- Correct digits are normwise: −log10(max|approx − reference| / max|reference|), computed once per case " +
                  "outside the timed region; \"identical\" means bit-for-bit equal results.\n");
        md.Append("- Allocation: `GC.GetAllocatedBytesForCurrentThread()` around " + Accuracy.AllocationCalls.ToString(Inv) + " warm calls of each method " +
                  "(the least of three such batches; one call of the finite differences), outside BenchmarkDotNet, so the count is exact. BenchmarkDotNet's " +
                  "MemoryDiagnoser figures are in the JSON and CSV it exports (under `BenchmarkDotNet.Artifacts/`); in process " +
                  "they can include a few bytes per call of the runtime's own background allocations.\n");
        md.Append("- Gradients through loops: `LoopLosses.cs` (the user's code), `HandWrittenAdjoints.cs` (reverse sweeps " +
                  "written by hand, checked against the generated gradient at setup and by this report) and " +
                  "`LoopBenchmarks.cs`. The control horizon at T = 10,000 and 100,000 is opt-in (`--large`); a method whose " +
                  "call takes over " + Accuracy.SlowCallSeconds.ToString(Inv) + " s in the accuracy pass is called once there, and that call's time is quoted " +
                  "as \"(one call)\".\n");
        md.Append("- Regenerate with `scripts/bench-report.sh --quick` (a few minutes) or `scripts/bench-report.sh` (the " +
                  "full job; about two hours on 2 cores).\n");
    }

    private static string Cores(Machine m) =>
        (m.PhysicalCores, m.LogicalCores) switch
        {
            (int p, int l) => $"{p} physical / {l} logical cores",
            (null, int l) => $"{l} logical cores",
            _ => "cores unknown",
        };

    private static int Count(IEnumerable<(string Title, double R)> values, double bound) => values.Count(v => v.R > bound);

    private static double MedianOf(IEnumerable<double> values)
    {
        var sorted = values.OrderBy(v => v).ToList();
        int mid = sorted.Count / 2;
        return sorted.Count % 2 == 1 ? sorted[mid] : (sorted[mid - 1] + sorted[mid]) / 2;
    }

    private static string Met(bool met) => met ? "yes" : "**no**";

    private static double Cap(double digits) => Math.Min(digits, Accuracy.MaxDigits);

    private static string Capitalise(string s) => s.Length == 0 ? s : char.ToUpperInvariant(s[0]) + s[1..];

    public static string X(double ratio) => ratio switch
    {
        < 10 => ratio.ToString("0.00", Inv) + "×",
        < 100 => ratio.ToString("0.0", Inv) + "×",
        _ => ratio.ToString("#,0", Inv) + "×",
    };

    private static string Opt(double? ratio) => ratio is double r ? X(r) : "—";

    private static string Pct(double fraction) => (fraction * 100).ToString("0", Inv) + " %";

    private static string Digits(double? digits) => digits switch
    {
        null => "—",
        double.PositiveInfinity => "identical",
        double d => d.ToString("0.0", Inv),
    };

    public static string Time(double? ns) => ns switch
    {
        null => "—",
        < 1e3 => Sig(ns.Value) + " ns",
        < 1e6 => Sig(ns.Value / 1e3) + " μs",
        < 1e9 => Sig(ns.Value / 1e6) + " ms",
        _ => Sig(ns.Value / 1e9) + " s",
    };

    private static string Sig(double v) => v switch
    {
        < 10 => v.ToString("0.00", Inv),
        < 100 => v.ToString("0.0", Inv),
        _ => v.ToString("0", Inv),
    };

    private static string Bytes(double? bytes) => bytes switch
    {
        null => "—",
        < 1024 => bytes.Value.ToString("0", Inv) + " B",
        < 1024 * 1024 => (bytes.Value / 1024).ToString("0.0", Inv) + " KB",
        _ => (bytes.Value / (1024 * 1024)).ToString("0.0", Inv) + " MB",
    };
}
