using System.Security.Cryptography;
using SkiaSharp;
using StudyPress.Charts.Tests.Support;

namespace StudyPress.Charts.Tests;

public class ChartOutputTests
{
    public static TheoryData<string> Names()
    {
        var data = new TheoryData<string>();
        foreach (var s in Samples.All())
        {
            data.Add(s.Name);
        }

        return data;
    }

    private static Chart Make(string name) => Samples.All().Single(s => s.Name == name).Make();

    [Theory]
    [MemberData(nameof(Names))]
    public void Chart_SameInputTwice_IdenticalSvgAndPng(string name)
    {
        Chart a = Make(name), b = Make(name);
        Assert.Equal(a.ToSvg(), b.ToSvg());
        Assert.Equal(a.ToPng(), b.ToPng());
    }

    [Theory]
    [MemberData(nameof(Names))]
    public void Svg_Structure_AccessibleAndCspSafe(string name)
    {
        var chart = Make(name);
        string svg = chart.ToSvg();
        var root = Svg.Parse(svg);
        Assert.Equal("img", (string?)root.Attribute("role"));
        Assert.Equal("0 0 640 " + chart.Height.ToString(System.Globalization.CultureInfo.InvariantCulture), (string?)root.Attribute("viewBox"));
        Assert.Equal("StudyPress Sans", (string?)root.Attribute("font-family"));
        Assert.Equal("title", root.Elements().First().Name.LocalName);
        Assert.Equal("desc", root.Elements().ElementAt(1).Name.LocalName);
        Assert.False(string.IsNullOrWhiteSpace(root.Element(Svg.Ns + "desc")!.Value));
        Assert.DoesNotContain(root.DescendantsAndSelf(), e => e.Attribute("style") is not null || e.Attribute("id") is not null);
        Assert.NotEmpty(root.Descendants(Svg.Ns + "text"));
        Assert.DoesNotContain("NaN", svg, StringComparison.Ordinal);
        Assert.DoesNotContain("Infinity", svg, StringComparison.Ordinal);
    }

    [Fact]
    public void Png_Decodes_TwiceTheChartSize()
    {
        var chart = Make("groups");
        using var bitmap = SKBitmap.Decode(chart.ToPng());
        Assert.NotNull(bitmap);
        Assert.Equal(1280, bitmap.Width);
        Assert.Equal(800, bitmap.Height);
        // Not blank: some pixels are dark (axes, text).
        int dark = 0;
        for (int yy = 0; yy < bitmap.Height; yy += 4)
        {
            for (int xx = 0; xx < bitmap.Width; xx += 4)
            {
                if (bitmap.GetPixel(xx, yy).Red < 100)
                {
                    dark++;
                }
            }
        }

        Assert.True(dark > 100);
    }

    [Fact]
    public void CssFontFace_EmbedsTheSubsetAsDataUri()
    {
        string css = ChartFont.CssFontFace();
        Assert.StartsWith("@font-face{font-family:\"StudyPress Sans\";src:url(data:font/ttf;base64,", css, StringComparison.Ordinal);
        int start = css.IndexOf("base64,", StringComparison.Ordinal) + 7;
        int end = css.IndexOf(')', start);
        Assert.Equal(ChartFont.FontBytes(), Convert.FromBase64String(css[start..end]));
        Assert.InRange(ChartFont.FontBytes().Length, 10_000, 60_000); // a subset: tens of KB
    }

    [Fact]
    public void Font_CoversStatisticsSymbols()
    {
        // Every character the subset promises maps to a real glyph (not glyph 0).
        const string text = "Az09 αβηωχμσ ²³−×±≤≥–—·…√µ é ü";
        using var font = new SKFont(ChartFont.Typeface, 12);
        var glyphs = font.GetGlyphs(text.Replace(" ", "", StringComparison.Ordinal));
        Assert.DoesNotContain((ushort)0, glyphs);
    }

    [Fact]
    public void Truncate_LongName_EllipsisWithinWidth()
    {
        string name = "A very long level name that cannot possibly fit in the space";
        string t = ChartFont.Truncate(name, 11, 80);
        Assert.EndsWith("\u2026", t, StringComparison.Ordinal);
        Assert.True(ChartFont.MeasureWidth(t, 11) <= 80);
        Assert.True(t.Length > 3);
        Assert.StartsWith(t[..^1], name, StringComparison.Ordinal);
        Assert.Equal("short", ChartFont.Truncate("short", 11, 80));
    }

    [Fact]
    public void GroupDistributions_LongLevelNames_TruncatedWithFullNameInTitle()
    {
        var groups = Enumerable.Range(1, 6).Select(i => new GroupSample("Treatment with a remarkably long descriptive name " + i.ToString(System.Globalization.CultureInfo.InvariantCulture), [1, 2, 3.0 + i])).ToList();
        var root = Svg.Parse(StatCharts.GroupDistributions(groups, Samples.Labels).ToSvg());
        var labels = Svg.ByClass(root, "category-label");
        Assert.Equal(6, labels.Count);
        foreach (var (label, i) in labels.Select((l, i) => (l, i)))
        {
            var title = label.Element(Svg.Ns + "title");
            Assert.NotNull(title);
            Assert.Equal(groups[i].Label, title.Value);
            Assert.EndsWith("\u2026", label.Value, StringComparison.Ordinal);
        }
    }

    /// <summary>
    /// Writes the SHA-256 of every sample chart's SVG and PNG to $STUDYPRESS_CHART_HASHES (when set);
    /// font-independence.sh runs this with and without an empty fontconfig and compares.
    /// </summary>
    [Fact]
    public void Hashes_AllSamples_WrittenForFontIndependenceScript()
    {
        var lines = Samples.All().Select(s =>
        {
            var c = s.Make();
            return s.Name + " svg " + Convert.ToHexString(SHA256.HashData(System.Text.Encoding.UTF8.GetBytes(c.ToSvg()))) +
                   " png " + Convert.ToHexString(SHA256.HashData(c.ToPng()));
        }).ToList();
        Assert.Equal(Samples.All().Count, lines.Distinct().Count());
        string? path = Environment.GetEnvironmentVariable("STUDYPRESS_CHART_HASHES");
        if (!string.IsNullOrEmpty(path))
        {
            File.WriteAllLines(path, lines);
        }

        string? dir = Environment.GetEnvironmentVariable("STUDYPRESS_CHART_SAMPLES");
        if (!string.IsNullOrEmpty(dir))
        {
            Directory.CreateDirectory(dir);
            foreach (var s in Samples.All())
            {
                var c = s.Make();
                File.WriteAllText(Path.Combine(dir, s.Name + ".svg"), c.ToSvg());
                File.WriteAllBytes(Path.Combine(dir, s.Name + ".png"), c.ToPng());
            }
        }
    }
}
