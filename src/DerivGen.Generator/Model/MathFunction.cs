namespace DerivGen.Generator.Model;

/// <summary>The math functions DerivGen differentiates. Lowering/MathFunctions.cs maps C# calls onto them and
/// Symbolic/DerivativeRules.cs holds their derivatives.</summary>
internal enum MathFunction
{
    Sin,
    Cos,
    Tan,
    Asin,
    Acos,
    Atan,
    Atan2,
    Sinh,
    Cosh,
    Tanh,
    Asinh,
    Acosh,
    Atanh,
    Exp,
    Log,
    LogBase,
    Log10,
    Log2,
    Sqrt,
    Cbrt,
    Pow,
    Hypot,
    Abs,
    Max,
    Min,
    Clamp,
    FusedMultiplyAdd,
    Sign,
    Floor,
    Ceiling,
    Round,
    Truncate,
}
