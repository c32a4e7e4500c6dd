using System.Collections.Generic;
using System.Globalization;
using System.Linq;
using DerivGen.Generator.Diagnostics;
using DerivGen.Generator.Model;
using Microsoft.CodeAnalysis;
using Microsoft.CodeAnalysis.CSharp;
using Microsoft.CodeAnalysis.CSharp.Syntax;
using Microsoft.CodeAnalysis.Operations;

namespace DerivGen.Generator.Lowering;

// Calls of helpers: static methods of the compilation that are not marked [Differentiate]. The helper is lowered as if
// it were marked with all its double and float parameters as variables; its derivative methods are generated once, in
// its own file, however many methods call it; the call is differentiated by the chain rule through them, exactly as a
// call of a marked method.
internal sealed partial class BodyLowerer
{
    private IrExpression? LowerHelperCall(IInvocationOperation invocation, IMethodSymbol target)
    {
        string name = "'" + target.ContainingType.Name + "." + target.Name + "'";
        if (_helpers.Chain.Contains(target.OriginalDefinition, SymbolEqualityComparer.Default))
        {
            return Unsupported(invocation, "the recursive call " + name,
                "a differentiated method and the helpers it calls cannot call themselves; write the recursion as a loop");
        }

        if (target.IsGenericMethod || target.IsExtern || target.DeclaringSyntaxReferences[0].GetSyntax(_cancellationToken) is not MethodDeclarationSyntax syntax
            || (syntax.Body is null && syntax.ExpressionBody is null)
            || ScalarTypeOf(target.ReturnType) is not ({ } type and (ScalarType.Double or ScalarType.Single))
            || target.Parameters.Any(p => ScalarTypeOf(p.Type) is null || p.RefKind is not (RefKind.None or RefKind.In)))
        {
            return Unsupported(invocation, "the call to " + name,
                "a helper called from a differentiated method must be a static method with a body in this compilation, not generic, return double or float and take double, float, int or bool parameters; or mark it [Differentiate]");
        }

        if (syntax.Ancestors().OfType<TypeDeclarationSyntax>().FirstOrDefault(t => !t.Modifiers.Any(SyntaxKind.PartialKeyword)) is { } notPartial)
        {
            return Unsupported(invocation, "the call to " + name,
                $"its derivatives are generated next to it, so its type '{notPartial.Identifier.ValueText}' must be declared partial");
        }

        var arguments = new IrExpression[target.Parameters.Length];
        bool anyVariable = false;
        foreach (IArgumentOperation argument in invocation.Arguments)
        {
            if (argument.Parameter is null || LowerExpression(argument.Value) is not { } lowered)
            {
                return null;
            }

            anyVariable |= DependsOnVariable(lowered);
            arguments[argument.Parameter.Ordinal] = Convert(lowered, ScalarTypeOf(argument.Parameter.Type)!.Value);
        }

        // A helper called several times (or from several helpers) is lowered once per marked method.
        string id = target.OriginalDefinition.GetDocumentationCommentId() ?? string.Empty;
        if (!_helpers.Lowered.TryGetValue((id, _emitHessian), out (MethodSpec? Spec, List<DiagnosticInfo> Diagnostics) cached))
        {
            var found = new List<DiagnosticInfo>();
            cached = (MethodParser.LowerHelper(target, syntax, _emitHessian, _helpers, found, _cancellationToken), found);
            _helpers.Lowered[(id, _emitHessian)] = cached;
        }

        (MethodSpec? spec, List<DiagnosticInfo> helperDiagnostics) = cached;
        if (helperDiagnostics.FirstOrDefault(d => d.IsError) is { } error)
        {
            return Unsupported(invocation, "the call to " + name, "the helper's body cannot be differentiated (" + Describe(error) + ")");
        }

        if (anyVariable)
        {
            // A kink inside the helper is a kink of this method wherever an argument depends on a variable.
            foreach (DiagnosticInfo warning in helperDiagnostics.Where(d => d.Id == DiagnosticDescriptors.NonSmoothFunction.Id))
            {
                _diagnostics.Add(DiagnosticInfo.Create(DiagnosticDescriptors.NonSmoothFunction, invocation.Syntax.GetLocation(),
                    target.ContainingType.Name + "." + target.Name + " (through " + warning.Arguments[0] + ")", warning.Arguments[1]));
            }
        }

        if (spec is null)
        {
            return null;
        }

        _helpers.Requests[id] = _helpers.Requests.TryGetValue(id, out bool hessian) ? hessian || _emitHessian : _emitHessian;

        List<IParameterSymbol> variables = target.Parameters.Where(MethodParser.IsDefaultVariable).ToList();
        return new IrUserCall(FullyQualified(target.ContainingType), Identifiers.Escape(target.Name), arguments.ToEquatableArray(),
            variables.Select(p => p.Ordinal).ToEquatableArray(), variables.Select(p => p.Name).ToEquatableArray(), _emitHessian, type);
    }

    /// <summary>A diagnostic's message with its line, for the diagnostic at the call that reports it.</summary>
    private static string Describe(DiagnosticInfo diagnostic)
    {
        string message = diagnostic.ToDiagnostic(null).GetMessage(CultureInfo.InvariantCulture);
        return diagnostic.Id + " at line " + (diagnostic.LineSpan.Start.Line + 1).ToString(CultureInfo.InvariantCulture) + ": " + message;
    }
}
