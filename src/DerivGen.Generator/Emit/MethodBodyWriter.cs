using System;
using System.Collections.Generic;
using System.Linq;
using DerivGen.Generator.Differentiation;
using DerivGen.Generator.Model;
using DerivGen.Generator.Symbolic;

namespace DerivGen.Generator.Emit;

/// <summary>
/// Writes the body of one generated method from its <see cref="MethodPlan"/>: allocates every name in one scope, then
/// prints the temporaries of each stage, the loops with their carried locals and running derivatives, and the results.
/// It decides nothing about derivatives: which node gets a local, in which form an update is written and which spans
/// are replayed, accumulated in place or assigned once come from the plan.
/// </summary>
internal sealed partial class MethodBodyWriter
{
    private readonly IndentedWriter _writer;
    private readonly EmitContext _context;
    private readonly MethodPlan _plan;
    private readonly DerivativeProgram _program;
    private readonly string _thrower;
    private readonly Dictionary<Node, string> _gradientBuffer = new();
    private readonly Dictionary<Node, string> _hessianBuffer = new();
    private readonly HashSet<Node> _written = new();
    private readonly ExpressionWriter _code;
    private NameScope _scope = null!;
    private string _element = null!;

    private MethodBodyWriter(IndentedWriter writer, EmitContext context, MethodPlan plan, string thrower)
    {
        _writer = writer;
        _context = context;
        _plan = plan;
        _program = plan.Program;
        _thrower = thrower;
        _code = new ExpressionWriter(NameOf, formula: false, calleeDerivative: CalleeDerivative);
    }

    public static void Write(IndentedWriter writer, EmitContext context, bool withHessian, string thrower)
    {
        if (!withHessian && context.Program.Reverse is { } reverse)
        {
            // The loops go reverse (Differentiation/LoopReverse): the value code of a program without running
            // derivatives, recording its loops, then the reverse sweep. Its names are those of that program.
            new MethodBodyWriter(writer, new EmitContext(context.Spec, reverse.Program), reverse.Forward, thrower) { _reverse = reverse }.WriteBody();
            return;
        }

        MethodPlan plan = MethodPlan.Create(context.Program, withHessian, context.Spec.HasSinCos, context.Spec.HasOutputs);
        new MethodBodyWriter(writer, context, plan, thrower).WriteBody();
    }

    /// <summary>
    /// The user's checks that throw (<see cref="IrGuard"/>), first in every generated method, in the user's order: the
    /// method throws there with the user's exception before any span check and before anything is written.
    /// </summary>
    public static void WriteGuards(IndentedWriter writer, MethodSpec spec)
    {
        foreach (IrGuard guard in spec.Guards)
        {
            if (guard.Condition is null)
            {
                writer.Line(guard.Statement);
                continue;
            }

            using (writer.Block("if (" + guard.Condition + ")"))
            {
                writer.Line(guard.Statement);
            }
        }

        if (spec.Guards.Count > 0)
        {
            writer.Line();
        }
    }

    private void WriteBody()
    {
        _scope = new NameScope(_context, _plan, _thrower);
        DeclareCallBuffers();
        // Running derivatives with respect to vectors of variables live in spans: on the stack up to a size, else on
        // the heap (the README states the policy).
        _element = _scope.SpanIndex();
        DeclareSpans();
        WriteTemporaries(0);
        foreach (LoopSegment loop in _program.TopLevelLoops)
        {
            WriteLoop(loop);
        }

        if (_reverse is not null)
        {
            WriteReverseSweep();
            return;
        }

        if (_plan.Results.Count == 0)
        {
            _writer.TrimBlank();
            return; // The outputs and their rows are written where the method writes them.
        }

        _writer.Blank();
        WriteResults();
    }

    /// <summary>The buffers one call of another generated method fills with its partial derivatives.</summary>
    private void DeclareCallBuffers()
    {
        foreach (Node call in _plan.GradientCalls.OrderBy(c => c.Id).ToList())
        {
            string type = ExpressionWriter.TypeKeyword(call.Type);
            int m = call.Callee!.VariablePositions.Length;
            _gradientBuffer[call] = _scope.CallBuffer(call, "Gradient");
            _writer.Line("global::System.Span<" + type + "> " + _gradientBuffer[call] + " = stackalloc " + type + "[" + Text.Count(m) + "];");
            if (_plan.HessianCalls.Contains(call))
            {
                _hessianBuffer[call] = _scope.CallBuffer(call, "Hessian");
                _writer.Line("global::System.Span<" + type + "> " + _hessianBuffer[call] + " = stackalloc " + type + "[" + Text.Count(m * m) + "];");
            }
        }
    }

    private string CalleeDerivative(Node partial)
    {
        Node call = partial.Arguments[0];
        return partial.Kind == NodeKind.CallPartial
            ? _gradientBuffer[call] + "[" + Text.Count((int)partial.Value) + "]"
            : _hessianBuffer[call] + "[" + Text.Count((int)partial.Value) + "]";
    }

    private string? NameOf(Node node) => _scope.Of(node);

    /// <summary>The temporaries of a stage, as the plan computes them (<see cref="LocalStatements"/>), then the outputs
    /// written there.</summary>
    private void WriteTemporaries(int stage)
    {
        WriteSpanSnapshots(stage);
        foreach (LocalStatement statement in _plan.Locals.TryGetValue(stage, out List<LocalStatement>? statements) ? statements : new List<LocalStatement>())
        {
            Node node = statement.Node;
            string keyword = ExpressionWriter.TypeKeyword(node.Type);
            switch (statement.Kind)
            {
                case LocalKind.SinCos:
                    Node cosine = statement.Cosine!;
                    _written.Add(node);
                    _written.Add(cosine);
                    _writer.Line("(" + keyword + " " + _scope[node] + ", " + keyword + " " + _scope[cosine] + ") = global::System." + (node.Type == ScalarType.Single ? "MathF" : "Math")
                        + ".SinCos(" + _code.Write(node.Arguments[0]) + ");");
                    break;
                case LocalKind.CallWithBuffers:
                    _writer.Line(keyword + " " + _scope[node] + " = " + CallWithBuffers(statement) + ";");
                    _written.Add(node);
                    break;
                default:
                    // A temporary is written with its own definition, not its name.
                    _writer.Line(keyword + " " + _scope[node] + " = "
                        + new ExpressionWriter(x => x == node ? _context.LeafName(x) : NameOf(x), formula: false, calleeDerivative: CalleeDerivative).Write(node) + ";");
                    _written.Add(node);
                    break;
            }
        }

        WriteOutputs(stage);
    }

    /// <summary>A call whose derivatives are needed calls the callee's generated method, which returns the same value
    /// and fills the buffers; under the user's condition where the user's code calls it only under one.</summary>
    private string CallWithBuffers(LocalStatement statement)
    {
        Node node = statement.Node;
        string buffer = _gradientBuffer[node];
        var arguments = node.Arguments.Select(_code.Write).Concat(statement.WithHessian ? new[] { buffer, _hessianBuffer[node] } : new[] { buffer });
        string definition = (statement.WithHessian ? GeneratedNames.HessianMethod(node.Text!) : GeneratedNames.GradientMethod(node.Text!)) + "(" + string.Join(", ", arguments) + ")";
        if (statement.Condition is { } guard)
        {
            // The condition is written out in full (with && and || short-circuiting as in the user's code), reading only
            // temporaries already computed.
            string condition = new ExpressionWriter(x => _written.Contains(x) ? NameOf(x) : _context.LeafName(x), formula: false).Write(guard);
            definition = condition + " ? " + definition + " : " + Literals.CSharp(0, node.Type);
        }

        return definition;
    }
}
