using System.Collections.Generic;

namespace DerivGen.Generator.Symbolic;

/// <summary>
/// The names attached to the nodes of one DAG, kept beside it so that <see cref="Node"/> stays immutable: the user's
/// local name for the value a node computes (given by <c>ProgramGraph</c> as it reads the body), and a readable name
/// suggested for a temporary holding a node (<c>sNext</c>, <c>rAdjoint</c>). Owned by the <see cref="ExpressionBuilder"/>
/// that made the nodes, and so by the program built with it; Emit reads it to name locals and to write formulas.
/// </summary>
internal sealed class NodeNames
{
    private readonly Dictionary<Node, string> _local = new();
    private readonly Dictionary<Node, string> _hint = new();

    /// <summary>The user's local name for the value the node computes, if the user gave it one.</summary>
    public string? LocalName(Node node) => _local.TryGetValue(node, out string? name) ? name : null;

    /// <summary>Gives the node a user's local name, or takes it away (null).</summary>
    public void SetLocalName(Node node, string? name)
    {
        if (name is null)
        {
            _local.Remove(node);
        }
        else
        {
            _local[node] = name;
        }
    }

    /// <summary>A readable name suggested for a temporary holding the node (not a user name).</summary>
    public string? Hint(Node node) => _hint.TryGetValue(node, out string? hint) ? hint : null;

    public void SetHint(Node node, string hint) => _hint[node] = hint;
}
