using System;
using System.Collections.Generic;
using System.Linq;
using System.Runtime.CompilerServices;
using System.Threading;
using DerivGen.Generator.Diagnostics;
using DerivGen.Generator.Model;
using Microsoft.CodeAnalysis;
using Microsoft.CodeAnalysis.CSharp;
using Microsoft.CodeAnalysis.CSharp.Syntax;

namespace DerivGen.Generator.Lowering;

/// <summary>
/// A helper lowered cleanly (a spec, no error), as every caller in the same compilation may reuse it: its spec, its
/// warnings, and every helper it calls directly or through others (documentation IDs), which the caller records as
/// requests of its own and checks against its chain of callers (a helper reachable from the chain is recursion).
/// Plain data: no Roslyn object.
/// </summary>
internal sealed class LoweredHelper
{
    public LoweredHelper(MethodSpec spec, IReadOnlyList<DiagnosticInfo> diagnostics, IReadOnlyList<string> reaches)
    {
        Spec = spec;
        Diagnostics = diagnostics;
        Reaches = reaches;
    }

    public MethodSpec Spec { get; }

    public IReadOnlyList<DiagnosticInfo> Diagnostics { get; }

    public IReadOnlyList<string> Reaches { get; }
}

/// <summary>
/// What a call of a helper needs to know of the called method, which depends on the method alone: found once per
/// compilation however many calls there are. <see cref="Syntax"/> or <see cref="ReturnType"/> is null when the method
/// cannot be a helper (generic, extern, no body in this compilation, or a return or parameter type that is not a
/// scalar); <see cref="NotPartialType"/> names a containing type that is not partial.
/// </summary>
internal sealed class HelperTarget
{
    public HelperTarget(IMethodSymbol target, CancellationToken cancellationToken)
    {
        DisplayName = "'" + target.ContainingType.Name + "." + target.Name + "'";
        Id = target.OriginalDefinition.GetDocumentationCommentId() ?? string.Empty;
        TypeName = BodyLowerer.FullyQualified(target.ContainingType);
        EscapedName = Identifiers.Escape(target.Name);
        List<IParameterSymbol> variables = target.Parameters.Where(MethodParser.IsDefaultVariable).ToList();
        VariableOrdinals = variables.Select(p => p.Ordinal).ToEquatableArray();
        VariableNames = variables.Select(p => p.Name).ToEquatableArray();
        if (target.IsGenericMethod || target.IsExtern || target.DeclaringSyntaxReferences[0].GetSyntax(cancellationToken) is not MethodDeclarationSyntax syntax
            || (syntax.Body is null && syntax.ExpressionBody is null)
            || BodyLowerer.ScalarTypeOf(target.ReturnType) is not ({ } type and (ScalarType.Double or ScalarType.Single))
            || target.Parameters.Any(p => BodyLowerer.ScalarTypeOf(p.Type) is null || p.RefKind is not (RefKind.None or RefKind.In)))
        {
            return;
        }

        Syntax = syntax;
        ReturnType = type;
        NotPartialType = syntax.Ancestors().OfType<TypeDeclarationSyntax>().FirstOrDefault(t => !t.Modifiers.Any(SyntaxKind.PartialKeyword))?.Identifier.ValueText;
    }

    public string DisplayName { get; }

    public string Id { get; }

    public string TypeName { get; }

    public string EscapedName { get; }

    public EquatableArray<int> VariableOrdinals { get; }

    public EquatableArray<string> VariableNames { get; }

    public MethodDeclarationSyntax? Syntax { get; }

    public ScalarType? ReturnType { get; }

    public string? NotPartialType { get; }
}

/// <summary>
/// What the lowering of one compilation shares between the methods it lowers: each helper is lowered once per
/// compilation (per Hessian flag), however many marked methods call it, and the generator's Helpers step reads the same
/// entries instead of lowering the helpers again. Held in a <see cref="ConditionalWeakTable{TKey, TValue}"/> keyed on the
/// <see cref="Compilation"/>, so it lives exactly as long as the compilation; an edit makes a new compilation and so a
/// new, empty table. Only results that do not depend on the caller are kept (clean lowerings: a helper with an error
/// is lowered again by each caller, as the error's message may name the caller's chain). Thread-safe: the analyzer
/// lowers methods concurrently; two threads may lower the same helper at once, which gives equal entries.
/// </summary>
internal sealed class CompilationLowerings
{
    private static readonly ConditionalWeakTable<Compilation, CompilationLowerings> Tables = new();

    private readonly object _gate = new();
    private readonly Dictionary<(string Id, bool Hessian), LoweredHelper> _helpers = new();
    private readonly Dictionary<SyntaxTree, SemanticModel> _models = new();
    private readonly Dictionary<IMethodSymbol, HelperTarget> _targets = new(SymbolEqualityComparer.Default);
    private readonly Dictionary<(ISymbol Symbol, object Compute), object> _memo = new(MemoKeyComparer.Instance);
    private bool? _hasSinCos;
    private Dictionary<string, int>? _methodCounts;
    private Dictionary<string, int>? _helperCounts;

    /// <summary>Tests turn this on to count lowerings (<see cref="MethodLowerings"/>, <see cref="HelperLowerings"/>);
    /// off, nothing is counted.</summary>
    internal static bool CountLowerings { get; set; }

    public static CompilationLowerings For(Compilation compilation) => Tables.GetValue(compilation, static _ => new CompilationLowerings());

    /// <summary>The table of <paramref name="compilation"/> if one was made (for tests), else null.</summary>
    internal static CompilationLowerings? Find(Compilation compilation) => Tables.TryGetValue(compilation, out CompilationLowerings? table) ? table : null;

    /// <summary>
    /// One semantic model per syntax tree for lowering helpers, so that a helper lowered twice (with and without its
    /// Hessian) or several helpers of one file are bound once. Kept as long as the compilation.
    /// </summary>
    public SemanticModel SemanticModel(Compilation compilation, SyntaxTree tree)
    {
        lock (_gate)
        {
            if (!_models.TryGetValue(tree, out SemanticModel? model))
            {
                model = compilation.GetSemanticModel(tree);
                _models[tree] = model;
            }

            return model;
        }
    }

    /// <summary>
    /// <paramref name="compute"/> of <paramref name="symbol"/>, once per compilation (display strings of parameter and
    /// containing types, which every method of a project repeats). Symbols are compared with their nullable annotations.
    /// </summary>
    public T Memo<TSymbol, T>(TSymbol symbol, Func<TSymbol, T> compute)
        where TSymbol : ISymbol
    {
        var key = (symbol, (object)compute);
        lock (_gate)
        {
            if (_memo.TryGetValue(key, out object? known))
            {
                return (T)known;
            }
        }

        T value = compute(symbol);
        lock (_gate)
        {
            _memo[key] = value!;
        }

        return value;
    }

    /// <summary>Whether the target framework has Math.SinCos and MathF.SinCos, found once per compilation.</summary>
    public bool HasSinCos(Compilation compilation, Func<Compilation, bool> compute)
    {
        lock (_gate)
        {
            if (_hasSinCos is { } known)
            {
                return known;
            }
        }

        bool value = compute(compilation);
        lock (_gate)
        {
            _hasSinCos = value;
        }

        return value;
    }

    /// <summary>What calls of <paramref name="target"/> need, found once per compilation.</summary>
    public HelperTarget Target(IMethodSymbol target, CancellationToken cancellationToken)
    {
        lock (_gate)
        {
            if (_targets.TryGetValue(target, out HelperTarget? known))
            {
                return known;
            }
        }

        var found = new HelperTarget(target, cancellationToken);
        lock (_gate)
        {
            _targets[target] = found;
        }

        return found;
    }

    public LoweredHelper? TryGetHelper(string id, bool hessian)
    {
        lock (_gate)
        {
            return _helpers.TryGetValue((id, hessian), out LoweredHelper? helper) ? helper : null;
        }
    }

    public void AddHelper(string id, bool hessian, LoweredHelper helper)
    {
        lock (_gate)
        {
            _helpers[(id, hessian)] = helper;
        }
    }

    /// <summary>How many times each marked method (by display name) was lowered in this compilation, when counting.</summary>
    internal IReadOnlyDictionary<string, int> MethodLowerings => Snapshot(_methodCounts);

    /// <summary>How many times each helper (by documentation ID) was lowered in this compilation, when counting.</summary>
    internal IReadOnlyDictionary<string, int> HelperLowerings => Snapshot(_helperCounts);

    internal static void CountMethod(Compilation compilation, IMethodSymbol method)
    {
        if (CountLowerings)
        {
            CompilationLowerings table = For(compilation);
            table.Count(ref table._methodCounts, method.ToDisplayString());
        }
    }

    internal static void CountHelper(Compilation compilation, IMethodSymbol method)
    {
        if (CountLowerings)
        {
            CompilationLowerings table = For(compilation);
            table.Count(ref table._helperCounts, method.OriginalDefinition.GetDocumentationCommentId() ?? method.ToDisplayString());
        }
    }

    private void Count(ref Dictionary<string, int>? counts, string key)
    {
        lock (_gate)
        {
            counts ??= new Dictionary<string, int>(StringComparer.Ordinal);
            counts[key] = counts.TryGetValue(key, out int n) ? n + 1 : 1;
        }
    }

    private IReadOnlyDictionary<string, int> Snapshot(Dictionary<string, int>? counts)
    {
        lock (_gate)
        {
            return counts is null ? new Dictionary<string, int>(StringComparer.Ordinal) : new Dictionary<string, int>(counts, StringComparer.Ordinal);
        }
    }

    /// <summary>Symbols with their nullable annotations (string? and string are written differently), functions by reference.</summary>
    private sealed class MemoKeyComparer : IEqualityComparer<(ISymbol Symbol, object Compute)>
    {
        public static readonly MemoKeyComparer Instance = new();

        public bool Equals((ISymbol Symbol, object Compute) x, (ISymbol Symbol, object Compute) y) =>
            ReferenceEquals(x.Compute, y.Compute) && SymbolEqualityComparer.IncludeNullability.Equals(x.Symbol, y.Symbol);

        public int GetHashCode((ISymbol Symbol, object Compute) obj) =>
            (SymbolEqualityComparer.IncludeNullability.GetHashCode(obj.Symbol) * 31) + System.Runtime.CompilerServices.RuntimeHelpers.GetHashCode(obj.Compute);
    }
}
