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
    public TapeRecord(LoopSegment loop, List<LoopState> recorded, List<LoopState> footer, DerivativeLocals ids)
    {
        Loop = loop;
        Recorded = recorded;
        Footer = footer;
        Count = ids.New(loop.Index is { } index ? Identifiers.Unescape(index) + "Count" : "steps");
        Buffer = ids.New("tape");
        Rented = ids.New("tapeRented");
        if (IsStack)
        {
            Grown = ids.New("grown");
            Top = ids.New("top");
            CountIn = ids.New(ids.Hint(Count) + "In");
            if (loop.Index is null)
            {
                Step = ids.New("step");
            }

            foreach (LoopState state in footer)
            {
                After[state] = ids.New(Identifiers.Unescape(state.Name) + "Out");
            }
        }
        else if (IsGrowable)
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
    public bool IsGrowable => Loop.Condition is not null || Loop.Parent is not null;

    /// <summary>A loop nested in another: its record is a stack (declared before the outermost loop) that every
    /// iteration pushes its start values onto and, after the loop, its values after it and its count
    /// (<see cref="Footer"/>); the reverse sweep pops them in the opposite order.</summary>
    public bool IsStack => Loop.Parent is not null;

    /// <summary>For a nested loop: its carried locals whose values after it the reverse sweep reads, pushed after the loop.</summary>
    public List<LoopState> Footer { get; }

    /// <summary>For a nested loop: the stack's top (in values), the count popped back, and the values after it popped back.</summary>
    public string? Top { get; }

    public string? CountIn { get; }

    public Dictionary<LoopState, string> After { get; } = new();

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

    /// <summary>For an iteration of a loop with loops nested in it: the adjoints set to 0 at the start of every iteration
    /// (the …BarIn collecting the start values' adjoints, and the nested loops' own), the pieces after the block's own
    /// (each nested loop backwards and the code before it, from the last), and the copies <c>xBar = xBarIn</c> at the end.</summary>
    public List<(string Id, ScalarType Type)> InnerZeros { get; } = new();

    public List<AdjointBlock> Inner { get; } = new();

    public List<(string Target, string Source)> Copies { get; } = new();
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

    // The state of Build (the adjoint locals by carried local, what each leaf stands for, what is declared and recorded).
    private ExpressionBuilder _b = null!;
    private int _n;
    private ScalarType _returnType;
    private Dictionary<LoopState, (string Id, Node Leaf)> _adjointOf = null!;
    private Dictionary<LoopState, string> _adjointInOf = null!;
    private Dictionary<Node, (LoopSegment Loop, LoopState State)> _loopOf = null!;
    private string?[] _scalarIds = null!;
    private HashSet<string> _declared = null!;
    private Dictionary<LoopSegment, List<LoopState>> _recordedOf = null!;
    private Dictionary<LoopSegment, List<LoopState>> _footerOf = null!;

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
        if (spec.HasOutputs || spec.IsPairMethod || forwardMode.Loops.Count == 0 || !ReverseLoopPolicy.WantsReverse(spec, forwardMode))
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
        _b = program.Builder;
        _returnType = returnType;
        DerivativeLocals ids = program.Locals;
        _n = program.Variables.Length;
        int reverseStage = program.FinalStage + 1;
        IReadOnlyList<LoopSegment> loops = program.TopLevelLoops;
        CollectForwardNamed();

        // The adjoint locals: one per active carried local of each loop (and, for a loop with loops nested in it, one more
        // collecting the adjoint of its value at the start of an iteration), one per scalar variable.
        _adjointOf = new Dictionary<LoopState, (string Id, Node Leaf)>();
        _adjointInOf = new Dictionary<LoopState, string>();
        _loopOf = new Dictionary<Node, (LoopSegment Loop, LoopState State)>();
        foreach (LoopSegment loop in program.Loops)
        {
            foreach (LoopState state in loop.States)
            {
                if (state.IsActive)
                {
                    string id = ids.New(Identifiers.Unescape(state.Name) + "Bar");
                    _adjointOf[state] = (id, _b.StageLeaf(id, state.Type, reverseStage, isActive: false));
                    _loopOf[state.Final] = (loop, state);
                    _loopOf[state.Current] = (loop, state);
                    if (loop.Children.Count > 0)
                    {
                        _adjointInOf[state] = ids.New(Identifiers.Unescape(state.Name) + "BarIn");
                    }
                }
            }
        }

        _scalarIds = program.Variables.Select(v => (string?)ids.New(Identifiers.Unescape(v) + "Bar")).ToArray();
        _declared = new HashSet<string>(StringComparer.Ordinal);
        var topRoots = new List<Node> { program.Value };
        foreach (LoopSegment loop in loops)
        {
            topRoots.AddRange(ProgramReads.Header(loop));
            topRoots.AddRange(loop.States.Select(s => s.Initial));
        }

        HashSet<Node> topAlways = Evaluation.Unconditional(topRoots);
        _recordedOf = new Dictionary<LoopSegment, List<LoopState>>();
        _footerOf = new Dictionary<LoopSegment, List<LoopState>>();

        // The code after the last loop: the value's adjoint is 1.
        AdjointResult tail = AdjointSweep.Run(_b, new[] { (program.Value, _b.One(_returnType)) }, _n, _returnType, IsBoundary);
        Blocks.Add(Fill(new AdjointBlock(null) { Label = "the code after the last loop", ReadAlways = topAlways }, tail, topAlways, declares: true));
        foreach ((string id, ScalarType type) in loops.SelectMany(l => l.States).Where(_adjointOf.ContainsKey).Select(s => (_adjointOf[s].Id, s.Type))
            .Concat(_scalarIds.Select(id => (id!, _returnType))))
        {
            if (!_declared.Contains(id))
            {
                ZeroAdjoints.Add((id, type));
                _declared.Add(id);
            }
        }

        for (int l = loops.Count - 1; l >= 0; l--)
        {
            cancellationToken.ThrowIfCancellationRequested();
            LoopSegment loop = loops[l];
            Blocks.Add(Iteration(loop));
            Blocks.Add(StartValues(loop, topAlways));
        }

        ScalarAdjoints = _scalarIds;
        foreach (LoopSegment loop in program.Loops)
        {
            // A loop gets a record when its reverse iterations read a carried local, when it is a while loop (whose
            // record also counts its iterations), and always when it is nested (its record keeps its count and its
            // values after it, per iteration of the loop around it).
            if (_recordedOf.TryGetValue(loop, out List<LoopState>? recorded)
                && (recorded.Count > 0 || loop.Parent is not null || (loop.Condition is not null && Blocks.Any(block => block.Loop == loop && !IsEmpty(block)))))
            {
                Tapes[loop] = new TapeRecord(loop, recorded, _footerOf.TryGetValue(loop, out List<LoopState>? footer) ? footer : new List<LoopState>(), ids);
            }
        }

        FindSnapshots(loops);
    }

    // Every piece stops at the values carried by loops: at the start of an iteration, and after a loop.
    private bool IsBoundary(Node node) => _loopOf.ContainsKey(node);

    // One iteration of a loop backwards: seeds are the adjoints of the carried locals' new values. For a loop without
    // nested loops, one piece, whose adjoints at the start values become the new adjoints; for one with nested
    // loops, the code after the last nested loop, then each nested loop backwards with the code before it, the
    // adjoints at the start values collected in …BarIn locals.
    private AdjointBlock Iteration(LoopSegment loop)
    {
        List<LoopState> active = loop.States.Where(s => s.IsActive).ToList();
        AdjointResult iteration = AdjointSweep.Run(_b, active.Select(s => (s.Next, _adjointOf[s].Leaf)).ToList(), _n, _returnType, IsBoundary);
        var alwaysRoots = loop.States.Select(s => s.Next).Concat(loop.Children.SelectMany(c => ProgramReads.Header(c).Concat(c.States.Select(s => s.Initial))));
        HashSet<Node> always = Evaluation.Unconditional(alwaysRoots);
        var block = new AdjointBlock(loop) { Label = Describe(loop) + ", its iterations backwards", ReadAlways = always };
        Fill(block, iteration, always, declares: false);
        if (loop.Children.Count == 0)
        {
            var assignments = active.Select(s => (State: s, Value: iteration.Boundary.TryGetValue(s.Current, out Node? adjoint) ? _b.Convert(adjoint, s.Type) : _b.Zero(s.Type))).ToList();
            assignments.RemoveAll(a => a.Value == _adjointOf[a.State].Leaf); // unchanged by an iteration (an accumulator's adjoint)
            foreach ((LoopState state, Node adjointValue) in assignments)
            {
                Node leaf = _adjointOf[state].Leaf;
                bool readByOther = assignments.Any(a => a.State != state && Graph.Reachable(new[] { a.Value }).Contains(leaf));
                block.Assignments.Add(new AdjointAssignment(_adjointOf[state].Id, state.Type, adjointValue, readByOther));
            }
        }
        else
        {
            foreach (LoopState state in active)
            {
                block.InnerZeros.Add((_adjointInOf[state], state.Type));
                block.Copies.Add((_adjointOf[state].Id, _adjointInOf[state]));
            }

            foreach (LoopState state in loop.Children.SelectMany(c => c.States).Where(s => s.IsActive))
            {
                block.InnerZeros.Add((_adjointOf[state].Id, state.Type));
            }

            for (int c = loop.Children.Count - 1; c >= 0; c--)
            {
                block.Inner.Add(Iteration(loop.Children[c]));
                block.Inner.Add(StartValues(loop.Children[c], always));
            }
        }

        ChooseTemporaries(block, always);

        // The record: every carried local of the loop whose value at the start of an iteration the block reads; for a
        // nested loop, also its values after it that the loop around it reads backwards.
        HashSet<Node> read = Graph.Reachable(AllRoots(block));
        _recordedOf[loop] = loop.States.Where(s => read.Contains(s.Current)).ToList();
        foreach (LoopSegment child in loop.Children)
        {
            _footerOf[child] = child.States.Where(s => read.Contains(s.Final)).ToList();
        }

        return block;
    }

    // The code before a loop (down to the values carried by earlier loops): the start values' adjoints are the carried
    // locals' adjoints after the loop ran backwards.
    private AdjointBlock StartValues(LoopSegment loop, HashSet<Node> always)
    {
        List<LoopState> active = loop.States.Where(s => s.IsActive).ToList();
        AdjointResult inputs = AdjointSweep.Run(_b, active.Select(s => (s.Initial, _adjointOf[s].Leaf)).ToList(), _n, _returnType, IsBoundary);
        return Fill(new AdjointBlock(null) { Label = "the start values of " + Describe(loop), ReadAlways = always }, inputs, always, declares: false);
    }

    private AdjointBlock Fill(AdjointBlock block, AdjointResult result, HashSet<Node> always, bool declares)
    {
        foreach (KeyValuePair<Node, Node> pair in result.Boundary.OrderBy(p => p.Key.Id))
        {
            (LoopSegment of, LoopState state) = _loopOf[pair.Key];
            if (pair.Key == state.Final)
            {
                string id = _adjointOf[state].Id;
                block.Accumulations.Add(new Accumulation(id, state.Type, _b.Convert(pair.Value, state.Type), declares && _declared.Add(id)));
            }
            else if (of != block.Loop || of.Children.Count > 0)
            {
                // The start value of an iteration of a loop around this piece (or of this loop, when it has nested loops).
                block.Accumulations.Add(new Accumulation(_adjointInOf[state], state.Type, _b.Convert(pair.Value, state.Type), Declares: false));
            }
        }

        for (int k = 0; k < _n; k++)
        {
            if (!result.Gradient[k].IsZero)
            {
                block.Accumulations.Add(new Accumulation(_scalarIds[k]!, _returnType, result.Gradient[k], declares && _declared.Add(_scalarIds[k]!)));
            }
        }

        block.Terms.AddRange(result.VectorTerms);
        if (block.Loop is null)
        {
            ChooseTemporaries(block, always);
        }

        return block;
    }

    private static IEnumerable<Node> AllRoots(AdjointBlock block) => BlockRoots(block).Concat(block.Inner.SelectMany(AllRoots));

    /// <summary>Whether a block writes nothing (no adjoint reaches its piece).</summary>
    public static bool IsEmpty(AdjointBlock block) =>
        block.Temporaries.Count == 0 && block.Accumulations.Count == 0 && block.Terms.Count == 0 && block.Assignments.Count == 0 && block.Copies.Count == 0
        && block.Inner.All(IsEmpty);

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
        var stack = new Stack<Node>(Blocks.SelectMany(AllRoots));
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
