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
    /// The outputs written at a stage, as the plan lists them (<see cref="ResultStatements"/>), each followed by its
    /// Jacobian row: outputs[i] = value; jacobian[n·i + k] = ∂value/∂vₖ.
    /// </summary>
    private void WriteOutputs(int stage)
    {
        string outputs = _context.Spec.OutputName ?? string.Empty;
        foreach (OutputStatement statement in _plan.Outputs.TryGetValue(stage, out List<OutputStatement>? statements) ? statements : new List<OutputStatement>())
        {
            OutputWrite output = statement.Output;
            string index = _code.Write(output.Index);
            _writer.Line(outputs + "[" + index + "] = " + _code.Write(output.Value) + ";");
            string element = Identifiers.Unescape(outputs) + "[" + new ExpressionWriter(_context.LeafName, formula: true).Write(output.Index) + "]";
            string width = _context.GradientLength; // n: the scalars, and each vector's length
            string row;
            switch (statement.RowStart)
            {
                case RowStartKind.Constant:
                    row = Text.Count(statement.ConstantRow);
                    break;
                case RowStartKind.Index:
                    row = index;
                    break;
                default:
                    row = _scope.Row();
                    _writer.Line("int " + row + " = " + (width == "1" ? index : Text.Parenthesized(width) + " * " + Text.Parenthesized(index)) + ";");
                    break;
            }

            for (int k = 0; k < statement.Entries.Count; k++)
            {
                _writer.Line(_context.JacobianName + "[" + Text.Plus(row, _context.ScalarOffset[k]) + "] = " + _code.Write(statement.Entries[k]) + "; // ∂" + element + "/∂"
                    + Identifiers.Unescape(_program.Variables[k]));
            }

            // The vectors' part of the row: cleared, then each contribution added (a read of w[j], or the running
            // derivative of a carried local with respect to w).
            for (int v = 0; v < statement.VectorRow.Count; v++)
            {
                string offset = Text.Plus(row, _context.VectorOffset[v]);
                _writer.Line(_context.JacobianName + ".Slice(" + offset + ", " + _program.Vectors[v] + ".Length).Clear(); // ∂" + element + "/∂"
                    + Identifiers.Unescape(_program.Vectors[v]) + "[…]");
                AddTerms(_context.JacobianName, offset, statement.VectorRow[v], null);
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
        OpenRecord(loop);

        // A while loop's condition is written in its header, inline: only what is computed before the loop is read
        // from locals, so nothing of the body runs before the condition is tested, as in the user's code.
        string header = loop.Condition is { } condition
            ? "while (" + new ExpressionWriter(x => x.Stage < loop.InsideStage ? NameOf(x) : _context.LeafName(x), formula: false).Write(condition) + ")"
            : "for (int " + loop.Index + " = " + _code.Write(loop.Start!) + "; " + loop.Index + (loop.Inclusive ? " <= " : " < ") + _code.Write(loop.End!) + "; " + loop.Index + "++)";
        using (_writer.Block(header))
        {
            WriteRecordWrites(loop);
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
        WriteReverseSnapshots(loop);
        if (_plan.Factored.TryGetValue(loop, out List<(string Target, Node Factor)>? factors) && factors.Count > 0)
        {
            _writer.Line("// The constant factor of every term of these sums, applied once:");
            foreach ((string target, Node factor) in factors)
            {
                _writer.Line(_context.Name(target) + " *= " + _code.Write(factor) + ";");
            }

            _writer.Line();
        }

        WriteTemporaries(loop.AfterStage);
    }

    /// <summary>The carried locals' start values, as the plan schedules them (<see cref="StateAssignments"/>).</summary>
    private void WriteStart(LoopSegment loop) => WriteAssignments(_plan.Starts[loop], "Start");

    /// <summary>The scalar updates at the end of an iteration, as the plan schedules them.</summary>
    private void WriteIterationEnd(LoopSegment loop) => WriteAssignments(_plan.Ends[loop], "Next");

    /// <summary>Prints assignment statements; those after all (through a <c>…Start</c> / <c>…Next</c> local, or from a
    /// value already computed) come last, in order.</summary>
    private void WriteAssignments(List<Assignment> assignments, string suffix)
    {
        var after = new List<(string Target, string Source)>();
        foreach (Assignment assignment in assignments)
        {
            StateUpdate update = assignment.Update;
            string target = _context.Name(update.Target);
            switch (assignment.Kind)
            {
                case AssignmentKind.Declare:
                    _writer.Line(ExpressionWriter.TypeKeyword(update.Type) + " " + target + " = " + _code.Write(update.Value) + ";");
                    break;
                case AssignmentKind.Assign:
                    _writer.Line(target + " = " + _code.Write(update.Value) + ";");
                    break;
                case AssignmentKind.InPlace:
                    _writer.Line(target + Operator(assignment.Form) + _code.Write(assignment.Operand!) + ";");
                    break;
                case AssignmentKind.ThroughLocal:
                    string source = _scope.Through(update.Target, suffix);
                    _writer.Line(ExpressionWriter.TypeKeyword(update.Type) + " " + source + " = " + _code.Write(update.Value) + ";");
                    after.Add((target, source));
                    break;
                default:
                    after.Add((target, _code.Write(update.Value)));
                    break;
            }
        }

        foreach ((string target, string source) in after)
        {
            _writer.Line(target + " = " + source + ";");
        }
    }

    private static string Operator(AssignmentForm form) => form switch
    {
        AssignmentForm.Add => " += ",
        AssignmentForm.Subtract => " -= ",
        AssignmentForm.Multiply => " *= ",
        _ => " = ",
    };
}
