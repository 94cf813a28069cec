using System.Globalization;
using StudyPress.Binding;
using StudyPress.Diagnostics;
using StudyPress.Evaluation;
using StudyPress.Rendering;
using StudyPress.Statistics;
using StudyPress.Statistics.Assumptions;

namespace StudyPress.Kinds;

/// <summary>
/// <c>assumptions</c>: checks of an anova block's residuals (Shapiro–Wilk), of equal variances
/// across its cells (Brown–Forsythe, mean-centred Levene, Bartlett), of independence in the
/// header's run order (Durbin–Watson) and of outlying observations (externally studentized
/// residuals with a Bonferroni bound), each with a plain-language verdict and what it means.
/// </summary>
public sealed class AssumptionsKind : BlockKind
{
    public override string Name => "assumptions";

    public override string PrimaryTest => "shapiro_wilk";

    public override IReadOnlyList<string> OwnKeys { get; } = ["of"];

    public override bool AnalysesAnovaBlock => true;

    public override object? BindOptions(KeyReader keys, BindContext context, DiagnosticBag diagnostics) => null;

    public sealed class Outcome(BoundBlock block) : BlockOutcome(block)
    {
        public AssumptionReview? Review { get; set; }

        public AnovaKind.Outcome? Anova { get; set; }

        public Dictionary<string, Dictionary<string, ResultValue>> Values { get; } = new(StringComparer.Ordinal);

        public List<(int Line, Dictionary<string, ResultValue> Values)> Flagged { get; } = [];
    }

    public override BlockOutcome Evaluate(EvaluationContext context, BoundBlock block, DiagnosticBag diagnostics)
    {
        var outcome = new Outcome(block);
        if (context.Outcomes.GetValueOrDefault(block.Of!.Id) is not AnovaKind.Outcome { Result: not null } anova)
        {
            return outcome;
        }

        outcome.Anova = anova;
        var review = anova.Review;
        outcome.Review = review;
        var inputs = context.Inputs(block);
        var term = string.Join(":", anova.Data!.Factors.Select(f => f.Spec.Name));
        Dictionary<string, ResultValue> Group(string test) => outcome.Values[test] = new(StringComparer.Ordinal);
        void Add(Dictionary<string, ResultValue> g, string test, string t, string stat, Quantity q) => g[stat] = context.Results.Add(block.Id, test, t, null, null, stat, q, inputs);

        var sw = Group("shapiro_wilk");
        Add(sw, "shapiro_wilk", "residual", "w", review.Normality.W);
        Add(sw, "shapiro_wilk", "residual", "p", review.Normality.P);
        foreach (var (name, r) in new[] { ("brown_forsythe", review.BrownForsythe), ("levene", review.Levene) })
        {
            var g = Group(name);
            Add(g, name, term, "f", r.F);
            Add(g, name, term, "df1", Quantity.Of(r.Df1));
            Add(g, name, term, "df2", Quantity.Of(r.Df2));
            Add(g, name, term, "p", r.P);
        }

        var bt = Group("bartlett");
        Add(bt, "bartlett", term, "statistic", review.Bartlett.Statistic);
        Add(bt, "bartlett", term, "df", Quantity.Of(review.Bartlett.Df));
        Add(bt, "bartlett", term, "p", review.Bartlett.P);
        if (review.Independence is { } dw)
        {
            var g = Group("durbin_watson");
            Add(g, "durbin_watson", "residual", "d", dw.Statistic);
            Add(g, "durbin_watson", "residual", "p", dw.P);
        }

        var ol = Group("outliers");
        var largest = review.Outliers.Largest;
        Add(ol, "outliers", "residual", "max_abs_t", largest is null ? Quantity.Undefined(review.Outliers.Reason ?? "no studentized residual is defined") : Quantity.Of(Math.Abs(largest.T.Value)));
        Add(ol, "outliers", "residual", "p_bonferroni", largest is null ? Quantity.Undefined(review.Outliers.Reason ?? "no studentized residual is defined") : largest.BonferroniP);
        foreach (var index in review.Outliers.Flagged)
        {
            var r = review.Outliers.Residuals[index];
            var line = anova.Data.Dataset.Lines[anova.Data.Rows[index]];
            var level = "line " + line.ToString(CultureInfo.InvariantCulture);
            outcome.Flagged.Add((line, new Dictionary<string, ResultValue>(StringComparer.Ordinal)
            {
                ["t"] = context.Results.Add(block.Id, "outliers", "residual", level, null, "t", r.T, inputs),
                ["p_bonferroni"] = context.Results.Add(block.Id, "outliers", "residual", level, null, "p_bonferroni", r.BonferroniP, inputs),
            }));
        }

        if (review.Normality.N > ShapiroWilk.MaximumN)
        {
            outcome.Warnings.Add(string.Create(CultureInfo.InvariantCulture, $"Shapiro–Wilk is computed for 3 to {ShapiroWilk.MaximumN} residuals; this model has {review.Normality.N}, so normality was not tested. With this many observations the F test is robust to moderate non-normality; judge the residual plots instead."));
        }

        if (context.Header.Report.Figures)
        {
            outcome.Figures.AddRange(new[] { Figures.Qq(anova), Figures.Histogram(anova), Figures.ResidualsFitted(anova) }.OfType<Figure>());
        }

        if (review.SmallestGroup < 5)
        {
            outcome.Warnings.Add("Some groups have fewer than 5 observations: these checks have little power, so passing them is weak reassurance.");
        }

        return outcome;
    }

    public override void Render(HtmlWriter html, BlockOutcome outcome, RenderContext context)
    {
        var o = (Outcome)outcome;
        if (o.Review is null)
        {
            return;
        }

        var r = o.Review;
        var a = context.AlphaText;
        var caption = o.Block.Caption ?? $"Checks of the assumptions of anova block '{o.Block.Of!.Id}'";
        var table = new HtmlTable("assumptions", caption, ["Assumption", "Check", "Statistic", "df", "p", "Verdict"]);
        string V(string test, string stat) => HtmlWriter.ValueHtml(o.Values[test][stat], context);
        string Df(string test) => V(test, "df1") + ", " + V(test, "df2");
        table.Row("Normal residuals", ["Shapiro–Wilk", "W = " + V("shapiro_wilk", "w"), string.Empty, V("shapiro_wilk", "p"), HtmlWriter.Escape(Verdict(r.Normality.P, context.Alpha, "consistent with normality", "departs from normality"))]);
        table.Row("Equal variances", ["Brown–Forsythe (medians)", "F = " + V("brown_forsythe", "f"), Df("brown_forsythe"), V("brown_forsythe", "p"), HtmlWriter.Escape(Verdict(r.BrownForsythe.P, context.Alpha, "no evidence of unequal variances", "variances differ"))]);
        table.Row(string.Empty, ["Levene (means)", "F = " + V("levene", "f"), Df("levene"), V("levene", "p"), HtmlWriter.Escape(Verdict(r.Levene.P, context.Alpha, "no evidence of unequal variances", "variances differ"))]);
        table.Row(string.Empty, ["Bartlett", "χ² = " + V("bartlett", "statistic"), V("bartlett", "df"), V("bartlett", "p"), HtmlWriter.Escape(Verdict(r.Bartlett.P, context.Alpha, "no evidence of unequal variances", "variances differ (sensitive to non-normality)"))]);
        if (o.Values.ContainsKey("durbin_watson"))
        {
            table.Row("Independence", ["Durbin–Watson, run order", "d = " + V("durbin_watson", "d"), string.Empty, V("durbin_watson", "p"), HtmlWriter.Escape(Verdict(r.Independence!.P, context.Alpha, "no evidence of serial correlation", "positively correlated in run order"))]);
        }
        else
        {
            table.Row("Independence", ["Durbin–Watson, run order", "not run", string.Empty, string.Empty, "not checked"]);
        }

        table.Row("No outliers", ["Externally studentized residuals (largest), Bonferroni", "|t| = " + V("outliers", "max_abs_t"), HtmlWriter.Escape(r.Outliers.Df.ToString(CultureInfo.InvariantCulture)), V("outliers", "p_bonferroni"), HtmlWriter.Escape(r.HasOutliers ? $"{r.Outliers.Flagged.Count} outlying observation(s)" : "none beyond the Bonferroni bound")]);
        table.WriteTo(html);

        var notes = new List<string>();
        if (r.Independence is { } dw)
        {
            notes.Add("Durbin–Watson p is for positive serial correlation, computed by " + dw.Method + ".");
        }

        if (r.IndependenceSkipped is { } why)
        {
            notes.Add("Independence: " + why + ".");
        }

        notes.Add("Normality is checked on the model's residuals; equal variances across the cells of the design, on the analysed response. p-values at α = " + a + ".");
        foreach (var n in notes)
        {
            html.Raw("<p class=\"method\">").Text(n).Raw("</p>");
        }

        if (o.Flagged.Count > 0)
        {
            var ft = new HtmlTable("outliers", "Outlying observations (Bonferroni-adjusted p < α)", ["Data line", "t", "Bonferroni p"]);
            foreach (var (line, v) in o.Flagged)
            {
                ft.Row(line.ToString(CultureInfo.InvariantCulture), [HtmlWriter.ValueHtml(v["t"], context), HtmlWriter.ValueHtml(v["p_bonferroni"], context)]);
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
    internal static IEnumerable<string> Meaning(AssumptionReview r, AnovaKind.Outcome anova)
    {
        var oneFactor = anova.Data!.Factors.Count == 1;
        if (!r.NonNormal && !r.UnequalVariances && !r.Dependent && !r.HasOutliers)
        {
            yield return "None of the checks found a problem. That does not prove the assumptions hold (small samples give these checks little power); it means the data give no evidence against them. Look at the residual plots as well.";
        }

        if (r.NonNormal)
        {
            yield return r.SmallestGroup >= AssumptionReview.SmallGroup
                ? "The residuals depart from a normal distribution. With groups of this size the F test is usually robust to moderate non-normality, but skewness or heavy tails can still distort it: look at the quantile plot, and consider a transformation of the response or a rank test."
                : "The residuals depart from a normal distribution and some groups are small, so the F test's p-value may be off. Consider a transformation of the response (see 'transform') or the Kruskal–Wallis rank test (a 'ranks' block).";
        }

        if (r.UnequalVariances)
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
}
