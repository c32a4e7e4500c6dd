using System;
using System.Collections.Generic;
using System.Globalization;
using System.Linq;
using DerivGen.Generator.Differentiation;
using DerivGen.Generator.Model;
using DerivGen.Generator.Symbolic;

namespace DerivGen.Generator.Emit;

/// <summary>What the writers of one file share: names, and the formulas in plain notation.</summary>
internal sealed class EmitContext
{
    public EmitContext(MethodSpec spec, DerivativeProgram program)
    {
        Spec = spec;
        Program = program;
        BareName = Identifiers.Unescape(spec.Name);
        // The span parameters must not take the name of a parameter or of a local of the body.
        var taken = new HashSet<string>(spec.Parameters.Select(p => p.Name), StringComparer.Ordinal);
        ProgramGraph.CollectLocalNames(spec.Body, taken);
        var names = new TemporaryNames(taken);
        GradientName = names.Claim(GeneratedNames.GradientParameter);
        HessianName = names.Claim(GeneratedNames.HessianParameter);
        JacobianName = names.Claim(GeneratedNames.JacobianParameter);
        ThrowerName = names.Claim("ThrowSpanTooShort");
        (DirectionName, ProductName) = HessianVectorProgram.SpanNames(spec);

        // Where each variable's derivatives go in the gradient span: declaration order, a vector taking v.Length slots.
        SlotLayout layout = SlotLayout.Of(spec);
        ScalarOffset = layout.Scalar.Select(Text.Offset).ToArray();
        VectorOffset = layout.Vector.Select(Text.Offset).ToArray();
        GradientLength = Text.Offset(layout.Total);
        DerivativeNames = NameScope.DerivativeNames(spec, program);
    }

    /// <summary>The names of the program's running derivatives by id (<see cref="DerivativeLocals"/>), shared by the
    /// formula comments and every body written from the program.</summary>
    public IReadOnlyDictionary<string, string> DerivativeNames { get; }

    /// <summary>The name of a key of the program: a running derivative's id is named, a carried local's name is itself.</summary>
    public string Name(string key) => DerivativeLocals.IsId(key) ? DerivativeNames[key] : key;

    /// <summary>The name of a leaf reading a running derivative, or the text of a slot offset's leaf (parenthesized, as
    /// it is read in a sum); null for any other node.</summary>
    public string? LeafName(Node node) =>
        node.Kind == NodeKind.Parameter && node.Stage > 0 && DerivativeLocals.IsId(node.Text) ? DerivativeNames[node.Text!]
        : node.Kind == NodeKind.External && Program.SlotOffsets.TryGetValue(node, out SlotOffset? offset) ? "(" + Text.Offset(offset) + ")"
        : null;

    /// <summary>The static local function that throws for a span that is too short (see <see cref="WriteThrower"/>).</summary>
    public string ThrowerName { get; }

    /// <summary>The index in the gradient span of each scalar variable (C# text; a run-time sum after a vector).</summary>
    public string[] ScalarOffset { get; }

    /// <summary>The index in the gradient span of each vector's first element.</summary>
    public string[] VectorOffset { get; }

    /// <summary>The number of gradient entries (C# text).</summary>
    public string GradientLength { get; }

    public MethodSpec Spec { get; }

    public DerivativeProgram Program { get; }

    public string BareName { get; }

    public string GradientName { get; }

    public string HessianName { get; }

    public string JacobianName { get; }

    /// <summary>The direction and product spans of the Hessian–vector product method (<see cref="HessianVectorProgram.SpanNames"/>).</summary>
    public string DirectionName { get; }

    public string ProductName { get; }

    public string PartialName(int i) => "∂" + BareName + "/∂" + Identifiers.Unescape(Program.Variables[i]);

    public string SecondPartialName(int i, int j) => i == j
        ? "∂²" + BareName + "/∂" + Identifiers.Unescape(Program.Variables[i]) + "²"
        : "∂²" + BareName + "/∂" + Identifiers.Unescape(Program.Variables[i]) + "∂" + Identifiers.Unescape(Program.Variables[j]);

    /// <summary>The method's locals and value, its partial derivatives and (optionally) its Hessian, one per line.</summary>
    /// <summary>The method's locals and value, its partial derivatives and (optionally) its Hessian, one per line.</summary>
    public IEnumerable<string> FormulaLines(bool includeHessian) => new FormulaComments(this).Lines(includeHessian);
}
