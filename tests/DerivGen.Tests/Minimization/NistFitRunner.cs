using System;
using System.Collections.Concurrent;
using System.Linq;
using DerivGen.Minimization;
using DerivGen.Tests.Infrastructure;
using MathNet.Numerics.LinearAlgebra;
using MathNet.Numerics.Optimization;

namespace DerivGen.Tests.Minimization;

internal delegate LeastSquaresResult NistFit(double[][] predictors, double[] y, double[] b, double[] standardErrors, LeastSquaresSettings settings);

internal delegate double NistAt(double[] b, double[][] predictors, int i);

/// <summary>One fit of one NIST problem from one start, by one library, with its digits against the certified values.</summary>
internal sealed record NistOutcome(
    string Dataset, int Start, double[] Parameters, double[] StandardErrors, double ResidualSumOfSquares,
    int Iterations, int Evaluations, string EvaluationDetail, string Stop,
    double ParameterDigits, double StandardErrorDigits, double ResidualDigits);

/// <summary>
/// Compiles the 27 models once (generator at test time), fits them with DerivGen's Levenberg–Marquardt and with
/// MathNet.Numerics 5.0.0's (finite-difference Jacobian), caching each outcome so the assertions and the table share
/// one run.
/// </summary>
public sealed class NistFitFixture : UserCodeFixture
{
    private readonly ConcurrentDictionary<(string, int), NistOutcome> _ours = new();
    private readonly ConcurrentDictionary<(string, int), NistOutcome> _mathNet = new();
    private readonly ConcurrentDictionary<(string, int), NistOutcome> _accelerated = new();
    private readonly ConcurrentDictionary<string, NistDataset> _data = new();

    public NistFitFixture()
        : base(NistModels.Source())
    {
    }

    /// <summary>The settings of every DerivGen fit: the defaults.</summary>
    internal static LeastSquaresSettings Settings { get; } = new();

    /// <summary>The defaults with geodesic acceleration switched on (the table's extra column).</summary>
    internal static LeastSquaresSettings AcceleratedSettings { get; } = new() { GeodesicAcceleration = true };

    internal NistDataset Data(string name) => _data.GetOrAdd(name, NistDataset.Load);

    internal double[] Response(NistModels.Model model) =>
        model.LogResponse ? Array.ConvertAll(Data(model.Name).Y, Math.Log) : Data(model.Name).Y;

    internal NistOutcome Ours(string name, int start) => _ours.GetOrAdd((name, start), key => RunOurs(key.Item1, key.Item2, Settings));

    internal NistOutcome Accelerated(string name, int start) => _accelerated.GetOrAdd((name, start), key => RunOurs(key.Item1, key.Item2, AcceleratedSettings));

    internal NistOutcome MathNet(string name, int start) => _mathNet.GetOrAdd((name, start), key => RunMathNet(key.Item1, key.Item2));

    private NistOutcome RunOurs(string name, int start, LeastSquaresSettings settings)
    {
        var model = NistModels.Get(name);
        NistDataset d = Data(name);
        var fit = Assembly.Method<NistFit>(NistModels.TypeName, "Fit" + name);
        double[] b = (double[])(start == 1 ? d.Start1 : d.Start2).Clone();
        var se = new double[b.Length];
        LeastSquaresResult r = fit(d.Predictors, Response(model), b, se, settings);
        return Score(d, start, b, se, r.ResidualSumOfSquares, r.Iterations, r.Evaluations,
            $"{r.ResidualEvaluations} r + {r.JacobianEvaluations} J", r.Reason.ToString());
    }

    private NistOutcome RunMathNet(string name, int start)
    {
        var model = NistModels.Get(name);
        NistDataset d = Data(name);
        var at = Assembly.Method<NistAt>(NistModels.TypeName, name + "At");
        double[] y = Response(model);
        int m = y.Length;
        int evaluations = 0;

        // The observations are passed by index (x = 0..m-1), so that one model function serves Nelson's two
        // predictors too; MathNet differentiates with respect to the parameters only.
        Vector<double> observedX = Vector<double>.Build.Dense(m, i => i);
        Vector<double> observedY = Vector<double>.Build.Dense(y);
        IObjectiveModel objective = ObjectiveFunction.NonlinearModel(
            (p, xs) =>
            {
                evaluations++;
                double[] b = p.ToArray();
                return Vector<double>.Build.Dense(xs.Count, k => at(b, d.Predictors, (int)xs[k]));
            },
            observedX,
            observedY);

        double[] startPoint = start == 1 ? d.Start1 : d.Start2;
        try
        {
            NonlinearMinimizationResult result = new LevenbergMarquardtMinimizer().FindMinimum(objective, Vector<double>.Build.Dense(startPoint));
            double[] b = result.MinimizingPoint.ToArray();
            double[] se = result.StandardErrors?.ToArray() ?? Enumerable.Repeat(double.NaN, b.Length).ToArray();
            double rss = 0;
            for (int i = 0; i < m; i++)
            {
                double r = y[i] - at(b, d.Predictors, i);
                rss += r * r;
            }

            return Score(d, start, b, se, rss, result.Iterations, evaluations, $"{evaluations} f", result.ReasonForExit.ToString());
        }
        catch (Exception e) when (e is not OutOfMemoryException)
        {
            var nan = Enumerable.Repeat(double.NaN, startPoint.Length).ToArray();
            return Score(d, start, nan, nan, double.NaN, 0, evaluations, $"{evaluations} f", "threw " + e.GetType().Name);
        }
    }

    private static NistOutcome Score(NistDataset d, int start, double[] b, double[] se, double rss, int iterations, int evaluations, string detail, string stop) =>
        new(d.Name, start, b, se, rss, iterations, evaluations, detail, stop,
            MinDigits(b, d.Certified), MinDigits(se, d.StandardDeviations), Digits(rss, d.ResidualSumOfSquares));

    /// <summary>
    /// The log relative error LRE = −log10(|estimate − certified| / |certified|), the number of significant digits
    /// that agree (McCullough, "Assessing the reliability of statistical software: Part II", The American
    /// Statistician 53(2), 1999), limited to 11, the digits NIST certifies; 0 for NaN or worse than one digit.
    /// </summary>
    internal static double Digits(double estimate, double certified)
    {
        if (double.IsNaN(estimate) || double.IsInfinity(estimate))
        {
            return 0;
        }

        if (estimate == certified)
        {
            return 11;
        }

        double relative = Math.Abs(estimate - certified) / Math.Abs(certified);
        return Math.Clamp(-Math.Log10(relative), 0, 11) + 0.0; // + 0.0 turns -0 into 0
    }

    internal static double MinDigits(double[] estimates, double[] certified) =>
        estimates.Select((e, k) => Digits(e, certified[k])).Min();
}
