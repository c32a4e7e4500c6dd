using System.Linq;
using System.Threading;
using Microsoft.CodeAnalysis;
using Microsoft.CodeAnalysis.CSharp;
using Microsoft.CodeAnalysis.CSharp.Syntax;

namespace DerivGen.CodeFixes;

/// <summary>Finding a [Differentiate] attribute, its method and its name arguments in syntax.</summary>
internal static class DifferentiateAttributeSyntax
{
    /// <summary>Whether <paramref name="attribute"/> is DerivGen's [Differentiate] (by its constructor's type).</summary>
    public static bool IsDifferentiate(AttributeSyntax attribute, SemanticModel model, CancellationToken cancellationToken) =>
        model.GetSymbolInfo(attribute, cancellationToken).Symbol is IMethodSymbol constructor
        && constructor.ContainingType.ToDisplayString() == DiagnosticIds.AttributeMetadataName;

    /// <summary>The method an attribute is applied to, if it is on a method.</summary>
    public static MethodDeclarationSyntax? MethodOf(AttributeSyntax attribute) =>
        attribute.Parent is AttributeListSyntax { Parent: MethodDeclarationSyntax method } ? method : null;

    /// <summary>The positional (name) arguments of the attribute: everything but <c>Hessian = ...</c>.</summary>
    public static AttributeArgumentSyntax[] NameArguments(AttributeSyntax attribute) =>
        attribute.ArgumentList?.Arguments.Where(a => a.NameEquals is null && a.NameColon is null).ToArray() ?? [];

    /// <summary><c>nameof(name)</c>, with the trivia of the expression it replaces.</summary>
    public static ExpressionSyntax NameOf(string name, ExpressionSyntax replaced) =>
        SyntaxFactory.InvocationExpression(
                SyntaxFactory.IdentifierName(SyntaxFactory.Identifier(SyntaxFactory.TriviaList(), SyntaxKind.NameOfKeyword, "nameof", "nameof", SyntaxFactory.TriviaList())),
                SyntaxFactory.ArgumentList(SyntaxFactory.SingletonSeparatedList(SyntaxFactory.Argument(SyntaxFactory.IdentifierName(Identifier(name))))))
            .WithTriviaFrom(replaced);

    /// <summary>An identifier token for a parameter name, written <c>@name</c> when the name is a keyword (<c>@fixed</c>).</summary>
    public static SyntaxToken Identifier(string name) =>
        SyntaxFacts.GetKeywordKind(name) != SyntaxKind.None || SyntaxFacts.GetContextualKeywordKind(name) == SyntaxKind.NameOfKeyword
            ? SyntaxFactory.Identifier(SyntaxFactory.TriviaList(), SyntaxKind.IdentifierToken, "@" + name, name, SyntaxFactory.TriviaList())
            : SyntaxFactory.Identifier(name);
}
