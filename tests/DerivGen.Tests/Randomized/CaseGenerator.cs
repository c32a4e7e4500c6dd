using System;
using System.Collections.Generic;
using System.Linq;
using CsCheck;

namespace DerivGen.Tests.Randomized;

/// <summary>
/// CsCheck generator of random methods. It is written imperatively over CsCheck's PCG (the scoping rules of C# —
/// which locals are visible, which may be assigned, which indices are valid for the data — are easier to follow that
/// way) and reports a <see cref="Size"/> that grows with the number of nodes, statements and variables, which is what
/// CsCheck's shrinking (and <see cref="DifferentialRunner.Shrink"/>) minimises. Every case is repaired to a safe point
/// (<see cref="Repair"/>) before it is returned.
/// </summary>
internal sealed class CaseGenerator : Gen<RandomCase>
{
    private static readonly Fn[] Functions = Enum.GetValues<Fn>();

    // Local names: ordinary ones, and ones that collide with what the generator itself might name a temporary, a
    // running derivative or a parameter of MGradient/MHessian, keywords (verbatim identifiers) and non-ASCII letters.
    private static readonly string[] Plain = { "s", "acc", "r", "u", "w", "z", "sum", "prod" };
    private static readonly string[] Hostile =
    {
        "value", "t1", "t2", "t3", "dAcc_dX0", "d2Acc_dX0dX1", "sinX0", "expT1", "x0Squared", "λ", "résumé", "dValue_dX0", "x0Adjoint", "i2",
    };

    private static readonly string[] SpanParameterNames = { "gradient", "hessian" };
    private static readonly string[] Keywords = { "@double", "@in", "@var", "@return" };
    private static readonly string[] HostileNames = Hostile.Concat(SpanParameterNames).Concat(Keywords).ToArray();

    private readonly CaseFamily _family;

    /// <summary>Points each method is checked at (one compilation serves them all).</summary>
    public const int PointsPerCase = 3;

    public CaseGenerator(CaseFamily family) => _family = family;

    public override RandomCase Generate(PCG pcg, Size? min, out Size size)
    {
        while (true)
        {
            RandomCase raw = new Builder(pcg, _family).Build();
            if (KnownGeneratorBugs.UpdateBeforeNestedLoopReadsNewValue && UpdatesBeforeNestedLoop(raw.Body))
            {
                continue;
            }

            Stmt[]? safe = Repair.MakeSafe(raw.Body, raw.Points);
            if (safe is not null)
            {
                RandomCase result = raw.WithBody(safe);
                size = new Size(result.Size);
                return result;
            }
        }
    }

    /// <summary>Whether some loop body assigns a local before a nested loop that assigns it too.</summary>
    private static bool UpdatesBeforeNestedLoop(IEnumerable<Stmt> statements)
    {
        foreach (Loop loop in statements.SelectMany(Flatten).OfType<Loop>())
        {
            var assignedBefore = new HashSet<string>(StringComparer.Ordinal);
            foreach (Stmt s in loop.Body)
            {
                if (s is Loop nested && Assigned(nested).Any(assignedBefore.Contains))
                {
                    return true;
                }

                assignedBefore.UnionWith(Assigned(s));
            }
        }

        return false;
    }

    private static IEnumerable<Stmt> Flatten(Stmt s) => new[] { s }.Concat(s.Nested.SelectMany(Flatten));

    private static IEnumerable<string> Assigned(Stmt s) => Flatten(s).SelectMany(x => x switch
    {
        Assign a => new[] { a.Name },
        Step st => new[] { st.Name },
        Tuple2 { Declares: false } t => new[] { t.First, t.Second },
        _ => Array.Empty<string>(),
    });

    /// <summary>What the code being generated can see at one place.</summary>
    private sealed class Scope
    {
        public List<string> Doubles { get; init; } = new();

        /// <summary>Double locals that may be assigned here (declared before, not a foreach element).</summary>
        public List<string> Assignable { get; init; } = new();

        public List<IntExpr> Ints { get; init; } = new();

        /// <summary>Int expressions that are valid indices into d here.</summary>
        public List<IntExpr> DataIndices { get; init; } = new();

        /// <summary>Doubles that do not depend on a variable (foreach elements): usable in conditions.</summary>
        public List<string> Constants { get; init; } = new();

        public List<string> Bools { get; init; } = new();

        public List<string> IntLocals { get; init; } = new();

        public int LoopDepth { get; init; }

        public Scope Inner(int loopDepth) => new()
        {
            Doubles = new(Doubles),
            Assignable = new(Assignable),
            Ints = new(Ints),
            DataIndices = new(DataIndices),
            Constants = new(Constants),
            Bools = new(Bools),
            IntLocals = new(IntLocals),
            LoopDepth = loopDepth,
        };
    }

    private sealed class Builder
    {
        private readonly PCG _pcg;
        private readonly CaseFamily _family;
        private readonly HashSet<string> _names = new(StringComparer.Ordinal) { "x0", "x1", "x2", "c0", "c1", "k", "d" };
        private int _counter;
        private string[] _variables = Array.Empty<string>();

        public Builder(PCG pcg, CaseFamily family)
        {
            _pcg = pcg;
            _family = family;
        }

        private int Int(int n) => (int)_pcg.Next((uint)n);

        private bool Chance(double p) => _pcg.Next() < p * uint.MaxValue;

        private double Uniform(double low, double high) => low + ((high - low) * (_pcg.Next() / (double)uint.MaxValue));

        private T Pick<T>(IReadOnlyList<T> items) => items[Int(items.Count)];

        public RandomCase Build()
        {
            bool all = Chance(0.15);
            string[] variables = all
                ? CasePoint.DoubleNames
                : new[] { "x0", "x1", "x2" }.Where((_, i) => ((Int(7) + 1) & (1 << i)) != 0).ToArray();
            if (variables.Length == 0)
            {
                variables = new[] { "x0" };
            }

            _variables = variables;
            bool hessian = Chance(0.85);
            int dataLength = _family == CaseFamily.Expression ? 3 : Int(6);
            double[] data = Enumerable.Range(0, dataLength).Select(_ => Math.Round(Uniform(-2, 2), 2)).ToArray();
            int k = Int(4);
            CasePoint[] points = Enumerable.Range(0, PointsPerCase)
                .Select(_ => new CasePoint(Enumerable.Range(0, 5).Select(_ => Math.Round(Uniform(-2, 2), 3)).ToArray(), k, data))
                .ToArray();

            Stmt[] body;
            bool expressionBodied = false;
            if (_family == CaseFamily.Expression)
            {
                var scope = new Scope { Ints = { new IntName("k"), new DataLength() }, DataIndices = { new IntLit(0), new IntLit(1), new IntLit(2) } };
                body = new Stmt[] { new Return(Expression(scope, 1 + Int(5))) };
                expressionBodied = Chance(0.5);
            }
            else
            {
                body = Program();
            }

            return new RandomCase(_family, body, expressionBodied, variables, all, hessian, points);
        }

        private string Name(string? prefix = null)
        {
            string name = prefix ?? (Chance(0.25) ? Pick(HostileNames) : Pick(Plain) + _counter++);
            while (!_names.Add(name))
            {
                name = (prefix ?? Pick(Plain)) + _counter++;
            }

            return name;
        }

        // ----- expressions -----

        private Expr Expression(Scope scope, int depth)
        {
            if (depth <= 0 || Chance(0.15))
            {
                return Leaf(scope);
            }

            int choice = Int(100);
            if (choice < 35)
            {
                return new Bin("+-*/"[Int(4)], Expression(scope, depth - 1), Expression(scope, depth - 1));
            }

            if (choice < 40)
            {
                return new Neg(Expression(scope, depth - 1));
            }

            if (choice < 47)
            {
                return new Conditional(Condition(scope, 1), Expression(scope, depth - 1), Expression(scope, depth - 1));
            }

            Fn fn = Pick(Functions);
            FunctionSpec spec = ReferenceFunctions.All[fn];
            Host host = !spec.HasMath || (spec.DoubleValue is not null && Chance(0.3)) ? Host.Double : Host.Math;
            var args = new Expr[spec.Arity];
            for (int i = 0; i < args.Length; i++)
            {
                args[i] = Expression(scope, depth - 1);
            }

            if (fn == Fn.Pow)
            {
                int kind = Int(4);
                if (kind <= 1)
                {
                    args[1] = new Lit(Int(9) - 3);                          // an integer exponent, -3..5: any sign of base
                }
                else if (kind == 2)
                {
                    args[1] = new Lit(Pick(new[] { 0.5, 1.5, 2.5, -0.5, 1.25 }));
                }
            }

            return new Call(fn, host, args);
        }

        private static readonly double[] NiceLiterals = { 0.0, 1.0, 2.0, 3.0, 0.5, 0.25, 1.5, 10.0, 0.1, 1e-3, -1.0, -2.5, 4.0 };

        private Expr Leaf(Scope scope)
        {
            int choice = Int(100);
            if (choice < 40)
            {
                return new ParamRef(Pick(_variables));
            }

            if (choice < 48)
            {
                return new ParamRef(Pick(CasePoint.DoubleNames));
            }

            if (choice < 68 && scope.Doubles.Count > 0)
            {
                return new LocalRef(Pick(scope.Doubles));
            }

            if (choice < 82)
            {
                return new Lit(Chance(0.6) ? Pick(NiceLiterals) : Math.Round(Uniform(-3, 3), 2));
            }

            if (choice < 90 && scope.DataIndices.Count > 0)
            {
                return new DataRef(Pick(scope.DataIndices));
            }

            if (choice < 94 && scope.Constants.Count > 0)
            {
                return new LocalRef(Pick(scope.Constants));
            }

            if (choice < 97)
            {
                return GuardedData(scope);
            }

            return new IntAsDouble(Chance(0.5) ? Pick(scope.Ints) : new IntAdd(Pick(scope.Ints), 1 + Int(2)));
        }

        /// <summary><c>index &lt; d.Length ? d[index] : literal</c>, where index may be out of range: the read must only
        /// happen on the side that is taken.</summary>
        private Expr GuardedData(Scope scope)
        {
            IntExpr index = scope.DataIndices.Count > 0 && Chance(0.5) ? new IntAdd(Pick(scope.DataIndices), 1) : new IntLit(Int(5));
            return new Conditional(new IntCompare("<", index, new DataLength()), new DataRef(index), new Lit(Pick(NiceLiterals)));
        }

        private Cond Condition(Scope scope, int depth)
        {
            int choice = Int(100);
            if (depth > 0 && choice < 15)
            {
                return Chance(0.3) ? new Not(Condition(scope, depth - 1)) : new Logical(Chance(0.5), Condition(scope, depth - 1), Condition(scope, depth - 1));
            }

            if (choice < 25 && scope.Bools.Count > 0)
            {
                return new BoolName(Pick(scope.Bools));
            }

            string op = Pick(new[] { "<", "<=", ">", ">=", "==", "!=" });
            if (choice < 65 && (scope.DataIndices.Count > 0 || scope.Constants.Count > 0))
            {
                Expr data = scope.Constants.Count > 0 && (scope.DataIndices.Count == 0 || Chance(0.5))
                    ? new LocalRef(Pick(scope.Constants))
                    : new DataRef(Pick(scope.DataIndices));
                return new DoubleCompare(op, data, new Lit(Math.Round(Uniform(-1.5, 1.5), 1)));
            }

            if (choice < 75)
            {
                return new DoubleCompare(op, GuardedData(scope), new Lit(Math.Round(Uniform(-1.5, 1.5), 1)));
            }

            return new IntCompare(op, Pick(scope.Ints), new IntLit(Int(4)));
        }

        // ----- programs -----

        private Stmt[] Program()
        {
            var scope = new Scope { Ints = { new IntName("k"), new DataLength() } };
            var body = new List<Stmt>();
            int declarations = 1 + Int(3);
            for (int i = 0; i < declarations; i++)
            {
                body.Add(Declare(scope));
            }

            if (Chance(0.15))
            {
                string n = Name("n");
                body.Add(new DeclInt(n, new IntAdd(new IntName("k"), Int(3))));
                scope.Ints.Add(new IntName(n));
                scope.IntLocals.Add(n);
            }

            if (Chance(0.15))
            {
                string b = Name("flag");
                body.Add(new DeclBool(b, Condition(scope, 1)));
                scope.Bools.Add(b);
            }

            int blocks = 1 + Int(3);
            for (int i = 0; i < blocks; i++)
            {
                int choice = Int(100);
                body.Add(choice switch
                {
                    < 55 => LoopStatement(scope),
                    < 70 => IfStatement(scope),
                    < 80 => TupleStatement(scope),
                    _ => Simple(scope),
                });
            }

            if (Chance(0.2))
            {
                body.Add(new Return(Expression(scope, 2), Condition(scope, 1)));
                int after = Int(3);
                for (int i = 0; i < after; i++)
                {
                    body.Add(Chance(0.3) ? IfStatement(scope) : Simple(scope));
                }
            }

            body.Add(new Return(Expression(scope, 1 + Int(3))));
            return body.ToArray();
        }

        private Stmt Declare(Scope scope)
        {
            string name = Name();
            Stmt declaration = new DeclDouble(name, Expression(scope, 1 + Int(3)), Chance(0.3));
            scope.Doubles.Add(name);
            scope.Assignable.Add(name);
            return declaration;
        }

        /// <summary>A statement that is not a loop or a branch: an assignment, compound assignment, ++/--, or a declaration.</summary>
        private Stmt Simple(Scope scope)
        {
            int choice = Int(100);
            if (scope.Assignable.Count == 0 || choice < 20)
            {
                return Declare(scope);
            }

            string target = Pick(scope.Assignable);
            if (choice < 35)
            {
                return new Assign(target, Expression(scope, 1 + Int(3)), null);
            }

            if (choice < 42)
            {
                return new Step(target, Chance(0.5), isInt: false);
            }

            if (choice < 47 && scope.IntLocals.Count > 0)
            {
                return new Step(Pick(scope.IntLocals), Chance(0.7), isInt: true);
            }

            char op = "+-*/"[Int(4)];
            return new Assign(target, new Bin(op, new LocalRef(target), Expression(scope, 1 + Int(2))), op);
        }

        private Stmt IfStatement(Scope scope)
        {
            Cond condition = Condition(scope, 1);
            Stmt[] Branch()
            {
                Scope inner = scope.Inner(scope.LoopDepth);
                return Enumerable.Range(0, 1 + Int(2)).Select(_ => Simple(inner)).ToArray();
            }

            return new If(condition, Branch(), Chance(0.5) ? Branch() : null);
        }

        private Stmt TupleStatement(Scope scope)
        {
            if (scope.Assignable.Count >= 2 && Chance(0.5))
            {
                string first = Pick(scope.Assignable);
                string second = Pick(scope.Assignable.Where(n => n != first).ToList());

                // The values must not read the targets (a swap is refused by DerivGen).
                Scope reading = scope.Inner(scope.LoopDepth);
                reading.Doubles.Remove(first);
                reading.Doubles.Remove(second);
                return new Tuple2(false, first, second, TupleElement(reading), TupleElement(reading));
            }

            string a = Name(), b = Name();
            var tuple = new Tuple2(true, a, b, TupleElement(scope), TupleElement(scope));
            scope.Doubles.Add(a);
            scope.Doubles.Add(b);
            scope.Assignable.Add(a);
            scope.Assignable.Add(b);
            return tuple;
        }

        private Expr TupleElement(Scope scope)
        {
            return Expression(scope, Int(3));
        }

        private Stmt LoopStatement(Scope scope)
        {
            int depth = scope.LoopDepth + 1;
            Scope inner = scope.Inner(depth);
            int choice = Int(100);
            Loop Make(LoopKind kind, string index, IntExpr start, IntExpr end, int form)
            {
                var body = new List<Stmt>();
                int count = 1 + Int(4);
                for (int i = 0; i < count; i++)
                {
                    int pick = Int(100);
                    body.Add(pick switch
                    {
                        < 15 when depth < 2 => LoopStatement(inner),
                        < 30 => IfStatement(inner),
                        < 40 => TupleStatement(inner),
                        _ => Simple(inner),
                    });
                }

                return new Loop(kind, index, start, end, form, body.ToArray());
            }

            if (choice < 50)
            {
                // for (int i = start; i < d.Length; i++): d[i] is valid; the start may be an enclosing index.
                string i = Name("i");
                IntExpr start = scope.DataIndices.Count > 0 && Chance(0.3) ? Pick(scope.DataIndices) : new IntLit(Int(2));
                inner.Ints.Add(new IntName(i));
                inner.DataIndices.Add(new IntName(i));
                return Make(LoopKind.For, i, start, new DataLength(), Int(3));
            }

            if (choice < 65)
            {
                string j = Name("j");
                inner.Ints.Add(new IntName(j));
                return Make(LoopKind.For, j, new IntLit(0), Chance(0.5) ? new IntName("k") : new IntLit(1 + Int(3)), Int(3));
            }

            if (choice < 85)
            {
                string v = Name("v");
                inner.Constants.Add(v);
                return Make(LoopKind.ForEach, v, new IntLit(0), new DataLength(), 0);
            }

            string w = Name("step");
            inner.Ints.Add(new IntName(w));
            return Make(LoopKind.While, w, new IntLit(0), new IntLit(1 + Int(3)), 0);
        }
    }
}
