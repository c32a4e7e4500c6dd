using System;
using System.Linq;
using DerivGen.Generator.Differentiation;
using DerivGen.Generator.Model;
using DerivGen.Generator.Symbolic;
using DerivGen.Tests.Infrastructure;
using Xunit;

namespace DerivGen.Tests.Passes;

public sealed class SingleWriteFixture : CompiledFixture
{
    // Sums over a vector of variables whose loop reads each element in one iteration only (the gradient can be assigned
    // element by element, as by hand) next to shapes where it cannot: some elements never read, elements read by two
    // iterations, a bound that is not the vector's length. All data are invented.
    public const string Source = """
        using System;
        using DerivGen;

        public static partial class Single
        {
            // The extended Rosenbrock function (Moré, Garbow & Hillstrom, ACM TOMS 7(1), 1981, problem 21).
            [Differentiate(nameof(x), Hessian = false)]
            public static double ExtendedRosenbrock(double[] x)
            {
                double f = 0;
                for (int i = 0; i < x.Length / 2; i++)
                {
                    double a = x[(2 * i) + 1] - (x[2 * i] * x[2 * i]);
                    double b = 1 - x[2 * i];
                    f += (100 * a * a) + (b * b);
                }

                return f;
            }

            // Triples, offsets written in another order and as differences.
            [Differentiate(nameof(x), Hessian = false)]
            public static double Triples(double[] x)
            {
                double f = 0;
                for (int i = 0; i < x.Length / 3; i++)
                {
                    f += x[(3 * i) + 2] * x[(i * 3) - 0] * x[3 + (3 * i) - 2];
                }

                return f;
            }

            [Differentiate(nameof(x), Hessian = false)]
            public static double Squares(double[] x)
            {
                double f = 0;
                for (int i = 0; i < x.Length; i++)
                {
                    f += x[i] * x[i];
                }

                return f;
            }

            // Only the even elements are read: the odd ones must still be cleared.
            [Differentiate(nameof(x), Hessian = false)]
            public static double EvenOnly(double[] x)
            {
                double f = 0;
                for (int i = 0; i < x.Length / 2; i++)
                {
                    f += x[2 * i] * x[2 * i];
                }

                return f;
            }

            // Every element but the ends is read by two iterations.
            [Differentiate(nameof(x), Hessian = false)]
            public static double Chain(double[] x)
            {
                double f = 0;
                for (int i = 0; i < x.Length - 1; i++)
                {
                    f += x[i] * x[i + 1];
                }

                return f;
            }

            // The bound is not the vector's length.
            [Differentiate(nameof(x), Hessian = false)]
            public static double FirstPairs(double[] x, int m)
            {
                double f = 0;
                for (int i = 0; i < m / 2; i++)
                {
                    double d = x[2 * i] - x[(2 * i) + 1];
                    f += d * d;
                }

                return f;
            }
        }
        """;

    public SingleWriteFixture()
        : base(Source)
    {
    }
}

/// <summary>
/// The gradient of a sum whose loop reads each element of the vector in exactly one iteration is assigned element by
/// element (no clear of the whole slice first); any other shape keeps the clear and the additions. Gradients are
/// checked against derivatives by hand with the output filled with NaN first, so an element neither assigned nor
/// cleared shows.
/// </summary>
public sealed class InPlaceAccumulationTests : IClassFixture<SingleWriteFixture>
{
    private readonly SingleWriteFixture _fixture;

    public InPlaceAccumulationTests(SingleWriteFixture fixture) => _fixture = fixture;

    private delegate double VF(double[] x);

    private delegate double VG(double[] x, Span<double> gradient);

    private delegate double MF(double[] x, int m);

    private delegate double MG(double[] x, int m, Span<double> gradient);

    private string Text(string method) => _fixture.Run.Source("Single." + method + ".g.cs");

    [Theory]
    [InlineData("ExtendedRosenbrock", "for (int k = 2 * (x.Length / 2); k < x.Length; k++)")]
    [InlineData("Triples", "for (int k = 3 * (x.Length / 3); k < x.Length; k++)")]
    [InlineData("Squares", "// dF_dX is not cleared")]
    public void SingleWriteShapesAssignTheGradient(string method, string clear)
    {
        string text = Text(method);
        Assert.Contains(clear, text, StringComparison.Ordinal);
        Assert.DoesNotContain(".Clear();", text, StringComparison.Ordinal);
        Assert.DoesNotContain("] += ", text, StringComparison.Ordinal);
        Assert.Contains("dF_dX[", text, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("EvenOnly")]
    [InlineData("Chain")]
    [InlineData("FirstPairs")]
    public void OtherShapesKeepTheClearAndTheAdditions(string method)
    {
        string text = Text(method);
        Assert.Contains("dF_dX.Clear();", text, StringComparison.Ordinal);
        Assert.Contains("] += ", text, StringComparison.Ordinal);
        Assert.DoesNotContain("not cleared", text, StringComparison.Ordinal);
    }

    // An invented point with distinct, non-trivial elements.
    private static double[] Point(int n) => Enumerable.Range(0, n).Select(k => Math.Round(Math.Sin((1.7 * k) + 0.3) * 1.5, 3)).ToArray();

    private double[] Gradient(string method, double[] x)
    {
        var f = _fixture.Assembly.Method<VF>("Single", method);
        var g = _fixture.Assembly.Method<VG>("Single", method + "Gradient");
        var gradient = Enumerable.Repeat(double.NaN, x.Length + 1).ToArray(); // one more than needed: must stay untouched
        double value = g(x, gradient);
        Check.SameBits(f(x), value, "value");
        Assert.True(double.IsNaN(gradient[x.Length]), "an element past the gradient was written");
        return gradient.Take(x.Length).ToArray();
    }

    /// <summary>∂f/∂x₂ᵢ = −400·x₂ᵢ·(x₂ᵢ₊₁ − x₂ᵢ²) − 2(1 − x₂ᵢ), ∂f/∂x₂ᵢ₊₁ = 200(x₂ᵢ₊₁ − x₂ᵢ²) (by hand); an odd last element is not read: 0.</summary>
    [Theory]
    [InlineData(0)]
    [InlineData(1)]
    [InlineData(2)]
    [InlineData(7)]
    [InlineData(10)]
    public void ExtendedRosenbrockGradientMatchesTheClosedForm(int n)
    {
        double[] x = Point(n);
        double[] gradient = Gradient("ExtendedRosenbrock", x);
        var expected = new double[n];
        for (int i = 0; i < n / 2; i++)
        {
            double a = x[(2 * i) + 1] - (x[2 * i] * x[2 * i]);
            expected[2 * i] = (-400 * x[2 * i] * a) - (2 * (1 - x[2 * i]));
            expected[(2 * i) + 1] = 200 * a;
        }

        Check.Close(expected, gradient, 1e-14, 1e-13, "∂f/∂x");
    }

    /// <summary>f = Σ x₃ᵢx₃ᵢ₊₁x₃ᵢ₊₂: each partial is the product of the other two of its triple (by hand); a tail of n mod 3 is 0.</summary>
    [Theory]
    [InlineData(2)]
    [InlineData(6)]
    [InlineData(8)]
    public void TriplesGradientMatchesTheClosedForm(int n)
    {
        double[] x = Point(n);
        double[] gradient = Gradient("Triples", x);
        var expected = new double[n];
        for (int i = 0; i < n / 3; i++)
        {
            expected[3 * i] = x[(3 * i) + 1] * x[(3 * i) + 2];
            expected[(3 * i) + 1] = x[3 * i] * x[(3 * i) + 2];
            expected[(3 * i) + 2] = x[3 * i] * x[(3 * i) + 1];
        }

        Check.Close(expected, gradient, 1e-15, 1e-15, "∂f/∂x");
    }

    /// <summary>Σ xᵢ²: 2x; Σ x₂ᵢ²: 2x at the even indices of the pairs, 0 elsewhere; Σ xᵢxᵢ₊₁: xₖ₋₁ + xₖ₊₁ (by hand).</summary>
    [Theory]
    [InlineData(1)]
    [InlineData(5)]
    [InlineData(8)]
    public void SquaresEvenOnlyAndChainMatchTheirClosedForms(int n)
    {
        double[] x = Point(n);
        Check.Close(x.Select(v => 2 * v).ToArray(), Gradient("Squares", x), 1e-15, 1e-15, "Squares");
        Check.Close(x.Select((v, k) => k % 2 == 0 && k < 2 * (n / 2) ? 2 * v : 0).ToArray(), Gradient("EvenOnly", x), 1e-15, 1e-15, "EvenOnly");
        Check.Close(x.Select((_, k) => (k > 0 ? x[k - 1] : 0) + (k + 1 < n ? x[k + 1] : 0)).ToArray(), Gradient("Chain", x), 1e-15, 1e-15, "Chain");
    }

    /// <summary>Σ_{i &lt; m/2} (x₂ᵢ − x₂ᵢ₊₁)²: ±2(x₂ᵢ − x₂ᵢ₊₁) on the first m/2 pairs, 0 beyond (by hand).</summary>
    [Fact]
    public void FirstPairsGradientIsZeroBeyondTheBound()
    {
        double[] x = Point(8);
        var f = _fixture.Assembly.Method<MF>("Single", "FirstPairs");
        var g = _fixture.Assembly.Method<MG>("Single", "FirstPairsGradient");
        var gradient = Enumerable.Repeat(double.NaN, 8).ToArray();
        Check.SameBits(f(x, 5), g(x, 5, gradient), "value");
        var expected = new double[8];
        for (int i = 0; i < 2; i++)
        {
            double d = x[2 * i] - x[(2 * i) + 1];
            expected[2 * i] = 2 * d;
            expected[(2 * i) + 1] = -2 * d;
        }

        Check.Close(expected, gradient, 1e-15, 1e-15, "∂f/∂x");
    }

    // ---- The form of a scalar update (InPlaceAccumulation.Form), on updates built by hand ----------------------------

    private static readonly ExpressionBuilder B = new(default);
    private static readonly Node S = B.StageLeaf("s", ScalarType.Double, 1, isActive: true);
    private static readonly Node E = B.Parameter("e", ScalarType.Double, 0);

    private static (AssignmentForm Form, Node Operand) Form(Node value, bool derivative = false, ScalarType type = ScalarType.Double) =>
        InPlaceAccumulation.Form(new StateUpdate("s", type, value, derivative), B);

    [Fact]
    public void SumsDifferencesAndProductsWithTheTargetAreWrittenInPlace()
    {
        Assert.Equal((AssignmentForm.Add, E), Form(B.Raw(NodeKind.Add, ScalarType.Double, S, E)));
        Assert.Equal((AssignmentForm.Add, E), Form(B.Raw(NodeKind.Add, ScalarType.Double, E, S)));       // + commutes exactly
        Assert.Equal((AssignmentForm.Subtract, E), Form(B.Raw(NodeKind.Subtract, ScalarType.Double, S, E)));
        Assert.Equal((AssignmentForm.Multiply, E), Form(B.Raw(NodeKind.Multiply, ScalarType.Double, E, S))); // * commutes exactly
    }

    [Fact]
    public void OtherShapesAreAssigned()
    {
        Node reversed = B.Raw(NodeKind.Subtract, ScalarType.Double, E, S);   // e − s is not s −= e
        Assert.Equal((AssignmentForm.Assign, reversed), Form(reversed));
        Node quotient = B.Raw(NodeKind.Divide, ScalarType.Double, S, E);
        Assert.Equal((AssignmentForm.Assign, quotient), Form(quotient));
        Node other = B.Raw(NodeKind.Add, ScalarType.Double, E, E);           // does not read s
        Assert.Equal((AssignmentForm.Assign, other), Form(other));
        Node wide = B.Raw(NodeKind.Add, ScalarType.Double, S, E);            // a float target of a double value: assigned (converted)
        Assert.Equal((AssignmentForm.Assign, wide), Form(wide, type: ScalarType.Single));
    }

    [Fact]
    public void ANegativeConstantFactorBecomesASubtractionInDerivativeCodeOnly()
    {
        Node term = B.Raw(NodeKind.Multiply, ScalarType.Double, B.Constant(-3, ScalarType.Double), E);
        Node update = B.Raw(NodeKind.Add, ScalarType.Double, S, term);
        (AssignmentForm form, Node operand) = Form(update, derivative: true);
        Assert.Equal(AssignmentForm.Subtract, form);
        Assert.Equal(NodeKind.Multiply, operand.Kind);
        Assert.True(operand.Arguments[0].IsConstant(3), "d += (−3)·e is d −= 3·e");
        Assert.Same(E, operand.Arguments[1]);

        // The user's own value keeps the operation as written.
        Assert.Equal((AssignmentForm.Add, term), Form(update, derivative: false));
    }

    // ---- Spans: in place, in the gradient (decisions on small invented methods) ----------------------------------------

    private const string SpanMembers = """
            [Differentiate(nameof(w), Hessian = false)]
            public static double Squares(double[] w)
            {
                double s = 0;
                for (int i = 0; i < w.Length; i++)
                {
                    s += w[i] * w[i];
                }

                return s;
            }

            [Differentiate(nameof(w), Hessian = false)]
            public static double Doubled(double[] w)
            {
                double s = 0;
                for (int i = 0; i < w.Length; i++)
                {
                    s += w[i] * w[i];
                }

                return 2 * s;
            }

            // b's update reads a's span: a's is computed into a copy, not in place.
            [Differentiate(nameof(w), Hessian = false)]
            public static double Coupled(double[] w)
            {
                double a = 0;
                double b = 0;
                for (int i = 0; i < w.Length; i++)
                {
                    double old = a;
                    a += w[i];
                    b += old * w[i];
                }

                return b;
            }
        """;

    [Fact]
    public void ASpanThatIsTheWholeGradientIsAccumulatedInTheGradient()
    {
        MethodPlan squares = PassHarness.Plan(SpanMembers, "Squares");
        Assert.Equal(new[] { ("dS_dW", 0) }, squares.InGradient.Select(p => (PassHarness.Name(squares, p.Key), p.Value)));
        Assert.Empty(PassHarness.Plan(SpanMembers, "Doubled").InGradient);   // 2·span: not the span itself
    }

    [Fact]
    public void ASpanReadByAnotherUpdateOfItsLoopIsNotUpdatedInPlace()
    {
        MethodPlan plan = PassHarness.Plan(SpanMembers, "Coupled");
        LoopSegment loop = plan.Program.Loops[0];
        StateDerivatives a = plan.Program.States.Values.Single(d => d.State.Name == "a");
        StateDerivatives b = plan.Program.States.Values.Single(d => d.State.Name == "b");
        Assert.False(plan.UpdatesInPlace(loop, a, 0));
        Assert.True(plan.UpdatesInPlace(loop, b, 0));
        Assert.Empty(plan.SingleWrite);

        MethodPlan squares = PassHarness.Plan(SpanMembers, "Squares");
        Assert.Equal(new[] { ("dS_dW", 1) }, squares.SingleWrite.Select(p => (PassHarness.Name(squares, p.Key), p.Value)));   // each w[i] in iteration i only: assigned, stride 1
    }

    /// <summary>∂/∂wⱼ Σᵢ (Σ_{k&lt;i} w_k)·wᵢ = Σ_{k&lt;j} w_k + Σ_{i&gt;j} wᵢ (plain calculus).</summary>
    [Fact]
    public void TheCoupledGradientMatchesTheClosedForm()
    {
        using CompiledAssembly assembly = GeneratorHarness.CompileAndLoad(PassHarness.Source(SpanMembers));
        var g = assembly.Method<VG>(PassHarness.Type, "CoupledGradient");
        double[] w = Point(6);
        var gradient = new double[6];
        g(w, gradient);
        double[] expected = w.Select((_, j) => w.Take(j).Sum() + w.Skip(j + 1).Sum()).ToArray();
        Check.Close(expected, gradient, 1e-15, 1e-15, "∂Coupled/∂w");
    }

}
