using StudyPress.Diagnostics;
using YamlDotNet.Core;
using YamlDotNet.Core.Events;

namespace StudyPress.Syntax;

/// <summary>A YAML node with its position in the study file (shifted from the header's start).</summary>
public abstract record YNode(SourceLocation Location);

/// <summary>A scalar. <see cref="Quoted"/> tells a quoted "1" from a plain 1.</summary>
public sealed record YScalar(string Value, bool Quoted, SourceLocation Location) : YNode(Location)
{
    public bool IsNull => !Quoted && (Value.Length == 0 || Value is "~" or "null" or "Null" or "NULL");
}

public sealed record YSequence(IReadOnlyList<YNode> Items, SourceLocation Location) : YNode(Location);

public sealed record YEntry(YScalar Key, YNode Value);

public sealed record YMapping(IReadOnlyList<YEntry> Entries, SourceLocation Location) : YNode(Location)
{
    public YNode? this[string key] => Entries.FirstOrDefault(e => e.Key.Value == key)?.Value;
}

/// <summary>
/// Reads YAML into <see cref="YNode"/>s from YamlDotNet's event parser, so that every node keeps
/// its position, duplicate keys are caught, and aliases (which can blow up in size) are refused.
/// Positions are shifted by <c>lineOffset</c>/<c>columnOffset</c> so they point into the study file.
/// </summary>
public static class YamlReader
{
    /// <summary>Limits nesting to keep hostile input from exhausting the stack.</summary>
    private const int MaxDepth = 64;

    public static YNode? Read(string text, string path, int lineOffset, int columnOffset, DiagnosticBag diagnostics)
    {
        // A tab used as indentation is reported by the YAML library at the start of the
        // document; find it ourselves so the message points at the tab.
        var lines = text.Split('\n');
        for (var i = 0; i < lines.Length; i++)
        {
            var line = lines[i];
            var j = 0;
            while (j < line.Length && line[j] == ' ')
            {
                j++;
            }

            if (j < line.Length && line[j] == '\t')
            {
                diagnostics.TabIndentation(new SourceLocation(path, i + lineOffset, j + (i == 0 ? columnOffset : 0)));
                return null;
            }
        }

        SourceLocation Loc(Mark m) =>
            new(path, (int)m.Line - 1 + lineOffset, (int)m.Column - 1 + (m.Line == 1 ? columnOffset : 0));

        try
        {
            var parser = new Parser(new StringReader(text));
            parser.Consume<StreamStart>();
            if (parser.TryConsume<StreamEnd>(out _))
            {
                return null;
            }

            parser.Consume<DocumentStart>();
            if (parser.Accept<DocumentEnd>(out _))
            {
                return null;
            }

            var node = ReadNode(parser, Loc, diagnostics, 0);
            parser.Consume<DocumentEnd>();
            if (!parser.Accept<StreamEnd>(out _))
            {
                diagnostics.YamlSyntax(Loc(parser.Current!.Start), "only one YAML document is allowed in the header");
                return null;
            }

            return node;
        }
        catch (StudyException e)
        {
            diagnostics.Add(e.Diagnostic);
            return null;
        }
        catch (YamlException e)
        {
            if (Unclosed(text, path, lineOffset, columnOffset) is { } open)
            {
                diagnostics.YamlUnclosedBracket(open.At, open.Bracket);
            }
            else
            {
                if (YamlMistakes.Explain(text, (int)e.Start.Line - 1) is { } found && !Describe(e).Contains("quoted string", StringComparison.Ordinal))
                {
                    diagnostics.YamlSyntax(new SourceLocation(path, found.Line + lineOffset, found.Column + (found.Line == 0 ? columnOffset : 0)), found.Message);
                }
                else
                {
                    diagnostics.YamlSyntax(Loc(e.Start), Describe(e));
                }
            }

            return null;
        }
        catch (Exception e) when (e is ArgumentException or InvalidOperationException or FormatException)
        {
            // Some malformed flow collections surface as non-YAML exceptions.
            if (Unclosed(text, path, lineOffset, columnOffset) is { } open)
            {
                diagnostics.YamlUnclosedBracket(open.At, open.Bracket);
            }
            else
            {
                diagnostics.YamlSyntax(new SourceLocation(path, lineOffset, columnOffset), "invalid YAML: malformed YAML");
            }

            return null;
        }
    }

    private static string Describe(YamlException e)
    {
        var m = e.InnerException?.Message ?? e.Message;
        // Drop the library's own "(Line: .., Col: ..)" prefix; we print positions ourselves.
        var close = m.IndexOf("): ", StringComparison.Ordinal);
        if (m.StartsWith("(Line", StringComparison.Ordinal) && close > 0)
        {
            m = m[(close + 3)..];
        }

        m = m.TrimEnd('.').ToLowerInvariant().TrimEnd();
        if (m.Contains("quoted scalar", StringComparison.Ordinal) &&
            (m.Contains("end of stream", StringComparison.Ordinal) || m.Contains("wrong indentation", StringComparison.Ordinal)))
        {
            // The library reports this at the opening quote.
            return "invalid YAML: this quoted string is not closed";
        }

        return "invalid YAML: " + m;
    }

    /// <summary>
    /// Finds an unclosed flow bracket ([ or {) outside quotes and comments, so the error can point at
    /// the bracket the user opened rather than wherever the library gave up.
    /// </summary>
    private static (SourceLocation At, char Bracket)? Unclosed(string text, string path, int lineOffset, int columnOffset)
    {
        var stack = new Stack<(char Ch, int Line, int Col)>();
        var lines = text.Split('\n');
        for (var li = 0; li < lines.Length; li++)
        {
            var line = lines[li];
            char quote = '\0';
            for (var ci = 0; ci < line.Length; ci++)
            {
                var ch = line[ci];
                if (quote != '\0')
                {
                    if (ch == quote)
                    {
                        quote = '\0';
                    }

                    continue;
                }

                switch (ch)
                {
                    case '"' or '\'' when ci == 0 || " [{,:".Contains(line[ci - 1], StringComparison.Ordinal):
                        quote = ch;
                        break;
                    case '#' when ci == 0 || line[ci - 1] == ' ':
                        ci = line.Length;
                        break;
                    case '[' or '{' when stack.Count > 0 || StartsFlow(line, ci):
                        stack.Push((ch, li, ci));
                        break;
                    case ']' or '}':
                        if (stack.Count > 0)
                        {
                            stack.Pop();
                        }

                        break;
                }
            }
        }

        if (stack.Count == 0)
        {
            return null;
        }

        var open = stack.ToArray()[^1];
        return (new SourceLocation(path, open.Line + lineOffset, open.Col + (open.Line == 0 ? columnOffset : 0)), open.Ch);
    }

    /// <summary>True when a bracket opens a flow collection (not a '[' inside a plain scalar like 'a[1]').</summary>
    private static bool StartsFlow(string line, int at)
    {
        var p = at - 1;
        while (p >= 0 && line[p] == ' ')
        {
            p--;
        }

        return p < 0 || (line[p] is ':' or '-' or ',' or '?' && p < at - 1);
    }

    private static YNode ReadNode(IParser parser, Func<Mark, SourceLocation> loc, DiagnosticBag diagnostics, int depth)
    {
        if (depth > MaxDepth)
        {
            throw new StudyException(DiagnosticBag.YamlTooDeep(loc(parser.Current!.Start)));
        }

        if (parser.TryConsume<AnchorAlias>(out var alias))
        {
            throw new StudyException(DiagnosticBag.YamlAlias(loc(alias.Start)));
        }

        if (parser.TryConsume<Scalar>(out var scalar))
        {
            return new YScalar(scalar.Value, scalar.Style is ScalarStyle.SingleQuoted or ScalarStyle.DoubleQuoted, loc(scalar.Start));
        }

        if (parser.TryConsume<SequenceStart>(out var seqStart))
        {
            var items = new List<YNode>();
            while (!parser.TryConsume<SequenceEnd>(out _))
            {
                items.Add(ReadNode(parser, loc, diagnostics, depth + 1));
            }

            return new YSequence(items, loc(seqStart.Start));
        }

        var mapStart = parser.Consume<MappingStart>();
        var entries = new List<YEntry>();
        var seen = new Dictionary<string, YScalar>(StringComparer.Ordinal);
        while (!parser.TryConsume<MappingEnd>(out _))
        {
            var keyNode = ReadNode(parser, loc, diagnostics, depth + 1);
            if (keyNode is not YScalar key)
            {
                throw new StudyException(DiagnosticBag.KeyNotPlain(keyNode.Location));
            }

            var value = ReadNode(parser, loc, diagnostics, depth + 1);
            if (seen.TryGetValue(key.Value, out var first))
            {
                throw new StudyException(DiagnosticBag.DuplicateKey(key.Location, key.Value, first.Location.Line));
            }

            seen[key.Value] = key;
            entries.Add(new YEntry(key, value));
        }

        return new YMapping(entries, loc(mapStart.Start));
    }
}
