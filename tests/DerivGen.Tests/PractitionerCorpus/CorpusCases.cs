using System.Collections.Generic;
using System.Linq;

namespace DerivGen.Tests.PractitionerCorpus;

/// <summary>
/// The corpus of issue 13: losses written for this issue the way practitioners in ten fields write production C#
/// (scenarios and data are invented for the corpus and say so). Each case names the reference its gradient is checked
/// against. Cases are listed by field in the partial files Cases.*.cs.
/// </summary>
internal static partial class CorpusCases
{
    /// <summary>Richardson-extrapolated central differences of the user's own method (see <see cref="Richardson"/>).</summary>
    private static readonly Reference Numeric = new(Reference.RichardsonCitation, null);

    private static IReadOnlyList<CorpusCase>? s_all;

    /// <summary>Every case, built on first use (after all static fields of every part, in whatever order C#
    /// initialises the parts, are set).</summary>
    public static IReadOnlyList<CorpusCase> All => s_all ??=
        CurveFitting().Concat(Robotics()).Concat(Dynamics()).Concat(MachineLearning()).Concat(Control())
            .Concat(Statistics()).Concat(Finance()).Concat(Signal()).Concat(Geometry()).Concat(Chemistry()).Concat(Additional())
            .Select(Annotate).ToList();

    /// <summary>A closed form written by hand: C# that fills g from x (the variables), with its source.</summary>
    private static Reference Hand(string citation, string code) => new(citation, code);

    /// <summary>A case; <paramref name="body"/> is the file's content after the usings and the namespace line.</summary>
    private static CorpusCase Case(
        string name, Field field, Idiom[] idioms, string scenario, string body, string call, double[] point, Reference reference,
        Precision precision = Precision.Double) =>
        new(name, field, idioms, scenario,
            "using System;\nusing System.Linq;\nusing System.Numerics;\nusing DerivGen;\n\nnamespace Corpus." + name + ";\n\n" + body,
            call, point, reference, precision);
}
