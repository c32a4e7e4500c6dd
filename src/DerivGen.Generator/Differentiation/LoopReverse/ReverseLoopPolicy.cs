using System.Collections.Generic;
using System.Linq;
using DerivGen.Generator.Model;
using DerivGen.Generator.Symbolic;

namespace DerivGen.Generator.Differentiation.LoopReverse;

/// <summary>
/// The one place that decides how a gradient method goes through its loops: forward running derivatives (each carried
/// local carries its gradient; <see cref="DerivativeProgram"/>) or a reverse sweep over a record of the iterations
/// (<see cref="ReverseGradient"/>).
/// <para>
/// <b>The rule.</b> The gradient method goes reverse when (1) forward running derivatives would cost more than a constant
/// per iteration — some loop's update of a running derivative with respect to a vector of variables reads a whole
/// running-derivative span with a factor other than exactly 1 on its own span (a carried state driven by a vector:
/// every iteration would touch all n elements, O(n·T) in all), or the loops need more than
/// <see cref="RunningDerivativeLimit"/> scalar running derivatives (active carried locals × scalar variables) — and
/// (2) every loop of the method is a shape the reverse sweep handles (<see cref="Supports"/>). Otherwise the forward
/// code is kept exactly as before: sums over data and accumulators of vector reads (factor 1 on their own span,
/// O(1) per iteration) stay forward, and so does every shape the reverse sweep does not handle yet. The Hessian
/// method always stays forward. <c>[Differentiate(Loops = LoopDifferentiation.RunningDerivatives)]</c> or
/// <c>ReverseSweep</c> overrides part 1 (<see cref="WantsReverse"/>).
/// </para>
/// </summary>
internal static class ReverseLoopPolicy
{
    /// <summary>Whether to try the reverse sweep at all: the attribute's <c>Loops</c> override, else part 1 of the rule
    /// (<see cref="PrefersReverse"/>). Part 2 (<see cref="Supports"/>) applies either way.</summary>
    public static bool WantsReverse(MethodSpec spec, DerivativeProgram forward) => spec.Loops switch
    {
        LoopPreference.RunningDerivatives => false,
        LoopPreference.ReverseSweep => true,
        _ => PrefersReverse(forward),
    };

    /// <summary>Above this many scalar running derivatives (active carried locals × scalar variables, summed over the
    /// loops) the reverse sweep is chosen even without vectors of variables.</summary>
    public const int RunningDerivativeLimit = 64;

    /// <summary>Whether forward running derivatives would be the expensive choice for this program (part 1 of the rule).</summary>
    public static bool PrefersReverse(DerivativeProgram forward)
    {
        int scalarRunning = 0;
        Dictionary<string, ReverseReplay> replayed = ReverseReplay.Find(forward); // an inner loop replayed with the adjoint costs no span
        foreach (LoopSegment loop in forward.Loops)
        {
            foreach (LoopState state in loop.States)
            {
                if (!forward.States.TryGetValue(state, out StateDerivatives? d))
                {
                    continue;
                }

                scalarRunning += d.GradientNames.Length;
                if (loop.Children.Count > 0)
                {
                    continue; // a whole span read once per iteration of a loop around loops: the value's nested loops cost as much
                }

                foreach (VectorTerm term in d.NextVector)
                {
                    if (term.SourceSpan is { } span && !replayed.ContainsKey(span) && (span != d.VectorNames[term.Vector] || !term.Coefficient.IsConstant(1)))
                    {
                        return true; // a whole span read with a factor, or another local's span: O(n) per iteration
                    }
                }
            }
        }

        return scalarRunning > RunningDerivativeLimit;
    }

    /// <summary>
    /// Whether the reverse sweep handles every loop of the method (part 2 of the rule): a method returning its value
    /// (no span of outputs); loops not inside a branch and nested at most one level deep (<c>for</c> loops with bounds fixed before they
    /// start, and while loops — what <c>break</c>, <c>continue</c> and an early <c>return</c> in a loop are lowered to); no call of another generated method or helper anywhere (their partials come from buffers the
    /// forward code fills once per call).
    /// </summary>
    public static bool Supports(MethodSpec spec, DerivativeProgram value)
    {
        if (spec.HasOutputs || spec.IsPairMethod || value.Loops.Count == 0 || value.SlotOffsets.Count > 0 || HasLoopInBranch(spec.Body, inBranch: false))
        {
            return false;
        }

        foreach (LoopSegment loop in value.Loops)
        {
            if (loop.Parent?.Parent is not null || (loop.Parent is not null && loop.Children.Count > 0))
            {
                return false;
            }
        }

        var roots = new List<Node> { value.Value };
        roots.AddRange(value.Loops.SelectMany(l => l.States.SelectMany(s => new[] { s.Initial, s.Next })));
        return !Graph.Reachable(roots).Any(n => n.Kind is NodeKind.UserCall or NodeKind.CallPartial or NodeKind.CallSecondPartial);
    }

    private static bool HasLoopInBranch(EquatableArray<IrStatement> statements, bool inBranch)
    {
        foreach (IrStatement statement in statements)
        {
            switch (statement)
            {
                case IrIf branch when HasLoopInBranch(branch.Then, true) || HasLoopInBranch(branch.Else, true):
                    return true;
                case IrFor or IrWhile when inBranch:
                    return true;
                case IrFor loop when HasLoopInBranch(loop.Body, inBranch):
                    return true;
                case IrWhile loop when HasLoopInBranch(loop.Body, inBranch):
                    return true;
            }
        }

        return false;
    }
}
