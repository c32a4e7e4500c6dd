using System.Linq;
using DerivGen.Generator.Differentiation;
using Xunit;

namespace DerivGen.Tests.Passes;

/// <summary>
/// <see cref="ResultStatements"/>: the plan's statements for the results. An output's Jacobian row starts at n·index
/// (row-major, common practice): a constant when the index is, the index itself when n = 1, else a row local. A method
/// without outputs writes its gradient, the Hessian's lower triangle with the entries below the diagonal mirrored,
/// then returns; a method with outputs writes nothing after its last loop.
/// </summary>
public sealed class ResultStatementsTests
{
    // Invented models.
    private const string Members = """
            [Differentiate]
            public static void Constant(double x1, double x2, double x3, Span<double> f)
            {
                f[0] = x1 + x2;
                f[2] = x2 * x3;
            }

            [Differentiate(nameof(a))]
            public static void OneVariable(double a, int steps, Span<double> xs)
            {
                double x = 1;
                for (int k = 0; k < steps; k++)
                {
                    x = a * x;
                    xs[k] = x;
                }
            }

            [Differentiate(nameof(a), nameof(c))]
            public static void TwoVariables(double a, double c, int steps, Span<double> xs)
            {
                double x = 1;
                for (int k = 0; k < steps; k++)
                {
                    x = a * x + c;
                    xs[k] = x;
                }
            }

            [Differentiate]
            public static double Scalar(double x, double y) => x * x * y;
        """;

    private static OutputStatement[] Outputs(string method) =>
        PassHarness.Plan(Members, method).Outputs.OrderBy(p => p.Key).SelectMany(p => p.Value).ToArray();

    [Fact]
    public void ConstantIndicesGiveConstantRowStarts()
    {
        OutputStatement[] outputs = Outputs("Constant");
        Assert.Equal(new[] { RowStartKind.Constant, RowStartKind.Constant }, outputs.Select(o => o.RowStart));
        Assert.Equal(new[] { 0, 6 }, outputs.Select(o => o.ConstantRow)); // n = 3: rows 0 and 2
        Assert.All(outputs, o => Assert.Equal(3, o.Entries.Count));
        Assert.Empty(PassHarness.Plan(Members, "Constant").Results);
    }

    [Theory]
    [InlineData("OneVariable", "Index")]
    [InlineData("TwoVariables", "Local")]
    public void AVariableIndexIsTheRowWhenNIsOne(string method, string start)
    {
        OutputStatement output = Assert.Single(Outputs(method));
        Assert.Equal(start, output.RowStart.ToString());
    }

    [Fact]
    public void AMethodWithoutOutputsWritesGradientHessianAndReturn()
    {
        MethodPlan plan = PassHarness.Plan(Members, "Scalar", withHessian: true);
        Assert.Equal(
            new[]
            {
                (ResultKind.GradientEntry, 0, 0, false),
                (ResultKind.GradientEntry, 1, 0, false),
                (ResultKind.HessianEntry, 0, 0, false),
                (ResultKind.HessianEntry, 1, 0, true),
                (ResultKind.HessianEntry, 1, 1, false),
                (ResultKind.Return, 0, 0, false),
            },
            plan.Results.Select(r => (r.Kind, r.Row, r.Column, r.Mirrored)));
        Assert.Same(plan.Program.Value, plan.Results[^1].Value);
        Assert.Empty(plan.Outputs);
    }
}
