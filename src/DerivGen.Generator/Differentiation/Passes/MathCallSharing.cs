using System;
using System.Collections.Generic;
using System.Linq;
using DerivGen.Generator.Model;
using DerivGen.Generator.Symbolic;

namespace DerivGen.Generator.Differentiation;

/// <summary>
/// Pass: the sine and the cosine of one argument, both needed (typically one in the value, the other in a derivative),
/// come from one <c>SinCos</c> call, each in its own local — when the compilation has <c>Math.SinCos</c>
/// (<see cref="MethodSpec.HasSinCos"/>). A raw node of the value and a built one of a derivative can be equal but
/// distinct: the later ones read the first one's local. Nodes the user's code evaluates only under a condition that
/// guards a throwing operation are left alone (they are written inline).
/// </summary>
internal sealed class MathCallSharing
{
    private MathCallSharing(Dictionary<Node, Node> partner, Dictionary<Node, Node> sameAs)
    {
        Partner = partner;
        SameAs = sameAs;
    }

    /// <summary>The sine of each pair to its cosine and back: both are computed by one SinCos call.</summary>
    public IReadOnlyDictionary<Node, Node> Partner { get; }

    /// <summary>A later node equal to a paired one, to the node whose local it reads.</summary>
    public IReadOnlyDictionary<Node, Node> SameAs { get; }

    public static MathCallSharing Find(bool hasSinCos, IEnumerable<Node> reachable, Func<Node, bool> guarded)
    {
        var sinCosPartner = new Dictionary<Node, Node>();
        var sameAs = new Dictionary<Node, Node>();
        if (hasSinCos)
        {
            var cosines = reachable.Where(node => IsSinOrCos(node, MathFunction.Cos) && !guarded(node)).GroupBy(node => (node.Arguments[0], node.Type))
                .ToDictionary(group => group.Key, group => group.OrderBy(node => node.Id).ToList());
            foreach (List<Node> sines in reachable.Where(node => IsSinOrCos(node, MathFunction.Sin) && !guarded(node)).GroupBy(node => (node.Arguments[0], node.Type))
                .Select(group => group.OrderBy(node => node.Id).ToList()))
            {
                if (cosines.TryGetValue((sines[0].Arguments[0], sines[0].Type), out List<Node>? cos))
                {
                    sinCosPartner[sines[0]] = cos[0];
                    sinCosPartner[cos[0]] = sines[0];
                    foreach (Node later in sines.Skip(1))
                    {
                        sameAs[later] = sines[0];
                    }

                    foreach (Node later in cos.Skip(1))
                    {
                        sameAs[later] = cos[0];
                    }
                }
            }
        }

        return new MathCallSharing(sinCosPartner, sameAs);
    }

    private static bool IsSinOrCos(Node node, MathFunction function) =>
        node.Kind == NodeKind.Call && node.Function == function && node.Arguments.Length == 1 && node.Type is ScalarType.Double or ScalarType.Single;
}
