using System;
using System.Collections.Generic;
using System.Globalization;
using System.Linq;
using System.Text;
using DerivGen.Tests.Infrastructure;

namespace DerivGen.Tests.Minimization;

/// <summary>
/// Test problems of Moré, Garbow &amp; Hillstrom, "Testing unconstrained optimization software", ACM TOMS 7(1), 1981,
/// 17–41 ("MGH"): f(x) = Σ rᵢ(x)². Each is given by its residuals, from which the test compilation gets, written as a
/// user would: <c>F</c>, the sum of squares as a <c>[Differentiate]</c> method of scalar variables x1..xn (generated
/// gradient and Hessian), <c>Rs(x1..xn, residuals)</c>, a <c>[Differentiate]</c> method writing all m residuals into
/// a span (its generated <c>RsJacobian</c> feeds Levenberg–Marquardt), and <c>R(x1..xn, i)</c>, the i-th residual.
/// Starting points, data and minimum values are the paper's; where they are quoted from memory the record says so,
/// and three data sets (Meyer, Kowalik–Osborne, Osborne 1) are read from the NIST StRD files of the same problems
/// (MGH10, MGH09, MGH17), whose certified residual sums of squares confirm the remembered minima.
/// </summary>
internal static class MghProblems
{
    /// <param name="Number">The problem's number in the paper.</param>
    /// <param name="Minima">The published local or global minimum values f*; reaching any of them counts.</param>
    /// <param name="Source">Where x0, the data and f* come from.</param>
    /// <param name="Residuals">The residuals as C# expressions of x1..xn (problems with a fixed list).</param>
    /// <param name="Body">Or: statements computing the residual <c>r</c> for index <c>i</c> (0-based) from data.</param>
    /// <param name="Data">C# field declarations the body reads (static readonly arrays).</param>
    /// <param name="Solution">A published minimiser with f = 0, checked by substitution, or null.</param>
    public sealed record Problem(int Number, string Name, int N, int M, double[] Start, double[] Minima, string Source,
        string[]? Residuals = null, string? Body = null, string? Data = null, double[]? Solution = null)
    {
        public string TypeName => "Mgh.P" + Number.ToString(CultureInfo.InvariantCulture);

        public string Label => $"{Number}. {Name} (n = {N}, m = {M})";
    }

    private const string FromMemory = "x0 and f* from MGH 1981 (from memory)";

    public static readonly Problem[] All =
    {
        new(1, "Rosenbrock", 2, 2, new[] { -1.2, 1 }, new[] { 0.0 }, FromMemory,
            Residuals: new[] { "10 * (x2 - x1 * x1)", "1 - x1" }, Solution: new[] { 1.0, 1 }),
        new(2, "Freudenstein and Roth", 2, 2, new[] { 0.5, -2 }, new[] { 0, 48.9842 }, FromMemory + "; 48.9842 is the local minimum at (11.41…, −0.8968…)",
            Residuals: new[] { "-13 + x1 + ((5 - x2) * x2 - 2) * x2", "-29 + x1 + ((x2 + 1) * x2 - 14) * x2" }, Solution: new[] { 5.0, 4 }),
        new(3, "Powell badly scaled", 2, 2, new[] { 0.0, 1 }, new[] { 0.0 }, FromMemory,
            Residuals: new[] { "10000 * x1 * x2 - 1", "Math.Exp(-x1) + Math.Exp(-x2) - 1.0001" }),
        new(4, "Brown badly scaled", 2, 3, new[] { 1.0, 1 }, new[] { 0.0 }, FromMemory,
            Residuals: new[] { "x1 - 1e6", "x2 - 2e-6", "x1 * x2 - 2" }, Solution: new[] { 1e6, 2e-6 }),
        new(5, "Beale", 2, 3, new[] { 1.0, 1 }, new[] { 0.0 }, FromMemory,
            Residuals: new[] { "1.5 - x1 * (1 - x2)", "2.25 - x1 * (1 - x2 * x2)", "2.625 - x1 * (1 - x2 * x2 * x2)" }, Solution: new[] { 3, 0.5 }),
        new(6, "Jennrich and Sampson", 2, 10, new[] { 0.3, 0.4 }, new[] { 124.362 }, FromMemory + " (m = 10)",
            Body: "double k = i + 1; double r = 2 + 2 * k - (Math.Exp(k * x1) + Math.Exp(k * x2));"),
        new(7, "Helical valley", 3, 3, new[] { -1.0, 0, 0 }, new[] { 0.0 }, FromMemory,
            Residuals: new[] { "10 * (x3 - 10 * (Math.Atan(x2 / x1) / (2 * Math.PI) + (x1 < 0 ? 0.5 : 0)))", "10 * (Math.Sqrt(x1 * x1 + x2 * x2) - 1)", "x3" }, Solution: new[] { 1.0, 0, 0 }),
        new(8, "Bard", 3, 15, new[] { 1.0, 1, 1 }, new[] { 8.21487e-3, 17.4286 }, FromMemory + "; 17.4286 is approached as x2, x3 → −∞",
            Data: "static readonly double[] Y = { 0.14, 0.18, 0.22, 0.25, 0.29, 0.32, 0.35, 0.39, 0.37, 0.58, 0.73, 0.96, 1.34, 2.10, 4.39 };",
            Body: "double u = i + 1; double v = 16 - u; double w = Math.Min(u, v); double r = Y[i] - (x1 + u / (v * x2 + w * x3));"),
        new(9, "Gaussian", 3, 15, new[] { 0.4, 1, 0 }, new[] { 1.12793e-8 }, FromMemory,
            Data: "static readonly double[] Y = { 0.0009, 0.0044, 0.0175, 0.0540, 0.1295, 0.2420, 0.3521, 0.3989, 0.3521, 0.2420, 0.1295, 0.0540, 0.0175, 0.0044, 0.0009 };",
            Body: "double t = (7 - i) / 2.0; double r = x1 * Math.Exp(-x2 * (t - x3) * (t - x3) / 2) - Y[i];"),
        new(10, "Meyer", 3, 16, new[] { 0.02, 4000, 250 }, new[] { 87.9458 }, "x0 and f* from MGH 1981 (from memory); the data are NIST StRD MGH10's, whose certified RSS 87.945855171 and Start 2 confirm them",
            Data: NistData("MGH10"), Body: "double r = x1 * Math.Exp(x2 / (T[i] + x3)) - Y[i];"),
        new(12, "Box three-dimensional", 3, 10, new[] { 0.0, 10, 20 }, new[] { 0.0 }, FromMemory + " (m = 10)",
            Body: "double t = 0.1 * (i + 1); double r = Math.Exp(-t * x1) - Math.Exp(-t * x2) - x3 * (Math.Exp(-t) - Math.Exp(-10 * t));", Solution: new[] { 1.0, 10, 1 }),
        new(13, "Powell singular", 4, 4, new[] { 3.0, -1, 0, 1 }, new[] { 0.0 }, FromMemory,
            Residuals: new[] { "x1 + 10 * x2", "Math.Sqrt(5) * (x3 - x4)", "(x2 - 2 * x3) * (x2 - 2 * x3)", "Math.Sqrt(10) * (x1 - x4) * (x1 - x4)" }, Solution: new[] { 0.0, 0, 0, 0 }),
        new(14, "Wood", 4, 6, new[] { -3.0, -1, -3, -1 }, new[] { 0.0 }, FromMemory,
            Residuals: new[] { "10 * (x2 - x1 * x1)", "1 - x1", "Math.Sqrt(90) * (x4 - x3 * x3)", "1 - x3", "Math.Sqrt(10) * (x2 + x4 - 2)", "(x2 - x4) / Math.Sqrt(10)" }, Solution: new[] { 1.0, 1, 1, 1 }),
        new(15, "Kowalik and Osborne", 4, 11, new[] { 0.25, 0.39, 0.415, 0.39 }, new[] { 3.07505e-4, 1.02734e-3 }, "x0 and f* from MGH 1981 (from memory); the data are NIST StRD MGH09's, whose certified RSS 3.0750560385E-04 and Start 2 confirm them; 1.02734e-3 is approached at infinity",
            Data: NistData("MGH09"), Body: "double u = T[i]; double r = Y[i] - x1 * (u * u + u * x2) / (u * u + u * x3 + x4);"),
        new(16, "Brown and Dennis", 4, 20, new[] { 25.0, 5, -5, -1 }, new[] { 85822.2 }, FromMemory + " (m = 20)",
            Body: "double t = (i + 1) / 5.0; double a = x1 + t * x2 - Math.Exp(t); double b = x3 + x4 * Math.Sin(t) - Math.Cos(t); double r = a * a + b * b;"),
        new(17, "Osborne 1", 5, 33, new[] { 0.5, 1.5, -1, 0.01, 0.02 }, new[] { 5.46489e-5 }, "x0 and f* from MGH 1981 (from memory); the data are NIST StRD MGH17's, whose certified RSS 5.4648946975E-05 and Start 2 confirm them",
            Data: NistData("MGH17"), Body: "double t = T[i]; double r = Y[i] - (x1 + x2 * Math.Exp(-t * x4) + x3 * Math.Exp(-t * x5));"),
        new(18, "Biggs EXP6", 6, 13, new[] { 1.0, 2, 1, 1, 1, 1 }, new[] { 5.65565e-3, 0 }, FromMemory + " (m = 13); f = 0 at (1, 10, 1, 5, 4, 3)",
            Body: "double t = 0.1 * (i + 1); double y = Math.Exp(-t) - 5 * Math.Exp(-10 * t) + 3 * Math.Exp(-4 * t); double r = x3 * Math.Exp(-t * x1) - x4 * Math.Exp(-t * x2) + x6 * Math.Exp(-t * x5) - y;",
            Solution: new[] { 1.0, 10, 1, 5, 4, 3 }),
        new(20, "Watson", 6, 31, new[] { 0.0, 0, 0, 0, 0, 0 }, new[] { 2.28767e-3 }, FromMemory + " (n = 6)",
            Body: "double t = (i + 1) / 29.0; double s1 = x2 + t * (2 * x3 + t * (3 * x4 + t * (4 * x5 + t * 5 * x6))); double s2 = x1 + t * (x2 + t * (x3 + t * (x4 + t * (x5 + t * x6)))); double r = i < 29 ? s1 - s2 * s2 - 1 : i == 29 ? x1 : x2 - x1 * x1 - 1;"),
        new(21, "Extended Rosenbrock", 10, 10, Repeat(new[] { -1.2, 1 }, 5), new[] { 0.0 }, FromMemory + " (n = 10)",
            Residuals: Enumerable.Range(0, 5).SelectMany(k => new[] { $"10 * (x{2 * k + 2} - x{2 * k + 1} * x{2 * k + 1})", $"1 - x{2 * k + 1}" }).ToArray(), Solution: Repeat(new[] { 1.0 }, 10)),
        new(22, "Extended Powell singular", 8, 8, Repeat(new[] { 3.0, -1, 0, 1 }, 2), new[] { 0.0 }, FromMemory + " (n = 8)",
            Residuals: Enumerable.Range(0, 2).SelectMany(k => new[]
            {
                $"x{4 * k + 1} + 10 * x{4 * k + 2}", $"Math.Sqrt(5) * (x{4 * k + 3} - x{4 * k + 4})",
                $"(x{4 * k + 2} - 2 * x{4 * k + 3}) * (x{4 * k + 2} - 2 * x{4 * k + 3})", $"Math.Sqrt(10) * (x{4 * k + 1} - x{4 * k + 4}) * (x{4 * k + 1} - x{4 * k + 4})",
            }).ToArray(), Solution: new double[8]),
        new(23, "Penalty I", 4, 5, new[] { 1.0, 2, 3, 4 }, new[] { 2.24997e-5 }, FromMemory + " (n = 4)",
            Residuals: Enumerable.Range(1, 4).Select(j => $"Math.Sqrt(1e-5) * (x{j} - 1)").Append("x1 * x1 + x2 * x2 + x3 * x3 + x4 * x4 - 0.25").ToArray()),
        new(24, "Penalty II", 4, 8, new[] { 0.5, 0.5, 0.5, 0.5 }, new[] { 9.37629e-6 }, FromMemory + " (n = 4)",
            Residuals: new[] { "x1 - 0.2" }
                .Concat(Enumerable.Range(2, 3).Select(i => $"Math.Sqrt(1e-5) * (Math.Exp(x{i} / 10) + Math.Exp(x{i - 1} / 10) - (Math.Exp({i} / 10.0) + Math.Exp({i - 1} / 10.0)))"))
                .Concat(Enumerable.Range(5, 3).Select(i => $"Math.Sqrt(1e-5) * (Math.Exp(x{i - 3} / 10) - Math.Exp(-0.1))"))
                .Append("4 * x1 * x1 + 3 * x2 * x2 + 2 * x3 * x3 + x4 * x4 - 1").ToArray()),
        new(25, "Variably dimensioned", 8, 10, Enumerable.Range(1, 8).Select(j => 1 - (j / 8.0)).ToArray(), new[] { 0.0 }, FromMemory + " (n = 8)",
            Residuals: Enumerable.Range(1, 8).Select(j => $"x{j} - 1")
                .Append(string.Join(" + ", Enumerable.Range(1, 8).Select(j => $"{j} * (x{j} - 1)")))
                .Append("(" + string.Join(" + ", Enumerable.Range(1, 8).Select(j => $"{j} * (x{j} - 1)")) + ") * (" + string.Join(" + ", Enumerable.Range(1, 8).Select(j => $"{j} * (x{j} - 1)")) + ")").ToArray(),
            Solution: Repeat(new[] { 1.0 }, 8)),
        new(32, "Linear function, full rank", 5, 10, Repeat(new[] { 1.0 }, 5), new[] { 5.0 }, "x0 from MGH 1981 (from memory); f* = m − n = 5 at x = (−1, …, −1) follows from the formula (the residuals are linear)",
            Residuals: Enumerable.Range(1, 10).Select(i => (i <= 5 ? $"x{i} - " : "-") + "2.0 / 10 * (x1 + x2 + x3 + x4 + x5) - 1").ToArray()),
    };

    /// <summary>The minimisers compared, in table order.</summary>
    public static readonly string[] Methods = { "gradient descent, fixed step", "gradient descent, Armijo", "Newton", "BFGS", "L-BFGS", "Levenberg–Marquardt" };

    private static double[] Repeat(double[] block, int times) => Enumerable.Repeat(block, times).SelectMany(b => b).ToArray();

    /// <summary>Y (response) and T (predictor) of a NIST file as C# array declarations.</summary>
    private static string NistData(string name)
    {
        NistDataset d = NistDataset.Load(name);
        string Array(string field, double[] values) =>
            $"static readonly double[] {field} = {{ {string.Join(", ", values.Select(v => v.ToString("R", CultureInfo.InvariantCulture)))} }};";
        return Array("Y", d.Y) + "\n    " + Array("T", d.X);
    }

    /// <summary>The test compilation: per problem F, R, an objective struct, a residual struct and entry points.</summary>
    public static string Source()
    {
        var sb = new StringBuilder();
        sb.Append("""
            using System;
            using DerivGen;
            using DerivGen.Minimization;

            namespace Mgh;

            public static class Runner
            {
                public static MinimizeResult Run<T>(T objective, int method, double[] x, MinimizeSettings settings, double step)
                    where T : IHessianObjective => method switch
                    {
                        0 => Minimize.GradientDescentFixedStep(objective, x, step, settings),
                        1 => Minimize.GradientDescent(objective, x, settings),
                        2 => Minimize.Newton(objective, x, settings),
                        3 => Minimize.Bfgs(objective, x, settings),
                        4 => Minimize.LimitedMemoryBfgs(objective, x, settings),
                        _ => throw new ArgumentOutOfRangeException(nameof(method)),
                    };
            }


            """);
        foreach (Problem p in All)
        {
            string variables = string.Join(", ", Enumerable.Range(1, p.N).Select(k => $"nameof(x{k})"));
            string parameters = string.Join(", ", Enumerable.Range(1, p.N).Select(k => $"double x{k}"));
            string args = string.Join(", ", Enumerable.Range(0, p.N).Select(k => $"x[{k}]"));
            string type = "P" + p.Number.ToString(CultureInfo.InvariantCulture);
            sb.Append($"// MGH 1981, problem {p.Number}: {p.Name}\n");
            sb.Append($"public static partial class {type}\n{{\n");
            if (p.Data is not null)
            {
                sb.Append("    ").Append(p.Data).Append("\n\n");
            }

            sb.Append($"    [Differentiate({variables})]\n    public static double F({parameters})\n    {{\n");
            if (p.Residuals is not null)
            {
                for (int i = 0; i < p.Residuals.Length; i++)
                {
                    sb.Append($"        double r{i} = {p.Residuals[i]};\n");
                }

                sb.Append("        return ").Append(string.Join(" + ", Enumerable.Range(0, p.Residuals.Length).Select(i => $"r{i} * r{i}"))).Append(";\n    }\n\n");
                string chain = p.Residuals[^1];
                for (int i = p.Residuals.Length - 2; i >= 0; i--)
                {
                    chain = $"i == {i} ? {p.Residuals[i]} : {chain}";
                }

                sb.Append($"    public static double R({parameters}, int i) => {chain};\n\n");
                sb.Append($"    [Differentiate({variables})]\n    public static void Rs({parameters}, Span<double> residuals)\n    {{\n");
                for (int i = 0; i < p.Residuals.Length; i++)
                {
                    sb.Append($"        residuals[{i}] = {p.Residuals[i]};\n");
                }

                sb.Append("    }\n");
            }
            else
            {
                sb.Append($"        double s = 0;\n        for (int i = 0; i < {p.M}; i++)\n        {{\n            {p.Body}\n            s += r * r;\n        }}\n\n        return s;\n    }}\n\n");
                sb.Append($"    public static double R({parameters}, int i)\n    {{\n        {p.Body}\n        return r;\n    }}\n\n");
                sb.Append($"    [Differentiate({variables})]\n    public static void Rs({parameters}, Span<double> residuals)\n    {{\n        for (int i = 0; i < {p.M}; i++)\n        {{\n            {p.Body}\n            residuals[i] = r;\n        }}\n    }}\n");
            }

            sb.Append("}\n\n");
            sb.Append($$"""
                public readonly struct {{type}}Objective : IHessianObjective
                {
                    public double Value(ReadOnlySpan<double> x) => {{type}}.F({{args}});

                    public double ValueAndGradient(ReadOnlySpan<double> x, Span<double> gradient) => {{type}}.FGradient({{args}}, gradient);

                    public double ValueGradientHessian(ReadOnlySpan<double> x, Span<double> gradient, Span<double> hessian) => {{type}}.FHessian({{args}}, gradient, hessian);
                }

                public readonly struct {{type}}Residuals : IResidualModel
                {
                    public int ResidualCount => {{p.M}};

                    public void Residuals(ReadOnlySpan<double> x, Span<double> residuals) => {{type}}.Rs({{args}}, residuals);

                    public void ResidualsAndJacobian(ReadOnlySpan<double> x, Span<double> residuals, Span<double> jacobian) =>
                        {{type}}.RsJacobian({{args}}, residuals, jacobian);
                }

                public static class {{type}}Entry
                {
                    public static MinimizeResult Run(int method, double[] x, MinimizeSettings settings, double step) => Runner.Run(new {{type}}Objective(), method, x, settings, step);

                    public static LeastSquaresResult Fit(double[] x, LeastSquaresSettings settings) => LeastSquares.LevenbergMarquardt(new {{type}}Residuals(), x, default, settings);

                    public static double Hessian(double[] x, double[] gradient, double[] hessian) => new {{type}}Objective().ValueGradientHessian(x, gradient, hessian);

                    public static double Residual(double[] x, int i) => {{type}}.R({{args}}, i);
                }


                """);
        }

        return sb.ToString();
    }
}
