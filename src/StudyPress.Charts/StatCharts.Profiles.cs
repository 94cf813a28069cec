using System.Text;
using StudyPress.Charts.Axes;
using StudyPress.Charts.Rendering;

namespace StudyPress.Charts;

public static partial class StatCharts
{
    /// <summary>
    /// Subject profiles ("spaghetti"): one thin line per subject across the levels of a
    /// within-subject factor (coloured by its group when <paramref name="groupTitle"/> is not empty),
    /// and over them the mean profile, thick, with its interval at each level.
    /// </summary>
    public static Chart SubjectProfiles(IReadOnlyList<string> levels, IReadOnlyList<SubjectProfile> profiles, string groupTitle,
        IReadOnlyList<ProfilePoint> mean, string confidenceLevel, ChartLabels labels, ChartSize? size = null)
    {
        ArgumentNullException.ThrowIfNull(levels);
        ArgumentNullException.ThrowIfNull(profiles);
        ArgumentNullException.ThrowIfNull(groupTitle);
        ArgumentNullException.ThrowIfNull(mean);
        if (mean.Count != levels.Count || profiles.Any(p => p.Values.Count != levels.Count))
        {
            throw new ArgumentException("Every profile and the mean need one value per level.");
        }

        foreach (var p in profiles)
        {
            ChartMath.RequireFinite(p.Values, "Subject values");
        }

        foreach (var m in mean)
        {
            ChartMath.RequireFinite([m.Mean, m.Lower, m.Upper], "Mean profile and interval bounds");
        }

        var groups = groupTitle.Length == 0 ? new List<string>() : profiles.Select(p => p.Group).Distinct(StringComparer.Ordinal).ToList();
        var y = LinearScale.Containing(profiles.SelectMany(p => p.Values).Concat(mean.SelectMany(m => new[] { m.Mean, m.Lower, m.Upper })));
        var x = new CategoryScale(levels);
        var legend = new List<LegendEntry>();
        for (int g = 0; g < groups.Count; g++)
        {
            legend.Add(new LegendEntry(groups[g], Paint.StrokeOnly(Palette.Colour(g), 0.8, Palette.Dash(g)), null, Palette.Colour(g)));
        }

        legend.Add(new LegendEntry("Mean, " + confidenceLevel + " interval", Paint.StrokeOnly(Palette.Ink, 2.4), MarkerShape.Circle, Palette.Ink));
        var plot = new Plot(labels, size, null, x, y, null, legend, groups.Count > 0 ? groupTitle : null);
        var desc = new StringBuilder();
        desc.Append("Profiles of ").Append(Subject(labels)).Append(": ").Append(profiles.Count).Append(profiles.Count == 1 ? " subject" : " subjects")
            .Append(" across ").Append(levels.Count).Append(" levels");
        if (groups.Count > 0)
        {
            desc.Append(", coloured by ").Append(BidiText.Isolate(groupTitle));
        }

        desc.Append('.');
        foreach (var p in profiles)
        {
            int g = groups.Count > 0 ? groups.IndexOf(p.Group) : 0;
            var stroke = groups.Count > 0 ? Paint.StrokeOnly(Palette.Colour(g), 0.8, Palette.Dash(g)) : Paint.StrokeOnly(Palette.Muted, 0.8);
            var pts = p.Values.Select((v, i) => new Pt(x.Centre(i), y.Map(v))).ToList();
            plot.Add(new GroupEl([new PolylineEl(pts, stroke, "subject")], "subject", BidiText.Isolate(p.Subject)));
        }

        var ink = Paint.StrokeOnly(Palette.Ink, 2.4);
        var thin = Paint.StrokeOnly(Palette.Ink, 1.4);
        double cap = Math.Min(Math.Abs(x.Band) * 0.12, 8);
        var els = new List<Element> { new PolylineEl([.. mean.Select((m, i) => new Pt(x.Centre(i), y.Map(m.Mean)))], ink, "mean-profile") };
        var parts = new List<string>();
        for (int i = 0; i < levels.Count; i++)
        {
            double cx = x.Centre(i);
            var m = mean[i];
            els.Add(new LineEl(new(cx, y.Map(m.Lower)), new(cx, y.Map(m.Upper)), thin, "ci"));
            els.Add(new LineEl(new(cx - cap, y.Map(m.Lower)), new(cx + cap, y.Map(m.Lower)), thin, "ci-cap"));
            els.Add(new LineEl(new(cx - cap, y.Map(m.Upper)), new(cx + cap, y.Map(m.Upper)), thin, "ci-cap"));
            els.Add(Palette.Marker(MarkerShape.Circle, new(cx, y.Map(m.Mean)), 3.5, Palette.Ink, true, "mean"));
            parts.Add(string.Concat(BidiText.Isolate(levels[i]), " ", labels.Numbers.General(m.Mean), " (", labels.Numbers.General(m.Lower), " to ", labels.Numbers.General(m.Upper), ")"));
        }

        string summary = "Mean profile: " + string.Join(", ", parts) + ".";
        desc.Append(' ').Append(summary);
        plot.Add(new GroupEl(els, "mean", summary));
        return plot.ToChart(desc.ToString());
    }
}
