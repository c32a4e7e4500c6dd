using System.Collections.Immutable;
using System.Linq;
using DerivGen.Generator.Lowering;
using Microsoft.CodeAnalysis;
using Microsoft.CodeAnalysis.CSharp;
using Microsoft.CodeAnalysis.CSharp.Syntax;
using Microsoft.CodeAnalysis.Diagnostics;

namespace DerivGen.Generator.Diagnostics;

/// <summary>
/// Reports, in the editor and the build, everything DerivGen cannot differentiate. It runs exactly the generator's
/// Lower step (<see cref="MethodParser.Lower"/>) on each <c>[Differentiate]</c> method and reports its diagnostics.
/// </summary>
[DiagnosticAnalyzer(LanguageNames.CSharp)]
public sealed class DerivativeAnalyzer : DiagnosticAnalyzer
{
    public override ImmutableArray<DiagnosticDescriptor> SupportedDiagnostics { get; } = DiagnosticDescriptors.All.ToImmutableArray();

    public override void Initialize(AnalysisContext context)
    {
        context.ConfigureGeneratedCodeAnalysis(GeneratedCodeAnalysisFlags.None);
        context.EnableConcurrentExecution();
        context.RegisterCompilationStartAction(start =>
        {
            INamedTypeSymbol? attributeType = start.Compilation.GetTypeByMetadataName(MethodParser.AttributeMetadataName);
            if (attributeType is null)
            {
                return; // DerivGen is not referenced: nothing to check.
            }

            start.RegisterSyntaxNodeAction(node => AnalyzeMethod(node, attributeType), SyntaxKind.MethodDeclaration);
        });
    }

    private static void AnalyzeMethod(SyntaxNodeAnalysisContext context, INamedTypeSymbol attributeType)
    {
        var syntax = (MethodDeclarationSyntax)context.Node;
        if (syntax.AttributeLists.Count == 0 || context.SemanticModel.GetDeclaredSymbol(syntax, context.CancellationToken) is not IMethodSymbol method)
        {
            return;
        }

        AttributeData? attribute = method.GetAttributes().FirstOrDefault(a =>
            SymbolEqualityComparer.Default.Equals(a.AttributeClass, attributeType)
            && a.ApplicationSyntaxReference?.SyntaxTree == syntax.SyntaxTree
            && syntax.Span.Contains(a.ApplicationSyntaxReference.Span));
        if (attribute is null)
        {
            return;
        }

        LoweringResult result = MethodParser.Lower(method, syntax, attribute, context.SemanticModel, context.CancellationToken);
        foreach (DiagnosticInfo diagnostic in result.Diagnostics)
        {
            context.ReportDiagnostic(diagnostic.ToDiagnostic(syntax.SyntaxTree));
        }
    }
}
