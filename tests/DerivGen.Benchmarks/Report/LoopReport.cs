using System;
using System.Collections.Generic;
using System.Globalization;
using System.Linq;
using System.Text;

namespace DerivGen.Benchmarks.Report;

/// <summary>
/// The report's section on gradients through loops (issue 14, item 6): per family and size, the generated gradient
/// and the hand-written adjoint against the value, bytes per call, the issue's targets, and the chart panel of the
/// ratios against size.
/// </summary>
internal static class LoopReport
{
    private static readonly CultureInfo Inv = CultureInfo.InvariantCulture;

    /// <summary>The loop families in report order, with the colour of their chart lines.</summary>
    private static readonly (string Family, string Short, string Color, string Light)[] Families =
    {
        ("Control horizon", "horizon", "#1f77b4", "#9ecae1"),
        ("RK4 pendulum", "RK4", "#d62728", "#fc9272"),
        ("Recurrent model", "recurrent", "#2ca02c", "#a1d99b"),
    };

    public static bool IsLoop(Case c) => c.Type.IsSubclassOf(typeof(LoopBenchmark));

    /// <summary>The family a loop case belongs to (the two control-horizon classes are one family).</summary>
    public static string Family(Case c) => c.Type.IsSubclassOf(typeof(ControlHorizonCase)) ? "Control horizon" : Describe.Loss(c.Type);

    /// <summary>The size parameter (T, Steps or Length).</summary>
    public static int Size(Case c) =>
        BdnResults.ParseParameters(c.Parameters).Values
            .Select(v => int.TryParse(v, NumberStyles.Integer, Inv, out int n) ? n : 0)
            .FirstOrDefault();

    /// <summary>The time per call: BenchmarkDotNet's median, or the one timed call where the method was too slow for it.</summary>
    public static double? Time(Case c, string method) =>
        c.Median(method) ?? (c.Accuracy.OneCallNanoseconds.TryGetValue(method, out double ns) ? ns : null);

    private static double? Ratio(Case c, string method, string over) =>
        Time(c, method) is double a && Time(c, over) is double b && b > 0 ? a / b : null;

    private static IEnumerable<Case> Ordered(IEnumerable<Case> cases) =>
        cases.Where(IsLoop).OrderBy(c => Array.FindIndex(Families, f => f.Family == Family(c))).ThenBy(Size);

    public static void Write(StringBuilder md, IReadOnlyList<Case> cases, string chartFile)
    {
        var loops = Ordered(cases).ToList();
        if (loops.Count == 0)
        {
            return;
        }

        md.Append("## Gradients through loops\n\n");
        md.Append("Three families whose loop grows with a size the user picks (`LoopLosses.cs`), each beside the user's value " +
                  "method and a reverse sweep written by hand (`HandWrittenAdjoints.cs`, a workspace allocated once by the " +
                  "caller): a **control horizon** (T controls in one vector variable drive a position and a velocity carried " +
                  "by the loop; the variables grow with the loop), an **RK4 pendulum** (classical Runge–Kutta over N steps, " +
                  "state as scalar locals; 3 scalar variables) and a **recurrent model** h ← tanh(w₀h + w₁xₜ + w₂) (a weight " +
                  "vector of 3). All constants and data are invented.\n\n");
        md.Append(Inv, $"![Generated gradient and hand-written adjoint against the value, by size]({chartFile})\n\n");
        md.Append("| Family | size | n | value | generated gradient | hand-written adjoint | generated / value | hand-written / value | generated / hand-written | bytes per call (generated / hand-written) | digits (generated vs hand-written) |\n");
        md.Append("| --- | ---: | ---: | ---: | ---: | ---: | ---: | ---: | ---: | --- | --- |\n");
        foreach (Case c in loops)
        {
            bool once = c.Median("GeneratedGradient") is null && c.Accuracy.OneCallNanoseconds.ContainsKey("GeneratedGradient");
            md.Append(Inv, $"| {Family(c)} | {Size(c):N0} | {c.N:N0} | {ReportWriter.Time(Time(c, "Value"))} | {ReportWriter.Time(Time(c, "GeneratedGradient"))}{(once ? " (one call)" : string.Empty)} | {ReportWriter.Time(Time(c, "HandWrittenGradient"))} | {Opt(Ratio(c, "GeneratedGradient", "Value"))} | {Opt(Ratio(c, "HandWrittenGradient", "Value"))} | {Opt(Ratio(c, "GeneratedGradient", "HandWrittenGradient"))} | {Bytes(c, "GeneratedGradient")} / {Bytes(c, "HandWrittenGradient")} | {Digits(c.Accuracy.GeneratedVsHandWrittenGradient)} |\n");
        }

        md.Append("\nSize: T (control horizon), N steps (RK4), sequence length (recurrent model); n: variables. \"(one call)\": too slow " +
                  "for BenchmarkDotNet, the report times one call (thread CPU time) in its accuracy pass instead.");
        if (!loops.Any(c => c.Type == typeof(ControlHorizonLargeBenchmark)))
        {
            md.Append(" The control horizon at T = 10,000 and 100,000 is opt-in (`report --large`) and not in this run.");
        }

        md.Append("\n\n");
        WriteNoise(md, loops);
        WriteTrend(md, loops);
        WriteTargets(md, loops);
    }

    /// <summary>How far the rounds' medians (or, with one round, the iterations) of the loop cases lay apart.</summary>
    private static void WriteNoise(StringBuilder md, List<Case> loops)
    {
        var spreads = loops.SelectMany(c => c.Methods.Values.Select(m => (Label: $"{Label(c)} {Describe.Short(m.Method)}", Spread: Spread(m))))
            .Where(x => x.Spread is not null)
            .Select(x => (x.Label, Spread: x.Spread!.Value))
            .ToList();
        if (spreads.Count == 0)
        {
            return;
        }

        var worst = spreads.MaxBy(x => x.Spread);
        bool rounds = loops.SelectMany(c => c.Methods.Values).Any(m => m.RoundMedians.Count > 1);
        md.Append(Inv, $"Noise: the {(rounds ? "rounds' medians" : "interquartile ranges of the iterations")} of these {spreads.Count} measurements lay a median {Pct(MedianOf(spreads.Select(x => x.Spread)))} apart, at most {Pct(worst.Spread)} ({worst.Label}).\n\n");
    }

    private static double? Spread(Measurement m) =>
        m.RoundMedians.Count > 1 ? (m.RoundMedians.Max() - m.RoundMedians.Min()) / m.RoundMedians.Min()
        : m.MedianNs > 0 ? (m.Q3Ns - m.Q1Ns) / m.MedianNs : null;

    private static string Pct(double fraction) => (fraction * 100).ToString("0", Inv) + " %";

    /// <summary>How the generated control-horizon gradient grows, decade by decade.</summary>
    private static void WriteTrend(StringBuilder md, List<Case> loops)
    {
        var horizon = loops.Where(c => Family(c) == "Control horizon" && Time(c, "GeneratedGradient") is not null).ToList();
        if (horizon.Count < 2)
        {
            return;
        }

        var steps = horizon.Zip(horizon.Skip(1), (a, b) =>
            string.Create(Inv, $"{Size(a):N0} → {Size(b):N0}: ×{Time(b, "GeneratedGradient")!.Value / Time(a, "GeneratedGradient")!.Value:0.#} (value ×{Time(b, "Value")!.Value / Time(a, "Value")!.Value:0.#})"));
        // The last decade decides the wording: about ×100 is the T² of running derivatives, about ×10 is linear.
        Case last = horizon[^1], before = horizon[^2];
        double growth = Time(last, "GeneratedGradient")!.Value / Time(before, "GeneratedGradient")!.Value;
        double decades = Math.Log10((double)Size(last) / Size(before));
        bool quadratic = Math.Log10(growth) / decades > 1.5;
        md.Append("Growth of the generated control-horizon gradient's time per call: " + string.Join("; ", steps) +
                  (quadratic
                      ? ". The generated code carries ∂x/∂u and ∂v/∂u as T-element running derivatives updated every step, so " +
                        "its cost grows as T² (×100 per decade) while the value and the hand-written adjoint grow as T.\n\n"
                      : ". The generated gradient grows as T, like the value and the hand-written adjoint.\n\n"));
    }

    private static void WriteTargets(StringBuilder md, List<Case> loops)
    {
        var genValue = loops.Where(c => Ratio(c, "GeneratedGradient", "Value") is not null)
            .Select(c => (Title: Label(c), R: Ratio(c, "GeneratedGradient", "Value")!.Value)).ToList();
        var genHand = loops.Where(c => Ratio(c, "GeneratedGradient", "HandWrittenGradient") is not null)
            .Select(c => (Title: Label(c), R: Ratio(c, "GeneratedGradient", "HandWrittenGradient")!.Value)).ToList();
        if (genValue.Count == 0)
        {
            return;
        }

        md.Append("Against the targets of issue 14 (over the loop cases of this run):\n\n");
        md.Append("| Target | Measured | Met? |\n| --- | --- | --- |\n");
        double median = MedianOf(genValue.Select(x => x.R));
        var worst = genValue.MaxBy(x => x.R);
        md.Append(Inv, $"| generated gradient / value ≤ 3 (median) | median {ReportWriter.X(median)} over {genValue.Count} cases ({PerFamily(loops, "Value")}) | {Met(median <= 3)} |\n");
        md.Append(Inv, $"| generated gradient / value ≤ 5 (worst) | worst {ReportWriter.X(worst.R)} ({worst.Title}); above 5: {(genValue.Any(x => x.R > 5) ? string.Join(", ", genValue.Where(x => x.R > 5).Select(x => x.Title)) : "none")} | {Met(worst.R <= 5)} |\n");
        if (genHand.Count > 0)
        {
            double m = MedianOf(genHand.Select(x => x.R));
            md.Append(Inv, $"| generated / hand-written adjoint ≤ 1.3 (median) | median {ReportWriter.X(m)} over {genHand.Count} cases ({PerFamily(loops, "HandWrittenGradient")}) | {Met(m <= 1.3)} |\n");
        }

        var allocating = loops.Where(c => (c.Allocated("GeneratedGradient") ?? 0) > 0)
            .Select(c => $"{Label(c)}: {Bytes(c, "GeneratedGradient")}").ToList();
        md.Append(Inv, $"| 0 bytes per call (generated gradient) | {(allocating.Count == 0 ? "0 B everywhere" : string.Join("; ", allocating))} | {Met(allocating.Count == 0)} |\n\n");
    }

    /// <summary>The chart panel: generated gradient / value (solid colours) and hand-written adjoint / value (light
    /// colours) against size, one pair of lines per family.</summary>
    public static string? Chart(IReadOnlyList<Case> cases, string subtitle)
    {
        var loops = Ordered(cases).ToList();
        var series = new List<Series>();
        foreach (var (family, label, color, light) in Families)
        {
            var of = loops.Where(c => Family(c) == family).ToList();
            Series Line(string text, string col, string method) => new(text, col,
                of.Where(c => Ratio(c, method, "Value") is not null).Select(c => ((double)Size(c), Ratio(c, method, "Value")!.Value)).ToList());
            series.Add(Line(label + ", generated", color, "GeneratedGradient"));
            series.Add(Line(label + ", by hand", light, "HandWrittenGradient"));
        }

        series = series.Where(s => s.Points.Count > 0).ToList();
        return series.Count == 0
            ? null
            : SvgChart.LogLog("Gradients through loops: time per call ÷ value", subtitle, "size (T, steps, sequence length)",
                "× value (log scale)", series, ReportWriter.X, r => r.ToString("0.###", Inv) + "×");
    }

    /// <summary>"family median …" for each family: the median over a family's sizes of generated / <paramref name="over"/>.</summary>
    private static string PerFamily(List<Case> loops, string over) =>
        string.Join(", ", loops.GroupBy(Family)
            .Select(g => (g.Key, R: g.Select(c => Ratio(c, "GeneratedGradient", over)).OfType<double>().ToList()))
            .Where(x => x.R.Count > 0)
            .Select(x => $"{x.Key} {ReportWriter.X(MedianOf(x.R))}"));

    private static string Label(Case c) => $"{Family(c)} {Size(c).ToString("N0", Inv)}";

    private static string Opt(double? r) => r is double v ? ReportWriter.X(v) : "—";

    private static string Bytes(Case c, string method) => c.Allocated(method) switch
    {
        null => "—",
        < 1024 and double b => b.ToString("0", Inv) + " B",
        < 1024 * 1024 and double b => (b / 1024).ToString("0.0", Inv) + " KB",
        double b => (b / (1024 * 1024)).ToString("0.0", Inv) + " MB",
    };

    private static string Digits(double? d) => d switch
    {
        null => "—",
        double.PositiveInfinity => "identical",
        double v => v.ToString("0.0", Inv),
    };

    private static string Met(bool met) => met ? "yes" : "**no**";

    private static double MedianOf(IEnumerable<double> values)
    {
        var sorted = values.OrderBy(v => v).ToList();
        int mid = sorted.Count / 2;
        return sorted.Count % 2 == 1 ? sorted[mid] : (sorted[mid - 1] + sorted[mid]) / 2;
    }
}
