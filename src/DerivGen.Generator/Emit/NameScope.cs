using System;
using System.Collections.Generic;
using System.Linq;
using DerivGen.Generator.Differentiation;
using DerivGen.Generator.Model;
using DerivGen.Generator.Symbolic;

namespace DerivGen.Generator.Emit;

/// <summary>
/// The one name scope of a generated method's body: every identifier the body declares is allocated here, from the
/// plan's symbolic entities (nodes, carried locals, calls), never clashing with the parameters, the spans, the
/// program's generated locals or the loop indices.
/// <para>
/// The order is fixed, because it decides the names (<c>value</c> before <c>value2</c>): when the scope is made,
/// <c>value</c>, the user's local names, snapshots (<c>sBefore</c>), the other temporaries (<see cref="TemporaryNames"/>)
/// and the aliases of equal SinCos nodes; then, as the writer reaches them, the call buffers (<c>…Gradient</c>,
/// <c>…Hessian</c>), the span index <c>k</c>, the spans' <c>…Next</c> buffers, and <c>…Start</c>, <c>…Next</c>,
/// <c>row</c> and <c>…Adjoint</c>. The running derivatives' names are allocated before all of these, once per program
/// (<see cref="DerivativeNames"/>), and reserved here.
/// </para>
/// </summary>
internal sealed class NameScope
{
    private readonly TemporaryNames _names;
    private readonly Dictionary<Node, string> _nameOf = new();
    private readonly EmitContext _context;
    private readonly Dictionary<string, string> _nextSpans = new(StringComparer.Ordinal);

    public NameScope(EmitContext context, MethodPlan plan, string thrower)
    {
        _context = context;
        DerivativeProgram program = plan.Program;
        List<Node> temporaries = plan.Temporaries;
        var reserved = context.Spec.Parameters.Select(p => p.Name)
            .Concat(new[] { context.GradientName, context.HessianName, context.JacobianName, thrower })
            .Concat(program.Product is null ? Array.Empty<string>() : new[] { context.DirectionName, context.ProductName })
            .Concat(program.StateNames)
            .Concat(context.DerivativeNames.Values)
            .Concat(program.Loops.Where(l => l.Index is not null).Select(l => l.Index!));
        _names = new TemporaryNames(reserved);
        if (temporaries.Contains(program.Value) && program.Names.LocalName(program.Value) is null)
        {
            _nameOf[program.Value] = _names.Claim(GeneratedNames.ValueLocal);
        }

        foreach (Node node in temporaries.Where(t => program.Names.LocalName(t) is not null && !_nameOf.ContainsKey(t)))
        {
            _nameOf[node] = _names.Claim(program.Names.LocalName(node)!);
        }

        foreach (Node node in plan.Snapshots)
        {
            _nameOf[node] = _names.Claim(Identifiers.Unescape(context.Name(node.Text!)) + "Before");
        }

        foreach (Node node in temporaries.Where(t => !_nameOf.ContainsKey(t)))
        {
            _nameOf[node] = _names.For(node, program.Names, x => x.Kind == NodeKind.Parameter ? context.Name(x.Text!) : Of(x));
        }

        foreach (KeyValuePair<Node, Node> pair in plan.SinCos.SameAs)
        {
            _nameOf[pair.Key] = _nameOf[pair.Value];
        }

        foreach (SpanSnapshot snapshot in plan.SpanSnapshots)
        {
            _spanSnapshots[snapshot] = _names.Claim(context.Name(snapshot.Span) + "Before");
        }
    }

    /// <summary>
    /// The names of a program's running derivatives by id (<see cref="DerivativeLocals"/>): each its hint, made unique
    /// in the order the ids were made, clear of the parameters, the names DerivGen generates, the carried locals and
    /// the user's locals. This is the one clash-avoiding rename of these locals; the body's scope then reserves them.
    /// </summary>
    public static Dictionary<string, string> DerivativeNames(MethodSpec spec, DerivativeProgram program)
    {
        var taken = new HashSet<string>(spec.Parameters.Select(p => Identifiers.Unescape(p.Name)).Concat(GeneratedNames.Reserved), StringComparer.Ordinal);
        taken.UnionWith(program.StateNames);
        ProgramGraph.CollectLocalNames(spec.Body, taken);
        var names = new Dictionary<string, string>(StringComparer.Ordinal);
        for (int id = 0; id < program.Locals.Hints.Count; id++)
        {
            names[DerivativeLocals.Id(id)] = Identifiers.Unique(program.Locals.Hints[id], taken);
        }

        return names;
    }

    private readonly Dictionary<SpanSnapshot, string> _spanSnapshots = new();

    /// <summary>The span holding a copy of a running-derivative span (<see cref="MethodPlan.SpanSnapshots"/>).</summary>
    public string this[SpanSnapshot snapshot] => _spanSnapshots[snapshot];

    /// <summary>The local holding the node (a snapshot or temporary, or the running derivative a leaf reads), or null
    /// when it is written inline.</summary>
    public string? Of(Node node) => _nameOf.TryGetValue(node, out string? name) ? name : _context.LeafName(node);

    public string this[Node node] => _nameOf[node];

    /// <summary>The buffer a call of another generated method fills (<paramref name="suffix"/>: Gradient or Hessian).</summary>
    public string CallBuffer(Node call, string suffix)
    {
        string stem = Identifiers.Unescape(call.Callee!.Method);
        return _names.Claim(char.ToLowerInvariant(stem[0]) + stem.Substring(1) + suffix);
    }

    /// <summary>The index of the loops over a span's elements.</summary>
    public string SpanIndex() => _names.Claim("k");

    /// <summary>The local a carried local's new value goes through (<paramref name="suffix"/>: Start or Next).</summary>
    public string Through(string target, string suffix) => _names.Claim(Identifiers.Unescape(_context.Name(target)) + suffix);

    /// <summary>The buffer a span's new value is computed in (<paramref name="span"/> is its id), the same name each time.</summary>
    public string NextSpan(string span)
    {
        if (!_nextSpans.TryGetValue(span, out string? name))
        {
            _nextSpans[span] = name = _names.Claim(_context.Name(span) + "Next");
        }

        return name;
    }

    /// <summary>The start of an output's Jacobian row.</summary>
    public string Row() => _names.Claim("row");

    /// <summary>A fresh name for a local of the reverse sweep (<c>…Next</c> of an adjoint).</summary>
    public string Fresh(string hint) => _names.Claim(hint);

    /// <summary>A fresh name for a temporary of the reverse sweep, descriptive where the node's shape allows.</summary>
    public string Fresh(Node node, Func<Node, string?> nameOf) => _names.For(node, _context.Program.Names, nameOf);

    /// <summary>The adjoint of a carried local whose span is replayed.</summary>
    public string Adjoint(string state) => _names.Claim(Identifiers.Unescape(_context.Name(state)) + "Adjoint");
}
