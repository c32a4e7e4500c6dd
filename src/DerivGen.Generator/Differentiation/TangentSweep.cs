using System;
using System.Collections.Generic;
using System.Linq;
using DerivGen.Generator.Model;
using DerivGen.Generator.Symbolic;

namespace DerivGen.Generator.Differentiation;

/// <summary>
/// Directional (tangent, forward-mode) derivatives of a set of DAG nodes with respect to one variable:
/// Dⱼ(f) = Σᵢ ∂f/∂xᵢ · Dⱼ(xᵢ), visited in increasing id order (a topological order). Applied to the gradient's
/// nodes this is forward-over-reverse: Dⱼ(∂f/∂xᵢ) is the Hessian entry Hᵢⱼ, so one sweep per variable gives one
/// Hessian column, at a cost of a small constant times the gradient's DAG. Active leaves that are not variables
/// (loop-carried values and their running derivatives) take their tangent from <c>leafTangent</c>.
/// </summary>
internal static class TangentSweep
{
    public static Dictionary<Node, Node> Derivatives(ExpressionBuilder b, IReadOnlyList<Node> roots, int variable, Func<Node, Node?>? leafTangent = null) =>
        Derivatives(b, roots, node => node.VariableIndex >= 0 ? (node.VariableIndex == variable ? b.One(node.Type) : b.Zero(node.Type)) : null, leafTangent);

    /// <summary>
    /// The same sweep along an arbitrary direction: <paramref name="seed"/> gives the tangent of each variable and of each
    /// element of a vector of variables (a Hessian column seeds 1 on one variable; a Hessian–vector product seeds the
    /// direction's entry on every variable, see <see cref="HessianVectorProgram"/>). It returns null for any other node.
    /// </summary>
    public static Dictionary<Node, Node> Derivatives(ExpressionBuilder b, IReadOnlyList<Node> roots, Func<Node, Node?> seed, Func<Node, Node?>? leafTangent = null)
    {
        var tangents = new Dictionary<Node, Node>();
        foreach (Node node in Graph.Reachable(roots).OrderBy(n => n.Id))
        {
            if (!node.DependsOnVariables)
            {
                tangents[node] = b.Zero(node.Type is ScalarType.Single or ScalarType.Generic ? node.Type : ScalarType.Double);
                continue;
            }

            if (seed(node) is { } seeded)
            {
                tangents[node] = seeded;
                continue;
            }

            if (node.Arguments.Length == 0)
            {
                tangents[node] = leafTangent?.Invoke(node)
                    ?? throw new InvalidOperationException("No tangent is known for the active leaf " + node.Text + ".");
                continue;
            }

            Node sum = b.Zero(node.Type);
            for (int i = 0; i < node.Arguments.Length; i++)
            {
                Node argumentTangent = tangents[node.Arguments[i]];
                if (argumentTangent.IsZero || !DerivativeRules.IsFirstOccurrence(node, i))
                {
                    continue;
                }

                Node partial = DerivativeRules.PartialWithRespectTo(b, node, node.Arguments[i]);
                if (!partial.IsZero)
                {
                    sum = b.Add(sum, b.Multiply(partial, argumentTangent));
                }
            }

            tangents[node] = sum;
        }

        return tangents;
    }
}
