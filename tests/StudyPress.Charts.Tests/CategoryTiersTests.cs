using System.Xml.Linq;
using StudyPress.Charts.Tests.Support;

namespace StudyPress.Charts.Tests;

/// <summary>
/// Crossed cells on a category axis: the last factor's level under each box, the other factors'
/// levels once under each run of boxes (two tiers), so that cells whose long names share a start
/// stay apart; and rotated labels that stay inside the chart. Invented labels and values
/// (layout checks, no statistics).
/// </summary>
public sealed class CategoryTiersTests
{
    private static readonly string[] Lines = ["Extruder line A (inner barrel)", "Extruder line B (outer barrel)", "Extruder line C (pilot)"];
    private static readonly string[] Settings = ["Melt 210 °C", "Melt 220 °C", "Melt 230 °C", "Melt 240 °C"];

    private static List<GroupSample> Crossed() =>
        [.. Lines.SelectMany((l, i) => Settings.Select((s, j) => new GroupSample(l + " / " + s, [30 + i + j, 31 + i + j, 32.5 + i + j]) { Outer = l, Inner = s }))];

    private static string Shown(XElement text) =>
        new string(string.Concat(text.Nodes().OfType<XText>().Select(t => t.Value)).Where(c => c is < '\u2066' or > '\u2069').ToArray());

    private static string? Tip(XElement text) => text.Elements().FirstOrDefault(e => e.Name.LocalName == "title")?.Value is { } t
        ? new string(t.Where(c => c is < '\u2066' or > '\u2069').ToArray())
        : null;

    [Fact]
    public void GroupDistributions_CrossedCellsWithLongNames_TwoTiersKeepThemApart()
    {
        var groups = Crossed();
        var root = Svg.Parse(StatCharts.GroupDistributions(groups, Samples.Labels).ToSvg());

        var inner = Svg.ByClass(root, "category-label");
        Assert.Equal(12, inner.Count);
        Assert.Equal(Lines.SelectMany(_ => Settings), inner.Select(Shown));
        // Each inner label carries the whole cell name.
        Assert.Equal(groups.Select(g => g.Label), inner.Select(Tip));

        var outer = Svg.ByClass(root, "category-group-label");
        Assert.Equal(3, outer.Count);
        Assert.Equal(3, outer.Select(Shown).Distinct(StringComparer.Ordinal).Count());
        Assert.All(outer.Zip(Lines), p => Assert.True(Shown(p.First) == p.Second || Tip(p.First) == p.Second, Shown(p.First)));
        Assert.Equal(9, Svg.ByClass(root, "category-group-bracket").Count);
    }

    [Fact]
    public void GroupMeans_CrossedCells_TwoTiers()
    {
        var means = Lines.SelectMany(l => Settings.Select(s => new GroupMean(l + " / " + s, 31, 30, 32) { Outer = l, Inner = s })).ToList();
        var root = Svg.Parse(StatCharts.GroupMeans(means, "95%", Samples.Labels).ToSvg());
        Assert.Equal(Lines.SelectMany(_ => Settings), Svg.ByClass(root, "category-label").Select(Shown));
        Assert.Equal(3, Svg.ByClass(root, "category-group-label").Count);
    }

    [Theory]
    [InlineData("scattered")]
    [InlineData("missing")]
    public void GroupDistributions_TiersThatCannotBeDrawn_FallBackToWholeNames(string why)
    {
        // An outer label in two separate runs, or a group without tiers: one tier of whole names.
        var groups = why == "scattered"
            ? new List<GroupSample> { new("a / x", [1, 2]) { Outer = "a", Inner = "x" }, new("b / x", [1, 2]) { Outer = "b", Inner = "x" }, new("a / y", [1, 2]) { Outer = "a", Inner = "y" } }
            : [new("a / x", [1, 2]) { Outer = "a", Inner = "x" }, new("b", [1, 2])];
        var root = Svg.Parse(StatCharts.GroupDistributions(groups, Samples.Labels).ToSvg());
        Assert.Empty(Svg.ByClass(root, "category-group-label"));
        Assert.Equal(groups.Select(g => g.Label), Svg.ByClass(root, "category-label").Select(Shown));
    }

    [Fact]
    public void GroupDistributions_RotatedLabels_StayInsideTheChart()
    {
        // Long names are rotated 45° with their end at the tick; the first one reached past the
        // chart's left edge when its band was near the edge.
        var groups = Crossed().Select(g => new GroupSample(g.Label, g.Values)).ToList();
        var chart = StatCharts.GroupDistributions(groups, Samples.Labels);
        var labels = Svg.ByClass(Svg.Parse(chart.ToSvg()), "category-label");
        Assert.All(labels, l => Assert.NotNull((string?)l.Attribute("transform")));
        foreach (var l in labels)
        {
            double reach = ChartFont.MeasureWidth(Shown(l), Svg.D(l, "font-size")) * Math.Sqrt(0.5);
            Assert.True(Svg.D(l, "x") - reach >= 0, "label starts at " + (Svg.D(l, "x") - reach).ToString("F1", System.Globalization.CultureInfo.InvariantCulture));
        }
    }
}
