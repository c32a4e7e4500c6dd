using System;
using System.Collections.Generic;
using System.Linq;
using DerivGen.Generator.Differentiation;
using DerivGen.Generator.Model;
using DerivGen.Generator.Symbolic;

namespace DerivGen.Generator.Emit;

/// <summary>Spans of running derivatives with respect to vectors, and the results (gradient, Hessian).</summary>
internal sealed partial class MethodBodyWriter
{
    /// <summary>Spans of running derivatives up to this many elements are allocated on the stack, longer ones on the heap.</summary>
    internal const int StackLimit = 512;

    private string Length(int vector) => _program.Vectors[vector] + ".Length";

    /// <summary>The guard of an update of a vector's entry read only under a condition: the index is in range.</summary>
    private string InRange(string index, int vector) => "if ((uint)" + Text.Parenthesized(index) + " < (uint)" + Length(vector) + ")";

    private static string StackOrHeapSpan(string name, string length, ScalarType type)
    {
        string element = ExpressionWriter.TypeKeyword(type);
        return "global::System.Span<" + element + "> " + name + " = " + length + " <= " + Text.Count(StackLimit) + " ? stackalloc " + element + "[" + length + "] : new "
            + element + "[" + length + "];";
    }

    /// <summary>The spans of the running derivatives, as the plan declares them: a slice of the gradient where one is
    /// accumulated there, else on the stack up to <see cref="StackLimit"/> elements and on the heap beyond.</summary>
    private void DeclareSpans()
    {
        foreach (SpanDeclaration span in _plan.SpanDeclarations)
        {
            string name = span.IsNext ? _scope.NextSpan(span.Span) : _context.Name(span.Span);
            _writer.Line(span.GradientSlice is int slice
                ? "global::System.Span<" + ExpressionWriter.TypeKeyword(_context.Spec.ReturnType) + "> " + name + " = "
                    + _context.GradientName + ".Slice(" + _context.VectorOffset[slice] + ", " + Length(slice) + "); // accumulated in place"
                : span.ProductSlice is int productSlice
                ? "global::System.Span<" + ExpressionWriter.TypeKeyword(_context.Spec.ReturnType) + "> " + name + " = "
                    + _context.ProductName + ".Slice(" + _context.VectorOffset[productSlice] + ", " + Length(productSlice) + "); // accumulated in place"
                : StackOrHeapSpan(name, Length(span.Vector), _context.Spec.ReturnType));
        }

        foreach (SpanSnapshot snapshot in _plan.SpanSnapshots)
        {
            _writer.Line(StackOrHeapSpan(_scope[snapshot], Length(snapshot.Vector), _context.Spec.ReturnType));
        }
    }

    /// <summary>The copies of running-derivative spans taken at a stage: where the carried value they stand for holds,
    /// before anything of the stage (or a loop after it) updates the span.</summary>
    private void WriteSpanSnapshots(int stage)
    {
        foreach (SpanSnapshot snapshot in _plan.SpanSnapshots.Where(s => s.Leaf.Stage == stage))
        {
            _writer.Line(_context.Name(snapshot.Span) + ".CopyTo(" + _scope[snapshot] + "); // ∂" + Identifiers.Unescape(_context.Name(snapshot.Leaf.Text!)) + "/∂"
                + Identifiers.Unescape(_program.Vectors[snapshot.Vector]) + " here, read after " + _context.Name(snapshot.Span) + " has changed");
        }
    }

    private void AddTerms(string target, string offset, IEnumerable<VectorTerm> terms, string? skipSource)
    {
        foreach (VectorTerm term in terms)
        {
            string at = offset.Length == 0 ? string.Empty : offset + " + ";
            string coefficient = term.Coefficient.IsConstant(1) ? string.Empty : _code.WriteFactor(term.Coefficient) + " * ";
            if (term.Index is { } index)
            {
                string update = target + "[" + at + _code.Write(index) + "] += " + (term.Coefficient.IsConstant(1) ? "1.0" : _code.Write(term.Coefficient)) + ";";
                if (term.Element is { } read && !_plan.ReadAlways.Contains(read))
                {
                    // The user's code reads w[i] only under a condition (i < w.Length ? w[i] : 0). Where it does not,
                    // the contribution is 0 (selected by that condition), but i may be out of range: the update is
                    // made only for an index in range, which is every index the user's code can have read.
                    using (_writer.Block(InRange(_code.Write(index), term.Vector)))
                    {
                        _writer.Line(update);
                    }
                }
                else
                {
                    _writer.Line(update);
                }
            }
            else if (term.SourceSpan is { } source && _plan.Replayed.TryGetValue(source, out ReverseReplay? reversal))
            {
                WriteReplay(target, at, term, reversal);
            }
            else if (_plan.SpanSnapshotOf.TryGetValue(term, out SpanSnapshot? snapshot) || term.SourceSpan != skipSource)
            {
                string spanRead = snapshot is null ? _context.Name(term.SourceSpan!) : _scope[snapshot];
                using (_writer.Block("for (int " + _element + " = 0; " + _element + " < " + Length(term.Vector) + "; " + _element + "++)"))
                {
                    _writer.Line(target + "[" + at + _element + "] += " + coefficient + spanRead + "[" + _element + "];");
                }
            }
        }
    }

    /// <summary>target += adjoint · ∂z/∂w for a span that is not stored: its contributions, written out again with the adjoint.</summary>
    private void WriteReplay(string target, string at, VectorTerm term, ReverseReplay reversal)
    {
        LoopSegment loop = reversal.Loop;
        if (reversal.InitialTerms.Count == 0 && reversal.LoopTerms.Count == 0)
        {
            return; // the span is zero (a carried tangent that is linear in the vector, for one): nothing to add
        }

        string adjoint;
        if (term.Coefficient.IsLeaf || NameOf(term.Coefficient) is not null)
        {
            adjoint = _code.Write(term.Coefficient);
        }
        else
        {
            adjoint = _scope.Adjoint(reversal.State.State.Name);
            _writer.Line(ExpressionWriter.TypeKeyword(term.Coefficient.Type) + " " + adjoint + " = " + _code.Write(term.Coefficient) + ";");
        }

        // Nodes of the loop's own stage were locals of its body, out of scope here: they are written out again.
        var again = new ExpressionWriter(x => x.Stage >= loop.InsideStage ? _context.LeafName(x) : NameOf(x), formula: false, calleeDerivative: CalleeDerivative);
        bool unit = term.Coefficient.IsConstant(1);
        string Add(VectorTerm element)
        {
            string update = target + "[" + at + again.Write(element.Index!) + "] += "
                + (element.Coefficient.IsConstant(1) ? adjoint : unit ? again.Write(element.Coefficient) : adjoint + " * " + again.WriteFactor(element.Coefficient)) + ";";
            return element.Element is { } read && !_plan.ReadAlways.Contains(read)
                ? InRange(again.Write(element.Index!), element.Vector) + " " + update
                : update;
        }
        string span = _context.Name(reversal.Span);
        _writer.Line("// " + target + " += " + adjoint + " · " + span + ", " + span + " not stored: the loop over " + loop.Index
            + " replayed with the adjoint " + adjoint + " (reverse mode)");
        foreach (VectorTerm element in reversal.InitialTerms)
        {
            _writer.Line(Add(element));
        }

        if (reversal.LoopTerms.Count > 0)
        {
            using (_writer.Block("for (int " + loop.Index + " = " + _code.Write(loop.Start!) + "; " + loop.Index + (loop.Inclusive ? " <= " : " < ") + _code.Write(loop.End!) + "; " + loop.Index + "++)"))
            {
                foreach (VectorTerm element in reversal.LoopTerms)
                {
                    _writer.Line(Add(element));
                }
            }
        }
    }

    /// <summary>The spans' clears before the loop, as the plan schedules them (<see cref="SpanStatements"/>).</summary>
    private void WriteVectorClears(LoopSegment loop)
    {
        foreach (SpanStatement statement in _plan.SpanClears[loop])
        {
            switch (statement.Kind)
            {
                case SpanStatementKind.AssignedOnceEach:
                    _writer.Line("// " + _context.Name(statement.Span) + " is not cleared: the loop assigns each element exactly once");
                    break;
                case SpanStatementKind.ClearTail:
                    // Only the elements after the loop's last pair (or triple, …), by a loop of fewer than `stride`
                    // iterations rather than a call of Span.Clear.
                    using (_writer.Block("for (int " + _element + " = " + statement.Stride + " * (" + _code.Write(loop.End!) + "); " + _element + " < " + Length(statement.Vector) + "; "
                        + _element + "++) // the loop below assigns each element before these exactly once"))
                    {
                        _writer.Line(_context.Name(statement.Span) + "[" + _element + "] = " + _code.Write(_program.Builder.Zero(_context.Spec.ReturnType)) + ";");
                    }

                    _writer.Blank();
                    break;
                default:
                    _writer.Line(_context.Name(statement.Span) + ".Clear();");
                    break;
            }
        }
    }

    /// <summary>The spans' starts (before the loop) or updates (at the end of an iteration), as the plan schedules them;
    /// the copies of spans computed through a Next span come after all.</summary>
    private void WriteVectorUpdates(LoopSegment loop, bool before)
    {
        var copies = new List<string>();
        foreach (SpanStatement statement in before ? _plan.SpanStarts[loop] : _plan.SpanEnds[loop])
        {
            string own = _context.Name(statement.Span);
            switch (statement.Kind)
            {
                case SpanStatementKind.Scale:
                    using (_writer.Block("for (int " + _element + " = 0; " + _element + " < " + Length(statement.Vector) + "; " + _element + "++)"))
                    {
                        _writer.Line(own + "[" + _element + "] *= " + _code.Write(statement.Factor!) + ";");
                    }

                    break;
                case SpanStatementKind.AssignElements:
                    foreach (VectorTerm term in statement.Terms)
                    {
                        _writer.Line(own + "[" + _code.Write(term.Index!) + "] = " + _code.Write(term.Coefficient) + ";");
                    }

                    break;
                case SpanStatementKind.ThroughNext:
                    string next = _scope.NextSpan(statement.Span);
                    _writer.Line(next + ".Clear();");
                    AddTerms(next, string.Empty, statement.Terms, null);
                    copies.Add(next + ".CopyTo(" + own + ");");
                    break;
                default:
                    AddTerms(own, string.Empty, statement.Terms, statement.Span);
                    break;
            }
        }

        foreach (string copy in copies)
        {
            _writer.Line(copy);
        }
    }

    /// <summary>The results as the plan lists them (<see cref="ResultStatements"/>): the gradient, then after a blank line
    /// the Hessian's lower triangle, each entry below the diagonal mirrored above it, then after a blank line the return.</summary>
    private void WriteResults()
    {
        int n = _program.Variables.Length;
        bool hessianStarted = false;
        foreach (ResultStatement statement in _plan.Results)
        {
            if ((_plan.WithHessian || _program.Product is not null) && !hessianStarted
                && statement.Kind is ResultKind.HessianEntry or ResultKind.VectorProduct or ResultKind.VectorProductInPlace or ResultKind.ProductEntry or ResultKind.Return)
            {
                _writer.Line();
                hessianStarted = true;
            }

            int v = statement.Row;
            switch (statement.Kind)
            {
                case ResultKind.VectorGradientInPlace:
                    _writer.Line("// ∂" + _context.BareName + "/∂" + Identifiers.Unescape(_program.Vectors[v]) + "[…] is " + _context.Name(statement.Span!) + ", already in " + _context.GradientName + ".");
                    break;
                case ResultKind.VectorGradient:
                    string offset = _context.VectorOffset[v] == "0" ? string.Empty : _context.VectorOffset[v];
                    _writer.Line(_context.GradientName + ".Slice(" + _context.VectorOffset[v] + ", " + Length(v) + ").Clear(); // ∂" + _context.BareName + "/∂"
                        + Identifiers.Unescape(_program.Vectors[v]) + "[…]");
                    AddTerms(_context.GradientName, offset, statement.Terms!, null);
                    break;
                case ResultKind.GradientEntry:
                    _writer.Line(_context.GradientName + "[" + _context.ScalarOffset[statement.Row] + "] = " + _code.Write(statement.Value!) + "; // " + _context.PartialName(statement.Row));
                    break;
                case ResultKind.VectorProduct:
                    string productOffset = _context.VectorOffset[v] == "0" ? string.Empty : _context.VectorOffset[v];
                    _writer.Line(_context.ProductName + ".Slice(" + _context.VectorOffset[v] + ", " + Length(v) + ").Clear(); // (H·" + _context.DirectionName
                        + ") for " + Identifiers.Unescape(_program.Vectors[v]) + "[…]");
                    AddTerms(_context.ProductName, productOffset, statement.Terms!, null);
                    break;
                case ResultKind.VectorProductInPlace:
                    _writer.Line("// (H·" + _context.DirectionName + ") for " + Identifiers.Unescape(_program.Vectors[v]) + "[…] is " + _context.Name(statement.Span!)
                        + ", already in " + _context.ProductName + ".");
                    break;
                case ResultKind.ProductEntry:
                    _writer.Line(_context.ProductName + "[" + _context.ScalarOffset[statement.Row] + "] = " + _code.Write(statement.Value!) + "; // (H·" + _context.DirectionName
                        + ") for " + Identifiers.Unescape(_program.Variables[statement.Row]));
                    break;
                case ResultKind.HessianEntry:
                    int i = statement.Row, j = statement.Column;
                    string target = _context.HessianName + "[" + Text.Count((i * n) + j) + "]";
                    string mirror = statement.Mirrored ? _context.HessianName + "[" + Text.Count((j * n) + i) + "] = " : string.Empty;
                    _writer.Line(mirror + target + " = " + _code.Write(statement.Value!) + "; // " + _context.SecondPartialName(i, j));
                    break;
                default:
                    _writer.Line();
                    _writer.Line("return " + _code.Write(statement.Value!) + ";");
                    break;
            }
        }
    }
}
