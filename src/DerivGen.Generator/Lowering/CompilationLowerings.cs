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
    public LoweredHelper(MethodSpec spec, IReadOnlyList<DiagnosticInfo> diagnostics, IReadOnlyList<string> reaches, IReadOnlyCollection<string> readFiles)
    {
        Spec = spec;
        Diagnostics = diagnostics;
        Reaches = reaches;
        ReadFiles = readFiles;
    }

    /// <summary>The files whose declarations its lowering read (its own, and those of the methods it calls).</summary>
    public IReadOnlyCollection<string> ReadFiles { get; }

    public MethodSpec Spec { get; }

    public IReadOnlyList<DiagnosticInfo> Diagnostics { get; }

    public IReadOnlyList<string> Reaches { get; }
}

/// <summary>A marked method's lowering as the generator keeps it for the next compilation: the result (diagnostics
/// removed), the declaration it came from, and the files of the methods it calls (helpers, whose bodies it read, and
/// marked methods); its own file is compared through <see cref="Node"/>.</summary>
internal sealed record ReusableLowering(LoweringResult Result, MethodDeclarationSyntax Node, IReadOnlyCollection<string> ReadFiles);

/// <summary>An earlier compilation's lowerings and the paths of the files that differ from it (in bodies only).</summary>
internal sealed record EditDiff(Dictionary<string, ReusableLowering> PreviousMethods,
    List<KeyValuePair<(string Id, bool Hessian), LoweredHelper>> PreviousHelpers, HashSet<string> Differing);

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
        if ((target.IsGenericMethod && (BodyLowerer.GenericDeclarationProblem(target.OriginalDefinition, out _) is not null
                || !BodyLowerer.IsMethodTypeParameter(target.OriginalDefinition.ReturnType)))
            || target.IsExtern || target.DeclaringSyntaxReferences[0].GetSyntax(cancellationToken) is not MethodDeclarationSyntax syntax
            || (syntax.Body is null && syntax.ExpressionBody is null)
            || BodyLowerer.ScalarTypeOf(target.ReturnType) is not ({ } type and (ScalarType.Double or ScalarType.Single or ScalarType.Generic))
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
/// new table, which takes over from the earlier one what the edit cannot have changed (<see cref="FindReusable"/>; the
/// generator only, the analyzer always lowers). Only helper results that do not depend on the caller are kept (clean
/// lowerings: a helper with an error is lowered again by each caller, as the error's message may name the caller's
/// chain). Thread-safe: the analyzer lowers methods concurrently; two threads may lower the same helper at once, which
/// gives equal entries. Nothing here crosses the cache boundary: the pipeline's models stay free of Roslyn objects.
/// </summary>
internal sealed class CompilationLowerings
{
    private static readonly ConditionalWeakTable<Compilation, CompilationLowerings> Tables = new();

    private readonly object _gate = new();
    private readonly Dictionary<(string Id, bool Hessian), LoweredHelper> _helpers = new();
    private readonly Dictionary<SyntaxTree, SemanticModel> _models = new();
    private readonly Dictionary<IMethodSymbol, HelperTarget> _targets = new(SymbolEqualityComparer.Default);
    private const int CandidatesTried = 3;

    /// <summary>The compilations whose lowerings were recorded, oldest first (weakly: the generator driver keeps the one it
    /// last ran on alive; a collected one just means nothing is taken over).</summary>
    private static readonly List<WeakReference<Compilation>> Recent = new();

    private readonly Dictionary<string, ReusableLowering> _methods = new(StringComparer.Ordinal);
    private EditDiff? _diff;
    private bool _diffDone;
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

    /// <summary>
    /// The generator's Lower step records each result here with the method's syntax and the files it read, so that the
    /// next compilation (after an edit) can take it over instead of lowering the method again (<see cref="FindReusable"/>).
    /// </summary>
    public void RecordMethod(Compilation compilation, string key, ReusableLowering lowering)
    {
        lock (_gate)
        {
            _methods[key] = lowering;
        }

        lock (Recent)
        {
            if (!Recent.Exists(r => r.TryGetTarget(out Compilation? known) && ReferenceEquals(known, compilation)))
            {
                Recent.RemoveAll(r => !r.TryGetTarget(out _));
                Recent.Add(new WeakReference<Compilation>(compilation));
            }
        }
    }

    /// <summary>
    /// The lowering of the method <paramref name="key"/> (whose declaration is <paramref name="node"/>) in an earlier
    /// compilation, when it is certainly the same in <paramref name="compilation"/>, else null. Sound because C# binds
    /// a method body against declarations only: when the two compilations have the same options and references, the
    /// same files, and every file that differs is equivalent at the top level (Roslyn's
    /// <see cref="SyntaxFactory.AreEquivalent(SyntaxTree, SyntaxTree, bool)"/> with topLevel: only method and accessor
    /// bodies and non-const field initializers may differ) with the same preprocessor directives, then the lowering of a
    /// method whose own syntax is equivalent and that read no other file with a difference (no helper body changed) is
    /// the lowering it had.
    /// </summary>
    public ReusableLowering? FindReusable(Compilation compilation, string key, MethodDeclarationSyntax node, CancellationToken cancellationToken)
    {
        EditDiff? diff = Diff(compilation, cancellationToken);
        if (diff is null || !diff.PreviousMethods.TryGetValue(key, out ReusableLowering? earlier) || earlier.ReadFiles.Any(diff.Differing.Contains))
        {
            return null;
        }

        // The same declaration: in a file that did not change, the node at the same place of the same tree; in a file
        // whose bodies changed, an equivalent node (the same tokens, trivia aside) at the same path.
        bool same = diff.Differing.Contains(node.SyntaxTree.FilePath)
            ? earlier.Node.SyntaxTree.FilePath == node.SyntaxTree.FilePath && earlier.Node.IsEquivalentTo(node, topLevel: false)
            : earlier.Node.SyntaxTree == node.SyntaxTree && earlier.Node.Span == node.Span;
        return same ? earlier with { Node = node } : null;
    }

    private Dictionary<string, ReusableLowering> MethodsSnapshot()
    {
        lock (_gate)
        {
            return new Dictionary<string, ReusableLowering>(_methods, StringComparer.Ordinal);
        }
    }

    /// <summary>The comparison with an earlier compilation that recorded lowerings (see <see cref="Candidates"/>), found
    /// once; null when nothing can be taken over (another assembly, other options or references, a file added, removed
    /// or changed in a declaration or a directive).</summary>
    private EditDiff? Diff(Compilation compilation, CancellationToken cancellationToken)
    {
        lock (_gate)
        {
            if (_diffDone)
            {
                return _diff;
            }
        }

        EditDiff? diff = null;
        foreach (Compilation previous in Candidates(compilation))
        {
            if (CompilationLowerings.Find(previous) is { } table && Compare(previous, compilation, cancellationToken) is { } differing)
            {
                // Copies of the earlier table's entries, not the table: a chain of tables, one per edit, would never be freed.
                diff = new EditDiff(table.MethodsSnapshot(), table.HelpersSnapshot(), differing);
                break;
            }
        }

        lock (_gate)
        {
            if (!_diffDone)
            {
                _diff = diff;
                _diffDone = true;
                if (diff is not null)
                {
                    // The helpers lowered there whose files did not change are the same here (for the Helpers step).
                    foreach (KeyValuePair<(string Id, bool Hessian), LoweredHelper> helper in diff.PreviousHelpers)
                    {
                        if (!_helpers.ContainsKey(helper.Key) && !helper.Value.ReadFiles.Any(diff.Differing.Contains))
                        {
                            _helpers[helper.Key] = helper.Value;
                        }
                    }
                }
            }

            return _diff;
        }
    }

    private List<KeyValuePair<(string Id, bool Hessian), LoweredHelper>> HelpersSnapshot()
    {
        lock (_gate)
        {
            return _helpers.ToList();
        }
    }

    /// <summary>
    /// The earlier compilations this one may have been made from by an edit: those that share syntax trees with it (an
    /// edit replaces the edited files' trees and keeps the others), most shared first, then the most recent; a few are
    /// tried. Any candidate is safe (<see cref="Compare"/> decides); the choice only decides how much is taken over.
    /// </summary>
    private static List<Compilation> Candidates(Compilation compilation)
    {
        var trees = new HashSet<SyntaxTree>(compilation.SyntaxTrees);
        var candidates = new List<(Compilation Candidate, int Shared, int Order)>();
        lock (Recent)
        {
            for (int i = 0; i < Recent.Count; i++)
            {
                if (Recent[i].TryGetTarget(out Compilation? candidate) && !ReferenceEquals(candidate, compilation)
                    && candidate.AssemblyName == compilation.AssemblyName)
                {
                    int shared = candidate.SyntaxTrees.Count(trees.Contains);
                    if (shared > 0)
                    {
                        candidates.Add((candidate, shared, i));
                    }
                }
            }
        }

        return candidates.OrderByDescending(c => c.Shared).ThenByDescending(c => c.Order).Take(CandidatesTried).Select(c => c.Candidate).ToList();
    }

    /// <summary>The paths of the files that differ (only in bodies), or null when the compilations differ otherwise.</summary>
    private static HashSet<string>? Compare(Compilation previous, Compilation current, CancellationToken cancellationToken)
    {
        if (!(ReferenceEquals(previous.Options, current.Options) || previous.Options.Equals(current.Options))
            || !previous.References.SequenceEqual(current.References)
            || previous.Language != current.Language)
        {
            return null;
        }

        var before = new Dictionary<string, SyntaxTree>(StringComparer.Ordinal);
        foreach (SyntaxTree tree in previous.SyntaxTrees)
        {
            if (before.ContainsKey(tree.FilePath))
            {
                return null;
            }

            before[tree.FilePath] = tree;
        }

        var differing = new HashSet<string>(StringComparer.Ordinal);
        foreach (SyntaxTree tree in current.SyntaxTrees)
        {
            cancellationToken.ThrowIfCancellationRequested();
            if (!before.TryGetValue(tree.FilePath, out SyntaxTree? old))
            {
                return null;   // a new file, or two files with one path
            }

            before.Remove(tree.FilePath);
            if (ReferenceEquals(old, tree))
            {
                continue;
            }

            if (!old.Options.Equals(tree.Options) || !SyntaxFactory.AreEquivalent(old, tree, topLevel: true)
                || !Directives(old, cancellationToken).SequenceEqual(Directives(tree, cancellationToken), StringComparer.Ordinal))
            {
                return null;
            }

            differing.Add(tree.FilePath);
        }

        return before.Count == 0 ? differing : null;
    }

    private static List<string> Directives(SyntaxTree tree, CancellationToken cancellationToken)
    {
        var directives = new List<string>();
        SyntaxNode root = tree.GetRoot(cancellationToken);
        if (root.ContainsDirectives)
        {
            for (DirectiveTriviaSyntax? directive = ((CSharpSyntaxNode)root).GetFirstDirective(); directive is not null; directive = directive.GetNextDirective())
            {
                directives.Add(directive.ToString());
            }
        }

        return directives;
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
