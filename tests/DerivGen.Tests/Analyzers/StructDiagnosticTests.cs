using System.Threading.Tasks;
using Xunit;
using static DerivGen.Tests.Analyzers.AnalyzerVerifier;

namespace DerivGen.Tests.Analyzers;

/// <summary>What struct values still refuse (DG0001 on the exact span), and a struct-heavy method with none.</summary>
public sealed class StructDiagnosticTests
{
    private const string Usings = "using System;\nusing System.Numerics;\nusing DerivGen;\n\n";

    [Fact]
    public Task VectorsAndUserStructsHaveNoDiagnostic() => VerifyAsync(Usings + """
        public readonly record struct Pose(double X, double Y);

        public static partial class C
        {
            private static readonly Vector3 Up = Vector3.UnitZ;

            static Pose Shift(in Pose p, double d) => p with { X = p.X + d };

            [Differentiate(nameof(p), nameof(a))]
            public static float F(Vector3 p, float a)
            {
                var q = Vector3.Cross(p, Up) * a;
                q.Z += 1f;
                var s = Shift(new Pose(a, 0), 2.0);
                return Vector3.Dot(q, p) + q.Length() + (float)s.X;
            }
        }
        """);

    [Fact]
    public Task DG0001VectorFunctionOutsideTheList() => VerifyAsync(Usings + """
        public static partial class C
        {
            [Differentiate(nameof(p))]
            public static float F(Vector3 p) => {|DG0001:Vector3.Reflect(p, Vector3.UnitX)|}.X;
        }
        """);

    [Fact]
    public Task DG0001StructFieldsNotAccessibleToTheGeneratedCode() => VerifyAsync(Usings + """
        public struct Hidden
        {
            private double _v;

            public Hidden(double v) => _v = v;

            public double V => _v;
        }

        public static partial class C
        {
            [Differentiate(nameof(x))]
            public static double F(double x, Hidden h) => x * {|DG0001:h|}.V;
        }
        """);

    [Fact]
    public Task DG0001StructPassedByRef() => VerifyAsync(Usings + """
        public static partial class C
        {
            [Differentiate(nameof(x))]
            public static float F(float x, ref Vector2 p) => x * {|DG0001:p|}.X + p.Y;
        }
        """);

    [Fact]
    public Task DG0001StructVariablePassedByRef() => VerifyAsync(Usings + """
        public static partial class C
        {
            [Differentiate({|DG0001:nameof(p)|})]
            public static float F(ref Vector2 p) => {|DG0001:p|}.X * p.Y; // the use is reported once
        }
        """);

    [Fact]
    public Task DG0001ConstructorThatDoesMoreThanAssignFields() => VerifyAsync(Usings + """
        public struct Scaled
        {
            public double V;

            public Scaled(double v)
            {
                if (v < 0)
                {
                    v = -v;
                }

                V = v;
            }
        }

        public static partial class C
        {
            [Differentiate]
            public static double F(double x) => {|DG0001:new Scaled(x)|}.V;
        }
        """);

    [Fact]
    public Task DG0001InsideAnInlinedHelperOfAnotherFileIsReportedAtTheCall() => VerifyAsync(new[]
    {
        Usings + """
            public static partial class C
            {
                [Differentiate]
                public static double F(double x) => {|DG0001:Shapes.Make(x)|}.X;
            }
            """,
        Usings + """
            public readonly record struct Pose(double X, double Y);

            public static partial class Shapes
            {
                public static Pose Make(double x) => new Pose(x % 2.0, x);
            }
            """,
    });

    [Fact]
    public Task DG0001LocalFunctionAssigningACapturedStruct() => VerifyAsync(Usings + """
        public static partial class C
        {
            [Differentiate]
            public static float F(float x)
            {
                var v = new Vector2(x, 1f);
                Vector2 Bump(Vector2 a)
                {
                    v.X += 1f;
                    return a * 2f;
                }

                return v.X + {|DG0001:Bump(v)|}.Y;
            }
        }
        """);

    [Fact]
    public Task DG0001ScalarLocalFunctionAssigningACapturedStructField() => VerifyAsync(Usings + """
        public static partial class C
        {
            [Differentiate]
            public static float F(float x)
            {
                var v = new Vector2(x, 1f);
                float Bump()
                {
                    {|DG0001:v.X += 1f|};
                    return v.X;
                }

                return v.X + Bump();
            }
        }
        """);

    [Fact]
    public Task DG0001StructWithExplicitLayout() => VerifyAsync(Usings + """
        [System.Runtime.InteropServices.StructLayout(System.Runtime.InteropServices.LayoutKind.Explicit)]
        public struct Union
        {
            [System.Runtime.InteropServices.FieldOffset(0)] public double A;
            [System.Runtime.InteropServices.FieldOffset(0)] public double B;
        }

        public static partial class C
        {
            [Differentiate]
            public static double F(double x)
            {
                Union {|DG0001:u = new Union { A = x }|};
                return u.B * x;
            }
        }
        """);

    [Fact]
    public Task DG0001StructWithAnArrayField() => VerifyAsync(Usings + """
        public struct Series
        {
            public double[] Values;
            public double Scale;
        }

        public static partial class C
        {
            [Differentiate(nameof(x))]
            public static double F(double x, Series s)
            {
                Series {|DG0001:copy = s|};
                return x * copy.Scale;
            }
        }
        """);
}
