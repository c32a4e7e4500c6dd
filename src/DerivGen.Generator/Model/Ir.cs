namespace DerivGen.Generator.Model;

// The intermediate representation (IR) of a differentiable method body: what Lowering produces from Roslyn's
// IOperation tree and Differentiation consumes. Records of strings, numbers, enums and EquatableArrays only, so it
// compares by value and can sit in the incremental cache. No Roslyn type may be reachable from here.

/// <summary>The scalar types the IR computes with.</summary>
internal enum ScalarType
{
    Int32,
    Single,
    Double,
    Boolean,

    /// <summary>The type parameter T of a generic method constrained to the floating-point interfaces of
    /// System.Numerics (Lowering/BodyLowerer.GenericMath.cs); its generated methods are generic over the same T.</summary>
    Generic,
}

internal enum BinaryOperator
{
    Add,
    Subtract,
    Multiply,
    Divide,
}

/// <summary>A comparison, in the IR and in the expression DAG alike.</summary>
internal enum ComparisonOperator
{
    Less,
    LessOrEqual,
    Greater,
    GreaterOrEqual,
    Equal,
    NotEqual,
}

internal enum LogicalOperator
{
    And,
    Or,
    Not,
}

/// <summary>Which type a math function was called on; the value code calls exactly what the user called.</summary>
internal enum MathHost
{
    /// <summary>Chosen by the emitter (Math for double, MathF for float); used by derivative code.</summary>
    Default,
    Math,
    MathF,
    Double,
    Single,

    /// <summary>The static members of the method's type parameter: <c>T.Exp(x)</c>.</summary>
    Generic,
}

/// <summary>An expression of the IR. <see cref="Type"/> is the C# type of its value.</summary>
internal abstract record IrExpression(ScalarType Type);

/// <summary>A numeric constant. <paramref name="Bits"/> holds the IEEE bits of the value as a double
/// (so that 0.0 and -0.0 differ), or the integer itself for <see cref="ScalarType.Int32"/>.</summary>
internal sealed record IrConstant(long Bits, ScalarType Type) : IrExpression(Type);

/// <summary>A read of a method parameter (a differentiation variable or a constant of the call).</summary>
internal sealed record IrParameter(string Name, ScalarType Type) : IrExpression(Type);

/// <summary>A read of a local variable, by its unique IR name.</summary>
internal sealed record IrLocal(string Name, ScalarType Type) : IrExpression(Type);

/// <summary>A value read from outside the method that is constant with respect to the variables (a static readonly
/// field or a static property), as a fully qualified C# expression.</summary>
internal sealed record IrExternal(string Text, ScalarType Type) : IrExpression(Type);

/// <summary>An index in the gradient span: <paramref name="Constant"/> plus the lengths of the vectors
/// <paramref name="VectorsBefore"/> (Differentiation's pair method shifts its reads by one; Lower never makes it).</summary>
internal sealed record IrSlotOffset(int Constant, EquatableArray<string> VectorsBefore) : IrExpression(ScalarType.Int32);

internal sealed record IrNegate(IrExpression Operand, ScalarType Type) : IrExpression(Type);

internal sealed record IrBinary(BinaryOperator Operator, IrExpression Left, IrExpression Right, ScalarType Type)
    : IrExpression(Type);

/// <summary>A numeric conversion between int, float and double.</summary>
internal sealed record IrConvert(IrExpression Operand, ScalarType Type) : IrExpression(Type);

internal sealed record IrCall(MathFunction Function, MathHost Host, EquatableArray<IrExpression> Arguments, ScalarType Type)
    : IrExpression(Type);

/// <summary>
/// A call of another <c>[Differentiate]</c> method of the compilation, differentiated by the chain rule with that
/// method's own generated derivatives. <paramref name="Receiver"/> is "this" or the fully qualified type;
/// <paramref name="VariablePositions"/> are the argument positions of the callee's variables, in the callee's order.
/// </summary>
internal sealed record IrUserCall(string Receiver, string Method, EquatableArray<IrExpression> Arguments, EquatableArray<int> VariablePositions,
    EquatableArray<string> VariableNames, bool HasHessian, ScalarType Type) : IrExpression(Type);

/// <summary>An element of data (an array, span or 2-D array that is not a variable): <c>x[i]</c>, <c>m[i, j]</c>.
/// <paramref name="Data"/> is the C# expression of the data (a parameter name, <c>this.field</c>, a qualified static).</summary>
internal sealed record IrElement(string Data, EquatableArray<IrExpression> Indices, ScalarType Type) : IrExpression(Type);

/// <summary>A comparison; its type is <see cref="ScalarType.Boolean"/>.</summary>
internal sealed record IrCompare(ComparisonOperator Operator, IrExpression Left, IrExpression Right) : IrExpression(ScalarType.Boolean);

/// <summary><c>&amp;&amp;</c>, <c>||</c> (two operands) or <c>!</c> (Right is null).</summary>
internal sealed record IrLogical(LogicalOperator Operator, IrExpression Left, IrExpression? Right) : IrExpression(ScalarType.Boolean);

/// <summary><c>condition ? whenTrue : whenFalse</c>.</summary>
internal sealed record IrConditional(IrExpression Condition, IrExpression WhenTrue, IrExpression WhenFalse, ScalarType Type) : IrExpression(Type);

/// <summary>A statement of the IR.</summary>
internal abstract record IrStatement;

/// <summary>Assigns a local (a declaration with initializer, an assignment or a lowered compound assignment).</summary>
internal sealed record IrAssign(string Local, IrExpression Value) : IrStatement;

/// <summary>Returns the method's value. In straight-line bodies it is the last statement.</summary>
internal sealed record IrReturn(IrExpression Value) : IrStatement;

/// <summary>
/// A write of one output of a method that returns its values in a span (<c>outputs[Index] = Value;</c>), numbered
/// <paramref name="Ordinal"/> in source order. Outputs are written unconditionally (never inside an <see cref="IrIf"/>)
/// and never read back.
/// </summary>
internal sealed record IrOutput(IrExpression Index, IrExpression Value, int Ordinal) : IrStatement;

/// <summary><c>if (Condition) { Then } else { Else }</c>.</summary>
internal sealed record IrIf(IrExpression Condition, EquatableArray<IrStatement> Then, EquatableArray<IrStatement> Else) : IrStatement;

/// <summary><c>for (int Index = Start; Index &lt; End; Index++) { Body }</c> (<c>&lt;=</c> when <paramref name="Inclusive"/>).</summary>
internal sealed record IrFor(string Index, IrExpression Start, IrExpression End, bool Inclusive, EquatableArray<IrStatement> Body) : IrStatement;

/// <summary>
/// <c>Setup; while (Condition) { Body }</c>, the condition not depending on a variable. <paramref name="Setup"/> assigns
/// the int and bool locals the loop's machinery needs (a counter, a flag set by <c>break</c>); it runs even where the
/// loop is guarded by a branch condition, which is folded into <paramref name="Condition"/>.
/// </summary>
internal sealed record IrWhile(EquatableArray<IrStatement> Setup, IrExpression Condition, EquatableArray<IrStatement> Body) : IrStatement;

/// <summary>
/// A check the user's method makes before it computes anything that could throw (<c>if (c) throw new X(…);</c>, a
/// <c>ThrowIf…</c> helper, a switch's throwing default, LINQ's empty-sequence or negative-count check), re-emitted
/// at the start of every generated method, before the span checks and before anything is written, in the user's
/// order. <paramref name="Condition"/> (null: always run <paramref name="Statement"/>) and <paramref name="Statement"/>
/// are C# text that reads only the method's parameters, constants and data, which the generated methods take under the
/// same names. Lowering accepts a check only where the user's method cannot have thrown before it, so the generated
/// methods throw exactly where the method does (Lowering/BodyLowerer.Throws.cs states the rule).
/// </summary>
internal sealed record IrGuard(string? Condition, string Statement) : IrStatement;
