using System;
using System.Linq;
using Microsoft.CodeAnalysis;
using Microsoft.CodeAnalysis.CSharp;
using Microsoft.CodeAnalysis.CSharp.Syntax;
using Xunit;

namespace DerivGen.Tests.Performance;

/// <summary>
/// Measures generated code by its C# tokens (comments, XML documentation and whitespace are trivia and do not count),
/// so that a formula in a doc comment or a longer local name does not change the size.
/// </summary>
internal static class GeneratedCodeSize
{
    /// <summary>
    /// Tokens of the body of the generated method <paramref name="methodName"/> in <paramref name="generatedSource"/>,
    /// without the span-length guards (an <c>if</c> whose body throws): those are a fixed cost per method, not code that
    /// grows with the loss.
    /// </summary>
    public static int BodyTokens(string generatedSource, string methodName)
    {
        SyntaxNode root = CSharpSyntaxTree.ParseText(generatedSource).GetRoot();
        var methods = root.DescendantNodes().OfType<MethodDeclarationSyntax>()
            .Where(m => m.Identifier.ValueText == methodName)
            .ToList();
        Assert.True(methods.Count == 1, $"Expected one generated method named {methodName}, found {methods.Count}.");
        BlockSyntax body = methods[0].Body ?? throw new InvalidOperationException($"{methodName} has no block body.");
        return body.Statements
            .Where(s => !IsGuard(s))
            .Sum(s => s.DescendantTokens().Count());
    }

    /// <summary>Tokens of the user's expression (what the generated code differentiates).</summary>
    public static int ExpressionTokens(string expression) =>
        SyntaxFactory.ParseExpression(expression).DescendantTokens().Count(t => !t.IsKind(SyntaxKind.EndOfFileToken));

    private static bool IsGuard(StatementSyntax statement) =>
        statement is IfStatementSyntax guard && guard.Statement.DescendantNodesAndSelf().OfType<ThrowStatementSyntax>().Any();
}
