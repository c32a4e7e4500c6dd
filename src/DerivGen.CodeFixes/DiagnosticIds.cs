namespace DerivGen.CodeFixes;

/// <summary>
/// The IDs of the DerivGen diagnostics these fixes respond to. They are reported by the analyzer in
/// DerivGen.Generator (Diagnostics/DiagnosticDescriptors.cs); this assembly does not reference it, so that the
/// generator and the Workspaces-based fixes stay in separate assemblies.
/// </summary>
internal static class DiagnosticIds
{
    public const string TypeNotPartial = "DG0002";
    public const string UnknownVariable = "DG0003";
    public const string GeneratedNameTaken = "DG0006";
    public const string NonSmoothFunction = "DG0007";

    /// <summary>Full metadata name of the attribute the fixes look for.</summary>
    public const string AttributeMetadataName = "DerivGen.DifferentiateAttribute";
}
