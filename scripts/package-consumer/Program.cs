// The package-consumer check's driver (see scripts/check-package.sh). Exits 0 only if every check passes.
//
// For each function and each point:
//   - the value returned by the generated methods is bit-for-bit the value of the original method;
//   - the gradient matches the hand-derived closed form to 1e-12 relative (1e-5 for float), where the derivative is
//     well conditioned at the chosen points, and a central-difference estimate of the original to 1e-7;
//   - the Hessian is exactly symmetric and matches the closed form to 1e-12 relative where one is written, and a
//     central difference of the gradient to 1e-6 otherwise;
//   - a span that is too short throws ArgumentException naming it, and nothing is written.
// Tolerances: double rounding leaves a few ulps (~1e-15 relative) between two correct evaluation orders, so 1e-12
// has ample margin yet catches any wrong term; a central difference with step h ~ 1e-5 has truncation error ~h^2 and
// rounding error ~1e-16/h, both far below 1e-7 for the O(1) derivatives at these points (common practice).
using System;
using System.Globalization;
using Consumer;

int failures = 0;
int checks = 0;

void Fail(string what)
{
    failures++;
    Console.WriteLine("  MISMATCH " + what);
}

string F(double v) => v.ToString("R", CultureInfo.InvariantCulture);

void Close(string what, double actual, double expected, double rel)
{
    checks++;
    double scale = Math.Max(Math.Abs(expected), 1e-3);
    if (!(Math.Abs(actual - expected) <= rel * scale))
    {
        Fail($"{what}: got {F(actual)}, expected {F(expected)} (tolerance {rel} x {F(scale)})");
    }
}

void SameBits(string what, double actual, double expected)
{
    checks++;
    if (BitConverter.DoubleToInt64Bits(actual) != BitConverter.DoubleToInt64Bits(expected))
    {
        Fail($"{what}: value {F(actual)} is not bit-identical to the original {F(expected)}");
    }
}

void Symmetric(string what, double[] h, int n)
{
    for (int i = 0; i < n; i++)
    {
        for (int j = 0; j < i; j++)
        {
            checks++;
            if (BitConverter.DoubleToInt64Bits(h[i * n + j]) != BitConverter.DoubleToInt64Bits(h[j * n + i]))
            {
                Fail($"{what}: Hessian[{i},{j}] = {F(h[i * n + j])} but Hessian[{j},{i}] = {F(h[j * n + i])}");
            }
        }
    }
}

// Central difference of f along coordinate i (f takes the variable vector).
double Diff(Func<double[], double> f, double[] at, int i)
{
    double step = 1e-5 * Math.Max(1, Math.Abs(at[i]));
    double[] plus = (double[])at.Clone(), minus = (double[])at.Clone();
    plus[i] += step;
    minus[i] -= step;
    return (f(plus) - f(minus)) / (plus[i] - minus[i]);
}

// Checks one double function with n variables at one point.
void Check(string name, double[] at, Func<double[], double> original,
    Func<double[], double[], double> gradientMethod, Func<double[], double[], double[], double>? hessianMethod,
    Action<double[], double[]> exactGradient, Action<double[], double[]>? exactHessian)
{
    int n = at.Length;
    string where = $"{name}({string.Join(", ", Array.ConvertAll(at, F))})";
    double value = original(at);

    var g = new double[n];
    SameBits(where + " value from Gradient", gradientMethod(at, g), value);
    var gExact = new double[n];
    exactGradient(at, gExact);
    for (int i = 0; i < n; i++)
    {
        Close($"{where} gradient[{i}] vs closed form", g[i], gExact[i], 1e-12);
        Close($"{where} gradient[{i}] vs central difference", g[i], Diff(original, at, i), 1e-7);
    }

    if (hessianMethod is null)
    {
        return;
    }

    var g2 = new double[n];
    var h = new double[n * n];
    SameBits(where + " value from Hessian", hessianMethod(at, g2, h), value);
    for (int i = 0; i < n; i++)
    {
        Close($"{where} gradient[{i}] from Hessian method", g2[i], gExact[i], 1e-12);
    }

    Symmetric(where, h, n);
    var hExact = new double[n * n];
    exactHessian?.Invoke(at, hExact);
    for (int i = 0; i < n; i++)
    {
        for (int j = 0; j < n; j++)
        {
            if (exactHessian is not null)
            {
                Close($"{where} Hessian[{i},{j}] vs closed form", h[i * n + j], hExact[i * n + j], 1e-12);
            }

            int row = i;
            double fd = Diff(p => { var gp = new double[n]; gradientMethod(p, gp); return gp[row]; }, at, j);
            Close($"{where} Hessian[{i},{j}] vs central difference of the gradient", h[i * n + j], fd, 1e-6);
        }
    }
}

void Throws(string what, string paramName, Action action)
{
    checks++;
    try
    {
        action();
        Fail($"{what}: no exception");
    }
    catch (ArgumentException e) when (e.ParamName == paramName)
    {
    }
    catch (Exception e)
    {
        Fail($"{what}: {e.GetType().Name} with ParamName '{(e as ArgumentException)?.ParamName}'");
    }
}

Console.WriteLine("Checking functions compiled against the DerivGen package...");

foreach (var p in new[] { new[] { 1.3, 0.4 }, new[] { -0.7, -1.1 }, new[] { 2.5, 0.05 } })
{
    Check("Bump", p, v => Smooth.Bump(v[0], v[1]),
        (v, g) => Smooth.BumpGradient(v[0], v[1], g), (v, g, h) => Smooth.BumpHessian(v[0], v[1], g, h),
        (v, g) => Smooth.BumpExact(v[0], v[1], g, new double[4]), (v, h) => Smooth.BumpExact(v[0], v[1], new double[2], h));
    Check("LogCos", p, v => Smooth.LogCos(v[0], v[1]),
        (v, g) => Smooth.LogCosGradient(v[0], v[1], g), (v, g, h) => Smooth.LogCosHessian(v[0], v[1], g, h),
        (v, g) => Smooth.LogCosExact(v[0], v[1], g, new double[4]), (v, h) => Smooth.LogCosExact(v[0], v[1], new double[2], h));
    Check("Blend", p, v => Smooth.Blend(v[0], v[1], 0.75),
        (v, g) => Smooth.BlendGradient(v[0], v[1], 0.75, g), (v, g, h) => Smooth.BlendHessian(v[0], v[1], 0.75, g, h),
        (v, g) => Smooth.BlendExactGradient(v[0], v[1], 0.75, g), null);
    Check("Trig", new[] { p[0] * 0.5, p[1] * 0.6 }, v => Smooth.Trig(v[0], v[1]),
        (v, g) => Smooth.TrigGradient(v[0], v[1], g), (v, g, h) => Smooth.TrigHessian(v[0], v[1], g, h),
        (v, g) => Smooth.TrigExactGradient(v[0], v[1], g), null);
    double[] positive = { Math.Abs(p[0]), Math.Abs(p[1]) + 0.5 };
    Check("PowerAngle", positive, v => Smooth.PowerAngle(v[0], v[1]),
        (v, g) => Smooth.PowerAngleGradient(v[0], v[1], g), (v, g, h) => Smooth.PowerAngleHessian(v[0], v[1], g, h),
        (v, g) => Smooth.PowerAngleExactGradient(v[0], v[1], g), null);
    Check("Logs", positive, v => Smooth.Logs(v[0], v[1]),
        (v, g) => Smooth.LogsGradient(v[0], v[1], g), null,
        (v, g) => Smooth.LogsExactGradient(v[0], v[1], g), null);
    var spring = new Outer.Spring();
    Check("Spring.Energy", positive, v => spring.Energy(v[0], v[1], 3),
        (v, g) => spring.EnergyGradient(v[0], v[1], 3, g), (v, g, h) => spring.EnergyHessian(v[0], v[1], 3, g, h),
        (v, g) => Outer.Spring.EnergyExact(v[0], v[1], 3, g, new double[4]),
        (v, h) => Outer.Spring.EnergyExact(v[0], v[1], 3, new double[2], h));
}

// Data loops, a branch, a call between [Differentiate] methods and a recurrence (Loops.cs).
foreach (var p in new[] { new[] { 0.8, 1.3 }, new[] { 1.4, 0.6 } })
{
    Check("Fits.Line", p, v => Fits.Line(v[0], v[1], Fits.T, Fits.Y),
        (v, g) => Fits.LineGradient(v[0], v[1], Fits.T, Fits.Y, g), (v, g, h) => Fits.LineHessian(v[0], v[1], Fits.T, Fits.Y, g, h),
        (v, g) => Fits.LineExact(v[0], v[1], g, new double[4]), (v, h) => Fits.LineExact(v[0], v[1], new double[2], h));
    Check("Fits.Robust", p, v => Fits.Robust(v[0], v[1], Fits.T, Fits.Y),
        (v, g) => Fits.RobustGradient(v[0], v[1], Fits.T, Fits.Y, g), (v, g, h) => Fits.RobustHessian(v[0], v[1], Fits.T, Fits.Y, g, h),
        (v, g) => Fits.RobustExact(v[0], v[1], g), null);
    Check("Fits.GrowthFit", new[] { p[0], p[1] * 0.3 }, v => Fits.GrowthFit(v[0], v[1], Fits.T, Fits.Y),
        (v, g) => Fits.GrowthFitGradient(v[0], v[1], Fits.T, Fits.Y, g), (v, g, h) => Fits.GrowthFitHessian(v[0], v[1], Fits.T, Fits.Y, g, h),
        (v, g) => Fits.GrowthFitExact(v[0], v[1], g), null);
    Check("Fits.Decay", new[] { p[0] + 1, p[1] * 0.5 }, v => Fits.Decay(v[0], v[1], 0.05, 200),
        (v, g) => Fits.DecayGradient(v[0], v[1], 0.05, 200, g), (v, g, h) => Fits.DecayHessian(v[0], v[1], 0.05, 200, g, h),
        (v, g) => Fits.DecayExact(v[0], v[1], 0.05, 200, g), null);
}

// A vector variable: the polynomial's coefficients (gradient, and the Hessian assembled pair by pair).
foreach (var p in new[] { new[] { 1.0, 0.5, 0.1 }, new[] { 0.8, 1.1, -0.05 } })
{
    Check("Fits.Poly", p, v => Fits.Poly(v, Fits.T, Fits.Y),
        (v, g) => Fits.PolyGradient(v, Fits.T, Fits.Y, g), (v, g, h) => Fits.PolyHessian(v, Fits.T, Fits.Y, g, h),
        (v, g) => Fits.PolyExact(v, g), (v, h) => Fits.PolyHessianExact(v, h));
}

// break and continue on data, through an unmarked helper.
foreach (double stopAt in new[] { 2.0, 10.0 })
{
    var p = new[] { 0.9, 1.2 };
    Check($"Fits.Trimmed(stopAt {F(stopAt)})", p, v => Fits.Trimmed(v[0], v[1], Fits.T, Fits.Y, stopAt),
        (v, g) => Fits.TrimmedGradient(v[0], v[1], Fits.T, Fits.Y, stopAt, g), (v, g, h) => Fits.TrimmedHessian(v[0], v[1], Fits.T, Fits.Y, stopAt, g, h),
        (v, g) => Fits.TrimmedExact(v[0], v[1], stopAt, g, new double[4]), (v, h) => Fits.TrimmedExact(v[0], v[1], stopAt, new double[2], h));
}

foreach (var p in new[] { new[] { 0.3, -1.2, 2.0 }, new[] { -4.0, 0.5, 0.25 } })
{
    Check("Radius", p, v => Smooth.Radius(v[0], v[1], v[2]),
        (v, g) => Smooth.RadiusGradient(v[0], v[1], v[2], g), (v, g, h) => Smooth.RadiusHessian(v[0], v[1], v[2], g, h),
        (v, g) => Smooth.RadiusExact(v[0], v[1], v[2], g, new double[9]), (v, h) => Smooth.RadiusExact(v[0], v[1], v[2], new double[3], h));
}

// float: the value bit-for-bit, the gradient against the double closed form (float keeps ~7 digits).
foreach (var (x, y) in new[] { (0.8f, -0.3f), (-1.7f, 1.25f) })
{
    string where = $"Wave({x.ToString(CultureInfo.InvariantCulture)}, {y.ToString(CultureInfo.InvariantCulture)})";
    float value = Smooth.Wave(x, y);
    var g = new float[2];
    var g2 = new float[2];
    var h = new float[4];
    checks += 2;
    if (BitConverter.SingleToInt32Bits(Smooth.WaveGradient(x, y, g)) != BitConverter.SingleToInt32Bits(value)
        || BitConverter.SingleToInt32Bits(Smooth.WaveHessian(x, y, g2, h)) != BitConverter.SingleToInt32Bits(value))
    {
        Fail(where + ": float value not bit-identical to the original");
    }

    var exact = new double[2];
    Smooth.WaveExactGradient(x, y, exact);
    for (int i = 0; i < 2; i++)
    {
        Close($"{where} float gradient[{i}]", g[i], exact[i], 1e-5);
        Close($"{where} float gradient[{i}] from Hessian method", g2[i], exact[i], 1e-5);
    }

    checks++;
    if (BitConverter.SingleToInt32Bits(h[1]) != BitConverter.SingleToInt32Bits(h[2]))
    {
        Fail(where + ": float Hessian not symmetric");
    }
}

// Non-smooth conventions documented in the README: Abs'(0) = 0; Max at a tie takes the first argument.
// Expected values worked by hand from those conventions: d/dx = sign(x) y + [x >= y], d/dy = |x| + [x < y].
foreach (var (x, y, dx, dy) in new[] { (0.0, 2.0, 0.0, 1.0), (1.0, 1.0, 2.0, 1.0), (-3.0, 0.5, -0.5, 4.0) })
{
    var g = new double[2];
    string where = $"Kink({F(x)}, {F(y)})";
    SameBits(where + " value", Kinks.KinkGradient(x, y, g), Kinks.Kink(x, y));
    Close(where + " d/dx (convention)", g[0], dx, 0);
    Close(where + " d/dy (convention)", g[1], dy, 0);
}

// Hessian = false generates no Hessian method.
checks++;
if (typeof(Smooth).GetMethod("LogsHessian") is not null || typeof(Smooth).GetMethod("LogsGradient") is null)
{
    Fail("Logs: expected LogsGradient and no LogsHessian");
}

// Spans that are too short: ArgumentException naming the span, nothing written.
var sentinel = new[] { 42.0, 42.0, 42.0, 42.0, 42.0, 42.0, 42.0, 42.0 };
Throws("RadiusGradient with a 2-element gradient", "gradient", () => Smooth.RadiusGradient(1, 2, 3, sentinel.AsSpan(0, 2)));
Throws("RadiusHessian with an 8-element hessian", "hessian", () => Smooth.RadiusHessian(1, 2, 3, new double[3], sentinel.AsSpan(0, 8)));
Throws("BumpHessian with a 1-element gradient", "gradient", () => Smooth.BumpHessian(1, 2, sentinel.AsSpan(0, 1), new double[4]));
checks++;
if (Array.Exists(sentinel, v => v != 42.0))
{
    Fail("a method that threw for a short span wrote into a span first");
}

Console.WriteLine(failures == 0
    ? $"All {checks} checks passed."
    : $"{failures} of {checks} checks FAILED.");
return failures == 0 ? 0 : 1;
