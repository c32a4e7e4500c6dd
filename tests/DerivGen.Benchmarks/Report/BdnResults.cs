using System;
using System.Collections.Generic;
using System.IO;
using System.Linq;
using System.Text.Json;

namespace DerivGen.Benchmarks.Report;

/// <summary>One benchmark's figures as BenchmarkDotNet's full JSON exporter wrote them.</summary>
internal sealed record Measurement(
    string Type,
    string Method,
    string Parameters,
    double MedianNs,
    double Q1Ns,
    double Q3Ns,
    int Iterations,
    double? BytesAllocatedPerOperation)
{
    /// <summary>The medians of the same benchmark in every round (set when rounds are combined).</summary>
    public IReadOnlyList<double> RoundMedians { get; init; } = Array.Empty<double>();
}

/// <summary>The machine BenchmarkDotNet ran on (its HostEnvironmentInfo).</summary>
internal sealed record Machine(
    string Processor,
    int? PhysicalCores,
    int? LogicalCores,
    string Os,
    string Runtime,
    string BenchmarkDotNet);

/// <summary>Reads the <c>*-report-full.json</c> files of BenchmarkDotNet results folders.</summary>
internal static class BdnResults
{
    /// <summary>
    /// Reads one results folder per round and combines the rounds: for each benchmark, the round with the smallest
    /// median is kept (interference from other processes on a shared machine only ever adds time), and the medians of
    /// all rounds are kept beside it to show the spread.
    /// </summary>
    public static (Machine Machine, List<Measurement> Measurements) ReadRounds(IReadOnlyList<string> resultsDirectories)
    {
        Machine? machine = null;
        var all = new List<Measurement>();
        foreach (string dir in resultsDirectories)
        {
            var (m, measurements) = Read(dir);
            machine ??= m;
            all.AddRange(measurements);
        }

        var combined = all
            .GroupBy(m => (m.Type, m.Method, m.Parameters))
            .Select(g => g.MinBy(m => m.MedianNs)! with { RoundMedians = g.Select(m => m.MedianNs).ToList() })
            .ToList();
        return (machine!, combined);
    }

    public static (Machine Machine, List<Measurement> Measurements) Read(string resultsDirectory)
    {
        string[] files = Directory.GetFiles(resultsDirectory, "*-report-full.json", SearchOption.TopDirectoryOnly);
        if (files.Length == 0)
        {
            throw new InvalidOperationException($"No BenchmarkDotNet JSON report (*-report-full.json) in {resultsDirectory}.");
        }

        Machine? machine = null;
        var measurements = new List<Measurement>();
        foreach (string file in files.OrderBy(f => f, StringComparer.Ordinal))
        {
            using JsonDocument doc = JsonDocument.Parse(File.ReadAllText(file));
            JsonElement root = doc.RootElement;
            JsonElement host = root.GetProperty("HostEnvironmentInfo");
            machine ??= new Machine(
                Text(host, "ProcessorName"),
                Int(host, "PhysicalCoreCount"),
                Int(host, "LogicalCoreCount"),
                Text(host, "OsVersion"),
                Text(host, "RuntimeVersion"),
                Text(host, "BenchmarkDotNetVersion"));

            foreach (JsonElement b in root.GetProperty("Benchmarks").EnumerateArray())
            {
                if (!b.TryGetProperty("Statistics", out JsonElement stats) || stats.ValueKind != JsonValueKind.Object)
                {
                    continue;   // a benchmark that failed to run has no statistics
                }

                double? bytes = null;
                if (b.TryGetProperty("Memory", out JsonElement memory) && memory.ValueKind == JsonValueKind.Object &&
                    memory.TryGetProperty("BytesAllocatedPerOperation", out JsonElement allocated) &&
                    allocated.ValueKind == JsonValueKind.Number)
                {
                    bytes = allocated.GetDouble();
                }

                measurements.Add(new Measurement(
                    Text(b, "Type"),
                    Text(b, "Method"),
                    Text(b, "Parameters"),
                    stats.GetProperty("Median").GetDouble(),
                    stats.GetProperty("Q1").GetDouble(),
                    stats.GetProperty("Q3").GetDouble(),
                    stats.GetProperty("N").GetInt32(),
                    bytes));
            }
        }

        return (machine!, measurements);
    }

    /// <summary>"N=10&amp;Other=x" → {N: 10, Other: x}.</summary>
    public static Dictionary<string, string> ParseParameters(string parameters) =>
        parameters.Split('&', StringSplitOptions.RemoveEmptyEntries)
            .Select(p => p.Split('=', 2))
            .ToDictionary(kv => kv[0], kv => kv.Length > 1 ? kv[1] : string.Empty, StringComparer.Ordinal);

    private static string Text(JsonElement e, string name) =>
        e.TryGetProperty(name, out JsonElement v) && v.ValueKind == JsonValueKind.String ? v.GetString() ?? string.Empty : string.Empty;

    private static int? Int(JsonElement e, string name) =>
        e.TryGetProperty(name, out JsonElement v) && v.ValueKind == JsonValueKind.Number ? v.GetInt32() : null;
}
