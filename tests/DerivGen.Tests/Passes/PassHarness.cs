using System;
using System.Collections.Generic;
using System.Linq;
using DerivGen.Generator.Differentiation;
using DerivGen.Generator.Lowering;
using DerivGen.Generator.Model;
using DerivGen.Tests.Infrastructure;
using Microsoft.CodeAnalysis;
using Microsoft.CodeAnalysis.CSharp.Syntax;
using Xunit;

namespace DerivGen.Tests.Passes;

/// <summary>
/// Runs the stages up to a pass on one method of a small source, so that a test can look at the pass's decision (the
/// <see cref="MethodPlan"/>) directly rather than at the generated text.
/// </summary>
internal static class PassHarness
{
    /// <summary>The class holding the methods of a pass test; every source is wrapped in it.</summary>
    public const string Type = "P";

    /// <summary>A source with <paramref name="members"/> inside <c>public static partial class P</c>.</summary>
    public static string Source(string members) =>
        "using System;\nusing DerivGen;\n\npublic static partial class " + Type + "\n{\n" + members + "\n}\n";

    /// <summary>The spec of the [Differentiate] method <paramref name="method"/> as the Lower stage gives it.</summary>
    public static MethodSpec Spec(string members, string method) => SpecInSource(Source(members), method);

    /// <summary>The same for a whole source file.</summary>
    public static MethodSpec SpecInSource(string source, string method)
    {
        var compilation = GeneratorHarness.CreateCompilation(source);
        SyntaxTree tree = compilation.SyntaxTrees.Single();
        SemanticModel model = compilation.GetSemanticModel(tree);
        MethodDeclarationSyntax syntax = tree.GetRoot().DescendantNodes().OfType<MethodDeclarationSyntax>().Single(m => m.Identifier.Text == method);
        var symbol = (IMethodSymbol)model.GetDeclaredSymbol(syntax)!;
        AttributeData attribute = symbol.GetAttributes().Single(a => a.AttributeClass?.Name == "DifferentiateAttribute");
        LoweringResult result = MethodParser.Lower(symbol, syntax, attribute, model, default);
        Assert.True(result.Spec is not null, "Lowering failed: " + string.Join("; ", result.Diagnostics.Select(d => d.ToString())));
        return result.Spec!;
    }

    /// <summary>The plan of the gradient method (or of the Hessian method) of <paramref name="method"/>.</summary>
    public static MethodPlan Plan(string members, string method, bool withHessian = false, bool? hasSinCos = null) =>
        PlanOf(Spec(members, method), withHessian, hasSinCos);

    /// <summary>The same for a method of a whole source file.</summary>
    public static MethodPlan PlanInSource(string source, string method) => PlanOf(SpecInSource(source, method), false, null);

    private static MethodPlan PlanOf(MethodSpec spec, bool withHessian, bool? hasSinCos)
    {
        DerivativeProgram program = DerivativeProgram.Create(withHessian ? spec : spec with { EmitHessian = false }, default);
        return MethodPlan.Create(program, withHessian, hasSinCos ?? spec.HasSinCos, spec.HasOutputs);
    }

    /// <summary>A key of the plan by name: a carried local's name, or a running derivative's name hint for its id
    /// (<see cref="DerivativeLocals"/>; Emit makes it unique, which these sources never need).</summary>
    public static string Name(MethodPlan plan, string key) => DerivativeLocals.IsId(key) ? plan.Program.Locals.Hint(key) : key;

    /// <summary>The targets of a loop's end-of-iteration assignments.</summary>
    public static IReadOnlyList<string> NextTargets(MethodPlan plan, int loop = 0) =>
        plan.Next[plan.Program.Loops[loop]].Select(u => Name(plan, u.Target)).ToList();

    /// <summary>The targets of every assignment (before loops and in them) of the plan.</summary>
    public static ISet<string> AllTargets(MethodPlan plan) =>
        new HashSet<string>(plan.Initial.Values.Concat(plan.Next.Values).SelectMany(u => u).Select(u => Name(plan, u.Target)), StringComparer.Ordinal);
}
