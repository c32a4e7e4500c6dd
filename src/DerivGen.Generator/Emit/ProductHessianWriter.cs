using System.Linq;
using DerivGen.Generator.Model;

namespace DerivGen.Generator.Emit;

/// <summary>
/// MHessian of a method with vector variables, column by column from MHessianVectorProduct with the unit directions
/// (issue 15 item 2): n products, each a small constant times the gradient, instead of the pair method's n(n + 1)/2
/// passes. Column j gives the entries [i, j] for i ≥ j; the upper triangle is then copied from the lower one, so the
/// Hessian is exactly symmetric (as <c>ResultStatements</c> mirrors it for scalar variables).
/// </summary>
internal static class ProductHessianWriter
{
    public static void Write(IndentedWriter writer, EmitContext context)
    {
        MethodSpec spec = context.Spec;
        string type = ExpressionWriter.TypeKeyword(spec.ReturnType);
        string variableList = SignatureWriter.VariableList(spec);
        var names = new TemporaryNames(spec.Parameters.Select(p => p.Name).Concat(new[] { context.GradientName, context.HessianName }));
        string n = names.Claim("n"), value = names.Claim(GeneratedNames.ValueLocal), unit = names.Claim("unit"), column = names.Claim("column");
        string i = names.Claim("i"), j = names.Claim("j");
        string arguments = string.Join(", ", spec.Parameters.Select(p => p.Name));
        string Buffer(string name) => "global::System.Span<" + type + "> " + name + " = " + n + " <= " + Text.Count(MethodBodyWriter.StackLimit) + " ? stackalloc " + type
            + "[" + n + "] : new " + type + "[" + n + "];";

        using (SignatureWriter.ProductHessianMethod(writer, context))
        {
            string thrower = names.Claim(context.ThrowerName);
            writer.Line("int " + n + " = " + context.GradientLength + ";");
            SignatureWriter.LengthCheck(writer, context.GradientName, n, "one per variable: " + variableList, thrower);
            SignatureWriter.LengthCheck(writer, context.HessianName, n + " * " + n, "n × n, row-major", thrower);
            using (writer.Block("if (" + n + " == 0)"))
            {
                writer.Line("return " + GeneratedNames.GradientMethod(context.BareName) + "(" + arguments + ", " + context.GradientName + ");");
            }

            writer.Line();
            writer.Line(Buffer(unit));
            writer.Line(Buffer(column));
            writer.Line(unit + ".Clear();");
            writer.Line(type + " " + value + " = " + Literals.CSharp(0, spec.ReturnType) + ";");
            writer.Line("// Column j of the Hessian is H·e_j; its entries on and below the diagonal are kept.");
            using (writer.Block("for (int " + j + " = 0; " + j + " < " + n + "; " + j + "++)"))
            {
                writer.Line(unit + "[" + j + "] = " + Literals.CSharp(1, spec.ReturnType) + ";");
                writer.Line(value + " = " + GeneratedNames.HessianVectorMethod(context.BareName) + "(" + arguments + ", " + unit + ", " + context.GradientName + ", " + column + ");");
                writer.Line(unit + "[" + j + "] = " + Literals.CSharp(0, spec.ReturnType) + ";");
                using (writer.Block("for (int " + i + " = " + j + "; " + i + " < " + n + "; " + i + "++)"))
                {
                    writer.Line(context.HessianName + "[" + i + " * " + n + " + " + j + "] = " + column + "[" + i + "];");
                }
            }

            writer.Line();
            writer.Line("// The upper triangle mirrors the lower one: the Hessian is exactly symmetric.");
            using (writer.Block("for (int " + i + " = 0; " + i + " < " + n + "; " + i + "++)"))
            {
                using (writer.Block("for (int " + j + " = " + i + " + 1; " + j + " < " + n + "; " + j + "++)"))
                {
                    writer.Line(context.HessianName + "[" + i + " * " + n + " + " + j + "] = " + context.HessianName + "[" + j + " * " + n + " + " + i + "];");
                }
            }

            writer.Line();
            writer.Line("return " + value + ";");
            SignatureWriter.Thrower(writer, thrower);
        }
    }
}
