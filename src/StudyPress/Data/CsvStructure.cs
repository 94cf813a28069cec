using System.Buffers;
using System.Text;

namespace StudyPress.Data;

/// <summary>What is wrong with a CSV file's quoting or field sizes.</summary>
internal enum CsvStructureProblem
{
    None,

    /// <summary>A '"' inside a field that does not start with one (RFC 4180 allows quotes only in quoted fields).</summary>
    QuoteInUnquotedField,

    /// <summary>Something other than a delimiter or a line end right after a quoted field's closing quote.</summary>
    TextAfterClosingQuote,

    /// <summary>A quoted field whose closing quote never comes (it would run to the end of the file).</summary>
    UnterminatedQuote,

    /// <summary>A field longer than <see cref="DataLimits.MaxFieldBytes"/>.</summary>
    FieldTooLong,
}

/// <summary>
/// One pass over a CSV file's UTF-8 bytes before it is parsed, so that a quoting mistake cannot
/// silently merge rows and one huge field cannot be buffered: a field is quoted only when its first
/// byte is '"'; inside it '""' is a quote and a lone '"' closes it, and only a delimiter or a line
/// end may follow; an unquoted field may not hold '"'. The first problem is reported with its
/// 0-based line and UTF-16 column (the opening quote for an unclosed field, the field's first
/// character for a field that is too long).
/// </summary>
internal static class CsvStructure
{
    public readonly record struct Finding(CsvStructureProblem Problem, int Line, int Column);

    public static Finding Check(ReadOnlySpan<byte> s, char delimiter, long maxFieldBytes)
    {
        var delim = (byte)delimiter;
        var stops = SearchValues.Create([delim, (byte)'\n', (byte)'\r', (byte)'"']);
        var line = 0;
        var lineStart = 0;
        var i = 0;
        while (i < s.Length)
        {
            // At the start of a field.
            var fieldStart = i;
            var fieldLine = line;
            var fieldLineStart = lineStart;
            if (s[i] == (byte)'"')
            {
                i++;
                while (true)
                {
                    var q = s[i..].IndexOf((byte)'"');
                    if (q < 0 || (long)(i + q) - fieldStart > maxFieldBytes)
                    {
                        // Count lines only up to where the scan stopped (the field is refused either way).
                        return q < 0
                            ? At(CsvStructureProblem.UnterminatedQuote, s, fieldLine, fieldLineStart, fieldStart)
                            : At(CsvStructureProblem.FieldTooLong, s, fieldLine, fieldLineStart, fieldStart);
                    }

                    CountLines(s[i..(i + q)], i, ref line, ref lineStart);
                    i += q + 1;
                    if (i < s.Length && s[i] == (byte)'"')
                    {
                        i++;
                        continue;
                    }

                    break;
                }

                if (i < s.Length && s[i] != delim && s[i] != (byte)'\n' && s[i] != (byte)'\r')
                {
                    return At(CsvStructureProblem.TextAfterClosingQuote, s, line, lineStart, i);
                }
            }
            else
            {
                var k = s[i..].IndexOfAny(stops);
                var end = k < 0 ? s.Length : i + k;
                if (end - fieldStart > maxFieldBytes)
                {
                    return At(CsvStructureProblem.FieldTooLong, s, fieldLine, fieldLineStart, fieldStart);
                }

                if (end < s.Length && s[end] == (byte)'"')
                {
                    return At(CsvStructureProblem.QuoteInUnquotedField, s, line, lineStart, end);
                }

                i = end;
            }

            // At a delimiter, a line end or the end of the file.
            if (i >= s.Length)
            {
                break;
            }

            if (s[i] == delim)
            {
                i++;
                if (i == s.Length)
                {
                    break;
                }

                continue;
            }

            // '\n', '\r\n' or a lone '\r' ends the line.
            i += s[i] == (byte)'\r' && i + 1 < s.Length && s[i + 1] == (byte)'\n' ? 2 : 1;
            line++;
            lineStart = i;
        }

        return new Finding(CsvStructureProblem.None, 0, 0);
    }

    /// <summary>Counts line ends inside a quoted field's text (which starts at byte <paramref name="offset"/>).</summary>
    private static void CountLines(ReadOnlySpan<byte> text, int offset, ref int line, ref int lineStart)
    {
        var k = text.IndexOfAny((byte)'\n', (byte)'\r');
        while (k >= 0)
        {
            var next = k + (text[k] == (byte)'\r' && k + 1 < text.Length && text[k + 1] == (byte)'\n' ? 2 : 1);
            line++;
            lineStart = offset + next;
            var rest = text[next..].IndexOfAny((byte)'\n', (byte)'\r');
            k = rest < 0 ? -1 : next + rest;
        }
    }

    private static Finding At(CsvStructureProblem problem, ReadOnlySpan<byte> s, int line, int lineStart, int at) =>
        new(problem, line, Encoding.UTF8.GetCharCount(s[lineStart..at]));
}
