using System.Globalization;
using System.Text;
using StudyPress.Diagnostics;

namespace StudyPress.Syntax;

/// <summary>
/// Rules for the text of a factor level, shared by every source and the header's declarations:
/// levels are compared in Unicode normalisation form C (an 'é' typed as one code point or as 'e'
/// and a combining accent is one level), and a level may not hold an invisible character
/// (format characters such as U+200B ZERO WIDTH SPACE, U+200D ZERO WIDTH JOINER, U+FEFF BYTE ORDER
/// MARK, U+00AD SOFT HYPHEN; control characters; line and paragraph separators), since two levels
/// that differ only by one would look identical in the report.
/// </summary>
internal static class LevelText
{
    /// <summary>The level as compared and shown: its NFC form.</summary>
    public static string Normal(string text) => UnicodeNfc.Normalize(text);

    /// <summary>The first invisible character of the text, or null.</summary>
    public static Rune? FirstInvisible(string text)
    {
        foreach (var rune in text.EnumerateRunes())
        {
            if (IsInvisible(rune))
            {
                return rune;
            }
        }

        return null;
    }

    /// <summary>Reports a data cell's level with an invisible character; false when reported.</summary>
    public static bool Check(string text, SourceLocation at, string factor, DiagnosticBag diagnostics)
    {
        if (FirstInvisible(text) is not { } rune)
        {
            return true;
        }

        diagnostics.InvisibleCharacter(at, Visible(text), factor, Describe(rune));
        return false;
    }

    /// <summary>
    /// Reports a cell whose text is not valid UTF-8 (SQLite TEXT can hold any bytes; decoded with
    /// replacement characters, different texts would become one level); false when reported.
    /// </summary>
    /// <param name="where">The cell in words ("row 5 of the query result"), or null where the position says it all.</param>
    public static bool CheckUtf8(object? raw, string column, SourceLocation at, string? where, DiagnosticBag diagnostics)
    {
        if (raw is not InvalidText invalid)
        {
            return true;
        }

        diagnostics.LevelNotUtf8(at, column, invalid.Detail(), where);
        return false;
    }

    /// <summary>The text with every invisible character written as &lt;U+XXXX&gt;.</summary>
    public static string Visible(string text)
    {
        var b = new StringBuilder(text.Length + 8);
        foreach (var rune in text.EnumerateRunes())
        {
            if (IsInvisible(rune))
            {
                b.Append(CultureInfo.InvariantCulture, $"<U+{rune.Value:X4}>");
            }
            else
            {
                b.Append(rune.ToString());
            }
        }

        return b.ToString();
    }

    /// <summary>"U+200B (zero width space)".</summary>
    public static string Describe(Rune rune)
    {
        var code = string.Create(CultureInfo.InvariantCulture, $"U+{rune.Value:X4}");
        var name = rune.Value switch
        {
            0x200B => "zero width space",
            0x200C => "zero width non-joiner",
            0x200D => "zero width joiner",
            0x2060 => "word joiner",
            0xFEFF => "byte order mark",
            0x00AD => "soft hyphen",
            0x200E => "left-to-right mark",
            0x200F => "right-to-left mark",
            0x2028 => "line separator",
            0x2029 => "paragraph separator",
            0x09 => "tab",
            _ => Rune.GetUnicodeCategory(rune) == UnicodeCategory.Control ? "a control character" : "a format character",
        };
        return code + " (" + name + ")";
    }

    private static bool IsInvisible(Rune rune) => Rune.GetUnicodeCategory(rune) is
        UnicodeCategory.Format or UnicodeCategory.Control or UnicodeCategory.LineSeparator or UnicodeCategory.ParagraphSeparator;
}
