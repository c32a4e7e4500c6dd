using System;
using System.Collections.Generic;
using System.Linq;
using DerivGen.Generator.Symbolic;

namespace DerivGen.Generator.Differentiation;

/// <summary>How one carried local (or running derivative) is assigned before its loop or at the end of an iteration.</summary>
internal enum AssignmentKind
{
    /// <summary><c>type s = e;</c> where the local is first assigned.</summary>
    Declare,

    /// <summary><c>s = e;</c> in turn (e is a local's name when the value has one).</summary>
    Assign,

    /// <summary><c>s op= operand;</c> in the form of <see cref="Assignment.Form"/> (<see cref="InPlaceAccumulation"/>).</summary>
    InPlace,

    /// <summary>Another assignment reads the old value: <c>type sStart = e;</c> (or <c>sNext</c>) now, <c>s = sStart;</c> after all.</summary>
    ThroughLocal,

    /// <summary>Another assignment reads the old value, and e is already a local or a constant: <c>s = e;</c> after all.</summary>
    Deferred,
}

/// <summary>One assignment statement of a carried local, with its form; the writer prints it and names the temporary
/// of <see cref="AssignmentKind.ThroughLocal"/> (<c>…Start</c> before the loop, <c>…Next</c> in it).</summary>
internal sealed record Assignment(StateUpdate Update, AssignmentKind Kind, AssignmentForm Form = AssignmentForm.Assign, Node? Operand = null);

/// <summary>
/// The scheduling of the carried locals' assignments: before a loop, every start value is computed from the values
/// before any of them is assigned, and at the end of an iteration every update from the values at its start. An
/// assignment no other one reads is made in turn (in place where it has that form); the others are computed first
/// (into a local when their value has none) and assigned after all.
/// </summary>
internal static class StateAssignments
{
    public static void Schedule(MethodPlan plan)
    {
        var declared = new HashSet<string>(StringComparer.Ordinal);
        foreach (LoopSegment loop in plan.Program.TopLevelLoops)
        {
            Schedule(plan, loop, declared);
        }
    }

    /// <summary>In the order the loops are written (a loop's start before its nested loops'), which decides where each
    /// local is declared.</summary>
    private static void Schedule(MethodPlan plan, LoopSegment loop, HashSet<string> declared)
    {
        plan.Starts[loop] = Starts(plan, plan.Initial[loop].Where(u => !u.IsSameLocal).ToList(), declared); // IsSameLocal: carried on unchanged
        foreach (LoopSegment nested in loop.Children)
        {
            Schedule(plan, nested, declared);
        }

        plan.Ends[loop] = Ends(plan, plan.Next[loop].Where(u => !u.IsSameLocal).ToList());
    }

    private static List<Assignment> Starts(MethodPlan plan, List<StateUpdate> starting, HashSet<string> declared)
    {
        var startReads = starting.ToDictionary(u => u.Target, u => LocalsRead(u.Value, plan.HasLocal), StringComparer.Ordinal);
        var assignments = new List<Assignment>();
        foreach (StateUpdate update in starting)
        {
            if (!declared.Contains(update.Target) || !starting.Any(other => other.Target != update.Target && startReads[other.Target].Contains(update.Target)))
            {
                assignments.Add(new Assignment(update, declared.Add(update.Target) ? AssignmentKind.Declare : AssignmentKind.Assign));
                continue;
            }

            assignments.Add(new Assignment(update, !plan.HasLocal(update.Value) && update.Value.Kind != NodeKind.Constant ? AssignmentKind.ThroughLocal : AssignmentKind.Deferred));
        }

        return assignments;
    }

    private static List<Assignment> Ends(MethodPlan plan, List<StateUpdate> pending)
    {
        var reads = pending.ToDictionary(u => u.Target, u => LocalsRead(u.Value, plan.HasLocal), StringComparer.Ordinal);
        var assignments = new List<Assignment>();
        foreach (StateUpdate update in pending)
        {
            bool readByOthers = pending.Any(other => other.Target != update.Target && reads[other.Target].Contains(update.Target));
            if (!readByOthers)
            {
                if (plan.HasLocal(update.Value))
                {
                    assignments.Add(new Assignment(update, AssignmentKind.Assign));   // already computed, from the old values
                }
                else
                {
                    (AssignmentForm form, Node operand) = InPlaceAccumulation.Form(update, plan.Program.Builder);
                    assignments.Add(new Assignment(update, AssignmentKind.InPlace, form, operand));
                }

                continue;
            }

            assignments.Add(new Assignment(update, plan.HasLocal(update.Value) || update.Value.Kind == NodeKind.Constant ? AssignmentKind.Deferred : AssignmentKind.ThroughLocal));
        }

        return assignments;
    }

    /// <summary>The generated locals an update's expression reads when it is written (not through values that have a
    /// local, which are computed by then).</summary>
    private static HashSet<string> LocalsRead(Node value, Func<Node, bool> hasLocal)
    {
        var read = new HashSet<string>(StringComparer.Ordinal);
        var stack = new Stack<Node>();
        stack.Push(value);
        var seen = new HashSet<Node>();
        while (stack.Count > 0)
        {
            Node node = stack.Pop();
            if (!seen.Add(node) || hasLocal(node))
            {
                continue;
            }

            if (node.Kind == NodeKind.Parameter && node.Text is not null)
            {
                read.Add(node.Text);
            }

            foreach (Node argument in node.Arguments)
            {
                stack.Push(argument);
            }
        }

        return read;
    }
}
