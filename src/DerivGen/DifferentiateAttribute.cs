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

    /// <summary>
    /// How the gradient method goes through loops: <see cref="LoopDifferentiation.Automatic"/> (the default) lets the
    /// generator choose by its documented rule; the other values force one way where the loops' shape allows it.
    /// </summary>
    public LoopDifferentiation Loops { get; set; } = LoopDifferentiation.Automatic;
}

/// <summary>How a generated gradient method differentiates through the method's loops (README: "How loops and branches
/// are differentiated").</summary>
public enum LoopDifferentiation
{
    /// <summary>The generator's rule: a reverse sweep where a state carried by a loop is driven by a vector of
    /// variables (or very many scalar running derivatives would be needed), running derivatives otherwise.</summary>
    Automatic = 0,

    /// <summary>Running derivatives carried forward through every loop (no record, cost grows with the number of
    /// variables per iteration).</summary>
    RunningDerivatives = 1,

    /// <summary>A reverse sweep over a record of the loops' iterations wherever the shape of the loops allows it
    /// (cost a small multiple of the value; memory one value per recorded local and iteration).</summary>
    ReverseSweep = 2,
}
