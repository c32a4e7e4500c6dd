using System.Collections.Generic;
using System.Collections.Immutable;
using System.Composition;
using System.Linq;
using System.Threading;
using System.Threading.Tasks;
using Microsoft.CodeAnalysis;
using Microsoft.CodeAnalysis.CodeActions;
using Microsoft.CodeAnalysis.CodeFixes;
using Microsoft.CodeAnalysis.CSharp;
using Microsoft.CodeAnalysis.CSharp.Syntax;

namespace DerivGen.CodeFixes;

/// <summary>
/// DG0002: adds <c>partial</c> to every type that contains the marked method and lacks it (the type itself and, for a
/// nested type, each enclosing type). The keyword goes last among the modifiers, right before <c>class</c>,
/// <c>struct</c>, <c>record</c> or <c>interface</c>, where C# requires it (so <c>public ref struct S</c> becomes
/// <c>public ref partial struct S</c>).
/// </summary>
[ExportCodeFixProvider(LanguageNames.CSharp, Name = nameof(MakeTypesPartialCodeFix)), Shared]
public sealed class MakeTypesPartialCodeFix : CodeFixProvider
{
    internal const string EquivalenceKey = "DerivGen.MakeTypesPartial";

    public override ImmutableArray<string> FixableDiagnosticIds { get; } = ImmutableArray.Create(DiagnosticIds.TypeNotPartial);

    public override FixAllProvider GetFixAllProvider() => FixAllProvider.Create(FixAllInDocumentAsync);

    public override async Task RegisterCodeFixesAsync(CodeFixContext context)
    {
        SyntaxNode? root = await context.Document.GetSyntaxRootAsync(context.CancellationToken).ConfigureAwait(false);
        if (root is null)
        {
            return;
        }

        foreach (Diagnostic diagnostic in context.Diagnostics)
        {
            IReadOnlyList<TypeDeclarationSyntax> types = TypesToMakePartial(root, diagnostic);
            if (types.Count == 0)
            {
                continue;
            }

            string title = types.Count == 1
                ? $"Make '{types[0].Identifier.ValueText}' partial"
                : "Make " + string.Join(", ", types.Select(t => "'" + t.Identifier.ValueText + "'")) + " partial";
            context.RegisterCodeFix(
                CodeAction.Create(title, ct => Task.FromResult(context.Document.WithSyntaxRoot(AddPartial(root, types))), EquivalenceKey),
                diagnostic);
        }
    }

    private static async Task<Document?> FixAllInDocumentAsync(FixAllContext context, Document document, ImmutableArray<Diagnostic> diagnostics)
    {
        SyntaxNode? root = await document.GetSyntaxRootAsync(context.CancellationToken).ConfigureAwait(false);
        if (root is null)
        {
            return null;
        }

        var types = diagnostics.SelectMany(d => TypesToMakePartial(root, d)).Distinct().ToList();
        return types.Count == 0 ? null : document.WithSyntaxRoot(AddPartial(root, types));
    }

    /// <summary>The non-partial type declarations around the method the diagnostic is on, outermost first.</summary>
    private static IReadOnlyList<TypeDeclarationSyntax> TypesToMakePartial(SyntaxNode root, Diagnostic diagnostic)
    {
        MethodDeclarationSyntax? method = root.FindNode(diagnostic.Location.SourceSpan, getInnermostNodeForTie: true)
            .AncestorsAndSelf().OfType<MethodDeclarationSyntax>().FirstOrDefault();
        if (method is null)
        {
            return [];
        }

        return method.Ancestors().OfType<TypeDeclarationSyntax>()
            .Where(t => !t.Modifiers.Any(SyntaxKind.PartialKeyword))
            .Reverse()
            .ToList();
    }

    private static SyntaxNode AddPartial(SyntaxNode root, IReadOnlyList<TypeDeclarationSyntax> types) =>
        root.ReplaceNodes(types, (original, rewritten) => WithPartial(rewritten));

    private static TypeDeclarationSyntax WithPartial(TypeDeclarationSyntax type)
    {
        if (type.Modifiers.Any(SyntaxKind.PartialKeyword))
        {
            return type;
        }

        if (type.Modifiers.Count == 0)
        {
            // "class C" -> "partial class C": the keyword's leading trivia (indentation, comments) moves to 'partial'.
            SyntaxToken keyword = type.Keyword;
            SyntaxToken partial = SyntaxFactory.Token(keyword.LeadingTrivia, SyntaxKind.PartialKeyword, SyntaxFactory.TriviaList(SyntaxFactory.Space));
            return type.ReplaceToken(keyword, keyword.WithLeadingTrivia()).WithModifiers(SyntaxFactory.TokenList(partial));
        }

        SyntaxToken last = type.Modifiers.Last();
        SyntaxToken added = SyntaxFactory.Token(SyntaxFactory.TriviaList(), SyntaxKind.PartialKeyword, last.TrailingTrivia);
        return type.WithModifiers(type.Modifiers.Replace(last, last.WithTrailingTrivia(SyntaxFactory.Space)).Add(added));
    }
}
