using System.Globalization;
using System.Runtime.CompilerServices;
using StudyPress.Binding.Kinds;
using StudyPress.Binding;
using StudyPress.Diagnostics;
using StudyPress.Evaluation.Kinds;
using StudyPress.Evaluation;
using StudyPress.Rendering;
using StudyPress.Statistics.Nonparametric;
using StudyPress.Statistics.PostHoc;
using StudyPress.Statistics;

namespace StudyPress.Rendering.Kinds;

/// <summary>Writes the HTML of <c>posthoc</c> blocks.</summary>
public sealed class PostHocRenderer : KindRenderer
{
    /// <summary>Registers this part of the kind (see DEVELOPERS.md, "Adding an analysis kind").</summary>
    [ModuleInitializer]
    internal static void Register() => KindRenderers.Register(new PostHocRenderer());

    public override string Kind => "posthoc";

    public override void Render(HtmlWriter html, BlockOutcome outcome, RenderContext context)
    {
        var o = (PostHocOutcome)outcome;
        if (o.Families.Count == 0)
        {
            return;
        }

        var level = context.ConfidenceText + "%";
        foreach (var f in o.Families)
        {
            var hasCi = f.Pairs.Count > 0 && f.Pairs[0].Values.ContainsKey("ci_low");
            var statName = f.Test switch
            {
                "tukey_hsd" or "games_howell" => "q",
                "dunn" => "z",
                _ => "t",
            };
            List<string> headers = ["Pair", f.Test == "dunn" ? "difference in mean rank" : "difference", "SE", statName];
            if (hasCi)
            {
                headers.Add($"simultaneous {level} interval");
            }

            headers.Add("adjusted p");
            headers.Add("at α = " + context.AlphaText);
            var caption = (o.Block.Caption ?? f.Title) + " of " + o.FactorLabel;
            var table = new HtmlTable("pairs", caption, headers);
            foreach (var (pair, v) in f.Pairs)
            {
                var cells = new List<string> { HtmlWriter.ValueHtml(v[Stat.Diff], context), HtmlWriter.ValueHtml(v[Stat.Se], context), HtmlWriter.ValueHtml(v[Stat.Statistic], context) };
                if (hasCi)
                {
                    cells.Add(HtmlWriter.ValueHtml(v[Stat.CiLow], context) + " to " + HtmlWriter.ValueHtml(v[Stat.CiHigh], context));
                }

                cells.Add(HtmlWriter.ValueHtml(v[Stat.PAdj], context));
                cells.Add(pair.PAdjusted.IsDefined ? (pair.PAdjusted.Value < context.Alpha ? "differ" : "not distinguished") : "not defined");
                table.Row(StudyPress.Charts.BidiText.Isolate(pair.LevelA) + " − " + StudyPress.Charts.BidiText.Isolate(pair.LevelB), cells);
            }

            table.WriteTo(html);
        }

        html.Raw("<p class=\"method\">").Text("Differences are first level minus second")
            .Text(o.Transformed ? ", on the transformed scale of the anova block" : string.Empty)
            .Text(". Adjusted p-values and intervals hold the family-wise error rate at α = " + context.AlphaText + " over the comparisons shown; without adjustment, ")
            .Raw(HtmlWriter.ValueHtml(o.Multiplicity[Stat.M], context))
            .Text(" tests at α = " + context.AlphaText + " would carry a chance of at least one false positive of up to ")
            .Raw(HtmlWriter.ValueHtml(o.Multiplicity[Stat.FwerUnadjusted], context))
            .Text(" (1 − (1 − α)^m, for independent tests).").Raw("</p>");
        html.Raw("<div class=\"reading\">");
        foreach (var d in o.Decisions)
        {
            html.Raw("<p class=\"decision\">").Text(d).Raw("</p>");
        }

        var main = o.Families[0];
        var differ = main.Pairs.Count(p => p.Pair.PAdjusted.IsDefined && p.Pair.PAdjusted.Value < context.Alpha);
        html.Raw("<p>").Text(string.Create(CultureInfo.InvariantCulture, $"{differ} of {main.Pairs.Count} comparison(s) differ at the family-wise level α = {context.AlphaText}. \"Not distinguished\" means the data cannot tell those levels apart at this level, not that they are equal; the intervals show how large a difference remains compatible with the data.")).Raw("</p>");
        html.Raw("</div>");
    }
}
