using System.Collections.Immutable;
using System.Composition;
using System.Globalization;
using System.Linq;
using System.Threading;
using System.Threading.Tasks;
using DerivGen.Generator.Diagnostics;
using DerivGen.Generator.Model;
using Microsoft.CodeAnalysis;
using Microsoft.CodeAnalysis.CodeActions;
using Microsoft.CodeAnalysis.CodeFixes;
using Microsoft.CodeAnalysis.CSharp.Syntax;
using Microsoft.CodeAnalysis.Rename;

namespace DerivGen.CodeFixes;

/// <summary>
/// DG0006: the type already has a member with a name DerivGen generates for the marked method <c>M</c> —
/// <c>MGradient</c>, <c>MHessian</c>, <c>MJacobian</c> or <c>MPairHessian</c> (typically a hand-written derivative from
/// before DerivGen). Renames that member — with every reference to it, across the solution — to
/// <c>MGradientByHand</c> (<c>MHessianByHand</c>, …; a number is appended if that is taken too), so that DerivGen can
/// generate its own and the hand-written one stays available for comparison. All overloads of a method are renamed
/// together. Which name is taken is read from the diagnostic's <see cref="DiagnosticProperties.TakenName"/> property.
/// </summary>
[ExportCodeFixProvider(LanguageNames.CSharp, Name = nameof(RenameCollidingMemberCodeFix)), Shared]
public sealed class RenameCollidingMemberCodeFix : CodeFixProvider
{
    internal const string Suffix = "ByHand";

    public override ImmutableArray<string> FixableDiagnosticIds { get; } = ImmutableArray.Create(DiagnosticIds.GeneratedNameTaken);

    public override FixAllProvider? GetFixAllProvider() => null; // a rename is one symbol at a time

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
            // The diagnostic is reported once per taken name, at the marked method's name; the name is a property.
            if (!diagnostic.Properties.TryGetValue(DiagnosticProperties.TakenName, out string? taken) || string.IsNullOrEmpty(taken)
                || root.FindNode(diagnostic.Location.SourceSpan, getInnermostNodeForTie: true).AncestorsAndSelf().OfType<MethodDeclarationSyntax>().FirstOrDefault() is not { } method
                || model.GetDeclaredSymbol(method, context.CancellationToken) is not { ContainingType: { } type })
            {
                continue;
            }

            ISymbol? member = type.GetMembers(taken!).FirstOrDefault(m => !m.IsImplicitlyDeclared && !IsGeneratedByDerivGen(m));
            if (member is null)
            {
                continue;
            }

            string newName = FreeName(type, taken + Suffix);
            context.RegisterCodeFix(
                CodeAction.Create(
                    $"Rename the existing '{taken}' to '{newName}'",
                    ct => RenameAsync(context.Document.Project.Solution, member, newName, ct),
                    "DerivGen.RenameCollidingMember." + taken),
                diagnostic);
        }
    }

    private static async Task<Solution> RenameAsync(Solution solution, ISymbol member, string newName, CancellationToken cancellationToken) =>
        await Renamer.RenameSymbolAsync(solution, member, new SymbolRenameOptions(RenameOverloads: true), newName, cancellationToken).ConfigureAwait(false);

    /// <summary><paramref name="name"/>, or name2, name3, ... — the first that no member of the type uses.</summary>
    private static string FreeName(INamedTypeSymbol type, string name)
    {
        string candidate = name;
        for (int i = 2; type.GetMembers(candidate).Length > 0 || type.Name == candidate; i++)
        {
            candidate = name + i.ToString(CultureInfo.InvariantCulture);
        }

        return candidate;
    }

    private static bool IsGeneratedByDerivGen(ISymbol member) => member.GetAttributes().Any(a =>
        a.AttributeClass?.ToDisplayString() == "System.CodeDom.Compiler.GeneratedCodeAttribute"
        && a.ConstructorArguments.Length > 0 && a.ConstructorArguments[0].Value is GeneratedNames.ToolName);
}
