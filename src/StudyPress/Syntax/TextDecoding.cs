using System.Text;
using StudyPress.Diagnostics;

namespace StudyPress.Syntax;

/// <summary>Strict UTF-8 decoding with positioned errors for the encodings users trip over.</summary>
public static class TextDecoding
{
    private static readonly UTF8Encoding Strict = new(encoderShouldEmitUTF8Identifier: false, throwOnInvalidBytes: true);

    /// <summary>
    /// Decodes bytes as UTF-8 (a leading BOM is dropped). Reports UTF-16 (by BOM or by NUL
    /// patterns), NUL bytes and invalid sequences with the line and column of the first bad byte.
    /// Returns null after reporting.
    /// </summary>
    public static string? Decode(ReadOnlySpan<byte> bytes, string path, DiagnosticBag diagnostics)
    {
        if (bytes.Length >= 2 && ((bytes[0] == 0xFF && bytes[1] == 0xFE) || (bytes[0] == 0xFE && bytes[1] == 0xFF)))
        {
            diagnostics.Utf16(new SourceLocation(path, 0, 0));
            return null;
        }

        if (bytes.Length >= 3 && bytes[0] == 0xEF && bytes[1] == 0xBB && bytes[2] == 0xBF)
        {
            bytes = bytes[3..];
        }

        var nul = bytes.IndexOf((byte)0);
        if (nul >= 0)
        {
            // Plain ASCII text saved as UTF-16 without a BOM has a NUL in every other byte.
            if (bytes.Length >= 4 && (bytes[1] == 0 || bytes[0] == 0) && (bytes[3] == 0 || bytes[2] == 0))
            {
                diagnostics.Utf16(new SourceLocation(path, 0, 0));
            }
            else
            {
                diagnostics.NulByte(Position(bytes, nul, path));
            }

            return null;
        }

        if (System.Text.Unicode.Utf8.IsValid(bytes))
        {
            return Strict.GetString(bytes);
        }

        // Find the first invalid byte for the message.
        var offset = 0;
        while (offset < bytes.Length)
        {
            var status = System.Text.Rune.DecodeFromUtf8(bytes[offset..], out _, out var consumed);
            if (status != System.Buffers.OperationStatus.Done)
            {
                diagnostics.NotUtf8(Position(bytes, offset, path), string.Create(System.Globalization.CultureInfo.InvariantCulture, $"byte 0x{bytes[offset]:X2} at offset {offset}"));
                return null;
            }

            offset += consumed;
        }

        diagnostics.NotUtf8(new SourceLocation(path, 0, 0), "invalid sequence");
        return null;
    }

    /// <summary>Line and column (in characters) of a byte offset in valid UTF-8 text before it.</summary>
    private static SourceLocation Position(ReadOnlySpan<byte> bytes, int offset, string path)
    {
        var line = 0;
        var lineStart = 0;
        for (var i = 0; i < offset; i++)
        {
            // A line ends at LF, CR or CRLF, as in the parsers.
            if (bytes[i] == (byte)'\n' || (bytes[i] == (byte)'\r' && (i + 1 >= bytes.Length || bytes[i + 1] != (byte)'\n')))
            {
                line++;
                lineStart = i + 1;
            }
        }

        var col = 0;
        var p = lineStart;
        while (p < offset)
        {
            var status = System.Text.Rune.DecodeFromUtf8(bytes[p..offset], out _, out var consumed);
            p += status == System.Buffers.OperationStatus.Done ? consumed : 1;
            col++;
        }

        return new SourceLocation(path, line, col);
    }
}
