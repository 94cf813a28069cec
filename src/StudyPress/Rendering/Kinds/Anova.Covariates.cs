using System.Globalization;
using StudyPress.Evaluation;
using StudyPress.Evaluation.Kinds;
using StudyPress.Statistics.Anova;

namespace StudyPress.Rendering.Kinds;

/// <summary>
/// The HTML, cautions, notes and methods sentences of an anova block with covariates
/// (<see cref="AnovaOutcome.Ancova"/>): the adjusted table, the covariates' slopes, the
/// homogeneity-of-slopes test with its verdict, adjusted means beside raw means.
/// </summary>
internal static class CovariateRendering
{
    public static void Render(HtmlWriter html, AnovaOutcome o, CovariateAnalysis a, RenderContext context)
    {
        var caption = o.Block.Caption ?? $"Analysis of covariance of {o.ResponseName}, adjusted for {string.Join(", ", a.Covariates)}";
        var table = new HtmlTable("anova", caption, ["Source", "SS", "df", "MS", "F", "p"]);
        foreach (var (term, v) in o.Terms)
        {
            table.Row(Label(term, o, a), [V(v, Stat.Ss), V(v, Stat.Df), V(v, Stat.Ms), V(v, Stat.F), V(v, Stat.P)]);
        }

        table.Row("Residual", [V(o.Residual, Stat.Ss), V(o.Residual, Stat.Df), V(o.Residual, Stat.Ms), string.Empty, string.Empty]);
        table.Row("Total", [V(o.Total, Stat.Ss), V(o.Total, Stat.Df), string.Empty, string.Empty, string.Empty], "total");
        table.WriteTo(html);
        html.Raw("<p class=\"method\">").Text(SsText(a)).Raw("</p>");

        var slopes = new HtmlTable("slopes", "Covariate slopes (common to every group)", ["Covariate", "Mean", "Slope", "SE", "df", "t", "p"]);
        foreach (var (s, v) in a.Slopes)
        {
            slopes.Row(s.Covariate, [HtmlWriter.Escape(Number(a.CovariateMeans[a.Covariates.ToList().IndexOf(s.Covariate)])), V(v, Stat.Estimate), V(v, Stat.Se), V(v, Stat.Df), V(v, Stat.Statistic), V(v, Stat.P)]);
        }

        slopes.WriteTo(html);

        var h = new HtmlTable("slopes-homogeneity", "Homogeneity of slopes (treatment × covariate)", ["Test", "F", "df1", "df2", "p"]);
        h.Row(HomogeneityLabel(a), [V(a.Homogeneity, Stat.F), V(a.Homogeneity, Stat.Df1), V(a.Homogeneity, Stat.Df2), V(a.Homogeneity, Stat.P)]);
        h.WriteTo(html);

        var means = new HtmlTable("emmeans", $"Adjusted means (covariates at their means) beside the raw means", ["Term", "Level", "n", "Raw mean", "Adjusted mean", "SE", "df", context.ConfidenceText + "% interval"]) { TextColumns = [1] };
        foreach (var m in a.Means)
        {
            means.Row(TermLabel(m.Term, o), [
                HtmlWriter.Escape(m.Level),
                m.RawN is { } n ? HtmlWriter.ValueHtml(n, context) : string.Empty,
                m.RawMean is { } r ? HtmlWriter.ValueHtml(r, context) : string.Empty,
                V(m.Values, Stat.Mean), V(m.Values, Stat.Se), V(m.Values, Stat.Df),
                V(m.Values, Stat.CiLow) + " – " + V(m.Values, Stat.CiHigh)]);
        }

        means.WriteTo(html);
        html.Raw("<p class=\"method\">").Text(MeansText(a)).Raw("</p>");

        html.Raw("<div class=\"reading\">");
        html.Raw("<p>").Raw(SlopesVerdict(a, context)).Raw("</p>");
        foreach (var (term, v) in o.Terms)
        {
            html.Raw("<p>").Raw(Interpret(term, v, o, a, context)).Raw("</p>");
        }

        html.Raw("</div>");

        string V(IReadOnlyDictionary<string, ResultValue> values, string stat) => HtmlWriter.ValueHtml(values[stat], context);
    }

    private static string Number(double v) => v.ToString("G6", CultureInfo.InvariantCulture);

    private static string SsText(CovariateAnalysis a) =>
        (a.Result.SsType == SumOfSquaresType.Hierarchical
            ? "Hierarchical (type 2) sums of squares: each factor term adjusted for the covariates and for every term that does not contain it"
            : "Marginal (type 3) sums of squares, sum-to-zero coding: each factor term adjusted for the covariates and every other term")
        + "; each covariate's row is adjusted for everything else in the model."
        + (a.Blocks.Count > 0 ? $" Blocks ({string.Join(", ", a.Blocks)}) are fitted additively, with no interaction and no slope of their own." : string.Empty);

    private static string MeansText(CovariateAnalysis a) =>
        $"Adjusted means are the model's predicted means with {string.Join(" and ", a.Covariates.Select((c, k) => c + " at its mean " + Number(a.CovariateMeans[k])))}, averaged with equal weight over the levels of the other factors; their standard errors and intervals use the residual mean square on {a.Result.ResidualDf.ToString(CultureInfo.InvariantCulture)} df. They rest on the common (parallel) slope.";

    private static string HomogeneityLabel(CovariateAnalysis a) =>
        string.Join(", ", a.Treatments) + " × " + string.Join(", ", a.Covariates);

    /// <summary>The plain-language verdict of the homogeneity-of-slopes test, and what to do when it fails.</summary>
    private static string SlopesVerdict(CovariateAnalysis a, RenderContext context)
    {
        var h = a.Result.Homogeneity;
        var p = a.Homogeneity[Stat.P];
        var who = HtmlWriter.Escape(string.Join(", ", a.Covariates));
        if (!h.P.IsDefined)
        {
            return $"Homogeneity of slopes: the test is not defined here ({HtmlWriter.Escape(h.P.Reason)}), so whether {who} has the same slope in every group was not checked; the adjusted comparison assumes it does.";
        }

        var stat = $"F({HtmlWriter.ValueHtml(a.Homogeneity[Stat.Df1], context)}, {HtmlWriter.ValueHtml(a.Homogeneity[Stat.Df2], context)}) = {HtmlWriter.ValueHtml(a.Homogeneity[Stat.F], context)}, p {AnovaRenderer.PText(p, context)}";
        return a.SlopesDiffer
            ? $"Homogeneity of slopes: at α = {context.AlphaText} the test rejects equal slopes ({stat}): the relation between {who} and the response appears to differ between groups. The adjusted means and their comparisons assume parallel slopes, so the treatment difference here depends on the covariate's value and the adjusted table should not be read as one treatment effect; compare the groups at chosen covariate values, or model the separate slopes."
            : $"Homogeneity of slopes: at α = {context.AlphaText} the test does not reject equal slopes ({stat}). This does not show that the slopes are equal, only that the data give no clear sign that they differ; the adjusted comparison assumes parallel slopes.";
    }

    private static string Interpret(AnovaTerm term, IReadOnlyDictionary<string, ResultValue> v, AnovaOutcome o, CovariateAnalysis a, RenderContext context)
    {
        var label = HtmlWriter.Escape(Label(term, o, a));
        if (!term.F.IsDefined || !term.P.IsDefined)
        {
            return $"{label}: the F test is not defined here ({HtmlWriter.Escape(term.F.Reason ?? term.P.Reason)}).";
        }

        var stat = $"F({HtmlWriter.ValueHtml(v[Stat.Df], context)}, {HtmlWriter.ValueHtml(o.Residual[Stat.Df], context)}) = {HtmlWriter.ValueHtml(v[Stat.F], context)}, p {AnovaRenderer.PText(v[Stat.P], context)}";
        var response = HtmlWriter.Escape(o.ResponseName);
        var covariate = a.Covariates.Contains(term.Name, StringComparer.Ordinal);
        var what = covariate
            ? $"{response} changes with {label} within the groups (a non-zero common slope)"
            : term.Factors.Count > 1
                ? $"after adjustment for the covariates, the effect of one of {label} on {response} depends on the level of the other"
                : $"after adjustment for the covariates, the mean {response} differs between at least two levels of {label}";
        return term.P.Value < context.Alpha
            ? $"{label}: at α = {context.AlphaText} the test rejects the hypothesis of no effect ({stat}); the data indicate that {what}."
            : $"{label}: at α = {context.AlphaText} the test does not reject the hypothesis of no effect ({stat}). This is not evidence that there is no effect.";
    }

    private static string Label(AnovaTerm term, AnovaOutcome o, CovariateAnalysis a) =>
        a.Covariates.Contains(term.Name, StringComparer.Ordinal) ? term.Name : TermLabel(term.Name, o);

    private static string TermLabel(string term, AnovaOutcome o) =>
        string.Join(" × ", term.Split(':').Select(n => o.Factors.FirstOrDefault(f => f.Name == n)?.Display ?? n));

    public static IEnumerable<string> Warnings(CovariateAnalysis a)
    {
        if (a.SlopesDiffer)
        {
            yield return "The slopes of the covariate differ between groups (homogeneity-of-slopes test below alpha): the adjusted means and their comparisons assume parallel slopes and describe the groups only at the covariate's mean.";
        }
    }

    public static IEnumerable<string> Notes(CovariateAnalysis a)
    {
        if (a.DroppedCovariate > 0)
        {
            yield return string.Create(CultureInfo.InvariantCulture, $"{StudyPress.Charts.NumberText.Count(a.DroppedCovariate, "row")} with a missing covariate value {(a.DroppedCovariate == 1 ? "was" : "were")} left out (counted with the rows missing a response or factor).");
        }
    }

    /// <summary>The methods sentences: model with the covariates, the slopes check and its decision, adjusted means, the tests.</summary>
    public static IEnumerable<string> MethodsSentences(AnovaOutcome o, CovariateAnalysis a, MethodsWriter w)
    {
        var response = MethodsWriter.E(o.ResponseName);
        var covs = MethodsWriter.List(a.Covariates.Select(MethodsWriter.E));
        var factors = MethodsWriter.List(o.Factors.Select(f => MethodsWriter.E(f.Display)));
        if (w.Has("model"))
        {
            var ss = a.Result.SsType == SumOfSquaresType.Hierarchical ? "hierarchical (type 2)" : "marginal (type 3)";
            var blocks = a.Blocks.Count > 0 ? $" ({MethodsWriter.List(a.Blocks.Select(MethodsWriter.E))} as additive {(a.Blocks.Count == 1 ? "blocks" : "blocking factors")})" : string.Empty;
            var kind = a.Covariates.Count == 1 ? "covariate" : "covariates";
            yield return $"The response {response} {w.T("was", "is")} analysed by analysis of covariance (least squares) with the {(o.Factors.Count == 1 ? "factor" : "factors")} {factors}{blocks} and the {kind} {covs} with a common slope, using {ss} sums of squares, so that each factor term is adjusted for the {kind}.";
            var h = a.Homogeneity;
            var check = $"Homogeneity of slopes {w.T("was", "is")} tested by adding the interaction of {MethodsWriter.List(a.Treatments.Select(MethodsWriter.E))} with {covs}";
            if (!a.Result.Homogeneity.P.IsDefined)
            {
                yield return check + $"; the test {w.T("was", "is")} not defined ({MethodsWriter.E(a.Result.Homogeneity.P.Reason)}).";
            }
            else
            {
                var stat = $"F({MethodsWriter.Df(h[Stat.Df1])}, {MethodsWriter.Df(h[Stat.Df2])}) = {MethodsWriter.S2(h[Stat.F])}, {ReportStyle.PPhrase(h[Stat.P])}";
                yield return a.SlopesDiffer
                    ? check + $" ({stat}); it {w.T("rejected", "rejects")} parallel slopes at α = {w.AlphaText}, so the adjusted means describe the groups only at the covariate mean and the adjusted comparison, which assumes parallel slopes, should be read with that in mind."
                    : check + $" ({stat}); it {w.T("did not reject", "does not reject")} parallel slopes at α = {w.AlphaText}, and the common-slope model {w.T("was", "is")} kept.";
            }

            yield return $"Means {w.T("were", "are")} adjusted to the mean of {covs} and {w.T("were", "are")} compared as adjusted means.";
        }

        if (w.Has("effects"))
        {
            foreach (var (term, v) in o.Terms)
            {
                var name = MethodsWriter.E(Label(term, o, a));
                if (!v[Stat.P].Value.IsDefined)
                {
                    yield return $"For {name}, the F test is not defined ({MethodsWriter.E(v[Stat.P].Value.Reason)}).";
                    continue;
                }

                var rejected = v[Stat.P].Value.Value < w.Outcome.Alpha;
                var stat = $"F({MethodsWriter.Df(v[Stat.Df])}, {MethodsWriter.Df(o.Residual[Stat.Df])}) = {MethodsWriter.S2(v[Stat.F])}, {ReportStyle.PPhrase(v[Stat.P])}";
                yield return $"For {name}, adjusted for the other terms, the F test {(rejected ? w.T("rejected", "rejects") : w.T("did not reject", "does not reject"))} the hypothesis of no effect, {stat}."
                    + (rejected ? string.Empty : " This is not evidence that there is no effect.");
            }
        }

        if (w.Has("cautions"))
        {
            foreach (var warning in Warnings(a))
            {
                yield return MethodsWriter.E(warning);
            }
        }
    }
}
