using System.Collections.Generic;
using System.Linq;
using DerivGen.Generator.Differentiation;
using DerivGen.Generator.Model;
using DerivGen.Generator.Symbolic;

namespace DerivGen.Generator.Emit;

/// <summary>
/// The formulas of one method in plain notation, one per line, for the file header and the XML docs: the user's
/// locals and the value, the loops with their carried locals and running derivatives, the outputs and their Jacobian
/// rows, the partial derivatives and (short) Hessians. Formulas too long to read point to the code instead.
/// </summary>
internal sealed class FormulaComments
{
    /// <summary>Formulas longer than this are not spelled out in comments (the code is the reference).</summary>
    private const int MaxFormulaLength = 200;

    /// <summary>Hessians with more entries in their lower triangle than this are not listed in comments.</summary>
    private const int MaxListedHessianEntries = 10;

    private readonly EmitContext _context;
    private readonly Node _value;
    private readonly HashSet<Node> _shown = new();

    public FormulaComments(EmitContext context)
    {
        _context = context;
        _value = context.Program.Value;
    }

    private DerivativeProgram Program => _context.Program;

    private MethodSpec Spec => _context.Spec;

    private string BareName => _context.BareName;

    /// <summary>The method's locals and value, its partial derivatives and (optionally) its Hessian, one per line.</summary>
    public IEnumerable<string> Lines(bool includeHessian)
    {
        Node value = _value;

        foreach (LoopSegment loop in Program.TopLevelLoops)
        {
            foreach (string line in OutputLines(loop.BeforeStage, string.Empty).Concat(LoopLines(loop, string.Empty, includeHessian)))
            {
                yield return line;
            }
        }

        if (Spec.HasOutputs)
        {
            foreach (string line in OutputLines(Program.FinalStage, string.Empty))
            {
                yield return line;
            }

            yield break;
        }

        for (int stage = 0; stage <= Program.FinalStage; stage++)
        {
            foreach (string line in Locals(new[] { value }, stage, string.Empty))
            {
                yield return line;
            }
        }

        yield return BareName + " = " + Formula(value);
        yield return string.Empty;
        for (int i = 0; i < Program.Gradient.Length; i++)
        {
            yield return _context.PartialName(i) + " = " + Formula(Program.Gradient[i]);
        }

        if (!includeHessian || Program.Hessian is null)
        {
            yield break;
        }

        yield return string.Empty;
        int entries = Program.Variables.Length * (Program.Variables.Length + 1) / 2;
        if (entries > MaxListedHessianEntries)
        {
            yield return "Hessian: " + Text.Count(entries) + " distinct entries (symmetric); see " + GeneratedNames.HessianMethod(BareName) + ".";
            yield break;
        }

        for (int i = 0; i < Program.Hessian.Length; i++)
        {
            for (int j = 0; j <= i; j++)
            {
                yield return _context.SecondPartialName(i, j) + " = " + Formula(Program.Hessian[i][j]);
            }
        }
    }

    private IEnumerable<string> Locals(IEnumerable<Node> roots, int stage, string indent)
    {
        foreach (Node local in Graph.Reachable(roots).Where(n => Program.Names.LocalName(n) is not null && !n.IsLeaf && n.Stage == stage && n != _value).OrderBy(n => n.Id))
        {
            if (_shown.Add(local))
            {
                yield return indent + Identifiers.Unescape(Program.Names.LocalName(local)!) + " = " + Formula(local);
            }
        }
    }

    private IEnumerable<string> LoopLines(LoopSegment loop, string indent, bool includeHessian)
    {
        var roots = loop.States.Select(s => s.Initial).Concat(loop.States.Select(s => s.Next)).ToList();
        foreach (string line in Locals(roots, loop.BeforeStage, indent))
        {
            yield return line;
        }

        foreach (LoopState state in loop.States.Where(s => s.Initial.Kind != NodeKind.Parameter || s.Initial.Text != s.Name))
        {
            yield return indent + Identifiers.Unescape(state.Name) + " = " + Formula(state.Initial);
        }

        bool several = loop.States.Count(s => s.Next != s.Current) > 1;
        string head = loop.Condition is { } condition
            ? "while " + Formula(condition)
            : "for " + loop.Index + " from " + Formula(loop.Start!) + (loop.Inclusive ? " to " : " while below ") + Formula(loop.End!);
        yield return indent + head + (several ? " (each ← uses the values from the start of the iteration):" : ":");
        string inner = indent + "    ";
        foreach (string line in Locals(roots, loop.InsideStage, inner).Concat(OutputLines(loop.InsideStage, inner)))
        {
            yield return line;
        }

        foreach (LoopSegment nested in loop.Children)
        {
            foreach (string line in LoopLines(nested, inner, includeHessian).Concat(Locals(roots, nested.AfterStage, inner)).Concat(OutputLines(nested.AfterStage, inner)))
            {
                yield return line;
            }
        }

        foreach (LoopState state in loop.States.Where(s => s.Next != s.Current && (s.Next.Kind != NodeKind.Parameter || s.Next.Text != s.Name)))
        {
            yield return inner + Identifiers.Unescape(state.Name) + " ← " + Formula(state.Next);
            if (Program.States.TryGetValue(state, out StateDerivatives? d))
            {
                for (int k = 0; k < d.GradientNames.Length; k++)
                {
                    yield return inner + _context.Name(d.GradientNames[k]) + " ← " + Formula(d.NextGradient[k]) + "   (∂" + Identifiers.Unescape(state.Name) + "/∂" + Identifiers.Unescape(Program.Variables[k]) + ")";
                }

                // The running second derivatives too, so that a reviewer can check the Hessian from the header
                // (as long as the list stays short).
                int entries = d.GradientNames.Length * (d.GradientNames.Length + 1) / 2;
                if (includeHessian && d.HessianNames is { } names && d.NextHessian is { } next && entries <= MaxListedHessianEntries)
                {
                    for (int k = 0; k < names.Length; k++)
                    {
                        for (int j = 0; j < names[k].Length; j++)
                        {
                            string of = k == j
                                ? "∂²" + Identifiers.Unescape(state.Name) + "/∂" + Identifiers.Unescape(Program.Variables[k]) + "²"
                                : "∂²" + Identifiers.Unescape(state.Name) + "/∂" + Identifiers.Unescape(Program.Variables[k]) + "∂" + Identifiers.Unescape(Program.Variables[j]);
                            yield return inner + _context.Name(names[k][j]) + " ← " + Formula(next[k][j]) + "   (" + of + ")";
                        }
                    }
                }
            }
        }
    }

    // The outputs written at a stage (a method with outputs), with the locals they read and their Jacobian rows.
    private IEnumerable<string> OutputLines(int stage, string indent)
    {
        string outputs = Identifiers.Unescape(Spec.OutputName ?? string.Empty);
        foreach (OutputWrite output in Program.Outputs.Where(o => o.Stage == stage))
        {
            for (int s = 0; s <= stage; s++)
            {
                foreach (string line in Locals(new[] { output.Index, output.Value }, s, indent))
                {
                    yield return line;
                }
            }

            string element = outputs + "[" + Formula(output.Index) + "]";
            yield return indent + element + " = " + Formula(output.Value);
            for (int k = 0; k < output.Row.Length; k++)
            {
                yield return indent + "∂" + element + "/∂" + Identifiers.Unescape(Program.Variables[k]) + " = " + Formula(output.Row[k]);
            }

            foreach (VectorTerm term in output.VectorRow)
            {
                string vector = Identifiers.Unescape(Program.Vectors[term.Vector]);
                yield return indent + (term.Index is { } at
                    ? "∂" + element + "/∂" + vector + "[" + Formula(at) + "] += " + Formula(term.Coefficient)
                    : "∂" + element + "/∂" + vector + " += " + Formula(term.Coefficient) + "·" + _context.Name(term.SourceSpan!));
            }
        }
    }

    private string Formula(Node node)
    {
        var writer = new ExpressionWriter(x => _context.LeafName(x) ?? (x != node && Program.Names.LocalName(x) is { } local ? Identifiers.Unescape(local) : null), formula: true, MaxFormulaLength);
        return writer.TryWrite(node) ?? "(too long to show here; see the code)";
    }
}
