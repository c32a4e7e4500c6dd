using System;
using System.Collections.Generic;
using System.Linq;
using System.Threading;
using DerivGen.Generator.Model;

namespace DerivGen.Generator.Symbolic;

/// <summary>
/// Creates the nodes of one expression DAG. Every node is hash-consed (an expression already built is returned, not
/// built again), which is the common subexpression elimination. Two families of constructors:
/// <list type="bullet">
/// <item><see cref="Raw(NodeKind, ScalarType, Node[])"/> and <see cref="RawCall"/> build the user's value code exactly
/// as written — no identity is applied, so the value is bit-for-bit the user's;</item>
/// <item>the smart constructors (<see cref="Add"/>, <see cref="Multiply"/>, ...) build derivative code and simplify as
/// they build: IEEE-exact constant folding of + - * / and negation, and the algebraic identities 0 + a = a,
/// 0 · a = 0, 1 · a = a, −(−a) = a, a − a = 0 and a few more. The identities hold for real numbers (they may differ from
/// IEEE arithmetic only when a is infinite or NaN, where the derivative is not finite anyway).</item>
/// </list>
/// Transcendental functions of constants are not folded: their last bit may differ between platforms' math
/// libraries, and generated text must be the same on every machine.
/// </summary>
internal sealed class ExpressionBuilder
{
    private readonly Dictionary<NodeKey, Node> _nodes = new();
    private readonly CancellationToken _cancellationToken;

    public ExpressionBuilder(CancellationToken cancellationToken) => _cancellationToken = cancellationToken;

    /// <summary>The names given to the nodes this builder made (the nodes themselves are immutable).</summary>
    public NodeNames Names { get; } = new();

    // ---- Leaves -------------------------------------------------------------------------------------------------

    public Node Constant(double value, ScalarType type)
    {
        double exact = type switch
        {
            ScalarType.Single => (float)value,
            ScalarType.Int32 => Math.Truncate(value),
            _ => value,
        };
        return Intern(NodeKind.Constant, type, Array.Empty<Node>(), exact, null, default, default, default, -1);
    }

    public Node Zero(ScalarType type) => Constant(0, type);

    public Node One(ScalarType type) => Constant(1, type);

    public Node Parameter(string name, ScalarType type, int variableIndex) =>
        Intern(NodeKind.Parameter, type, Array.Empty<Node>(), 0, name, default, default, default, variableIndex);

    /// <summary>
    /// A local of the generated code read as a leaf at a given stage: a loop index, a loop-carried value, or a running
    /// derivative of one. An active leaf is one whose derivative is not zero: the sweeps ask for its tangents.
    /// </summary>
    public Node StageLeaf(string name, ScalarType type, int stage, bool isActive) =>
        Intern(NodeKind.Parameter, type, Array.Empty<Node>(), 0, name, default, default, default, -1, stage, isActive);

    /// <summary>An element of data, <c>data[indices]</c> (constant with respect to the variables).</summary>
    public Node Element(string data, ScalarType type, params Node[] indices) =>
        Intern(NodeKind.Element, type, indices, 0, data, default, default, default, -1);

    /// <summary>A call of another [Differentiate] method, as written.</summary>
    public Node UserCall(CalleeInfo callee, ScalarType type, Node[] arguments)
    {
        // An equal call seen before keeps the callee it was made with.
        return Intern(NodeKind.UserCall, type, arguments, 0, callee.Receiver + "." + callee.Method, default, default, default, -1, callee: callee);
    }

    /// <summary>The callee's partial derivative with respect to its variable number <paramref name="k"/>.</summary>
    public Node CallPartial(Node call, int k) =>
        Intern(NodeKind.CallPartial, call.Type, new[] { call }.Concat(call.Arguments).ToArray(), k, null, default, default, default, -1);

    /// <summary>The callee's second partial derivative with respect to its variables k and l.</summary>
    public Node CallSecondPartial(Node call, int k, int l) =>
        Intern(NodeKind.CallSecondPartial, call.Type, new[] { call }.Concat(call.Arguments).ToArray(),
            (k * call.Callee!.VariablePositions.Length) + l, null, default, default, default, -1);

    /// <summary>An element of the vector of variables number <paramref name="vector"/>, <c>name[index]</c>.</summary>
    public Node VariableElement(string name, int vector, ScalarType type, Node index) =>
        Intern(NodeKind.VariableElement, type, new[] { index }, vector, name, default, default, default, -1, 0, isActiveLeaf: true);

    /// <summary>A comparison as written.</summary>
    public Node RawCompare(ComparisonOperator comparison, Node a, Node b) =>
        Intern(NodeKind.Compare, ScalarType.Boolean, new[] { a, b }, 0, null, default, default, comparison, -1);

    public Node External(string text, ScalarType type) =>
        Intern(NodeKind.External, type, Array.Empty<Node>(), 0, text, default, default, default, -1);

    // ---- As written ---------------------------------------------------------------------------------------------

    /// <summary>An operation exactly as the user wrote it (no simplification, no reordering).</summary>
    public Node Raw(NodeKind kind, ScalarType type, params Node[] arguments) =>
        Intern(kind, type, arguments, 0, null, default, default, default, -1);

    /// <summary>A math call exactly as the user wrote it, on the type the user called it on.</summary>
    public Node RawCall(MathFunction function, MathHost host, ScalarType type, params Node[] arguments) =>
        Intern(NodeKind.Call, type, arguments, 0, null, function, IsDefaultHost(function, host, type) ? MathHost.Default : host, default, -1);

    /// <summary>
    /// Whether the user called the function on the type derivative code calls it on (Math for double, MathF for float;
    /// double/float for Hypot): such a call is the same node as the derivative code's, so that one
    /// <c>Math.Sin(u)</c> serves both the value and the derivative of a <c>Math.Cos(u)</c>.
    /// </summary>
    private static bool IsDefaultHost(MathFunction function, MathHost host, ScalarType type) =>
        type == ScalarType.Generic ? host == MathHost.Generic
        : function == MathFunction.Hypot
            ? host == (type == ScalarType.Single ? MathHost.Single : MathHost.Double)
            : host == (type == ScalarType.Single ? MathHost.MathF : MathHost.Math);

    // ---- Simplifying constructors for derivative code -----------------------------------------------------------

    public Node Add(Node a, Node b)
    {
        System.Runtime.CompilerServices.RuntimeHelpers.EnsureSufficientExecutionStack(); // a deep input fails as a diagnostic, never as a stack overflow
        Unify(ref a, ref b);
        if (a.Kind == NodeKind.Constant && b.Kind == NodeKind.Constant && IsFoldable(a, b))
        {
            return Constant(Fold(a.Type, a.Value + b.Value, (float)a.Value + (float)b.Value), a.Type);
        }

        if (a.IsZero)
        {
            return b;
        }

        if (b.IsZero)
        {
            return a;
        }

        if (TryCombineLikeTerms(a, b, sign: 1, out Node? combined))
        {
            return combined!;
        }

        if (b.Kind == NodeKind.Negate)
        {
            return Subtract(a, b.Arguments[0]);
        }

        if (IsNegativeTerm(b))
        {
            return Subtract(a, PositiveTerm(b));   // a + (−k)·y = a − k·y
        }

        if (a.Kind == NodeKind.Negate)
        {
            return Subtract(b, a.Arguments[0]);
        }

        if (a.Kind == NodeKind.Select && b.Kind == NodeKind.Select && a.Arguments[0] == b.Arguments[0])
        {
            return Select(a.Arguments[0], Add(a.Arguments[1], b.Arguments[1]), Add(a.Arguments[2], b.Arguments[2]));
        }

        return Raw(NodeKind.Add, a.Type, a, b);
    }

    public Node Subtract(Node a, Node b)
    {
        Unify(ref a, ref b);
        if (a.Kind == NodeKind.Constant && b.Kind == NodeKind.Constant && IsFoldable(a, b))
        {
            return Constant(Fold(a.Type, a.Value - b.Value, (float)a.Value - (float)b.Value), a.Type);
        }

        if (b.IsZero)
        {
            return a;
        }

        if (a.IsZero)
        {
            return Negate(b);
        }

        if (TryCombineLikeTerms(a, b, sign: -1, out Node? combined))
        {
            return combined!;
        }

        if (b.Kind == NodeKind.Negate)
        {
            return Add(a, b.Arguments[0]);
        }

        if (IsNegativeTerm(b))
        {
            return Add(a, PositiveTerm(b));   // a − (−k)·y = a + k·y
        }

        if (a.Kind == NodeKind.Select && b.Kind == NodeKind.Select && a.Arguments[0] == b.Arguments[0])
        {
            return Select(a.Arguments[0], Subtract(a.Arguments[1], b.Arguments[1]), Subtract(a.Arguments[2], b.Arguments[2]));
        }

        return Raw(NodeKind.Subtract, a.Type, a, b);
    }

    public Node Multiply(Node a, Node b)
    {
        System.Runtime.CompilerServices.RuntimeHelpers.EnsureSufficientExecutionStack(); // a deep input fails as a diagnostic, never as a stack overflow
        Unify(ref a, ref b);
        if (b.Kind == NodeKind.Constant && a.Kind != NodeKind.Constant)
        {
            (a, b) = (b, a); // Constant factor first: 2 * x, never x * 2.
        }

        if (a.Kind == NodeKind.Constant)
        {
            if (b.Kind == NodeKind.Constant && IsFoldable(a, b))
            {
                return Constant(Fold(a.Type, a.Value * b.Value, (float)a.Value * (float)b.Value), a.Type);
            }

            if (a.IsZero)
            {
                return Zero(a.Type);
            }

            if (a.IsConstant(1))
            {
                return b;
            }

            if (a.IsConstant(-1))
            {
                return Negate(b);
            }

            if (b.Kind == NodeKind.Multiply && b.Arguments[0].Kind == NodeKind.Constant && IsFoldable(a, b.Arguments[0]))
            {
                return Multiply(Multiply(a, b.Arguments[0]), b.Arguments[1]);
            }

            if (b.Kind == NodeKind.Negate)
            {
                return Multiply(Negate(a), b.Arguments[0]);
            }
        }

        if (a.Kind == NodeKind.Negate && b.Kind == NodeKind.Negate)
        {
            return Multiply(a.Arguments[0], b.Arguments[0]);
        }

        if (a.Kind == NodeKind.Negate)
        {
            return Negate(Multiply(a.Arguments[0], b));
        }

        if (b.Kind == NodeKind.Negate)
        {
            return Negate(Multiply(a, b.Arguments[0]));
        }

        if (a.Kind != NodeKind.Constant)
        {
            // Constant factors move to the front and meet (a·(k·y) = k·(a·y)); c/s·b = (c·b)/s.
            if (b.Kind == NodeKind.Multiply && b.Arguments[0].Kind == NodeKind.Constant)
            {
                return Multiply(b.Arguments[0], Multiply(a, b.Arguments[1]));
            }

            if (a.Kind == NodeKind.Multiply && a.Arguments[0].Kind == NodeKind.Constant)
            {
                return Multiply(a.Arguments[0], Multiply(a.Arguments[1], b));
            }

            if (a.Kind == NodeKind.Divide && a.Arguments[0].Kind == NodeKind.Constant)
            {
                return Divide(Multiply(a.Arguments[0], b), a.Arguments[1]);
            }

            if (b.Kind == NodeKind.Divide && b.Arguments[0].Kind == NodeKind.Constant)
            {
                return Divide(Multiply(b.Arguments[0], a), b.Arguments[1]);
            }
        }

        // Multiply inside a selection with a zero (or constant) branch: the zero of the branch not taken stays an
        // exact 0 even where the other factor is NaN or infinite there (√x differentiated in a branch guarded by x > 0).
        // (Not folded to 0 · ∞ = NaN when the other factor is an infinite constant.)
        if (IsDistributableSelect(a))
        {
            return Select(a.Arguments[0], a.Arguments[1].IsZero ? ZeroOf(a.Arguments[1], b) : Multiply(a.Arguments[1], b),
                a.Arguments[2].IsZero ? ZeroOf(a.Arguments[2], b) : Multiply(a.Arguments[2], b));
        }

        if (IsDistributableSelect(b))
        {
            return Select(b.Arguments[0], b.Arguments[1].IsZero ? ZeroOf(b.Arguments[1], a) : Multiply(a, b.Arguments[1]),
                b.Arguments[2].IsZero ? ZeroOf(b.Arguments[2], a) : Multiply(a, b.Arguments[2]));
        }

        return Raw(NodeKind.Multiply, a.Type, a, b);
    }

    public Node Divide(Node a, Node b)
    {
        Unify(ref a, ref b);
        if (a.Kind == NodeKind.Constant && b.Kind == NodeKind.Constant && IsFoldable(a, b))
        {
            return Constant(Fold(a.Type, a.Value / b.Value, (float)a.Value / (float)b.Value), a.Type);
        }

        if (a.IsZero)
        {
            return Zero(a.Type);
        }

        if (b.IsConstant(1))
        {
            return a;
        }

        if (b.IsConstant(-1))
        {
            return Negate(a);
        }

        if (a.Kind == NodeKind.Negate)
        {
            return Negate(Divide(a.Arguments[0], b));
        }

        if (a.Kind == NodeKind.Multiply && a.Arguments[0].Kind == NodeKind.Constant)
        {
            return Multiply(a.Arguments[0], Divide(a.Arguments[1], b));   // (k·y)/b = k·(y/b)
        }

        if (IsDistributableSelect(a))
        {
            return Select(a.Arguments[0], a.Arguments[1].IsZero ? ZeroOf(a.Arguments[1], b) : Divide(a.Arguments[1], b),
                a.Arguments[2].IsZero ? ZeroOf(a.Arguments[2], b) : Divide(a.Arguments[2], b));
        }

        if (b.Kind == NodeKind.Negate)
        {
            return Negate(Divide(a, b.Arguments[0]));
        }

        return Raw(NodeKind.Divide, a.Type, a, b);
    }

    public Node Negate(Node a)
    {
        switch (a.Kind)
        {
            case NodeKind.Constant:
                return Constant(-a.Value, a.Type);
            case NodeKind.Negate:
                return a.Arguments[0];
            case NodeKind.Subtract:
                return Subtract(a.Arguments[1], a.Arguments[0]);
            case NodeKind.Multiply when a.Arguments[0].Kind == NodeKind.Constant:
                return Multiply(Constant(-a.Arguments[0].Value, a.Arguments[0].Type), a.Arguments[1]);   // −(k·y) = (−k)·y
            case NodeKind.Multiply when a.Arguments[1].Kind == NodeKind.Subtract:
                return Multiply(a.Arguments[0], Negate(a.Arguments[1]));   // −(a·(p − q)) = a·(q − p)
            case NodeKind.Select when IsConstantSelect(a):
                return Select(a.Arguments[0], Negate(a.Arguments[1]), Negate(a.Arguments[2]));
            default:
                return Raw(NodeKind.Negate, a.Type, a);
        }
    }

    public Node Square(Node a) => Multiply(a, a);

    /// <summary>a raised to a small integer power, as products (binary powering, each square computed once).</summary>
    public Node IntegerPower(Node a, int exponent)
    {
        if (exponent < 0)
        {
            return Divide(One(a.Type), IntegerPower(a, -exponent));
        }

        Node result = One(a.Type);
        Node square = a;
        for (int e = exponent; e > 0; e >>= 1)
        {
            if ((e & 1) != 0)
            {
                result = Multiply(result, square);
            }

            if (e > 1)
            {
                square = Multiply(square, square);
            }
        }

        return result;
    }

    public Node Convert(Node a, ScalarType type)
    {
        if (a.Type == type)
        {
            return a;
        }

        if (a.Kind == NodeKind.Constant && type != ScalarType.Boolean)
        {
            return Constant(a.Value, type);
        }

        return Raw(NodeKind.Convert, type, a);
    }

    /// <summary>A math function in derivative code; the emitter calls it on Math (double) or MathF (float).</summary>
    public Node Call(MathFunction function, params Node[] arguments)
    {
        ScalarType type = arguments[0].Type;
        for (int i = 1; i < arguments.Length; i++)
        {
            Node left = arguments[0], right = arguments[i];
            Unify(ref left, ref right);
            type = left.Type;
        }

        for (int i = 0; i < arguments.Length; i++)
        {
            arguments[i] = arguments[i].Kind == NodeKind.Constant ? Constant(arguments[i].Value, type) : Convert(arguments[i], type);
        }

        return Intern(NodeKind.Call, type, arguments, 0, null, function, MathHost.Default, default, -1);
    }

    public Node Compare(ComparisonOperator comparison, Node a, Node b)
    {
        Unify(ref a, ref b);
        return Intern(NodeKind.Compare, ScalarType.Boolean, new[] { a, b }, 0, null, default, default, comparison, -1);
    }

    /// <summary><c>condition ? whenTrue : whenFalse</c>.</summary>
    public Node Select(Node condition, Node whenTrue, Node whenFalse)
    {
        Unify(ref whenTrue, ref whenFalse);

        // c ? (c ? a : b) : d = c ? a : d, and c ? a : (c ? b : d) = c ? a : d (an inner selection by the same condition).
        if (whenTrue.Kind == NodeKind.Select && whenTrue.Arguments[0] == condition)
        {
            whenTrue = whenTrue.Arguments[1];
        }

        if (whenFalse.Kind == NodeKind.Select && whenFalse.Arguments[0] == condition)
        {
            whenFalse = whenFalse.Arguments[2];
        }

        if (whenTrue == whenFalse)
        {
            return whenTrue;
        }

        return Raw(NodeKind.Select, whenTrue.Type, condition, whenTrue, whenFalse);
    }

    // ---- Internals ----------------------------------------------------------------------------------------------

    /// <summary>The zero side of a selection distributed over a product or quotient stays an exact 0 of the result's type
    /// (never 0 · ∞ or 0 / 0 folded to NaN).</summary>
    private Node ZeroOf(Node side, Node other) => Zero(Rank(side.Type) >= Rank(other.Type) ? side.Type : other.Type);

    /// <summary>The negation of a negative term (a constant k &lt; 0, or k·y), built directly as |k| or |k|·y.</summary>
    private Node PositiveTerm(Node node) => node.Kind == NodeKind.Constant
        ? Constant(-node.Value, node.Type)
        : node.Arguments[0].IsConstant(-1) ? node.Arguments[1]
        : Raw(NodeKind.Multiply, node.Type, Constant(-node.Arguments[0].Value, node.Arguments[0].Type), node.Arguments[1]);

    private static bool IsNegativeTerm(Node node) =>
        (node.Kind == NodeKind.Constant && node.Value < 0)
        || (node.Kind == NodeKind.Multiply && node.Arguments[0].Kind == NodeKind.Constant && node.Arguments[0].Value < 0);

    /// <summary>
    /// k₁·t ± k₂·t = (k₁ ± k₂)·t, where a term is t, −t or a constant times t; also looks one level into a sum
    /// on the left, (p ± q) ± b, so that contributions accumulated one by one still meet their like terms.
    /// </summary>
    private bool TryCombineLikeTerms(Node a, Node b, int sign, out Node? combined)
    {
        if (TryCombineTwo(a, b, sign, out combined))
        {
            return true;
        }

        if (a.Kind == NodeKind.Add || a.Kind == NodeKind.Subtract)
        {
            Node p = a.Arguments[0], q = a.Arguments[1];
            int qSign = a.Kind == NodeKind.Add ? 1 : -1;
            if (TryCombineTwo(p, b, sign, out Node? pb))
            {
                combined = qSign > 0 ? Add(pb!, q) : Subtract(pb!, q);
                return true;
            }

            if (TryCombineTwo(q, b, sign * qSign, out Node? qb))
            {
                combined = qSign > 0 ? Add(p, qb!) : Subtract(p, qb!);
                return true;
            }
        }

        return false;
    }

    private bool TryCombineTwo(Node a, Node b, int sign, out Node? combined)
    {
        (double ka, Node ta) = AsTerm(a);
        (double kb, Node tb) = AsTerm(b);
        combined = null;
        if (ta != tb || ta.Kind == NodeKind.Constant || (ta.Type == ScalarType.Generic && !(IsSingle(ka) && IsSingle(kb))))
        {
            return false;
        }

        double k = ta.Type == ScalarType.Single ? (float)ka + (sign * (float)kb) : ka + (sign * kb);
        combined = Multiply(Constant(k, ta.Type), ta);
        return true;
    }

    private static (double Coefficient, Node Term) AsTerm(Node node)
    {
        double sign = 1;
        if (node.Kind == NodeKind.Negate)
        {
            sign = -1;
            node = node.Arguments[0];
        }

        return node.Kind == NodeKind.Multiply && node.Arguments[0].Kind == NodeKind.Constant
            ? (sign * node.Arguments[0].Value, node.Arguments[1])
            : (sign, node);
    }

    private static bool IsDistributableSelect(Node node) =>
        node.Kind == NodeKind.Select && (IsConstantSelect(node) || node.Arguments[1].IsZero || node.Arguments[2].IsZero);

    private static bool IsConstantSelect(Node node) =>
        node.Kind == NodeKind.Select && node.Arguments[1].Kind == NodeKind.Constant && node.Arguments[2].Kind == NodeKind.Constant;

    private static double Fold(ScalarType type, double asDouble, float asSingle) => type == ScalarType.Single ? asSingle : asDouble;

    /// <summary>
    /// Whether two constants are folded. Constants of T (<see cref="ScalarType.Generic"/>) hold a double and are written
    /// <c>T.CreateTruncating(c)</c>, which is c rounded to T. They are folded only when both are floats (exactly
    /// representable in float, so the same number in float and in double): one IEEE operation on two floats, rounded to
    /// double and then to float, is the operation rounded to float directly, as double has more than 2·24 + 2 bits
    /// (Figueroa, "When is double rounding innocuous?", SIGNUM Newsletter 30(3), 1995). The folded constant is so, at
    /// T = float and at T = double alike, exactly what that T's own arithmetic gives; any other operation on constants of
    /// T is left to T at run time.
    /// </summary>
    private static bool IsFoldable(Node a, Node b) => a.Type != ScalarType.Generic || (IsSingle(a.Value) && IsSingle(b.Value));

    /// <summary>Whether a double is exactly a float (NaN and the infinities included).</summary>
    internal static bool IsSingle(double value) => double.IsNaN(value) || (double)(float)value == value;

    /// <summary>Brings two operands to one type as C# would (int → float → double); constants are re-typed exactly.</summary>
    private void Unify(ref Node a, ref Node b)
    {
        if (a.Type == b.Type)
        {
            return;
        }

        if (Rank(a.Type) < Rank(b.Type))
        {
            a = a.Kind == NodeKind.Constant ? Constant(a.Value, b.Type) : Convert(a, b.Type);
        }
        else
        {
            b = b.Kind == NodeKind.Constant ? Constant(b.Value, a.Type) : Convert(b, a.Type);
        }
    }

    private static int Rank(ScalarType type) => type switch
    {
        ScalarType.Boolean => 0,
        ScalarType.Int32 => 1,
        ScalarType.Single => 2,
        ScalarType.Generic => 4,
        _ => 3,
    };

    private Node Intern(NodeKind kind, ScalarType type, Node[] arguments, double value, string? text,
        MathFunction function, MathHost host, ComparisonOperator comparison, int variableIndex, int stage = 0, bool isActiveLeaf = false,
        CalleeInfo? callee = null)
    {
        var key = new NodeKey(kind, type, BitConverter.DoubleToInt64Bits(value), text,
            ((int)function << 8) | ((int)host << 4) | (int)comparison, variableIndex, stage, isActiveLeaf,
            arguments.Length > 0 ? arguments[0].Id : -1,
            arguments.Length > 1 ? arguments[1].Id : -1,
            arguments.Length > 2 ? arguments[2].Id : -1);
        if (_nodes.TryGetValue(key, out Node? existing))
        {
            return existing;
        }

        _cancellationToken.ThrowIfCancellationRequested();
        var node = new Node(_nodes.Count, kind, type, arguments, value, text, function, host, comparison, variableIndex, stage, isActiveLeaf, callee);
        _nodes.Add(key, node);
        return node;
    }

    private readonly record struct NodeKey(NodeKind Kind, ScalarType Type, long Bits, string? Text, int Operator, int Variable, int Stage, bool Active, int A0, int A1, int A2);
}
