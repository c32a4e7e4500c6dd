using System;
using System.Collections.Generic;
using System.Linq;
using DerivGen.Generator.Diagnostics;
using DerivGen.Generator.Model;
using Microsoft.CodeAnalysis;
using Microsoft.CodeAnalysis.Operations;

namespace DerivGen.Generator.Lowering;

// Struct-valued expressions → one IR expression per component, and the System.Numerics vector operations.
//
// SIMD order (measured on this machine, x64 with AVX-512 and FMA, .NET 10, and again with DOTNET_EnableAVX2=0; 2·10⁶
// random vectors with exponents from 2⁻²⁰ to 2²⁰, every result compared bit for bit; Numerics/Structs/SimdOrderTests
// repeats this on every test run):
// - Dot of Vector4 is pairwise, (x₀y₀ + x₁y₁) + (x₂y₂ + x₃y₃), not left to right (215,340 of 2·10⁶ differ from the
//   sequential sum). Vector3 is (x₀y₀ + x₁y₁) + (x₂y₂ + 0) and Vector2 (x₀y₀ + x₁y₁) + 0: the padding lanes add a +0,
//   which only shows in the sign of a zero result (three −0 products give +0), so it is written out.
// - Length = Sqrt(Dot(v, v)), LengthSquared = Dot(v, v), Distance(Squared) the same of a − b; Normalize = v / Length(v)
//   per lane; v / s divides each lane by s (no reciprocal); Cross is the textbook formula; Min, Max and Abs are MathF's
//   per lane (also for −0 and NaN); unary minus flips the sign (−(+0) = −0).
// - Lerp(a, b, t) is a·(1 − t) + b·t with a fused multiply-add, FusedMultiplyAdd(a, 1 − t, b·t), where the hardware has
//   one (x64 with FMA), and unfused without it: both forms are emitted, chosen by Fma.IsSupported (or AdvSimd.Arm64 on
//   Arm, where the runtime's estimate is fused; that platform was not measured).
internal sealed partial class BodyLowerer
{
    private static readonly IrExpression FloatZero = new IrConstant(BitConverter.DoubleToInt64Bits(0.0), ScalarType.Single);
    private static readonly IrExpression FloatOne = new IrConstant(BitConverter.DoubleToInt64Bits(1.0), ScalarType.Single);

    private readonly HashSet<IParameterSymbol> _refusedStructParameters = new(SymbolEqualityComparer.Default);

    /// <summary>Lowers a struct-valued expression; null (after reporting) when it is not supported.</summary>
    private StructValue? LowerStruct(IOperation operation)
    {
        System.Runtime.CompilerServices.RuntimeHelpers.EnsureSufficientExecutionStack();
        _cancellationToken.ThrowIfCancellationRequested();
        StructLayout? layout = LayoutOf(operation.Type);
        switch (operation)
        {
            case IParenthesizedOperation parenthesized:
                return LowerStruct(parenthesized.Operand);
            case IConversionOperation { Conversion.IsIdentity: true } identity:
                return LowerStruct(identity.Operand);
            case IConversionOperation { OperatorMethod: null, Operand.Type: { } operandType } targetTyped when SymbolEqualityComparer.Default.Equals(operandType, operation.Type):
                return LowerStruct(targetTyped.Operand); // new(…) and default, typed by their target
            case ILocalReferenceOperation local when layout is not null && _structLocals.TryGetValue(local.Local, out string[]? names):
                return FromLocals(layout, names);
            case IParameterReferenceOperation parameter when layout is not null && _structLocals.TryGetValue(parameter.Parameter.OriginalDefinition, out string[]? bound):
                return FromLocals(layout, bound);
            case IParameterReferenceOperation parameter when _boundStructValues.TryGetValue(parameter.Parameter.OriginalDefinition, out StructValue? direct):
                return direct;
            case IParameterReferenceOperation { Parameter: var parameter } when layout is not null:
                if (parameter.RefKind is RefKind.Ref or RefKind.Out)
                {
                    if (!_refusedStructParameters.Add(parameter))
                    {
                        return null; // reported at its first use
                    }

                    return Refuse(operation, $"the {parameter.RefKind.ToString().ToLowerInvariant()} struct parameter '{parameter.Name}'", "pass it by value or as 'in'");
                }

                return Readable(operation, layout, parameter.Name)
                    ? new StructValue(layout, layout.Components.Select(c => (IrExpression)new IrParameter(Identifiers.Escape(parameter.Name) + "." + c.Path, c.Type)).ToArray())
                    : null;
            case IInstanceReferenceOperation when _structThis.Count > 0:
                return _structThis[_structThis.Count - 1];
            case IFieldReferenceOperation { Field: { IsStatic: true, IsReadOnly: true } field } when layout is not null:
                return Readable(operation, layout, field.Name) ? External(layout, FullyQualified(field.ContainingType) + "." + Identifiers.Escape(field.Name)) : null;
            case IPropertyReferenceOperation { Property: { IsStatic: true, IsIndexer: false } property } when layout is { IsNumericsVector: true }:
                return VectorConstant(operation, layout, property.Name);
            case IPropertyReferenceOperation { Property: { IsStatic: true, IsIndexer: false, SetMethod: null } property } when layout is not null && StructLayout.IsAutoProperty(property):
                return Readable(operation, layout, property.Name) ? External(layout, FullyQualified(property.ContainingType) + "." + Identifiers.Escape(property.Name)) : null;
            case IFieldReferenceOperation { Instance: IInstanceReferenceOperation, Field: { IsStatic: false } field } when layout is not null && _structThis.Count == 0:
                return Readable(operation, layout, field.Name) ? External(layout, "this." + Identifiers.Escape(field.Name)) : null;
            case IFieldReferenceOperation { Instance: { } instance, Field: var field } when layout is not null && IsStructInstance(instance):
                return SubValue(operation, instance, field);
            case IPropertyReferenceOperation { Instance: { } instance, Property: { IsIndexer: false } property } when layout is not null && IsStructInstance(instance):
                return SubValue(operation, instance, property);
            case IArrayElementReferenceOperation { Indices.Length: 1 } element when layout is not null && StructDataText(element.ArrayReference) is { } data:
            {
                if (!Readable(operation, layout, element.Type!.Name) || LowerExpression(element.Indices[0]) is not { } index)
                {
                    return null;
                }

                var indices = new[] { index }.ToEquatableArray();
                return new StructValue(layout, layout.Components.Select(c =>
                    (IrExpression)new IrElement(data + StructLayout.ElementMemberMark + "." + c.Path, indices, c.Type)).ToArray());
            }

            case IObjectCreationOperation creation when layout is not null:
                return LowerStructCreation(creation, layout);
            case IDefaultValueOperation when layout is not null:
                return Zeros(layout);
            case IBinaryOperation { OperatorMethod: { } method } binary when StructLayout.IsNumericsVectorType(method.ContainingType):
            {
                object? left = LowerOperand(binary.LeftOperand), right = LowerOperand(binary.RightOperand);
                return left is null || right is null ? null : VectorOperator(binary, binary.OperatorKind, left, right);
            }

            case IUnaryOperation { OperatorKind: UnaryOperatorKind.Minus or UnaryOperatorKind.Plus, OperatorMethod: { } method } unary
                when StructLayout.IsNumericsVectorType(method.ContainingType):
                return LowerStruct(unary.Operand) is { } operand
                    ? unary.OperatorKind == UnaryOperatorKind.Plus ? operand : Map(operand, p => new IrNegate(p, p.Type))
                    : null;
            case IInvocationOperation invocation when StructLayout.IsNumericsVectorType(invocation.TargetMethod.ContainingType):
                return LowerVectorMethod(invocation) as StructValue;
            case IInvocationOperation { Instance: { } instance } invocation when layout is not null && IsStructInstance(instance):
                return LowerStruct(instance) is { } receiver ? InlineCall(invocation, invocation.TargetMethod, receiver) as StructValue : null;
            case IInvocationOperation invocation when layout is not null && IsInlinable(invocation.TargetMethod):
                return InlineCall(invocation, invocation.TargetMethod, null) as StructValue;
            case IConditionalOperation { WhenFalse: not null } conditional when layout is not null:
            {
                IrExpression? condition = LowerCondition(conditional.Condition, isConditionalOperator: true);
                StructValue? whenTrue = LowerStruct(conditional.WhenTrue), whenFalse = LowerStruct(conditional.WhenFalse);
                return condition is null || whenTrue is null || whenFalse is null ? null
                    : new StructValue(layout, whenTrue.Parts.Select((p, i) => (IrExpression)new IrConditional(condition, p, whenFalse.Parts[i], p.Type)).ToArray());
            }

            case IWithOperation with when layout is not null:
                return LowerStruct(with.Operand) is { } original ? ApplyInitializer(with.Initializer, layout, (IrExpression[])original.Parts.Clone()) : null;
            default:
                string why = layout is null && operation.Type is { TypeKind: TypeKind.Struct } && StructLayout.Of(operation.Type, out string? problem) is null && problem is not null
                    ? problem + "; keep the fields you need in double, float or int locals"
                    : StructRewrite;
                return Refuse(operation, "the struct value '" + Text(operation) + "'", why);
        }
    }

    private StructValue? Refuse(IOperation operation, string construct, string hint)
    {
        Unsupported(operation, construct, hint);
        return null;
    }

    /// <summary>Whether the generated code can read the components where the user's method is; reports when not.</summary>
    private bool Readable(IOperation operation, StructLayout layout, string what)
    {
        if (layout.ReadableFrom(_method.ContainingType, _helpers.Compilation))
        {
            return true;
        }

        Unsupported(operation, $"the '{layout.Type.Name}' value '{what}', whose fields are not all accessible from '{_method.ContainingType.Name}'",
            "the generated methods read its fields; make them (or their properties) internal or public, or pass the values as double or float parameters");
        return false;
    }

    private static StructValue FromLocals(StructLayout layout, string[] names) =>
        new(layout, names.Select((n, i) => (IrExpression)new IrLocal(n, layout.Components[i].Type)).ToArray());

    private static StructValue External(StructLayout layout, string text) =>
        new(layout, layout.Components.Select(c => (IrExpression)new IrExternal(text + "." + c.Path, c.Type)).ToArray());

    private static StructValue Zeros(StructLayout layout) =>
        new(layout, layout.Components.Select(c => (IrExpression)Zero(c.Type)).ToArray());

    private static StructValue Map(StructValue value, Func<IrExpression, IrExpression> map) =>
        new(value.Layout, value.Parts.Select(map).ToArray());

    /// <summary>An operand of a vector operator: a <see cref="StructValue"/> or a scalar <see cref="IrExpression"/>.</summary>
    private object? LowerOperand(IOperation operand) =>
        LayoutOf(operand.Type) is not null ? LowerStruct(operand) : LowerExpression(operand);

    /// <summary>A field or property of a struct that is itself a struct (<c>pose.Base</c>).</summary>
    private StructValue? SubValue(IOperation site, IOperation instance, ISymbol member)
    {
        if (LowerStruct(instance) is not { } value)
        {
            return null;
        }

        if (value.Layout.Member(member) is { Nested: { } nested } found)
        {
            return new StructValue(nested, value.Parts.Skip(found.Offset).Take(found.Count).ToArray());
        }

        if (member is IPropertySymbol { GetMethod: { } getter })
        {
            return InlineCall(site, getter, value) as StructValue;
        }

        return Refuse(site, "the member '" + member.Name + "' of '" + value.Layout.Type.Name + "'", StructRewrite);
    }

    /// <summary>A scalar field or property of a struct value: its component, or an inlined computed property.</summary>
    private IrExpression? ReadMember(IOperation site, IOperation instance, ISymbol member)
    {
        if (LowerStruct(instance) is not { } value)
        {
            return null;
        }

        if (value.Layout.Member(member) is { Nested: null } found)
        {
            return value.Parts[found.Offset];
        }

        if (member is IPropertySymbol { GetMethod: { } getter } && ScalarTypeOf(((IPropertySymbol)member).Type) is not null)
        {
            return InlineCall(site, getter, value) as IrExpression;
        }

        Unsupported(site, "the member '" + member.Name + "' of '" + value.Layout.Type.Name + "'", StructRewrite);
        return null;
    }

    private StructValue? VectorConstant(IOperation site, StructLayout layout, string name)
    {
        int n = layout.VectorDimension;
        int unit = name switch { "UnitX" => 0, "UnitY" => 1, "UnitZ" => 2, "UnitW" => 3, _ => -1 };
        if (name is "Zero" or "One" || (unit >= 0 && unit < n))
        {
            return new StructValue(layout, Enumerable.Range(0, n).Select(i => name == "One" || i == unit ? FloatOne : FloatZero).ToArray());
        }

        return Refuse(site, $"the property '{layout.Type.Name}.{name}'", "the vector constants Zero, One and UnitX… are supported; write other values with a constructor");
    }

    /// <summary><c>a op b</c> for System.Numerics vectors: + − component-wise, * / component-wise or by a scalar.</summary>
    private StructValue? VectorOperator(IOperation site, BinaryOperatorKind kind, object left, object right)
    {
        if (!TryBinaryOperator(kind, out BinaryOperator op))
        {
            return Refuse(site, $"the operator '{Text(site)}'", "vectors support + − * / and unary −");
        }

        switch (left, right)
        {
            case (StructValue a, StructValue b) when a.Parts.Length == b.Parts.Length:
                return new StructValue(a.Layout, a.Parts.Select((p, i) => (IrExpression)new IrBinary(op, p, b.Parts[i], ScalarType.Single)).ToArray());
            case (StructValue a, IrExpression s) when op is BinaryOperator.Multiply or BinaryOperator.Divide:
                return Map(a, p => new IrBinary(op, p, Convert(s, ScalarType.Single), ScalarType.Single));
            case (IrExpression s, StructValue b) when op is BinaryOperator.Multiply:
                return Map(b, p => new IrBinary(op, Convert(s, ScalarType.Single), p, ScalarType.Single));
            default:
                return Refuse(site, $"the operator '{Text(site)}'", "vectors support + − * / and unary −");
        }
    }

    private static IrExpression Mul(IrExpression a, IrExpression b) => new IrBinary(BinaryOperator.Multiply, a, b, ScalarType.Single);

    private static IrExpression Add(IrExpression a, IrExpression b) => new IrBinary(BinaryOperator.Add, a, b, ScalarType.Single);

    private static IrExpression Sub(IrExpression a, IrExpression b) => new IrBinary(BinaryOperator.Subtract, a, b, ScalarType.Single);

    /// <summary>Dot product in the runtime's SIMD order (see the file's comment).</summary>
    private static IrExpression Dot(IrExpression[] a, IrExpression[] b) => a.Length switch
    {
        2 => Add(Add(Mul(a[0], b[0]), Mul(a[1], b[1])), FloatZero),
        3 => Add(Add(Mul(a[0], b[0]), Mul(a[1], b[1])), Add(Mul(a[2], b[2]), FloatZero)),
        _ => Add(Add(Mul(a[0], b[0]), Mul(a[1], b[1])), Add(Mul(a[2], b[2]), Mul(a[3], b[3]))),
    };

    private static IrExpression Sqrt(IrExpression x) => new IrCall(MathFunction.Sqrt, MathHost.MathF, new[] { x }.ToEquatableArray(), ScalarType.Single);

    /// <summary>A static method of Vector2/3/4 or an instance method: a <see cref="StructValue"/> or a scalar.</summary>
    private object? LowerVectorMethod(IInvocationOperation invocation)
    {
        IMethodSymbol target = invocation.TargetMethod;
        StructLayout layout = LayoutOf(target.ContainingType)!;
        var arguments = new object?[invocation.Arguments.Length + (invocation.Instance is null ? 0 : 1)];
        int first = 0;
        if (invocation.Instance is { } instance)
        {
            arguments[0] = LowerStruct(instance);
            first = 1;
        }

        string signature = string.Join(",", target.Parameters.Select(p => LayoutOf(p.Type) is not null ? "v" : ScalarTypeOf(p.Type) == ScalarType.Single ? "s" : "?"));
        bool supported = (target.Name, signature, invocation.Instance is null) switch
        {
            ("Dot" or "Distance" or "DistanceSquared" or "Min" or "Max" or "Add" or "Subtract" or "Cross", "v,v", true) => target.Name != "Cross" || layout.VectorDimension == 3,
            ("Multiply" or "Divide", "v,v" or "v,s", true) => true,
            ("Multiply", "s,v", true) => true,
            ("Normalize" or "Abs" or "Negate", "v", true) => true,
            ("Lerp", "v,v,s", true) => true,
            ("Length" or "LengthSquared", "", false) => true,
            _ => false,
        };
        if (!supported)
        {
            Unsupported(invocation, $"the call to '{layout.Type.Name}.{target.Name}'",
                "the vector functions differentiated are the operators, Dot, Cross, Length, LengthSquared, Distance, DistanceSquared, Normalize, Lerp (scalar amount), Min, Max and Abs; "
                + "write this one with the components (v.X, v.Y, …) and MathF functions");
            return null;
        }

        foreach (IArgumentOperation argument in invocation.Arguments)
        {
            arguments[first + argument.Parameter!.Ordinal] = LowerOperand(argument.Value);
        }

        if (arguments.Any(a => a is null))
        {
            return null;
        }

        StructValue V(int i) => (StructValue)arguments[i]!;
        IrExpression S(int i) => Convert((IrExpression)arguments[i]!, ScalarType.Single);
        switch (target.Name)
        {
            case "Dot": return Dot(V(0).Parts, V(1).Parts);
            case "LengthSquared": return Dot(V(0).Parts, V(0).Parts);
            case "Length": return Sqrt(Dot(V(0).Parts, V(0).Parts));
            case "DistanceSquared" or "Distance":
            {
                IrExpression[] difference = V(0).Parts.Select((p, i) => Sub(p, V(1).Parts[i])).ToArray();
                IrExpression squared = Dot(difference, difference);
                return target.Name == "Distance" ? Sqrt(squared) : squared;
            }

            case "Normalize":
            {
                IrExpression length = Sqrt(Dot(V(0).Parts, V(0).Parts));
                return Map(V(0), p => new IrBinary(BinaryOperator.Divide, p, length, ScalarType.Single));
            }

            case "Cross":
            {
                IrExpression[] a = V(0).Parts, b = V(1).Parts;
                return new StructValue(layout, new[]
                {
                    Sub(Mul(a[1], b[2]), Mul(a[2], b[1])),
                    Sub(Mul(a[2], b[0]), Mul(a[0], b[2])),
                    Sub(Mul(a[0], b[1]), Mul(a[1], b[0])),
                });
            }

            case "Lerp":
                return Lerp(V(0), V(1), S(2));
            case "Min" or "Max" or "Abs":
                return MathPerLane(invocation, target.Name, V(0), target.Name == "Abs" ? null : V(1));
            case "Negate":
                return Map(V(0), p => new IrNegate(p, ScalarType.Single));
            default:
                return VectorOperator(invocation, target.Name switch
                {
                    "Add" => BinaryOperatorKind.Add,
                    "Subtract" => BinaryOperatorKind.Subtract,
                    "Multiply" => BinaryOperatorKind.Multiply,
                    _ => BinaryOperatorKind.Divide,
                }, arguments[0]!, arguments[1]!);
        }
    }

    /// <summary>Lerp per lane, fused where the runtime fuses it (see the file's comment).</summary>
    private StructValue Lerp(StructValue a, StructValue b, IrExpression t)
    {
        IrExpression amount = t; // read as often as needed: the expression DAG computes it once
        IrExpression oneMinus = Sub(FloatOne, amount);
        IrExpression fused = new IrLogical(LogicalOperator.Or,
            new IrExternal("global::System.Runtime.Intrinsics.X86.Fma.IsSupported", ScalarType.Boolean),
            new IrExternal("global::System.Runtime.Intrinsics.Arm.AdvSimd.Arm64.IsSupported", ScalarType.Boolean));
        return new StructValue(a.Layout, a.Parts.Select((p, i) =>
        {
            IrExpression scaled = Mul(b.Parts[i], amount);
            IrExpression fma = new IrCall(MathFunction.FusedMultiplyAdd, MathHost.MathF, new[] { p, oneMinus, scaled }.ToEquatableArray(), ScalarType.Single);
            return (IrExpression)new IrConditional(fused, fma, Add(Mul(p, oneMinus), scaled), ScalarType.Single);
        }).ToArray());
    }

    private StructValue MathPerLane(IOperation site, string name, StructValue a, StructValue? b)
    {
        MathFunction function = name switch { "Min" => MathFunction.Min, "Max" => MathFunction.Max, _ => MathFunction.Abs };
        StructValue result = new(a.Layout, a.Parts.Select((p, i) => (IrExpression)new IrCall(function, MathHost.MathF,
            (b is null ? new[] { p } : new[] { p, b.Parts[i] }).ToEquatableArray(), ScalarType.Single)).ToArray());
        if (result.Parts.Any(DependsOnVariable) && MathFunctions.NonSmoothConvention(function) is { } convention)
        {
            _diagnostics.Add(DiagnosticInfo.Create(DiagnosticDescriptors.NonSmoothFunction, site.Syntax.GetLocation(),
                a.Layout.Type.Name + "." + name, convention + " (per component, as MathF." + name + ")"));
        }

        return result;
    }

    /// <summary><c>new T(…)</c>, <c>new T { F = … }</c>: a System.Numerics constructor, or a user struct's constructor inlined.</summary>
    private StructValue? LowerStructCreation(IObjectCreationOperation creation, StructLayout layout)
    {
        IMethodSymbol? constructor = creation.Constructor;
        IrExpression[] parts;
        if (constructor is null || (constructor.Parameters.Length == 0 && constructor.IsImplicitlyDeclared))
        {
            parts = Zeros(layout).Parts;
        }
        else if (layout.IsNumericsVector)
        {
            var values = new List<IrExpression>();
            foreach (IArgumentOperation argument in creation.Arguments.OrderBy(a => a.Parameter?.Ordinal ?? 0))
            {
                switch (LayoutOf(argument.Value.Type) is not null ? LowerStruct(argument.Value) : LowerScalarArgument(argument))
                {
                    case StructValue inner: values.AddRange(inner.Parts); break;
                    case IrExpression scalar: values.Add(Convert(scalar, ScalarType.Single)); break;
                    default: return null;
                }
            }

            if (values.Count == 1 && layout.Count > 1)
            {
                values = Enumerable.Repeat(values[0], layout.Count).ToList(); // one node in the DAG, computed once
            }

            if (values.Count != layout.Count)
            {
                return Refuse(creation, $"the constructor '{Text(creation)}'", "build the vector from its components: new " + layout.Type.Name + "(x, y, …)");
            }

            parts = values.ToArray();
        }
        else if (InlineConstructor(creation, constructor, layout) is { } built)
        {
            parts = built;
        }
        else
        {
            return null;
        }

        return ApplyInitializer(creation.Initializer, layout, parts);
    }

    private object? LowerScalarArgument(IArgumentOperation argument) =>
        ScalarTypeOf(argument.Value.Type!) is null ? Refuse(argument, $"the argument '{Text(argument)}'", StructRewrite) : LowerExpression(argument.Value);

    /// <summary>An object initializer or a <c>with</c> expression's assignments of fields, applied to <paramref name="parts"/>.</summary>
    private StructValue? ApplyInitializer(IObjectOrCollectionInitializerOperation? initializer, StructLayout layout, IrExpression[] parts)
    {
        foreach (IOperation item in initializer?.Initializers ?? System.Collections.Immutable.ImmutableArray<IOperation>.Empty)
        {
            ISymbol? member = item switch
            {
                ISimpleAssignmentOperation { Target: IFieldReferenceOperation field } => field.Field,
                ISimpleAssignmentOperation { Target: IPropertyReferenceOperation property } => property.Property,
                _ => null,
            };
            if (member is null || layout.Member(member) is not { } found)
            {
                return Refuse(item, $"the initializer '{Text(item)}'", "initialize the struct's fields with plain assignments: new T { X = x, Y = y }");
            }

            IOperation value = ((ISimpleAssignmentOperation)item).Value;
            if (found.Nested is not null)
            {
                if (LowerStruct(value) is not { } inner)
                {
                    return null;
                }

                Array.Copy(inner.Parts, 0, parts, found.Offset, found.Count);
            }
            else if (LowerExpression(value) is { } scalar)
            {
                parts[found.Offset] = Convert(scalar, layout.Components[found.Offset].Type);
            }
            else
            {
                return null;
            }
        }

        return new StructValue(layout, parts);
    }
}
