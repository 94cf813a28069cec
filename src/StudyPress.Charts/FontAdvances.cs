using System.Buffers.Binary;

namespace StudyPress.Charts;

/// <summary>
/// The advance widths of the embedded chart font, read once from its TrueType tables (<c>head</c>,
/// <c>hhea</c>, <c>maxp</c>, <c>hmtx</c> and the Windows Unicode BMP <c>cmap</c>, format 4), so that
/// measuring a label for the SVG needs neither SkiaSharp's native library nor FreeType.
/// </summary>
/// <remarks>
/// A width is computed with the same arithmetic, in the same order, as
/// <see cref="ChartFont.CreateFont(float)"/>'s font measures it (unhinted, linear metrics, so
/// FreeType's linear advance): the size as 26.6 fixed point, the x scale as FreeType's
/// <c>FT_DivFix(size, unitsPerEm)</c>, each glyph's linear advance as
/// <c>FT_MulDiv(advanceUnits, xScale, 64)</c> in 16.16 fixed point converted to a float, and the
/// string's width as the float sum of its glyphs' advances from left to right. Code points map to
/// glyphs as FreeType's format 4 lookup does (glyph 0 for a code point the subset lacks, and for
/// every code point above U+FFFF, which a BMP table cannot map). Only sizes whose 26.6 form is exact,
/// from 1 to 128 pixels, and well-formed UTF-16 are measured here (<see cref="TryMeasure"/>); anything
/// else is left to SkiaSharp. ChartFontAdvanceTests compares these widths with SkiaSharp's, bit for bit.
/// </remarks>
internal sealed class FontAdvances
{
    private const float MinSize = 1;
    private const float MaxSize = 128;

    private readonly int unitsPerEm;
    private readonly int glyphCount;
    private readonly ushort[] advances;
    private readonly ushort[] segmentEnds;
    private readonly ushort[] segmentStarts;
    private readonly ushort[] segmentDeltas;
    private readonly ushort[] segmentRangeOffsets;
    private readonly byte[] font;
    private readonly int rangeOffsetsAt;

    private FontAdvances(byte[] font)
    {
        this.font = font;
        var head = Table(font, "head");
        unitsPerEm = U16(font, head + 18);
        var hhea = Table(font, "hhea");
        int metrics = U16(font, hhea + 34);
        glyphCount = U16(font, Table(font, "maxp") + 4);
        var hmtx = Table(font, "hmtx");
        if (unitsPerEm < 16 || metrics < 1 || metrics > glyphCount)
        {
            throw Malformed("head/hhea/maxp");
        }

        // Glyphs past the last long metric take its advance (TrueType's hmtx rule).
        advances = new ushort[glyphCount];
        for (var g = 0; g < glyphCount; g++)
        {
            advances[g] = U16(font, hmtx + (4 * Math.Min(g, metrics - 1)));
        }

        var cmap = Table(font, "cmap");
        int subtables = U16(font, cmap + 2);
        int format4 = -1;
        for (var i = 0; i < subtables; i++)
        {
            var record = cmap + 4 + (8 * i);
            if (U16(font, record) == 3 && U16(font, record + 2) == 1)
            {
                format4 = cmap + (int)BinaryPrimitives.ReadUInt32BigEndian(font.AsSpan(record + 4, 4));
            }
        }

        if (format4 < 0 || U16(font, format4) != 4)
        {
            throw Malformed("cmap (no Windows Unicode BMP subtable of format 4)");
        }

        int segments = U16(font, format4 + 6) / 2;
        segmentEnds = new ushort[segments];
        segmentStarts = new ushort[segments];
        segmentDeltas = new ushort[segments];
        segmentRangeOffsets = new ushort[segments];
        var ends = format4 + 14;
        var starts = ends + (2 * segments) + 2;
        var deltas = starts + (2 * segments);
        rangeOffsetsAt = deltas + (2 * segments);
        for (var i = 0; i < segments; i++)
        {
            segmentEnds[i] = U16(font, ends + (2 * i));
            segmentStarts[i] = U16(font, starts + (2 * i));
            segmentDeltas[i] = U16(font, deltas + (2 * i));
            segmentRangeOffsets[i] = U16(font, rangeOffsetsAt + (2 * i));
        }
    }

    /// <summary>Reads the tables of a TrueType font; throws when one it needs is missing or malformed.</summary>
    public static FontAdvances Read(byte[] font) => new(font);

    /// <summary>True when <paramref name="size"/> is one this reader measures exactly as SkiaSharp does.</summary>
    public static bool Measurable(float size) =>
        size is >= MinSize and <= MaxSize && size * 64 == MathF.Floor(size * 64);

    /// <summary>The glyph FreeType's format 4 lookup gives a code point (0 when the font has none).</summary>
    public int GlyphOf(int codePoint)
    {
        if (codePoint is < 0 or > 0xFFFF)
        {
            return 0;
        }

        // Segments are sorted by their end code: the first whose end is at or past the code point.
        int lo = 0, hi = segmentEnds.Length - 1;
        while (lo < hi)
        {
            var mid = (lo + hi) / 2;
            if (segmentEnds[mid] < codePoint)
            {
                lo = mid + 1;
            }
            else
            {
                hi = mid;
            }
        }

        if (segmentEnds.Length == 0 || codePoint > segmentEnds[lo] || codePoint < segmentStarts[lo])
        {
            return 0;
        }

        int glyph;
        var rangeOffset = segmentRangeOffsets[lo];
        if (rangeOffset == 0)
        {
            glyph = (codePoint + segmentDeltas[lo]) & 0xFFFF;
        }
        else if (rangeOffset == 0xFFFF)
        {
            glyph = 0;
        }
        else
        {
            var at = rangeOffsetsAt + (2 * lo) + rangeOffset + (2 * (codePoint - segmentStarts[lo]));
            glyph = at + 2 <= font.Length ? U16(font, at) : 0;
            if (glyph != 0)
            {
                glyph = (glyph + segmentDeltas[lo]) & 0xFFFF;
            }
        }

        return glyph < glyphCount ? glyph : 0;
    }

    /// <summary>A glyph's advance in pixels at <paramref name="size"/>, as FreeType's linear advance (see the remarks).</summary>
    public float Advance(int glyph, float size)
    {
        var xScale = DivFix((long)(size * 64), unitsPerEm);
        var linear = MulDiv(advances[glyph], xScale, 64);
        return (float)linear * (1f / 65536f);
    }

    /// <summary>
    /// The width of <paramref name="text"/> at <paramref name="size"/> pixels, or false when the size
    /// is not <see cref="Measurable"/> or the text is not well-formed UTF-16.
    /// </summary>
    public bool TryMeasure(string text, float size, out float width)
    {
        width = 0;
        if (!Measurable(size))
        {
            return false;
        }

        var xScale = DivFix((long)(size * 64), unitsPerEm);
        float sum = 0;
        for (var i = 0; i < text.Length; i++)
        {
            int codePoint = text[i];
            if (char.IsSurrogate(text[i]))
            {
                if (!char.IsHighSurrogate(text[i]) || i + 1 >= text.Length || !char.IsLowSurrogate(text[i + 1]))
                {
                    return false;
                }

                codePoint = char.ConvertToUtf32(text[i], text[i + 1]);
                i++;
            }

            sum += (float)MulDiv(advances[GlyphOf(codePoint)], xScale, 64) * (1f / 65536f);
        }

        width = sum;
        return true;
    }

    /// <summary>FreeType's FT_DivFix: (a × 65536) / b, rounded half away from zero.</summary>
    private static long DivFix(long a, long b)
    {
        var negative = (a < 0) != (b < 0);
        a = Math.Abs(a);
        b = Math.Abs(b);
        var q = b > 0 ? ((a << 16) + (b >> 1)) / b : 0x7FFFFFFFL;
        return negative ? -q : q;
    }

    /// <summary>FreeType's FT_MulDiv: (a × b) / c, rounded half away from zero.</summary>
    private static long MulDiv(long a, long b, long c)
    {
        var negative = (a < 0) != (b < 0);
        if (c < 0)
        {
            negative = !negative;
        }

        a = Math.Abs(a);
        b = Math.Abs(b);
        c = Math.Abs(c);
        var d = c > 0 ? ((a * b) + (c >> 1)) / c : 0x7FFFFFFFL;
        return negative ? -d : d;
    }

    private static int Table(byte[] font, string tag)
    {
        if (font.Length < 12)
        {
            throw Malformed("table directory");
        }

        int tables = U16(font, 4);
        for (var i = 0; i < tables; i++)
        {
            var record = 12 + (16 * i);
            if (record + 16 > font.Length)
            {
                break;
            }

            if (font[record] == tag[0] && font[record + 1] == tag[1] && font[record + 2] == tag[2] && font[record + 3] == tag[3])
            {
                var offset = BinaryPrimitives.ReadUInt32BigEndian(font.AsSpan(record + 8, 4));
                var length = BinaryPrimitives.ReadUInt32BigEndian(font.AsSpan(record + 12, 4));
                if (offset + (ulong)length > (ulong)font.Length)
                {
                    throw Malformed(tag);
                }

                return (int)offset;
            }
        }

        throw Malformed(tag);
    }

    private static ushort U16(byte[] font, int at) => BinaryPrimitives.ReadUInt16BigEndian(font.AsSpan(at, 2));

    private static InvalidOperationException Malformed(string what) =>
        new("The embedded chart font's " + what + " table is missing or malformed.");
}
