using StudyPress.Charts;
using System.Globalization;
using System.Runtime.CompilerServices;
using StudyPress.Binding.Kinds;
using StudyPress.Binding;
using StudyPress.Diagnostics;
using StudyPress.Evaluation.Kinds;
using StudyPress.Evaluation;
using StudyPress.Rendering;
using StudyPress.Statistics.Assumptions;
using StudyPress.Statistics;

namespace StudyPress.Rendering.Kinds;

/// <summary>Writes the HTML of <c>assumptions</c> blocks.</summary>
public sealed class AssumptionsRenderer : KindRenderer
{
    /// <summary>Registers this part of the kind (see DEVELOPERS.md, "Adding an analysis kind").</summary>
    [ModuleInitializer]
    internal static void Register() => KindRenderers.Register(new AssumptionsRenderer());

    public override string Kind => "assumptions";

    public override IEnumerable<string> Warnings(BlockOutcome outcome, RenderContext context)
    {
        if (outcome is not AssumptionsOutcome { Review: { } review })
        {
            yield break;
        }

        if (review.Normality.N > ShapiroWilk.MaximumN)
        {
            yield return string.Create(CultureInfo.InvariantCulture, $"Shapiro–Wilk is computed for 3 to {ShapiroWilk.MaximumN} residuals; this model has {review.Normality.N}, so normality was not tested. With this many observations the F test is robust to moderate non-normality; judge the residual plots instead.");
        }

        if (review.SmallestGroup < 5)
        {
            yield return "Some groups have fewer than 5 observations: these checks have little power, so passing them is weak reassurance.";
        }
    }

    /// <summary>The checks' sentences in a methods paragraph.</summary>
    public override IEnumerable<string> Methods(MethodsPart part, MethodsSection? section, BlockOutcome outcome, MethodsWriter w) =>
        part == MethodsPart.Assumptions && w.Has("assumptions") && section is { Checks: { } checks } s && ReferenceEquals(checks, outcome)
            ? (w.Brief ? BriefAssumptions(s, w) : MethodsAssumptions(s, w))
            : [];

    /// <summary>
    /// Brief: each check once, by its p-value, with its verdict at α. The verdict on variances
    /// follows the Brown–Forsythe test (as the automatic rules do); the tests that disagree with it
    /// are named with their own verdict and the reason Brown–Forsythe decides.
    /// </summary>
    private static IEnumerable<string> BriefAssumptions(MethodsSection s, MethodsWriter w)
    {
        var r = s.Review;
        var review = s.Checks!.Review!;
        bool Fails(IReadOnlyDictionary<string, ResultValue> v, string stat = Stat.P) => v[stat].Value.IsDefined && v[stat].Value.Value < w.Outcome.Alpha;
        bool Defined(IReadOnlyDictionary<string, ResultValue> v, string stat = Stat.P) => v[stat].Value.IsDefined;
        var found = w.T("found", "finds");
        var clauses = new List<string>();
        var sw = r.GetValueOrDefault(TestName.ShapiroWilk);
        var variance = new[] { (TestName.BrownForsythe, "Brown–Forsythe"), (TestName.Levene, "mean-centred Levene"), (TestName.Bartlett, "Bartlett") }
            .Where(x => r.ContainsKey(x.Item1) && Defined(r[x.Item1]))
            .Select(x => (Test: x.Item1, Name: x.Item2, Values: r[x.Item1], Fails: Fails(r[x.Item1])))
            .ToList();
        var dw = r.GetValueOrDefault(TestName.DurbinWatson);
        var ol = r.GetValueOrDefault(TestName.Outliers);
        string Ps(IEnumerable<(string Test, string Name, IReadOnlyDictionary<string, ResultValue> Values, bool Fails)> tests) =>
            string.Join(", ", tests.Select(t => ReportStyle.PPhrase(t.Values[Stat.P], t.Name + " p")));
        var allPass = (sw is null || !Defined(sw) || !Fails(sw)) && variance.All(v => !v.Fails) && (dw is null || !Fails(dw)) && (ol is null || !Fails(ol, Stat.PBonferroni));
        if (allPass)
        {
            var parts = new List<string>();
            if (sw is not null && Defined(sw))
            {
                parts.Add($"normality ({ReportStyle.PPhrase(sw[Stat.P], "Shapiro–Wilk p")})");
            }

            if (variance.Count > 0)
            {
                parts.Add($"equal variances ({Ps(variance)})");
            }

            if (dw is not null)
            {
                parts.Add($"independence in run order ({ReportStyle.PPhrase(dw[Stat.P], "Durbin–Watson p")})");
            }

            if (ol is not null)
            {
                parts.Add($"outliers (largest studentized residual, {ReportStyle.PPhrase(ol[Stat.PBonferroni], "Bonferroni p")})");
            }

            if (parts.Count > 0)
            {
                yield return $"None of the checks {w.T("found", "finds")} a departure from the model's assumptions: {MethodsWriter.List(parts)}.";
            }
        }
        else
        {
            if (sw is not null && Defined(sw))
            {
                clauses.Add(Fails(sw)
                    ? $"the residuals {w.T("departed", "depart")} from normality ({ReportStyle.PPhrase(sw[Stat.P], "Shapiro–Wilk p")})"
                    : $"the Shapiro–Wilk test {found} no departure from normality ({ReportStyle.PPhrase(sw[Stat.P])})");
            }

            if (variance.Count > 0)
            {
                // The verdict follows Brown–Forsythe; the tests that disagree are named with their own verdict.
                var decider = variance.FirstOrDefault(v => v.Test == TestName.BrownForsythe);
                var decides = decider.Values is null ? variance[0].Fails : decider.Fails;
                var agree = variance.Where(v => v.Fails == decides).ToList();
                var disagree = variance.Where(v => v.Fails != decides).ToList();
                clauses.Add(decides
                    ? $"the variances {w.T("differed", "differ")} ({Ps(agree)})"
                    : $"no evidence of unequal variances {w.T("was", "is")} found ({Ps(agree)})");
                if (disagree.Count > 0)
                {
                    var names = disagree.Count == 1 ? "the " + disagree[0].Name + " test alone" : "the " + MethodsWriter.List(disagree.Select(v => v.Name)) + " tests";
                    clauses.Add(decides
                        ? $"{names} {w.T("found", disagree.Count == 1 ? "finds" : "find")} no evidence of unequal variances ({(disagree.Count == 1 ? ReportStyle.PPhrase(disagree[0].Values[Stat.P]) : Ps(disagree))})"
                        : $"{names} {w.T("found", disagree.Count == 1 ? "finds" : "find")} unequal variances ({(disagree.Count == 1 ? ReportStyle.PPhrase(disagree[0].Values[Stat.P]) : Ps(disagree))})");
                    clauses.Add($"the verdict {w.T("followed", "follows")} the Brown–Forsythe test, the one least affected by non-normal data");
                }
            }

            if (dw is not null)
            {
                clauses.Add(Fails(dw)
                    ? $"the residuals {w.Be(true)} correlated in run order ({ReportStyle.PPhrase(dw[Stat.P], "Durbin–Watson p")})"
                    : $"the Durbin–Watson test {found} no correlation in run order ({ReportStyle.PPhrase(dw[Stat.P])})");
            }

            if (ol is not null)
            {
                clauses.Add(Fails(ol, Stat.PBonferroni)
                    ? $"some observations {w.T("stood", "stand")} out as outliers (largest studentized residual, {ReportStyle.PPhrase(ol[Stat.PBonferroni], "Bonferroni p")})"
                    : $"no outlier {w.T("was", "is")} found (largest studentized residual, {ReportStyle.PPhrase(ol[Stat.PBonferroni], "Bonferroni p")})");
            }

            yield return MethodsWriter.Cap(string.Join("; ", clauses)) + ".";
        }

        if (review.Independence is null && review.IndependenceSkipped is not null)
        {
            yield return $"Independence in run order {w.Be(false)} not checked (no run order {w.T("was", "is")} given).";
        }

        w.Tell(MethodsWriter.VariancesFact(s));
        if (sw is not null)
        {
            w.Tell(MethodsWriter.NormalityFact(s));
        }
    }

    private static IEnumerable<string> MethodsAssumptions(MethodsSection s, MethodsWriter w)
    {
        var r = s.Review;
        var review = s.Checks!.Review!;
        var checks = new List<string>();
        if (r.TryGetValue(TestName.ShapiroWilk, out var sw))
        {
            checks.Add($"normality of the residuals (Shapiro–Wilk, W = {MethodsWriter.Fr(sw[Stat.W])}, {ReportStyle.PPhrase(sw[Stat.P])})");
        }

        var variance = new List<string>();
        foreach (var (test, name) in new[] { ("brown_forsythe", "Brown–Forsythe"), ("levene", "mean-centred Levene") })
        {
            if (r.TryGetValue(test, out var v))
            {
                variance.Add($"{name}, F({MethodsWriter.Df(v[Stat.Df1])}, {MethodsWriter.Df(v[Stat.Df2])}) = {MethodsWriter.S2(v[Stat.F])}, {ReportStyle.PPhrase(v[Stat.P])}");
            }
        }

        if (r.TryGetValue(TestName.Bartlett, out var bt))
        {
            variance.Add($"Bartlett, χ²({MethodsWriter.Df(bt[Stat.Df])}) = {MethodsWriter.S2(bt[Stat.Statistic])}, {ReportStyle.PPhrase(bt[Stat.P])}");
        }

        if (variance.Count > 0)
        {
            checks.Add($"equal variances across the groups ({string.Join("; ", variance)})");
        }

        if (r.TryGetValue(TestName.DurbinWatson, out var dw))
        {
            checks.Add($"independence in run order (Durbin–Watson, d = {MethodsWriter.S2(dw[Stat.D])}, {ReportStyle.PPhrase(dw[Stat.P])})");
        }

        if (r.TryGetValue(TestName.Outliers, out var ol))
        {
            checks.Add($"outlying observations (largest externally studentized residual |t| = {MethodsWriter.S2(ol[Stat.MaxAbsT])}, {ReportStyle.PPhrase(ol[Stat.PBonferroni], "Bonferroni-adjusted p")})");
        }

        yield return w.Did("the model's assumptions", true, "checked", "checked", "check", ": " + MethodsWriter.List(checks) + ".");
        if (review.Independence is null && review.IndependenceSkipped is not null)
        {
            yield return $"Independence in run order {w.Be(false)} not checked, as no run order {w.T("was", "is")} available.";
        }

        var failed = w.Failed(review);
        var otherVariance = new[] { ("levene", "mean-centred Levene"), ("bartlett", "Bartlett") }
            .Where(x => r.TryGetValue(x.Item1, out var v) && v[Stat.P].Value.IsDefined && v[Stat.P].Value.Value < w.Outcome.Alpha)
            .Select(x => x.Item2)
            .ToList();
        if (otherVariance.Count > 0 && !review.UnequalVariances)
        {
            var plural = otherVariance.Count > 1;
            yield return $"The {MethodsWriter.List(otherVariance)} {(plural ? "tests" : "test")} {(plural ? w.T("pointed", "point") : w.T("pointed", "points"))} to unequal variances, but the verdict on variances follows the Brown–Forsythe test, which is less sensitive to non-normal data, and it {w.T("found", "finds")} no evidence of unequal variances.";
        }

        yield return (failed.Count, otherVariance.Count > 0 && !review.UnequalVariances) switch
        {
            (0, false) => $"None of these checks {w.T("indicated", "indicates")} a departure at α = {w.AlphaText}, which does not prove that the assumptions hold.",
            (0, true) => $"Apart from the {MethodsWriter.List(otherVariance)} {(otherVariance.Count == 1 ? "test" : "tests")}, none of these checks {w.T("indicated", "indicates")} a departure at α = {w.AlphaText}, which does not prove that the assumptions hold.",
            _ => $"At α = {w.AlphaText} the checks {w.T("indicated", "indicate")} that {MethodsWriter.List(failed)}.",
        };
    }

    /// <summary>A design anova's checks: normality per error stratum, with what each stratum's residuals are.</summary>
    private static void RenderDesign(HtmlWriter html, AssumptionsOutcome o, DesignChecks d, RenderContext context)
    {
        var caption = o.Block.Caption ?? $"Normality of the residuals of each error stratum of anova block '{o.Block.Of!.Id}'";
        var table = new HtmlTable("assumptions", caption, ["Stratum", "Residuals of", "n", "Shapiro–Wilk W", "p", "Verdict"]) { TextColumns = [1, 5] };
        foreach (var s in d.Strata)
        {
            var p = s.Normality.P;
            var verdict = !p.IsDefined ? "not tested (" + HtmlWriter.Escape(p.Reason) + ")"
                : p.Value < context.Alpha ? "departs from normal" : "no departure found";
            var name = DesignRendering.TermLabel(o.Anova!, s.EngineTerm);
            table.Row(name, [HtmlWriter.Escape(s.Unit switch { StratumUnit.Observations => "observations", StratumUnit.EstimatedEffects => "units of the stratum (estimated effects)", _ => "observations (conditional residuals)" }), s.Count.ToString(CultureInfo.InvariantCulture), HtmlWriter.ValueHtml(s.Values[Stat.W], context), HtmlWriter.ValueHtml(s.Values[Stat.P], context), verdict]);
        }

        table.WriteTo(html);
        html.Raw("<p class=\"method\">").Text(d.Method == DesignMethod.Reml
            ? "The mixed model's conditional residuals (observation minus fixed effects minus predicted random effects) are checked for normality. Equal variances across groups are not tested: the model's variances are per random term, not per group."
            : "Each error stratum is checked on its own residuals: the finest stratum on the residual of every observation, a coarser stratum (whole plots, a nested random term) on the estimated effect of each of its units, since its F tests rest on those. Equal variances across groups are not tested: in a design with strata the groups do not share one error.").Raw("</p>");
        if (d.AnyNonNormal(context.Alpha))
        {
            html.Raw("<div class=\"reading\"><p>").Text("At least one stratum's residuals depart from a normal distribution. The F tests of the terms tested against that stratum's error may be inaccurate, especially with few units; consider a transformation of the response, and judge by the size of the departure rather than by the p-value alone.").Raw("</p></div>");
        }
    }

    public override void Render(HtmlWriter html, BlockOutcome outcome, RenderContext context)
    {
        var o = (AssumptionsOutcome)outcome;
        if (o.Design is { } design)
        {
            RenderDesign(html, o, design, context);
            return;
        }

        if (o.Review is null)
        {
            return;
        }

        var r = o.Review;
        var a = context.AlphaText;
        var caption = o.Block.Caption ?? $"Checks of the assumptions of anova block '{o.Block.Of!.Id}'";
        var table = new HtmlTable("assumptions", caption, ["Assumption", "Check", "Statistic", "df", "p", "Verdict"]) { TextColumns = [1, 5] };
        string V(string test, string stat) => HtmlWriter.ValueHtml(o.Values[test][stat], context);
        string Df(string test) => V(test, "df1") + ", " + V(test, "df2");
        table.Row("Normal residuals", ["Shapiro–Wilk", "W = " + V("shapiro_wilk", "w"), string.Empty, V("shapiro_wilk", "p"), HtmlWriter.Escape(Verdict(r.Normality.P, context.Alpha, "consistent with normality", "departs from normality"))]);
        table.Row("Equal variances", ["Brown–Forsythe (medians)", "F = " + V("brown_forsythe", "f"), Df("brown_forsythe"), V("brown_forsythe", "p"), HtmlWriter.Escape(Verdict(r.BrownForsythe.P, context.Alpha, "no evidence of unequal variances", "variances differ"))]);
        table.Row(string.Empty, ["Levene (means)", "F = " + V("levene", "f"), Df("levene"), V("levene", "p"), HtmlWriter.Escape(Verdict(r.Levene.P, context.Alpha, "no evidence of unequal variances", "variances differ"))]);
        table.Row(string.Empty, ["Bartlett", "χ² = " + V("bartlett", "statistic"), V("bartlett", "df"), V("bartlett", "p"), HtmlWriter.Escape(Verdict(r.Bartlett.P, context.Alpha, "no evidence of unequal variances", "variances differ (sensitive to non-normality)"))]);
        if (o.Values.ContainsKey(TestName.DurbinWatson))
        {
            table.Row("Independence", ["Durbin–Watson, run order", "d = " + V("durbin_watson", "d"), string.Empty, V("durbin_watson", "p"), HtmlWriter.Escape(Verdict(r.Independence!.P, context.Alpha, "no evidence of serial correlation", "positively correlated in run order"))]);
        }
        else
        {
            table.Row("Independence", ["Durbin–Watson, run order", "not run", string.Empty, string.Empty, "not checked"]);
        }

        table.Row("No outliers", ["Externally studentized residuals (largest), Bonferroni", "|t| = " + V("outliers", "max_abs_t"), HtmlWriter.Escape(r.Outliers.Df.ToString(CultureInfo.InvariantCulture)), V("outliers", "p_bonferroni"), HtmlWriter.Escape(r.HasOutliers ? NumberText.Count(r.Outliers.Flagged.Count, "outlying observation") : "none beyond the Bonferroni bound")]);
        table.WriteTo(html);

        var notes = new List<string>();
        if (r.Independence is { } dw)
        {
            notes.Add("Durbin–Watson p is for positive serial correlation, computed by " + dw.Method + ".");
        }

        if (r.IndependenceSkipped is { } gap)
        {
            notes.Add("Independence: " + IndependenceNote(gap, r.WithoutRunOrder) + ".");
        }

        notes.Add(o.Anova?.Ancova is not null
            ? "Normality is checked on the residuals of the covariance model; equal variances across the cells of the design, on the same residuals (each observation's distance from its group's line). p-values at α = " + a + "."
            : "Normality is checked on the model's residuals; equal variances across the cells of the design, on the analysed response. p-values at α = " + a + ".");
        foreach (var n in notes)
        {
            html.Raw("<p class=\"method\">").Text(n).Raw("</p>");
        }

        if (o.Flagged.Count > 0)
        {
            var ft = new HtmlTable("outliers", "Outlying observations (Bonferroni-adjusted p < α)", ["Data line", "t", "Bonferroni p"]);
            foreach (var (line, v) in o.Flagged)
            {
                ft.Row(line.ToString(CultureInfo.InvariantCulture), [HtmlWriter.ValueHtml(v[Stat.T], context), HtmlWriter.ValueHtml(v[Stat.PBonferroni], context)]);
            }

            ft.WriteTo(html);
        }

        html.Raw("<div class=\"reading\">");
        foreach (var line in Meaning(r, o.Anova!))
        {
            html.Raw("<p>").Text(line).Raw("</p>");
        }

        html.Raw("</div>");
    }

    private static string Verdict(Quantity p, double alpha, string ok, string fail) =>
        !p.IsDefined ? "not defined: " + p.Reason : p.Value < alpha ? fail : ok;

    /// <summary>What the verdicts mean for the analysis, in plain words; never stronger than the tests.</summary>
    internal static IEnumerable<string> Meaning(AssumptionReview r, AnovaOutcome anova)
    {
        var oneFactor = anova.Data!.Factors.Count == 1;
        if (!r.NonNormal && !r.UnequalVariances && !r.Dependent && !r.HasOutliers)
        {
            yield return "None of the checks found a problem. That does not prove the assumptions hold (small samples give these checks little power); it means the data give no evidence against them. Look at the residual plots as well.";
        }

        if (anova.Ancova is not null && (r.NonNormal || r.UnequalVariances))
        {
            // An analysis of covariance: Welch's F, Games–Howell and 'transform' are not combined with covariates.
            if (r.NonNormal)
            {
                yield return "The residuals of the covariance model depart from a normal distribution; with small groups the F tests' p-values and the adjusted comparisons may be off. Look at the quantile plot and the outlying observations; a transformation of the response (made in the data, as 'transform' is not combined with 'covariates') may suit these data better.";
            }

            if (r.UnequalVariances)
            {
                yield return "The residual spread differs between groups. The F tests and the comparisons of adjusted means assume one common residual variance, so read their p-values with caution.";
            }
        }
        else if (r.NonNormal)
        {
            yield return r.SmallestGroup >= AssumptionReview.SmallGroup
                ? "The residuals depart from a normal distribution. With groups of this size the F test is usually robust to moderate non-normality, but skewness or heavy tails can still distort it: look at the quantile plot, and consider a transformation of the response or a rank test."
                : "The residuals depart from a normal distribution and some groups are small, so the F test's p-value may be off. Consider a transformation of the response (see 'transform') or the Kruskal–Wallis rank test (a 'ranks' block).";
        }

        if (r.UnequalVariances && anova.Ancova is null)
        {
            yield return oneFactor
                ? "The group variances differ. The classical F test and Tukey's comparisons assume equal variances; Welch's F and the Games–Howell comparisons do not, and are the ones to use here ('welch: auto' and 'method: auto' choose them)."
                : "The cell variances differ. The F tests of a factorial ANOVA assume equal variances, and unequal variances with unequal cell sizes can make them too liberal or too conservative; consider a variance-stabilising transformation and interpret the p-values with caution.";
        }

        if (r.Dependent)
        {
            yield return "The residuals are positively correlated in run order: neighbouring runs resemble each other more than chance allows. The tests assume independent observations, and with positive correlation their p-values are too small. Look for drift or carry-over in the process; the analysis should account for it (for example by blocking on time).";
        }

        if (r.HasOutliers)
        {
            yield return "Some observations lie far from their group's fitted value (see the table). Check them for recording or measurement errors; do not remove them only because they are outlying, and if they are kept, say how they affect the results.";
        }
    }

    /// <summary>Why independence in run order was not checked, or not on every observation.</summary>
    private static string IndependenceNote(IndependenceGap gap, int withoutOrder) => gap switch
    {
        IndependenceGap.Covariates => "the Durbin–Watson test is not run for an analysis of covariance in this version (its p-value needs the covariates' columns in the design)",
        IndependenceGap.NoRunOrder => "the header names no run-order column ('order'), so independence in time was not checked; the file's row order is not assumed to be the run order",
        IndependenceGap.TooFewOrdered => "fewer than three observations have a run order",
        _ => string.Create(System.Globalization.CultureInfo.InvariantCulture, $"{StudyPress.Charts.NumberText.Count(withoutOrder, "observation")} without a run order {(withoutOrder == 1 ? "was" : "were")} left out of the Durbin–Watson test"),
    };

    /// <inheritdoc/>
    public override IReadOnlyList<string> PhrasedTests => ["brown_forsythe", "levene", "bartlett", "shapiro_wilk", "durbin_watson"];

    /// <inheritdoc/>
    public override string? ResultSentence(ResultValue member, IReadOnlyDictionary<string, ResultValue> group, ResultSet all, double alpha, out string? why)
    {
        why = null;
        ResultValue? Get(string stat) => group.GetValueOrDefault(stat);
        return member.Test switch
        {
            "brown_forsythe" or "levene" when Get("f") is { } f && Get("df1") is { } d1 && Get("df2") is { } d2 && Get("p") is { } p => Sentences.FTest(d1, d2, f, p),
            "bartlett" when Get("statistic") is { } b && Get("df") is { } bd && Get("p") is { } bp => $"χ²({ReportStyle.Number(bd)}) = {ReportStyle.Number(b)}, {ReportStyle.PPhrase(bp)}",
            "shapiro_wilk" when Get("w") is { } w && Get("p") is { } sp => $"W = {ReportStyle.Number(w)}, {ReportStyle.PPhrase(sp)}",
            "durbin_watson" when Get("d") is { } d && Get("p") is { } dp => $"d = {ReportStyle.Number(d)}, {ReportStyle.PPhrase(dp)}",
            _ => null,
        };
    }

    /// <summary>The main test (Shapiro–Wilk) is an assumption check: <c>studypress diff</c> reports its flips as such, not as an effect.</summary>
    public override bool MainTestIsNotADiffEffect => true;

    /// <summary>The checks' verdicts in <c>studypress diff</c>; an outliers verdict is the whole test's (its levels are observations).</summary>
    public override IReadOnlyDictionary<string, DiffCheck> DiffChecks { get; } = new Dictionary<string, DiffCheck>(StringComparer.Ordinal)
    {
        ["shapiro_wilk"] = new("departs from normality", "consistent with normality"),
        ["brown_forsythe"] = new("variances differ", "no evidence of unequal variances"),
        ["levene"] = new("variances differ", "no evidence of unequal variances"),
        ["bartlett"] = new("variances differ", "no evidence of unequal variances"),
        ["durbin_watson"] = new("positively correlated in run order", "no evidence of serial correlation"),
        ["outliers"] = new("an outlier flagged", "no outlier flagged") { WholeTestOnly = true },
    }.AsReadOnly();
}
