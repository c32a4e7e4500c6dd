using System;
using System.Collections.Generic;
using System.Linq;
using DerivGen.Generator.Differentiation;
using DerivGen.Generator.Differentiation.LoopReverse;
using DerivGen.Generator.Model;
using DerivGen.Generator.Symbolic;

namespace DerivGen.Generator.Emit;

/// <summary>The gradient through loops in reverse (<see cref="ReverseGradient"/>): the records the value code keeps,
/// and the reverse sweep after it. Prints the plan; decides nothing.</summary>
internal sealed partial class MethodBodyWriter
{
    private const string Pool = "global::System.Buffers.ArrayPool<double>.Shared";
    private ReverseGradient? _reverse;
    private readonly Stack<(IndentedWriter.Scope Try, string Rented)> _openRecords = new();

    /// <summary>Before a recorded loop: its number of iterations and the buffer of its record (stack or pool), then a
    /// <c>try</c> whose <c>finally</c> (written at the end of the method) returns a rented buffer.</summary>
    private void OpenRecord(LoopSegment loop)
    {
        if (_reverse is null)
        {
            return;
        }

        if (loop.Parent is null)
        {
            // The stacks of the loops nested in this one live as long as the whole nest.
            foreach (LoopSegment nested in loop.Children)
            {
                if (_reverse.Tapes.TryGetValue(nested, out TapeRecord? stack))
                {
                    string stackBuffer = _context.Name(stack.Buffer), stackRented = _context.Name(stack.Rented);
                    _writer.Line("// The record of " + (nested.Index is { } index ? "the loop over " + Identifiers.Unescape(index) : "the while loop") + " nested in it, a stack: "
                        + (stack.Recorded.Count == 0 ? string.Empty : string.Join(", ", stack.Recorded.Select(s => Identifiers.Unescape(s.Name))) + " at the start of every iteration, then ")
                        + (stack.Footer.Count == 0 ? string.Empty : string.Join(", ", stack.Footer.Select(s => Identifiers.Unescape(s.Name))) + " after the loop and ")
                        + "its number of iterations (on the stack for the first " + Text.Count(ReverseGradient.StackLimit) + " values, then pooled, twice as long whenever full).");
                    _writer.Line("int " + _context.Name(stack.Top!) + " = 0;");
                    _writer.Line("double[]? " + stackRented + " = null;");
                    _writer.Line("global::System.Span<double> " + stackBuffer + " = stackalloc double[" + Text.Count(ReverseGradient.StackLimit) + "];");
                    _openRecords.Push((_writer.Block("try"), stackRented));
                }
            }
        }

        if (!_reverse.Tapes.TryGetValue(loop, out TapeRecord? tape))
        {
            return;
        }

        string count = _context.Name(tape.Count), buffer = _context.Name(tape.Buffer), rented = _context.Name(tape.Rented);
        int m = tape.Recorded.Count;
        string limit = Text.Count(ReverseGradient.StackLimit);
        string names = string.Join(", ", tape.Recorded.Select(s => Identifiers.Unescape(s.Name)));
        if (tape.IsStack)
        {
            _writer.Line("int " + count + " = 0;");
            return;
        }

        if (tape.IsGrowable)
        {
            _writer.Line(m == 0
                ? "// The number of iterations, for the reverse sweep."
                : "// The record for the reverse sweep: " + names + " at the start of every iteration, " + Text.Count(m) + " values per iteration (on the stack for the first "
                    + limit + " values, then pooled, twice as long whenever full).");
            _writer.Line("int " + count + " = 0;");
            if (m == 0)
            {
                return;
            }

            _writer.Line("double[]? " + rented + " = null;");
            _writer.Line("global::System.Span<double> " + buffer + " = stackalloc double[" + limit + "];");
        }
        else
        {
            string size = m == 1 ? count : Text.Count(m) + " * " + count;
            string span = loop.Start!.IsZero && !loop.Inclusive ? _code.Write(loop.End!)
                : Text.Parenthesized(_code.Write(loop.End!)) + " - " + Text.Parenthesized(_code.Write(loop.Start!)) + (loop.Inclusive ? " + 1" : string.Empty);
            _writer.Line("// The record for the reverse sweep: " + names + " at the start of every iteration (on the stack up to " + limit + " values, else pooled).");
            _writer.Line("int " + count + " = global::System.Math.Max(0, " + span + ");");
            _writer.Line("double[]? " + rented + " = null;");
            _writer.Line("global::System.Span<double> " + buffer + " = " + size + " <= " + limit + " ? stackalloc double[" + size + "] : ("
                + rented + " = " + Pool + ".Rent(" + size + "));");
            for (int j = 0; j < m; j++)
            {
                _writer.Line("global::System.Span<double> " + _context.Name(tape.Slice[tape.Recorded[j]]) + " = " + buffer + ".Slice(" + (j == 0 ? "0" : (j == 1 ? count : Text.Count(j) + " * " + count))
                    + ", " + count + ");");
            }
        }

        _openRecords.Push((_writer.Block("try"), rented));
    }

    /// <summary>Where iteration <paramref name="at"/> keeps recorded local number <paramref name="j"/>.</summary>
    private string RecordElement(TapeRecord tape, LoopState state, string at)
    {
        if (!tape.IsGrowable)
        {
            return _context.Name(tape.Slice[state]) + "[" + at + "]";
        }

        int m = tape.Recorded.Count, j = tape.Recorded.IndexOf(state);
        string start = m == 1 ? at : Text.Count(m) + " * " + at;
        return _context.Name(tape.Buffer) + "[" + (j == 0 ? start : start + " + " + Text.Count(j)) + "]";
    }

    /// <summary>The offset of iteration i in a counted loop's record: i − start.</summary>
    private string RecordIndex(LoopSegment loop) =>
        loop.Start!.IsZero ? loop.Index! : loop.Index + " - " + Text.Parenthesized(_code.Write(loop.Start!));

    /// <summary>At the top of an iteration: the recorded locals' values (a full growable record moves to a pooled array
    /// twice as long first), and a while loop's count.</summary>
    private void WriteRecordWrites(LoopSegment loop)
    {
        if (_reverse is null || !_reverse.Tapes.TryGetValue(loop, out TapeRecord? tape))
        {
            return;
        }

        int m = tape.Recorded.Count;
        string count = _context.Name(tape.Count);
        if (tape.IsStack)
        {
            Push(tape, tape.Recorded.Select(s => s.Type == ScalarType.Boolean ? s.Name + " ? 1.0 : 0.0" : s.Name).ToList());
            _writer.Line(count + "++;");
            return;
        }

        if (tape.IsGrowable && m > 0)
        {
            string buffer = _context.Name(tape.Buffer), rented = _context.Name(tape.Rented), grown = _context.Name(tape.Grown!);
            using (_writer.Block("if (" + (m == 1 ? count : Text.Count(m) + " * " + count) + " + " + Text.Count(m) + " > " + buffer + ".Length)"))
            {
                _writer.Line("double[] " + grown + " = " + Pool + ".Rent(2 * " + buffer + ".Length);");
                _writer.Line(buffer + ".CopyTo(" + grown + ");");
                using (_writer.Block("if (" + rented + " != null)"))
                {
                    _writer.Line(Pool + ".Return(" + rented + ");");
                }

                _writer.Line(rented + " = " + grown + ";");
                _writer.Line(buffer + " = " + grown + ";");
            }
        }

        string at = tape.IsGrowable ? count : RecordIndex(loop);
        foreach (LoopState state in tape.Recorded)
        {
            string value = state.Type == ScalarType.Boolean ? state.Name + " ? 1.0 : 0.0" : state.Name;
            _writer.Line(RecordElement(tape, state, at) + " = " + value + ";");
        }

        if (tape.IsGrowable)
        {
            _writer.Line(count + "++;");
        }
    }

    /// <summary>After a loop: copies of carried values the reverse sweep reads after a later loop has changed them.</summary>
    private void WriteReverseSnapshots(LoopSegment loop)
    {
        if (_reverse is not null && _reverse.Tapes.TryGetValue(loop, out TapeRecord? tape) && tape.IsStack)
        {
            // After a nested loop: its values after it, then its number of iterations, for this iteration of the loop around it.
            Push(tape, tape.Footer.Select(s => s.Type == ScalarType.Boolean ? s.Name + " ? 1.0 : 0.0" : s.Name).Concat(new[] { _context.Name(tape.Count) }).ToList());
        }

        if (_reverse is null || !_reverse.SnapshotsAfter.TryGetValue(loop, out List<(Node Leaf, string Id)>? copies))
        {
            return;
        }

        foreach ((Node leaf, string id) in copies)
        {
            _writer.Line(ExpressionWriter.TypeKeyword(leaf.Type) + " " + _context.Name(id) + " = " + leaf.Text + "; // read by the reverse sweep after a later loop changes it");
        }

        _writer.Blank();
    }

    /// <summary>Pushes values onto a nested loop's stack, moving it to a pooled array twice as long first if it is full.</summary>
    private void Push(TapeRecord tape, List<string> values)
    {
        if (values.Count == 0)
        {
            return;
        }

        string buffer = _context.Name(tape.Buffer), rented = _context.Name(tape.Rented), grown = _context.Name(tape.Grown!), top = _context.Name(tape.Top!);
        using (_writer.Block("if (" + top + " + " + Text.Count(values.Count) + " > " + buffer + ".Length)"))
        {
            _writer.Line("double[] " + grown + " = " + Pool + ".Rent(2 * " + buffer + ".Length);");
            _writer.Line(buffer + ".CopyTo(" + grown + ");");
            using (_writer.Block("if (" + rented + " != null)"))
            {
                _writer.Line(Pool + ".Return(" + rented + ");");
            }

            _writer.Line(rented + " = " + grown + ";");
            _writer.Line(buffer + " = " + grown + ";");
        }

        for (int j = 0; j < values.Count; j++)
        {
            _writer.Line(buffer + "[" + (j == 0 ? top : top + " + " + Text.Count(j)) + "] = " + values[j] + ";");
        }

        _writer.Line(top + " += " + Text.Count(values.Count) + ";");
    }

    /// <summary>Pops values pushed by <see cref="Push"/> (in the order pushed) into new locals.</summary>
    private void Pop(TapeRecord tape, List<(string Name, ScalarType Type)> locals)
    {
        if (locals.Count == 0)
        {
            return;
        }

        string buffer = _context.Name(tape.Buffer), top = _context.Name(tape.Top!);
        _writer.Line(top + " -= " + Text.Count(locals.Count) + ";");
        for (int j = 0; j < locals.Count; j++)
        {
            _writer.Line(ExpressionWriter.TypeKeyword(locals[j].Type) + " " + locals[j].Name + " = " + Restore(buffer + "[" + (j == 0 ? top : top + " + " + Text.Count(j)) + "]", locals[j].Type) + ";");
        }
    }

    private static string Restore(string read, ScalarType type) => type switch
    {
        ScalarType.Boolean => read + " != 0.0",
        ScalarType.Double => read,
        _ => "(" + ExpressionWriter.TypeKeyword(type) + ")" + read,
    };

    /// <summary>The reverse sweep, the gradient entries, the return, and the <c>finally</c> blocks of the records.</summary>
    private void WriteReverseSweep()
    {
        ReverseGradient reverse = _reverse!;
        _writer.Blank();
        _writer.Line("// Reverse sweep: adjoints (…Bar) from the value back to the variables.");
        for (int v = 0; v < _program.Vectors.Length; v++)
        {
            _writer.Line(_context.GradientName + ".Slice(" + _context.VectorOffset[v] + ", " + Length(v) + ").Clear(); // ∂" + _context.BareName + "/∂"
                + Identifiers.Unescape(_program.Vectors[v]) + "[…], accumulated below");
        }

        for (int i = 0; i < reverse.Blocks.Count; i++)
        {
            WriteAdjointBlock(reverse.Blocks[i], new Dictionary<Node, string>());
            if (i == 0)
            {
                foreach ((string id, ScalarType type) in reverse.ZeroAdjoints)
                {
                    _writer.Line(ExpressionWriter.TypeKeyword(type) + " " + _context.Name(id) + " = " + Literals.CSharp(0, type) + ";");
                }
            }
        }

        _writer.Blank();
        for (int k = 0; k < _program.Variables.Length; k++)
        {
            string value = reverse.ScalarAdjoints[k] is { } id ? _context.Name(id) : Literals.CSharp(0, _context.Spec.ReturnType);
            _writer.Line(_context.GradientName + "[" + _context.ScalarOffset[k] + "] = " + value + "; // " + _context.PartialName(k));
        }

        _writer.Line();
        _writer.Line("return " + _code.Write(_program.Value) + ";");
        while (_openRecords.Count > 0)
        {
            (IndentedWriter.Scope scope, string rented) = _openRecords.Pop();
            scope.Dispose();
            using (_writer.Block("finally"))
            {
                using (_writer.Block("if (" + rented + " != null)"))
                {
                    _writer.Line(Pool + ".Return(" + rented + ");");
                }
            }
        }
    }

    /// <summary>The header of a loop's reverse iteration, then the values it reads back: the loop's start values from its
    /// record, the nested loops' values after them and their counts from their stacks, and the adjoints set to 0.</summary>
    private IndentedWriter.Scope OpenReverseIteration(AdjointBlock block, LoopSegment loop, TapeRecord? tape, Dictionary<Node, string> names, ExpressionWriter code)
    {
        ReverseGradient reverse = _reverse!;
        IndentedWriter.Scope body;
        if (tape is { IsStack: true })
        {
            string countIn = _context.Name(tape.CountIn!);
            if (loop.Index is null)
            {
                string step = _context.Name(tape.Step!);
                body = _writer.Block("for (int " + step + " = " + countIn + " - 1; " + step + " >= 0; " + step + "--)");
            }
            else
            {
                string start = code.Write(loop.Start!);
                body = _writer.Block("for (int " + loop.Index + " = " + Text.Parenthesized(start) + " + " + countIn + " - 1; " + loop.Index + " >= " + start + "; " + loop.Index + "--)");
            }

            Pop(tape, tape.Recorded.Select(s => (names[s.Current], s.Type)).ToList());
        }
        else
        {
            string at;
            if (loop.Index is null)
            {
                at = _context.Name(tape!.Step!);
                body = _writer.Block("for (int " + at + " = " + _context.Name(tape.Count) + " - 1; " + at + " >= 0; " + at + "--)");
            }
            else
            {
                string start = code.Write(loop.Start!), end = code.Write(loop.End!);
                body = _writer.Block("for (int " + loop.Index + " = " + (loop.Inclusive ? end : Text.Parenthesized(end) + " - 1") + "; " + loop.Index + " >= " + start + "; " + loop.Index + "--)");
                at = RecordIndex(loop);
            }

            foreach (LoopState state in tape?.Recorded ?? new List<LoopState>())
            {
                _writer.Line(ExpressionWriter.TypeKeyword(state.Type) + " " + names[state.Current] + " = " + Restore(RecordElement(tape!, state, at), state.Type) + ";");
            }
        }

        // The nested loops' values after them and their counts for this iteration, from the top of their stacks.
        foreach (LoopSegment nested in loop.Children)
        {
            if (reverse.Tapes.TryGetValue(nested, out TapeRecord? stack))
            {
                var popped = stack.Footer.Select(s => (_context.Name(stack.After[s]), s.Type)).ToList();
                popped.Add((_context.Name(stack.CountIn!), ScalarType.Int32));
                Pop(stack, popped);
                foreach (LoopState state in stack.Footer)
                {
                    names[state.Final] = _context.Name(stack.After[state]);
                }
            }
        }

        foreach ((string id, ScalarType type) in block.InnerZeros)
        {
            _writer.Line(ExpressionWriter.TypeKeyword(type) + " " + _context.Name(id) + " = " + Literals.CSharp(0, type) + ";");
        }

        return body;
    }

    private void WriteAdjointBlock(AdjointBlock block, Dictionary<Node, string> outer)
    {
        if (ReverseGradient.IsEmpty(block))
        {
            return;
        }

        ReverseGradient reverse = _reverse!;
        var names = new Dictionary<Node, string>(outer); // what enclosing blocks restored or computed is in scope here
        TapeRecord? tape = block.Loop is { } recorded && reverse.Tapes.TryGetValue(recorded, out TapeRecord? t) ? t : null;
        if (tape is not null)
        {
            foreach (LoopState state in tape.Recorded)
            {
                names[state.Current] = _context.Name(tape.Restored[state]);
            }
        }

        string? Name(Node node) =>
            names.TryGetValue(node, out string? name) ? name
            : reverse.SnapshotOf.TryGetValue(node, out string? copy) ? _context.Name(copy)
            : reverse.ForwardNamed.Contains(node) ? NameOf(node)
            : _context.LeafName(node);
        var code = new ExpressionWriter(Name, formula: false);

        _writer.Blank();
        _writer.Line("// The adjoint of " + block.Label + ".");
        IndentedWriter.Scope? body = null;
        if (block.Loop is { } loop)
        {
            body = OpenReverseIteration(block, loop, tape, names, code);
        }

        foreach (Node node in block.Temporaries)
        {
            string name = _scope.Fresh(node, Name);
            _writer.Line(ExpressionWriter.TypeKeyword(node.Type) + " " + name + " = " + new ExpressionWriter(x => x == node ? _context.LeafName(x) : Name(x), formula: false).Write(node) + ";");
            names[node] = name;
        }

        foreach (Accumulation accumulation in block.Accumulations)
        {
            string target = _context.Name(accumulation.Target);
            _writer.Line(accumulation.Declares
                ? ExpressionWriter.TypeKeyword(accumulation.Type) + " " + target + " = " + code.Write(accumulation.Value) + ";"
                : target + " += " + code.Write(accumulation.Value) + ";");
        }

        foreach (VectorTerm term in block.Terms)
        {
            string offset = _context.VectorOffset[term.Vector] == "0" ? string.Empty : _context.VectorOffset[term.Vector] + " + ";
            string index = code.Write(term.Index!);
            string update = _context.GradientName + "[" + offset + index + "] += " + code.Write(term.Coefficient) + ";";
            if (term.Element is { } read && !block.ReadAlways.Contains(read))
            {
                // Read only under a condition: where it is not read the contribution is 0, but the index may be out of range.
                using (_writer.Block(InRange(index, term.Vector)))
                {
                    _writer.Line(update);
                }
            }
            else
            {
                _writer.Line(update);
            }
        }

        var copies = new List<string>();
        foreach (AdjointAssignment assignment in block.Assignments.Where(a => a.ThroughLocal))
        {
            string next = _scope.Fresh(Identifiers.Unescape(_context.Name(assignment.Target)) + "Next");
            _writer.Line(ExpressionWriter.TypeKeyword(assignment.Type) + " " + next + " = " + code.Write(assignment.Value) + ";");
            copies.Add(_context.Name(assignment.Target) + " = " + next + ";");
        }

        foreach (AdjointAssignment assignment in block.Assignments.Where(a => !a.ThroughLocal))
        {
            _writer.Line(_context.Name(assignment.Target) + " = " + code.Write(assignment.Value) + ";");
        }

        foreach (string copy in copies)
        {
            _writer.Line(copy);
        }

        foreach (AdjointBlock inner in block.Inner)
        {
            WriteAdjointBlock(inner, names);
        }

        if (block.Copies.Count > 0)
        {
            _writer.Blank();
            foreach ((string target, string source) in block.Copies)
            {
                _writer.Line(_context.Name(target) + " = " + _context.Name(source) + ";");
            }
        }

        body?.Dispose();
    }
}
