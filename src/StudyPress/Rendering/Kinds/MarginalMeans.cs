using System.Globalization;
using System.Runtime.CompilerServices;
using StudyPress.Charts;
using StudyPress.Evaluation;
using StudyPress.Evaluation.Kinds;
using StudyPress.Statistics.Anova;

namespace StudyPress.Rendering.Kinds;

/// <summary>Writes the HTML of <c>marginal-means</c> blocks: the means, the simple effects and their pairs, the method and a reading.</summary>
public sealed class MarginalMeansRenderer : KindRenderer
{
    /// <summary>Registers this part of the kind (see DEVELOPERS.md, "Adding an analysis kind").</summary>
    [ModuleInitializer]
    internal static void Register() => KindRenderers.Register(new MarginalMeansRenderer());

    public override string Kind => "marginal-means";

    private static string ErrorName(MarginalMeansError e) => e.Term == "residual" ? "residual" : e.Term.Replace("(", " (in ", StringComparison.Ordinal);

    /// <summary>The sentences a methods paragraph gives this block (it stands outside the anova sections).</summary>
    public override IEnumerable<string> Methods(MethodsPart part, MethodsSection? section, BlockOutcome outcome, MethodsWriter w)
    {
        if (outcome is RepeatedMarginalMeansOutcome repeated)
        {
            foreach (var s in RepeatedMeansRendering.Methods(part, repeated, w))
            {
                yield return s;
            }

            yield break;
        }

        if (part != MethodsPart.Results || !w.Has("effects") || outcome is not MarginalMeansOutcome { Tables.Count: > 0 } o)
        {
            yield break;
        }

        var what = o.AtLabel is { } at
            ? $"the estimated marginal means of {MethodsWriter.E(o.ByLabel)} at each level of {MethodsWriter.E(at)}"
            : "the estimated marginal means of " + MethodsWriter.List(o.Tables.Select(t => MethodsWriter.E(string.Join(" × ", t.Labels))));
        var text = w.Did(what, true, "computed", "computed", "compute", o.Reml
                ? $" from the mixed model fitted by REML (each level's predicted mean averaged with equal weight over the other treatments), with standard errors from the covariance of its fixed effects and {w.Confidence}% intervals on Satterthwaite degrees of freedom"
                : $" (each level's predicted mean averaged with equal weight over the other factors) with {w.Confidence}% intervals on the error of the anova's F test")
            + (o.Transform == TransformKind.None ? "." : "; means and interval limits were back-transformed to the original scale.");
        if (o.SimpleEffects.Count > 0)
        {
            var differ = o.SimpleEffects.Where(s => s.Test[Stat.P].Value is { IsDefined: true } p && p.Value < w.Outcome.Alpha).ToList();
            var items = o.SimpleEffects.Select(s => $"at {MethodsWriter.E(o.AtLabel)} = {MethodsWriter.E(s.AtLevel)}, F({MethodsWriter.Df(s.Test[Stat.Df])}, {MethodsWriter.Df(s.Test[Stat.DfDen])}) = {MethodsWriter.S2(s.Test[Stat.F])}, {ReportStyle.PPhrase(s.Test[Stat.P])}");
            text += $" The simple effect of {MethodsWriter.E(o.ByLabel)} {w.T("was", "is")} tested at each level of {MethodsWriter.E(o.AtLabel)}{(o.Reml ? " (Wald F tests of the mixed model with Satterthwaite denominator df)" : string.Empty)}, with Holm-adjusted pairwise differences within each level: {string.Join("; ", items)}.";
            text += differ.Count == o.SimpleEffects.Count
                ? string.Empty
                : $" Where the test {w.T("did", "does")} not reject, this is not evidence that the levels of {MethodsWriter.E(o.ByLabel)} {w.T("were", "are")} alike there.";
        }

        yield return text;
    }

    public override IEnumerable<string> Warnings(BlockOutcome outcome, RenderContext context)
    {
        if (outcome is RepeatedMarginalMeansOutcome repeated)
        {
            foreach (var s in RepeatedMeansRendering.Warnings(repeated, context))
            {
                yield return s;
            }

            yield break;
        }

        if (outcome is not MarginalMeansOutcome o)
        {
            yield break;
        }

        foreach (var t in o.Tables)
        {
            foreach (var h in t.Interactions)
            {
                var others = string.Join(" and ", h.Others.Select(BidiText.Isolate));
                var mine = string.Join(" × ", t.Labels.Select(BidiText.Isolate));
                var atHint = h.OtherNames.Count == 1 && t.Factors.Count == 1
                    ? $"'by: {t.Factors[0]}' with 'at: {h.OtherNames[0]}' gives the means and simple effects of {mine} at each level of {others}."
                    : $"'at' gives the means and simple effects of one factor at each level of another.";
                yield return $"The anova found an interaction of {mine} with {others} at α = {context.AlphaText}: these means of {mine} average over the levels of {others}, and the effect of {mine} may differ between those levels. {atHint}";
            }
        }
    }

    public override void Render(HtmlWriter html, BlockOutcome outcome, RenderContext context)
    {
        if (outcome is RepeatedMarginalMeansOutcome repeated)
        {
            RepeatedMeansRendering.Render(html, repeated, context);
            return;
        }

        if (outcome is not MarginalMeansOutcome { Tables.Count: > 0 } o)
        {
            return;
        }

        string V(ResultValue v) => HtmlWriter.ValueHtml(v, context);
        var transformed = o.Transform != TransformKind.None;
        var level = context.ConfidenceText + "%";
        foreach (var t in o.Tables)
        {
            var name = string.Join(" × ", t.Labels);
            var caption = o.Block.Caption ?? (o.AtLabel is { } atLabel
                ? $"Estimated marginal means of {o.ByLabel} at each level of {atLabel}"
                : t.Factors.Count == 1 ? $"Estimated marginal means of {name}" : $"Estimated marginal means of the cells of {name}");
            var table = new HtmlTable(
                "emmeans",
                caption,
                [string.Join(" / ", t.Labels), transformed ? "mean (back-transformed)" : "mean", transformed ? "SE (transformed scale)" : "SE", "df", transformed ? level + " interval (back-transformed)" : level + " interval"]);
            foreach (var r in t.Rows)
            {
                table.Row(
                    string.Join(" / ", r.Levels.Select(BidiText.Isolate)),
                    [V(r.Values[Stat.Mean]), V(r.Values[Stat.Se]), V(r.Values[Stat.Df]), V(r.Values[Stat.CiLow]) + " to " + V(r.Values[Stat.CiHigh])]);
            }

            table.WriteTo(html);
            if (t.Error is null)
            {
                html.Raw("<p class=\"note\">").Text("The anova block fitted the design as a linear mixed model by REML, so these means come from that model: each mean's standard error comes from the covariance of the fixed effects, which carries every variance component the mean depends on (the blocks' and plots' variation included, since their effects are random and a mean predicts over them), and its df are Satterthwaite's for that mean, so the means on different strata have different df.").Raw("</p>");
                continue;
            }

            html.Raw("<p class=\"note\">").Text("Standard errors and intervals use the " + ErrorName(t.Error) + " mean square");
            if (t.Error.Ms is { } ms && t.Error.DfValue is { } df)
            {
                html.Text(" (").Raw(V(ms)).Text(" on ").Raw(V(df)).Text(" df)");
            }

            html.Text(o.Design
                ? ", the error against which the anova tested " + (o.AtLabel is null ? name : o.ByLabel + " and its interaction with " + o.AtLabel) + "; they are the errors of comparisons among these means and leave out the variation between blocks and plots, which such comparisons cancel."
                : " of the anova block.");
            if (transformed)
            {
                html.Text(" Means and interval limits are back-transformed separately to the original scale: " + o.BackTransformation + ". The SE is on the transformed scale, where the model was fitted.");
            }

            html.Raw("</p>");
        }

        if (o.SimpleEffects.Count > 0)
        {
            RenderSimpleEffects(html, o, context);
        }

        html.Raw("<p class=\"method\">").Text(o.Reml
            ? "Each estimated marginal mean is the mixed model's predicted cell mean averaged with equal weight over the levels of the treatments not shown (Searle, Speed and Milliken 1980), L β̂ with β̂ the fixed effects estimated by generalized least squares at the REML variance estimates; for balanced data it equals the raw mean of the level. SE = √(L Cov(β̂) L′), df by Satterthwaite's method for mixed models (Fai and Cornelius 1996), and the interval is mean ± t(1 − α/2; df) × SE at α = " + context.AlphaText + "; intervals of different means are not simultaneous."
            : "Each estimated marginal mean is the model's predicted cell mean averaged with equal weight over the levels of the factors not shown"
            + " (Searle, Speed and Milliken 1980); for balanced data it equals the raw mean of the level. SE = √(MS_error × L(X′X)⁻¹L′), df = the error's df,"
            + " and the interval is mean ± t(1 − α/2; df) × SE at α = " + context.AlphaText + "; intervals of different means are not simultaneous.").Raw("</p>");
        html.Raw("<div class=\"reading\"><p>").Text(Reading(o, context)).Raw("</p></div>");
    }

    private static void RenderSimpleEffects(HtmlWriter html, MarginalMeansOutcome o, RenderContext context)
    {
        string V(ResultValue v) => HtmlWriter.ValueHtml(v, context);
        var tests = new HtmlTable("simple-effects", $"Simple effects of {o.ByLabel} at each level of {o.AtLabel}", [o.AtLabel!, "at α = " + context.AlphaText, "F", "df", "p"]) { TextColumns = [1] };
        foreach (var s in o.SimpleEffects)
        {
            var verdict = s.Test[Stat.P].Value is { IsDefined: true } p ? (p.Value < context.Alpha ? "levels differ" : "not distinguished") : "not defined";
            tests.Row(BidiText.Isolate(s.AtLevel), [verdict, V(s.Test[Stat.F]), V(s.Test[Stat.Df]) + ", " + V(s.Test[Stat.DfDen]), V(s.Test[Stat.P])]);
        }

        tests.WriteTo(html);
        var headers = PostHocRenderer.PairHeaders("holm", "difference", context.ConfidenceText + "% Bonferroni interval", context);
        if (o.Reml)
        {
            headers.Insert(headers.Count - 1, "df (Satterthwaite)");
        }

        var pairs = new HtmlTable(
            "pairs",
            $"Pairwise differences of {o.ByLabel} within each level of {o.AtLabel} (Holm-adjusted within each level)",
            headers) { TextColumns = [1] };
        foreach (var s in o.SimpleEffects)
        {
            pairs.Row(o.AtLabel + " = " + BidiText.Isolate(s.AtLevel), []);
            foreach (var pr in s.Pairs)
            {
                var v = pr.Values;
                List<string> cells = [PostHocRenderer.Verdict(pr.PAdjusted, context), V(v[Stat.Diff]) + " [" + V(v[Stat.CiLow]) + ", " + V(v[Stat.CiHigh]) + "]", V(v[Stat.Se]), V(v[Stat.Statistic]), V(v[Stat.PAdj])];
                if (o.Reml)
                {
                    cells.Insert(cells.Count - 1, V(v[Stat.Df]));
                }

                pairs.Row(BidiText.Isolate(pr.LevelA) + " − " + BidiText.Isolate(pr.LevelB), cells);
            }
        }

        pairs.WriteTo(html);
        html.Raw("<p class=\"method\">").Text(o.Reml
            ? $"Each simple effect tests whether the marginal means of {o.ByLabel} are equal within one level of {o.AtLabel}, from the mixed model fitted by REML: F = (C m)′(C W C′)⁻¹(C m) / (k − 1), with m the k means at that level, W their covariance from the fixed effects and C the differences from the first level, on the Satterthwaite denominator df of Fai and Cornelius (1996). "
            + $"Pairwise differences are first level minus second, with t = difference / SE on each pair's own Satterthwaite df; p-values are adjusted by Holm's step-down method within each level of {o.AtLabel} (the family is the pairs at that level, held at α = {context.AlphaText}), and intervals are at the Bonferroni level α/m, since Holm's procedure has no matching intervals."
            : $"Each simple effect tests whether the marginal means of {o.ByLabel} are equal within one level of {o.AtLabel}: F = (C m)′(C V C′)⁻¹(C m) / ((k − 1) × MS_error), with m the k means at that level, V their covariance divided by σ² and C the differences from the first level"
            + " (for balanced data, the sum of squares of the level's cell means about their mean, times the cell size, over k − 1). "
            + $"Pairwise differences are first level minus second, with t = difference / SE on the same error; p-values are adjusted by Holm's step-down method within each level of {o.AtLabel} (the family is the pairs at that level, held at α = {context.AlphaText}), and intervals are at the Bonferroni level α/m, since Holm's procedure has no matching intervals."
            + (o.Transform != TransformKind.None ? " Differences are on the transformed scale of the anova block." : string.Empty)).Raw("</p>");
    }

    private static string Reading(MarginalMeansOutcome o, RenderContext context)
    {
        if (o.SimpleEffects.Count > 0)
        {
            var differ = o.SimpleEffects.Count(s => s.Test[Stat.P].Value is { IsDefined: true } p && p.Value < context.Alpha);
            return string.Create(CultureInfo.InvariantCulture, $"At α = {context.AlphaText}, the levels of {o.ByLabel} differ within {differ} of the {o.SimpleEffects.Count} levels of {o.AtLabel}. Where they are \"not distinguished\", the data cannot tell them apart at this level, which is not evidence that they are equal; the pairwise table shows which pairs differ within each level, and the intervals how large a difference remains compatible with the data.");
        }

        return "The means are the model's estimates of each level's mean with the other factors balanced; whether two of them differ is a question for the anova's F test and a posthoc block (overlapping intervals of single means do not show that the means are equal, and separate intervals are not a test).";
    }
}
