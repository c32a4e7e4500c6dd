using System;
using System.Collections.Generic;
using System.Globalization;
using System.IO;
using System.Linq;
using System.Text;
using DerivGen.Tests.Infrastructure;
using Xunit;
using Xunit.Abstractions;

namespace DerivGen.Tests.PractitionerCorpus;

/// <summary>
/// The figure of issue 13: losses written the way practitioners write production C# (<see cref="CorpusCases"/>), each
/// with a named reference for its gradient, and what DerivGen does with each today (<see cref="CorpusStatus"/>).
/// A case whose status changes — accepted now, or refused differently — fails here with the instruction to update
/// the recorded status; an accepted case's generated gradient is checked against its reference.
/// </summary>
public sealed class PractitionerCorpusTests : IClassFixture<CorpusFixture>
{
    /// <summary>A generated gradient against a hand closed form evaluated by the test: equal formulas in a
    /// different order (see <see cref="Check.ClosedFormRelative"/>); loops over data add rounding, hence 1e-12.</summary>
    private const double HandRelative = 1e-12;

    /// <summary>Float cases: a generated float gradient against a double closed form, ~8000 float ulps (float has
    /// 24 bits; a few dozen roundings of values whose terms cancel partly, common practice).</summary>
    private const double HandRelativeSingle = 1e-3;

    private readonly CorpusFixture _fixture;
    private readonly ITestOutputHelper _output;

    public PractitionerCorpusTests(CorpusFixture fixture, ITestOutputHelper output)
    {
        _fixture = fixture;
        _output = output;
    }

    public static TheoryData<string> Names()
    {
        var data = new TheoryData<string>();
        foreach (CorpusCase c in CorpusCases.All)
        {
            data.Add(c.Name);
        }

        return data;
    }

    /// <summary>
    /// One case: its plain C# compiles without error or warning; its status today is the recorded one; its reference
    /// is right (a hand derivative agrees with Richardson-extrapolated differences of the user's own method); if
    /// accepted, MGradient/MHessian give the user's value bit for bit and the reference's gradient; if refused, the
    /// messages name the construct.
    /// </summary>
    [Theory]
    [MemberData(nameof(Names))]
    public void Case(string name)
    {
        Assert.True(_fixture.GeneratorProblem is null, "The generator threw or reported through the driver: " + _fixture.GeneratorProblem);
        CaseRun run = _fixture.Run(name);
        CorpusCase c = run.Case;
        Assert.True(run.SourceDiagnostics.Count == 0,
            $"{name}: the plain C# (before generation) must be valid code a user could have written, without warnings:\n  " + string.Join("\n  ", run.SourceDiagnostics));
        Assert.True(run.MarkedMethod is not null, $"{name}: the source must have exactly one [Differentiate] method.");
        Assert.True(_fixture.LoadProblem is null, _fixture.LoadProblem);
        Assert.False(run.GeneratedWithoutAnalyzerAgreement,
            $"{name}: the generator and the analyzer disagree — MGradient {(run.Observed.Accepted ? "" : "not ")}generated, analyzer errors: {run.AnalyzerErrors}.\n  " + string.Join("\n  ", run.Observed.Diagnostics));

        double[] x = c.Point;
        double value = run.Value!(x);
        Assert.True(double.IsFinite(value), $"{name}: the user's method is not finite at the case's point ({Check.R(value)}).");
        double[] richardson = Richardson.Gradient(run.Value!, x, c.Precision);
        // Tolerances are relative to the size of the value and gradient at the point (not floored at 1, so that a
        // small loss is checked as closely as a large one).
        double scale = Math.Max(1e-300, Math.Max(Math.Abs(value), richardson.Max(Math.Abs)));
        double[] reference = richardson;
        if (run.HandReference is { } hand)
        {
            var closed = new double[x.Length];
            hand(x, closed);
            Check.Close(closed, richardson, Richardson.Tolerance(c.Precision), Richardson.Tolerance(c.Precision) * scale,
                $"{name}: the hand reference ({c.Reference.Citation}) vs Richardson-extrapolated differences of the user's method");
            reference = closed;
            _output.WriteLine($"{name}: hand reference vs Richardson, largest difference / scale = {Check.R(closed.Zip(richardson, (a, b) => Math.Abs(a - b)).Max() / scale)} (allowed {Check.R(Richardson.Tolerance(c.Precision))})");
        }

        _output.WriteLine($"{name}: value {Check.R(value)}, reference gradient ({c.Reference.Citation}) [{string.Join(", ", reference.Select(Check.R))}]");

        if (run.Observed.Accepted)
        {
            var g = new double[x.Length];
            double gv = run.Gradient!(x, g);
            Check.SameBits(value, gv, $"{name}: MGradient's value vs the user's method");
            CheckAgainstReference(c, g, reference, scale, "MGradient");
            if (run.Hessian is { } hessian)
            {
                var g2 = new double[x.Length];
                var h = new double[x.Length * x.Length];
                Check.SameBits(value, hessian(x, g2, h), $"{name}: MHessian's value vs the user's method");
                CheckAgainstReference(c, g2, reference, scale, "MHessian");
                if (c.Precision == Precision.Double)
                {
                    Check.ExactlySymmetric(h, x.Length);
                    Check.HessianMatchesOracle(run.Value!, x, h, name);
                }
            }
        }
        else
        {
            var errors = run.Observed.Diagnostics.Where(d => d.StartsWith("DG", StringComparison.Ordinal) && !d.StartsWith("DG0007", StringComparison.Ordinal)).ToList();
            Assert.NotEmpty(errors);
            Assert.True(c.Constructs.Length > 0, $"{name} is refused: list in Constructs the words by which its messages name the construct.");
            foreach (string construct in c.Constructs)
            {
                Assert.True(errors.Any(e => e.Contains(construct, StringComparison.Ordinal)),
                    $"{name}: no refusal message names '{construct}' (if the refusal changed on purpose, update Constructs in CorpusCases.Refusals.cs and rerun with DERIVGEN_ACCEPT=1):\n  " + string.Join("\n  ", errors));
            }

            foreach (string e in errors)
            {
                _output.WriteLine("  refused: " + e);
            }
        }

        // Last, so that a case the generator starts to accept has its numbers checked first.
        Assert.True(CorpusStatus.Today.TryGetValue(name, out Observation? recorded),
            $"{name} has no recorded status in CorpusStatus.cs. Today: {Describe(run.Observed)}. Rerun with DERIVGEN_ACCEPT=1 to record it.");
        Assert.True(recorded!.SameAs(run.Observed),
            $"{name}: the status changed — the practitioner corpus is the figure for issue 13, so update it.\n"
            + $"  recorded: {Describe(recorded)}\n  today:    {Describe(run.Observed)}\n"
            + "Rerun with DERIVGEN_ACCEPT=1 (rewrites CorpusStatus.cs and the table in PractitionerCorpus/README.md), review the diff, "
            + "and update the case's Constructs / AdviceDoesNotWork in CorpusCases.Refusals.cs if a refusal changed.");
    }

    public static TheoryData<string> AdviceNames()
    {
        var data = new TheoryData<string>();
        foreach (CorpusCase c in CorpusCases.All.Where(c => c.AdviceEdit.Length > 0))
        {
            data.Add(c.Name);
        }

        return data;
    }

    /// <summary>
    /// Where a refusal's advice is a mechanical edit (mark the helper or local function [Differentiate], make the type
    /// generic), the edited source is refused in turn — the evidence for the case's AdviceDoesNotWork — or, for a case
    /// whose advice is not flagged, accepted. If either changes, this fails and says what to update.
    /// </summary>
    [Theory]
    [MemberData(nameof(AdviceNames))]
    public void AdviceEditGivesTheRecordedOutcome(string name)
    {
        AdviceRun run = _fixture.Advice[name];
        Assert.True(run.MissingEdits.Count == 0, $"{name}: the advice edit no longer matches the source; not found: " + string.Join(" | ", run.MissingEdits));
        _output.WriteLine($"{name}, advice followed: " + string.Join("; ", run.Case.AdviceEdit.Select(e => $"'{e.Find}' → '{e.Replace}'")));
        foreach (string line in run.CSharpErrors.Concat(run.Diagnostics))
        {
            _output.WriteLine("  " + line);
        }

        if (run.Case.AdviceDoesNotWork is null)
        {
            Assert.True(run.Accepted,
                $"{name}: following the refusal's advice no longer works (the edited source is refused). Record why in the case's AdviceDoesNotWork in CorpusCases.Refusals.cs:\n  "
                + string.Join("\n  ", run.CSharpErrors.Concat(run.Diagnostics)));
            return;
        }

        Assert.False(run.Accepted,
            $"{name}: following the refusal's advice now works (MGradient is generated for the edited source). Clear the case's AdviceDoesNotWork in CorpusCases.Refusals.cs.");
        Assert.True(run.CSharpErrors.Count > 0 || run.Diagnostics.Any(d => !d.StartsWith("DG0007", StringComparison.Ordinal)),
            $"{name}: the edited source is neither refused nor accepted.");
    }

    /// <summary>No refusal tells the user to mark a method of the .NET library [Differentiate] (it cannot be marked);
    /// one that tells to mark a method of the user's is measured by an advice edit (<see cref="AdviceEditGivesTheRecordedOutcome"/>).</summary>
    [Fact]
    public void AdviceToMarkAMethodIsMeasuredOrRecordedAsNotWorking()
    {
        foreach (CorpusCase c in _fixture.Cases)
        {
            var toMark = _fixture.Run(c.Name).Observed.Diagnostics
                .Where(d => d.Contains("mark the method [Differentiate]", StringComparison.Ordinal) || d.Contains("mark it [Differentiate]", StringComparison.Ordinal))
                .ToList();
            // Methods of the .NET library are shown by full name ('System.Linq.Enumerable.Sum') or by keyword ('double.IsNaN').
            var library = toMark.Where(d => new[] { "The call to 'System.", "The call to 'double.", "The call to 'float." }.Any(p => d.Contains(p, StringComparison.Ordinal))).ToList();
            // Since the advice of DG0001 names a rewrite for library calls (LINQ as a loop, vectors by components, other
            // functions by the supported ones), no refusal asks for this any more; one that did would be a regression.
            Assert.True(library.Count == 0,
                $"{c.Name}: the refusal asks to mark a .NET library method [Differentiate], which cannot be done:\n  " + string.Join("\n  ", library));
            Assert.True(toMark.Count == library.Count || c.AdviceEdit.Length > 0,
                $"{c.Name}: the refusal asks to mark a method of the user's [Differentiate]; add the AdviceEdit that does so in CorpusCases.Refusals.cs, so that whether the advice works is measured:\n  "
                + string.Join("\n  ", toMark.Except(library)));
        }
    }

    private static void CheckAgainstReference(CorpusCase c, double[] actual, double[] reference, double scale, string what)
    {
        double relative = c.Reference.IsHand
            ? (c.Precision == Precision.Single ? HandRelativeSingle : HandRelative)
            : Richardson.Tolerance(c.Precision);
        Check.Close(reference, actual, relative, relative * scale, $"{c.Name}: {what}'s gradient vs {c.Reference.Citation}");
    }

    /// <summary>The corpus meets issue 13's terms: at least 40 cases across at least 8 fields, every idiom used at
    /// least twice, unique names; prints the counts by field and idiom and every refusal's message.</summary>
    [Fact]
    public void Summary()
    {
        var cases = _fixture.Cases;
        Assert.True(cases.Count >= 40, $"The corpus has {cases.Count} cases; issue 13 asks for at least 40.");
        Assert.Equal(cases.Count, cases.Select(c => c.Name).Distinct(StringComparer.Ordinal).Count());
        int fields = cases.Select(c => c.Field).Distinct().Count();
        Assert.True(fields >= 8, $"The corpus spans {fields} fields; issue 13 asks for at least 8.");
        foreach (Idiom idiom in Enum.GetValues<Idiom>())
        {
            int n = cases.Count(c => c.Idioms.Contains(idiom));
            Assert.True(n >= 2, $"The idiom {idiom} is used by {n} case(s); issue 13 asks for each at least twice.");
        }

        bool Accepted(CorpusCase c) => _fixture.Run(c.Name).Observed.Accepted;
        _output.WriteLine($"Practitioner corpus: {cases.Count} cases, {cases.Count(Accepted)} accepted, {cases.Count(c => !Accepted(c))} refused.");
        _output.WriteLine("");
        _output.WriteLine("By field (accepted / cases):");
        foreach (var group in cases.GroupBy(c => c.Field).OrderBy(g => g.Key))
        {
            _output.WriteLine($"  {group.Key,-16} {group.Count(Accepted)} / {group.Count()}");
        }

        _output.WriteLine("By idiom (accepted / cases using it):");
        foreach (Idiom idiom in Enum.GetValues<Idiom>())
        {
            var using_ = cases.Where(c => c.Idioms.Contains(idiom)).ToList();
            _output.WriteLine($"  {idiom,-18} {using_.Count(Accepted)} / {using_.Count}");
        }

        _output.WriteLine("");
        _output.WriteLine("Refusals:");
        foreach (CorpusCase c in cases.Where(c => !Accepted(c)))
        {
            _output.WriteLine($"  {c.Name} ({c.Field}; {string.Join(", ", c.Idioms)})");
            foreach (string d in _fixture.Run(c.Name).Observed.Diagnostics)
            {
                _output.WriteLine("    " + d);
            }

            if (c.AdviceDoesNotWork is { } why)
            {
                _output.WriteLine("    ADVICE DOES NOT WORK: " + why);
            }
        }
    }

    /// <summary>
    /// CorpusStatus.cs and the table in PractitionerCorpus/README.md are today's state as this run observes it;
    /// DERIVGEN_ACCEPT=1 rewrites both (review the diff).
    /// </summary>
    [Fact]
    public void RecordedStatusAndReadmeTableAreToday()
    {
        Assert.True(_fixture.GeneratorProblem is null, _fixture.GeneratorProblem);
        var observed = _fixture.Cases.ToDictionary(c => c.Name, c => _fixture.Run(c.Name).Observed, StringComparer.Ordinal);
        string status = CorpusDocuments.StatusFile(_fixture.Cases, observed);
        string table = CorpusDocuments.ReadmeTable(_fixture.Cases, observed);
        CorpusDocuments.Verify(status, table);
    }

    /// <summary>The Richardson reference itself, on a function with a known gradient (plain calculus):
    /// f = exp(x₀)·sin(x₁) + x₀³/x₁, ∂f/∂x₀ = exp(x₀)·sin(x₁) + 3x₀²/x₁, ∂f/∂x₁ = exp(x₀)·cos(x₁) − x₀³/x₁².</summary>
    [Fact]
    public void RichardsonReferenceMatchesClosedForm()
    {
        Func<double[], double> f = v => (Math.Exp(v[0]) * Math.Sin(v[1])) + (v[0] * v[0] * v[0] / v[1]);
        double[] x = { 0.7, 1.3 };
        double[] expected =
        {
            (Math.Exp(x[0]) * Math.Sin(x[1])) + (3 * x[0] * x[0] / x[1]),
            (Math.Exp(x[0]) * Math.Cos(x[1])) - (x[0] * x[0] * x[0] / (x[1] * x[1])),
        };
        Check.Close(expected, Richardson.Gradient(f, x, Precision.Double), 1e-10, 1e-10, "Richardson vs closed form (double)");

        Func<double[], double> single = v => MathF.Exp((float)v[0]) * MathF.Sin((float)v[1]) + ((float)v[0] * (float)v[0] * (float)v[0] / (float)v[1]);
        Check.Close(expected, Richardson.Gradient(single, x, Precision.Single), Richardson.Tolerance(Precision.Single), Richardson.Tolerance(Precision.Single),
            "Richardson vs closed form (float evaluation)");
    }

    private static string Describe(Observation o) =>
        (o.Accepted ? "Accepted" + (o.Hessian ? " (gradient and Hessian)" : " (gradient)") : "Refused")
        + (o.Diagnostics.Count == 0 ? "" : "\n      " + string.Join("\n      ", o.Diagnostics));
}
