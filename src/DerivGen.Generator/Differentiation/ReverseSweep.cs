using System;
using System.Collections.Generic;
using System.Linq;
using DerivGen.Generator.Model;
using DerivGen.Generator.Symbolic;

namespace DerivGen.Generator.Differentiation;

/// <summary>
/// The gradient by one reverse (adjoint) sweep over the DAG: the adjoint of the output is 1; visiting nodes from the
/// output towards the inputs (decreasing id is a reverse topological order), each node adds adjoint × local partial
/// to each argument's adjoint. The cost is a small constant times the size of the DAG — the cheap-gradient principle
/// (Griewank &amp; Walther, Evaluating Derivatives, 2nd ed., SIAM 2008, ch. 3–4).
/// <para>
/// Leaves that stand for values computed elsewhere (a loop-carried local, whose own gradient is kept in running
/// locals) contribute through their known gradient by the chain rule: ∂f/∂vₖ += adjoint(leaf) · ∂leaf/∂vₖ.
/// </para>
/// </summary>
/// <summary>
/// A contribution to the gradient with respect to a vector of variables: either a single element,
/// ∂/∂w[Index] += Coefficient (a read of w[Index]), or a whole vector, ∂/∂w += Coefficient · SourceSpan (the chain rule
/// through a loop-carried local whose running derivative with respect to w is the span local SourceSpan).
/// </summary>
internal sealed class VectorTerm
{
    public VectorTerm(int vector, Node coefficient, Node? index, Node? sourceLeaf, string? sourceSpan, Node? element = null)
    {
        Element = element;
        Vector = vector;
        Coefficient = coefficient;
        Index = index;
        SourceLeaf = sourceLeaf;
        SourceSpan = sourceSpan;
    }

    public int Vector { get; }

    public Node Coefficient { get; }

    public Node? Index { get; }

    public Node? SourceLeaf { get; }

    public string? SourceSpan { get; }

    /// <summary>For a single element, the read of w[Index] it comes from (whose guard, if any, the update keeps).</summary>
    public Node? Element { get; }
}

internal static class ReverseSweep
{
    /// <param name="leafGradient">For an active leaf that is not a variable, its gradient (one node per variable).</param>
    public static Node[] Gradient(ExpressionBuilder b, Node output, int variableCount, Func<Node, Node[]?>? leafGradient = null,
        List<VectorTerm>? vectorTerms = null, Func<Node, string[]?>? leafVectorGradient = null)
    {
        var gradient = new Node[variableCount];
        for (int i = 0; i < variableCount; i++)
        {
            gradient[i] = b.Zero(output.Type);
        }

        if (!output.DependsOnVariables)
        {
            return gradient;
        }

        var adjoints = new Dictionary<Node, Node> { [output] = b.One(output.Type) };

        // The guard of a node: the condition under which the user's code evaluates it (null: always), from the
        // selections on the paths from the output to it. Where a node's guard is false its adjoint is 0, but its local
        // partials are read at values the method never computes (x / 0.0 on the side of a ?: not taken): an infinite
        // or NaN partial times that zero would be NaN. So each contribution a guarded node passes on is selected by the
        // guard (guard ? adjoint·partial : 0), never multiplied by a zero — unless its form already selects it, or the
        // partial is a finite constant (the adjoint is exactly 0 wherever the guard is false, as every contribution is).
        var guards = new Dictionary<Node, Node?> { [output] = null };
        foreach (Node node in Graph.Reachable(new[] { output }).Where(n => n.DependsOnVariables).OrderByDescending(n => n.Id))
        {
            if (!adjoints.TryGetValue(node, out Node? adjoint))
            {
                continue;
            }

            Node? guard = guards.TryGetValue(node, out Node? known) ? known : null;
            Node Selected(Node contribution) => Guards.Covers(contribution, guard) ? contribution : b.Select(guard!, contribution, b.Zero(contribution.Type));

            if (b.Names.LocalName(node) is { } localName && !adjoint.IsLeaf && b.Names.Hint(adjoint) is null)
            {
                b.Names.SetHint(adjoint, localName + "Adjoint");
            }

            if (node.VariableIndex >= 0)
            {
                gradient[node.VariableIndex] = b.Add(gradient[node.VariableIndex], adjoint);
                continue;
            }

            if (node.Kind == NodeKind.VariableElement)
            {
                (vectorTerms ?? throw new InvalidOperationException("A vector variable was read where no vector gradient is kept."))
                    .Add(new VectorTerm((int)node.Value, adjoint, node.Arguments[0], null, null, node));
                continue;
            }

            if (node.Arguments.Length == 0)
            {
                Node[] leafKnown = leafGradient?.Invoke(node)
                    ?? throw new InvalidOperationException("No gradient is known for the active leaf " + node.Text + ".");
                for (int k = 0; k < variableCount; k++)
                {
                    gradient[k] = b.Add(gradient[k], Selected(b.Multiply(adjoint, leafKnown[k])));
                }

                if (leafVectorGradient?.Invoke(node) is { } spans)
                {
                    for (int v = 0; v < spans.Length; v++)
                    {
                        vectorTerms!.Add(new VectorTerm(v, adjoint, null, node, spans[v]));
                    }
                }

                continue;
            }

            for (int i = 0; i < node.Arguments.Length; i++)
            {
                Node argument = node.Arguments[i];
                if (!argument.DependsOnVariables || !DerivativeRules.IsFirstOccurrence(node, i))
                {
                    continue;
                }

                Node partial = DerivativeRules.PartialWithRespectTo(b, node, argument);
                if (partial.IsZero)
                {
                    continue;
                }

                // A finite constant partial (±1 of a sum, the 1 or 0 of a selection's side) times an adjoint that is 0
                // where the guard is false stays 0 there: only other partials need the selection.
                Node contribution = IsFiniteConstant(partial) ? b.Multiply(adjoint, partial) : Selected(b.Multiply(adjoint, partial));
                adjoints[argument] = adjoints.TryGetValue(argument, out Node? sum) ? b.Add(sum, contribution) : contribution;

                // The argument is evaluated where this node is, and for a side of a selection only where it is taken
                // (either side, when it is both: c ? s : s).
                Node? argumentGuard = guard;
                if (node.Kind == NodeKind.Select)
                {
                    bool onTrueSide = node.Arguments[1] == argument, onFalseSide = node.Arguments[2] == argument;
                    Node? whenTrue = onTrueSide ? Guards.And(b, guard, node.Arguments[0]) : null;
                    Node? whenFalse = onFalseSide ? Guards.And(b, guard, Guards.Not(b, node.Arguments[0])) : null;
                    argumentGuard = !onFalseSide ? whenTrue : !onTrueSide ? whenFalse : Guards.Or(b, whenTrue, whenFalse);
                }

                guards[argument] = guards.TryGetValue(argument, out Node? other) ? Guards.Or(b, other, argumentGuard) : argumentGuard;
            }
        }

        return gradient;
    }

    private static bool IsFiniteConstant(Node node) =>
        (node.Kind == NodeKind.Constant && !double.IsNaN(node.Value) && !double.IsInfinity(node.Value))
        || (node.Kind == NodeKind.Select && IsFiniteConstant(node.Arguments[1]) && IsFiniteConstant(node.Arguments[2]));
}

/// <summary>
/// Conditions under which the user's code evaluates a node (null: always), and whether an expression is already 0
/// wherever such a condition is false.
/// </summary>
internal static class Guards
{
    public static Node Not(ExpressionBuilder b, Node condition) =>
        condition.Kind == NodeKind.Not ? condition.Arguments[0]
        : condition.Kind == NodeKind.Constant ? b.Constant(condition.Value != 0 ? 0 : 1, ScalarType.Boolean)
        : b.Raw(NodeKind.Not, ScalarType.Boolean, condition);

    /// <summary><c>guard &amp;&amp; condition</c>: the condition is read only where the guard holds, as in the user's code.</summary>
    public static Node? And(ExpressionBuilder b, Node? guard, Node condition)
    {
        if (condition.Kind == NodeKind.Constant && condition.Value != 0)
        {
            return guard;
        }

        return guard is null || condition.Kind == NodeKind.Constant ? condition : b.Raw(NodeKind.And, ScalarType.Boolean, guard, condition);
    }

    /// <summary><c>a || b</c>; null (always) when either is, and g for (g &amp;&amp; c) || (g &amp;&amp; !c).</summary>
    public static Node? Or(ExpressionBuilder b, Node? first, Node? second)
    {
        if (first is null || second is null || Complementary(first, second))
        {
            return null;
        }

        if (first == second)
        {
            return first;
        }

        if (first.Kind == NodeKind.And && second.Kind == NodeKind.And && first.Arguments[0] == second.Arguments[0]
            && Complementary(first.Arguments[1], second.Arguments[1]))
        {
            return first.Arguments[0];
        }

        return b.Raw(NodeKind.Or, ScalarType.Boolean, first, second);
    }

    private static bool Complementary(Node a, Node b) =>
        (a.Kind == NodeKind.Not && a.Arguments[0] == b) || (b.Kind == NodeKind.Not && b.Arguments[0] == a);

    /// <summary>Whether <paramref name="expression"/> is exactly 0 wherever <paramref name="guard"/> is false, by its form:
    /// a selection of 0 on the guard's false side (the usual shape of an adjoint inside a branch), or a sum of such.</summary>
    public static bool Covers(Node expression, Node? guard)
    {
        if (guard is null || expression.IsZero)
        {
            return true;
        }

        switch (expression.Kind)
        {
            case NodeKind.Add or NodeKind.Subtract:
                return Covers(expression.Arguments[0], guard) && Covers(expression.Arguments[1], guard);
            case NodeKind.Negate:
                return Covers(expression.Arguments[0], guard);
            case NodeKind.Select:
            {
                Node condition = expression.Arguments[0], whenTrue = expression.Arguments[1], whenFalse = expression.Arguments[2];
                if ((condition == guard && whenFalse.IsZero) || (Complementary(condition, guard) && whenTrue.IsZero))
                {
                    return true;
                }

                // guard = g && c: selected by g first, then by c.
                if (guard.Kind == NodeKind.And)
                {
                    Node outer = guard.Arguments[0], inner = guard.Arguments[1];
                    return (condition == outer && whenFalse.IsZero && Covers(whenTrue, inner))
                        || (Complementary(condition, outer) && whenTrue.IsZero && Covers(whenFalse, inner))
                        || (condition == inner && whenFalse.IsZero && Covers(whenTrue, outer))
                        || (Complementary(condition, inner) && whenTrue.IsZero && Covers(whenFalse, outer));
                }

                return false;
            }

            default:
                return false;
        }
    }
}
