using System.Collections.Generic;

namespace DerivGen.Generator.Model;

/// <summary>
/// Everything the later stages need to generate the derivatives of one <c>[Differentiate]</c> method, and the
/// incremental cache boundary: the generator regenerates a method's file only when its spec changes. Strings, numbers,
/// enums and <see cref="EquatableArray{T}"/> only — never a symbol, syntax node, location or compilation.
/// </summary>
/// <param name="HintName">Name of the generated file, unique in the compilation.</param>
/// <param name="Namespace">Containing namespace, or null for the global namespace.</param>
/// <param name="ContainingTypes">The containing types, outermost first.</param>
/// <param name="Name">The method's name (escaped if it is a keyword).</param>
/// <param name="Accessibility">C# accessibility modifiers of the method, e.g. "public" or "private protected".</param>
/// <param name="IsStatic">Whether the method is static.</param>
/// <param name="ReturnType">double or float.</param>
/// <param name="Parameters">The method's parameters, in declaration order.</param>
/// <param name="EmitHessian">Whether the Hessian method is generated as well.</param>
/// <param name="DisplayName">Fully qualified name with parameters, for the file header.</param>
/// <param name="Cref">The method as a documentation cref inside its type, e.g. "Loss(double, double)".</param>
/// <param name="Body">The lowered body.</param>
/// <param name="IsPairMethod">Whether this is the pair method a vector-variable Hessian is assembled from.</param>
/// <param name="OutputName">For a method that returns void and writes its values into a span (its last parameter), that
/// parameter's name: the method gets <c>MJacobian</c> instead of <c>MGradient</c>/<c>MHessian</c>, and
/// <paramref name="ReturnType"/> is the span's element type.</param>
/// <param name="IsHelper">Whether the method is not marked but called from one that is (its derivatives are generated for that call).</param>
/// <param name="HasSinCos">Whether the compilation has Math.SinCos and MathF.SinCos (one call for the sine and cosine of one argument).</param>
/// <param name="GenericConstraints">For a method generic over T (<see cref="ScalarType.Generic"/>), the constraints of T as the
/// generated methods declare them (<c>global::System.Numerics.IFloatingPointIeee754&lt;T&gt;</c>); null for any other method.</param>
/// <param name="Guards">The method's checks that throw, in its order, run first by every generated method (see <see cref="IrGuard"/>).</param>
/// <param name="Loops">The attribute's <c>Loops</c> property: how the gradient goes through loops (Differentiation/LoopReverse/ReverseLoopPolicy).</param>
internal sealed record MethodSpec(
    string HintName,
    string? Namespace,
    EquatableArray<ContainingTypeSpec> ContainingTypes,
    string Name,
    string Accessibility,
    bool IsStatic,
    ScalarType ReturnType,
    EquatableArray<ParameterSpec> Parameters,
    bool EmitHessian,
    string DisplayName,
    string Cref,
    EquatableArray<IrStatement> Body,
    bool IsHelper = false,
    bool IsPairMethod = false,
    string? OutputName = null,
    bool HasSinCos = false,
    string? GenericConstraints = null,
    EquatableArray<IrGuard> Guards = default,
    LoopPreference Loops = LoopPreference.Automatic)
{
    /// <summary>Whether this is a method with a span of outputs, whose Jacobian is generated.</summary>
    public bool HasOutputs => OutputName is not null;

    /// <summary>Whether the method is generic over T, and so are its generated methods.</summary>
    public bool IsGeneric => GenericConstraints is not null;
}

/// <summary>The values of <c>DerivGen.LoopDifferentiation</c>, in the same order.</summary>
internal enum LoopPreference
{
    Automatic = 0,
    RunningDerivatives = 1,
    ReverseSweep = 2,
}

/// <summary>A containing type: its declaration keyword(s) ("class", "record struct", ...) and name with type parameters.</summary>
internal sealed record ContainingTypeSpec(string Keyword, string Name);

/// <summary>A parameter of the differentiated method.</summary>
/// <param name="Name">The name as written in C# (escaped with @ when it is a keyword).</param>
/// <param name="Modifiers">Modifiers copied to the generated signature, e.g. "in " or "this ".</param>
/// <param name="TypeName">The fully qualified type.</param>
/// <param name="IsVariable">Whether this is a differentiation variable.</param>
/// <param name="IsVector">Whether it is a vector of variables (an array or span named in [Differentiate]).</param>
/// <param name="Components">For a struct variable (a Vector3, a user struct), its scalar variables as the body reads them
/// (<c>p.X</c>, <c>p.Y</c>, …), one gradient slot each in this order; empty for any other parameter.</param>
internal sealed record ParameterSpec(string Name, string Modifiers, string TypeName, bool IsVariable, bool IsVector = false,
    EquatableArray<string> Components = default)
{
    /// <summary>The scalar variables this parameter stands for: its components, or itself.</summary>
    public IEnumerable<string> ScalarVariables => Components.Count > 0 ? Components : new[] { Name };
}
