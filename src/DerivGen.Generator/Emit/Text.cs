using System;
using System.Globalization;
using System.Linq;

namespace DerivGen.Generator.Emit;

/// <summary>Small pieces of C# and XML text shared by the writers.</summary>
internal static class Text
{
    public static string Sum(string offset, string index) => offset == "0" ? index : offset + " + " + index;

    /// <summary>a + b as C# text: folded when both are int literals, without a "0 +" or "+ 0".</summary>
    public static string Plus(string a, string b) =>
        int.TryParse(a, NumberStyles.None, CultureInfo.InvariantCulture, out int x) && int.TryParse(b, NumberStyles.None, CultureInfo.InvariantCulture, out int y)
            ? Count(x + y)
            : b == "0" ? a : a == "0" ? b : a + " + " + b;

    public static string Parenthesized(string expression) => expression.Contains(" ") ? "(" + expression + ")" : expression;

    public static string Slot(string rowOffset, string n, string columnOffset) =>
        (rowOffset == "0" ? string.Empty : Parenthesized(rowOffset) + " * " + n + " + ") + Parenthesized(columnOffset);

    /// <summary>A slot offset as C#: the vectors' lengths, then the constant (omitted when 0 after a length).</summary>
    public static string Offset(Differentiation.SlotOffset offset) =>
        string.Join(" + ", offset.VectorsBefore.Select(v => v + ".Length").Concat(offset.Constant > 0 || offset.VectorsBefore.Count == 0
            ? new[] { Count(offset.Constant) }
            : Array.Empty<string>()));

    public static string Count(int value) => value.ToString(CultureInfo.InvariantCulture);

    public static string Xml(string text) => text.Replace("&", "&amp;").Replace("<", "&lt;").Replace(">", "&gt;").Replace("\"", "&quot;");
}
