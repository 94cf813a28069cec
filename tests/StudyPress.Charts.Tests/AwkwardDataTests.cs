using StudyPress.Charts.Tests.Support;

namespace StudyPress.Charts.Tests;

/// <summary>Awkward inputs do not throw and keep every point inside the plot area (nothing clipped).</summary>
public class AwkwardDataTests
{
    public static TheoryData<string, double[]> Samples1D() => new()
    {
        { "negative", [-12.5, -3.1, -7.7, -0.2, -9.9] },
        { "tiny range at huge magnitude", [1000000000000.1, 1000000000000.2, 1000000000000.5, 1000000000000.3] },
        { "constant", [4.2, 4.2, 4.2, 4.2] },
        { "all zero", [0, 0, 0] },
        { "one huge outlier", [1, 2, 2, 3, 3, 3, 4, 1e6] },
        { "single value", [3.5] },
        { "tiny values", [1e-9, 3e-9, 2e-9, 5e-9] },
    };

    private static void AssertInside(Chart chart, IEnumerable<(double X, double Y)> points)
    {
        var p = chart.Plot;
        foreach (var (x, y) in points)
        {
            Assert.InRange(x, p.Left - 0.01, p.Right + 0.01);
            Assert.InRange(y, p.Top - 0.01, p.Bottom + 0.01);
        }
    }

    private static List<(double X, double Y)> PointCentres(Chart chart) =>
        Svg.ByClass(Svg.Parse(chart.ToSvg()), "point").Select(Svg.Centre).ToList();

    [Theory]
    [MemberData(nameof(Samples1D))]
    public void GroupDistributions_AwkwardData_PointsInsidePlot(string scenario, double[] values)
    {
        var chart = StatCharts.GroupDistributions([new(scenario, values), new("other", values.Select(v => v * 1.0000001).ToArray())], Samples.Labels);
        var points = PointCentres(chart);
        Assert.Equal(2 * values.Length, points.Count);
        AssertInside(chart, points);
        Assert.NotNull(chart.ToPng());
    }

    [Theory]
    [MemberData(nameof(Samples1D))]
    public void ResidualCharts_AwkwardData_DoNotThrowAndStayInside(string scenario, double[] values)
    {
        var qq = StatCharts.NormalQuantilePlot(values, new(scenario, "q", "r"));
        AssertInside(qq, PointCentres(qq));
        var hist = StatCharts.ResidualHistogram(values, new(scenario, "r", "n"));
        var bars = Svg.ByClass(Svg.Parse(hist.ToSvg()), "bar");
        Assert.NotEmpty(bars);
        AssertInside(hist, bars.SelectMany(b => new[] { (Svg.D(b, "x"), Svg.D(b, "y")), (Svg.D(b, "x") + Svg.D(b, "width"), Svg.D(b, "y") + Svg.D(b, "height")) }));
        var rvf = StatCharts.ResidualsVersusFitted(values.Select((_, i) => (double)i).ToArray(), values, new(scenario, "f", "r"));
        AssertInside(rvf, PointCentres(rvf));
        Assert.Equal(values.Length, PointCentres(rvf).Count);
    }

    [Fact]
    public void GroupDistributions_ManyGroups_LabelsRotatedOrShrunk()
    {
        var groups = Enumerable.Range(0, 40).Select(i => new GroupSample("Level " + i.ToString(System.Globalization.CultureInfo.InvariantCulture), [i, i + 1.0, i + 2.5])).ToList();
        var chart = StatCharts.GroupDistributions(groups, Samples.Labels);
        var root = Svg.Parse(chart.ToSvg());
        var labels = Svg.ByClass(root, "category-label");
        Assert.Equal(40, labels.Count);
        Assert.All(labels, l => Assert.True((string?)l.Attribute("transform") is not null || Svg.D(l, "font-size") < 11));
        AssertInside(chart, PointCentres(chart));
    }

    [Fact]
    public void GroupDistributions_EmptyGroup_KeepsLabel()
    {
        var chart = StatCharts.GroupDistributions([new("A", [1, 2, 3]), new("empty", [])], Samples.Labels);
        Assert.Equal(2, Svg.ByClass(Svg.Parse(chart.ToSvg()), "category-label").Count);
        Assert.Contains("empty: no observations", chart.Description, StringComparison.Ordinal);
    }

    [Fact]
    public void Charts_NonFiniteInput_ThrowArgumentException()
    {
        Assert.Throws<ArgumentException>(() => StatCharts.GroupDistributions([new("A", [1, double.NaN])], Samples.Labels));
        Assert.Throws<ArgumentException>(() => StatCharts.NormalQuantilePlot([1, double.PositiveInfinity], Samples.Labels));
        Assert.Throws<ArgumentOutOfRangeException>(() => StatCharts.FDistribution(2, 10, double.NaN, 0.05, Samples.Labels));
    }

    [Theory]
    [InlineData(1, 1, 0.5)]
    [InlineData(1, 200, 0.01)]
    [InlineData(12, 3, 40)]
    [InlineData(4, 60, 0)]
    public void FDistribution_AwkwardDegreesOfFreedom_CurveInsidePlot(double df1, double df2, double f)
    {
        var chart = StatCharts.FDistribution(df1, df2, f, 0.05, Samples.Labels);
        var root = Svg.Parse(chart.ToSvg());
        AssertInside(chart, Svg.Points(Svg.ByClass(root, "density").Single()));
        AssertInside(chart, Svg.Points(Svg.ByClass(root, "rejection-region").Single()));
    }

    [Fact]
    public void InteractionPlot_MissingCell_BreaksLine()
    {
        var chart = StatCharts.InteractionPlot(["a1", "a2", "a3"], ["b1"],
            [new("a1", "b1", 1), new("a3", "b1", 3)], "B", Samples.Labels);
        var root = Svg.Parse(chart.ToSvg());
        Assert.DoesNotContain(Svg.ByClass(root, "line"), e => e.Name.LocalName == "polyline");
        Assert.Equal(2, Svg.ByClass(root, "cell-mean").Count);
    }
}
