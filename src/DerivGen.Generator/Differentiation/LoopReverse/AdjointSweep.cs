using System;
using System.Collections.Generic;
using System.Linq;
using DerivGen.Generator.Model;
using DerivGen.Generator.Symbolic;

namespace DerivGen.Generator.Differentiation.LoopReverse;

/// <summary>What one adjoint sweep gives: the adjoints reaching the boundary leaves, and the contributions to the
/// gradient (scalar variables in order, vector elements as terms).</summary>
internal sealed class AdjointResult
{
    public AdjointResult(Node[] gradient, List<VectorTerm> vectorTerms, Dictionary<Node, Node> boundary)
    {
        Gradient = gradient;
        VectorTerms = vectorTerms;
        Boundary = boundary;
    }

    /// <summary>Σ seed · ∂root/∂vₖ along the paths that reach the variable without crossing a boundary leaf.</summary>
    public Node[] Gradient { get; }

    /// <summary>The same for elements of vectors of variables (single-element terms only).</summary>
    public List<VectorTerm> VectorTerms { get; }

    /// <summary>The adjoint of each boundary leaf reached (a carried local's value at the start of an iteration or
    /// after a loop), 0 wherever the user's code would not read that leaf.</summary>
    public Dictionary<Node, Node> Boundary { get; }
}

/// <summary>
/// The reverse sweep of <see cref="ReverseSweep"/> generalised to several roots, each with its own seed (an adjoint
/// read from a local of the generated code), stopping at boundary leaves instead of reading their known gradient:
/// that is the adjoint of one piece of the method — one iteration of a loop (its carried locals' new values in terms of
/// their values at the start of the iteration), or the straight-line code between two loops. The visiting order,
/// the guards and the local partials are exactly those of <see cref="ReverseSweep"/>: nodes in decreasing id, a guarded
/// node's contributions selected by its guard (<see cref="Guards"/>), every partial from <see cref="DerivativeRules"/>.
/// By linearity, the adjoint of a node is the sum over the seeds, so one sweep serves all roots of a piece.
/// </summary>
internal static class AdjointSweep
{
    public static AdjointResult Run(ExpressionBuilder b, IReadOnlyList<(Node Root, Node Seed)> seeds, int variableCount, ScalarType gradientType,
        Func<Node, bool> isBoundary)
    {
        var gradient = new Node[variableCount];
        for (int i = 0; i < variableCount; i++)
        {
            gradient[i] = b.Zero(gradientType);
        }

        var terms = new List<VectorTerm>();
        var boundary = new Dictionary<Node, Node>();
        var adjoints = new Dictionary<Node, Node>();
        var guards = new Dictionary<Node, Node?>();
        foreach ((Node root, Node seed) in seeds)
        {
            if (!root.DependsOnVariables)
            {
                continue;
            }

            Node typed = b.Convert(seed, root.Type);
            adjoints[root] = adjoints.TryGetValue(root, out Node? sum) ? b.Add(sum, typed) : typed;
            guards[root] = null; // every root is evaluated wherever its piece runs
        }

        foreach (Node node in Graph.Reachable(adjoints.Keys.ToList()).Where(n => n.DependsOnVariables).OrderByDescending(n => n.Id))
        {
            if (!adjoints.TryGetValue(node, out Node? adjoint))
            {
                continue;
            }

            Node? guard = guards.TryGetValue(node, out Node? known) ? known : null;
            Node Selected(Node contribution) => Guards.Covers(contribution, guard) ? contribution : b.Select(guard!, contribution, b.Zero(contribution.Type));

            if (b.Names.LocalName(node) is { } localName && !adjoint.IsLeaf && b.Names.Hint(adjoint) is null)
            {
                b.Names.SetHint(adjoint, localName + "Bar");
            }

            if (isBoundary(node))
            {
                boundary[node] = adjoint; // 0 wherever the guard is false: every contribution to it is
                continue;
            }

            if (node.VariableIndex >= 0)
            {
                gradient[node.VariableIndex] = b.Add(gradient[node.VariableIndex], b.Convert(adjoint, gradientType));
                continue;
            }

            if (node.Kind == NodeKind.VariableElement)
            {
                terms.Add(new VectorTerm((int)node.Value, b.Convert(adjoint, gradientType), node.Arguments[0], null, null, node));
                continue;
            }

            if (node.Arguments.Length == 0)
            {
                throw new InvalidOperationException("The active leaf " + node.Text + " is neither a variable nor a boundary of the piece.");
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

                Node contribution = IsFiniteConstant(partial) ? b.Multiply(adjoint, partial) : Selected(b.Multiply(adjoint, partial));
                adjoints[argument] = adjoints.TryGetValue(argument, out Node? sum) ? b.Add(sum, contribution) : contribution;

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

        return new AdjointResult(gradient, terms, boundary);
    }

    private static bool IsFiniteConstant(Node node) =>
        (node.Kind == NodeKind.Constant && !double.IsNaN(node.Value) && !double.IsInfinity(node.Value))
        || (node.Kind == NodeKind.Select && IsFiniteConstant(node.Arguments[1]) && IsFiniteConstant(node.Arguments[2]));
}
