using Microsoft.CodeAnalysis;

namespace DerivGen.Generator.Diagnostics;

/// <summary>
/// Every diagnostic DerivGen reports, in one place. IDs are <c>DG</c> + four digits and are tracked in
/// AnalyzerReleases.Unshipped.md; each help link points at the diagnostic's section of the README.
/// </summary>
internal static class DiagnosticDescriptors
{
    private const string Category = "DerivGen";
    private const string HelpBase = "README.md#";

    public static readonly DiagnosticDescriptor UnsupportedConstruct = Create(
        "DG0001", DiagnosticSeverity.Error,
        "Construct cannot be differentiated",
        "{0} cannot be differentiated: {1}");

    public static readonly DiagnosticDescriptor TypeNotPartial = Create(
        "DG0002", DiagnosticSeverity.Error,
        "Containing type must be partial",
        "Type '{0}' must be declared partial so that DerivGen can add the derivatives of '{1}' to it");

    public static readonly DiagnosticDescriptor UnknownVariable = Create(
        "DG0003", DiagnosticSeverity.Error,
        "Differentiation variable is not a parameter",
        "[Differentiate] names '{0}', which is not a parameter of '{1}'");

    public static readonly DiagnosticDescriptor VariableNotFloatingPoint = Create(
        "DG0004", DiagnosticSeverity.Error,
        "Differentiation variable must be a double or float parameter",
        "Parameter '{0}' has type '{1}'{2}; a differentiation variable must be a double or float parameter passed by value or with 'in'");

    public static readonly DiagnosticDescriptor ReturnTypeNotFloatingPoint = Create(
        "DG0005", DiagnosticSeverity.Error,
        "Differentiated method must return double or float",
        "'{0}' returns '{1}'; [Differentiate] needs a method that returns double or float, or a void method whose last parameter is a Span<double> or Span<float> of outputs");

    public static readonly DiagnosticDescriptor GeneratedNameTaken = Create(
        "DG0006", DiagnosticSeverity.Error,
        "Name of the generated method is already taken",
        "Type '{0}' already has a member named '{1}'; rename it so that DerivGen can generate the derivatives of '{2}'");

    public static readonly DiagnosticDescriptor NonSmoothFunction = Create(
        "DG0007", DiagnosticSeverity.Warning,
        "Function is not differentiable everywhere",
        "'{0}' is not differentiable everywhere: {1}");

    public static readonly DiagnosticDescriptor NoVariables = Create(
        "DG0008", DiagnosticSeverity.Error,
        "Nothing to differentiate with respect to",
        "'{0}' has no double or float parameter to differentiate with respect to");

    public static readonly DiagnosticDescriptor DuplicateVariable = Create(
        "DG0009", DiagnosticSeverity.Error,
        "Differentiation variable named twice",
        "[Differentiate] names '{0}' more than once");

    public static readonly DiagnosticDescriptor InternalError = Create(
        "DG0010", DiagnosticSeverity.Error,
        "DerivGen failed on this method",
        "DerivGen could not process '{0}' ({1}); no derivatives were generated. Please report this with the method's source.");

    public static readonly DiagnosticDescriptor[] All =
    {
        UnsupportedConstruct, TypeNotPartial, UnknownVariable, VariableNotFloatingPoint, ReturnTypeNotFloatingPoint,
        GeneratedNameTaken, NonSmoothFunction, NoVariables, DuplicateVariable, InternalError,
    };

    private static DiagnosticDescriptor Create(string id, DiagnosticSeverity severity, string title, string message) =>
        new(id, title, message, Category, severity, isEnabledByDefault: true,
            helpLinkUri: HelpBase + id.ToLowerInvariant());
}
