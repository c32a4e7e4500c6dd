using System;
using System.Collections.Generic;
using System.Globalization;
using Microsoft.CodeAnalysis.CSharp;

namespace DerivGen.Generator.Model;

/// <summary>C# identifiers as the stages pass them around: escaped with '@' when they are keywords, and made unique
/// by a numeric suffix (s, s2, s3, …) where two things would otherwise share a name.</summary>
internal static class Identifiers
{
    /// <summary>The identifier as C# source must spell it: "@double" for the keyword double.</summary>
    public static string Escape(string identifier) =>
        SyntaxFacts.GetKeywordKind(identifier) != SyntaxKind.None ? "@" + identifier : identifier;

    /// <summary>The identifier without a leading '@' (for comments, XML docs and comparisons).</summary>
    public static string Unescape(string identifier) =>
        identifier.StartsWith("@", StringComparison.Ordinal) ? identifier.Substring(1) : identifier;

    /// <summary>Adds and returns <paramref name="name"/>, or name2, name3, … if it is already in <paramref name="taken"/>.</summary>
    public static string Unique(string name, HashSet<string> taken)
    {
        string candidate = name;
        for (int suffix = 2; !taken.Add(candidate); suffix++)
        {
            candidate = name + suffix.ToString(CultureInfo.InvariantCulture);
        }

        return candidate;
    }
}
