using System;
using System.Text;

namespace DerivGen.Generator.Emit;

/// <summary>A StringBuilder with an indentation level; lines always end in '\n' whatever the platform.</summary>
internal sealed class IndentedWriter
{
    private const string IndentUnit = "    ";
    private readonly StringBuilder _text = new();
    private int _indent;

    public IndentedWriter Line(string line = "")
    {
        if (line.Length > 0)
        {
            for (int i = 0; i < _indent; i++)
            {
                _text.Append(IndentUnit);
            }

            _text.Append(line);
        }

        _text.Append('\n');
        return this;
    }

    /// <summary>A blank line separating groups, unless the previous line is already blank or opens a block.</summary>
    public IndentedWriter Blank()
    {
        int length = _text.Length;
        bool afterBlank = length >= 2 && _text[length - 1] == '\n' && _text[length - 2] == '\n';
        bool afterOpen = length >= 2 && _text[length - 1] == '\n' && _text[length - 2] == '{';
        return afterBlank || afterOpen || length == 0 ? this : Line();
    }

    /// <summary>Removes a blank line just written (before a block closes).</summary>
    public IndentedWriter TrimBlank()
    {
        int length = _text.Length;
        if (length >= 2 && _text[length - 1] == '\n' && _text[length - 2] == '\n')
        {
            _text.Length = length - 1;
        }

        return this;
    }

    /// <summary>Writes "{", indents until the returned scope is disposed, then writes "}".</summary>
    public Scope Block(string? header = null)
    {
        if (header is not null)
        {
            Line(header);
        }

        Line("{");
        _indent++;
        return new Scope(this);
    }

    public override string ToString() => _text.ToString();

    public readonly struct Scope : IDisposable
    {
        private readonly IndentedWriter _writer;

        public Scope(IndentedWriter writer) => _writer = writer;

        public void Dispose()
        {
            _writer._indent--;
            _writer.Line("}");
        }
    }
}
