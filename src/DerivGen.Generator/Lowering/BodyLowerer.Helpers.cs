using System;
using System.Collections.Generic;
using System.Globalization;
using System.Linq;
using DerivGen.Generator.Diagnostics;
using DerivGen.Generator.Model;
using Microsoft.CodeAnalysis;
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
        RecordReads(target);
        HelperTarget helper = _helpers.Shared.Target(target, _cancellationToken);
        string name = helper.DisplayName;
        if (_helpers.Chain.Contains(target.OriginalDefinition, SymbolEqualityComparer.Default))
        {
            return Unsupported(invocation, "the recursive call " + name,
                "a differentiated method and the helpers it calls cannot call themselves; write the recursion as a loop");
        }

        if (helper.Syntax is not { } syntax || helper.ReturnType is not { } type)
        {
            return Unsupported(invocation, "the call to " + name,
                HelperAdvice(target));
        }

        if (helper.NotPartialType is { } notPartial)
        {
            return Unsupported(invocation, "the call to " + name,
                $"its derivatives are generated next to it, so its type '{notPartial}' must be declared partial");
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

        // A helper is lowered once per compilation when that gives the same result for every caller (see
        // CompilationLowerings), else once per marked method however often it is called.
        string id = helper.Id;
        if (!_helpers.Lowered.TryGetValue((id, _emitHessian), out var cached))
        {
            cached = _helpers.Shared.TryGetHelper(id, _emitHessian) is { } shared && !ReachesChain(shared.Reaches)
                ? (shared.Spec, shared.Diagnostics, shared.Reaches, shared.ReadFiles)
                : LowerHelperHere(target, syntax, id);
            _helpers.Lowered[(id, _emitHessian)] = cached;
        }

        foreach (string reached in cached.Reaches)
        {
            AddRequest(reached);
        }

        _helpers.Reads.UnionWith(cached.ReadFiles);

        (MethodSpec? spec, IReadOnlyList<DiagnosticInfo> helperDiagnostics, _, _) = cached;
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

        AddRequest(id);

        return new IrUserCall(helper.TypeName, helper.EscapedName, arguments.ToEquatableArray(), helper.VariableOrdinals, helper.VariableNames,
            _emitHessian, type);
    }

    /// <summary>
    /// Lowers the helper in this method's chain of callers, collecting the helpers it calls. A clean result (a spec, no
    /// error) is the same for every caller whose chain it does not reach, so it goes into the compilation's table.
    /// </summary>
    private (MethodSpec? Spec, IReadOnlyList<DiagnosticInfo> Diagnostics, IReadOnlyList<string> Reaches, IReadOnlyCollection<string> ReadFiles) LowerHelperHere(
        IMethodSymbol target, MethodDeclarationSyntax syntax, string id)
    {
        var found = new List<DiagnosticInfo>();
        Dictionary<string, bool> outer = _helpers.Requests;
        Dictionary<string, bool> inner = new(StringComparer.Ordinal);
        HashSet<string> outerReads = _helpers.Reads;
        HashSet<string> innerReads = new(StringComparer.Ordinal) { syntax.SyntaxTree.FilePath };
        _helpers.Requests = inner;
        _helpers.Reads = innerReads;
        MethodSpec? spec;
        try
        {
            spec = MethodParser.LowerHelper(target, syntax, _emitHessian, _helpers, found, _cancellationToken);
        }
        finally
        {
            _helpers.Requests = outer;
            _helpers.Reads = outerReads;
        }

        string[] reaches = inner.Keys.OrderBy(k => k, StringComparer.Ordinal).ToArray();
        string[] readFiles = innerReads.OrderBy(k => k, StringComparer.Ordinal).ToArray();
        if (spec is not null && !found.Any(d => d.IsError))
        {
            _helpers.Shared.AddHelper(id, _emitHessian, new LoweredHelper(spec, found, reaches, readFiles));
        }

        return (spec, found, reaches, readFiles);
    }

    /// <summary>The files declaring a called method are read by this lowering (its declaration, and a helper's body).</summary>
    private void RecordReads(IMethodSymbol target)
    {
        foreach (SyntaxReference reference in target.DeclaringSyntaxReferences)
        {
            _helpers.Reads.Add(reference.SyntaxTree.FilePath);
        }
    }

    /// <summary>Whether a helper that calls <paramref name="reaches"/> would call back into this method's chain (recursion).</summary>
    private bool ReachesChain(IReadOnlyList<string> reaches)
    {
        if (reaches.Count == 0)
        {
            return false;
        }

        foreach (IMethodSymbol method in _helpers.Chain)
        {
            if (method.OriginalDefinition.GetDocumentationCommentId() is { } chainId && reaches.Contains(chainId, StringComparer.Ordinal))
            {
                return true;
            }
        }

        return false;
    }

    private void AddRequest(string id) =>
        _helpers.Requests[id] = _helpers.Requests.TryGetValue(id, out bool hessian) ? hessian || _emitHessian : _emitHessian;

    /// <summary>A diagnostic's message with its line, for the diagnostic at the call that reports it.</summary>
    private static string Describe(DiagnosticInfo diagnostic)
    {
        string message = diagnostic.ToDiagnostic(null).GetMessage(CultureInfo.InvariantCulture);
        return diagnostic.Id + " at line " + (diagnostic.LineSpan.Start.Line + 1).ToString(CultureInfo.InvariantCulture) + ": " + message;
    }
}
