using StudyPress.Statistics.Distributions;
using StudyPress.Charts;
using System.Globalization;
using System.Runtime.CompilerServices;
using StudyPress.Binding.Kinds;
using StudyPress.Binding;
using StudyPress.Diagnostics;
using StudyPress.Evaluation.Kinds;
using StudyPress.Evaluation;
using StudyPress.Rendering;
using StudyPress.Statistics.Nonparametric;
using StudyPress.Statistics.PostHoc;
using StudyPress.Statistics;

namespace StudyPress.Rendering.Kinds;

/// <summary>Writes the HTML of <c>posthoc</c> blocks.</summary>
public sealed class PostHocRenderer : KindRenderer
{
    /// <summary>Registers this part of the kind (see DEVELOPERS.md, "Adding an analysis kind").</summary>
    [ModuleInitializer]
    internal static void Register() => KindRenderers.Register(new PostHocRenderer());

    public override string Kind => "posthoc";

    private const string CellsMethodNote = "The comparisons were computed from per-level counts, means and sums of squares computed by the database (aggregate: true) and the residual mean square of the anova block; they equal the comparisons on the rows.";

    /// <summary>A family's title: its table's caption and its intervals figure's heading.</summary>
    public static string Title(PostHocFamily family) => family.Procedure switch
    {
        PostHocProcedure.TukeyHsd => "Tukey HSD comparisons",
        PostHocProcedure.TukeyKramer => "Tukey–Kramer comparisons (unequal group sizes)",
        PostHocProcedure.Dunnett => "Dunnett's comparisons with the control",
        PostHocProcedure.DunnettGreater => "Dunnett's one-sided comparisons with the control (alternative: higher than the control)",
        PostHocProcedure.DunnettLess => "Dunnett's one-sided comparisons with the control (alternative: lower than the control)",
        PostHocProcedure.GamesHowell => "Games–Howell comparisons (unequal variances allowed)",
        PostHocProcedure.PooledHolm => "Pooled-variance t tests, Holm-adjusted",
        PostHocProcedure.PooledBonferroni => "Pooled-variance t tests, Bonferroni-adjusted",
        PostHocProcedure.Dunn => "Dunn's rank comparisons (Holm-adjusted)",
        PostHocProcedure.AdjustedTukeyKramer => "Tukey–Kramer-style comparisons of adjusted means (each pair's own standard error)",
        PostHocProcedure.AdjustedHolm => "t tests of adjusted-mean differences, Holm-adjusted (Bonferroni intervals)",
        PostHocProcedure.RemlTukeyKramer => "Tukey–Kramer comparisons of the mixed model's (REML) marginal means (each pair's own SE and Satterthwaite df)",
        PostHocProcedure.RemlHolm => "t tests of the mixed model's (REML) marginal-mean differences on Satterthwaite df, Holm-adjusted (Bonferroni intervals)",
        PostHocProcedure.RemlBonferroni => "t tests of the mixed model's (REML) marginal-mean differences on Satterthwaite df, Bonferroni-adjusted",
        _ => "t tests of adjusted-mean differences, Bonferroni-adjusted",
    };

    /// <summary>The comparisons' sentences in a methods paragraph: the automatic choice, the method, the results, multiplicity.</summary>
    public override IEnumerable<string> Methods(MethodsPart part, MethodsSection? section, BlockOutcome outcome, MethodsWriter w)
    {
        var p = (PostHocOutcome)outcome;
        if (p.Adjusted)
        {
            // Comparisons of an analysis of covariance: told beside its sentences, with the method.
            return part == MethodsPart.Results && w.Has("comparisons")
                ? [$"The adjusted means of {MethodsWriter.E(p.FactorLabel)} {w.T("were", "are")} compared pairwise by the analysis of covariance's own comparison ({MethodsWriter.E(p.Families[0].Result.Method)}), each difference with its own standard error from the covariance model, over {MethodsWriter.Df(p.Multiplicity[Stat.M])} comparisons at α = {w.AlphaText}.", .. MethodsComparisonResults(p, w)]
                : [];
        }

        return part switch
        {
            // Brief: the choice is told with the comparisons (when they are written).
            MethodsPart.Decisions when section is { } s && w.Has("decisions") && !(w.Brief && s.Anova.RowsAvailable && w.Has("comparisons")) => MethodsDecision(s, p, w),
            MethodsPart.Comparisons when w.Has("comparisons") => [w.Brief ? BriefComparison(section, p, w) : MethodsComparison(p, w)],
            MethodsPart.Results when w.Has("comparisons") => MethodsComparisonResults(p, w),
            MethodsPart.Cautions when section is not null => MethodsMultiplicity(p, w),
            _ => [],
        };
    }

    private static IEnumerable<string> MethodsMultiplicity(PostHocOutcome p, MethodsWriter w)
    {
        var m = p.Multiplicity[Stat.M];
        if (m.Value.IsDefined && m.Value.Value >= 6)
        {
            yield return $"With {MethodsWriter.Df(m)} comparisons, unadjusted tests at α = {w.AlphaText} would carry a chance of up to {ReportStyle.Number(p.Multiplicity[Stat.FwerUnadjusted])} of at least one false positive; the adjusted p-values and simultaneous intervals account for this.";
        }
    }

    private static IEnumerable<string> MethodsDecision(MethodsSection s, PostHocOutcome p, MethodsWriter w) =>
        s.Anova.RowsAvailable ? MethodsDecisionFromRows(s, p, w) : MethodsDecisionFromCells(s, p, w);

    private static IEnumerable<string> MethodsDecisionFromRows(MethodsSection s, PostHocOutcome p, MethodsWriter w)
    {
        var a = s.Anova;
        var popts = p.Block.OptionsOf<PostHocKind.Options>();
        if (popts.Method != "auto")
        {
            yield break;
        }

        var method = MethodsName(p.Families[0].Test, p);
        var bf = s.Review.GetValueOrDefault(TestName.BrownForsythe);
        var why = a.Review.UnequalVariances
            ? $"because the Brown–Forsythe test {w.T("indicated", "indicates")} unequal variances{(bf is null ? string.Empty : " (" + ReportStyle.PPhrase(bf[Stat.P]) + ")")}"
            : $"because the Brown–Forsythe test {w.T("gave", "gives")} no indication of unequal variances{(bf is null ? string.Empty : " (" + ReportStyle.PPhrase(bf[Stat.P]) + ")")}";
        yield return $"For the pairwise comparisons of {MethodsWriter.E(p.FactorLabel)}, {method} {w.T("was", "is")} chosen {why}"
            + (p.Families.Count > 1 ? $", and Dunn's rank comparisons (Holm-adjusted) {w.T("were", "are")} added because the residuals {w.T("departed", "depart")} from normality in small groups." : ".");
    }

    /// <summary>Cells route: the rules read Bartlett's test; Dunn's comparisons need the rows.</summary>
    private static IEnumerable<string> MethodsDecisionFromCells(MethodsSection s, PostHocOutcome p, MethodsWriter w)
    {
        var a = s.Anova;
        var popts = p.Block.OptionsOf<PostHocKind.Options>();
        if (popts.Method != "auto")
        {
            yield break;
        }

        var method = MethodsName(p.Families[0].Test, p);
        var over = a.Factors.Count == 1 ? "groups" : "cells";
        var why = p.Families[0].Test == "games_howell"
            ? $"because Bartlett's test over the {over} (used because the Brown–Forsythe test needs the rows) {w.T("indicated", "indicates")} unequal variances"
            : $"because Bartlett's test over the {over} (used because the Brown–Forsythe test needs the rows) {w.T("gave", "gives")} no indication of unequal variances";
        yield return $"For the pairwise comparisons of {MethodsWriter.E(p.FactorLabel)}, {method} {w.T("was", "is")} chosen {why}; Dunn's rank comparisons {w.T("were", "are")} not available, as they need the ranks of the rows.";
    }

    private static string MethodsName(string test, PostHocOutcome p) => p.Reml ? RemlMethodsName(test) : test switch
    {
        "tukey_hsd" => Title(p.Families[0]).StartsWith("Tukey–Kramer", StringComparison.Ordinal) ? "the Tukey–Kramer procedure (Tukey's HSD for unequal group sizes)" : "Tukey's HSD procedure",
        "games_howell" => "the Games–Howell procedure, which does not pool the variances,",
        "dunnett" => p.Direction switch
        {
            DunnettAlternative.Greater => "Dunnett's one-sided comparisons with the control (alternative: every level higher than the control)",
            DunnettAlternative.Less => "Dunnett's one-sided comparisons with the control (alternative: every level lower than the control)",
            _ => "Dunnett's comparisons with the control",
        },
        "holm" => "pooled-variance t tests with Holm's step-down adjustment",
        "bonferroni" => "pooled-variance t tests with the Bonferroni adjustment",
        _ => "Dunn's rank comparisons with Holm's adjustment",
    };

    /// <summary>The procedure over a mixed model's (REML) marginal means, in a methods sentence.</summary>
    private static string RemlMethodsName(string test) => test switch
    {
        "tukey_hsd" => "the Tukey–Kramer procedure on the estimated marginal means of the mixed model (REML), each pair on its own Satterthwaite df",
        "dunnett" => "Dunnett-type comparisons of the mixed model's (REML) estimated marginal means with the control (multivariate t on the smallest Satterthwaite df of the comparisons)",
        "holm" => "t tests of the mixed model's (REML) estimated marginal-mean differences on Satterthwaite df with Holm's step-down adjustment",
        _ => "t tests of the mixed model's (REML) estimated marginal-mean differences on Satterthwaite df with the Bonferroni adjustment",
    };

    /// <summary>
    /// Brief: the procedure, why the automatic rule chose it (citing the variance check only when
    /// the text has not told its verdict yet), Dunn's comparisons when added, and the error rate held.
    /// </summary>
    private static string BriefComparison(MethodsSection? s, PostHocOutcome p, MethodsWriter w)
    {
        var f = p.Families[0];
        var popts = p.Block.OptionsOf<PostHocKind.Options>();
        var factor = MethodsWriter.E(p.FactorLabel);
        var method = p.Reml ? RemlMethodsName(f.Test) : f.Test switch
        {
            "tukey_hsd" => Title(f).StartsWith("Tukey–Kramer", StringComparison.Ordinal) ? "the Tukey–Kramer procedure" : "Tukey's HSD procedure",
            "games_howell" => "the Games–Howell procedure (variances not pooled)",
            "dunnett" => "Dunnett's procedure",
            "holm" => "pooled-variance t tests with Holm's adjustment",
            "bonferroni" => "pooled-variance t tests with the Bonferroni adjustment",
            _ => "Dunn's rank comparisons (Holm-adjusted)",
        };
        if (popts.Method == "auto" && s is { Anova.RowsAvailable: true } section)
        {
            var unequal = section.Anova.Review.UnequalVariances;
            var bf = section.Review.GetValueOrDefault(TestName.BrownForsythe);
            var verdict = unequal ? $"the variances {w.T("differed", "differ")}" : $"the variances {w.T("were", "are")} not found to differ";
            if (!w.Told(MethodsWriter.VariancesFact(section)))
            {
                verdict = (unequal ? $"the Brown–Forsythe test {w.T("found", "finds")} unequal variances" : $"the Brown–Forsythe test {w.T("found", "finds")} no evidence of unequal variances")
                    + (bf is null ? string.Empty : " (" + ReportStyle.PPhrase(bf[Stat.P]) + ")");
                w.Tell(MethodsWriter.VariancesFact(section));
            }

            method = method.Replace(" (variances not pooled)", string.Empty, StringComparison.Ordinal) + $", chosen because {verdict},";
            if (p.Families.Count > 1)
            {
                method += w.Tell(MethodsWriter.NormalityFact(section))
                    ? $" and by Dunn's rank comparisons (Holm-adjusted), added because the residuals {w.T("departed", "depart")} from normality in small groups,"
                    : " and by Dunn's rank comparisons (Holm-adjusted),";
            }
        }
        else if (p.Families.Count > 1)
        {
            method += " and by Dunn's rank comparisons (Holm-adjusted)";
        }

        var control = popts.Control;
        var text = control is null
            ? w.Did($"pairs of {factor} levels", true, "compared", "compared", "compare", $" by {method}")
            : w.Did($"each level of {factor}", false, "compared", "compared", "compare", $" with the control {MethodsWriter.E(control)} by {method}");
        text = text.EndsWith(',') ? text : text + ",";
        text += $" {(p.Families.Count > 1 ? "each holding" : "holding")} the family-wise error rate at α over {MethodsWriter.Df(p.Multiplicity[Stat.M])} comparisons";
        var hasCi = f.Pairs.Count > 0 && f.Pairs[0].Values.ContainsKey(Stat.CiLow);
        text += hasCi ? ", with simultaneous intervals" : string.Empty;
        text += p.Transformed ? "; differences are on the transformed scale." : ".";
        return text;
    }

    private static string MethodsComparison(PostHocOutcome p, MethodsWriter w)
    {
        var f = p.Families[0];
        var control = p.Block.OptionsOf<PostHocKind.Options>().Control;
        var what = control is null
            ? $"pairwise differences between the levels of {MethodsWriter.E(p.FactorLabel)}"
            : $"the differences of each level of {MethodsWriter.E(p.FactorLabel)} from the control {MethodsWriter.E(control)}";
        var method = MethodsName(f.Test, p).Replace(", which does not pool the variances,", " (variances not pooled)", StringComparison.Ordinal);
        var text = w.Did(what, true, "tested", "tested", "test", $" with {method}, which {w.T("held", "holds")} the family-wise error rate at α = {w.AlphaText} over the {MethodsWriter.Df(p.Multiplicity[Stat.M])} comparisons");
        var hasCi = f.Pairs.Count > 0 && f.Pairs[0].Values.ContainsKey(Stat.CiLow);
        text += hasCi ? $", with simultaneous {w.Confidence}% intervals" : string.Empty;
        text += p.Transformed ? "; differences are on the transformed scale." : ".";
        return text;
    }

    private static IEnumerable<string> MethodsComparisonResults(PostHocOutcome p, MethodsWriter w)
    {
        foreach (var f in p.Families)
        {
            var differ = f.Pairs.Where(x => x.Pair.PAdjusted.IsDefined && x.Pair.PAdjusted.Value < w.Outcome.Alpha).ToList();
            var name = f.Test == "dunn" ? "In Dunn's rank comparisons" : $"In the comparisons of {MethodsWriter.E(p.FactorLabel)}";
            if (f.Test == "dunnett" && p.Direction != DunnettAlternative.TwoSided)
            {
                var way = p.Direction == DunnettAlternative.Greater ? "higher" : "lower";
                var shown = differ.Select(x => $"{MethodsWriter.E(x.Pair.LevelA)} − {MethodsWriter.E(x.Pair.LevelB)} ({MethodsPair(f.Test, x.Values, w)})").ToList();
                yield return shown.Count == 0
                    ? $"{name} with the control (one-sided), no level {w.T("was", "is")} shown {way} than the control at the family-wise level α = {w.AlphaText}; this does not show that the levels equal the control."
                    : $"{name} with the control (one-sided), these levels {w.T("were", "are")} shown {way} than the control at the family-wise level α = {w.AlphaText}: {string.Join("; ", shown)}."
                        + (shown.Count < f.Pairs.Count ? $" The others {w.T("were", "are")} not shown {way}, which does not show that they equal the control." : string.Empty);
                continue;
            }

            if (differ.Count == 0)
            {
                yield return $"{name}, no pair {w.T("differed", "differs")} at the family-wise level α = {w.AlphaText}; this does not show that the levels are equal.";
                continue;
            }

            var items = differ.Select(x => $"{MethodsWriter.E(x.Pair.LevelA)} − {MethodsWriter.E(x.Pair.LevelB)} ({MethodsPair(f.Test, x.Values, w)})");
            var text = $"{name}, {(differ.Count == f.Pairs.Count ? "every pair " + w.T("differed", "differs") : "these pairs " + w.T("differed", "differ"))} at the family-wise level α = {w.AlphaText}: {string.Join("; ", items)}.";
            if (differ.Count < f.Pairs.Count)
            {
                text += $" The other pairs {w.T("were", "are")} not distinguished, which does not show that they are equal.";
            }

            yield return text;
        }
    }

    private static string MethodsPair(string test, IReadOnlyDictionary<string, ResultValue> v, MethodsWriter w)
    {
        var text = test == "dunn" ? $"difference in mean rank = {MethodsWriter.S2(v[Stat.Diff])}" : $"difference = {MethodsWriter.S2(v[Stat.Diff])}";
        if (v.TryGetValue(Stat.CiLow, out var lo) && v.TryGetValue(Stat.CiHigh, out var hi))
        {
            text += !hi.Value.IsDefined && lo.Value.IsDefined ? $", one-sided {w.Confidence}% bound [{MethodsWriter.S2(lo)}, +∞)"
                : !lo.Value.IsDefined && hi.Value.IsDefined ? $", one-sided {w.Confidence}% bound (−∞, {MethodsWriter.S2(hi)}]"
                : $", {w.Confidence}% CI [{MethodsWriter.S2(lo)}, {MethodsWriter.S2(hi)}]";
        }

        return text + ", " + ReportStyle.PPhrase(v[Stat.PAdj], "adjusted p");
    }

    public override IEnumerable<string> Warnings(BlockOutcome outcome, RenderContext context)
    {
        if (outcome is not PostHocOutcome o)
        {
            yield break;
        }

        if (o.UndefinedResidual is { } reason)
        {
            yield return "The residual mean square is not defined (" + reason + "), so the pooled-variance comparisons cannot be made.";
        }

        if (o.SingleObservationLevels)
        {
            yield return "Some levels have a single observation: comparisons involving them rest entirely on the pooled variance (and are not defined for Games–Howell).";
        }

        foreach (var (termLabels, others, p) in o.Interactions)
        {
            var other = string.Join(" and ", others);
            var term = string.Join(" × ", termLabels);
            yield return $"The anova found the interaction {term} at α = {context.AlphaText} ({ReportStyle.PText(p.Value.Value, context.Format)}): the effect of {o.FactorLabel} depends on {other}. These comparisons average over the levels of {other}, so a difference here may be absent, or reversed, at some level of {other}; compare the levels of {o.FactorLabel} within each level of {other} instead (for example, an anova block with 'where' restricted to one level of {other}, and its posthoc block).";
        }
    }

    public override IEnumerable<string> Notes(BlockOutcome outcome, RenderContext context)
    {
        if (outcome is not PostHocOutcome o)
        {
            yield break;
        }

        if (o.EmptyGroups.Count > 0)
        {
            yield return $"{MethodsWriter.Cap(NumberText.Noun(o.EmptyGroups.Count, "group"))} without any observed response ({string.Join(", ", o.EmptyGroups)}) {(o.EmptyGroups.Count == 1 ? "is" : "are")} not compared: every response in them is missing.";
        }

        if (o.Adjusted)
        {
            yield return $"These are comparisons of ADJUSTED means (every covariate at its mean), not of the raw means, by the analysis of covariance's own comparison: {o.Families[0].Result.Method}. Each difference has its own standard error from the covariance model; they assume parallel slopes (see the homogeneity-of-slopes test of the anova block).";
        }

        if (o.MultivariateTError is { } error)
        {
            yield return $"The comparisons with the control share the control's {(o.Reml ? "marginal mean and the model's variance components" : "adjusted mean and the covariates' slopes")}, so their correlations follow no product pattern: the adjusted p-values and the critical value come from the multivariate t distribution with the correlations of these adjusted differences, integrated by the randomized quasi-Monte Carlo method of Genz and Bretz (2002, 2009) with a fixed seed (the same data always give the same numbers). Its estimated absolute error ({NumberText.Fixed(MultivariateT.ErrorFactor, 1)} standard errors of the mean of {NumberText.Whole(MultivariateT.Shifts)} randomly shifted lattice rules) is at most {context.Format.General(error)} for these probabilities; each adjusted p-value is also kept between the unadjusted p-value and its Bonferroni bound.";
        }

        if (o.FromCells)
        {
            yield return CellsMethodNote;
        }

        if (o.Reml)
        {
            yield return RemlNote(o, context);
        }

        if (o.DesignError is { } e)
        {
            var term = e.Term == "residual" ? "the residual" : "the " + e.Term.Replace("(", " (in ", StringComparison.Ordinal);
            yield return string.Create(System.Globalization.CultureInfo.InvariantCulture, $"The comparisons use {term} mean square ({context.Format.Format(Stat.Ms, e.MeanSquare)} on {e.Df} df), the error against which the anova tested {o.FactorLabel}, so their standard errors respect the layout of the study.");
        }
    }

    /// <summary>What the comparisons of a mixed-model (REML) fit are, in words.</summary>
    private static string RemlNote(PostHocOutcome o, RenderContext context)
    {
        var text = $"The anova block fitted the design as a linear mixed model by REML, so these comparisons come from that model: each difference is one of its estimated marginal means of {o.FactorLabel} (equal weights over the other treatments' levels) minus another, with its standard error from the covariance of the fixed effects (which carries every variance component the difference depends on) and its own Satterthwaite degrees of freedom (column df; Fai and Cornelius 1996), so the error is the right one for the layout even where the data are unbalanced.";
        if (o.Families[0].Procedure == PostHocProcedure.RemlTukeyKramer)
        {
            text += " Tukey–Kramer: each pair's p-value and interval use the studentized range of all the means on that pair's own df, an approximation when the df differ.";
        }

        if (o.ControlDf is { } df)
        {
            text += $" The comparisons with the control are tested jointly by the multivariate t distribution with their correlations from the model, on one df: the smallest of their Satterthwaite df ({context.Format.General(df)}), which is conservative when they differ.";
        }

        return text;
    }

    /// <summary>
    /// The statistic's column header, saying how it follows from the columns beside it: Tukey's and
    /// Games–Howell's q is √2 |difference| / SE (the studentized range is scaled by the standard
    /// error of one mean, SE/√2 for equal weights); t and z are difference / SE.
    /// </summary>
    internal static string StatisticHeader(string test) => test switch
    {
        "tukey_hsd" or "games_howell" or "nemenyi" => "q = √2 × |difference| / SE",
        "dunn" => "z = difference / SE",
        _ => "t = difference / SE",
    };

    /// <summary>The headers of a table of pairs: the verdict first, then the estimate (with its interval), its SE, the statistic and the adjusted p.</summary>
    internal static List<string> PairHeaders(string test, string difference, string? interval, RenderContext context) =>
    [
        "Pair",
        "at α = " + context.AlphaText,
        interval is null ? difference : $"{difference} [{interval}]",
        "SE of the difference",
        StatisticHeader(test),
        "adjusted p",
    ];

    /// <summary>A one-sided Dunnett pair's verdict at the study's alpha: shown in the stated direction, or not shown (which is not the opposite).</summary>
    internal static string OneSidedVerdict(Quantity pAdjusted, DunnettAlternative direction, RenderContext context)
    {
        var way = direction == DunnettAlternative.Greater ? "higher" : "lower";
        return pAdjusted.IsDefined ? (pAdjusted.Value < context.Alpha ? way + " than the control" : "not shown " + way) : "not defined";
    }

    /// <summary>A pair's verdict at the study's alpha, from its adjusted p-value.</summary>
    internal static string Verdict(Quantity pAdjusted, RenderContext context) =>
        pAdjusted.IsDefined ? (pAdjusted.Value < context.Alpha ? "differ" : "not distinguished") : "not defined";

    public override void Render(HtmlWriter html, BlockOutcome outcome, RenderContext context)
    {
        var o = (PostHocOutcome)outcome;
        if (o.Families.Count == 0)
        {
            return;
        }

        var level = context.ConfidenceText + "%";
        foreach (var f in o.Families)
        {
            // The verdict leads; the estimate and its interval share one cell; the statistic's
            // header shows how it follows from the difference and the SE printed beside it.
            var hasCi = f.Pairs.Count > 0 && f.Pairs[0].Values.ContainsKey(Stat.CiLow);
            var difference = f.Test == "dunn" ? "difference in mean rank" : "difference";
            var oneSided = f.Test == "dunnett" && o.Direction != DunnettAlternative.TwoSided;
            var headers = PairHeaders(f.Test, difference, hasCi ? level + (oneSided ? " one-sided joint bound" : " joint interval") : null, context);
            if (oneSided)
            {
                headers[^1] = o.Direction == DunnettAlternative.Greater ? "adjusted p (one-sided: higher)" : "adjusted p (one-sided: lower)";
            }
            if (o.Reml)
            {
                headers.Insert(headers.Count - 1, "df (Satterthwaite)");
            }

            var caption = (o.Block.Caption ?? Title(f)) + " of " + o.FactorLabel;
            var table = new HtmlTable("pairs", caption, headers) { TextColumns = [1] };
            foreach (var (pair, v) in f.Pairs)
            {
                var estimate = HtmlWriter.ValueHtml(v[Stat.Diff], context);
                if (hasCi && oneSided)
                {
                    estimate += o.Direction == DunnettAlternative.Greater
                        ? " [" + HtmlWriter.ValueHtml(v[Stat.CiLow], context) + ", +∞)"
                        : " (−∞, " + HtmlWriter.ValueHtml(v[Stat.CiHigh], context) + "]";
                }
                else if (hasCi)
                {
                    estimate += " [" + HtmlWriter.ValueHtml(v[Stat.CiLow], context) + ", " + HtmlWriter.ValueHtml(v[Stat.CiHigh], context) + "]";
                }

                var verdict = oneSided ? OneSidedVerdict(pair.PAdjusted, o.Direction, context) : Verdict(pair.PAdjusted, context);
                List<string> cells = [verdict, estimate, HtmlWriter.ValueHtml(v[Stat.Se], context), HtmlWriter.ValueHtml(v[Stat.Statistic], context), HtmlWriter.ValueHtml(v[Stat.PAdj], context)];
                if (o.Reml)
                {
                    cells.Insert(cells.Count - 1, HtmlWriter.ValueHtml(v[Stat.Df], context));
                }

                table.Row(
                    StudyPress.Charts.BidiText.Isolate(pair.LevelA) + " − " + StudyPress.Charts.BidiText.Isolate(pair.LevelB),
                    cells);
            }

            table.WriteTo(html);
        }

        if (o.Families[0].Test == "dunnett" && o.Direction != DunnettAlternative.TwoSided)
        {
            var way = o.Direction == DunnettAlternative.Greater ? "higher" : "lower";
            html.Raw("<p class=\"method\">").Text($"Alternative: every level {way} than the control (one-sided, as 'direction: {way}' asks). Dunnett's one-sided test only looks for differences in that direction: a level {(way == "higher" ? "lower" : "higher")} than the control, however far, is not detected, and \"not shown {way}\" is not evidence of no difference. " + (o.Reml ? "The one-sided simultaneous bounds and adjusted p-values come from the multivariate t distribution with the correlations of the mixed model's marginal-mean differences, integrated by quasi-Monte Carlo (see the note below)." : o.Adjusted ? "The one-sided simultaneous bounds and adjusted p-values come from the multivariate t distribution with the adjusted means' own correlations, integrated by quasi-Monte Carlo (see the note below)." : "The one-sided simultaneous bounds and adjusted p-values come from the exact multivariate t distribution with the correlations of the group sizes (Dunnett 1955), integrated numerically.")).Raw("</p>");
        }

        html.Raw("<p class=\"method\">").Text("Differences are first level minus second")
            .Text(o.Transformed ? ", on the transformed scale of the anova block" : string.Empty)
            .Text(". Adjusted p-values and intervals hold the family-wise error rate at α = " + context.AlphaText + " over the comparisons shown; without adjustment, ")
            .Raw(HtmlWriter.ValueHtml(o.Multiplicity[Stat.M], context))
            .Text(" tests at α = " + context.AlphaText + " would carry a chance of at least one false positive of up to ")
            .Raw(HtmlWriter.ValueHtml(o.Multiplicity[Stat.FwerUnadjusted], context))
            .Text(" (1 − (1 − α)").Raw("<sup>m</sup>").Text(", for independent tests).").Raw("</p>");
        html.Raw("<div class=\"reading\">");
        foreach (var d in o.Decisions)
        {
            html.Raw("<p class=\"decision\">").Text(Decisions.Text(d, context.AlphaText)).Raw("</p>");
        }

        var main = o.Families[0];
        var differ = main.Pairs.Count(p => p.Pair.PAdjusted.IsDefined && p.Pair.PAdjusted.Value < context.Alpha);
        if (main.Test == "dunnett" && o.Direction != DunnettAlternative.TwoSided)
        {
            var way = o.Direction == DunnettAlternative.Greater ? "higher" : "lower";
            html.Raw("<p>").Text(string.Create(CultureInfo.InvariantCulture, $"{differ} of {NumberText.Count(main.Pairs.Count, "level")} {(differ == 1 ? "is" : "are")} shown {way} than the control at the family-wise level α = {context.AlphaText} (one-sided). \"Not shown {way}\" means the data do not establish that direction, not that the level equals the control.")).Raw("</p>");
            html.Raw("</div>");
            return;
        }

        html.Raw("<p>").Text(string.Create(CultureInfo.InvariantCulture, $"{differ} of {NumberText.Count(main.Pairs.Count, "comparison")} {(differ == 1 ? "differs" : "differ")} at the family-wise level α = {context.AlphaText}. \"Not distinguished\" means the data cannot tell those levels apart at this level, not that they are equal; the intervals show how large a difference remains compatible with the data.")).Raw("</p>");
        html.Raw("</div>");
    }

    /// <inheritdoc/>
    public override IReadOnlyList<string> PhrasedTests => ["tukey_hsd", "games_howell", "holm", "bonferroni", "dunnett"];

    /// <inheritdoc/>
    public override string? ResultSentence(ResultValue member, IReadOnlyDictionary<string, ResultValue> group, ResultSet all, double alpha, out string? why)
    {
        why = null;
        return Sentences.Pairwise(group, alpha, "difference", withZ: false);
    }

    /// <inheritdoc/>
    public override IReadOnlyDictionary<string, string> ProcedureNames { get; } = new Dictionary<string, string>(StringComparer.Ordinal)
    {
        ["tukey_hsd"] = "Tukey",
        ["games_howell"] = "Games–Howell",
        ["holm"] = "Holm",
        ["bonferroni"] = "Bonferroni",
        ["dunnett"] = "Dunnett",
    }.AsReadOnly();

    /// <summary>The comparisons of means: a pair is followed across these procedures when the method changes.</summary>
    public override IReadOnlyDictionary<string, string> DiffPairTests { get; } = new Dictionary<string, string>(StringComparer.Ordinal)
    {
        ["tukey_hsd"] = "means",
        ["games_howell"] = "means",
        ["holm"] = "means",
        ["bonferroni"] = "means",
        ["dunnett"] = "means",
    }.AsReadOnly();

    /// <inheritdoc/>
    public override IReadOnlyList<string> DiffProcedureTests => ["tukey_hsd", "games_howell", "holm", "bonferroni", "dunnett"];
}
