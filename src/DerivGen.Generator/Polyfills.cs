// Language-feature support types that netstandard2.0 lacks (the generator must stay dependency-free).
namespace System.Runtime.CompilerServices
{
    internal static class IsExternalInit
    {
    }
}
