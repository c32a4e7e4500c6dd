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
        ["ThreeLinkStackalloc"] = (new[] { "System.Span<double>", "cumulative" }, null, NoEdit),
        ["JointLimitPenaltyGuards"] = (new[] { "ThrowIfNull", "ThrowIfNotEqual" }, null, NoEdit),
        ["ProjectileRk4Drag"] = (new[] { "System.Span<double>", "Rhs(s, drag, k1)" }, null, NoEdit),
        ["BallisticRangeFiniteGuard"] = (new[] { "throw statement" }, null, NoEdit),
        ["SoftmaxCrossEntropyLinq"] = (new[] { "logits", "System.Linq.Enumerable.Max" }, null, NoEdit),
        ["LogisticRegressionTupleHelper"] = (new[] { "deconstruction", "Predict" }, null, NoEdit),
        ["TinyNetworkGenericActivation"] = (new[] { "hidden" }, null, NoEdit),
        ["RidgeEnumerableRangeAverage"] = (new[] { "System.Linq.Enumerable.Average" }, null, NoEdit),
        ["ActivationEnumSwitchThrow"] = (new[] { "throw statement" }, null, NoEdit),
        ["QuadraticHorizonLocalArray"] = (new[] { "double[]" }, null, NoEdit),
        ["NormalLikelihoodLinqGuard"] = (new[] { "ThrowIfNegativeOrZero", "System.Linq.Enumerable.Sum" }, null, NoEdit),
        // The advice works here: with Rate marked [Differentiate] the loss is accepted (checked on the edited source).
        ["PoissonRegressionInstanceHelper"] = (new[] { "DefectModel.Rate" }, null,
            new[] { ("private double Rate(", "[Differentiate] private double Rate(") }),
        ["Ar1RangesZip"] = (new[] { "'ys'", "System.Linq.Enumerable.Sum" }, null, NoEdit),
        ["MeanVarianceQuadraticForm"] = (new[] { "Portfolio.QuadraticForm" }, null,
            // The advice works: the quadratic form written inline as a double loop is accepted.
            new[] { ("0.5 * riskAversion * QuadraticForm(Sigma, weights)", "0.5 * riskAversion * risk"), ("double budget =", "double risk = 0;\n        for (int i = 0; i < weights.Length; i++)\n        {\n            for (int j = 0; j < weights.Length; j++)\n            {\n                risk += weights[i] * Sigma[i, j] * weights[j];\n            }\n        }\n\n        double budget =") }),
        ["KellyFractionSelectAverage"] = (new[] { "System.Linq.Enumerable.Average" }, null, NoEdit),
        ["TrackingErrorThrowHelpers"] = (new[] { "ThrowIfNull", "throw statement", "System.Linq.Enumerable.Sum" }, null, NoEdit),
        ["SineFitSpanSlice"] = (new[] { "System.ReadOnlySpan<double>", "window" },
            "'only static properties of double, float or int type are read as constants' for window.Length cannot apply: Length is the span's own instance property",
            NoEdit),
        ["FirEqualizerStackalloc"] = (new[] { "System.Span<double>", "output" },
            "'only static properties of double, float or int type are read as constants' for output.Length cannot apply: Length is the span's own instance property",
            NoEdit),
        ["MeshSmoothingMutableStruct"] = (new[] { "remainder", "Ring.Length" },
            "the message names no rewrite for the remainder (i + 1) % n (the Vertex struct, its constructor and the 'in Vertex' helper are accepted since struct values are taken apart; only the remainder is left)",
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
