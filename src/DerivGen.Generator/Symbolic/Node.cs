using System;
using DerivGen.Generator.Model;

namespace DerivGen.Generator.Symbolic;

internal enum NodeKind
{
    Constant,
    Parameter,
    External,
    Negate,
    Add,
    Subtract,
    Multiply,
    Divide,
    Convert,
    Call,
    Compare,
    Select,

    /// <summary>An element of data, <c>Text[Arguments…]</c>; the arguments are int indices.</summary>
    Element,
    And,
    Or,
    Not,

    /// <summary>An element of a vector of variables, <c>Text[Arguments[0]]</c>; Value is the vector's number.</summary>
    VariableElement,

    /// <summary>A call of another [Differentiate] method; <see cref="Node.Callee"/> says which.</summary>
    UserCall,

    /// <summary>∂callee/∂(its variable number Value), read from the callee's gradient; Arguments = [call, its arguments…].</summary>
    CallPartial,

    /// <summary>∂²callee/∂v_k∂v_l (Value = k·m + l), read from the callee's Hessian; Arguments = [call, its arguments…].</summary>
    CallSecondPartial,
}

/// <summary>What the derivative code needs to know about a called [Differentiate] method.</summary>
internal sealed class CalleeInfo
{
    public CalleeInfo(string receiver, string method, int[] variablePositions, string[] variableNames, bool hasHessian)
    {
        Receiver = receiver;
        Method = method;
        VariablePositions = variablePositions;
        VariableNames = variableNames;
        HasHessian = hasHessian;
    }

    public string Receiver { get; }

    public string Method { get; }

    public int[] VariablePositions { get; }

    public string[] VariableNames { get; }

    public bool HasHessian { get; }
}

/// <summary>
/// A node of the hash-consed expression DAG. Nodes are immutable and unique: the builder returns the existing node for
/// an expression it has seen, so equal subexpressions are one object (common subexpression elimination by
/// construction). <see cref="Id"/> grows with creation, so children always have smaller ids than their parents.
/// Lives only inside one run of the Differentiate and Emit stages; never cached.
/// </summary>
internal sealed class Node
{
    internal Node(int id, NodeKind kind, ScalarType type, Node[] arguments, double value, string? text,
        MathFunction function, MathHost host, ComparisonOperator comparison, int variableIndex, int stage, bool isActiveLeaf, CalleeInfo? callee = null)
    {
        Stage = stage;
        Id = id;
        Kind = kind;
        Type = type;
        Arguments = arguments;
        Value = value;
        Text = text;
        Function = function;
        Host = host;
        Comparison = comparison;
        VariableIndex = variableIndex;
        Callee = callee;
        foreach (Node argument in arguments)
        {
            DependsOnVariables |= argument.DependsOnVariables;
            Stage = System.Math.Max(Stage, argument.Stage);
        }

        DependsOnVariables |= variableIndex >= 0 || isActiveLeaf;
        if (type is ScalarType.Int32 or ScalarType.Boolean)
        {
            DependsOnVariables = false; // An int or bool value is flat: its derivative is 0 wherever it exists.
        }
    }

    public int Id { get; }

    public NodeKind Kind { get; }

    public ScalarType Type { get; }

    public Node[] Arguments { get; }

    /// <summary>The value of a <see cref="NodeKind.Constant"/> (a float constant holds its exact float value).</summary>
    public double Value { get; }

    /// <summary>The C# text of a <see cref="NodeKind.Parameter"/> or <see cref="NodeKind.External"/> leaf.</summary>
    public string? Text { get; }

    public MathFunction Function { get; }

    public MathHost Host { get; }

    public ComparisonOperator Comparison { get; }

    /// <summary>
    /// Where in the method the node can first be computed: 0 before any loop; for the m-th loop (from 1), 2m − 1 inside
    /// it and 2m after it. A node's stage is the latest stage of its arguments (leaves carry theirs).
    /// </summary>
    public int Stage { get; }

    /// <summary>The index of a differentiation variable in the gradient, or -1.</summary>
    public int VariableIndex { get; }

    public bool DependsOnVariables { get; }

    /// <summary>For a <see cref="NodeKind.UserCall"/>, the method called.</summary>
    public CalleeInfo? Callee { get; }

    public bool IsLeaf => Kind is NodeKind.Constant or NodeKind.Parameter or NodeKind.External;

    public bool IsConstant(double value) => Kind == NodeKind.Constant && Value.Equals(value) && !IsNegativeZero;

    public bool IsZero => Kind == NodeKind.Constant && Value == 0;

    private bool IsNegativeZero => Value == 0 && BitConverter.DoubleToInt64Bits(Value) != 0;

    public override string ToString() => Kind + "#" + Id.ToString(System.Globalization.CultureInfo.InvariantCulture);
}
