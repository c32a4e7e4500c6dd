using System;
using System.Collections.Generic;
using System.Linq;
using DerivGen.Generator.Differentiation;
using DerivGen.Generator.Model;
using DerivGen.Generator.Symbolic;

namespace DerivGen.Generator.Emit;

/// <summary>Loops, carried locals and outputs.</summary>
internal sealed partial class MethodBodyWriter
{
    /// <summary>
    /// The outputs written at a stage, in source order, each followed by its Jacobian row:
    /// outputs[i] = value; jacobian[n·i + k] = ∂value/∂vₖ.
    /// </summary>
    private void WriteOutputs(int stage)
    {
        int n = _program.Variables.Length;
        string outputs = _context.Spec.OutputName ?? string.Empty;
        foreach (OutputWrite output in _program.Outputs.Where(o => o.Stage == stage))
        {
            string index = _code.Write(output.Index);
            _writer.Line(outputs + "[" + index + "] = " + _code.Write(output.Value) + ";");
            string element = Identifiers.Unescape(outputs) + "[" + new ExpressionWriter(x => null, formula: true).Write(output.Index) + "]";
            string width = _context.GradientLength; // n: the scalars, and each vector's length
            string row;
            if (output.Index.Kind == NodeKind.Constant && (_program.Vectors.Length == 0 || output.Index.Value == 0))
            {
                row = Text.Count((int)output.Index.Value * n); // a constant row start when n is known
            }
            else if (width == "1" && (output.Index.IsLeaf || _nameOf.ContainsKey(output.Index)))
            {
                row = index;
            }
            else
            {
                row = _names.Claim("row");
                _writer.Line("int " + row + " = " + (width == "1" ? index : Text.Parenthesized(width) + " * " + Text.Parenthesized(index)) + ";");
            }

            for (int k = 0; k < n; k++)
            {
                _writer.Line(_context.JacobianName + "[" + Text.Plus(row, _context.ScalarOffset[k]) + "] = " + _code.Write(output.Row[k]) + "; // ∂" + element + "/∂"
                    + Identifiers.Unescape(_program.Variables[k]));
            }

            // The vectors' part of the row: cleared, then each contribution added (a read of w[j], or the running
            // derivative of a carried local with respect to w).
            for (int v = 0; v < _program.Vectors.Length; v++)
            {
                string offset = Text.Plus(row, _context.VectorOffset[v]);
                _writer.Line(_context.JacobianName + ".Slice(" + offset + ", " + _program.Vectors[v] + ".Length).Clear(); // ∂" + element + "/∂"
                    + Identifiers.Unescape(_program.Vectors[v]) + "[…]");
                AddTerms(_context.JacobianName, offset, output.VectorRow.Where(t => t.Vector == v), null);
            }
        }
    }

    private void WriteLoop(LoopSegment loop)
    {
        // Before the loop: the carried locals and their running derivatives start from their values here, all
        // computed from the values before any of them is assigned (the running derivatives of a local carried on
        // from an earlier loop read its value there): the vectors' first — their spans cleared before any scalar is
        // assigned, since a call between a scalar's initial value and the loop would make the JIT keep that scalar
        // (an accumulator) in memory for the whole loop — then each scalar that no other reads in place, the
        // others through a local assigned after all are computed.
        WriteVectorClears(loop);
        WriteVectorUpdates(loop, before: true);
        WriteStart(loop);

        // A while loop's condition is written in its header, inline: only what is computed before the loop is read
        // from locals, so nothing of the body runs before the condition is tested, as in the user's code.
        string header = loop.Condition is { } condition
            ? "while (" + new ExpressionWriter(x => x.Stage < loop.InsideStage ? NameOf(x) : null, formula: false).Write(condition) + ")"
            : "for (int " + loop.Index + " = " + _code.Write(loop.Start!) + "; " + loop.Index + (loop.Inclusive ? " <= " : " < ") + _code.Write(loop.End!) + "; " + loop.Index + "++)";
        using (_writer.Block(header))
        {
            WriteTemporaries(loop.InsideStage);
            foreach (LoopSegment nested in loop.Children)
            {
                WriteLoop(nested);
            }

            // The end of an iteration: the running derivatives with respect to vectors first (they read the old
            // scalar values), then the scalars.
            WriteVectorUpdates(loop, before: false);
            WriteIterationEnd(loop);
        }

        _writer.Blank();
        if (_plan.Factored.TryGetValue(loop, out List<(string Target, Node Factor)>? factors) && factors.Count > 0)
        {
            _writer.Line("// The constant factor of every term of these sums, applied once:");
            foreach ((string target, Node factor) in factors)
            {
                _writer.Line(target + " *= " + _code.Write(factor) + ";");
            }

            _writer.Line();
        }

        WriteTemporaries(loop.AfterStage);
    }

    /// <summary>The carried locals' start values: declared where first assigned; one that another start value reads is
    /// assigned after all are computed (through a <c>…Start</c> local).</summary>
    private void WriteStart(LoopSegment loop)
    {
        List<StateUpdate> starting = _plan.Initial[loop].Where(u => !u.IsSameLocal).ToList(); // IsSameLocal: carried on unchanged
        var startReads = starting.ToDictionary(u => u.Target, u => LocalsRead(u.Value, _nameOf), StringComparer.Ordinal);
        var startAssignments = new List<(string Target, string Source)>();
        foreach (StateUpdate update in starting)
        {
            if (!_declared.Contains(update.Target) || !starting.Any(other => other.Target != update.Target && startReads[other.Target].Contains(update.Target)))
            {
                string prefix = _declared.Add(update.Target) ? ExpressionWriter.TypeKeyword(update.Type) + " " : string.Empty;
                _writer.Line(prefix + update.Target + " = " + _code.Write(update.Value) + ";");
                continue;
            }

            if (!_nameOf.TryGetValue(update.Value, out string? source) && update.Value.Kind != NodeKind.Constant)
            {
                source = _names.Claim(Identifiers.Unescape(update.Target) + "Start");
                _writer.Line(ExpressionWriter.TypeKeyword(update.Type) + " " + source + " = " + _code.Write(update.Value) + ";");
            }

            startAssignments.Add((update.Target, source ?? _code.Write(update.Value)));
        }

        foreach ((string target, string source) in startAssignments)
        {
            _writer.Line(target + " = " + source + ";");
        }
    }

    /// <summary>The scalar updates at the end of an iteration. An update that no other update reads is written in place
    /// (s += e); the others are computed from the old values into locals first and assigned after.</summary>
    private void WriteIterationEnd(LoopSegment loop)
    {
        List<StateUpdate> pending = _plan.Next[loop].Where(u => !u.IsSameLocal).ToList();
        var reads = pending.ToDictionary(u => u.Target, u => LocalsRead(u.Value, _nameOf), StringComparer.Ordinal);
        var assignments = new List<(string Target, string Source)>();
        foreach (StateUpdate update in pending)
        {
            bool readByOthers = pending.Any(other => other.Target != update.Target && reads[other.Target].Contains(update.Target));
            if (!readByOthers)
            {
                _writer.Line(_nameOf.TryGetValue(update.Value, out string? computed)
                    ? update.Target + " = " + computed + ";"     // already computed, from the old values
                    : InPlace(update));
                continue;
            }

            string source;
            if (_nameOf.TryGetValue(update.Value, out string? existing) || update.Value.Kind == NodeKind.Constant)
            {
                source = existing ?? _code.Write(update.Value);
            }
            else
            {
                source = _names.Claim(Identifiers.Unescape(update.Target) + "Next");
                _writer.Line(ExpressionWriter.TypeKeyword(update.Type) + " " + source + " = " + _code.Write(update.Value) + ";");
            }

            assignments.Add((update.Target, source));
        }

        foreach ((string target, string source) in assignments)
        {
            _writer.Line(target + " = " + source + ";");
        }
    }

    /// <summary>An update written in the form the plan chose: <c>s += e</c>, <c>s -= e</c>, <c>s *= e</c> or <c>s = e</c>.</summary>
    private string InPlace(StateUpdate update)
    {
        (AssignmentForm form, Node operand) = InPlaceAccumulation.Form(update, _program.Builder);
        string op = form switch
        {
            AssignmentForm.Add => " += ",
            AssignmentForm.Subtract => " -= ",
            AssignmentForm.Multiply => " *= ",
            _ => " = ",
        };
        return update.Target + op + _code.Write(operand) + ";";
    }

    /// <summary>The generated locals an update's expression reads when it is written (not through temporaries, which are
    /// already computed by then).</summary>
    private static HashSet<string> LocalsRead(Node value, Dictionary<Node, string> nameOf)
    {
        var read = new HashSet<string>(StringComparer.Ordinal);
        var stack = new Stack<Node>();
        stack.Push(value);
        var seen = new HashSet<Node>();
        while (stack.Count > 0)
        {
            Node node = stack.Pop();
            if (!seen.Add(node) || (node != value && nameOf.ContainsKey(node)) || (node == value && nameOf.ContainsKey(node)))
            {
                continue;
            }

            if (node.Kind == NodeKind.Parameter && node.Text is not null)
            {
                read.Add(node.Text);
            }

            foreach (Node argument in node.Arguments)
            {
                stack.Push(argument);
            }
        }

        return read;
    }
}
