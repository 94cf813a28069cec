using System.Text;
using SkiaSharp;
using StudyPress.Charts.Rendering;

namespace StudyPress.Charts.Tests;

/// <summary>
/// <see cref="ChartFont.MeasureWidth"/> reads advances from the font's own tables
/// (<see cref="FontAdvances"/>) instead of asking SkiaSharp. Every chart's layout depends on these
/// widths, so they must equal SkiaSharp's bit for bit (source: SkiaSharp itself, the measurer the
/// charts used before, with the same font settings: <see cref="ChartFont.CreateFont(float)"/>).
/// </summary>
public class ChartFontAdvanceTests
{
    private static readonly FontAdvances Table = FontAdvances.Read(ChartFont.FontBytes());

    /// <summary>Every size the charts measure or draw text at, and a grid around them.</summary>
    private static SortedSet<float> Sizes()
    {
        var sizes = new SortedSet<float> { (float)Plot.TickSize, (float)Plot.LabelSize, (float)Plot.TitleSize, (float)Plot.MinTextSize };
        for (var s = 1f; s <= 128f; s += 0.125f)
        {
            sizes.Add(s);
        }

        for (var k = 10 * 64; k <= 16 * 64; k++)
        {
            sizes.Add(k / 64f);
        }

        return sizes;
    }

    /// <summary>The code points the subset maps to a glyph.</summary>
    private static List<int> Mapped() => Enumerable.Range(0, 0x10000).Where(c => !char.IsSurrogate((char)c) && Table.GlyphOf(c) != 0).ToList();

    private static void SameBits(float skia, double ours, string what)
    {
        Assert.True(BitConverter.SingleToInt32Bits(skia) == BitConverter.SingleToInt32Bits((float)ours) && (double)skia == ours,
            $"{what}: SkiaSharp {skia:R}, ours {ours:R}");
    }

    [Fact]
    public void ChartSizes_AreMeasuredFromTheTables()
    {
        // The fast path must be the one the charts take; otherwise the equality below proves nothing useful.
        foreach (var size in new[] { Plot.TickSize, Plot.LabelSize, Plot.TitleSize, Plot.MinTextSize })
        {
            Assert.True(Table.TryMeasure("Nozzle type µm −4.98 ≤ α", (float)size, out _));
        }

        Assert.False(Table.TryMeasure("x\uD800y", 12, out _)); // unpaired surrogate: left to SkiaSharp
        Assert.False(Table.TryMeasure("x", 12.3f, out _)); // not exact in 26.6: left to SkiaSharp
        Assert.False(Table.TryMeasure("x", 300, out _)); // drawn as paths by Skia at that size: left to SkiaSharp
    }

    [Fact]
    public void EveryGlyph_EverySize_SameAdvanceAsSkia()
    {
        var glyphs = Enumerable.Range(0, ChartFont.Typeface.GlyphCount).Select(g => (ushort)g).ToArray();
        Assert.True(glyphs.Length > 200);
        foreach (var size in Sizes())
        {
            using var font = ChartFont.CreateFont(size);
            var widths = font.GetGlyphWidths(glyphs);
            for (var g = 0; g < glyphs.Length; g++)
            {
                SameBits(widths[g], Table.Advance(g, size), $"glyph {g} at {size:R} px");
            }
        }
    }

    [Fact]
    public void EveryMappedCharacter_EverySize_SameWidthAsSkia()
    {
        var mapped = Mapped();
        Assert.True(mapped.Count > 200);
        foreach (var size in Sizes())
        {
            using var font = ChartFont.CreateFont(size);
            foreach (var c in mapped)
            {
                var s = char.ConvertFromUtf32(c);
                SameBits(font.MeasureText(s), ChartFont.MeasureWidth(s, size), $"U+{c:X4} at {size:R} px");
            }
        }
    }

    [Fact]
    public void EveryBmpCodePoint_AtTheChartSize_SameGlyphAndWidthAsSkia()
    {
        // The cmap lookup, including every code point the subset lacks (drawn as glyph 0).
        using var font = ChartFont.CreateFont((float)Plot.TickSize);
        for (var c = 0; c < 0x10000; c++)
        {
            if (char.IsSurrogate((char)c))
            {
                continue;
            }

            var s = ((char)c).ToString();
            Assert.Equal(font.GetGlyphs(s)[0], (ushort)Table.GlyphOf(c));
            Assert.True(Table.TryMeasure(s, (float)Plot.TickSize, out var ours));
            SameBits(font.MeasureText(s), ours, $"U+{c:X4}");
        }
    }

    [Fact]
    public void SupplementaryCharacters_SameWidthAsSkia()
    {
        int[] points = [0x10000, 0x10400, 0x1D400, 0x1D6C2, 0x1F600, 0x1F9EA, 0x20000, 0x10FFFF];
        foreach (var size in new[] { 12f, 13f, 15f, 7.5f, 40f })
        {
            using var font = ChartFont.CreateFont(size);
            foreach (var p in points)
            {
                var s = "a" + char.ConvertFromUtf32(p) + "b" + char.ConvertFromUtf32(p) + char.ConvertFromUtf32(p);
                Assert.True(Table.TryMeasure(s, size, out _));
                SameBits(font.MeasureText(s), ChartFont.MeasureWidth(s, size), $"U+{p:X} at {size:R} px");
            }
        }
    }

    [Fact]
    public void ManyStrings_ManySizes_SameWidthAsSkia()
    {
        // Strings of the subset's characters mixed with missing ones, long enough for the float sum's
        // rounding to matter; a fixed seed, so the same strings every run.
        var mapped = Mapped();
        var rng = new Random(20261205);
        int[] missing = [0x4E2D, 0x05D0, 0x0627, 0x0400, 0x2603, 0xFFFD, 0x0000, 0x0009, 0x200B, 0x00AD];
        var strings = new List<string>
        {
            "flat-fan", "hollow-cone", "full-cone", "air-induction", "Coating thickness (µm)", "−4.98",
            "p < .001", "α = 0.05", "Δ mean ± 95% CI", "≤ ≥ ≈ ≠ √ ∞", "“quoted” ‘names’ — and – dashes…",
            new string('W', 300), new string('i', 1000), string.Concat(Enumerable.Repeat("0123456789.", 40)),
        };
        for (var n = 0; n < 2000; n++)
        {
            var sb = new StringBuilder();
            var length = 1 + rng.Next(80);
            for (var i = 0; i < length; i++)
            {
                var roll = rng.Next(20);
                sb.Append(roll == 0 ? char.ConvertFromUtf32(missing[rng.Next(missing.Length)])
                    : roll == 1 ? char.ConvertFromUtf32(0x1F600 + rng.Next(50))
                    : char.ConvertFromUtf32(mapped[rng.Next(mapped.Count)]));
            }

            strings.Add(sb.ToString());
        }

        foreach (var size in new[] { 12f, 13f, 15f, 1f, 8.5f, 11f, 12.015625f, 14.25f, 24f, 96f, 128f })
        {
            using var font = ChartFont.CreateFont(size);
            foreach (var s in strings)
            {
                SameBits(font.MeasureText(s), ChartFont.MeasureWidth(s, size), $"\"{s}\" at {size:R} px");
            }
        }
    }

    [Fact]
    public void BidiIsolatesAndMalformedText_SameWidthAsSkia()
    {
        string[] strings =
        [
            BidiText.Isolate("\u202Eenoz-tolp"), BidiText.Isolate("שלום nozzle"), "a\u2066b\u2067c\u2068d\u2069e",
            "\u2068\u2069", "x\uD800y", "\uDC00", "end\uD83D", "\uDE00start", "ok \uD83D\uDE00 then \uD83D",
        ];
        foreach (var size in new[] { 12f, 13f, 15f, 12.3f, 300f, 0.5f })
        {
            using var font = ChartFont.CreateFont(size);
            foreach (var s in strings)
            {
                // Isolate marks have no width in a browser; both paths measure the text without them.
                SameBits(font.MeasureText(BidiText.WithoutIsolates(s)), ChartFont.MeasureWidth(s, size), $"\"{s}\" at {size:R} px");
            }
        }
    }
}
