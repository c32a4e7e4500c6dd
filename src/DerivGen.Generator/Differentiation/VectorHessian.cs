using System;
using System.Collections.Generic;
using System.Linq;
using System.Threading;
using DerivGen.Generator.Model;

namespace DerivGen.Generator.Differentiation;

/// <summary>
/// The Hessian of a method with vector variables, one pair of slots at a time. The method is rewritten into a
/// "pair" method whose vectors are data and whose element reads are shifted by two extra scalar variables,
/// <c>w[j] + (slot(j) == row ? tRow : 0) + (slot(j) == column ? tColumn : 0)</c>, evaluated at tRow = tColumn = 0. The
/// scalar machinery then gives, exactly, ∂²f/∂tRow∂tColumn = H[row, column] and ∂²f/∂tRow∂s = H[row, s] for every
/// scalar variable s. The emitter loops over the pairs of vector slots (row ≤ column): n_v(n_v + 1)/2 passes over the
/// method, so this suits tens to a few hundred vector elements, not thousands.
/// </summary>
internal sealed record PairHessian(MethodSpec Spec, DerivativeProgram Program, string Row, string Column, int ScalarCount)
{
    public static PairHessian Create(MethodSpec spec, CancellationToken cancellationToken)
    {
        var taken = new HashSet<string>(spec.Parameters.Select(p => p.Name), StringComparer.Ordinal);
        ProgramGraph.CollectLocalNames(spec.Body, taken);
        string row = Identifiers.Unique("row", taken), column = Identifiers.Unique("column", taken);
        string tRow = Identifiers.Unique("tRow", taken), tColumn = Identifiers.Unique("tColumn", taken);

        SlotOffset[] vectorOffsets = SlotLayout.Of(spec).Vector;
        var vectors = spec.Parameters.Where(p => p.IsVector).ToList();
        var shifts = new Dictionary<string, IrExpression>(StringComparer.Ordinal);
        for (int v = 0; v < vectors.Count; v++)
        {
            shifts[vectors[v].Name] = vectorOffsets[v].IsZero ? new IrConstant(0, ScalarType.Int32) : new IrSlotOffset(vectorOffsets[v].Constant, vectorOffsets[v].VectorsBefore.ToEquatableArray());
        }

        ScalarType type = spec.ReturnType;
        var rewriter = new Rewriter(shifts, new IrParameter(row, ScalarType.Int32), new IrParameter(column, ScalarType.Int32),
            new IrParameter(tRow, type), new IrParameter(tColumn, type), type);
        string scalarType = type == ScalarType.Single ? "float" : "double";
        var parameters = spec.Parameters.Select(p => p.IsVector ? p with { IsVariable = false, IsVector = false } : p).ToList();
        parameters.Add(new ParameterSpec(row, string.Empty, "int", IsVariable: false));
        parameters.Add(new ParameterSpec(column, string.Empty, "int", IsVariable: false));
        parameters.Add(new ParameterSpec(tRow, string.Empty, scalarType, IsVariable: true));
        parameters.Add(new ParameterSpec(tColumn, string.Empty, scalarType, IsVariable: true));

        MethodSpec pairSpec = spec with
        {
            Name = Identifiers.Escape(GeneratedNames.PairMethod(Identifiers.Unescape(spec.Name))),
            Accessibility = "private",
            Parameters = parameters.ToEquatableArray(),
            EmitHessian = true,
            Body = rewriter.Statements(spec.Body),
            IsPairMethod = true,
        };
        return new PairHessian(pairSpec, DerivativeProgram.Create(pairSpec, cancellationToken), row, column,
            spec.Parameters.Where(p => p.IsVariable && !p.IsVector).Sum(p => p.ScalarVariables.Count()));
    }

    /// <summary>Rewrites every read of a vector variable's element into the shifted read; everything else is kept.</summary>
    private sealed class Rewriter
    {
        private readonly Dictionary<string, IrExpression> _shifts;
        private readonly IrExpression _row;
        private readonly IrExpression _column;
        private readonly IrExpression _tRow;
        private readonly IrExpression _tColumn;
        private readonly ScalarType _type;

        public Rewriter(Dictionary<string, IrExpression> shifts, IrExpression row, IrExpression column, IrExpression tRow, IrExpression tColumn, ScalarType type)
        {
            _shifts = shifts;
            _row = row;
            _column = column;
            _tRow = tRow;
            _tColumn = tColumn;
            _type = type;
        }

        public EquatableArray<IrStatement> Statements(EquatableArray<IrStatement> statements) =>
            statements.Select(Statement).ToEquatableArray();

        private IrStatement Statement(IrStatement statement) => statement switch
        {
            IrAssign assign => assign with { Value = Expression(assign.Value) },
            IrReturn ret => ret with { Value = Expression(ret.Value) },
            IrOutput output => output with { Index = Expression(output.Index), Value = Expression(output.Value) },
            IrIf branch => branch with { Condition = Expression(branch.Condition), Then = Statements(branch.Then), Else = Statements(branch.Else) },
            IrFor loop => loop with { Start = Expression(loop.Start), End = Expression(loop.End), Body = Statements(loop.Body) },
            IrWhile loop => loop with { Setup = Statements(loop.Setup), Condition = Expression(loop.Condition), Body = Statements(loop.Body) },
            _ => throw new NotSupportedException("Unknown IR statement " + statement.GetType().Name),
        };

        private EquatableArray<IrExpression> Expressions(EquatableArray<IrExpression> expressions) =>
            expressions.Select(Expression).ToEquatableArray();

        private IrExpression Expression(IrExpression expression) => expression switch
        {
            IrElement element when _shifts.TryGetValue(element.Data, out IrExpression? offset) => Shifted(element with { Indices = Expressions(element.Indices) }, offset),
            IrElement element => element with { Indices = Expressions(element.Indices) },
            IrNegate negate => negate with { Operand = Expression(negate.Operand) },
            IrBinary binary => binary with { Left = Expression(binary.Left), Right = Expression(binary.Right) },
            IrConvert convert => convert with { Operand = Expression(convert.Operand) },
            IrCall call => call with { Arguments = Expressions(call.Arguments) },
            IrUserCall call => call with { Arguments = Expressions(call.Arguments) },
            IrCompare compare => compare with { Left = Expression(compare.Left), Right = Expression(compare.Right) },
            IrLogical logical => logical with { Left = Expression(logical.Left), Right = logical.Right is null ? null : Expression(logical.Right) },
            IrConditional conditional => conditional with
            {
                Condition = Expression(conditional.Condition),
                WhenTrue = Expression(conditional.WhenTrue),
                WhenFalse = Expression(conditional.WhenFalse),
            },
            _ => expression,
        };

        /// <summary>w[j] + (slot == row ? tRow : 0) + (slot == column ? tColumn : 0), slot = j + the vector's offset.</summary>
        private IrExpression Shifted(IrElement element, IrExpression offset)
        {
            IrExpression slot = offset is IrConstant { Bits: 0 } ? element.Indices[0] : new IrBinary(BinaryOperator.Add, element.Indices[0], offset, ScalarType.Int32);
            IrExpression zero = new IrConstant(BitConverter.DoubleToInt64Bits(0.0), _type);
            IrExpression alongRow = new IrConditional(new IrCompare(ComparisonOperator.Equal, slot, _row), _tRow, zero, _type);
            IrExpression alongColumn = new IrConditional(new IrCompare(ComparisonOperator.Equal, slot, _column), _tColumn, zero, _type);
            return new IrBinary(BinaryOperator.Add, new IrBinary(BinaryOperator.Add, element, alongRow, _type), alongColumn, _type);
        }
    }
}
