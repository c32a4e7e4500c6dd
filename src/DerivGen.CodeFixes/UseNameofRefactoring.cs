using System.Collections.Generic;
using System.Composition;
using System.Linq;
using System.Threading.Tasks;
using Microsoft.CodeAnalysis;
using Microsoft.CodeAnalysis.CodeActions;
using Microsoft.CodeAnalysis.CodeRefactorings;
using Microsoft.CodeAnalysis.CSharp;
using Microsoft.CodeAnalysis.CSharp.Syntax;

namespace DerivGen.CodeFixes;

/// <summary>
/// A refactoring (no diagnostic: the names are correct) offered on a string in <c>[Differentiate("x", "y")]</c> that
/// names a parameter of the method: replaces every such string in that attribute with <c>nameof(...)</c>, so that a
/// later rename of a parameter renames it in the attribute too instead of turning into DG0003.
/// </summary>
[ExportCodeRefactoringProvider(LanguageNames.CSharp, Name = nameof(UseNameofRefactoring)), Shared]
public sealed class UseNameofRefactoring : CodeRefactoringProvider
{
    internal const string Title = "Use nameof for the variables of [Differentiate]";

    public override async Task ComputeRefactoringsAsync(CodeRefactoringContext context)
    {
        SyntaxNode? root = await context.Document.GetSyntaxRootAsync(context.CancellationToken).ConfigureAwait(false);
        if (root?.FindNode(context.Span, getInnermostNodeForTie: true).AncestorsAndSelf().OfType<AttributeSyntax>().FirstOrDefault() is not { } attribute
            || DifferentiateAttributeSyntax.MethodOf(attribute) is not { } method)
        {
            return;
        }

        SemanticModel? model = await context.Document.GetSemanticModelAsync(context.CancellationToken).ConfigureAwait(false);
        if (model is null || !DifferentiateAttributeSyntax.IsDifferentiate(attribute, model, context.CancellationToken))
        {
            return;
        }

        var parameters = new HashSet<string>(method.ParameterList.Parameters.Select(p => p.Identifier.ValueText));
        List<LiteralExpressionSyntax> literals = DifferentiateAttributeSyntax.NameArguments(attribute)
            .Select(a => a.Expression)
            .OfType<LiteralExpressionSyntax>()
            .Where(l => l.IsKind(SyntaxKind.StringLiteralExpression) && parameters.Contains(l.Token.ValueText))
            .ToList();
        if (literals.Count == 0)
        {
            return;
        }

        context.RegisterRefactoring(CodeAction.Create(
            Title,
            ct => Task.FromResult(context.Document.WithSyntaxRoot(root.ReplaceNodes(literals,
                (original, _) => DifferentiateAttributeSyntax.NameOf(original.Token.ValueText, original)))),
            nameof(UseNameofRefactoring)));
    }
}
