using System;
using System.Collections.Generic;
using DerivGen.Generator.Model;
using DerivGen.Generator.Symbolic;

namespace DerivGen.Generator.Differentiation;

/// <summary>
/// Turns a straight-line IR body into the expression DAG of its value, exactly as written (raw nodes only), giving
/// the user's local names to the nodes they name. Straight-line code is a single expression once locals are
/// substituted; assignments simply rebind the name.
/// </summary>
internal static class PrimalGraph
{
    public static Node Build(ExpressionBuilder builder, MethodSpec spec, IReadOnlyDictionary<string, int> variableIndex)
    {
        var locals = new Dictionary<string, Node>(StringComparer.Ordinal);
        var displayNames = new HashSet<string>(StringComparer.Ordinal);
        foreach (IrStatement statement in spec.Body)
        {
            if (statement is IrAssign first)
            {
                displayNames.Add(first.Local);
            }
        }

        var assigned = new HashSet<string>(StringComparer.Ordinal);
        Node? result = null;
        foreach (IrStatement statement in spec.Body)
        {
            switch (statement)
            {
                case IrAssign assign:
                    Node value = Build(builder, assign.Value, locals, variableIndex);
                    if (!value.IsLeaf && value.LocalName is null)
                    {
                        // A reassigned local gets a versioned name (s, s2, s3, …), the same in code and formulas.
                        value.LocalName = assigned.Add(assign.Local) ? assign.Local : Identifiers.Unique(assign.Local, displayNames);
                    }
                    else
                    {
                        assigned.Add(assign.Local);
                    }

                    locals[assign.Local] = value;
                    break;
                case IrReturn ret:
                    result = Build(builder, ret.Value, locals, variableIndex);
                    break;
            }
        }

        return result ?? throw new InvalidOperationException("The lowered body has no return statement.");
    }

    private static Node Build(ExpressionBuilder b, IrExpression expression, Dictionary<string, Node> locals, IReadOnlyDictionary<string, int> variableIndex)
    {
        switch (expression)
        {
            case IrConstant constant:
                return b.Constant(constant.Type == ScalarType.Int32 ? constant.Bits : BitConverter.Int64BitsToDouble(constant.Bits), constant.Type);
            case IrParameter parameter:
                return b.Parameter(parameter.Name, parameter.Type, variableIndex.TryGetValue(parameter.Name, out int index) ? index : -1);
            case IrLocal local:
                return locals[local.Name];
            case IrExternal external:
                return b.External(external.Text, external.Type);
            case IrNegate negate:
                return b.Raw(NodeKind.Negate, negate.Type, Build(b, negate.Operand, locals, variableIndex));
            case IrConvert convert:
                return b.Raw(NodeKind.Convert, convert.Type, Build(b, convert.Operand, locals, variableIndex));
            case IrBinary binary:
                NodeKind kind = binary.Operator switch
                {
                    BinaryOperator.Add => NodeKind.Add,
                    BinaryOperator.Subtract => NodeKind.Subtract,
                    BinaryOperator.Multiply => NodeKind.Multiply,
                    _ => NodeKind.Divide,
                };
                return b.Raw(kind, binary.Type, Build(b, binary.Left, locals, variableIndex), Build(b, binary.Right, locals, variableIndex));
            case IrCall call:
                var arguments = new Node[call.Arguments.Count];
                for (int i = 0; i < arguments.Length; i++)
                {
                    arguments[i] = Build(b, call.Arguments[i], locals, variableIndex);
                }

                return b.RawCall(call.Function, call.Host, call.Type, arguments);
            default:
                throw new InvalidOperationException("Unknown IR expression " + expression.GetType().Name);
        }
    }
}
