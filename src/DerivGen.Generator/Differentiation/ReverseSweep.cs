using System;
using System.Collections.Generic;
using System.Linq;
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
    public VectorTerm(int vector, Node coefficient, Node? index, Node? sourceLeaf, string? sourceSpan)
    {
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
        foreach (Node node in Graph.Reachable(new[] { output }).Where(n => n.DependsOnVariables).OrderByDescending(n => n.Id))
        {
            if (!adjoints.TryGetValue(node, out Node? adjoint))
            {
                continue;
            }

            if (node.LocalName is not null && !adjoint.IsLeaf && adjoint.NameHint is null)
            {
                adjoint.NameHint = node.LocalName + "Adjoint";
            }

            if (node.VariableIndex >= 0)
            {
                gradient[node.VariableIndex] = b.Add(gradient[node.VariableIndex], adjoint);
                continue;
            }

            if (node.Kind == NodeKind.VariableElement)
            {
                (vectorTerms ?? throw new InvalidOperationException("A vector variable was read where no vector gradient is kept."))
                    .Add(new VectorTerm((int)node.Value, adjoint, node.Arguments[0], null, null));
                continue;
            }

            if (node.Arguments.Length == 0)
            {
                Node[] known = leafGradient?.Invoke(node)
                    ?? throw new InvalidOperationException("No gradient is known for the active leaf " + node.Text + ".");
                for (int k = 0; k < variableCount; k++)
                {
                    gradient[k] = b.Add(gradient[k], b.Multiply(adjoint, known[k]));
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

                Node contribution = b.Multiply(adjoint, partial);
                adjoints[argument] = adjoints.TryGetValue(argument, out Node? sum) ? b.Add(sum, contribution) : contribution;
            }
        }

        return gradient;
    }
}
