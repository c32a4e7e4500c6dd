using System;
using System.Collections.Generic;
using System.Linq;
using DerivGen.Generator.Model;
using DerivGen.Generator.Symbolic;

namespace DerivGen.Generator.Differentiation;

/// <summary>
/// The program of <c>MHessianVectorProduct</c>: the method's value, its gradient ∇f and the product H·d with a run-time
/// direction d, in one pass over the method.
/// <para>
/// How: one tangent sweep (<see cref="TangentSweep"/>) along d gives the directional derivative ḟ = ∇f·d as an
/// expression of the program, with d's entries as data (the seed of variable k is <c>direction[slot of k]</c>, of an
/// element w[j] <c>direction[slot of w + j]</c>). A loop-carried local s gets a carried tangent ṡ, a loop-carried local
/// of its own whose start and update are the tangents of s's (forward mode through the loop). Because d is held
/// constant, ∇ḟ = H·d, so the product is the gradient of ḟ, taken by the same reverse sweep and the same running
/// derivatives as ∇f (<see cref="DerivativeProgram"/>): each carried tangent ṡ gets one running derivative per
/// running derivative of s (∂ṡ/∂x for each scalar variable, a span ∂ṡ/∂w per vector), never n² of them. Cost: the
/// value, its tangent and the gradients of both — a small constant times the gradient, whatever n.
/// </para>
/// <para>
/// Not generated for a method that calls another [Differentiate] method or a helper: the callee's directional
/// second derivatives would need a product method of the callee passed the direction's image, which is not built yet.
/// </para>
/// </summary>
internal sealed class HessianVectorProgram
{
    private HessianVectorProgram(Node valueTangent)
    {
        ValueTangent = valueTangent;
    }

    /// <summary>ḟ = ∇f·d, whose gradient is the product H·d.</summary>
    public Node ValueTangent { get; }

    /// <summary>The name hint of a carried tangent: <c>sDot</c> for s.</summary>
    public const string TangentSuffix = "Dot";

    /// <summary>Whether the product is generated for a method whose (gradient) program this is: a Hessian is generated,
    /// and the method calls no other generated method (see the class summary).</summary>
    public static bool Supports(MethodSpec spec, DerivativeProgram program)
    {
        if (!spec.EmitHessian || spec.HasOutputs)
        {
            return false;
        }

        var roots = new List<Node> { program.Value };
        foreach (LoopSegment loop in program.Loops)
        {
            roots.AddRange(ProgramReads.Header(loop));
            roots.AddRange(loop.States.SelectMany(s => new[] { s.Initial, s.Next }));
        }

        return !Graph.Reachable(roots).Any(node => node.Kind is NodeKind.UserCall or NodeKind.CallPartial or NodeKind.CallSecondPartial);
    }

    /// <summary>
    /// The names of the direction and product spans: as the span parameters of every generated method, clear of the
    /// method's parameters and locals and claimed after the gradient, Hessian and Jacobian spans and the thrower.
    /// </summary>
    public static (string Direction, string Product) SpanNames(MethodSpec spec)
    {
        var taken = new HashSet<string>(spec.Parameters.Select(p => Identifiers.Unescape(p.Name)), StringComparer.Ordinal);
        var locals = new HashSet<string>(StringComparer.Ordinal);
        ProgramGraph.CollectLocalNames(spec.Body, locals);
        taken.UnionWith(locals.Select(Identifiers.Unescape));
        foreach (string earlier in new[] { GeneratedNames.GradientParameter, GeneratedNames.HessianParameter, GeneratedNames.JacobianParameter, "ThrowSpanTooShort" })
        {
            Identifiers.Unique(earlier, taken);
        }

        string direction = Identifiers.Escape(Identifiers.Unique(GeneratedNames.DirectionParameter, taken));
        string product = Identifiers.Escape(Identifiers.Unique(GeneratedNames.ProductParameter, taken));
        return (direction, product);
    }

    /// <summary>
    /// Adds a carried tangent to every loop for each active carried local (same id in every loop carrying the local),
    /// and returns ḟ. Called on the graph before the running derivatives are made, so the carried tangents get theirs.
    /// </summary>
    public static HessianVectorProgram Augment(ExpressionBuilder b, ProgramGraph graph, MethodSpec spec, DerivativeLocals locals, string direction)
    {
        SlotLayout layout = SlotLayout.Of(spec);
        var scalarIndex = new Dictionary<string, int>(StringComparer.Ordinal);
        int scalars = 0;
        foreach (ParameterSpec parameter in spec.Parameters.Where(p => p.IsVariable && !p.IsVector))
        {
            scalarIndex[parameter.Name] = scalars++;
        }

        ScalarType directionType = spec.ReturnType;
        Node DirectionAt(SlotOffset offset, Node? element)
        {
            Node start = offset.VectorsBefore.Count == 0 ? b.Constant(offset.Constant, ScalarType.Int32) : graph.SlotLeaf(offset);
            Node index = element is null ? start : offset.IsZero ? element : b.Add(start, element);
            return b.Element(direction, directionType, index);
        }

        Node? Seed(Node node)
        {
            if (node.VariableIndex >= 0)
            {
                return b.Convert(DirectionAt(layout.Scalar[node.VariableIndex], null), node.Type);
            }

            return node.Kind == NodeKind.VariableElement ? b.Convert(DirectionAt(layout.Vector[(int)node.Value], node.Arguments[0]), node.Type) : null;
        }

        // Carried tangents: one id per carried local (a local carried through several loops keeps it), leaves inside and after each loop.
        var tangentId = new Dictionary<string, string>(StringComparer.Ordinal);
        var leafTangent = new Dictionary<Node, Node>();
        var active = new List<(LoopSegment Loop, LoopState State, string Id)>();
        foreach (LoopSegment loop in graph.Loops)
        {
            foreach (LoopState state in loop.States.Where(s => s.IsActive))
            {
                if (!tangentId.TryGetValue(state.Name, out string? id))
                {
                    tangentId[state.Name] = id = locals.New(Identifiers.Unescape(state.Name) + TangentSuffix);
                }

                leafTangent[state.Current] = b.StageLeaf(id, state.Type, loop.InsideStage, isActive: true);
                leafTangent[state.Final] = b.StageLeaf(id, state.Type, loop.AfterStage, isActive: true);
                active.Add((loop, state, id));
            }
        }

        var roots = new List<Node> { graph.Value };
        roots.AddRange(active.SelectMany(a => new[] { a.State.Initial, a.State.Next }));
        Dictionary<Node, Node> tangents = TangentSweep.Derivatives(b, roots, Seed, leaf => leafTangent.TryGetValue(leaf, out Node? t) ? t : null);
        foreach ((LoopSegment loop, LoopState state, string id) in active)
        {
            var carried = new LoopState(id, state.Type, b.Convert(tangents[state.Initial], state.Type), leafTangent[state.Current])
            {
                Next = b.Convert(tangents[state.Next], state.Type),
                Final = leafTangent[state.Final],
            };
            loop.States.Add(carried);
        }

        return new HessianVectorProgram(b.Convert(tangents[graph.Value], spec.ReturnType));
    }
}
