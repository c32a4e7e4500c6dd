using System;
using System.Collections.Generic;
using System.Linq;
using DerivGen.Generator.Diagnostics;
using DerivGen.Generator.Model;
using Microsoft.CodeAnalysis;
using Microsoft.CodeAnalysis.CSharp.Syntax;
using Microsoft.CodeAnalysis.Operations;

namespace DerivGen.Generator.Lowering;

// Struct values by scalar replacement: a System.Numerics Vector2/3/4 or a user struct (StructLayout) is lowered to one
// scalar IR value per component. A struct local is one IR local per component (v → vX, vY, vZ); a struct parameter is
// read component by component (p.X); a data array of structs element by element (Points[i].X). Vector operations
// become their component formulas, written in the order that reproduces the runtime's SIMD results bit for bit (see
// VectorDot). Constructors, helpers, local functions and struct members (methods, expression-bodied properties) that
// take or return structs are inlined at each call.
internal sealed partial class BodyLowerer
{
    private const string StructRewrite =
        "a struct is taken apart into its fields when they are double, float, int or such structs; read and write its fields, or build it with a constructor of simple field assignments";

    /// <summary>The IR local names of each component of a struct local (or of a struct parameter of an inlined body).</summary>
    private readonly Dictionary<ISymbol, string[]> _structLocals = new(SymbolEqualityComparer.Default);

    /// <summary>The value of <c>this</c> in the struct member being inlined (innermost last).</summary>
    private readonly List<StructValue> _structThis = new();

    private readonly Dictionary<ITypeSymbol, StructLayout?> _layouts = new(SymbolEqualityComparer.Default);

    /// <summary>Struct locals refused at their declaration: their uses are not reported again.</summary>
    private readonly HashSet<ILocalSymbol> _refusedStructLocals = new(SymbolEqualityComparer.Default);

    /// <summary>A struct value: one IR expression per component of its layout.</summary>
    private sealed class StructValue
    {
        public StructValue(StructLayout layout, IrExpression[] parts)
        {
            Layout = layout;
            Parts = parts;
        }

        public StructLayout Layout { get; }

        public IrExpression[] Parts { get; }
    }

    private StructLayout? LayoutOf(ITypeSymbol? type)
    {
        if (type is null)
        {
            return null;
        }

        if (!_layouts.TryGetValue(type, out StructLayout? layout))
        {
            layout = StructLayout.Of(type, out _);
            _layouts[type] = layout;
            if (layout is not null && !layout.IsNumericsVector)
            {
                RecordSymbolReads(type); // an edit of the struct's declaration must lower the method again
            }
        }

        return layout;
    }

    private void RecordSymbolReads(ISymbol symbol)
    {
        foreach (SyntaxReference reference in symbol.DeclaringSyntaxReferences)
        {
            _helpers.Reads.Add(reference.SyntaxTree.FilePath);
        }
    }

    // ---------------------------------------------------------------------------------------------------------------
    // Hooks called from BodyLowerer.cs

    /// <summary>A scalar read through a struct (<c>v.X</c>, <c>Vector3.Dot(a, b)</c>, <c>v.Length()</c>, an inlined
    /// member or helper taking structs). False when the operation has nothing to do with structs.</summary>
    private bool TryLowerStructScalar(IOperation operation, out IrExpression? result)
    {
        result = null;
        switch (operation)
        {
            case IPropertyReferenceOperation { Property.Name: "Length", Instance: { Type: IArrayTypeSymbol { ElementType: var elementType } } array }
                when LayoutOf(elementType) is not null && StructDataText(array) is { } data:
                result = new IrExternal(data + ".Length", ScalarType.Int32);
                return true;
            case IMemberReferenceOperation { Instance: ILocalReferenceOperation refused } when _refusedStructLocals.Contains(refused.Local):
                return true; // reported at the declaration
            case IFieldReferenceOperation { Instance: { } instance, Field: var field } when IsStructInstance(instance):
                result = ReadMember(operation, instance, field);
                return true;
            case IPropertyReferenceOperation { Instance: { } instance, Property: { IsIndexer: false } property } when IsStructInstance(instance):
                result = ReadMember(operation, instance, property);
                return true;
            case IInvocationOperation invocation when StructLayout.IsNumericsVectorType(invocation.TargetMethod.ContainingType):
                result = LowerVectorMethod(invocation) as IrExpression;
                return true;
            case IInvocationOperation { Instance: { } instance } invocation when IsStructInstance(instance):
                result = InlineCall(invocation, invocation.TargetMethod, LowerStruct(instance)) as IrExpression;
                return true;
            case IInvocationOperation invocation when TakesOrReturnsStruct(invocation.TargetMethod) && IsInlinable(invocation.TargetMethod):
                result = InlineCall(invocation, invocation.TargetMethod, null) as IrExpression;
                return true;
            default:
                return false;
        }
    }

    /// <summary>Whether the instance of a member access is a struct value this lowering takes apart.</summary>
    private bool IsStructInstance(IOperation instance) =>
        instance is IInstanceReferenceOperation ? _structThis.Count > 0 : LayoutOf(instance.Type) is not null;

    private bool TakesOrReturnsStruct(IMethodSymbol method) =>
        LayoutOf(method.ReturnType) is not null || method.Parameters.Any(p => LayoutOf(p.Type) is not null);

    /// <summary>A local function, or a method of this compilation with a body (what <see cref="InlineCall"/> can inline).</summary>
    private bool IsInlinable(IMethodSymbol method) =>
        method.MethodKind == MethodKind.LocalFunction
        || (method.MethodKind == MethodKind.Ordinary && method.DeclaringSyntaxReferences.Length == 1
            && SymbolEqualityComparer.Default.Equals(method.ContainingAssembly, _helpers.Compilation.Assembly));

    /// <summary><c>T v = e;</c> for a struct type T. False when T is not a struct this lowering takes apart.</summary>
    private bool TryLowerStructDeclarator(IVariableDeclaratorOperation declarator)
    {
        ILocalSymbol local = declarator.Symbol;
        if (LayoutOf(local.Type) is not { } layout)
        {
            if (StructLayout.Of(local.Type, out string? problem) is null && problem is not null)
            {
                Unsupported(declarator, $"the local '{local.Name}' of type '{local.Type.ToDisplayString()}'", problem + "; keep the fields you need in double, float or int locals");
                _refusedStructLocals.Add(local);
                return true;
            }

            return false;
        }

        string[] names = DeclareStructLocal(local, local.Name, layout);
        IOperation? initializer = declarator.Initializer?.Value ?? declarator.GetVariableInitializer()?.Value;
        if (initializer is not null && LowerStruct(initializer) is { } value)
        {
            AssignStruct(names, value);
        }

        return true;
    }

    private string[] DeclareStructLocal(ISymbol symbol, string baseName, StructLayout layout)
    {
        string[] names = layout.Components.Select(c => FreshName(baseName + string.Concat(c.Path.Split('.')))).ToArray();
        _structLocals[symbol] = names;
        return names;
    }

    /// <summary>Assignments to struct locals and to their components. False when the statement is none of those.</summary>
    private bool TryLowerStructStatement(IOperation expression)
    {
        if (CapturedStructWrite(expression) is { } captured)
        {
            // An inlined local function's statements run before the expression that calls it, which may read the local first.
            Unsupported(expression, $"the assignment to '{captured.Name}', captured by the local function '{_inlining[_inlining.Count - 1].Name}'",
                "let it return the new value and assign that at the call ('" + captured.Name + " = " + _inlining[_inlining.Count - 1].Name + "(…);')");
            return true;
        }

        switch (expression)
        {
            case ISimpleAssignmentOperation { Target: ILocalReferenceOperation or IParameterReferenceOperation } assignment
                when StructNames(assignment.Target) is { } names:
                if (LowerStruct(assignment.Value) is { } value)
                {
                    AssignStruct(names, value);
                }

                return true;

            case ICompoundAssignmentOperation { Target: ILocalReferenceOperation or IParameterReferenceOperation } compound
                when StructNames(compound.Target) is { } names:
            {
                // v op= e is v = v op e (the vector operators are component-wise; C# spec §12.21.4).
                if (LowerStruct(compound.Target) is { } current
                    && (LayoutOf(compound.Value.Type) is not null ? LowerStruct(compound.Value) : (object?)LowerExpression(compound.Value)) is { } right
                    && VectorOperator(compound, compound.OperatorKind, current, right) is { } combined)
                {
                    AssignStruct(names, combined);
                }

                return true;
            }

            case IAssignmentOperation { Target: IFieldReferenceOperation or IPropertyReferenceOperation } assignment
                when ComponentTarget(assignment.Target) is { } component:
                LowerComponentAssignment(assignment, component.Names, component.Layout, component.Offset, component.Count);
                return true;

            case IIncrementOrDecrementOperation { Target: IFieldReferenceOperation or IPropertyReferenceOperation } step
                when ComponentTarget(step.Target) is { Count: 1 } single:
            {
                string name = single.Names[single.Offset];
                ScalarType type = single.Layout.Components[single.Offset].Type;
                var one = new IrConstant(type == ScalarType.Int32 ? 1 : BitConverter.DoubleToInt64Bits(1.0), type);
                AssignLocal(name, new IrBinary(step.Kind == OperationKind.Increment ? BinaryOperator.Add : BinaryOperator.Subtract,
                    new IrLocal(name, type), one, type));
                return true;
            }

            default:
                return false;
        }
    }

    /// <summary>The struct local of the method that a statement of an inlined local function writes, or null.</summary>
    private ILocalSymbol? CapturedStructWrite(IOperation expression)
    {
        if (_inlining.Count == 0)
        {
            return null;
        }

        IOperation? target = expression switch
        {
            IAssignmentOperation assignment => assignment.Target,
            IIncrementOrDecrementOperation increment => increment.Target,
            _ => null,
        };
        while (target is IMemberReferenceOperation { Instance: { } instance })
        {
            target = instance;
        }

        return target is ILocalReferenceOperation { Local: var local } && LayoutOf(local.Type) is not null
            && !SymbolEqualityComparer.Default.Equals(local.ContainingSymbol, _inlining[_inlining.Count - 1].OriginalDefinition)
            ? local
            : null;
    }

    /// <summary>The IR locals of a struct local (or of a struct parameter bound by an inlined call).</summary>
    private string[]? StructNames(IOperation target) => target switch
    {
        ILocalReferenceOperation local when LayoutOf(local.Type) is not null =>
            _structLocals.TryGetValue(local.Local, out string[]? names) ? names : null,
        IParameterReferenceOperation parameter when LayoutOf(parameter.Type) is not null =>
            _structLocals.TryGetValue(parameter.Parameter.OriginalDefinition, out string[]? bound) ? bound : null,
        _ => null,
    };

    /// <summary>A field (or auto property) of a struct local, possibly nested: the locals and the component range it covers.</summary>
    private (string[] Names, StructLayout Layout, int Offset, int Count)? ComponentTarget(IOperation target)
    {
        (IOperation? instance, ISymbol? member) = target switch
        {
            IFieldReferenceOperation field => (field.Instance, (ISymbol)field.Field),
            IPropertyReferenceOperation { Property.IsIndexer: false } property => (property.Instance, property.Property),
            _ => (null, null),
        };
        if (instance is null || member is null)
        {
            return null;
        }

        if (StructNames(instance) is { } names && LayoutOf(instance.Type) is { } layout && layout.Member(member) is { } found)
        {
            return (names, layout, found.Offset, found.Count);
        }

        if (instance is IFieldReferenceOperation or IPropertyReferenceOperation && ComponentTarget(instance) is { } outer
            && LayoutOf(instance.Type) is { } innerLayout && innerLayout.Member(member) is { } inner)
        {
            return (outer.Names, outer.Layout, outer.Offset + inner.Offset, inner.Count);
        }

        return null;
    }

    private void LowerComponentAssignment(IAssignmentOperation assignment, string[] names, StructLayout layout, int offset, int count)
    {
        if (count > 1)
        {
            if (assignment is ISimpleAssignmentOperation simple && LowerStruct(simple.Value) is { } value)
            {
                AssignStruct(names.Skip(offset).Take(count).ToArray(), value);
            }
            else if (assignment is not ISimpleAssignmentOperation)
            {
                Unsupported(assignment, $"the compound assignment '{Text(assignment)}' of a struct field", "write it as a plain assignment: s.F = s.F + e");
            }

            return;
        }

        string name = names[offset];
        ScalarType type = layout.Components[offset].Type;
        switch (assignment)
        {
            case ISimpleAssignmentOperation simple:
                if (LowerExpression(simple.Value) is { } value)
                {
                    AssignLocal(name, Convert(value, type));
                }

                break;
            case ICompoundAssignmentOperation compound when compound.OperatorMethod is null && TryBinaryOperator(compound.OperatorKind, out BinaryOperator op):
            {
                IrExpression? right = LowerExpression(compound.Value);
                ScalarType? operationType = compound.InConversion.IsIdentity ? type : ScalarTypeOfConversion(compound);
                if (right is not null && operationType is { } computed)
                {
                    IrExpression combined = new IrBinary(op, Convert(new IrLocal(name, type), computed), Convert(right, computed), computed);
                    AssignLocal(name, Convert(combined, type));
                }

                break;
            }

            default:
                Unsupported(assignment, $"the assignment '{Text(assignment)}'", "use = or a compound assignment with + - * / on the field");
                break;
        }
    }

    /// <summary>Assigns every component. When a new component reads a local that an earlier assignment changes
    /// (<c>p = Advance(p)</c>, a swap of fields), the values are kept in temporaries first, as C# evaluates them.</summary>
    private void AssignStruct(string[] names, StructValue value)
    {
        IrExpression[] parts = value.Parts;
        var targets = new HashSet<string>(names, StringComparer.Ordinal);
        if (parts.Length > 1 && parts.Any(p => ReadsAny(p, targets)))
        {
            parts = parts.Select((p, i) => p is IrConstant or IrParameter or IrExternal ? p : Temporary(names[i] + "New", p)).ToArray();
        }

        for (int i = 0; i < names.Length && i < parts.Length; i++)
        {
            AssignLocal(names[i], parts[i]);
        }
    }

    private IrExpression Temporary(string name, IrExpression value)
    {
        string local = FreshName(name);
        AssignLocal(local, value);
        return new IrLocal(local, value.Type);
    }

    /// <summary>A struct value as locals of its own: an argument of an inlined call is evaluated once, where it is written.</summary>
    private StructValue Materialize(string baseName, StructValue value)
    {
        string[] names = value.Layout.Components.Select(c => FreshName(baseName + string.Concat(c.Path.Split('.')))).ToArray();
        for (int i = 0; i < names.Length; i++)
        {
            AssignLocal(names[i], value.Parts[i]);
        }

        return new StructValue(value.Layout, names.Select((n, i) => (IrExpression)new IrLocal(n, value.Parts[i].Type)).ToArray());
    }

    private static bool ReadsAny(IrExpression expression, HashSet<string> locals) => expression switch
    {
        IrLocal local => locals.Contains(local.Name),
        IrNegate negate => ReadsAny(negate.Operand, locals),
        IrConvert convert => ReadsAny(convert.Operand, locals),
        IrBinary binary => ReadsAny(binary.Left, locals) || ReadsAny(binary.Right, locals),
        IrCall call => call.Arguments.Any(a => ReadsAny(a, locals)),
        IrUserCall call => call.Arguments.Any(a => ReadsAny(a, locals)),
        IrElement element => element.Indices.Any(a => ReadsAny(a, locals)),
        IrCompare compare => ReadsAny(compare.Left, locals) || ReadsAny(compare.Right, locals),
        IrLogical logical => ReadsAny(logical.Left, locals) || (logical.Right is not null && ReadsAny(logical.Right, locals)),
        IrConditional conditional => ReadsAny(conditional.Condition, locals) || ReadsAny(conditional.WhenTrue, locals) || ReadsAny(conditional.WhenFalse, locals),
        _ => false,
    };

    /// <summary><c>foreach (T p in data)</c> over an array of structs: the loop over the index with p's components read
    /// from the element. False when the element is not a struct.</summary>
    private bool TryLowerStructForEach(IForEachLoopOperation loop)
    {
        IOperation collection = loop.Collection is IConversionOperation conversion ? conversion.Operand : loop.Collection;
        if (loop.Locals.Length != 1 || LayoutOf(loop.Locals[0].Type) is not { } layout)
        {
            return false;
        }

        ILocalSymbol element = loop.Locals[0];
        if (collection.Type is not IArrayTypeSymbol { Rank: 1 } array || !SymbolEqualityComparer.Default.Equals(array.ElementType, element.Type)
            || StructDataText(collection) is not { } data)
        {
            Unsupported(loop, "the foreach loop '" + Text(loop).Split('{')[0].Trim() + "'",
                "foreach over structs works over a one-dimensional array of them that is a parameter, a field of this instance or a static readonly field");
            return true;
        }

        if (!layout.ReadableFrom(_method.ContainingType, _helpers.Compilation))
        {
            Unsupported(loop, "the foreach loop over '" + element.Type.Name + "' values, whose fields are not accessible here", "make the struct's fields or properties internal or public");
            return true;
        }

        string index = FreshName(element.Name + "Index");
        string[] names = DeclareStructLocal(element, element.Name, layout);
        LoweredLoop lowered = LowerLoop(loop.Body, System.Collections.Immutable.ImmutableArray<IOperation>.Empty, null);
        var indices = new IrExpression[] { new IrLocal(index, ScalarType.Int32) }.ToEquatableArray();
        var statements = new List<IrStatement>();
        for (int i = 0; i < names.Length; i++)
        {
            statements.Add(new IrAssign(names[i], new IrElement(data + StructLayout.ElementMemberMark + "." + layout.Components[i].Path, indices, layout.Components[i].Type)));
        }

        statements.AddRange(lowered.Body);
        AddCountedLoop(new IrFor(index, new IrConstant(0, ScalarType.Int32), new IrExternal(data + ".Length", ScalarType.Int32), false,
            statements.ToEquatableArray()), lowered.Exits);
        return true;
    }

    /// <summary>The C# text of a data array of structs (not a variable): a parameter, a field of this instance or a
    /// static readonly field.</summary>
    private string? StructDataText(IOperation data) => data switch
    {
        IParameterReferenceOperation { Parameter: { Type: IArrayTypeSymbol { Rank: 1 } } parameter } when !_variables.Contains(Identifiers.Escape(parameter.Name)) =>
            Identifiers.Escape(parameter.Name),
        IFieldReferenceOperation { Instance: IInstanceReferenceOperation, Field: { Type: IArrayTypeSymbol { Rank: 1 } } field } => "this." + Identifiers.Escape(field.Name),
        IFieldReferenceOperation { Field: { IsStatic: true, IsReadOnly: true, Type: IArrayTypeSymbol { Rank: 1 } } field } =>
            FullyQualified(field.ContainingType) + "." + Identifiers.Escape(field.Name),
        _ => null,
    };
}
