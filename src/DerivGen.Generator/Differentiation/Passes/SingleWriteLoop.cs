using System;
using System.Collections.Generic;
using System.Linq;
using DerivGen.Generator.Model;
using DerivGen.Generator.Symbolic;

namespace DerivGen.Generator.Differentiation;

/// <summary>
/// Part of <see cref="InPlaceAccumulation"/>: a running derivative with respect to a vector whose loop writes each element
/// of the span exactly once, so that the elements are assigned (<c>d[a·i + b] = coef</c>) instead of cleared and added to —
/// what a hand-written gradient does (e.g. the extended Rosenbrock function's <c>g[2i] = …; g[2i + 1] = …</c>).
/// <para>
/// Proved at generation time, conservatively; anything else keeps the clear and the additions (always correct): a
/// top-level <c>for</c> loop from 0 below <c>w.Length / a</c> (below <c>w.Length</c> for a = 1), with w the vector,
/// no nested loop and no condition; the span belongs to one local of this loop alone, starts at zero, carries on with
/// factor 1, and every other contribution of an iteration is a single element at index a·i + b (a product, sum or
/// difference of integer constants and the index) with one b for each residue 0 … a − 1; nothing else reads the span
/// inside the loop (no other local's update, no replay, no outputs). Then the element a·i + b is written only in
/// iteration i, and the loop writes the elements 0 … a·(w.Length / a) − 1 exactly once each, so the span equals the sum
/// after the loop once the remaining w.Length mod a elements are cleared (before the loop).
/// </para>
/// </summary>
internal static class SingleWriteLoop
{
    /// <summary>Largest stride or offset taken (small integer constants only).</summary>
    private const long MaxConstant = 1 << 16;

    /// <summary>
    /// The stride a when the span <c>d.VectorNames[v]</c> of <paramref name="d"/> is written exactly once per element by
    /// <paramref name="loop"/> (see the class summary); 0 otherwise.
    /// </summary>
    public static int Stride(DerivativeProgram program, LoopSegment loop, StateDerivatives d, int v, string length,
        IReadOnlyDictionary<string, ReverseReplay> replayed)
    {
        string span = d.VectorNames[v];
        if (program.Outputs.Count > 0 || loop.Parent is not null || loop.Children.Count > 0 || loop.Index is null || loop.Condition is not null
            || loop.Inclusive || loop.Start is not { Kind: NodeKind.Constant, Type: ScalarType.Int32 } start || start.Value != 0 || loop.End is null
            || replayed.ContainsKey(span) || !loop.States.Contains(d.State) || d.InitialVector.Any(t => t.Vector == v))
        {
            return 0;
        }

        // The span is this local's alone (a local carried through several loops shares its spans) and read by no other update.
        foreach (StateDerivatives other in program.States.Values.Where(o => o != d))
        {
            if (other.VectorNames.Contains(span, StringComparer.Ordinal)
                || other.InitialVector.Concat(other.NextVector).Any(t => string.Equals(t.SourceSpan, span, StringComparison.Ordinal)))
            {
                return 0;
            }
        }

        var terms = d.NextVector.Where(t => t.Vector == v).ToList();
        if (terms.Count(t => t.Index is null && t.SourceSpan == span && t.Coefficient.IsConstant(1)) != 1)
        {
            return 0; // not carried on with factor 1
        }

        var single = terms.Where(t => t.Index is not null && t.SourceSpan is null).ToList();
        if (single.Count == 0 || single.Count != terms.Count - 1)
        {
            return 0; // something else is added (another span)
        }

        long stride = 0;
        var offsets = new HashSet<long>();
        foreach (VectorTerm term in single)
        {
            if (Affine(term.Index!, loop) is not { } form || form.A < 1 || (stride != 0 && form.A != stride))
            {
                return 0;
            }

            stride = form.A;
            if (form.B < 0 || form.B >= stride || !offsets.Add(form.B))
            {
                return 0;
            }
        }

        if (offsets.Count != stride)
        {
            return 0; // some residue is never written: its elements would need the clear
        }

        Node end = loop.End;
        bool bounded = stride == 1
            ? IsLength(end, length)
            : end is { Kind: NodeKind.Divide, Type: ScalarType.Int32 } && IsLength(end.Arguments[0], length)
                && end.Arguments[1] is { Kind: NodeKind.Constant, Type: ScalarType.Int32 } divisor && divisor.Value == stride;
        return bounded ? (int)stride : 0;
    }

    private static bool IsLength(Node node, string length) =>
        node is { Kind: NodeKind.External, Type: ScalarType.Int32 } && string.Equals(node.Text, length, StringComparison.Ordinal);

    /// <summary>index = A·i + B for the loop's index i, with integer constants A and B; null for any other form.</summary>
    private static (long A, long B)? Affine(Node node, LoopSegment loop)
    {
        if (node.Type != ScalarType.Int32)
        {
            return null;
        }

        switch (node.Kind)
        {
            case NodeKind.Parameter when node.Stage == loop.InsideStage && string.Equals(node.Text, loop.Index, StringComparison.Ordinal):
                return (1, 0);
            case NodeKind.Constant when Math.Abs(node.Value) <= MaxConstant && node.Value == Math.Floor(node.Value):
                return (0, (long)node.Value);
            case NodeKind.Negate when Affine(node.Arguments[0], loop) is { } operand:
                return (-operand.A, -operand.B);
            case NodeKind.Add or NodeKind.Subtract when Affine(node.Arguments[0], loop) is { } left && Affine(node.Arguments[1], loop) is { } right:
            {
                long sign = node.Kind == NodeKind.Add ? 1 : -1;
                return Small((left.A + (sign * right.A), left.B + (sign * right.B)));
            }

            case NodeKind.Multiply when Affine(node.Arguments[0], loop) is { } left && Affine(node.Arguments[1], loop) is { } right
                && (left.A == 0 || right.A == 0):
                return Small(left.A == 0 ? (left.B * right.A, left.B * right.B) : (right.B * left.A, right.B * left.B));
            default:
                return null;
        }
    }

    private static (long A, long B)? Small((long A, long B) form) =>
        Math.Abs(form.A) <= MaxConstant && Math.Abs(form.B) <= MaxConstant ? form : null;
}
