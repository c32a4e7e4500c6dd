using System.Collections.Generic;
using System.Linq;
using DerivGen.Generator.Model;
using DerivGen.Generator.Symbolic;

namespace DerivGen.Generator.Differentiation;

/// <summary>
/// The condition under which the user's code evaluates a call of another generated method, for calls whose buffers are
/// read and so cannot be written inline: such a call is made under that condition (<c>guard ? Call(…) : 0</c>).
/// <para>
/// Unlike <see cref="Guards"/> of the reverse sweep, the conditions are built without simplification (the conjunctions
/// and disjunctions exactly as the paths give them), which is what the generated text has always shown.
/// </para>
/// </summary>
internal static class CallGuards
{
    /// <summary>
    /// For each of <paramref name="calls"/>: the condition under which the user's code evaluates it, from the selections,
    /// <c>&amp;&amp;</c> and <c>||</c> on the paths from <paramref name="roots"/> to it (the disjunction over paths).
    /// </summary>
    public static Dictionary<Node, Node> Of(IEnumerable<Node> roots, List<Node> calls, ExpressionBuilder builder)
    {
        var guards = new Dictionary<Node, Node>();
        if (calls.Count == 0)
        {
            return guards;
        }

        var targets = new HashSet<Node>(calls);
        var leadsToTarget = new Dictionary<Node, bool>();
        bool LeadsToTarget(Node node)
        {
            if (!leadsToTarget.TryGetValue(node, out bool known))
            {
                known = targets.Contains(node) || node.Arguments.Any(LeadsToTarget);
                leadsToTarget[node] = known;
            }

            return known;
        }

        Node And(Node? guard, Node condition) => guard is null ? condition : builder.Raw(NodeKind.And, ScalarType.Boolean, guard, condition);
        Node Not(Node condition) => builder.Raw(NodeKind.Not, ScalarType.Boolean, condition);
        var seen = new HashSet<(Node, Node?)>();
        var stack = new Stack<(Node Node, Node? Guard)>(roots.Select(r => (r, (Node?)null)));
        while (stack.Count > 0)
        {
            (Node node, Node? guard) = stack.Pop();
            if (!LeadsToTarget(node) || !seen.Add((node, guard)))
            {
                continue;
            }

            if (targets.Contains(node))
            {
                guards[node] = guards.TryGetValue(node, out Node? other)
                    ? builder.Raw(NodeKind.Or, ScalarType.Boolean, other, guard ?? builder.Constant(1, ScalarType.Boolean))
                    : guard ?? builder.Constant(1, ScalarType.Boolean);
            }

            switch (node.Kind)
            {
                case NodeKind.Select:
                    stack.Push((node.Arguments[0], guard));
                    stack.Push((node.Arguments[1], And(guard, node.Arguments[0])));
                    stack.Push((node.Arguments[2], And(guard, Not(node.Arguments[0]))));
                    break;
                case NodeKind.And:
                    stack.Push((node.Arguments[0], guard));
                    stack.Push((node.Arguments[1], And(guard, node.Arguments[0])));
                    break;
                case NodeKind.Or:
                    stack.Push((node.Arguments[0], guard));
                    stack.Push((node.Arguments[1], And(guard, Not(node.Arguments[0]))));
                    break;
                default:
                    foreach (Node argument in node.Arguments)
                    {
                        stack.Push((argument, guard));
                    }

                    break;
            }
        }

        return guards;
    }
}
