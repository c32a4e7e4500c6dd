using System;
using System.IO;
using DerivGen.Tests.Infrastructure;
using Xunit;

namespace DerivGen.Tests.Approved;

/// <summary>The approved-file helper itself, in a temporary folder: it fails and writes a received file when the
/// approved file is missing or differs, and only overwrites the approved file when accepting explicitly.</summary>
public sealed class ApprovalsHelperTests : IDisposable
{
    private readonly string _dir = Directory.CreateTempSubdirectory("derivgen-approvals-").FullName;

    [Fact]
    public void MissingApprovedFileFailsAndWritesReceived()
    {
        Assert.ThrowsAny<Exception>(() => Approvals.Verify(_dir, "Sample", "text\n", accept: false));
        Assert.Equal("text\n", File.ReadAllText(Path.Combine(_dir, "Sample.received.cs")));
        Assert.False(File.Exists(Path.Combine(_dir, "Sample.approved.cs")));
    }

    [Fact]
    public void DifferentTextFailsAndLeavesTheApprovedFileAlone()
    {
        File.WriteAllText(Path.Combine(_dir, "Sample.approved.cs"), "old\n");
        Assert.ThrowsAny<Exception>(() => Approvals.Verify(_dir, "Sample", "new\n", accept: false));
        Assert.Equal("old\n", File.ReadAllText(Path.Combine(_dir, "Sample.approved.cs")));
        Assert.Equal("new\n", File.ReadAllText(Path.Combine(_dir, "Sample.received.cs")));
    }

    [Fact]
    public void AcceptOverwritesAndMatchingTextPassesAndCleansUp()
    {
        File.WriteAllText(Path.Combine(_dir, "Sample.approved.cs"), "old\n");
        File.WriteAllText(Path.Combine(_dir, "Sample.received.cs"), "stale\n");
        Approvals.Verify(_dir, "Sample", "new\n", accept: true);
        Assert.Equal("new\n", File.ReadAllText(Path.Combine(_dir, "Sample.approved.cs")));
        Assert.False(File.Exists(Path.Combine(_dir, "Sample.received.cs")));
        Approvals.Verify(_dir, "Sample", "new\n", accept: false);
    }

    [Fact]
    public void CarriageReturnsAreRejected() =>
        Assert.ThrowsAny<Exception>(() => Approvals.Verify(_dir, "Sample", "a\r\n", accept: true));

    public void Dispose() => Directory.Delete(_dir, recursive: true);
}
