using System;
using System.Collections.Generic;
using System.Collections.Immutable;
using System.Linq;
using System.Threading;
using DerivGen.Generator.Diagnostics;
using DerivGen.Generator.Model;
using Microsoft.CodeAnalysis;
using Microsoft.CodeAnalysis.Operations;

namespace DerivGen.Generator.Lowering;

/// <summary>
/// Lowers the IOperation tree of a method body into the IR. Every construct outside the supported set becomes a DG0001
/// diagnostic on exactly that construct's span (and lowering goes on, so that one build reports every problem);
/// non-smooth functions applied to something that depends on a variable become DG0007 warnings.
/// </summary>
internal sealed partial class BodyLowerer
{
    /// <summary>Deeper expressions are refused (DG0001) rather than risking the compiler's stack: MethodParser checks the
    /// syntax before asking the compiler for the operation tree, whose builder overflowed a 1 MB stack at about 410
    /// nested calls (measured with unoptimised JIT code); 300 leaves a margin of a quarter.</summary>
    public const int MaxDepth = 300;

    private readonly HashSet<string> _variables;
    private readonly List<DiagnosticInfo> _diagnostics;
    private readonly CancellationToken _cancellationToken;
    private readonly Dictionary<ILocalSymbol, string> _localNames = new(SymbolEqualityComparer.Default);
    private readonly HashSet<string> _usedLocalNames = new(StringComparer.Ordinal);
    private readonly HashSet<string> _variableDependentLocals = new(StringComparer.Ordinal);
    private List<IrStatement> _statements = new();
    private int _depth;

    private readonly IMethodSymbol _method;
    private readonly HelperContext _helpers;
    private readonly bool _emitHessian;

    /// <summary>The span a void method writes its outputs into (its last parameter), or null for a method that returns its value.</summary>
    private readonly IParameterSymbol? _output;

    public BodyLowerer(IMethodSymbol method, bool emitHessian, HashSet<string> variables, HelperContext helpers, List<DiagnosticInfo> diagnostics,
        CancellationToken cancellationToken, IParameterSymbol? output = null)
    {
        _output = output;
        _helpers = helpers;
        _method = method;
        _emitHessian = emitHessian;
        _variables = variables;
        _diagnostics = diagnostics;
        _cancellationToken = cancellationToken;
    }

    /// <summary>Where each output write (<see cref="IrOutput.Ordinal"/>) is in the source, for diagnostics.</summary>
    public List<Location> OutputLocations { get; } = new();

    public EquatableArray<IrStatement> Lower(IBlockOperation body)
    {
        _root = body;
        ReserveUserNames(body);
        if (NeedsReturnFlag(body) && ScalarTypeOf(_method.ReturnType) is { } returnType)
        {
            // Returns that the loops' control flow must respect become "result = v; returned = true;" and everything
            // after them runs only while nothing has returned; the method returns the result once, at the end.
            _returnValue = FreshName("result");
            _returnFlag = FreshName("returned");
            _statements.Add(new IrAssign(_returnValue, Zero(returnType)));
            _statements.Add(new IrAssign(_returnFlag, False));
        }

        LowerStatements(body.Operations, isTopLevel: true);
        if (_returnValue is not null)
        {
            _statements.Add(new IrReturn(new IrLocal(_returnValue, ScalarTypeOf(_method.ReturnType)!.Value)));
        }

        return _statements.ToEquatableArray();
    }

    private void LowerStatements(IEnumerable<IOperation> statements, bool isTopLevel)
    {
        List<IOperation> list = statements.ToList();
        for (int position = 0; position < list.Count; position++)
        {
            IOperation statement = list[position];
            _cancellationToken.ThrowIfCancellationRequested();
            int jumpsBefore = _jumps;
            if (!LowerStatement(statement, list, position, isTopLevel))
            {
                // A return, break or continue: what follows it in this block is unreachable (the compiler warns).
                break;
            }

            if (_jumps != jumpsBefore && position + 1 < list.Count)
            {
                // The statement may have jumped (continue, break, or a return inside a loop): the rest of the block
                // runs only where it did not.
                List<IOperation> rest = list.GetRange(position + 1, list.Count - position - 1);
                EquatableArray<IrStatement> lowered = LowerNested(rest, isTopLevel);
                if (NothingJumped() is { } guard)
                {
                    _statements.AddRange(Guarded(guard, lowered, rest, "the loop after a jump (break, continue or return) whose condition depends on a differentiation variable"));
                }
                else
                {
                    _statements.AddRange(lowered);
                }

                break;
            }
        }
    }

    /// <summary>Lowers one statement; false when control never goes on to the next statement of the block.</summary>
    private bool LowerStatement(IOperation statement, List<IOperation> list, int position, bool isTopLevel)
    {
        switch (statement)
        {
            case IVariableDeclarationGroupOperation group:
                foreach (IVariableDeclarationOperation declaration in group.Declarations)
                {
                    foreach (IVariableDeclaratorOperation declarator in declaration.Declarators)
                    {
                        LowerDeclarator(declarator);
                    }
                }

                return true;

            case IExpressionStatementOperation { Operation: var expression }:
                LowerExpressionStatement(expression);
                return true;

            case IReturnOperation inlinedReturn when _inline is not null:
                LowerInlinedReturn(inlinedReturn, isFinal: isTopLevel && position == list.Count - 1);
                return false;

            case IReturnOperation { ReturnedValue: { } value } when _returnValue is not null:
                LowerFlaggedReturn(statement, value, isFinal: isTopLevel && position == list.Count - 1);
                return false;

            case IReturnOperation { ReturnedValue: { } value } when isTopLevel:
                if (LowerExpression(value) is { } returned)
                {
                    _statements.Add(new IrReturn(returned));
                }

                return false;

            case IReturnOperation { ReturnedValue: null } when _output is not null && isTopLevel && position == list.Count - 1:
                return false; // "return;" at the end of a method that writes outputs

            case IReturnOperation:
                Unsupported(statement, "an early return", "return once, at the end of the method; assign the result to a local in the branches instead");
                return false;

            case IBranchOperation { BranchKind: BranchKind.Break or BranchKind.Continue } jump when _loop is not null:
                LowerJump(jump);
                return false;

            case IConditionalOperation branch when SingleThrow(branch.WhenTrue) is not null:
                TryLowerThrowingIf(branch); // a check that throws: a guard (BodyLowerer.Throws.cs)
                return true;

            case IConditionalOperation branch when isTopLevel && _returnValue is null && _inline is null && EndsWithReturn(branch.WhenTrue):
                // if (c) { …; return a; } rest  ≡  if (c) { …; return a; } else { rest }: the value is selected.
                LowerReturningIf(branch, list.Skip(position + 1));
                return false;

            case IConditionalOperation branch:
                LowerIf(branch);
                return true;

            case ISwitchOperation switchStatement:
                LowerSwitch(switchStatement);
                return true;

            case IForLoopOperation loop when TryLowerCheckingLoop(loop):
                return true; // a loop that only checks: a guard (BodyLowerer.Throws.cs)

            case IForLoopOperation loop:
                LowerFor(loop);
                return true;

            case IForEachLoopOperation loop:
                LowerForEach(loop);
                return true;

            case IWhileLoopOperation { ConditionIsUntil: false, Condition: { } } loop:
                LowerWhile(loop);
                return true;

            case IBlockOperation block:
                LowerStatements(block.Operations, isTopLevel && IsLast(statement));
                return !EndsWithJump(block);

            case IEmptyOperation:
                return true;

            case ILocalFunctionOperation:
                return true; // inlined at each call (BodyLowerer.Inlining.cs)

            default:
                Unsupported(statement, DescribeStatement(statement), HintFor(statement));
                return true;
        }
    }

    /// <summary>Lowers statements into a fresh list (the body of a branch or loop).</summary>
    private EquatableArray<IrStatement> LowerNested(IOperation? statement, bool isTopLevel = false) => statement switch
    {
        IBlockOperation block => LowerNested(block.Operations, isTopLevel),
        null => EquatableArray<IrStatement>.Empty,
        _ => LowerNested(new[] { statement }, isTopLevel),
    };

    /// <summary>Lowers statements into a fresh list; <paramref name="isTopLevel"/> lets them end the method with a return.</summary>
    private EquatableArray<IrStatement> LowerNested(IReadOnlyList<IOperation> statements, bool isTopLevel)
    {
        List<IrStatement> outer = _statements;
        _statements = new List<IrStatement>();
        _nestedDepth++;
        _outerStatements.Add(outer);
        try
        {
            LowerStatements(statements, isTopLevel);
            return _statements.ToEquatableArray();
        }
        finally
        {
            _outerStatements.RemoveAt(_outerStatements.Count - 1);
            _nestedDepth--;
            _statements = outer;
        }
    }

    private void LowerIf(IConditionalOperation branch)
    {
        IrExpression? condition = LowerCondition(branch.Condition);
        if (_constantLocals.Count > 0 && condition is not null && ConstantBool(condition) is bool taken)
        {
            _statements.AddRange(LowerNested(taken ? branch.WhenTrue : branch.WhenFalse)); // decided in an unrolled copy
            return;
        }

        bool dependsOnVariable = condition is not null && DependsOnVariable(condition);
        _variableBranchDepth += dependsOnVariable ? 1 : 0;
        EquatableArray<IrStatement> whenTrue = LowerNested(branch.WhenTrue);
        EquatableArray<IrStatement> whenFalse = LowerNested(branch.WhenFalse);
        _variableBranchDepth -= dependsOnVariable ? 1 : 0;
        if (condition is not null)
        {
            AddBranch(condition, whenTrue, whenFalse, new[] { branch.WhenTrue }, branch.WhenFalse is { } otherwise ? new[] { otherwise } : Array.Empty<IOperation>());
        }
    }

    /// <summary>
    /// <c>if (condition) whenTrue else whenFalse</c>, lowered. With a loop inside, its statements run under the
    /// condition and its loops loop only where the condition holds (the condition is kept in a local, since the branch
    /// may change what it reads).
    /// </summary>
    private void AddBranch(IrExpression condition, EquatableArray<IrStatement> whenTrue, EquatableArray<IrStatement> whenFalse,
        IEnumerable<IOperation> trueSource, IEnumerable<IOperation> falseSource)
    {
        if (!ContainsLoop(whenTrue) && !ContainsLoop(whenFalse))
        {
            _statements.Add(new IrIf(condition, whenTrue, whenFalse));
            return;
        }

        IrExpression taken = condition is IrParameter or IrConstant ? condition : Snapshot("branchTaken", condition);
        const string reason = "the loop inside an if whose condition depends on a differentiation variable";
        _statements.AddRange(Guarded(taken, whenTrue, trueSource, reason));
        if (whenFalse.Count > 0)
        {
            _statements.AddRange(Guarded(Not(taken), whenFalse, falseSource, reason));
        }
    }

    /// <summary>An if whose first branch returns: the rest of the method (after the else, if any) is its other branch.</summary>
    private void LowerReturningIf(IConditionalOperation branch, IEnumerable<IOperation> rest)
    {
        IrExpression? condition = LowerCondition(branch.Condition);
        bool dependsOnVariable = condition is not null && DependsOnVariable(condition);
        _variableBranchDepth += dependsOnVariable ? 1 : 0;
        EquatableArray<IrStatement> whenTrue = LowerNested(branch.WhenTrue, isTopLevel: true);
        IEnumerable<IOperation> otherwise = branch.WhenFalse switch
        {
            null => rest,
            IBlockOperation block => block.Operations.Concat(rest),
            var single => new[] { single }.Concat(rest),
        };
        EquatableArray<IrStatement> whenFalse = LowerNested(otherwise.ToList(), isTopLevel: true);
        _variableBranchDepth -= dependsOnVariable ? 1 : 0;
        if (condition is not null)
        {
            _statements.Add(new IrIf(condition, whenTrue, whenFalse));
        }
    }

    private static bool EndsWithReturn(IOperation? statement) => statement switch
    {
        IReturnOperation { ReturnedValue: not null } => true,
        IBlockOperation { Operations.Length: > 0 } block => EndsWithReturn(block.Operations[block.Operations.Length - 1]),
        _ => false,
    };

    /// <summary>A branch condition; a condition that depends on a variable is a kink (DG0007).</summary>
    private IrExpression? LowerCondition(IOperation operation, bool isConditionalOperator = false)
    {
        IrExpression? condition = LowerExpression(operation);
        if (condition is not null && IsKink(condition))
        {
            _diagnostics.Add(DiagnosticInfo.Create(DiagnosticDescriptors.NonSmoothFunction, operation.Syntax.GetLocation(),
                isConditionalOperator ? Text(operation) + " ? … : …" : "if (" + Text(operation) + ")",
                "the condition depends on a differentiation variable, so the derivative is that of the branch taken and jumps where the condition changes"));
        }

        return condition;
    }

    private void LowerFor(IForLoopOperation loop)
    {
        if (TryUnroll(loop))
        {
            return; // it indexes a local array with its index (BodyLowerer.LocalArrays.cs)
        }

        // for (int i = start; i < end; i++), bounds ints (so they cannot depend on a variable), i not assigned in the
        // body: a counted loop. Any other for loop is its while loop: init; while (condition) { body; step; }.
        IVariableDeclaratorOperation? declarator = loop.Before.Length == 1
            && loop.Before[0] is IVariableDeclarationGroupOperation { Declarations.Length: 1 } group
            && group.Declarations[0].Declarators.Length == 1 ? group.Declarations[0].Declarators[0] : null;
        if (declarator is null
            || declarator.Symbol.Type.SpecialType != SpecialType.System_Int32 || declarator.GetVariableInitializer()?.Value is not { } startValue
            || loop.Condition is not IBinaryOperation { OperatorKind: BinaryOperatorKind.LessThan or BinaryOperatorKind.LessThanOrEqual, LeftOperand: ILocalReferenceOperation conditionLocal } condition
            || !SymbolEqualityComparer.Default.Equals(conditionLocal.Local, declarator.Symbol)
            || condition.RightOperand.Type?.SpecialType != SpecialType.System_Int32
            || loop.AtLoopBottom.Length != 1 || !IsIncrementByOne(loop.AtLoopBottom[0], declarator.Symbol)
            || AssignsLocal(loop.Body, declarator.Symbol))
        {
            EquatableArray<IrStatement> init = LowerNested(loop.Before, isTopLevel: false);
            LowerConditionLoop(loop.Condition, loop.Body, loop.AtLoopBottom, init, isDoLoop: false);
            return;
        }

        IrExpression? start = LowerExpression(startValue);
        IrExpression? end = LowerExpression(condition.RightOperand);
        string index = DeclareLocal(declarator.Symbol);
        _countedLoops.Add(start is null || end is null ? null
            : new IrFor(index, start, end, condition.OperatorKind == BinaryOperatorKind.LessThanOrEqual, EquatableArray<IrStatement>.Empty));
        LoweredLoop lowered = LowerLoop(loop.Body, ImmutableArray<IOperation>.Empty, null);
        _countedLoops.RemoveAt(_countedLoops.Count - 1);
        if (start is not null && end is not null)
        {
            AddCountedLoop(new IrFor(index, start, end, condition.OperatorKind == BinaryOperatorKind.LessThanOrEqual, lowered.Body), lowered.Exits);
        }
    }

    /// <summary>
    /// <c>foreach (double v in data)</c> over a one-dimensional array or span of data is the loop
    /// <c>for (int vIndex = 0; vIndex &lt; data.Length; vIndex++) { double v = data[vIndex]; … }</c>.
    /// </summary>
    private void LowerForEach(IForEachLoopOperation loop)
    {
        if (TryLowerStructForEach(loop))
        {
            return; // BodyLowerer.Structs.cs
        }

        if (TryUnrollForEach(loop))
        {
            return;
        }

        IOperation collection = loop.Collection is IConversionOperation conversion ? conversion.Operand : loop.Collection;
        ILocalSymbol? element = loop.Locals.Length == 1 ? loop.Locals[0] : null;
        string? data = DataText(collection);
        ITypeSymbol? elementType = collection.Type switch
        {
            IArrayTypeSymbol { Rank: 1 } array => array.ElementType,
            INamedTypeSymbol { TypeArguments.Length: 1 } span when IsSpan(span) => span.TypeArguments[0],
            _ => null,
        };
        if (data is null || element is null || elementType is null || !SymbolEqualityComparer.Default.Equals(element.Type, elementType)
            || ScalarTypeOf(elementType) is not { } type)
        {
            Unsupported(loop, "the foreach loop '" + Text(loop).Split('{')[0].Trim() + "'",
                "foreach works over a one-dimensional array or span of data (not a variable), with the element's own type");
            return;
        }

        string index = FreshName(element.Name + "Index");
        string name = DeclareLocal(element);
        LoweredLoop lowered = LowerLoop(loop.Body, ImmutableArray<IOperation>.Empty, null);

        var statements = new List<IrStatement>
        {
            new IrAssign(name, new IrElement(data, new IrExpression[] { new IrLocal(index, ScalarType.Int32) }.ToEquatableArray(), type)),
        };
        statements.AddRange(lowered.Body);
        AddCountedLoop(new IrFor(index, new IrConstant(0, ScalarType.Int32), new IrExternal(data + ".Length", ScalarType.Int32), false,
            statements.ToEquatableArray()), lowered.Exits);
    }

    /// <summary>
    /// <c>while (condition) { … }</c> and <c>do { … } while (condition);</c>, the condition not depending on a variable
    /// (so the trip count does not). A do loop is <c>firstPass = true; while (firstPass || condition) { firstPass = false; … }</c>.
    /// </summary>
    private void LowerWhile(IWhileLoopOperation loop)
    {
        LowerConditionLoop(loop.Condition!, loop.Body, ImmutableArray<IOperation>.Empty, EquatableArray<IrStatement>.Empty,
            isDoLoop: !loop.ConditionIsTop);
    }

    private void LowerConditionLoop(IOperation? conditionOperation, IOperation bodyOperation, ImmutableArray<IOperation> step,
        EquatableArray<IrStatement> init, bool isDoLoop)
    {
        LoweredLoop lowered = LowerLoop(bodyOperation, step, conditionOperation);
        IrExpression condition = conditionOperation is null ? True : lowered.Condition!;
        if (conditionOperation is not null && lowered.Condition is null)
        {
            return;
        }

        if (conditionOperation is not null && DependsOnVariable(condition))
        {
            Unsupported(conditionOperation, $"the loop condition '{Text(conditionOperation)}'",
                "the number of iterations would depend on a differentiation variable; loop over a count or over data instead");
            return;
        }

        var setup = new List<IrStatement>(init);
        var body = new List<IrStatement>();
        if (isDoLoop)
        {
            string firstPass = FreshName("firstPass");
            setup.Add(new IrAssign(firstPass, True));
            body.Add(new IrAssign(firstPass, False));
            condition = new IrLogical(LogicalOperator.Or, new IrLocal(firstPass, ScalarType.Boolean), condition);
        }

        setup.AddRange(lowered.Exits.Setup());
        body.AddRange(lowered.Body);
        _statements.Add(new IrWhile(setup.ToEquatableArray(), And(lowered.Exits.Guard(_returnFlag), condition), body.ToEquatableArray()));
    }

    /// <summary><c>var (a, b) = (e1, e2);</c> and <c>(a, b) = (e1, e2);</c> into locals, when no element reads a target.</summary>
    private void LowerDeconstruction(IDeconstructionAssignmentOperation deconstruction)
    {
        IOperation target = deconstruction.Target is IDeclarationExpressionOperation declaration ? declaration.Expression : deconstruction.Target;
        // A tuple literal with an element that is a bare name gets inferred element names, and Roslyn wraps it in a
        // tuple conversion; the elements are still the literal's (each is converted to its local's type below).
        IOperation tuple = deconstruction.Value is IConversionOperation { Operand: ITupleOperation literal } ? literal : deconstruction.Value;
        if (target is ITupleOperation inlinedTargets && tuple is IInvocationOperation call && IsInlined(call.TargetMethod))
        {
            LowerInlinedDeconstruction(inlinedTargets, call);
            return;
        }

        if (target is not ITupleOperation targets || tuple is not ITupleOperation values
            || targets.Elements.Length != values.Elements.Length)
        {
            Unsupported(deconstruction, $"the deconstruction '{Text(deconstruction)}'", "deconstruct a tuple literal of values into locals: var (a, b) = (x * y, x + y);");
            return;
        }

        var locals = new List<ILocalSymbol>();
        foreach (IOperation element in targets.Elements)
        {
            ILocalSymbol? local = element switch
            {
                ILocalReferenceOperation reference => reference.Local,
                IDeclarationExpressionOperation { Expression: ILocalReferenceOperation declared } => declared.Local,
                _ => null,
            };
            if (local is null || ScalarTypeOf(local.Type) is null)
            {
                Unsupported(element, $"the deconstruction target '{Text(element)}'", "deconstruct into double, float, int or bool locals");
                return;
            }

            locals.Add(local);
        }

        bool readsTarget = values.Elements.Any(v => v.DescendantsAndSelf().OfType<ILocalReferenceOperation>()
            .Any(r => locals.Contains(r.Local, SymbolEqualityComparer.Default)));
        if (readsTarget)
        {
            Unsupported(deconstruction, $"the deconstruction '{Text(deconstruction)}'", "a tuple that reads the locals it assigns (a swap) is not supported; use a temporary local");
            return;
        }

        var lowered = values.Elements.Select(LowerExpression).ToList();
        for (int i = 0; i < locals.Count; i++)
        {
            if (lowered[i] is { } value)
            {
                AssignLocal(LocalName(locals[i]), Convert(value, ScalarTypeOf(locals[i].Type)!.Value));
            }
        }
    }

    private void RestoreNames(Dictionary<ILocalSymbol, string> localNames, HashSet<string> usedLocalNames)
    {
        _localNames.Clear();
        foreach (KeyValuePair<ILocalSymbol, string> pair in localNames)
        {
            _localNames[pair.Key] = pair.Value;
        }

        _usedLocalNames.Clear();
        _usedLocalNames.UnionWith(usedLocalNames);
    }

    private static bool IsIncrementByOne(IOperation operation, ILocalSymbol index)
    {
        IOperation expression = operation is IExpressionStatementOperation statement ? statement.Operation : operation;
        return expression switch
        {
            IIncrementOrDecrementOperation { Kind: OperationKind.Increment, Target: ILocalReferenceOperation target } =>
                SymbolEqualityComparer.Default.Equals(target.Local, index),
            ICompoundAssignmentOperation { OperatorKind: BinaryOperatorKind.Add, Target: ILocalReferenceOperation target, Value.ConstantValue: { HasValue: true, Value: 1 } } =>
                SymbolEqualityComparer.Default.Equals(target.Local, index),
            _ => false,
        };
    }

    private static bool AssignsLocal(IOperation body, ILocalSymbol local)
    {
        foreach (IOperation operation in body.DescendantsAndSelf())
        {
            IOperation? target = operation switch
            {
                IAssignmentOperation assignment => assignment.Target,
                IIncrementOrDecrementOperation increment => increment.Target,
                _ => null,
            };
            if (target is ILocalReferenceOperation reference && SymbolEqualityComparer.Default.Equals(reference.Local, local))
            {
                return true;
            }
        }

        return false;
    }

    private static bool IsLast(IOperation statement) =>
        statement.Parent is IBlockOperation parent && parent.Operations[parent.Operations.Length - 1] == statement;

    private void LowerDeclarator(IVariableDeclaratorOperation declarator)
    {
        ILocalSymbol local = declarator.Symbol;
        if (ArrayShape(local.Type) is { } shape)
        {
            DeclareArray(declarator, shape);
            return;
        }

        ScalarType? type = ValueTypeOf(local.Type);
        if (type is null && TryLowerStructDeclarator(declarator))
        {
            return; // BodyLowerer.Structs.cs
        }

        if (type is null)
        {
            Unsupported(declarator, $"the local '{local.Name}' of type '{local.Type.ToDisplayString()}'", VectorLocalAdvice(local) ?? "locals must be double, float, int or bool");
            return;
        }

        string name = DeclareLocal(local);
        IOperation? initializer = declarator.Initializer?.Value ?? declarator.GetVariableInitializer()?.Value;
        if (initializer is null)
        {
            return; // Assigned later; C# definite assignment guarantees it is assigned before it is read.
        }

        AssignLocal(name, LowerExpression(initializer));
    }

    private void LowerExpressionStatement(IOperation expression)
    {
        if (TryLowerStructStatement(expression))
        {
            return; // BodyLowerer.Structs.cs
        }

        if (TryLowerArrayStatement(expression))
        {
            return;
        }

        switch (expression)
        {
            case IInvocationOperation call when IsInlined(call.TargetMethod):
                InlineCall(call, call.TargetMethod); // a method that writes into a span, or whose value is not used
                break;

            case IDeconstructionAssignmentOperation deconstruction:
                LowerDeconstruction(deconstruction);
                break;

            case ISimpleAssignmentOperation { Target: ILocalReferenceOperation target } assignment:
                AssignLocal(LocalName(target.Local), LowerExpression(assignment.Value));
                break;

            case ICompoundAssignmentOperation { Target: ILocalReferenceOperation target } compound
                when (compound.OperatorMethod is null || IsGenericOperator(compound.OperatorMethod)) && TryBinaryOperator(compound.OperatorKind, out BinaryOperator op):
            {
                // s op= e  is  s = (T)((S)s op e)  with the compiler's own in/out conversions (C# spec §12.21.4).
                string name = LocalName(target.Local);
                ScalarType? localType = ScalarTypeOf(target.Local.Type);
                IrExpression? right = LowerExpression(compound.Value);
                ScalarType? operationType = compound.InConversion.IsIdentity ? localType : ScalarTypeOfConversion(compound);
                if (localType is null || right is null || operationType is null)
                {
                    if (right is not null)
                    {
                        Unsupported(compound, $"the compound assignment '{Text(compound)}'", "use double, float or int locals");
                    }

                    return;
                }

                IrExpression left = Convert(new IrLocal(name, localType.Value), operationType.Value);
                IrExpression combined = new IrBinary(op, left, Convert(right, operationType.Value), operationType.Value);
                AssignLocal(name, Convert(combined, localType.Value));
                break;
            }

            case IIncrementOrDecrementOperation { Target: ILocalReferenceOperation counter } step
                when ScalarTypeOf(counter.Local.Type) is ScalarType.Int32 or ScalarType.Double or ScalarType.Single or ScalarType.Generic:
            {
                // c++ and c-- as statements: c = c ± 1.
                ScalarType counterType = ScalarTypeOf(counter.Local.Type)!.Value;
                string name = LocalName(counter.Local);
                var one = new IrConstant(counterType == ScalarType.Int32 ? 1 : BitConverter.DoubleToInt64Bits(1.0), counterType);
                AssignLocal(name, new IrBinary(step.Kind == OperationKind.Increment ? BinaryOperator.Add : BinaryOperator.Subtract,
                    new IrLocal(name, counterType), one, counterType));
                break;
            }

            case ISimpleAssignmentOperation { Target: IPropertyReferenceOperation { Property.IsIndexer: true, Instance: { } written } target } assignment
                when IsOutput(written):
                LowerOutput(assignment, target);
                break;

            case IAssignmentOperation { Target: IPropertyReferenceOperation { Property.IsIndexer: true, Instance: { } updated } }
                when IsOutput(updated):
                Unsupported(expression, $"the update '{Text(expression)}' of an output", "outputs are written once with '=' and never read back; sum into a local and write that");
                break;

            case IAssignmentOperation { Target: IParameterReferenceOperation parameterTarget }:
                Unsupported(expression, $"the assignment to parameter '{parameterTarget.Parameter.Name}'", "assign the new value to a local instead");
                break;

            case ISimpleAssignmentOperation or ICompoundAssignmentOperation:
                Unsupported(expression, $"the assignment '{Text(expression)}'", "only locals of the method can be assigned");
                break;

            case IInvocationOperation { TargetMethod: { IsStatic: true, Name: var helperName, ContainingType: { } thrower } } when helperName.StartsWith("ThrowIf", StringComparison.Ordinal) && IsException(thrower):
                LowerThrowHelper((IInvocationOperation)expression);
                break;

            default:
                Unsupported(expression, $"the statement '{Text(expression)}'", "a differentiable body only declares and assigns locals and returns a value");
                break;
        }
    }

    private static bool IsException(INamedTypeSymbol? type)
    {
        for (; type is not null; type = type.BaseType)
        {
            if (type is { Name: "Exception", ContainingNamespace: { Name: "System", ContainingNamespace.IsGlobalNamespace: true } })
            {
                return true;
            }
        }

        return false;
    }

    /// <summary>Whether the operation is the span of outputs of a method that writes its values.</summary>
    private bool IsOutput(IOperation operation) =>
        _output is not null && operation is IParameterReferenceOperation { Parameter: var parameter } && SymbolEqualityComparer.Default.Equals(parameter, _output);

    /// <summary><c>outputs[i] = e;</c>: one output of the method, numbered in source order.</summary>
    private void LowerOutput(ISimpleAssignmentOperation assignment, IPropertyReferenceOperation target)
    {
        ScalarType type = ScalarTypeOf(((INamedTypeSymbol)_output!.Type).TypeArguments[0])!.Value;
        IrExpression? index = target.Arguments.Length == 1 ? LowerExpression(target.Arguments[0].Value) : null;
        IrExpression? value = LowerExpression(assignment.Value);
        if (index is not null && index.Type != ScalarType.Int32)
        {
            Unsupported(target.Arguments[0].Value, $"the index '{Text(target.Arguments[0].Value)}'", "indices must be int expressions");
            return;
        }

        if (index is null || value is null)
        {
            return;
        }

        _statements.Add(new IrOutput(index, Convert(value, type), OutputLocations.Count));
        OutputLocations.Add(assignment.Syntax.GetLocation());
    }

    private static ScalarType? ScalarTypeOfConversion(ICompoundAssignmentOperation compound) =>
        compound.InConversion.IsNumeric && compound.Value.Type is { } valueType ? ScalarTypeOf(valueType) : null;

    private static IrExpression Convert(IrExpression expression, ScalarType type) =>
        expression.Type == type ? expression : new IrConvert(expression, type);

    private void AssignLocal(string name, IrExpression? value)
    {
        if (value is null)
        {
            return;
        }

        if (_variableBranchDepth > 0 || DependsOnVariable(value))
        {
            // Assigned from a variable, or under a condition that depends on one. Never removed: another path or
            // iteration may still carry the dependence.
            _variableDependentLocals.Add(name);
        }

        _statements.Add(new IrAssign(name, value));
    }

    private string DeclareLocal(ILocalSymbol local)
    {
        // Escaped like parameters (@double), so the name can be written into code as it is.
        string name = Identifiers.Escape(Identifiers.Unique(local.Name, _usedLocalNames));
        _localNames[local] = name;
        return name;
    }

    private string LocalName(ILocalSymbol local) =>
        _localNames.TryGetValue(local, out string? name) ? name : DeclareLocal(local);

    /// <summary>Lowers an expression; returns null (after reporting) when it is not supported.</summary>
    private IrExpression? LowerExpression(IOperation operation)
    {
        System.Runtime.CompilerServices.RuntimeHelpers.EnsureSufficientExecutionStack(); // a deep input fails as a diagnostic, never as a stack overflow
        _cancellationToken.ThrowIfCancellationRequested();
        if (_depth >= MaxDepth)
        {
            Unsupported(operation, "an expression nested more than " + MaxDepth.ToString(System.Globalization.CultureInfo.InvariantCulture) + " levels deep",
                "split it into locals");
            return null;
        }

        _depth++;
        try
        {
            // Binary operators are what nests deepest (a long sum): they skip LowerExpressionCore, whose frame is large, so
            // that a 1 MB compiler thread lowers a few hundred levels (Robustness/HostileInputTests). A constant still goes
            // through it, to be folded.
            return operation is IBinaryOperation binary && !operation.ConstantValue.HasValue ? LowerBinary(binary) : LowerExpressionCore(operation);
        }
        finally
        {
            _depth--;
        }
    }

    /// <summary>A struct's field, vector function or member (BodyLowerer.Structs.cs), or a use of a local array whose
    /// declaration was refused (null: reported there).</summary>
    private bool TryLowerStructOrRefusedArray(IOperation operation, out IrExpression? result)
    {
        if (TryLowerStructScalar(operation, out result))
        {
            return true;
        }

        result = null;
        return operation is IPropertyReferenceOperation or IArrayElementReferenceOperation or IImplicitIndexerReferenceOperation && IsRefusedArrayUse(operation);
    }

    private IrExpression? LowerExpressionCore(IOperation operation)
    {
        if (operation.ConstantValue.HasValue && operation.Type is { } constantType && ValueTypeOf(constantType) is { } scalar
            && TryConstant(operation.ConstantValue.Value, scalar, out IrConstant? constant))
        {
            return constant;
        }

        if (TryLowerStructOrRefusedArray(operation, out IrExpression? lowered))
        {
            return lowered;
        }

        switch (operation)
        {
            case IFieldReferenceOperation tupleField when _boundTuples.Count > 0 && BoundTupleElement(tupleField) is { } tupleElement:
                return tupleElement; // pair.First of Zip's tuples (BodyLowerer.Linq.cs)

            case IParameterReferenceOperation parameter when _boundParameters.TryGetValue(parameter.Parameter.OriginalDefinition, out IrExpression? argument):
                return argument;

            case IParameterReferenceOperation parameter:
                if (ScalarTypeOf(parameter.Parameter.Type) is { } parameterType)
                {
                    return new IrParameter(Identifiers.Escape(parameter.Parameter.Name), parameterType);
                }

                if (IsIntEnum(parameter.Parameter.Type) && parameter.Parameter.RefKind is RefKind.None or RefKind.In)
                {
                    return EnumParameter(parameter.Parameter);
                }

                return Unsupported(operation, $"the use of parameter '{parameter.Parameter.Name}' of type '{parameter.Parameter.Type.ToDisplayString()}'",
                    "arrays, spans and other types come in a later version; pass double, float or int values");

            case ILocalReferenceOperation constantIndex when _constantLocals.TryGetValue(constantIndex.Local, out int unrolled):
                return new IrConstant(unrolled, ScalarType.Int32);

            case ILocalReferenceOperation arrayLocal when _arrays.TryGetValue(arrayLocal.Local, out ArrayBinding? wholeArray):
                return RefuseArrayUse(operation, wholeArray);

            case ILocalReferenceOperation refusedArray when _refusedArrays.Contains(refusedArray.Local):
                return null; // its declaration was refused

            case ILocalReferenceOperation local:
                if (ValueTypeOf(local.Local.Type) is { } localType)
                {
                    return new IrLocal(LocalName(local.Local), localType);
                }

                return Unsupported(operation, $"the local '{local.Local.Name}'", "locals must be double, float, int or bool");

            case IBinaryOperation binary:
                return LowerBinary(binary);

            case IUnaryOperation { OperatorKind: UnaryOperatorKind.Minus, OperatorMethod: null, Type: { } unaryType } minus when ScalarTypeOf(unaryType) is { } minusType:
                return LowerExpression(minus.Operand) is { } negated ? new IrNegate(negated, minusType) : null;

            case IUnaryOperation { OperatorKind: UnaryOperatorKind.Plus, OperatorMethod: null } plus:
                return LowerExpression(plus.Operand);

            case IUnaryOperation { OperatorKind: UnaryOperatorKind.Minus or UnaryOperatorKind.Plus } genericUnary when IsGenericOperator(genericUnary.OperatorMethod):
                return LowerGenericUnary(genericUnary);

            case IPropertyReferenceOperation { Property: var genericProperty } when IsGenericMathMember(genericProperty):
                return LowerGenericProperty((IPropertyReferenceOperation)operation);

            case IConversionOperation conversion:
                return LowerConversion(conversion);

            case IInvocationOperation invocation:
                return LowerInvocation(invocation);

            case IIsPatternOperation isPattern:
                return LowerIsPattern(isPattern);

            case ISwitchExpressionOperation switchExpression when switchExpression.Type is { } switchType && ValueTypeOf(switchType) is { } switchResultType:
                return LowerSwitchExpression(switchExpression, switchResultType);

            case IFieldReferenceOperation { Field: { IsStatic: true, IsReadOnly: true } field } when ScalarTypeOf(field.Type) is { } fieldType:
                return new IrExternal(FullyQualified(field.ContainingType) + "." + Identifiers.Escape(field.Name), fieldType);

            case IFieldReferenceOperation { Instance: IInstanceReferenceOperation, Field: var instanceField } when ScalarTypeOf(instanceField.Type) is { } instanceFieldType:
                return new IrExternal("this." + Identifiers.Escape(instanceField.Name), instanceFieldType);

            case IPropertyReferenceOperation { Instance: IInstanceReferenceOperation, Property: { IsIndexer: false, GetMethod: not null } instanceProperty }
                when ScalarTypeOf(instanceProperty.Type) is { } instancePropertyType:
                return new IrExternal("this." + Identifiers.Escape(instanceProperty.Name), instancePropertyType);

            case IArrayElementReferenceOperation element:
                return LowerElement(element, element.ArrayReference, element.Indices);

            case IPropertyReferenceOperation { Property.IsIndexer: true, Instance: { } spanInstance } indexer when IsSpan(spanInstance.Type):
                return LowerElement(indexer, spanInstance, indexer.Arguments.Select(a => a.Value).ToImmutableArray());

            case IImplicitIndexerReferenceOperation { Instance: { } fromEndInstance, Argument: IUnaryOperation { OperatorKind: UnaryOperatorKind.Hat } } fromEnd
                when IsSpan(fromEndInstance.Type):
                return LowerElement(fromEnd, fromEndInstance, new[] { fromEnd.Argument });

            case IPropertyReferenceOperation { Property.Name: "Length", Instance: { } bound } when BoundArrayOf(bound) is { } boundArray:
                return boundArray.Length;

            case IPropertyReferenceOperation { Property.Name: "Length", Instance: { } outputs } when IsOutput(outputs):
                return new IrExternal(Identifiers.Escape(_output!.Name) + ".Length", ScalarType.Int32);

            case IPropertyReferenceOperation { Property.Name: "Length", Instance: { } lengthOf } when DataText(lengthOf) is { } lengthData:
                return new IrExternal(lengthData + ".Length", ScalarType.Int32);

            case IConditionalOperation { WhenFalse: not null } conditional when conditional.Type is { } conditionalType && ValueTypeOf(conditionalType) is { } resultType:
            {
                IrExpression? condition = LowerCondition(conditional.Condition, isConditionalOperator: true);
                if (_constantLocals.Count > 0 && condition is not null && ConstantBool(condition) is bool taken)
                {
                    return LowerExpression(taken ? conditional.WhenTrue : conditional.WhenFalse); // decided in an unrolled copy
                }

                IrExpression? whenTrue = LowerExpression(conditional.WhenTrue);
                IrExpression? whenFalse = LowerExpression(conditional.WhenFalse);
                return condition is null || whenTrue is null || whenFalse is null ? null : new IrConditional(condition, whenTrue, whenFalse, resultType);
            }

            case IUnaryOperation { OperatorKind: UnaryOperatorKind.Not, OperatorMethod: null } not:
                return LowerExpression(not.Operand) is { } negatedCondition ? new IrLogical(LogicalOperator.Not, negatedCondition, null) : null;

            case IFieldReferenceOperation { Instance: IInvocationOperation tupleCall, Field.ContainingType.IsTupleType: true } tupleElement
                when IsInlined(tupleCall.TargetMethod):
                return LowerTupleElementOfCall(tupleCall, tupleElement.Field); // H(…).Item2 of an inlined method

            case IFieldReferenceOperation field:
                return Unsupported(operation, $"the field '{field.Field.Name}'",
                    field.Field.IsStatic ? "only const and static readonly fields are read as constants"
                    : VectorComponents(field.Field.ContainingType) is not null
                        ? "System.Numerics vectors are not differentiated in this version; keep the component in a double or float parameter or local instead of the vector"
                        : "instance fields come in a later version; pass the value as a parameter");

            case IPropertyReferenceOperation { Property: { IsStatic: true, IsIndexer: false, GetMethod: not null } property } when ScalarTypeOf(property.Type) is { } propertyType:
                return new IrExternal(FullyQualified(property.ContainingType) + "." + Identifiers.Escape(property.Name), propertyType);

            case IPropertyReferenceOperation property:
                return Unsupported(operation, $"the property '{property.Property.Name}'", "only static properties of double, float or int type are read as constants");

            case IParenthesizedOperation parenthesized:
                return LowerExpression(parenthesized.Operand);

            default:
                return Unsupported(operation, DescribeExpression(operation), HintFor(operation));
        }
    }

    private IrExpression? LowerBinary(IBinaryOperation binary)
    {
        bool builtIn = binary.OperatorMethod is null || IsGenericOperator(binary.OperatorMethod);
        if (builtIn && ComparisonOf(binary.OperatorKind) is { } comparison
            && binary.LeftOperand.Type is { } leftType && ValueTypeOf(leftType) is ScalarType.Double or ScalarType.Single or ScalarType.Int32 or ScalarType.Generic)
        {
            IrExpression? compareLeft = LowerExpression(binary.LeftOperand);
            IrExpression? compareRight = LowerExpression(binary.RightOperand);
            return compareLeft is null || compareRight is null ? null : new IrCompare(comparison, compareLeft, compareRight);
        }

        if (binary.OperatorMethod is null && binary.OperatorKind is BinaryOperatorKind.ConditionalAnd or BinaryOperatorKind.ConditionalOr)
        {
            IrExpression? logicalLeft = LowerExpression(binary.LeftOperand);
            IrExpression? logicalRight = LowerExpression(binary.RightOperand);
            return logicalLeft is null || logicalRight is null ? null
                : new IrLogical(binary.OperatorKind == BinaryOperatorKind.ConditionalAnd ? LogicalOperator.And : LogicalOperator.Or, logicalLeft, logicalRight);
        }

        if (!builtIn || !TryBinaryOperator(binary.OperatorKind, out BinaryOperator op)
            || ScalarTypeOf(binary.Type!) is not { } type || type == ScalarType.Boolean)
        {
            string hint = binary.OperatorKind is BinaryOperatorKind.Remainder
                ? RemainderAdvice(binary)
                : "only + - * / on double, float and int, comparisons, && and || are supported";
            return Unsupported(binary, $"the operator '{Text(binary)}'", hint);
        }

        IrExpression? left = LowerExpression(binary.LeftOperand);
        IrExpression? right = LowerExpression(binary.RightOperand);
        return left is null || right is null ? null : new IrBinary(op, left, right, type);
    }

    private static ComparisonOperator? ComparisonOf(BinaryOperatorKind kind) => kind switch
    {
        BinaryOperatorKind.LessThan => ComparisonOperator.Less,
        BinaryOperatorKind.LessThanOrEqual => ComparisonOperator.LessOrEqual,
        BinaryOperatorKind.GreaterThan => ComparisonOperator.Greater,
        BinaryOperatorKind.GreaterThanOrEqual => ComparisonOperator.GreaterOrEqual,
        BinaryOperatorKind.Equals => ComparisonOperator.Equal,
        BinaryOperatorKind.NotEquals => ComparisonOperator.NotEqual,
        _ => null,
    };

    /// <summary>An element of data read with int indices (which, being ints, cannot depend on a variable).</summary>
    private IrExpression? LowerElement(IOperation element, IOperation data, IReadOnlyList<IOperation> indices)
    {
        if (BoundArrayOf(data) is { } bound)
        {
            return LowerBoundElement(element, bound, indices);
        }

        if (IsOutput(data))
        {
            return Unsupported(element, $"reading the output '{Text(element)}'", "outputs are written, never read back; keep the value in a local and read that");
        }

        if (IsRangeOrSlice(data))
        {
            return Unsupported(element, $"the range '{Text(data)}'",
                "ranges are not supported in this version; take a view with Slice(start, length) or AsSpan(start, length), or index the data itself, e.g. t[i + 1] for t[1..][i], or t[^1] for its last element");
        }

        if (DataText(data) is not { } text || element.Type is null || ScalarTypeOf(element.Type) is not (ScalarType.Double or ScalarType.Single or ScalarType.Int32 or ScalarType.Generic) || indices.Count == 0)
        {
            return Unsupported(element, $"the element access '{Text(element)}'",
                "read elements of double, float or int arrays and spans that are parameters (not variables), fields of this instance or static readonly fields");
        }

        var lowered = new List<IrExpression>();
        foreach (IOperation index in indices)
        {
            // a[^e] is a[a.Length - e], as C# evaluates it (the same exception when out of range); ranges stay refused.
            bool isFromEnd = index is IUnaryOperation { OperatorKind: UnaryOperatorKind.Hat, OperatorMethod: null } && indices.Count == 1;
            IOperation position = isFromEnd ? ((IUnaryOperation)index).Operand : index;
            IrExpression? loweredIndex = LowerExpression(position);
            if (isFromEnd && loweredIndex is { Type: ScalarType.Int32 })
            {
                loweredIndex = new IrBinary(BinaryOperator.Subtract, new IrExternal(text + ".Length", ScalarType.Int32), loweredIndex, ScalarType.Int32);
            }

            if (loweredIndex is null)
            {
                return null;
            }

            if (loweredIndex.Type != ScalarType.Int32)
            {
                return Unsupported(position, $"the index '{Text(position)}'", "indices must be int expressions");
            }

            lowered.Add(loweredIndex);
        }

        return new IrElement(text, lowered.ToEquatableArray(), ScalarTypeOf(element.Type)!.Value);
    }

    /// <summary>Whether the operation takes a part of an array or span: <c>t[1..]</c>, <c>t[..^1]</c> or <c>t.Slice(…)</c>.</summary>
    private static bool IsRangeOrSlice(IOperation data) => data switch
    {
        IArrayElementReferenceOperation array => array.Indices.Any(index => index is IRangeOperation),
        IImplicitIndexerReferenceOperation implicitIndexer => implicitIndexer.Argument is IRangeOperation,
        IInvocationOperation { TargetMethod.Name: "Slice" or "GetSubArray" } => true,
        _ => false,
    };

    /// <summary>The C# text naming data (an array or span that is not a variable), or null when it is not data.</summary>
    private string? DataText(IOperation data) => data switch
    {
        ILocalReferenceOperation local => _arrays.TryGetValue(local.Local, out ArrayBinding? view) && view is DataView { Offset: null } whole ? whole.Text : null,
        IParameterReferenceOperation parameter when _arrays.TryGetValue(parameter.Parameter.OriginalDefinition, out ArrayBinding? view) =>
            view is DataView { Offset: null } whole ? whole.Text : null,   // an array or span parameter of an inlined method
        IParameterReferenceOperation parameter when IsData(parameter.Parameter.Type) && !IsOutput(parameter) =>
            Identifiers.Escape(parameter.Parameter.Name),   // data, or a vector of variables (then its elements are variables)
        IFieldReferenceOperation { Instance: IInstanceReferenceOperation, Field: var field } when IsData(field.Type) => "this." + Identifiers.Escape(field.Name),
        IFieldReferenceOperation { Field: { IsStatic: true, IsReadOnly: true } field } when IsData(field.Type) =>
            FullyQualified(field.ContainingType) + "." + Identifiers.Escape(field.Name),
        IPropertyReferenceOperation { Instance: IInstanceReferenceOperation, Property: { IsIndexer: false } property } when IsData(property.Type) =>
            "this." + Identifiers.Escape(property.Name),
        _ => null,
    };

    private static bool IsData(ITypeSymbol type) => type switch
    {
        IArrayTypeSymbol array => ScalarTypeOf(array.ElementType) is ScalarType.Double or ScalarType.Single or ScalarType.Int32 or ScalarType.Generic,
        _ => IsSpan(type),
    };

    /// <summary>System.Math or System.MathF (the name is checked before the display string is built), else null.</summary>
    private static MathHost? MathTypeHost(INamedTypeSymbol? type) => type is { Name: "Math" or "MathF" }
        ? type.ToDisplayString() switch
        {
            "System.Math" => MathHost.Math,
            "System.MathF" => MathHost.MathF,
            _ => null,
        }
        : null;

    private static bool IsSpan(ITypeSymbol? type) =>
        type is INamedTypeSymbol { IsGenericType: true, TypeArguments.Length: 1, Name: "Span" or "ReadOnlySpan" } named
        && named.ContainingNamespace?.ToDisplayString() == "System"
        && ScalarTypeOf(named.TypeArguments[0]) is ScalarType.Double or ScalarType.Single or ScalarType.Int32 or ScalarType.Generic;

    private static bool TryBinaryOperator(BinaryOperatorKind kind, out BinaryOperator op)
    {
        switch (kind)
        {
            case BinaryOperatorKind.Add: op = BinaryOperator.Add; return true;
            case BinaryOperatorKind.Subtract: op = BinaryOperator.Subtract; return true;
            case BinaryOperatorKind.Multiply: op = BinaryOperator.Multiply; return true;
            case BinaryOperatorKind.Divide: op = BinaryOperator.Divide; return true;
            default: op = default; return false;
        }
    }

    private IrExpression? LowerConversion(IConversionOperation conversion)
    {
        ScalarType? to = conversion.Type is null ? null : ValueTypeOf(conversion.Type);
        ScalarType? from = conversion.Operand.Type is null ? null : ValueTypeOf(conversion.Operand.Type);
        if (conversion.OperatorMethod is null && to is { } target && from is { } source
            && target != ScalarType.Boolean && source != ScalarType.Boolean)
        {
            IrExpression? operand = LowerExpression(conversion.Operand);
            return operand is null ? null : Convert(operand, target);
        }

        return Unsupported(conversion, $"the conversion '{Text(conversion)}'", "only conversions between int, float and double are supported");
    }

    private IrExpression? LowerInvocation(IInvocationOperation invocation)
    {
        IMethodSymbol target = invocation.TargetMethod;
        IrExpression? predicate = TryLowerPredicate(invocation, out bool isPredicate);
        if (isPredicate)
        {
            return predicate;
        }

        if (target.MethodKind == MethodKind.LocalFunction)
        {
            return LowerInlinedCallExpression(invocation, target);
        }

        IrExpression? generic = TryLowerGenericCall(invocation, out bool isGeneric);
        if (isGeneric)
        {
            return generic;
        }

        if (target.MethodKind == MethodKind.Ordinary && GenericCallBufferProblem(invocation) is { } refused)
        {
            return refused;
        }

        if (IsEnumerable(target.ContainingType) && TryLowerLinq(invocation, out bool isLinq) is var linq && isLinq)
        {
            return linq; // a loop (BodyLowerer.Linq.cs)
        }

        if (target.Name == "GetLength" && invocation.Instance is { } array && DataText(array) is { } arrayText
            && invocation.Arguments.Length == 1 && invocation.Arguments[0].Value.ConstantValue is { HasValue: true, Value: int dimension })
        {
            return new IrExternal(arrayText + ".GetLength(" + dimension.ToString(System.Globalization.CultureInfo.InvariantCulture) + ")", ScalarType.Int32);
        }

        // Names are compared before display strings are built (ToDisplayString allocates; this runs for every call).
        if (target.GetAttributes().FirstOrDefault(a => a.AttributeClass is { Name: "DifferentiateAttribute" } type
                && type.ToDisplayString() == MethodParser.AttributeMetadataName) is { } attribute)
        {
            return LowerUserCall(invocation, target, attribute);
        }

        if (target.DeclaringSyntaxReferences.Length == 1 && target.ContainingType?.SpecialType == SpecialType.None
            && MathTypeHost(target.ContainingType) is null
            && SymbolEqualityComparer.Default.Equals(target.ContainingAssembly, _helpers.Compilation.Assembly))
        {
            // The rule, which helpers are called and which are inlined: BodyLowerer.Inlining.cs, IsCalledHelper.
            if (IsCalledHelper(target))
            {
                return LowerHelperCall(invocation, target);
            }

            if (target.MethodKind == MethodKind.Ordinary)
            {
                return LowerInlinedCallExpression(invocation, target);
            }
        }

        MathHost? host = target.ContainingType?.SpecialType switch
        {
            SpecialType.System_Double => MathHost.Double,
            SpecialType.System_Single => MathHost.Single,
            _ => MathTypeHost(target.ContainingType),
        };

        if (host is null || !target.IsStatic || !MathFunctions.TryGet(target.Name, invocation.Arguments.Length, out MathFunction function)
            || ScalarTypeOf(target.ReturnType) is not { } returnType)
        {
            return Unsupported(invocation, $"the call to '{target.ContainingType?.ToDisplayString()}.{target.Name}'",
                CallAdvice(invocation, target));
        }

        var arguments = new IrExpression[invocation.Arguments.Length];
        bool ok = true;
        foreach (IArgumentOperation argument in invocation.Arguments)
        {
            int index = argument.Parameter?.Ordinal ?? -1;
            ScalarType? parameterType = argument.Parameter is null ? null : ScalarTypeOf(argument.Parameter.Type);
            if (index < 0 || index >= arguments.Length || parameterType is null or ScalarType.Boolean
                || (!MathFunctions.ReturnsInt(function) && parameterType != returnType))
            {
                return Unsupported(invocation, $"the call to '{target.ContainingType?.ToDisplayString()}.{target.Name}' with these argument types",
                    "call the double or float overload");
            }

            IrExpression? lowered = LowerExpression(argument.Value);
            if (lowered is null)
            {
                ok = false;
                continue;
            }

            arguments[index] = lowered;
        }

        if (!ok)
        {
            return null;
        }

        var call = new IrCall(function, host.Value, arguments.ToEquatableArray(), returnType);
        if (MathFunctions.NonSmoothConvention(function) is { } convention && DependsOnVariable(call))
        {
            _diagnostics.Add(DiagnosticInfo.Create(DiagnosticDescriptors.NonSmoothFunction, invocation.Syntax.GetLocation(),
                target.ContainingType!.Name + "." + target.Name, convention));
        }

        return call;
    }

    /// <summary>
    /// A call of another [Differentiate] method: its value as written, its derivatives by the chain rule from the
    /// callee's own generated MGradient/MHessian (the callee is not inlined).
    /// </summary>
    private IrExpression? LowerUserCall(IInvocationOperation invocation, IMethodSymbol target, AttributeData attribute)
    {
        RecordReads(target);
        string name = "'" + target.ContainingType?.Name + "." + target.Name + "'";
        if (SymbolEqualityComparer.Default.Equals(target.OriginalDefinition, _method.OriginalDefinition))
        {
            return Unsupported(invocation, "the recursive call " + name, "a differentiated method cannot call itself; write the recursion as a loop");
        }

        string? receiver = target.IsStatic ? FullyQualified(target.ContainingType!)
            : invocation.Instance is IInstanceReferenceOperation ? "this" : null;
        if (receiver is null || (target.IsGenericMethod && GenericDeclarationProblem(target.OriginalDefinition, out _) is not null) || target.DeclaringSyntaxReferences.IsEmpty
            || ScalarTypeOf(target.ReturnType) is not ({ } type and (ScalarType.Double or ScalarType.Single or ScalarType.Generic))
            || target.Parameters.Any(p => ScalarTypeOf(p.Type) is null || p.RefKind is not (RefKind.None or RefKind.In)))
        {
            return Unsupported(invocation, "the call to " + name,
                "a called [Differentiate] method must be static or of this instance, in this compilation, not generic, and take double, float, int or bool parameters");
        }

        if (_emitHessian && !MethodParser.HasHessian(attribute))
        {
            return Unsupported(invocation, "the call to " + name, "it is marked Hessian = false, so its second derivatives are not generated; remove that, or set Hessian = false here too");
        }

        IReadOnlyList<IParameterSymbol> calleeVariables = MethodParser.VariablesOf(target, attribute);
        var arguments = new IrExpression[target.Parameters.Length];
        foreach (IArgumentOperation argument in invocation.Arguments)
        {
            if (argument.Parameter is null || LowerExpression(argument.Value) is not { } lowered)
            {
                return null;
            }

            IParameterSymbol parameter = argument.Parameter;
            if (!calleeVariables.Contains(parameter, SymbolEqualityComparer.Default) && DependsOnVariable(lowered))
            {
                return Unsupported(argument, $"the argument for '{parameter.Name}' of {name}",
                    $"it depends on a differentiation variable, but '{parameter.Name}' is not one of the variables of {name}; add it to that method's [Differentiate]");
            }

            arguments[parameter.Ordinal] = Convert(lowered, ScalarTypeOf(parameter.Type)!.Value);
        }

        return new IrUserCall(receiver, Identifiers.Escape(target.Name), arguments.ToEquatableArray(),
            calleeVariables.Select(p => p.Ordinal).ToEquatableArray(), calleeVariables.Select(p => p.Name).ToEquatableArray(),
            MethodParser.HasHessian(attribute), type);
    }

    private bool DependsOnVariable(IrExpression expression) => expression switch
    {
        IrParameter parameter => _variables.Contains(parameter.Name),
        IrLocal local => _variableDependentLocals.Contains(local.Name),
        IrNegate negate => DependsOnVariable(negate.Operand),
        IrConvert convert => convert.Type != ScalarType.Int32 && DependsOnVariable(convert.Operand),
        IrBinary binary => binary.Type != ScalarType.Int32 && (DependsOnVariable(binary.Left) || DependsOnVariable(binary.Right)),
        IrCall call => AnyDependsOnVariable(call.Arguments),
        IrUserCall call => AnyDependsOnVariable(call.Arguments),
        IrCompare compare => DependsOnVariable(compare.Left) || DependsOnVariable(compare.Right),
        IrElement element => _variables.Contains(element.Data),
        IrLogical logical => DependsOnVariable(logical.Left) || (logical.Right is not null && DependsOnVariable(logical.Right)),
        IrConditional conditional => DependsOnVariable(conditional.WhenTrue) || DependsOnVariable(conditional.WhenFalse) || DependsOnVariable(conditional.Condition),
        _ => false,
    };

    private bool AnyDependsOnVariable(EquatableArray<IrExpression> expressions)
    {
        foreach (IrExpression expression in expressions)
        {
            if (DependsOnVariable(expression))
            {
                return true;
            }
        }

        return false;
    }

    private IrExpression? Unsupported(IOperation operation, string construct, string hint)
    {
        string described = construct.Length > 0 ? char.ToUpperInvariant(construct[0]) + construct.Substring(1) : construct;
        _diagnostics.Add(DiagnosticInfo.Create(DiagnosticDescriptors.UnsupportedConstruct, operation.Syntax.GetLocation(), described, hint));
        return null;
    }

    internal static ScalarType? ScalarTypeOf(ITypeSymbol type) => type.SpecialType switch
    {
        SpecialType.System_Double => ScalarType.Double,
        SpecialType.System_Single => ScalarType.Single,
        SpecialType.System_Int32 => ScalarType.Int32,
        SpecialType.System_Boolean => ScalarType.Boolean,
        _ => IsMethodTypeParameter(type) ? ScalarType.Generic : null,
    };

    private static bool TryConstant(object? value, ScalarType type, out IrConstant? constant)
    {
        constant = value switch
        {
            double d when type == ScalarType.Double => new IrConstant(BitConverter.DoubleToInt64Bits(d), type),
            float f when type == ScalarType.Single => new IrConstant(BitConverter.DoubleToInt64Bits(f), type),
            int i when type == ScalarType.Int32 => new IrConstant(i, type),
            bool b when type == ScalarType.Boolean => new IrConstant(b ? 1 : 0, type),
            _ => null,
        };
        return constant is not null;
    }

    internal static string FullyQualified(ITypeSymbol type) => type.ToDisplayString(SymbolDisplayFormat.FullyQualifiedFormat);

    private static string Text(IOperation operation)
    {
        string text = operation.Syntax.ToString().Replace("\r", " ").Replace("\n", " ");
        return text.Length <= 60 ? text : text.Substring(0, 57) + "...";
    }

    private static string DescribeStatement(IOperation statement) => statement switch
    {
        IForEachLoopOperation => "the foreach loop",
        IWhileLoopOperation { ConditionIsTop: false } => "the do loop",
        IWhileLoopOperation => "the while loop",
        IConditionalOperation => "the if statement",
        ISwitchOperation => "the switch statement",
        ITryOperation => "the try statement",
        IThrowOperation => "the throw statement",
        IBranchOperation => "the jump statement '" + Text(statement) + "'",
        ILocalFunctionOperation => "the local function",
        IUsingOperation => "the using statement",
        ILockOperation => "the lock statement",
        _ => "the statement '" + Text(statement) + "'",
    };

    private static string DescribeExpression(IOperation expression) => expression switch
    {
        IConditionalOperation => "the conditional expression '" + Text(expression) + "'",
        IArrayElementReferenceOperation => "the element access '" + Text(expression) + "'",
        IAnonymousFunctionOperation => "the lambda",
        IObjectCreationOperation => "the object creation '" + Text(expression) + "'",
        IIncrementOrDecrementOperation => "the increment or decrement '" + Text(expression) + "'",
        IThrowOperation => "the throw expression",
        _ => "the expression '" + Text(expression) + "'",
    };

    private static string HintFor(IOperation operation) => operation switch
    {
        IWhileLoopOperation => "this version differentiates 'for (int i = start; i < end; i++)' and foreach loops over data; rewrite the loop in that form",
        ISwitchOperation => "use if/else or the conditional operator instead",
        IBranchOperation => "break, continue and goto are not supported yet; put the condition around the loop body's statements instead",
        ITryOperation => "exceptions cannot be differentiated; validate arguments before calling the method",
        IThrowOperation => GuardAdvice,
        ILocalFunctionOperation => LocalFunctionAdvice,
        _ => "a differentiable body uses locals, + - * /, and the math functions listed in the README",
    };
}
