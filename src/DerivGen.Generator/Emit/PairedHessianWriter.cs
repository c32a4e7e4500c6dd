using System.Linq;
using DerivGen.Generator.Differentiation;
using DerivGen.Generator.Model;

namespace DerivGen.Generator.Emit;

/// <summary>
/// MHessian of a method with vector variables: the gradient from MGradient, then the Hessian entry by entry from the
/// pair method (see <see cref="PairHessian"/>), each entry below the diagonal mirrored above it.
/// </summary>
internal static class PairedHessianWriter
{
    public static void Write(IndentedWriter writer, EmitContext context, PairHessian pairs)
    {
        MethodSpec spec = context.Spec;
        string type = ExpressionWriter.TypeKeyword(spec.ReturnType);
        string variableList = SignatureWriter.VariableList(spec);
        var names = new TemporaryNames(spec.Parameters.Select(p => p.Name).Concat(new[] { context.GradientName, context.HessianName }));
        string n = names.Claim("n"), value = names.Claim(GeneratedNames.ValueLocal), pairGradient = names.Claim("pairGradient"), pairHessian = names.Claim("pairHessian");
        string row = names.Claim("row"), column = names.Claim("column"), i = names.Claim("i"), j = names.Claim("j");
        int m = pairs.ScalarCount, c = m + 2;
        string along = Text.Count(m * c + m + 1); // ∂²/∂tRow∂tColumn in the pair method's Hessian
        var vectors = spec.Parameters.Where(p => p.IsVector).ToList();
        string arguments = string.Join(", ", spec.Parameters.Select(p => p.Name));
        string Pair(string r, string col) => GeneratedNames.PairHessianMethod(context.BareName) + "(" + arguments + ", " + r + ", " + col
            + ", 0, 0, " + pairGradient + ", " + pairHessian + ");";

        using (SignatureWriter.PairedHessianMethod(writer, context))
        {
            string thrower = names.Claim(context.ThrowerName);
            writer.Line("int " + n + " = " + context.GradientLength + ";");
            SignatureWriter.LengthCheck(writer, context.GradientName, n, "one per variable: " + variableList, thrower);
            SignatureWriter.LengthCheck(writer, context.HessianName, n + " * " + n, "n × n, row-major", thrower);
            writer.Line(type + " " + value + " = " + GeneratedNames.GradientMethod(context.BareName) + "(" + arguments + ", " + context.GradientName + ");");
            writer.Line("global::System.Span<" + type + "> " + pairGradient + " = stackalloc " + type + "[" + Text.Count(c) + "];");
            writer.Line("global::System.Span<" + type + "> " + pairHessian + " = stackalloc " + type + "[" + Text.Count(c * c) + "];");
            if (m > 0)
            {
                writer.Line();
                writer.Line("// The scalar variables among themselves (no vector slot shifted).");
                writer.Line(Pair("-1", "-1"));
                for (int a = 0; a < m; a++)
                {
                    for (int b = 0; b <= a; b++)
                    {
                        string entry = pairHessian + "[" + Text.Count((a * c) + b) + "]";
                        writer.Line(a == b
                            ? context.HessianName + "[" + Text.Slot(context.ScalarOffset[a], n, context.ScalarOffset[a]) + "] = " + entry + ";"
                            : context.HessianName + "[" + Text.Slot(context.ScalarOffset[a], n, context.ScalarOffset[b]) + "] = " + context.HessianName + "["
                                + Text.Slot(context.ScalarOffset[b], n, context.ScalarOffset[a]) + "] = " + entry + ";");
                    }
                }
            }

            for (int v = 0; v < vectors.Count; v++)
            {
                writer.Line();
                using (writer.Block("for (int " + i + " = 0; " + i + " < " + vectors[v].Name + ".Length; " + i + "++)"))
                {
                    writer.Line("int " + row + " = " + Text.Sum(context.VectorOffset[v], i) + ";");
                    writer.Line(Pair(row, row));
                    writer.Line(context.HessianName + "[" + row + " * " + n + " + " + row + "] = " + pairHessian + "[" + along + "];");
                    for (int a = 0; a < m; a++)
                    {
                        writer.Line(context.HessianName + "[" + row + " * " + n + " + " + Text.Parenthesized(context.ScalarOffset[a]) + "] = " + context.HessianName + "["
                            + Text.Slot(context.ScalarOffset[a], n, row) + "] = " + pairHessian + "[" + Text.Count((m * c) + a) + "];");
                    }

                    for (int u = v; u < vectors.Count; u++)
                    {
                        using (writer.Block("for (int " + j + " = " + (u == v ? i + " + 1" : "0") + "; " + j + " < " + vectors[u].Name + ".Length; " + j + "++)"))
                        {
                            writer.Line("int " + column + " = " + Text.Sum(context.VectorOffset[u], j) + ";");
                            writer.Line(Pair(row, column));
                            writer.Line(context.HessianName + "[" + row + " * " + n + " + " + column + "] = " + context.HessianName + "[" + column + " * " + n + " + " + row + "] = "
                                + pairHessian + "[" + along + "];");
                        }
                    }
                }
            }

            writer.Line();
            writer.Line("return " + value + ";");
            SignatureWriter.Thrower(writer, thrower);
        }
    }
}
