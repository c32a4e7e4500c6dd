using System;
using DerivGen.Tests.Infrastructure;
using DerivGen.Tests.Minimization;
using Xunit;

namespace DerivGen.Tests.Numerics.Structs;

public sealed class UserStructFixture : UserCodeFixture
{
    // User structs as locals, data, helper arguments and results, and as variables. The numbers are invented. Each
    // method with struct parameters has a wrapper taking doubles (xxxAt) so the tests can bind it to a delegate.
    public const string Source = """
        using System;
        using DerivGen;

        public readonly record struct Pose(double X, double Y, double Heading);

        public struct Vertex
        {
            public double X;
            public double Y;

            public Vertex(double x, double y)
            {
                X = x;
                Y = y;
            }

            public readonly double NormSquared => X * X + Y * Y;

            public readonly double Dot(Vertex other) => X * other.X + Y * other.Y;
        }

        public readonly struct Segment
        {
            public Segment(Vertex a, Vertex b)
            {
                A = a;
                B = b;
            }

            public Vertex A { get; }

            public Vertex B { get; }
        }

        public static partial class Shapes
        {
            private static readonly Pose[] Targets = { new(1.0, 0.5, 0.2), new(0.8, 0.9, 1.1) };

            private static Pose Advance(Pose p, double length, double joint)
            {
                double heading = p.Heading + joint;
                return new Pose(p.X + length * Math.Cos(heading), p.Y + length * Math.Sin(heading), heading);
            }

            // Two-link planar arm: a Pose local advanced by a helper that returns the next Pose.
            [Differentiate(nameof(a), nameof(b))]
            public static double Reach(double a, double b, double tx, double ty)
            {
                var p = new Pose(0, 0, 0);
                p = Advance(p, 1.0, a);
                p = Advance(p, 0.5, b);
                double dx = p.X - tx, dy = p.Y - ty;
                return dx * dx + dy * dy;
            }

            // A user struct as the variable (two slots, X then Y), a computed property and an instance method inlined.
            [Differentiate(nameof(v))]
            public static double Spring(Vertex v, in Vertex anchor)
            {
                var d = new Vertex(v.X - anchor.X, v.Y - anchor.Y);
                d.X *= 2;
                return d.NormSquared + v.Dot(new Vertex(v.Y, 0));
            }

            public static double SpringAt(double x, double y) => Spring(new Vertex(x, y), new Vertex(0.3, -0.2));

            public static double SpringAtGradient(double x, double y, Span<double> g) => SpringGradient(new Vertex(x, y), new Vertex(0.3, -0.2), g);

            public static double SpringAtHessian(double x, double y, Span<double> g, Span<double> h) => SpringHessian(new Vertex(x, y), new Vertex(0.3, -0.2), g, h);

            // Nested structs as the variable: four slots, depth first (A.X, A.Y, B.X, B.Y).
            [Differentiate(nameof(s))]
            public static double LengthSquared(Segment s) => (s.B.X - s.A.X) * (s.B.X - s.A.X) + (s.B.Y - s.A.Y) * (s.B.Y - s.A.Y) + s.A.X * s.B.Y;

            public static double LengthSquaredAtGradient(double ax, double ay, double bx, double by, Span<double> g) =>
                LengthSquaredGradient(new Segment(new Vertex(ax, ay), new Vertex(bx, by)), g);

            public static double LengthSquaredAtHessian(double ax, double ay, double bx, double by, Span<double> g, Span<double> h) =>
                LengthSquaredHessian(new Segment(new Vertex(ax, ay), new Vertex(bx, by)), g, h);

            // A with expression, and a foreach over data of record structs.
            [Differentiate(nameof(x))]
            public static double WithCopy(double x)
            {
                var p = new Pose(x, 2 * x, 0.5);
                var q = p with { Y = x * x };
                double s = q.X * q.Y + q.Heading;
                foreach (Pose t in Targets)
                {
                    s += t.Heading * x;
                }

                return s;
            }

            // A constructor in each arm of ?: — the arm not taken is not evaluated (t may be empty there).
            [Differentiate(nameof(x))]
            public static double Pick(double x, double[] t)
            {
                var p = x > 0 ? new Pose(t[0] * x, x, 0) : new Pose(x, x, 1);
                return p.X + p.Y * p.Heading;
            }
        }

        // The corpus's mesh-smoothing energy with the remainder written as a conditional index (the ring of
        // neighbours is invented): a mutable struct, its constructor, struct data and a helper taking 'in' structs.
        public static partial class Mesh
        {
            private static readonly Vertex[] Ring = { new(1, 0), new(0.4, 0.9), new(-0.6, 0.8), new(-1, -0.1), new(-0.3, -0.9), new(0.7, -0.7) };

            static double SignedArea(in Vertex a, in Vertex b, in Vertex c) =>
                0.5 * ((b.X - a.X) * (c.Y - a.Y) - (c.X - a.X) * (b.Y - a.Y));

            [Differentiate(nameof(x), nameof(y))]
            public static double Energy(double x, double y)
            {
                var free = new Vertex(x, y);
                double energy = 0;
                for (int i = 0; i < Ring.Length; i++)
                {
                    Vertex a = Ring[i], b = Ring[i + 1 < Ring.Length ? i + 1 : 0];
                    double area = SignedArea(free, a, b);
                    double edges = (a.X - x) * (a.X - x) + (a.Y - y) * (a.Y - y) + (b.X - x) * (b.X - x) + (b.Y - y) * (b.Y - y);
                    energy += edges / area;
                }

                return energy;
            }
        }
        """;

    public UserStructFixture()
        : base(Source)
    {
    }
}

/// <summary>User structs taken apart into their fields (scalar replacement): gradients and Hessians against plain
/// calculus and MathNet's finite differences, values bit for bit.</summary>
public sealed class UserStructTests : IClassFixture<UserStructFixture>
{
    private readonly UserStructFixture _fixture;

    public UserStructTests(UserStructFixture fixture) => _fixture = fixture;

    [Theory]
    [InlineData(0.4, 0.9)]
    [InlineData(-1.2, 2.3)]
    public void PoseAdvancedByAHelperReturningAStruct(double a, double b)
    {
        // Plain calculus: tip = (cos a + ½cos(a+b), sin a + ½sin(a+b)), f = |tip − t|², t = (0.9, 0.7).
        const double tx = 0.9, ty = 0.7;
        double dx = Math.Cos(a) + 0.5 * Math.Cos(a + b) - tx, dy = Math.Sin(a) + 0.5 * Math.Sin(a + b) - ty;
        double ga = 2 * (dx * (-Math.Sin(a) - 0.5 * Math.Sin(a + b)) + dy * (Math.Cos(a) + 0.5 * Math.Cos(a + b)));
        double gb = 2 * (dx * -0.5 * Math.Sin(a + b) + dy * 0.5 * Math.Cos(a + b));
        var f = _fixture.Assembly.Method<F4>("Shapes", "Reach");
        var g = _fixture.Assembly.Method<G4>("Shapes", "ReachGradient");
        var h = _fixture.Assembly.Method<H4>("Shapes", "ReachHessian");
        Probe probe = Probe.Of((F2)((p, q) => f(p, q, tx, ty)), (G2)((p, q, gr) => g(p, q, tx, ty, gr)), (H2)((p, q, gr, he) => h(p, q, tx, ty, gr, he)));
        Verify.At(probe, new[] { a, b }, new[] { ga, gb }, null, "Reach");
    }

    [Theory]
    [InlineData(0.7, 1.1)]
    [InlineData(-0.4, 0.25)]
    public void UserStructVariableTakesOneSlotPerField(double x, double y)
    {
        // f = (2(x − 0.3))² + (y + 0.2)² + x·y (plain calculus): ∇f = (8(x − 0.3) + y, 2(y + 0.2) + x), H = [[8, 1], [1, 2]].
        Verify.At(Probe.Load(_fixture.Assembly, "Shapes", "SpringAt", 2), new[] { x, y },
            new[] { 8 * (x - 0.3) + y, 2 * (y + 0.2) + x }, new[] { 8.0, 1, 1, 2 }, "Spring");
    }

    [Fact]
    public void NestedStructVariableSlotsAreDepthFirst()
    {
        // f = (bx − ax)² + (by − ay)² + ax·by, slots (ax, ay, bx, by) (plain calculus).
        double ax = 0.3, ay = -1.1, bx = 2.0, by = 0.4;
        var g = new double[4];
        var h = new double[16];
        var gradient = _fixture.Assembly.Method<G4>("Shapes", "LengthSquaredAtGradient");
        var hessian = _fixture.Assembly.Method<H4>("Shapes", "LengthSquaredAtHessian");
        double value = gradient(ax, ay, bx, by, g);
        Check.SameBits((bx - ax) * (bx - ax) + (by - ay) * (by - ay) + ax * by, value, "value");
        Check.Close(new[] { -2 * (bx - ax) + by, -2 * (by - ay), 2 * (bx - ax), 2 * (by - ay) + ax }, g, 1e-15, 1e-15, "gradient");
        Check.SameBits(value, hessian(ax, ay, bx, by, g, h), "MHessian value");
        Check.Close(new double[] { 2, 0, -2, 1, 0, 2, 0, -2, -2, 0, 2, 0, 1, -2, 0, 2 }, h, 0, 0, "Hessian");
    }

    [Theory]
    [InlineData(0.6)]
    [InlineData(-1.9)]
    public void WithExpressionAndForEachOverStructData(double x)
    {
        // f = x·x² + 0.5 + x·(0.2 + 1.1) (plain calculus): 3x² + 1.3, 6x.
        Verify.At(Probe.Load(_fixture.Assembly, "Shapes", "WithCopy", 1), new[] { x }, new[] { 3 * x * x + (0.2 + 1.1) }, new[] { 6 * x }, "WithCopy",
            closedFormAbsolute: 1e-14);
    }

    [Theory]
    [InlineData(0.05, 0.02)]
    [InlineData(-0.2, 0.1)]
    public void MeshEnergyWithStructDataAndAnInStructHelper(double x, double y)
    {
        // Reference: MathNet's finite differences of the user's method (no closed form written here).
        Verify.At(Probe.Load(_fixture.Assembly, "Mesh", "Energy", 2), new[] { x, y }, null, null, "Mesh.Energy");
    }

    [Fact]
    public void ConstructorInAnArmOfTheConditionalIsNotEvaluatedOutsideIt()
    {
        // x ≤ 0: f = x + x·1, f' = 2; x > 0: f = t₀x + x·0, f' = t₀ (plain calculus). With t empty, the user's method
        // never reads t[0] at x ≤ 0, and neither may the generated one.
        var gradient = _fixture.Assembly.Method<GData>("Shapes", "PickGradient");
        var g = new double[1];
        Check.SameBits(_fixture.Assembly.Method<FData>("Shapes", "Pick")(-1.5, Array.Empty<double>()), gradient(-1.5, Array.Empty<double>(), g), "value at x ≤ 0");
        Assert.Equal(2.0, g[0]);
        gradient(0.5, new[] { 3.0 }, g);
        Assert.Equal(3.0, g[0]);
    }

    [Fact]
    public void StructVariableIsNamedByItsFieldsInTheDocs()
    {
        string text = _fixture.Run.Source("Shapes.Spring.g.cs");
        Assert.Contains("with respect to (v.X, v.Y)", text, StringComparison.Ordinal);
    }

    private delegate double FData(double x, double[] t);

    private delegate double GData(double x, double[] t, Span<double> gradient);

    private delegate double F4(double a, double b, double c, double d);

    private delegate double G4(double a, double b, double c, double d, Span<double> gradient);

    private delegate double H4(double a, double b, double c, double d, Span<double> gradient, Span<double> hessian);
}
