using System;
using System.Collections.Generic;
using DerivGen.Minimization;
using DerivGen.Tests.Infrastructure;
using MathNet.Numerics.LinearAlgebra;
using Xunit;

namespace DerivGen.Tests.Minimization;

/// <summary>
/// The minimisers' contract: observers, stopping reasons, counts, argument checks, allocation-free calls with a
/// workspace, and Levenberg–Marquardt's standard errors against the closed form of linear least squares. The
/// objectives here are written by hand (their derivatives are plain calculus): these tests are about the minimisers,
/// not the generator (which the NIST and MGH suites use).
/// </summary>
public sealed class MinimizerApiTests
{
    public static TheoryData<string> Methods() => new() { "fixed", "armijo", "newton", "bfgs", "lbfgs", "newtoncg" };

    [Theory]
    [MemberData(nameof(Methods))]
    public void ObserverSeesEveryIterationAndCanStop(string method)
    {
        double[] x = { -1.2, 1 };
        var observer = new Recorder { StopAfter = 3 };
        MinimizeResult result = Run(method, x, observer, new MinimizeSettings(), null);

        Assert.Equal(StopReason.ObserverStopped, result.Reason);
        Assert.False(result.Converged);
        Assert.Equal(3, result.Iterations);
        Assert.Equal(new[] { 1, 2, 3 }, observer.Iterations);
        Assert.Equal(observer.LastPoint, x);
        Assert.Equal(observer.Values[^1], result.Value);
        Assert.Equal(Rosenbrock.F(x[0], x[1]), result.Value);
        Assert.Equal(result.Evaluations, result.ValueEvaluations + result.GradientEvaluations + result.HessianEvaluations + result.HessianVectorEvaluations);
    }

    [Theory]
    [MemberData(nameof(Methods))]
    public void ValueNeverIncreasesAndTheMinimumIsFound(string method)
    {
        // Rosenbrock's minimum is f = 0 at (1, 1) (Rosenbrock 1960; MGH 1981, problem 1). Fixed-step descent is slow
        // here, so it is only checked for monotone decrease from a start near the minimum with a safe step.
        double[] x = method == "fixed" ? new[] { 0.9, 0.8 } : new[] { -1.2, 1 };
        var observer = new Recorder();
        var settings = new MinimizeSettings { GradientTolerance = 1e-10, MaxIterations = method == "armijo" ? 50_000 : 1000 };
        MinimizeResult result = Run(method, x, observer, settings, null);

        double previous = Rosenbrock.F(method == "fixed" ? 0.9 : -1.2, method == "fixed" ? 0.8 : 1);
        foreach (double v in observer.Values)
        {
            Assert.True(v <= previous, $"{method}: f rose from {Check.R(previous)} to {Check.R(v)}");
            previous = v;
        }

        if (method != "fixed")
        {
            Assert.True(result.Converged, $"{method}: {result.Reason}");
            Check.Close(1, x[0], 1e-6, 0, $"{method} x");
            Check.Close(1, x[1], 1e-6, 0, $"{method} y");
            Assert.True(result.GradientNorm <= 1e-10 * Math.Max(1, result.Value) || result.Reason != StopReason.GradientSmall);
        }
    }

    [Fact]
    public void NewtonShiftsAnIndefiniteHessianAndStillDescends()
    {
        // f = (x² − 1)² + y²: at x = 0.1 the Hessian's xx entry is 12x² − 4 < 0 (plain calculus), so the shift τ is
        // positive in the first iteration; the minima are (±1, 0) with f = 0.
        double[] x = { 0.1, 1 };
        var observer = new Recorder();
        MinimizeResult result = Minimize.Newton(new DoubleWell(), x, observer, new MinimizeSettings { GradientTolerance = 1e-12 });

        Assert.True(observer.Regularizations[0] > 0, "the first Hessian is indefinite: τ must be positive");
        Assert.Equal(0, observer.Regularizations[^1]);
        Assert.True(result.Converged, result.Reason.ToString());
        Check.Close(1, Math.Abs(x[0]), 1e-10, 0, "|x|");
        Check.Close(0, x[1], 0, 1e-10, "y");
    }

    [Theory]
    [MemberData(nameof(Methods))]
    public void AllocatesNothingWithAWorkspace(string method)
    {
        var workspace = new MinimizeWorkspace(2);
        var settings = new MinimizeSettings { MaxIterations = 200 };
        var x = new double[2];
        var observer = new CountingObserver();

        // Warm up (JIT, the method's lazily allocated buffers), then measure a second, identical call.
        x[0] = -1.2;
        x[1] = 1;
        Run(method, x, observer, settings, workspace);
        x[0] = -1.2;
        x[1] = 1;
        long before = GC.GetAllocatedBytesForCurrentThread();
        MinimizeResult result = Run(method, x, observer, settings, workspace);
        long allocated = GC.GetAllocatedBytesForCurrentThread() - before;

        Assert.True(result.Iterations > 10);
        Assert.Equal(0, allocated);
    }

    [Theory]
    [InlineData(false)]
    [InlineData(true)]
    public void LevenbergMarquardtAllocatesNothingWithAWorkspace(bool geodesicAcceleration)
    {
        var model = new Line(LineT, LineY);
        var workspace = new LeastSquaresWorkspace(LineT.Length, 2);
        var settings = new LeastSquaresSettings { GeodesicAcceleration = geodesicAcceleration };
        var x = new double[2];
        var se = new double[2];
        LeastSquares.LevenbergMarquardt(model, x, se, new CountingObserver(), settings, workspace);
        x[0] = 0;
        x[1] = 0;
        long before = GC.GetAllocatedBytesForCurrentThread();
        LeastSquaresResult result = LeastSquares.LevenbergMarquardt(model, x, se, new CountingObserver(), settings, workspace);
        long allocated = GC.GetAllocatedBytesForCurrentThread() - before;

        Assert.True(result.Converged);
        Assert.Equal(0, allocated);
    }

    // Invented data: a line with noise.
    private static readonly double[] LineT = { 0, 1, 2, 3, 4, 5, 6, 7 };
    private static readonly double[] LineY = { 1.1, 2.9, 5.2, 6.8, 9.1, 11.2, 12.8, 15.1 };

    [Fact]
    public void LevenbergMarquardtStandardErrorsMatchLinearLeastSquares()
    {
        // For a linear model y ≈ a + b t the least-squares estimate is (XᵀX)⁻¹Xᵀy and the standard errors are
        // √(s² [(XᵀX)⁻¹]ₖₖ) with s² = RSS / (m − 2) (common practice; any regression text), computed here with
        // MathNet.Numerics' dense algebra.
        var x = new double[2];
        var se = new double[2];
        var observer = new Recorder();
        LeastSquaresResult result = LeastSquares.LevenbergMarquardt(new Line(LineT, LineY), x, se, observer);

        Matrix<double> design = Matrix<double>.Build.Dense(LineT.Length, 2, (i, j) => j == 0 ? 1 : LineT[i]);
        Vector<double> y = Vector<double>.Build.Dense(LineY);
        Matrix<double> inverse = design.TransposeThisAndMultiply(design).Inverse();
        Vector<double> beta = inverse * design.TransposeThisAndMultiply(y);
        Vector<double> residual = y - (design * beta);
        double rss = residual * residual;
        double s2 = rss / (LineT.Length - 2);

        Assert.True(result.Converged, result.Reason.ToString());
        Check.Close(beta[0], x[0], 1e-12, 1e-14, "a");
        Check.Close(beta[1], x[1], 1e-12, 1e-14, "b");
        Check.Close(rss, result.ResidualSumOfSquares, 1e-12, 0, "RSS");
        Check.Close(s2, result.ResidualVariance, 1e-12, 0, "s²");
        Check.Close(Math.Sqrt(s2 * inverse[0, 0]), se[0], 1e-12, 0, "standard error of a");
        Check.Close(Math.Sqrt(s2 * inverse[1, 1]), se[1], 1e-12, 0, "standard error of b");
        Assert.Equal(LineT.Length - 2, result.DegreesOfFreedom);
        Assert.Equal(result.Evaluations, result.ResidualEvaluations + result.JacobianEvaluations);
        Assert.True(observer.Damping.TrueForAll(l => l > 0));
        for (int i = 1; i < observer.Values.Count; i++)
        {
            Assert.True(observer.Values[i] <= observer.Values[i - 1], "Σr² rose between accepted steps");
        }
    }

    [Fact]
    public void StandardErrorsAreNaNWhenTheParametersAreNotIdentifiable()
    {
        // y ≈ (a + b) t: only a + b is determined, JᵀJ is singular.
        var x = new double[] { 0.5, 0.5 };
        var se = new double[2];
        LeastSquaresResult result = LeastSquares.LevenbergMarquardt(new SumOnly(LineT, LineY), x, se);
        Assert.True(double.IsNaN(se[0]) && double.IsNaN(se[1]), $"got {se[0]}, {se[1]}");
        Assert.True(result.Converged, result.Reason.ToString());

        // m ≤ n: no degrees of freedom.
        var few = new double[] { 0, 0 };
        LeastSquaresResult exact = LeastSquares.LevenbergMarquardt(new Line(new double[] { 0, 1 }, new double[] { 1, 3 }), few, se);
        Assert.Equal(0, exact.DegreesOfFreedom);
        Assert.True(double.IsNaN(exact.ResidualVariance));
        Assert.True(double.IsNaN(se[0]) && double.IsNaN(se[1]));
        Check.Close(1, few[0], 1e-12, 1e-12, "exact fit a");
        Check.Close(2, few[1], 1e-12, 1e-12, "exact fit b");
    }

    [Fact]
    public void NewtonCgFollowsNegativeCurvatureToTheBoundary()
    {
        // f = (x² − 1)² + y² at (0.1, 0): ∇f = (4x(x² − 1), 2y) = (−0.396, 0) and Hₓₓ = 12x² − 4 < 0 (plain calculus), so
        // the first CG direction −∇f has negative curvature and Steihaug's step goes to the boundary of the first region
        // (radius 1), to x = 1.1, the end with the lower model value. The minima are (±1, 0) with f = 0.
        double[] x = { 0.1, 0 };
        var observer = new Recorder();
        MinimizeResult result = Minimize.NewtonCg(new DoubleWell(), x, observer, new MinimizeSettings { GradientTolerance = 1e-12 });

        Assert.True(result.Converged, result.Reason.ToString());
        Check.Close(1, Math.Abs(x[0]), 1e-10, 0, "|x|");
        Check.Close(0, x[1], 0, 1e-10, "y");
        Assert.Equal(1, observer.Regularizations[0]); // the first step was taken in the first region, radius 1
        Assert.True(result.HessianVectorEvaluations > 0 && result.HessianEvaluations == 0);
        for (int i = 1; i < observer.Values.Count; i++)
        {
            Assert.True(observer.Values[i] < observer.Values[i - 1], "f must fall at every accepted step");
        }
    }

    [Fact]
    public void NewtonCgCountsProductsAgainstTheEvaluationLimit()
    {
        double[] x = { -1.2, 1 };
        MinimizeResult r = Minimize.NewtonCg(new Rosenbrock(), x, new MinimizeSettings { MaxEvaluations = 9 });
        Assert.Equal(StopReason.EvaluationLimit, r.Reason);
        Assert.True(r.Evaluations <= 9, r.Evaluations.ToString());
        Assert.True(r.HessianVectorEvaluations > 0);
        Assert.Equal(r.Evaluations, r.ValueEvaluations + r.GradientEvaluations + r.HessianVectorEvaluations);
        Assert.Throws<ArgumentOutOfRangeException>(() => new MinimizeSettings { TrustRadius = 0 });
        Assert.Throws<ArgumentOutOfRangeException>(() => new MinimizeSettings { TrustRadius = double.PositiveInfinity });
    }

    [Fact]
    public void LimitsAreReported()
    {
        double[] x = { -1.2, 1 };
        MinimizeResult r = Minimize.Bfgs(new Rosenbrock(), x, new MinimizeSettings { MaxEvaluations = 7 });
        Assert.Equal(StopReason.EvaluationLimit, r.Reason);
        Assert.True(r.Evaluations <= 7, r.Evaluations.ToString());

        x = new[] { -1.2, 1 };
        r = Minimize.Newton(new Rosenbrock(), x, new MinimizeSettings { MaxIterations = 2 });
        Assert.Equal(StopReason.IterationLimit, r.Reason);
        Assert.Equal(2, r.Iterations);

        x = new[] { 10.0, 10 };
        r = Minimize.GradientDescentFixedStep(new Rosenbrock(), x, 0.1);
        Assert.Equal(StopReason.Diverged, r.Reason);
        Assert.True(r.Value <= Rosenbrock.F(10, 10));
    }

    [Fact]
    public void NonFiniteStartIsReportedAndThePointLeftAlone()
    {
        double[] x = { -1, 1 };
        MinimizeResult r = Minimize.Bfgs(new LogObjective(), x);
        Assert.Equal(StopReason.NotFinite, r.Reason);
        Assert.Equal(new[] { -1.0, 1 }, x);
    }

    [Fact]
    public void ArgumentsAreChecked()
    {
        Assert.Throws<ArgumentException>("workspace", () => Minimize.Bfgs(new Rosenbrock(), new double[2], workspace: new MinimizeWorkspace(3)));
        Assert.Throws<ArgumentException>("x", () => Minimize.Bfgs(new Rosenbrock(), Span<double>.Empty));
        Assert.Throws<ArgumentOutOfRangeException>("stepSize", () => Minimize.GradientDescentFixedStep(new Rosenbrock(), new double[2], 0));
        Assert.Throws<ArgumentException>(() => Minimize.Bfgs(new Rosenbrock(), new double[2], new MinimizeSettings { SufficientDecrease = 0.5, Curvature = 0.4 }));
        Assert.Throws<ArgumentOutOfRangeException>(() => new MinimizeSettings { GradientTolerance = -1 });
        Assert.Throws<ArgumentOutOfRangeException>(() => new MinimizeSettings { MaxIterations = 0 });
        Assert.Throws<ArgumentOutOfRangeException>(() => new LeastSquaresSettings { InitialDamping = 0 });
        Assert.Throws<ArgumentException>("standardErrors", () => LeastSquares.LevenbergMarquardt(new Line(LineT, LineY), new double[2], new double[1]));
        Assert.Throws<ArgumentException>("workspace", () => LeastSquares.LevenbergMarquardt(new Line(LineT, LineY), new double[2], workspace: new LeastSquaresWorkspace(3, 2)));
    }

    private static MinimizeResult Run<TObserver>(string method, double[] x, TObserver observer, MinimizeSettings settings, MinimizeWorkspace? workspace)
        where TObserver : IIterationObserver => method switch
        {
            "fixed" => Minimize.GradientDescentFixedStep(new Rosenbrock(), x, 1e-3, observer, settings, workspace),
            "armijo" => Minimize.GradientDescent(new Rosenbrock(), x, observer, settings, workspace),
            "newton" => Minimize.Newton(new Rosenbrock(), x, observer, settings, workspace),
            "bfgs" => Minimize.Bfgs(new Rosenbrock(), x, observer, settings, workspace),
            "lbfgs" => Minimize.LimitedMemoryBfgs(new Rosenbrock(), x, observer, settings, workspace),
            "newtoncg" => Minimize.NewtonCg(new Rosenbrock(), x, observer, settings, workspace),
            _ => throw new ArgumentOutOfRangeException(nameof(method)),
        };

    /// <summary>Rosenbrock's function (1 − x)² + 100 (y − x²)² with its gradient, Hessian and Hessian–vector product
    /// (plain calculus).</summary>
    private readonly struct Rosenbrock : IHessianObjective, IHessianVectorObjective
    {
        public static double F(double x, double y) => ((1 - x) * (1 - x)) + (100 * (y - (x * x)) * (y - (x * x)));

        public double Value(ReadOnlySpan<double> p) => F(p[0], p[1]);

        public double ValueAndGradient(ReadOnlySpan<double> p, Span<double> g)
        {
            double x = p[0], y = p[1];
            g[0] = (-2 * (1 - x)) - (400 * x * (y - (x * x)));
            g[1] = 200 * (y - (x * x));
            return F(x, y);
        }

        public double ValueGradientHessian(ReadOnlySpan<double> p, Span<double> g, Span<double> h)
        {
            double x = p[0], y = p[1];
            h[0] = 2 - (400 * (y - (3 * x * x)));
            h[1] = h[2] = -400 * x;
            h[3] = 200;
            return ValueAndGradient(p, g);
        }

        public double ValueGradientHessianVector(ReadOnlySpan<double> p, ReadOnlySpan<double> v, Span<double> g, Span<double> hv)
        {
            double x = p[0], y = p[1];
            hv[0] = ((2 - (400 * (y - (3 * x * x)))) * v[0]) - (400 * x * v[1]);
            hv[1] = (-400 * x * v[0]) + (200 * v[1]);
            return ValueAndGradient(p, g);
        }
    }

    /// <summary>(x² − 1)² + y² (plain calculus for the derivatives).</summary>
    private readonly struct DoubleWell : IHessianObjective, IHessianVectorObjective
    {
        public double Value(ReadOnlySpan<double> p) => ((p[0] * p[0]) - 1) * ((p[0] * p[0]) - 1) + (p[1] * p[1]);

        public double ValueAndGradient(ReadOnlySpan<double> p, Span<double> g)
        {
            g[0] = 4 * p[0] * ((p[0] * p[0]) - 1);
            g[1] = 2 * p[1];
            return Value(p);
        }

        public double ValueGradientHessian(ReadOnlySpan<double> p, Span<double> g, Span<double> h)
        {
            h[0] = (12 * p[0] * p[0]) - 4;
            h[1] = h[2] = 0;
            h[3] = 2;
            return ValueAndGradient(p, g);
        }

        public double ValueGradientHessianVector(ReadOnlySpan<double> p, ReadOnlySpan<double> v, Span<double> g, Span<double> hv)
        {
            hv[0] = ((12 * p[0] * p[0]) - 4) * v[0];
            hv[1] = 2 * v[1];
            return ValueAndGradient(p, g);
        }
    }

    /// <summary>log(x) + y²: NaN for x &lt; 0.</summary>
    private readonly struct LogObjective : IGradientObjective
    {
        public double Value(ReadOnlySpan<double> p) => Math.Log(p[0]) + (p[1] * p[1]);

        public double ValueAndGradient(ReadOnlySpan<double> p, Span<double> g)
        {
            g[0] = 1 / p[0];
            g[1] = 2 * p[1];
            return Value(p);
        }
    }

    /// <summary>rᵢ = yᵢ − (a + b tᵢ).</summary>
    private readonly struct Line : IResidualModel
    {
        private readonly double[] _t, _y;

        public Line(double[] t, double[] y)
        {
            _t = t;
            _y = y;
        }

        public int ResidualCount => _t.Length;

        public void Residuals(ReadOnlySpan<double> b, Span<double> r)
        {
            for (int i = 0; i < _t.Length; i++)
            {
                r[i] = _y[i] - (b[0] + (b[1] * _t[i]));
            }
        }

        public void ResidualsAndJacobian(ReadOnlySpan<double> b, Span<double> r, Span<double> j)
        {
            Residuals(b, r);
            for (int i = 0; i < _t.Length; i++)
            {
                j[2 * i] = -1;
                j[(2 * i) + 1] = -_t[i];
            }
        }
    }

    /// <summary>rᵢ = yᵢ − (a + b) tᵢ: the two columns of J are equal.</summary>
    private readonly struct SumOnly : IResidualModel
    {
        private readonly double[] _t, _y;

        public SumOnly(double[] t, double[] y)
        {
            _t = t;
            _y = y;
        }

        public int ResidualCount => _t.Length;

        public void Residuals(ReadOnlySpan<double> b, Span<double> r)
        {
            for (int i = 0; i < _t.Length; i++)
            {
                r[i] = _y[i] - ((b[0] + b[1]) * _t[i]);
            }
        }

        public void ResidualsAndJacobian(ReadOnlySpan<double> b, Span<double> r, Span<double> j)
        {
            Residuals(b, r);
            for (int i = 0; i < _t.Length; i++)
            {
                j[2 * i] = j[(2 * i) + 1] = -_t[i];
            }
        }
    }

    /// <summary>Records what it is shown (a class, so the state survives the by-value passing).</summary>
    private sealed class Recorder : IIterationObserver
    {
        public int StopAfter { get; init; } = int.MaxValue;

        public List<int> Iterations { get; } = new();

        public List<double> Values { get; } = new();

        public List<double> Regularizations { get; } = new();

        public List<double> Damping => Regularizations;

        public double[] LastPoint { get; private set; } = Array.Empty<double>();

        public bool OnIteration(in IterationReport report)
        {
            Iterations.Add(report.Iteration);
            Values.Add(report.Value);
            Regularizations.Add(report.Regularization);
            LastPoint = report.Point.ToArray();
            Assert.Equal(report.Point.Length, report.Gradient.Length);
            return report.Iteration < StopAfter;
        }
    }

    /// <summary>An allocation-free observer struct.</summary>
    private struct CountingObserver : IIterationObserver
    {
        public bool OnIteration(in IterationReport report) => report.Value >= 0;
    }
}
