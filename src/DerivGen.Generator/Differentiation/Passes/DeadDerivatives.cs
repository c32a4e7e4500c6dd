using System;
using System.Collections.Generic;
using System.Linq;
using DerivGen.Generator.Symbolic;

namespace DerivGen.Generator.Differentiation;

/// <summary>
/// Pass: running derivatives nothing reads (a carried local that does not depend on the variables, such as a time
/// counter) are dropped — they would only be zeros, and an unread local is a compiler warning. A running derivative is
/// live when the method's results or a loop's header read it, or when the update of a live one reads it (a least fixed
/// point).
/// </summary>
internal static class DeadDerivatives
{
    /// <summary>Removes the dead updates from <paramref name="initial"/> and <paramref name="next"/> and their factors from
    /// <paramref name="factored"/>; returns the live generated locals.</summary>
    public static HashSet<string> Apply(DerivativeProgram program, IEnumerable<Node> roots, Dictionary<LoopSegment, List<StateUpdate>> initial,
        Dictionary<LoopSegment, List<StateUpdate>> next, Dictionary<LoopSegment, List<(string Target, Node Factor)>> factored)
    {
        // The vector spans' updates are not StateUpdates: what their terms read is live (a carried tangent of
        // HessianVectorProgram read only by the update of its own span, for one).
        // The same for the results' vector terms (the gradient's and a product's: 2·sDot·dS_dW[k]).
        IEnumerable<Node> spanTerms = program.States.Values.SelectMany(d => ProgramReads.TermNodes(d.InitialVector).Concat(ProgramReads.TermNodes(d.NextVector)))
            .Concat(ProgramReads.TermNodes(program.ResultTerms));
        var live = new HashSet<string>(ProgramReads.LocalsReachable(roots.Concat(program.Loops.SelectMany(ProgramReads.Header)).Concat(spanTerms)), StringComparer.Ordinal);
        List<StateUpdate> derivativeUpdates = initial.Values.Concat(next.Values).SelectMany(u => u).Where(u => u.IsDerivative).ToList();
        for (bool grew = true; grew;)
        {
            grew = false;
            foreach (StateUpdate update in derivativeUpdates.Where(u => live.Contains(u.Target)))
            {
                foreach (string read in ProgramReads.LocalsReachable(new[] { update.Value }))
                {
                    grew |= live.Add(read);
                }
            }
        }

        foreach (LoopSegment loop in program.Loops)
        {
            initial[loop].RemoveAll(u => u.IsDerivative && !live.Contains(u.Target));
            next[loop].RemoveAll(u => u.IsDerivative && !live.Contains(u.Target));
            if (factored.TryGetValue(loop, out List<(string Target, Node Factor)>? liveFactors))
            {
                liveFactors.RemoveAll(f => !live.Contains(f.Target));
            }
        }

        return live;
    }
}
