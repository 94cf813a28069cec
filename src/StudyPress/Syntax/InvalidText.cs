using System.Globalization;

namespace StudyPress.Syntax;

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
