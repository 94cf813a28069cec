using System.Globalization;
using System.Text;
using StudyPress.Charts.Axes;
using StudyPress.Charts.Rendering;

namespace StudyPress.Charts;

public static partial class StatCharts
{
    /// <summary>
    /// Equivalence intervals: a shaded band between the margins (class <c>margin-band</c>; a missing
    /// margin leaves that side of the band open to the plot's edge, as for non-inferiority), a
    /// dashed line at each given margin (<c>margin-line</c>) and a thin line at zero
    /// (<c>zero-line</c>); one horizontal interval per comparison in input order with its estimate.
    /// Comparisons shown within the margin are drawn solid with a filled diamond; the others dashed
    /// with an open circle, so the verdict does not rest on colour. <paramref name="confidenceText"/>
    /// titles the legend, e.g. "90% intervals". When <paramref name="size"/> is null the height grows
    /// with the number of rows.
    /// </summary>
    public static Chart EquivalenceIntervals(IReadOnlyList<EquivalenceInterval> comparisons, double? marginLow, double? marginHigh, string confidenceText,
        ChartLabels labels, ChartSize? size = null)
    {
        ArgumentNullException.ThrowIfNull(comparisons);
        ArgumentNullException.ThrowIfNull(confidenceText);
        if (marginLow is null && marginHigh is null)
        {
            throw new ArgumentException("At least one margin is needed.");
        }

        ChartMath.RequireFinite([marginLow ?? 0, marginHigh ?? 0], "Margins");
        if (marginLow is { } ml && marginHigh is { } mh && !(ml < mh))
        {
            throw new ArgumentException("The lower margin must be below the upper margin.");
        }

        foreach (var c in comparisons)
        {
            ArgumentNullException.ThrowIfNull(c);
            ChartMath.RequireFinite([c.Difference, c.Lower, c.Upper], "Differences and interval bounds");
            if (c.Lower > c.Upper)
            {
                throw new ArgumentException("An interval's lower bound exceeds its upper bound.");
            }
        }

        size ??= new ChartSize(ChartSize.Default.Width, Math.Max(ChartSize.Default.Height, 90 + (22 * comparisons.Count)));
        var span = comparisons.SelectMany(c => new[] { c.Lower, c.Upper, c.Difference }).ToList();
        if (marginLow is { } lo)
        {
            span.Add(lo);
        }

        if (marginHigh is { } hi)
        {
            span.Add(hi);
        }

        var x = LinearScale.Containing(span, includeZero: true);
        var yCat = new CategoryScale(comparisons.Select(c => c.Pair).ToList());
        var shownPaint = Paint.StrokeOnly(Palette.BluishGreen, 2.6);
        var otherPaint = Paint.StrokeOnly(Palette.Vermillion, 1.4, [4, 2]);
        var bandPaint = Paint.FillOnly(Palette.SkyBlue, 0.25);
        var legend = new List<LegendEntry>
        {
            new("Within the margin", shownPaint, MarkerShape.Diamond, Palette.BluishGreen, true),
            new("Not shown within", otherPaint, MarkerShape.Circle, Palette.Vermillion, false),
        };
        var plot = new Plot(labels, size, x, null, null, yCat, legend, confidenceText);
        var left = marginLow is { } l ? x.Map(l) : plot.Left;
        var right = marginHigh is { } h ? x.Map(h) : plot.Right;
        plot.Add(new RectEl(left, plot.Top, right - left, plot.Bottom - plot.Top, bandPaint, "margin-band"));
        foreach (var m in new[] { marginLow, marginHigh })
        {
            if (m is { } v)
            {
                plot.Add(new LineEl(new(x.Map(v), plot.Top), new(x.Map(v), plot.Bottom), Paint.StrokeOnly(Palette.Blue, 1.2, [6, 3]), "margin-line"));
            }
        }

        plot.Add(new LineEl(new(x.Map(0), plot.Top), new(x.Map(0), plot.Bottom), Paint.StrokeOnly(Palette.Ink, 1), "zero-line"));
        var desc = new StringBuilder();
        var shownCount = comparisons.Count(c => c.Shown);
        desc.Append(confidenceText).Append(" for ").Append(comparisons.Count.ToString(CultureInfo.InvariantCulture))
            .Append(" comparisons against the margin ")
            .Append(marginLow is { } a ? labels.Numbers.General(a) : "(none)").Append(" to ").Append(marginHigh is { } b ? labels.Numbers.General(b) : "(none)")
            .Append("; ").Append(shownCount.ToString(CultureInfo.InvariantCulture)).Append(" shown within it.");
        for (var i = 0; i < comparisons.Count; i++)
        {
            var c = comparisons[i];
            var cy = yCat.Centre(i);
            var paint = c.Shown ? shownPaint : otherPaint;
            var capPaint = paint with { Dash = null };
            var summary = string.Concat(BidiText.Isolate(c.Pair), ": difference ", labels.Numbers.General(c.Difference), ", interval ", labels.Numbers.General(c.Lower), " to ",
                labels.Numbers.General(c.Upper), c.Shown ? ", within the margin." : ", not shown within the margin.");
            desc.Append(' ').Append(summary);
            plot.Add(new GroupEl(
            [
                new LineEl(new(x.Map(c.Lower), cy), new(x.Map(c.Upper), cy), paint, c.Shown ? "interval shown" : "interval"),
                new LineEl(new(x.Map(c.Lower), cy - 4), new(x.Map(c.Lower), cy + 4), capPaint, "interval-cap"),
                new LineEl(new(x.Map(c.Upper), cy - 4), new(x.Map(c.Upper), cy + 4), capPaint, "interval-cap"),
                c.Shown
                    ? Palette.Marker(MarkerShape.Diamond, new(x.Map(c.Difference), cy), 4.5, Palette.BluishGreen, true, "estimate shown")
                    : Palette.Marker(MarkerShape.Circle, new(x.Map(c.Difference), cy), 3.5, Palette.Vermillion, false, "estimate"),
            ], c.Shown ? "comparison shown" : "comparison", summary));
        }

        return plot.ToChart(desc.ToString());
    }
}
