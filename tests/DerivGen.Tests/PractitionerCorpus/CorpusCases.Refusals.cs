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
    private static readonly Dictionary<string, (string[] Constructs, string? Advice, (string, string)[] Edit)> Judgments = new(StringComparer.Ordinal)
    {
        ["ExpDecayZipSum"] = (new[] { "System.Linq.Enumerable.Sum" }, null, NoEdit),
        ["PolynomialHornerSpanHelper"] = (new[] { "Calibration.Horner" }, null,
            new[]
            {
                // The advice followed: Horner written inline (its downward loop and c[^1] read the variables directly).
                ("double r = Horner(coefficients, X[i]) - Y[i];",
                    "double acc = coefficients[^1]; for (int k = coefficients.Length - 2; k >= 0; k--) { acc = acc * X[i] + coefficients[k]; } double r = acc - Y[i];"),
            }),
        ["RobustLossEnumSwitch"] = (new[] { "arm that throws" }, null, NoEdit),
        ["TwoLinkReachVector2"] = (new[] { "System.Numerics.Vector2" }, null, NoEdit),
        ["ThreeLinkStackalloc"] = (new[] { "System.Span<double>", "cumulative" }, null, NoEdit),
        ["SerialChainPoseStruct"] = (new[] { "Pose", "SerialChain.Advance" },
            "'only static properties … are read as constants' for p.X cannot apply to a property of a local struct (the message for Advance now says to write it inline, as a Pose result cannot be differentiated)",
            NoEdit),
        ["PanTiltAimVector3"] = (new[] { "System.Numerics.Vector3", "Vector3.Dot" }, null, NoEdit),
        ["JointLimitPenaltyGuards"] = (new[] { "ThrowIfNull", "ThrowIfNotEqual" }, null, NoEdit),
        ["ProjectileRk4Drag"] = (new[] { "System.Span<double>", "Rhs(s, drag, k1)" }, null, NoEdit),
        ["OrbitLeapfrogVector3"] = (new[] { "System.Numerics.Vector3" }, null, NoEdit),
        ["SpringMassRecordStruct"] = (new[] { "State", "Suspension.Step" },
            "'only static properties … are read as constants' for state.Position cannot apply to a property of a local record struct (the message for Step now says to write it inline, as a State result cannot be differentiated)",
            NoEdit),
        ["BallisticRangeFiniteGuard"] = (new[] { "throw statement" }, null, NoEdit),
        ["SoftmaxCrossEntropyLinq"] = (new[] { "logits", "System.Linq.Enumerable.Max" }, null, NoEdit),
        ["LogisticRegressionTupleHelper"] = (new[] { "deconstruction", "Predict" }, null, NoEdit),
        ["TinyNetworkGenericActivation"] = (new[] { "hidden" }, null, NoEdit),
        ["RidgeEnumerableRangeAverage"] = (new[] { "System.Linq.Enumerable.Average" }, null, NoEdit),
        ["ActivationEnumSwitchThrow"] = (new[] { "throw statement" }, null, NoEdit),
        ["QuadraticHorizonLocalArray"] = (new[] { "double[]" }, null, NoEdit),
        ["PlantStructInstanceHelper"] = (new[] { "FirstOrderPlant.Next" },
            "the message says to write Next inline; its coefficients are properties of a static readonly struct (Plant.Pole, Plant.Gain), which a differentiated body cannot read either, so the rewrite needs more than the message says",
            NoEdit),
        ["NormalLikelihoodLinqGuard"] = (new[] { "ThrowIfNegativeOrZero", "System.Linq.Enumerable.Sum" }, null, NoEdit),
        // The advice works here: with Rate marked [Differentiate] the loss is accepted (checked on the edited source).
        ["PoissonRegressionInstanceHelper"] = (new[] { "DefectModel.Rate" }, null,
            new[] { ("private double Rate(", "[Differentiate] private double Rate(") }),
        ["Ar1RangesZip"] = (new[] { "'ys'", "System.Linq.Enumerable.Sum" }, null, NoEdit),
        ["MeanVarianceQuadraticForm"] = (new[] { "Portfolio.QuadraticForm" }, null,
            // The advice works: the quadratic form written inline as a double loop is accepted.
            new[] { ("0.5 * riskAversion * QuadraticForm(Sigma, weights)", "0.5 * riskAversion * risk"), ("double budget =", "double risk = 0;\n        for (int i = 0; i < weights.Length; i++)\n        {\n            for (int j = 0; j < weights.Length; j++)\n            {\n                risk += weights[i] * Sigma[i, j] * weights[j];\n            }\n        }\n\n        double budget =") }),
        ["KellyFractionSelectAverage"] = (new[] { "System.Linq.Enumerable.Average" }, null, NoEdit),
        ["BachelierQuotesRecordStruct"] = (new[] { "foreach (Quote q in Quotes)" },
            "the message asks for 'a one-dimensional array or span of data (not a variable), with the element's own type' — Quotes is exactly that; the obstacle (the element is a struct) is not named, so there is nothing to change",
            NoEdit),
        ["TrackingErrorThrowHelpers"] = (new[] { "ThrowIfNull", "throw statement", "System.Linq.Enumerable.Sum" }, null, NoEdit),
        ["SineFitSpanSlice"] = (new[] { "System.ReadOnlySpan<double>", "window" },
            "'only static properties of double, float or int type are read as constants' for window.Length cannot apply: Length is the span's own instance property",
            NoEdit),
        ["FirEqualizerStackalloc"] = (new[] { "System.Span<double>", "output" },
            "'only static properties of double, float or int type are read as constants' for output.Length cannot apply: Length is the span's own instance property",
            NoEdit),
                ["CircleFitVector2"] = (new[] { "System.Numerics.Vector2", "foreach (Vector2 p in Points)" },
            "the message asks for 'a one-dimensional array or span of data (not a variable), with the element's own type' — Points is exactly that; the obstacle (Vector2 elements) is not named",
            NoEdit),
        ["BezierControlPointLerp"] = (new[] { "System.Numerics.Vector3", "DG0004" },
            "'only static properties … are read as constants' for Samples.Length cannot apply to an array's Length",
            NoEdit),
        ["MeshSmoothingMutableStruct"] = (new[] { "Vertex", "MeshSmoothing.SignedArea" },
            "'pass the value as a parameter' for a.X cannot apply to a field of a local struct (the message for SignedArea now says to write it inline, as a Vertex parameter cannot be differentiated)",
            NoEdit),
        ["KeepOutBoxComponentwise"] = (new[] { "System.Numerics.Vector3", "DG0004" }, null, NoEdit),
        ["ColourGradeVector4"] = (new[] { "System.Numerics.Vector4" },
            "'only static properties … are read as constants' for Measured.Length cannot apply to an array's Length",
            NoEdit),
        ["ArrheniusZipTuples"] = (new[] { "System.Linq.Enumerable.Sum" }, null, NoEdit),
        ["ConsecutiveReactionRk4"] = (new[] { "double[]", "Rhs(c, k1, k2, s1)" }, null, NoEdit),
        ["PathEndClearanceMin"] = (new[] { "System.Linq.Enumerable.Min" }, null, NoEdit),
        ["LogisticRangeSumSelectPenalty"] = (new[] { "System.Linq.Enumerable.Sum" }, null, NoEdit),
        ["SpectralUnmixingArrayHelper"] = (new[] { "Unmixing.Dot" },
            "the message says to write Dot inline; its first argument is a row of a jagged array (Absorptivity[k]), which a differentiated body cannot read, so the rewrite needs more than the message says (checked on the edited source)",
            new[] { ("double r = Dot(Absorptivity[k], concentration) - Measured[k];", "double dot = 0;\n            for (int j = 0; j < concentration.Length; j++)\n            {\n                dot += Absorptivity[k][j] * concentration[j];\n            }\n\n            double r = dot - Measured[k];") }),
    };

    private static (string, string)[] NoEdit => Array.Empty<(string, string)>();

    private static CorpusCase Annotate(CorpusCase c) =>
        Judgments.TryGetValue(c.Name, out var j)
            ? c with { Constructs = j.Constructs, AdviceDoesNotWork = j.Advice, AdviceEdit = j.Edit }
            : c;
}
