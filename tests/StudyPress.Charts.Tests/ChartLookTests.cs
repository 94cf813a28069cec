using System.Globalization;
using System.Xml.Linq;
using StudyPress.Charts.Rendering;
using StudyPress.Charts.Tests.Support;

namespace StudyPress.Charts.Tests;

/// <summary>
/// What a reader sees: text large enough to read, labels shown whole, notes clear of the data,
/// axes that reach the data and a legend for every marker. Geometry read back from the SVG.
/// </summary>
public sealed class ChartLookTests
{
    private const double Pixel = 0.02;

    private static IEnumerable<XElement> Texts(XElement svg) => svg.Descendants(Svg.Ns + "text");

    public static TheoryData<string> Names()
    {
        var data = new TheoryData<string>();
        foreach (var (name, _) in Samples.All())
        {
            data.Add(name);
        }

        return data;
    }

    [Theory]
    [MemberData(nameof(Names))]
    public void EveryChart_Text_IsAtLeastElevenPixels(string name)
    {
        var svg = Svg.Parse(Samples.All().Single(s => s.Name == name).Make().ToSvg());
        var sizes = Texts(svg).Select(t => Svg.D(t, "font-size")).ToList();
        Assert.NotEmpty(sizes);
        Assert.All(sizes, s => Assert.True(s >= 11, $"{name}: text of {s} px"));
    }

    [Fact]
    public void ManyCategories_Labels_KeepTheSmallestTextSize()
    {
        // 30 groups used to shrink the category labels to 9 px.
        var groups = Enumerable.Range(1, 30).Select(i => new GroupSample("g" + i.ToString(CultureInfo.InvariantCulture), [i, i + 1.0, i + 2.0])).ToList();
        var svg = Svg.Parse(StatCharts.GroupDistributions(groups, Samples.Labels).ToSvg());
        var labels = Svg.ByClass(svg, "category-label");
        Assert.Equal(30, labels.Count);
        Assert.All(labels, l => Assert.True(Svg.D(l, "font-size") >= 11));
    }

    [Fact]
    public void Intervals_LongPairLabels_AreShownWhole()
    {
        // The spray-nozzle example's longest pair, which used to be cut to "hollow-cone − air-inducti…".
        string[] pairs = ["flat-fan − hollow-cone", "hollow-cone − air-induction", "full-cone − air-induction"];
        var chart = StatCharts.SimultaneousIntervals(
            [new(pairs[0], -2.77, -5.38, -0.16), new(pairs[1], 1.68, -0.93, 4.29), new(pairs[2], 4.05, 1.44, 6.66)], "95%", new("Tukey", "difference", ""));
        var svg = Svg.Parse(chart.ToSvg());
        var shown = Svg.ByClass(svg, "category-label").Select(t => t.Value).ToList();
        Assert.Equal(pairs, shown);
        // The plot area starts to the right of the widest label.
        double widest = pairs.Max(p => ChartFont.MeasureWidth(p, Plot.TickSize));
        Assert.True(chart.Plot.Left >= widest, $"plot starts at {chart.Plot.Left}, widest label {widest}");
    }

    [Fact]
    public void Intervals_ExtremelyLongLabel_IsShortenedWithItsFullTextKept()
    {
        var pair = new string('x', 200) + " − y";
        var chart = StatCharts.SimultaneousIntervals([new(pair, 1, 0.5, 1.5)], "95%", new("Tukey", "difference", ""));
        var label = Svg.ByClass(Svg.Parse(chart.ToSvg()), "category-label").Single();
        Assert.EndsWith("…", label.Value, StringComparison.Ordinal);
        Assert.Contains(pair, label.ToString(), StringComparison.Ordinal);
        Assert.True(chart.Plot.Right - chart.Plot.Left >= 40);
    }

    public static TheoryData<int, double> PowerShapes() => new()
    {
        // (group size of the marked point, scale of the curve 1 − exp(−n/scale)); the first is the
        // spray-nozzle example's shape, where the note used to sit on the curve.
        { 24, 9.0 },
        { 13, 8.0 },
        { 5, 2.0 },
        { 38, 16.0 },
    };

    [Theory]
    [MemberData(nameof(PowerShapes))]
    public void PowerCurve_MarkedNote_IsClearOfTheCurveAndTheTargetLine(int markedN, double scale)
    {
        var curve = Enumerable.Range(2, 37).Select(n => new PowerPoint(n, 1 - Math.Exp(-n / scale))).ToList();
        var marked = curve.Single(p => p.PerGroupN == markedN);
        var chart = StatCharts.PowerCurve(curve, 0.9, marked, new("Power", "n per group", "power"));
        var svg = Svg.Parse(chart.ToSvg());
        var note = Svg.ByClass(svg, "marked-label").Single();
        double size = Svg.D(note, "font-size");
        double width = ChartFont.MeasureWidth(note.Value, size);
        double x = Svg.D(note, "x"), baseline = Svg.D(note, "y");
        double left = (string?)note.Attribute("text-anchor") == "end" ? x - width : x;
        var line = Svg.Points(Svg.ByClass(svg, "power-curve").Single()).Select(p => new Pt(p.X, p.Y)).ToList();
        Assert.False(ChartMath.PolylineCrossesBox(line, left, baseline - size, left + width, baseline + (0.3 * size)), "the note crosses the curve");
        var target = Svg.ByClass(svg, "target-line").Single();
        double ty = Svg.D(target, "y1");
        Assert.False(ty >= baseline - size && ty <= baseline + (0.3 * size), "the note crosses the target line");
        Assert.True(left >= chart.Plot.Left && left + width <= chart.Plot.Right, "the note leaves the plot");
    }

    [Fact]
    public void PolylineCrossesBox_SegmentThroughOrBesideABox_IsToldApart()
    {
        // Exact hand computation: a segment from (0, 0) to (10, 10) crosses the box [4, 6]², misses [7, 9] × [0, 2].
        Pt[] line = [new(0, 0), new(10, 10)];
        Assert.True(ChartMath.PolylineCrossesBox(line, 4, 4, 6, 6));
        Assert.False(ChartMath.PolylineCrossesBox(line, 7, 0, 9, 2));
        Assert.False(ChartMath.PolylineCrossesBox([new(0, 5), new(3, 5)], 4, 4, 6, 6));
        Assert.True(ChartMath.PolylineCrossesBox([new(5, 0), new(5, 10)], 4, 4, 6, 6));
    }

    [Theory]
    [InlineData(1.0, 26.0, 0.5)]
    [InlineData(1.0, 18.0, 9.0)]
    [InlineData(2.0, 26.0, 3.0)]
    [InlineData(3.0, 20.0, 11.5)]
    public void FDistribution_VerticalAxis_ReachesTheHighestPointDrawn(double df1, double df2, double f)
    {
        // df1 = 1 and 2 used to cut the curve at the top of the plot (density 1 at 0 for df1 = 2;
        // unbounded for df1 = 1): the axis ended below the data's maximum.
        var chart = StatCharts.FDistribution(df1, df2, f, 0.05, new("F", "F", "density"));
        var svg = Svg.Parse(chart.ToSvg());
        var density = Svg.Points(Svg.ByClass(svg, "density").Single());
        double highest = density.Min(p => p.Y);
        Assert.True(highest >= chart.Plot.Top - Pixel, $"the curve reaches {highest}, above the axis top {chart.Plot.Top}");
        // Nothing is flattened against the top: no two neighbouring points both sit on the axis top.
        Assert.DoesNotContain(density.Zip(density.Skip(1)), s => Math.Abs(s.First.Y - chart.Plot.Top) < Pixel && Math.Abs(s.Second.Y - chart.Plot.Top) < Pixel);
        var ticks = chart.Plot.Y!.Ticks;
        Assert.True(ticks[^1] >= chart.Plot.Y.Max - 1e-12, "the top tick is the axis end");
    }

    [Fact]
    public void FDistribution_Legend_UsesOurWording()
    {
        var svg = Svg.Parse(StatCharts.FDistribution(3, 20, 11.5, 0.05, new("F", "F", "density")).ToSvg());
        var text = string.Join("\n", Texts(svg).Select(t => t.Value));
        Assert.Contains("Rejection threshold", text, StringComparison.Ordinal);
        Assert.DoesNotContain("Critical value", text, StringComparison.Ordinal);
        Assert.DoesNotContain("critical F", text, StringComparison.Ordinal);
    }

    [Fact]
    public void BoxPlot_WithOutliers_HasALegendForBothMarkers()
    {
        var svg = Svg.Parse(StatCharts.GroupDistributions([new("A", [1, 2, 3, 4, 5, 6, 7, 8, 9, 30])], Samples.Labels).ToSvg());
        var legend = Svg.ByClass(svg, "legend").Single();
        var labels = legend.Descendants(Svg.Ns + "text").Select(t => t.Value).ToList();
        Assert.Equal(["Observation", "Beyond 1.5 IQR"], labels);
        // The legend's triangle is the outliers' marker, in their colour.
        Assert.Contains(legend.Descendants(Svg.Ns + "polygon"), p => (string?)p.Attribute("fill") == Palette.Vermillion);
    }

    [Fact]
    public void BoxPlot_WithoutOutliers_NamesOnlyTheObservations()
    {
        var svg = Svg.Parse(StatCharts.GroupDistributions([new("A", [1, 2, 3, 4, 5])], Samples.Labels).ToSvg());
        var labels = Svg.ByClass(svg, "legend").Single().Descendants(Svg.Ns + "text").Select(t => t.Value).ToList();
        Assert.Equal(["Observation"], labels);
    }
}
