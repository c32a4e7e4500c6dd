using System;
using System.Collections.Generic;
using System.Linq;
using DerivGen.Generator.Symbolic;

namespace DerivGen.Generator.Differentiation;

/// <summary>
/// Pass: a running derivative with respect to a vector that the generated code never stores — reverse mode over one inner
/// loop (<see cref="Find"/> decides; the writer replays the loop where the span would be read).
/// <para>
/// Forward mode keeps ∂z/∂w of a local z carried through an inner loop in a span: cleared before the loop, filled by the
/// loop's reads of w, then added, times the adjoint ∂s/∂z, into the enclosing loop's span ∂s/∂w — three passes over w.
/// When the loop only adds single elements to that span (∂z/∂w ← ∂z/∂w + e_idx · coef, with coef and idx depending on
/// nothing the loop changes), ∂s/∂w += adjoint · ∂z/∂w equals adding adjoint · coef at idx for every read, so after the
/// loop, once the adjoint is known, the loop's reads are replayed into ∂s/∂w directly: one pass, no span for z.
/// </para>
/// <para>
/// Only this shape is taken; anything else keeps forward mode (always correct): a <c>for</c> loop with an index, no nested
/// loop, the last loop of its enclosing loop's body (so nothing runs between the loop and the replay), bounds that read
/// no local the loop updates; the span belongs to one local of this loop alone, starts from single elements, carries on
/// with factor 1 plus single elements, and is read only by the enclosing loop's end-of-iteration updates, after the
/// loop; the replayed coefficients and indices read no local the loop updates and no buffer of a called generated
/// method, and are small enough to be written out again.
/// </para>
/// </summary>
internal sealed class ReverseReplay
{
    /// <summary>Nodes (counted as a tree, inside the loop) a replayed coefficient and index may take in total.</summary>
    internal const int MaxReplayedNodes = 64;

    private ReverseReplay(LoopSegment loop, StateDerivatives state, string span, List<VectorTerm> initialTerms, List<VectorTerm> loopTerms)
    {
        Loop = loop;
        State = state;
        Span = span;
        InitialTerms = initialTerms;
        LoopTerms = loopTerms;
    }

    /// <summary>The inner loop that is replayed.</summary>
    public LoopSegment Loop { get; }

    /// <summary>The local carried through it whose span is not stored.</summary>
    public StateDerivatives State { get; }

    /// <summary>The span's name (as forward mode would have called it).</summary>
    public string Span { get; }

    /// <summary>Single-element contributions before the loop (from the local's initial value).</summary>
    public List<VectorTerm> InitialTerms { get; }

    /// <summary>Single-element contributions of every iteration.</summary>
    public List<VectorTerm> LoopTerms { get; }

    /// <summary>The spans of <paramref name="program"/> that are replayed instead of stored, by name.</summary>
    public static Dictionary<string, ReverseReplay> Find(DerivativeProgram program)
    {
        var found = new Dictionary<string, ReverseReplay>(StringComparer.Ordinal);
        if (program.Vectors.Length == 0)
        {
            return found;
        }

        // Every vector term, with where it is used.
        var readers = new List<(VectorTerm Term, LoopSegment? Loop, StateDerivatives? Owner, bool Initial)>();
        foreach (LoopSegment loop in program.Loops)
        {
            foreach (LoopState state in loop.States)
            {
                if (program.States.TryGetValue(state, out StateDerivatives? d))
                {
                    readers.AddRange(d.InitialVector.Select(t => (t, (LoopSegment?)loop, (StateDerivatives?)d, true)));
                    readers.AddRange(d.NextVector.Select(t => (t, (LoopSegment?)loop, (StateDerivatives?)d, false)));
                }
            }
        }

        readers.AddRange(program.ResultTerms.Select(t => (t, (LoopSegment?)null, (StateDerivatives?)null, false)));
        // A method with outputs: a row that reads a span needs it stored (the row is written where the output is).
        readers.AddRange(program.Outputs.SelectMany(o => o.VectorRow).Select(t => (t, (LoopSegment?)null, (StateDerivatives?)null, false)));
        var spanOwners = program.States.Values.SelectMany(d => d.VectorNames).GroupBy(name => name, StringComparer.Ordinal)
            .ToDictionary(g => g.Key, g => g.Count(), StringComparer.Ordinal);

        foreach (LoopSegment loop in program.Loops)
        {
            LoopSegment? parent = loop.Parent;
            if (parent is null || loop.Index is null || loop.Condition is not null || loop.Start is null || loop.End is null
                || loop.Children.Count > 0 || parent.Children[parent.Children.Count - 1] != loop)
            {
                continue;
            }

            // The locals the loop changes: its carried locals and their running derivatives.
            var changed = new HashSet<string>(StringComparer.Ordinal);
            foreach (LoopState state in loop.States)
            {
                changed.Add(state.Name);
                if (program.States.TryGetValue(state, out StateDerivatives? d))
                {
                    changed.UnionWith(d.GradientNames);
                    changed.UnionWith(d.VectorNames);
                    changed.UnionWith(d.HessianNames?.SelectMany(row => row) ?? Enumerable.Empty<string>());
                }
            }

            if (ReadsAny(new[] { loop.Start, loop.End }, changed))
            {
                continue;
            }

            foreach (LoopState state in loop.States)
            {
                if (!program.States.TryGetValue(state, out StateDerivatives? d))
                {
                    continue;
                }

                for (int v = 0; v < d.VectorNames.Length; v++)
                {
                    string span = d.VectorNames[v];
                    if (spanOwners[span] != 1)
                    {
                        continue; // the same span is carried through another loop too
                    }

                    var initialTerms = d.InitialVector.Where(t => t.Vector == v).ToList();
                    var next = d.NextVector.Where(t => t.Vector == v).ToList();
                    var carry = next.Where(t => t.Index is null).ToList();
                    var loopTerms = next.Where(t => t.Index is not null).ToList();
                    if (initialTerms.Any(t => t.Index is null)
                        || carry.Count != 1 || carry[0].SourceSpan != span || !carry[0].Coefficient.IsConstant(1))
                    {
                        continue;
                    }

                    // Read only by the enclosing loop's updates at the end of its iteration, after this loop.
                    bool readElsewhere = readers.Any(r => r.Term != carry[0] && r.Term.SourceSpan == span
                        && (r.Loop != parent || r.Initial || r.Owner == d || r.Term.SourceLeaf != state.Final));
                    if (readElsewhere)
                    {
                        continue;
                    }

                    var replayed = initialTerms.Concat(loopTerms).SelectMany(t => new[] { t.Coefficient, t.Index! }).ToList();
                    if (ReadsAny(replayed, changed) || !SmallAndPlain(replayed, loop.InsideStage))
                    {
                        continue;
                    }

                    found[span] = new ReverseReplay(loop, d, span, initialTerms, loopTerms);
                }
            }
        }

        return found;
    }

    /// <summary>True if the expressions read one of the generated locals <paramref name="names"/>.</summary>
    private static bool ReadsAny(IEnumerable<Node> roots, HashSet<string> names) =>
        Graph.Reachable(roots).Any(n => n.Kind == NodeKind.Parameter && n.Stage > 0 && names.Contains(n.Text!));

    /// <summary>
    /// The nodes written out again in the replay (those of the loop's own stage, expanded as trees) are at most
    /// <see cref="MaxReplayedNodes"/>, and none reads a called method's buffers (which hold the last iteration's values).
    /// </summary>
    private static bool SmallAndPlain(List<Node> roots, int loopStage)
    {
        int budget = MaxReplayedNodes;
        var stack = new Stack<Node>(roots);
        while (stack.Count > 0)
        {
            Node node = stack.Pop();
            if (node.Kind is NodeKind.UserCall or NodeKind.CallPartial or NodeKind.CallSecondPartial)
            {
                return false;
            }

            if (--budget < 0)
            {
                return false;
            }

            if (node.Stage >= loopStage)
            {
                foreach (Node argument in node.Arguments)
                {
                    stack.Push(argument);
                }
            }
        }

        return true;
    }
}
