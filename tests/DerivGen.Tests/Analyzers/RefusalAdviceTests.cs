using System;
using System.Collections.Immutable;
using System.Linq;
using System.Threading.Tasks;
using DerivGen.Generator.Diagnostics;
using DerivGen.Tests.Infrastructure;
using Microsoft.CodeAnalysis;
using Microsoft.CodeAnalysis.Diagnostics;
using Xunit;

namespace DerivGen.Tests.Analyzers;

/// <summary>
/// DG0001 advice that this version accepts (issue 13, item 7): for each message about a call or a value that cannot be
/// differentiated — LINQ, System.Numerics vectors, other library functions, local functions, methods that could not be
/// marked usefully — the refused example gets exactly that message, and the example rewritten as the message says is
/// accepted (no DG error from the analyzer, generated code that compiles). For one LINQ and one vector case the
/// rewritten method's gradient is checked against a hand derivative (plain calculus). Example data are invented.
/// </summary>
public sealed class RefusalAdviceTests
{
    private const string Usings = "using System;\nusing System.Linq;\nusing System.Numerics;\nusing DerivGen;\n\n";

    private const string Callables =
        "only the functions of System.Math, System.MathF, double and float listed in the README, and other [Differentiate] methods, can be called";

    private const string Vectors =
        "System.Numerics vectors are not differentiated in this version; work on the components as double or float scalars (pass ";

    private static async Task<ImmutableArray<Diagnostic>> AnalyzeAsync(string source)
    {
        var compilation = GeneratorHarness.CreateCompilation(source);
        Assert.Empty(compilation.GetDiagnostics().Where(d => d.Severity == DiagnosticSeverity.Error));
        var analyzed = compilation.WithAnalyzers(ImmutableArray.Create<DiagnosticAnalyzer>(new DerivativeAnalyzer()));
        return (await analyzed.GetAnalyzerDiagnosticsAsync()).Where(d => d.Id.StartsWith("DG", StringComparison.Ordinal))
            .OrderBy(d => d.Location.SourceSpan.Start).ToImmutableArray();
    }

    /// <summary>The source is refused with exactly these DG0001 messages (in source order) and no other DG error.</summary>
    private static async Task RefusedWith(string source, params string[] messages)
    {
        var errors = (await AnalyzeAsync(source)).Where(d => d.Severity == DiagnosticSeverity.Error).ToList();
        Assert.Equal(messages, errors.Select(d => d.Id + ": " + d.GetMessage(System.Globalization.CultureInfo.InvariantCulture)));
    }

    /// <summary>The rewritten source has no DG error (DG0007 warnings allowed) and its generated code compiles.</summary>
    private static async Task<CompiledAssembly> Accepted(string source)
    {
        var errors = (await AnalyzeAsync(source)).Where(d => d.Severity == DiagnosticSeverity.Error).Select(d => d.ToString()).ToList();
        Assert.Empty(errors);
        return GeneratorHarness.CompileAndLoad(source);
    }

    private static string Call(string method, string hint) => "DG0001: The call to '" + method + "' cannot be differentiated: " + hint;

    private delegate double Grad2Data2(double a, double b, double[] xs, double[] ys, Span<double> gradient);

    private delegate double Grad1Data1(double f, double[] xs, Span<double> gradient);

    private delegate double Grad3(double x, double y, double z, Span<double> gradient);

    [Fact]
    public async Task LinqSumBecomesAForLoopWithTheHandGradient()
    {
        await RefusedWith(Usings + """
            public static partial class Line
            {
                [Differentiate(nameof(a), nameof(b))]
                public static double Loss(double a, double b, double[] xs, double[] ys) =>
                    xs.Select((x, i) => (a * x + b - ys[i]) * (a * x + b - ys[i])).Sum();
            }
            """,
            Call("System.Linq.Enumerable.Sum",
                "LINQ is not differentiated in this version; write the sum as a for loop over the array: `double s = 0; for (int i = 0; i < xs.Length; i++) s += …;`"));

        using CompiledAssembly asm = await Accepted(Usings + """
            public static partial class Line
            {
                [Differentiate(nameof(a), nameof(b))]
                public static double Loss(double a, double b, double[] xs, double[] ys)
                {
                    double s = 0;
                    for (int i = 0; i < xs.Length; i++)
                    {
                        double r = a * xs[i] + b - ys[i];
                        s += r * r;
                    }

                    return s;
                }
            }
            """);
        double[] xs = { 0.5, 1.25, 2.0, 3.5 };
        double[] ys = { 1.1, 2.0, 2.9, 5.2 };
        const double A = 1.3, B = 0.4;
        var g = new double[2];
        asm.Method<Grad2Data2>("Line", "LossGradient")(A, B, xs, ys, g);

        // Hand derivative (plain calculus): f = Σ r², r = a·x + b − y; ∂f/∂a = Σ 2r·x, ∂f/∂b = Σ 2r.
        double ga = 0, gb = 0;
        for (int i = 0; i < xs.Length; i++)
        {
            double r = A * xs[i] + B - ys[i];
            ga += 2 * r * xs[i];
            gb += 2 * r;
        }

        Check.Close(new[] { ga, gb }, g, 1e-13, 1e-15, "gradient of the loop written as the message says");
    }

    [Fact]
    public async Task LinqAverageBecomesAForLoopWithTheHandGradient()
    {
        await RefusedWith(Usings + """
            public static partial class Kelly
            {
                [Differentiate(nameof(f))]
                public static double Loss(double f, double[] returns) => -returns.Average(r => Math.Log(1 + f * r));
            }
            """,
            Call("System.Linq.Enumerable.Average",
                "LINQ is not differentiated in this version; write the mean as a for loop over the array: `double s = 0; for (int i = 0; i < returns.Length; i++) s += …; double mean = s / returns.Length;`"));

        using CompiledAssembly asm = await Accepted(Usings + """
            public static partial class Kelly
            {
                [Differentiate(nameof(f))]
                public static double Loss(double f, double[] returns)
                {
                    double s = 0;
                    for (int i = 0; i < returns.Length; i++)
                    {
                        s += Math.Log(1 + f * returns[i]);
                    }

                    double mean = s / returns.Length;
                    return -mean;
                }
            }
            """);
        double[] returns = { 0.12, -0.08, 0.05, 0.2, -0.15 };
        const double F = 0.4;
        var g = new double[1];
        asm.Method<Grad1Data1>("Kelly", "LossGradient")(F, returns, g);

        // Hand derivative (plain calculus): d/df −mean ln(1 + f·r) = −mean r/(1 + f·r).
        double expected = -returns.Select(r => r / (1 + F * r)).Average();
        Check.Close(expected, g[0], 1e-13, 1e-15, "gradient of the mean written as the message says");
    }

    [Fact]
    public async Task LinqMaxAndMinOverARangeBecomeForLoops()
    {
        await RefusedWith(Usings + """
            public static partial class Peaks
            {
                [Differentiate(nameof(w))]
                public static double Highest(double w, double[] xs) => xs.Max(x => w * x * x);

                [Differentiate(nameof(c))]
                public static double Nearest(double c, double[] xs) => Enumerable.Range(0, xs.Length).Min(i => (xs[i] - c) * (xs[i] - c));
            }
            """,
            Call("System.Linq.Enumerable.Max",
                "LINQ is not differentiated in this version; write the maximum as a for loop over the array: `double m = double.NegativeInfinity; for (int i = 0; i < xs.Length; i++) m = Math.Max(m, …);`"),
            Call("System.Linq.Enumerable.Min",
                "LINQ is not differentiated in this version; write the minimum as a for loop over the array: `double m = double.PositiveInfinity; for (int i = 0; i < xs.Length; i++) m = Math.Min(m, …);`"));

        using CompiledAssembly asm = await Accepted(Usings + """
            public static partial class Peaks
            {
                [Differentiate(nameof(w))]
                public static double Highest(double w, double[] xs)
                {
                    double m = double.NegativeInfinity;
                    for (int i = 0; i < xs.Length; i++) m = Math.Max(m, w * xs[i] * xs[i]);
                    return m;
                }

                [Differentiate(nameof(c))]
                public static double Nearest(double c, double[] xs)
                {
                    double m = double.PositiveInfinity;
                    for (int i = 0; i < xs.Length; i++) m = Math.Min(m, (xs[i] - c) * (xs[i] - c));
                    return m;
                }
            }
            """);
        double[] xs = { 0.5, -2.5, 1.5 };
        var g = new double[1];
        Assert.Equal(2.0 * 6.25, asm.Method<Grad1Data1>("Peaks", "HighestGradient")(2.0, xs, g));

        // Plain calculus: the largest w·x² (w > 0) is at x = −2.5, so d/dw = x² = 6.25.
        Assert.Equal(6.25, g[0]);
        asm.Method<Grad1Data1>("Peaks", "NearestGradient")(1.2, xs, g);

        // Plain calculus: the nearest point to c = 1.2 is 1.5, so d/dc (1.5 − c)² = −2(1.5 − 1.2).
        Check.Close(-2 * (1.5 - 1.2), g[0], 1e-14, 1e-15, "d/dc of the minimum");
    }

    [Fact]
    public async Task LinqOverAnArrayWrittenInTheCallIsWrittenOutTermByTerm()
    {
        await RefusedWith(Usings + """
            public static partial class Penalty
            {
                [Differentiate]
                public static double Ridge(double w0, double w1) => new[] { w0, w1 }.Select(v => v * v).Sum();
            }
            """,
            Call("System.Linq.Enumerable.Sum", "LINQ is not differentiated in this version; write the sum out, one term for each of w0, w1: `… + …`"));

        using CompiledAssembly asm = await Accepted(Usings + """
            public static partial class Penalty
            {
                [Differentiate]
                public static double Ridge(double w0, double w1) => w0 * w0 + w1 * w1;
            }
            """);
        Assert.True(asm.HasMethod("Penalty", "RidgeGradient"));
    }

    [Fact]
    public async Task OtherLinqCallsBecomeAForLoop()
    {
        await RefusedWith(Usings + """
            public static partial class Fold
            {
                [Differentiate(nameof(a))]
                public static double Total(double a, double[] xs) => xs.Aggregate(0.0, (s, x) => s + a * x);
            }
            """,
            Call("System.Linq.Enumerable.Aggregate",
                "LINQ is not differentiated in this version; write the computation as a for loop over the array (over several arrays, one index for all): `double s = 0; for (int i = 0; i < xs.Length; i++) s += …;`"));

        using CompiledAssembly asm = await Accepted(Usings + """
            public static partial class Fold
            {
                [Differentiate(nameof(a))]
                public static double Total(double a, double[] xs)
                {
                    double s = 0;
                    for (int i = 0; i < xs.Length; i++) s += a * xs[i];
                    return s;
                }
            }
            """);
        var g = new double[1];
        asm.Method<Grad1Data1>("Fold", "TotalGradient")(3.0, new[] { 1.0, 2.0, 4.0 }, g);
        Assert.Equal(7.0, g[0]); // d/da Σ a·x = Σ x
    }

    [Fact]
    public async Task Vector3DotAndLengthBecomeComponentFormulasWithTheHandGradient()
    {
        await RefusedWith(Usings + """
            public static partial class Aim
            {
                private static readonly Vector3 Target = new(0.3f, -0.4f, 0.866f);

                [Differentiate]
                public static float Cosine(float x, float y, float z) => Vector3.Dot(new Vector3(x, y, z), Target) / new Vector3(x, y, z).Length();
            }
            """,
            Call("System.Numerics.Vector3.Dot", Vectors + "x, y, z as separate parameters, keep them in separate locals) and write Vector3.Dot as `ax * bx + ay * by + az * bz`"),
            Call("System.Numerics.Vector3.Length", Vectors + "x, y, z as separate parameters, keep them in separate locals) and write Vector3.Length as `Math.Sqrt(x * x + y * y + z * z)`"));

        using CompiledAssembly asm = await Accepted(Usings + """
            public static partial class Aim
            {
                private const double Tx = 0.3, Ty = -0.4, Tz = 0.866;

                [Differentiate]
                public static double Cosine(double x, double y, double z) => (x * Tx + y * Ty + z * Tz) / Math.Sqrt(x * x + y * y + z * z);
            }
            """);
        double[] t = { 0.3, -0.4, 0.866 };
        double[] v = { 1.2, 0.7, -0.5 };
        var g = new double[3];
        asm.Method<Grad3>("Aim", "CosineGradient")(v[0], v[1], v[2], g);

        // Hand derivative (plain calculus): f = (v·t)/|v|; ∂f/∂v_k = t_k/|v| − (v·t)·v_k/|v|³.
        double dot = v[0] * t[0] + v[1] * t[1] + v[2] * t[2];
        double norm = Math.Sqrt(v[0] * v[0] + v[1] * v[1] + v[2] * v[2]);
        double[] expected = Enumerable.Range(0, 3).Select(k => t[k] / norm - dot * v[k] / (norm * norm * norm)).ToArray();
        Check.Close(expected, g, 1e-13, 1e-15, "gradient of the component formulas");
    }

    [Fact]
    public async Task Vector2LocalsDistanceAndComponentsBecomeScalars()
    {
        await RefusedWith(Usings + """
            public static partial class Reach
            {
                private static readonly Vector2 Goal = new(1.0f, 0.5f);

                [Differentiate]
                public static float Miss(float a, float b)
                {
                    Vector2 tip = new Vector2(MathF.Cos(a), MathF.Sin(a)) * b;
                    return Vector2.DistanceSquared(tip, Goal);
                }

                [Differentiate(nameof(a))]
                public static float Height(float a, Vector2 p) => a * p.Y;
            }
            """,
            "DG0001: The local 'tip' of type 'System.Numerics.Vector2' cannot be differentiated: locals must be double, float, int or bool; System.Numerics vectors are not differentiated in this version: keep its components in double or float locals (tipX, tipY)",
            Call("System.Numerics.Vector2.DistanceSquared", Vectors + "x, y as separate parameters, keep them in separate locals) and write Vector2.DistanceSquared as `double dx = ax - bx, dy = ay - by; … dx * dx + dy * dy`"),
            "DG0001: The field 'Y' cannot be differentiated: System.Numerics vectors are not differentiated in this version; keep the component in a double or float parameter or local instead of the vector");

        using CompiledAssembly asm = await Accepted(Usings + """
            public static partial class Reach
            {
                private const float GoalX = 1.0f, GoalY = 0.5f;

                [Differentiate]
                public static float Miss(float a, float b)
                {
                    float tipX = MathF.Cos(a) * b, tipY = MathF.Sin(a) * b;
                    float dx = tipX - GoalX, dy = tipY - GoalY;
                    return dx * dx + dy * dy;
                }

                [Differentiate(nameof(a))]
                public static float Height(float a, float py) => a * py;
            }
            """);
        Assert.True(asm.HasMethod("Reach", "MissGradient") && asm.HasMethod("Reach", "HeightGradient"));
    }

    [Fact]
    public async Task OtherLibraryAndUnsupportedMathCallsPointToTheSupportedFunctions()
    {
        await RefusedWith(Usings + """
            public static partial class Misc
            {
                [Differentiate]
                public static double Modulus(double x, double y) => Complex.Abs(new Complex(x, y));

                [Differentiate]
                public static double Growth(double x) => double.ExpM1(x);
            }
            """,
            Call("System.Numerics.Complex.Abs", Callables + "; 'Abs' is a method of another assembly and cannot be marked: compute it with the supported functions of System.Math in this method"),
            Call("double.ExpM1", Callables + "; 'ExpM1' is not one of them: compute it with the supported functions of System.Math in this method"));

        using CompiledAssembly asm = await Accepted(Usings + """
            public static partial class Misc
            {
                [Differentiate]
                public static double Modulus(double x, double y) => Math.Sqrt(x * x + y * y);

                [Differentiate]
                public static double Growth(double x) => Math.Exp(x) - 1;
            }
            """);
        Assert.True(asm.HasMethod("Misc", "ModulusGradient") && asm.HasMethod("Misc", "GrowthGradient"));
    }

    [Fact]
    public async Task LocalFunctionsAreInlinedAndTheirDeclarationIsNoLongerRefused()
    {
        using CompiledAssembly asm = await Accepted(Usings + """
            public static partial class Decay
            {
                [Differentiate]
                public static double Twice(double k)
                {
                    double Model(double t) => Math.Exp(-k * t);
                    return Model(1) + Model(2);
                }

                [Differentiate]
                public static double Lagged(double k)
                {
                    static double Lag(double x) => x / (1 + x);
                    return Lag(k * k);
                }
            }
            """);
        Assert.True(asm.HasMethod("Decay", "TwiceGradient") && asm.HasMethod("Decay", "LaggedGradient"));
        Assert.False(asm.HasMethod("Decay", "LagGradient"));
    }

    [Fact]
    public async Task LocalFunctionsThatCannotBeInlinedAreRefusedAtTheCall()
    {
        const string Rule = "inlined methods take double, float, int or bool parameters by value or 'in', or one-dimensional arrays or spans of them, or double[,]/float[,]/int[,] data, return one of those scalar types, a tuple of them or nothing, are not generic or recursive, and do not assign what they capture";
        const string Rewrite = ": write its computation in this method with double and float locals, or pass and return those";
        await RefusedWith(Usings + """
            public static partial class Odd
            {
                [Differentiate]
                public static double Recursive(double x)
                {
                    double Power(double u, int n) => n == 0 ? 1 : u * Power(u, n - 1);
                    return Power(x, 3);
                }

                [Differentiate]
                public static double ByRef(double x)
                {
                    double Twice(ref double u) => 2 * u;
                    return Twice(ref x);
                }

                [Differentiate]
                public static double Generic(double x)
                {
                    double First<T>(double u, T tag) => u;
                    return First(x, 1);
                }

                [Differentiate]
                public static double AssignsCaptured(double x)
                {
                    double total = 0;
                    double Add(double u)
                    {
                        total = total + u;
                        return total;
                    }

                    return Add(x) + total;
                }

                [Differentiate]
                public static double InAnArm(double x)
                {
                    double Sq(double u) => u * u;
                    return x > 0 ? Sq(x) : 0;
                }

                [Differentiate]
                public static double InACondition(double x)
                {
                    int Count(int n) => 2 * n;
                    double s = 0;
                    for (int i = 0; i < Count(3); i++)
                    {
                        s += x * i;
                    }

                    return s;
                }
            }
            """,
            "DG0001: The recursive call of the local function 'Power' cannot be differentiated: a local function is inlined at each call, so it cannot call itself; write the recursion as a loop in the method",
            "DG0001: The call of the local function 'Twice' cannot be differentiated: " + Rule + "; 'Twice' takes 'ref double u'" + Rewrite,
            "DG0001: The call of the local function 'First' cannot be differentiated: " + Rule + "; 'First' is generic" + Rewrite,
            "DG0001: The call of the local function 'Add', which assigns the captured local 'total' cannot be differentiated: let it return the new value and assign that at the call ('total = Add(…);')",
            "DG0001: The call of the local function 'Sq' in an arm of the conditional operator cannot be differentiated: its statements would run where the expression is not evaluated; call it before, into a local ('double v = Sq(…);'), and use the local",
            "DG0001: The call of the local function 'Count' in the condition or step of a loop cannot be differentiated: its statements would run where the expression is not evaluated; call it before, into a local ('int v = Count(…);'), and use the local");

        // Each rewritten as its message says.
        using CompiledAssembly asm = await Accepted(Usings + """
            public static partial class Odd
            {
                [Differentiate]
                public static double Recursive(double x)
                {
                    double p = 1;
                    for (int n = 0; n < 3; n++)
                    {
                        p *= x;
                    }

                    return p;
                }

                [Differentiate]
                public static double ByRef(double x)
                {
                    double Twice(double u) => 2 * u;
                    return Twice(x);
                }

                [Differentiate]
                public static double Generic(double x)
                {
                    double First(double u, int tag) => u;
                    return First(x, 1);
                }

                [Differentiate]
                public static double AssignsCaptured(double x)
                {
                    double total = 0;
                    double Add(double u) => total + u;
                    total = Add(x);
                    return total + total;
                }

                [Differentiate]
                public static double InAnArm(double x)
                {
                    double Sq(double u) => u * u;
                    double v = Sq(x);
                    return x > 0 ? v : 0;
                }

                [Differentiate]
                public static double InACondition(double x)
                {
                    int Count(int n) => 2 * n;
                    int v = Count(3);
                    double s = 0;
                    for (int i = 0; i < v; i++)
                    {
                        s += x * i;
                    }

                    return s;
                }
            }
            """);
        Assert.True(asm.HasMethod("Odd", "InAnArmGradient") && asm.HasMethod("Odd", "AssignsCapturedGradient"));
    }

    [Fact]
    public async Task MethodsOfAnotherObjectAreRefusedAndTheStaticRewriteIsInlined()
    {
        await RefusedWith(Usings + """
            public sealed class Plant
            {
                public double Gain { get; init; } = 2;

                public double Next(double u) => Gain * u;
            }

            public partial class Control
            {
                private readonly Plant _plant = new();

                [Differentiate]
                public double Cost(double u) => _plant.Next(u) * u;
            }
            """,
            Call("Plant.Next", "'Next' is called on another object than this one; make it a static method that takes what it reads as parameters: a static method is inlined (or called as a helper)"));

        // Rewritten as the message says: Next static, taking the gain (Plant is not partial, so Next is inlined); a helper
        // over arrays (Dot) is inlined too.
        using CompiledAssembly asm = await Accepted(Usings + """
            public sealed class Plant
            {
                public static double Next(double gain, double u) => gain * u;
            }

            public partial class Control
            {
                [Differentiate(nameof(u))]
                public double Cost(double u, double gain) => Plant.Next(gain, u) * u;

                [Differentiate(nameof(w))]
                public static double Squared(double[] w, double[] x) => Dot(w, x) * Dot(w, x);

                private static double Dot(double[] a, double[] b)
                {
                    double s = 0;
                    for (int i = 0; i < a.Length; i++) s += a[i] * b[i];
                    return s;
                }
            }
            """);
        Assert.True(asm.HasMethod("Control", "CostGradient") && asm.HasMethod("Control", "SquaredGradient"));
        Assert.False(asm.HasMethod("Control", "DotGradient"));
    }

    [Fact]
    public async Task AnUnmarkedInstanceMethodOfThisObjectIsInlinedAndAMarkedOneIsCalled()
    {
        using (CompiledAssembly inlined = await Accepted(Usings + """
            public partial class Model
            {
                private double Rate(double b) => Math.Exp(b);

                [Differentiate]
                public double Loss(double b) => Rate(b) - b;
            }
            """))
        {
            Assert.True(inlined.HasMethod("Model", "LossGradient"));
            Assert.False(inlined.HasMethod("Model", "RateGradient"));
        }

        using CompiledAssembly asm = await Accepted(Usings + """
            public partial class Model
            {
                [Differentiate]
                private double Rate(double b) => Math.Exp(b);

                [Differentiate]
                public double Loss(double b) => Rate(b) - b;
            }
            """);
        Assert.True(asm.HasMethod("Model", "LossGradient"));
    }

    [Fact]
    public async Task LocalArrayAndInliningRefusalsAndTheirRewrites()
    {
        const string RunTime = "local arrays indexed at run time are not in this version";
        await RefusedWith(Usings + """
            public static class Tables
            {
                private static readonly double[] W = { 1.0, 2.0 };

                internal static double Weighted(double x)
                {
                    double s = 0;
                    for (int i = 0; i < W.Length; i++) s += W[i] * x;
                    return s;
                }
            }

            public partial class Arrays
            {
                public static readonly double[][] Rows = { new[] { 1.0, 2.0 } };

                [Differentiate(nameof(x))]
                public static double Length(double x, int n)
                {
                    double[] a = new double[n];
                    a[0] = x;
                    return a[0];
                }

                [Differentiate(nameof(x))]
                public static double Index(double x, int n)
                {
                    double[] a = { 1.0, 2.0, 3.0 };
                    double s = 0;
                    for (int i = 0; i < n; i++)
                    {
                        s += a[i] * x;
                    }

                    return s;
                }

                [Differentiate(nameof(x))]
                public static double Jagged(double x) => Dot(Rows[0], x);

                private static double Dot(double[] r, double x) => r[0] * x + r[1];

                [Differentiate(nameof(x))]
                public static double WritesData(double x, double[] t)
                {
                    Scale(t, x);
                    return x * t[0];
                }

                private static void Scale(Span<double> v, double f) => v[0] = f;

                [Differentiate(nameof(x))]
                public static double Sum(double x, int n)
                {
                    Span<double> d = stackalloc double[1];
                    Accumulate(d, x, n);
                    return d[0];
                }

                private static void Accumulate(Span<double> d, double x, int n)
                {
                    for (int k = 0; k < n; k++)
                    {
                        d[0] += x;
                    }
                }

                [Differentiate(nameof(x))]
                public static double Jump(double x, double[] t)
                {
                    double[] a = new double[3];
                    for (int j = 0; j < 3; j++)
                    {
                        if (t[j] < 0) break;
                        a[j] = x * t[j];
                    }

                    return a[0] + a[1] + a[2];
                }

                [Differentiate(nameof(x))]
                public static double Outside(double x)
                {
                    double[] a = { x, 2 * x, 3 * x };
                    return a[3];
                }

                [Differentiate(nameof(x))]
                public static double TooLong(double x)
                {
                    double[] a = new double[65];
                    a[0] = x;
                    return a[0];
                }

                [Differentiate(nameof(x))]
                public static double Reassigned(double x)
                {
                    double[] a = { x };
                    a = new double[] { 2 * x };
                    return a[0];
                }

                [Differentiate(nameof(x))]
                public static double Private(double x) => Tables.Weighted(x);

                protected virtual double V(double u) => u * u;

                [Differentiate(nameof(x))]
                public double Virtual(double x) => V(x);
            }
            """,
            "DG0001: The local array 'a' of length 'n' cannot be differentiated: its length is not a compile-time constant, and " + RunTime + "; give it a constant length of at most 64 (a literal or a const, e.g. new double[4]) and index it with constants or with the index of a for loop with constant bounds",
            "DG0001: The element 'a[i]' of the local array 'a' cannot be differentiated: its index is not a compile-time constant, and " + RunTime + "; index it with constants (a[0], a[1]) or with the index of a for loop whose bounds are constants, e.g. for (int j = 0; j < 3; j++), which is unrolled",
            "DG0001: The argument 'Rows[0]' for the parameter 'r' of 'Dot' cannot be differentiated: jagged arrays are not read in this version; keep the data in a 2-D array (double[,]) and pass it with the row index, reading m[row, j] in the method",
            "DG0001: The write 'v[0] = f' into 't' cannot be differentiated: it is data or a variable of the caller, which cannot be written; pass a local array (Span<double> d = stackalloc double[n]) to write into, and read from that",
            "DG0001: The write 'd[0] += x' inside a loop of the inlined 'Accumulate' cannot be differentiated: writing the caller's local array 'd' in a loop that is not unrolled is not in this version; give the loop constant bounds, or sum into a local and write the element after the loop",
            "DG0001: The jump 'break;' in a loop that is unrolled cannot be differentiated: the loop is unrolled because it indexes a local array with its index, and break, continue and return inside it are not in this version; select the values with if/else instead",
            "DG0001: The element 'a[3]' (index 3) of the local array 'a' cannot be differentiated: it is outside the array of length 3, where C# throws IndexOutOfRangeException; index within 0..2",
            "DG0001: The local array 'a' of 65 elements cannot be differentiated: local arrays of at most 64 elements are replaced by scalars, and longer ones are not in this version; split it into arrays of at most 64 elements, or keep running sums in double locals",
            "DG0001: The assignment of the local array 'a' cannot be differentiated: a local array is created once, where it is declared; assign its elements, or declare another local array",
            "DG0001: The call to 'Tables.Weighted' cannot be differentiated: it reads 'W', which the generated methods of 'Arrays' cannot access; make 'W' internal, or pass its value as an argument",
            "DG0001: The call to 'Arrays.V' cannot be differentiated: which override runs is decided at run time, so it cannot be inlined; make 'V' a non-virtual method (no virtual, abstract or override) or a static method: such a method is inlined");

        // Each rewritten as its message says.
        using CompiledAssembly asm = await Accepted(Usings + """
            public static class Tables
            {
                internal static readonly double[] W = { 1.0, 2.0 };

                internal static double Weighted(double x)
                {
                    double s = 0;
                    for (int i = 0; i < W.Length; i++) s += W[i] * x;
                    return s;
                }
            }

            public partial class Arrays
            {
                public static readonly double[,] Rows = { { 1.0, 2.0 } };

                [Differentiate(nameof(x))]
                public static double Length(double x, int n)
                {
                    double[] a = new double[4];
                    a[0] = x;
                    return a[0];
                }

                [Differentiate(nameof(x))]
                public static double Index(double x, int n)
                {
                    double[] a = { 1.0, 2.0, 3.0 };
                    double s = 0;
                    for (int i = 0; i < 3; i++)
                    {
                        s += a[i] * x;
                    }

                    return s;
                }

                [Differentiate(nameof(x))]
                public static double Jagged(double x) => Dot(Rows, 0, x);

                private static double Dot(double[,] m, int row, double x) => m[row, 0] * x + m[row, 1];

                [Differentiate(nameof(x))]
                public static double WritesData(double x, double[] t)
                {
                    Span<double> v = stackalloc double[1];
                    Scale(v, x);
                    return x * t[0] + v[0];
                }

                private static void Scale(Span<double> v, double f) => v[0] = f;

                [Differentiate(nameof(x))]
                public static double Sum(double x, int n)
                {
                    Span<double> d = stackalloc double[1];
                    Accumulate(d, x, n);
                    return d[0];
                }

                private static void Accumulate(Span<double> d, double x, int n)
                {
                    double s = 0;
                    for (int k = 0; k < n; k++)
                    {
                        s += x;
                    }

                    d[0] = s;
                }

                [Differentiate(nameof(x))]
                public static double Jump(double x, double[] t)
                {
                    double[] a = new double[3];
                    for (int j = 0; j < 3; j++)
                    {
                        a[j] = t[j] < 0 ? 0 : x * t[j];
                    }

                    return a[0] + a[1] + a[2];
                }

                [Differentiate(nameof(x))]
                public static double Outside(double x)
                {
                    double[] a = { x, 2 * x, 3 * x };
                    return a[2];
                }

                [Differentiate(nameof(x))]
                public static double TooLong(double x)
                {
                    double[] a = new double[64];
                    a[0] = x;
                    return a[0];
                }

                [Differentiate(nameof(x))]
                public static double Reassigned(double x)
                {
                    double[] a = { x };
                    double[] b = { 2 * x };
                    return a[0] + b[0];
                }

                [Differentiate(nameof(x))]
                public static double Private(double x) => Tables.Weighted(x);

                protected double V(double u) => u * u;

                [Differentiate(nameof(x))]
                public double Virtual(double x) => V(x);
            }
            """);
        Assert.True(asm.HasMethod("Arrays", "SumGradient") && asm.HasMethod("Arrays", "JumpGradient") && asm.HasMethod("Arrays", "VirtualGradient"));
    }
}
