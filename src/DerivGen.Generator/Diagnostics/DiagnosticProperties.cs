namespace DerivGen.Generator.Diagnostics;

/// <summary>
/// Keys of the properties DerivGen's diagnostics carry (<see cref="Microsoft.CodeAnalysis.Diagnostic.Properties"/>), for
/// code fixes that need more than the location. src/DerivGen.CodeFixes compiles this same file (a linked
/// <c>Compile</c> item), so the analyzer and the fixes read one definition.
/// </summary>
internal static class DiagnosticProperties
{
    /// <summary>DG0006: the name DerivGen would generate that an existing member already has (e.g. <c>LossGradient</c>).</summary>
    public const string TakenName = "DerivGen.TakenName";
}
