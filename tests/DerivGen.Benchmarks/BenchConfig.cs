using System;
using System.Collections.Generic;
using System.Globalization;
using System.Linq;
using BenchmarkDotNet.Columns;
using BenchmarkDotNet.Configs;
using BenchmarkDotNet.Diagnosers;
using BenchmarkDotNet.Exporters;
using BenchmarkDotNet.Exporters.Csv;
using BenchmarkDotNet.Exporters.Json;
using BenchmarkDotNet.Filters;
using BenchmarkDotNet.Jobs;
using BenchmarkDotNet.Loggers;
using BenchmarkDotNet.Running;
using BenchmarkDotNet.Toolchains.InProcess.Emit;
using Perfolizer.Horology;

namespace DerivGen.Benchmarks;

/// <summary>The BenchmarkDotNet configurations: which cases run, and the quick and full jobs of the report.</summary>
internal static class BenchConfig
{
    /// <summary>Hessian rows run only up to this many variables (a dense n×n Hessian of a larger problem is not what
    /// anyone would compute, and finite differences would take minutes).</summary>
    public const int MaxHessianVariables = 100;

    /// <summary>
    /// Loss classes whose finite-difference Hessian the quick report leaves out: with n ≈ 50 and a 10,000-sample
    /// value it costs thousands of value evaluations (seconds per call). The full report measures them.
    /// </summary>
    private static readonly string[] SlowFdHessian = { nameof(LogisticBenchmark), nameof(TanhNetBenchmark) };

    /// <summary>True if the benchmark case runs: Hessian rows only for n ≤ <see cref="MaxHessianVariables"/>, in quick
    /// mode not the slow finite-difference Hessians, and not the O(T²) generated gradient of the longest control
    /// horizon unless <paramref name="allSizes"/> (for code whose gradient is no longer quadratic).</summary>
    public static bool Include(BenchmarkCase benchmark, bool quick, bool allSizes = false)
    {
        string method = benchmark.Descriptor.WorkloadMethod.Name;
        string type = benchmark.Descriptor.Type.Name;
        if (method.Contains("Hessian", StringComparison.Ordinal) && VariableCount(benchmark) > MaxHessianVariables)
        {
            return false;
        }

        if (!allSizes && type == nameof(ControlHorizonLargeBenchmark) && method == "GeneratedGradient" && Size(benchmark) > MaxQuadraticHorizon)
        {
            return false;
        }

        return !(quick && method == "FdHessian" && SlowFdHessian.Contains(type));
    }

    /// <summary>
    /// The longest control horizon whose generated gradient BenchmarkDotNet measures: it is O(T²) today (about a
    /// second per call at 10,000, so a minute or more at 100,000). Above this the report times one call instead.
    /// </summary>
    public const int MaxQuadraticHorizon = 10_000;

    /// <summary>Why a Hessian row is absent, for the report's notes.</summary>
    public static string ExclusionNote(string type, int n, string method, bool quick)
    {
        if (method.Contains("Hessian", StringComparison.Ordinal) && n > MaxHessianVariables)
        {
            return $"Hessian rows run for n ≤ {MaxHessianVariables} only";
        }

        if (type == nameof(ControlHorizonLargeBenchmark) && method == "GeneratedGradient" && n > MaxQuadraticHorizon)
        {
            return $"O(T²) today: left out of BenchmarkDotNet above T = {MaxQuadraticHorizon:N0}; one timed call instead";
        }

        return quick && method == "FdHessian" && SlowFdHessian.Contains(type)
            ? "finite-difference Hessian left out of the quick run (seconds per call); run the full report"
            : string.Empty;
    }

    /// <summary>The size parameter of a loop family's case (T, Steps or Length), 0 for the other classes.</summary>
    private static int Size(BenchmarkCase benchmark)
    {
        foreach (var p in benchmark.Parameters.Items)
        {
            if (p.Name is nameof(ControlHorizonCase.T) or nameof(PendulumRk4Benchmark.Steps) or nameof(RecurrentBenchmark.Length))
            {
                return Convert.ToInt32(p.Value, CultureInfo.InvariantCulture);
            }
        }

        return 0;
    }

    /// <summary>The number of variables a case has, read from its parameters (the classes' own conventions).</summary>
    private static int VariableCount(BenchmarkCase benchmark)
    {
        foreach (var p in benchmark.Parameters.Items)
        {
            int value = Convert.ToInt32(p.Value, CultureInfo.InvariantCulture);
            switch (p.Name)
            {
                case nameof(ExtendedRosenbrockBenchmark.N):
                    return value;
                case nameof(LogisticBenchmark.Features):
                    return value + 1;
            }
        }

        return 0;
    }

    /// <summary>The configuration of plain runs (<c>--filter ...</c>): BenchmarkDotNet's defaults plus the case filter.</summary>
    public static IConfig Interactive() =>
        DefaultConfig.Instance.AddFilter(new SimpleFilter(b => Include(b, quick: false)));

    /// <summary>
    /// The configuration of one round of the report, in process. Quick: 2 warm-up and 5 measured iterations of about
    /// 25 ms each (a minute or two per round on 2 idle cores; indicative figures). Full: BenchmarkDotNet's default
    /// iteration counts and times. Both time with <see cref="ThreadCpuClock"/> where it is available (Linux), so that
    /// waiting for a shared core is not counted. Both export JSON (read by the report) and CSV.
    /// </summary>
    public static IConfig Report(bool quick, string artifactsPath, IReadOnlyList<string> globs, bool allSizes)
    {
        Job job = Job.Default.WithToolchain(InProcessEmitToolchain.Instance);
        if (quick)
        {
            job = job
                .WithLaunchCount(1)
                .WithWarmupCount(2)
                .WithIterationCount(5)
                .WithIterationTime(TimeInterval.FromMilliseconds(25));
        }

        if (ThreadCpuClock.Instance.IsAvailable)
        {
            job = job.WithClock(ThreadCpuClock.Instance);
        }

        job = job.WithId(quick ? "Quick" : "Full");

        ManualConfig config = ManualConfig.CreateEmpty()
            .AddJob(job)
            .AddDiagnoser(MemoryDiagnoser.Default)
            .AddColumnProvider(DefaultColumnProviders.Instance)
            .AddColumn(StatisticColumn.Median)
            .AddLogger(ConsoleLogger.Default)
            .AddExporter(JsonExporter.Full, CsvExporter.Default, MarkdownExporter.Console)
            .AddFilter(new SimpleFilter(b => Include(b, quick, allSizes)))
            .WithArtifactsPath(artifactsPath)
            .WithOptions(ConfigOptions.JoinSummary | ConfigOptions.DisableLogFile);
        if (globs.Count > 0)
        {
            config = config.AddFilter(new GlobFilter(globs.ToArray()));
        }

        return config;
    }
}
