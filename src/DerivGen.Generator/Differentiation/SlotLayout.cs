using System;
using System.Collections.Generic;
using System.Globalization;
using System.Linq;
using DerivGen.Generator.Model;

namespace DerivGen.Generator.Differentiation;

/// <summary>
/// An index in the gradient span: <see cref="Constant"/> plus the lengths of the vectors <see cref="VectorsBefore"/>
/// (run-time values, so the offset of anything after a vector is a sum the generated code computes).
/// </summary>
internal sealed record SlotOffset(int Constant, IReadOnlyList<string> VectorsBefore)
{
    private const string LeafMark = "#slot";

    public bool IsZero => Constant == 0 && VectorsBefore.Count == 0;

    /// <summary>The text of the int leaf standing for this offset in a DAG (<see cref="ProgramGraph.SlotOffsets"/>): one
    /// leaf per distinct offset, never shared with a larger expression or given a local, and not C#, so Emit must print
    /// it from the offset.</summary>
    public string LeafKey => LeafMark + " " + Constant.ToString(CultureInfo.InvariantCulture) + " " + string.Join(" ", VectorsBefore);

    public static bool IsLeafKey(string? text) => text is not null && text.StartsWith(LeafMark, StringComparison.Ordinal);
}

/// <summary>
/// Where each variable's derivatives go in the gradient span (and the Hessian's rows): declaration order, a scalar
/// variable taking one slot and a vector v.Length slots. Emit prints these offsets (<c>Text.Offset</c>).
/// </summary>
internal sealed class SlotLayout
{
    private SlotLayout(SlotOffset[] scalar, SlotOffset[] vector, SlotOffset total)
    {
        Scalar = scalar;
        Vector = vector;
        Total = total;
    }

    /// <summary>The slot of each scalar variable, in order.</summary>
    public SlotOffset[] Scalar { get; }

    /// <summary>The slot of each vector's first element, in order.</summary>
    public SlotOffset[] Vector { get; }

    /// <summary>The number of slots.</summary>
    public SlotOffset Total { get; }

    public static SlotLayout Of(MethodSpec spec)
    {
        int constant = 0;
        var vectors = new List<string>();
        SlotOffset Offset() => new(constant, vectors.ToArray());
        var scalar = new List<SlotOffset>();
        var vector = new List<SlotOffset>();
        foreach (ParameterSpec parameter in spec.Parameters.Where(p => p.IsVariable))
        {
            if (parameter.IsVector)
            {
                vector.Add(Offset());
                vectors.Add(parameter.Name);
            }
            else
            {
                foreach (string _ in parameter.ScalarVariables)
                {
                    scalar.Add(Offset()); // a struct variable takes one slot per component
                    constant++;
                }
            }
        }

        return new SlotLayout(scalar.ToArray(), vector.ToArray(), Offset());
    }
}
