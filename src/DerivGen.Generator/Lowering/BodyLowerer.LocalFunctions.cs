using System.Collections.Generic;
using System.Linq;
using DerivGen.Generator.Model;
using Microsoft.CodeAnalysis;
using Microsoft.CodeAnalysis.Operations;

namespace DerivGen.Generator.Lowering;

// Calls of local functions declared in the body: inlined. Each argument is evaluated once, in order, into a fresh IR
// local bound to the parameter; the local function's own locals get fresh names at every call; what it captures is read
// as it is at the call (captured locals and parameters are the method's IR locals and parameters already).
internal sealed partial class BodyLowerer
{
    private const string LocalFunctionRewrite =
        "inlined local functions take double, float, int or bool parameters by value, return one of those types, are not generic or recursive, do not assign what they capture, and have an expression body or a block of local declarations and assignments ending in one return";

    /// <summary>The body being lowered, to find the declarations of the local functions it calls.</summary>
    private IBlockOperation? _root;

    /// <summary>Parameters of the local functions being inlined, bound to the IR locals holding their arguments.</summary>
    private readonly Dictionary<IParameterSymbol, IrExpression> _boundParameters = new(SymbolEqualityComparer.Default);

    /// <summary>The local functions being inlined (a call of one of them again is recursion).</summary>
    private readonly List<IMethodSymbol> _inlining = new();

    private IrExpression? LowerLocalFunctionCall(IInvocationOperation invocation, IMethodSymbol target)
    {
        string name = "'" + target.Name + "'";
        if (_inlining.Contains(target.OriginalDefinition, SymbolEqualityComparer.Default))
        {
            return Unsupported(invocation, "the recursive call of the local function " + name,
                "a local function is inlined at each call, so it cannot call itself; write the recursion as a loop in the method");
        }

        ILocalFunctionOperation? declaration = _root?.Descendants().OfType<ILocalFunctionOperation>()
            .FirstOrDefault(f => SymbolEqualityComparer.Default.Equals(f.Symbol, target.OriginalDefinition));
        if (declaration?.Body is not { } body || target.IsGenericMethod || ScalarTypeOf(target.ReturnType) is not { } returnType
            || target.Parameters.Any(p => ScalarTypeOf(p.Type) is null || p.RefKind is not (RefKind.None or RefKind.In)))
        {
            return Unsupported(invocation, "the call of the local function " + name, LocalFunctionRewrite);
        }

        if (WhyNotInlinedHere(invocation) is { } where)
        {
            return Unsupported(invocation, "the call of the local function " + name + " " + where,
                "its statements would run where the expression is not evaluated; call it before, into a local ('" + DerivGen.Generator.Emit.ExpressionWriter.TypeKeyword(returnType) + " v = " + target.Name + "(…);'), and use the local");
        }

        for (int i = 0; i < body.Operations.Length; i++)
        {
            IOperation statement = body.Operations[i];
            bool allowed = i == body.Operations.Length - 1
                ? statement is IReturnOperation { ReturnedValue: not null }
                : statement is IVariableDeclarationGroupOperation or IExpressionStatementOperation;
            if (!allowed)
            {
                return Unsupported(invocation, "the call of the local function " + name + ", whose body has " + DescribeInlinedStatement(statement),
                    "loops, branches and early returns inside a local function are not inlined in this version (the conditional operator ?: is); "
                    + "write its statements in the method, or make it a static method of this type with double, float, int or bool parameters (a helper, differentiated through)");
            }
        }

        foreach (IOperation operation in body.Descendants())
        {
            IOperation? assigned = operation switch
            {
                IAssignmentOperation assignment => assignment.Target,
                IIncrementOrDecrementOperation increment => increment.Target,
                _ => null,
            };
            if (assigned is ILocalReferenceOperation { Local: var local } && !SymbolEqualityComparer.Default.Equals(local.ContainingSymbol, target.OriginalDefinition))
            {
                return Unsupported(invocation, "the call of the local function " + name + ", which assigns the captured local '" + local.Name + "'",
                    "let it return the new value and assign that at the call ('" + local.Name + " = " + target.Name + "(…);')");
            }

            if (assigned is ITupleOperation)
            {
                return Unsupported(invocation, "the call of the local function " + name + ", which assigns a tuple", "assign each local on its own");
            }
        }

        // The arguments, evaluated once each, in order, into fresh locals.
        var bound = new List<IParameterSymbol>();
        foreach (IArgumentOperation argument in invocation.Arguments)
        {
            if (argument.Parameter is not { } parameter || LowerExpression(argument.Value) is not { } lowered)
            {
                Unbind(bound);
                return null;
            }

            ScalarType parameterType = ScalarTypeOf(parameter.Type)!.Value;
            string local = FreshName(parameter.Name + "Arg");
            AssignLocal(local, Convert(lowered, parameterType));
            _boundParameters[parameter.OriginalDefinition] = new IrLocal(local, parameterType);
            bound.Add(parameter.OriginalDefinition);
        }

        foreach (IParameterSymbol outer in _method.Parameters)
        {
            _usedLocalNames.Add(outer.Name); // a local of the local function may shadow a parameter of the method
        }

        _inlining.Add(target.OriginalDefinition);
        try
        {
            for (int i = 0; i < body.Operations.Length - 1; i++)
            {
                switch (body.Operations[i])
                {
                    case IVariableDeclarationGroupOperation group:
                        foreach (IVariableDeclaratorOperation declarator in group.Declarations.SelectMany(d => d.Declarators))
                        {
                            LowerDeclarator(declarator); // a fresh name at every call (DeclareLocal makes it unique)
                        }

                        break;
                    case IExpressionStatementOperation { Operation: var expression }:
                        LowerExpressionStatement(expression);
                        break;
                }
            }

            IrExpression? value = LowerExpression(((IReturnOperation)body.Operations[body.Operations.Length - 1]).ReturnedValue!);
            return value is null ? null : Convert(value, returnType);
        }
        finally
        {
            _inlining.RemoveAt(_inlining.Count - 1);
            Unbind(bound);
        }
    }

    private static string DescribeInlinedStatement(IOperation statement) => statement switch
    {
        ILoopOperation => "a loop",
        IConditionalOperation or ISwitchOperation => "a branch",
        IReturnOperation => "an early return",
        IExpressionStatementOperation or IVariableDeclarationGroupOperation => "no return at its end",
        _ => DescribeStatement(statement),
    };

    private void Unbind(List<IParameterSymbol> bound)
    {
        foreach (IParameterSymbol parameter in bound)
        {
            _boundParameters.Remove(parameter);
        }
    }

    /// <summary>
    /// Where the statements of an inlined call, placed before the statement that contains it, would not run exactly once
    /// when the call is evaluated: an arm of ?:, a switch expression, the right of &amp;&amp;/||, a loop's condition or
    /// step. Null where they do.
    /// </summary>
    private static string? WhyNotInlinedHere(IOperation call)
    {
        for (IOperation? child = call, parent = call.Parent; parent is not null; child = parent, parent = parent.Parent)
        {
            switch (parent)
            {
                case IConditionalOperation conditional when conditional.Type is not null && conditional.Type.SpecialType != SpecialType.System_Void && child != conditional.Condition:
                    return "in an arm of the conditional operator";
                case ISwitchExpressionArmOperation:
                    return "in an arm of a switch expression";
                case IBinaryOperation { OperatorKind: BinaryOperatorKind.ConditionalAnd or BinaryOperatorKind.ConditionalOr } logical when child == logical.RightOperand:
                    return "on the right of && or ||";
                case ICoalesceOperation:
                    return "in a ?? expression";
                case ILoopOperation loop when child != loop.Body:
                    return "in the condition or step of a loop";
                case ISwitchCaseOperation:
                    return "in a case guard";
                case IVariableDeclarationGroupOperation or IExpressionStatementOperation or IReturnOperation:
                    return null;
                case IConditionalOperation or ISwitchOperation or ILocalFunctionOperation or IBlockOperation:
                    return null; // an if condition or a switch value: evaluated once, before the branches
            }
        }

        return null;
    }
}
