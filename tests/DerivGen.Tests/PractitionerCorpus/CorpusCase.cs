using System;
using System.Collections.Generic;

namespace DerivGen.Tests.PractitionerCorpus;

/// <summary>The field a case's author works in.</summary>
public enum Field
{
    CurveFitting,
    Robotics,
    Dynamics,
    MachineLearning,
    Control,
    Statistics,
    Finance,
    Signal,
    Geometry,
    Chemistry,
}

/// <summary>The C# idioms of issue 13 (each used by at least two cases; the summary test checks it).</summary>
public enum Idiom
{
    /// <summary>A local function: static or capturing, expression- or block-bodied.</summary>
    LocalFunction,

    /// <summary>A helper without [Differentiate] (static or instance, any accessibility) with scalar, array, span,
    /// T[,] or in-struct parameters, returning a scalar, a tuple or a struct.</summary>
    UnmarkedHelper,

    /// <summary>A helper that writes its result into a Span&lt;double&gt; (an ODE right-hand side).</summary>
    SpanWritingHelper,

    /// <summary>System.Numerics Vector2/3/4: operators, Dot, Cross, Length(Squared), Distance(Squared), Normalize,
    /// Lerp, Min/Max/Abs — as data, locals, helper arguments/results or variables.</summary>
    NumericsVector,

    /// <summary>A user struct, readonly struct or record struct.</summary>
    UserStruct,

    /// <summary>A switch expression or statement with relational, logical or constant patterns.</summary>
    PatternSwitch,

    /// <summary>An enum parameter or local.</summary>
    Enum,

    /// <summary>Index from end, ranges or Slice on data.</summary>
    IndexOrRange,

    /// <summary>double.IsFinite / IsNaN-style predicates.</summary>
    FinitePredicate,

    /// <summary>throw statements or throw helpers (ArgumentNullException.ThrowIfNull, ArgumentOutOfRangeException.ThrowIf…) as guards.</summary>
    ThrowGuard,

    /// <summary>LINQ over arrays: Sum, Select, Zip, Max, Min, Average, Enumerable.Range.</summary>
    Linq,

    /// <summary>Generic math over T : IFloatingPointIeee754&lt;T&gt;.</summary>
    GenericMath,

    /// <summary>Local arrays, stackalloc and Span&lt;T&gt; locals (state vectors, RK4 stages).</summary>
    LocalArrayOrSpan,
}

/// <summary>Whether the user's method computes in double or in float (System.Numerics vectors are float).</summary>
public enum Precision
{
    Double,
    Single,
}

/// <summary>
/// The reference a case's gradient is checked against. <see cref="HandCode"/> is C# that fills <c>g</c> from
/// <c>x</c> (the variables, flattened) — a closed form, compiled next to the case so it can read the case's data;
/// null means Richardson-extrapolated central differences of the user's own method (<see cref="Richardson"/>).
/// </summary>
public sealed record Reference(string Citation, string? HandCode)
{
    public bool IsHand => HandCode is not null;

    public static readonly string RichardsonCitation =
        "Richardson-extrapolated central differences: MathNet.Numerics.Differentiation.NumericalDerivative(3, 1) "
        + "{ StepType = StepType.Absolute, StepSize = h }.EvaluatePartialDerivative(f, x, i, 1) at h, h/2, h/4, two extrapolation steps";
}

/// <summary>
/// One loss of the corpus: a [Differentiate] method with its containing partial type, helpers and data, written as a
/// practitioner of <see cref="Field"/> writes production C#. <see cref="Call"/> calls it: <c>{M}</c> becomes "",
/// "Gradient" or "Hessian" after the method name and <c>{E}</c> becomes "", ", g" or ", g, h" (the generated
/// methods' gradient and Hessian spans); <c>x</c> is the double[] of variables, flattened in declaration order.
/// </summary>
public sealed record CorpusCase(
    string Name,
    Field Field,
    Idiom[] Idioms,
    string Scenario,
    string Source,
    string Call,
    double[] Point,
    Reference Reference,
    Precision Precision = Precision.Double)
{
    /// <summary>Words each refusal message must contain between them: the construct the analyzer should name.
    /// Empty for a case that is accepted today.</summary>
    public string[] Constructs { get; init; } = Array.Empty<string>();

    /// <summary>Where the refusal's advice cannot work, why (null when it can, or when there is no refusal).</summary>
    public string? AdviceDoesNotWork { get; init; }

    /// <summary>The edit that follows the refusal's advice where it is a mechanical change (e.g. mark the helper
    /// [Differentiate]): (text found, replacement) pairs applied to <see cref="Source"/>. The test checks that the
    /// edited source is still refused when <see cref="AdviceDoesNotWork"/> is set (which makes it a measurement),
    /// and accepted when it is not.</summary>
    public (string Find, string Replace)[] AdviceEdit { get; init; } = Array.Empty<(string, string)>();

    public string Namespace => "Corpus." + Name;

    public override string ToString() => Name;
}

/// <summary>What the analyzer and the generator do with a case today (recorded in CorpusStatus.cs).</summary>
/// <param name="Accepted">The marked method's MGradient was generated and the analyzer reported no error.</param>
/// <param name="Hessian">MHessian was generated too.</param>
/// <param name="Diagnostics">Every DG diagnostic of the case's file, in source order, as "ID: message".</param>
public sealed record Observation(bool Accepted, bool Hessian, IReadOnlyList<string> Diagnostics)
{
    public bool SameAs(Observation other) =>
        Accepted == other.Accepted && Hessian == other.Hessian && System.Linq.Enumerable.SequenceEqual(Diagnostics, other.Diagnostics);
}
