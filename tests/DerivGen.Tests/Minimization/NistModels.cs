using System;
using System.Collections.Generic;
using System.Linq;
using System.Text;

namespace DerivGen.Tests.Minimization;

/// <summary>
/// The 27 NIST StRD nonlinear regression models, each written as a user would: a <c>[Differentiate]</c> method of the
/// parameters b1..bk (scalars) that writes the residuals rᵢ = yᵢ − f(xᵢ; b) into a span, with f transcribed from the
/// "Model:" block of the dataset's file (Data/nist), so that the generator writes its Jacobian (<c>MJacobian</c>). The
/// test compilation gets, per model, that method, the model at one point (for MathNet's fit), a residual struct
/// implementing <c>IResidualModel</c> on the generated Jacobian, and static entry points the tests bind to delegates.
/// </summary>
internal static class NistModels
{
    public sealed record Model(string Name, int Parameters, string Expression, string[] Predictors, bool LogResponse = false)
    {
        /// <summary>NIST's level of difficulty (the "Data:" block of the file).</summary>
        public string Difficulty => Array.IndexOf(All, this) < 8 ? "lower" : Array.IndexOf(All, this) < 19 ? "average" : "higher";
    }

    /// <summary>In NIST's order of difficulty (lower, average, higher), as in the datasets' README.</summary>
    public static readonly Model[] All =
    {
        // Lower difficulty
        new("Misra1a", 2, "b1 * (1 - Math.Exp(-b2 * x))", X),
        new("Chwirut2", 3, "Math.Exp(-b1 * x) / (b2 + b3 * x)", X),
        new("Chwirut1", 3, "Math.Exp(-b1 * x) / (b2 + b3 * x)", X),
        new("Lanczos3", 6, Lanczos, X),
        new("Gauss1", 8, Gauss, X),
        new("Gauss2", 8, Gauss, X),
        new("DanWood", 2, "b1 * Math.Pow(x, b2)", X),
        new("Misra1b", 2, "b1 * (1 - Math.Pow(1 + b2 * x / 2, -2))", X),

        // Average difficulty
        new("Kirby2", 5, "(b1 + b2 * x + b3 * x * x) / (1 + b4 * x + b5 * x * x)", X),
        new("Hahn1", 7, Rational33, X),
        // "log[y] = b1 - b2*x1 * exp[-b3*x2]": the response is log(y).
        new("Nelson", 3, "b1 - b2 * x1 * Math.Exp(-b3 * x2)", new[] { "x1", "x2" }, LogResponse: true),
        new("MGH17", 5, "b1 + b2 * Math.Exp(-x * b4) + b3 * Math.Exp(-x * b5)", X),
        new("Lanczos1", 6, Lanczos, X),
        new("Lanczos2", 6, Lanczos, X),
        new("Gauss3", 8, Gauss, X),
        new("Misra1c", 2, "b1 * (1 - Math.Pow(1 + 2 * b2 * x, -0.5))", X),
        new("Misra1d", 2, "b1 * b2 * x * Math.Pow(1 + b2 * x, -1)", X),
        new("Roszman1", 4, "b1 - b2 * x - Math.Atan(b3 / (x - b4)) / Math.PI", X),
        new("ENSO", 9, "b1 + b2 * Math.Cos(2 * Math.PI * x / 12) + b3 * Math.Sin(2 * Math.PI * x / 12) + b5 * Math.Cos(2 * Math.PI * x / b4) + b6 * Math.Sin(2 * Math.PI * x / b4) + b8 * Math.Cos(2 * Math.PI * x / b7) + b9 * Math.Sin(2 * Math.PI * x / b7)", X),

        // Higher difficulty
        new("MGH09", 4, "b1 * (x * x + x * b2) / (x * x + x * b3 + b4)", X),
        new("Thurber", 7, Rational33, X),
        new("BoxBOD", 2, "b1 * (1 - Math.Exp(-b2 * x))", X),
        new("Rat42", 3, "b1 / (1 + Math.Exp(b2 - b3 * x))", X),
        new("MGH10", 3, "b1 * Math.Exp(b2 / (x + b3))", X),
        new("Eckerle4", 3, "b1 / b2 * Math.Exp(-0.5 * ((x - b3) / b2) * ((x - b3) / b2))", X),
        new("Rat43", 4, "b1 / Math.Pow(1 + Math.Exp(b2 - b3 * x), 1 / b4)", X),
        new("Bennett5", 3, "b1 * Math.Pow(b2 + x, -1 / b3)", X),
    };

    public const string Namespace = "NistFits";

    public const string TypeName = Namespace + ".Fits";

    private const string Lanczos = "b1 * Math.Exp(-b2 * x) + b3 * Math.Exp(-b4 * x) + b5 * Math.Exp(-b6 * x)";

    private const string Gauss = "b1 * Math.Exp(-b2 * x) + b3 * Math.Exp(-((x - b4) * (x - b4)) / (b5 * b5)) + b6 * Math.Exp(-((x - b7) * (x - b7)) / (b8 * b8))";

    private const string Rational33 = "(b1 + b2 * x + b3 * x * x + b4 * x * x * x) / (1 + b5 * x + b6 * x * x + b7 * x * x * x)";

    private static string[] X => new[] { "x" };

    public static Model Get(string name) => All.Single(m => m.Name == name);

    /// <summary>The source of the test compilation: the models, their residual structs and entry points.</summary>
    public static string Source()
    {
        var sb = new StringBuilder();
        sb.Append("""
            using System;
            using DerivGen;
            using DerivGen.Minimization;

            namespace NistFits;

            public static partial class Models
            {

            """);
        foreach (Model m in All)
        {
            string parameters = string.Join(", ", Enumerable.Range(1, m.Parameters).Select(k => $"double b{k}"));
            string variables = string.Join(", ", Enumerable.Range(1, m.Parameters).Select(k => $"nameof(b{k})"));
            string predictors = string.Join(", ", m.Predictors.Select(p => $"double {p}"));
            string columns = string.Join(", ", m.Predictors.Select(p => $"ReadOnlySpan<double> {p}Data"));
            string locals = string.Concat(m.Predictors.Select(p => $"            double {p} = {p}Data[i];\n"));
            sb.Append($"    public static double {m.Name}({parameters}, {predictors}) => {m.Expression};\n\n");
            sb.Append($"    [Differentiate({variables})]\n");
            sb.Append($"    public static void {m.Name}Residuals({parameters}, {columns}, ReadOnlySpan<double> y, Span<double> r)\n");
            sb.Append($"    {{\n        for (int i = 0; i < y.Length; i++)\n        {{\n{locals}            r[i] = y[i] - ({m.Expression});\n        }}\n    }}\n\n");
        }

        sb.Append("}\n\n");
        foreach (Model m in All)
        {
            string b = string.Join(", ", Enumerable.Range(0, m.Parameters).Select(k => $"b[{k}]"));
            string columns = string.Join(", ", m.Predictors.Select((_, c) => $"_predictors[{c}]"));
            sb.Append($$"""
                public readonly struct {{m.Name}}Residuals : IResidualModel
                {
                    private readonly double[][] _predictors;
                    private readonly double[] _y;

                    public {{m.Name}}Residuals(double[][] predictors, double[] y)
                    {
                        _predictors = predictors;
                        _y = y;
                    }

                    public int ResidualCount => _y.Length;

                    public void Residuals(ReadOnlySpan<double> b, Span<double> residuals) =>
                        Models.{{m.Name}}Residuals({{b}}, {{columns}}, _y, residuals);

                    public void ResidualsAndJacobian(ReadOnlySpan<double> b, Span<double> residuals, Span<double> jacobian) =>
                        Models.{{m.Name}}ResidualsJacobian({{b}}, {{columns}}, _y, residuals, jacobian);
                }


                """);
        }

        sb.Append("public static class Fits\n{\n");
        foreach (Model m in All)
        {
            string b = string.Join(", ", Enumerable.Range(0, m.Parameters).Select(k => $"b[{k}]"));
            string at = string.Join(", ", m.Predictors.Select((_, c) => $"predictors[{c}][i]"));
            sb.Append($$"""
                    public static LeastSquaresResult Fit{{m.Name}}(double[][] predictors, double[] y, double[] b, double[] standardErrors, LeastSquaresSettings settings) =>
                        LeastSquares.LevenbergMarquardt(new {{m.Name}}Residuals(predictors, y), b, standardErrors, settings);

                    public static double {{m.Name}}At(double[] b, double[][] predictors, int i) => Models.{{m.Name}}({{b}}, {{at}});


                """);
        }

        sb.Append("}\n");
        return sb.ToString();
    }
}
