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

    private delegate float Grad3f(float x, float y, float z, Span<float> gradient);

    private delegate double Grad1Data0(double k, double t, Span<double> gradient);

    private const string InlinedBody =
        "a method that takes or returns a struct is inlined at each call: give it an expression body, or a block of local declarations and assignments ending in one return (use ?: for choices); "
        + "or pass the struct's fields as double or float parameters and return a double, which is differentiated as a helper";

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
                "this version lowers Sum, Average, Max and Min (double) over arrays, Select, Zip and Enumerable.Range to loops, not this; write the sum as a for loop over the array: `double s = 0; for (int i = 0; i < xs.Length; i++) s += …;`"));

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
    public async Task LinqAverageAfterAReadBecomesAForLoopWithTheHandGradient()
    {
        // Accepted as written where nothing before it can throw: the generated methods check for an empty source first.
        using (CompiledAssembly linq = await Accepted(Usings + """
            public static partial class Kelly
            {
                [Differentiate(nameof(f))]
                public static double Loss(double f, double[] returns) => -returns.Average(r => Math.Log(1 + f * r));
            }
            """))
        {
            var g1 = new double[1];
            double[] r1 = { 0.12, -0.08, 0.05, 0.2, -0.15 };
            linq.Method<Grad1Data1>("Kelly", "LossGradient")(0.4, r1, g1);
            Check.Close(-r1.Select(r => r / (1 + 0.4 * r)).Average(), g1[0], 1e-13, 1e-15, "gradient of the LINQ mean (plain calculus)");
        }

        // After a read that can throw, the empty-source check could not run first: refused, with the loop as advice.
        await RefusedWith(Usings + """
            public static partial class Kelly
            {
                [Differentiate(nameof(f))]
                public static double Loss(double f, double[] returns)
                {
                    double baseline = returns[0];
                    return -returns.Average(r => Math.Log(1 + f * (r - baseline)));
                }
            }
            """,
            "DG0001: The call to 'Enumerable.Average' after a statement that can throw (a data read, a division of ints, a call) cannot be differentiated: "
                + "LINQ throws on an empty source, and the generated methods make that check first, where nothing before it can throw: compute it at the top of the method, over data or parameters, or write the mean as a for loop over the array: `double s = 0; for (int i = 0; i < returns.Length; i++) s += …; double mean = s / returns.Length;`");

        using CompiledAssembly asm = await Accepted(Usings + """
            public static partial class Kelly
            {
                [Differentiate(nameof(f))]
                public static double Loss(double f, double[] returns)
                {
                    double baseline = returns[0];
                    double s = 0;
                    for (int i = 0; i < returns.Length; i++)
                    {
                        s += Math.Log(1 + f * (returns[i] - baseline));
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

        // Hand derivative (plain calculus): d/df −mean ln(1 + f·(r − r0)) = −mean (r − r0)/(1 + f·(r − r0)).
        double expected = -returns.Select(r => (r - returns[0]) / (1 + F * (r - returns[0]))).Average();
        Check.Close(expected, g[0], 1e-13, 1e-15, "gradient of the mean written as the message says");
    }

    [Fact]
    public async Task LinqMaxAndMinOverARangeBecomeForLoops()
    {
        // Max as written is accepted; Min over elements that read data is refused (LINQ stops at a NaN, the loop would not).
        using (CompiledAssembly linq = await Accepted(Usings + """
            public static partial class Peaks
            {
                [Differentiate(nameof(w))]
                public static double Highest(double w, double[] xs) => xs.Max(x => w * x * x);
            }
            """))
        {
            var g1 = new double[1];
            Assert.Equal(2.0 * 6.25, linq.Method<Grad1Data1>("Peaks", "HighestGradient")(2.0, new[] { 0.5, -2.5, 1.5 }, g1));
            Assert.Equal(6.25, g1[0]); // the largest w·x² (w > 0) is at x = −2.5: d/dw = x² (plain calculus)
        }

        await RefusedWith(Usings + """
            public static partial class Peaks
            {
                [Differentiate(nameof(c))]
                public static double Nearest(double c, double[] xs) => Enumerable.Range(0, xs.Length).Min(i => (xs[i] - c) * (xs[i] - c));
            }
            """,
            "DG0001: The call to 'Enumerable.Min' over elements that can throw cannot be differentiated: "
                + "LINQ's Min stops at the first NaN and does not compute the elements after it; write the minimum as a for loop over the array: `double m = double.PositiveInfinity; for (int i = 0; i < xs.Length; i++) m = Math.Min(m, …);`");

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
        // Sum over an array written in the call is lowered; a LINQ method that is not (Aggregate) gets the terms written out.
        using (CompiledAssembly linq = await Accepted(Usings + """
            public static partial class Penalty
            {
                [Differentiate]
                public static double Ridge(double w0, double w1) => new[] { w0, w1 }.Select(v => v * v).Sum();
            }
            """))
        {
            var g1 = new double[2];
            Assert.Equal(0.0 + 9.0 + 16.0, linq.Method<Grad2>("Penalty", "RidgeGradient")(3.0, 4.0, g1));
            Assert.Equal(new[] { 6.0, 8.0 }, g1); // ∇(w0² + w1²) = 2w (plain calculus)
        }

        await RefusedWith(Usings + """
            public static partial class Penalty
            {
                [Differentiate]
                public static double Ridge(double w0, double w1) => new[] { w0, w1 }.Aggregate(0.0, (s, v) => s + v * v);
            }
            """,
            Call("System.Linq.Enumerable.Aggregate", "this version lowers Sum, Average, Max and Min (double) over arrays, Select, Zip and Enumerable.Range to loops, not this; write it out with one term for each of w0, w1: `… + …`"));

        using CompiledAssembly asm = await Accepted(Usings + """
            public static partial class Penalty
            {
                [Differentiate]
                public static double Ridge(double w0, double w1) => w0 * w0 + w1 * w1;
            }
            """);
        Assert.True(asm.HasMethod("Penalty", "RidgeGradient"));
    }

    private delegate double Grad2(double w0, double w1, Span<double> gradient);

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
                "this version lowers Sum, Average, Max and Min (double) over arrays, Select, Zip and Enumerable.Range to loops, not this; write the computation as a for loop over the array (over several arrays, one index for all): `double s = 0; for (int i = 0; i < xs.Length; i++) s += …;`"));

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
    public async Task VectorsOnceRefusedAreAcceptedWithTheHandGradient()
    {
        // These two examples were refused with advice to use the components; vectors are now taken apart into their
        // components by the lowering itself, so the user's own code is accepted (float derivatives).
        using CompiledAssembly asm = await Accepted(Usings + """
            public static partial class Aim
            {
                private static readonly Vector3 Target = new(0.3f, -0.4f, 0.866f);

                [Differentiate]
                public static float Cosine(float x, float y, float z) => Vector3.Dot(new Vector3(x, y, z), Target) / new Vector3(x, y, z).Length();
            }

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
            """);
        Assert.True(asm.HasMethod("Reach", "MissGradient") && asm.HasMethod("Reach", "HeightGradient"));
        double[] t = { 0.3f, -0.4f, 0.866f };
        float[] v = { 1.2f, 0.7f, -0.5f };
        var g = new float[3];
        asm.Method<Grad3f>("Aim", "CosineGradient")(v[0], v[1], v[2], g);

        // Hand derivative (plain calculus): f = (v·t)/|v|; ∂f/∂v_k = t_k/|v| − (v·t)·v_k/|v|³.
        double dot = v[0] * t[0] + v[1] * t[1] + v[2] * t[2];
        double norm = Math.Sqrt(v[0] * v[0] + v[1] * v[1] + v[2] * v[2]);
        for (int k = 0; k < 3; k++)
        {
            Check.Close(t[k] / norm - dot * v[k] / (norm * norm * norm), g[k], 1e-5, 1e-6, $"∂f/∂v[{k}]");
        }
    }

    [Fact]
    public async Task VectorFunctionOutsideTheListBecomesComponents()
    {
        await RefusedWith(Usings + """
            public static partial class Box
            {
                [Differentiate(nameof(p))]
                public static float Clamped(Vector3 p) => Vector3.Clamp(p, Vector3.Zero, Vector3.One).LengthSquared();
            }
            """,
            Call("Vector3.Clamp", "the vector functions differentiated are the operators, Dot, Cross, Length, LengthSquared, Distance, DistanceSquared, Normalize, Lerp (scalar amount), Min, Max and Abs; "
                + "write this one with the components (v.X, v.Y, …) and MathF functions"));

        using CompiledAssembly asm = await Accepted(Usings + """
            public static partial class Box
            {
                [Differentiate(nameof(p))]
                public static float Clamped(Vector3 p) =>
                    new Vector3(MathF.Min(MathF.Max(p.X, 0f), 1f), MathF.Min(MathF.Max(p.Y, 0f), 1f), MathF.Min(MathF.Max(p.Z, 0f), 1f)).LengthSquared();
            }
            """);
        Assert.True(asm.HasMethod("Box", "ClampedGradient"));
    }

    [Fact]
    public async Task StructWithAReferenceFieldBecomesScalarLocals()
    {
        await RefusedWith(Usings + """
            public struct Sample
            {
                public double T;
                public string Label;
            }

            public static partial class Fit
            {
                [Differentiate(nameof(k))]
                public static double Loss(double k, double t)
                {
                    var s = new Sample { T = t, Label = "a" };
                    return (k * s.T - 1) * (k * s.T - 1);
                }
            }
            """,
            "DG0001: The local 's' of type 'Sample' cannot be differentiated: the struct 'Sample' has the field 'Label' of type 'string' (a struct is taken apart only when its fields are double, float, int or such structs); keep the fields you need in double, float or int locals");

        using CompiledAssembly asm = await Accepted(Usings + """
            public static partial class Fit
            {
                [Differentiate(nameof(k))]
                public static double Loss(double k, double t)
                {
                    double sT = t;
                    return (k * sT - 1) * (k * sT - 1);
                }
            }
            """);
        var g = new double[1];
        asm.Method<Grad1Data0>("Fit", "LossGradient")(2.0, 0.75, g);
        Assert.Equal(2 * (2.0 * 0.75 - 1) * 0.75, g[0], 15); // plain calculus: d/dk (k t − 1)² = 2(k t − 1) t
    }

    [Fact]
    public async Task HelperReturningAStructWithALoopBecomesAScalarHelper()
    {
        await RefusedWith(Usings + """
            public readonly record struct State(double Position, double Velocity);

            public static partial class Spring
            {
                static State Run(State s, double k, int steps)
                {
                    for (int i = 0; i < steps; i++)
                    {
                        s = new State(s.Position + 0.1 * s.Velocity, s.Velocity - 0.1 * k * s.Position);
                    }

                    return s;
                }

                [Differentiate(nameof(k))]
                public static double Loss(double k) => Run(new State(1, 0), k, 5).Position;
            }
            """,
            "DG0001: The call to 'Run', whose body has a loop cannot be differentiated: " + InlinedBody);

        using CompiledAssembly asm = await Accepted(Usings + """
            public static partial class Spring
            {
                static double RunPosition(double position0, double velocity0, double k, int steps)
                {
                    double position = position0, velocity = velocity0;
                    for (int i = 0; i < steps; i++)
                    {
                        double next = position + 0.1 * velocity;
                        velocity = velocity - 0.1 * k * position;
                        position = next;
                    }

                    return position;
                }

                [Differentiate(nameof(k))]
                public static double Loss(double k) => RunPosition(1, 0, k, 5);
            }
            """);
        Assert.True(asm.HasMethod("Spring", "LossGradient"));
    }

    [Fact]
    public async Task PrivateStructFieldsBecomeInternal()
    {
        const string Refused = """
            public struct Gain
            {
                private double _k;

                public Gain(double k) => _k = k;

                public double K => _k;
            }

            public static partial class Amp
            {
                [Differentiate(nameof(x))]
                public static double Out(double x, Gain g) => g.K * x * x;
            }
            """;
        await RefusedWith(Usings + Refused,
            "DG0001: The 'Gain' value 'g', whose fields are not all accessible from 'Amp' cannot be differentiated: "
            + "the generated methods read its fields; make them (or their properties) internal or public, or pass the values as double or float parameters");

        using CompiledAssembly asm = await Accepted(Usings + Refused.Replace("private double _k;", "internal double _k;"));
        Assert.True(asm.HasMethod("Amp", "OutGradient"));
    }

    [Fact]
    public async Task StructByRefBecomesIn()
    {
        const string Refused = """
            public static partial class Plane
            {
                [Differentiate(nameof(x))]
                public static float Height(float x, ref Vector2 slope) => x * slope.X + slope.Y;
            }
            """;
        await RefusedWith(Usings + Refused, "DG0001: The ref struct parameter 'slope' cannot be differentiated: pass it by value or as 'in'");
        using CompiledAssembly asm = await Accepted(Usings + Refused.Replace("ref Vector2", "in Vector2"));
        Assert.True(asm.HasMethod("Plane", "HeightGradient"));
    }

    [Fact]
    public async Task ConstructorWithABranchBecomesAnObjectInitializer()
    {
        const string Declarations = """
            public struct Rate
            {
                public double Value;

                public Rate(double value)
                {
                    if (value < 0)
                    {
                        value = 0;
                    }

                    Value = value;
                }
            }

            public static partial class Decay
            {
                [Differentiate(nameof(k))]
                public static double Remaining(double k, double t)
                {
                    var r = new Rate(k);
                    return Math.Exp(-r.Value * t);
                }
            }
            """;
        await RefusedWith(Usings + Declarations,
            "DG0001: The constructor 'new Rate(k)', whose body has a branch cannot be differentiated: "
            + "a struct's constructor is inlined when it only assigns fields or properties from its parameters (X = x;); otherwise build the value with an object initializer (new T { X = x })");

        using CompiledAssembly asm = await Accepted(Usings + Declarations.Replace("var r = new Rate(k);", "var r = new Rate { Value = k < 0 ? 0 : k };"));
        var g = new double[1];
        asm.Method<Grad1Data0>("Decay", "RemainingGradient")(0.5, 2.0, g);
        Assert.Equal(-2.0 * Math.Exp(-1.0), g[0], 15); // plain calculus: d/dk e^(−k t) = −t e^(−k t)
    }

    [Fact]
    public async Task ForEachOverASpanOfStructsBecomesAnArray()
    {
        const string Refused = """
            public static partial class Fit
            {
                [Differentiate(nameof(a))]
                public static float Loss(float a, ReadOnlySpan<Vector2> points)
                {
                    float s = 0f;
                    foreach (Vector2 p in points)
                    {
                        s += (a * p.X - p.Y) * (a * p.X - p.Y);
                    }

                    return s;
                }
            }
            """;
        await RefusedWith(Usings + Refused,
            "DG0001: The foreach loop 'foreach (Vector2 p in points)' cannot be differentiated: "
            + "foreach over structs works over a one-dimensional array of them that is a parameter, a field of this instance or a static readonly field");
        using CompiledAssembly asm = await Accepted(Usings + Refused.Replace("ReadOnlySpan<Vector2> points", "Vector2[] points"));
        Assert.True(asm.HasMethod("Fit", "LossGradient"));
    }

    [Fact]
    public async Task StructVariableWithAnIntFieldSplitsIntoParameters()
    {
        await RefusedWith(Usings + """
            public struct Cell
            {
                public int Index;
                public double Value;
            }

            public static partial class Grid
            {
                [Differentiate(nameof(c))]
                public static double Energy(Cell c) => c.Value * c.Value * c.Index;
            }
            """,
            "DG0001: The struct variable 'c' cannot be differentiated: its field 'Index' is an int, which cannot be differentiated; pass the double and float fields as parameters of their own, or make the int a separate parameter");

        using CompiledAssembly asm = await Accepted(Usings + """
            public static partial class Grid
            {
                [Differentiate(nameof(value))]
                public static double Energy(double value, int index) => value * value * index;
            }
            """);
        Assert.True(asm.HasMethod("Grid", "EnergyGradient"));
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

    private const string GenericRule =
        "a differentiated generic method has one type parameter, named T, constrained to IFloatingPointIeee754<T> (or to INumberBase<T> with the System.Numerics function interfaces it uses), and returns T";

    private delegate float GradFloat2(float pKa, float hill, Span<float> gradient);

    /// <summary>
    /// A loss generic over its containing type's T: the advice (T on the method, the type not generic) is taken and the
    /// loss is accepted; at T = float its gradient is checked against a hand derivative (plain calculus).
    /// </summary>
    [Fact]
    public async Task AContainingTypesTypeParameterMovesToTheMethod()
    {
        await RefusedWith(Usings + """
            public static partial class Quadratic<T> where T : IFloatingPointIeee754<T>
            {
                [Differentiate]
                public static T Loss(T a, T b) => a * a * b - T.CreateChecked(3) * b;
            }
            """,
            "DG0005: 'Loss' returns 'T'; [Differentiate] needs a method that returns double or float, or a void method whose last parameter is a Span<double> or Span<float> of outputs",
            "DG0008: 'Loss' has no double or float parameter to differentiate with respect to",
            "DG0001: The type parameter 'T' of the containing type 'Quadratic<T>' cannot be differentiated: a generic type is not differentiated over its type parameter; declare it on the method instead, in a type that is not generic: static T Loss<T>(T x, …) where T : IFloatingPointIeee754<T>");

        using CompiledAssembly asm = await Accepted(Usings + """
            public static partial class Quadratic
            {
                [Differentiate]
                public static T Loss<T>(T a, T b) where T : IFloatingPointIeee754<T> => a * a * b - T.CreateChecked(3) * b;
            }
            """);
        var gradient = (GradFloat2)asm.Type("Quadratic").GetMethods().Single(m => m.Name == "LossGradient")
            .MakeGenericMethod(typeof(float)).CreateDelegate(typeof(GradFloat2));
        float[] g = new float[2];
        gradient(1.5f, -2f, g);
        Assert.Equal(2 * 1.5f * -2f, g[0]);   // ∂(a²b − 3b)/∂a = 2ab
        Assert.Equal((1.5f * 1.5f) - 3f, g[1]); // ∂/∂b = a² − 3
    }

    [Fact]
    public async Task GenericDeclarationsAreRenamedOrConstrainedAsTheMessageSays()
    {
        await RefusedWith(Usings + """
            public static partial class Gm
            {
                [Differentiate]
                public static TReal Named<TReal>(TReal x) where TReal : IFloatingPointIeee754<TReal> => x * x;

                [Differentiate]
                public static T Integer<T>(T x) where T : INumber<T> => x * x;

                [Differentiate]
                public static T Narrow<T>(T x) where T : INumberBase<T>, ITrigonometricFunctions<T> => T.Asin(x);

                static T Square<T>(T v) where T : IFloatingPointIeee754<T> => v * v;

                [Differentiate]
                public static T CallsHelper<T>(T x) where T : IFloatingPointIeee754<T> => Square(x) + x;

                [Differentiate]
                public static T Growth<T>(T x) where T : IFloatingPointIeee754<T> => T.ExpM1(x);
            }
            """,
            "DG0001: The generic method 'Named', which names its type parameter 'TReal' (the generated methods declare T: rename it T), cannot be differentiated: " + GenericRule,
            "DG0001: The generic method 'Integer', which constrains T to System.Numerics.INumber<T>, which does not make it a floating-point type (add IFloatingPointIeee754<T>), cannot be differentiated: " + GenericRule,
            "DG0001: The call to 'T.Asin' cannot be differentiated: its derivative needs T.Sqrt (IRootFunctions<T>) of T; add that interface to T's constraints (or constrain T to IFloatingPointIeee754<T>)",
            "DG0001: The call to 'Square' with T values cannot be differentiated: its derivatives are read from buffers of T on the stack, which needs T unmanaged: declare 'where T : unmanaged, IFloatingPointIeee754<T>'",
            "DG0001: The call to 'T.ExpM1' cannot be differentiated: the functions of T that are differentiated are those named like the functions of System.Math listed in the README (T.Exp, T.Log, T.Sqrt, T.Sin, T.Pow, …), and T.CreateChecked, T.CreateTruncating and T.CreateSaturating; 'ExpM1' is not one of them: compute it with those functions of T in this method");

        using CompiledAssembly asm = await Accepted(Usings + """
            public static partial class Gm
            {
                [Differentiate]
                public static T Named<T>(T x) where T : IFloatingPointIeee754<T> => x * x;

                [Differentiate]
                public static T Integer<T>(T x) where T : INumber<T>, IFloatingPointIeee754<T> => x * x;

                [Differentiate]
                public static T Narrow<T>(T x) where T : INumberBase<T>, ITrigonometricFunctions<T>, IRootFunctions<T> => T.Asin(x);

                static T Square<T>(T v) where T : IFloatingPointIeee754<T> => v * v;

                [Differentiate]
                public static T CallsHelper<T>(T x) where T : unmanaged, IFloatingPointIeee754<T> => Square(x) + x;

                [Differentiate]
                public static T Growth<T>(T x) where T : IFloatingPointIeee754<T> => T.Exp(x) - T.One;
            }
            """);
        Assert.True(asm.HasMethod("Gm", "NamedGradient") && asm.HasMethod("Gm", "IntegerGradient") && asm.HasMethod("Gm", "NarrowGradient")
            && asm.HasMethod("Gm", "CallsHelperGradient") && asm.HasMethod("Gm", "GrowthGradient"));
    }

    [Fact]
    public async Task AVectorOfTVariablesBecomesADoubleMethod()
    {
        await RefusedWith(Usings + """
            public static partial class Fit
            {
                [Differentiate(nameof(w))]
                public static T Loss<T>(T[] w, T x) where T : IFloatingPointIeee754<T> => w[0] * w[1] * x;
            }
            """,
            "DG0001: The vector variable 'w' of T cannot be differentiated: vectors of variables are differentiated in double and float methods in this version: write this method for double (a double[] variable) or float, or take the elements as T parameters");

        using CompiledAssembly asm = await Accepted(Usings + """
            public static partial class Fit
            {
                [Differentiate(nameof(w))]
                public static double Loss(double[] w, double x) => w[0] * w[1] * x;
            }
            """);
        Assert.True(asm.HasMethod("Fit", "LossGradient"));
    }

    private const string GuardAdviceText =
        "checks are kept where nothing before them can throw: put it at the top of the method, before any other loop, branch or data read, as 'if (condition) throw new …(…);' or a ThrowIf… helper on the parameters and data, or, to check each element, as a loop of its own that only checks ('for (int i = 0; i < w.Length; i++) if (w[i] < 0) throw new …(…);')";

    [Fact]
    public async Task ACheckInsideAComputingLoopMovesToALoopOfItsOwn()
    {
        await RefusedWith(Usings + """
            public static partial class Weighted
            {
                [Differentiate(nameof(a))]
                public static double Loss(double a, double[] w)
                {
                    double s = 0;
                    for (int i = 0; i < w.Length; i++)
                    {
                        if (w[i] < 0) throw new ArgumentException("negative weight", nameof(w));
                        s += w[i] * a * a;
                    }

                    return s;
                }
            }
            """,
            "DG0001: The throw statement inside a loop or branch cannot be differentiated: " + GuardAdviceText);

        using CompiledAssembly asm = await Accepted(Usings + """
            public static partial class Weighted
            {
                [Differentiate(nameof(a))]
                public static double Loss(double a, double[] w)
                {
                    for (int i = 0; i < w.Length; i++) if (w[i] < 0) throw new ArgumentException("negative weight", nameof(w));
                    double s = 0;
                    for (int i = 0; i < w.Length; i++)
                    {
                        s += w[i] * a * a;
                    }

                    return s;
                }
            }
            """);
        var g = new[] { double.NaN };
        var loss = asm.Method<Grad1Data1>("Weighted", "LossGradient");
        Assert.Equal(1.5 * 9.0, loss(3.0, new[] { 1.0, 0.5 }, g), 1e-12); // f = Σw·a² = 1.5·a² at a = 3
        Assert.Equal(2 * 1.5 * 3.0, g[0], 1e-12); // f' = 2a·Σw (plain calculus)
        g[0] = double.NaN;
        var thrown = Assert.Throws<ArgumentException>(() => loss(3.0, new[] { 1.0, -0.5 }, g));
        Assert.Equal("w", thrown.ParamName);
        Assert.StartsWith("negative weight", thrown.Message, StringComparison.Ordinal);
        Assert.True(double.IsNaN(g[0]));
    }

    [Fact]
    public async Task AThrowingSwitchArmBecomesACheckAtTheTop()
    {
        await RefusedWith(Usings + """
            public enum Penalty { Squared, Absolute }

            public static partial class Robust
            {
                [Differentiate(nameof(a))]
                public static double Loss(double a, double[] r, double[] w, Penalty kind)
                {
                    double s = 0;
                    for (int i = 0; i < r.Length; i++)
                    {
                        double e = w[i] * (a - r[i]); // w[i] may be out of range: the check cannot go first as it is
                        s += kind switch
                        {
                            Penalty.Squared => e * e,
                            Penalty.Absolute => Math.Sqrt(e * e + 1e-6),
                            _ => throw new ArgumentOutOfRangeException(nameof(kind)),
                        };
                    }

                    return s;
                }
            }
            """,
            "DG0001: The arm that throws ('throw new ArgumentOutOfRangeException(nameof(kind))') cannot be differentiated: the generated methods make a check that throws only at the top of the method, before anything that can throw: check the value there ('if (kind is not (…)) throw …;', the patterns of the other arms) and give this arm a value ('_ => double.NaN')");

        // Written as the message says (with an int for the kind, so that the test can call it through a delegate).
        using CompiledAssembly asm = await Accepted(Usings + """
            public static partial class Robust
            {
                [Differentiate(nameof(a))]
                public static double Loss(double a, double[] r, int kind)
                {
                    if (kind is not (0 or 1)) throw new ArgumentOutOfRangeException(nameof(kind));
                    double s = 0;
                    for (int i = 0; i < r.Length; i++)
                    {
                        double e = a - r[i];
                        s += kind switch
                        {
                            0 => e * e,
                            1 => Math.Sqrt(e * e + 1e-6),
                            _ => double.NaN,
                        };
                    }

                    return s;
                }
            }
            """);
        var g = new double[1];
        var loss = asm.Method<GradKind>("Robust", "LossGradient");
        loss(2.0, new[] { 1.0, 4.0 }, 0, g);
        Assert.Equal(2 * (2.0 - 1.0) + 2 * (2.0 - 4.0), g[0], 1e-12); // d/da Σ (a − r)² = Σ 2(a − r) (plain calculus)
        Assert.Equal("kind", Assert.Throws<ArgumentOutOfRangeException>(() => loss(2.0, new[] { 1.0 }, 5, g)).ParamName);
    }

    private delegate double GradKind(double a, double[] r, int kind, Span<double> gradient);

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

    private delegate double Grad2Data1(double a, double b, double[] data, Span<double> gradient);

    [Fact]
    public async Task IntRemainderAsAWrappingIndexBecomesAConditionalWithTheHandGradient()
    {
        await RefusedWith(Usings + """
            public static partial class Ring
            {
                [Differentiate(nameof(x), nameof(y))]
                public static double Energy(double x, double y, double[] ring)
                {
                    double e = 0;
                    for (int i = 0; i < ring.Length; i++)
                    {
                        double d = ring[(i + 1) % ring.Length] * x - ring[i] * y;
                        e += d * d;
                    }

                    return e;
                }
            }
            """,
            "DG0001: The operator '(i + 1) % ring.Length' cannot be differentiated: the remainder operator is not supported; "
            + "where 0 <= i + 1 <= ring.Length (an index wrapping past the end) write the wrap as a conditional: `i + 1 < ring.Length ? i + 1 : 0`");

        using CompiledAssembly asm = await Accepted(Usings + """
            public static partial class Ring
            {
                [Differentiate(nameof(x), nameof(y))]
                public static double Energy(double x, double y, double[] ring)
                {
                    double e = 0;
                    for (int i = 0; i < ring.Length; i++)
                    {
                        double d = ring[i + 1 < ring.Length ? i + 1 : 0] * x - ring[i] * y;
                        e += d * d;
                    }

                    return e;
                }
            }
            """);
        double[] ring = { 0.7, -1.2, 2.5, 0.3, 1.9 }; // invented
        const double X = 0.8, Y = -0.35;
        var g = new double[2];
        asm.Method<Grad2Data1>("Ring", "EnergyGradient")(X, Y, ring, g);

        // Hand derivative (plain calculus): e = Σ d², d = r[i+1 mod n]·x − r[i]·y; ∂e/∂x = Σ 2d·r[i+1 mod n], ∂e/∂y = Σ −2d·r[i].
        double gx = 0, gy = 0;
        for (int i = 0; i < ring.Length; i++)
        {
            double next = ring[(i + 1) % ring.Length];
            double d = next * X - ring[i] * Y;
            gx += 2 * d * next;
            gy -= 2 * d * ring[i];
        }

        Check.Close(new[] { gx, gy }, g, 1e-13, 1e-15, "gradient of the wrap written as the message says");
    }

    [Fact]
    public async Task LinqZipOfTwoRangesBecomesALoopOverTheArrayWithTheHandGradient()
    {
        await RefusedWith(Usings + """
            public static partial class Ar1
            {
                [Differentiate(nameof(phi), nameof(mean))]
                public static double Sse(double phi, double mean, double[] ys) =>
                    ys[1..].Zip(ys[..^1], (y, previous) => (y - mean - phi * (previous - mean)) * (y - mean - phi * (previous - mean))).Sum();
            }
            """,
            Call("System.Linq.Enumerable.Sum",
                "this version lowers Sum, Average, Max and Min (double) over arrays, Select, Zip and Enumerable.Range to loops, not this; write the sum as a for loop over the array: `double s = 0; for (int i = 1; i < ys.Length; i++) s += … ys[i] … ys[i - 1] …;`"));

        using CompiledAssembly asm = await Accepted(Usings + """
            public static partial class Ar1
            {
                [Differentiate(nameof(phi), nameof(mean))]
                public static double Sse(double phi, double mean, double[] ys)
                {
                    double s = 0;
                    for (int i = 1; i < ys.Length; i++)
                    {
                        s += (ys[i] - mean - phi * (ys[i - 1] - mean)) * (ys[i] - mean - phi * (ys[i - 1] - mean));
                    }

                    return s;
                }
            }
            """);
        double[] ys = { 10.2, 10.9, 11.3, 10.8, 11.9, 12.4 }; // invented
        const double Phi = 0.6, Mean = 11.0;
        var g = new double[2];
        asm.Method<Grad2Data1>("Ar1", "SseGradient")(Phi, Mean, ys, g);

        // Hand derivative (plain calculus): r = y_t − m − φ(y_t−1 − m); ∂r/∂φ = −(y_t−1 − m), ∂r/∂m = φ − 1; ∂(Σ r²) = Σ 2r·∂r.
        double gPhi = 0, gMean = 0;
        for (int t = 1; t < ys.Length; t++)
        {
            double r = ys[t] - Mean - Phi * (ys[t - 1] - Mean);
            gPhi += 2 * r * -(ys[t - 1] - Mean);
            gMean += 2 * r * (Phi - 1);
        }

        Check.Close(new[] { gPhi, gMean }, g, 1e-13, 1e-15, "gradient of the loop written as the message says");
    }
}
