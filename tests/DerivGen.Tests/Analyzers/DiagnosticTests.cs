using System.Threading.Tasks;
using Xunit;
using static DerivGen.Tests.Analyzers.AnalyzerVerifier;

namespace DerivGen.Tests.Analyzers;

/// <summary>One or more cases per diagnostic DG0001-DG0009, each on the exact span the spec names.</summary>
public sealed class DiagnosticTests
{
    private const string Usings = "using System;\nusing DerivGen;\n\n";

    [Fact]
    public Task SupportedMethodHasNoDiagnostic() => VerifyAsync(Usings + """
        public static partial class C
        {
            private static readonly double K = 2.0;

            [Differentiate(nameof(a))]
            public static double F(double a, double t, int n)
            {
                double s = a * t + K;
                s *= n;
                return Math.Exp(-s) + Math.Pow(a, 2);
            }
        }
        """);

    [Fact]
    public Task DG0001CallToAHelperWhoseBodyCannotBeDifferentiated() => VerifyAsync(Usings + """
        public static partial class C
        {
            private static double Helper(double v)
            {
                double s = 0;
                while (s < v)
                {
                    s += 1;
                }

                return s * v;
            }

            [Differentiate]
            public static double F(double x) => 2.0 * {|DG0001:Helper(x)|};
        }
        """);

    [Fact]
    public Task HelperInATypeThatIsNotPartialIsInlined() => VerifyAsync(Usings + """
        public static class Kernels
        {
            public static double Square(double v) => v * v;
        }

        public static partial class C
        {
            [Differentiate]
            public static double F(double x) => 2.0 * Kernels.Square(x);
        }
        """);

    [Fact]
    public Task DG0001RecursiveHelpers() => VerifyAsync(Usings + """
        public static partial class C
        {
            // Helpers are analysed through the calls of marked methods: the diagnostic is on the call, and its message
            // names the call that recurses (Even → Odd → Even).
            private static double Even(double v, int n) => n == 0 ? v : Odd(v, n - 1);

            private static double Odd(double v, int n) => n == 0 ? -v : Even(v, n - 1);

            [Differentiate]
            public static double F(double x) => {|DG0001:Even(x, 3)|};
        }
        """);

    [Fact]
    public Task SwitchExpressionOnDataHasNoDiagnostic() => VerifyAsync(Usings + """
        public static partial class C
        {
            [Differentiate]
            public static double F(double x, int k) => k switch { 0 => x, > 3 and not 7 => 2 * x, _ => -x };
        }
        """);

    [Fact]
    public Task IndexFromEndOnDataHasNoDiagnostic() => VerifyAsync(Usings + """
        public static partial class C
        {
            private static readonly double[] W = { 1.0, 2.0 };
            [Differentiate(nameof(x))]
            public static double F(double x, double[] t, ReadOnlySpan<double> y, Span<int> n, int k) =>
                x * t[^1] - y[^2] + W[^k] * n[^1] + y[^k] * x;
        }
        """);

    [Fact]
    public Task DG0001RangeOnDataStaysRefused() => VerifyAsync(Usings + """
        public static partial class C
        {
            [Differentiate]
            public static double F(double x, double[] t, ReadOnlySpan<double> y) =>
                x * {|#0:t[1..][0]|} + {|#1:y[..^1][0]|} + y.Slice(1)[0]; // Slice (a view of the data) is accepted
        }
        """,
        Diagnostic("DG0001").WithLocation(0).WithArguments("The range 't[1..]'", RangeAdvice),
        Diagnostic("DG0001").WithLocation(1).WithArguments("The range 'y[..^1]'", RangeAdvice));

    private const string RangeAdvice = "ranges are not supported in this version; take a view with Slice(start, length) or AsSpan(start, length), or index the data itself, e.g. t[i + 1] for t[1..][i], or t[^1] for its last element";

    [Fact]
    public Task DG0007SwitchExpressionOnAVariable() => VerifyAsync(Usings + """
        public static partial class C
        {
            [Differentiate]
            public static double F(double x) => {|DG0007:x switch { < 0 => -x, _ => x * x }|};
        }
        """);

    [Fact]
    public Task DG0007IsPatternOnAVariableInAnIf() => VerifyAsync(Usings + """
        public static partial class C
        {
            [Differentiate]
            public static double F(double x)
            {
                double f = x;
                if ({|DG0007:x is > 0 and < 1|})
                {
                    f = x * x;
                }

                return f;
            }
        }
        """);

    [Fact]
    public Task DG0007RelationalCaseOnAVariable() => VerifyAsync(Usings + """
        public static partial class C
        {
            [Differentiate]
            public static double F(double x)
            {
                double f;
                switch ({|DG0007:x|})
                {
                    case < 0:
                        f = -x;
                        break;
                    default:
                        f = x;
                        break;
                }

                return f;
            }
        }
        """);

    [Fact]
    public Task DG0007CaseGuardOnAVariable() => VerifyAsync(Usings + """
        public static partial class C
        {
            [Differentiate]
            public static double F(double x, int k)
            {
                double f = x;
                switch ({|DG0007:k|})
                {
                    case > 0 when x > 1:
                        f = x * x;
                        break;
                }

                return f;
            }
        }
        """);

    [Fact]
    public Task FloatingPointPredicatesOnAVariableAreNoKink() => VerifyAsync(Usings + """
        public static partial class C
        {
            [Differentiate]
            public static double F(double x, double y) => double.IsFinite(x * y) && !double.IsNaN(y) && !double.IsInfinity(x) ? x * y : 0.0;
        }
        """);

    [Fact]
    public Task EnumParameterAndLocalHaveNoDiagnostic() => VerifyAsync(Usings + """
        public enum Mode { Plain, Doubled }

        public static partial class C
        {
            [Differentiate]
            public static double F(double x, Mode mode)
            {
                Mode m = mode;
                return m == Mode.Doubled ? 2 * x : x;
            }
        }
        """);

    [Fact]
    public Task DG0001EnumWithAnUnderlyingTypeOtherThanInt() => VerifyAsync(Usings + """
        public enum Mode : long { Plain, Doubled }

        public static partial class C
        {
            [Differentiate]
            public static double F(double x, Mode mode) => {|DG0001:mode == Mode.Doubled|} ? 2 * x : x;
        }
        """);

    [Fact]
    public Task DG0001SwitchExpressionThatCanFindNoArm() => VerifyAsync(Usings + """
        public static partial class C
        {
            [Differentiate]
            public static double F(double x, int k) => {|DG0001:k switch { 0 => x, 1 => -x }|};
        }
        """);

    [Fact]
    public Task DG0001SwitchExpressionArmThatThrows() => VerifyAsync(Usings + """
        public static partial class C
        {
            // A throwing last arm is a check run first: accepted where nothing before it can throw, refused after a read.
            [Differentiate]
            public static double F(double x, int k) => k switch { 0 => x, _ => throw new ArgumentOutOfRangeException(nameof(k)) };

            [Differentiate(nameof(x))]
            public static double G(double x, int k, double[] d) => d[0] * (k switch { 0 => x, _ => {|DG0001:throw new ArgumentOutOfRangeException(nameof(k))|} });
        }
        """);

    [Fact]
    public Task DG0001DeclarationPatternInASwitchExpression() => VerifyAsync(Usings + """
        public static partial class C
        {
            [Differentiate]
            public static double F(double x, int k) => k switch { 0 => x, {|DG0001:var m|} => m * x };
        }
        """);

    [Fact]
    public Task DG0001ThrowHelperGuard() => VerifyAsync(Usings + """
        public static partial class C
        {
            // Checks are accepted first (before anything that can throw) and refused after a data read, in a loop that
            // also computes, in a branch, and in a local function.
            [Differentiate(nameof(x))]
            public static double F(double x, double[] t)
            {
                ArgumentNullException.ThrowIfNull(t);
                if (t.Length == 0) throw new ArgumentException("empty", nameof(t));
                double first = x * t[0];
                {|DG0001:ArgumentOutOfRangeException.ThrowIfNegative(x)|};
                double s = first;
                for (int i = 0; i < t.Length; i++)
                {
                    if (t[i] < 0) {|DG0001:throw new ArgumentException("negative", nameof(t));|}
                    s += x * t[i];
                }

                return s;
            }

            [Differentiate(nameof(x))]
            public static double G(double x, double[] t)
            {
                double y = x;
                if (t.Length > 2)
                {
                    {|DG0001:ArgumentOutOfRangeException.ThrowIfGreaterThan(x, 10.0)|};
                    y = 2 * x;
                }

                return y + {|DG0001:System.Linq.Enumerable.Min(t, v => x * x * v)|}; // after t.Length (null: NullReferenceException first)
            }
        }
        """);

    [Fact]
    public Task CompileErrorInTheBodyGetsNoDerivGenDiagnostic() => VerifyAsync(Usings + """
        public static partial class C
        {
            [Differentiate]
            public static double F(double x)
            {
                double s = x * x;
                return {|CS0103:sx|} + Math.Sin(x);
            }
        }
        """);

    [Fact]
    public Task DG0007ConditionOnALocalThatBecomesVariableLaterInTheLoop() => VerifyAsync(Usings + """
        public static partial class C
        {
            [Differentiate]
            public static double F(double x, int n)
            {
                double s = 0;
                for (int i = 0; i < n; i++)
                {
                    if ({|DG0007:s > 1|})
                    {
                        s *= 0.5;
                    }

                    s += x;
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
    public Task DG0001MethodOfAFileLocalType() => VerifyAsync(Usings + """
        // C# lets only the declaring file add members to a file-local type (C# 11 specification, file-local types), and
        // the derivatives are generated into a file of their own.
        file static partial class C
        {
            [Differentiate]
            public static double {|DG0001:F|}(double x) => x * x;
        }
        """);

    [Fact]
    public Task DG0001AttributeOnTheDeclaringPartOfAPartialMethodWhoseBodyIsInAnotherFile() => VerifyAsync(new[]
    {
        Usings + """
        public static partial class C
        {
            [Differentiate]
            public static partial double {|DG0001:F|}(double x);
        }
        """,
        Usings + """
        public static partial class C
        {
            public static partial double F(double x) => x * x;
        }
        """,
    });

    [Fact]
    public Task AttributeOnTheDeclaringPartOfAPartialMethodWithItsBodyInTheSameFile() => VerifyAsync(Usings + """
        public static partial class C
        {
            [Differentiate]
            public static partial double F(double x);

            public static partial double F(double x) => x * x;
        }
        """);

    [Fact]
    public Task DiagnosticsOfTheImplementingPartsBodyWhenTheAttributeIsOnTheDeclaringPart() => VerifyAsync(Usings + """
        public static partial class C
        {
            [Differentiate]
            public static partial double F(double x);

            public static partial double F(double x) => {|DG0001:Console.ReadLine()!.Length|} * x;
        }
        """);

    [Fact]
    public Task DG0002TypeNotPartial() => VerifyAsync(Usings + """
        public static class C
        {
            [Differentiate]
            public static double {|DG0002:F|}(double x) => x * x;
        }
        """);

    [Fact]
    public Task DG0002NestedInANonPartialType() => VerifyAsync(Usings + """
        public class Outer
        {
            public partial class Inner
            {
                [Differentiate]
                public double {|DG0002:F|}(double x) => x * x;
            }
        }
        """);

    [Fact]
    public Task DG0003UnknownParameterName() => VerifyAsync(Usings + """
        public static partial class C
        {
            [Differentiate(nameof(x), {|DG0003:"z"|})]
            public static double F(double x, double y) => x * y;
        }
        """);

    [Fact]
    public Task DG0004IntParameterNamed() => VerifyAsync(Usings + """
        public static partial class C
        {
            [Differentiate({|DG0004:nameof(n)|})]
            public static double F(double x, int n) => x * n;
        }
        """);

    [Fact]
    public Task DG0004RefParameterNamed() => VerifyAsync(Usings + """
        public static partial class C
        {
            [Differentiate(nameof(x), {|DG0004:nameof(y)|})]
            public static double F(double x, ref double y) => x * y;
        }
        """);

    [Fact]
    public Task DG0005ReturnTypeNotFloatingPoint() => VerifyAsync(Usings + """
        public static partial class C
        {
            [Differentiate]
            public static {|DG0005:int|} F(double x) => 1;
        }
        """);

    [Fact]
    public Task DG0006GeneratedNameAlreadyTaken() => VerifyAsync(Usings + """
        public static partial class C
        {
            public static int FGradient() => 0;

            [Differentiate]
            public static double {|DG0006:F|}(double x) => x * x;
        }
        """);

    [Fact]
    public Task DG0006HessianNameTaken() => VerifyAsync(Usings + """
        public partial class C
        {
            public string FHessian = "";

            [Differentiate]
            public double {|DG0006:F|}(double x) => x * x;
        }
        """);

    [Fact]
    public Task DG0006NotReportedWhenTheHessianIsNotGenerated() => VerifyAsync(Usings + """
        public partial class C
        {
            public string FHessian = "";

            [Differentiate(Hessian = false)]
            public double F(double x) => x * x;
        }
        """);

    [Fact]
    public Task DG0007NonSmoothFunctionOfAVariable() => VerifyAsync(Usings + """
        public static partial class C
        {
            [Differentiate(nameof(x))]
            public static double F(double x, double c) =>
                {|DG0007:Math.Abs(x)|} + {|DG0007:Math.Max(x, c)|} + {|DG0007:Math.Floor(2 * x)|} + Math.Abs(c) + Math.Round(1.5);
        }
        """);

    [Fact]
    public Task DG0007ThroughALocal() => VerifyAsync(Usings + """
        public static partial class C
        {
            [Differentiate]
            public static double F(double x)
            {
                double u = x * 3;
                return {|DG0007:Math.Sign(u)|} * u;
            }
        }
        """);

    [Fact]
    public Task DG0007CanBeSuppressedWithPragma() => VerifySuppressibleAsync(Usings + """
        public static partial class C
        {
            [Differentiate]
            public static double F(double x) => {|DG0007:Math.Abs(x)|};
        }
        """);

    [Fact]
    public Task DG0007SuppressedByPragmaIsNotReported() => VerifyAsync(Usings + """
        public static partial class C
        {
            [Differentiate]
            public static double F(double x)
            {
        #pragma warning disable DG0007 // the kink at 0 is intended
                return Math.Abs(x);
        #pragma warning restore DG0007
            }
        }
        """);

    [Fact]
    public Task DG0008NoFloatingPointParameter() => VerifyAsync(Usings + """
        public static partial class C
        {
            [Differentiate]
            public static double {|DG0008:F|}(int n, int m) => n * m;
        }
        """);

    [Fact]
    public Task DG0009ParameterNamedTwice() => VerifyAsync(Usings + """
        public static partial class C
        {
            [Differentiate(nameof(x), nameof(y), {|DG0009:nameof(x)|})]
            public static double F(double x, double y) => x * y;
        }
        """);

    // Methods with a span of outputs (MJacobian).

    [Fact]
    public Task MethodWithOutputsHasNoDiagnostic() => VerifyAsync(Usings + """
        public static partial class C
        {
            [Differentiate(nameof(a), nameof(b))]
            public static void R(double a, double b, ReadOnlySpan<double> t, Span<double> r)
            {
                r[0] = a;
                for (int i = 0; i < t.Length; i++)
                {
                    r[1 + i] = a * Math.Exp(-b * t[i]);
                }

                return;
            }
        }
        """);

    [Fact]
    public Task DG0005VoidMethodWithoutASpanOfOutputs() => VerifyAsync(Usings + """
        public static partial class C
        {
            [Differentiate]
            public static {|DG0005:void|} F(double x, ReadOnlySpan<double> r)
            {
            }
        }
        """);

    [Fact]
    public Task DG0001OutputWrittenUnderACondition() => VerifyAsync(Usings + """
        public static partial class C
        {
            [Differentiate(nameof(a))]
            public static void F(double a, int n, Span<double> r)
            {
                if (n > 2)
                {
                    {|DG0001:r[0] = a|};
                }

                for (int i = 0; i < n; i++)
                {
                    if (i == 3)
                    {
                        break;
                    }

                    {|DG0001:r[i] = a * i|};
                }
            }
        }
        """);

    [Fact]
    public Task DG0001OutputReadBackOrUpdated() => VerifyAsync(Usings + """
        public static partial class C
        {
            [Differentiate(nameof(a))]
            public static void F(double a, Span<double> r)
            {
                r[0] = a;
                r[1] = 2 * {|DG0001:r[0]|};
                {|DG0001:r[1] += a|};
            }
        }
        """);

    [Fact]
    public Task DG0001OutputsNamedAsAVariable() => VerifyAsync(Usings + """
        public static partial class C
        {
            [Differentiate(nameof(a), nameof(r))]
            public static void F(double a, ReadOnlySpan<double> p, Span<double> {|DG0001:r|})
            {
                r[0] = a * p[0];
            }
        }
        """);
}
