using System;
using System.Collections.Generic;
using System.Linq;
using DerivGen.Generator.Symbolic;

namespace DerivGen.Generator.Differentiation;

/// <summary>How a carried local's update is assigned: <c>s = e</c>, or in place <c>s += e</c>, <c>s -= e</c>, <c>s *= e</c>.</summary>
internal enum AssignmentForm
{
    Assign,
    Add,
    Subtract,
    Multiply,
}

/// <summary>
/// Pass: accumulation in place rather than through copies.
/// <list type="bullet">
/// <item>A scalar update <c>s = s + e</c> is written <c>s += e</c> (<see cref="Form"/>).</item>
/// <item>A vector running derivative that carries on with factor 1 and that no other update of its loop reads is added
/// to where it is, without a <c>…Next</c> span and a copy (<see cref="UpdatesInPlace"/>).</item>
/// <item>A vector's part of the gradient that is exactly one running-derivative span is that slice of the gradient
/// (<see cref="InGradient"/>): nothing to allocate, nothing to copy at the end.</item>
/// <item>A span whose loop writes each element exactly once is assigned, not cleared and added to
/// (<see cref="SingleWrite"/>, proved by <see cref="SingleWriteLoop"/>).</item>
/// </list>
/// </summary>
internal static class InPlaceAccumulation
{
    /// <summary>The in-place form of an update, and the operand written after the operator (the whole value for
    /// <see cref="AssignmentForm.Assign"/>). Nodes the form needs are built with <paramref name="builder"/>.</summary>
    public static (AssignmentForm Form, Node Operand) Form(StateUpdate update, ExpressionBuilder builder)
    {
        Node value = update.Value;
        bool IsTarget(Node node) => node.Kind == NodeKind.Parameter && node.Text == update.Target;
        if (value.Arguments.Length == 2 && value.Kind is NodeKind.Add or NodeKind.Subtract or NodeKind.Multiply && value.Type == update.Type)
        {
            // Derivative code only (the user's own value keeps the operations as written): d += (−k)·y is d −= k·y.
            Node other = IsTarget(value.Arguments[0]) ? value.Arguments[1] : value.Arguments[0];
            if (update.IsDerivative && value.Kind == NodeKind.Add && (IsTarget(value.Arguments[0]) || IsTarget(value.Arguments[1]))
                && other.Kind == NodeKind.Multiply && other.Arguments[0].Kind == NodeKind.Constant && other.Arguments[0].Value < 0)
            {
                return (AssignmentForm.Subtract, builder.Negate(other));
            }

            AssignmentForm form = value.Kind switch { NodeKind.Add => AssignmentForm.Add, NodeKind.Subtract => AssignmentForm.Subtract, _ => AssignmentForm.Multiply };
            if (IsTarget(value.Arguments[0]))
            {
                return (form, value.Arguments[1]);
            }

            if (value.Kind != NodeKind.Subtract && IsTarget(value.Arguments[1]))
            {
                return (form, value.Arguments[0]);   // + and * commute exactly in IEEE arithmetic
            }
        }

        return (AssignmentForm.Assign, value);
    }

    /// <summary>In place when the span carries on with factor 1 and no other update at the end of the same loop reads it.</summary>
    /// <remarks>A term that reads a copy of the span taken earlier (<see cref="MethodPlan.SpanSnapshotOf"/>) does not carry it on.</remarks>
    public static bool UpdatesInPlace(DerivativeProgram program, LoopSegment loop, StateDerivatives d, int v, IReadOnlyDictionary<VectorTerm, SpanSnapshot> snapshots)
    {
        bool carries = d.NextVector.Any(t => t.Vector == v && t.SourceSpan == d.VectorNames[v] && !snapshots.ContainsKey(t) && t.Coefficient.IsConstant(1));
        bool readByOthers = loop.States.Any(other => program.States.TryGetValue(other, out StateDerivatives? o) && o != d
            && o.NextVector.Any(t => t.SourceSpan == d.VectorNames[v]));
        return carries && !readByOthers;
    }

    /// <summary>The spans accumulated in the gradient itself, each with the vector whose slice it is.</summary>
    public static Dictionary<string, int> InGradient(DerivativeProgram program, IReadOnlyDictionary<VectorTerm, SpanSnapshot> snapshots) =>
        InResult(program, program.VectorGradient, snapshots, new HashSet<string>(StringComparer.Ordinal));

    /// <summary>The same for the product of a Hessian–vector product method (<see cref="HessianVectorProgram"/>): the spans
    /// accumulated in the product itself, other than those already in the gradient.</summary>
    public static Dictionary<string, int> InProduct(DerivativeProgram program, IReadOnlyDictionary<VectorTerm, SpanSnapshot> snapshots, IEnumerable<string> inGradient) =>
        InResult(program, program.ProductVector, snapshots, new HashSet<string>(inGradient, StringComparer.Ordinal));

    private static Dictionary<string, int> InResult(DerivativeProgram program, List<VectorTerm> resultTerms, IReadOnlyDictionary<VectorTerm, SpanSnapshot> snapshots,
        HashSet<string> taken)
    {
        var inGradient = new Dictionary<string, int>(StringComparer.Ordinal);
        for (int v = 0; v < program.Vectors.Length; v++)
        {
            var terms = resultTerms.Where(t => t.Vector == v).ToList();
            if (terms.Count == 1 && terms[0].Index is null && terms[0].SourceSpan is { } span && terms[0].Coefficient.IsConstant(1)
                && !snapshots.ContainsKey(terms[0]) && !inGradient.ContainsKey(span) && !taken.Contains(span))
            {
                inGradient[span] = v;
            }
        }

        return inGradient;
    }

    /// <summary>The spans whose loop writes each element exactly once, with the stride of the writes.</summary>
    public static Dictionary<string, int> SingleWrite(DerivativeProgram program, IReadOnlyDictionary<string, ReverseReplay> replayed,
        IReadOnlyDictionary<VectorTerm, SpanSnapshot> snapshots)
    {
        var singleWrite = new Dictionary<string, int>(StringComparer.Ordinal);
        foreach (LoopSegment loop in program.Loops)
        {
            foreach (LoopState state in loop.States)
            {
                if (program.States.TryGetValue(state, out StateDerivatives? d))
                {
                    for (int v = 0; v < d.VectorNames.Length; v++)
                    {
                        int stride = UpdatesInPlace(program, loop, d, v, snapshots) ? SingleWriteLoop.Stride(program, loop, d, v, program.Vectors[v] + ".Length", replayed) : 0;
                        if (stride > 0)
                        {
                            singleWrite[d.VectorNames[v]] = stride;
                        }
                    }
                }
            }
        }

        return singleWrite;
    }
}
