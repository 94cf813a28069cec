using System.Globalization;
using System.Text;

namespace StudyPress.Diagnostics;

/// <summary>
/// Characters that must not reach a terminal raw: C0
/// controls (U+0000-U+001F, tab and line ends included), DEL, C1 controls (U+0080-U+009F), the
/// bidirectional formatting characters (U+061C, U+200E, U+200F, U+202A-U+202E, U+2066-U+2069), the
/// line and paragraph separators (U+2028, U+2029) and unpaired surrogates. An escape sequence such
/// as ESC [ 2 J clears a screen; a right-to-left override makes text read differently from its bytes.
/// </summary>
public static class UnsafeText
{
    /// <summary>True for a character in the set above (a surrogate is judged by <see cref="FirstUnsafe"/>).</summary>
    public static bool IsUnsafe(char c) =>
        c < 0x20 || (c >= 0x7F && c <= 0x9F) || c == '\u061C' || c == '\u200E' || c == '\u200F' ||
        (c >= '\u2028' && c <= '\u202E') || (c >= '\u2066' && c <= '\u2069');

    /// <summary>Index of the first unsafe character (or unpaired surrogate), or -1.</summary>
    public static int FirstUnsafe(ReadOnlySpan<char> text)
    {
        for (var i = 0; i < text.Length; i++)
        {
            var c = text[i];
            if (char.IsHighSurrogate(c) && i + 1 < text.Length && char.IsLowSurrogate(text[i + 1]))
            {
                i++;
                continue;
            }

            if (IsUnsafe(c) || char.IsSurrogate(c))
            {
                return i;
            }
        }

        return -1;
    }

    /// <summary>A character written as U+XXXX, for messages.</summary>
    public static string Name(char c) => "U+" + ((int)c).ToString("X4", CultureInfo.InvariantCulture);

    /// <summary>
    /// The text with every unsafe character written as <c>\uXXXX</c> (four upper-case hexadecimal
    /// digits), e.g. ESC as <c>\u001B</c>. Safe text is returned as it is; escaping twice changes nothing.
    /// </summary>
    public static string Escape(string text)
    {
        var first = FirstUnsafe(text);
        if (first < 0)
        {
            return text;
        }

        var sb = new StringBuilder(text.Length + 16);
        sb.Append(text, 0, first);
        for (var i = first; i < text.Length; i++)
        {
            var c = text[i];
            if (char.IsHighSurrogate(c) && i + 1 < text.Length && char.IsLowSurrogate(text[i + 1]))
            {
                sb.Append(c).Append(text[++i]);
            }
            else if (IsUnsafe(c) || char.IsSurrogate(c))
            {
                sb.Append("\\u").Append(((int)c).ToString("X4", CultureInfo.InvariantCulture));
            }
            else
            {
                sb.Append(c);
            }
        }

        return sb.ToString();
    }
}
