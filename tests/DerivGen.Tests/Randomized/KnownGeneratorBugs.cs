namespace DerivGen.Tests.Randomized;

/// <summary>
/// Generator bugs the randomised tests found that are not fixed yet (reported to the lead with minimal
/// reproductions). While a switch is true the random generator steers clear of that construct, so that the suite stays
/// green and keeps finding other bugs. When the bug is fixed, delete the switch and the code it guards (the construct
/// is then generated like any other), and turn the test that pins the current behaviour into a regression test of the
/// fix. Fixed bugs are not kept here: their regression tests are in Numerics/OpenBugRegressionTests.cs and
/// Numerics/FoundByRandomTestsRegressionTests.cs.
/// </summary>
internal static class KnownGeneratorBugs
{
    /// <summary>
    /// In a loop body, a carried local updated before a nested loop that updates it again
    /// (<c>s = s * x; for (…) { s = 0.5 * s; }</c>) would get a running derivative computed from its new value instead
    /// of its value at the start of the iteration (<c>dS_dX = x * dS_dX + s</c> after <c>s = s * x</c>): a wrong
    /// derivative. The shape is refused with DG0001 instead, pinned by
    /// <see cref="Analyzers.ControlFlowDiagnosticTests.DG0001NestedLoopUpdatingWhatTheIterationAlreadyUpdated"/>. Random
    /// programs expect every generated method to compile, so while this is open programs with that shape are discarded
    /// (<c>CaseGenerator.UpdatesBeforeNestedLoop</c>). The fix: take the outer running derivative's update from the value
    /// at the start of the iteration; then that test must check the derivative instead of the refusal.
    /// </summary>
    public static readonly bool UpdateBeforeNestedLoopReadsNewValue = true;
}
