using System.Collections.Generic;
using System.Linq;
using DerivGen.Generator.Model;
using DerivGen.Generator.Symbolic;

namespace DerivGen.Generator.Differentiation;

/// <summary>What the user's code evaluates, and which operations could throw where it would not.</summary>
internal static class Evaluation
{
    /// <summary>The nodes the user's code evaluates whatever the conditions (not only inside one side of a branch).</summary>
    public static HashSet<Node> Unconditional(IEnumerable<Node> roots)
    {
        var always = new HashSet<Node>();
        var stack = new Stack<Node>(roots);
        while (stack.Count > 0)
        {
            Node node = stack.Pop();
            if (!always.Add(node))
            {
                continue;
            }

            int evaluated = node.Kind switch
            {
                NodeKind.Select => 1,            // the condition; each side only when it is taken
                NodeKind.And or NodeKind.Or => 1, // the left operand; the right one only when needed
                _ => node.Arguments.Length,
            };
            for (int i = 0; i < evaluated; i++)
            {
                stack.Push(node.Arguments[i]);
            }
        }

        return always;
    }

    /// <summary>An operation that can throw: a data read out of range, an int division by zero, Clamp with bounds
    /// reversed, Sign of a NaN (ArithmeticException).</summary>
    public static bool CanThrow(Node node) => node.Kind is NodeKind.Element or NodeKind.VariableElement
        || (node.Kind == NodeKind.Divide && node.Type == ScalarType.Int32)
        || (node.Kind == NodeKind.Call && node.Function is MathFunction.Clamp or MathFunction.Sign);

    /// <summary>Whether the node reads a loop-carried local (a leaf that stands for a value at a stage, other than a loop index).</summary>
    public static bool ReadsStageLeaf(Node node, HashSet<string> loopIndices) =>
        Graph.Reachable(new[] { node }).Any(n => n.IsLeaf && n.Stage > 0 && !(n.Kind == NodeKind.Parameter && n.Type == ScalarType.Int32 && loopIndices.Contains(n.Text!)));

    /// <summary>
    /// Whether evaluating the node could throw where the user's code would not: it contains an operation that can throw
    /// (a data read out of range, an int division by zero, Clamp with bounds reversed) that the user's code evaluates
    /// only under a condition.
    /// </summary>
    public static bool MayThrowUnlessGuarded(Node node, HashSet<Node> unconditional, Dictionary<Node, bool> memo)
    {
        System.Runtime.CompilerServices.RuntimeHelpers.EnsureSufficientExecutionStack(); // a deep input fails as a diagnostic, never as a stack overflow
        if (memo.TryGetValue(node, out bool known))
        {
            return known;
        }

        bool result = CanThrow(node) && !unconditional.Contains(node);
        foreach (Node argument in node.Arguments)
        {
            result |= MayThrowUnlessGuarded(argument, unconditional, memo);
        }

        memo[node] = result;
        return result;
    }
}
