using System;
using System.IO;
using DerivGen.Minimization;
using DerivGen.Tests.Infrastructure;
using Xunit;

namespace DerivGen.Tests.Minimization;

/// <summary>
/// The README's curve-fitting example, taken from README.md itself (the code block of "Minimisers and least squares"
/// up to its top-level statements), compiled through the generator and run on invented data, so the README cannot
/// show code that does not compile or does not fit.
/// </summary>
public sealed class ReadmeExampleFixture : UserCodeFixture
{
    public ReadmeExampleFixture()
        : base(ExampleSource())
    {
    }

    internal static string ExampleSource()
    {
        string readme = File.ReadAllText(Path.Combine(DocumentTables.RepositoryRoot, "README.md")).Replace("\r\n", "\n", StringComparison.Ordinal);
        const string start = "```csharp\nusing DerivGen;\nusing DerivGen.Minimization;\n";
        int begin = readme.IndexOf(start, StringComparison.Ordinal);
        Assert.True(begin >= 0, "README.md no longer has the least-squares example.");
        begin += "```csharp\n".Length;
        int end = readme.IndexOf("double[] p = ", begin, StringComparison.Ordinal);
        Assert.True(end > begin, "README.md's least-squares example lost its top-level statements.");

        // The example relies on the implicit `using System;` of a new project.
        return "using System;\n" + readme.Substring(begin, end - begin) + """
            public static class ReadmeDemo
            {
                public static LeastSquaresResult Fit(double[] t, double[] y, double[] p, double[] standardErrors) =>
                    LeastSquares.LevenbergMarquardt(new CoolingResiduals(t, y), p, standardErrors);
            }
            """;
    }
}

internal delegate LeastSquaresResult ReadmeFit(double[] t, double[] y, double[] p, double[] standardErrors);

public sealed class ReadmeExampleTests : IClassFixture<ReadmeExampleFixture>
{
    private readonly ReadmeExampleFixture _fixture;

    public ReadmeExampleTests(ReadmeExampleFixture fixture) => _fixture = fixture;

    [Fact]
    public void ExampleFitsExactDataToTheParametersThatMadeThem()
    {
        // Invented: readings of a cooling curve with a = 21.5, b = 58, k = 0.13, computed exactly (no noise), so the
        // fit must return those parameters and a residual sum of squares at rounding level.
        double[] t = { 0, 1, 2, 3, 5, 8, 12, 17, 23, 30 };
        double[] y = Array.ConvertAll(t, ti => 21.5 + (58 * Math.Exp(-0.13 * ti)));
        double[] p = { 20, 60, 0.1 };
        var se = new double[3];

        LeastSquaresResult fit = _fixture.Assembly.Method<ReadmeFit>("ReadmeDemo", "Fit")(t, y, p, se);

        Assert.True(fit.Converged, fit.Reason.ToString());
        Check.Close(21.5, p[0], 1e-10, 0, "a");
        Check.Close(58, p[1], 1e-10, 0, "b");
        Check.Close(0.13, p[2], 1e-10, 0, "k");
        Assert.True(fit.ResidualSumOfSquares < 1e-20, Check.R(fit.ResidualSumOfSquares));
        Assert.Equal(7, fit.DegreesOfFreedom);
    }
}
