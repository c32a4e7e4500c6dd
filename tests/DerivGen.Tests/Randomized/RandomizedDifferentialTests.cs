using System;
using System.Collections.Generic;
using System.Diagnostics;
using System.Globalization;
using System.Linq;
using System.Text;
using CsCheck;
using Xunit;
using Xunit.Abstractions;

namespace DerivGen.Tests.Randomized;

/// <summary>
/// Randomised differential testing of the generator (common practice for compilers: random programs, an independent
/// reference, shrinking of failures). Random methods — expressions over every function of the rule table, and small
/// programs with locals, compound assignments, loops over random data, branches, tuples and early returns, with random
/// sets of variables — are compiled through DerivGen in batches and their generated gradients and Hessians compared
/// with an independent forward-mode reference (<see cref="Jet"/>) and with MathNet.Numerics finite differences.
/// <para>
/// Each run uses a fixed seed and one fresh seed, both printed. Environment variables: <c>DERIVGEN_SEED</c> replays a
/// run (it replaces the fresh seed); <c>DERIVGEN_CASE</c> runs one case by its own seed (printed with each failure);
/// <c>DERIVGEN_SOAK=N</c> runs N times as many cases.
/// </para>
/// </summary>
public sealed class RandomizedDifferentialTests
{
    /// <summary>Seeds of the fixed runs (CsCheck PCG seeds; any value works, these are just ours).</summary>
    private const string FixedExpressionSeed = "00f4DpwnNNniBid1", FixedProgramSeed = "9UTurB-iDMw5";

    // Cases per run in the default mode: chosen so that the four runs together take well under a minute on a loaded
    // 2-core machine (each batch is one compilation).
    private const int ExpressionCases = 250, ProgramCases = 150, BatchSize = 300;

    private readonly ITestOutputHelper _output;

    public RandomizedDifferentialTests(ITestOutputHelper output) => _output = output;

    private static int Soak =>
        int.TryParse(Environment.GetEnvironmentVariable("DERIVGEN_SOAK"), NumberStyles.None, CultureInfo.InvariantCulture, out int n) && n > 1 ? n : 1;

    private static string FreshSeed =>
        Environment.GetEnvironmentVariable("DERIVGEN_SEED") is { Length: > 0 } replay
            ? replay
            : new PCG((uint)Random.Shared.Next(), (ulong)Random.Shared.NextInt64()).ToString();

    [Fact]
    public void RandomExpressionsWithFixedSeed() => RunOrReplay(CaseFamily.Expression, FixedExpressionSeed, ExpressionCases);

    [Fact]
    public void RandomExpressionsWithFreshSeed() => RunOrReplay(CaseFamily.Expression, FreshSeed, ExpressionCases * Soak);

    [Fact]
    public void RandomProgramsWithFixedSeed() => RunOrReplay(CaseFamily.Program, FixedProgramSeed, ProgramCases);

    [Fact]
    public void RandomProgramsWithFreshSeed() => RunOrReplay(CaseFamily.Program, FreshSeed, ProgramCases * Soak);

    private void RunOrReplay(CaseFamily family, string runSeed, int count)
    {
        if (Environment.GetEnvironmentVariable("DERIVGEN_CASE") is { Length: > 0 } caseSeed)
        {
            RandomCase single = Generate(family, caseSeed);
            _output.WriteLine("Replaying case " + caseSeed + ":\n" + single.Describe());
            Report(family, caseSeed, DifferentialRunner.Run(new[] { single }), 1, TimeSpan.Zero);
            return;
        }

        var clock = Stopwatch.StartNew();
        var generator = new CaseGenerator(family);
        var master = PCG.Parse(runSeed);
        var total = new BatchOutcome();
        for (int done = 0; done < count; done += BatchSize)
        {
            var cases = new List<RandomCase>();
            for (int i = done; i < Math.Min(count, done + BatchSize); i++)
            {
                var pcg = new PCG(master.Next(), master.Next64());
                string seed = pcg.ToString();
                RandomCase c = generator.Generate(pcg, null, out _);
                c.Seed = seed;
                cases.Add(c);
            }

            BatchOutcome outcome = DifferentialRunner.Run(cases);
            total.Checked += outcome.Checked;
            total.Points += outcome.Points;
            total.JacobianRows += outcome.JacobianRows;
            total.HessianVectorProducts += outcome.HessianVectorProducts;
            total.HessianVectorProductsNotGenerated += outcome.HessianVectorProductsNotGenerated;
            total.VectorVariants += outcome.VectorVariants;
            total.VectorVariantsRefused += outcome.VectorVariantsRefused;
            total.InlinedVariants += outcome.InlinedVariants;
            total.InlinedVariantsRefused += outcome.InlinedVariantsRefused;
            total.ReverseLoopGradients += outcome.ReverseLoopGradients;
            total.OracleEntries += outcome.OracleEntries;
            total.OracleInconclusive += outcome.OracleInconclusive;
            if (outcome.WorstReferenceRatio > total.WorstReferenceRatio)
            {
                total.WorstReferenceRatio = outcome.WorstReferenceRatio;
                total.WorstReferenceWhere = outcome.WorstReferenceWhere;
            }
            if (outcome.LargestGeneratedFile > total.LargestGeneratedFile)
            {
                total.LargestGeneratedFile = outcome.LargestGeneratedFile;
                total.LargestGeneratedSeed = outcome.LargestGeneratedSeed;
            }

            total.Failures.AddRange(outcome.Failures);
            if (total.Failures.Count > 0)
            {
                break;
            }
        }

        Report(family, runSeed, total, count, clock.Elapsed);
    }

    internal static RandomCase Generate(CaseFamily family, string caseSeed)
    {
        RandomCase c = new CaseGenerator(family).Generate(PCG.Parse(caseSeed), null, out _);
        c.Seed = caseSeed;
        return c;
    }

    private void Report(CaseFamily family, string runSeed, BatchOutcome outcome, int count, TimeSpan elapsed)
    {
        string replay = $"DERIVGEN_SEED={runSeed}";
        _output.WriteLine($"{family}: seed {runSeed} ({replay} replays this run); {outcome.Checked} of {count} methods checked at {outcome.Points} points "
            + $"({outcome.JacobianRows} Jacobian rows of variants with outputs; {outcome.VectorVariants} variants with d as a vector variable checked, "
            + $"{outcome.VectorVariantsRefused} refused; {outcome.InlinedVariants} variants with the body in an inlined helper or local function checked, {outcome.InlinedVariantsRefused} refused; {outcome.ReverseLoopGradients} gradients through loops in reverse; {outcome.HessianVectorProducts} Hessian–vector products checked, "
            + $"{outcome.HessianVectorProductsNotGenerated} methods with a Hessian but no product method), "
            + $"{outcome.Failures.Count} failed; {outcome.OracleEntries} entries compared with finite differences, "
            + $"{outcome.OracleInconclusive} inconclusive; worst |generated - reference| / tolerance = {outcome.WorstReferenceRatio:G3} ({outcome.WorstReferenceWhere}); "
            + $"largest generated file {outcome.LargestGeneratedFile} characters (case {outcome.LargestGeneratedSeed}); "
            + $"{elapsed.TotalSeconds:F1} s");

        if (outcome.Failures.Count > 0)
        {
            CaseFailure first = outcome.Failures[0];
            var message = new StringBuilder();
            message.Append($"{outcome.Failures.Count} random {family} case(s) failed (run seed {runSeed}; {replay}).\n\n");
            message.Append($"First failure: {first.Reason}\n{first.Case.Describe()}\n");

            CaseFailure shrunk = DifferentialRunner.Shrink(first, new CaseGenerator(family), PCG.Parse(first.Case.Seed), rounds: 12, candidatesPerRound: 150);
            message.Append($"\nSmallest failing case found by shrinking (replay with DERIVGEN_CASE={shrunk.Case.Seed}): {shrunk.Reason}\n{shrunk.Case.Describe()}\n");
            foreach (CaseFailure other in outcome.Failures.Skip(1).Take(3))
            {
                message.Append($"\nAlso failed: {other.Reason}\n{other.Case.Describe()}\n");
            }

            _output.WriteLine(message.ToString());
            Assert.Fail(message.ToString());
        }

        Assert.Equal(count, outcome.Checked);

        // The finite-difference oracle must actually judge: at most 5% of its entries may be too noisy to decide.
        Assert.True(outcome.OracleInconclusive <= 0.05 * outcome.OracleEntries,
            $"{outcome.OracleInconclusive} of {outcome.OracleEntries} finite-difference comparisons were inconclusive");
    }
}
