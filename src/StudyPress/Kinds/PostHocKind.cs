using System.Globalization;
using StudyPress.Binding;
using StudyPress.Diagnostics;
using StudyPress.Evaluation;
using StudyPress.Rendering;
using StudyPress.Statistics;
using StudyPress.Statistics.Nonparametric;
using StudyPress.Statistics.PostHoc;

namespace StudyPress.Kinds;

/// <summary>
/// <c>posthoc</c>: pairwise comparisons of one factor's levels in an anova block, with family-wise
/// error control and simultaneous intervals: Tukey HSD (Tukey–Kramer for unequal n), Games–Howell,
/// Holm or Bonferroni on pooled-variance t tests; with <c>control</c>, every level against the
/// control (Dunnett's test for <c>tukey</c>). <c>method: auto</c> follows the assumption checks.
/// </summary>
public sealed class PostHocKind : BlockKind
{
    public override string Name => "posthoc";

    public override string PrimaryTest => "posthoc";

    public override IReadOnlyList<string> OwnKeys { get; } = ["of", "factor", "method", "control"];

    public override bool AnalysesAnovaBlock => true;

    private static readonly string[] Methods = ["auto", "tukey", "games-howell", "holm", "bonferroni"];

    public sealed record Options(string? Factor, SourceLocation FactorLocation, string Method, string? Control, SourceLocation ControlLocation);

    public override object? BindOptions(KeyReader keys, BindContext context, DiagnosticBag diagnostics)
    {
        var f = keys.Scalar("factor");
        var c = keys.Scalar("control");
        return new Options(f?.Value, f?.Location ?? context.Syntax.Location, keys.Choice("method", Methods) ?? "auto", c?.Value, c?.Location ?? context.Syntax.Location);
    }

    public sealed class Family
    {
        public required string Test { get; init; }

        public required string Title { get; init; }

        public required PostHocResult Result { get; init; }

        public List<(PairwiseComparison Pair, Dictionary<string, ResultValue> Values)> Pairs { get; } = [];
    }

    public sealed class Outcome(BoundBlock block) : BlockOutcome(block)
    {
        public string FactorLabel { get; set; } = string.Empty;

        public List<Family> Families { get; } = [];

        public List<string> Decisions { get; } = [];

        public Dictionary<string, ResultValue> Multiplicity { get; } = new(StringComparer.Ordinal);

        public bool Transformed { get; set; }
    }

    public override BlockOutcome Evaluate(EvaluationContext context, BoundBlock block, DiagnosticBag diagnostics)
    {
        var options = (Options)block.Options!;
        if (context.Outcomes.GetValueOrDefault(block.Of!.Id) is AggregatedAnova.Outcome aggregated)
        {
            return AggregatedPostHoc.Evaluate(context, block, options, aggregated, diagnostics);
        }

        var outcome = new Outcome(block);
        if (context.Outcomes.GetValueOrDefault(block.Of!.Id) is not AnovaKind.Outcome { Result: not null } anova)
        {
            return outcome;
        }

        var factors = anova.Data!.Factors;
        BlockFactor? factor;
        if (options.Factor is { } name)
        {
            factor = factors.FirstOrDefault(f => f.Spec.Name == name);
            if (factor is null)
            {
                diagnostics.FactorNotInAnova(options.FactorLocation, name, block.Of.Id, DiagnosticBag.Nearest(name, factors.Select(f => f.Spec.Name)));
                return outcome;
            }
        }
        else if (factors.Count == 1)
        {
            factor = factors[0];
        }
        else
        {
            diagnostics.FactorChoiceNeeded(block.Location, block.Of.Id);
            return outcome;
        }

        var empty = SummaryKind.EmptyGroups(context, anova.Block, anova.Data);
        if (empty.Count > 0)
        {
            outcome.Notes.Add($"Group(s) without any observed response ({string.Join(", ", empty)}) are not compared: every response in them is missing.");
        }

        if (options.Control is { } control && !factor.Levels.Contains(control))
        {
            diagnostics.UnknownControl(options.ControlLocation, control, factor.Spec.Name, DiagnosticBag.Nearest(control, factor.Levels));
            return outcome;
        }

        outcome.FactorLabel = factor.Spec.Display;
        outcome.Transformed = anova.Transformed is not null;
        var levels = factor.Levels;
        var groups = factor.Split(anova.Input!.Response);
        var ms = anova.Result.ResidualMeanSquare;
        var df = anova.Result.ResidualDf;
        var alpha = context.Header.Alpha;
        var alphaText = alpha.ToString("R", CultureInfo.InvariantCulture);
        var method = options.Method;
        if (method == "auto")
        {
            var review = anova.Review;
            if (review.UnequalVariances)
            {
                method = "games-howell";
                outcome.Decisions.Add($"Rule fired (method: auto): the Brown–Forsythe test found unequal variances (p = {P(review.BrownForsythe.P)} < α = {alphaText}), so the Games–Howell procedure, which does not pool the variances, is used.");
            }
            else if (!review.BrownForsythe.P.IsDefined)
            {
                method = "tukey";
                outcome.Decisions.Add(options.Control is null
                    ? $"Method chosen (method: auto): Tukey's HSD; the Games–Howell rule did not fire because equal variances could not be checked (Brown–Forsythe: {review.BrownForsythe.P.Reason})."
                    : $"Method chosen (method: auto): Dunnett's comparisons with the control; the Games–Howell rule did not fire because equal variances could not be checked (Brown–Forsythe: {review.BrownForsythe.P.Reason}).");
            }
            else
            {
                method = "tukey";
                outcome.Decisions.Add(options.Control is null
                    ? $"Method chosen (method: auto): Tukey's HSD, since the Brown–Forsythe test found no evidence of unequal variances (p = {P(review.BrownForsythe.P)})."
                    : $"Method chosen (method: auto): Dunnett's comparisons with the control, since the Brown–Forsythe test found no evidence of unequal variances (p = {P(review.BrownForsythe.P)}).");
            }

            if (review.WantsRankTest)
            {
                outcome.Decisions.Add(string.Create(CultureInfo.InvariantCulture, $"Rule fired (method: auto): the residuals depart from normality (Shapiro–Wilk p = {P(review.Normality.P)}) and the smallest group has {review.SmallestGroup} observations, so Dunn's rank comparisons (Holm-adjusted) are shown as well."));
            }
        }

        if ((method is "tukey" or "holm" or "bonferroni") && !ms.IsDefined)
        {
            outcome.Warnings.Add("The residual mean square is not defined (" + ms.Reason + "), so the pooled-variance comparisons cannot be made.");
        }

        var msValue = ms.IsDefined ? ms.Value : double.NaN;
        var (test, title, result) = method switch
        {
            "tukey" when options.Control is not null => ("dunnett", "Dunnett's comparisons with the control", Dunnett.Compare(levels, groups, msValue, df, alpha, options.Control)),
            "tukey" => ("tukey_hsd", groups.Select(g => g.Length).Distinct().Count() > 1 ? "Tukey–Kramer comparisons (unequal group sizes)" : "Tukey HSD comparisons", TukeyHsd.Compare(levels, groups, msValue, df, alpha)),
            "games-howell" => ("games_howell", "Games–Howell comparisons (unequal variances allowed)", ControlOnly(GamesHowell.Compare(levels, groups, alpha), options.Control)),
            "holm" => ("holm", "Pooled-variance t tests, Holm-adjusted", PooledTTests.Compare(levels, groups, msValue, df, alpha, PValueAdjustmentMethod.Holm, options.Control)),
            _ => ("bonferroni", "Pooled-variance t tests, Bonferroni-adjusted", PooledTTests.Compare(levels, groups, msValue, df, alpha, PValueAdjustmentMethod.Bonferroni, options.Control)),
        };
        var inputs = context.Inputs(block);
        var term = factor.Spec.Name;
        outcome.Families.Add(Record(context, block, test, title, result, term, inputs));
        if (options.Method == "auto" && anova.Review.WantsRankTest)
        {
            var rawGroups = factor.Split(anova.Data.Response);
            outcome.Families.Add(Record(context, block, "dunn", "Dunn's rank comparisons (Holm-adjusted)", Dunn.Compare(levels, rawGroups, alpha, PValueAdjustmentMethod.Holm), term, inputs));
        }

        var m = result.Comparisons.Count;
        outcome.Multiplicity["m"] = context.Results.Add(block.Id, "family", term, null, null, "m", m, inputs);
        outcome.Multiplicity["fwer_unadjusted"] = context.Results.Add(block.Id, "family", term, null, null, "fwer_unadjusted", PValueAdjustment.FamilyWiseErrorRate(m, alpha), inputs);
        if (context.Header.Report.Figures && Figures.Intervals(outcome, alpha) is { } figure)
        {
            outcome.Figures.Add(figure);
        }

        if (groups.Any(g => g.Length < 2))
        {
            outcome.Warnings.Add("Some levels have a single observation: comparisons involving them rest entirely on the pooled variance (and are not defined for Games–Howell).");
        }

        return outcome;
    }

    internal static PostHocResult ControlOnly(PostHocResult all, string? control)
    {
        if (control is null)
        {
            return all;
        }

        // Keep the comparisons with the control, oriented as level − control.
        var kept = all.Comparisons
            .Where(c => c.LevelA == control || c.LevelB == control)
            .Select(c => c.LevelB == control ? c : c with
            {
                LevelA = c.LevelB,
                LevelB = c.LevelA,
                Diff = -c.Diff,
                Statistic = c.Statistic,
                CiLow = c.CiHigh.Map(v => -v),
                CiHigh = c.CiLow.Map(v => -v),
            })
            .ToList();
        return all with { Comparisons = kept };
    }

    internal static Family Record(EvaluationContext context, BoundBlock block, string test, string title, PostHocResult result, string term, IReadOnlyList<string> inputs)
    {
        var family = new Family { Test = test, Title = title, Result = result };
        foreach (var c in result.Comparisons)
        {
            string[] pair = [c.LevelA, c.LevelB];
            var values = new Dictionary<string, ResultValue>(StringComparer.Ordinal)
            {
                ["diff"] = context.Results.Add(block.Id, test, term, null, pair, "diff", c.Diff, inputs),
                ["se"] = context.Results.Add(block.Id, test, term, null, pair, "se", c.Se, inputs),
                ["statistic"] = context.Results.Add(block.Id, test, term, null, pair, "statistic", c.Statistic, inputs),
            };
            if (c.CiLow.IsDefined || test != "dunn")
            {
                values["ci_low"] = context.Results.Add(block.Id, test, term, null, pair, "ci_low", c.CiLow, inputs);
                values["ci_high"] = context.Results.Add(block.Id, test, term, null, pair, "ci_high", c.CiHigh, inputs);
            }

            values["p_adj"] = context.Results.Add(block.Id, test, term, null, pair, "p_adj", c.PAdjusted, inputs);
            family.Pairs.Add((c, values));
        }

        return family;
    }

    private static string P(Quantity p) => !p.IsDefined ? "not defined" : p.Value < 0.001 ? "< 0.001" : p.Value.ToString("F3", CultureInfo.InvariantCulture);

    public override void Render(HtmlWriter html, BlockOutcome outcome, RenderContext context)
    {
        var o = (Outcome)outcome;
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
                var cells = new List<string> { HtmlWriter.ValueHtml(v["diff"], context), HtmlWriter.ValueHtml(v["se"], context), HtmlWriter.ValueHtml(v["statistic"], context) };
                if (hasCi)
                {
                    cells.Add(HtmlWriter.ValueHtml(v["ci_low"], context) + " to " + HtmlWriter.ValueHtml(v["ci_high"], context));
                }

                cells.Add(HtmlWriter.ValueHtml(v["p_adj"], context));
                cells.Add(pair.PAdjusted.IsDefined ? (pair.PAdjusted.Value < context.Alpha ? "differ" : "not distinguished") : "not defined");
                table.Row(StudyPress.Charts.BidiText.Isolate(pair.LevelA) + " − " + StudyPress.Charts.BidiText.Isolate(pair.LevelB), cells);
            }

            table.WriteTo(html);
        }

        html.Raw("<p class=\"method\">").Text("Differences are first level minus second")
            .Text(o.Transformed ? ", on the transformed scale of the anova block" : string.Empty)
            .Text(". Adjusted p-values and intervals hold the family-wise error rate at α = " + context.AlphaText + " over the comparisons shown; without adjustment, ")
            .Raw(HtmlWriter.ValueHtml(o.Multiplicity["m"], context))
            .Text(" tests at α = " + context.AlphaText + " would carry a chance of at least one false positive of up to ")
            .Raw(HtmlWriter.ValueHtml(o.Multiplicity["fwer_unadjusted"], context))
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
