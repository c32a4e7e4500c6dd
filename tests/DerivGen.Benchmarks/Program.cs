using System;
using BenchmarkDotNet.Running;
using DerivGen.Benchmarks;
using DerivGen.Benchmarks.Report;

// dotnet run -c Release --project tests/DerivGen.Benchmarks -- report [--quick]     the report (docs/benchmarks/)
// dotnet run -c Release --project tests/DerivGen.Benchmarks -- report --quick --large  also the control horizon at T = 10,000 and 100,000
// dotnet run -c Release --project tests/DerivGen.Benchmarks -- generator-cost [--probe]  generator time per edit
// dotnet run -c Release --project tests/DerivGen.Benchmarks -- probe                 accuracy and rough times, no BDN
// dotnet run -c Release --project tests/DerivGen.Benchmarks -- --filter '*Huber*'    plain BenchmarkDotNet runs
// Ratios are against each class's Value() baseline, measured in the same run. See DEVELOPERS.md.
if (args.Length > 0 && args[0] == "report")
{
    return ReportCommand.Run(args[1..]);
}

if (args.Length > 0 && args[0] == "generator-cost")
{
    return GeneratorCostBenchmark.Run(args[1..]);
}

if (args.Length > 0 && args[0] == "probe")
{
    return Probe.Run(args[1..]);
}

BenchmarkSwitcher.FromAssembly(typeof(Losses).Assembly).Run(args, BenchConfig.Interactive());
return 0;
