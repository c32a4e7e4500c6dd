using System.Collections.Generic;
using static DerivGen.Tests.PractitionerCorpus.Idiom;

namespace DerivGen.Tests.PractitionerCorpus;

internal static partial class CorpusCases
{
    private static IEnumerable<CorpusCase> Control()
    {
        yield return Case(
            "QuadraticHorizonLocalArray", Field.Control, new[] { LocalArrayOrSpan, IndexOrRange },
            "A quadratic-cost horizon for a double integrator: the state is a local array updated in place; u[^1] and u[^2] smooth the last move.",
            """
            // Invented cart, weights and horizon (made up for this corpus).
            public static partial class Horizon
            {
                private const double Dt = 0.1, Q = 1.0, R = 0.01, TerminalWeight = 10.0;

                [Differentiate(nameof(u))]
                public static double Cost(ReadOnlySpan<double> u)
                {
                    double[] x = { 1.0, 0.0 };
                    double cost = 0;
                    for (int k = 0; k < u.Length; k++)
                    {
                        cost += Q * (x[0] * x[0] + x[1] * x[1]) + R * u[k] * u[k];
                        double p = x[0] + Dt * x[1];
                        double v = x[1] + Dt * u[k];
                        x[0] = p;
                        x[1] = v;
                    }

                    cost += TerminalWeight * (x[0] * x[0] + x[1] * x[1]);
                    cost += R * (u[^1] - u[^2]) * (u[^1] - u[^2]);
                    return cost;
                }
            }
            """,
            "Horizon.Cost{M}(x{E})",
            new[] { -1.0, -0.8, -0.6, -0.4, -0.2, 0.0, 0.1, 0.2, 0.2, 0.1 },
            Numeric);

        yield return Case(
            "PlantStructInstanceHelper", Field.Control, new[] { UserStruct, UnmarkedHelper },
            "A three-step tracking cost whose plant is a readonly struct with an instance method Next(y, u).",
            """
            public readonly struct FirstOrderPlant
            {
                public FirstOrderPlant(double pole, double gain)
                {
                    Pole = pole;
                    Gain = gain;
                }

                public double Pole { get; }

                public double Gain { get; }

                public double Next(double y, double u) => Pole * y + Gain * u;
            }

            // Invented thermal plant and set point (made up for this corpus).
            public static partial class Thermostat
            {
                private static readonly FirstOrderPlant Plant = new(0.9, 0.05);
                private const double SetPoint = 21.0;

                [Differentiate(nameof(u0), nameof(u1), nameof(u2))]
                public static double TrackingCost(double u0, double u1, double u2, double y0)
                {
                    double y1 = Plant.Next(y0, u0);
                    double y2 = Plant.Next(y1, u1);
                    double y3 = Plant.Next(y2, u2);
                    return (y1 - SetPoint) * (y1 - SetPoint) + (y2 - SetPoint) * (y2 - SetPoint) + (y3 - SetPoint) * (y3 - SetPoint)
                        + 1e-3 * (u0 * u0 + u1 * u1 + u2 * u2);
                }
            }
            """,
            "Thermostat.TrackingCost{M}(x[0], x[1], x[2], 18.0{E})",
            new[] { 40.0, 45.0, 50.0 },
            Hand("plain calculus: y_k+1 = a·y_k + b·u_k, so ∂y_j/∂u_k = a^(j−k−1)·b", """
                const double a = 0.9, b = 0.05, sp = 21.0;
                double y1 = a * 18.0 + b * x[0], y2 = a * y1 + b * x[1], y3 = a * y2 + b * x[2];
                double e1 = 2 * (y1 - sp), e2 = 2 * (y2 - sp), e3 = 2 * (y3 - sp);
                g[0] = e1 * b + e2 * a * b + e3 * a * a * b + 2e-3 * x[0];
                g[1] = e2 * b + e3 * a * b + 2e-3 * x[1];
                g[2] = e3 * b + 2e-3 * x[2];
                """));

        yield return Case(
            "PiTuningStaticLocalFunction", Field.Control, new[] { LocalFunction },
            "PI gains tuned on the integral of squared error; the plant is a static block-bodied local function.",
            """
            // Invented first-order lag and step set point (made up for this corpus).
            public static partial class PiTuning
            {
                [Differentiate(nameof(kp), nameof(ki))]
                public static double Ise(double kp, double ki)
                {
                    static double Lag(double y, double u, double dt)
                    {
                        const double tau = 0.8;
                        return y + dt * (u - y) / tau;
                    }

                    const double dt = 0.02;
                    double y = 0, integral = 0, ise = 0;
                    for (int k = 0; k < 250; k++)
                    {
                        double e = 1.0 - y;
                        integral += e * dt;
                        double u = kp * e + ki * integral;
                        y = Lag(y, u, dt);
                        ise += e * e * dt;
                    }

                    return ise;
                }
            }
            """,
            "PiTuning.Ise{M}(x[0], x[1]{E})",
            new[] { 1.2, 0.8 },
            Numeric);

        yield return Case(
            "ValveSaturationPatterns", Field.Control, new[] { PatternSwitch, Enum },
            "A valve command limited by an enum-selected limiter; the hard limit is a nested switch with relational patterns.",
            """
            public enum Limiter { None, Soft, Hard }

            // Invented valve demand profile (made up for this corpus).
            public static partial class Valve
            {
                public static readonly double[] Demand = { 0.1, 0.35, 0.6, 0.8, 0.95 };
                private const double Max = 1.0;

                [Differentiate(nameof(gain), nameof(offset))]
                public static double Fit(double gain, double offset, Limiter limiter)
                {
                    double total = 0;
                    for (int i = 0; i < Demand.Length; i++)
                    {
                        double u = gain * i * 0.25 + offset;
                        double limited = limiter switch
                        {
                            Limiter.Soft => Max * Math.Tanh(u / Max),
                            Limiter.Hard => u switch
                            {
                                > Max => Max,
                                < -Max => -Max,
                                _ => u,
                            },
                            _ => u,
                        };
                        double r = limited - Demand[i];
                        total += r * r;
                    }

                    return total;
                }
            }
            """,
            "Valve.Fit{M}(x[0], x[1], Limiter.Hard{E})",
            new[] { 0.8, 0.1 },
            Hand("plain calculus inside the limits: ∂/∂gain = Σ 2r·0.25·i, ∂/∂offset = Σ 2r", """
                g[0] = 0; g[1] = 0;
                for (int i = 0; i < Valve.Demand.Length; i++)
                {
                    double r = x[0] * i * 0.25 + x[1] - Valve.Demand[i];
                    g[0] += 2 * r * i * 0.25;
                    g[1] += 2 * r;
                }
                """));
    }

    private static IEnumerable<CorpusCase> Statistics()
    {
        yield return Case(
            "NormalLikelihoodLinqGuard", Field.Statistics, new[] { Linq, ThrowGuard },
            "A quality engineer's normal negative log-likelihood: ThrowIfNegativeOrZero(sigma), then Sample.Sum(x => …).",
            """
            // Invented sample of bolt diameters in mm (made up for this corpus).
            public static partial class BoltDiameters
            {
                public static readonly double[] Sample = { 9.98, 10.02, 10.01, 9.97, 10.04, 10.00, 9.99 };

                [Differentiate(nameof(mu), nameof(sigma))]
                public static double NegLogLikelihood(double mu, double sigma)
                {
                    ArgumentOutOfRangeException.ThrowIfNegativeOrZero(sigma);
                    return Sample.Sum(x => Math.Log(sigma) + 0.5 * Math.Log(2 * Math.PI) + (x - mu) * (x - mu) / (2 * sigma * sigma));
                }
            }
            """,
            "BoltDiameters.NegLogLikelihood{M}(x[0], x[1]{E})",
            new[] { 10.0, 0.03 },
            Hand("the normal log-likelihood's score (textbook): ∂/∂μ = −Σ(x − μ)/σ², ∂/∂σ = n/σ − Σ(x − μ)²/σ³", """
                double s = x[1];
                g[0] = 0; g[1] = 0;
                foreach (double v in BoltDiameters.Sample)
                {
                    g[0] -= (v - x[0]) / (s * s);
                    g[1] += 1 / s - (v - x[0]) * (v - x[0]) / (s * s * s);
                }
                """));

        yield return Case(
            "PoissonRegressionInstanceHelper", Field.Statistics, new[] { UnmarkedHelper },
            "A Poisson regression on a model class: the rate is a private instance helper reading instance data.",
            """
            // Invented defects per shift against line speed (made up for this corpus).
            public sealed partial class DefectModel
            {
                private readonly double[] _speed = { 0.5, 0.8, 1.0, 1.2, 1.5, 1.8 };
                private readonly double[] _count = { 1, 2, 2, 4, 5, 9 };

                private double Rate(double b0, double b1, double speed) => Math.Exp(b0 + b1 * speed);

                [Differentiate(nameof(b0), nameof(b1))]
                public double NegLogLikelihood(double b0, double b1)
                {
                    double nll = 0;
                    for (int i = 0; i < _speed.Length; i++)
                    {
                        double mu = Rate(b0, b1, _speed[i]);
                        nll += mu - _count[i] * Math.Log(mu);
                    }

                    return nll;
                }
            }
            """,
            "new DefectModel().NegLogLikelihood{M}(x[0], x[1]{E})",
            new[] { 0.1, 1.0 },
            Hand("the Poisson GLM score with log link (McCullagh & Nelder, Generalized Linear Models): Σ(μ − y)·(1, x)", """
                double[] speed = { 0.5, 0.8, 1.0, 1.2, 1.5, 1.8 }, count = { 1, 2, 2, 4, 5, 9 };
                g[0] = 0; g[1] = 0;
                for (int i = 0; i < speed.Length; i++)
                {
                    double d = Math.Exp(x[0] + x[1] * speed[i]) - count[i];
                    g[0] += d;
                    g[1] += d * speed[i];
                }
                """));

        yield return Case(
            "WeibullGenericMathHelper", Field.Statistics, new[] { GenericMath, UnmarkedHelper },
            "A reliability engineer's Weibull likelihood; the log-density is a generic-math helper (T.Log, T.Pow, T.One).",
            """
            // Invented bearing lifetimes in thousands of hours (made up for this corpus).
            public static partial class BearingLife
            {
                public static readonly double[] Hours = { 1.2, 2.5, 3.1, 3.8, 4.4, 5.9, 7.3 };

                static T LogPdf<T>(T x, T shape, T scale) where T : IFloatingPointIeee754<T>
                {
                    T z = x / scale;
                    return T.Log(shape / scale) + (shape - T.One) * T.Log(z) - T.Pow(z, shape);
                }

                [Differentiate(nameof(shape), nameof(scale))]
                public static double NegLogLikelihood(double shape, double scale)
                {
                    double nll = 0;
                    foreach (double h in Hours)
                    {
                        nll -= LogPdf(h, shape, scale);
                    }

                    return nll;
                }
            }
            """,
            "BearingLife.NegLogLikelihood{M}(x[0], x[1]{E})",
            new[] { 1.8, 4.5 },
            Numeric);

        yield return Case(
            "MixtureSkipsMissingIsNaN", Field.Statistics, new[] { FinitePredicate },
            "A two-component mixture likelihood that skips missing values with 'if (double.IsNaN(t)) continue;'.",
            """
            // Invented reaction times in seconds, missing entries stored as NaN (made up for this corpus).
            public static partial class ReactionTimes
            {
                public static readonly double[] Seconds = { 0.41, double.NaN, 0.38, 0.55, 0.47, double.NaN, 0.92, 0.44, 1.05 };

                [Differentiate(nameof(mixLogit), nameof(fastMean), nameof(slowMean))]
                public static double NegLogLikelihood(double mixLogit, double fastMean, double slowMean)
                {
                    const double sd = 0.08;
                    double w = 1 / (1 + Math.Exp(-mixLogit));
                    double nll = 0;
                    foreach (double t in Seconds)
                    {
                        if (double.IsNaN(t)) continue;
                        double fast = Math.Exp(-0.5 * (t - fastMean) * (t - fastMean) / (sd * sd));
                        double slow = Math.Exp(-0.5 * (t - slowMean) * (t - slowMean) / (sd * sd));
                        nll -= Math.Log(w * fast + (1 - w) * slow);
                    }

                    return nll;
                }
            }
            """,
            "ReactionTimes.NegLogLikelihood{M}(x[0], x[1], x[2]{E})",
            new[] { 0.8, 0.45, 0.95 },
            Numeric);

        yield return Case(
            "Ar1RangesZip", Field.Statistics, new[] { IndexOrRange, Linq },
            "An AR(1) conditional sum of squares written as ys[1..].Zip(ys[..^1], …).Sum().",
            """
            // Invented daily demand series (made up for this corpus).
            public static partial class DemandSeries
            {
                public static readonly double[] Demand = { 10.2, 10.9, 11.3, 10.8, 11.9, 12.4, 12.1, 12.8 };

                [Differentiate(nameof(phi), nameof(mean))]
                public static double ConditionalSse(double phi, double mean)
                {
                    double[] ys = Demand;
                    return ys[1..].Zip(ys[..^1], (y, previous) => (y - mean - phi * (previous - mean)) * (y - mean - phi * (previous - mean))).Sum();
                }
            }
            """,
            "DemandSeries.ConditionalSse{M}(x[0], x[1]{E})",
            new[] { 0.6, 11.0 },
            Hand("plain calculus: r = y_t − m − φ(y_t−1 − m); ∂r/∂φ = −(y_t−1 − m), ∂r/∂m = φ − 1", """
                double[] ys = DemandSeries.Demand;
                g[0] = 0; g[1] = 0;
                for (int t = 1; t < ys.Length; t++)
                {
                    double r = ys[t] - x[1] - x[0] * (ys[t - 1] - x[1]);
                    g[0] += 2 * r * -(ys[t - 1] - x[1]);
                    g[1] += 2 * r * (x[0] - 1);
                }
                """));
    }

    private static IEnumerable<CorpusCase> Finance()
    {
        yield return Case(
            "MeanVarianceQuadraticForm", Field.Finance, new[] { UnmarkedHelper },
            "A mean-variance portfolio objective; wᵀΣw is a helper taking the covariance as double[,] and the weights as a span.",
            """
            // Invented expected returns and covariance of three funds (made up for this corpus).
            public static partial class Portfolio
            {
                public static readonly double[] Mu = { 0.06, 0.04, 0.09 };
                public static readonly double[,] Sigma = { { 0.040, 0.006, 0.010 }, { 0.006, 0.010, 0.002 }, { 0.010, 0.002, 0.090 } };

                static double QuadraticForm(double[,] m, ReadOnlySpan<double> w)
                {
                    double s = 0;
                    for (int i = 0; i < w.Length; i++)
                    {
                        for (int j = 0; j < w.Length; j++)
                        {
                            s += w[i] * m[i, j] * w[j];
                        }
                    }

                    return s;
                }

                [Differentiate(nameof(weights))]
                public static double Objective(double[] weights, double riskAversion)
                {
                    double expected = 0;
                    for (int i = 0; i < weights.Length; i++)
                    {
                        expected += Mu[i] * weights[i];
                    }

                    double budget = weights[0] + weights[1] + weights[2] - 1;
                    return 0.5 * riskAversion * QuadraticForm(Sigma, weights) - expected + 10 * budget * budget;
                }
            }
            """,
            "Portfolio.Objective{M}(x, 3.0{E})",
            new[] { 0.3, 0.5, 0.2 },
            Hand("mean-variance gradient λΣw − μ (Markowitz, Portfolio Selection, 1952; Σ symmetric) plus 20·(Σw_i − 1)", """
                double budget = x[0] + x[1] + x[2] - 1;
                for (int i = 0; i < 3; i++)
                {
                    double sw = 0;
                    for (int j = 0; j < 3; j++) sw += Portfolio.Sigma[i, j] * x[j];
                    g[i] = 3.0 * sw - Portfolio.Mu[i] + 20 * budget;
                }
                """));

        yield return Case(
            "KellyFractionSelectAverage", Field.Finance, new[] { Linq },
            "The Kelly growth rate of a leverage fraction as −Returns.Select(r => ln(1 + f·r)).Average().",
            """
            // Invented monthly excess returns of a strategy (made up for this corpus).
            public static partial class Kelly
            {
                public static readonly double[] Returns = { 0.04, -0.02, 0.03, 0.05, -0.04, 0.01, 0.02, -0.01 };

                [Differentiate(nameof(fraction))]
                public static double NegativeGrowth(double fraction) =>
                    -Returns.Select(r => Math.Log(1 + fraction * r)).Average();
            }
            """,
            "Kelly.NegativeGrowth{M}(x[0]{E})",
            new[] { 2.0 },
            Hand("plain calculus: d/df −mean ln(1 + f·r) = −mean r/(1 + f·r)", """
                g[0] = 0;
                foreach (double r in Kelly.Returns) g[0] -= r / (1 + x[0] * r) / Kelly.Returns.Length;
                """));

        yield return Case(
            "BachelierQuotesRecordStruct", Field.Finance, new[] { UserStruct },
            "A normal-model volatility calibrated to quotes held in a readonly record struct array, read with foreach.",
            """
            public readonly record struct Quote(double Strike, double Expiry, double Price);

            // Invented call quotes on a future, normal (Bachelier) model (made up for this corpus).
            public static partial class NormalVol
            {
                public const double Forward = 100.0;
                public static readonly Quote[] Quotes = { new(95, 0.5, 5.9), new(100, 0.5, 2.3), new(105, 0.5, 0.7), new(100, 1.0, 3.3) };

                [Differentiate(nameof(vol))]
                public static double Loss(double vol)
                {
                    double loss = 0;
                    foreach (Quote q in Quotes)
                    {
                        double s = vol * Math.Sqrt(q.Expiry);
                        double d = (Forward - q.Strike) / s;
                        double pdf = Math.Exp(-0.5 * d * d) / Math.Sqrt(2 * Math.PI);
                        double cdf = 0.5 * (1 + Math.Tanh(0.7978845608 * (d + 0.044715 * d * d * d)));   // tanh approximation of the normal CDF
                        double price = (Forward - q.Strike) * cdf + s * pdf;
                        loss += (price - q.Price) * (price - q.Price);
                    }

                    return loss;
                }
            }
            """,
            "NormalVol.Loss{M}(x[0]{E})",
            new[] { 4.5 },
            Numeric);

        yield return Case(
            "TrackingErrorThrowHelpers", Field.Finance, new[] { ThrowGuard, Linq },
            "Active risk against a benchmark, guarded by ThrowIfNull and a length check that throws, computed with chained Zip.",
            """
            // Invented benchmark sector weights (made up for this corpus).
            public static partial class Tracking
            {
                public static readonly double[] Benchmark = { 0.25, 0.30, 0.15, 0.30 };

                [Differentiate(nameof(w))]
                public static double ActiveRisk(double[] w, double[] volatility)
                {
                    ArgumentNullException.ThrowIfNull(w);
                    ArgumentNullException.ThrowIfNull(volatility);
                    if (w.Length != Benchmark.Length)
                    {
                        throw new ArgumentException("one weight per sector", nameof(w));
                    }

                    return w.Zip(Benchmark, (a, b) => a - b).Zip(volatility, (d, v) => d * d * v * v).Sum();
                }
            }
            """,
            "Tracking.ActiveRisk{M}(x, new[] { 0.2, 0.15, 0.3, 0.25 }{E})",
            new[] { 0.3, 0.2, 0.2, 0.3 },
            Hand("plain calculus: ∂/∂w_i = 2(w_i − b_i)·v_i²", """
                double[] v = { 0.2, 0.15, 0.3, 0.25 };
                for (int i = 0; i < 4; i++) g[i] = 2 * (x[i] - Tracking.Benchmark[i]) * v[i] * v[i];
                """));
    }
}
