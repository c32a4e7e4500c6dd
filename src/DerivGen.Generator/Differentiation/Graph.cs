using System.Collections.Generic;
using DerivGen.Generator.Symbolic;

namespace DerivGen.Generator.Differentiation;

internal static class Graph
{
    /// <summary>Every node reachable from the roots (iteratively: deep expressions must not exhaust the stack).</summary>
    public static HashSet<Node> Reachable(IEnumerable<Node> roots)
    {
        var seen = new HashSet<Node>();
        var stack = new Stack<Node>(roots);
        while (stack.Count > 0)
        {
            Node node = stack.Pop();
            if (seen.Add(node))
            {
                foreach (Node argument in node.Arguments)
                {
                    stack.Push(argument);
                }
            }
        }

        return seen;
    }
}
