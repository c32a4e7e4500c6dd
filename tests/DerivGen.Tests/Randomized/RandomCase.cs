using System;
using System.Collections.Generic;
using System.Globalization;
using System.Linq;
using System.Text;

namespace DerivGen.Tests.Randomized;

/// <summary>
/// The inputs of one random method. Every random method has the same signature,
/// <c>double M(double x0, double x1, double x2, double c0, double c1, int k, double[] d)</c>, so that one delegate type
/// binds them all; which doubles are differentiation variables is the case's choice.
/// </summary>
internal sealed class CasePoint
{
    public static readonly string[] DoubleNames = { "x0", "x1", "x2", "c0", "c1" };

    public CasePoint(double[] doubles, int k, double[] data)
    {
        Doubles = doubles;
        K = k;
        Data = data;
    }

    /// <summary>x0, x1, x2, c0, c1.</summary>
    public double[] Doubles { get; }

    public int K { get; }

    public double[] Data { get; }

    public override string ToString() =>
        string.Join(", ", DoubleNames.Select((n, i) => n + " = " + Printer.Literal(Doubles[i])))
        + ", k = " + K.ToString(CultureInfo.InvariantCulture)
        + ", d = { " + string.Join(", ", Data.Select(Printer.Literal)) + " }";
}

/// <summary>The two families of random methods.</summary>
internal enum CaseFamily
{
    /// <summary>One random expression over every function of the rule table (returned from a block or an expression body).</summary>
    Expression,

    /// <summary>A small program: locals, compound assignments, loops over data, branches, tuples, early returns.</summary>
    Program,
}

/// <summary>One random method with the point it is checked at.</summary>
internal sealed class RandomCase
{
    public RandomCase(CaseFamily family, Stmt[] body, bool expressionBodied, string[] variables, bool namesAllVariables, bool hessian, CasePoint[] points)
    {
        Family = family;
        Body = body;
        ExpressionBodied = expressionBodied;
        Variables = variables;
        NamesAllVariables = namesAllVariables;
        Hessian = hessian;
        Points = points;
    }

    public CaseFamily Family { get; }

    public Stmt[] Body { get; }

    /// <summary>Printed as <c>=&gt; expression;</c> (the body is a single return).</summary>
    public bool ExpressionBodied { get; }

    /// <summary>The differentiation variables, in declaration order.</summary>
    public string[] Variables { get; }

    /// <summary>True for <c>[Differentiate]</c> without names (every double parameter is a variable).</summary>
    public bool NamesAllVariables { get; }

    public bool Hessian { get; }

    /// <summary>The points the case is checked at (same k and data, different doubles).</summary>
    public CasePoint[] Points { get; }

    /// <summary>The CsCheck seed the case was generated from (set by the generator).</summary>
    public string Seed { get; set; } = "";

    /// <summary>A size for shrinking: fewer nodes and statements, fewer variables, and no Hessian are "smaller".</summary>
    public ulong Size => (ulong)((Body.Sum(s => s.Count) * 8) + Variables.Length + (Hessian ? 1 : 0) + Points[0].Data.Length);

    public RandomCase WithBody(Stmt[] body) => new(Family, body, ExpressionBodied, Variables, NamesAllVariables, Hessian, Points) { Seed = Seed };

    /// <summary>The method as C#, named <paramref name="name"/>.</summary>
    public string MethodSource(string name) => MethodSource(name, Attribute(NamesAllVariables ? Array.Empty<string>() : Variables, Hessian));

    /// <summary><c>[Differentiate(nameof(a), …)]</c> with <c>Hessian = false</c> unless <paramref name="hessian"/>; no names means all.</summary>
    private static string Attribute(IEnumerable<string> names, bool hessian)
    {
        var arguments = names.Select(v => "nameof(" + v + ")").Concat(hessian ? Array.Empty<string>() : new[] { "Hessian = false" }).ToList();
        return arguments.Count == 0 ? "[Differentiate]" : "[Differentiate(" + string.Join(", ", arguments) + ")]";
    }

    /// <summary>
    /// The variant with a vector of variables: the same method with the data <c>d</c> named as a vector variable too
    /// (gradient only), so that every read of <c>d</c> is differentiated; its gradient is checked against the same
    /// reference run with d's elements as variables.
    /// </summary>
    public string VectorVariantSource(string name) =>
        MethodSource(name, Attribute(Variables.Append("d"), hessian: false));

    private string MethodSource(string name, string attribute)
    {
        var sb = new StringBuilder();
        sb.Append("    ").Append(attribute).Append('\n');
        sb.Append("    public static double ").Append(name).Append("(double x0, double x1, double x2, double c0, double c1, int k, double[] d)");
        if (ExpressionBodied && Body is [Return { Condition: null } only])
        {
            sb.Append(" =>\n        ").Append(Printer.Print(only.Value)).Append(";\n");
        }
        else
        {
            sb.Append("\n    {\n");
            Printer.Print(sb, Body, 2);
            sb.Append("    }\n");
        }

        return sb.ToString();
    }

    /// <summary>
    /// Whether the method has a variant with outputs: its only return is its last statement, unconditional, so that the
    /// body can end in <c>outputs[0] = value;</c> instead.
    /// </summary>
    public bool HasOutputVariant =>
        Body.Length > 0 && Body[^1] is Return { Condition: null } && Body.SelectMany(Descendants).Count(s => s is Return) == 1;

    private static IEnumerable<Stmt> Descendants(Stmt statement) => new[] { statement }.Concat(statement.Nested.SelectMany(Descendants));

    /// <summary>
    /// The variant with outputs (null without one): the same body, writing the value into <c>outputs[0]</c>, so that its
    /// generated <c>MJacobian</c> row must equal the method's gradient (same variables).
    /// </summary>
    public string? OutputVariantSource(string name)
    {
        if (!HasOutputVariant)
        {
            return null;
        }

        var sb = new StringBuilder();
        string attribute = Attribute(NamesAllVariables ? Array.Empty<string>() : Variables, hessian: true); // Hessian is ignored with outputs
        sb.Append("    ").Append(attribute).Append('\n');
        sb.Append("    public static void ").Append(name).Append("(double x0, double x1, double x2, double c0, double c1, int k, double[] d, Span<double> outputs)\n    {\n");
        Printer.Print(sb, Body[..^1], 2);
        sb.Append("        outputs[0] = ").Append(Printer.Print(((Return)Body[^1]).Value)).Append(";\n    }\n");
        return sb.ToString();
    }

    /// <summary>
    /// The variants with the body inlined: moved into a private static helper that takes d as a
    /// <c>ReadOnlySpan&lt;double&gt;</c> (suffix Inl; inlined at the call, since it takes a span), and into a capturing
    /// local function without parameters (suffix Loc). Their derivatives are checked against the same reference.
    /// </summary>
    public string InlinedVariantsSource(string name)
    {
        string attribute = Attribute(NamesAllVariables ? Array.Empty<string>() : Variables, Hessian);
        const string Parameters = "(double x0, double x1, double x2, double c0, double c1, int k, double[] d)";
        var sb = new StringBuilder();
        sb.Append("    ").Append(attribute).Append('\n');
        sb.Append("    public static double ").Append(name).Append("Inl").Append(Parameters).Append(" =>\n        ")
            .Append(name).Append("InlBody(x0, x1, x2, c0, c1, k, d);\n\n");
        sb.Append("    private static double ").Append(name).Append("InlBody(double x0, double x1, double x2, double c0, double c1, int k, ReadOnlySpan<double> d)\n    {\n");
        Printer.Print(sb, Body, 2);
        sb.Append("    }\n\n");
        sb.Append("    ").Append(attribute).Append('\n');
        sb.Append("    public static double ").Append(name).Append("Loc").Append(Parameters).Append("\n    {\n        double Body()\n        {\n");
        Printer.Print(sb, Body, 3);
        sb.Append("        }\n\n        return Body();\n    }\n");
        return sb.ToString();
    }

    /// <summary>A complete compilation unit holding <paramref name="methods"/> in <c>Rnd.R</c>.</summary>
    public static string Unit(IEnumerable<string> methods)
    {
        var sb = new StringBuilder();
        sb.Append("using System;\nusing DerivGen;\n\nnamespace Rnd;\n\n#pragma warning disable CS0219, CS0162, CS1717\n\ninternal static partial class R\n{\n");
        foreach (string method in methods)
        {
            sb.Append(method).Append('\n');
        }

        sb.Append("}\n");
        return sb.ToString();
    }

    /// <summary>What a failure report shows: the method (as a complete, compilable unit) and the point.</summary>
    public string Describe(string name = "M") =>
        $"// seed {Seed}; {Family}; variables ({string.Join(", ", Variables)}); at\n//   {string.Join("\n//   ", Points.Select(p => p.ToString()))}\n" + Unit(new[] { MethodSource(name), VectorVariantSource(name + "Vec"), InlinedVariantsSource(name) }.Concat(OutputVariantSource(name + "Out") is { } variant ? new[] { variant } : Array.Empty<string>()));
}
