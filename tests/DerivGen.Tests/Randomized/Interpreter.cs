using System;
using System.Collections.Generic;
using System.Linq;

namespace DerivGen.Tests.Randomized;

/// <summary>
/// Runs a random method's body with <see cref="Jet"/>s: the reference value (which must be bit-for-bit the compiled
/// method's, since every operation is the same IEEE operation or BCL call in the same order), gradient and Hessian.
/// It follows C#'s semantics for the constructs the random programs use: left-to-right evaluation, only the taken side
/// of <c>?:</c> and <c>if</c>, loops as written, the first return that is reached.
/// </summary>
internal sealed class Interpreter
{
    private readonly Dictionary<string, Jet> _doubles = new(StringComparer.Ordinal);
    private readonly Dictionary<string, int> _ints = new(StringComparer.Ordinal);
    private readonly Dictionary<string, bool> _bools = new(StringComparer.Ordinal);
    private readonly double[] _data;
    private readonly int _n;
    private readonly bool _dataIsVariable;
    private readonly int _dataOffset;
    private readonly Action<Expr, double[], double>? _observe;

    /// <param name="point">The case's inputs.</param>
    /// <param name="variables">The parameters differentiated with respect to, in order (n = their count).</param>
    /// <param name="observe">Called after every expression node with its operands' values and its own value.</param>
    /// <param name="dataIsVariable">Whether the data d is a vector of variables too (after the scalars: n = their count + d.Length).</param>
    public Interpreter(CasePoint point, IReadOnlyList<string> variables, Action<Expr, double[], double>? observe = null, bool dataIsVariable = false)
    {
        _dataIsVariable = dataIsVariable;
        _dataOffset = variables.Count;
        _n = variables.Count + (dataIsVariable ? point.Data.Length : 0);
        _data = point.Data;
        _observe = observe;
        for (int p = 0; p < CasePoint.DoubleNames.Length; p++)
        {
            string name = CasePoint.DoubleNames[p];
            int index = IndexOf(variables, name);
            _doubles[name] = index >= 0 ? Jet.Variable(point.Doubles[p], index, _n) : Jet.Constant(point.Doubles[p], _n);
        }

        _ints["k"] = point.K;
    }

    /// <summary>d[index]: a constant, or a variable when the data is a vector of variables.</summary>
    private Jet Element(int index) =>
        _dataIsVariable ? Jet.Variable(_data[index], _dataOffset + index, _n) : Jet.Constant(_data[index], _n);

    private static int IndexOf(IReadOnlyList<string> list, string name)
    {
        for (int i = 0; i < list.Count; i++)
        {
            if (list[i] == name)
            {
                return i;
            }
        }

        return -1;
    }

    /// <summary>Runs the body; the value returned (a method always returns).</summary>
    public Jet Run(Stmt[] body) => Execute(body) ?? throw new InvalidOperationException("The random method did not return.");

    private Jet? Execute(Stmt[] statements)
    {
        foreach (Stmt s in statements)
        {
            Jet? returned = Execute(s);
            if (returned is not null)
            {
                return returned;
            }
        }

        return null;
    }

    private Jet? Execute(Stmt s)
    {
        switch (s)
        {
            case DeclDouble d:
                _doubles[d.Name] = Eval(d.Value);
                return null;
            case Assign a:
                _doubles[a.Name] = Eval(a.Value);
                return null;
            case Step { IsInt: true } st:
                _ints[st.Name] += st.Increment ? 1 : -1;
                return null;
            case Step st:
            {
                Jet old = _doubles[st.Name];
                _doubles[st.Name] = old.WithValue(st.Increment ? old.Value + 1.0 : old.Value - 1.0); // c ± 1: derivatives unchanged
                return null;
            }

            case DeclInt i:
                _ints[i.Name] = Eval(i.Value);
                return null;
            case DeclBool b:
                _bools[b.Name] = Eval(b.Value);
                return null;
            case If f:
            {
                bool taken = Eval(f.Condition);
                return taken ? Execute(f.WhenTrue) : f.WhenFalse is null ? null : Execute(f.WhenFalse);
            }
            case Loop { Kind: LoopKind.ForEach } l:
                for (int e = 0; e < _data.Length; e++)
                {
                    _doubles[l.Index] = Element(e);
                    Jet? r = Execute(l.Body);
                    if (r is not null)
                    {
                        return r;
                    }
                }

                return null;
            case Loop l:
                for (_ints[l.Index] = Eval(l.Start); _ints[l.Index] < Eval(l.End); _ints[l.Index]++)
                {
                    Jet? r = Execute(l.Body);
                    if (r is not null)
                    {
                        return r;
                    }
                }

                return null;
            case Tuple2 t:
            {
                // Both values are computed before either local is assigned.
                Jet first = Eval(t.FirstValue), second = Eval(t.SecondValue);
                _doubles[t.First] = first;
                _doubles[t.Second] = second;
                return null;
            }

            case Return r:
                return r.Condition is null || Eval(r.Condition) ? Eval(r.Value) : null;
            default:
                throw new InvalidOperationException(s.GetType().Name);
        }
    }

    public Jet Eval(Expr e)
    {
        Jet result;
        double[] operands;
        switch (e)
        {
            case ParamRef p:
                result = _doubles[p.Name];
                operands = Array.Empty<double>();
                break;
            case LocalRef l:
                result = _doubles[l.Name];
                operands = Array.Empty<double>();
                break;
            case Lit l:
                result = Jet.Constant(l.Value, _n);
                operands = Array.Empty<double>();
                break;
            case DataRef d:
                result = Element(Eval(d.Index));
                operands = Array.Empty<double>();
                break;
            case IntAsDouble i:
                result = Jet.Constant(Eval(i.Value), _n);
                operands = Array.Empty<double>();
                break;
            case Neg n:
            {
                Jet a = Eval(n.Operand);
                result = -a;
                operands = new[] { a.Value };
                break;
            }

            case Bin b:
            {
                Jet l = Eval(b.Left), r = Eval(b.Right);
                result = b.Op switch
                {
                    '+' => l + r,
                    '-' => l - r,
                    '*' => l * r,
                    '/' => l / r,
                    _ => throw new InvalidOperationException(b.Op.ToString()),
                };
                operands = new[] { l.Value, r.Value };
                break;
            }

            case Call c:
            {
                Jet[] args = c.Args.Select(Eval).ToArray();
                double[] x = args.Select(a => a.Value).ToArray();
                FunctionSpec spec = c.Spec;
                double value;
                try
                {
                    value = spec.Value(c.Host, x);
                }
                catch (ArithmeticException) when (_observe is not null)
                {
                    value = double.NaN; // Math.Sign(NaN) throws; while a case is being repaired that is just one more unsafe node
                }

                result = Jet.Apply(value, args, i => spec.First(x, value, i), (i, j) => spec.Second(x, value, i, j), spec.Slack(x));
                operands = x;
                break;
            }

            case Conditional c:
            {
                bool taken = Eval(c.Condition);
                result = taken ? Eval(c.WhenTrue) : Eval(c.WhenFalse);
                operands = Array.Empty<double>();
                break;
            }
            default:
                throw new InvalidOperationException(e.GetType().Name);
        }

        _observe?.Invoke(e, operands, result.Value);
        return result;
    }

    private int Eval(IntExpr e) => e switch
    {
        IntLit l => l.Value,
        IntName n => _ints[n.Name],
        DataLength => _data.Length,
        IntAdd a => Eval(a.Left) + a.Right,
        _ => throw new InvalidOperationException(e.GetType().Name),
    };

    private bool Eval(Cond c) => c switch
    {
        DoubleCompare d => Compare(d.Op, Eval(d.Left).Value, Eval(d.Right).Value),
        IntCompare i => Compare(i.Op, Eval(i.Left), Eval(i.Right)),
        BoolName b => _bools[b.Name],
        Not n => !Eval(n.Operand),
        Logical { IsAnd: true } l => Eval(l.Left) && Eval(l.Right),
        Logical l => Eval(l.Left) || Eval(l.Right),
        _ => throw new InvalidOperationException(c.GetType().Name),
    };

    private static bool Compare(string op, double a, double b) => op switch
    {
        "<" => a < b,
        "<=" => a <= b,
        ">" => a > b,
        ">=" => a >= b,
        "==" => a == b,
        "!=" => a != b,
        _ => throw new InvalidOperationException(op),
    };
}
