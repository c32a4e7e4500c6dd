using System;
using System.Collections.Generic;
using System.Text;
using DerivGen.Generator.Lowering;
using DerivGen.Generator.Model;
using DerivGen.Generator.Symbolic;

namespace DerivGen.Generator.Emit;

/// <summary>
/// Writes a DAG node as an expression, either as C# (for the code) or in the plain notation of the formulas in
/// comments. Nodes that have a name (a temporary or a user local) are written as that name; others are written inline.
/// Parentheses follow C# precedence and keep the tree's exact grouping: floating-point + and * are not associative, so
/// <c>a + (b + c)</c> keeps its parentheses.
/// </summary>
internal sealed class ExpressionWriter
{
    private const int Conditional = 1;
    private const int ConditionalOr = 2;
    private const int ConditionalAnd = 3;
    private const int Equality = 4;
    private const int Relational = 5;
    private const int Additive = 6;
    private const int Multiplicative = 7;
    private const int Unary = 8;
    private const int Primary = 9;

    private readonly Func<Node, string?> _nameOf;
    private readonly Func<Node, string>? _calleeDerivative;
    private readonly bool _formula;
    private readonly int _maxLength;

    /// <param name="nameOf">The name to write for a node, or null to write it inline.</param>
    /// <param name="formula">Plain notation for comments instead of C#.</param>
    /// <param name="maxLength">Formulas longer than this are abandoned (<see cref="TryWrite"/> returns null).</param>
    /// <param name="calleeDerivative">For code: how to read a called method's partial derivative (from its buffer).</param>
    public ExpressionWriter(Func<Node, string?> nameOf, bool formula, int maxLength = int.MaxValue, Func<Node, string>? calleeDerivative = null)
    {
        _nameOf = nameOf;
        _calleeDerivative = calleeDerivative;
        _formula = formula;
        _maxLength = maxLength;
    }

    public string Write(Node node) => TryWrite(node) ?? throw new InvalidOperationException("Expression too long.");

    /// <summary>The node as the left factor of a product written around it (parenthesized unless it binds tighter).</summary>
    public string WriteFactor(Node node)
    {
        var text = new StringBuilder();
        return Write(node, Multiplicative, text) ? text.ToString() : throw new InvalidOperationException("Expression too long.");
    }

    public string? TryWrite(Node node)
    {
        var text = new StringBuilder();
        return Write(node, Conditional, text) ? text.ToString() : null;
    }

    private bool Write(Node node, int minimumPrecedence, StringBuilder text)
    {
        System.Runtime.CompilerServices.RuntimeHelpers.EnsureSufficientExecutionStack(); // a deep input fails as a diagnostic, never as a stack overflow
        if (text.Length > _maxLength)
        {
            return false;
        }

        string? name = IsNameable(node) ? _nameOf(node) : null;
        if (name is not null)
        {
            text.Append(name);
            return true;
        }

        if (node.Kind == NodeKind.Convert && (_formula || node.Arguments[0].Type == node.Type))
        {
            // Formulas are about values, not C# types; a conversion to the operand's own type is a user's local that
            // holds a constant (kept so that C# does not evaluate the operation using it at compile time).
            return Write(node.Arguments[0], minimumPrecedence, text);
        }

        int precedence = Precedence(node);
        bool parenthesize = precedence < minimumPrecedence;
        if (parenthesize)
        {
            text.Append('(');
        }

        bool ok = WriteCore(node, text);
        if (parenthesize)
        {
            text.Append(')');
        }

        return ok;
    }

    private bool WriteConversion(Node node, StringBuilder text)
    {
        if (_formula)
        {
            return Write(node.Arguments[0], Primary, text);
        }

        if (node.Type == ScalarType.Generic)
        {
            // No cast converts to a type parameter; T.CreateTruncating(v) is v rounded to T (from int, float or double).
            text.Append("T.CreateTruncating(");
            return Write(node.Arguments[0], Conditional, text) && Append(text, ")");
        }

        text.Append('(').Append(TypeKeyword(node.Type)).Append(')');
        return Write(node.Arguments[0], Primary, text);
    }

    private bool WriteCore(Node node, StringBuilder text)
    {
        switch (node.Kind)
        {
            case NodeKind.Constant:
                text.Append(_formula ? Literals.Plain(node.Value, node.Type) : Literals.CSharp(node.Value, node.Type));
                return true;

            case NodeKind.Parameter:
            case NodeKind.External:
                text.Append(_formula ? Plain(node.Text!) : node.Text);
                return true;

            case NodeKind.Negate:
                text.Append('-');
                return Write(node.Arguments[0], Primary, text);

            case NodeKind.Add:
            case NodeKind.Subtract:
            case NodeKind.Multiply:
            case NodeKind.Divide:
            {
                int precedence = Precedence(node);
                string op = node.Kind switch
                {
                    NodeKind.Add => " + ",
                    NodeKind.Subtract => " - ",
                    NodeKind.Multiply => _formula ? "·" : " * ",
                    _ => _formula ? "/" : " / ",
                };
                return Write(node.Arguments[0], precedence, text)
                    && Append(text, op)
                    && Write(node.Arguments[1], precedence + 1, text);
            }

            case NodeKind.Convert:
                return WriteConversion(node, text);

            case NodeKind.Call:
                text.Append(_formula ? FormulaName(node.Function) : CSharpHost(node) + "." + MathFunctions.CSharpName(node.Function)).Append('(');
                for (int i = 0; i < node.Arguments.Length; i++)
                {
                    if (i > 0)
                    {
                        text.Append(", ");
                    }

                    if (!Write(node.Arguments[i], Conditional, text))
                    {
                        return false;
                    }
                }

                text.Append(')');
                return true;

            case NodeKind.Compare:
            {
                string comparison = node.Comparison switch
                {
                    ComparisonOperator.Less => " < ",
                    ComparisonOperator.LessOrEqual => _formula ? " ≤ " : " <= ",
                    ComparisonOperator.Greater => " > ",
                    ComparisonOperator.GreaterOrEqual => _formula ? " ≥ " : " >= ",
                    ComparisonOperator.Equal => " == ",
                    _ => _formula ? " ≠ " : " != ",
                };
                int precedence = Precedence(node);
                return Write(node.Arguments[0], precedence + 1, text) && Append(text, comparison) && Write(node.Arguments[1], precedence + 1, text);
            }

            case NodeKind.And:
            case NodeKind.Or:
            {
                int precedence = Precedence(node);
                return Write(node.Arguments[0], precedence, text)
                    && Append(text, node.Kind == NodeKind.And ? " && " : " || ")
                    && Write(node.Arguments[1], precedence + 1, text);
            }

            case NodeKind.Not:
                text.Append('!');
                return Write(node.Arguments[0], Primary, text);

            case NodeKind.UserCall:
                text.Append(_formula ? node.Callee!.Method : node.Text).Append('(');
                for (int i = 0; i < node.Arguments.Length; i++)
                {
                    if ((i > 0 && !Append(text, ", ")) || !Write(node.Arguments[i], Conditional, text))
                    {
                        return false;
                    }
                }

                text.Append(')');
                return true;

            case NodeKind.CallPartial:
            case NodeKind.CallSecondPartial:
                if (!_formula)
                {
                    text.Append(_calleeDerivative?.Invoke(node) ?? throw new InvalidOperationException("No buffer for a called method's derivative."));
                    return true;
                }

                CalleeInfo callee = node.Arguments[0].Callee!;
                int m = callee.VariablePositions.Length, index = (int)node.Value;
                text.Append(node.Kind == NodeKind.CallPartial
                    ? "∂" + callee.Method + "/∂" + callee.VariableNames[index]
                    : "∂²" + callee.Method + "/∂" + callee.VariableNames[index / m] + "∂" + callee.VariableNames[index % m]);
                return true;

            case NodeKind.Element:
            case NodeKind.VariableElement:
            {
                // "Points|.X" is Points[i].X: a component of a struct element (Lowering/StructLayout.cs).
                int member = node.Text!.IndexOf(Lowering.StructLayout.ElementMemberMark);
                text.Append(node.Text, 0, member < 0 ? node.Text.Length : member).Append('[');
                for (int i = 0; i < node.Arguments.Length; i++)
                {
                    if ((i > 0 && !Append(text, ", ")) || !Write(node.Arguments[i], Conditional, text))
                    {
                        return false;
                    }
                }

                text.Append(']').Append(member < 0 ? string.Empty : node.Text.Substring(member + 1));
                return true;
            }

            case NodeKind.Select:
                return Write(node.Arguments[0], Conditional + 1, text)
                    && Append(text, " ? ") && Write(node.Arguments[1], Conditional + 1, text)
                    && Append(text, " : ") && Write(node.Arguments[2], Conditional, text);

            default:
                throw new InvalidOperationException("Unknown node kind " + node.Kind);
        }
    }

    private static bool Append(StringBuilder text, string value)
    {
        text.Append(value);
        return true;
    }

    private int Precedence(Node node)
    {
        if (IsNameable(node) && _nameOf(node) is not null)
        {
            return Primary;
        }

        return node.Kind switch
        {
            NodeKind.Constant => Literals.IsNegative(node.Value) && !double.IsNaN(node.Value) ? Unary : Primary,
            NodeKind.Negate => Unary,
            NodeKind.Convert => _formula || node.Type == ScalarType.Generic ? Primary : Unary,
            NodeKind.Add or NodeKind.Subtract => Additive,
            NodeKind.Multiply or NodeKind.Divide => Multiplicative,
            NodeKind.Compare => node.Comparison is ComparisonOperator.Equal or ComparisonOperator.NotEqual ? Equality : Relational,
            NodeKind.And => ConditionalAnd,
            NodeKind.Or => ConditionalOr,
            NodeKind.Not => Unary,
            NodeKind.Select => Conditional,
            _ => Primary,
        };
    }

    /// <summary>Constants and method parameters are always written as themselves; any other node may have a local, and a
    /// slot offset's leaf is written from its offset (both come from the name function).</summary>
    private static bool IsNameable(Node node) =>
        !node.IsLeaf || (node.Kind == NodeKind.Parameter && node.Stage > 0) || (node.Kind == NodeKind.External && Differentiation.SlotOffset.IsLeafKey(node.Text));

    internal static string TypeKeyword(ScalarType type) => type switch
    {
        ScalarType.Single => "float",
        ScalarType.Int32 => "int",
        ScalarType.Boolean => "bool",
        ScalarType.Generic => "T",
        _ => "double",
    };

    private static string CSharpHost(Node node)
    {
        MathHost host = node.Host;
        if (host == MathHost.Generic || (host == MathHost.Default && node.Type == ScalarType.Generic))
        {
            return "T";
        }

        if (host == MathHost.Default)
        {
            bool onMath = node.Function != MathFunction.Hypot;
            host = node.Type == ScalarType.Single ? (onMath ? MathHost.MathF : MathHost.Single) : (onMath ? MathHost.Math : MathHost.Double);
        }

        return host switch
        {
            MathHost.MathF => "global::System.MathF",
            MathHost.Double => "double",
            MathHost.Single => "float",
            _ => "global::System.Math",
        };
    }

    private static string FormulaName(MathFunction function) => function switch
    {
        MathFunction.LogBase => "log",
        MathFunction.Log => "ln",
        MathFunction.FusedMultiplyAdd => "fma",
        MathFunction.Ceiling => "ceil",
        MathFunction.Truncate => "trunc",
        _ => function.ToString().ToLowerInvariant(),
    };

    private static string Plain(string text)
    {
        // Constants from outside the method are shown by their own name: global::Ns.Type.Rate → Type.Rate.
        if (text.StartsWith("global::", StringComparison.Ordinal))
        {
            string[] parts = text.Substring("global::".Length).Split('.');
            return parts.Length >= 2 ? parts[parts.Length - 2] + "." + parts[parts.Length - 1] : parts[0];
        }

        return text.StartsWith("@", StringComparison.Ordinal) ? text.Substring(1) : text;
    }
}
