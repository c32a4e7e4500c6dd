using System.Threading.Tasks;
using Xunit;
using static DerivGen.Tests.Analyzers.AnalyzerVerifier;

namespace DerivGen.Tests.Analyzers;

/// <summary>Generic math (a method generic over T): what is accepted without a diagnostic, and each refusal on its span
/// (the messages and their advice are checked in <see cref="RefusalAdviceTests"/>).</summary>
public sealed class GenericMathDiagnosticTests
{
    private const string Usings = "using System;\nusing System.Numerics;\nusing DerivGen;\n\n";

    [Fact]
    public async Task GenericLossWithFunctionsConstantsOperatorsAndPredicatesHasNoDiagnostic()
    {
        await VerifyAsync(Accepted);
        DerivGen.Tests.Infrastructure.GeneratorHarness.Run(Accepted); // and its generated code compiles without a warning
    }

    private const string Accepted = Usings + """
        public static partial class C
        {
            public static readonly double[] Data = { 1.0, 2.0 };

            static T Square<T>(T v) where T : IFloatingPointIeee754<T> => v * v;

            [Differentiate(nameof(a), nameof(b))]
            public static T F<T>(T a, T b, ReadOnlySpan<T> ys, int n) where T : unmanaged, IFloatingPointIeee754<T>
            {
                T s = T.Zero;
                for (int i = 0; i < ys.Length; i++)
                {
                    if (T.IsNaN(ys[i]) || !T.IsFinite(ys[i]))
                    {
                        continue;
                    }

                    T r = a * T.Exp(-b * T.CreateChecked(Data[0])) - ys[i];
                    s += Square(r) / T.CreateTruncating(n) + T.Pi * T.CreateSaturating(0.5f);
                }

                s++;
                return -s + T.Sqrt(a * a + T.One) + T.Pow(a, T.CreateChecked(2.5));
            }
        }
        """;

    [Fact]
    public Task DG0001TypeParameterNotNamedT() => VerifyAsync(Usings + """
        public static partial class C
        {
            [Differentiate]
            public static TReal F{|DG0001:<TReal>|}(TReal x) where TReal : IFloatingPointIeee754<TReal> => x * x;
        }
        """);

    [Fact]
    public Task DG0001ConstraintThatDoesNotMakeTFloatingPoint() => VerifyAsync(Usings + """
        public static partial class C
        {
            [Differentiate]
            public static T F{|DG0001:<T>|}(T x) where T : INumber<T> => x * x;
        }
        """);

    [Fact]
    public Task DG0001TwoTypeParameters() => VerifyAsync(Usings + """
        public static partial class C
        {
            [Differentiate]
            public static T F{|DG0001:<T, U>|}(T x) where T : IFloatingPointIeee754<T> => x;
        }
        """);

    [Fact]
    public Task DG0001GenericMethodThatDoesNotReturnT() => VerifyAsync(Usings + """
        public static partial class C
        {
            [Differentiate]
            public static {|DG0001:double|} F<T>(T x) where T : IFloatingPointIeee754<T> => 1.0;
        }
        """);

    [Fact]
    public Task DG0001UnsupportedMemberOfTAndDG0007ForItsKink() => VerifyAsync(Usings + """
        public static partial class C
        {
            [Differentiate]
            public static T F<T>(T x) where T : IFloatingPointIeee754<T> => {|DG0001:T.ExpM1(x)|} + {|DG0007:T.Abs(x)|} + {|DG0007:T.Max(x, T.One)|};
        }
        """);

    [Fact]
    public Task DG0001DerivativeNeedsAnInterfaceTheConstraintsLack() => VerifyAsync(Usings + """
        public static partial class C
        {
            [Differentiate]
            public static T F<T>(T x) where T : INumberBase<T>, ITrigonometricFunctions<T> => {|DG0001:T.Asin(x)|} + T.Sin(x);
        }
        """);

    [Fact]
    public Task DG0001HelperCallFromAGenericMethodWithoutUnmanaged() => VerifyAsync(Usings + """
        public static partial class C
        {
            static T Square<T>(T v) where T : IFloatingPointIeee754<T> => v * v;

            [Differentiate]
            public static T F<T>(T x) where T : IFloatingPointIeee754<T> => {|DG0001:Square(x)|} + x;
        }
        """);

    [Fact]
    public Task DG0001VectorOfTVariables() => VerifyAsync(Usings + """
        public static partial class C
        {
            [Differentiate({|DG0001:nameof(w)|})]
            public static T F<T>(T[] w, T x) where T : IFloatingPointIeee754<T> => w[0] * x;
        }
        """);

    [Fact]
    public Task DG0001TypeParameterOfTheContainingType() => VerifyAsync(Usings + """
        public static partial class C<T> where T : IFloatingPointIeee754<T>
        {
            [Differentiate(nameof(x))]
            public static {|DG0005:T|} {|DG0001:F|}(T x) => x * x;
        }
        """.Replace("nameof(x)", "{|DG0004:nameof(x)|}"));
}
