using BenchmarkDotNet.Configs;
using BenchmarkDotNet.Running;

// `dotnet run -c Release --project tests/DerivGen.Benchmarks -- --filter '*'` runs everything; add `--job short` for a
// quick run (a few minutes on 2 cores). Ratios are against each class's Value() baseline, measured in the same run.
BenchmarkSwitcher.FromAssembly(typeof(DerivGen.Benchmarks.Losses).Assembly).Run(args, DefaultConfig.Instance);
