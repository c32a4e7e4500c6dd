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
        ["TinyNetworkGenericActivation"] = (new[] { "TinyNet.Activation" }, null, NoEdit),
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
        ["WeibullGenericMathHelper"] = (new[] { "BearingLife.LogPdf" }, null,
            // The advice works: LogPdf written inline with double locals (T's functions as System.Math's) is accepted.
            new[] { ("nll -= LogPdf(h, shape, scale);", "double z = h / scale;\n            nll -= Math.Log(shape / scale) + (shape - 1) * Math.Log(z) - Math.Pow(z, shape);") }),
        ["Ar1RangesZip"] = (new[] { "System.Linq.Enumerable.Sum" }, null, NoEdit),
        ["MeanVarianceQuadraticForm"] = (new[] { "Portfolio.QuadraticForm" }, null,
            // The advice works: the quadratic form written inline as a double loop is accepted.
            new[] { ("0.5 * riskAversion * QuadraticForm(Sigma, weights)", "0.5 * riskAversion * risk"), ("double budget =", "double risk = 0;\n        for (int i = 0; i < weights.Length; i++)\n        {\n            for (int j = 0; j < weights.Length; j++)\n            {\n                risk += weights[i] * Sigma[i, j] * weights[j];\n            }\n        }\n\n        double budget =") }),
        ["KellyFractionSelectAverage"] = (new[] { "System.Linq.Enumerable.Average" }, null, NoEdit),
        ["BachelierQuotesRecordStruct"] = (new[] { "foreach (Quote q in Quotes)" },
            "the message asks for 'a one-dimensional array or span of data (not a variable), with the element's own type' — Quotes is exactly that; the obstacle (the element is a struct) is not named, so there is nothing to change",
            NoEdit),
        ["TrackingErrorThrowHelpers"] = (new[] { "ThrowIfNull", "throw statement", "System.Linq.Enumerable.Sum" }, null, NoEdit),
        ["FirEqualizerStackalloc"] = (new[] { "output", "Input.Length" }, null,
            // The advice followed: a constant length, and the loop that writes the elements given constant bounds (then unrolled).
            new[] { ("stackalloc double[Input.Length]", "stackalloc double[8]"), ("for (int n = 0; n < Input.Length; n++)", "for (int n = 0; n < 8; n++)") }),
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
        ["TitrationGenericLoss"] = (new[] { "generic method", "DG0004", "DG0005" },
            "the message says to make the containing type generic instead; done (checked on the edited source), the variables are still of type T and the method is refused in turn",
            new[]
            {
                ("public static partial class Titration", "public static partial class Titration<T> where T : IFloatingPointIeee754<T>"),
                ("public static T Loss<T>(T pKa, T hill) where T : IFloatingPointIeee754<T>", "public static T Loss(T pKa, T hill)"),
            }),
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
