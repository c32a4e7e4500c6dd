using System;
using System.Collections.Generic;

namespace DerivGen;

/// <summary>
/// Marks a method returning <see cref="double"/> or <see cref="float"/> whose exact derivatives the DerivGen generator
/// writes at compile time, next to it in the same partial type: <c>MGradient</c> (value and gradient) and, unless
/// <see cref="Hessian"/> is <see langword="false"/>, <c>MHessian</c> (value, gradient and row-major Hessian).
/// </summary>
/// <example>
/// <code>
/// [Differentiate(nameof(w), nameof(b))]
/// static double Loss(double w, double b, double x, double y) => (w * x + b - y) * (w * x + b - y);
/// </code>
/// </example>
[AttributeUsage(AttributeTargets.Method, Inherited = false)]
public sealed class DifferentiateAttribute : Attribute
{
    private readonly string[] _variables;

    /// <summary>Differentiates with respect to the named parameters (use <c>nameof</c>), in declaration order.</summary>
    /// <param name="variables">
    /// Names of the <see cref="double"/> or <see cref="float"/> parameters to differentiate with respect to;
    /// none means every <see cref="double"/> and <see cref="float"/> scalar parameter.
    /// </param>
    public DifferentiateAttribute(params string[] variables)
    {
        _variables = variables ?? Array.Empty<string>();
    }

    /// <summary>The parameter names to differentiate with respect to; empty means every double or float scalar parameter.</summary>
    public IReadOnlyList<string> Variables => _variables;

    /// <summary>Whether to generate the Hessian method as well as the gradient method. Defaults to <see langword="true"/>.</summary>
    public bool Hessian { get; set; } = true;
}
