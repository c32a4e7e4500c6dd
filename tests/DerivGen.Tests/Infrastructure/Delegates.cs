using System;

namespace DerivGen.Tests.Infrastructure;

// Delegate shapes the tests bind the user's and the generated methods to (reflection cannot pass Span<T>).
// F = the user's method, G = MGradient, H = MHessian; the digit is the number of double parameters; "f" = float.

internal delegate double F1(double x);
internal delegate double G1(double x, Span<double> gradient);
internal delegate double H1(double x, Span<double> gradient, Span<double> hessian);

internal delegate double F2(double x, double y);
internal delegate double G2(double x, double y, Span<double> gradient);
internal delegate double H2(double x, double y, Span<double> gradient, Span<double> hessian);

internal delegate double F3(double x, double y, double z);
internal delegate double G3(double x, double y, double z, Span<double> gradient);
internal delegate double H3(double x, double y, double z, Span<double> gradient, Span<double> hessian);

internal delegate float F1f(float x);
internal delegate float G1f(float x, Span<float> gradient);
internal delegate float H1f(float x, Span<float> gradient, Span<float> hessian);

internal delegate float F2f(float x, float y);
internal delegate float G2f(float x, float y, Span<float> gradient);
internal delegate float H2f(float x, float y, Span<float> gradient, Span<float> hessian);
