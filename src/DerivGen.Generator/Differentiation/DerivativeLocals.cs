using System.Collections.Generic;
using System.Globalization;

namespace DerivGen.Generator.Differentiation;

/// <summary>
/// The running-derivative locals of one program (<see cref="StateDerivatives"/>) by symbolic id. An id is the text of
/// the local's leaves and the key of its updates (<see cref="StateUpdate.Target"/>), of its span
/// (<see cref="VectorTerm.SourceSpan"/>) and of the passes' tables. It is not C# (<c>#</c> and a number), so an id
/// printed without its name fails to compile rather than naming something. Each id keeps a name hint (<c>dS_dX</c>,
/// <c>d2S_dXdY</c>, <c>dS_dW</c>) in a side table; Emit's NameScope allocates the names, clear of every other name
/// of the method.
/// </summary>
internal sealed class DerivativeLocals
{
    private const char Mark = '#';
    private readonly List<string> _hints = new();

    /// <summary>The name hints by id, in the order the ids were made (which is the order the names are allocated in).</summary>
    public IReadOnlyList<string> Hints => _hints;

    /// <summary>A new id with its name hint.</summary>
    public string New(string hint)
    {
        _hints.Add(hint);
        return Id(_hints.Count - 1);
    }

    /// <summary>The name hint of an id.</summary>
    public string Hint(string id) => _hints[int.Parse(id.Substring(1), NumberStyles.None, CultureInfo.InvariantCulture)];

    public static string Id(int index) => Mark + index.ToString(CultureInfo.InvariantCulture);

    /// <summary>Whether a leaf's text or a key is a running derivative's id (rather than a carried local's own name).</summary>
    public static bool IsId(string? text) => text is { Length: > 1 } && text[0] == Mark;
}
