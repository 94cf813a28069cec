using System.Globalization;
using StudyPress.Evaluation.Kinds;
using StudyPress.Statistics;

namespace StudyPress.Rendering.Kinds;

/// <summary>The sentences of the automatic rules' decisions, shown in the anova and posthoc blocks' readings.</summary>
public static class Decisions
{
    public static string Text(RuleDecision d, string alpha)
    {
        var chosen = d.WithControl ? "Dunnett's comparisons with the control" : "Tukey's HSD";
        return (d.Rule, d.Cells) switch
        {
            (DecisionRule.WelchRequested, _) => "Welch's F is shown because it was requested (welch: yes).",
            (DecisionRule.WelchFired, false) => $"Rule fired (welch: auto): the Brown–Forsythe test found unequal group variances (p {P(d.P)} < α = {alpha}), so Welch's F, which does not assume equal variances, is shown and is the test to read.",
            (DecisionRule.WelchFired, true) => $"Rule fired (welch: auto): on aggregated data the variances are compared by Bartlett's test (the rows needed by Brown–Forsythe were not loaded); it found unequal group variances (p {P(d.P)} < α = {alpha}), so Welch's F, which does not assume equal variances, is shown and is the test to read. Bartlett's test is sensitive to non-normality, which could not be checked.",
            (DecisionRule.WelchNotFired, false) => $"Welch's F is not shown (welch: auto): the Brown–Forsythe test found no evidence of unequal variances (p {P(d.P)} ≥ α = {alpha}). Set 'welch: yes' to show it anyway.",
            (DecisionRule.WelchNotFired, true) => $"Welch's F is not shown (welch: auto): Bartlett's test, used on aggregated data, found no evidence of unequal variances (p {P(d.P)} ≥ α = {alpha}). Set 'welch: yes' to show it anyway.",
            (DecisionRule.WelchUnchecked, false) => $"Welch's F is not shown (welch: auto): the rule did not fire because equal variances could not be checked (Brown–Forsythe: {d.P.Reason}).",
            (DecisionRule.WelchUnchecked, true) => $"Welch's F is not shown (welch: auto): equal variances could not be checked ({d.P.Reason}).",
            (DecisionRule.RankTestAdded, _) => string.Create(CultureInfo.InvariantCulture, $"Rule fired (welch: auto): the residuals depart from normality (Shapiro–Wilk p {P(d.P)} < α = {alpha}) and the smallest group has only {d.SmallestGroup} observations (fewer than {AssumptionReview.SmallGroup}), so the Kruskal–Wallis rank test, which does not assume normality, is shown as well."),
            (DecisionRule.GamesHowellFired, false) => $"Rule fired (method: auto): the Brown–Forsythe test found unequal variances (p {P(d.P)} < α = {alpha}), so the Games–Howell procedure, which does not pool the variances, is used.",
            (DecisionRule.GamesHowellFired, true) => $"Rule fired (method: auto): on aggregated data the variances are compared by Bartlett's test over the {(d.OverCellsOfAnova ? "cells of the anova" : "groups")} (the rows needed by Brown–Forsythe were not loaded); it found unequal variances (p {P(d.P)} < α = {alpha}), so the Games–Howell procedure, which does not pool the variances, is used. Bartlett's test is sensitive to non-normality, which could not be checked.",
            (DecisionRule.PooledChosen, false) => $"Method chosen (method: auto): {chosen}, since the Brown–Forsythe test found no evidence of unequal variances (p {P(d.P)}).",
            (DecisionRule.PooledChosen, true) => $"Method chosen (method: auto): {chosen}, since Bartlett's test over the {(d.OverCellsOfAnova ? "cells of the anova" : "groups")}, used on aggregated data (the rows needed by Brown–Forsythe were not loaded), found no evidence of unequal variances (p {P(d.P)}).",
            (DecisionRule.PooledUnchecked, false) => $"Method chosen (method: auto): {chosen}; the Games–Howell rule did not fire because equal variances could not be checked (Brown–Forsythe: {d.P.Reason}).",
            (DecisionRule.PooledUnchecked, true) => $"Method chosen (method: auto): {chosen}; equal variances could not be checked ({d.P.Reason}).",
            (DecisionRule.DunnAdded, _) => string.Create(CultureInfo.InvariantCulture, $"Rule fired (method: auto): the residuals depart from normality (Shapiro–Wilk p {P(d.P)}) and the smallest group has {d.SmallestGroup} observations, so Dunn's rank comparisons (Holm-adjusted) are shown as well."),
            (DecisionRule.DunnUnavailable, _) => "Dunn's rank comparisons are not available on aggregated data: they need the ranks of the rows, which were not loaded, and the normality of the residuals could not be checked.",
            _ => throw new InvalidOperationException("no text for the decision " + d.Rule),
        };
    }

    /// <summary>A p-value after its name: "= 0.031", or "&lt; 0.001" as the number format writes small values.</summary>
    private static string P(Quantity p) => !p.IsDefined ? "not defined" : NumberFormat.Current.P(p.Value) is var v && v.StartsWith('<') ? v : "= " + v;
}
