using System;
using System.Collections.Generic;
using System.Collections.Immutable;
using System.Composition;
using System.Linq;
using System.Threading.Tasks;
using Microsoft.CodeAnalysis;
using Microsoft.CodeAnalysis.CodeActions;
using Microsoft.CodeAnalysis.CodeFixes;
using Microsoft.CodeAnalysis.CSharp;
using Microsoft.CodeAnalysis.CSharp.Syntax;

namespace DerivGen.CodeFixes;

/// <summary>
/// DG0003: [Differentiate] names something that is not a parameter (a typo, a different case, a renamed parameter).
/// Offers <c>nameof(p)</c> for each parameter <c>p</c> whose name is close to the one written — equal ignoring case,
/// or within an edit distance of 2 (a third of the name's length for names of 7 letters or more) — that is not named
/// already, closest first. <c>nameof</c> keeps the attribute in step with later renames; nothing is offered when no
/// parameter is close.
/// </summary>
[ExportCodeFixProvider(LanguageNames.CSharp, Name = nameof(UseNameofCodeFix)), Shared]
public sealed class UseNameofCodeFix : CodeFixProvider
{
    private const int MaxOffers = 3;

    public override ImmutableArray<string> FixableDiagnosticIds { get; } = ImmutableArray.Create(DiagnosticIds.UnknownVariable);

    public override FixAllProvider? GetFixAllProvider() => null; // each name needs its own choice

    public override async Task RegisterCodeFixesAsync(CodeFixContext context)
    {
        SyntaxNode? root = await context.Document.GetSyntaxRootAsync(context.CancellationToken).ConfigureAwait(false);
        SemanticModel? model = await context.Document.GetSemanticModelAsync(context.CancellationToken).ConfigureAwait(false);
        if (root is null || model is null)
        {
            return;
        }

        foreach (Diagnostic diagnostic in context.Diagnostics)
        {
            if (root.FindNode(diagnostic.Location.SourceSpan, getInnermostNodeForTie: true).AncestorsAndSelf().OfType<AttributeArgumentSyntax>().FirstOrDefault() is not { } argument
                || argument.Parent?.Parent is not AttributeSyntax attribute
                || DifferentiateAttributeSyntax.MethodOf(attribute) is not { } method
                || model.GetDeclaredSymbol(method, context.CancellationToken) is not { } methodSymbol
                || model.GetConstantValue(argument.Expression, context.CancellationToken) is not { HasValue: true, Value: string written })
            {
                continue;
            }

            // Names the other arguments already give (a parameter named twice would be DG0009).
            var taken = new HashSet<string>(StringComparer.Ordinal);
            foreach (AttributeArgumentSyntax other in DifferentiateAttributeSyntax.NameArguments(attribute).Where(a => a != argument))
            {
                if (model.GetConstantValue(other.Expression, context.CancellationToken) is { HasValue: true, Value: string name })
                {
                    taken.Add(name);
                }
            }

            foreach (string candidate in Candidates(written, methodSymbol.Parameters, taken))
            {
                context.RegisterCodeFix(
                    CodeAction.Create(
                        $"Use nameof({candidate})",
                        ct => Task.FromResult(context.Document.WithSyntaxRoot(
                            root.ReplaceNode(argument.Expression, DifferentiateAttributeSyntax.NameOf(candidate, argument.Expression)))),
                        "DerivGen.UseNameof." + candidate),
                    diagnostic);
            }
        }
    }

    /// <summary>Parameters close to <paramref name="written"/>, closest first, then in declaration order.</summary>
    internal static IEnumerable<string> Candidates(string written, ImmutableArray<IParameterSymbol> parameters, ISet<string> taken)
    {
        int limit = Math.Max(2, written.Length / 3);
        return parameters
            .Where(p => !taken.Contains(p.Name) && !string.Equals(p.Name, written, StringComparison.Ordinal))
            .Select(p => (p.Name, Distance: string.Equals(p.Name, written, StringComparison.OrdinalIgnoreCase) ? 0 : 1 + EditDistance(p.Name.ToLowerInvariant(), written.ToLowerInvariant()), p.Ordinal))
            .Where(c => c.Distance <= limit + 1 && c.Distance - 1 < Math.Max(c.Name.Length, written.Length))
            .OrderBy(c => c.Distance).ThenBy(c => c.Ordinal)
            .Take(MaxOffers)
            .Select(c => c.Name);
    }

    /// <summary>Levenshtein distance (insertions, deletions and substitutions of one character each cost 1).</summary>
    internal static int EditDistance(string a, string b)
    {
        var previous = new int[b.Length + 1];
        var current = new int[b.Length + 1];
        for (int j = 0; j <= b.Length; j++)
        {
            previous[j] = j;
        }

        for (int i = 1; i <= a.Length; i++)
        {
            current[0] = i;
            for (int j = 1; j <= b.Length; j++)
            {
                int substitution = previous[j - 1] + (a[i - 1] == b[j - 1] ? 0 : 1);
                current[j] = Math.Min(substitution, Math.Min(previous[j] + 1, current[j - 1] + 1));
            }

            (previous, current) = (current, previous);
        }

        return previous[b.Length];
    }
}
