using System;
using System.Collections.Generic;
using System.Linq;
using DerivGen.Generator.Model;
using DerivGen.Generator.Symbolic;

namespace DerivGen.Generator.Differentiation;

/// <summary>
/// The running derivatives of one loop-carried local: locals of the generated code holding ∂s/∂vₖ (and ∂²s/∂vₖ∂vⱼ),
/// initialised before the loop and updated at the end of every iteration from the local's update by the chain rule.
/// This is forward mode through the loop (each carried value carries its gradient), with each iteration's local
/// derivatives taken by a reverse sweep of its body — so sums, products and recurrences are all handled the same way.
/// </summary>
internal sealed class StateDerivatives
{
    public StateDerivatives(LoopState state, string[] gradientNames, Node[] current, Node[] final)
    {
        State = state;
        GradientNames = gradientNames;
        CurrentGradient = current;
        FinalGradient = final;
    }

    public LoopState State { get; }

    /// <summary>Ids of the locals holding ∂s/∂vₖ (<see cref="DerivativeLocals"/>).</summary>
    public string[] GradientNames { get; }

    /// <summary>Leaves reading those locals inside the loop, and after it.</summary>
    public Node[] CurrentGradient { get; }

    public Node[] FinalGradient { get; }

    /// <summary>Ids of the span locals holding ∂s/∂w for each vector of variables w (empty without vectors).</summary>
    public string[] VectorNames { get; set; } = Array.Empty<string>();

    /// <summary>The contributions to ∂s/∂w before the loop and at the end of an iteration.</summary>
    public List<VectorTerm> InitialVector { get; } = new();

    public List<VectorTerm> NextVector { get; } = new();

    /// <summary>Values before the loop and at the end of an iteration.</summary>
    public Node[] InitialGradient { get; set; } = Array.Empty<Node>();

    public Node[] NextGradient { get; set; } = Array.Empty<Node>();

    /// <summary>The same for ∂²s/∂vₖ∂vⱼ, j ≤ k (Hessian method only; null otherwise).</summary>
    public string[][]? HessianNames { get; set; }

    public Node[][]? CurrentHessian { get; set; }

    public Node[][]? FinalHessian { get; set; }

    public Node[][]? InitialHessian { get; set; }

    public Node[][]? NextHessian { get; set; }
}

/// <summary>The value, gradient and (lower triangle of the) Hessian of one method, as nodes of one DAG, plus its loops.</summary>
internal sealed class DerivativeProgram
{
    private DerivativeProgram(ExpressionBuilder builder, ProgramGraph graph, Node[] gradient, Node[][]? hessian, string[] variables,
        IReadOnlyDictionary<LoopState, StateDerivatives> states, string[] vectors, List<VectorTerm> vectorGradient, DerivativeLocals locals)
    {
        Locals = locals;
        Vectors = vectors;
        VectorGradient = vectorGradient;
        Builder = builder;
        Value = graph.Value;
        Loops = graph.Loops;
        TopLevelLoops = graph.TopLevelLoops;
        FinalStage = graph.FinalStage;
        Gradient = gradient;
        Hessian = hessian;
        Variables = variables;
        States = states;
        Outputs = graph.Outputs;
        SlotOffsets = graph.SlotOffsets;
    }

    /// <summary>The writes of a method with outputs, each with its Jacobian row; empty otherwise.</summary>
    public IReadOnlyList<OutputWrite> Outputs { get; }

    public ExpressionBuilder Builder { get; }

    /// <summary>The int leaves standing for slot offsets, with their offsets (<see cref="ProgramGraph.SlotOffsets"/>).</summary>
    public IReadOnlyDictionary<Node, SlotOffset> SlotOffsets { get; }

    /// <summary>The user's local names and the name hints of the nodes (a side table: nodes are immutable).</summary>
    public NodeNames Names => Builder.Names;

    public Node Value { get; }

    /// <summary>The method's loops, outer before nested, in order.</summary>
    public IReadOnlyList<LoopSegment> Loops { get; }

    /// <summary>The loops not nested in another.</summary>
    public IReadOnlyList<LoopSegment> TopLevelLoops { get; }

    /// <summary>The stage where the value and derivatives are written.</summary>
    public int FinalStage { get; }

    /// <summary>The running derivatives of every active loop-carried local.</summary>
    public IReadOnlyDictionary<LoopState, StateDerivatives> States { get; }

    /// <summary>∂f/∂vᵢ in variable order.</summary>
    public Node[] Gradient { get; }

    /// <summary>Hessian[i][j] = ∂²f/∂vᵢ∂vⱼ for j ≤ i (the lower triangle); null when not requested.</summary>
    public Node[][]? Hessian { get; }

    /// <summary>The scalar variables' parameter names, in order (the symbolic part of the gradient).</summary>
    public string[] Variables { get; }

    /// <summary>The vectors of variables, in order.</summary>
    public string[] Vectors { get; }

    /// <summary>The contributions to the gradient with respect to the vectors.</summary>
    public List<VectorTerm> VectorGradient { get; }

    /// <summary>The running derivatives' ids and name hints.</summary>
    public DerivativeLocals Locals { get; }

    /// <summary>Names of the locals that hold loop-carried values (their running derivatives are named by Emit).</summary>
    public IEnumerable<string> StateNames => Loops.SelectMany(l => l.States).Select(s => s.Name);

    /// <summary>
    /// A product method's program keeps H·d (<see cref="Product"/>); any other goes through its loops in reverse where the
    /// rule says so (LoopReverse/ReverseLoopPolicy) — a product method keeps the forward running derivatives its
    /// tangents are carried by.
    /// </summary>
    private void Finish(MethodSpec spec, Node[]? productEntries, List<VectorTerm> productVector, (string Direction, string Product) spanNames, System.Threading.CancellationToken cancellationToken)
    {
        if (productEntries is not null)
        {
            Product = productEntries;
            ProductVector.AddRange(productVector);
            DirectionName = spanNames.Direction;
            ProductName = spanNames.Product;
        }
        else
        {
            Reverse = LoopReverse.ReverseGradient.TryCreate(spec, this, cancellationToken);
        }
    }

    /// <summary>The gradient method through the loops in reverse (<see cref="LoopReverse.ReverseGradient"/>), or null where
    /// forward running derivatives are kept (<see cref="LoopReverse.ReverseLoopPolicy"/>).</summary>
    public LoopReverse.ReverseGradient? Reverse { get; private set; }

    /// <summary>
    /// The program of the value alone: the graph exactly as <see cref="Create"/> builds it (carried locals that do not
    /// depend on the variables built inactive), no running derivatives, a zero gradient. The reverse gradient
    /// schedules its value code from it and builds its adjoint code in its builder.
    /// </summary>
    public static DerivativeProgram ValueOnly(MethodSpec spec, System.Threading.CancellationToken cancellationToken)
    {
        var builder = new ExpressionBuilder(cancellationToken);
        string[] variables = spec.Parameters.Where(p => p.IsVariable && !p.IsVector).Select(p => p.Name).ToArray();
        string[] vectors = spec.Parameters.Where(p => p.IsVector).Select(p => p.Name).ToArray();
        var vectorIndex = new Dictionary<string, int>(StringComparer.Ordinal);
        for (int v = 0; v < vectors.Length; v++)
        {
            vectorIndex[vectors[v]] = v;
        }

        var index = new Dictionary<string, int>(StringComparer.Ordinal);
        for (int i = 0; i < variables.Length; i++)
        {
            index[variables[i]] = i;
        }

        ProgramGraph graph = ProgramGraph.Build(builder, spec, index, vectorIndex);
        HashSet<string> passive = ProgramGraph.PassiveStates(graph);
        if (passive.Count > 0)
        {
            var passiveBuilder = new ExpressionBuilder(cancellationToken);
            ProgramGraph passiveGraph = ProgramGraph.Build(passiveBuilder, spec, index, vectorIndex, passive);
            if (passiveGraph.ArePassive(passive))
            {
                builder = passiveBuilder;
                graph = passiveGraph;
            }
        }

        Node[] zero = variables.Select(_ => builder.Zero(spec.ReturnType)).ToArray();
        return new DerivativeProgram(builder, graph, zero, null, variables, new Dictionary<LoopState, StateDerivatives>(), vectors, new List<VectorTerm>(), new DerivativeLocals());
    }

    /// <summary>H·d for the scalar variables (<see cref="HessianVectorProgram"/>); null unless this is the program of a product method.</summary>
    public Node[]? Product { get; private set; }

    /// <summary>The contributions to H·d for the vectors of variables (empty unless this is a product method's program).</summary>
    public List<VectorTerm> ProductVector { get; } = new();

    /// <summary>The names of the direction and product spans of a product method (null otherwise).</summary>
    public string? DirectionName { get; private set; }

    public string? ProductName { get; private set; }

    /// <summary>The vector terms written into the results: the gradient's, and the product's for a product method.</summary>
    public IEnumerable<VectorTerm> ResultTerms => VectorGradient.Concat(ProductVector);

    /// <summary>The Differentiate stage: IR → value DAG → gradient by reverse sweeps → Hessian by tangent sweeps.</summary>
    public static DerivativeProgram Create(MethodSpec spec, System.Threading.CancellationToken cancellationToken) => Create(spec, hessianVector: false, cancellationToken);

    /// <summary>The program of the Hessian–vector product method (<see cref="HessianVectorProgram"/>): value, gradient and
    /// H·d with the direction d as data, no Hessian.</summary>
    public static DerivativeProgram CreateHessianVector(MethodSpec spec, System.Threading.CancellationToken cancellationToken) => Create(spec, hessianVector: true, cancellationToken);

    private static DerivativeProgram Create(MethodSpec spec, bool hessianVector, System.Threading.CancellationToken cancellationToken)
    {
        var builder = new ExpressionBuilder(cancellationToken);
        string[] variables = spec.Parameters.Where(p => p.IsVariable && !p.IsVector).SelectMany(p => p.ScalarVariables).ToArray();
        string[] vectors = spec.Parameters.Where(p => p.IsVector).Select(p => p.Name).ToArray();
        var vectorIndex = new Dictionary<string, int>(StringComparer.Ordinal);
        for (int v = 0; v < vectors.Length; v++)
        {
            vectorIndex[vectors[v]] = v;
        }

        int n = variables.Length;
        var index = new Dictionary<string, int>(StringComparer.Ordinal);
        for (int i = 0; i < n; i++)
        {
            index[variables[i]] = i;
        }

        ProgramGraph graph = ProgramGraph.Build(builder, spec, index, vectorIndex);

        // Loop-carried locals that do not depend on the variables (a power of the data, a counter kept in a double) get no
        // running derivatives: the graph is built again with them inactive, in a fresh builder, and kept only if the
        // nodes' own activity confirms it.
        HashSet<string> passive = ProgramGraph.PassiveStates(graph);
        if (passive.Count > 0)
        {
            var passiveBuilder = new ExpressionBuilder(cancellationToken);
            ProgramGraph passiveGraph = ProgramGraph.Build(passiveBuilder, spec, index, vectorIndex, passive);
            if (passiveGraph.ArePassive(passive))
            {
                builder = passiveBuilder;
                graph = passiveGraph;
            }
        }

        // The running derivatives by symbolic id, with their name hints (Emit's NameScope allocates the names).
        var locals = new DerivativeLocals();
        (string Direction, string Product) spanNames = hessianVector ? HessianVectorProgram.SpanNames(spec) : default;
        HessianVectorProgram? product = hessianVector ? HessianVectorProgram.Augment(builder, graph, spec, locals, spanNames.Direction) : null;
        bool withHessian = spec.EmitHessian && !hessianVector;
        string Hint(string name) => Capital(DerivativeLocals.IsId(name) ? locals.Hint(name) : name);
        var states = new Dictionary<LoopState, StateDerivatives>();
        var leafGradient = new Dictionary<Node, Node[]>();
        var leafHessian = new Dictionary<Node, Node[][]>();
        var gradientLeafOf = new Dictionary<Node, (Node Leaf, int K)>();
        var gradientNamesOf = new Dictionary<string, string[]>(StringComparer.Ordinal);
        var hessianNamesOf = new Dictionary<string, string[][]>(StringComparer.Ordinal);
        var vectorNamesOf = new Dictionary<string, string[]>(StringComparer.Ordinal);
        var leafVector = new Dictionary<Node, string[]>();
        foreach (LoopSegment loop in graph.Loops)
        {
            foreach (LoopState state in loop.States.Where(s => s.IsActive))
            {
                // A local carried through several loops keeps the same running-derivative locals in all of them.
                if (!gradientNamesOf.TryGetValue(state.Name, out string[]? names))
                {
                    names = variables.Select(v => locals.New("d" + Hint(state.Name) + "_d" + Capital(v))).ToArray();
                    gradientNamesOf[state.Name] = names;
                }

                var derivatives = new StateDerivatives(state, names,
                    names.Select(name => builder.StageLeaf(name, state.Type, loop.InsideStage, isActive: true)).ToArray(),
                    names.Select(name => builder.StageLeaf(name, state.Type, loop.AfterStage, isActive: true)).ToArray());
                if (withHessian)
                {
                    if (!hessianNamesOf.TryGetValue(state.Name, out string[][]? hessianNames))
                    {
                        hessianNames = Enumerable.Range(0, n).Select(k => Enumerable.Range(0, k + 1).Select(j =>
                            locals.New("d2" + Hint(state.Name) + "_d" + Capital(variables[k]) + (j == k ? "2" : "d" + Capital(variables[j])))).ToArray()).ToArray();
                        hessianNamesOf[state.Name] = hessianNames;
                    }

                    derivatives.HessianNames = hessianNames;
                    derivatives.CurrentHessian = derivatives.HessianNames.Select(row => row.Select(name => builder.StageLeaf(name, state.Type, loop.InsideStage, true)).ToArray()).ToArray();
                    derivatives.FinalHessian = derivatives.HessianNames.Select(row => row.Select(name => builder.StageLeaf(name, state.Type, loop.AfterStage, true)).ToArray()).ToArray();
                    Register(state.Current, derivatives.CurrentGradient, derivatives.CurrentHessian);
                    Register(state.Final, derivatives.FinalGradient, derivatives.FinalHessian);
                }
                else
                {
                    leafGradient[state.Current] = derivatives.CurrentGradient;
                    leafGradient[state.Final] = derivatives.FinalGradient;
                }

                if (vectors.Length > 0)
                {
                    if (!vectorNamesOf.TryGetValue(state.Name, out string[]? spans))
                    {
                        spans = vectors.Select(w => locals.New("d" + Hint(state.Name) + "_d" + Capital(w))).ToArray();
                        vectorNamesOf[state.Name] = spans;
                    }

                    derivatives.VectorNames = spans;
                    leafVector[state.Current] = spans;
                    leafVector[state.Final] = spans;
                }

                states[state] = derivatives;
            }
        }

        void Register(Node leaf, Node[] gradientLeaves, Node[][] hessianLeaves)
        {
            leafGradient[leaf] = gradientLeaves;
            leafHessian[leaf] = hessianLeaves;
            for (int k = 0; k < gradientLeaves.Length; k++)
            {
                gradientLeafOf[gradientLeaves[k]] = (leaf, k);
            }
        }

        Node[]? KnownGradient(Node leaf) => leafGradient.TryGetValue(leaf, out Node[]? known) ? known : null;
        string[]? KnownVectorGradient(Node leaf) => leafVector.TryGetValue(leaf, out string[]? spans) ? spans : null;

        // First order: reverse sweeps, with the chain rule through loop-carried values.
        foreach (StateDerivatives d in states.Values)
        {
            d.InitialGradient = Typed(ReverseSweep.Gradient(builder, d.State.Initial, n, KnownGradient, d.InitialVector, KnownVectorGradient), d.State.Type);
            d.NextGradient = Typed(ReverseSweep.Gradient(builder, d.State.Next, n, KnownGradient, d.NextVector, KnownVectorGradient), d.State.Type);
        }

        var vectorGradient = new List<VectorTerm>();
        Node[] gradient = ReverseSweep.Gradient(builder, graph.Value, n, KnownGradient, vectorGradient, KnownVectorGradient);

        // A method with outputs: one reverse sweep per output gives its Jacobian row, through the running derivatives of
        // the loop-carried locals it reads (as for a carried local's own update), and its part for the vectors of variables.
        foreach (OutputWrite output in graph.Outputs)
        {
            cancellationToken.ThrowIfCancellationRequested();
            output.Row = Typed(ReverseSweep.Gradient(builder, output.Value, n, KnownGradient, output.VectorRow, KnownVectorGradient), spec.ReturnType);
        }

        // The product H·d: the gradient of ḟ = ∇f·d, through the same running derivatives (HessianVectorProgram).
        var productVector = new List<VectorTerm>();
        Node[]? productEntries = product is null ? null
            : Typed(ReverseSweep.Gradient(builder, product.ValueTangent, n, KnownGradient, productVector, KnownVectorGradient), spec.ReturnType);

        // Second order: one tangent sweep per variable over every first-order expression (forward over reverse).
        Node[][]? hessian = withHessian ? SecondOrder(builder, spec.ReturnType, n, gradient, states, leafGradient, leafHessian, gradientLeafOf, cancellationToken) : null;

        // Mixed float/double code can give a derivative of the wider type; the spans hold the method's own type.
        var program = new DerivativeProgram(builder, graph, Typed(gradient, spec.ReturnType), hessian, variables, states, vectors, vectorGradient, locals);
        program.Finish(spec, productEntries, productVector, spanNames, cancellationToken);
        return program;

        Node[] Typed(Node[] nodes, ScalarType type) => nodes.Select(g => builder.Convert(g, type)).ToArray();
    }

    /// <summary>
    /// The lower triangle of the Hessian and the running second derivatives: one tangent sweep per variable over every
    /// first-order expression (forward over reverse), through the carried locals' known first and second derivatives.
    /// </summary>
    private static Node[][] SecondOrder(ExpressionBuilder builder, ScalarType returnType, int n, Node[] gradient, Dictionary<LoopState, StateDerivatives> states,
        Dictionary<Node, Node[]> leafGradient, Dictionary<Node, Node[][]> leafHessian, Dictionary<Node, (Node Leaf, int K)> gradientLeafOf,
        System.Threading.CancellationToken cancellationToken)
    {
        var hessian = Enumerable.Range(0, n).Select(i => new Node[i + 1]).ToArray();
        foreach (StateDerivatives d in states.Values)
        {
            d.InitialHessian = Enumerable.Range(0, n).Select(k => new Node[k + 1]).ToArray();
            d.NextHessian = Enumerable.Range(0, n).Select(k => new Node[k + 1]).ToArray();
        }

        var roots = gradient.Concat(states.Values.SelectMany(d => d.InitialGradient.Concat(d.NextGradient))).ToList();
        for (int j = 0; j < n; j++)
        {
            cancellationToken.ThrowIfCancellationRequested();
            int column = j;
            Node? LeafTangent(Node leaf)
            {
                if (leafGradient.TryGetValue(leaf, out Node[]? first))
                {
                    return first[column];                                   // D_j(s) = ∂s/∂v_j
                }

                if (gradientLeafOf.TryGetValue(leaf, out var of))
                {
                    Node[][] second = leafHessian[of.Leaf];                // D_j(∂s/∂v_k) = ∂²s/∂v_k∂v_j
                    return of.K >= column ? second[of.K][column] : second[column][of.K];
                }

                return null;
            }

            Dictionary<Node, Node> tangents = TangentSweep.Derivatives(builder, roots, j, LeafTangent);
            for (int i = j; i < n; i++)
            {
                hessian[i][j] = builder.Convert(tangents[gradient[i]], returnType);   // ∂(∂f/∂vᵢ)/∂vⱼ, j ≤ i
            }

            foreach (StateDerivatives d in states.Values)
            {
                for (int k = j; k < n; k++)
                {
                    d.InitialHessian![k][j] = builder.Convert(tangents[d.InitialGradient[k]], d.State.Type);
                    d.NextHessian![k][j] = builder.Convert(tangents[d.NextGradient[k]], d.State.Type);
                }
            }
        }

        return hessian;
    }

    private static string Capital(string name)
    {
        string bare = Identifiers.Unescape(name).Replace(".", string.Empty); // a struct variable's component, p.X → PX
        return bare.Length == 0 ? bare : char.ToUpperInvariant(bare[0]) + bare.Substring(1);
    }
}
