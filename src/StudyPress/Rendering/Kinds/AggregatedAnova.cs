using System.Globalization;
using StudyPress.Binding;
using StudyPress.Data.Sources;
using StudyPress.Diagnostics;
using StudyPress.Evaluation;
using StudyPress.Rendering;
using StudyPress.Statistics;
using StudyPress.Statistics.Anova;
using StudyPress.Evaluation.Kinds;

namespace StudyPress.Rendering.Kinds;

/// <summary>The HTML of an ANOVA computed from the database's per-cell statistics (aggregate: true).</summary>
public static class AggregatedAnovaRenderer
{
    public static void Render(HtmlWriter html, AggregatedAnovaOutcome o, RenderContext context)
    {
        if (o.Result is null)
        {
            return;
        }

        var caption = o.Block.Caption ?? $"Analysis of variance of {o.Block.Response}";
        var table = new HtmlTable("anova", caption, ["Source", "SS", "df", "MS", "F", "p"]);
        foreach (var (term, v) in o.Terms)
        {
            table.Row(Label(term, o), [V(v, "ss"), V(v, "df"), V(v, "ms"), V(v, "f"), V(v, "p")]);
        }

        table.Row("Residual", [V(o.Residual, "ss"), V(o.Residual, "df"), V(o.Residual, "ms"), string.Empty, string.Empty]);
        table.Row("Total", [V(o.Total, "ss"), V(o.Total, "df"), string.Empty, string.Empty, string.Empty], "total");
        table.WriteTo(html);
        if (o.Terms.Count > 1)
        {
            html.Raw("<p class=\"method\">").Text(AnovaRenderer.SsTypeText(o.Result.SsType)).Raw("</p>");
        }

        var effects = new HtmlTable("effects", "Rejection threshold and effect sizes", ["Term", "F threshold (α = " + context.AlphaText + ")", "η²", "partial η²", "ω²", "Cohen's f"]);
        foreach (var (term, v) in o.Terms)
        {
            effects.Row(Label(term, o), [V(v, "f_crit"), V(v, "eta2"), V(v, "partial_eta2"), V(v, "omega2"), V(v, "cohen_f")]);
        }

        effects.WriteTo(html);
        var factorial = o.Factors.Count > 1;
        var means = new HtmlTable("means", "Level means", ["Level", "n", "Mean"]);
        foreach (var (factor, level, v) in o.Means)
        {
            var label = factorial ? StudyPress.Charts.BidiText.Isolate(o.Factors.First(f => f.Name == factor).Display) + ": " + StudyPress.Charts.BidiText.Isolate(level) : level;
            means.Row(label, [V(v, "n"), V(v, "mean")]);
        }

        means.WriteTo(html);
        if (o.Welch is { } w)
        {
            var welch = new HtmlTable("welch", "Welch's test (unequal variances allowed)", ["Source", "F", "df1", "df2", "p"]);
            welch.Row(Label(o.Terms[0].Term, o), [V(w, "f"), V(w, "df1"), V(w, "df2"), V(w, "p")]);
            welch.WriteTo(html);
        }

        if (o.Bartlett is { } b)
        {
            var bt = new HtmlTable("bartlett", "Bartlett's test of equal variances (from the cell variances)", ["Source", "χ²", "df", "p"]);
            bt.Row(Label(o.Terms[0].Term, o), [V(b, "statistic"), V(b, "df"), V(b, "p")]);
            bt.WriteTo(html);
        }

        html.Raw("<div class=\"reading\">");
        foreach (var d in o.Decisions)
        {
            html.Raw("<p class=\"decision\">").Text(d).Raw("</p>");
        }

        foreach (var (term, v) in o.Terms)
        {
            var label = HtmlWriter.Escape(Label(term, o));
            if (!term.F.IsDefined || !term.P.IsDefined)
            {
                html.Raw("<p>").Raw($"{label}: the F test is not defined here ({HtmlWriter.Escape(term.F.Reason ?? term.P.Reason)}).").Raw("</p>");
                continue;
            }

            var stat = $"F({V(v, "df")}, {V(o.Residual, "df")}) = {V(v, "f")}, p {AnovaRenderer.PText(v[Stat.P], context)}";
            var verdict = term.P.Value < context.Alpha ? "rejects" : "does not reject";
            html.Raw("<p>").Raw($"{label}: at α = {context.AlphaText} the test {verdict} the hypothesis of no effect ({stat}).").Raw("</p>");
        }

        html.Raw("</div>");
        string V(Dictionary<string, ResultValue> values, string stat) => HtmlWriter.ValueHtml(values[stat], context);
    }

    private static string Label(AnovaTerm term, AggregatedAnovaOutcome o) =>
        string.Join(" × ", term.Factors.Select(n => o.Factors.First(f => f.Name == n).Display));
}
