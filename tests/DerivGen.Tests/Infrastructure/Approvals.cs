using System;
using System.IO;
using System.Linq;
using System.Reflection;
using Xunit;

namespace DerivGen.Tests.Infrastructure;

/// <summary>
/// Expected-output files: generated text is compared with <c>Approved/&lt;Name&gt;.approved.cs</c> (committed, not
/// compiled). On a mismatch or a missing file the actual text is written to <c>&lt;Name&gt;.received.cs</c> beside it
/// (git-ignored) and the test fails. Set the environment variable <c>DERIVGEN_ACCEPT=1</c> to overwrite the approved
/// file with the received text instead: an explicit switch, never done silently.
/// </summary>
internal static class Approvals
{
    /// <summary>The test project's folder, embedded at build time by the project file (AssemblyMetadata), because
    /// [CallerFilePath] is rewritten to "/_/..." by ContinuousIntegrationBuild's path map.</summary>
    public static string ApprovedDirectory { get; } = Path.Combine(
        typeof(Approvals).Assembly.GetCustomAttributes<AssemblyMetadataAttribute>()
            .Single(a => a.Key == "DerivGen.Tests.ProjectDirectory").Value!,
        "Approved");

    public static void Verify(string name, string received) =>
        Verify(ApprovedDirectory, name, received, Environment.GetEnvironmentVariable("DERIVGEN_ACCEPT") == "1");

    /// <summary>The comparison itself, with the folder and the accept switch explicit (for the helper's own tests).</summary>
    internal static void Verify(string directory, string name, string received, bool accept)
    {
        Assert.DoesNotContain("\r", received);
        string approvedPath = Path.Combine(directory, name + ".approved.cs");
        string receivedPath = Path.Combine(directory, name + ".received.cs");

        string? approved = File.Exists(approvedPath) ? File.ReadAllText(approvedPath) : null;
        if (approved == received)
        {
            File.Delete(receivedPath);
            return;
        }

        if (accept)
        {
            File.WriteAllText(approvedPath, received);
            File.Delete(receivedPath);
            return;
        }

        File.WriteAllText(receivedPath, received);
        Assert.Fail(approved is null
            ? $"No approved file {approvedPath}. The generated text was written to {receivedPath}; review it and rerun with DERIVGEN_ACCEPT=1 to approve."
            : $"Generated text differs from {approvedPath}. Compare with {receivedPath}; if the change is intended rerun with DERIVGEN_ACCEPT=1.\n{Diff(approved, received)}");
    }

    private static string Diff(string approved, string received)
    {
        string[] a = approved.Split('\n'), r = received.Split('\n');
        for (int i = 0; i < Math.Max(a.Length, r.Length); i++)
        {
            string la = i < a.Length ? a[i] : "<end of file>", lr = i < r.Length ? r[i] : "<end of file>";
            if (la != lr)
            {
                return $"First difference at line {i + 1}:\n  approved: {la}\n  received: {lr}";
            }
        }

        return string.Empty;
    }
}
