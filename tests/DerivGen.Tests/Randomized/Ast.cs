using System;
using System.Collections.Generic;
using System.Globalization;
using System.Linq;
using System.Text;

namespace DerivGen.Tests.Randomized;

// The random programs' own syntax tree: what the random generator builds, what is printed as the C# source given to
// DerivGen, and what the reference interpreter (Interpreter.cs) runs with second-order forward-mode numbers. Nodes are
// compared by reference: the repair step (Repair.cs) replaces one node object by another.

/// <summary>A double-valued expression.</summary>
internal abstract class Expr
{
    /// <summary>Children, in evaluation order (left to right, as C# evaluates them).</summary>
    public abstract IEnumerable<Expr> Children { get; }

    /// <summary>A copy with <paramref name="target"/> (compared by reference) replaced by <paramref name="replacement"/>.</summary>
    public abstract Expr Replace(Expr target, Expr replacement);

    public int Count => 1 + Children.Sum(c => c.Count);
}

/// <summary>A double parameter: x0, x1, x2 (variables or constants, as the case says), c0, c1.</summary>
internal sealed class ParamRef : Expr
{
    public ParamRef(string name) => Name = name;

    public string Name { get; }

    public override IEnumerable<Expr> Children => Array.Empty<Expr>();

    public override Expr Replace(Expr target, Expr replacement) => this == target ? replacement : this;
}

/// <summary>A double local of the method.</summary>
internal sealed class LocalRef : Expr
{
    public LocalRef(string name) => Name = name;

    public string Name { get; }

    public override IEnumerable<Expr> Children => Array.Empty<Expr>();

    public override Expr Replace(Expr target, Expr replacement) => this == target ? replacement : this;
}

internal sealed class Lit : Expr
{
    public Lit(double value) => Value = value;

    public double Value { get; }

    public bool IsInteger => Value == Math.Round(Value);

    public override IEnumerable<Expr> Children => Array.Empty<Expr>();

    public override Expr Replace(Expr target, Expr replacement) => this == target ? replacement : this;
}

/// <summary>d[index], an element of the data array (never a variable).</summary>
internal sealed class DataRef : Expr
{
    public DataRef(IntExpr index) => Index = index;

    public IntExpr Index { get; }

    public override IEnumerable<Expr> Children => Array.Empty<Expr>();

    public override Expr Replace(Expr target, Expr replacement) => this == target ? replacement : this;
}

/// <summary>An int expression used as a double (an implicit or explicit conversion).</summary>
internal sealed class IntAsDouble : Expr
{
    public IntAsDouble(IntExpr value) => Value = value;

    public IntExpr Value { get; }

    public override IEnumerable<Expr> Children => Array.Empty<Expr>();

    public override Expr Replace(Expr target, Expr replacement) => this == target ? replacement : this;
}

internal sealed class Neg : Expr
{
    public Neg(Expr operand) => Operand = operand;

    public Expr Operand { get; }

    public override IEnumerable<Expr> Children => new[] { Operand };

    public override Expr Replace(Expr target, Expr replacement) =>
        this == target ? replacement : new Neg(Operand.Replace(target, replacement));
}

internal sealed class Bin : Expr
{
    public Bin(char op, Expr left, Expr right)
    {
        Op = op;
        Left = left;
        Right = right;
    }

    /// <summary>'+', '-', '*' or '/'.</summary>
    public char Op { get; }

    public Expr Left { get; }

    public Expr Right { get; }

    public override IEnumerable<Expr> Children => new[] { Left, Right };

    public override Expr Replace(Expr target, Expr replacement) =>
        this == target ? replacement : new Bin(Op, Left.Replace(target, replacement), Right.Replace(target, replacement));
}

internal sealed class Call : Expr
{
    public Call(Fn fn, Host host, params Expr[] args)
    {
        Fn = fn;
        Host = host;
        Args = args;
    }

    public Fn Fn { get; }

    public Host Host { get; }

    public Expr[] Args { get; }

    public FunctionSpec Spec => ReferenceFunctions.All[Fn];

    public override IEnumerable<Expr> Children => Args;

    public override Expr Replace(Expr target, Expr replacement) =>
        this == target ? replacement : new Call(Fn, Host, Args.Select(a => a.Replace(target, replacement)).ToArray());
}

/// <summary>condition ? whenTrue : whenFalse, with a condition that never depends on a variable.</summary>
internal sealed class Conditional : Expr
{
    public Conditional(Cond condition, Expr whenTrue, Expr whenFalse)
    {
        Condition = condition;
        WhenTrue = whenTrue;
        WhenFalse = whenFalse;
    }

    public Cond Condition { get; }

    public Expr WhenTrue { get; }

    public Expr WhenFalse { get; }

    public override IEnumerable<Expr> Children => new[] { WhenTrue, WhenFalse };

    public override Expr Replace(Expr target, Expr replacement) =>
        this == target ? replacement : new Conditional(Condition, WhenTrue.Replace(target, replacement), WhenFalse.Replace(target, replacement));
}

/// <summary>An int expression: literals, int locals and loop indices, the int parameter k, d.Length, e + c.</summary>
internal abstract class IntExpr
{
}

internal sealed class IntLit : IntExpr
{
    public IntLit(int value) => Value = value;

    public int Value { get; }
}

internal sealed class IntName : IntExpr
{
    public IntName(string name) => Name = name;

    public string Name { get; }
}

internal sealed class DataLength : IntExpr
{
}

internal sealed class IntAdd : IntExpr
{
    public IntAdd(IntExpr left, int right)
    {
        Left = left;
        Right = right;
    }

    public IntExpr Left { get; }

    public int Right { get; }
}

/// <summary>A bool condition that never depends on a differentiation variable.</summary>
internal abstract class Cond
{
}

/// <summary>A comparison of two non-variable doubles (data, literals, ints) — never a tie-sensitive kink.</summary>
internal sealed class DoubleCompare : Cond
{
    public DoubleCompare(string op, Expr left, Expr right)
    {
        Op = op;
        Left = left;
        Right = right;
    }

    public string Op { get; }

    public Expr Left { get; }

    public Expr Right { get; }
}

internal sealed class IntCompare : Cond
{
    public IntCompare(string op, IntExpr left, IntExpr right)
    {
        Op = op;
        Left = left;
        Right = right;
    }

    public string Op { get; }

    public IntExpr Left { get; }

    public IntExpr Right { get; }
}

internal sealed class BoolName : Cond
{
    public BoolName(string name) => Name = name;

    public string Name { get; }
}

internal sealed class Not : Cond
{
    public Not(Cond operand) => Operand = operand;

    public Cond Operand { get; }
}

internal sealed class Logical : Cond
{
    public Logical(bool isAnd, Cond left, Cond right)
    {
        IsAnd = isAnd;
        Left = left;
        Right = right;
    }

    public bool IsAnd { get; }

    public Cond Left { get; }

    public Cond Right { get; }
}

/// <summary>A statement of the method body.</summary>
internal abstract class Stmt
{
    public abstract IEnumerable<Expr> Expressions { get; }

    public abstract IEnumerable<Stmt> Nested { get; }

    public abstract Stmt Replace(Expr target, Expr replacement);

    public int Count => 1 + Expressions.Sum(e => e.Count) + Nested.Sum(s => s.Count);

    protected static Stmt[] Replace(Stmt[] statements, Expr target, Expr replacement) =>
        statements.Select(s => s.Replace(target, replacement)).ToArray();
}

/// <summary><c>double name = value;</c> (or <c>var</c>).</summary>
internal sealed class DeclDouble : Stmt
{
    public DeclDouble(string name, Expr value, bool useVar)
    {
        Name = name;
        Value = value;
        UseVar = useVar;
    }

    public string Name { get; }

    public Expr Value { get; }

    public bool UseVar { get; }

    public override IEnumerable<Expr> Expressions => new[] { Value };

    public override IEnumerable<Stmt> Nested => Array.Empty<Stmt>();

    public override Stmt Replace(Expr target, Expr replacement) => new DeclDouble(Name, Value.Replace(target, replacement), UseVar);
}

/// <summary><c>name = value;</c>, or <c>name op= value</c> when <see cref="CompoundOp"/> is set — evaluated as the
/// node <c>name op value</c> (<see cref="Value"/> is then that <see cref="Bin"/>).</summary>
internal sealed class Assign : Stmt
{
    public Assign(string name, Expr value, char? compoundOp)
    {
        Name = name;
        Value = value;
        CompoundOp = compoundOp;
    }

    public string Name { get; }

    public Expr Value { get; }

    public char? CompoundOp { get; }

    public override IEnumerable<Expr> Expressions => new[] { Value };

    public override IEnumerable<Stmt> Nested => Array.Empty<Stmt>();

    public override Stmt Replace(Expr target, Expr replacement)
    {
        Expr value = Value.Replace(target, replacement);
        // A compound assignment keeps its shape (name op e) unless the Bin itself was replaced.
        return CompoundOp is not null && (value is not Bin bin || bin.Op != CompoundOp || bin.Left is not LocalRef l || l.Name != Name)
            ? new Assign(Name, value, null)
            : new Assign(Name, value, CompoundOp);
    }
}

/// <summary><c>name++;</c> or <c>name--;</c> on a double or int local.</summary>
internal sealed class Step : Stmt
{
    public Step(string name, bool increment, bool isInt)
    {
        Name = name;
        Increment = increment;
        IsInt = isInt;
    }

    public string Name { get; }

    public bool Increment { get; }

    public bool IsInt { get; }

    public override IEnumerable<Expr> Expressions => Array.Empty<Expr>();

    public override IEnumerable<Stmt> Nested => Array.Empty<Stmt>();

    public override Stmt Replace(Expr target, Expr replacement) => this;
}

internal sealed class DeclInt : Stmt
{
    public DeclInt(string name, IntExpr value)
    {
        Name = name;
        Value = value;
    }

    public string Name { get; }

    public IntExpr Value { get; }

    public override IEnumerable<Expr> Expressions => Array.Empty<Expr>();

    public override IEnumerable<Stmt> Nested => Array.Empty<Stmt>();

    public override Stmt Replace(Expr target, Expr replacement) => this;
}

internal sealed class DeclBool : Stmt
{
    public DeclBool(string name, Cond value)
    {
        Name = name;
        Value = value;
    }

    public string Name { get; }

    public Cond Value { get; }

    public override IEnumerable<Expr> Expressions => Array.Empty<Expr>();

    public override IEnumerable<Stmt> Nested => Array.Empty<Stmt>();

    public override Stmt Replace(Expr target, Expr replacement) => this;
}

internal sealed class If : Stmt
{
    public If(Cond condition, Stmt[] whenTrue, Stmt[]? whenFalse)
    {
        Condition = condition;
        WhenTrue = whenTrue;
        WhenFalse = whenFalse;
    }

    public Cond Condition { get; }

    public Stmt[] WhenTrue { get; }

    public Stmt[]? WhenFalse { get; }

    public override IEnumerable<Expr> Expressions => Array.Empty<Expr>();

    public override IEnumerable<Stmt> Nested => WhenFalse is null ? WhenTrue : WhenTrue.Concat(WhenFalse);

    public override Stmt Replace(Expr target, Expr replacement) =>
        new If(Condition, Replace(WhenTrue, target, replacement), WhenFalse is null ? null : Replace(WhenFalse, target, replacement));
}

/// <summary>The loop forms DerivGen supports.</summary>
internal enum LoopKind
{
    /// <summary><c>for (int i = start; i &lt; end; i++)</c>, with the variations of <see cref="Loop.Form"/>.</summary>
    For,

    /// <summary><c>foreach (double v in d)</c>.</summary>
    ForEach,

    /// <summary><c>while (i &lt; end) { …; i++; }</c> with an int counter declared just before.</summary>
    While,
}

internal sealed class Loop : Stmt
{
    public Loop(LoopKind kind, string index, IntExpr start, IntExpr end, int form, Stmt[] body)
    {
        Kind = kind;
        Index = index;
        Start = start;
        End = end;
        Form = form;
        Body = body;
    }

    public LoopKind Kind { get; }

    /// <summary>The int index (for, while) or the double element (foreach).</summary>
    public string Index { get; }

    public IntExpr Start { get; }

    public IntExpr End { get; }

    /// <summary>For a for loop: 0 = <c>i &lt; end; i++</c>, 1 = <c>i &lt;= end - 1; ++i</c>, 2 = <c>i &lt; end; i += 1</c>.</summary>
    public int Form { get; }

    public Stmt[] Body { get; }

    public override IEnumerable<Expr> Expressions => Array.Empty<Expr>();

    public override IEnumerable<Stmt> Nested => Body;

    public override Stmt Replace(Expr target, Expr replacement) => new Loop(Kind, Index, Start, End, Form, Replace(Body, target, replacement));
}

/// <summary><c>var (a, b) = (e1, e2);</c> (declaring) or <c>(a, b) = (e1, e2);</c> (assigning; e1, e2 do not read a, b).</summary>
internal sealed class Tuple2 : Stmt
{
    public Tuple2(bool declares, string first, string second, Expr firstValue, Expr secondValue)
    {
        Declares = declares;
        First = first;
        Second = second;
        FirstValue = firstValue;
        SecondValue = secondValue;
    }

    public bool Declares { get; }

    public string First { get; }

    public string Second { get; }

    public Expr FirstValue { get; }

    public Expr SecondValue { get; }

    public override IEnumerable<Expr> Expressions => new[] { FirstValue, SecondValue };

    public override IEnumerable<Stmt> Nested => Array.Empty<Stmt>();

    public override Stmt Replace(Expr target, Expr replacement) =>
        new Tuple2(Declares, First, Second, FirstValue.Replace(target, replacement), SecondValue.Replace(target, replacement));
}

/// <summary><c>return value;</c>, or <c>if (condition) return value;</c> (an early return) when a condition is given.</summary>
internal sealed class Return : Stmt
{
    public Return(Expr value, Cond? condition = null)
    {
        Value = value;
        Condition = condition;
    }

    public Expr Value { get; }

    public Cond? Condition { get; }

    public override IEnumerable<Expr> Expressions => new[] { Value };

    public override IEnumerable<Stmt> Nested => Array.Empty<Stmt>();

    public override Stmt Replace(Expr target, Expr replacement) => new Return(Value.Replace(target, replacement), Condition);
}

/// <summary>Prints the tree as C#, with the fewest parentheses C#'s precedence and left associativity allow (so that
/// the generator's handling of grouping is exercised), and doubles as shortest round-trip literals.</summary>
internal static class Printer
{
    private const int ConditionalLevel = 1, Additive = 3, Multiplicative = 4, Unary = 5, Primary = 6;

    public static string Literal(double value)
    {
        string text = value.ToString("R", CultureInfo.InvariantCulture);
        return text.Contains('.') || text.Contains('E') ? text : text + ".0";
    }

    public static string Print(Expr e) => Print(e, 0);

    private static bool IsIntTyped(Expr e) => e is IntAsDouble;

    private static string Print(Expr e, int required)
    {
        (string text, int level) = e switch
        {
            ParamRef p => (p.Name, Primary),
            LocalRef l => (l.Name, Primary),
            Lit l => (Literal(l.Value), l.Value < 0 || (l.Value == 0 && double.IsNegative(l.Value)) ? Unary : Primary),
            DataRef d => ("d[" + Print(d.Index) + "]", Primary),
            IntAsDouble i => ("(double)" + PrintIntOperand(i.Value), Unary),
            Neg n => (NegText(n), Unary),
            Bin b => (BinText(b), b.Op is '+' or '-' ? Additive : Multiplicative),
            Call c => (CallText(c), Primary),
            Conditional c => (Print(c.Condition, 0) + " ? " + Print(c.WhenTrue, ConditionalLevel) + " : " + Print(c.WhenFalse, ConditionalLevel), ConditionalLevel),
            _ => throw new InvalidOperationException(e.GetType().Name),
        };
        return level < required ? "(" + text + ")" : text;
    }

    private static string NegText(Neg n)
    {
        string operand = Print(n.Operand, Unary);
        return operand.StartsWith('-') ? "-(" + operand + ")" : "-" + operand;
    }

    private static string BinText(Bin b)
    {
        int level = b.Op is '+' or '-' ? Additive : Multiplicative;

        // An int operand next to a double one is converted implicitly (so print it bare); two ints would be int
        // arithmetic, so one of them keeps its cast.
        string left = IsIntTyped(b.Left) && !IsIntTyped(b.Right) ? PrintIntOperandAt(((IntAsDouble)b.Left).Value, level) : Print(b.Left, level);
        string right = IsIntTyped(b.Right) && !IsIntTyped(b.Left) ? PrintIntOperandAt(((IntAsDouble)b.Right).Value, level + 1) : Print(b.Right, level + 1);
        return left + " " + b.Op + " " + right;
    }

    private static string CallText(Call c)
    {
        string host = c.Host == Host.Math ? "Math" : "double";
        string args = string.Join(", ", c.Args.Select(a => Print(a, 0)));
        string call = host + "." + c.Spec.Name + "(" + args + ")";
        return c.Fn == Fn.Sign ? "(double)" + call : call; // Sign returns int: keep it double (no int arithmetic around it)
    }

    public static string Print(IntExpr e) => e switch
    {
        IntLit l => l.Value.ToString(CultureInfo.InvariantCulture),
        IntName n => n.Name,
        DataLength => "d.Length",
        IntAdd a => Print(a.Left) + (a.Right >= 0 ? " + " : " - ") + Math.Abs(a.Right).ToString(CultureInfo.InvariantCulture),
        _ => throw new InvalidOperationException(e.GetType().Name),
    };

    private static string PrintIntOperand(IntExpr e) => e is IntAdd ? "(" + Print(e) + ")" : Print(e);

    private static string PrintIntOperandAt(IntExpr e, int required) => e is IntAdd && required > Additive - 0 ? "(" + Print(e) + ")" : Print(e);

    public static string Print(Cond c, int required)
    {
        // Levels: || 1, && 2, comparisons 3, ! 4.
        (string text, int level) = c switch
        {
            DoubleCompare d => (Print(d.Left, Additive) + " " + d.Op + " " + Print(d.Right, Additive), 3),
            IntCompare i => (Print(i.Left) + " " + i.Op + " " + Print(i.Right), 3),
            BoolName b => (b.Name, 5),
            Not n => ("!" + Print(n.Operand, 4), 4),
            Logical l => (Print(l.Left, l.IsAnd ? 2 : 1) + (l.IsAnd ? " && " : " || ") + Print(l.Right, l.IsAnd ? 3 : 2), l.IsAnd ? 2 : 1),
            _ => throw new InvalidOperationException(c.GetType().Name),
        };
        return level < required ? "(" + text + ")" : text;
    }

    public static void Print(StringBuilder sb, Stmt[] statements, int indent)
    {
        foreach (Stmt s in statements)
        {
            Print(sb, s, indent);
        }
    }

    private static void Line(StringBuilder sb, int indent, string text) => sb.Append(' ', indent * 4).Append(text).Append('\n');

    private static void Print(StringBuilder sb, Stmt s, int indent)
    {
        switch (s)
        {
            case DeclDouble d:
                Line(sb, indent, (d.UseVar ? "var " : "double ") + d.Name + " = " + PrintDoubleInitializer(d.Value) + ";");
                break;
            case Assign { CompoundOp: { } op } a when a.Value is Bin b:
                Line(sb, indent, a.Name + " " + op + "= " + (IsIntTyped(b.Right) ? Print(((IntAsDouble)b.Right).Value) : Print(b.Right, 0)) + ";");
                break;
            case Assign a:
                Line(sb, indent, a.Name + " = " + Print(a.Value, 0) + ";");
                break;
            case Step st:
                Line(sb, indent, st.Name + (st.Increment ? "++;" : "--;"));
                break;
            case DeclInt i:
                Line(sb, indent, "int " + i.Name + " = " + Print(i.Value) + ";");
                break;
            case DeclBool b:
                Line(sb, indent, "bool " + b.Name + " = " + Print(b.Value, 0) + ";");
                break;
            case If f:
                Line(sb, indent, "if (" + Print(f.Condition, 0) + ")");
                Block(sb, f.WhenTrue, indent);
                if (f.WhenFalse is not null)
                {
                    Line(sb, indent, "else");
                    Block(sb, f.WhenFalse, indent);
                }

                break;
            case Loop { Kind: LoopKind.For } l:
                string header = l.Form switch
                {
                    1 => $"for (int {l.Index} = {Print(l.Start)}; {l.Index} <= {Print(new IntAdd(l.End, -1))}; ++{l.Index})",
                    2 => $"for (int {l.Index} = {Print(l.Start)}; {l.Index} < {Print(l.End)}; {l.Index} += 1)",
                    _ => $"for (int {l.Index} = {Print(l.Start)}; {l.Index} < {Print(l.End)}; {l.Index}++)",
                };
                Line(sb, indent, header);
                Block(sb, l.Body, indent);
                break;
            case Loop { Kind: LoopKind.ForEach } l:
                Line(sb, indent, $"foreach (double {l.Index} in d)");
                Block(sb, l.Body, indent);
                break;
            case Loop { Kind: LoopKind.While } l:
                Line(sb, indent, $"int {l.Index} = {Print(l.Start)};");
                Line(sb, indent, $"while ({l.Index} < {Print(l.End)})");
                Line(sb, indent, "{");
                Print(sb, l.Body, indent + 1);
                Line(sb, indent + 1, l.Index + "++;");
                Line(sb, indent, "}");
                break;
            case Tuple2 t:
                string targets = t.Declares ? $"var ({t.First}, {t.Second})" : $"({t.First}, {t.Second})";
                Line(sb, indent, $"{targets} = ({PrintDoubleInitializer(t.FirstValue)}, {PrintDoubleInitializer(t.SecondValue)});");
                break;
            case Return { Condition: { } c } r:
                Line(sb, indent, "if (" + Print(c, 0) + ")");
                Line(sb, indent + 1, "return " + Print(r.Value, 0) + ";");
                break;
            case Return r:
                Line(sb, indent, "return " + Print(r.Value, 0) + ";");
                break;
            default:
                throw new InvalidOperationException(s.GetType().Name);
        }
    }

    /// <summary>An initializer of a double (a tuple element or a var declaration) must be double-typed itself.</summary>
    private static string PrintDoubleInitializer(Expr e) => Print(e, 0);

    private static void Block(StringBuilder sb, Stmt[] body, int indent)
    {
        Line(sb, indent, "{");
        Print(sb, body, indent + 1);
        Line(sb, indent, "}");
    }
}
