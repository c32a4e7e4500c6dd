using System;
using System.Collections.Generic;
using System.Linq;
using DerivGen.Generator.Model;
using Microsoft.CodeAnalysis;
using Microsoft.CodeAnalysis.CSharp.Syntax;

namespace DerivGen.Generator.Lowering;

/// <summary>
/// A struct type seen as its scalar fields (scalar replacement): System.Numerics Vector2/3/4 (X, Y, Z, W, all float)
/// and user structs, readonly structs and record structs whose instance fields and auto properties are double, float,
/// int or such structs in turn. Nested structs are flattened depth first, so a component has a path such as
/// <c>Base.X</c>; the order of the components is the declaration order of the fields, which is the order of the
/// gradient slots of a struct variable. Used by the parser (variables) and by the lowerer (values).
/// </summary>
internal sealed class StructLayout
{
    /// <summary>Separates an element's data text from the member read on the element (<c>Points|.X</c> is
    /// <c>Points[i].X</c>); not C#, and only <see cref="Emit.ExpressionWriter"/> splits it.</summary>
    public const char ElementMemberMark = '|';

    private StructLayout(ITypeSymbol type, IReadOnlyList<StructMember> members, bool isNumericsVector)
    {
        Type = type;
        Members = members;
        IsNumericsVector = isNumericsVector;
        var components = new List<StructComponent>();
        foreach (StructMember member in members)
        {
            member.Offset = components.Count;
            if (member.Nested is { } nested)
            {
                components.AddRange(nested.Components.Select(c => new StructComponent(member.Name + "." + c.Path, c.Type, new[] { member.Symbol }.Concat(c.Symbols).ToArray())));
            }
            else
            {
                components.Add(new StructComponent(member.Name, member.Scalar!.Value, new[] { member.Symbol }));
            }
        }

        Components = components;
    }

    public ITypeSymbol Type { get; }

    /// <summary>The direct members (fields and auto properties), in declaration order.</summary>
    public IReadOnlyList<StructMember> Members { get; }

    /// <summary>The scalar components, flattened depth first.</summary>
    public IReadOnlyList<StructComponent> Components { get; }

    public bool IsNumericsVector { get; }

    public int Count => Components.Count;

    /// <summary>The System.Numerics vector's dimension (2, 3 or 4), or 0 for a user struct.</summary>
    public int VectorDimension => IsNumericsVector ? Count : 0;

    public StructMember? Member(ISymbol symbol) =>
        Members.FirstOrDefault(m => SymbolEqualityComparer.Default.Equals(m.Symbol, symbol)
            || (symbol is IFieldSymbol { AssociatedSymbol: { } property } && SymbolEqualityComparer.Default.Equals(m.Symbol, property)));

    /// <summary>Whether every component can be read from code in <paramref name="within"/> (the generated methods are
    /// members of the same type as the user's method).</summary>
    public bool ReadableFrom(INamedTypeSymbol within, Compilation compilation) =>
        Components.All(c => c.Symbols.All(s => compilation.IsSymbolAccessibleWithin(s, within)));

    /// <summary>The layout of a struct type, or null with the reason it has none (null reason: not a struct at all).</summary>
    public static StructLayout? Of(ITypeSymbol? type, out string? problem)
    {
        problem = null;
        return Of(type, ref problem, 0);
    }

    /// <summary>
    /// Whether a parameter named in [Differentiate] is a struct variable: a System.Numerics vector or a user struct
    /// whose components are all double or float, passed by value, 'in' or 'ref readonly', with fields the generated
    /// methods (members of the same type) can read. <paramref name="problem"/> says why a struct parameter is not one
    /// (null for a parameter that is not a struct at all).
    /// </summary>
    public static bool IsStructVariable(IParameterSymbol parameter, out string? problem)
    {
        StructLayout? layout = Of(parameter.Type, out problem);
        if (layout is null)
        {
            problem = problem is null ? null : problem + "; make the fields you differentiate double or float parameters instead";
            return false;
        }

        if (parameter.RefKind is RefKind.Ref or RefKind.Out)
        {
            problem = "a struct variable is passed by value, 'in' or 'ref readonly', not by " + parameter.RefKind.ToString().ToLowerInvariant();
            return false;
        }

        if (layout.Components.FirstOrDefault(c => c.Type is not (ScalarType.Double or ScalarType.Single)) is { } integer)
        {
            problem = "its field '" + integer.Path + "' is an int, which cannot be differentiated; pass the double and float fields as parameters of their own, or make the int a separate parameter";
            return false;
        }

        INamedTypeSymbol within = parameter.ContainingType;
        if (layout.Components.SelectMany(c => c.Symbols).FirstOrDefault(s => s.DeclaredAccessibility is not (Accessibility.Public or Accessibility.Internal or Accessibility.ProtectedOrInternal)
                && !SymbolEqualityComparer.Default.Equals(s.ContainingType, within)) is { } hidden)
        {
            problem = "its member '" + hidden.Name + "' is not accessible to the generated methods; make it internal or public";
            return false;
        }

        return true;
    }

    /// <summary>The scalar variables a struct variable stands for, as the body reads them (<c>p.X</c>, <c>p.Base.Y</c>), or null.</summary>
    public static string[]? VariableComponents(IParameterSymbol parameter) =>
        IsStructVariable(parameter, out _) && Of(parameter.Type, out _) is { } layout
            ? layout.Components.Select(c => Identifiers.Escape(parameter.Name) + "." + c.Path).ToArray()
            : null;

    public static bool IsNumericsVectorType(ITypeSymbol? type) =>
        type is INamedTypeSymbol { Name: "Vector2" or "Vector3" or "Vector4", TypeKind: TypeKind.Struct, IsGenericType: false } named
        && named.ContainingNamespace is { Name: "Numerics", ContainingNamespace: { Name: "System", ContainingNamespace.IsGlobalNamespace: true } };

    private static StructLayout? Of(ITypeSymbol? type, ref string? problem, int depth)
    {
        if (type is not INamedTypeSymbol { TypeKind: TypeKind.Struct } named || named.SpecialType != SpecialType.None
            || named.IsRefLikeType || named.IsGenericType || named.EnumUnderlyingType is not null)
        {
            return null;
        }

        if (IsNumericsVectorType(named))
        {
            var vectorMembers = new List<StructMember>();
            foreach (string name in new[] { "X", "Y", "Z", "W" }.Take(named.Name[6] - '0'))
            {
                if (named.GetMembers(name).FirstOrDefault() is not IFieldSymbol field)
                {
                    problem = "the type '" + named.ToDisplayString() + "' has no field " + name;
                    return null;
                }

                vectorMembers.Add(new StructMember(name, field, ScalarType.Single, null));
            }

            return new StructLayout(named, vectorMembers, isNumericsVector: true);
        }

        if (named.DeclaringSyntaxReferences.IsEmpty)
        {
            problem = "the struct '" + named.ToDisplayString() + "' is not declared in this compilation (only System.Numerics Vector2, Vector3 and Vector4 and the compilation's own structs are taken apart into their fields)";
            return null;
        }

        if (named.GetAttributes().Any(a => a.AttributeClass?.Name == "StructLayoutAttribute" && a.ConstructorArguments.Length == 1
                && a.ConstructorArguments[0].Value is int kind && kind == 2 /* LayoutKind.Explicit */))
        {
            problem = "the struct '" + named.ToDisplayString() + "' has an explicit layout, whose fields may overlap (writing one would change another)";
            return null;
        }

        if (depth > 8)
        {
            problem = "the struct '" + named.ToDisplayString() + "' nests structs more than 8 deep";
            return null;
        }

        var members = new List<StructMember>();
        var seen = new HashSet<string>(StringComparer.Ordinal);
        foreach (ISymbol symbol in named.GetMembers())
        {
            ISymbol? member = symbol switch
            {
                IFieldSymbol { IsStatic: false, IsConst: false, AssociatedSymbol: IPropertySymbol property } => property,
                IFieldSymbol { IsStatic: false, IsConst: false } field => field,
                IPropertySymbol { IsStatic: false, IsIndexer: false } property when IsAutoProperty(property) => property,
                _ => null,
            };
            if (member is null || !seen.Add(member.Name))
            {
                continue;
            }

            ITypeSymbol memberType = member is IFieldSymbol f ? f.Type : ((IPropertySymbol)member).Type;
            if (BodyLowerer.ScalarTypeOf(memberType) is ScalarType.Double or ScalarType.Single or ScalarType.Int32)
            {
                members.Add(new StructMember(member.Name, member, BodyLowerer.ScalarTypeOf(memberType), null));
                continue;
            }

            string? inner = null;
            StructLayout? nested = Of(memberType, ref inner, depth + 1);
            if (nested is null)
            {
                problem = inner ?? "the struct '" + named.ToDisplayString() + "' has the " + (member is IFieldSymbol ? "field" : "property") + " '" + member.Name
                    + "' of type '" + memberType.ToDisplayString() + "' (a struct is taken apart only when its fields are double, float, int or such structs)";
                return null;
            }

            members.Add(new StructMember(member.Name, member, null, nested));
        }

        if (members.Count == 0)
        {
            problem = "the struct '" + named.ToDisplayString() + "' has no fields";
            return null;
        }

        return new StructLayout(named, members, isNumericsVector: false);
    }

    /// <summary>An auto property (<c>{ get; }</c>, <c>{ get; set; }</c>, <c>{ get; init; }</c>) or a record struct's
    /// positional property: it stores a value, unlike an expression-bodied property.</summary>
    internal static bool IsAutoProperty(IPropertySymbol property)
    {
        if (property.ContainingType.GetMembers().OfType<IFieldSymbol>().Any(f => SymbolEqualityComparer.Default.Equals(f.AssociatedSymbol, property)))
        {
            return true;
        }

        foreach (SyntaxReference reference in property.DeclaringSyntaxReferences)
        {
            switch (reference.GetSyntax())
            {
                case PropertyDeclarationSyntax { ExpressionBody: null, AccessorList: { } accessors }
                    when accessors.Accessors.All(a => a.Body is null && a.ExpressionBody is null):
                    return true;
                case ParameterSyntax:
                    return true; // a positional parameter of a record struct
            }
        }

        return false;
    }
}

/// <summary>A direct member of a struct: a scalar field or auto property, or a nested struct.</summary>
internal sealed class StructMember
{
    public StructMember(string name, ISymbol symbol, ScalarType? scalar, StructLayout? nested)
    {
        Name = name;
        Symbol = symbol;
        Scalar = scalar;
        Nested = nested;
    }

    public string Name { get; }

    /// <summary>The field or property.</summary>
    public ISymbol Symbol { get; }

    public ScalarType? Scalar { get; }

    public StructLayout? Nested { get; }

    /// <summary>The index of its first component in the layout.</summary>
    public int Offset { get; set; }

    public int Count => Nested?.Count ?? 1;
}

/// <summary>A scalar component: its path from the struct (<c>X</c>, <c>Base.X</c>), its type and the members on the path.</summary>
internal sealed record StructComponent(string Path, ScalarType Type, ISymbol[] Symbols);
