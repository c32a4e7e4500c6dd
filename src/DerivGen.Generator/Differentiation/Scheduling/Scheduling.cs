using System;
using System.Collections.Generic;
using System.Linq;
using DerivGen.Generator.Symbolic;

namespace DerivGen.Generator.Differentiation;

/// <summary>
/// The scheduling step of a <see cref="MethodPlan"/>: which nodes get a local and which are written inline.
/// A local goes to the user's named locals, the value, every node used more than once, every node used at a later
/// stage than its own (computed once before a loop rather than in every iteration — loop-invariant code motion), calls
/// whose derivative buffers are read, and SinCos pairs; never to a node that could throw where the user's code would
/// not (written inline inside the condition that guards it, see <see cref="ConditionalEvaluation"/>). A loop-carried
/// value read after a loop that updates it is copied before (a snapshot), and so is a span of running derivatives with
/// respect to a vector (a span snapshot).
/// </summary>
internal sealed class Scheduling
{
    private readonly MethodPlan _plan;
    private readonly DerivativeProgram _program;
    private readonly bool _hasSinCos;
    private readonly Dictionary<Node, int> _uses = new();
    private readonly HashSet<Node> _hoisted = new();
    private readonly HashSet<Node> _usedAtOwnStage = new();
    private readonly Dictionary<Node, bool> _mayThrow = new();
    private HashSet<Node> _reachable = new();
    private Dictionary<LoopSegment, HashSet<string>> _updatedBy = new();
    private HashSet<Node> _unconditional = new();
    private ConditionalEvaluation? _conditional;

    public Scheduling(MethodPlan plan, bool hasSinCos)
    {
        _plan = plan;
        _program = plan.Program;
        _hasSinCos = hasSinCos;
    }

    public void Run()
    {
        _reachable = Graph.Reachable(_plan.Roots.Select(r => r.Node));
        CountUses();
        FindSnapshots();
        FindSpanSnapshots();
        FindConditionalEvaluation();
        FindCalls();
        _plan.SinCos = MathCallSharing.Find(_hasSinCos, _reachable, Guarded);
        ChooseTemporaries();
    }

    /// <summary>Uses per node; the nodes used at a later stage than their own; the nodes the code needs at their own stage
    /// (the roots used there, and what they read at that stage — a node of a stage that only later stages need is
    /// computed ahead of them only to be hoisted out of a loop).</summary>
    private void CountUses()
    {
        foreach (Node node in _reachable)
        {
            foreach (Node argument in node.Arguments)
            {
                _uses[argument] = _uses.TryGetValue(argument, out int count) ? count + 1 : 1;
                if (argument.Stage < node.Stage)
                {
                    _hoisted.Add(argument);
                }
            }
        }

        foreach ((Node root, int useStage) in _plan.Roots)
        {
            _uses[root] = _uses.TryGetValue(root, out int count) ? count + 1 : 1;
            if (root.Stage < useStage)
            {
                _hoisted.Add(root);
            }
        }

        var neededStack = new Stack<Node>(_plan.Roots.Where(r => r.Node.Stage == r.UseStage).Select(r => r.Node));
        while (neededStack.Count > 0)
        {
            Node node = neededStack.Pop();
            if (_usedAtOwnStage.Add(node))
            {
                foreach (Node argument in node.Arguments.Where(a => a.Stage == node.Stage))
                {
                    neededStack.Push(argument);
                }
            }
        }
    }

    /// <summary>A generated local read at a later stage than the one its leaf stands for, where a loop that updates it has
    /// started in between (the use is after or inside that loop), is copied where the leaf's value holds
    /// (double sBefore = s;) and the copy is read instead.</summary>
    private void FindSnapshots()
    {
        _updatedBy = _program.Loops.ToDictionary(loop => loop, loop => new HashSet<string>(
            _plan.Initial[loop].Concat(_plan.Next[loop]).Select(u => u.Target), StringComparer.Ordinal));
        foreach (Node node in _reachable)
        {
            foreach (Node argument in node.Arguments)
            {
                CheckSnapshot(argument, node.Stage);
            }
        }

        foreach ((Node root, int useStage) in _plan.Roots)
        {
            CheckSnapshot(root, useStage);
        }
    }

    private void CheckSnapshot(Node leaf, int useStage)
    {
        if (leaf.Kind == NodeKind.Parameter && leaf.Stage > 0 && leaf.Stage < useStage
            && _program.Loops.Any(loop => leaf.Stage < loop.InsideStage && loop.InsideStage <= useStage && _updatedBy[loop].Contains(leaf.Text!)))
        {
            _plan.Snapshots.Add(leaf);
        }
    }

    /// <summary>
    /// The same for the spans of running derivatives with respect to vectors: a vector term reads the span of its leaf
    /// (∂s/∂w as the leaf's value s stands for it) where it is used — at the end of an iteration, before a loop, at the
    /// end or at an output. When a loop that updates that span has started in between (a nested loop updating the local
    /// that an outer iteration read at its top, or a later loop updating a local whose earlier value was kept in
    /// another), the span no longer holds ∂s/∂w there: the term reads a copy taken where the leaf's value holds. Any loop
    /// carrying a local with that span counts as updating it (conservative: a copy too many costs time, never
    /// correctness). Replayed spans are not stored and have no copies.
    /// </summary>
    private void FindSpanSnapshots()
    {
        Dictionary<string, ReverseReplay> replayed = _plan.Replayed;
        var spanLoops = new Dictionary<string, List<LoopSegment>>(StringComparer.Ordinal);
        foreach (LoopSegment loop in _program.Loops)
        {
            foreach (LoopState state in loop.States)
            {
                if (_program.States.TryGetValue(state, out StateDerivatives? d))
                {
                    foreach (string span in d.VectorNames.Where(span => !replayed.ContainsKey(span)))
                    {
                        if (!spanLoops.TryGetValue(span, out List<LoopSegment>? loops))
                        {
                            spanLoops[span] = loops = new List<LoopSegment>();
                        }

                        loops.Add(loop);
                    }
                }
            }
        }

        var found = new Dictionary<(Node, string), SpanSnapshot>();
        void Check(IEnumerable<VectorTerm> terms, int useStage)
        {
            foreach (VectorTerm term in terms)
            {
                if (term is { SourceSpan: { } span, SourceLeaf: { } leaf } && leaf.Stage < useStage && spanLoops.TryGetValue(span, out List<LoopSegment>? loops)
                    && loops.Any(loop => leaf.Stage < loop.InsideStage && loop.InsideStage <= useStage))
                {
                    if (!found.TryGetValue((leaf, span), out SpanSnapshot? snapshot))
                    {
                        found[(leaf, span)] = snapshot = new SpanSnapshot(leaf, span, term.Vector);
                        _plan.SpanSnapshots.Add(snapshot);
                    }

                    _plan.SpanSnapshotOf[term] = snapshot;
                }
            }
        }

        foreach (LoopSegment loop in _program.Loops)
        {
            foreach (LoopState state in loop.States)
            {
                if (_program.States.TryGetValue(state, out StateDerivatives? d))
                {
                    // A replayed span's own terms are written out again by the replay (single elements, no span read).
                    Check(d.InitialVector.Where(t => !replayed.ContainsKey(d.VectorNames[t.Vector])), loop.BeforeStage);
                    Check(d.NextVector.Where(t => !replayed.ContainsKey(d.VectorNames[t.Vector])), loop.BodyEndStage);
                }
            }
        }

        foreach (OutputWrite output in _program.Outputs)
        {
            Check(output.VectorRow, output.Stage);
        }

        Check(_program.ResultTerms, _program.FinalStage);

        // Before a loop, the spans are cleared (or scaled, or started) one after another: a start that reads another
        // span of the same loop which is not carried on unchanged there would read it cleared or already started. It
        // reads a copy taken where its leaf's value holds (at the latest, just before the loop's statements).
        foreach (LoopSegment loop in _program.Loops)
        {
            var restarted = new HashSet<string>(StringComparer.Ordinal);
            foreach (LoopState state in loop.States)
            {
                if (_program.States.TryGetValue(state, out StateDerivatives? d))
                {
                    for (int v = 0; v < d.VectorNames.Length; v++)
                    {
                        string own = d.VectorNames[v];
                        var terms = d.InitialVector.Where(t => t.Vector == v).ToList();
                        if (!replayed.ContainsKey(own) && !(terms.Count == 1 && _plan.ReadsSpan(terms[0], own) && terms[0].Coefficient.IsConstant(1)))
                        {
                            restarted.Add(own);
                        }
                    }
                }
            }

            foreach (LoopState state in loop.States)
            {
                if (_program.States.TryGetValue(state, out StateDerivatives? d))
                {
                    foreach (VectorTerm term in d.InitialVector.Where(t => !replayed.ContainsKey(d.VectorNames[t.Vector])))
                    {
                        if (term is { SourceSpan: { } span, SourceLeaf: { } leaf } && span != d.VectorNames[term.Vector] && restarted.Contains(span)
                            && !_plan.SpanSnapshotOf.ContainsKey(term))
                        {
                            if (!found.TryGetValue((leaf, span), out SpanSnapshot? snapshot))
                            {
                                found[(leaf, span)] = snapshot = new SpanSnapshot(leaf, span, term.Vector);
                                _plan.SpanSnapshots.Add(snapshot);
                            }

                            _plan.SpanSnapshotOf[term] = snapshot;
                        }
                    }
                }
            }
        }
    }

    /// <summary>
    /// A node the user's code evaluates only under a condition (one side of an if or ?:, the right of &amp;&amp; or ||) and
    /// that could throw (a data read, an int division, Clamp) must stay inside that condition: it is written inline
    /// where it is used, never computed ahead in a local.
    /// </summary>
    private void FindConditionalEvaluation()
    {
        _unconditional = Evaluation.Unconditional(_plan.ValueRoots);
        // A loop-invariant node that could throw and is used only inside or after loops is not computed ahead of them: a
        // loop that runs zero times must not throw where the user's code does not. It is written where it is used
        // (when it reads no loop-carried local, whose value would differ there).
        // A loop index is the same wherever the node is written inside that loop (an inner loop's body included), so
        // reading one does not prevent this; a loop-carried local does.
        var loopIndices = new HashSet<string>(_program.Loops.Where(l => l.Index is not null).Select(l => l.Index!), StringComparer.Ordinal);
        foreach (Node node in _reachable.Where(h => !_usedAtOwnStage.Contains(h) && Evaluation.CanThrow(h) && !Evaluation.ReadsStageLeaf(h, loopIndices)))
        {
            _unconditional.Remove(node);
        }

        // A node that reads such an operation may still have a local where its own code keeps the user's guard around
        // it (i < n ? d[i] : 0 computed where the user's code computes it): see ConditionalEvaluation.
        var userRoots = new List<(Node, int)> { (_program.Value, _program.FinalStage) };
        foreach (LoopSegment loop in _program.Loops)
        {
            userRoots.AddRange(loop.Condition is null ? new[] { (loop.Start!, loop.BeforeStage), (loop.End!, loop.BeforeStage) } : new[] { (loop.Condition, loop.InsideStage) });
            userRoots.AddRange(loop.States.SelectMany(s => new[] { (s.Initial, loop.BeforeStage), (s.Next, loop.BodyEndStage) }));
        }

        _conditional = new ConditionalEvaluation(userRoots, Evaluation.CanThrow);
    }

    private bool Guarded(Node node) => Evaluation.MayThrowUnlessGuarded(node, _unconditional, _mayThrow) && !_conditional!.SafeAhead(node);

    /// <summary>
    /// Calls of other [Differentiate] methods whose derivatives are needed: one call of their MGradient (MHessian) gives
    /// the value and fills a buffer the partial derivatives are read from. A call whose buffers are read cannot be
    /// written inline; where the user's code calls it only under a condition that guards a throwing operation (a data
    /// read in its arguments), it is called under that condition (guard ? Call(…) : 0) and its buffers are read only
    /// by derivatives selected by the same condition.
    /// </summary>
    private void FindCalls()
    {
        var calls = new HashSet<Node>();
        foreach (Node partial in _reachable.Where(r => r.Kind is NodeKind.CallPartial or NodeKind.CallSecondPartial).OrderBy(r => r.Id))
        {
            Node call = partial.Arguments[0];
            if (calls.Add(call))
            {
                _plan.GradientCalls.Add(call);
            }

            if (partial.Kind == NodeKind.CallSecondPartial)
            {
                _plan.HessianCalls.Add(call);
            }
        }

        _plan.CallConditions = CallGuards.Of(_plan.ValueRoots, _plan.GradientCalls.Where(Guarded).ToList(), _program.Builder);
    }

    private void ChooseTemporaries()
    {
        MethodPlan plan = _plan;
        var calls = new HashSet<Node>(plan.GradientCalls);
        List<Node> temporaries = _reachable
            .Where(node => !plan.SinCos.SameAs.ContainsKey(node)).Where(node => plan.Snapshots.Contains(node) || plan.SinCos.Partner.ContainsKey(node)
                || (!node.IsLeaf && (!Guarded(node) || plan.CallConditions.ContainsKey(node))
                && (node == _program.Value || _program.Names.LocalName(node) is not null || _uses[node] >= 2 || _hoisted.Contains(node) || calls.Contains(node))))
            .OrderBy(node => node.Id)
            .ToList();

        // A node without a local is written where its user is (inline): a loop-carried local it reads may have been
        // updated by a loop in between there too, so the same copy is taken (a derivative that reads a guarded value).
        var temporarySet = new HashSet<Node>(temporaries);
        var inline = new Stack<(Node Node, int Stage)>(plan.Roots.Where(r => !temporarySet.Contains(r.Node)).Concat(temporaries.Select(t => (t, t.Stage))));
        var inlineSeen = new HashSet<(Node, int)>();
        int snapshotCount = plan.Snapshots.Count;
        while (inline.Count > 0)
        {
            (Node node, int stage) = inline.Pop();
            foreach (Node argument in node.Arguments)
            {
                if (argument.IsLeaf)
                {
                    CheckSnapshot(argument, stage);
                }
                else if (!temporarySet.Contains(argument) && inlineSeen.Add((argument, stage)))
                {
                    inline.Push((argument, stage));
                }
            }
        }

        if (plan.Snapshots.Count > snapshotCount)
        {
            temporaries = temporaries.Concat(plan.Snapshots.Where(n => !temporarySet.Contains(n))).OrderBy(node => node.Id).ToList();
        }

        if (plan.GradientCalls.Any(call => !temporaries.Contains(call)))
        {
            throw new InvalidOperationException("A call whose derivatives are needed is only evaluated under a condition that guards a throwing operation.");
        }

        plan.Temporaries = temporaries;
    }
}
