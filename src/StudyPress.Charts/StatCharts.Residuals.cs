using System.Globalization;
using System.Text;
using MathNet.Numerics.Distributions;
using StudyPress.Charts.Axes;
using StudyPress.Charts.Rendering;

namespace StudyPress.Charts;

public static partial class StatCharts
{
    /// <summary>
    /// Normal quantile plot: the sorted residuals against standard normal quantiles at Blom's
    /// positions (i − 3/8)/(n + 1/4) (Blom 1958); a reference line through the quartiles (sample
    /// type-7 quartiles against ±Φ⁻¹(0.75)); a pointwise <paramref name="confidence"/> envelope: the
    /// i-th uniform order statistic is Beta(i, n − i + 1), its (1 ± confidence)/2 quantiles mapped
    /// through Φ⁻¹ and the line. Needs at least one residual; the line and envelope need two.
    /// </summary>
    public static Chart NormalQuantilePlot(IReadOnlyList<double> residuals, ChartLabels labels, double confidence = 0.95,
        ChartSize? size = null)
    {
        ArgumentNullException.ThrowIfNull(residuals);
        ChartMath.RequireFinite(residuals, "Residuals");
        if (residuals.Count == 0)
        {
            throw new ArgumentException("A normal quantile plot needs at least one residual.");
        }

        if (!(confidence > 0 && confidence < 1))
        {
            throw new ArgumentOutOfRangeException(nameof(confidence), "The confidence must lie in (0, 1).");
        }

        var sorted = residuals.OrderBy(v => v).ToList();
        int n = sorted.Count;
        var q = Enumerable.Range(1, n).Select(i => ChartMath.BlomQuantile(i, n)).ToArray();
        bool hasLine = n >= 2;
        double slope = 0, intercept = sorted[0];
        var lower = new double[n];
        var upper = new double[n];
        if (hasLine)
        {
            double z = Normal.InvCDF(0, 1, 0.75);
            double q1 = ChartMath.Quantile7(sorted, 0.25), q3 = ChartMath.Quantile7(sorted, 0.75);
            slope = (q3 - q1) / (2 * z);
            intercept = q1 + (slope * z);
            for (int i = 0; i < n; i++)
            {
                var (lo, hi) = ChartMath.OrderStatisticBand(i + 1, n, 1 - confidence);
                lower[i] = intercept + (slope * lo);
                upper[i] = intercept + (slope * hi);
            }
        }

        var x = LinearScale.Containing(q);
        var yValues = sorted.Concat(hasLine ? lower.Concat(upper) : []).ToList();
        if (hasLine)
        {
            yValues.Add(intercept + (slope * x.Min));
            yValues.Add(intercept + (slope * x.Max));
        }

        var y = LinearScale.Containing(yValues);
        string confText = (confidence * 100).ToString("0.##", CultureInfo.InvariantCulture) + "% pointwise envelope";
        var legend = new List<LegendEntry> { new("Residual", null, MarkerShape.Circle, Palette.Blue) };
        if (hasLine)
        {
            legend.Add(new("Line through quartiles", Paint.StrokeOnly(Palette.Vermillion, 1.5, [6, 3]), null, Palette.Vermillion));
            legend.Add(new(confText, null, null, Palette.Muted, Swatch: Paint.FillOnly(Palette.Muted, 0.25)));
        }

        var plot = new Plot(labels, size, x, null, y, null, legend);
        int outside = 0;
        if (hasLine)
        {
            var band = new List<Pt>();
            for (int i = 0; i < n; i++)
            {
                band.Add(new(x.Map(q[i]), y.Map(upper[i])));
            }

            for (int i = n - 1; i >= 0; i--)
            {
                band.Add(new(x.Map(q[i]), y.Map(lower[i])));
            }

            plot.Add(new PolygonEl(band, Paint.FillOnly(Palette.Muted, 0.25), "envelope"));
            plot.Add(new LineEl(new(x.Map(x.Min), y.Map(intercept + (slope * x.Min))), new(x.Map(x.Max), y.Map(intercept + (slope * x.Max))),
                Paint.StrokeOnly(Palette.Vermillion, 1.5, [6, 3]), "reference-line"));
            outside = Enumerable.Range(0, n).Count(i => sorted[i] < lower[i] || sorted[i] > upper[i]);
        }

        var points = new List<Element>();
        for (int i = 0; i < n; i++)
        {
            points.Add(Palette.Marker(MarkerShape.Circle, new(x.Map(q[i]), y.Map(sorted[i])), PointRadius, Palette.Blue, true, "point"));
        }

        plot.Add(new GroupEl(points, "points"));
        var desc = new StringBuilder();
        desc.Append("Normal quantile plot of ").Append(n.ToString(CultureInfo.InvariantCulture))
            .Append(" residuals against standard normal quantiles (Blom positions).");
        if (hasLine)
        {
            desc.Append(" Reference line through the quartiles: intercept ").Append(labels.Numbers.General(intercept)).Append(", slope ")
                .Append(labels.Numbers.General(slope)).Append(". ").Append(outside.ToString(CultureInfo.InvariantCulture))
                .Append(" of ").Append(n.ToString(CultureInfo.InvariantCulture)).Append(" points lie outside the ").Append(confText).Append('.');
        }

        desc.Append(" Smallest residual ").Append(labels.Numbers.General(sorted[0])).Append(", largest ").Append(labels.Numbers.General(sorted[n - 1])).Append('.');
        return plot.ToChart(desc.ToString());
    }

    /// <summary>
    /// Histogram of the residuals (bins by Freedman &amp; Diaconis 1981, Sturges when the IQR is 0),
    /// the fitted normal density (sample mean and SD) scaled to counts (n · bin width · φ), and a
    /// Gaussian kernel density with Silverman's (1986) rule-of-thumb bandwidth, also scaled to counts.
    /// </summary>
    public static Chart ResidualHistogram(IReadOnlyList<double> residuals, ChartLabels labels, ChartSize? size = null)
    {
        ArgumentNullException.ThrowIfNull(residuals);
        ChartMath.RequireFinite(residuals, "Residuals");
        if (residuals.Count == 0)
        {
            throw new ArgumentException("A histogram needs at least one residual.");
        }

        var sorted = residuals.OrderBy(v => v).ToList();
        int n = sorted.Count;
        var bins = ChartMath.Histogram(sorted);
        double end = bins.Start + (bins.Width * bins.Counts.Count);
        double mean = ChartMath.Mean(sorted), sd = ChartMath.StandardDeviation(sorted);
        double h = ChartMath.SilvermanBandwidth(sorted);
        var x = LinearScale.Containing([bins.Start, end, sorted[0] - (2 * h), sorted[n - 1] + (2 * h)]);
        const int Grid = 161;
        var gx = Enumerable.Range(0, Grid).Select(k => x.Min + ((x.Max - x.Min) * k / (Grid - 1))).ToArray();
        double scale = n * bins.Width;
        double[]? normal = sd > 0 ? gx.Select(v => scale * Normal.PDF(mean, sd, v)).ToArray() : null;
        double[]? kde = h > 0 ? gx.Select(v => scale * ChartMath.Kde(sorted, h, v)).ToArray() : null;
        double top = bins.Counts.Max();
        top = Math.Max(top, normal?.Max() ?? 0);
        top = Math.Max(top, kde?.Max() ?? 0);
        var y = LinearScale.FromBounds(0, top);

        var legend = new List<LegendEntry>
        {
            new("Residuals (n = " + n.ToString(CultureInfo.InvariantCulture) + ")", null, null, Palette.SkyBlue,
                Swatch: new Paint(Palette.Ink, Palette.SkyBlue, 0.8, null, 0.6)),
        };
        if (normal is not null)
        {
            legend.Add(new("Normal density", Paint.StrokeOnly(Palette.Vermillion, 1.8, [6, 3]), null, Palette.Vermillion));
        }

        if (kde is not null)
        {
            legend.Add(new("Kernel density", Paint.StrokeOnly(Palette.Blue, 1.8), null, Palette.Blue));
        }

        var plot = new Plot(labels, size, x, null, y, null, legend);
        var bars = new List<Element>();
        for (int b = 0; b < bins.Counts.Count; b++)
        {
            double x0 = x.Map(bins.Start + (b * bins.Width)), x1 = x.Map(bins.Start + ((b + 1) * bins.Width));
            double y1 = y.Map(bins.Counts[b]), y0 = y.Map(0);
            bars.Add(new RectEl(x0, y1, x1 - x0, y0 - y1, new Paint(Palette.Ink, Palette.SkyBlue, 0.8, null, 0.6), "bar"));
        }

        plot.Add(new GroupEl(bars, "bars"));
        if (normal is not null)
        {
            plot.Add(new PolylineEl(gx.Select((v, k) => new Pt(x.Map(v), y.Map(normal[k]))).ToList(),
                Paint.StrokeOnly(Palette.Vermillion, 1.8, [6, 3]), "normal-density"));
        }

        if (kde is not null)
        {
            plot.Add(new PolylineEl(gx.Select((v, k) => new Pt(x.Map(v), y.Map(kde[k]))).ToList(),
                Paint.StrokeOnly(Palette.Blue, 1.8), "kernel-density"));
        }

        var desc = new StringBuilder();
        desc.Append("Histogram of ").Append(n.ToString(CultureInfo.InvariantCulture)).Append(" residuals in ")
            .Append(bins.Counts.Count.ToString(CultureInfo.InvariantCulture)).Append(" bins of width ").Append(labels.Numbers.General(bins.Width))
            .Append(" (").Append(bins.Rule).Append(") from ").Append(labels.Numbers.General(bins.Start)).Append(" to ").Append(labels.Numbers.General(end))
            .Append("; counts ").Append(string.Join(", ", bins.Counts.Select(c => c.ToString(CultureInfo.InvariantCulture)))).Append('.');
        if (normal is not null)
        {
            desc.Append(" Fitted normal density: mean ").Append(labels.Numbers.General(mean)).Append(", SD ").Append(labels.Numbers.General(sd)).Append('.');
        }

        if (kde is not null)
        {
            desc.Append(" Kernel density: Gaussian kernel, bandwidth ").Append(labels.Numbers.General(h)).Append(" (Silverman's rule).");
        }

        return plot.ToChart(desc.ToString());
    }

    /// <summary>Residuals against fitted values with a dashed line at zero.</summary>
    public static Chart ResidualsVersusFitted(IReadOnlyList<double> fitted, IReadOnlyList<double> residuals, ChartLabels labels,
        ChartSize? size = null)
    {
        ArgumentNullException.ThrowIfNull(fitted);
        ArgumentNullException.ThrowIfNull(residuals);
        if (fitted.Count != residuals.Count)
        {
            throw new ArgumentException("Fitted values and residuals differ in length.");
        }

        ChartMath.RequireFinite(fitted, "Fitted values");
        ChartMath.RequireFinite(residuals, "Residuals");
        var x = LinearScale.Containing(fitted);
        var y = LinearScale.Containing(residuals, includeZero: true);
        var plot = new Plot(labels, size, x, null, y, null);
        plot.Add(new LineEl(new(plot.Left, y.Map(0)), new(plot.Right, y.Map(0)), Paint.StrokeOnly(Palette.Vermillion, 1.4, [6, 3]), "zero-line"));
        var points = new List<Element>();
        for (int i = 0; i < fitted.Count; i++)
        {
            points.Add(Palette.Marker(MarkerShape.Circle, new(x.Map(fitted[i]), y.Map(residuals[i])), PointRadius, Palette.Blue, true, "point"));
        }

        plot.Add(new GroupEl(points, "points"));
        string desc = fitted.Count == 0
            ? "Residuals against fitted values: no data."
            : string.Concat("Residuals against fitted values for ", fitted.Count.ToString(CultureInfo.InvariantCulture),
                " observations, with a line at zero. Fitted values ", labels.Numbers.General(fitted.Min()), " to ", labels.Numbers.General(fitted.Max()),
                "; residuals ", labels.Numbers.General(residuals.Min()), " to ", labels.Numbers.General(residuals.Max()), ".");
        return plot.ToChart(desc);
    }
}
