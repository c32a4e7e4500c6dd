#!/usr/bin/env bash
# Runs the benchmark corpus (tests/DerivGen.Benchmarks) and writes docs/benchmarks/RESULTS.md and
# docs/benchmarks/cost-vs-n.svg. A thin wrapper: the work is done by the benchmark program's `report` command.
#
#   scripts/bench-report.sh --quick      a few minutes on 2 cores: in process, short iterations, 2 rounds,
#                                        no finite-difference Hessians of the two ~50-variable data losses
#   scripts/bench-report.sh              the full job (BenchmarkDotNet default iterations, in process): about two hours
#
# Other arguments go to the report command: --rounds R, --filter GLOB (BenchmarkDotNet glob on Type.Method),
# --from ARTIFACTS_DIR (rewrite the report from an earlier run's results without measuring), --out DIR.
set -euo pipefail
cd "$(dirname "$0")/.."
dotnet build tests/DerivGen.Benchmarks -c Release -nologo -v quiet
exec dotnet run -c Release --no-build --project tests/DerivGen.Benchmarks -- report "$@"
