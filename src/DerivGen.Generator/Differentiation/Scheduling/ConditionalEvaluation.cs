using System.Collections.Generic;
using System.Linq;
using DerivGen.Generator.Symbolic;

namespace DerivGen.Generator.Differentiation;

/// <summary>
/// Which operations that can throw (a data read, an int division, Clamp, Sign) the user's code evaluates, at which
/// stage and under which conditions — and so which nodes the generated code may compute ahead, in a local at the top of
/// their stage, without evaluating such an operation where the user's code would not.
/// <para>
/// The user's code is the value DAG: from each root (the value, the loops' bounds and conditions, the carried locals'
/// start and update) evaluated at its stage, every argument is evaluated, except that a side of a selection is evaluated
/// only where its condition holds (or does not), and the right of <c>&amp;&amp;</c> / <c>||</c> only where the left is
/// true / false. So each throwing node gets the conjunctions of conditions under which it is evaluated at a stage.
/// A node computed ahead at stage s evaluates its throwing nodes under the conditions of the selections,
/// <c>&amp;&amp;</c> and <c>||</c> inside it (written as such, they short-circuit): that is safe when, for each, one of
/// the user's conjunctions at stage s is among those conditions — wherever the local's code reads it, the user's code
/// reads it too. This lets a value computed from a guarded read (<c>i &lt; n ? d[i] : 0</c>) have a local, instead of
/// being written out as a tree at every use.
/// </para>
/// </summary>
internal sealed class ConditionalEvaluation
{
    /// <summary>Beyond this many (node, stage, conditions) visits the analysis gives up and allows nothing (sound).</summary>
    private const int MaxVisits = 200_000;

    private readonly Dictionary<(int Parent, int Condition, bool Holds), Conditions> _interned = new();
    private readonly Dictionary<(Node Node, int Stage), List<Conditions>> _userEvaluates = new();
    private readonly Dictionary<(Node Node, int Stage, int Conditions), bool> _safe = new();
    private readonly System.Func<Node, bool> _canThrow;
    private readonly bool _gaveUp;

    public ConditionalEvaluation(IEnumerable<(Node Root, int Stage)> userRoots, System.Func<Node, bool> canThrow)
    {
        _canThrow = canThrow;
        var seen = new HashSet<(Node, int, int)>();
        var stack = new Stack<(Node Node, int Stage, Conditions Conditions)>(userRoots.Select(r => (r.Root, r.Stage, Conditions.Always)));
        while (stack.Count > 0)
        {
            (Node node, int stage, Conditions conditions) = stack.Pop();
            if (!seen.Add((node, stage, conditions.Id)))
            {
                continue;
            }

            if (seen.Count > MaxVisits)
            {
                _gaveUp = true;
                return;
            }

            if (canThrow(node))
            {
                if (!_userEvaluates.TryGetValue((node, stage), out List<Conditions>? list))
                {
                    _userEvaluates[(node, stage)] = list = new List<Conditions>();
                }

                list.Add(conditions);
            }

            foreach ((Node argument, Conditions under) in Arguments(node, conditions))
            {
                stack.Push((argument, stage, under));
            }
        }
    }

    /// <summary>Whether computing <paramref name="node"/> at the top of its stage evaluates only throwing operations the
    /// user's code evaluates there under the conditions that guard them in the node's own code.</summary>
    public bool SafeAhead(Node node) => !_gaveUp && Safe(node, node.Stage, Conditions.Always);

    private bool Safe(Node node, int stage, Conditions conditions)
    {
        System.Runtime.CompilerServices.RuntimeHelpers.EnsureSufficientExecutionStack(); // a deep input fails as a diagnostic, never as a stack overflow
        if (_safe.TryGetValue((node, stage, conditions.Id), out bool known))
        {
            return known;
        }

        bool safe = !_canThrow(node)
            || (_userEvaluates.TryGetValue((node, stage), out List<Conditions>? guards) && guards.Any(g => g.IsSubsetOf(conditions)));
        if (safe)
        {
            foreach ((Node argument, Conditions under) in Arguments(node, conditions))
            {
                if (!Safe(argument, stage, under))
                {
                    safe = false;
                    break;
                }
            }
        }

        if (_safe.Count > MaxVisits)
        {
            return false;
        }

        _safe[(node, stage, conditions.Id)] = safe;
        return safe;
    }

    /// <summary>The arguments a node evaluates, each with the conditions under which it does.</summary>
    private IEnumerable<(Node Argument, Conditions Under)> Arguments(Node node, Conditions conditions)
    {
        switch (node.Kind)
        {
            case NodeKind.Select:
                yield return (node.Arguments[0], conditions);
                yield return (node.Arguments[1], With(conditions, node.Arguments[0], holds: true));
                yield return (node.Arguments[2], With(conditions, node.Arguments[0], holds: false));
                break;
            case NodeKind.And or NodeKind.Or:
                yield return (node.Arguments[0], conditions);
                yield return (node.Arguments[1], With(conditions, node.Arguments[0], holds: node.Kind == NodeKind.And));
                break;
            default:
                foreach (Node argument in node.Arguments)
                {
                    yield return (argument, conditions);
                }

                break;
        }
    }

    private Conditions With(Conditions conditions, Node condition, bool holds)
    {
        if (conditions.Contains(condition, holds))
        {
            return conditions;
        }

        if (!_interned.TryGetValue((conditions.Id, condition.Id, holds), out Conditions? extended))
        {
            extended = new Conditions(_interned.Count + 1, conditions, condition, holds);
            _interned[(conditions.Id, condition.Id, holds)] = extended;
        }

        return extended;
    }

    /// <summary>A conjunction of conditions, each holding or not: a chain from <see cref="Always"/>, interned.</summary>
    private sealed class Conditions
    {
        public static readonly Conditions Always = new(0, null, null, false);

        private HashSet<(Node, bool)>? _set;

        public Conditions(int id, Conditions? parent, Node? condition, bool holds)
        {
            Id = id;
            Parent = parent;
            Condition = condition;
            Holds = holds;
        }

        public int Id { get; }

        public Conditions? Parent { get; }

        public Node? Condition { get; }

        public bool Holds { get; }

        private HashSet<(Node, bool)> Set
        {
            get
            {
                if (_set is null)
                {
                    _set = new HashSet<(Node, bool)>();
                    for (Conditions? c = this; c?.Condition is not null; c = c.Parent)
                    {
                        _set.Add((c.Condition, c.Holds));
                    }
                }

                return _set;
            }
        }

        public bool Contains(Node condition, bool holds) => Set.Contains((condition, holds));

        /// <summary>Every condition of this conjunction is one of <paramref name="other"/>'s.</summary>
        public bool IsSubsetOf(Conditions other)
        {
            for (Conditions? c = this; c?.Condition is not null; c = c.Parent)
            {
                if (!other.Contains(c.Condition, c.Holds))
                {
                    return false;
                }
            }

            return true;
        }
    }
}
