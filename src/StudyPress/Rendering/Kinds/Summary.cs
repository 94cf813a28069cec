using StudyPress.Charts;
using System.Globalization;
using System.Runtime.CompilerServices;
using StudyPress.Binding.Kinds;
using StudyPress.Binding;
using StudyPress.Diagnostics;
using StudyPress.Evaluation.Kinds;
using StudyPress.Evaluation;
using StudyPress.Rendering;
using StudyPress.Statistics.Descriptive;

namespace StudyPress.Rendering.Kinds;

/// <summary>Writes the HTML of <c>summary</c> blocks.</summary>
public sealed class SummaryRenderer : KindRenderer
{
    /// <summary>Registers this part of the kind (see DEVELOPERS.md, "Adding an analysis kind").</summary>
    [ModuleInitializer]
    internal static void Register() => KindRenderers.Register(new SummaryRenderer());

    public override string Kind => "summary";

    public override IEnumerable<string> Warnings(BlockOutcome outcome, RenderContext context)
    {
        if (outcome is not SummaryOutcome o)
        {
            yield break;
        }

        // In group order: groups of one (on the cells route, any group under two), then groups
        // whose every response is missing (rows route: n = 0).
        foreach (var (label, n, values) in o.Groups)
        {
            if (o.Route == AnovaRoute.Cells ? n < 2 : n == 1)
            {
                yield return $"Group '{label}' has a single observation: its spread and interval are not defined.";
            }
            else if (n == 0)
            {
                var count = (long)values[Stat.Missing].Value.Value;
                yield return string.Create(CultureInfo.InvariantCulture, $"Group '{label}' has no observations: {(count == 1 ? "its one response is" : $"every one of its {count} responses is")} missing, so it is left out of the analyses of these data.");
            }
        }

        var small = o.Groups.Where(g => g.N is >= 2 and < 5).Select(g => g.Label).ToList();
        if (small.Count > 0)
        {
            yield return $"Groups with fewer than 5 observations ({string.Join(", ", small.Select(StudyPress.Charts.BidiText.Isolate))}): their means and intervals are imprecise, and quartiles of so few values say little.";
        }
    }

    public override IEnumerable<string> Notes(BlockOutcome outcome, RenderContext context)
    {
        if (outcome is not SummaryOutcome { Groups.Count: > 0 } o)
        {
            yield break;
        }

        if (o.Route == AnovaRoute.Cells)
        {
            yield return o.DatabaseQuantiles
                ? "n, mean, SD, SE and the interval were computed from per-cell counts, means and sums of squares computed by the database (aggregate: true); median, quartiles, min and max by the database over each group's rows (quantile_cont or percentile_cont, linear interpolation). The box plot was not drawn: the rows were not loaded."
                : "n, mean, SD, SE and the interval were computed from per-cell counts, means and sums of squares computed by the database (aggregate: true); min and max by the database over each group's rows. SQLite computes no quantiles, so the median and quartiles are not defined. The box plot was not drawn: the rows were not loaded.";
        }

        if (o.DroppedMissing > 0)
        {
            yield return string.Create(CultureInfo.InvariantCulture, $"{NumberText.Count(o.DroppedMissing, "row")} with a missing value {(o.DroppedMissing == 1 ? "was" : "were")} left out.");
        }
    }

    /// <summary>The summaries' sentence in a methods paragraph (written once, however many summary blocks).</summary>
    public override IEnumerable<string> Methods(MethodsPart part, MethodsSection? section, BlockOutcome outcome, MethodsWriter w) =>
        part == MethodsPart.Descriptives && w.Has("design")
            ? [w.Brief
                ? w.Did("descriptive statistics by group", true, "computed", "computed", "compute", ".")
                : w.Did("descriptive statistics by group (n, mean, SD, standard error, confidence interval of the mean, median, quartiles and range)", true, "computed", "computed", "compute", ".")]
            : [];

    public override void Render(HtmlWriter html, BlockOutcome outcome, RenderContext context)
    {
        var o = (SummaryOutcome)outcome;
        if (o.Groups.Count == 0)
        {
            return;
        }

        // In the order the box plot reads: counts, the median and quartiles the box draws, the range the
        // whiskers and points reach; then the mean and its spread and interval.
        string[] headers = ["Group", "n", "missing", "median", "Q1 – Q3", "min – max", "mean", "SD", "SE", context.ConfidenceText + "% CI of mean"];
        var caption = o.Block.Caption ?? $"Summary of {o.ResponseLabel}" + (o.Term.Length > 0 ? $" by {o.Term.Replace(":", " and ", StringComparison.Ordinal)}" : string.Empty);
        var table = new HtmlTable("summary", caption, headers);
        foreach (var (label, _, values) in o.Groups)
        {
            string V(string stat) => HtmlWriter.ValueHtml(values[stat], context);
            table.Row(label, [V(Stat.N), V(Stat.Missing), V(Stat.Median), V(Stat.Q1) + " – " + V(Stat.Q3), V(Stat.Min) + " – " + V(Stat.Max), V(Stat.Mean), V(Stat.Sd), V(Stat.Se), V(Stat.CiLow) + " – " + V(Stat.CiHigh)]);
        }

        table.WriteTo(html);
        html.Raw("<p class=\"method\">").Text($"SD with divisor n − 1; SE = SD/√n; the interval is mean ± t × SE on n − 1 df; quartiles by linear interpolation between order statistics.").Raw("</p>");
    }

    /// <inheritdoc/>
    public override IReadOnlyList<string> PhrasedTests => ["summary"];

    /// <inheritdoc/>
    public override string? ResultSentence(ResultValue member, IReadOnlyDictionary<string, ResultValue> group, ResultSet all, double alpha, out string? why)
    {
        why = null;
        if (group.GetValueOrDefault("mean") is not { } m || group.GetValueOrDefault("sd") is not { } sd || group.GetValueOrDefault("n") is not { } n)
        {
            return null;
        }

        var text = $"mean = {ReportStyle.Number(m)}, SD = {ReportStyle.Number(sd)}, n = {ReportStyle.Number(n)}";
        if (group.GetValueOrDefault("ci_low") is { } sl && group.GetValueOrDefault("ci_high") is { } sh)
        {
            text += $", {Sentences.ConfidenceText(alpha)}% CI [{ReportStyle.Number(sl)}, {ReportStyle.Number(sh)}]";
        }

        return text;
    }
}
