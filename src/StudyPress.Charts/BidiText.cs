namespace StudyPress.Charts;

/// <summary>
/// Keeps user-supplied names from reordering the text around them. A level name with a
/// right-to-left override (U+202E) or right-to-left letters would otherwise reverse or move the
/// numbers that follow it in a sentence, a table row or a chart's description ("−4.98" shown as
/// "89.4-"). <see cref="Isolate"/> wraps such a name in FIRST STRONG ISOLATE … POP DIRECTIONAL
/// ISOLATE (U+2068 … U+2069), after closing every embedding, override and isolate the name opens
/// and neutralising any pop it has no opener for, so the name's direction stays inside it. Names
/// with no right-to-left letter and no directional control are returned unchanged.
/// </summary>
public static class BidiText
{
    public const char FirstStrongIsolate = '\u2068';
    public const char PopDirectionalIsolate = '\u2069';
    private const char PopDirectionalFormatting = '\u202C';

    /// <summary>True when the text holds a directional control or a right-to-left letter.</summary>
    public static bool IsSensitive(string? text)
    {
        if (string.IsNullOrEmpty(text))
        {
            return false;
        }

        for (var i = 0; i < text.Length; i++)
        {
            var c = text[i];
            if (IsControl(c) || (c >= '\u0590' && c <= '\u08FF') || (c >= '\uFB1D' && c <= '\uFDFF') || (c >= '\uFE70' && c <= '\uFEFF'))
            {
                return true;
            }

            // Supplementary right-to-left scripts (U+10800–U+10FFF, U+1E800–U+1EFFF).
            if (char.IsHighSurrogate(c) && i + 1 < text.Length && char.IsLowSurrogate(text[i + 1]))
            {
                var cp = char.ConvertToUtf32(c, text[i + 1]);
                if (cp is (>= 0x10800 and <= 0x10FFF) or (>= 0x1E800 and <= 0x1EFFF))
                {
                    return true;
                }
            }
        }

        return false;
    }

    /// <summary>The text as an isolate (see the class summary); unchanged when not <see cref="IsSensitive"/>.</summary>
    public static string Isolate(string? text)
    {
        if (!IsSensitive(text))
        {
            return text ?? string.Empty;
        }

        return FirstStrongIsolate + Balance(text!) + PopDirectionalIsolate;
    }

    /// <summary>Every opener closed at the end, and pops with no opener of their kind replaced by U+FFFD.</summary>
    internal static string Balance(string text)
    {
        var sb = new System.Text.StringBuilder(text.Length + 4);
        var open = new Stack<char>();
        foreach (var c in text)
        {
            switch (c)
            {
                case '\u202A' or '\u202B' or '\u202D' or '\u202E':
                    open.Push('E');
                    sb.Append(c);
                    break;
                case '\u2066' or '\u2067' or '\u2068':
                    open.Push('I');
                    sb.Append(c);
                    break;
                case PopDirectionalFormatting:
                    if (open.Count > 0 && open.Peek() == 'E')
                    {
                        open.Pop();
                        sb.Append(c);
                    }
                    else
                    {
                        sb.Append('\uFFFD');
                    }

                    break;
                case PopDirectionalIsolate:
                    if (open.Contains('I'))
                    {
                        while (open.Pop() != 'I')
                        {
                        }

                        sb.Append(c);
                    }
                    else
                    {
                        sb.Append('\uFFFD');
                    }

                    break;
                default:
                    sb.Append(c);
                    break;
            }
        }

        while (open.Count > 0)
        {
            sb.Append(open.Pop() == 'E' ? PopDirectionalFormatting : PopDirectionalIsolate);
        }

        return sb.ToString();
    }

    /// <summary>
    /// The text without isolate marks (U+2066–U+2069), for measuring and for the PNG renderer, which
    /// draws glyphs without a bidirectional pass; the marks have no width in a browser.
    /// </summary>
    public static string WithoutIsolates(string text) =>
        text.AsSpan().IndexOfAnyInRange('\u2066', '\u2069') < 0 ? text : string.Concat(text.Where(c => c is < '\u2066' or > '\u2069'));

    private static bool IsControl(char c) => c is (>= '\u202A' and <= '\u202E') or (>= '\u2066' and <= '\u2069') or '\u200E' or '\u200F' or '\u061C';
}
