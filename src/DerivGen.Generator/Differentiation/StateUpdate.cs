using System.Collections.Generic;
using System.Linq;
using DerivGen.Generator.Model;
using DerivGen.Generator.Symbolic;

namespace DerivGen.Generator.Differentiation;

/// <summary>
/// One assignment of a loop-carried local (or of one of its running derivatives) in the generated code: before the loop
/// (its start value) or at the end of an iteration (its update).
/// </summary>
internal readonly record struct StateUpdate(string Target, ScalarType Type, Node Value, bool IsDerivative = false)
{
    /// <summary>An update that only reads the local it assigns (a local carried on unchanged).</summary>
    public bool IsSameLocal => Value.Kind == NodeKind.Parameter && Value.Text == Target;

    /// <summary>The assignments of a loop's carried locals and running derivatives, before the loop or at the end of an iteration.</summary>
    public static List<StateUpdate> Of(DerivativeProgram program, LoopSegment loop, bool withHessian, bool before)
    {
        var updates = new List<StateUpdate>();
        foreach (LoopState state in loop.States)
        {
            // A carried tangent (HessianVectorProgram; its name is an id) is derivative code: dropped when nothing reads it.
            updates.Add(new StateUpdate(state.Name, state.Type, before ? state.Initial : state.Next, IsDerivative: DerivativeLocals.IsId(state.Name)));
            if (!program.States.TryGetValue(state, out StateDerivatives? d))
            {
                continue;
            }

            Node[] gradient = before ? d.InitialGradient : d.NextGradient;
            for (int k = 0; k < gradient.Length; k++)
            {
                updates.Add(new StateUpdate(d.GradientNames[k], state.Type, gradient[k], IsDerivative: true));
            }

            if (withHessian)
            {
                Node[][] hessian = (before ? d.InitialHessian : d.NextHessian)!;
                for (int k = 0; k < hessian.Length; k++)
                {
                    for (int j = 0; j <= k; j++)
                    {
                        updates.Add(new StateUpdate(d.HessianNames![k][j], state.Type, hessian[k][j], IsDerivative: true));
                    }
                }
            }
        }

        return updates;
    }
}

/// <summary>Helpers over the program's vector terms and generated locals shared by the scheduling step and the passes.</summary>
internal static class ProgramReads
{
    /// <summary>The nodes of vector terms: each coefficient, and the index of a single-element term.</summary>
    public static IEnumerable<Node> TermNodes(IEnumerable<VectorTerm> terms) =>
        terms.SelectMany(t => t.Index is null ? new[] { t.Coefficient } : new[] { t.Coefficient, t.Index });

    /// <summary>The generated locals (loop-carried values and running derivatives) an expression reads.</summary>
    public static IEnumerable<string> LocalsReachable(IEnumerable<Node> roots) =>
        Graph.Reachable(roots).Where(n => n.Kind == NodeKind.Parameter && n.Stage > 0).Select(n => n.Text!);

    /// <summary>The bounds of a counted loop, or the condition of a while loop.</summary>
    public static Node[] Header(LoopSegment loop) => loop.Condition is null ? new[] { loop.Start!, loop.End! } : new[] { loop.Condition };
}
