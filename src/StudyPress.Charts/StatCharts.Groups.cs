using System.Text;
using StudyPress.Charts.Axes;
using StudyPress.Charts.Rendering;

namespace StudyPress.Charts;

/// <summary>
/// The charts of a statistics report. Every method takes plain records, validates them
/// (null or non-finite input is a programming error: <see cref="ArgumentException"/>), and returns a
/// <see cref="Chart"/> whose SVG and PNG are deterministic. Axis ranges always include every
/// value plotted (nothing is clipped silently).
/// </summary>
public static partial class StatCharts
{
    private const double PointRadius = 2.6;

    /// <summary>
    /// A Tukey box plot per group (Tukey 1977: quartiles by linear interpolation, Hyndman–Fan type 7;
    /// whiskers to the most extreme data within 1.5 IQR of the box; outliers beyond drawn as
    /// triangles) with every observation drawn over it, spread horizontally by rank among points
    /// that would overlap (deterministic, no randomness). Empty groups keep their label.
    /// </summary>
    public static Chart GroupDistributions(IReadOnlyList<GroupSample> groups, ChartLabels labels, ChartSize? size = null)
    {
        ArgumentNullException.ThrowIfNull(groups);
        foreach (var g in groups)
        {
            ArgumentNullException.ThrowIfNull(g);
            ArgumentNullException.ThrowIfNull(g.Values);
            ChartMath.RequireFinite(g.Values, "Group values");
        }

        var y = LinearScale.Containing(groups.SelectMany(g => g.Values));
        var x = new CategoryScale([.. groups.Select(g => g.Label)], [.. groups.Select(g => g.Inner)], [.. groups.Select(g => g.Outer)]);
        // The legend names the two point markers; the outlier entry only when a group has one.
        bool anyOutlier = groups.Any(g => g.Values.Count > 0 && ChartMath.Box(g.Values.OrderBy(v => v).ToList()).Outliers.Count > 0);
        var legend = new List<LegendEntry> { new("Observation", null, MarkerShape.Circle, Palette.Blue) };
        if (anyOutlier)
        {
            legend.Add(new("Beyond 1.5 IQR", null, MarkerShape.Triangle, Palette.Vermillion));
        }

        var plot = new Plot(labels, size, null, x, y, null, legend);
        var desc = new StringBuilder();
        desc.Append("Box plot with all observations of ").Append(Subject(labels)).Append(" for ").Append(groups.Count)
            .Append(groups.Count == 1 ? " group." : " groups.");
        double band = Math.Abs(x.Band);
        double boxWidth = Math.Min(band * 0.55, 70);
        string colour = Palette.Blue;
        for (int i = 0; i < groups.Count; i++)
        {
            var sorted = groups[i].Values.OrderBy(v => v).ToList();
            double cx = x.Centre(i);
            if (sorted.Count == 0)
            {
                desc.Append(' ').Append(BidiText.Isolate(groups[i].Label)).Append(": no observations.");
                continue;
            }

            var b = ChartMath.Box(sorted);
            var els = new List<Element>();
            var ink = Paint.StrokeOnly(Palette.Ink, 1.2);
            double cap = boxWidth * 0.3;
            els.Add(new LineEl(new(cx, y.Map(b.LowerWhisker)), new(cx, y.Map(b.Q1)), ink, "whisker whisker-lower"));
            els.Add(new LineEl(new(cx, y.Map(b.Q3)), new(cx, y.Map(b.UpperWhisker)), ink, "whisker whisker-upper"));
            els.Add(new LineEl(new(cx - cap, y.Map(b.LowerWhisker)), new(cx + cap, y.Map(b.LowerWhisker)), ink, "whisker-cap"));
            els.Add(new LineEl(new(cx - cap, y.Map(b.UpperWhisker)), new(cx + cap, y.Map(b.UpperWhisker)), ink, "whisker-cap"));
            double top = y.Map(b.Q3), bottom = y.Map(b.Q1);
            els.Add(new RectEl(cx - (boxWidth / 2), top, boxWidth, bottom - top, new Paint(Palette.Ink, colour, 1.2, null, 0.15), "box"));
            els.Add(new LineEl(new(cx - (boxWidth / 2), y.Map(b.Median)), new(cx + (boxWidth / 2), y.Map(b.Median)),
                Paint.StrokeOnly(Palette.Ink, 2.4), "median"));

            var values = groups[i].Values;
            var pixels = values.Select(y.Map).ToList();
            var dx = ChartMath.Spread(pixels, PointRadius, Math.Max(boxWidth / 2 - PointRadius, 0));
            double loFence = b.Q1 - (1.5 * (b.Q3 - b.Q1)), hiFence = b.Q3 + (1.5 * (b.Q3 - b.Q1));
            for (int k = 0; k < values.Count; k++)
            {
                bool outlier = values[k] < loFence || values[k] > hiFence;
                var at = new Pt(cx + dx[k], pixels[k]);
                els.Add(outlier
                    ? Palette.Marker(MarkerShape.Triangle, at, PointRadius + 0.8, Palette.Vermillion, true, "point outlier")
                    : Palette.Marker(MarkerShape.Circle, at, PointRadius, colour, true, "point"));
            }

            string summary = string.Concat(BidiText.Isolate(groups[i].Label), ": n = ", sorted.Count.ToString(System.Globalization.CultureInfo.InvariantCulture),
                ", median ", labels.Numbers.General(b.Median), ", quartiles ", labels.Numbers.General(b.Q1), " to ", labels.Numbers.General(b.Q3),
                ", whiskers ", labels.Numbers.General(b.LowerWhisker), " to ", labels.Numbers.General(b.UpperWhisker),
                b.Outliers.Count == 0 ? "" : ", outliers " + string.Join(", ", b.Outliers.Select(labels.Numbers.General)), ".");
            desc.Append(' ').Append(summary);
            plot.Add(new GroupEl(els, "group", summary));
        }

        return plot.ToChart(desc.ToString());
    }

    /// <summary>
    /// Group means (filled circles) with confidence-interval error bars from Lower to Upper;
    /// <paramref name="confidenceLevel"/> is the text shown in the legend, e.g. "95 %".
    /// </summary>
    public static Chart GroupMeans(IReadOnlyList<GroupMean> means, string confidenceLevel, ChartLabels labels, ChartSize? size = null)
    {
        ArgumentNullException.ThrowIfNull(means);
        ArgumentNullException.ThrowIfNull(confidenceLevel);
        foreach (var m in means)
        {
            ArgumentNullException.ThrowIfNull(m);
            ChartMath.RequireFinite([m.Mean, m.Lower, m.Upper], "Means and interval bounds");
            if (m.Lower > m.Upper)
            {
                throw new ArgumentException("An interval's lower bound exceeds its upper bound.");
            }
        }

        var y = LinearScale.Containing(means.SelectMany(m => new[] { m.Mean, m.Lower, m.Upper }));
        var x = new CategoryScale([.. means.Select(m => m.Label)], [.. means.Select(m => m.Inner)], [.. means.Select(m => m.Outer)]);
        string ciText = confidenceLevel + " confidence interval";
        var legend = new List<LegendEntry>
        {
            new("Mean", null, MarkerShape.Circle, Palette.Blue),
            new(ciText, Paint.StrokeOnly(Palette.Ink, 1.4), null, Palette.Ink),
        };
        var plot = new Plot(labels, size, null, x, y, null, legend);
        var desc = new StringBuilder();
        desc.Append("Means of ").Append(Subject(labels)).Append(" with ").Append(ciText).Append("s for ")
            .Append(means.Count).Append(means.Count == 1 ? " group." : " groups.");
        double cap = Math.Min(Math.Abs(x.Band) * 0.2, 10);
        for (int i = 0; i < means.Count; i++)
        {
            var m = means[i];
            double cx = x.Centre(i);
            var ink = Paint.StrokeOnly(Palette.Ink, 1.4);
            string summary = string.Concat(BidiText.Isolate(m.Label), ": mean ", labels.Numbers.General(m.Mean), ", interval ", labels.Numbers.General(m.Lower),
                " to ", labels.Numbers.General(m.Upper), ".");
            plot.Add(new GroupEl(
            [
                new LineEl(new(cx, y.Map(m.Lower)), new(cx, y.Map(m.Upper)), ink, "ci"),
                new LineEl(new(cx - cap, y.Map(m.Lower)), new(cx + cap, y.Map(m.Lower)), ink, "ci-cap"),
                new LineEl(new(cx - cap, y.Map(m.Upper)), new(cx + cap, y.Map(m.Upper)), ink, "ci-cap"),
                Palette.Marker(MarkerShape.Circle, new(cx, y.Map(m.Mean)), 4, Palette.Blue, true, "mean"),
            ], "group", summary));
            desc.Append(' ').Append(summary);
        }

        return plot.ToChart(desc.ToString());
    }

    /// <summary>
    /// Interaction plot: cell means with the levels of factor A along x (in <paramref name="levelsA"/>
    /// order) and one line per level of factor B (<paramref name="levelsB"/> order), each with its own
    /// colour, marker and dash pattern; a missing cell breaks its line. The legend is titled
    /// <paramref name="factorB"/>.
    /// </summary>
    public static Chart InteractionPlot(IReadOnlyList<string> levelsA, IReadOnlyList<string> levelsB, IReadOnlyList<CellMean> cells,
        string factorB, ChartLabels labels, ChartSize? size = null)
    {
        ArgumentNullException.ThrowIfNull(levelsA);
        ArgumentNullException.ThrowIfNull(levelsB);
        ArgumentNullException.ThrowIfNull(cells);
        ArgumentNullException.ThrowIfNull(factorB);
        var lookup = new Dictionary<(string, string), double>();
        foreach (var c in cells)
        {
            ArgumentNullException.ThrowIfNull(c);
            ChartMath.RequireFinite([c.Mean], "Cell means");
            if (!levelsA.Contains(c.LevelA, StringComparer.Ordinal) || !levelsB.Contains(c.LevelB, StringComparer.Ordinal))
            {
                throw new ArgumentException("A cell names a level that is not in the level lists.");
            }

            if (!lookup.TryAdd((c.LevelA, c.LevelB), c.Mean))
            {
                throw new ArgumentException("A cell is given twice.");
            }
        }

        var y = LinearScale.Containing(cells.Select(c => c.Mean));
        var x = new CategoryScale(levelsA);
        var legend = levelsB.Select((b, j) => new LegendEntry(b,
            Paint.StrokeOnly(Palette.Colour(j), 1.8, Palette.Dash(j)), Palette.Shape(j), Palette.Colour(j))).ToList();
        var plot = new Plot(labels, size, null, x, y, null, legend, factorB);
        var desc = new StringBuilder();
        desc.Append("Interaction plot: mean ").Append(Subject(labels)).Append(" for each level of ")
            .Append(labels.XAxis.Length > 0 ? BidiText.Isolate(labels.XAxis) : "the first factor").Append(", one line per level of ").Append(BidiText.Isolate(factorB)).Append('.');
        double dodge = Math.Min(3, Math.Abs(x.Band) * 0.05);
        for (int j = 0; j < levelsB.Count; j++)
        {
            var els = new List<Element>();
            var line = new List<Pt>();
            var parts = new List<string>();
            double shift = (j - ((levelsB.Count - 1) / 2.0)) * dodge;
            var stroke = Paint.StrokeOnly(Palette.Colour(j), 1.8, Palette.Dash(j));
            for (int i = 0; i < levelsA.Count; i++)
            {
                if (lookup.TryGetValue((levelsA[i], levelsB[j]), out double mean))
                {
                    line.Add(new(x.Centre(i) + shift, y.Map(mean)));
                    parts.Add(BidiText.Isolate(levelsA[i]) + " " + labels.Numbers.General(mean));
                }
                else
                {
                    if (line.Count > 1)
                    {
                        els.Add(new PolylineEl(line, stroke, "line"));
                    }

                    line = [];
                    parts.Add(BidiText.Isolate(levelsA[i]) + " no data");
                }

                if (line.Count > 0 && i == levelsA.Count - 1 && line.Count > 1)
                {
                    els.Add(new PolylineEl(line, stroke, "line"));
                }
            }

            foreach (var c in cells.Where(c => string.Equals(c.LevelB, levelsB[j], StringComparison.Ordinal)))
            {
                int i = IndexOf(levelsA, c.LevelA);
                els.Add(Palette.Marker(Palette.Shape(j), new(x.Centre(i) + shift, y.Map(c.Mean)), 3.5, Palette.Colour(j), true, "cell-mean"));
            }

            string summary = BidiText.Isolate(levelsB[j]) + ": " + string.Join(", ", parts) + ".";
            desc.Append(' ').Append(summary);
            plot.Add(new GroupEl(els, "series", summary));
        }

        return plot.ToChart(desc.ToString());
    }

    private static int IndexOf(IReadOnlyList<string> list, string value)
    {
        for (int i = 0; i < list.Count; i++)
        {
            if (string.Equals(list[i], value, StringComparison.Ordinal))
            {
                return i;
            }
        }

        return -1;
    }

    private static string Subject(ChartLabels labels) => labels.YAxis.Length > 0 ? BidiText.Isolate(labels.YAxis) : "the response";
}
