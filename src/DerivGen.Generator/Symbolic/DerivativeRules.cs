using System.Collections.Generic;
using DerivGen.Generator.Model;

namespace DerivGen.Generator.Symbolic;

/// <summary>
/// The one table of derivative rules: for every operation f(x₀, x₁, …) of the expression DAG, the local partial
/// derivative ∂f/∂xᵢ as a new expression of the arguments x and of f itself (so that, for instance, the derivative of
/// exp reuses the value already computed). The reverse sweep (gradients) and the tangent sweep (Hessians) both read
/// their partials from here and from nowhere else. Adding a function means one entry below, with its source, plus tests.
/// Section numbers of Abramowitz &amp; Stegun, Handbook of Mathematical Functions (1964), ch. 4, are given from memory.
/// </summary>
internal static class DerivativeRules
{
    /// <summary>∂f/∂x_i for the i-th argument of node f, in terms of f's arguments and f.</summary>
    private delegate Node Rule(ExpressionBuilder b, Node f, Node[] x, int i);

    /// <summary>
    /// The derivative of <paramref name="f"/> with respect to the node <paramref name="argument"/>, summing the partials
    /// of every argument position it occupies (x·x gives 2x at once, not x + x). Zero when it is not an argument.
    /// </summary>
    public static Node PartialWithRespectTo(ExpressionBuilder b, Node f, Node argument)
    {
        Node sum = C(b, f, 0);
        for (int i = 0; i < f.Arguments.Length; i++)
        {
            if (f.Arguments[i] == argument)
            {
                sum = b.Add(sum, Partial(b, f, i));
            }
        }

        return sum;
    }

    /// <summary>Whether argument <paramref name="i"/> of <paramref name="f"/> is the first position that node occupies.</summary>
    public static bool IsFirstOccurrence(Node f, int i)
    {
        for (int k = 0; k < i; k++)
        {
            if (f.Arguments[k] == f.Arguments[i])
            {
                return false;
            }
        }

        return true;
    }

    /// <summary>The partial derivative of <paramref name="f"/> with respect to its argument number <paramref name="i"/>.</summary>
    public static Node Partial(ExpressionBuilder b, Node f, int i)
    {
        Node[] x = f.Arguments;
        switch (f.Kind)
        {
            case NodeKind.Negate: return C(b, f, -1);                                     // d(−a) = −da
            case NodeKind.Add: return C(b, f, 1);                                         // d(a + b) = da + db
            case NodeKind.Subtract: return C(b, f, i == 0 ? 1 : -1);                      // d(a − b) = da − db
            case NodeKind.Multiply: return x[1 - i];                                      // product rule
            case NodeKind.Divide:                                                         // quotient rule: d(a/b) = da/b − (a/b) db/b
                return i == 0 ? b.Divide(C(b, f, 1), x[1]) : b.Negate(b.Divide(f, x[1]));
            case NodeKind.Convert: return C(b, f, 1);                                     // a numeric conversion keeps the value
            case NodeKind.Select:                                                         // the derivative of the branch taken
                return i switch
                {
                    1 => b.Select(x[0], C(b, f, 1), C(b, f, 0)),
                    2 => b.Select(x[0], C(b, f, 0), C(b, f, 1)),
                    _ => C(b, f, 0),
                };
            case NodeKind.Call:
                return Functions.TryGetValue(f.Function, out Rule? rule) ? rule(b, f, x, i) : C(b, f, 0);
            case NodeKind.UserCall:                                                       // chain rule through the callee's own gradient
            {
                int k = System.Array.IndexOf(f.Callee!.VariablePositions, i);
                return k < 0 ? C(b, f, 0) : b.CallPartial(f, k);
            }

            case NodeKind.CallPartial when i > 0:                                         // … and its own Hessian
            {
                Node call = x[0];
                int l = System.Array.IndexOf(call.Callee!.VariablePositions, i - 1);
                return l < 0 ? C(b, f, 0) : b.CallSecondPartial(call, (int)f.Value, l);
            }

            default:
                return C(b, f, 0);                                                        // constants, data, comparisons, logic
        }
    }

    private static readonly Dictionary<MathFunction, Rule> Functions = new()
    {
        // Circular functions, A&S §4.3.
        [MathFunction.Sin] = (b, f, x, i) => b.Call(MathFunction.Cos, x[0]),                           // sin′ = cos
        [MathFunction.Cos] = (b, f, x, i) => b.Negate(b.Call(MathFunction.Sin, x[0])),                 // cos′ = −sin
        [MathFunction.Tan] = (b, f, x, i) => b.Add(C(b, f, 1), b.Square(f)),                           // tan′ = sec² = 1 + tan²

        // Inverse circular functions, A&S §4.4.
        [MathFunction.Asin] = (b, f, x, i) => b.Divide(C(b, f, 1), b.Call(MathFunction.Sqrt, b.Subtract(C(b, f, 1), b.Square(x[0])))),            // 1/√(1−x²)
        [MathFunction.Acos] = (b, f, x, i) => b.Negate(b.Divide(C(b, f, 1), b.Call(MathFunction.Sqrt, b.Subtract(C(b, f, 1), b.Square(x[0]))))), // −1/√(1−x²)
        [MathFunction.Atan] = (b, f, x, i) => b.Divide(C(b, f, 1), b.Add(C(b, f, 1), b.Square(x[0]))),                                           // 1/(1+x²)
        [MathFunction.Atan2] = (b, f, x, i) =>                                           // atan2(y, x): ∂/∂y = x/(x²+y²), ∂/∂x = −y/(x²+y²) (chain rule on atan(y/x))
            i == 0
                ? b.Divide(x[1], b.Add(b.Square(x[1]), b.Square(x[0])))
                : b.Negate(b.Divide(x[0], b.Add(b.Square(x[1]), b.Square(x[0])))),

        // Hyperbolic functions, A&S §4.5.
        [MathFunction.Sinh] = (b, f, x, i) => b.Call(MathFunction.Cosh, x[0]),                         // sinh′ = cosh
        [MathFunction.Cosh] = (b, f, x, i) => b.Call(MathFunction.Sinh, x[0]),                         // cosh′ = sinh
        [MathFunction.Tanh] = (b, f, x, i) => b.Subtract(C(b, f, 1), b.Square(f)),                     // tanh′ = sech² = 1 − tanh²

        // Inverse hyperbolic functions, A&S §4.6.
        [MathFunction.Asinh] = (b, f, x, i) => b.Divide(C(b, f, 1), b.Call(MathFunction.Sqrt, b.Add(b.Square(x[0]), C(b, f, 1)))),  // 1/√(x²+1)
        [MathFunction.Acosh] = (b, f, x, i) => b.Divide(C(b, f, 1), b.Call(MathFunction.Sqrt,                                        // 1/√(x²−1), as √((x−1)(x+1))
            b.Multiply(b.Subtract(x[0], C(b, f, 1)), b.Add(x[0], C(b, f, 1))))),                                                  // to keep digits near x = 1
        [MathFunction.Atanh] = (b, f, x, i) => b.Divide(C(b, f, 1),                                                                  // 1/(1−x²), as 1/((1−x)(1+x))
            b.Multiply(b.Subtract(C(b, f, 1), x[0]), b.Add(C(b, f, 1), x[0]))),

        // Exponential and logarithms, A&S §4.2 and §4.1.
        [MathFunction.Exp] = (b, f, x, i) => f,                                                         // exp′ = exp
        [MathFunction.Log] = (b, f, x, i) => b.Divide(C(b, f, 1), x[0]),                                // ln′ x = 1/x
        [MathFunction.Log10] = (b, f, x, i) => b.Divide(C(b, f, Log10OfE), x[0]),                       // log₁₀′ x = log₁₀(e)/x
        [MathFunction.Log2] = (b, f, x, i) => b.Divide(C(b, f, Log2OfE), x[0]),                         // log₂′ x = log₂(e)/x
        [MathFunction.LogBase] = (b, f, x, i) =>                                                         // log_b a = ln a / ln b:
            i == 0
                ? b.Divide(C(b, f, 1), b.Multiply(x[0], b.Call(MathFunction.Log, x[1])))                 //   ∂/∂a = 1/(a ln b)
                : b.Negate(b.Divide(f, b.Multiply(x[1], b.Call(MathFunction.Log, x[1])))),             //   ∂/∂b = −log_b(a)/(b ln b)

        // Powers and roots (plain calculus: d xᵖ = p xᵖ⁻¹ dx, d aʸ = aʸ ln a dy).
        [MathFunction.Sqrt] = (b, f, x, i) => b.Divide(C(b, f, 0.5), f),                                // √′ x = 1/(2√x)
        [MathFunction.Cbrt] = (b, f, x, i) => b.Divide(C(b, f, 1), b.Multiply(C(b, f, 3), b.Square(f))), // ∛′ x = 1/(3 ∛x²)
        [MathFunction.Pow] = PowPartial,
        [MathFunction.Hypot] = (b, f, x, i) => b.Divide(x[i], f),                                       // ∂√(x²+y²)/∂x = x/√(x²+y²)
        [MathFunction.FusedMultiplyAdd] = (b, f, x, i) => i == 2 ? C(b, f, 1) : x[1 - i],             // a·b + c

        // Not differentiable everywhere; the conventions are documented in the README and warned about (DG0007).
        [MathFunction.Abs] = (b, f, x, i) =>                                                              // sign(x), and 0 at 0
            b.Select(b.Compare(ComparisonOperator.Greater, x[0], C(b, f, 0)), C(b, f, 1),
                b.Select(b.Compare(ComparisonOperator.Less, x[0], C(b, f, 0)), C(b, f, -1), C(b, f, 0))),
        [MathFunction.Max] = (b, f, x, i) =>                                                              // a tie takes the first argument
            Choose(b, f, b.Compare(ComparisonOperator.GreaterOrEqual, x[0], x[1]), i == 0),
        [MathFunction.Min] = (b, f, x, i) =>
            Choose(b, f, b.Compare(ComparisonOperator.LessOrEqual, x[0], x[1]), i == 0),
        [MathFunction.Clamp] = ClampPartial,
        [MathFunction.Sign] = (b, f, x, i) => C(b, f, 0),                                                 // piecewise constant
        [MathFunction.Floor] = (b, f, x, i) => C(b, f, 0),
        [MathFunction.Ceiling] = (b, f, x, i) => C(b, f, 0),
        [MathFunction.Round] = (b, f, x, i) => C(b, f, 0),
        [MathFunction.Truncate] = (b, f, x, i) => C(b, f, 0),
    };

    /// <summary>log₁₀(e) = 1/ln 10, the double nearest 0.434294481903251827651… (value from memory, checked by a test).</summary>
    internal const double Log10OfE = 0.4342944819032518;

    /// <summary>log₂(e) = 1/ln 2, the double nearest 1.442695040888963407359… (value from memory, checked by a test).</summary>
    internal const double Log2OfE = 1.4426950408889634;

    /// <summary>Integer exponents up to this size are differentiated into products rather than a Pow call.</summary>
    private const int MaxProductExponent = 16;

    private static Node PowPartial(ExpressionBuilder b, Node f, Node[] x, int i)
    {
        Node a = x[0], p = x[1];
        if (i == 1)
        {
            return b.Multiply(f, b.Call(MathFunction.Log, a));                                            // ∂aᵖ/∂p = aᵖ ln a
        }

        if (p.Kind == NodeKind.Constant && (p.Type != ScalarType.Generic || ExpressionBuilder.IsSingle(p.Value))) // ∂aᵖ/∂a = p aᵖ⁻¹ (a p of T that is not a float: p − 1 in T)
        {
            double exponent = p.Value - 1;
            bool isSmallInteger = exponent == System.Math.Floor(exponent) && System.Math.Abs(exponent) <= MaxProductExponent;
            Node power = isSmallInteger ? b.IntegerPower(a, (int)exponent) : b.Call(MathFunction.Pow, a, C(b, f, exponent));
            return b.Multiply(p, power);
        }

        return b.Multiply(p, b.Call(MathFunction.Pow, a, b.Subtract(p, C(b, f, 1))));
    }

    /// <summary>Math.Clamp(v, lo, hi) is lo when v &lt; lo, hi when v &gt; hi, else v: the derivative of the one returned.</summary>
    private static Node ClampPartial(ExpressionBuilder b, Node f, Node[] x, int i)
    {
        Node below = b.Compare(ComparisonOperator.Less, x[0], x[1]);
        Node above = b.Compare(ComparisonOperator.Greater, x[0], x[2]);
        Node one = C(b, f, 1), zero = C(b, f, 0);
        return i switch
        {
            0 => b.Select(below, zero, b.Select(above, zero, one)),
            1 => b.Select(below, one, zero),
            _ => b.Select(below, zero, b.Select(above, one, zero)),
        };
    }

    private static Node Choose(ExpressionBuilder b, Node f, Node firstTaken, bool isFirst) =>
        isFirst ? b.Select(firstTaken, C(b, f, 1), C(b, f, 0)) : b.Select(firstTaken, C(b, f, 0), C(b, f, 1));

    /// <summary>A constant of f's type (partials of an int-valued node are not needed: it is flat).</summary>
    private static Node C(ExpressionBuilder b, Node f, double value) =>
        b.Constant(value, f.Type is ScalarType.Single or ScalarType.Generic ? f.Type : ScalarType.Double);
}
