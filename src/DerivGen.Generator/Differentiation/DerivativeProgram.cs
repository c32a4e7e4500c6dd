using System.Collections.Generic;
using System.Linq;
using DerivGen.Generator.Model;
using DerivGen.Generator.Symbolic;

namespace DerivGen.Generator.Differentiation;

/// <summary>The value, gradient and (lower triangle of the) Hessian of one method, as nodes of one DAG.</summary>
internal sealed class DerivativeProgram
{
    private DerivativeProgram(ExpressionBuilder builder, Node value, Node[] gradient, Node[][]? hessian, string[] variables)
    {
        Builder = builder;
        Value = value;
        Gradient = gradient;
        Hessian = hessian;
        Variables = variables;
    }

    public ExpressionBuilder Builder { get; }

    public Node Value { get; }

    /// <summary>∂f/∂vᵢ in variable order.</summary>
    public Node[] Gradient { get; }

    /// <summary>Hessian[i][j] = ∂²f/∂vᵢ∂vⱼ for j ≤ i (the lower triangle); null when not requested.</summary>
    public Node[][]? Hessian { get; }

    /// <summary>The variables' parameter names, in order.</summary>
    public string[] Variables { get; }

    /// <summary>The Differentiate stage: IR → value DAG → gradient by a reverse sweep → Hessian by tangent sweeps.</summary>
    public static DerivativeProgram Create(MethodSpec spec, System.Threading.CancellationToken cancellationToken)
    {
        var builder = new ExpressionBuilder(cancellationToken);
        string[] variables = spec.Parameters.Where(p => p.IsVariable).Select(p => p.Name).ToArray();
        var index = new Dictionary<string, int>(System.StringComparer.Ordinal);
        for (int i = 0; i < variables.Length; i++)
        {
            index[variables[i]] = i;
        }

        Node value = PrimalGraph.Build(builder, spec, index);
        Node[] gradient = ReverseSweep.Gradient(builder, value, variables.Length);
        Node[][]? hessian = null;
        if (spec.EmitHessian)
        {
            hessian = new Node[variables.Length][];
            for (int i = 0; i < variables.Length; i++)
            {
                hessian[i] = new Node[i + 1];
            }

            for (int j = 0; j < variables.Length; j++)
            {
                cancellationToken.ThrowIfCancellationRequested();
                Dictionary<Node, Node> column = TangentSweep.Derivatives(builder, gradient, j);
                for (int i = j; i < variables.Length; i++)
                {
                    hessian[i][j] = builder.Convert(column[gradient[i]], spec.ReturnType);   // ∂(∂f/∂vᵢ)/∂vⱼ, j ≤ i
                }
            }
        }

        // Mixed float/double code can give a derivative of the wider type; the spans hold the method's own type.
        gradient = gradient.Select(g => builder.Convert(g, spec.ReturnType)).ToArray();
        return new DerivativeProgram(builder, value, gradient, hessian, variables);
    }
}
