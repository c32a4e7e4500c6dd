using System.Globalization;
using System.Linq;
using DerivGen.Generator.Model;
using Microsoft.CodeAnalysis;
using Microsoft.CodeAnalysis.CSharp;
using Microsoft.CodeAnalysis.CSharp.Syntax;
using Microsoft.CodeAnalysis.Operations;

namespace DerivGen.Generator.Lowering;

// The advice of DG0001 for calls that cannot be differentiated: each names the construct and suggests a rewrite this
// version accepts. "Mark it [Differentiate]" is suggested only for a method of this compilation that, marked, would be
// differentiated through (an ordinary method with a body, not generic, double or float result, scalar parameters by
// value or 'in', static or called on this instance). LINQ gets the equivalent for loop, System.Numerics vectors their
// component formulas, any other library call the supported functions.
internal sealed partial class BodyLowerer
{
    private const string CallablesHint =
        "only the functions of System.Math, System.MathF, double and float listed in the README, and other [Differentiate] methods, can be called";

    private const string LocalFunctionAdvice =
        "local functions are not differentiated in this version; make it a static method of this type with double, float, int or bool parameters and a double or float result (pass what it captures as arguments): such a helper is differentiated through";

    private const string VectorPrefix =
        "System.Numerics vectors are not differentiated in this version; work on the components as double or float scalars (pass ";

    /// <summary>The hint for a call that is neither a supported function nor a marked method nor a helper.</summary>
    private string CallAdvice(IInvocationOperation invocation, IMethodSymbol target)
    {
        INamedTypeSymbol? type = target.ContainingType;
        if (type is { Name: "Enumerable" } && type.ToDisplayString() == "System.Linq.Enumerable")
        {
            return LinqAdvice(invocation, target.Name);
        }

        if (VectorComponents(type) is { } components)
        {
            return VectorCallAdvice(type!.Name, target.Name, components);
        }

        if (target.MethodKind == MethodKind.LocalFunction)
        {
            return CallablesHint + "; " + LocalFunctionAdvice;
        }

        if (MathTypeHost(type) is not null || type?.SpecialType is SpecialType.System_Double or SpecialType.System_Single)
        {
            return CallablesHint + "; '" + target.Name + "' is not one of them: compute it with the supported functions of System.Math in this method";
        }

        if (!SymbolEqualityComparer.Default.Equals(target.ContainingAssembly, _helpers.Compilation.Assembly) || target.DeclaringSyntaxReferences.Length == 0)
        {
            return CallablesHint + "; '" + target.Name + "' is a method of another assembly and cannot be marked: compute it with the supported functions of System.Math in this method";
        }

        return WhyNotMarkable(invocation, target) is { } reason
            ? CallablesHint + "; '" + target.Name + "' " + reason + ", so marking it [Differentiate] would not help: write its computation inline in this method with double and float locals"
            : CallablesHint + "; mark the method [Differentiate] to differentiate through it";
    }

    /// <summary>The hint for a static method of the compilation that cannot be a helper (see <see cref="HelperTarget"/>).</summary>
    private static string HelperAdvice(IMethodSymbol target)
    {
        const string Rule = "a helper called from a differentiated method must be a static method with a body in this compilation, not generic, return double or float and take double, float, int or bool parameters";
        if (target.MethodKind == MethodKind.LocalFunction)
        {
            return Rule + "; " + LocalFunctionAdvice;
        }

        return WhyNotMarkable(null, target) is { } reason
            ? Rule + "; '" + target.Name + "' " + reason + ": write its computation inline in this method with double and float locals"
            : Rule + "; or mark it [Differentiate]";
    }

    /// <summary>Why the method, marked [Differentiate], would still not be differentiated through; null where it would.</summary>
    private static string? WhyNotMarkable(IInvocationOperation? invocation, IMethodSymbol target)
    {
        if (target.MethodKind != MethodKind.Ordinary)
        {
            return "is not an ordinary method";
        }

        if (target.IsGenericMethod && GenericDeclarationProblem(target.OriginalDefinition, out _) is { } genericProblem)
        {
            return genericProblem;
        }

        if (target.IsGenericMethod && !IsMethodTypeParameter(target.OriginalDefinition.ReturnType))
        {
            return "is generic and does not return T";
        }

        if (target.ContainingType.IsGenericType)
        {
            return "is generic";
        }

        if (ScalarTypeOf(target.ReturnType) is not (ScalarType.Double or ScalarType.Single))
        {
            return "returns '" + target.ReturnType.ToDisplayString() + "'";
        }

        if (target.Parameters.FirstOrDefault(p => ScalarTypeOf(p.Type) is null || p.RefKind is not (RefKind.None or RefKind.In)) is { } parameter)
        {
            return "takes '" + parameter.Type.ToDisplayString() + " " + parameter.Name + "'";
        }

        if (target.IsAbstract || target.IsVirtual || target.IsOverride || target.IsExtern || target.DeclaringSyntaxReferences.Length != 1)
        {
            return "has no single body of its own";
        }

        if (!target.IsStatic && invocation?.Instance is not IInstanceReferenceOperation)
        {
            return "is called on another object than this one";
        }

        return null;
    }

    /// <summary>The components' names of System.Numerics.Vector2/3/4, else null.</summary>
    private static string[]? VectorComponents(ITypeSymbol? type) =>
        type is INamedTypeSymbol { Name: "Vector2" or "Vector3" or "Vector4", IsGenericType: false } named
        && named.ContainingNamespace?.ToDisplayString() == "System.Numerics"
            ? named.Name switch
            {
                "Vector2" => new[] { "x", "y" },
                "Vector3" => new[] { "x", "y", "z" },
                _ => new[] { "x", "y", "z", "w" },
            }
            : null;

    private static string VectorCallAdvice(string type, string method, string[] c)
    {
        string Sum(System.Func<string, string> term) => string.Join(" + ", c.Select(term));
        string PerComponent(System.Func<string, string> term) => string.Join(", ", c.Select(term));
        string squares = Sum(x => x + " * " + x);
        string differences = "double " + string.Join(", ", c.Select(x => "d" + x + " = a" + x + " - b" + x));
        string differenceSquares = Sum(x => "d" + x + " * d" + x);
        string? formula = method switch
        {
            "Dot" => Sum(x => "a" + x + " * b" + x),
            "LengthSquared" => squares,
            "Length" => "Math.Sqrt(" + squares + ")",
            "DistanceSquared" => differences + "; … " + differenceSquares,
            "Distance" => differences + "; … Math.Sqrt(" + differenceSquares + ")",
            "Normalize" => PerComponent(x => x + " / len") + " with double len = Math.Sqrt(" + squares + ")",
            "Lerp" => PerComponent(x => "a" + x + " + (b" + x + " - a" + x + ") * t"),
            "Cross" when c.Length == 3 => "ay * bz - az * by, az * bx - ax * bz, ax * by - ay * bx",
            "Min" or "Max" => PerComponent(x => "Math." + method + "(a" + x + ", b" + x + ")"),
            "Abs" => PerComponent(x => "Math.Abs(" + x + ")"),
            "Clamp" => PerComponent(x => "Math.Clamp(" + x + ", min" + x + ", max" + x + ")"),
            _ => null,
        };
        string components = string.Join(", ", c);
        return formula is null
            ? VectorPrefix + components + " as separate parameters, keep them in separate locals) and compute " + type + "." + method + " component by component"
            : VectorPrefix + components + " as separate parameters, keep them in separate locals) and write " + type + "." + method + " as `" + formula + "`";
    }

    /// <summary>The hint for a local of a System.Numerics vector type, else null.</summary>
    private static string? VectorLocalAdvice(ILocalSymbol local) =>
        VectorComponents(local.Type) is { } c
            ? "locals must be double, float, int or bool; System.Numerics vectors are not differentiated in this version: keep its components in double or float locals ("
              + string.Join(", ", c.Select(x => local.Name + x.ToUpperInvariant())) + ")"
            : null;

    /// <summary>What LINQ is lowered to loops (BodyLowerer.Linq.cs); the advice for anything else follows it.</summary>
    private const string LinqPrefix =
        "this version lowers Sum, Average, Max and Min (double) over arrays, Select, Zip and Enumerable.Range to loops, not this; ";

    private static string LinqAdvice(IInvocationOperation invocation, string method)
    {
        // The innermost source of a chain (xs in xs.Select(…).Sum()), named where it is a parameter, local or field.
        IOperation? source = invocation.Arguments.Length > 0 ? invocation.Arguments[0].Value : null;
        IOperation? zipped = invocation.TargetMethod.Name == "Zip" && invocation.Arguments.Length > 1 ? invocation.Arguments[1].Value : null;
        while (true)
        {
            if (source is IConversionOperation conversion)
            {
                source = conversion.Operand;
            }
            else if (source is IInvocationOperation { TargetMethod: { Name: not "Range", ContainingType.Name: "Enumerable" } } inner && inner.Arguments.Length > 0)
            {
                zipped = inner.TargetMethod.Name == "Zip" && inner.Arguments.Length > 1 ? inner.Arguments[1].Value : zipped;
                source = inner.Arguments[0].Value;
            }
            else
            {
                break;
            }
        }

        // An array written out in the call (new[] { w0, w1 }.Select(…).Sum()): a local array is refused too, so the
        // advice is the expression written out over its elements.
        if (source is IArrayCreationOperation { Initializer.ElementValues: { Length: > 0 and <= 8 } elements })
        {
            string names = string.Join(", ", elements.Select(Text));
            string terms = string.Join(" + ", elements.Select(_ => "…"));
            string arguments = string.Join(", ", elements.Select(_ => "…"));
            string written = method switch
            {
                "Sum" => "write the sum out, one term for each of " + names + ": `" + terms + "`",
                "Average" => "write the mean out, one term for each of " + names + ": `(" + terms + ") / " + elements.Length.ToString(System.Globalization.CultureInfo.InvariantCulture) + "`",
                "Max" or "Min" => "write it out with Math." + method + ", one argument for each of " + names + ": `Math." + method + "(" + arguments + ")`",
                _ => "write it out with one term for each of " + names + ": `" + terms + "`",
            };
            return LinqPrefix + written;
        }

        string loop, count, item = "…";
        if (source is IInvocationOperation { TargetMethod: { Name: "Range", ContainingType.Name: "Enumerable" } } range && range.Arguments.Length == 2)
        {
            count = Text(range.Arguments[1].Value);
            loop = range.Arguments[0].Value.ConstantValue is { HasValue: true, Value: 0 }
                ? "for (int i = 0; i < " + count + "; i++)"
                : "for (int i = " + Text(range.Arguments[0].Value) + "; i < " + Text(range.Arguments[0].Value) + " + " + count + "; i++)";
        }
        else if (RangeLoop(source, zipped) is { } ranged)
        {
            (loop, count, item) = ranged;
        }
        else
        {
            count = SourceName(source) + ".Length";
            loop = "for (int i = 0; i < " + count + "; i++)";
        }

        string what = method switch
        {
            "Sum" => "write the sum as a for loop over the array: `double s = 0; " + loop + " s += " + item + ";`",
            "Average" => "write the mean as a for loop over the array: `double s = 0; " + loop + " s += " + item + "; double mean = s / " + count + ";`",
            "Max" => "write the maximum as a for loop over the array: `double m = double.NegativeInfinity; " + loop + " m = Math.Max(m, " + item + ");`",
            "Min" => "write the minimum as a for loop over the array: `double m = double.PositiveInfinity; " + loop + " m = Math.Min(m, " + item + ");`",
            _ => "write the computation as a for loop over the array (over several arrays, one index for all): `double s = 0; " + loop + " s += " + item + ";`",
        };
        return LinqPrefix + what;
    }

    /// <summary>The remainder is refused; an int remainder is mostly an index wrapping past the end, written as a conditional.</summary>
    private static string RemainderAdvice(IBinaryOperation binary)
    {
        if (binary.Type?.SpecialType != SpecialType.System_Int32)
        {
            return "the remainder operator is not supported; keep the remainder out of the differentiated values (compute it over ints, or over data at the top of the method)";
        }

        IOperation left = binary.LeftOperand;
        while (left is IParenthesizedOperation parenthesized)
        {
            left = parenthesized.Operand;
        }

        string a = Text(left), n = Text(binary.RightOperand);
        return "the remainder operator is not supported; where 0 <= " + a + " <= " + n + " (an index wrapping past the end) "
            + "write the wrap as a conditional: `" + a + " < " + n + " ? " + a + " : 0`";
    }

    /// <summary>
    /// A range of an array as the source (ys[1..], zipped with ys[..^1]): the loop over the range's indices of the array,
    /// the element read as ys[i] and the zipped range's element at its offset (ys[i - 1]); null for any other source.
    /// </summary>
    private static (string Loop, string Count, string Item)? RangeLoop(IOperation? source, IOperation? zipped)
    {
        if (Range(source) is not { } range)
        {
            return null;
        }

        string start = Bound(range.Array, range.Range.LeftOperand, "0"), end = Bound(range.Array, range.Range.RightOperand, range.Array + ".Length");
        string elements = "… " + range.Array + "[i] …";
        if (Range(zipped is IConversionOperation c ? c.Operand : zipped) is { } other && other.Array == range.Array
            && Literal(range.Range.LeftOperand) is { } a && Literal(other.Range.LeftOperand) is { } b)
        {
            string offset = b == a ? "" : b > a ? " + " + (b - a).ToString(CultureInfo.InvariantCulture) : " - " + (a - b).ToString(CultureInfo.InvariantCulture);
            elements += " " + other.Array + "[i" + offset + "] …";
        }

        string count = start == "0" ? end : end + " - " + start;
        return ("for (int i = " + start + "; i < " + end + "; i++)", count, elements);
    }

    private static (string Array, RangeExpressionSyntax Range)? Range(IOperation? source) =>
        source?.Syntax is ElementAccessExpressionSyntax { ArgumentList.Arguments: { Count: 1 } arguments } access
        && arguments[0].Expression is RangeExpressionSyntax range
            ? (access.Expression.ToString(), range)
            : null;

    private static string Bound(string array, ExpressionSyntax? bound, string open) => bound switch
    {
        null => open,
        PrefixUnaryExpressionSyntax { RawKind: (int)SyntaxKind.IndexExpression } fromEnd => array + ".Length - " + fromEnd.Operand,
        _ => bound.ToString(),
    };

    private static int? Literal(ExpressionSyntax? bound) => bound switch
    {
        null => 0,
        LiteralExpressionSyntax { Token.Value: int value } => value,
        _ => null,
    };

    private static string SourceName(IOperation? source) => source switch
    {
        IParameterReferenceOperation parameter => parameter.Parameter.Name,
        ILocalReferenceOperation local => local.Local.Name,
        IFieldReferenceOperation field => field.Field.Name,
        IPropertyReferenceOperation { Property.IsIndexer: false } property => property.Property.Name,
        _ => "xs",
    };
}
