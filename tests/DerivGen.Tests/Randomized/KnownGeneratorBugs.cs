namespace DerivGen.Tests.Randomized;

/// <summary>
/// Generator bugs the randomised tests found that are not fixed yet (reported to the lead with minimal
/// reproductions). While a switch is true the random generator steers clear of that construct, so that the suite stays
/// green and keeps finding other bugs; set it to false once the bug is fixed, and the construct is generated again.
/// </summary>
internal static class KnownGeneratorBugs
{
    /// <summary>
    /// A loop-carried local named <c>gradient</c> or <c>hessian</c> is declared in MGradient/MHessian under its own
    /// name, which is also the span parameter's (CS0136/CS0841 in the generated code).
    /// </summary>
    public static readonly bool CarriedLocalNamedLikeASpanParameter = false; // fixed

    /// <summary>
    /// A tuple element that is a bare name (<c>var (a, b) = (x, y * y);</c>) gives the tuple literal an inferred element
    /// name, Roslyn wraps it in a conversion, and the deconstruction is refused with DG0001.
    /// </summary>
    public static readonly bool TupleElementThatIsABareName = false; // fixed

    /// <summary>
    /// A loop-carried local whose name is a keyword (<c>@double</c>, <c>@in</c>) is declared unescaped in the generated
    /// code (<c>double double = …;</c>, CS1001).
    /// </summary>
    public static readonly bool CarriedLocalWithKeywordName = false; // fixed

    /// <summary>
    /// A value computed from something that could throw and is evaluated under a guard (<c>i &lt; d.Length ? d[i] : 0</c>,
    /// or a data read or Clamp inside a branch) is written inline as a tree, every use repeated: the generated code
    /// grows exponentially with each statement that uses such a value twice (<c>t = t * t;</c> n times: ~2.5ⁿ).
    /// While open, guarded reads are rare in random expressions, so batches stay small enough to compile quickly. Fixed:
    /// such values get locals where their own code keeps the guard (Emit/ConditionalEvaluation.cs).
    /// </summary>
    public static readonly bool GuardedValueInlinedAsATree = false; // fixed

    /// <summary>
    /// The same growth for values computed after an <c>if</c>/<c>else</c> in a loop body: each later statement of the
    /// iteration that uses such a value twice multiplies the generated code by ~2.3 (12 statements <c>s = s * s;</c>
    /// after a branch: 6 MB of generated code). While open, branches are placed last in random loop bodies. Fixed with
    /// the previous one.
    /// </summary>
    public static readonly bool BranchInLoopInlinedAsATree = false; // fixed

    /// <summary>
    /// (Now refused with DG0001 instead of a wrong derivative; the shape stays out of random programs, which expect every
    /// generated method to compile.) WRONG DERIVATIVES. In a loop body, a carried local updated before a nested loop that updates it again
    /// (<c>s = s * x; for (…) { s = 0.5 * s; }</c>) gets a running derivative computed from its new value instead of its
    /// value at the start of the iteration (<c>dS_dX = x * dS_dX + s</c> after <c>s = s * x</c>). While open, random
    /// programs with that shape are discarded.
    /// </summary>
    public static readonly bool UpdateBeforeNestedLoopReadsNewValue = true;

    /// <summary>
    /// The derivative of Clamp (or Max/Min) whose arguments are the same node compares that node with itself in the
    /// generated code (<c>bool t = x &lt; x;</c>, warning CS1718, an error for projects that treat warnings as errors).
    /// While open, CS1718 in generated code is tolerated (and counted).
    /// </summary>
    public static readonly bool ComparisonOfANodeWithItself = false; // fixed

    /// <summary>
    /// EXCEPTIONS THE USER'S CODE DOES NOT THROW. Loop-invariant code is computed before the loop even when the loop
    /// runs zero times, including what can throw: <c>Math.Clamp</c> with lo &gt; hi (ArgumentException) and data reads
    /// such as <c>d[0]</c> for an empty <c>d</c> (IndexOutOfRangeException), and <c>Math.Sign</c> of a NaN
    /// (ArithmeticException). While open, Clamp and Sign are not generated inside random loops (random programs read
    /// data in loops only at the loop's own index).
    /// </summary>
    public static readonly bool ThrowingCodeHoistedOutOfLoop = false; // fixed

    /// <summary>
    /// A carried local whose value the result never uses, and that a loop reassigns a constant
    /// (<c>double s = 1.99; for (…) { s += x; s = -0.1; }</c>), is left in the generated code as constant assignments
    /// only: warning CS0219. While open, CS0219 in generated code is tolerated (and counted).
    /// </summary>
    public static readonly bool DeadCarriedLocalLeftAssigned = false; // fixed

    /// <summary>
    /// The side of a <c>?:</c> or <c>if</c> that C# does not take is computed anyway where DerivGen thinks that cannot
    /// throw, and its derivatives could leak: <c>Math.Sign(NaN)</c> there threw ArithmeticException in MGradient (fixed
    /// earlier), and an infinite derivative there (<c>c ? x / 0.0 : x - x</c>) turned the gradient into NaN (fixed: the
    /// contributions are selected by the condition). While on, the repair step keeps the untaken sides safe too.
    /// </summary>
    public static readonly bool UntakenSideEvaluated = false; // fixed
}
