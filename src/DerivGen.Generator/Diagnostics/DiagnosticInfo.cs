using System;
using System.Collections.Immutable;
using System.Linq;
using DerivGen.Generator.Model;
using Microsoft.CodeAnalysis;
using Microsoft.CodeAnalysis.Text;

namespace DerivGen.Generator.Diagnostics;

/// <summary>
/// A diagnostic as plain data (descriptor ID, file, span, message arguments, properties for code fixes), so that it can
/// travel between stages and be compared by value. It becomes a Roslyn <see cref="Diagnostic"/> only when reported.
/// </summary>
internal sealed record DiagnosticInfo(string Id, string FilePath, TextSpan Span, LinePositionSpan LineSpan, EquatableArray<string> Arguments,
    EquatableArray<DiagnosticProperty> Properties)
{
    public static DiagnosticInfo Create(DiagnosticDescriptor descriptor, Location? location, params string[] arguments) =>
        Create(descriptor, location, EquatableArray<DiagnosticProperty>.Empty, arguments);

    /// <summary>A diagnostic that also carries <paramref name="properties"/> (keys from <see cref="DiagnosticProperties"/>),
    /// which become the Roslyn diagnostic's <see cref="Diagnostic.Properties"/>.</summary>
    public static DiagnosticInfo Create(DiagnosticDescriptor descriptor, Location? location, EquatableArray<DiagnosticProperty> properties,
        params string[] arguments)
    {
        location ??= Location.None;
        FileLinePositionSpan line = location.GetLineSpan();
        return new DiagnosticInfo(descriptor.Id, line.Path ?? string.Empty, location.SourceSpan, line.Span, arguments.ToEquatableArray(), properties);
    }

    public bool IsError => Descriptor.DefaultSeverity == DiagnosticSeverity.Error;

    public DiagnosticDescriptor Descriptor => DiagnosticDescriptors.All.First(d => d.Id == Id);

    /// <summary>The Roslyn diagnostic, located in <paramref name="tree"/> when it is the file the data names (so that
    /// <c>#pragma warning disable</c> and suppressions apply), else by path and line.</summary>
    public Diagnostic ToDiagnostic(SyntaxTree? tree)
    {
        Location location = FilePath.Length == 0 ? Location.None
            : tree is not null && tree.FilePath == FilePath ? Location.Create(tree, Span)
            : Location.Create(FilePath, Span, LineSpan);
        ImmutableDictionary<string, string?>? properties = null;
        if (Properties.Count > 0)
        {
            ImmutableDictionary<string, string?>.Builder builder = ImmutableDictionary.CreateBuilder<string, string?>(StringComparer.Ordinal);
            foreach (DiagnosticProperty property in Properties)
            {
                builder[property.Key] = property.Value;
            }

            properties = builder.ToImmutable();
        }

        return Diagnostic.Create(Descriptor, location, properties, Arguments.Cast<object>().ToArray());
    }
}

/// <summary>One property of a <see cref="DiagnosticInfo"/> (a key of <see cref="DiagnosticProperties"/> and its value),
/// compared by value.</summary>
internal readonly record struct DiagnosticProperty(string Key, string Value);
