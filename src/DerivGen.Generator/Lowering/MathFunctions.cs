using System.Collections.Generic;
using DerivGen.Generator.Model;

namespace DerivGen.Generator.Lowering;

/// <summary>
/// The C# math functions DerivGen understands: their names on System.Math, System.MathF, double and float, their
/// arity, and — for the ones that are not smooth everywhere — the convention the derivative follows there (also in the
/// README and in the DG0007 warning). The derivatives themselves live in Symbolic/DerivativeRules.cs.
/// </summary>
internal static class MathFunctions
{
    private static readonly Dictionary<(string Name, int Arity), MathFunction> ByName = new()
    {
        [("Sin", 1)] = MathFunction.Sin,
        [("Cos", 1)] = MathFunction.Cos,
        [("Tan", 1)] = MathFunction.Tan,
        [("Asin", 1)] = MathFunction.Asin,
        [("Acos", 1)] = MathFunction.Acos,
        [("Atan", 1)] = MathFunction.Atan,
        [("Atan2", 2)] = MathFunction.Atan2,
        [("Sinh", 1)] = MathFunction.Sinh,
        [("Cosh", 1)] = MathFunction.Cosh,
        [("Tanh", 1)] = MathFunction.Tanh,
        [("Asinh", 1)] = MathFunction.Asinh,
        [("Acosh", 1)] = MathFunction.Acosh,
        [("Atanh", 1)] = MathFunction.Atanh,
        [("Exp", 1)] = MathFunction.Exp,
        [("Log", 1)] = MathFunction.Log,
        [("Log", 2)] = MathFunction.LogBase,
        [("Log10", 1)] = MathFunction.Log10,
        [("Log2", 1)] = MathFunction.Log2,
        [("Sqrt", 1)] = MathFunction.Sqrt,
        [("Cbrt", 1)] = MathFunction.Cbrt,
        [("Pow", 2)] = MathFunction.Pow,
        [("Hypot", 2)] = MathFunction.Hypot,
        [("Abs", 1)] = MathFunction.Abs,
        [("Max", 2)] = MathFunction.Max,
        [("Min", 2)] = MathFunction.Min,
        [("Clamp", 3)] = MathFunction.Clamp,
        [("FusedMultiplyAdd", 3)] = MathFunction.FusedMultiplyAdd,
        [("Sign", 1)] = MathFunction.Sign,
        [("Floor", 1)] = MathFunction.Floor,
        [("Ceiling", 1)] = MathFunction.Ceiling,
        [("Round", 1)] = MathFunction.Round,
        [("Truncate", 1)] = MathFunction.Truncate,
    };

    public static bool TryGet(string name, int arity, out MathFunction function) =>
        ByName.TryGetValue((name, arity), out function);

    /// <summary>The C# method name of a function (Log with a base is still "Log").</summary>
    public static string CSharpName(MathFunction function) => function == MathFunction.LogBase ? "Log" : function.ToString();

    /// <summary>For functions that are not differentiable everywhere, the convention DerivGen follows; else null.</summary>
    public static string? NonSmoothConvention(MathFunction function) => function switch
    {
        MathFunction.Abs => "its derivative at 0 is taken as 0",
        MathFunction.Max => "at a tie the derivative of the first argument is used",
        MathFunction.Min => "at a tie the derivative of the first argument is used",
        MathFunction.Clamp => "at a bound the derivative of the clamped value is used",
        MathFunction.Sign => "its derivative is taken as 0 everywhere (the jump at 0 is ignored)",
        MathFunction.Floor => "its derivative is taken as 0 everywhere (the jumps are ignored)",
        MathFunction.Ceiling => "its derivative is taken as 0 everywhere (the jumps are ignored)",
        MathFunction.Round => "its derivative is taken as 0 everywhere (the jumps are ignored)",
        MathFunction.Truncate => "its derivative is taken as 0 everywhere (the jumps are ignored)",
        _ => null,
    };

    /// <summary>Whether the function's value is an int whatever its argument type (Math.Sign).</summary>
    public static bool ReturnsInt(MathFunction function) => function == MathFunction.Sign;
}
