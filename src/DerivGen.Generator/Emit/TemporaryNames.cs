using System;
using System.Collections.Generic;
using System.Globalization;
using DerivGen.Generator.Lowering;
using DerivGen.Generator.Model;
using DerivGen.Generator.Symbolic;

namespace DerivGen.Generator.Emit;

/// <summary>
/// Chooses the names of the locals of one generated method: the user's own local names where a node is one of the
/// user's locals, otherwise a name saying what the temporary holds (<c>cosTheta</c>, <c>rAdjoint</c>), falling back to
/// <c>t1, t2, …</c>. Names never collide with the method's parameters or with each other.
/// </summary>
internal sealed class TemporaryNames
{
    private readonly HashSet<string> _taken = new(StringComparer.Ordinal);
    private int _counter;

    public TemporaryNames(IEnumerable<string> reserved)
    {
        foreach (string name in reserved)
        {
            _taken.Add(Identifiers.Unescape(name));
        }
    }

    /// <summary>Reserves and returns <paramref name="wanted"/>, or wanted2, wanted3, … if it is taken.</summary>
    public string Claim(string wanted)
    {
        return Identifiers.Escape(Identifiers.Unique(Identifiers.Unescape(wanted), _taken));
    }

    /// <summary>A fresh name for a node's temporary, descriptive where the node's shape allows.</summary>
    public string For(Node node, NodeNames given, Func<Node, string?> nameOf)
    {
        if (given.LocalName(node) is { } local)
        {
            return Claim(local);
        }

        if (given.Hint(node) is { } hint)
        {
            return Claim(hint);
        }

        string? operand = node.Arguments.Length > 0 ? SimpleName(node.Arguments[0], nameOf) : null;
        if (node.Kind == NodeKind.Call && node.Arguments.Length == 1 && operand is not null)
        {
            return Claim(Lower(MathFunctions.CSharpName(node.Function)) + Capitalize(operand));
        }

        if (node.Kind == NodeKind.Multiply && node.Arguments[0] == node.Arguments[1] && operand is not null)
        {
            return Claim(operand + "Squared");
        }

        // Otherwise a name for the kind of value, numbered within that kind (exp, exp2, …), so that an edit that adds
        // one temporary renames as few others as possible in a reviewed diff.
        string? kind = node.Kind switch
        {
            NodeKind.Call => Lower(MathFunctions.CSharpName(node.Function)),
            NodeKind.Element when SimpleName(node.Arguments[0], nameOf) is { } index && ElementData(node) is { } data => data + Capitalize(index),
            NodeKind.UserCall when LastSegment(node.Text) is { } method => method,
            NodeKind.Compare or NodeKind.And or NodeKind.Or or NodeKind.Not => "condition",
            NodeKind.Select => "selected",
            _ => null,
        };
        if (kind is not null)
        {
            return Claim(kind);
        }

        string name;
        do
        {
            name = "t" + (++_counter).ToString(CultureInfo.InvariantCulture);
        }
        while (_taken.Contains(name));

        return Claim(name);
    }

    private static string? SimpleName(Node node, Func<Node, string?> nameOf)
    {
        string? name = node.Kind == NodeKind.Parameter || !node.IsLeaf ? nameOf(node) : null;
        if (name is null || name.Length > 24)
        {
            return null;
        }

        name = Identifiers.Unescape(name);
        foreach (char c in name)
        {
            if (!char.IsLetterOrDigit(c) && c != '_')
            {
                return null;
            }
        }

        return name;
    }

    /// <summary>The data's own name when it is a plain identifier or a field of a type (<c>global::Fit.T</c> → <c>T</c>).</summary>
    private static string? ElementData(Node node) => node.Arguments.Length == 1 ? LastSegment(node.Text) : null;

    /// <summary>The last identifier of a dotted name, lower-cased first letter; null unless plain and short.</summary>
    private static string? LastSegment(string? text)
    {
        if (text is null)
        {
            return null;
        }

        string last = text.Substring(text.LastIndexOf('.') + 1);
        if (last.Length == 0 || last.Length > 24 || !char.IsLetter(last[0]))
        {
            return null;
        }

        foreach (char c in last)
        {
            if (!char.IsLetterOrDigit(c) && c != '_')
            {
                return null;
            }
        }

        return Lower(last);
    }

    private static string Lower(string name) => char.ToLowerInvariant(name[0]) + name.Substring(1);

    private static string Capitalize(string name) => char.ToUpperInvariant(name[0]) + name.Substring(1);
}
