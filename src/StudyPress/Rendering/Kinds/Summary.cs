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

    /// <summary>The summaries' sentence in a methods paragraph (written once, however many summary blocks).</summary>
    public override IEnumerable<string> Methods(MethodsPart part, MethodsSection? section, BlockOutcome outcome, MethodsWriter w) =>
        part == MethodsPart.Descriptives && w.Has("design")
            ? [w.Did("descriptive statistics by group (n, mean, SD, standard error, confidence interval of the mean, median, quartiles and range)", true, "computed", "computed", "compute", ".")]
            : [];

    public override void Render(HtmlWriter html, BlockOutcome outcome, RenderContext context)
    {
        var o = (SummaryOutcome)outcome;
        if (o.Groups.Count == 0)
        {
            return;
        }

        string[] headers = ["Group", "n", "missing", "mean", "SD", "SE", context.ConfidenceText + "% CI of mean", "median", "Q1 – Q3", "min – max"];
        var caption = o.Block.Caption ?? $"Summary of {o.ResponseName}" + (o.Term.Length > 0 ? $" by {o.Term.Replace(":", " and ", StringComparison.Ordinal)}" : string.Empty);
        var table = new HtmlTable("summary", caption, headers);
        foreach (var (label, _, values) in o.Groups)
        {
            string V(string stat) => HtmlWriter.ValueHtml(values[stat], context);
            table.Row(label, [V(Stat.N), V(Stat.Missing), V(Stat.Mean), V(Stat.Sd), V(Stat.Se), V(Stat.CiLow) + " – " + V(Stat.CiHigh), V(Stat.Median), V(Stat.Q1) + " – " + V(Stat.Q3), V(Stat.Min) + " – " + V(Stat.Max)]);
        }

        table.WriteTo(html);
        html.Raw("<p class=\"method\">").Text($"SD with divisor n − 1; SE = SD/√n; the interval is mean ± t × SE on n − 1 df; quartiles by linear interpolation between order statistics.").Raw("</p>");
    }
}
