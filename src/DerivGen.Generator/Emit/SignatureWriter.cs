using System.Collections.Generic;
using System.Linq;
using DerivGen.Generator.Model;

namespace DerivGen.Generator.Emit;

/// <summary>
/// The one writer of what surrounds a generated method's body: its XML documentation (with the formulas of
/// <see cref="FormulaComments"/>), its attributes, its signature, the span-length checks and the thrower they call.
/// </summary>
internal static class SignatureWriter
{
    /// <summary>The method's variables as the docs list them: <c>a, b, w[…]</c>.</summary>
    public static string VariableList(MethodSpec spec) =>
        string.Join(", ", spec.Parameters.Where(p => p.IsVariable).SelectMany(p => p.IsVector ? new[] { Identifiers.Unescape(p.Name) + "[…]" } : p.ScalarVariables.Select(Identifiers.Unescape)));

    /// <summary>Docs, attributes and signature of MGradient, MHessian or MJacobian (and of the pair method); returns the
    /// scope of the body.</summary>
    public static IndentedWriter.Scope DerivativeMethod(IndentedWriter writer, EmitContext context, bool withHessian, bool inline)
    {
        MethodSpec spec = context.Spec;
        int n = context.Program.Variables.Length;
        bool jacobian = spec.HasOutputs;
        string variableList = VariableList(spec);
        writer.Line("/// <summary>");
        if (spec.IsPairMethod)
        {
            writer.Line("/// <see cref=\"" + Text.Xml(spec.Cref) + "\"/> along two slots of its vector variables, for its Hessian: every element read is");
            writer.Line("/// shifted by tRow at slot row and by tColumn at slot column, so that at tRow = tColumn = 0 the second derivative");
            writer.Line("/// with respect to (tRow, tColumn) is the Hessian entry [row, column], and with respect to (tRow, s) the entry [row, s].");
        }
        else if (jacobian)
        {
            writer.Line("/// Writes the outputs of <see cref=\"" + Text.Xml(spec.Cref) + "\"/> into " + Text.Xml(Identifiers.Unescape(spec.OutputName!))
                + " as it does, and their Jacobian with respect to (" + Text.Xml(variableList) + ").");
        }
        else
        {
            writer.Line("/// Computes <see cref=\"" + Text.Xml(spec.Cref) + "\"/> and its gradient" + (withHessian ? " and Hessian" : string.Empty)
                + " with respect to (" + Text.Xml(variableList) + ").");
        }

        writer.Line("/// </summary>");
        writer.Line("/// <remarks>");
        writer.Line("/// <code>");
        foreach (string line in context.FormulaLines(withHessian))
        {
            writer.Line("/// " + Text.Xml(line));
        }

        writer.Line("/// </code>");
        writer.Line("/// </remarks>");
        Parameters(writer, spec, parameter => parameter.Name == spec.OutputName ? "Receives the outputs, written as the method writes them." : null);
        if (jacobian)
        {
            string outputs = Text.Xml(Identifiers.Unescape(spec.OutputName!));
            writer.Line("/// <param name=\"" + context.JacobianName + "\">Receives ∂" + outputs + "[i]/∂v for v = " + Text.Xml(variableList) + " in row i, row-major ("
                + outputs + ".Length rows of " + Text.Xml(context.GradientLength) + "); needs at least " + outputs + ".Length × " + Text.Xml(Text.Parenthesized(context.GradientLength))
                + " elements. Only the rows of the outputs the method writes are written.</param>");
        }
        else
        {
            writer.Line("/// <param name=\"" + context.GradientName + "\">Receives ∂f/∂v for v = " + Text.Xml(variableList) + ", in that order; needs at least "
                + Text.Xml(context.GradientLength) + (context.GradientLength == "1" ? " element.</param>" : " elements.</param>"));
        }

        if (withHessian)
        {
            writer.Line("/// <param name=\"" + context.HessianName + "\">Receives the " + Text.Count(n) + "×" + Text.Count(n)
                + " Hessian, row-major (exactly symmetric); needs at least " + Text.Count(n * n) + " elements.</param>");
        }

        Ending(writer, returns: !jacobian, inline);
        string name = (jacobian ? GeneratedNames.JacobianMethod(context.BareName) : withHessian ? GeneratedNames.HessianMethod(context.BareName) : GeneratedNames.GradientMethod(context.BareName));
        return Signature(writer, context, jacobian ? "void" : ExpressionWriter.TypeKeyword(spec.ReturnType), name,
            new[] { jacobian ? context.JacobianName : context.GradientName }.Concat(withHessian ? new[] { context.HessianName } : new string[0]));
    }

    /// <summary>Docs, attributes and signature of MHessian of a method with vector variables (assembled from the pair
    /// method); returns the scope of the body.</summary>
    public static IndentedWriter.Scope PairedHessianMethod(IndentedWriter writer, EmitContext context)
    {
        MethodSpec spec = context.Spec;
        string variableList = VariableList(spec);
        writer.Line("/// <summary>");
        writer.Line("/// Computes <see cref=\"" + Text.Xml(spec.Cref) + "\"/> and its gradient and Hessian with respect to (" + Text.Xml(variableList) + ").");
        writer.Line("/// </summary>");
        writer.Line("/// <remarks>");
        writer.Line("/// The gradient comes from <see cref=\"" + Text.Xml(GeneratedNames.GradientMethod(context.BareName)) + "\"/>. The Hessian entries that involve a vector");
        writer.Line("/// element come one pair of slots at a time from the pair method, which differentiates the method along the two");
        writer.Line("/// slots: n_v(n_v + 1)/2 passes over the method for n_v vector elements.");
        writer.Line("/// </remarks>");
        Parameters(writer, spec, _ => null);
        writer.Line("/// <param name=\"" + context.GradientName + "\">Receives ∂f/∂v for v = " + Text.Xml(variableList) + ", in that order; needs at least "
            + Text.Xml(context.GradientLength) + " elements.</param>");
        writer.Line("/// <param name=\"" + context.HessianName + "\">Receives the Hessian, row-major (exactly symmetric); needs at least ("
            + Text.Xml(context.GradientLength) + ")² elements.</param>");
        Ending(writer, returns: true, inline: false);
        return Signature(writer, context, ExpressionWriter.TypeKeyword(spec.ReturnType), GeneratedNames.HessianMethod(context.BareName),
            new[] { context.GradientName, context.HessianName });
    }

    /// <summary>Docs, attributes and signature of MHessian of a method with vector variables assembled from
    /// MHessianVectorProduct (<see cref="ProductHessianWriter"/>); returns the scope of the body.</summary>
    public static IndentedWriter.Scope ProductHessianMethod(IndentedWriter writer, EmitContext context)
    {
        MethodSpec spec = context.Spec;
        string variableList = VariableList(spec);
        writer.Line("/// <summary>");
        writer.Line("/// Computes <see cref=\"" + Text.Xml(spec.Cref) + "\"/> and its gradient and Hessian with respect to (" + Text.Xml(variableList) + ").");
        writer.Line("/// </summary>");
        writer.Line("/// <remarks>");
        writer.Line("/// Column by column: column j is <see cref=\"" + Text.Xml(GeneratedNames.HessianVectorMethod(context.BareName)) + "\"/> along the unit direction e_j,");
        writer.Line("/// so n products of a small constant times the gradient's cost each; the upper triangle is copied from the lower one.");
        writer.Line("/// </remarks>");
        Parameters(writer, spec, _ => null);
        writer.Line("/// <param name=\"" + context.GradientName + "\">Receives ∂f/∂v for v = " + Text.Xml(variableList) + ", in that order; needs at least "
            + Text.Xml(context.GradientLength) + " elements.</param>");
        writer.Line("/// <param name=\"" + context.HessianName + "\">Receives the Hessian, row-major (exactly symmetric); needs at least ("
            + Text.Xml(context.GradientLength) + ")² elements.</param>");
        Ending(writer, returns: true, inline: false);
        return Signature(writer, context, ExpressionWriter.TypeKeyword(spec.ReturnType), GeneratedNames.HessianMethod(context.BareName),
            new[] { context.GradientName, context.HessianName });
    }

    /// <summary>Docs, attributes and signature of MHessianVectorProduct (<see cref="Differentiation.HessianVectorProgram"/>);
    /// returns the scope of the body.</summary>
    public static IndentedWriter.Scope HessianVectorMethod(IndentedWriter writer, EmitContext context, bool inline)
    {
        MethodSpec spec = context.Spec;
        string variableList = Text.Xml(VariableList(spec));
        string length = Text.Xml(context.GradientLength);
        string elements = context.GradientLength == "1" ? " element." : " elements.";
        writer.Line("/// <summary>");
        writer.Line("/// Computes <see cref=\"" + Text.Xml(spec.Cref) + "\"/>, its gradient and the product of its Hessian with " + context.DirectionName
            + ", with respect to (" + variableList + "), without forming the Hessian.");
        writer.Line("/// </summary>");
        writer.Line("/// <remarks>");
        writer.Line("/// One tangent sweep along " + context.DirectionName + " gives the directional derivative ∇f·" + context.DirectionName
            + " (each loop-carried local carries its own tangent, …Dot);");
        writer.Line("/// the product is the gradient of that derivative, taken like the gradient itself, so the cost is a small constant");
        writer.Line("/// times <see cref=\"" + Text.Xml(GeneratedNames.GradientMethod(context.BareName)) + "\"/> whatever the number of variables.");
        writer.Line("/// The product equals the Hessian of <see cref=\"" + Text.Xml(GeneratedNames.HessianMethod(context.BareName)) + "\"/> times "
            + context.DirectionName + " up to rounding (the sums are grouped differently).");
        writer.Line("/// </remarks>");
        Parameters(writer, spec, _ => null);
        writer.Line("/// <param name=\"" + context.DirectionName + "\">The direction d, one entry per variable (" + variableList + ", in that order); needs at least "
            + length + elements + " Not written.</param>");
        writer.Line("/// <param name=\"" + context.GradientName + "\">Receives ∂f/∂v for v = " + variableList + ", in that order; needs at least " + length + elements + "</param>");
        writer.Line("/// <param name=\"" + context.ProductName + "\">Receives the Hessian times d, in the same order; needs at least " + length + elements + "</param>");
        Ending(writer, returns: true, inline);
        return Signature(writer, context, ExpressionWriter.TypeKeyword(spec.ReturnType), GeneratedNames.HessianVectorMethod(context.BareName),
            new[] { context.GradientName, context.ProductName }, readOnlyFirst: context.DirectionName);
    }

    /// <summary>One param tag per parameter of the user's method; <paramref name="special"/> may describe one otherwise.</summary>
    private static void Parameters(IndentedWriter writer, MethodSpec spec, System.Func<ParameterSpec, string?> special)
    {
        foreach (ParameterSpec parameter in spec.Parameters)
        {
            writer.Line("/// <param name=\"" + Text.Xml(Identifiers.Unescape(parameter.Name)) + "\">"
                + (parameter.IsVariable ? "A differentiation variable." : special(parameter) ?? "Passed to the method unchanged; held constant.") + "</param>");
        }
    }

    private static void Ending(IndentedWriter writer, bool returns, bool inline)
    {
        if (returns)
        {
            writer.Line("/// <returns>The value of the method at these arguments, bit-for-bit.</returns>");
        }

        writer.Line("/// <exception cref=\"global::System.ArgumentException\">A span is shorter than stated.</exception>");
        writer.Line("[global::System.CodeDom.Compiler.GeneratedCode(\"" + GeneratedNames.ToolName + "\", \"" + GeneratedNames.ToolVersion + "\")]");
        if (inline)
        {
            writer.Line("[global::System.Runtime.CompilerServices.MethodImpl(global::System.Runtime.CompilerServices.MethodImplOptions.AggressiveInlining)]");
        }
    }

    /// <summary>The user's parameters, then the spans; the method is static when the user's is.</summary>
    private static IndentedWriter.Scope Signature(IndentedWriter writer, EmitContext context, string returnType, string name, IEnumerable<string> spans,
        string? readOnlyFirst = null)
    {
        MethodSpec spec = context.Spec;
        string type = ExpressionWriter.TypeKeyword(spec.ReturnType);
        var parameters = spec.Parameters.Select(p => p.Modifiers + p.TypeName + " " + p.Name).ToList();
        if (readOnlyFirst is not null)
        {
            parameters.Add("global::System.ReadOnlySpan<" + type + "> " + readOnlyFirst);
        }

        parameters.AddRange(spans.Select(span => "global::System.Span<" + type + "> " + span));
        string modifiers = spec.Accessibility + (spec.IsStatic ? " static " : " ");
        IndentedWriter.Scope body = spec.GenericConstraints is { } constraints
            ? WriteGeneric(writer, modifiers + returnType + " " + name + "<T>(" + string.Join(", ", parameters) + ")", constraints)
            : writer.Block(modifiers + returnType + " " + name + "(" + string.Join(", ", parameters) + ")");

        // Every generated method runs the user's checks that throw first, before its span checks and any write.
        MethodBodyWriter.WriteGuards(writer, spec);
        return body;
    }

    /// <summary>The signature of a method generic over T, its constraints on the next line (as the user's).</summary>
    private static IndentedWriter.Scope WriteGeneric(IndentedWriter writer, string signature, string constraints)
    {
        writer.Line(signature);
        return writer.Block("    where T : " + constraints);
    }

    public static void LengthCheck(IndentedWriter writer, string name, string length, string what, string thrower)
    {
        using (writer.Block("if (" + name + ".Length < " + length + ")"))
        {
            writer.Line(thrower + "(nameof(" + name + "), " + length + ", \"" + what.Replace("\"", "'") + "\");");
        }

        writer.Line();
    }

    /// <summary>
    /// The length checks throw through a static local function: the exception and its message are built out of line,
    /// so that a small generated method stays within the JIT's inlining budget.
    /// </summary>
    public static void Thrower(IndentedWriter writer, string thrower)
    {
        writer.Line();
        writer.Line("static void " + thrower + "(string name, long length, string what) =>");
        writer.Line("    throw new global::System.ArgumentException(\"The span must hold at least \" + length + (length == 1 ? \" element (\" : \" elements (\") + what + \").\", name);");
    }
}
