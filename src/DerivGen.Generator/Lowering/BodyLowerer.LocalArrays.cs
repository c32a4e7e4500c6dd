using System;
using System.Collections.Generic;
using System.Globalization;
using System.Linq;
using DerivGen.Generator.Model;
using Microsoft.CodeAnalysis;
using Microsoft.CodeAnalysis.CSharp.Syntax;
using Microsoft.CodeAnalysis.Operations;

namespace DerivGen.Generator.Lowering;

// Local arrays by scalar replacement (docs/design/local-arrays.md): a double[], float[], int[] or Span<T> local created
// with a constant length of at most 64 (new T[n], stackalloc T[n], {…}, [a, b, c]) becomes one scalar local per element
// (k1_0, k1_1, …), all zero or as initialised. Every index must be a compile-time constant once the for loops with
// constant bounds that index such an array with their index are unrolled (only those loops). Length is the constant;
// Clear, Fill and CopyTo become element assignments; Slice and AsSpan with constant offsets are views of the same
// scalars. Arrays and spans passed to an inlined method bind its parameter to the caller's data (with an offset for a
// slice), vector variable or local array. Anything else is refused; arrays indexed at run time come with reverse mode.
internal sealed partial class BodyLowerer
{
    /// <summary>The longest local array replaced by scalars.</summary>
    public const int MaxLocalArrayLength = 64;

    /// <summary>Loop iterations unrolled in one method at most (a nest of unrolled loops multiplies).</summary>
    private const int MaxUnrolledIterations = 4096;

    private const string RunTimeIndexNote = "local arrays indexed at run time are not in this version";

    /// <summary>Local arrays and spans, and array or span parameters of inlined methods, by symbol.</summary>
    private readonly Dictionary<ISymbol, ArrayBinding> _arrays = new(SymbolEqualityComparer.Default);

    /// <summary>The indices of the loops being unrolled, with their value in this copy of the body.</summary>
    private readonly Dictionary<ILocalSymbol, int> _constantLocals = new(SymbolEqualityComparer.Default);

    private int _unrolledIterations;

    /// <summary>Array locals whose declaration was refused: their uses report nothing more.</summary>
    private readonly HashSet<ILocalSymbol> _refusedArrays = new(SymbolEqualityComparer.Default);

    private abstract class ArrayBinding
    {
        protected ArrayBinding(string name, ScalarType type)
        {
            Name = name;
            Type = type;
        }

        /// <summary>The user's name of the array (for messages).</summary>
        public string Name { get; }

        public ScalarType Type { get; }

        public abstract IrExpression Length { get; }
    }

    /// <summary>A local array: one scalar local per element (a slice is a view of some of them).</summary>
    private sealed class LocalArray : ArrayBinding
    {
        public LocalArray(string name, ScalarType type, IReadOnlyList<string> elements, int frame)
            : base(name, type)
        {
            Elements = elements;
            Frame = frame;
        }

        public IReadOnlyList<string> Elements { get; }

        /// <summary>The inlined body it was declared in (0: the method's own).</summary>
        public int Frame { get; }

        public override IrExpression Length => new IrConstant(Elements.Count, ScalarType.Int32);
    }

    /// <summary>Data or a vector variable of the caller, seen from <see cref="Offset"/> on (a slice) or whole.</summary>
    private sealed class DataView : ArrayBinding
    {
        public DataView(string name, ScalarType type, string text, IrExpression? offset, IrExpression length, int rank)
            : base(name, type)
        {
            Text = text;
            Offset = offset;
            DataLength = length;
            Rank = rank;
        }

        public string Text { get; }

        public IrExpression? Offset { get; }

        public IrExpression DataLength { get; }

        public int Rank { get; }

        public override IrExpression Length => DataLength;
    }

    /// <summary>The element type and rank of a double, float or int array or span, or null.</summary>
    private static (ScalarType Element, int Rank)? ArrayShape(ITypeSymbol type) => type switch
    {
        IArrayTypeSymbol { Rank: 1 or 2 } array when ScalarTypeOf(array.ElementType) is ScalarType.Double or ScalarType.Single or ScalarType.Int32 =>
            (ScalarTypeOf(array.ElementType)!.Value, array.Rank),
        INamedTypeSymbol { TypeArguments.Length: 1 } span when IsSpan(span) => (ScalarTypeOf(span.TypeArguments[0])!.Value, 1),
        _ => null,
    };

    private static IOperation Unwrap(IOperation operation)
    {
        while (true)
        {
            switch (operation)
            {
                case IConversionOperation { OperatorMethod: null } conversion when conversion.Operand.Type is not null && ArrayShape(conversion.Operand.Type) is not null:
                    operation = conversion.Operand;
                    break;
                case IConversionOperation { IsImplicit: true, OperatorMethod: not null } conversion when conversion.Operand.Type is not null && ArrayShape(conversion.Operand.Type) is not null:
                    operation = conversion.Operand; // array → span
                    break;
                case IParenthesizedOperation parenthesized:
                    operation = parenthesized.Operand;
                    break;
                default:
                    return operation;
            }
        }
    }

    /// <summary>A local of array or span type: declared as a local array (or a view of data), or refused.</summary>
    private void DeclareArray(IVariableDeclaratorOperation declarator, (ScalarType Element, int Rank) shape)
    {
        ILocalSymbol local = declarator.Symbol;
        _refusedArrays.Add(local); // until it is declared
        IOperation? initializer = declarator.Initializer?.Value ?? declarator.GetVariableInitializer()?.Value;
        string advice = "create a local array with new " + Keyword(shape.Element) + "[n], stackalloc " + Keyword(shape.Element)
            + "[n] or a collection expression [a, b, c] of a constant length of at most " + MaxLocalArrayLength.ToString(CultureInfo.InvariantCulture)
            + ", where it is declared, or view data with AsSpan or Slice";
        if (initializer is null || shape.Rank != 1)
        {
            Unsupported(declarator, "the local '" + local.Name + "' of type '" + local.Type.ToDisplayString() + "'" + (initializer is null ? " declared without a value" : ""), advice);
            return;
        }

        if (ResolveArray(initializer, includeData: true) is { } view)
        {
            _arrays[local] = view; // another name for the same elements or data
            _refusedArrays.Remove(local);
            return;
        }

        if (!TryArrayCreation(Unwrap(initializer), out IOperation? lengthOperation, out List<IOperation>? values, out string what))
        {
            Unsupported(declarator, "the local '" + local.Name + "' initialised with '" + Text(initializer) + "'", advice);
            return;
        }

        int? length = values?.Count ?? (lengthOperation is null ? null : ConstantIntOf(lengthOperation));
        if (length is null)
        {
            Unsupported(declarator, "the local array '" + local.Name + "' of length '" + (lengthOperation is null ? what : Text(lengthOperation)) + "'",
                "its length is not a compile-time constant, and " + RunTimeIndexNote + "; give it a constant length of at most "
                + MaxLocalArrayLength.ToString(CultureInfo.InvariantCulture) + " (a literal or a const, e.g. new double[4]) and index it with constants or with the index of a for loop with constant bounds");
            return;
        }

        if (length.Value > MaxLocalArrayLength || length.Value < 0)
        {
            Unsupported(declarator, "the local array '" + local.Name + "' of " + length.Value.ToString(CultureInfo.InvariantCulture) + " elements",
                "local arrays of at most " + MaxLocalArrayLength.ToString(CultureInfo.InvariantCulture) + " elements are replaced by scalars, and longer ones are not in this version; split it into arrays of at most "
                + MaxLocalArrayLength.ToString(CultureInfo.InvariantCulture) + " elements, or keep running sums in double locals");
            return;
        }

        var lowered = new List<IrExpression>();
        foreach (IOperation value in values ?? new List<IOperation>())
        {
            if (LowerExpression(value) is not { } element)
            {
                return;
            }

            lowered.Add(Convert(element, shape.Element));
        }

        var names = new List<string>();
        for (int i = 0; i < length.Value; i++)
        {
            string name = FreshName(local.Name + "_" + i.ToString(CultureInfo.InvariantCulture));
            names.Add(name);
            AssignLocal(name, i < lowered.Count ? lowered[i] : Zero(shape.Element));
        }

        _arrays[local] = new LocalArray(local.Name, shape.Element, names, _inline?.Id ?? 0);
        _refusedArrays.Remove(local);
    }

    private static string Keyword(ScalarType type) => DerivGen.Generator.Emit.ExpressionWriter.TypeKeyword(type);

    /// <summary><c>new T[n]</c>, <c>new T[] { … }</c>, <c>{ … }</c>, <c>[a, b]</c>, <c>stackalloc T[n]</c>, <c>stackalloc T[] { … }</c>.</summary>
    private static bool TryArrayCreation(IOperation creation, out IOperation? length, out List<IOperation>? values, out string what)
    {
        length = null;
        values = null;
        what = Text(creation);
        switch (creation)
        {
            case IArrayCreationOperation { DimensionSizes.Length: 1 } array:
                length = array.DimensionSizes[0];
                values = array.Initializer?.ElementValues.ToList();
                return true;
            case ICollectionExpressionOperation collection when collection.Elements.All(e => e is not ISpreadOperation):
                values = collection.Elements.ToList();
                return true;
        }

        if (creation.SemanticModel is not { } model)
        {
            return false;
        }

        switch (creation.Syntax)
        {
            case StackAllocArrayCreationExpressionSyntax explicitStackalloc when explicitStackalloc.Type is ArrayTypeSyntax { RankSpecifiers.Count: 1 } arrayType
                && arrayType.RankSpecifiers[0].Sizes.Count == 1:
                ExpressionSyntax size = arrayType.RankSpecifiers[0].Sizes[0];
                if (explicitStackalloc.Initializer is { } initializer)
                {
                    values = initializer.Expressions.Select(e => model.GetOperation(e)).OfType<IOperation>().ToList();
                    return values.Count == initializer.Expressions.Count;
                }

                if (size is OmittedArraySizeExpressionSyntax)
                {
                    return false;
                }

                length = model.GetOperation(size);
                return length is not null;
            case ImplicitStackAllocArrayCreationExpressionSyntax implicitStackalloc:
                values = implicitStackalloc.Initializer.Expressions.Select(e => model.GetOperation(e)).OfType<IOperation>().ToList();
                return values.Count == implicitStackalloc.Initializer.Expressions.Count;
        }

        return false;
    }

    /// <summary>
    /// What an expression of array or span type stands for: a local array or a bound parameter, a view of one
    /// (AsSpan, Slice), or — with <paramref name="includeData"/> — data or a vector variable. Null otherwise.
    /// </summary>
    /// <remarks>With <paramref name="lower"/> false nothing is lowered or emitted (a question about the code, not a use of
    /// it): a slice of data then has a placeholder offset and length.</remarks>
    private ArrayBinding? ResolveArray(IOperation operation, bool includeData, bool lower = true)
    {
        operation = Unwrap(operation);
        switch (operation)
        {
            case ILocalReferenceOperation local when _arrays.TryGetValue(local.Local, out ArrayBinding? binding):
                return binding;
            case IParameterReferenceOperation parameter when _arrays.TryGetValue(parameter.Parameter.OriginalDefinition, out ArrayBinding? binding):
                return binding;
            case IInvocationOperation { TargetMethod.Name: "AsSpan" or "AsMemory" or "Slice" } invocation:
                return ResolveSlice(invocation, lower);
        }

        if (includeData && operation.Type is { } type && ArrayShape(type) is { } shape && DataText(operation) is { } text)
        {
            return new DataView(SimpleName(text), shape.Element, text, null, new IrExternal(text + ".Length", ScalarType.Int32), shape.Rank);
        }

        return null;
    }

    /// <summary>The last identifier of a C# expression naming data (for messages and the names of its offset locals).</summary>
    private static string SimpleName(string text)
    {
        string last = text.Substring(text.LastIndexOf('.') + 1).TrimStart('@');
        return last.Length > 0 && last.All(c => char.IsLetterOrDigit(c) || c == '_') ? last : "data";
    }

    /// <summary><c>a.AsSpan()</c>, <c>a.AsSpan(start[, length])</c>, <c>s.Slice(start[, length])</c> of a local array or of data.</summary>
    private ArrayBinding? ResolveSlice(IInvocationOperation invocation, bool lower)
    {
        IMethodSymbol method = invocation.TargetMethod;
        bool isExtension = method.IsExtensionMethod || (method.IsStatic && invocation.Instance is null);
        IOperation? source = isExtension ? invocation.Arguments.FirstOrDefault()?.Value : invocation.Instance;
        IArgumentOperation[] rest = invocation.Arguments.Skip(isExtension ? 1 : 0).ToArray();
        if (source is null || rest.Length > 2 || rest.Any(a => a.Value.Type?.SpecialType != SpecialType.System_Int32)
            || ResolveArray(source, includeData: true, lower) is not { } whole)
        {
            return null;
        }

        if (whole is LocalArray array)
        {
            int? start = rest.Length > 0 ? ConstantIntOf(rest[0].Value) : 0;
            int? count = rest.Length > 1 ? ConstantIntOf(rest[1].Value) : array.Elements.Count - start;
            if (start is null || count is null || start < 0 || count < 0 || start + count > array.Elements.Count)
            {
                return null; // refused where it is used, with the advice for local arrays
            }

            return new LocalArray(array.Name, array.Type, array.Elements.Skip(start.Value).Take(count.Value).ToList(), array.Frame);
        }

        var view = (DataView)whole;
        if (rest.Length == 0)
        {
            return view;
        }

        if (!lower)
        {
            return view.Rank != 1 ? null : new DataView(view.Name, view.Type, view.Text, new IrConstant(0, ScalarType.Int32), new IrExternal(view.Text + ".Length", ScalarType.Int32), 1);
        }

        if (view.Rank != 1 || LowerExpression(rest[0].Value) is not { } offset)
        {
            return null;
        }

        IrExpression combined = view.Offset is null ? offset : new IrBinary(BinaryOperator.Add, view.Offset, offset, ScalarType.Int32);
        IrExpression length = rest.Length > 1
            ? LowerExpression(rest[1].Value) ?? new IrConstant(0, ScalarType.Int32)
            : new IrBinary(BinaryOperator.Subtract, view.DataLength, offset, ScalarType.Int32);
        return new DataView(view.Name, view.Type, view.Text, Stable(combined, view.Name + "Offset"), Stable(length, view.Name + "Length"), 1);
    }

    /// <summary>A constant or a plain read as it is; anything else evaluated once, here, into an int local.</summary>
    private IrExpression Stable(IrExpression value, string name)
    {
        if (ConstantInt(value) is int constant)
        {
            return new IrConstant(constant, ScalarType.Int32);
        }

        if (value is IrLocal or IrParameter or IrExternal)
        {
            return value;
        }

        string local = FreshName(name);
        AssignLocal(local, value);
        return new IrLocal(local, ScalarType.Int32);
    }

    /// <summary>The array or span argument of an inlined method: what the parameter stands for in its body.</summary>
    private ArrayBinding? BindArrayArgument(IArgumentOperation argument, IParameterSymbol parameter)
    {
        if (ResolveArray(argument.Value, includeData: true) is { } binding)
        {
            return binding;
        }

        IOperation value = Unwrap(argument.Value);
        string advice = value is IArrayElementReferenceOperation { Type: IArrayTypeSymbol }
            ? "jagged arrays are not read in this version; keep the data in a 2-D array (double[,]) and pass it with the row index, reading m[row, j] in the method"
            : "pass a parameter, a field of this instance, a static readonly field, a local array of constant length, or AsSpan/Slice of one of them";
        Unsupported(argument, "the argument '" + Text(argument.Value) + "' for the parameter '" + parameter.Name + "' of '" + parameter.ContainingSymbol.Name + "'", advice);
        return null;
    }

    /// <summary>An element read of a local array, a bound parameter or a slice (plain data goes the data path).</summary>
    private IrExpression? LowerBoundElement(IOperation element, ArrayBinding binding, IReadOnlyList<IOperation> indices)
    {
        if (binding is DataView view)
        {
            if (indices.Count != view.Rank || LowerIndices(indices, view.DataLength) is not { } lowered)
            {
                return null;
            }

            if (view.Offset is { } offset)
            {
                lowered[0] = ConstantInt(offset) is 0 ? lowered[0] : new IrBinary(BinaryOperator.Add, offset, lowered[0], ScalarType.Int32);
            }

            return new IrElement(view.Text, lowered.ToEquatableArray(), view.Type);
        }

        return LocalElement(element, (LocalArray)binding, indices) is { } name ? new IrLocal(name, binding.Type) : null;
    }

    private List<IrExpression>? LowerIndices(IReadOnlyList<IOperation> indices, IrExpression length)
    {
        var lowered = new List<IrExpression>();
        foreach (IOperation index in indices)
        {
            bool isFromEnd = index is IUnaryOperation { OperatorKind: UnaryOperatorKind.Hat, OperatorMethod: null };
            IOperation position = isFromEnd ? ((IUnaryOperation)index).Operand : index;
            if (LowerExpression(position) is not { } value)
            {
                return null;
            }

            if (value.Type != ScalarType.Int32)
            {
                Unsupported(position, $"the index '{Text(position)}'", "indices must be int expressions");
                return null;
            }

            lowered.Add(isFromEnd ? new IrBinary(BinaryOperator.Subtract, length, value, ScalarType.Int32) : value);
        }

        return lowered;
    }

    /// <summary>The scalar local of a local array's element; its index must be a constant within the array.</summary>
    private string? LocalElement(IOperation element, LocalArray array, IReadOnlyList<IOperation> indices)
    {
        if (indices.Count != 1 || LowerIndices(indices, array.Length) is not { Count: 1 } lowered)
        {
            return null;
        }

        IrExpression index = lowered[0];

        if (ConstantInt(index) is not int position)
        {
            Unsupported(element, "the element '" + Text(element) + "' of the local array '" + array.Name + "'",
                "its index is not a compile-time constant, and " + RunTimeIndexNote + "; index it with constants (" + array.Name + "[0], "
                + array.Name + "[1]) or with the index of a for loop whose bounds are constants, e.g. for (int j = 0; j < " + array.Elements.Count.ToString(CultureInfo.InvariantCulture)
                + "; j++), which is unrolled");
            return null;
        }

        if (position < 0 || position >= array.Elements.Count)
        {
            Unsupported(element, "the element '" + Text(element) + "' (index " + position.ToString(CultureInfo.InvariantCulture) + ") of the local array '" + array.Name + "'",
                "it is outside the array of length " + array.Elements.Count.ToString(CultureInfo.InvariantCulture) + ", where C# throws IndexOutOfRangeException; index within 0.."
                + (array.Elements.Count - 1).ToString(CultureInfo.InvariantCulture));
            return null;
        }

        return array.Elements[position];
    }

    /// <summary>The array or span and indices of an element access, or null.</summary>
    private static (IOperation Instance, IReadOnlyList<IOperation> Indices)? ElementAccess(IOperation operation) => operation switch
    {
        IArrayElementReferenceOperation array => (array.ArrayReference, array.Indices),
        IPropertyReferenceOperation { Property.IsIndexer: true, Instance: { } instance } indexer when IsSpan(instance.Type) =>
            (instance, indexer.Arguments.Select(a => a.Value).ToList()),
        IImplicitIndexerReferenceOperation { Instance: { } instance, Argument: not IRangeOperation } implicitIndexer => (instance, new[] { implicitIndexer.Argument }),
        _ => null,
    };

    /// <summary>
    /// Statements on local arrays: an element assigned, updated or incremented, and Clear, Fill and CopyTo. False when
    /// the statement is none of these (the caller lowers it).
    /// </summary>
    private bool TryLowerArrayStatement(IOperation expression)
    {
        if (IsRefusedArrayUse(expression))
        {
            return true; // its declaration was refused
        }

        switch (expression)
        {
            case IAssignmentOperation { Target: ILocalReferenceOperation target } when _arrays.ContainsKey(target.Local):
                Unsupported(expression, "the assignment of the local array '" + target.Local.Name + "'",
                    "a local array is created once, where it is declared; assign its elements, or declare another local array");
                return true;

            case IAssignmentOperation assignment when ElementAccess(assignment.Target) is { } access && ResolveArray(access.Instance, includeData: false) is { } binding:
                WriteElement(assignment, access.Instance, binding, access.Indices, assignment);
                return true;

            case IIncrementOrDecrementOperation step when ElementAccess(step.Target) is { } access && ResolveArray(access.Instance, includeData: false) is { } binding:
                WriteElement(step, access.Instance, binding, access.Indices, step);
                return true;

            case IInvocationOperation { TargetMethod.Name: "Clear" or "Fill" or "CopyTo", Instance: { } instance } invocation
                when ResolveArray(instance, includeData: true) is { } source && (source is LocalArray || invocation.TargetMethod.Name == "CopyTo"):
                LowerSpanOperation(invocation, source);
                return true;

            default:
                return false;
        }
    }

    private void WriteElement(IOperation statement, IOperation instance, ArrayBinding binding, IReadOnlyList<IOperation> indices, IOperation write)
    {
        if (binding is not LocalArray array)
        {
            Unsupported(statement, "the write '" + Text(statement) + "' into '" + binding.Name + "'",
                "it is data or a variable of the caller, which cannot be written; pass a local array (Span<double> d = stackalloc double[n]) to write into, and read from that");
            return;
        }

        if (_inline is { } frame && array.Frame != frame.Id && _loopNesting > frame.LoopNesting)
        {
            Unsupported(statement, "the write '" + Text(statement) + "' inside a loop of the inlined '" + frame.Name + "'",
                "writing the caller's local array '" + array.Name + "' in a loop that is not unrolled is not in this version; give the loop constant bounds, or sum into a local and write the element after the loop");
            return;
        }

        if (LocalElement(statement, array, indices) is not { } name)
        {
            return;
        }

        var current = new IrLocal(name, array.Type);
        switch (write)
        {
            case ISimpleAssignmentOperation simple:
                if (LowerExpression(simple.Value) is { } value)
                {
                    AssignLocal(name, Convert(value, array.Type));
                }

                break;

            case ICompoundAssignmentOperation compound when compound.OperatorMethod is null && TryBinaryOperator(compound.OperatorKind, out BinaryOperator op):
            {
                // e op= v  is  e = (T)((S)e op v) with the compiler's own conversions (C# spec §12.21.4).
                ScalarType? operationType = compound.InConversion.IsIdentity ? array.Type : ScalarTypeOfConversion(compound);
                if (LowerExpression(compound.Value) is { } right && operationType is { } type)
                {
                    AssignLocal(name, Convert(new IrBinary(op, Convert(current, type), Convert(right, type), type), array.Type));
                }

                break;
            }

            case IIncrementOrDecrementOperation step:
                var one = new IrConstant(array.Type == ScalarType.Int32 ? 1 : BitConverter.DoubleToInt64Bits(1.0), array.Type);
                AssignLocal(name, new IrBinary(step.Kind == OperationKind.Increment ? BinaryOperator.Add : BinaryOperator.Subtract, current, one, array.Type));
                break;

            default:
                Unsupported(statement, "the update '" + Text(statement) + "'", "use =, +=, -=, *= or /= on the element");
                break;
        }
    }

    /// <summary><c>s.Clear()</c>, <c>s.Fill(v)</c>, <c>source.CopyTo(destination)</c> on local arrays, element by element.</summary>
    private void LowerSpanOperation(IInvocationOperation invocation, ArrayBinding source)
    {
        switch (invocation.TargetMethod.Name)
        {
            case "Clear":
                foreach (string element in ((LocalArray)source).Elements)
                {
                    AssignLocal(element, Zero(source.Type));
                }

                return;

            case "Fill" when invocation.Arguments.Length == 1 && LowerExpression(invocation.Arguments[0].Value) is { } fill:
            {
                IrExpression value = fill is IrConstant or IrLocal or IrParameter ? fill : Snapshot("fillValue", Convert(fill, source.Type));
                foreach (string element in ((LocalArray)source).Elements)
                {
                    AssignLocal(element, Convert(value, source.Type));
                }

                return;
            }

            case "CopyTo" when invocation.Arguments.Length == 1 && ResolveArray(invocation.Arguments[0].Value, includeData: false) is LocalArray destination:
            {
                int? sourceLength = ConstantInt(source.Length);
                if (sourceLength is not int count || count > destination.Elements.Count)
                {
                    Unsupported(invocation, "the copy '" + Text(invocation) + "'", sourceLength is null
                        ? "copy a source of constant length (AsSpan(start, length) or a local array)"
                        : "the destination is shorter than the source, where C# throws; copy a Slice of the source");
                    return;
                }

                var values = new List<IrExpression>();
                for (int i = 0; i < count; i++)
                {
                    values.Add(source is LocalArray local ? new IrLocal(local.Elements[i], source.Type) : DataElement((DataView)source, i));
                }

                for (int i = 0; i < count; i++)
                {
                    AssignLocal(destination.Elements[i], values[i]); // all read before any is written (a copy onto itself is the identity)
                }

                return;
            }
        }

        Unsupported(invocation, "the call '" + Text(invocation) + "'",
            "Clear, Fill and CopyTo work on local arrays of constant length (CopyTo into one); write the elements in a for loop with constant bounds instead");
    }

    /// <summary>Element <paramref name="index"/> of a view of data.</summary>
    private static IrExpression DataElement(DataView view, int index)
    {
        IrExpression position = new IrConstant(index, ScalarType.Int32);
        if (view.Offset is { } offset)
        {
            position = ConstantInt(offset) is int start ? new IrConstant(start + index, ScalarType.Int32) : new IrBinary(BinaryOperator.Add, offset, position, ScalarType.Int32);
        }

        return new IrElement(view.Text, new[] { position }.ToEquatableArray(), view.Type);
    }

    /// <summary>
    /// The local array, bound parameter or view an element access reads; null for plain data (the data path lowers it
    /// as it always has).
    /// </summary>
    private ArrayBinding? BoundArrayOf(IOperation instance) => ResolveArray(instance, includeData: false) is { } binding
        && !(binding is DataView { Offset: null } view && DataText(Unwrap(instance)) == view.Text)
        ? binding
        : null;

    /// <summary>Whether the operation reads or writes a local array whose declaration was refused.</summary>
    private bool IsRefusedArrayUse(IOperation operation) =>
        _refusedArrays.Count > 0 && operation.DescendantsAndSelf().OfType<ILocalReferenceOperation>().Any(r => _refusedArrays.Contains(r.Local));

    /// <summary>A local of a local array used as a whole elsewhere than the constructs above: refused.</summary>
    private IrExpression? RefuseArrayUse(IOperation operation, ArrayBinding binding) =>
        Unsupported(operation, "the local array '" + binding.Name + "' used as a whole ('" + Text(operation.Parent ?? operation) + "')",
            "a local array is read and written by element, by Length, with Clear, Fill, CopyTo and Slice, and passed to methods that are inlined (unmarked methods of this compilation); work on its elements");

    // ---- Unrolling -------------------------------------------------------------------------------------------------

    /// <summary>
    /// A for loop that indexes a local array with its index, with bounds and step that are compile-time constants, is
    /// unrolled: its body is lowered once per value of the index, the index a constant in each copy. True when handled.
    /// </summary>
    private bool TryUnroll(IForLoopOperation loop)
    {
        if (UnrollPlan(loop) is not { } plan)
        {
            return false;
        }

        (ILocalSymbol index, List<int> values) = plan;
        if (loop.Body.DescendantsAndSelf().FirstOrDefault(o => o is IReturnOperation
                || (o is IBranchOperation branch && (SymbolEqualityComparer.Default.Equals(branch.Target, loop.ExitLabel) || SymbolEqualityComparer.Default.Equals(branch.Target, loop.ContinueLabel))))
            is { } jump)
        {
            Unsupported(jump, "the jump '" + Text(jump) + "' in a loop that is unrolled",
                "the loop is unrolled because it indexes a local array with its index, and break, continue and return inside it are not in this version; select the values with if/else instead");
            return true;
        }

        _unrolledIterations += values.Count;
        if (_unrolledIterations > MaxUnrolledIterations)
        {
            Unsupported(loop, "the loop '" + Text(loop).Split('{')[0].Trim() + "'",
                "unrolling it for its local arrays would copy its body more than " + MaxUnrolledIterations.ToString(CultureInfo.InvariantCulture)
                + " times in this method; keep values that are indexed at run time in running sums (double locals) instead of local arrays");
            return true;
        }

        IReadOnlyList<IOperation> body = loop.Body is IBlockOperation block ? block.Operations : new[] { loop.Body };
        foreach (int value in values)
        {
            _constantLocals[index] = value;
            LowerStatements(body, isTopLevel: false);
        }

        _constantLocals.Remove(index);
        return true;
    }

    /// <summary>The index and its values when the loop is to be unrolled: it indexes a local array with its index and
    /// its start, bound and step are constants (<c>i++</c>, <c>i--</c>, <c>i += c</c>, <c>i -= c</c>; &lt; &lt;= &gt; &gt;= !=).</summary>
    private (ILocalSymbol Index, List<int> Values)? UnrollPlan(IForLoopOperation loop)
    {
        if (loop.Before.Length != 1 || loop.Before[0] is not IVariableDeclarationGroupOperation { Declarations.Length: 1 } group
            || group.Declarations[0].Declarators.Length != 1 || group.Declarations[0].Declarators[0] is not { } declarator
            || declarator.Symbol.Type.SpecialType != SpecialType.System_Int32 || declarator.GetVariableInitializer()?.Value is not { } startValue
            || loop.Condition is not IBinaryOperation { LeftOperand: ILocalReferenceOperation left } condition
            || !SymbolEqualityComparer.Default.Equals(left.Local, declarator.Symbol)
            || loop.AtLoopBottom.Length != 1 || StepOf(loop.AtLoopBottom[0], declarator.Symbol) is not int step || step == 0
            || AssignsLocal(loop.Body, declarator.Symbol) || !IndexesLocalArray(loop.Body, declarator.Symbol)
            || ConstantIntOf(startValue) is not int start || ConstantIntOf(condition.RightOperand) is not int end)
        {
            return null;
        }

        Func<int, bool>? holds = condition.OperatorKind switch
        {
            BinaryOperatorKind.LessThan => i => i < end,
            BinaryOperatorKind.LessThanOrEqual => i => i <= end,
            BinaryOperatorKind.GreaterThan => i => i > end,
            BinaryOperatorKind.GreaterThanOrEqual => i => i >= end,
            BinaryOperatorKind.NotEquals => i => i != end,
            _ => null,
        };
        var values = new List<int>();
        for (long i = start; holds is not null && i >= int.MinValue && i <= int.MaxValue && holds((int)i); i += step)
        {
            if (values.Count > MaxUnrolledIterations)
            {
                return null;
            }

            values.Add((int)i);
        }

        return holds is null ? null : (declarator.Symbol, values);
    }

    private int? StepOf(IOperation operation, ILocalSymbol index)
    {
        IOperation expression = operation is IExpressionStatementOperation statement ? statement.Operation : operation;
        return expression switch
        {
            IIncrementOrDecrementOperation { Target: ILocalReferenceOperation target } step when SymbolEqualityComparer.Default.Equals(target.Local, index) =>
                step.Kind == OperationKind.Increment ? 1 : -1,
            ICompoundAssignmentOperation { OperatorKind: BinaryOperatorKind.Add or BinaryOperatorKind.Subtract, Target: ILocalReferenceOperation target } compound
                when SymbolEqualityComparer.Default.Equals(target.Local, index) && ConstantIntOf(compound.Value) is int amount =>
                compound.OperatorKind == BinaryOperatorKind.Add ? amount : -amount,
            _ => null,
        };
    }

    /// <summary>Whether the body indexes (or slices) a local array with an expression that reads <paramref name="index"/>.</summary>
    private bool IndexesLocalArray(IOperation body, ILocalSymbol index)
    {
        bool Reads(IOperation operation) => operation.DescendantsAndSelf().OfType<ILocalReferenceOperation>()
            .Any(r => SymbolEqualityComparer.Default.Equals(r.Local, index));

        foreach (IOperation operation in body.Descendants())
        {
            if (ElementAccess(operation) is { } access && IsLocalArray(access.Instance, body) && access.Indices.Any(Reads))
            {
                return true;
            }

            if (operation is IInvocationOperation { TargetMethod.Name: "Slice" or "AsSpan" } slice && slice.Arguments.Any(a => Reads(a.Value))
                && (slice.Instance ?? slice.Arguments.FirstOrDefault()?.Value) is { } sliced && IsLocalArray(sliced, body))
            {
                return true;
            }
        }

        return false;
    }

    /// <summary>A local array (or a parameter bound to one), or a local of array type declared inside <paramref name="body"/>.</summary>
    private bool IsLocalArray(IOperation instance, IOperation body)
    {
        IOperation operation = Unwrap(instance);
        if (ResolveArray(operation, includeData: false, lower: false) is { } binding)
        {
            return binding is LocalArray;
        }

        return operation is ILocalReferenceOperation { Local: var local } && ArrayShape(local.Type) is not null
            && local.DeclaringSyntaxReferences.Any(r => body.Syntax.Span.Contains(r.Span));
    }

    /// <summary><c>foreach (var v in localArray)</c>: unrolled, <c>v</c> assigned each element in turn.</summary>
    private bool TryUnrollForEach(IForEachLoopOperation loop)
    {
        IOperation collection = loop.Collection is IConversionOperation conversion ? conversion.Operand : loop.Collection;
        if (ResolveArray(collection, includeData: false, lower: false) is not LocalArray array || loop.Locals.Length != 1 || ValueTypeOf(loop.Locals[0].Type) is not { } type)
        {
            return false;
        }

        if (loop.Body.DescendantsAndSelf().FirstOrDefault(o => o is IReturnOperation or IBranchOperation { BranchKind: BranchKind.Break or BranchKind.Continue }) is { } jump)
        {
            Unsupported(jump, "the jump '" + Text(jump) + "' in a foreach loop over the local array '" + array.Name + "'",
                "the loop is unrolled, and break, continue and return inside it are not in this version; select the values with if/else instead");
            return true;
        }

        IReadOnlyList<IOperation> body = loop.Body is IBlockOperation block ? block.Operations : new[] { loop.Body };
        foreach (string element in array.Elements)
        {
            AssignLocal(DeclareLocal(loop.Locals[0]), Convert(new IrLocal(element, array.Type), type));
            LowerStatements(body, isTopLevel: false);
        }

        return true;
    }

    // ---- Constants -------------------------------------------------------------------------------------------------

    /// <summary>The value of an int expression that is a compile-time constant here (unrolled indices are), or null.</summary>
    private int? ConstantIntOf(IOperation operation)
    {
        if (operation.ConstantValue is { HasValue: true, Value: int value })
        {
            return value;
        }

        switch (operation)
        {
            case ILocalReferenceOperation local when _constantLocals.TryGetValue(local.Local, out int constant):
                return constant;
            case IParenthesizedOperation parenthesized:
                return ConstantIntOf(parenthesized.Operand);
            case IConversionOperation { Conversion.IsIdentity: true } conversion:
                return ConstantIntOf(conversion.Operand);
            case IPropertyReferenceOperation { Property.Name: "Length", Instance: { } instance } when ResolveArray(instance, includeData: false, lower: false) is { } binding:
                return ConstantInt(binding.Length);
            case IUnaryOperation { OperatorKind: UnaryOperatorKind.Minus, OperatorMethod: null } minus when ConstantIntOf(minus.Operand) is int operand:
                return unchecked(-operand);
            case IBinaryOperation { OperatorMethod: null, Type.SpecialType: SpecialType.System_Int32 } binary
                when ConstantIntOf(binary.LeftOperand) is int left && ConstantIntOf(binary.RightOperand) is int right:
                return Fold(binary.OperatorKind, left, right);
            default:
                return null;
        }
    }

    /// <summary>The value of an int IR expression built of constants, or null.</summary>
    private static int? ConstantInt(IrExpression expression) => expression switch
    {
        IrConstant { Type: ScalarType.Int32 } constant => (int)constant.Bits,
        IrNegate { Type: ScalarType.Int32 } negate when ConstantInt(negate.Operand) is int operand => unchecked(-operand),
        IrBinary { Type: ScalarType.Int32 } binary when ConstantInt(binary.Left) is int left && ConstantInt(binary.Right) is int right =>
            Fold(binary.Operator switch
            {
                BinaryOperator.Add => BinaryOperatorKind.Add,
                BinaryOperator.Subtract => BinaryOperatorKind.Subtract,
                BinaryOperator.Multiply => BinaryOperatorKind.Multiply,
                _ => BinaryOperatorKind.Divide,
            }, left, right),
        _ => null,
    };

    private static int? Fold(BinaryOperatorKind kind, int left, int right) => kind switch
    {
        BinaryOperatorKind.Add => unchecked(left + right),
        BinaryOperatorKind.Subtract => unchecked(left - right),
        BinaryOperatorKind.Multiply => unchecked(left * right),
        BinaryOperatorKind.Divide when right != 0 && !(left == int.MinValue && right == -1) => left / right,
        BinaryOperatorKind.Remainder when right != 0 && !(left == int.MinValue && right == -1) => left % right,
        _ => null,
    };

    /// <summary>The value of a condition on constants (in an unrolled copy, where branches on the index are decided), or null.</summary>
    private static bool? ConstantBool(IrExpression condition) => condition switch
    {
        IrConstant { Type: ScalarType.Boolean } constant => constant.Bits != 0,
        IrCompare compare when ConstantInt(compare.Left) is int left && ConstantInt(compare.Right) is int right => compare.Operator switch
        {
            ComparisonOperator.Less => left < right,
            ComparisonOperator.LessOrEqual => left <= right,
            ComparisonOperator.Greater => left > right,
            ComparisonOperator.GreaterOrEqual => left >= right,
            ComparisonOperator.Equal => left == right,
            _ => left != right,
        },
        IrLogical { Operator: LogicalOperator.Not } not when ConstantBool(not.Left) is bool operand => !operand,
        IrLogical { Operator: LogicalOperator.And } both when ConstantBool(both.Left) is bool left && ConstantBool(both.Right!) is bool right => left && right,
        IrLogical { Operator: LogicalOperator.Or } either when ConstantBool(either.Left) is bool left && ConstantBool(either.Right!) is bool right => left || right,
        _ => null,
    };
}
