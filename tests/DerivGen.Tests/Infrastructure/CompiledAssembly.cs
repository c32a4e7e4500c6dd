using System;
using System.IO;
using System.Linq;
using System.Reflection;
using System.Runtime.Loader;
using Xunit;

namespace DerivGen.Tests.Infrastructure;

/// <summary>
/// A compiled test assembly loaded into its own collectible load context. Generated methods take
/// <see cref="Span{T}"/>, which reflection's Invoke cannot pass, so tests bind them to delegate types declared in the
/// test code (e.g. <c>delegate double Grad2(double x, double y, Span&lt;double&gt; g)</c>) and call them directly.
/// </summary>
internal sealed class CompiledAssembly : IDisposable
{
    private const BindingFlags AnyMember =
        BindingFlags.Public | BindingFlags.NonPublic | BindingFlags.Static | BindingFlags.Instance | BindingFlags.DeclaredOnly;

    private readonly AssemblyLoadContext _context;

    public CompiledAssembly(Stream image)
    {
        _context = new AssemblyLoadContext("DerivGenTest", isCollectible: true);
        Assembly = _context.LoadFromStream(image);
    }

    public Assembly Assembly { get; }

    /// <summary>The type by metadata name, e.g. "Ns.Outer+Inner" for a nested type.</summary>
    public Type Type(string metadataName) =>
        Assembly.GetType(metadataName) ?? throw new Xunit.Sdk.XunitException(
            $"Type '{metadataName}' not found; types: {string.Join(", ", Assembly.GetTypes().Select(t => t.FullName))}");

    public bool HasMethod(string typeName, string methodName) =>
        Type(typeName).GetMethods(AnyMember).Any(m => m.Name == methodName);

    /// <summary>Binds the method (the one overload that matches <typeparamref name="TDelegate"/>) to a delegate.
    /// Pass <paramref name="target"/> for an instance method.</summary>
    public TDelegate Method<TDelegate>(string typeName, string methodName, object? target = null)
        where TDelegate : Delegate
    {
        Type type = Type(typeName);
        Type[] parameters = typeof(TDelegate).GetMethod("Invoke")!.GetParameters().Select(p => p.ParameterType).ToArray();
        MethodInfo? method = type.GetMethod(methodName, AnyMember, binder: null, parameters, modifiers: null);
        if (method is null)
        {
            string found = string.Join("\n  ", type.GetMethods(AnyMember).Select(m => m.ToString()));
            throw new Xunit.Sdk.XunitException(
                $"No method {typeName}.{methodName}({string.Join(", ", parameters.Select(p => p.Name))}); the type has:\n  {found}");
        }

        return method.IsStatic
            ? (TDelegate)method.CreateDelegate(typeof(TDelegate))
            : (TDelegate)method.CreateDelegate(typeof(TDelegate), target ?? throw new ArgumentNullException(nameof(target)));
    }

    /// <summary>Creates an instance with the given constructor arguments (for instance methods).</summary>
    public object New(string typeName, params object[] arguments) =>
        Activator.CreateInstance(Type(typeName), AnyMember & ~BindingFlags.DeclaredOnly, null, arguments, null)!;

    public void Dispose() => _context.Unload();
}
