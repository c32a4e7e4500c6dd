using System.Collections.Generic;
using System.Linq;
using DerivGen.Generator.Symbolic;

namespace DerivGen.Generator.Differentiation;

/// <summary>What one statement of a method's results does.</summary>
internal enum ResultKind
{
    /// <summary>The slice of the gradient for vector <see cref="ResultStatement.Row"/> cleared, then its terms added.</summary>
    VectorGradient,

    /// <summary>Nothing to write: the vector's slice of the gradient already holds the span <see cref="ResultStatement.Span"/>
    /// (<see cref="InPlaceAccumulation.InGradient"/>).</summary>
    VectorGradientInPlace,

    /// <summary><c>gradient[slot of Row] = Value</c>.</summary>
    GradientEntry,

    /// <summary><c>hessian[n·Row + Column] = Value</c>, Column ≤ Row, mirrored to <c>hessian[n·Column + Row]</c> below the diagonal.</summary>
    HessianEntry,

    /// <summary>The slice of the product for vector <see cref="ResultStatement.Row"/> cleared, then its terms added (a
    /// Hessian–vector product method, <see cref="HessianVectorProgram"/>).</summary>
    VectorProduct,

    /// <summary>Nothing to write: the vector's slice of the product already holds the span <see cref="ResultStatement.Span"/>
    /// (<see cref="InPlaceAccumulation.InProduct"/>).</summary>
    VectorProductInPlace,

    /// <summary><c>product[slot of Row] = Value</c>.</summary>
    ProductEntry,

    /// <summary><c>return Value;</c></summary>
    Return,
}

/// <summary>One statement of the results, written after the last loop (<see cref="ResultKind"/> says which fields are used).</summary>
internal sealed record ResultStatement(ResultKind Kind, Node? Value = null, int Row = 0, int Column = 0, bool Mirrored = false, string? Span = null,
    IReadOnlyList<VectorTerm>? Terms = null);

/// <summary>Where an output's Jacobian row starts.</summary>
internal enum RowStartKind
{
    /// <summary>A constant (<see cref="OutputStatement.ConstantRow"/>): the index is a constant and n is known.</summary>
    Constant,

    /// <summary>The index itself, as written (one slot per row, and the index is a leaf or a local).</summary>
    Index,

    /// <summary>A local <c>row = n · index</c> declared before the row.</summary>
    Local,
}

/// <summary>
/// One write of a method with outputs, followed by its Jacobian row: <c>outputs[index] = value;</c>, then
/// <c>jacobian[row + slot of k] = Entries[k]</c> for each scalar variable, then for each vector the slice of the row
/// cleared and <see cref="VectorRow"/>'s terms for it added.
/// </summary>
internal sealed record OutputStatement(OutputWrite Output, RowStartKind RowStart, int ConstantRow, IReadOnlyList<Node> Entries,
    IReadOnlyList<IReadOnlyList<VectorTerm>> VectorRow);

/// <summary>The statements writing a method's results: the outputs with their Jacobian rows where they are written, or
/// the gradient (vectors' slices, then scalar entries), the Hessian's lower triangle (mirrored) or the Hessian–vector
/// product (vectors' slices, then scalar entries), and the return.</summary>
internal static class ResultStatements
{
    public static Dictionary<int, List<OutputStatement>> Outputs(MethodPlan plan)
    {
        DerivativeProgram program = plan.Program;
        int n = program.Variables.Length;
        int vectors = program.Vectors.Length;
        bool oneSlot = n == 1 && vectors == 0; // the row's width: the scalars, and each vector's length
        var byStage = new Dictionary<int, List<OutputStatement>>();
        foreach (OutputWrite output in program.Outputs)
        {
            RowStartKind start = output.Index.Kind == NodeKind.Constant && (vectors == 0 || output.Index.Value == 0) ? RowStartKind.Constant
                : oneSlot && (output.Index.IsLeaf || plan.HasLocal(output.Index)) ? RowStartKind.Index
                : RowStartKind.Local;
            int constantRow = start == RowStartKind.Constant ? (int)output.Index.Value * n : 0;
            var vectorRow = Enumerable.Range(0, vectors).Select(v => (IReadOnlyList<VectorTerm>)output.VectorRow.Where(t => t.Vector == v).ToList()).ToList();
            if (!byStage.TryGetValue(output.Stage, out List<OutputStatement>? statements))
            {
                byStage[output.Stage] = statements = new List<OutputStatement>();
            }

            statements.Add(new OutputStatement(output, start, constantRow, output.Row, vectorRow));
        }

        return byStage;
    }

    /// <summary>The results of a method without outputs (none for a method with outputs: they are written where the method writes them).</summary>
    public static List<ResultStatement> Results(MethodPlan plan, bool hasOutputs)
    {
        var results = new List<ResultStatement>();
        if (hasOutputs)
        {
            return results;
        }

        DerivativeProgram program = plan.Program;
        for (int v = 0; v < program.Vectors.Length; v++)
        {
            results.Add(plan.InGradient.FirstOrDefault(p => p.Value == v).Key is { } span
                ? new ResultStatement(ResultKind.VectorGradientInPlace, Row: v, Span: span)
                : new ResultStatement(ResultKind.VectorGradient, Row: v, Terms: program.VectorGradient.Where(t => t.Vector == v).ToList()));
        }

        for (int i = 0; i < program.Variables.Length; i++)
        {
            results.Add(new ResultStatement(ResultKind.GradientEntry, program.Gradient[i], Row: i));
        }

        if (plan.WithHessian)
        {
            for (int i = 0; i < program.Variables.Length; i++)
            {
                for (int j = 0; j <= i; j++)
                {
                    results.Add(new ResultStatement(ResultKind.HessianEntry, program.Hessian![i][j], Row: i, Column: j, Mirrored: i != j));
                }
            }
        }

        if (program.Product is { } product)
        {
            for (int v = 0; v < program.Vectors.Length; v++)
            {
                results.Add(plan.InProduct.FirstOrDefault(p => p.Value == v).Key is { } span
                    ? new ResultStatement(ResultKind.VectorProductInPlace, Row: v, Span: span)
                    : new ResultStatement(ResultKind.VectorProduct, Row: v, Terms: program.ProductVector.Where(t => t.Vector == v).ToList()));
            }

            for (int i = 0; i < product.Length; i++)
            {
                results.Add(new ResultStatement(ResultKind.ProductEntry, product[i], Row: i));
            }
        }

        results.Add(new ResultStatement(ResultKind.Return, program.Value));
        return results;
    }
}
