using System;
using System.Collections.Generic;
using System.Reflection;

namespace DerivGen.Generator.Model;

/// <summary>
/// The one place for the names DerivGen gives what it generates: the members added next to a <c>[Differentiate]</c>
/// method <c>M</c> (<c>MGradient</c>, <c>MHessian</c>, <c>MHessianVectorProduct</c>, <c>MJacobian</c>, <c>MPairHessian</c>), the parameters and
/// locals those members declare, and the tool name and version stamped on them with <c>[GeneratedCode]</c>.
/// </summary>
/// <remarks>
/// Shared by the Lower stage (the DG0006 clash check), the Emit stage and the code fixes. The code-fix assembly does not
/// reference the generator, so src/DerivGen.CodeFixes compiles this same file (a linked <c>Compile</c> item): keep it
/// free of anything but the base library.
/// </remarks>
internal static class GeneratedNames
{
    /// <summary>The tool named in <c>[GeneratedCode]</c>; members carrying it are DerivGen's own, not a clash.</summary>
    public const string ToolName = "DerivGen";

    /// <summary>Suffix of the gradient method: <c>Loss</c> generates <c>LossGradient</c>.</summary>
    public const string GradientSuffix = "Gradient";

    /// <summary>Suffix of the Hessian method: <c>Loss</c> generates <c>LossHessian</c>.</summary>
    public const string HessianSuffix = "Hessian";

    /// <summary>Suffix of the Hessian–vector product method: <c>Loss</c> generates <c>LossHessianVectorProduct</c>.</summary>
    public const string HessianVectorSuffix = "HessianVectorProduct";

    /// <summary>Suffix of the Jacobian method of a method with outputs: <c>Residuals</c> generates <c>ResidualsJacobian</c>.</summary>
    public const string JacobianSuffix = "Jacobian";

    /// <summary>Suffix of the pair method behind the Hessian of a method with vector variables: <c>Loss</c> gets the
    /// pair method <c>LossPair</c>, whose Hessian method <c>LossPairHessian</c> is generated.</summary>
    public const string PairSuffix = "Pair";

    /// <summary>The span parameter that receives the gradient (renamed with a number if the method uses the name).</summary>
    public const string GradientParameter = "gradient";

    /// <summary>The span parameter that receives the Hessian.</summary>
    public const string HessianParameter = "hessian";

    /// <summary>The span parameter holding the direction of a Hessian–vector product.</summary>
    public const string DirectionParameter = "direction";

    /// <summary>The span parameter that receives the Hessian–vector product.</summary>
    public const string ProductParameter = "product";

    /// <summary>The span parameter that receives the Jacobian of a method with outputs.</summary>
    public const string JacobianParameter = "jacobian";

    /// <summary>The local holding the method's value in generated code.</summary>
    public const string ValueLocal = "value";

    /// <summary>Names generated code declares for itself; generated locals (running derivatives) keep clear of them.</summary>
    public static IReadOnlyList<string> Reserved { get; } = new[] { GradientParameter, HessianParameter, JacobianParameter, ValueLocal };

    /// <summary>The version in <c>[GeneratedCode]</c>: the assembly's informational version, which the build sets from
    /// <c>Version</c> in Directory.Build.props, without the "+commit" metadata the SDK may append (the generated text
    /// must not depend on the commit it was built from).</summary>
    public static string ToolVersion { get; } = ReadToolVersion();

    public static string GradientMethod(string name) => name + GradientSuffix;

    public static string HessianMethod(string name) => name + HessianSuffix;

    public static string HessianVectorMethod(string name) => name + HessianVectorSuffix;

    public static string JacobianMethod(string name) => name + JacobianSuffix;

    /// <summary>The name of the pair method of <paramref name="name"/> (see <see cref="PairSuffix"/>).</summary>
    public static string PairMethod(string name) => name + PairSuffix;

    public static string PairHessianMethod(string name) => HessianMethod(PairMethod(name));

    /// <summary>
    /// Every member generated for the method <paramref name="name"/>, in the order the generated file declares them:
    /// <c>MJacobian</c> for a method with outputs (it has no Hessian), otherwise <c>MGradient</c>, then <c>MHessian</c>
    /// when the Hessian is generated, then <c>MPairHessian</c> when that Hessian goes through the pair method, then
    /// <c>MHessianVectorProduct</c> when the Hessian is generated.
    /// </summary>
    public static IReadOnlyList<string> AllFor(string name, bool hasOutputs, bool hessian, bool pairHessian)
    {
        var names = new List<string> { hasOutputs ? JacobianMethod(name) : GradientMethod(name) };
        if (hessian)
        {
            names.Add(HessianMethod(name));
        }

        if (pairHessian)
        {
            names.Add(PairHessianMethod(name));
        }

        if (hessian)
        {
            names.Add(HessianVectorMethod(name)); // reserved even where it is not generated (a method calling another)
        }

        return names;
    }

    private static string ReadToolVersion()
    {
        Assembly assembly = typeof(GeneratedNames).Assembly;
        foreach (object attribute in assembly.GetCustomAttributes(typeof(AssemblyInformationalVersionAttribute), inherit: false))
        {
            string version = ((AssemblyInformationalVersionAttribute)attribute).InformationalVersion;
            int metadata = version.IndexOf('+');
            return metadata >= 0 ? version.Substring(0, metadata) : version;
        }

        // Every SDK build writes the attribute; an assembly without it still has its numeric version (Major.Minor.Build).
        Version? numeric = assembly.GetName().Version;
        return numeric is null ? "0.0.0" : numeric.ToString(3);
    }
}
