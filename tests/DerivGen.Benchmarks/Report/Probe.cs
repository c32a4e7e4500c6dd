using System;
using System.Collections.Generic;
using System.Diagnostics;
using System.Globalization;
using System.Linq;
using System.Reflection;
using BenchmarkDotNet.Attributes;

namespace DerivGen.Benchmarks.Report;

/// <summary>
/// <c>probe [TYPE-SUBSTRING]</c>: a fast look without BenchmarkDotNet, for development: accuracy of every case and a
/// rough median time per method (Stopwatch, a handful of calls). Not for quoting: use the report.
/// </summary>
internal static class Probe
{
    public static int Run(string[] args)
    {
        string? only = args.Length > 0 ? args[0] : null;
        foreach (Type type in (only is null ? ReportCommand.Corpus : ReportCommand.AllTypes).Where(t => only is null || t.Name.Contains(only, StringComparison.OrdinalIgnoreCase)))
        {
            PropertyInfo? param = type.GetProperties().SingleOrDefault(p => p.GetCustomAttribute<ParamsAttribute>() is not null);
            object?[] values = param?.GetCustomAttribute<ParamsAttribute>()!.Values ?? new object?[] { null };
            foreach (object? value in values)
            {
                var parameters = new Dictionary<string, string>(StringComparer.Ordinal);
                if (param is not null)
                {
                    parameters[param.Name] = Convert.ToString(value, CultureInfo.InvariantCulture)!;
                }

                int n = param?.Name switch { "N" => (int)value!, "Features" => (int)value! + 1, _ => 0 };
                var methods = LossBenchmark.MethodNames
                    .Where(m => type.GetMethod(m) is not null)
                    .Where(m => !(m.Contains("Hessian", StringComparison.Ordinal) && n > BenchConfig.MaxHessianVariables))
                    .ToHashSet(StringComparer.Ordinal);
                var sw = Stopwatch.StartNew();
                Accuracy a = Accuracy.Measure(type, parameters, methods);
                Console.WriteLine($"{type.Name} {string.Join(",", parameters.Select(kv => kv.Key + "=" + kv.Value))} n={a.VariableCount} (accuracy pass {sw.Elapsed.TotalSeconds:0.0} s)");
                Console.WriteLine($"  digits: gen~hand grad {a.GeneratedVsHandWrittenGradient:0.0}, gen~hand Hess {a.GeneratedVsHandWrittenHessian:0.0}, FD grad {a.FdGradient:0.0} ({a.FdGradientEvaluations} evals), FD Hess {a.FdHessian:0.0} vs {a.FdHessianReference} ({a.FdHessianEvaluations} evals), value bit-exact {a.GeneratedValueBitExact}");
                Console.WriteLine("  allocated per call: " + string.Join(", ", a.AllocatedBytesPerCall.Select(kv => $"{kv.Key} {kv.Value.ToString("0.#", CultureInfo.InvariantCulture)} B")));
                foreach (var (name, ns) in a.OneCallNanoseconds)
                {
                    Console.WriteLine($"  {name,-20} {ReportWriter.Time(ns),12}  (one call; not repeated)");
                    methods.Remove(name);
                }

                Time(type, parameters, methods);
            }
        }

        return 0;
    }

    private static void Time(Type type, Dictionary<string, string> parameters, ISet<string> methods)
    {
        var bench = Activator.CreateInstance(type)!;
        foreach (var (name, value) in parameters)
        {
            PropertyInfo p = type.GetProperty(name)!;
            p.SetValue(bench, Convert.ChangeType(value, p.PropertyType, CultureInfo.InvariantCulture));
        }

        type.GetMethods().Single(m => m.GetCustomAttribute<GlobalSetupAttribute>() is not null).Invoke(bench, null);
        double? valueNs = null;
        foreach (string name in LossBenchmark.MethodNames.Where(methods.Contains))
        {
            var f = type.GetMethod(name)!.CreateDelegate<Func<double>>(bench);
            f();
            var one = Stopwatch.StartNew();
            f();
            double single = one.Elapsed.TotalSeconds;
            int reps = (int)Math.Clamp(0.05 / Math.Max(single, 1e-9), 1, 1_000_000);
            var samples = new List<double>();
            for (int s = 0; s < 5; s++)
            {
                var sw = Stopwatch.StartNew();
                for (int r = 0; r < reps; r++)
                {
                    f();
                }

                samples.Add(sw.Elapsed.TotalMilliseconds * 1e6 / reps);
                if (single > 0.5)
                {
                    break;
                }
            }

            samples.Sort();
            double median = samples[samples.Count / 2];
            valueNs ??= median;
            Console.WriteLine($"  {name,-20} {ReportWriter.Time(median),12}  {median / valueNs.Value,10:0.00}x value");
        }
    }
}
