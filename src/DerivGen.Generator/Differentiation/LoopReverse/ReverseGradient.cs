using System;
using System.Collections.Generic;
using System.Linq;
using System.Threading;
using DerivGen.Generator.Model;
using DerivGen.Generator.Symbolic;

namespace DerivGen.Generator.Differentiation.LoopReverse;

/// <summary>
/// The record of one loop: the carried locals the reverse sweep reads, each at the start of every iteration, in a
/// slice of one buffer (on the stack up to <see cref="ReverseGradient.StackLimit"/> elements, else rented from
/// <c>ArrayPool&lt;double&gt;.Shared</c> and returned in a <c>finally</c>). Ids are <see cref="DerivativeLocals"/> ids.
/// </summary>
internal sealed class TapeRecord
{
    public TapeRecord(LoopSegment loop, List<LoopState> recorded, DerivativeLocals ids)
    {
        Loop = loop;
        Recorded = recorded;
        Count = ids.New(loop.Index is { } index ? Identifiers.Unescape(index) + "Count" : "steps");
        Buffer = ids.New("tape");
        Rented = ids.New("tapeRented");
        if (IsGrowable)
        {
            Step = ids.New("step");
            Grown = ids.New("grown");
        }
        else
        {
            foreach (LoopState state in recorded)
            {
                Slice[state] = ids.New(Identifiers.Unescape(state.Name) + "Tape");
            }
        }

        foreach (LoopState state in recorded)
        {
            Restored[state] = ids.New(Identifiers.Unescape(state.Name) + "In");
        }
    }

    public LoopSegment Loop { get; }

    /// <summary>The carried locals recorded (every one the reverse iteration reads, of any type), in the loop's order.</summary>
    public List<LoopState> Recorded { get; }

    /// <summary>The number of iterations: for a counted loop, computed before it from its bounds; for a while loop,
    /// counted by the loop itself as it records.</summary>
    public string Count { get; }

    /// <summary>A while loop (its trip count is known only when it ends): the record starts on the stack with
    /// <see cref="ReverseGradient.StackLimit"/> elements and moves to a pooled array twice as long whenever it is full;
    /// the locals of iteration s are at <c>m·s + j</c>. A counted loop gets one slice per local instead.</summary>
    public bool IsGrowable => Loop.Condition is not null;

    /// <summary>For a growable record: the reverse loop's counter, and the array a full record moves to.</summary>
    public string? Step { get; }

    public string? Grown { get; }

    /// <summary>The buffer (a span) and the rented array behind it, if any.</summary>
    public string Buffer { get; }

    public string Rented { get; }

    /// <summary>Per recorded local: its slice of the buffer (one element per iteration), and the local it is read back
    /// into at the top of a reverse iteration.</summary>
    public Dictionary<LoopState, string> Slice { get; } = new();

    public Dictionary<LoopState, string> Restored { get; } = new();
}

/// <summary><c>Target += Value</c> (or a declaration <c>T Target = Value</c> where the block is the target's first writer).</summary>
internal sealed record Accumulation(string Target, ScalarType Type, Node Value, bool Declares);

/// <summary><c>Target = Value</c> at the end of a reverse iteration: a carried local's adjoint at the start of the
/// iteration; through a local (<c>…Next</c>) where another new adjoint reads the old one.</summary>
internal sealed record AdjointAssignment(string Target, ScalarType Type, Node Value, bool ThroughLocal);

/// <summary>
/// One piece of the reverse sweep: the straight-line code after the last loop or before a loop (<see cref="Loop"/> null:
/// written once), or one loop's iterations run backwards (written inside a reverse loop, reading the record).
/// </summary>
internal sealed class AdjointBlock
{
    public AdjointBlock(LoopSegment? loop) => Loop = loop;

    public LoopSegment? Loop { get; }

    /// <summary>What the block is, for a comment.</summary>
    public string Label { get; set; } = string.Empty;

    /// <summary>Nodes computed into a local at the top of the block (in id order; none could throw where the user's code
    /// would not: <see cref="Evaluation.MayThrowUnlessGuarded"/>).</summary>
    public List<Node> Temporaries { get; } = new();

    public List<Accumulation> Accumulations { get; } = new();

    /// <summary>Contributions to the vectors' slices of the gradient (<c>gradient[offset + Index] += Coefficient</c>).</summary>
    public List<VectorTerm> Terms { get; } = new();

    /// <summary>The vector reads the user's code makes whatever the conditions in this piece (others are added under a
    /// bounds check: their contribution is 0 where the read is not made, but the index may be out of range there).</summary>
    public HashSet<Node> ReadAlways { get; set; } = new();

    public List<AdjointAssignment> Assignments { get; } = new();
}

/// <summary>
/// The gradient method of a program whose loops go reverse (<see cref="ReverseLoopPolicy"/>), as data for Emit: the
/// value computed exactly as the user wrote it (the <see cref="Forward"/> plan of a program without derivatives) with
/// each loop recording its carried locals at the start of every iteration (<see cref="TapeRecord"/>), then the reverse
/// sweep (<see cref="Blocks"/>): the adjoint of the code after the last loop, then for each loop from the last, its
/// iterations backwards (the adjoint of one iteration: the carried locals' new values in terms of their values at the
/// start, restored from the record, accumulating the variables' adjoints) and the code before it.
/// <para>Cost: the value once, plus about one more value and the adjoint of every iteration; memory: one
/// double per recorded local and iteration (the classic adjoint of a time-stepping loop, "store all" —
/// Griewank &amp; Walther, Evaluating Derivatives, 2nd ed., SIAM 2008, ch. 12).</para>
/// </summary>
internal sealed class ReverseGradient
{
    /// <summary>Records of up to this many doubles live on the stack (2 KB), longer ones in pooled memory.</summary>
    public const int StackLimit = 256;

    private ReverseGradient(DerivativeProgram program, MethodPlan forward)
    {
        Program = program;
        Forward = forward;
    }

    /// <summary>The program of the value alone (no running derivatives); every node below belongs to its builder.</summary>
    public DerivativeProgram Program { get; }

    /// <summary>The value code, scheduled as for any method (temporaries, loops, carried locals).</summary>
    public MethodPlan Forward { get; }

    public Dictionary<LoopSegment, TapeRecord> Tapes { get; } = new();

    /// <summary>Copies of a carried local's value after a loop, taken right after it because a later loop carries the
    /// same local on (the reverse sweep reads the earlier value): leaf → id, and per loop the copies taken after it.</summary>
    public Dictionary<Node, string> SnapshotOf { get; } = new();

    public Dictionary<LoopSegment, List<(Node Leaf, string Id)>> SnapshotsAfter { get; } = new();

    /// <summary>The forward temporaries the reverse sweep may read by name (written at the method's top level).</summary>
    public HashSet<Node> ForwardNamed { get; } = new();

    /// <summary>The adjoint locals declared as 0 after the first block (those it does not declare), in order.</summary>
    public List<(string Id, ScalarType Type)> ZeroAdjoints { get; } = new();

    /// <summary>The pieces of the reverse sweep in the order they run.</summary>
    public List<AdjointBlock> Blocks { get; } = new();

    /// <summary>Per scalar variable, the local accumulating its adjoint (null: its derivative is 0).</summary>
    public string?[] ScalarAdjoints { get; private set; } = Array.Empty<string?>();

    /// <summary>Per vector of variables: whether any block adds to its slice (otherwise the slice is only cleared).</summary>
    public int VectorCount => Program.Vectors.Length;

    /// <summary>The reverse gradient of <paramref name="spec"/>, or null where the rule keeps forward running derivatives.</summary>
    public static ReverseGradient? TryCreate(MethodSpec spec, DerivativeProgram forwardMode, CancellationToken cancellationToken)
    {
        if (spec.HasOutputs || spec.IsPairMethod || forwardMode.Loops.Count == 0 || !ReverseLoopPolicy.PrefersReverse(forwardMode))
        {
            return null;
        }

        DerivativeProgram value = DerivativeProgram.ValueOnly(spec, cancellationToken);
        if (!ReverseLoopPolicy.Supports(spec, value))
        {
            return null;
        }

        MethodPlan forward = MethodPlan.Create(value, withHessian: false, spec.HasSinCos, hasOutputs: false);
        var reverse = new ReverseGradient(value, forward);
        reverse.Build(spec.ReturnType, cancellationToken);
        return reverse;
    }

    private void Build(ScalarType returnType, CancellationToken cancellationToken)
    {
        DerivativeProgram program = Program;
        ExpressionBuilder b = program.Builder;
        DerivativeLocals ids = program.Locals;
        int n = program.Variables.Length;
        int reverseStage = program.FinalStage + 1;
        IReadOnlyList<LoopSegment> loops = program.TopLevelLoops;
        CollectForwardNamed();

        // The adjoint locals: one per active carried local of each loop, one per scalar variable.
        var adjointOf = new Dictionary<LoopState, (string Id, Node Leaf)>();
        var loopOf = new Dictionary<Node, (LoopSegment Loop, LoopState State)>();
        foreach (LoopSegment loop in loops)
        {
            foreach (LoopState state in loop.States)
            {
                if (state.IsActive)
                {
                    string id = ids.New(Identifiers.Unescape(state.Name) + "Bar");
                    adjointOf[state] = (id, b.StageLeaf(id, state.Type, reverseStage, isActive: false));
                    loopOf[state.Final] = (loop, state);
                }

                loopOf[state.Current] = (loop, state);
            }
        }

        string?[] scalarIds = program.Variables.Select(v => (string?)ids.New(Identifiers.Unescape(v) + "Bar")).ToArray();
        var declared = new HashSet<string>(StringComparer.Ordinal);
        var topRoots = new List<Node> { program.Value };
        foreach (LoopSegment loop in loops)
        {
            topRoots.AddRange(ProgramReads.Header(loop));
            topRoots.AddRange(loop.States.Select(s => s.Initial));
        }

        HashSet<Node> topAlways = Evaluation.Unconditional(topRoots);
        var recordedOf = new Dictionary<LoopSegment, List<LoopState>>();

        // The code after the last loop: the value's adjoint is 1.
        bool IsFinalLeaf(Node node) => loopOf.TryGetValue(node, out var of) && of.State.Final == node;
        AdjointResult tail = AdjointSweep.Run(b, new[] { (program.Value, b.One(returnType)) }, n, returnType, IsFinalLeaf);
        AddBlock(new AdjointBlock(null) { Label = "the code after the last loop", ReadAlways = topAlways }, tail, topAlways, declares: true);
        foreach ((string id, ScalarType type) in adjointOf.Values.Select(a => (a.Id, a.Leaf.Type)).Concat(scalarIds.Select(id => (id!, returnType))))
        {
            if (!declared.Contains(id))
            {
                ZeroAdjoints.Add((id, type));
                declared.Add(id);
            }
        }

        for (int l = loops.Count - 1; l >= 0; l--)
        {
            cancellationToken.ThrowIfCancellationRequested();
            LoopSegment loop = loops[l];
            List<LoopState> active = loop.States.Where(s => s.IsActive).ToList();

            // One iteration backwards: seeds are the adjoints of the carried locals' new values; it stops at their values
            // at the start of the iteration (their new adjoints) and at values carried out of earlier loops.
            bool IsIterationBoundary(Node node) => loopOf.TryGetValue(node, out var of) && (of.State.Current == node ? of.Loop == loop : of.State.Final == node);
            AdjointResult iteration = AdjointSweep.Run(b, active.Select(s => (s.Next, adjointOf[s].Leaf)).ToList(), n, returnType, IsIterationBoundary);
            HashSet<Node> always = Evaluation.Unconditional(loop.States.Select(s => s.Next));
            var block = new AdjointBlock(loop) { Label = Describe(loop) + ", its iterations backwards", ReadAlways = always };
            AddBlock(block, iteration, always, declares: false);
            var assignments = active.Select(s => (State: s, Value: iteration.Boundary.TryGetValue(s.Current, out Node? adjoint) ? b.Convert(adjoint, s.Type) : b.Zero(s.Type))).ToList();
            assignments.RemoveAll(a => a.Value == adjointOf[a.State].Leaf); // unchanged by an iteration (an accumulator's adjoint)
            foreach ((LoopState state, Node adjointValue) in assignments)
            {
                Node leaf = adjointOf[state].Leaf;
                bool readByOther = assignments.Any(a => a.State != state && Graph.Reachable(new[] { a.Value }).Contains(leaf));
                block.Assignments.Add(new AdjointAssignment(adjointOf[state].Id, state.Type, adjointValue, readByOther));
            }

            ChooseTemporaries(block, always);

            // The record: every carried local of the loop whose value at the start of an iteration the block reads.
            HashSet<Node> read = Graph.Reachable(BlockRoots(block));
            recordedOf[loop] = loop.States.Where(s => read.Contains(s.Current)).ToList();

            // The code before the loop: the start values' adjoints are the carried locals' adjoints after the reverse loop.
            AdjointResult inputs = AdjointSweep.Run(b, active.Select(s => (s.Initial, adjointOf[s].Leaf)).ToList(), n, returnType, IsFinalLeaf);
            AddBlock(new AdjointBlock(null) { Label = "the start values of " + Describe(loop), ReadAlways = topAlways }, inputs, topAlways, declares: false);
        }

        ScalarAdjoints = scalarIds;
        foreach (LoopSegment loop in loops)
        {
            // A loop gets a record when its reverse iterations read a carried local, or when it is a while loop (whose
            // record also counts its iterations).
            if (recordedOf[loop].Count > 0 || (loop.Condition is not null && Blocks.Any(block => block.Loop == loop && !IsEmpty(block))))
            {
                Tapes[loop] = new TapeRecord(loop, recordedOf[loop], ids);
            }
        }

        FindSnapshots(loops);

        void AddBlock(AdjointBlock block, AdjointResult result, HashSet<Node> always, bool declares)
        {
            foreach (KeyValuePair<Node, Node> pair in result.Boundary.OrderBy(p => p.Key.Id))
            {
                (LoopSegment _, LoopState state) = loopOf[pair.Key];
                if (pair.Key == state.Final)
                {
                    string id = adjointOf[state].Id;
                    block.Accumulations.Add(new Accumulation(id, state.Type, b.Convert(pair.Value, state.Type), declares && declared.Add(id)));
                }
            }

            for (int k = 0; k < n; k++)
            {
                if (!result.Gradient[k].IsZero)
                {
                    block.Accumulations.Add(new Accumulation(scalarIds[k]!, returnType, result.Gradient[k], declares && declared.Add(scalarIds[k]!)));
                }
            }

            block.Terms.AddRange(result.VectorTerms);
            if (block.Loop is null)
            {
                ChooseTemporaries(block, always);
            }

            Blocks.Add(block);
        }
    }

    /// <summary>Whether a block writes nothing (no adjoint reaches its piece).</summary>
    public static bool IsEmpty(AdjointBlock block) =>
        block.Temporaries.Count == 0 && block.Accumulations.Count == 0 && block.Terms.Count == 0 && block.Assignments.Count == 0;

    private static IEnumerable<Node> BlockRoots(AdjointBlock block) =>
        block.Accumulations.Select(a => a.Value).Concat(block.Assignments.Select(a => a.Value)).Concat(ProgramReads.TermNodes(block.Terms));

    /// <summary>The forward temporaries written at the method's top level (before, between and after the loops): still in
    /// scope, and holding their values, when the reverse sweep runs.</summary>
    private void CollectForwardNamed()
    {
        var topStages = new HashSet<int> { 0 };
        foreach (LoopSegment loop in Program.TopLevelLoops)
        {
            topStages.Add(loop.AfterStage);
        }

        foreach (KeyValuePair<int, List<LocalStatement>> stage in Forward.Locals.Where(p => topStages.Contains(p.Key)))
        {
            foreach (LocalStatement statement in stage.Value)
            {
                ForwardNamed.Add(statement.Node);
                if (statement.Cosine is { } cosine)
                {
                    ForwardNamed.Add(cosine);
                }
            }
        }

        foreach (KeyValuePair<Node, Node> pair in Forward.SinCos.SameAs.Where(p => ForwardNamed.Contains(p.Value)).ToList())
        {
            ForwardNamed.Add(pair.Key);
        }
    }

    /// <summary>
    /// The nodes of a block that get a local: those its code reads more than once (counted where they are written out,
    /// not through names), unless computing them ahead could throw where the user's code would not.
    /// </summary>
    private void ChooseTemporaries(AdjointBlock block, HashSet<Node> always)
    {
        var uses = new Dictionary<Node, int>();
        var stack = new Stack<Node>(BlockRoots(block));
        foreach (Node root in stack)
        {
            uses[root] = 0;
        }

        var seen = new HashSet<Node>();
        foreach (Node root in BlockRoots(block))
        {
            uses[root]++;
        }

        while (stack.Count > 0)
        {
            Node node = stack.Pop();
            if (!seen.Add(node) || node.IsLeaf || ForwardNamed.Contains(node))
            {
                continue;
            }

            for (int i = 0; i < node.Arguments.Length; i++)
            {
                Node argument = node.Arguments[i];
                uses[argument] = uses.TryGetValue(argument, out int count) ? count + 1 : 1;
                stack.Push(argument);
            }
        }

        var memo = new Dictionary<Node, bool>();
        block.Temporaries.AddRange(uses.Where(p => p.Value >= 2 && !p.Key.IsLeaf && !ForwardNamed.Contains(p.Key)
                && !Evaluation.MayThrowUnlessGuarded(p.Key, always, memo))
            .Select(p => p.Key).OrderBy(node => node.Id));
    }

    /// <summary>A value carried out of a loop that the reverse sweep reads, where a later loop carries the same local on
    /// (so the local holds a later value when the sweep runs): copied right after its loop.</summary>
    private void FindSnapshots(IReadOnlyList<LoopSegment> loops)
    {
        var read = new HashSet<Node>();
        var stack = new Stack<Node>(Blocks.SelectMany(BlockRoots));
        while (stack.Count > 0)
        {
            Node node = stack.Pop();
            if (!read.Add(node) || ForwardNamed.Contains(node))
            {
                continue;
            }

            foreach (Node argument in node.Arguments)
            {
                stack.Push(argument);
            }
        }

        for (int l = 0; l < loops.Count; l++)
        {
            foreach (LoopState state in loops[l].States)
            {
                bool carriedLater = loops.Skip(l + 1).Any(later => later.States.Any(s => s.Name == state.Name));
                if (carriedLater && read.Contains(state.Final))
                {
                    string id = Program.Locals.New(Identifiers.Unescape(state.Name) + "After" + Capital(Identifiers.Unescape(loops[l].Index ?? "Loop")));
                    SnapshotOf[state.Final] = id;
                    if (!SnapshotsAfter.TryGetValue(loops[l], out List<(Node, string)>? list))
                    {
                        SnapshotsAfter[loops[l]] = list = new List<(Node, string)>();
                    }

                    list.Add((state.Final, id));
                }
            }
        }
    }

    private static string Describe(LoopSegment loop) => loop.Index is { } index ? "the loop over " + Identifiers.Unescape(index) : "the while loop";

    private static string Capital(string name) => name.Length == 0 ? name : char.ToUpperInvariant(name[0]) + name.Substring(1);
}
