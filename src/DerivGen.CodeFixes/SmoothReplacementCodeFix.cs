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
using Microsoft.CodeAnalysis.Formatting;
using Microsoft.CodeAnalysis.Simplification;

namespace DerivGen.CodeFixes;

/// <summary>
/// DG0007 on <c>Abs</c>, <c>Max</c> or <c>Min</c> (of <c>Math</c>, <c>MathF</c>, <c>double</c> or <c>float</c>):
/// replaces the kink by the standard smooth form built on √(u² + ε²), the smooth absolute value also behind the
/// pseudo-Huber loss:
/// <list type="bullet">
/// <item><c>Abs(u)</c> → <c>Sqrt(u * u + ε * ε)</c>; |u| ≤ result ≤ |u| + ε.</item>
/// <item><c>Max(a, b)</c> → <c>(a + b + Sqrt((a - b) * (a - b) + ε * ε)) / 2</c>; max ≤ result ≤ max + ε/2.</item>
/// <item><c>Min(a, b)</c> → <c>(a + b - Sqrt((a - b) * (a - b) + ε * ε)) / 2</c>; min − ε/2 ≤ result ≤ min.</item>
/// </list>
/// ε is written as the literal 1e-6 (1e-6f for float): the scale below which the corner is rounded off. Tune it to
/// the data. These identities (max = (a + b + |a − b|)/2, min = (a + b − |a − b|)/2) need no exponential, so unlike a
/// softplus (log(1 + e^{k·u})/k) they cannot overflow for large arguments. No fix is offered for <c>Clamp</c>,
/// <c>Sign</c>, the rounding functions or a branch condition: there is no single standard smooth form for those.
/// </summary>
[ExportCodeFixProvider(LanguageNames.CSharp, Name = nameof(SmoothReplacementCodeFix)), Shared]
public sealed class SmoothReplacementCodeFix : CodeFixProvider
{
    internal const string Epsilon = "1e-6";

    public override ImmutableArray<string> FixableDiagnosticIds { get; } = ImmutableArray.Create(DiagnosticIds.NonSmoothFunction);

    public override FixAllProvider GetFixAllProvider() => WellKnownFixAllProviders.BatchFixer;

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
            if (root.FindNode(diagnostic.Location.SourceSpan, getInnermostNodeForTie: true) is not InvocationExpressionSyntax invocation
                || Replacement(invocation, model, context.CancellationToken) is not { } replacement)
            {
                continue;
            }

            context.RegisterCodeFix(
                CodeAction.Create(
                    replacement.Title,
                    ct => Task.FromResult(context.Document.WithSyntaxRoot(root.ReplaceNode(invocation, replacement.Expression))),
                    "DerivGen.SmoothReplacement." + replacement.Function),
                diagnostic);
        }
    }

    private sealed class SmoothForm
    {
        public SmoothForm(string function, string title, ExpressionSyntax expression)
        {
            Function = function;
            Title = title;
            Expression = expression;
        }

        public string Function { get; }

        public string Title { get; }

        public ExpressionSyntax Expression { get; }
    }

    private static SmoothForm? Replacement(InvocationExpressionSyntax invocation, SemanticModel model, CancellationToken cancellationToken)
    {
        if (model.GetSymbolInfo(invocation, cancellationToken).Symbol is not IMethodSymbol { IsStatic: true } target
            || target.ContainingType.ToDisplayString() is not ("System.Math" or "System.MathF" or "double" or "float")
            || target.ReturnType.SpecialType is not (SpecialType.System_Double or SpecialType.System_Single)
            || !target.Parameters.All(p => SymbolEqualityComparer.Default.Equals(p.Type, target.ReturnType)))
        {
            return null;
        }

        bool single = target.ReturnType.SpecialType == SpecialType.System_Single;
        bool hasMathF = model.Compilation.GetTypeByMetadataName("System.MathF") is not null;
        string epsilon = single ? Epsilon + "f" : Epsilon;

        // Sqrt on the class the user called (Math.Abs -> Math.Sqrt, MathF.Min -> MathF.Sqrt), written as they wrote it;
        // for double.Abs / float.Max, or float without MathF, the qualified System.Math(F) (simplified when possible).
        string sqrtHost = single ? (hasMathF ? "System.MathF" : "System.Math") : "System.Math";
        if (invocation.Expression is MemberAccessExpressionSyntax { Expression: var receiver }
            && target.ContainingType.ToDisplayString() == sqrtHost)
        {
            sqrtHost = receiver.WithoutTrivia().ToString();
        }

        string Sqrt(string argument) => single && !hasMathF
            ? $"(float){sqrtHost}.Sqrt({argument})"
            : $"{sqrtHost}.Sqrt({argument})";

        SeparatedSyntaxList<ArgumentSyntax> arguments = invocation.ArgumentList.Arguments;
        if (arguments.Any(a => a.NameColon is not null || !a.RefKindKeyword.IsKind(SyntaxKind.None)))
        {
            return null;
        }

        string text;
        string title;
        switch (target.Name, arguments.Count)
        {
            case ("Abs", 1):
            {
                string u = Operand(arguments[0].Expression);
                text = Sqrt($"{u} * {u} + {epsilon} * {epsilon}");
                title = $"Replace Abs with the smooth √(u² + ε²), ε = {Epsilon} (at most ε above |u|)";
                break;
            }

            case ("Max", 2):
            case ("Min", 2):
            {
                string a = Operand(arguments[0].Expression), b = Operand(arguments[1].Expression);
                string sign = target.Name == "Max" ? "+" : "-";
                text = $"(({a} + {b} {sign} {Sqrt($"({a} - {b}) * ({a} - {b}) + {epsilon} * {epsilon}")}) / 2)";
                title = target.Name == "Max"
                    ? $"Replace Max with the smooth (a + b + √((a − b)² + ε²))/2, ε = {Epsilon} (at most ε/2 above max)"
                    : $"Replace Min with the smooth (a + b − √((a − b)² + ε²))/2, ε = {Epsilon} (at most ε/2 below min)";
                break;
            }

            default:
                return null;
        }

        ExpressionSyntax expression = SyntaxFactory.ParseExpression(text)
            .WithAdditionalAnnotations(Simplifier.Annotation, Formatter.Annotation)
            .WithTriviaFrom(invocation);
        return new SmoothForm(target.Name, title, expression);
    }

    /// <summary>An argument as an operand of * + -: parenthesised unless it is a primary expression.</summary>
    private static string Operand(ExpressionSyntax expression)
    {
        string text = expression.WithoutTrivia().ToString();
        return expression is IdentifierNameSyntax or LiteralExpressionSyntax or MemberAccessExpressionSyntax
            or InvocationExpressionSyntax or ElementAccessExpressionSyntax or ParenthesizedExpressionSyntax or ThisExpressionSyntax
            ? text
            : "(" + text + ")";
    }
}
