using System.Globalization;
using System.Text;
using StudyPress.Charts.Axes;
using StudyPress.Charts.Rendering;
using StudyPress.Statistics;

namespace StudyPress.Charts;

public static partial class StatCharts
{
    /// <summary>
    /// Density of F(<paramref name="df1"/>, <paramref name="df2"/>) with the rejection region at
    /// <paramref name="alpha"/> shaded from the critical value to the right edge, and the observed F
    /// as a vertical line with its label. The axis runs from 0 to at least 1.5 × the critical value
    /// and includes the observed F, unless that lies beyond 3 times that; then the F is drawn as an
    /// arrow at the right edge with a label saying it lies off the axis. The vertical axis reaches the
    /// curve's highest point; a density that is unbounded at 0 (df1 &lt; 2) is drawn from 1 % of the
    /// axis onwards, so its highest drawn point is still on the axis.
    /// </summary>
    public static Chart FDistribution(double df1, double df2, double observedF, double alpha, ChartLabels labels, ChartSize? size = null)
    {
        if (!(df1 > 0) || !(df2 > 0) || !double.IsFinite(df1) || !double.IsFinite(df2))
        {
            throw new ArgumentOutOfRangeException(nameof(df1), "Degrees of freedom must be positive and finite.");
        }

        if (!(alpha > 0 && alpha < 1))
        {
            throw new ArgumentOutOfRangeException(nameof(alpha), "Alpha must lie in (0, 1).");
        }

        if (!(observedF >= 0) || !double.IsFinite(observedF))
        {
            throw new ArgumentOutOfRangeException(nameof(observedF), "The observed F must be finite and non-negative.");
        }

        double crit = Probability.FCritical(alpha, df1, df2);
        double baseMax = Math.Max(crit * 1.5, 3);
        bool offAxis = observedF > 3 * baseMax;
        double wanted = offAxis ? baseMax : Math.Max(baseMax, observedF * 1.1);
        var x = LinearScale.FromBounds(0, wanted);
        const int Grid = 241;
        var gx = Enumerable.Range(0, Grid).Select(k => x.Min + ((x.Max - x.Min) * k / (Grid - 1))).ToArray();
        double Pdf(double v) => Probability.FDensity(Math.Max(v, 0), df1, df2);
        // The curve is drawn over the whole axis, except that a density unbounded at 0 (df1 < 2)
        // starts at 1 % of the axis; the vertical axis reaches the highest point drawn.
        var drawn = gx.Where(v => df1 >= 2 || v >= x.Max / 100).ToArray();
        double top = drawn.Select(Pdf).Where(double.IsFinite).DefaultIfEmpty(1).Max();
        var y = LinearScale.FromBounds(0, top);
        double Clamp(double d) => double.IsFinite(d) ? Math.Min(d, y.Max) : y.Max;

        var critPaint = Paint.StrokeOnly(Palette.Ink, 1.2, [4, 3]);
        var legend = new List<LegendEntry>
        {
            new("Rejection region", null, null, Palette.Vermillion, Swatch: Paint.FillOnly(Palette.Vermillion, 0.35)),
            new("Rejection threshold", critPaint, null, Palette.Ink),
            new("Observed F", Paint.StrokeOnly(Palette.Blue, 2), null, Palette.Blue),
        };
        var plot = new Plot(labels, size, x, null, y, null, legend);

        var region = new List<Pt> { new(x.Map(crit), y.Map(0)) };
        region.Add(new(x.Map(crit), y.Map(Clamp(Pdf(crit)))));
        region.AddRange(gx.Where(v => v > crit).Select(v => new Pt(x.Map(v), y.Map(Clamp(Pdf(v))))));
        region.Add(new(x.Map(x.Max), y.Map(0)));
        plot.Add(new PolygonEl(region, Paint.FillOnly(Palette.Vermillion, 0.35), "rejection-region"));
        plot.Add(new PolylineEl(drawn.Select(v => new Pt(x.Map(v), y.Map(Clamp(Pdf(v))))).ToList(),
            Paint.StrokeOnly(Palette.Ink, 1.6), "density"));

        string critText = "rejected from F = " + labels.Numbers.General(crit);
        plot.Add(new LineEl(new(x.Map(crit), plot.Top), new(x.Map(crit), plot.Bottom), critPaint, "critical"));
        plot.Add(new TextEl(new(x.Map(crit) + 4, plot.Top + 12), critText, Plot.TickSize, Palette.Ink, Class: "critical-label"));

        double p = Probability.FUpper(observedF, df1, df2);
        string fText = "F = " + labels.Numbers.General(observedF);
        if (offAxis)
        {
            double ax = plot.Right, ay = plot.Top + 34;
            plot.Add(new PolygonEl([new(ax, ay), new(ax - 10, ay - 6), new(ax - 10, ay + 6)], new Paint(Palette.Blue, Palette.Blue, 1), "observed-offaxis"));
            plot.Add(new TextEl(new(ax - 13, ay + 4), fText + " (off the axis)", Plot.TickSize, Palette.Blue, Anchor.End, Class: "observed-label"));
        }
        else
        {
            double ox = x.Map(observedF);
            plot.Add(new LineEl(new(ox, plot.Top + 18), new(ox, plot.Bottom), Paint.StrokeOnly(Palette.Blue, 2), "observed"));
            bool nearRight = ox > (plot.Left + plot.Right) / 2;
            plot.Add(new TextEl(new(nearRight ? ox - 4 : ox + 4, plot.Top + 30), fText, Plot.TickSize, Palette.Blue,
                nearRight ? Anchor.End : Anchor.Start, Class: "observed-label"));
        }

        // "p < 0.001" for a p below the smallest shown, never "p = < 0.001".
        string pText = labels.Numbers.P(p);
        string desc = string.Concat("Density of the F distribution with ", labels.Numbers.General(df1), " and ", labels.Numbers.General(df2),
            " degrees of freedom. Rejection region at alpha ", labels.Numbers.Level(alpha), ": F above ", labels.Numbers.General(crit),
            ". Observed ", fText, ", upper-tail p", pText.StartsWith('<') ? " " : " = ", pText, offAxis ? "; it lies beyond the right end of the axis." : ".");
        return plot.ToChart(desc);
    }

    /// <summary>
    /// Power against the per-group sample size, with the target power as a dashed horizontal line
    /// and, when given, <paramref name="marked"/> (e.g. the smallest n reaching the target) as a
    /// labelled diamond. Power axis 0 to 1.
    /// </summary>
    public static Chart PowerCurve(IReadOnlyList<PowerPoint> curve, double targetPower, PowerPoint? marked, ChartLabels labels,
        ChartSize? size = null)
    {
        ArgumentNullException.ThrowIfNull(curve);
        foreach (var pt in curve)
        {
            ArgumentNullException.ThrowIfNull(pt);
        }

        var all = marked is null ? curve : curve.Append(marked).ToList();
        ChartMath.RequireFinite(all.Select(pt => pt.Power).Append(targetPower), "Power values");
        if (all.Any(pt => pt.Power < 0 || pt.Power > 1) || targetPower < 0 || targetPower > 1)
        {
            throw new ArgumentException("Power values must lie in [0, 1].");
        }

        var ordered = curve.OrderBy(pt => pt.PerGroupN).ToList();
        var x = LinearScale.Containing(all.Select(pt => (double)pt.PerGroupN));
        var y = LinearScale.FromBounds(0, 1);
        var linePaint = Paint.StrokeOnly(Palette.Blue, 2);
        var targetPaint = Paint.StrokeOnly(Palette.Vermillion, 1.4, [6, 3]);
        var legend = new List<LegendEntry>
        {
            new("Power", linePaint, MarkerShape.Circle, Palette.Blue),
            new("Target " + labels.Numbers.General(targetPower), targetPaint, null, Palette.Vermillion),
        };
        if (marked is not null)
        {
            legend.Add(new("n = " + marked.PerGroupN.ToString(CultureInfo.InvariantCulture), null, MarkerShape.Diamond, Palette.Black));
        }

        var plot = new Plot(labels, size, x, null, y, null, legend);
        plot.Add(new LineEl(new(plot.Left, y.Map(targetPower)), new(plot.Right, y.Map(targetPower)), targetPaint, "target-line"));
        if (ordered.Count > 1)
        {
            plot.Add(new PolylineEl(ordered.Select(pt => new Pt(x.Map(pt.PerGroupN), y.Map(pt.Power))).ToList(), linePaint, "power-curve"));
        }

        if (ordered.Count <= 40)
        {
            plot.Add(new GroupEl(ordered.Select(pt => Palette.Marker(MarkerShape.Circle, new(x.Map(pt.PerGroupN), y.Map(pt.Power)), 2.5,
                Palette.Blue, true, "point")).ToList(), "points"));
        }

        string markedText = "";
        if (marked is not null)
        {
            var at = new Pt(x.Map(marked.PerGroupN), y.Map(marked.Power));
            markedText = "n = " + marked.PerGroupN.ToString(CultureInfo.InvariantCulture) + ", power " + labels.Numbers.General(marked.Power);
            plot.Add(Palette.Marker(MarkerShape.Diamond, at, 5, Palette.Black, true, "marked"));
            // The label goes where it crosses neither the curve nor the target line: the first of
            // these places around the point (the power curve rises, so up-left and down-right of it
            // are usually clear) whose measured box stays inside the plot and clear of both.
            var curvePoints = ordered.Select(pt => new Pt(x.Map(pt.PerGroupN), y.Map(pt.Power))).ToList();
            var targetY = y.Map(targetPower);
            double width = ChartFont.MeasureWidth(markedText, Plot.TickSize);
            double fs = Plot.TickSize;
            (double X, double Baseline, Anchor Anchor)[] candidates =
            [
                (at.X - 8, at.Y - 8, Anchor.End),
                (at.X + 8, at.Y + fs + 6, Anchor.Start),
                (at.X - 8, at.Y - 8 - (2 * fs), Anchor.End),
                (at.X + 8, at.Y + (3 * fs) + 6, Anchor.Start),
                (at.X + 8, at.Y - 8, Anchor.Start),
                (at.X - 8, at.Y + fs + 6, Anchor.End),
            ];
            (double X, double Baseline, Anchor Anchor)? chosen = null;
            foreach (var c in candidates)
            {
                double left = c.Anchor == Anchor.End ? c.X - width : c.X;
                var box = (Left: left - 2, Top: c.Baseline - fs - 1, Right: left + width + 2, Bottom: c.Baseline + (fs * 0.3) + 1);
                bool inside = box.Left >= plot.Left && box.Right <= plot.Right && box.Top >= plot.Top && box.Bottom <= plot.Bottom;
                if (!inside)
                {
                    continue;
                }

                chosen ??= c;
                bool crossesTarget = targetY >= box.Top && targetY <= box.Bottom;
                if (!crossesTarget && !ChartMath.PolylineCrossesBox(curvePoints, box.Left, box.Top, box.Right, box.Bottom))
                {
                    chosen = c;
                    break;
                }
            }

            var (lx, ly, anchor) = chosen ?? candidates[0];
            plot.Add(new TextEl(new(lx, ly), markedText, Plot.TickSize, Palette.Ink, anchor, Class: "marked-label"));
        }

        string desc = ordered.Count == 0
            ? "Power curve: no points."
            : string.Concat("Power against sample size per group from n = ", ordered[0].PerGroupN.ToString(CultureInfo.InvariantCulture),
                " (power ", labels.Numbers.General(ordered[0].Power), ") to n = ", ordered[^1].PerGroupN.ToString(CultureInfo.InvariantCulture),
                " (power ", labels.Numbers.General(ordered[^1].Power), "). Target power ", labels.Numbers.General(targetPower), ".",
                marked is null ? "" : " Marked: " + markedText + ".");
        return plot.ToChart(desc);
    }

    /// <summary>
    /// One horizontal interval per comparison (rows in input order) with its estimate, and a dashed
    /// line at zero. Intervals that exclude zero are drawn thick and solid with a filled diamond;
    /// those covering zero thin and dashed with an open circle, so the flag does not rest on colour.
    /// <paramref name="confidenceText"/> titles the legend, e.g. "95 % simultaneous intervals". When
    /// <paramref name="size"/> is null the height grows with the number of rows.
    /// </summary>
    public static Chart SimultaneousIntervals(IReadOnlyList<IntervalComparison> comparisons, string confidenceText, ChartLabels labels,
        ChartSize? size = null)
    {
        ArgumentNullException.ThrowIfNull(comparisons);
        ArgumentNullException.ThrowIfNull(confidenceText);
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
        var x = LinearScale.Containing(comparisons.SelectMany(c => new[] { c.Lower, c.Upper, c.Difference }), includeZero: true);
        var yCat = new CategoryScale(comparisons.Select(c => c.Pair).ToList());
        var flaggedPaint = Paint.StrokeOnly(Palette.Vermillion, 2.6);
        var plainPaint = Paint.StrokeOnly(Palette.Blue, 1.4, [4, 2]);
        var legend = new List<LegendEntry>
        {
            new("Excludes 0", flaggedPaint, MarkerShape.Diamond, Palette.Vermillion, true),
            new("Covers 0", plainPaint, MarkerShape.Circle, Palette.Blue, false),
        };
        var plot = new Plot(labels, size, x, null, null, yCat, legend, confidenceText);
        plot.Add(new LineEl(new(x.Map(0), plot.Top), new(x.Map(0), plot.Bottom), Paint.StrokeOnly(Palette.Ink, 1.2, [6, 3]), "zero-line"));
        var desc = new StringBuilder();
        int flaggedCount = comparisons.Count(c => c.Lower > 0 || c.Upper < 0);
        desc.Append(confidenceText).Append(" for ").Append(comparisons.Count.ToString(CultureInfo.InvariantCulture))
            .Append(" comparisons; ").Append(flaggedCount.ToString(CultureInfo.InvariantCulture)).Append(" exclude zero.");
        for (int i = 0; i < comparisons.Count; i++)
        {
            var c = comparisons[i];
            bool flagged = c.Lower > 0 || c.Upper < 0;
            double cy = yCat.Centre(i);
            var paint = flagged ? flaggedPaint : plainPaint;
            var capPaint = paint with { Dash = null };
            string summary = string.Concat(BidiText.Isolate(c.Pair), ": difference ", labels.Numbers.General(c.Difference), ", interval ", labels.Numbers.General(c.Lower), " to ",
                labels.Numbers.General(c.Upper), flagged ? ", excludes 0." : ", covers 0.");
            desc.Append(' ').Append(summary);
            plot.Add(new GroupEl(
            [
                new LineEl(new(x.Map(c.Lower), cy), new(x.Map(c.Upper), cy), paint, flagged ? "interval flagged" : "interval"),
                new LineEl(new(x.Map(c.Lower), cy - 4), new(x.Map(c.Lower), cy + 4), capPaint, "interval-cap"),
                new LineEl(new(x.Map(c.Upper), cy - 4), new(x.Map(c.Upper), cy + 4), capPaint, "interval-cap"),
                flagged
                    ? Palette.Marker(MarkerShape.Diamond, new(x.Map(c.Difference), cy), 4.5, Palette.Vermillion, true, "estimate flagged")
                    : Palette.Marker(MarkerShape.Circle, new(x.Map(c.Difference), cy), 3.5, Palette.Blue, false, "estimate"),
            ], flagged ? "comparison flagged" : "comparison", summary));
        }

        return plot.ToChart(desc.ToString());
    }
}
