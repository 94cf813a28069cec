using System.Globalization;
using System.Runtime.CompilerServices;
using StudyPress.Charts;
using StudyPress.Evaluation;
using StudyPress.Evaluation.Kinds;
using StudyPress.Statistics.FollowUp;

namespace StudyPress.Rendering.Kinds;

/// <summary>
/// Writes the HTML of <c>contrasts</c> blocks: the contrasts with their coefficients, verdict,
/// estimate and interval, SE, t, df, p and adjusted p; for trends the partition of the
/// between-level sum of squares; the method, orthogonality and a reading.
/// </summary>
public sealed class ContrastsRenderer : KindRenderer
{
    /// <summary>Registers this part of the kind (see DEVELOPERS.md, "Adding an analysis kind").</summary>
    [ModuleInitializer]
    internal static void Register() => KindRenderers.Register(new ContrastsRenderer());

    public override string Kind => "contrasts";

    /// <summary>The adjustment as the table's caption and the methods text name it.</summary>
    internal static string AdjustmentText(ContrastAdjustment a, int m) => a switch
    {
        ContrastAdjustment.Holm => string.Create(CultureInfo.InvariantCulture, $"Holm's step-down adjustment over {m} contrasts"),
        ContrastAdjustment.Bonferroni => string.Create(CultureInfo.InvariantCulture, $"Bonferroni adjustment over {m} contrasts"),
        ContrastAdjustment.Scheffe => "Scheffé's adjustment (simultaneous over every contrast of the levels)",
        _ => m > 1 ? "no adjustment for multiplicity" : "a single contrast, no adjustment",
    };

    private static string IntervalText(ContrastAdjustment a, int m) => a switch
    {
        ContrastAdjustment.Holm => string.Create(CultureInfo.InvariantCulture, $"Holm's step-down p-values have no matching intervals, so the intervals are Bonferroni's (t at α/{m}), simultaneous over the {m} contrasts"),
        ContrastAdjustment.Bonferroni => string.Create(CultureInfo.InvariantCulture, $"the intervals use t at α/{m}, simultaneous over the {m} contrasts"),
        ContrastAdjustment.Scheffe => "the intervals use Scheffé's multiplier √((k − 1) F(1 − α; k − 1, df)), simultaneous over every contrast of the k levels, including ones chosen after seeing the data",
        _ => "the intervals use t at α for each contrast on its own",
    };

    /// <summary>A coefficient or level number as text: six significant digits, a true minus sign.</summary>
    private static string Number(double v) => v == 0 ? "0" : v.ToString("G6", CultureInfo.InvariantCulture).Replace("-", "−", StringComparison.Ordinal);

    /// <summary>The contrast's coefficients as text: "level: c" for named contrasts (non-zero ones), all in level order for trends.</summary>
    private static string Coefficients(ContrastRow row, bool trend) => trend
        ? string.Join(", ", row.Coefficients.Select(c => Number(c.Coefficient)))
        : string.Join(", ", row.Coefficients.Where(c => c.Coefficient != 0).Select(c => BidiText.Isolate(c.Level) + ": " + Number(c.Coefficient)));

    private static string Verdict(ContrastEstimate c, RenderContext context) =>
        c.PAdjusted.IsDefined ? (c.PAdjusted.Value < context.Alpha ? "non-zero" : "not distinguished from 0") : "not defined";

    public override void Render(HtmlWriter html, BlockOutcome outcome, RenderContext context)
    {
        if (outcome is not ContrastsOutcome { Rows.Count: > 0 } o)
        {
            return;
        }

        string V(ResultValue v) => HtmlWriter.ValueHtml(v, context);
        var m = o.Rows.Count;
        var level = context.ConfidenceText + "%";
        var what = o.IsTrend ? "Polynomial trends" : "Planned contrasts";
        var caption = o.Block.Caption ?? $"{what} of {o.FactorLabel}, {AdjustmentText(o.Adjustment, m)}";
        var headers = new List<string>
        {
            o.IsTrend ? "Trend" : "Contrast",
            o.IsTrend ? "coefficients (levels in order)" : "coefficients",
            "at α = " + context.AlphaText,
            $"estimate [{level} {(m > 1 && o.Adjustment != ContrastAdjustment.None ? "joint " : string.Empty)}interval]",
            "SE",
            "t = estimate / SE",
            "df",
            "p",
            "adjusted p",
        };
        if (o.IsTrend && !o.Reml)
        {
            headers.Add("SS = t² × error MS");
        }

        var table = new HtmlTable("contrasts", caption, headers) { TextColumns = [1, 2] };
        foreach (var r in o.Rows)
        {
            var v = r.Values;
            var cells = new List<string>
            {
                HtmlWriter.Escape(Coefficients(r, o.IsTrend)),
                Verdict(r.Estimate, context),
                V(v[Stat.Estimate]) + " [" + V(v[Stat.CiLow]) + ", " + V(v[Stat.CiHigh]) + "]",
                V(v[Stat.Se]),
                V(v[Stat.Statistic]),
                V(v[Stat.Df]),
                V(v[Stat.P]),
                V(v[Stat.PAdj]),
            };
            if (o.IsTrend && !o.Reml)
            {
                cells.Add(V(v[Stat.Ss]));
            }

            table.Row(BidiText.Isolate(r.Name), cells);
        }

        table.WriteTo(html);
        if (o.IsTrend && o.BetweenLevels is { } between)
        {
            var part = new HtmlTable("trend-partition", o.MarginalMeans ? $"The trends' sums of squares and the joint sum of squares of the estimated marginal means of {o.FactorLabel}" : $"The trends' sums of squares add up to the between-level sum of squares of {o.FactorLabel}", ["Source", "SS", "df", "F", "p"]);
            foreach (var r in o.Rows)
            {
                part.Row(r.Name, [V(r.Values[Stat.Ss]), "1", string.Empty, string.Empty]);
            }

            if (o.LackOfFit is { } lof)
            {
                part.Row(string.Create(CultureInfo.InvariantCulture, $"{ContrastsEvaluator.LackOfFitLevel} (degrees {o.Rows.Count + 1} to {o.Levels.Count - 1})"), [V(lof[Stat.Ss]), V(lof[Stat.Df]), V(lof[Stat.F]), V(lof[Stat.P])]);
            }

            part.Row("between levels (total)", [V(between[Stat.Ss]), V(between[Stat.Df]), string.Empty, string.Empty]);
            part.WriteTo(html);
        }

        html.Raw("<p class=\"method\">").Text(MethodText(o, context)).Raw("</p>");
        html.Raw("<div class=\"reading\">");
        foreach (var p in Reading(o, context))
        {
            html.Raw("<p>").Text(p).Raw("</p>");
        }

        html.Raw("</div>");
    }

    private static string ErrorName(ContrastsOutcome o) => o.Error is not { } e || e.Term == "residual"
        ? "the residual mean square of the anova"
        : "the " + e.Term.Replace("(", " (in ", StringComparison.Ordinal) + " mean square, the error against which the anova tested " + o.FactorLabel;

    private static string MethodText(ContrastsOutcome o, RenderContext context)
    {
        var m = o.Rows.Count;
        if (o.Reml)
        {
            var reml = $"The anova block fitted the design as a linear mixed model by REML, so these contrasts come from that model: each estimate is Σ cᵢ × meanᵢ over its estimated marginal means of {o.FactorLabel} (each the equal-weight average of the fitted cell means over the other treatments' levels), a combination of the fixed effects; its SE is √(c′Wc), W the covariance of those means from the model, which carries every variance component the contrast depends on; t = estimate / SE on the contrast's own Satterthwaite df (Fai and Cornelius 1996), two-sided. A mixed model has no single error mean square, so no sums of squares are given. ";
            if (o.IsTrend)
            {
                reml += "The coefficients are orthogonal polynomials built for the levels' numbers with equal weights (each estimated marginal mean counts once)" + (o.LackOfFit is null ? ". " : "; the higher degrees are tested jointly by the Wald F of their contrasts with Satterthwaite's denominator df (lack of fit). ");
            }

            return reml + "Adjusted p-values: " + AdjustmentText(o.Adjustment, m) + (o.AdjustmentChosen || m == 1 ? string.Empty : " (the default for several contrasts)") + "; " + IntervalText(o.Adjustment, m) + ".";
        }

        var e = o.Error!;
        var text = o.MarginalMeans
            ? string.Create(CultureInfo.InvariantCulture, $"Each estimate is Σ cᵢ × meanᵢ over the estimated marginal means of {o.FactorLabel}{(o.Transformed ? " (on the transformed scale of the anova block)" : string.Empty)} (each the equal-weight average of the model's fitted cell means over the levels of the other factors); its SE is √(MS × c′Vc), V the covariance of those means divided by σ², from the model, with MS = {(double.IsFinite(e.MeanSquare) ? context.Format.Format(Stat.Ms, e.MeanSquare) : "not defined")} on {e.Df} df, {ErrorName(o)}; t = estimate / SE on those df, two-sided. ")
            : string.Create(CultureInfo.InvariantCulture, $"Each estimate is Σ cᵢ × meanᵢ over the level means of {o.FactorLabel}{(o.Transformed ? " (on the transformed scale of the anova block)" : string.Empty)}; its SE is √(MS × Σ cᵢ²/nᵢ), with MS = {(double.IsFinite(e.MeanSquare) ? context.Format.Format(Stat.Ms, e.MeanSquare) : "not defined")} on {e.Df} df, {ErrorName(o)}; t = estimate / SE on those df, two-sided. ");
        if (o.IsTrend && o.MarginalMeans)
        {
            text += "The coefficients are orthogonal polynomials built for the levels' numbers with equal weights (each estimated marginal mean counts once); each trend's SS = estimate² / c′Vc. ";
        }
        else if (o.IsTrend)
        {
            text += "The coefficients are orthogonal polynomials built for the levels' numbers and group sizes (equally spaced levels with equal groups give the usual integer tables); each trend's SS = estimate² / Σ cᵢ²/nᵢ. ";
        }

        text += "Adjusted p-values: " + AdjustmentText(o.Adjustment, m) + (o.AdjustmentChosen || m == 1 ? string.Empty : " (the default for several contrasts)") + "; " + IntervalText(o.Adjustment, m) + ".";
        return text;
    }

    private static IEnumerable<string> Reading(ContrastsOutcome o, RenderContext context)
    {
        var alpha = context.AlphaText;
        var differ = o.Rows.Where(r => r.Estimate.PAdjusted.IsDefined && r.Estimate.PAdjusted.Value < context.Alpha).Select(r => r.Name).ToList();
        var adjusted = o.Rows.Count > 1 && o.Adjustment != ContrastAdjustment.None ? "at the family-wise level α = " + alpha : "at α = " + alpha;
        var noun = o.IsTrend ? "trend" : "contrast";
        if (differ.Count == 0)
        {
            yield return $"No {noun} is distinguished from 0 {adjusted}. This does not show that the {noun}s are 0; the intervals show how large they may be.";
        }
        else
        {
            var list = string.Join(", ", differ.Select(d => "'" + d + "'"));
            yield return string.Create(CultureInfo.InvariantCulture, $"{differ.Count} of {o.Rows.Count} {NumberText.Noun(o.Rows.Count, noun)} {(differ.Count == 1 ? "differs" : "differ")} from 0 {adjusted}: {list}. ")
                + (differ.Count < o.Rows.Count ? $"The others are not distinguished from 0, which does not show that they are 0." : string.Empty);
        }

        if (o.IsTrend && o.LackOfFit is { } lof && lof[Stat.P].Value is { IsDefined: true } p)
        {
            yield return p.Value < context.Alpha
                ? $"The lack-of-fit test rejects, at α = {alpha}, that a polynomial of degree {o.Rows.Count} describes the level means: the higher degrees carry more than error alone would explain."
                : $"The lack-of-fit test does not reject, at α = {alpha}, that a polynomial of degree {o.Rows.Count} describes the level means; this does not show that it does.";
        }
    }

    public override IEnumerable<string> Warnings(BlockOutcome outcome, RenderContext context)
    {
        if (outcome is not ContrastsOutcome o || o.Error is null)
        {
            yield break;
        }

        if (o.Rows.Count > 0 && !o.Rows[0].Estimate.Se.IsDefined)
        {
            yield return "The error mean square is not defined (" + o.Rows[0].Estimate.Se.Reason + "), so the contrasts have no standard errors or tests.";
        }

        if (o.PooledUnbalanced)
        {
            yield return $"The anova has other factors and unequal cell counts: the level means of {o.FactorLabel} are raw means pooled over the other factors, so they mix in those factors' effects; the contrasts are those of the raw level means, not of the model's adjusted means.";
        }

        if (o.SingleObservationLevels)
        {
            yield return "Some levels have a single observation: contrasts involving them rest entirely on the pooled error mean square.";
        }
    }

    public override IEnumerable<string> Notes(BlockOutcome outcome, RenderContext context)
    {
        if (outcome is not ContrastsOutcome { Rows.Count: > 0 } o)
        {
            yield break;
        }

        if (o.IsTrend)
        {
            var levels = string.Join(", ", o.Levels.Select(l => BidiText.Isolate(l.Level) + " = " + Number(l.Value)));
            var same = o.AnovaFactorSs is not null ? $" This total is the sum of squares of {o.FactorLabel} in the anova table." : o.OtherFactors ? $" With other factors in the anova, this total can differ from the anova's sum of squares of {o.FactorLabel}." : string.Empty;
            yield return o.MarginalMeans
                ? $"Level numbers used for the trends: {levels}. The total is the joint sum of squares of the trends of every degree up to {o.Levels.Count - 1}, L′(CVC′)⁻¹L, which tests that the estimated marginal means are equal (and the lack of fit is the joint sum of squares of the degrees not asked for); the single trends' sums of squares add up to it exactly only when the means are uncorrelated with equal variances, as in balanced data.{(o.AnovaFactorSs is not null ? $" This total is the sum of squares of {o.FactorLabel} in the anova table." : string.Empty)}"
                : $"Level numbers used for the trends: {levels}. The trends of every degree up to {o.Levels.Count - 1} partition the between-level sum of squares Σ nᵢ (meanᵢ − mean)² exactly.{same}";
        }
        else if (o.Orthogonality.Count > 0)
        {
            // Weighted by the group sizes, Σ cᵢ dᵢ / nᵢ = 0 is the condition for uncorrelated estimates.
            var rule = o.MarginalMeans
                ? "Orthogonality of the contrasts is judged by c′Vd = 0, V the covariance of the estimated marginal means over σ² (the condition for uncorrelated estimates): "
                : "Orthogonality of the contrasts is judged by Σ cᵢ dᵢ / nᵢ = 0 (weighted by the group sizes, the condition for uncorrelated estimates; for equal groups the usual Σ cᵢ dᵢ = 0): ";
            var not = o.Orthogonality.Where(p => !p.OrthogonalWeighted).ToList();
            if (not.Count == 0)
            {
                yield return rule + (o.Orthogonality.Count == 1 ? $"'{o.Orthogonality[0].First}' and '{o.Orthogonality[0].Second}' are orthogonal" : "every pair is orthogonal") + ", so their tests use independent parts of the between-level variation.";
            }
            else
            {
                var shown = not.Take(20).Select(p => $"'{p.First}' and '{p.Second}'");
                var more = not.Count > 20 ? string.Create(CultureInfo.InvariantCulture, $" and {not.Count - 20} more pairs") : string.Empty;
                var rest = not.Count < o.Orthogonality.Count ? "; the other pairs are orthogonal" : string.Empty;
                yield return rule + "not orthogonal: " + string.Join("; ", shown) + more + rest + ". Contrasts that are not orthogonal share information: their tests are correlated and their sums of squares do not add up to the factor's.";
            }
        }
    }

    /// <summary>The contrasts' sentences in a methods paragraph: what was planned, how, with which adjustment, and what it found.</summary>
    public override IEnumerable<string> Methods(MethodsPart part, MethodsSection? section, BlockOutcome outcome, MethodsWriter w)
    {
        if (part != MethodsPart.Results || !w.Has("comparisons") || outcome is not ContrastsOutcome { Rows.Count: > 0 } o)
        {
            yield break;
        }

        var m = o.Rows.Count;
        var names = MethodsWriter.List(o.Rows.Select(r => "‘" + MethodsWriter.E(r.Name) + "’"));
        var what = o.IsTrend
            ? $"the orthogonal polynomial trend{(m > 1 ? "s" : string.Empty)} of {MethodsWriter.E(o.FactorLabel)} ({names})"
            : $"the planned contrast{(m > 1 ? "s" : string.Empty)} {names} among the levels of {MethodsWriter.E(o.FactorLabel)}";
        var error = o.Error is { Term: not "residual" } e ? "the " + MethodsWriter.E(e.Term) + " mean square" : "the residual mean square";
        yield return w.Did(what, m > 1, "tested", "tested", "test", $" with t tests on {error}, with {AdjustmentText(o.Adjustment, m)}{(o.Transformed ? ", on the transformed scale" : string.Empty)}.");
        var items = o.Rows.Select(r =>
            $"‘{MethodsWriter.E(r.Name)}’: estimate = {MethodsWriter.S2(r.Values[Stat.Estimate])}, {w.Confidence}% CI [{MethodsWriter.S2(r.Values[Stat.CiLow])}, {MethodsWriter.S2(r.Values[Stat.CiHigh])}], t({MethodsWriter.Df(r.Values[Stat.Df])}) = {MethodsWriter.S2(r.Values[Stat.Statistic])}, {ReportStyle.PPhrase(r.Values[Stat.PAdj], m > 1 && o.Adjustment != ContrastAdjustment.None ? "adjusted p" : "p")}");
        var differ = o.Rows.Count(r => r.Estimate.PAdjusted.IsDefined && r.Estimate.PAdjusted.Value < w.Outcome.Alpha);
        var verdict = differ == 0
            ? $"none {w.T("was", "is")} distinguished from 0 at α = {w.AlphaText}, which does not show that {(m > 1 ? "they are" : "it is")} 0"
            : string.Create(CultureInfo.InvariantCulture, $"{differ} of {m} {w.T("differed", "differ")} from 0 at α = {w.AlphaText}");
        yield return MethodsWriter.Cap($"{string.Join("; ", items)}; {verdict}.");
    }
}
