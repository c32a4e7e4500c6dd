using System;
using System.Globalization;
using DerivGen.Minimization;

namespace ArmReach;

/// <summary>
/// Part 1's objective for the package's minimisers: the squared tip-to-target distance as a function of the two joint
/// angles x = (shoulder, elbow), with the arm and the target fixed. Every member is one call of
/// <see cref="TwoLinkArm.Loss"/> or of a method DerivGen generated from it. A struct, so the minimisers call it
/// directly (they are generic over it: no boxing, no delegate).
/// </summary>
public readonly struct ReachObjective : IHessianObjective
{
    private readonly double _upperLength, _foreLength, _targetX, _targetY;

    public ReachObjective(double upperLength, double foreLength, double targetX, double targetY)
    {
        _upperLength = upperLength;
        _foreLength = foreLength;
        _targetX = targetX;
        _targetY = targetY;
    }

    public double Value(ReadOnlySpan<double> x) =>
        TwoLinkArm.Loss(x[0], x[1], _upperLength, _foreLength, _targetX, _targetY);

    public double ValueAndGradient(ReadOnlySpan<double> x, Span<double> gradient) =>
        TwoLinkArm.LossGradient(x[0], x[1], _upperLength, _foreLength, _targetX, _targetY, gradient);

    public double ValueGradientHessian(ReadOnlySpan<double> x, Span<double> gradient, Span<double> hessian) =>
        TwoLinkArm.LossHessian(x[0], x[1], _upperLength, _foreLength, _targetX, _targetY, gradient, hessian);
}

/// <summary>
/// Part 2's least-squares model for <see cref="LeastSquares.LevenbergMarquardt{TModel}"/>: the 2m tip misfits of
/// <see cref="TwoLinkArm.TipResiduals"/> as functions of p = (upperLength, foreLength, shoulderOffset), with the poses
/// and the measured tips as data. The Jacobian comes from the generated <c>TipResidualsJacobian</c>.
/// </summary>
public readonly struct ArmCalibrationModel : IResidualModel
{
    private readonly double[] _shoulder, _elbow, _measuredX, _measuredY;

    public ArmCalibrationModel(double[] shoulder, double[] elbow, double[] measuredX, double[] measuredY)
    {
        _shoulder = shoulder;
        _elbow = elbow;
        _measuredX = measuredX;
        _measuredY = measuredY;
    }

    /// <summary>Two misfits (x and y) per measured pose.</summary>
    public int ResidualCount => 2 * _shoulder.Length;

    public void Residuals(ReadOnlySpan<double> p, Span<double> residuals) =>
        TwoLinkArm.TipResiduals(p[0], p[1], p[2], _shoulder, _elbow, _measuredX, _measuredY, residuals);

    public void ResidualsAndJacobian(ReadOnlySpan<double> p, Span<double> residuals, Span<double> jacobian) =>
        TwoLinkArm.TipResidualsJacobian(p[0], p[1], p[2], _shoulder, _elbow, _measuredX, _measuredY, residuals, jacobian);
}

/// <summary>
/// Prints one table row per iteration of a minimiser: the iteration, the value (Σ rᵢ² for least squares), the largest
/// gradient component, the line search's step length, the regularisation (Newton's shift or Levenberg–Marquardt's
/// damping λ) and the point. Never stops the minimiser.
/// </summary>
public readonly struct ProgressPrinter : IIterationObserver
{
    private readonly string _regularizationName;
    private readonly string[] _pointNames;

    /// <param name="regularizationName">Header of the regularisation column, or null to leave the column out.</param>
    /// <param name="pointNames">Headers of the point's coordinates.</param>
    public ProgressPrinter(string? regularizationName, params string[] pointNames)
    {
        _regularizationName = regularizationName ?? "";
        _pointNames = pointNames;
    }

    public void PrintHeader(string valueName)
    {
        string header = $"  {"iter",4}  {valueName,14}  {"max|grad|",10}  {"step",8}";
        if (_regularizationName.Length > 0)
        {
            header += $"  {_regularizationName,9}";
        }

        foreach (string name in _pointNames)
        {
            header += $"  {name,14}";
        }

        Console.WriteLine(header);
    }

    /// <summary>The row for the starting point (the minimisers report only after each iteration).</summary>
    public void PrintStart(double value, ReadOnlySpan<double> gradient, ReadOnlySpan<double> point) =>
        PrintRow(0, value, MaxAbs(gradient), double.NaN, double.NaN, point);

    public bool OnIteration(in IterationReport report)
    {
        PrintRow(report.Iteration, report.Value, report.GradientNorm, report.StepLength, report.Regularization, report.Point);
        return true;
    }

    private void PrintRow(int iteration, double value, double gradientNorm, double stepLength, double regularization, ReadOnlySpan<double> point)
    {
        string row = Invariant($"  {iteration,4}  {value,14:0.000000E+00}  {gradientNorm,10:0.00E+00}  {Optional(stepLength, "F4"),8}");
        if (_regularizationName.Length > 0)
        {
            row += Invariant($"  {Optional(regularization, "0.00E+00"),9}");
        }

        for (int j = 0; j < point.Length; j++)
        {
            row += Invariant($"  {point[j],14:F9}");
        }

        Console.WriteLine(row);
    }

    private static string Optional(double value, string format) =>
        double.IsNaN(value) ? "-" : value.ToString(format, CultureInfo.InvariantCulture);

    private static double MaxAbs(ReadOnlySpan<double> v)
    {
        double max = 0;
        foreach (double e in v)
        {
            max = Math.Max(max, Math.Abs(e));
        }

        return max;
    }

    private static string Invariant(FormattableString text) => text.ToString(CultureInfo.InvariantCulture);
}
