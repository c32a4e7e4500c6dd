using System;
using System.Collections.Generic;
using System.Linq;
using DerivGen.Generator.Symbolic;

namespace DerivGen.Generator.Differentiation;

/// <summary>What one statement does to a span of running derivatives with respect to a vector.</summary>
internal enum SpanStatementKind
{
    /// <summary><c>d.Clear();</c> before the loop.</summary>
    Clear,

    /// <summary>Not cleared: the loop assigns each element exactly once (stride 1).</summary>
    AssignedOnceEach,

    /// <summary>Only the elements after the loop's last group of <see cref="SpanStatement.Stride"/> are cleared.</summary>
    ClearTail,

    /// <summary><c>d[k] *= factor</c> for every element: a span that starts from its own value, scaled.</summary>
    Scale,

    /// <summary><c>d += terms</c> (a term reading d itself is skipped: it is carried on in place).</summary>
    AddInPlace,

    /// <summary><c>d[index] = coefficient</c> for each single-element term: the loop writes each element once.</summary>
    AssignElements,

    /// <summary><c>dNext = terms; … dNext.CopyTo(d)</c> after the loop's other span updates (they read the old d).</summary>
    ThroughNext,
}

/// <summary>A span to declare before any loop: a stack or heap buffer of the vector's length, or the slice of the gradient
/// for <see cref="GradientSlice"/> (<see cref="InPlaceAccumulation.InGradient"/>); with <see cref="IsNext"/>, the buffer
/// the span's new value is computed in (<see cref="SpanStatementKind.ThroughNext"/>).</summary>
internal sealed record SpanDeclaration(string Span, int Vector, int? GradientSlice = null, bool IsNext = false, int? ProductSlice = null);

/// <summary>A copy of the span <see cref="Span"/> (of the vector <see cref="Vector"/>) taken where the carried value
/// <see cref="Leaf"/> holds (its stage), read by the terms that need that value after a loop has updated the span.</summary>
internal sealed record SpanSnapshot(Node Leaf, string Span, int Vector);

/// <summary>One statement on a span: the span, its vector, the terms it adds (or assigns), and its stride or factor.</summary>
internal sealed record SpanStatement(SpanStatementKind Kind, string Span, int Vector, IReadOnlyList<VectorTerm> Terms, int Stride = 0, Node? Factor = null);

/// <summary>
/// The statements on the spans of a loop's running derivatives with respect to vectors: before the loop (cleared, or
/// the tail cleared for a span assigned once per element; scaled when it starts from its own value; then the start's
/// terms added) and at the end of an iteration (added in place, assigned once per element, or through a Next span).
/// Replayed spans (<see cref="ReverseReplay"/>) have none; a span carried on unchanged has none.
/// </summary>
internal static class SpanStatements
{
    public static void Schedule(MethodPlan plan)
    {
        // Each span once (a local carried through several loops keeps its spans), and a Next span for those not updated
        // in place.
        var declared = new HashSet<string>(StringComparer.Ordinal);
        foreach (LoopSegment loop in plan.Program.Loops)
        {
            foreach ((StateDerivatives d, int v) in Spans(plan, loop))
            {
                string own = d.VectorNames[v];
                if (declared.Add(own))
                {
                    plan.SpanDeclarations.Add(new SpanDeclaration(own, v, plan.InGradient.TryGetValue(own, out int slice) ? slice : null,
                        ProductSlice: plan.InProduct.TryGetValue(own, out int productSlice) ? productSlice : null));
                }

                if (!plan.UpdatesInPlace(loop, d, v) && declared.Add(own + "Next"))
                {
                    plan.SpanDeclarations.Add(new SpanDeclaration(own, v, IsNext: true));
                }
            }
        }

        foreach (LoopSegment loop in plan.Program.Loops)
        {
            plan.SpanClears[loop] = Clears(plan, loop);
            plan.SpanStarts[loop] = Updates(plan, loop, before: true);
            plan.SpanEnds[loop] = Updates(plan, loop, before: false);
        }
    }

    private static IEnumerable<(StateDerivatives D, int V)> Spans(MethodPlan plan, LoopSegment loop)
    {
        foreach (LoopState state in loop.States)
        {
            if (plan.Program.States.TryGetValue(state, out StateDerivatives? d))
            {
                for (int v = 0; v < d.VectorNames.Length; v++)
                {
                    if (!plan.Replayed.ContainsKey(d.VectorNames[v]))
                    {
                        yield return (d, v);
                    }
                }
            }
        }
    }

    private static List<SpanStatement> Clears(MethodPlan plan, LoopSegment loop)
    {
        var statements = new List<SpanStatement>();
        foreach ((StateDerivatives d, int v) in Spans(plan, loop))
        {
            string own = d.VectorNames[v];
            if (plan.SingleWrite.TryGetValue(own, out int stride))
            {
                statements.Add(new SpanStatement(stride == 1 ? SpanStatementKind.AssignedOnceEach : SpanStatementKind.ClearTail, own, v, Array.Empty<VectorTerm>(), stride));
            }
            else if (!d.InitialVector.Any(t => t.Vector == v && plan.ReadsSpan(t, own)))
            {
                // A span that starts from its own value (a local carried on from an earlier loop, scaled in between) is
                // scaled in place, not cleared.
                statements.Add(new SpanStatement(SpanStatementKind.Clear, own, v, Array.Empty<VectorTerm>()));
            }
        }

        return statements;
    }

    private static List<SpanStatement> Updates(MethodPlan plan, LoopSegment loop, bool before)
    {
        var statements = new List<SpanStatement>();
        foreach ((StateDerivatives d, int v) in Spans(plan, loop))
        {
            string own = d.VectorNames[v];
            var terms = (before ? d.InitialVector : d.NextVector).Where(t => t.Vector == v).ToList();
            if (terms.Count == 1 && plan.ReadsSpan(terms[0], own) && terms[0].Coefficient.IsConstant(1))
            {
                continue; // carried on unchanged
            }

            if (before)
            {
                // Cleared above, unless it starts from its own value (carried on from an earlier loop): then it is scaled
                // in place first (own ← c · own), and the other contributions are added to it.
                var self = terms.Where(t => plan.ReadsSpan(t, own)).ToList();
                if (self.Count > 1)
                {
                    throw new InvalidOperationException("A running derivative starts from its own value through several terms.");
                }

                if (self.Count == 1 && !self[0].Coefficient.IsConstant(1))
                {
                    statements.Add(new SpanStatement(SpanStatementKind.Scale, own, v, Array.Empty<VectorTerm>(), Factor: self[0].Coefficient));
                }

                statements.Add(new SpanStatement(SpanStatementKind.AddInPlace, own, v, terms));
            }
            else if (plan.SingleWrite.ContainsKey(own))
            {
                statements.Add(new SpanStatement(SpanStatementKind.AssignElements, own, v, terms.Where(t => t.Index is not null).ToList()));
            }
            else
            {
                statements.Add(new SpanStatement(plan.UpdatesInPlace(loop, d, v) ? SpanStatementKind.AddInPlace : SpanStatementKind.ThroughNext, own, v, terms));
            }
        }

        return statements;
    }
}
