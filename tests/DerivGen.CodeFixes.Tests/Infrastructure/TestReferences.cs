using System;
using System.Collections.Immutable;
using System.IO;
using System.Linq;
using Microsoft.CodeAnalysis;

namespace DerivGen.CodeFixes.Tests.Infrastructure;

/// <summary>
/// What the test sources compile against: the running runtime's framework assemblies plus DerivGen.dll (the
/// attribute). The same set tests/DerivGen.Tests uses, so nothing is downloaded at test time.
/// </summary>
internal static class TestReferences
{
    private static readonly Lazy<ImmutableArray<MetadataReference>> LazyAll = new(Load);

    public static ImmutableArray<MetadataReference> All => LazyAll.Value;

    private static ImmutableArray<MetadataReference> Load()
    {
        string frameworkDir = Path.GetDirectoryName(typeof(object).Assembly.Location)!;
        string tpa = (string)AppContext.GetData("TRUSTED_PLATFORM_ASSEMBLIES")!;
        return tpa.Split(Path.PathSeparator, StringSplitOptions.RemoveEmptyEntries)
            .Where(p => string.Equals(Path.GetDirectoryName(p), frameworkDir, StringComparison.Ordinal))
            .Append(typeof(DifferentiateAttribute).Assembly.Location)
            .Distinct(StringComparer.Ordinal)
            .OrderBy(p => p, StringComparer.Ordinal)
            .Select(p => (MetadataReference)MetadataReference.CreateFromFile(p))
            .ToImmutableArray();
    }
}
