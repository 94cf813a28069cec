using MathNet.Numerics.Distributions;
using StudyPress.Charts.Tests.Support;

namespace StudyPress.Charts.Tests;

public class ChartGeometryTests
{
    private const double Pixel = 0.011; // the SVG rounds coordinates to 2 decimals

    [Fact]
    public void GroupDistributions_KnownSample_BoxWhiskersMedianAtAxisPixels()
    {
        // Sample 1..9, 30 (n = 10). Hyndman–Fan type 7 by hand: Q1 = x[2] + 0.25(x[3] − x[2]) = 3.25,
        // median 5.5, Q3 = 7 + 0.75 = 7.75; IQR 4.5, fences −3.5 and 14.5 (Tukey 1977):
        // whiskers 1 and 9, one outlier (30).
        var chart = StatCharts.GroupDistributions([new("A", [5, 1, 2, 30, 3, 4, 6, 7, 8, 9])], Samples.Labels);
        var root = Svg.Parse(chart.ToSvg());
        var y = chart.Plot.Y!;
        var lower = Svg.ByClass(root, "whisker-lower").Single();
        var upper = Svg.ByClass(root, "whisker-upper").Single();
        Assert.Equal(y.Map(1), Svg.D(lower, "y1"), Pixel);
        Assert.Equal(y.Map(3.25), Svg.D(lower, "y2"), Pixel);
        Assert.Equal(y.Map(7.75), Svg.D(upper, "y1"), Pixel);
        Assert.Equal(y.Map(9), Svg.D(upper, "y2"), Pixel);
        var box = Svg.ByClass(root, "box").Single();
        Assert.Equal(y.Map(7.75), Svg.D(box, "y"), Pixel);
        Assert.Equal(y.Map(3.25), Svg.D(box, "y") + Svg.D(box, "height"), 2 * Pixel);
        var median = Svg.ByClass(root, "median").Single();
        Assert.Equal(y.Map(5.5), Svg.D(median, "y1"), Pixel);
        var outlier = Svg.ByClass(root, "outlier").Single();
        var tri = Svg.Points(outlier); // a triangle around the point
        Assert.InRange(y.Map(30), tri.Min(p => p.Y), tri.Max(p => p.Y));
        Assert.Equal(chart.Plot.XCat!.Centre(0), Svg.Centre(outlier).X, 0.02);
        Assert.Equal(10, Svg.ByClass(root, "point").Count);
    }

    [Fact]
    public void GroupDistributions_Ties_SpreadEvenlyWithoutRandomness()
    {
        var chart = StatCharts.GroupDistributions([new("A", [4, 4, 4])], Samples.Labels);
        var xs = Svg.ByClass(Svg.Parse(chart.ToSvg()), "point").Select(p => Svg.Centre(p).X).ToList();
        double cx = chart.Plot.XCat!.Centre(0);
        Assert.Equal(3, xs.Distinct().Count());
        Assert.Equal(cx, xs.Average(), 0.02); // symmetric about the centre
    }

    [Fact]
    public void NormalQuantilePlot_Points_AtBlomQuantiles()
    {
        // Blom (1958): p_i = (i − 3/8)/(n + 1/4). For n = 5: p_1 = 0.625/5.25 = 0.119048, Φ⁻¹ = −1.1798 (hand
        // computed; Φ(−1.18) = 0.1190 in a normal table); p_3 = 0.5, Φ⁻¹ = 0; p_5 = 4.625/5.25, Φ⁻¹ = +1.1798.
        double[] residuals = [0.5, -1.2, 2.0, 0.3, -0.1];
        var chart = StatCharts.NormalQuantilePlot(residuals, Samples.Labels);
        var x = chart.Plot.X!;
        var y = chart.Plot.Y!;
        var points = Svg.ByClass(Svg.Parse(chart.ToSvg()), "point").Select(Svg.Centre).OrderBy(p => p.X).ToList();
        Assert.Equal(5, points.Count);
        Assert.Equal(-1.1798, Normal.InvCDF(0, 1, 0.625 / 5.25), 3);
        Assert.Equal(x.Map(Normal.InvCDF(0, 1, 0.625 / 5.25)), points[0].X, Pixel);
        Assert.Equal(x.Map(-1.1798), points[0].X, 0.05);
        Assert.Equal(x.Map(0), points[2].X, Pixel);
        Assert.Equal(x.Map(1.1798), points[4].X, 0.05);
        // Sorted residuals on y.
        Assert.Equal(y.Map(-1.2), points[0].Y, Pixel);
        Assert.Equal(y.Map(0.3), points[2].Y, Pixel);
        Assert.Equal(y.Map(2.0), points[4].Y, Pixel);
    }

    [Fact]
    public void NormalQuantilePlot_Envelope_ContainsLineAndIsBetaBased()
    {
        // The i-th uniform order statistic is Beta(i, n − i + 1): its 2.5 % and 97.5 % quantiles through Φ⁻¹.
        double[] residuals = [0.5, -1.2, 2.0, 0.3, -0.1];
        var chart = StatCharts.NormalQuantilePlot(residuals, Samples.Labels);
        var env = Svg.Points(Svg.ByClass(Svg.Parse(chart.ToSvg()), "envelope").Single());
        Assert.Equal(10, env.Count);
        // Line through quartiles: Q1 = −0.1, Q3 = 0.5 (type 7), slope 0.6/(2·0.6745), intercept −0.1 + 0.3.
        double z = Normal.InvCDF(0, 1, 0.75);
        double slope = 0.6 / (2 * z), intercept = -0.1 + (slope * z);
        double upper1 = intercept + (slope * Normal.InvCDF(0, 1, Beta.InvCDF(1, 5, 0.975)));
        Assert.Equal(chart.Plot.Y!.Map(upper1), env[0].Y, Pixel);
    }

    [Fact]
    public void FDistribution_RejectionRegion_StartsAtCriticalValuePixel()
    {
        // F(0.05; 2, 12) = 3.89 in published F tables.
        var chart = StatCharts.FDistribution(2, 12, 5.1, 0.05, Samples.Labels);
        double crit = FisherSnedecor.InvCDF(2, 12, 0.95);
        Assert.Equal(3.89, crit, 2);
        var region = Svg.Points(Svg.ByClass(Svg.Parse(chart.ToSvg()), "rejection-region").Single());
        Assert.Equal(chart.Plot.X!.Map(crit), region.Min(p => p.X), Pixel);
        Assert.Equal(chart.Plot.X!.Map(chart.Plot.X!.Max), region.Max(p => p.X), Pixel);
        var observed = Svg.ByClass(Svg.Parse(chart.ToSvg()), "observed").Single();
        Assert.Equal(chart.Plot.X!.Map(5.1), Svg.D(observed, "x1"), Pixel);
    }

    [Fact]
    public void FDistribution_LargeDenominatorDf_DrawsTheCurve()
    {
        // A one-way study with 3,975 rows in 3 groups tests F(2, 3972). The density's product form
        // overflowed there and the chart showed an empty axis. With d1 = 2 the density is
        // (1 + 2f/d2)^−(d2/2 + 1) (exact hand computation), so its peak is 1 at f = 0.
        var chart = StatCharts.FDistribution(2, 3972, 4.7, 0.05, Samples.Labels);
        Assert.Equal(0, chart.Plot.Y!.Min);
        Assert.InRange(chart.Plot.Y!.Max, 1, 1.25);
        var curve = Svg.Points(Svg.ByClass(Svg.Parse(chart.ToSvg()), "density").Single());
        Assert.All(curve, p => Assert.True(double.IsFinite(p.Y)));
        double atThree = Math.Pow(1 + (2 * 3.0 / 3972), -(3972 / 2.0) - 1);
        var nearest = curve.MinBy(p => Math.Abs(chart.Plot.X!.Map(3.0) - p.X));
        Assert.Equal(chart.Plot.Y!.Map(atThree), nearest.Y, 2.0);
    }

    [Fact]
    public void FDistribution_HugeF_MarkedOffAxis()
    {
        var chart = StatCharts.FDistribution(3, 20, 512.7, 0.05, Samples.Labels);
        var root = Svg.Parse(chart.ToSvg());
        Assert.Single(Svg.ByClass(root, "observed-offaxis"));
        Assert.Empty(Svg.ByClass(root, "observed"));
        Assert.Contains("off the axis", Svg.ByClass(root, "observed-label").Single().Value, StringComparison.Ordinal);
        Assert.True(chart.Plot.X!.Max < 512.7);
    }

    [Fact]
    public void SimultaneousIntervals_Flagged_DrawnWithDifferentShapeAndDash()
    {
        var chart = Samples.All().Single(s => s.Name == "intervals").Make();
        var root = Svg.Parse(chart.ToSvg());
        var flagged = Svg.ByClass(root, "flagged").Where(e => e.Name.LocalName == "line").ToList();
        Assert.Equal(2, flagged.Count); // B − A (0.4..4.0) and C − B (−4.9..−1.3) exclude 0
        Assert.All(flagged, l => Assert.Null(l.Attribute("stroke-dasharray")));
        var plain = Svg.ByClass(root, "interval").Where(e => !Svg.ByClass(root, "flagged").Contains(e)).Single();
        Assert.NotNull(plain.Attribute("stroke-dasharray"));
        Assert.Equal("polygon", Svg.ByClass(root, "estimate").First(e => Svg.ByClass(root, "flagged").Contains(e)).Name.LocalName);
        var zero = Svg.ByClass(root, "zero-line").Single();
        Assert.Equal(chart.Plot.X!.Map(0), Svg.D(zero, "x1"), Pixel);
    }

    [Fact]
    public void EquivalenceIntervals_BandAtMargins_ZeroLine_VerdictByShapeAndDash()
    {
        // Exact hand computation: the band spans x(−1.5)..x(1.5); intervals drawn at their bounds.
        var chart = Samples.All().Single(s => s.Name == "equivalence").Make();
        var root = Svg.Parse(chart.ToSvg());
        var x = chart.Plot.X!;
        var band = Svg.ByClass(root, "margin-band").Single();
        Assert.Equal(x.Map(-1.5), Svg.D(band, "x"), Pixel);
        Assert.Equal(x.Map(1.5) - x.Map(-1.5), Svg.D(band, "width"), Pixel);
        var margins = Svg.ByClass(root, "margin-line").Select(l => Svg.D(l, "x1")).OrderBy(v => v).ToList();
        Assert.Equal([x.Map(-1.5), x.Map(1.5)], margins, (a, b) => Math.Abs(a - b) < Pixel);
        Assert.Equal(x.Map(0), Svg.D(Svg.ByClass(root, "zero-line").Single(), "x1"), Pixel);
        var shown = Svg.ByClass(root, "shown").Where(e => e.Name.LocalName == "line").Single();
        Assert.Null(shown.Attribute("stroke-dasharray"));
        Assert.Equal(x.Map(-0.5), Svg.D(shown, "x1"), Pixel);
        Assert.Equal(x.Map(1.1), Svg.D(shown, "x2"), Pixel);
        var other = Svg.ByClass(root, "interval").Single(e => !Svg.ByClass(root, "shown").Contains(e));
        Assert.NotNull(other.Attribute("stroke-dasharray"));
        Assert.Equal(x.Map(2.3), Svg.D(other, "x2"), Pixel);
    }

    [Fact]
    public void EquivalenceIntervals_OneMargin_BandOpenToThePlotEdge()
    {
        // Non-inferiority (higher is better): the band runs from −1 to the right edge of the plot.
        var chart = StatCharts.EquivalenceIntervals([new("B − A", 0.2, -0.4, 0.8, true)], -1, null, "90% intervals", Samples.Labels);
        var band = Svg.ByClass(Svg.Parse(chart.ToSvg()), "margin-band").Single();
        Assert.Equal(chart.Plot.X!.Map(-1), Svg.D(band, "x"), Pixel);
        Assert.Equal(chart.Plot.Right, Svg.D(band, "x") + Svg.D(band, "width"), Pixel);
        Assert.Single(Svg.ByClass(Svg.Parse(chart.ToSvg()), "margin-line"));
    }

    [Fact]
    public void GroupMeans_ErrorBars_AtIntervalBounds()
    {
        var chart = StatCharts.GroupMeans([new("A", 5, 3.9, 6.1)], "95 %", Samples.Labels);
        var ci = Svg.ByClass(Svg.Parse(chart.ToSvg()), "ci").Single();
        Assert.Equal(chart.Plot.Y!.Map(3.9), Svg.D(ci, "y1"), Pixel);
        Assert.Equal(chart.Plot.Y!.Map(6.1), Svg.D(ci, "y2"), Pixel);
    }

    [Fact]
    public void PowerCurve_TargetLine_AtTargetPower()
    {
        var chart = Samples.All().Single(s => s.Name == "power").Make();
        var line = Svg.ByClass(Svg.Parse(chart.ToSvg()), "target-line").Single();
        Assert.Equal(chart.Plot.Y!.Map(0.8), Svg.D(line, "y1"), Pixel);
    }

    [Fact]
    public void SubjectProfiles_OneThinLinePerSubject_MeanAndIntervalsAtValues()
    {
        // Exact hand computation: the profiles are drawn at their values; the mean profile and its bounds as given.
        SubjectProfile[] profiles = [new("s1", "g1", [1, 2, 3]), new("s2", "g1", [2, 3, 5]), new("s3", "g2", [0, 4, 4])];
        ProfilePoint[] mean = [new(1, 0.5, 1.5), new(3, 2, 4), new(4, 3, 5)];
        var chart = StatCharts.SubjectProfiles(["t1", "t2", "t3"], profiles, "group", mean, "95%", Samples.Labels);
        var root = Svg.Parse(chart.ToSvg());
        var lines = Svg.ByClass(root, "subject").Where(e => e.Name.LocalName == "polyline").ToList();
        Assert.Equal(3, lines.Count);
        var s2 = Svg.Points(lines[1]);
        Assert.Equal(chart.Plot.Y!.Map(5), s2[2].Y, Pixel);
        Assert.Equal(chart.Plot.XCat!.Centre(2), s2[2].X, Pixel);
        var profile = Svg.Points(Svg.ByClass(root, "mean-profile").Single());
        Assert.Equal(chart.Plot.Y!.Map(3), profile[1].Y, Pixel);
        var ci = Svg.ByClass(root, "ci");
        Assert.Equal(3, ci.Count);
        Assert.Equal(chart.Plot.Y!.Map(2), Svg.D(ci[1], "y1"), Pixel);
        Assert.Equal(chart.Plot.Y!.Map(4), Svg.D(ci[1], "y2"), Pixel);
    }

    [Fact]
    public void SubjectProfiles_ProfileOfWrongLength_IsRefused()
    {
        Assert.Throws<ArgumentException>(() => StatCharts.SubjectProfiles(["t1", "t2"], [new("s1", string.Empty, [1])], string.Empty, [new(1, 1, 1), new(2, 2, 2)], "95%", Samples.Labels));
    }
}
