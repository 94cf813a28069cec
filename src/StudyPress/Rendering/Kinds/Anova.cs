using System.Globalization;
using System.Runtime.CompilerServices;
using StudyPress.Binding.Kinds;
using StudyPress.Binding;
using StudyPress.Diagnostics;
using StudyPress.Evaluation.Kinds;
using StudyPress.Evaluation;
using StudyPress.Rendering;
using StudyPress.Statistics.Anova;
using StudyPress.Statistics.Nonparametric;
using StudyPress.Statistics;

namespace StudyPress.Rendering.Kinds;

/// <summary>Writes the HTML of <c>anova</c> blocks.</summary>
public sealed class AnovaRenderer : KindRenderer
{
    /// <summary>Registers this part of the kind (see DEVELOPERS.md, "Adding an analysis kind").</summary>
    [ModuleInitializer]
    internal static void Register() => KindRenderers.Register(new AnovaRenderer());

    public override string Kind => "anova";

    public override void Render(HtmlWriter html, BlockOutcome outcome, RenderContext context)
    {
        var o = (AnovaOutcome)outcome;
        if (o.Route == AnovaRoute.Cells)
        {
            RenderCells(html, o, context);
            return;
        }

        if (o.Result is null || o.Data is null)
        {
            return;
        }

        var responseText = o.Transformed is null ? o.Data.ResponseName : TransformLabel(o) + " of " + o.Data.ResponseName;
        var caption = o.Block.Caption ?? $"Analysis of variance of {responseText}";
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
            html.Raw("<p class=\"method\">").Text(SsTypeText(o.Result.SsType)).Raw("</p>");
        }

        if (o.Transformed is { } tr)
        {
            html.Raw("<p class=\"method\">").Text(TransformText(tr)).Raw("</p>");
        }

        var effects = new HtmlTable("effects", "Rejection threshold and effect sizes", ["Term", "F threshold (α = " + context.AlphaText + ")", "η²", "partial η²", context.ConfidenceText + "% CI of partial η²", "ω²", "Cohen's f"]);
        foreach (var (term, v) in o.Terms)
        {
            effects.Row(Label(term, o), [V(v, "f_crit"), V(v, "eta2"), V(v, "partial_eta2"), V(v, "partial_eta2_ci_low") + " – " + V(v, "partial_eta2_ci_high"), V(v, "omega2"), V(v, "cohen_f")]);
        }

        effects.WriteTo(html);
        RenderMeans(html, o, context);

        if (o.Welch is { } w)
        {
            var welch = new HtmlTable("welch", "Welch's test (unequal variances allowed)", ["Source", "F", "df1", "df2", "p"]);
            welch.Row(Label(o.Terms[0].Term, o), [V(w, "f"), V(w, "df1"), V(w, "df2"), V(w, "p")]);
            welch.WriteTo(html);
        }

        if (o.Ranks is { } r)
        {
            var ranks = new HtmlTable("ranks", "Kruskal–Wallis rank test (normality not assumed)", ["Source", "H", "df", "p"]);
            ranks.Row(Label(o.Terms[0].Term, o), [V(r, "h"), V(r, "df"), V(r, "p")]);
            ranks.WriteTo(html);
        }

        html.Raw("<div class=\"reading\">");
        foreach (var d in o.Decisions)
        {
            html.Raw("<p class=\"decision\">").Text(d).Raw("</p>");
        }

        foreach (var (term, v) in o.Terms)
        {
            html.Raw("<p>").Raw(Interpret(term, v, o, context)).Raw("</p>");
        }

        html.Raw("</div>");
        string V(Dictionary<string, ResultValue> values, string stat) => HtmlWriter.ValueHtml(values[stat], context);
    }

    /// <summary>The cells route (aggregate: true): the table, effect sizes, level means, Welch and Bartlett from cell statistics.</summary>
    private static void RenderCells(HtmlWriter html, AnovaOutcome o, RenderContext context)
    {
        if (o.Fit is null)
        {
            return;
        }

        var caption = o.Block.Caption ?? $"Analysis of variance of {o.Block.Response}";
        var table = new HtmlTable("anova", caption, ["Source", "SS", "df", "MS", "F", "p"]);
        foreach (var (term, v) in o.Terms)
        {
            table.Row(CellsLabel(term, o), [V(v, "ss"), V(v, "df"), V(v, "ms"), V(v, "f"), V(v, "p")]);
        }

        table.Row("Residual", [V(o.Residual, "ss"), V(o.Residual, "df"), V(o.Residual, "ms"), string.Empty, string.Empty]);
        table.Row("Total", [V(o.Total, "ss"), V(o.Total, "df"), string.Empty, string.Empty, string.Empty], "total");
        table.WriteTo(html);
        if (o.Terms.Count > 1)
        {
            html.Raw("<p class=\"method\">").Text(SsTypeText(o.Fit.SsType)).Raw("</p>");
        }

        var effects = new HtmlTable("effects", "Rejection threshold and effect sizes", ["Term", "F threshold (α = " + context.AlphaText + ")", "η²", "partial η²", "ω²", "Cohen's f"]);
        foreach (var (term, v) in o.Terms)
        {
            effects.Row(CellsLabel(term, o), [V(v, "f_crit"), V(v, "eta2"), V(v, "partial_eta2"), V(v, "omega2"), V(v, "cohen_f")]);
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
            welch.Row(CellsLabel(o.Terms[0].Term, o), [V(w, "f"), V(w, "df1"), V(w, "df2"), V(w, "p")]);
            welch.WriteTo(html);
        }

        if (o.Bartlett is { } b)
        {
            var bt = new HtmlTable("bartlett", "Bartlett's test of equal variances (from the cell variances)", ["Source", "χ²", "df", "p"]);
            bt.Row(CellsLabel(o.Terms[0].Term, o), [V(b, "statistic"), V(b, "df"), V(b, "p")]);
            bt.WriteTo(html);
        }

        html.Raw("<div class=\"reading\">");
        foreach (var d in o.Decisions)
        {
            html.Raw("<p class=\"decision\">").Text(d).Raw("</p>");
        }

        foreach (var (term, v) in o.Terms)
        {
            var label = HtmlWriter.Escape(CellsLabel(term, o));
            if (!term.F.IsDefined || !term.P.IsDefined)
            {
                html.Raw("<p>").Raw($"{label}: the F test is not defined here ({HtmlWriter.Escape(term.F.Reason ?? term.P.Reason)}).").Raw("</p>");
                continue;
            }

            var stat = $"F({V(v, "df")}, {V(o.Residual, "df")}) = {V(v, "f")}, p {PText(v[Stat.P], context)}";
            var verdict = term.P.Value < context.Alpha ? "rejects" : "does not reject";
            html.Raw("<p>").Raw($"{label}: at α = {context.AlphaText} the test {verdict} the hypothesis of no effect ({stat}).").Raw("</p>");
        }

        html.Raw("</div>");
        string V(Dictionary<string, ResultValue> values, string stat) => HtmlWriter.ValueHtml(values[stat], context);
    }

    private static string CellsLabel(AnovaTerm term, AnovaOutcome o) =>
        string.Join(" × ", term.Factors.Select(n => o.Factors.First(f => f.Name == n).Display));

    private static void RenderMeans(HtmlWriter html, AnovaOutcome o, RenderContext context)
    {
        var factorial = o.Input!.Factors.Count > 1;
        var meanName = o.Transformed is null ? "Mean" : "Back-transformed mean";
        string[] headers = factorial ? ["Level", "n", meanName, "least-squares " + meanName.ToLowerInvariant()] : ["Level", "n", meanName];
        var table = new HtmlTable("means", "Level means" + (o.Transformed is null ? string.Empty : " (back-transformed to the original scale)"), headers);
        foreach (var (factor, level, v) in o.Means)
        {
            var label = factorial ? StudyPress.Charts.BidiText.Isolate(o.Data!.Factors.First(f => f.Spec.Name == factor).Spec.Display) + ": " + StudyPress.Charts.BidiText.Isolate(level) : level;
            List<string> cells = [HtmlWriter.ValueHtml(v[Stat.N], context), HtmlWriter.ValueHtml(v[Stat.Mean], context)];
            if (factorial)
            {
                cells.Add(HtmlWriter.ValueHtml(v[Stat.LsMean], context));
            }

            table.Row(label, cells);
        }

        table.WriteTo(html);
    }

    private static string TransformLabel(AnovaOutcome o) => ((AnovaKind.Options)o.Block.Options!).TransformName switch
    {
        "log" => "ln",
        "box-cox" => "Box–Cox transform",
        var n => n,
    };

    private static string TransformText(TransformedResponse t)
    {
        var what = t.Kind switch
        {
            TransformKind.Log => "natural logarithm, ln y",
            TransformKind.Log10 => "common logarithm, log10 y",
            TransformKind.Sqrt => "square root, √y",
            TransformKind.Reciprocal => "reciprocal, 1/y",
            _ => string.Create(CultureInfo.InvariantCulture, $"Box–Cox power (y^λ − 1)/λ with the maximum-likelihood λ = {t.BoxCox!.Lambda:0.###}")
                + (t.BoxCox!.LambdaLow.IsDefined && t.BoxCox.LambdaHigh.IsDefined
                    ? string.Create(CultureInfo.InvariantCulture, $" ({t.BoxCox.ConfidenceLevel * 100:0.#}% profile-likelihood interval {t.BoxCox.LambdaLow.Value:0.###} to {t.BoxCox.LambdaHigh.Value:0.###})")
                    : string.Empty)
                + (t.BoxCox.AtBound ? "; the maximum lies at the edge of the searched range [−3, 3], so the data may need a different treatment" : string.Empty),
        };
        return $"The response was transformed before the analysis ({what}). Sums of squares are on the transformed scale; the level means are shown back-transformed ({t.BackTransformedMean}).";
    }

    private static string Label(AnovaTerm term, AnovaOutcome o)
    {
        var names = term.Factors.Select(n => o.Data!.Factors.First(f => f.Spec.Name == n).Spec.Display);
        return string.Join(" × ", names);
    }

    internal static string SsTypeText(SumOfSquaresType type) => type switch
    {
        SumOfSquaresType.Sequential => "Sequential (type 1) sums of squares: each term adjusted for the terms listed above it.",
        SumOfSquaresType.Hierarchical => "Hierarchical (type 2) sums of squares: each term adjusted for every term that does not contain it.",
        _ => "Marginal (type 3) sums of squares, sum-to-zero coding: each term adjusted for every other term.",
    };

    private static string Interpret(AnovaTerm term, Dictionary<string, ResultValue> v, AnovaOutcome o, RenderContext context)
    {
        var label = HtmlWriter.Escape(Label(term, o));
        if (!term.F.IsDefined || !term.P.IsDefined)
        {
            return $"{label}: the F test is not defined here ({HtmlWriter.Escape(term.F.Reason ?? term.P.Reason)}).";
        }

        var stat = $"F({HtmlWriter.ValueHtml(v[Stat.Df], context)}, {HtmlWriter.ValueHtml(o.Residual[Stat.Df], context)}) = {HtmlWriter.ValueHtml(v[Stat.F], context)}, p {PText(v[Stat.P], context)}";
        var isInteraction = term.Factors.Count > 1;
        var response = HtmlWriter.Escape(o.Data!.ResponseName);
        var what = isInteraction
            ? $"the effect of one of {label} on {response} depends on the level of the other"
            : $"the mean {response} differs between at least two levels of {label}";
        var caveat = o.ReadWelch && !isInteraction
            ? " Because the variances differ, rely on Welch's test below rather than on this F."
            : string.Empty;
        return term.P.Value < context.Alpha
            ? $"{label}: at α = {context.AlphaText} the test rejects the hypothesis of no effect ({stat}); the data indicate that {what}. It does not say which levels differ or whether the difference matters in practice; see the effect sizes and, for pairs, a post-hoc comparison.{caveat}"
            : $"{label}: at α = {context.AlphaText} the test does not reject the hypothesis of no effect ({stat}). This is not evidence that there is no effect: a real difference may be too small for this design to detect.{caveat}";
    }

    internal static string PText(ResultValue p, RenderContext context)
    {
        var html = HtmlWriter.ValueHtml(p, context);
        if (!p.Value.IsDefined)
        {
            return html;
        }

        var shown = context.Format.Format("p", p.Value.Value);
        return shown.StartsWith('<') ? html : "= " + html;
    }
}
