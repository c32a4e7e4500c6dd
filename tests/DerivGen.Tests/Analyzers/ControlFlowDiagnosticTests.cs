using System.Threading.Tasks;
using Xunit;
using static DerivGen.Tests.Analyzers.AnalyzerVerifier;

namespace DerivGen.Tests.Analyzers;

/// <summary>
/// Diagnostics of loops, branches and data: DG0007 where a branch condition depends on a differentiation variable
/// (a kink) and nowhere else; DG0001 on exactly the construct outside the supported set.
/// </summary>
public sealed class ControlFlowDiagnosticTests
{
    private const string Usings = "using System;\nusing DerivGen;\n\n";

    [Fact]
    public Task SupportedLoopsBranchesAndDataHaveNoDiagnostic() => VerifyAsync(Usings + """
        public partial class C
        {
            private readonly double[] _w = { 1.0, 2.0 };
            public double Scale { get; } = 0.5;

            [Differentiate(nameof(a), nameof(b))]
            public double F(double a, double b, double[] t, ReadOnlySpan<double> y, Span<double> z, double[,] m, float[] q, int first)
            {
                double s = 0;
                int n = t.Length;
                for (int i = first; i < n; i++)
                {
                    bool keep = y[i] > 0 && !(i == 3) || t[i] <= -1;
                    var r = a * t[i] + b - y[i] + z[i] * m[i, 0] + q[i] * _w[i < 1 ? 0 : 1];
                    if (keep)
                    {
                        s += r * r;
                    }
                    else if (i != n - 1)
                    {
                        s -= 0.5 * r;
                    }
                    else
                    {
                        s *= 1.0 + this.Scale * r;
                    }
                }

                for (int i = 0; i <= m.GetLength(0) - 1; ++i)
                {
                    double u = n > 2 ? m[i, 1] : t[0];
                    s += u * a * a;
                }

                for (int i = 1; i < n; i += 1)
                {
                    s += (t[i] - t[i - 1]) * b;
                }

                return s;
            }
        }
        """);

    [Fact]
    public Task DG0007IfOnAVariable() => VerifyAsync(Usings + """
        public static partial class C
        {
            [Differentiate]
            public static double F(double x)
            {
                double f = x;
                if ({|DG0007:x > 0|})
                {
                    f = x * x;
                }

                return f;
            }
        }
        """);

    [Fact]
    public Task DG0007ConditionalOperatorOnAVariable() => VerifyAsync(Usings + """
        public static partial class C
        {
            [Differentiate(nameof(x))]
            public static double F(double x, double a, double b) => {|DG0007:x > 0|} ? a * x : b * x;
        }
        """);

    [Fact]
    public Task DG0007ConditionOnALocalComputedFromAVariableInALoop() => VerifyAsync(Usings + """
        public static partial class C
        {
            [Differentiate(nameof(w))]
            public static double F(double w, double[] t)
            {
                double s = 0;
                for (int i = 0; i < t.Length; i++)
                {
                    double r = w * t[i];
                    if ({|DG0007:r * r <= 1.0|})
                    {
                        s += r * r;
                    }
                    else
                    {
                        s += 1.0;
                    }
                }

                return s;
            }
        }
        """);

    [Fact]
    public Task DG0007ThroughABoolLocal() => VerifyAsync(Usings + """
        public static partial class C
        {
            [Differentiate]
            public static double F(double x, double y)
            {
                bool big = x > 1 && y < 2;
                double f = y;
                if ({|DG0007:big|})
                {
                    f = x * y;
                }

                return f;
            }
        }
        """);

    [Fact]
    public Task DG0007NotReportedForConditionsOnDataAndIntLocals() => VerifyAsync(Usings + """
        public static partial class C
        {
            [Differentiate(nameof(w))]
            public static double F(double w, double c, double[] t, int k)
            {
                double s = 0;
                int half = t.Length / 2;
                for (int i = 0; i < t.Length; i++)
                {
                    bool late = i >= half || k == i;
                    double f = c > 1 ? w : 2 * w;
                    if (late && t[i] != 0.0)
                    {
                        s += f * t[i];
                    }
                }

                return s;
            }
        }
        """);

    [Fact]
    public Task DG0007OnABranchCanBeSuppressedWithPragma() => VerifySuppressibleAsync(Usings + """
        public static partial class C
        {
            [Differentiate]
            public static double F(double x) => {|DG0007:x >= 1.0|} ? x : 1.0;
        }
        """);

    [Fact]
    public Task DG0007OnABranchSuppressedByPragmaIsNotReported() => VerifyAsync(Usings + """
        public static partial class C
        {
            [Differentiate]
            public static double F(double x)
            {
        #pragma warning disable DG0007 // the kink at 1 is intended
                double f = x >= 1.0 ? x : 1.0;
        #pragma warning restore DG0007
                return f;
            }
        }
        """);

    [Fact]
    public Task NestedLoopsForeachAndTuplesHaveNoDiagnostic() => VerifyAsync(Usings + """
        public static partial class C
        {
            [Differentiate(nameof(w))]
            public static double F(double w, double[,] m, double[] t)
            {
                double s = 0;
                for (int i = 0; i < m.GetLength(0); i++)
                {
                    for (int j = 0; j < i; j++)
                    {
                        s += w * m[i, j];
                    }
                }

                foreach (double v in t)
                {
                    var (p, q) = (w * v, w + v);
                    s += p * q;
                }

                return s;
            }
        }
        """);

    [Fact]
    public Task DG0001InnerLoopBoundDependsOnAVariable() => VerifyAsync(Usings + """
        public static partial class C
        {
            [Differentiate(nameof(w))]
            public static double F(double w, double[] t)
            {
                double s = 0;
                for (int i = 0; i < t.Length; i++)
                {
                    for (int j = 0; {|DG0001:j < w|}; j++)
                    {
                        s += w * t[i];
                    }
                }

                return s;
            }
        }
        """);

    [Fact]
    public Task DG0001WhileLoopWhoseTripCountDependsOnAVariable() => VerifyAsync(Usings + """
        public static partial class C
        {
            [Differentiate]
            public static double F(double x)
            {
                double s = 0;
                while ({|DG0001:s < 3|})
                {
                    s += x;
                }

                return s;
            }
        }
        """);

    [Fact]
    public Task DG0001DoLoopWhoseConditionDependsOnAVariable() => VerifyAsync(Usings + """
        public static partial class C
        {
            [Differentiate(nameof(x))]
            public static double F(double x)
            {
                double s = 0;
                do
                {
                    s += x;
                }
                while ({|DG0001:s < 2|});

                return s;
            }
        }
        """);

    [Fact]
    public Task DG0001VectorVariableWhoseElementsAreNotTheMethodsType() => VerifyAsync(Usings + """
        public static partial class C
        {
            [Differentiate(nameof(x), {|DG0001:nameof(v)|})]
            public static double F(double x, float[] v)
            {
                double s = x;
                for (int i = 0; i < v.Length; i++)
                {
                    s += v[i] * v[i];
                }

                return s;
            }
        }
        """);

    [Fact]
    public Task DG0001ReturnInsideALoopUnderAConditionOnAVariable() => VerifyAsync(Usings + """
        public static partial class C
        {
            [Differentiate(nameof(x))]
            public static double F(double x, double[] t)
            {
                double s = 0;
                for (int i = 0; i < t.Length; i++)
                {
                    if ({|DG0007:s > 1|})
                    {
                        {|DG0001:return s;|}
                    }

                    s += x * t[i];
                }

                return s;
            }
        }
        """);

    [Fact]
    public Task DG0001LoopInsideABranchOrAfterAnEarlyReturnOnAVariable() => VerifyAsync(Usings + """
        public static partial class C
        {
            [Differentiate(nameof(x))]
            public static double F(double x, double[] t)
            {
                double s = 0;
                if ({|DG0007:x > 0|})
                {
                    {|DG0001:for (int i = 0; i < t.Length; i++)
                    {
                        s += x * t[i];
                    }|}
                }

                if ({|DG0007:x > 1|})
                {
                    return x * x;
                }

                {|DG0001:for (int i = 0; i < t.Length; i++)
                {
                    s += x;
                }|}

                return s;
            }
        }
        """);

    [Fact]
    public Task DG0001CallToAVirtualMethodInsideALoop() => VerifyAsync(Usings + """
        public partial class C
        {
            protected virtual double Square(double v) => v * v;

            [Differentiate(nameof(x))]
            public double F(double x, double[] t)
            {
                double s = 0;
                for (int i = 0; i < t.Length; i++)
                {
                    s += {|DG0001:Square(x - t[i])|};
                }

                return s;
            }
        }
        """);

    [Fact]
    public Task DG0001BreakUnderAConditionOnAVariableButContinueIsAKink() => VerifyAsync(Usings + """
        public static partial class C
        {
            [Differentiate(nameof(x))]
            public static double F(double x, double[] t)
            {
                double s = 0;
                for (int i = 0; i < t.Length; i++)
                {
                    if ({|DG0007:x * t[i] < 0|})
                    {
                        continue;
                    }

                    if ({|DG0007:s > 10|})
                    {
                        {|DG0001:break;|}
                    }

                    s += x * t[i];
                }

                return s;
            }
        }
        """);

    [Fact]
    public Task DG0001SwitchWithADeclarationPatternOrAnEarlyBreak() => VerifyAsync(Usings + """
        public static partial class C
        {
            [Differentiate(nameof(x))]
            public static double F(double x, int k)
            {
                double s = x;
                switch (k)
                {
                    case > 1 and {|DG0001:int m|}:
                        s = 2 * x;
                        break;
                    default:
                        s = 3 * x;
                        break;
                }

                switch (k)
                {
                    case 0:
                        if (s > 2)
                        {
                            {|DG0001:break;|}
                        }

                        s = x;
                        break;
                }

                return s;
            }
        }
        """);

    [Fact]
    public Task DG0001TryStatement() => VerifyAsync(Usings + """
        public static partial class C
        {
            [Differentiate]
            public static double F(double x)
            {
                double s = x;
                {|DG0001:try
                {
                    s = x * x;
                }
                finally
                {
                }|}

                return s;
            }
        }
        """);

    [Fact]
    public Task DG0001WriteToData() => VerifyAsync(Usings + """
        public static partial class C
        {
            [Differentiate(nameof(x))]
            public static double F(double x, double[] t)
            {
                for (int i = 0; i < t.Length; i++)
                {
                    {|DG0001:t[i] = x|};
                }

                return x;
            }
        }
        """);

    [Fact]
    public Task DG0001LoopBoundDependsOnAVariable() => VerifyAsync(Usings + """
        public static partial class C
        {
            [Differentiate]
            public static double F(double x)
            {
                double s = 0;
                for (int i = 0; {|DG0001:i < x|}; i++)
                {
                    s += x;
                }

                return s;
            }
        }
        """);

    [Fact]
    public Task DG0007ConditionOnALocalThatDependsOnAVariableFromTheSecondIterationOn() => VerifyAsync(Usings + """
        public static partial class C
        {
            [Differentiate(nameof(w))]
            public static double F(double w, double[] t)
            {
                double s = 0;
                for (int i = 0; i < t.Length; i++)
                {
                    if ({|DG0007:s > 1.0|})
                    {
                        s *= 0.5;
                    }

                    s += w * t[i];
                }

                return s;
            }
        }
        """);

    [Fact]
    public Task DG0001LoopBoundOnALocalThatComesToDependOnAVariable() => VerifyAsync(Usings + """
        public static partial class C
        {
            [Differentiate]
            public static double F(double x)
            {
                double s = 0;
                double bound = 3;
                for (int i = 0; {|DG0001:i < bound|}; i++)
                {
                    s += x;
                    bound += x;
                }

                return s;
            }
        }
        """);

    [Fact]
    public Task DG0001TupleAssignmentThatReadsWhatItAssigns() => VerifyAsync(Usings + """
        public static partial class C
        {
            [Differentiate(nameof(theta))]
            public static double F(double theta, int n)
            {
                double x = 1, y = 0;
                double c = Math.Cos(theta), s = Math.Sin(theta);
                for (int i = 0; i < n; i++)
                {
                    {|DG0001:(x, y) = (x * c - y * s, x * s + y * c)|};
                }

                return x;
            }
        }
        """);

    /// <summary>
    /// An open generator bug, refused rather than differentiated wrongly; the random programs avoid the shape while
    /// <see cref="Randomized.KnownGeneratorBugs.UpdateBeforeNestedLoopReadsNewValue"/> is on. Once the bug is fixed,
    /// this test checks the derivative against a closed form instead of the refusal, and the switch goes.
    /// </summary>
    [Fact]
    public Task DG0001NestedLoopUpdatingWhatTheIterationAlreadyUpdated() => VerifyAsync(Usings + """
        public static partial class C
        {
            [Differentiate(nameof(x))]
            public static double F(double x)
            {
                double s = 1;
                for (int i = 0; i < 2; i++)
                {
                    s = s * x;
                    {|DG0001:for (int j = 0; j < 2; j++)
                    {
                        s = 0.5 * s;
                    }|}
                }

                return s;
            }
        }
        """);
}
