using System;
using System.Collections.Generic;

namespace DerivGen.Tests.PractitionerCorpus;

/// <summary>
/// The judgment on each refusal (written by hand after reading the messages; the messages themselves are recorded in
/// CorpusStatus.cs): the words by which the messages must name the construct, and where the advice cannot work, why —
/// with, where the advice is a mechanical edit, that edit, so the test can show the edited source is refused in turn
/// (or, where the advice is not flagged, that it is accepted).
/// </summary>
internal static partial class CorpusCases
{
    private const string OtherAssembly =
        "the message says to mark {0} [Differentiate], but it is a method of the .NET library (another assembly): it cannot be marked";

    private static string Unmarkable(string methods) => string.Format(System.Globalization.CultureInfo.InvariantCulture, OtherAssembly, methods);

    private static readonly Dictionary<string, (string[] Constructs, string? Advice, (string, string)[] Edit)> Judgments = new(StringComparer.Ordinal)
    {
        ["ExpDecayZipSum"] = (new[] { "System.Linq.Enumerable.Sum" }, Unmarkable("Enumerable.Sum"), NoEdit),
        ["LogisticGrowthLocalFunction"] = (new[] { "local function", "Model" },
            "the message says to mark the local function Model [Differentiate]; marked, it is still refused (checked on the edited source)",
            new[] { ("double Model(double t) =>", "[Differentiate] double Model(double t) =>") }),
        ["PolynomialHornerSpanHelper"] = (new[] { "Calibration.Horner" },
            "the message says to mark Horner [Differentiate]; marked, with the span named as a vector variable, it is still refused (checked on the edited source)",
            new[] { ("static double Horner(", "[Differentiate(nameof(c), nameof(x))] static double Horner(") }),
        ["RobustLossEnumSwitch"] = (new[] { "arm that throws" }, null, NoEdit),
        ["TwoLinkReachVector2"] = (new[] { "System.Numerics.Vector2" }, Unmarkable("Vector2.DistanceSquared"), NoEdit),
        ["ThreeLinkStackalloc"] = (new[] { "System.Span<double>", "cumulative" }, null, NoEdit),
        ["SerialChainPoseStruct"] = (new[] { "Pose", "SerialChain.Advance" },
            "the message says to mark Advance [Differentiate]; marked, it is still refused (checked on the edited source: it returns a Pose); and 'only static properties … are read as constants' for p.X cannot apply to a property of a local struct",
            new[] { ("private static Pose Advance(", "[Differentiate] private static Pose Advance(") }),
        ["PanTiltAimVector3"] = (new[] { "System.Numerics.Vector3", "Vector3.Dot" }, Unmarkable("Vector3.Dot and Vector3.Length"), NoEdit),
        ["JointLimitPenaltyGuards"] = (new[] { "ThrowIfNull", "ThrowIfNotEqual" }, null, NoEdit),
        ["ProjectileRk4Drag"] = (new[] { "System.Span<double>", "Rhs(s, drag, k1)" }, null, NoEdit),
        ["PendulumLocalFunction"] = (new[] { "local function", "Acceleration" },
            "the message says to mark the local function Acceleration [Differentiate]; marked, it is still refused (checked on the edited source)",
            new[] { ("double Acceleration(double th, double om)", "[Differentiate] double Acceleration(double th, double om)") }),
        ["OrbitLeapfrogVector3"] = (new[] { "System.Numerics.Vector3" }, Unmarkable("Vector3.LengthSquared and Vector3.Distance"), NoEdit),
        ["SpringMassRecordStruct"] = (new[] { "State", "Suspension.Step" },
            "the message says to mark Step [Differentiate]; marked, it is still refused (checked on the edited source: it returns a State); and 'only static properties … are read as constants' for state.Position cannot apply to a property of a local record struct",
            new[] { ("static State Step(", "[Differentiate] static State Step(") }),
        ["BallisticRangeFiniteGuard"] = (new[] { "throw statement" }, null, NoEdit),
        ["SoftmaxCrossEntropyLinq"] = (new[] { "logits", "System.Linq.Enumerable.Max" }, Unmarkable("Enumerable.Max and Enumerable.Sum"), NoEdit),
        ["LogisticRegressionTupleHelper"] = (new[] { "deconstruction", "Predict" }, null, NoEdit),
        ["TinyNetworkGenericActivation"] = (new[] { "hidden" }, null, NoEdit),
        ["RidgeEnumerableRangeAverage"] = (new[] { "System.Linq.Enumerable.Average" }, Unmarkable("Enumerable.Average"), NoEdit),
        ["ActivationEnumSwitchThrow"] = (new[] { "throw statement" }, null, NoEdit),
        ["QuadraticHorizonLocalArray"] = (new[] { "double[]", "u[^1]" }, null, NoEdit),
        ["PlantStructInstanceHelper"] = (new[] { "FirstOrderPlant.Next" },
            "the message says to mark Next [Differentiate]; marked (and its struct made partial, as DG0002 would then ask), it is still refused (checked on the edited source)",
            new[] { ("public readonly struct FirstOrderPlant", "public readonly partial struct FirstOrderPlant"), ("public double Next(", "[Differentiate] public double Next(") }),
        ["PiTuningStaticLocalFunction"] = (new[] { "local function", "Lag" },
            "the message says to mark the local function Lag [Differentiate]; marked, it is still refused (checked on the edited source)",
            new[] { ("static double Lag(", "[Differentiate] static double Lag(") }),
                ["NormalLikelihoodLinqGuard"] = (new[] { "ThrowIfNegativeOrZero", "System.Linq.Enumerable.Sum" }, Unmarkable("Enumerable.Sum"), NoEdit),
        // The advice works here: with Rate marked [Differentiate] the loss is accepted (checked on the edited source).
        ["PoissonRegressionInstanceHelper"] = (new[] { "DefectModel.Rate" }, null,
            new[] { ("private double Rate(", "[Differentiate] private double Rate(") }),
        ["WeibullGenericMathHelper"] = (new[] { "BearingLife.LogPdf" },
            "the message says to mark LogPdf [Differentiate]; marked, it is still refused (checked on the edited source: a generic method)",
            new[] { ("static T LogPdf<T>(", "[Differentiate] static T LogPdf<T>(") }),
                ["Ar1RangesZip"] = (new[] { "'ys'", "System.Linq.Enumerable.Sum" }, Unmarkable("Enumerable.Sum"), NoEdit),
        ["MeanVarianceQuadraticForm"] = (new[] { "Portfolio.QuadraticForm" },
            "the message says to mark QuadraticForm [Differentiate]; marked, with the weights named as a vector variable, it is still refused (checked on the edited source)",
            new[] { ("static double QuadraticForm(", "[Differentiate(nameof(w))] static double QuadraticForm(") }),
        ["KellyFractionSelectAverage"] = (new[] { "System.Linq.Enumerable.Average" }, Unmarkable("Enumerable.Average"), NoEdit),
        ["BachelierQuotesRecordStruct"] = (new[] { "foreach (Quote q in Quotes)" },
            "the message asks for 'a one-dimensional array or span of data (not a variable), with the element's own type' — Quotes is exactly that; the obstacle (the element is a struct) is not named, so there is nothing to change",
            NoEdit),
        ["TrackingErrorThrowHelpers"] = (new[] { "ThrowIfNull", "throw statement", "System.Linq.Enumerable.Sum" }, Unmarkable("Enumerable.Sum"), NoEdit),
        ["SineFitSpanSlice"] = (new[] { "System.ReadOnlySpan<double>", "window" },
            "'only static properties of double, float or int type are read as constants' for window.Length cannot apply: Length is the span's own instance property",
            NoEdit),
        ["FirEqualizerStackalloc"] = (new[] { "System.Span<double>", "output" },
            "'only static properties of double, float or int type are read as constants' for output.Length cannot apply: Length is the span's own instance property",
            NoEdit),
        ["RingDownStaticLocalFunction"] = (new[] { "local function", "Envelope" },
            "the message asks to mark the local function Envelope, which is refused in turn (checked on the edited source)",
            new[] { ("static double Envelope(", "[Differentiate] static double Envelope(") }),
                ["CircleFitVector2"] = (new[] { "System.Numerics.Vector2", "foreach (Vector2 p in Points)" },
            "the message asks for 'a one-dimensional array or span of data (not a variable), with the element's own type' — Points is exactly that; the obstacle (Vector2 elements) is not named",
            NoEdit),
        ["BezierControlPointLerp"] = (new[] { "System.Numerics.Vector3", "DG0004" },
            Unmarkable("Vector3.DistanceSquared") + "; and 'only static properties … are read as constants' for Samples.Length cannot apply to an array's Length",
            NoEdit),
        ["MeshSmoothingMutableStruct"] = (new[] { "Vertex", "MeshSmoothing.SignedArea" },
            "the message says to mark SignedArea [Differentiate]; marked, it is still refused (checked on the edited source); and 'pass the value as a parameter' for a.X cannot apply to a field of a local struct",
            new[] { ("static double SignedArea(", "[Differentiate] static double SignedArea(") }),
        ["KeepOutBoxComponentwise"] = (new[] { "System.Numerics.Vector3", "DG0004" },
            Unmarkable("Vector3.LengthSquared") + "; and 'pass the value as a parameter' for q.X cannot apply: q depends on the variable p",
            NoEdit),
        ["ColourGradeVector4"] = (new[] { "System.Numerics.Vector4" },
            Unmarkable("Vector4.DistanceSquared") + "; and 'only static properties … are read as constants' for Measured.Length cannot apply to an array's Length",
            NoEdit),
        ["ArrheniusZipTuples"] = (new[] { "System.Linq.Enumerable.Sum" }, Unmarkable("Enumerable.Sum"), NoEdit),
        ["ConsecutiveReactionRk4"] = (new[] { "double[]", "Rhs(c, k1, k2, s1)" }, null, NoEdit),
        ["TitrationGenericLoss"] = (new[] { "generic method", "DG0004", "DG0005" },
            "the message says to make the containing type generic instead; done (checked on the edited source), the variables are still of type T and the method is refused in turn",
            new[]
            {
                ("public static partial class Titration", "public static partial class Titration<T> where T : IFloatingPointIeee754<T>"),
                ("public static T Loss<T>(T pKa, T hill) where T : IFloatingPointIeee754<T>", "public static T Loss(T pKa, T hill)"),
            }),
                        ["PathEndClearanceMin"] = (new[] { "'^1'", "System.Linq.Enumerable.Min" },
            Unmarkable("Enumerable.Min") + "; and the message for PathX[^1] names only '^1', not the element access",
            NoEdit),
        ["LogisticRangeSumSelectPenalty"] = (new[] { "System.Linq.Enumerable.Sum" }, Unmarkable("Enumerable.Sum"), NoEdit),
        ["SpectralUnmixingArrayHelper"] = (new[] { "Unmixing.Dot" },
            "the message says to mark Dot [Differentiate]; marked, with the concentrations' parameter named as a vector variable, it is still refused (checked on the edited source)",
            new[] { ("private static double Dot(", "[Differentiate(nameof(b))] private static double Dot(") }),
    };

    private static (string, string)[] NoEdit => Array.Empty<(string, string)>();

    private static CorpusCase Annotate(CorpusCase c) =>
        Judgments.TryGetValue(c.Name, out var j)
            ? c with { Constructs = j.Constructs, AdviceDoesNotWork = j.Advice, AdviceEdit = j.Edit }
            : c;
}
