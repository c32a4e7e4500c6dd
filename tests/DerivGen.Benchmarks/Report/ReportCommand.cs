using System;
using System.Collections.Generic;
using System.Globalization;
using System.IO;
using System.Linq;
using BenchmarkDotNet.Running;

namespace DerivGen.Benchmarks.Report;

/// <summary>
/// <c>report [--quick] [--large] [--all-sizes] [--rounds R] [--filter GLOB] [--from ARTIFACTS_DIR] [--out DIR] [--label TEXT]</c>: runs the corpus with
/// BenchmarkDotNet R times (rounds; default 2 with --quick, 1 without), unless <c>--from</c> names the artifacts folder
/// of an earlier run; measures accuracy once per case; and writes RESULTS.md and cost-vs-n.svg into DIR (default:
/// docs/benchmarks of the repository). <c>--large</c> adds the opt-in control horizon at T = 10,000 and 100,000;
/// <c>--all-sizes</c> also measures its generated gradient at 100,000 with BenchmarkDotNet (left out by default: O(T²)
/// today); <c>--filter</c> may be repeated; <c>--label</c> names the code measured (a branch, a merge) in the header.
/// </summary>
internal static class ReportCommand
{
    public const string ChartFile = "cost-vs-n.svg";

    public static readonly Type[] Corpus =
    {
        typeof(RosenbrockBenchmark), typeof(TrigExpBenchmark), typeof(DecayFitBenchmark), typeof(LogisticBenchmark),
        typeof(TanhNetBenchmark), typeof(ExtendedRosenbrockBenchmark), typeof(TrajectoryBenchmark), typeof(HuberBenchmark),
        typeof(ControlHorizonBenchmark), typeof(PendulumRk4Benchmark), typeof(RecurrentBenchmark),
    };

    /// <summary>Opt-in cases (<c>--large</c>): the control horizon at T = 10,000 and 100,000, whose generated gradient
    /// is O(T²) today (minutes per call at the largest size).</summary>
    public static readonly Type[] LargeCorpus = { typeof(ControlHorizonLargeBenchmark) };

    /// <summary>Every type the report knows, in report order.</summary>
    public static IEnumerable<Type> AllTypes => Corpus.Concat(LargeCorpus);

    public static int Run(string[] args)
    {
        bool quick = false, large = false, allSizes = false;
        var globs = new List<string>();
        int? rounds = null;
        string? from = null, outDir = null, label = null;
        for (int i = 0; i < args.Length; i++)
        {
            switch (args[i])
            {
                case "--quick":
                    quick = true;
                    break;
                case "--large":
                    large = true;
                    break;
                case "--all-sizes":
                    allSizes = true;
                    break;
                case "--rounds" when i + 1 < args.Length && int.TryParse(args[i + 1], NumberStyles.None, CultureInfo.InvariantCulture, out int r) && r > 0:
                    rounds = r;
                    i++;
                    break;
                case "--filter" when i + 1 < args.Length:
                    globs.Add(args[++i]);
                    break;
                case "--from" when i + 1 < args.Length:
                    from = args[++i];
                    break;
                case "--label" when i + 1 < args.Length:
                    label = args[++i];
                    break;
                case "--out" when i + 1 < args.Length:
                    outDir = args[++i];
                    break;
                default:
                    Console.Error.WriteLine($"Unknown argument '{args[i]}'. Usage: report [--quick] [--large] [--all-sizes] [--rounds R] [--filter GLOB] [--from ARTIFACTS_DIR] [--out DIR] [--label TEXT]");
                    return 2;
            }
        }

        string root = RepositoryRoot();
        outDir ??= Path.Combine(root, "docs", "benchmarks");
        rounds ??= quick ? 2 : 1;
        IReadOnlyList<string> resultsDirs = from is null ? RunSuite(root, quick, large, allSizes, rounds.Value, globs) : ResultsOf(from);
        rounds = resultsDirs.Count;

        // With --from, pass --quick too if that run was a quick one (it only changes the report's wording).
        var (machine, measurements) = BdnResults.ReadRounds(resultsDirs);
        DateTime measured = from is null
            ? DateTime.UtcNow
            : resultsDirs.SelectMany(d => Directory.GetFiles(d, "*.json")).Max(File.GetLastWriteTimeUtc);

        var cases = new List<Case>();
        foreach (var group in measurements
                     .GroupBy(m => (m.Type, m.Parameters))
                     .OrderBy(g => Array.FindIndex(AllTypes.ToArray(), t => t.Name == g.Key.Type))
                     .ThenBy(g => SortKey(g.Key.Parameters)))
        {
            Type type = AllTypes.Single(t => t.Name == group.Key.Type);
            var methods = group.ToDictionary(m => m.Method, StringComparer.Ordinal);
            Console.WriteLine($"Accuracy: {type.Name} {group.Key.Parameters}");
            var checkedMethods = methods.Keys.ToHashSet(StringComparer.Ordinal);
            if (type.IsSubclassOf(typeof(LoopBenchmark)))
            {
                checkedMethods.Add("GeneratedGradient");   // left out of BenchmarkDotNet where too slow: one timed call
            }

            Accuracy accuracy = Accuracy.Measure(type, BdnResults.ParseParameters(group.Key.Parameters), checkedMethods);
            CheckHandWritten(type, group.Key.Parameters, accuracy);
            cases.Add(new Case { Type = type, Parameters = group.Key.Parameters, Methods = methods, Accuracy = accuracy });
        }

        Directory.CreateDirectory(outDir);
        string markdown = ReportWriter.Write(cases, machine, quick, rounds.Value, measured, ChartFile, label);
        File.WriteAllText(Path.Combine(outDir, "RESULTS.md"), markdown.Replace("\r\n", "\n", StringComparison.Ordinal));
        string runtime = string.Join(" ", machine.Runtime.Split(' ').Take(2));
        string? svg = Chart(cases, string.Create(CultureInfo.InvariantCulture,
            $"{machine.Processor}, {machine.LogicalCores} cores (shared), {runtime}, {measured:yyyy-MM-dd}{(quick ? ", quick job" : string.Empty)}; medians"));
        if (svg is not null)
        {
            File.WriteAllText(Path.Combine(outDir, ChartFile), svg);
        }

        Console.WriteLine($"Wrote {Path.Combine(outDir, "RESULTS.md")}" + (svg is null ? string.Empty : $" and {ChartFile}"));
        return 0;
    }

    /// <summary>Runs the corpus <paramref name="rounds"/> times; returns the results folders holding the JSON reports.</summary>
    private static IReadOnlyList<string> RunSuite(string root, bool quick, bool large, bool allSizes, int rounds, IReadOnlyList<string> globs)
    {
        string artifacts = Path.Combine(root, "BenchmarkDotNet.Artifacts", quick ? "report-quick" : "report-full");
        if (Directory.Exists(artifacts))
        {
            Directory.Delete(artifacts, recursive: true);   // only this run's JSON may be read
        }

        var results = new List<string>();
        for (int round = 1; round <= rounds; round++)
        {
            Console.WriteLine($"Round {round} of {rounds}");
            string roundDir = Path.Combine(artifacts, "round" + round.ToString(CultureInfo.InvariantCulture));
            BenchmarkRunner.Run(large ? AllTypes.ToArray() : Corpus, BenchConfig.Report(quick, roundDir, globs, allSizes));
            results.Add(Path.Combine(roundDir, "results"));
        }

        return results;
    }

    /// <summary>The results folders of an earlier run: ARTIFACTS/round*/results, or ARTIFACTS itself.</summary>
    private static IReadOnlyList<string> ResultsOf(string artifacts)
    {
        var rounds = Directory.GetDirectories(artifacts, "round*")
            .Select(d => Path.Combine(d, "results"))
            .Where(Directory.Exists)
            .OrderBy(d => d, StringComparer.Ordinal)
            .ToList();
        return rounds.Count > 0 ? rounds : new[] { artifacts };
    }

    /// <summary>
    /// The hand-written derivatives are the yardstick: if one disagrees with the generated one beyond rounding, a
    /// ratio against it means nothing, so the report refuses to be written.
    /// </summary>
    private static void CheckHandWritten(Type type, string parameters, Accuracy accuracy)
    {
        const double required = 10;
        foreach (var (what, digits) in new[] { ("gradient", accuracy.GeneratedVsHandWrittenGradient), ("Hessian", accuracy.GeneratedVsHandWrittenHessian) })
        {
            if (digits is double d && d < required)
            {
                throw new InvalidOperationException(
                    $"{type.Name} {parameters}: the hand-written {what} agrees with the generated one to {d.ToString("0.0", CultureInfo.InvariantCulture)} digits only (at least {required} required).");
            }
        }
    }

    private static string? Chart(IReadOnlyList<Case> cases, string subtitle)
    {
        string? loops = LoopReport.Chart(cases, subtitle);
        string? rosenbrock = RosenbrockChart(cases, subtitle);
        return rosenbrock is null ? loops : loops is null ? rosenbrock : SvgChart.Stack(rosenbrock, loops);
    }

    private static string? RosenbrockChart(IReadOnlyList<Case> cases, string subtitle)
    {
        var rosen = cases.Where(c => c.Type == typeof(ExtendedRosenbrockBenchmark)).OrderBy(c => c.N).ToList();
        if (rosen.Count < 2)
        {
            return null;
        }

        Series Line(string label, string color, string method) => new(label, color,
            rosen.Where(c => c.Median(method) is not null).Select(c => ((double)c.N, c.Median(method)!.Value)).ToList());

        var series = new[]
        {
            Line("value", "#555555", "Value"),
            Line("generated gradient", "#1f77b4", "GeneratedGradient"),
            Line("hand-written gradient", "#2ca02c", "HandWrittenGradient"),
            Line("central differences", "#d62728", "FdGradient"),
        }.Where(s => s.Points.Count > 0).ToList();
        return SvgChart.LogLog(
            "Extended Rosenbrock: median time per call",
            subtitle,
            "n (variables)",
            "time per call (log scale)",
            series,
            ns => ReportWriter.Time(ns),
            Tick);
    }

    /// <summary>A decade tick in nanoseconds as "1 ns", "10 μs", "100 ms".</summary>
    private static string Tick(double ns)
    {
        (double scale, string unit) = ns switch
        {
            < 1e3 => (1.0, "ns"),
            < 1e6 => (1e3, "μs"),
            < 1e9 => (1e6, "ms"),
            _ => (1e9, "s"),
        };
        return (ns / scale).ToString("0.###", CultureInfo.InvariantCulture) + " " + unit;
    }

    private static string SortKey(string parameters) =>
        string.Join("&", BdnResults.ParseParameters(parameters)
            .Select(kv => kv.Key + "=" + (int.TryParse(kv.Value, NumberStyles.Integer, CultureInfo.InvariantCulture, out int v) ? v.ToString("D9", CultureInfo.InvariantCulture) : kv.Value)));

    private static string RepositoryRoot()
    {
        for (var dir = new DirectoryInfo(Directory.GetCurrentDirectory()); dir is not null; dir = dir.Parent)
        {
            if (File.Exists(Path.Combine(dir.FullName, "DerivGen.sln")))
            {
                return dir.FullName;
            }
        }

        throw new InvalidOperationException("Run from inside the repository (no DerivGen.sln found above the current directory), or pass --out.");
    }
}
