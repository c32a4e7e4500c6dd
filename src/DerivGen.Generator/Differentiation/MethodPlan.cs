using System;
using System.Collections.Generic;
using System.Linq;
using DerivGen.Generator.Symbolic;

namespace DerivGen.Generator.Differentiation;

/// <summary>
/// What one generated method computes, where and in which form — the derivative program after the scheduling step and
/// the passes, as plain data the Emit stage lays out and prints (it decides nothing about derivatives):
/// <list type="number">
/// <item>the roots: every expression the method needs, with the stage where it is used;</item>
/// <item>the carried locals' start and end-of-iteration assignments (<see cref="StateUpdate"/>), after
/// <see cref="ConstantFactoring"/> and <see cref="DeadDerivatives"/>;</item>
/// <item>the spans replayed instead of stored (<see cref="ReverseReplay"/>), accumulated in place or in the gradient,
/// or written once per element (<see cref="InPlaceAccumulation"/>);</item>
/// <item>the scheduling (<see cref="Scheduling"/>): which nodes get a local, which loop-carried values are copied before a
/// loop updates them (snapshots), which calls fill derivative buffers and under which condition they are made, and the
/// SinCos pairs (<see cref="MathCallSharing"/>);</item>
/// <item>the statements writing the results: outputs with their Jacobian rows, or gradient, Hessian and return
/// (<see cref="ResultStatements"/>).</item>
/// </list>
/// </summary>
internal sealed partial class MethodPlan
{
    private MethodPlan(DerivativeProgram program, bool withHessian)
    {
        Program = program;
        WithHessian = withHessian;
    }

    public DerivativeProgram Program { get; }

    public bool WithHessian { get; }

    /// <summary>Every expression the method needs, with the stage at which it is used.</summary>
    public List<(Node Node, int UseStage)> Roots { get; } = new();

    /// <summary>The user's code: the value, the outputs, the loops' bounds and conditions, the carried locals' start and update.</summary>
    public List<Node> ValueRoots { get; } = new();

    /// <summary>Nodes the user's code evaluates whatever the conditions (a vector read outside this set is made only
    /// under a condition, so the update of its gradient entry is made only for an index in range).</summary>
    public HashSet<Node> ReadAlways { get; private set; } = new();

    /// <summary>Spans of inner loops replayed after the loop (reverse mode) instead of being stored, by span id (<see cref="DerivativeLocals"/>).</summary>
    public Dictionary<string, ReverseReplay> Replayed { get; private set; } = new(StringComparer.Ordinal);

    /// <summary>Per loop: the assignments before it, and at the end of each iteration.</summary>
    public Dictionary<LoopSegment, List<StateUpdate>> Initial { get; } = new();

    public Dictionary<LoopSegment, List<StateUpdate>> Next { get; } = new();

    /// <summary>Per loop: the constant factors applied after it to running derivatives (by id; <see cref="ConstantFactoring"/>).</summary>
    public Dictionary<LoopSegment, List<(string Target, Node Factor)>> Factored { get; private set; } = new();

    /// <summary>The spans (by id) accumulated in a slice of the gradient, with the vector of the slice.</summary>
    public Dictionary<string, int> InGradient { get; private set; } = new(StringComparer.Ordinal);

    /// <summary>The spans (by id) accumulated in a slice of the product (a Hessian–vector product method), with the vector of the slice.</summary>
    public Dictionary<string, int> InProduct { get; private set; } = new(StringComparer.Ordinal);

    /// <summary>The spans (by id) assigned once per element by their loop, with the stride.</summary>
    public Dictionary<string, int> SingleWrite { get; private set; } = new(StringComparer.Ordinal);

    /// <summary>The SinCos pairs and the nodes that share a paired local.</summary>
    public MathCallSharing SinCos { get; internal set; } = null!;

    /// <summary>The nodes computed into a local, in id order.</summary>
    public List<Node> Temporaries { get; internal set; } = new();

    /// <summary>Loop-carried values copied where their leaf's value holds, before a loop updates them (insertion order).</summary>
    public HashSet<Node> Snapshots { get; } = new();

    /// <summary>Vector terms that read a running-derivative span after a loop that updates it has started since the value
    /// their leaf stands for (the span holds a later value there): they read a copy of the span taken where the leaf's
    /// value holds (<see cref="Scheduling"/>), as a scalar read does with a snapshot.</summary>
    public Dictionary<VectorTerm, SpanSnapshot> SpanSnapshotOf { get; } = new();

    /// <summary>The copies those terms read, in the order found (one per leaf and span).</summary>
    public List<SpanSnapshot> SpanSnapshots { get; } = new();

    /// <summary>Whether the term reads the span <paramref name="span"/> itself (not a copy taken earlier).</summary>
    public bool ReadsSpan(VectorTerm term, string span) => term.SourceSpan == span && !SpanSnapshotOf.ContainsKey(term);

    /// <summary>Calls of other generated methods whose gradient buffer is read, in id order.</summary>
    public List<Node> GradientCalls { get; } = new();

    /// <summary>Those of them whose Hessian buffer is read too.</summary>
    public HashSet<Node> HessianCalls { get; } = new();

    /// <summary>The condition under which such a call is made, where the user's code makes it only under one.</summary>
    public Dictionary<Node, Node> CallConditions { get; internal set; } = new();

    /// <summary>Per loop: the statements assigning its carried locals before it and at the end of each iteration, with
    /// their forms (<see cref="StateAssignments"/>).</summary>
    public Dictionary<LoopSegment, List<Assignment>> Starts { get; } = new();

    public Dictionary<LoopSegment, List<Assignment>> Ends { get; } = new();

    /// <summary>Per stage: the statements computing its temporaries (<see cref="LocalStatements"/>).</summary>
    public Dictionary<int, List<LocalStatement>> Locals { get; private set; } = new();

    /// <summary>The spans of running derivatives with respect to vectors, declared before any loop, in order.</summary>
    public List<SpanDeclaration> SpanDeclarations { get; } = new();

    /// <summary>Per loop: the statements on its vector spans before it (clears, then starts) and at the end of each
    /// iteration (<see cref="SpanStatements"/>).</summary>
    public Dictionary<LoopSegment, List<SpanStatement>> SpanClears { get; } = new();

    public Dictionary<LoopSegment, List<SpanStatement>> SpanStarts { get; } = new();

    public Dictionary<LoopSegment, List<SpanStatement>> SpanEnds { get; } = new();

    /// <summary>Per stage: the outputs written there, each with its Jacobian row (<see cref="ResultStatements"/>).</summary>
    public Dictionary<int, List<OutputStatement>> Outputs { get; private set; } = new();

    /// <summary>The gradient, the Hessian's lower triangle and the return, after the last loop (none for a method with outputs).</summary>
    public List<ResultStatement> Results { get; private set; } = new();

    /// <summary>Whether the node is computed into a local (its own, or the equal SinCos node's) before it is read.</summary>
    public bool HasLocal(Node node) => _temporarySet.Contains(node) || SinCos.SameAs.ContainsKey(node);

    private HashSet<Node> _temporarySet = new();

    /// <summary>The Differentiate stage's last step for one generated method: scheduling and passes, in order.</summary>
    public static MethodPlan Create(DerivativeProgram program, bool withHessian, bool hasSinCos, bool hasOutputs)
    {
        var plan = new MethodPlan(program, withHessian);
        plan.AddResultRoots();
        plan.Replayed = ReverseReplay.Find(program);
        plan.ReadAlways = Evaluation.Unconditional(plan.ValueRoots);
        foreach (LoopSegment loop in program.Loops)
        {
            plan.Initial[loop] = StateUpdate.Of(program, loop, withHessian, before: true);
            plan.Next[loop] = StateUpdate.Of(program, loop, withHessian, before: false);
        }

        plan.Factored = ConstantFactoring.Apply(program, plan.Roots.Select(r => r.Node), plan.Initial, plan.Next);
        DeadDerivatives.Apply(program, plan.Roots.Select(r => r.Node), plan.Initial, plan.Next, plan.Factored);
        plan.AddLoopRoots();
        new Scheduling(plan, hasSinCos).Run();
        plan._temporarySet = new HashSet<Node>(plan.Temporaries);
        StateAssignments.Schedule(plan);
        plan.Locals = LocalStatements.Schedule(plan);
        plan.InGradient = InPlaceAccumulation.InGradient(program, plan.SpanSnapshotOf);
        plan.InProduct = InPlaceAccumulation.InProduct(program, plan.SpanSnapshotOf, plan.InGradient.Keys);
        plan.SingleWrite = InPlaceAccumulation.SingleWrite(program, plan.Replayed, plan.SpanSnapshotOf);
        SpanStatements.Schedule(plan);
        plan.Outputs = ResultStatements.Outputs(plan);
        plan.Results = ResultStatements.Results(plan, hasOutputs);
        return plan;
    }

    /// <summary>Whether a vector running derivative is added to where it is (<see cref="InPlaceAccumulation.UpdatesInPlace"/>).</summary>
    public bool UpdatesInPlace(LoopSegment loop, StateDerivatives d, int v) => InPlaceAccumulation.UpdatesInPlace(Program, loop, d, v, SpanSnapshotOf);

    private void AddResultRoots()
    {
        DerivativeProgram program = Program;
        int finalStage = program.FinalStage;
        Roots.Add((program.Value, finalStage));
        Roots.AddRange(program.Gradient.Select(g => (g, finalStage)));
        if (WithHessian)
        {
            Roots.AddRange(program.Hessian!.SelectMany(row => row).Select(h => (h, finalStage)));
        }

        if (program.Product is { } product)
        {
            Roots.AddRange(product.Select(p => (p, finalStage)));
        }

        // A method with outputs: each write needs its index, its value and its Jacobian row where it is written.
        foreach (OutputWrite output in program.Outputs)
        {
            Roots.Add((output.Index, output.Stage));
            Roots.Add((output.Value, output.Stage));
            Roots.AddRange(output.Row.Select(entry => (entry, output.Stage)));
            Roots.AddRange(ProgramReads.TermNodes(output.VectorRow).Select(node => (node, output.Stage)));
        }

        ValueRoots.Add(program.Value);
        ValueRoots.AddRange(program.Outputs.SelectMany(o => new[] { o.Index, o.Value }));
        foreach (LoopSegment loop in program.Loops)
        {
            ValueRoots.AddRange(ProgramReads.Header(loop));
            ValueRoots.AddRange(loop.States.SelectMany(s => new[] { s.Initial, s.Next }));
        }
    }

    /// <summary>The loops' bounds, start values and updates, and the vector terms, each where it is used.</summary>
    private void AddLoopRoots()
    {
        DerivativeProgram program = Program;
        foreach (LoopSegment loop in program.Loops)
        {
            if (loop.Condition is null)
            {
                Roots.Add((loop.Start!, loop.BeforeStage));
                Roots.Add((loop.End!, loop.BeforeStage));
            }

            Roots.AddRange(Initial[loop].Select(u => (u.Value, loop.BeforeStage)));
            Roots.AddRange(Next[loop].Select(u => (u.Value, loop.BodyEndStage)));
            foreach (LoopState state in loop.States)
            {
                if (program.States.TryGetValue(state, out StateDerivatives? d))
                {
                    // A replayed span's terms are written out again after the loop (see ReverseReplay), not here.
                    Roots.AddRange(ProgramReads.TermNodes(d.InitialVector.Where(t => !Replayed.ContainsKey(d.VectorNames[t.Vector]))).Select(node => (node, loop.BeforeStage)));
                    Roots.AddRange(ProgramReads.TermNodes(d.NextVector.Where(t => !Replayed.ContainsKey(d.VectorNames[t.Vector]))).Select(node => (node, loop.BodyEndStage)));
                }
            }
        }

        Roots.AddRange(ProgramReads.TermNodes(program.ResultTerms).Select(node => (node, program.FinalStage)));
    }
}
