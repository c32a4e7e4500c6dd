using System;
using System.Collections.Generic;
using System.Linq;
using DerivGen.Generator.Symbolic;

namespace DerivGen.Generator.Differentiation;

/// <summary>
/// Pass: running derivatives that are sums of terms with one constant factor, d = Σ c·y (d starts at 0 before the loop
/// and each iteration does d += c·y or d −= c·y, |c| &gt; 1, finite, d read by nothing else), become d += y in the loop
/// and d *= c once after it. Derivative code only, so the reassociation is allowed; the user's value keeps its
/// operations as written.
/// </summary>
internal static class ConstantFactoring
{
    /// <summary>
    /// Replaces the updates in <paramref name="next"/> that take this form and returns, per loop, the factors to apply
    /// after it (<c>target *= factor</c>). <paramref name="roots"/> are the method's other uses of nodes (value,
    /// gradient, Hessian, outputs), which count as readers.
    /// </summary>
    public static Dictionary<LoopSegment, List<(string Target, Node Factor)>> Apply(DerivativeProgram program, IEnumerable<Node> roots,
        Dictionary<LoopSegment, List<StateUpdate>> initial, Dictionary<LoopSegment, List<StateUpdate>> next)
    {
        var factored = new Dictionary<LoopSegment, List<(string Target, Node Factor)>>();

        // How many nodes (or roots) read each generated local's leaf: a running derivative read only by its own update.
        var allRoots = roots.Concat(initial.Values.Concat(next.Values).SelectMany(u => u).Select(u => u.Value))
            .Concat(program.Loops.SelectMany(ProgramReads.Header))
            .Concat(program.States.Values.SelectMany(d => ProgramReads.TermNodes(d.InitialVector).Concat(ProgramReads.TermNodes(d.NextVector))))
            .Concat(ProgramReads.TermNodes(program.ResultTerms))
            .ToList();
        var readers = new Dictionary<Node, int>();
        void Read(Node leaf)
        {
            if (leaf.Kind == NodeKind.Parameter && leaf.Stage > 0)
            {
                readers[leaf] = readers.TryGetValue(leaf, out int count) ? count + 1 : 1;
            }
        }

        foreach (Node node in Graph.Reachable(allRoots))
        {
            foreach (Node argument in node.Arguments)
            {
                Read(argument);
            }
        }

        foreach (Node root in allRoots)
        {
            Read(root);
        }

        foreach (LoopSegment loop in program.Loops)
        {
            List<StateUpdate> updates = next[loop];
            for (int i = 0; i < updates.Count; i++)
            {
                if (Factor(program, loop, updates[i], initial[loop], readers) is not { } found)
                {
                    continue;
                }

                updates[i] = found.Update;
                if (!factored.TryGetValue(loop, out List<(string Target, Node Factor)>? list))
                {
                    factored[loop] = list = new List<(string Target, Node Factor)>();
                }

                list.Add((found.Update.Target, found.Factor));
            }
        }

        return factored;
    }

    /// <summary>The update without its constant factor, and the factor; null when the update does not take the form.</summary>
    private static (StateUpdate Update, Node Factor)? Factor(DerivativeProgram program, LoopSegment loop, StateUpdate update, List<StateUpdate> initial,
        Dictionary<Node, int> readers)
    {
        Node value = update.Value;
        if (!update.IsDerivative || value.Kind is not (NodeKind.Add or NodeKind.Subtract) || value.Type != update.Type
            || !initial.Any(u => u.Target == update.Target && u.Value.IsZero))
        {
            return null;
        }

        Node current = value.Arguments[0], term = value.Arguments[1];
        if (value.Kind == NodeKind.Add && !IsLeafOf(current, update.Target, loop))
        {
            (current, term) = (term, current);
        }

        if (!IsLeafOf(current, update.Target, loop) || readers[current] != 1 || term.Kind != NodeKind.Multiply
            || term.Arguments[0].Kind != NodeKind.Constant || !(Math.Abs(term.Arguments[0].Value) > 1) || double.IsInfinity(term.Arguments[0].Value)
            || term.Arguments[0].Type != update.Type)
        {
            return null;
        }

        return (update with { Value = program.Builder.Raw(value.Kind, value.Type, current, term.Arguments[1]) }, term.Arguments[0]);
    }

    private static bool IsLeafOf(Node node, string local, LoopSegment loop) =>
        node.Kind == NodeKind.Parameter && node.Text == local && node.Stage == loop.InsideStage;
}
