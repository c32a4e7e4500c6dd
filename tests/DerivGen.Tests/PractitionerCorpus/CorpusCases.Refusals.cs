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
        ["TinyNetworkGenericActivation"] = (new[] { "TinyNet.Activation" }, null, NoEdit),
        ["RidgeEnumerableRangeAverage"] = (new[] { "System.Linq.Enumerable.Average" }, null, NoEdit),
        ["ActivationEnumSwitchThrow"] = (new[] { "throw statement" }, null, NoEdit),
        ["QuadraticHorizonLocalArray"] = (new[] { "double[]" }, null, NoEdit),
        ["NormalLikelihoodLinqGuard"] = (new[] { "ThrowIfNegativeOrZero", "System.Linq.Enumerable.Sum" }, null, NoEdit),
        // The advice works here: with Rate marked [Differentiate] the loss is accepted (checked on the edited source).
        ["PoissonRegressionInstanceHelper"] = (new[] { "DefectModel.Rate" }, null,
            new[] { ("private double Rate(", "[Differentiate] private double Rate(") }),
        ["Ar1RangesZip"] = (new[] { "System.Linq.Enumerable.Sum" }, null,
            // The advice followed: the Zip of ys[1..] and ys[..^1] as a loop over ys from index 1, reading ys[i] and ys[i - 1].
            new[]
            {
                ("return ys[1..].Zip(ys[..^1], (y, previous) => (y - mean - phi * (previous - mean)) * (y - mean - phi * (previous - mean))).Sum();",
                    "double s = 0; for (int i = 1; i < ys.Length; i++) s += (ys[i] - mean - phi * (ys[i - 1] - mean)) * (ys[i] - mean - phi * (ys[i - 1] - mean)); return s;"),
            }),
        ["MeanVarianceQuadraticForm"] = (new[] { "Portfolio.QuadraticForm" }, null,
            // The advice works: the quadratic form written inline as a double loop is accepted.
            new[] { ("0.5 * riskAversion * QuadraticForm(Sigma, weights)", "0.5 * riskAversion * risk"), ("double budget =", "double risk = 0;\n        for (int i = 0; i < weights.Length; i++)\n        {\n            for (int j = 0; j < weights.Length; j++)\n            {\n                risk += weights[i] * Sigma[i, j] * weights[j];\n            }\n        }\n\n        double budget =") }),
        ["KellyFractionSelectAverage"] = (new[] { "System.Linq.Enumerable.Average" }, null, NoEdit),
        ["TrackingErrorThrowHelpers"] = (new[] { "ThrowIfNull", "throw statement", "System.Linq.Enumerable.Sum" }, null, NoEdit),
        ["FirEqualizerStackalloc"] = (new[] { "output", "Input.Length" }, null,
            // The advice followed: a constant length, and the loop that writes the elements given constant bounds (then unrolled).
            new[] { ("stackalloc double[Input.Length]", "stackalloc double[8]"), ("for (int n = 0; n < Input.Length; n++)", "for (int n = 0; n < 8; n++)") }),
        ["MeshSmoothingMutableStruct"] = (new[] { "remainder", "Ring.Length" }, null,
            // The advice followed: the wrapping index as a conditional (i + 1 runs from 1 to Ring.Length).
            new[] { ("Ring[(i + 1) % Ring.Length]", "Ring[i + 1 < Ring.Length ? i + 1 : 0]") }),
        ["ArrheniusZipTuples"] = (new[] { "System.Linq.Enumerable.Sum" }, null, NoEdit),
        ["ConsecutiveReactionRk4"] = (new[] { "double[]", "Rhs(c, k1, k2, s1)" }, null, NoEdit),
        ["PathEndClearanceMin"] = (new[] { "System.Linq.Enumerable.Min" }, null, NoEdit),
        ["LogisticRangeSumSelectPenalty"] = (new[] { "System.Linq.Enumerable.Sum" }, null, NoEdit),
        ["SpectralUnmixingArrayHelper"] = (new[] { "Absorptivity[k]", "jagged" }, null,
            // The advice followed: the absorptivities as a 2-D array, passed with the row index.
            new[]
            {
                ("public static readonly double[][] Absorptivity =\n    {\n        new[] { 1.2, 0.1 },\n        new[] { 0.8, 0.5 },\n        new[] { 0.3, 1.1 },\n        new[] { 0.1, 0.9 },\n    };",
                    "public static readonly double[,] Absorptivity = { { 1.2, 0.1 }, { 0.8, 0.5 }, { 0.3, 1.1 }, { 0.1, 0.9 } };"),
                ("private static double Dot(double[] a, double[] b)", "private static double Dot(double[,] a, int row, double[] b)"),
                ("for (int i = 0; i < a.Length; i++)", "for (int i = 0; i < b.Length; i++)"),
                ("s += a[i] * b[i];", "s += a[row, i] * b[i];"),
                ("Dot(Absorptivity[k], concentration)", "Dot(Absorptivity, k, concentration)"),
            }),
    };

    private static (string, string)[] NoEdit => Array.Empty<(string, string)>();

    private static CorpusCase Annotate(CorpusCase c) =>
        Judgments.TryGetValue(c.Name, out var j)
            ? c with { Constructs = j.Constructs, AdviceDoesNotWork = j.Advice, AdviceEdit = j.Edit }
            : c;
}
