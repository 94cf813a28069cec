using System.Globalization;
using StudyPress.Charts;
using StudyPress.Evaluation;
using StudyPress.Evaluation.Kinds;
using StudyPress.Statistics.Repeated;

namespace StudyPress.Rendering.Kinds;

/// <summary>The HTML, cautions and methods sentences of a <c>marginal-means</c> block over a repeated block.</summary>
internal static class RepeatedMeansRendering
{
    /// <summary>An error term of the classical table in words: "condition:subject" → "condition × subject", "subject(A)" → "subject (in A)".</summary>
    private static string ErrorName(string term) => term.Replace(":", " × ", StringComparison.Ordinal).Replace("(", " (in ", StringComparison.Ordinal);

    private static string Adjustment(string? compare) => compare switch
    {
        "bonferroni" => "Bonferroni",
        "tukey" => "Tukey–Kramer",
        _ => "Holm",
    };

    /// <summary>Where the means come from, in one sentence.</summary>
    private static string RouteText(RepeatedMarginalMeansOutcome o) => o.Route == RepeatedMeansRoute.Reml
        ? string.Create(CultureInfo.InvariantCulture, $"The means come from the mixed model (REML) of the repeated block '{o.Of}', fitted on {o.Subjects} {o.SubjectLabel} units{(o.Incomplete > 0 ? $", {o.Incomplete} of them incomplete" : string.Empty)}: each mean is the generalized least-squares estimate at the REML variances, its SE from the fit's covariance, its df by Satterthwaite's method.")
        : string.Create(CultureInfo.InvariantCulture, $"The means come from the classical route of the repeated block '{o.Of}' ({o.Subjects} complete {o.SubjectLabel} units{(o.Incomplete > 0 ? $"; {o.Incomplete} incomplete left out" : string.Empty)}): each SE combines the error mean squares of the strata its estimate lies in, with Satterthwaite df.");

    private static string Errors(RepeatedMarginalMeansOutcome o, IReadOnlyList<string> errors) =>
        o.Route == RepeatedMeansRoute.Reml ? "mixed model" : errors.Count == 0 ? "—" : string.Join(" + ", errors.Select(ErrorName));

    public static IEnumerable<string> Methods(MethodsPart part, RepeatedMarginalMeansOutcome o, MethodsWriter w)
    {
        if (part != MethodsPart.Results || !w.Has("effects") || o.Tables.Count == 0)
        {
            yield break;
        }

        var what = o.AtLabel is { } at
            ? $"the estimated marginal means of {MethodsWriter.E(o.ByLabel)} at each level of {MethodsWriter.E(at)}"
            : "the estimated marginal means of " + MethodsWriter.List(o.Tables.Select(t => MethodsWriter.E(string.Join(" × ", t.Labels))));
        var route = o.Route == RepeatedMeansRoute.Reml
            ? "from the repeated-measures mixed model (REML; Satterthwaite df), which keeps incomplete subjects"
            : "from the repeated-measures strata (each SE a combination of the strata's error mean squares, Satterthwaite df)";
        var text = w.Did(what, true, "computed", "computed", "compute", $" {route}, with {w.Confidence}% intervals.");
        if (o.Compare is not null && o.AtLabel is null)
        {
            text += $" Pairs of means {w.T("were", "are")} compared with {Adjustment(o.Compare)}-adjusted p-values, each difference on its own error (a within-subject difference on the within-subject error).";
        }

        if (o.SimpleEffects.Count > 0)
        {
            var items = o.SimpleEffects.Select(s => $"at {MethodsWriter.E(o.AtLabel)} = {MethodsWriter.E(s.AtLevel)}, F({MethodsWriter.Df(s.Test[Stat.Df])}, {MethodsWriter.Df(s.Test[Stat.DfDen])}) = {MethodsWriter.S2(s.Test[Stat.F])}, {ReportStyle.PPhrase(s.Test[Stat.P])}");
            text += $" The simple effect of {MethodsWriter.E(o.ByLabel)} {w.T("was", "is")} tested at each level of {MethodsWriter.E(o.AtLabel)}, with {Adjustment(o.Compare)}-adjusted pairwise differences within each level: {string.Join("; ", items)}.";
        }

        yield return text;
    }

    public static IEnumerable<string> Warnings(RepeatedMarginalMeansOutcome o, RenderContext context)
    {
        foreach (var t in o.Tables)
        {
            foreach (var h in t.Interactions)
            {
                var others = string.Join(" and ", h.Others.Select(BidiText.Isolate));
                var mine = string.Join(" × ", t.Labels.Select(BidiText.Isolate));
                var atHint = h.OtherNames.Count == 1 && t.Factors.Count == 1
                    ? $"'by: {t.Factors[0]}' with 'at: {h.OtherNames[0]}' gives the means and simple effects of {mine} at each level of {others}."
                    : "'at' gives the means and simple effects of one factor at each level of another.";
                yield return $"The repeated block found an interaction of {mine} with {others} at α = {context.AlphaText}: these means of {mine} average over the levels of {others}, and the effect of {mine} may differ between those levels. {atHint}";
            }
        }
    }

    public static void Render(HtmlWriter html, RepeatedMarginalMeansOutcome o, RenderContext context)
    {
        if (o.Tables.Count == 0)
        {
            return;
        }

        string V(ResultValue v) => HtmlWriter.ValueHtml(v, context);
        var level = context.ConfidenceText + "%";
        html.Raw("<p class=\"note\">").Text(RouteText(o)).Raw("</p>");
        foreach (var t in o.Tables)
        {
            var name = string.Join(" × ", t.Labels);
            var caption = o.Block.Caption ?? (o.AtLabel is { } atLabel
                ? $"Estimated marginal means of {o.ByLabel} at each level of {atLabel}"
                : t.Factors.Count == 1 ? $"Estimated marginal means of {name}" : $"Estimated marginal means of the cells of {name}");
            var table = new HtmlTable("emmeans", caption, [string.Join(" / ", t.Labels), "mean", "SE", "df", level + " interval", "error"]) { TextColumns = [5] };
            foreach (var r in t.Rows)
            {
                table.Row(
                    string.Join(" / ", r.Levels.Select(BidiText.Isolate)),
                    [V(r.Values[Stat.Mean]), V(r.Values[Stat.Se]), V(r.Values[Stat.Df]), V(r.Values[Stat.CiLow]) + " to " + V(r.Values[Stat.CiHigh]), HtmlWriter.Escape(Errors(o, r.Errors))]);
            }

            table.WriteTo(html);
            if (t.Pairs.Count > 0)
            {
                var pairs = new HtmlTable(
                    "pairs",
                    $"Pairwise differences of the means of {name} ({Adjustment(o.Compare)}-adjusted)",
                    [.. PostHocRenderer.PairHeaders("holm", "difference", level + (o.Compare == "tukey" ? " simultaneous interval" : " Bonferroni interval"), context), "df", "error"]) { TextColumns = [1, 7] };
                foreach (var pr in t.Pairs)
                {
                    var v = pr.Values;
                    pairs.Row(
                        BidiText.Isolate(pr.A) + " − " + BidiText.Isolate(pr.B),
                        [PostHocRenderer.Verdict(pr.PAdjusted, context), V(v[Stat.Diff]) + " [" + V(v[Stat.CiLow]) + ", " + V(v[Stat.CiHigh]) + "]", V(v[Stat.Se]), V(v[Stat.Statistic]), V(v[Stat.PAdj]), V(v[Stat.Df]), HtmlWriter.Escape(Errors(o, pr.Errors))]);
                }

                pairs.WriteTo(html);
            }
        }

        if (o.SimpleEffects.Count > 0)
        {
            var tests = new HtmlTable("simple-effects", $"Simple effects of {o.ByLabel} at each level of {o.AtLabel}", [o.AtLabel!, "at α = " + context.AlphaText, "F", "df", "p", "error"]) { TextColumns = [1, 5] };
            foreach (var s in o.SimpleEffects)
            {
                var verdict = s.Test[Stat.P].Value is { IsDefined: true } p ? (p.Value < context.Alpha ? "levels differ" : "not distinguished") : "not defined";
                tests.Row(BidiText.Isolate(s.AtLevel), [verdict, V(s.Test[Stat.F]), V(s.Test[Stat.Df]) + ", " + V(s.Test[Stat.DfDen]), V(s.Test[Stat.P]), HtmlWriter.Escape(Errors(o, s.Errors))]);
            }

            tests.WriteTo(html);
            var pairs = new HtmlTable(
                "pairs",
                $"Pairwise differences of {o.ByLabel} within each level of {o.AtLabel} ({Adjustment(o.Compare)}-adjusted within each level)",
                [.. PostHocRenderer.PairHeaders("holm", "difference", level + (o.Compare == "tukey" ? " simultaneous interval" : " Bonferroni interval"), context), "df"]) { TextColumns = [1] };
            foreach (var s in o.SimpleEffects)
            {
                pairs.Row(o.AtLabel + " = " + BidiText.Isolate(s.AtLevel), []);
                foreach (var pr in s.Pairs)
                {
                    var v = pr.Values;
                    pairs.Row(
                        BidiText.Isolate(pr.A) + " − " + BidiText.Isolate(pr.B),
                        [PostHocRenderer.Verdict(pr.PAdjusted, context), V(v[Stat.Diff]) + " [" + V(v[Stat.CiLow]) + ", " + V(v[Stat.CiHigh]) + "]", V(v[Stat.Se]), V(v[Stat.Statistic]), V(v[Stat.PAdj]), V(v[Stat.Df])]);
                }
            }

            pairs.WriteTo(html);
        }

        html.Raw("<p class=\"method\">").Text(
            "Each estimated marginal mean is the average, with equal weight, of the estimated cell means (one per combination of a between-subject group and a within-subject cell) that have its levels (Searle, Speed and Milliken 1980). "
            + (o.Route == RepeatedMeansRoute.Reml
                ? "The cell means are the mixed model's generalized least-squares estimates at its REML variances; the SE of a mean or a difference is from their covariance, and its df by Satterthwaite's method for mixed models (Kuznetsova, Brockhoff and Christensen 2017), with the variance of the REML estimates from their expected information. "
                : "The covariance of a subject's cell means is the strata's: the subjects' error mean square for the subject's average, and each within term's error mean square for that term's contrasts (sphericity assumed within each stratum). The variance of an estimate is the combination of the strata's mean squares its coefficients reach, with Satterthwaite's (1946) df: a difference between the levels of a within-subject factor rests on that factor's error alone, a difference between between-subject levels on the subjects' error alone, and a mean, or a cell difference that crosses strata, pools them. ")
            + "Intervals are estimate ± t(1 − α/2; df) × SE at α = " + context.AlphaText + " (pairs: at the Bonferroni level α/m for Holm and Bonferroni, the studentized range for Tukey–Kramer); intervals of different means are not simultaneous.").Raw("</p>");
        html.Raw("<div class=\"reading\"><p>").Text(Reading(o, context)).Raw("</p></div>");
    }

    private static string Reading(RepeatedMarginalMeansOutcome o, RenderContext context)
    {
        if (o.SimpleEffects.Count > 0)
        {
            var differ = o.SimpleEffects.Count(s => s.Test[Stat.P].Value is { IsDefined: true } p && p.Value < context.Alpha);
            return string.Create(CultureInfo.InvariantCulture, $"At α = {context.AlphaText}, the levels of {o.ByLabel} differ within {differ} of the {o.SimpleEffects.Count} levels of {o.AtLabel}. Where they are \"not distinguished\", the data cannot tell them apart at this level, which is not evidence that they are equal.");
        }

        return o.Tables.Any(t => t.Pairs.Count > 0)
            ? "The pairwise tables show which means differ at the adjusted level; a pair \"not distinguished\" is not shown to be equal, and the intervals show how large a difference remains compatible with the data."
            : "The means are the model's estimates of each level's mean with the other factors balanced; whether two of them differ is a question for the repeated block's F tests or 'compare' (overlapping intervals of single means do not show that the means are equal).";
    }
}
