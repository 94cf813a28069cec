using System.Globalization;
using StudyPress.Diagnostics;

namespace StudyPress.Data;

/// <summary>
/// Text from a data source that is not valid UTF-8 (SQLite TEXT may hold any bytes): kept as its
/// bytes so it is reported, never decoded with replacement characters that would make different
/// texts equal.
/// </summary>
public sealed record InvalidText(byte[] Bytes)
{
    /// <summary>The text decoded with replacement characters, for messages only.</summary>
    public override string ToString() => System.Text.Encoding.UTF8.GetString(Bytes);

    /// <summary>The first bad byte, in the words of the CSV reader's message.</summary>
    public string Detail()
    {
        var offset = 0;
        while (offset < Bytes.Length)
        {
            if (System.Text.Rune.DecodeFromUtf8(Bytes.AsSpan(offset), out _, out var consumed) != System.Buffers.OperationStatus.Done)
            {
                return string.Create(CultureInfo.InvariantCulture, $"byte 0x{Bytes[offset]:X2} at offset {offset}");
            }

            offset += consumed;
        }

        return "invalid sequence";
    }

    /// <summary>UTF-8 bytes as text (NUL kept, so the level rule sees it), or an <see cref="InvalidText"/>.</summary>
    public static object Decode(byte[] bytes) =>
        System.Text.Unicode.Utf8.IsValid(bytes) ? System.Text.Encoding.UTF8.GetString(bytes) : new InvalidText(bytes);
}

/// <summary>
/// The one rule for text that becomes a factor level, whatever the source (CSV/TSV, spreadsheet,
/// SQLite, DuckDB, Parquet, database groups): it must be valid UTF-8 and hold no control or
/// bidirectional-formatting character (<see cref="UnsafeText"/>; NUL and ESC included). Such a
/// level would be shown to the reader differently from what it is, or merged with another.
/// </summary>
public static class LevelText
{
    /// <summary>True when the level is acceptable; otherwise reports it at <paramref name="at"/> and returns false.</summary>
    /// <param name="raw">The cell as the source gave it (an <see cref="InvalidText"/> is reported as not UTF-8).</param>
    /// <param name="text">The cell's text as it would become a level (trimmed).</param>
    /// <param name="where">The cell in words ("row 5 of the query result"), or null where the position says it all.</param>
    public static bool Check(object? raw, string text, string column, SourceLocation at, string? where, DiagnosticBag diagnostics)
    {
        if (raw is InvalidText invalid)
        {
            diagnostics.LevelNotUtf8(at, column, invalid.Detail(), where);
            return false;
        }

        var i = UnsafeText.FirstUnsafe(text);
        if (i < 0)
        {
            return true;
        }

        diagnostics.LevelControlCharacter(at, text, column, UnsafeText.Name(text[i]), where);
        return false;
    }

    /// <summary>True when the text would pass <see cref="Check"/> (for readers that only decide whether to take a fast path).</summary>
    public static bool IsClean(ReadOnlySpan<char> text) => UnsafeText.FirstUnsafe(text) < 0;
}
