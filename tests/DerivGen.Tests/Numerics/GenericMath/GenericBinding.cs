using System;
using System.Linq;
using System.Reflection;
using DerivGen.Tests.Infrastructure;

namespace DerivGen.Tests.Numerics.GenericMath;

internal delegate T GF1<T>(T x);

internal delegate T GG1<T>(T x, Span<T> gradient);

internal delegate T GF2<T>(T x, T y);

internal delegate T GG2<T>(T x, T y, Span<T> gradient);

internal delegate T GH2<T>(T x, T y, Span<T> gradient, Span<T> hessian);

internal delegate T GFData<T>(ReadOnlySpan<T> data, T x, T y);

internal delegate T GGData<T>(ReadOnlySpan<T> data, T x, T y, Span<T> gradient);

internal delegate T GHData<T>(ReadOnlySpan<T> data, T x, T y, Span<T> gradient, Span<T> hessian);

internal delegate void GR2<T>(T a, T b, Span<T> residuals);

internal delegate void GJ2<T>(T a, T b, Span<T> residuals, Span<T> jacobian);

/// <summary>Binds a generic method of a compiled test assembly, instantiated at one type, to a delegate.</summary>
internal static class GenericBinding
{
    private const BindingFlags AnyStatic = BindingFlags.Public | BindingFlags.NonPublic | BindingFlags.Static | BindingFlags.DeclaredOnly;

    public static TDelegate Bind<TDelegate>(CompiledAssembly assembly, string typeName, string methodName, Type typeArgument)
        where TDelegate : Delegate
    {
        int arity = typeof(TDelegate).GetMethod("Invoke")!.GetParameters().Length;
        MethodInfo definition = assembly.Type(typeName).GetMethods(AnyStatic)
            .Single(m => m.Name == methodName && m.IsGenericMethodDefinition && m.GetParameters().Length == arity);
        return (TDelegate)definition.MakeGenericMethod(typeArgument).CreateDelegate(typeof(TDelegate));
    }
}
