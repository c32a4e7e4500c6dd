using System.Collections.Generic;
using DerivGen.Generator.Model;
using DerivGen.Generator.Symbolic;

namespace DerivGen.Generator.Differentiation;

/// <summary>How a node that gets a local is computed.</summary>
internal enum LocalKind
{
    /// <summary><c>type t = definition;</c></summary>
    Compute,

    /// <summary><c>(type s, type c) = Math.SinCos(argument);</c> for a sine and a cosine of one argument (<see cref="MathCallSharing"/>).</summary>
    SinCos,

    /// <summary><c>type t = [condition ? ] MGradient(arguments, buffers)[ : 0];</c>: a call of another generated method whose
    /// derivative buffers are read.</summary>
    CallWithBuffers,
}

/// <summary>One statement computing a node into a local (for <see cref="LocalKind.SinCos"/>, <see cref="Node"/> is the
/// sine and <see cref="Cosine"/> the cosine; for a call, whether its Hessian buffer is filled and the condition under
/// which it is made).</summary>
internal sealed record LocalStatement(LocalKind Kind, Node Node, Node? Cosine = null, bool WithHessian = false, Node? Condition = null);

/// <summary>The statements computing the plan's temporaries, per stage, in id order.</summary>
internal static class LocalStatements
{
    public static Dictionary<int, List<LocalStatement>> Schedule(MethodPlan plan)
    {
        var byStage = new Dictionary<int, List<LocalStatement>>();
        var paired = new HashSet<Node>();
        foreach (Node node in plan.Temporaries)
        {
            if (!byStage.TryGetValue(node.Stage, out List<LocalStatement>? statements))
            {
                byStage[node.Stage] = statements = new List<LocalStatement>();
            }

            if (plan.SinCos.Partner.TryGetValue(node, out Node? partner))
            {
                if (paired.Add(node) && paired.Add(partner))
                {
                    (Node sine, Node cosine) = node.Function == MathFunction.Sin ? (node, partner) : (partner, node);
                    statements.Add(new LocalStatement(LocalKind.SinCos, sine, cosine));
                }

                continue;
            }

            statements.Add(plan.GradientCalls.Contains(node)
                ? new LocalStatement(LocalKind.CallWithBuffers, node, WithHessian: plan.HessianCalls.Contains(node),
                    Condition: plan.CallConditions.TryGetValue(node, out Node? guard) ? guard : null)
                : new LocalStatement(LocalKind.Compute, node));
        }

        return byStage;
    }
}
