using System;
using System.Collections.Generic;
using System.Collections.Immutable;
using System.Linq;
using DerivGen.Generator.Diagnostics;
using DerivGen.Generator.Model;
using Microsoft.CodeAnalysis;
using Microsoft.CodeAnalysis.Operations;

namespace DerivGen.Generator.Lowering;

// Jumps (break, continue, a return inside a loop or before one) and loops inside branches, lowered into the IR's
// structured form: a jump sets a bool flag, the statements after it run under "nothing jumped", and a loop that a
// break or return may leave, or that sits inside a branch, becomes a while loop whose condition also tests the flag
// or the branch condition. Every flag and guard must not depend on a differentiation variable where it decides how
// often a loop runs (the derivative would otherwise jump with the trip count); elsewhere it is an ordinary branch.
internal sealed partial class BodyLowerer
{
    private static readonly IrConstant True = new(1, ScalarType.Boolean);
    private static readonly IrConstant False = new(0, ScalarType.Boolean);

    private readonly HashSet<string> _reservedNames = new(StringComparer.Ordinal);
    private LoopExits? _loop;
    private string? _returnFlag;
    private string? _returnValue;
    private int _jumps;
    private int _variableBranchDepth;

    /// <summary>The flags the jumps out of one loop body set.</summary>
    private sealed class LoopExits
    {
        /// <summary>Set by <c>continue</c>; cleared at the start of every iteration.</summary>
        public string? SkipFlag { get; set; }

        /// <summary>Set by <c>break</c>; cleared before the loop.</summary>
        public string? ExitFlag { get; set; }

        /// <summary>A return in the body (or in a loop nested in it) leaves this loop too.</summary>
        public bool ExitsByReturn { get; set; }

        public bool LeavesEarly => ExitFlag is not null || ExitsByReturn;

        public IEnumerable<IrStatement> Setup() =>
            ExitFlag is null ? Enumerable.Empty<IrStatement>() : new IrStatement[] { new IrAssign(ExitFlag, False) };

        /// <summary>What the loop condition must also require: no break and no return yet (null: nothing).</summary>
        public IrExpression? Guard(string? returnFlag) =>
            AllOf(new[] { ExitFlag, ExitsByReturn ? returnFlag : null });
    }

    private readonly record struct LoweredLoop(EquatableArray<IrStatement> Body, LoopExits Exits, IrExpression? Condition);

    /// <summary>Names of the method's own locals and parameters, so that a flag never takes one of them.</summary>
    private void ReserveUserNames(IBlockOperation body)
    {
        foreach (IParameterSymbol parameter in _method.Parameters)
        {
            _reservedNames.Add(Identifiers.Escape(parameter.Name));
        }

        foreach (IOperation operation in body.DescendantsAndSelf())
        {
            switch (operation)
            {
                case IVariableDeclaratorOperation declarator:
                    _reservedNames.Add(declarator.Symbol.Name);
                    break;
                case ILoopOperation loop:
                    foreach (ILocalSymbol local in loop.Locals)
                    {
                        _reservedNames.Add(local.Name);
                    }

                    break;
            }
        }
    }

    /// <summary>A local of the lowering's own (a flag, a loop index): named unlike anything of the user's.</summary>
    private string FreshName(string name)
    {
        string candidate = name;
        for (int suffix = 2; _reservedNames.Contains(candidate) || _usedLocalNames.Contains(candidate); suffix++)
        {
            candidate = name + suffix.ToString(System.Globalization.CultureInfo.InvariantCulture);
        }

        _usedLocalNames.Add(candidate);
        return candidate;
    }

    /// <summary>
    /// Whether returns need the flag form: a return inside a loop, or one that a loop follows or shares a branch with.
    /// Otherwise an early return is a selection between values (<see cref="LowerReturningIf"/>), which needs no flag.
    /// </summary>
    private static bool NeedsReturnFlag(IBlockOperation body)
    {
        IOperation? last = body.Operations.LastOrDefault(o => o is not ILocalFunctionOperation);
        // One walk of the body finds the returns and the loops (each walk of an operation tree allocates).
        var returns = new List<IReturnOperation>();
        var loops = new List<IOperation>();
        foreach (IOperation operation in body.Descendants())
        {
            if (operation is IReturnOperation found && !Ancestors(found, body).Any(a => a is ILocalFunctionOperation))
            {
                returns.Add(found);
            }
            else if (operation is ILoopOperation)
            {
                loops.Add(operation);
            }
        }

        if (returns.Any(r => Ancestors(r, body).Any(a => a is ISwitchOperation)))
        {
            return true; // a return inside a switch section: the chain of ifs it becomes cannot return early
        }

        if (loops.Count == 0)
        {
            return false;
        }

        foreach (IReturnOperation ret in returns)
        {
            if (ret == last)
            {
                continue;
            }

            if (Ancestors(ret, body).Any(a => a is ILoopOperation)
                || loops.Any(l => l.Syntax.SpanStart > ret.Syntax.SpanStart)
                || loops.Any(l => Ancestors(l, body).Any(a => a is IConditionalOperation branch && branch.Descendants().Contains(ret))))
            {
                return true;
            }
        }

        return false;
    }

    private static IEnumerable<IOperation> Ancestors(IOperation operation, IOperation root)
    {
        for (IOperation? parent = operation.Parent; parent is not null && parent != root; parent = parent.Parent)
        {
            yield return parent;
        }
    }

    private static bool EndsWithJump(IBlockOperation block) =>
        block.Operations.Length > 0 && block.Operations[block.Operations.Length - 1] is IReturnOperation or IBranchOperation;

    /// <summary><c>return v</c> where returns are flagged: <c>result = v; returned = true;</c>.</summary>
    private void LowerFlaggedReturn(IOperation statement, IOperation value, bool isFinal)
    {
        if (!isFinal && _loop is not null && _variableBranchDepth > 0)
        {
            Unsupported(statement, "the return inside a loop under a condition that depends on a differentiation variable",
                "the number of iterations would depend on a variable; let the loop run its course and select the result after it");
            return;
        }

        AssignLocal(_returnValue!, LowerExpression(value));
        if (!isFinal)
        {
            AssignLocal(_returnFlag!, True);
            _jumps++;
            if (_loop is not null)
            {
                _loop.ExitsByReturn = true;
            }
        }
    }

    /// <summary><c>continue</c> and <c>break</c>: set the loop's flag.</summary>
    private void LowerJump(IBranchOperation jump)
    {
        if (jump.BranchKind == BranchKind.Break && _variableBranchDepth > 0)
        {
            Unsupported(jump, "the break under a condition that depends on a differentiation variable",
                "the number of iterations would depend on a variable; loop over a count or over data and select the terms instead");
            return;
        }

        string flag = jump.BranchKind == BranchKind.Continue
            ? _loop!.SkipFlag ??= FreshName("skipRest")
            : _loop!.ExitFlag ??= FreshName("leaveLoop");
        AssignLocal(flag, True);
        _jumps++;
    }

    /// <summary>The condition under which the statements after a jump run: no flag of this loop (or return) is set.</summary>
    private IrExpression? NothingJumped() => _loop is null
        ? AllOf(new[] { _returnFlag })
        : AllOf(new[] { _loop.SkipFlag, _loop.ExitFlag, _loop.ExitsByReturn ? _returnFlag : null });

    /// <summary><c>!a &amp;&amp; !b &amp;&amp; …</c> over the flags that exist; null when none does.</summary>
    private static IrExpression? AllOf(IEnumerable<string?> flags)
    {
        IrExpression? all = null;
        foreach (string flag in flags.Where(f => f is not null)!)
        {
            IrExpression clear = Not(new IrLocal(flag, ScalarType.Boolean));
            all = all is null ? clear : new IrLogical(LogicalOperator.And, all, clear);
        }

        return all;
    }

    private static IrExpression Not(IrExpression condition) => condition is IrLogical { Operator: LogicalOperator.Not } not
        ? not.Left
        : new IrLogical(LogicalOperator.Not, condition, null);

    private static IrExpression And(IrExpression? first, IrExpression second) =>
        first is null ? second : second.Equals(True) ? first : new IrLogical(LogicalOperator.And, first, second);

    private static IrConstant Zero(ScalarType type) => type switch
    {
        ScalarType.Double or ScalarType.Single or ScalarType.Generic => new IrConstant(BitConverter.DoubleToInt64Bits(0.0), type),
        _ => new IrConstant(0, type),
    };

    /// <summary>Keeps a condition in a bool local of its own, so that later assignments cannot change it.</summary>
    private IrExpression Snapshot(string name, IrExpression condition)
    {
        string local = FreshName(name);
        AssignLocal(local, condition);
        return new IrLocal(local, condition.Type);
    }

    private static bool ContainsLoop(EquatableArray<IrStatement> statements) => statements.Any(s => s switch
    {
        IrFor or IrWhile => true,
        IrIf branch => ContainsLoop(branch.Then) || ContainsLoop(branch.Else),
        _ => false,
    });

    /// <summary>
    /// Statements that run only where <paramref name="guard"/> holds: the others are one if, and each loop loops only
    /// while the guard holds. A loop under a guard that depends on a variable is refused (DG0001 with
    /// <paramref name="reason"/>) on the first loop of <paramref name="source"/>.
    /// </summary>
    private List<IrStatement> Guarded(IrExpression guard, EquatableArray<IrStatement> statements, IEnumerable<IOperation> source, string reason)
    {
        var result = new List<IrStatement>();
        var batch = new List<IrStatement>();
        bool refused = false;
        void Flush()
        {
            if (batch.Count > 0)
            {
                result.Add(new IrIf(guard, batch.ToEquatableArray(), EquatableArray<IrStatement>.Empty));
                batch = new List<IrStatement>();
            }
        }

        foreach (IrStatement statement in statements)
        {
            if (statement is not (IrFor or IrWhile))
            {
                batch.Add(statement);
                continue;
            }

            Flush();
            if (DependsOnVariable(guard))
            {
                if (!refused)
                {
                    IOperation location = source.SelectMany(s => s.DescendantsAndSelf()).FirstOrDefault(o => o is ILoopOperation) ?? source.First();
                    Unsupported(location, reason, "the number of iterations would depend on a variable; run the loop unconditionally and select its result");
                    refused = true;
                }

                continue;
            }

            IrWhile loop = statement as IrWhile ?? AsWhile((IrFor)statement, guard);
            result.Add(loop with { Condition = And(guard, loop.Condition) });
        }

        Flush();
        return result;
    }

    /// <summary>
    /// <c>for (int i = start; i &lt; end; i++) body</c> as <c>i = start; while (i &lt; end) { body; i = i + 1; }</c>; where the
    /// loop runs under <paramref name="guard"/>, a start that could throw is only evaluated where the guard holds.
    /// </summary>
    private static IrWhile AsWhile(IrFor loop, IrExpression? guard)
    {
        IrExpression start = guard is null || loop.Start is IrConstant or IrLocal or IrParameter or IrExternal
            ? loop.Start
            : new IrConditional(guard, loop.Start, Zero(ScalarType.Int32), ScalarType.Int32);
        var index = new IrLocal(loop.Index, ScalarType.Int32);
        var body = new List<IrStatement>(loop.Body)
        {
            new IrAssign(loop.Index, new IrBinary(BinaryOperator.Add, index, new IrConstant(1, ScalarType.Int32), ScalarType.Int32)),
        };
        return new IrWhile(
            new IrStatement[] { new IrAssign(loop.Index, start) }.ToEquatableArray(),
            new IrCompare(loop.Inclusive ? ComparisonOperator.LessOrEqual : ComparisonOperator.Less, index, loop.End),
            body.ToEquatableArray());
    }

    /// <summary>A counted loop; one that a break or return may leave becomes a while loop that also tests the flags.</summary>
    private void AddCountedLoop(IrFor loop, LoopExits exits)
    {
        if (!exits.LeavesEarly)
        {
            _statements.Add(loop);
            return;
        }

        IrWhile loopAsWhile = AsWhile(loop, null);
        _statements.Add(loopAsWhile with
        {
            Setup = exits.Setup().Concat(loopAsWhile.Setup).ToEquatableArray(),
            Condition = And(exits.Guard(_returnFlag), loopAsWhile.Condition),
        });
    }

    /// <summary>
    /// A loop body (and the for loop's step). A local assigned late in the body is read early in the next iteration, so
    /// the body is lowered once to learn which locals come to depend on a variable (so that a condition reading them is
    /// flagged), then the loop condition, then the body for real.
    /// </summary>
    private LoweredLoop LowerLoop(IOperation body, ImmutableArray<IOperation> step, IOperation? condition)
    {
        RefuseUpdateBeforeNestedLoop(body);
        int diagnosticCount = _diagnostics.Count;
        int jumps = _jumps;
        LoopExits? outer = _loop;
        var localNames = new Dictionary<ILocalSymbol, string>(_localNames, SymbolEqualityComparer.Default);
        var usedLocalNames = new HashSet<string>(_usedLocalNames, StringComparer.Ordinal);

        _loopNesting++;
        _loop = new LoopExits();
        LowerIteration(body, step);
        _diagnostics.RemoveRange(diagnosticCount, _diagnostics.Count - diagnosticCount);
        RestoreNames(localNames, usedLocalNames);

        IrExpression? loweredCondition = condition is null ? null : LowerExpression(condition);
        var exits = new LoopExits();
        _loop = exits;
        EquatableArray<IrStatement> lowered = LowerIteration(body, step);
        _loopNesting--;
        _loop = outer;
        _jumps = jumps;
        if (exits.ExitsByReturn)
        {
            _jumps++; // The loop statement itself may return: what follows it runs only if it did not.
            if (outer is not null)
            {
                outer.ExitsByReturn = true;
            }
        }

        return new LoweredLoop(lowered, exits, loweredCondition);
    }

    /// <summary>
    /// A floating-point local carried by this loop, assigned in its body before a nested loop that assigns it again, is
    /// not supported yet: its running derivatives would be updated from the wrong value (DG0001 on the nested loop).
    /// </summary>
    private void RefuseUpdateBeforeNestedLoop(IOperation body)
    {
        foreach (IOperation nested in body.Descendants().Where(o => o is ILoopOperation && !(o is IForLoopOperation counted && UnrollPlan(counted) is not null)))
        {
            var assignedInside = new HashSet<ILocalSymbol>(AssignedLocals(nested), SymbolEqualityComparer.Default);
            ILocalSymbol? clash = body.Descendants()
                .Where(o => o.Syntax.SpanStart < nested.Syntax.SpanStart && !nested.Syntax.Span.Contains(o.Syntax.Span))
                .SelectMany(AssignedLocalsOf)
                .FirstOrDefault(local => assignedInside.Contains(local)
                    && (local.Type.SpecialType is SpecialType.System_Double or SpecialType.System_Single || ArrayShape(local.Type)?.Element is ScalarType.Double or ScalarType.Single)
                    && !local.DeclaringSyntaxReferences.Any(r => body.Syntax.Span.Contains(r.Span)));
            if (clash is not null)
            {
                Unsupported(nested, "the nested loop that updates '" + clash.Name + "' again",
                    "'" + clash.Name + "' is carried by the enclosing loop and was already updated in this iteration; assign that earlier update to a new local and use it in the nested loop");
                return;
            }
        }
    }

    private static IEnumerable<ILocalSymbol> AssignedLocals(IOperation root) => root.DescendantsAndSelf().SelectMany(AssignedLocalsOf);

    private static IEnumerable<ILocalSymbol> AssignedLocalsOf(IOperation operation)
    {
        IOperation? target = operation switch
        {
            IAssignmentOperation assignment => assignment.Target,
            IIncrementOrDecrementOperation increment => increment.Target,
            _ => null,
        };
        if (target is ILocalReferenceOperation reference)
        {
            yield return reference.Local;
        }
        else if (target is not null && ElementAccess(target) is { Instance: var array } && Unwrap(array) is ILocalReferenceOperation arrayLocal)
        {
            yield return arrayLocal.Local; // an element of a local array
        }
        else if (target is ITupleOperation tuple)
        {
            foreach (IOperation element in tuple.Elements)
            {
                if (element is ILocalReferenceOperation local)
                {
                    yield return local.Local;
                }
            }
        }
    }

    /// <summary>One iteration: the body, then the step (which runs after a continue too, not after a break).</summary>
    private EquatableArray<IrStatement> LowerIteration(IOperation body, ImmutableArray<IOperation> step)
    {
        EquatableArray<IrStatement> statements = LowerNested(body);
        var iteration = new List<IrStatement>();
        if (_loop!.SkipFlag is { } skip)
        {
            iteration.Add(new IrAssign(skip, False));
        }

        iteration.AddRange(statements);
        iteration.AddRange(LowerNested(step, isTopLevel: false));
        return iteration.ToEquatableArray();
    }

    /// <summary>
    /// <c>switch (value) { case c1: case c2: …; break; … default: …; break; }</c> with constant case labels: an
    /// <c>if</c>/<c>else if</c> chain on the value (kept in a local), each section without its final <c>break</c>.
    /// </summary>
    private void LowerSwitch(ISwitchOperation switchStatement)
    {
        IrExpression? value = LowerExpression(switchStatement.Value);
        if (value is null)
        {
            return;
        }

        var sections = new List<(IrExpression? Condition, List<IOperation> Body, ISwitchCaseOperation Case)>();
        IrExpression subject = value is IrParameter or IrConstant or IrLocal or IrExternal ? value : Snapshot("switchValue", value);
        foreach (ISwitchCaseOperation section in switchStatement.Cases)
        {
            IrExpression? condition = null;
            bool isDefault = false;
            foreach (ICaseClauseOperation clause in section.Clauses)
            {
                IrExpression? match = clause switch
                {
                    IDefaultCaseClauseOperation => null,
                    ISingleValueCaseClauseOperation { Value: { } label } => LowerExpression(label) is { } lowered
                        ? new IrCompare(ComparisonOperator.Equal, subject, lowered)
                        : null,
                    IPatternCaseClauseOperation { Pattern: var pattern, Guard: var guard } => LowerCaseClause(pattern, guard, subject),
                    _ => Unsupported(clause, "the case label '" + Text(clause) + "'", "use constant or relational case labels (case 1:, case < 0:) or if/else"),
                };
                if (clause is IDefaultCaseClauseOperation)
                {
                    isDefault = true;
                }
                else if (match is null)
                {
                    return;
                }
                else
                {
                    condition = condition is null ? match : new IrLogical(LogicalOperator.Or, condition, match);
                }
            }

            var body = section.Body.ToList();
            if (body.Count > 0 && body[body.Count - 1] is IBranchOperation { BranchKind: BranchKind.Break } last
                && SymbolEqualityComparer.Default.Equals(last.Target, switchStatement.ExitLabel))
            {
                body.RemoveAt(body.Count - 1);
            }

            if (body.SelectMany(b => b.DescendantsAndSelf()).OfType<IBranchOperation>().FirstOrDefault(b =>
                SymbolEqualityComparer.Default.Equals(b.Target, switchStatement.ExitLabel)) is { } inner)
            {
                Unsupported(inner, "the break out of the switch before the end of its section", "end each section with its break; use if/else inside it");
                return;
            }

            // The default section matches whatever no other section does, wherever it is written.
            sections.Add((isDefault ? null : condition, body, section));
        }

        if (TryGuardDefault(sections, switchStatement))
        {
            return; // reported
        }

        var ordered = sections.Where(s => s.Condition is not null).Concat(sections.Where(s => s.Condition is null)).ToList();
        bool dependsOnVariable = DependsOnVariable(subject) || sections.Any(s => s.Condition is { } c && DependsOnVariable(c));
        if (sections.Any(s => s.Condition is { } c && IsKink(c)))
        {
            _diagnostics.Add(DiagnosticInfo.Create(DiagnosticDescriptors.NonSmoothFunction, switchStatement.Value.Syntax.GetLocation(),
                "switch (" + Text(switchStatement.Value) + ")",
                DependsOnVariable(subject)
                    ? "the value switched on depends on a differentiation variable, so the derivative is that of the section taken and jumps where the value changes"
                    : "a case's condition depends on a differentiation variable, so the derivative is that of the section taken and jumps where the condition changes"));
        }

        _variableBranchDepth += dependsOnVariable ? 1 : 0;
        try
        {
            _statements.AddRange(SwitchChain(ordered, 0));
        }
        finally
        {
            _variableBranchDepth -= dependsOnVariable ? 1 : 0;
        }
    }

    /// <summary><c>case pattern when guard:</c> — the pattern's condition, and then the guard (evaluated only where it matches).</summary>
    private IrExpression? LowerCaseClause(IPatternOperation pattern, IOperation? guard, IrExpression subject)
    {
        IrExpression? condition = LowerPattern(pattern, subject);
        if (guard is null || condition is null)
        {
            return condition;
        }

        return LowerExpression(guard) is { } loweredGuard ? new IrLogical(LogicalOperator.And, condition, loweredGuard) : null;
    }

    /// <summary>The sections from <paramref name="index"/> on as an if/else-if chain (the default, if any, last).</summary>
    private List<IrStatement> SwitchChain(List<(IrExpression? Condition, List<IOperation> Body, ISwitchCaseOperation Case)> sections, int index)
    {
        if (index >= sections.Count)
        {
            return new List<IrStatement>();
        }

        (IrExpression? condition, List<IOperation> body, ISwitchCaseOperation section) = sections[index];
        EquatableArray<IrStatement> lowered = LowerNested(body, isTopLevel: false);
        if (condition is null)
        {
            return lowered.ToList(); // the default section
        }

        List<IOperation> rest = sections.Skip(index + 1).SelectMany(s => s.Body).ToList();
        List<IrStatement> otherwise = SwitchChain(sections, index + 1);
        List<IrStatement> outer = _statements;
        _statements = new List<IrStatement>();
        try
        {
            AddBranch(condition, lowered, otherwise.ToEquatableArray(), new IOperation[] { section }, rest);
            return _statements;
        }
        finally
        {
            _statements = outer;
        }
    }
}
