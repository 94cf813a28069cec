using System.Globalization;
using System.Reflection;
using SkiaSharp;

namespace StudyPress.Charts;

/// <summary>
/// The one typeface of every chart: a subset of DejaVu Sans (Fonts/StudyPressSans.ttf, made by
/// Fonts/make-subset.sh, licence in Fonts/LICENSE-DejaVu.txt), embedded in this assembly and loaded
/// with <see cref="SKTypeface.FromStream(Stream, int)"/>, so measuring and drawing text never asks
/// the machine's font configuration. The SVG names it "StudyPress Sans"; the report embeds
/// <see cref="CssFontFace"/> so a browser draws the same glyphs with the same advance widths.
/// </summary>
/// <remarks>
/// The subset has no kerning or shaping tables, so a string's width is the sum of its glyphs'
/// advance widths both here and in a browser. <see cref="MeasureWidth"/> reads those advances from
/// the font's tables (<see cref="FontAdvances"/>, the same arithmetic as SkiaSharp's, bit for bit),
/// so that drawing the SVG charts does not load SkiaSharp's native library. Characters outside the subset are drawn with the
/// font's missing-glyph box here, while a browser may fall back to another font for them.
/// </remarks>
public static class ChartFont
{
    /// <summary>The CSS/SVG font-family name the charts use.</summary>
    public const string FamilyName = "StudyPress Sans";

    private const string ResourceName = "StudyPress.Charts.Fonts.StudyPressSans.ttf";

    private static readonly Lazy<byte[]> Bytes = new(LoadBytes);
    private static readonly Lazy<SKTypeface> Face = new(LoadTypeface);

    // The SVG path measures with the font's own tables (no native library to load, no FreeType
    // face to parse); SkiaSharp measures only what FontAdvances leaves to it, and draws the PNGs.
    private static readonly Lazy<FontAdvances> Advances = new(() => FontAdvances.Read(Bytes.Value));
    private static readonly Lazy<string> FontFace = new(BuildFontFace);

    /// <summary>A copy of the embedded TrueType subset.</summary>
    public static byte[] FontBytes() => (byte[])Bytes.Value.Clone();

    /// <summary>
    /// A CSS rule <c>@font-face{font-family:"StudyPress Sans";src:url(data:font/ttf;base64,...)...}</c>
    /// for the report's style sheet. Same text on every call.
    /// </summary>
    public static string CssFontFace() => FontFace.Value;

    /// <summary>Advance width in pixels of <paramref name="text"/> at <paramref name="fontSize"/> pixels.</summary>
    public static double MeasureWidth(string text, double fontSize)
    {
        ArgumentNullException.ThrowIfNull(text);
        if (text.Length == 0)
        {
            return 0;
        }

        var shown = BidiText.WithoutIsolates(text);
        if (Advances.Value.TryMeasure(shown, (float)fontSize, out var width))
        {
            return width;
        }

        return SkiaWidth(shown, (float)fontSize);
    }

    /// <summary>SkiaSharp's width of <paramref name="text"/> (no isolates removed): what <see cref="MeasureWidth"/> equals.</summary>
    internal static float SkiaWidth(string text, float fontSize)
    {
        using var font = CreateFont(fontSize);
        return font.MeasureText(text);
    }

    /// <summary>
    /// <paramref name="text"/> itself when it fits in <paramref name="maxWidth"/> pixels, else its
    /// longest prefix (whole UTF-16 code points, trailing spaces removed) followed by "…" that fits.
    /// </summary>
    public static string Truncate(string text, double fontSize, double maxWidth)
    {
        ArgumentNullException.ThrowIfNull(text);
        if (MeasureWidth(text, fontSize) <= maxWidth)
        {
            return text;
        }

        const string ellipsis = "\u2026";
        // Binary search on the prefix length: width grows with length.
        int lo = 0, hi = text.Length;
        while (lo < hi)
        {
            int mid = (lo + hi + 1) / 2;
            if (MeasureWidth(Prefix(text, mid) + ellipsis, fontSize) <= maxWidth)
            {
                lo = mid;
            }
            else
            {
                hi = mid - 1;
            }
        }

        return Prefix(text, lo) + ellipsis;
    }

    private static string Prefix(string text, int length)
    {
        if (length > 0 && length < text.Length && char.IsHighSurrogate(text[length - 1]))
        {
            length--;
        }

        return text[..length].TrimEnd();
    }

    internal static SKTypeface Typeface => Face.Value;

    /// <summary>An unhinted, linearly scaled font so widths scale exactly with the size.</summary>
    internal static SKFont CreateFont(float size) => new(Face.Value, size)
    {
        Hinting = SKFontHinting.None,
        Subpixel = true,
        LinearMetrics = true,
        Edging = SKFontEdging.Antialias,
        BaselineSnap = false,
    };

    private static byte[] LoadBytes()
    {
        using var stream = Assembly.GetExecutingAssembly().GetManifestResourceStream(ResourceName)
            ?? throw new InvalidOperationException("The embedded chart font " + ResourceName + " is missing.");
        using var copy = new MemoryStream();
        stream.CopyTo(copy);
        return copy.ToArray();
    }

    private static SKTypeface LoadTypeface()
    {
        var stream = new MemoryStream(Bytes.Value, writable: false);
        return SKTypeface.FromStream(stream)
            ?? throw new InvalidOperationException("The embedded chart font could not be loaded.");
    }

    private static string BuildFontFace() => string.Create(CultureInfo.InvariantCulture,
        $"@font-face{{font-family:\"{FamilyName}\";src:url(data:font/ttf;base64,{Convert.ToBase64String(Bytes.Value)}) format(\"truetype\");font-weight:normal;font-style:normal;}}");
}
