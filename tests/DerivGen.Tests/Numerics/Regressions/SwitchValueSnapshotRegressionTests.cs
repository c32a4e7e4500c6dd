using System;
using DerivGen.Tests.Infrastructure;
using Xunit;

namespace DerivGen.Tests.Numerics.Regressions;

public sealed class SwitchValueSnapshotFixture : CompiledFixture
{
    // Bug: a switch statement on a computed value (not a parameter, local or constant) kept the value in a local typed
    // bool, so the generated code did not compile for a double value (CS0030, "Cannot convert type 'double' to 'bool'"). Found while testing
    // relational case labels on `switch (x * y)` (issue 13, first slice); fixed in the same branch (Snapshot typed by
    // its value). The constant case labels below were already supported, so the bug predates patterns.
    public const string Source = """
        using System;
        using DerivGen;

        public static partial class SwitchOnComputed
        {
            [Differentiate(nameof(x))]
            public static double F(double x, double k)
            {
                double f;
                switch (k * 2)
                {
                    case 2.0:
                        f = x * x;
                        break;
                    default:
                        f = 3 * x;
                        break;
                }

                return f;
            }
        }
        """;

    public SwitchValueSnapshotFixture()
        : base(Source)
    {
    }
}

public sealed class SwitchValueSnapshotRegressionTests : IClassFixture<SwitchValueSnapshotFixture>
{
    private readonly SwitchValueSnapshotFixture _fixture;

    public SwitchValueSnapshotRegressionTests(SwitchValueSnapshotFixture fixture) => _fixture = fixture;

    private delegate double KF(double x, double k);

    private delegate double KG(double x, double k, Span<double> g);

    private delegate double KH(double x, double k, Span<double> g, Span<double> h);

    [Theory]
    [InlineData(1.0, 2 * 1.5, 2.0)] // k·2 = 2: f = x², f' = 2x, f'' = 2 (plain calculus)
    [InlineData(4.0, 3.0, 0.0)]     // default: f = 3x, f' = 3, f'' = 0
    public void SwitchOnAComputedDoubleValueCompilesAndSelectsTheSection(double k, double derivative, double second)
    {
        var f = _fixture.Assembly.Method<KF>("SwitchOnComputed", "F");
        var g = _fixture.Assembly.Method<KG>("SwitchOnComputed", "FGradient");
        var h = _fixture.Assembly.Method<KH>("SwitchOnComputed", "FHessian");
        Probe p = Probe.Of((F1)(x => f(x, k)), (G1)((x, gr) => g(x, k, gr)), (H1)((x, gr, he) => h(x, k, gr, he)));
        Verify.At(p, new[] { 1.5 }, new[] { derivative }, new[] { second }, $"switch (k * 2), k = {k}");
    }
}
