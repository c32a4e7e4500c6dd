using System;
using System.Collections.Generic;
using System.Linq;
using DerivGen.Generator.Model;
using DerivGen.Generator.Symbolic;

namespace DerivGen.Generator.Differentiation;

/// <summary>A local carried from one iteration of a loop to the next (a sum, a product, a simulated state, …).</summary>
internal sealed class LoopState
{
    public LoopState(string name, ScalarType type, Node initial, Node current)
    {
        Name = name;
        Type = type;
        Initial = initial;
        Current = current;
        Next = current;
    }

    /// <summary>The local's name in the generated code (the user's, made unique by Lowering).</summary>
    public string Name { get; }

    public ScalarType Type { get; }

    /// <summary>Its value before the loop.</summary>
    public Node Initial { get; }

    /// <summary>Leaf: its value at the start of an iteration, inside the loop.</summary>
    public Node Current { get; }

    /// <summary>Its value at the end of an iteration, in terms of <see cref="Current"/>.</summary>
    public Node Next { get; set; }

    /// <summary>Leaf: its value after the loop.</summary>
    public Node Final { get; set; } = null!;

    public bool IsActive => Current.DependsOnVariables;
}

/// <summary>
/// A <c>for</c> loop of the method: its header, the locals it carries and the loops nested in it. Stages number the
/// places where code is emitted, in emission order: before the loop, inside it (before any nested loop), after each
/// nested loop (still inside), and after the loop.
/// </summary>
internal sealed class LoopSegment
{
    public LoopSegment(string? index, Node? start, Node? end, bool inclusive, LoopSegment? parent, int beforeStage, int insideStage)
    {
        Index = index;
        Start = start;
        End = end;
        Inclusive = inclusive;
        Parent = parent;
        BeforeStage = beforeStage;
        InsideStage = insideStage;
    }

    /// <summary>The int index of a for loop; null for a while loop.</summary>
    public string? Index { get; }

    public Node? Start { get; }

    public Node? End { get; }

    /// <summary>The condition of a while loop, evaluated at the top of every iteration (stage <see cref="InsideStage"/>).</summary>
    public Node? Condition { get; set; }

    public bool Inclusive { get; }

    public LoopSegment? Parent { get; }

    /// <summary>The loops nested directly in this one, in order.</summary>
    public List<LoopSegment> Children { get; } = new();

    /// <summary>The stage where the loop's header and the carried locals' initial values are computed.</summary>
    public int BeforeStage { get; }

    /// <summary>The stage at the top of the body.</summary>
    public int InsideStage { get; }

    /// <summary>The stage at the end of the body (after its last nested loop), where the carried locals are updated.</summary>
    public int BodyEndStage { get; set; }

    /// <summary>The stage right after the loop.</summary>
    public int AfterStage { get; set; }

    public List<LoopState> States { get; } = new();
}

/// <summary>An output of a method that writes its values into a span: <c>outputs[Index] = Value;</c> at a stage.</summary>
internal sealed class OutputWrite
{
    public OutputWrite(Node index, Node value, int stage, int ordinal)
    {
        Index = index;
        Value = value;
        Stage = stage;
        Ordinal = ordinal;
    }

    public Node Index { get; }

    public Node Value { get; }

    /// <summary>Where the write happens (the stage of the statement, not of its nodes: a loop-invariant value written in a
    /// loop is computed once ahead of it, but written in every iteration).</summary>
    public int Stage { get; }

    /// <summary>Its number in source order.</summary>
    public int Ordinal { get; }

    /// <summary>∂Value/∂vₖ for the scalar variables, one Jacobian row (set by the Differentiate stage).</summary>
    public Node[] Row { get; set; } = Array.Empty<Node>();

    /// <summary>The row's part for the vectors of variables, as contributions (set by the Differentiate stage).</summary>
    public List<VectorTerm> VectorRow { get; } = new();
}

/// <summary>
/// Turns the IR body into the DAG of its value, exactly as written (raw nodes only), with the user's local names on
/// the nodes they name. Straight-line code becomes one expression once locals are substituted; an if/else becomes a
/// selection of the two branches' values; a loop becomes a <see cref="LoopSegment"/> whose carried locals are leaves
/// inside the loop and after it. Loops are one after another (stages 1, 2, 3, …), not nested.
/// </summary>
internal sealed class ProgramGraph
{
    private readonly ExpressionBuilder _builder;
    private readonly IReadOnlyDictionary<string, int> _variableIndex;
    private readonly IReadOnlyDictionary<string, int> _vectorIndex;
    private readonly HashSet<string> _displayNames = new(StringComparer.Ordinal);
    private readonly HashSet<string> _named = new(StringComparer.Ordinal);
    private readonly HashSet<string> _givenNames = new(StringComparer.Ordinal);
    private readonly List<LoopSegment> _loops = new();
    private readonly List<LoopSegment> _topLevel = new();
    private readonly List<OutputWrite> _outputs = new();
    private readonly Dictionary<Node, SlotOffset> _slotOffsets = new();
    private int _branchDepth;
    private HashSet<string>? _currentStates;
    private LoopSegment? _currentLoop;
    private int _stage;
    private int _stageCount;
    private readonly ISet<string>? _passive;

    private ProgramGraph(ExpressionBuilder builder, IReadOnlyDictionary<string, int> variableIndex, IReadOnlyDictionary<string, int> vectorIndex,
        ISet<string>? passive)
    {
        _builder = builder;
        _variableIndex = variableIndex;
        _vectorIndex = vectorIndex;
        _passive = passive;
    }

    /// <summary>Every loop of the method, outer loops before the loops nested in them, in emission order.</summary>
    public IReadOnlyList<LoopSegment> Loops => _loops;

    /// <summary>The loops that are not nested in another, in order.</summary>
    public IReadOnlyList<LoopSegment> TopLevelLoops => _topLevel;

    /// <summary>The stage at the end of the method, where the value and the derivatives are written.</summary>
    public int FinalStage => _stage;

    public Node Value { get; private set; } = null!;

    /// <summary>The writes of a method with outputs, in source order (empty for a method that returns its value).</summary>
    public IReadOnlyList<OutputWrite> Outputs => _outputs;

    /// <summary>The int leaves standing for slot offsets (the pair method's shifts, <see cref="IrSlotOffset"/>), with
    /// their offsets: Emit prints them.</summary>
    public IReadOnlyDictionary<Node, SlotOffset> SlotOffsets => _slotOffsets;

    /// <summary>The int leaf standing for a slot offset (see <see cref="SlotOffset.LeafKey"/>), recorded in <see cref="SlotOffsets"/>.</summary>
    public Node SlotLeaf(SlotOffset offset)
    {
        Node leaf = _builder.External(offset.LeafKey, ScalarType.Int32);
        _slotOffsets[leaf] = offset;
        return leaf;
    }

    /// <summary>
    /// Builds the graph. <paramref name="passive"/> names loop-carried locals (by <see cref="StateKey"/>) known not to
    /// depend on the variables (see <see cref="PassiveStates"/>): their leaves are built inactive, so they get no
    /// running derivatives at all.
    /// </summary>
    public static ProgramGraph Build(ExpressionBuilder builder, MethodSpec spec, IReadOnlyDictionary<string, int> variableIndex,
        IReadOnlyDictionary<string, int> vectorIndex, ISet<string>? passive = null)
    {
        var graph = new ProgramGraph(builder, variableIndex, vectorIndex, passive);
        CollectLocalNames(spec.Body, graph._displayNames);
        var locals = new Dictionary<string, Node>(StringComparer.Ordinal);
        graph.Run(spec.Body, locals);
        if (graph.Value is null && spec.HasOutputs)
        {
            graph.Value = builder.Zero(spec.ReturnType); // a method with outputs returns nothing; its outputs are the roots
        }

        if (graph.Value is null)
        {
            throw new InvalidOperationException("The lowered body has no return statement.");
        }

        return graph;
    }

    /// <summary>Identifies a loop-carried local across two builds of one method: the loop's number and the local's name.</summary>
    public static string StateKey(int loopOrdinal, string name) => loopOrdinal.ToString(System.Globalization.CultureInfo.InvariantCulture) + ":" + name;

    /// <summary>
    /// The floating-point loop-carried locals whose value does not depend on the variables (e.g. <c>power *= t[i]</c>),
    /// by <see cref="StateKey"/>. A graph is built with every such local active, because its update is only known after
    /// the loop body; this finds the least fixed point: a local is active when its initial value or its update reads a
    /// variable or an active local (coupled recurrences included), starting from none.
    /// </summary>
    public static HashSet<string> PassiveStates(ProgramGraph graph)
    {
        var stateOfLeaf = new Dictionary<Node, LoopState>();
        var keys = new Dictionary<LoopState, string>();
        for (int l = 0; l < graph._loops.Count; l++)
        {
            foreach (LoopState state in graph._loops[l].States.Where(s => s.IsActive))
            {
                stateOfLeaf[state.Current] = state;
                stateOfLeaf[state.Final] = state;
                keys[state] = StateKey(l, state.Name);
            }
        }

        // Children have smaller ids than their parents: one pass in id order evaluates every node after its arguments.
        Node[] nodes = Graph.Reachable(keys.Keys.SelectMany(s => new[] { s.Initial, s.Next })).OrderBy(n => n.Id).ToArray();
        var active = new HashSet<LoopState>();
        bool grew = true;
        while (grew)
        {
            grew = false;
            var depends = new HashSet<Node>();
            foreach (Node node in nodes)
            {
                bool d;
                if (node.Type is ScalarType.Int32 or ScalarType.Boolean)
                {
                    d = false;                                   // flat, as in Node.DependsOnVariables
                }
                else if (stateOfLeaf.TryGetValue(node, out LoopState? of))
                {
                    d = active.Contains(of);
                }
                else
                {
                    d = node.VariableIndex >= 0 || node.Kind == NodeKind.VariableElement || (node.IsLeaf && node.DependsOnVariables)
                        || node.Arguments.Any(depends.Contains);
                }

                if (d)
                {
                    depends.Add(node);
                }
            }

            foreach (LoopState state in keys.Keys.Where(s => !active.Contains(s) && (depends.Contains(s.Initial) || depends.Contains(s.Next))).ToList())
            {
                grew |= active.Add(state);
            }
        }

        return new HashSet<string>(keys.Where(p => !active.Contains(p.Key)).Select(p => p.Value), StringComparer.Ordinal);
    }

    /// <summary>True when every local named in <paramref name="passive"/> was built inactive and stays so: its initial value
    /// and its update depend on no variable (checked with the nodes' own activity, so the analysis above is only a guess).</summary>
    public bool ArePassive(ISet<string> passive)
    {
        for (int l = 0; l < _loops.Count; l++)
        {
            foreach (LoopState state in _loops[l].States.Where(s => passive.Contains(StateKey(l, s.Name))))
            {
                if (state.IsActive || state.Initial.DependsOnVariables || state.Next.DependsOnVariables)
                {
                    return false;
                }
            }
        }

        return true;
    }

    private void Run(EquatableArray<IrStatement> statements, Dictionary<string, Node> locals)
    {
        foreach (IrStatement statement in statements)
        {
            switch (statement)
            {
                case IrAssign assign:
                    Node value = Build(assign.Value, locals);
                    bool isStateUpdate = _currentStates?.Contains(assign.Local) == true;
                    if (!value.IsLeaf && _builder.Names.LocalName(value) is null && !isStateUpdate)
                    {
                        // A reassigned local gets a versioned name (s, s2, s3, …), the same in code and formulas.
                        _builder.Names.SetLocalName(value, _named.Add(assign.Local) && _givenNames.Add(assign.Local) ? assign.Local : Identifiers.Unique(assign.Local, _displayNames));
                    }
                    else
                    {
                        _named.Add(assign.Local);
                    }

                    locals[assign.Local] = value;
                    break;

                case IrIf branch:
                {
                    Node condition = Build(branch.Condition, locals);
                    var whenTrue = new Dictionary<string, Node>(locals, StringComparer.Ordinal);
                    var whenFalse = new Dictionary<string, Node>(locals, StringComparer.Ordinal);
                    Node? returnedBefore = Value;
                    Value = null!;
                    _branchDepth++;
                    Run(branch.Then, whenTrue);
                    Node? returnedThen = Value;
                    Value = null!;
                    Run(branch.Else, whenFalse);
                    _branchDepth--;
                    Node? returnedElse = Value;

                    // Both sides of an if that returns from the method return (Lowering puts the rest of the method on
                    // the other side), so the method's value is the selection of the two.
                    Value = returnedThen is not null && returnedElse is not null
                        ? _builder.Raw(NodeKind.Select, returnedThen.Type, condition, returnedThen, returnedElse)
                        : returnedBefore!;
                    // Locals that exist after the if: assigned before it, or (declared before it without a value) in both branches.
                    foreach (string name in whenTrue.Keys.Where(whenFalse.ContainsKey).ToList())
                    {
                        Node a = whenTrue[name], b = whenFalse[name];
                        locals[name] = a == b ? a : Merge(condition, a, b);
                    }

                    // A local first assigned on one side only is read afterwards only where that side ran (C#'s
                    // definite assignment, or a guard Lowering put on the reads): the other side's value is never
                    // seen, and zero stands for it, so the value stays under its condition.
                    foreach (KeyValuePair<string, Node> pair in whenTrue.Concat(whenFalse)
                        .Where(p => !locals.ContainsKey(p.Key) && !(whenTrue.ContainsKey(p.Key) && whenFalse.ContainsKey(p.Key))).ToList())
                    {
                        Node zero = _builder.Constant(0, pair.Value.Type);
                        locals[pair.Key] = whenTrue.ContainsKey(pair.Key)
                            ? _builder.Raw(NodeKind.Select, pair.Value.Type, condition, pair.Value, zero)
                            : _builder.Raw(NodeKind.Select, pair.Value.Type, condition, zero, pair.Value);
                    }

                    break;
                }

                case IrFor loop:
                    RunLoop(loop.Index, loop.Start, loop.End, loop.Inclusive, null, loop.Body, locals);
                    break;

                case IrWhile loop:
                    Run(loop.Setup, locals);
                    RunLoop(null, null, null, false, loop.Condition, loop.Body, locals);
                    break;

                case IrReturn ret:
                    Value = Build(ret.Value, locals);
                    break;

                case IrOutput output when _branchDepth == 0:
                    _outputs.Add(new OutputWrite(Build(output.Index, locals), Build(output.Value, locals), _stage, output.Ordinal));
                    break;

                case IrOutput:
                    throw new InvalidOperationException("An output is written under a condition (Lowering refuses that).");
            }
        }
    }

    /// <summary>The value of a local after an if: <c>c ? a : b</c>, and for a flag set on one side, <c>c || b</c> and the like.</summary>
    private Node Merge(Node condition, Node a, Node b)
    {
        if (a.Type == ScalarType.Boolean)
        {
            if (a.Kind == NodeKind.Constant)
            {
                // c ? true : b = c || b;  c ? false : b = !c && b.
                return a.Value != 0 ? Logic(NodeKind.Or, condition, b) : Logic(NodeKind.And, Logic(NodeKind.Not, condition, null), b);
            }

            if (b.Kind == NodeKind.Constant)
            {
                // c ? a : false = c && a;  c ? a : true = !c || a.
                return b.Value == 0 ? Logic(NodeKind.And, condition, a) : Logic(NodeKind.Or, Logic(NodeKind.Not, condition, null), a);
            }
        }

        return _builder.Raw(NodeKind.Select, a.Type, condition, a, b);
    }

    /// <summary>
    /// <c>!a</c>, <c>a &amp;&amp; b</c>, <c>a || b</c> with constant operands folded (the flags of jumps start as constants).
    /// Folding only ever drops an operand the user's code would not need, so nothing is evaluated that was not.
    /// </summary>
    private Node Logic(NodeKind kind, Node a, Node? b)
    {
        static bool IsConstant(Node node, bool value) => node.Kind == NodeKind.Constant && (node.Value != 0) == value;
        switch (kind)
        {
            case NodeKind.Not when a.Kind == NodeKind.Constant:
                return _builder.Constant(a.Value != 0 ? 0 : 1, ScalarType.Boolean);
            case NodeKind.Not when a.Kind == NodeKind.Not:
                return a.Arguments[0];
            case NodeKind.Not:
                return _builder.Raw(NodeKind.Not, ScalarType.Boolean, a);
            case NodeKind.And when IsConstant(a, false) || IsConstant(b!, true):
                return a;
            case NodeKind.And when IsConstant(a, true):
                return b!;
            case NodeKind.Or when IsConstant(a, true) || IsConstant(b!, false):
                return a;
            case NodeKind.Or when IsConstant(a, false):
                return b!;
            default:
                return _builder.Raw(kind, ScalarType.Boolean, a, b!);
        }
    }

    private void RunLoop(string? index, IrExpression? start, IrExpression? end, bool inclusive, IrExpression? condition,
        EquatableArray<IrStatement> loopBody, Dictionary<string, Node> locals)
    {
        var segment = new LoopSegment(index, start is null ? null : Build(start, locals), end is null ? null : Build(end, locals), inclusive,
            _currentLoop, _stage, ++_stageCount);
        int ordinal = _loops.Count;
        _loops.Add(segment);
        (_currentLoop?.Children ?? _topLevel).Add(segment);
        int inside = segment.InsideStage;

        // The loop-carried locals: those that exist before the loop and are assigned in it.
        var assigned = new HashSet<string>(StringComparer.Ordinal);
        CollectAssigned(loopBody, assigned);
        var body = new Dictionary<string, Node>(locals, StringComparer.Ordinal);
        if (index is not null)
        {
            body[index] = _builder.StageLeaf(index, ScalarType.Int32, inside, isActive: false);
        }

        foreach (string name in assigned.Where(locals.ContainsKey).OrderBy(n => n, StringComparer.Ordinal))
        {
            Node initial = locals[name];
            bool active = (initial.Type is ScalarType.Double or ScalarType.Single or ScalarType.Generic) && _passive?.Contains(StateKey(ordinal, name)) != true;
            var state = new LoopState(name, initial.Type, initial, _builder.StageLeaf(name, initial.Type, inside, active));
            if (_builder.Names.LocalName(initial) == name)
            {
                _builder.Names.SetLocalName(initial, null); // The name now belongs to the loop-carried local itself.
            }

            segment.States.Add(state);
            body[name] = state.Current;
        }

        HashSet<string>? outer = _currentStates;
        LoopSegment? outerLoop = _currentLoop;
        _currentStates = new HashSet<string>(segment.States.Select(s => s.Name), StringComparer.Ordinal);
        _currentLoop = segment;
        _stage = inside;
        if (condition is not null)
        {
            segment.Condition = Build(condition, body);
        }

        Run(loopBody, body);
        _currentStates = outer;
        _currentLoop = outerLoop;
        segment.BodyEndStage = _stage;
        segment.AfterStage = _stage = ++_stageCount;

        foreach (LoopState state in segment.States)
        {
            state.Final = _builder.StageLeaf(state.Name, state.Type, segment.AfterStage, state.IsActive);
            state.Next = body[state.Name];
            if (state.Next != state.Current && !state.Next.IsLeaf && _builder.Names.Hint(state.Next) is null && _builder.Names.LocalName(state.Next) is null)
            {
                _builder.Names.SetHint(state.Next, state.Name + "Next");
            }

            locals[state.Name] = state.Final;
        }
    }

    private Node Build(IrExpression expression, Dictionary<string, Node> locals)
    {
        System.Runtime.CompilerServices.RuntimeHelpers.EnsureSufficientExecutionStack(); // a deep input fails as a diagnostic, never as a stack overflow
        ExpressionBuilder b = _builder;
        switch (expression)
        {
            case IrConstant constant:
                return b.Constant(constant.Type is ScalarType.Int32 or ScalarType.Boolean ? constant.Bits : BitConverter.Int64BitsToDouble(constant.Bits), constant.Type);
            case IrParameter parameter:
                return b.Parameter(parameter.Name, parameter.Type, _variableIndex.TryGetValue(parameter.Name, out int index) ? index : -1);
            case IrLocal local:
                return locals[local.Name];
            case IrExternal external:
                return b.External(external.Text, external.Type);
            case IrSlotOffset slot:
                return SlotLeaf(new SlotOffset(slot.Constant, slot.VectorsBefore.ToArray()));

            case IrNegate negate:
            {
                Node operand = Build(negate.Operand, locals);
                if (negate.Type == ScalarType.Int32 && IsConstantExpression(operand))
                {
                    operand = KeepLocal(negate.Operand, operand);
                }

                return b.Raw(NodeKind.Negate, negate.Type, operand);
            }

            case IrConvert convert:
            {
                Node operand = Build(convert.Operand, locals);
                if (convert.Type == ScalarType.Int32 && IsConstantExpression(operand))
                {
                    operand = KeepLocal(convert.Operand, operand);
                }

                return b.Raw(NodeKind.Convert, convert.Type, operand);
            }

            case IrBinary binary:
            {
                NodeKind kind = binary.Operator switch
                {
                    BinaryOperator.Add => NodeKind.Add,
                    BinaryOperator.Subtract => NodeKind.Subtract,
                    BinaryOperator.Multiply => NodeKind.Multiply,
                    _ => NodeKind.Divide,
                };
                Node left = Build(binary.Left, locals), right = Build(binary.Right, locals);
                if (binary.Type == ScalarType.Int32 && IsConstantExpression(right) && (kind == NodeKind.Divide || IsConstantExpression(left)))
                {
                    left = KeepLocal(binary.Left, left);
                    right = KeepLocal(binary.Right, right);
                }

                return b.Raw(kind, binary.Type, left, right);
            }

            case IrCall call:
                return b.RawCall(call.Function, call.Host, call.Type, call.Arguments.Select(a => Build(a, locals)).ToArray());
            case IrUserCall call:
                return b.UserCall(new CalleeInfo(call.Receiver, call.Method, call.VariablePositions.ToArray(), call.VariableNames.ToArray(), call.HasHessian),
                    call.Type, call.Arguments.Select(a => Build(a, locals)).ToArray());
            case IrElement element when _vectorIndex.TryGetValue(element.Data, out int vector):
                return b.VariableElement(element.Data, vector, element.Type, Build(element.Indices[0], locals));
            case IrElement element:
                return b.Element(element.Data, element.Type, element.Indices.Select(i => Build(i, locals)).ToArray());
            case IrCompare compare:
                return b.RawCompare(compare.Operator, Build(compare.Left, locals), Build(compare.Right, locals));
            case IrLogical { Operator: LogicalOperator.Not } not:
                return Logic(NodeKind.Not, Build(not.Left, locals), null);
            case IrLogical logical:
                return Logic(logical.Operator == LogicalOperator.And ? NodeKind.And : NodeKind.Or, Build(logical.Left, locals), Build(logical.Right!, locals));
            case IrConditional conditional:
                return b.Raw(NodeKind.Select, conditional.Type, Build(conditional.Condition, locals),
                    Build(conditional.WhenTrue, locals), Build(conditional.WhenFalse, locals));
            default:
                throw new InvalidOperationException("Unknown IR expression " + expression.GetType().Name);
        }
    }

    /// <summary>
    /// Whether the node, written out, is a C# constant expression: constants combined by operators only. The user's
    /// own constant expressions arrive as single constants (Lowering takes Roslyn's value), so a compound one exists only
    /// where a local holding a constant was substituted.
    /// </summary>
    private static bool IsConstantExpression(Node node)
    {
        switch (node.Kind)
        {
            case NodeKind.Constant:
                return true;
            case NodeKind.Convert when node.Arguments[0].Type == node.Type:
                return false; // a local kept by KeepLocal: written as its name
            case NodeKind.Negate or NodeKind.Add or NodeKind.Subtract or NodeKind.Multiply or NodeKind.Divide or NodeKind.Convert
                or NodeKind.Compare or NodeKind.Select or NodeKind.And or NodeKind.Or or NodeKind.Not:
                return node.Arguments.All(IsConstantExpression);
            default:
                return false;
        }
    }

    /// <summary>
    /// The operand of an int operation that C# would evaluate at compile time once the user's locals are substituted:
    /// where the operand is a local holding a constant, the local is kept (<c>int n = 0;</c> … <c>10 / n</c>), so that
    /// the generated code compiles as the user's does (<c>10 / 0</c> is CS0020, <c>2147483647 + 1</c> CS0220) and fails
    /// or wraps at run time exactly where the user's code does. The kept local is an identity conversion carrying the
    /// user's name, which the emitter gives a local and writes as the constant.
    /// </summary>
    private Node KeepLocal(IrExpression operand, Node value)
    {
        if (operand is not IrLocal local || !IsConstantExpression(value))
        {
            return value;
        }

        Node kept = _builder.Raw(NodeKind.Convert, value.Type, value);
        if (_builder.Names.LocalName(kept) is null)
        {
            _builder.Names.SetLocalName(kept, _givenNames.Add(local.Name) ? local.Name : Identifiers.Unique(local.Name, _displayNames));
        }

        return kept;
    }

    private static void CollectAssigned(EquatableArray<IrStatement> statements, HashSet<string> names)
    {
        foreach (IrStatement statement in statements)
        {
            switch (statement)
            {
                case IrAssign assign:
                    names.Add(assign.Local);
                    break;
                case IrIf branch:
                    CollectAssigned(branch.Then, names);
                    CollectAssigned(branch.Else, names);
                    break;
                case IrFor loop:
                    CollectAssigned(loop.Body, names);
                    break;
                case IrWhile loop:
                    CollectAssigned(loop.Setup, names);
                    CollectAssigned(loop.Body, names);
                    break;
            }
        }
    }

    /// <summary>Every local the body names: those it assigns and the loop indices, at any depth.</summary>
    internal static void CollectLocalNames(EquatableArray<IrStatement> statements, HashSet<string> names)
    {
        CollectAssigned(statements, names);
        foreach (IrStatement statement in statements)
        {
            switch (statement)
            {
                case IrIf branch:
                    CollectLocalNames(branch.Then, names);
                    CollectLocalNames(branch.Else, names);
                    break;
                case IrFor loop:
                    names.Add(loop.Index);
                    CollectLocalNames(loop.Body, names);
                    break;
                case IrWhile loop:
                    CollectLocalNames(loop.Body, names);
                    break;
            }
        }
    }
}
