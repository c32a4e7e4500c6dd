using DerivGen.Tests.Infrastructure;
using Xunit;

namespace DerivGen.Tests.Numerics;

public sealed class FoundByRandomTestsFixture : CompiledFixture
{
    // Minimal reproductions of generator bugs found by the randomised differential tests, kept as regressions.
    public const string Source = """
        using System;
        using DerivGen;

        public static partial class Found
        {
            // Bug: loop-carried locals named like the generated span parameters were declared under the same names.
            [Differentiate]
            public static double CarriedLocalsNamedLikeTheSpans(double x)
            {
                double gradient = 0, hessian = 1;
                for (int i = 0; i < 3; i++)
                {
                    gradient += x * i;
                    hessian *= x;
                }

                return gradient + hessian;
            }

            // Bug: a tuple literal with a bare name as an element (inferred element name, so a tuple conversion) was refused.
            [Differentiate]
            public static double TupleWithABareName(double x, double y)
            {
                var (a, b) = (x, y * y);
                return a * b;
            }
        }
        """;

    public FoundByRandomTestsFixture()
        : base(Source)
    {
    }
}

public sealed class FoundByRandomTestsRegressionTests : IClassFixture<FoundByRandomTestsFixture>
{
    private readonly FoundByRandomTestsFixture _fixture;

    public FoundByRandomTestsRegressionTests(FoundByRandomTestsFixture fixture) => _fixture = fixture;

    [Theory]
    [InlineData(0.7)]
    [InlineData(-1.3)]
    public void CarriedLocalsNamedLikeTheSpans(double x)
    {
        // (0 + 1 + 2) x + x³: derivatives 3 + 3x² and 6x (plain calculus).
        Verify.At(Probe.Load(_fixture.Assembly, "Found", "CarriedLocalsNamedLikeTheSpans", 1), new[] { x }, new[] { 3 + (3 * x * x) }, new[] { 6 * x },
            "CarriedLocalsNamedLikeTheSpans");
    }

    [Theory]
    [InlineData(0.7, 2.5)]
    [InlineData(-1.3, 0.4)]
    public void TupleWithABareName(double x, double y)
    {
        // x y²: gradient (y², 2xy), Hessian [[0, 2y], [2y, 2x]] (plain calculus).
        Verify.At(Probe.Load(_fixture.Assembly, "Found", "TupleWithABareName", 2), new[] { x, y }, new[] { y * y, 2 * x * y },
            new[] { 0, 2 * y, 2 * y, 2 * x }, "TupleWithABareName");
    }
}
