using StudyPress.Charts;
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

    private const string CellsMethodNote = "ANOVA table, level means, Welch's F and Bartlett's test were computed from per-cell counts, means and sums of squares computed by the database (aggregate: true). The checks that need the rows (normality of the residuals, Brown–Forsythe/Levene, outliers, run order), the Kruskal–Wallis test and the figures were not run: the rows were not loaded.";

    /// <summary>The anova's sentences in a methods paragraph: design, model, decisions, effects, cautions.</summary>
    public override IEnumerable<string> Methods(MethodsPart part, MethodsSection? section, BlockOutcome outcome, MethodsWriter w)
    {
        if (outcome is AnovaOutcome { Ancova: { } c } covariance)
        {
            // An analysis of covariance is told in one place, like a design anova.
            return part == MethodsPart.Results ? CovariateRendering.MethodsSentences(covariance, c, w) : [];
        }

        if (outcome is AnovaOutcome { Design: { } d } design)
        {
            // A design anova is told outside the one-way/factorial sections, all in one place.
            return part == MethodsPart.Results ? DesignRendering.MethodsSentences(design, d, w) : [];
        }

        if (section is not { } s)
        {
            return [];
        }

        return part switch
        {
            MethodsPart.Design when s.Covered && w.Has("design") => [w.Brief ? BriefDesign(s, w) : MethodsDesign(s, w)],
            MethodsPart.Model when s.Covered && w.Has("model") => [w.Brief ? BriefModel(s, w) : MethodsModel(s, w)],
            MethodsPart.Assumptions when w.Has("assumptions") && s.Covered && !s.Anova.RowsAvailable => [MethodsNotComputed(w)],
            MethodsPart.Decisions when w.Has("decisions") => w.Brief && s.Anova.RowsAvailable ? BriefDecisions(s, w) : MethodsDecisions(s, w),
            MethodsPart.Results when s.Covered && w.Has("effects") => MethodsEffects(s, w),
            MethodsPart.Cautions => MethodsCautions(s, w),
            _ => [],
        };
    }

    private static IEnumerable<string> MethodsCautions(MethodsSection s, MethodsWriter w)
    {
        var a = s.Anova;
        var smallest = s.Cells.Min(c => c.N.Value.IsDefined ? c.N.Value.Value : 0);
        var which = w.Which(s);
        if (smallest < 5)
        {
            yield return a.RowsAvailable
                ? $"Some groups{which} have fewer than five observations, so the tests have little power to detect differences and the assumption checks can say little."
                : $"Some groups{which} have fewer than five observations, so the tests have little power to detect differences.";
        }

        var failed = a.RowsAvailable ? w.Failed(a.Review) : [];
        if ((s.Checks is not null || s.Review.Count > 0) && failed.Count > 0)
        {
            var fix = a.ReadWelch && !a.Review.NonNormal && !a.Review.Dependent && !a.Review.HasOutliers
                ? " Welch's test allows for the unequal variances; the effect sizes and pooled-variance intervals still assume them equal."
                : " Read the results with that in mind; a transformation or a rank test may suit these data better.";
            yield return $"The checks{which} questioned the model's assumptions: {MethodsWriter.List(failed)}.{fix}";
        }

        var unbalanced = s.Cells.Select(c => c.N.Value.Value).Distinct().Count() > 1;
        var opts = a.Block.OptionsOf<AnovaKind.Options>();
        if (unbalanced && a.Factors.Count > 1 && opts.Interaction)
        {
            yield return $"The design{which} is unbalanced and includes interactions: the main-effect tests depend on the type of sums of squares, and a main effect is hard to interpret when its factor interacts with another.";
        }
    }

    /// <summary>Brief: the observations, the groups and their sizes in one sentence.</summary>
    private static string BriefDesign(MethodsSection s, MethodsWriter w)
    {
        var a = s.Anova;
        var block = a.Block;
        var sb = $"The analysis {w.T("used", "uses")} {MethodsWriter.Df(s.Total!)} observations of {MethodsWriter.E(a.ResponseLabel)}";
        if (block.Where.Count > 0)
        {
            sb += " (rows where " + MethodsWriter.List(block.Where.Select(w => MethodsWriter.E(w.Factor.Display) + " is " + (w.Levels.Count == 1 ? MethodsWriter.E(w.Levels[0]) : "one of " + MethodsWriter.List(w.Levels.Select(MethodsWriter.E))))) + ")";
        }

        var factors = MethodsFactorLevels(a);
        var equal = s.Cells.Select(c => c.N.Value.IsDefined ? c.N.Value.Value : -1).Distinct().Count() == 1;
        var sizes = CellSizes(s.Cells);
        if (factors.Count == 1)
        {
            var f = factors[0];
            sb += equal
                ? $", {MethodsWriter.Df(s.Cells[0].N)} in each of the {MethodsWriter.Words(f.Levels.Count)} levels of {MethodsWriter.E(f.Display)} ({MethodsWriter.List(f.Levels.Select(MethodsWriter.E))})."
                : $" in the {MethodsWriter.Words(f.Levels.Count)} levels of {MethodsWriter.E(f.Display)}, with group sizes {sizes}.";
        }
        else
        {
            var crossed = string.Join(" × ", factors.Select(f => MethodsWriter.E(f.Display) + " (" + MethodsWriter.List(f.Levels.Select(MethodsWriter.E)) + ")"));
            sb += equal
                ? $", {MethodsWriter.Df(s.Cells[0].N)} in each of the {MethodsWriter.Words(s.Cells.Count)} cells of {crossed}."
                : $" in the {MethodsWriter.Words(s.Cells.Count)} cells of {crossed}, with unequal sizes{(s.Cells.Count <= 6 ? ":" : string.Empty)} {sizes}.";
        }

        if (!MethodsWriter.Is(s.Dropped, 0))
        {
            var one = MethodsWriter.Is(s.Dropped, 1);
            sb += $" {MethodsWriter.Df(s.Dropped!)} {(one ? "row" : "rows")} with a missing value {w.Be(!one)} left out.";
        }

        if (!a.RowsAvailable)
        {
            sb += $" The rows {w.Be(true)} not read: the database aggregated them into per-cell counts, means and sums of squares (aggregate: true).";
        }

        return sb;
    }

    /// <summary>
    /// Unequal group or cell sizes for the methods text: each one by its label when there are at
    /// most six, otherwise their range (a long list of long level names would drown the sentence;
    /// the sizes are in the summary and anova tables).
    /// </summary>
    private static string CellSizes(IReadOnlyList<(string Label, ResultValue N)> cells)
    {
        if (cells.Count <= 6 || cells.Any(c => !c.N.Value.IsDefined))
        {
            return string.Join(", ", cells.Select(c => MethodsWriter.E(c.Label) + " " + MethodsWriter.Df(c.N)));
        }

        var smallest = cells.MinBy(c => c.N.Value.Value);
        var largest = cells.MaxBy(c => c.N.Value.Value);
        return $"from {MethodsWriter.Df(smallest.N)} to {MethodsWriter.Df(largest.N)}";
    }

    /// <summary>Brief: the model, α and the effect size in one sentence.</summary>
    private static string BriefModel(MethodsSection s, MethodsWriter w)
    {
        var a = s.Anova;
        var opts = a.Block.OptionsOf<AnovaKind.Options>();
        var k = a.Factors.Count;
        var way = k switch { 1 => "a one-way", 2 => "a two-way", 3 => "a three-way", _ => "a factorial" };
        var subject = $"{way} fixed-effects analysis of variance";
        var rest = string.Empty;
        if (k > 1)
        {
            var names = MethodsWriter.List(a.Factors.Select(f => MethodsWriter.E(f.Display)));
            rest += opts.Interaction
                ? $" with {MethodsWriter.List(a.Factors.Select(f => MethodsWriter.E(f.Display)).Append(k == 2 ? "their interaction" : "their interactions"))}"
                : $" with {names}, without interactions,";
        }

        rest += a.RowsAvailable ? " by least squares" : " by weighted least squares on the cell means";
        if (k > 1)
        {
            rest += a.Fit!.SsType switch
            {
                Statistics.Anova.SumOfSquaresType.Sequential => " (type 1 sums of squares)",
                Statistics.Anova.SumOfSquaresType.Hierarchical => " (type 2 sums of squares)",
                _ => " (type 3 sums of squares, sum-to-zero coding)",
            };
        }

        if (a.Transformed is { } t)
        {
            rest += t.Kind switch
            {
                Statistics.Anova.TransformKind.Log => ", on the natural logarithm of the response",
                Statistics.Anova.TransformKind.Log10 => ", on the common logarithm of the response",
                Statistics.Anova.TransformKind.Sqrt => ", on the square root of the response",
                Statistics.Anova.TransformKind.Reciprocal => ", on the reciprocal of the response",
                _ => $", on the Box–Cox transform of the response (λ = {MethodsWriter.S2(a.BoxCox[Stat.Lambda])})",
            };
        }

        var text = w.Did(subject, false, "fitted", "fitted", "fit", rest);
        text += w.Has("effects")
            ? $"; tests {w.T("used", "use")} α = {w.AlphaText}, and effect sizes {w.Be(true)} partial η² with {w.Confidence}% confidence intervals (noncentral F)."
            : $"; tests {w.T("used", "use")} α = {w.AlphaText}.";
        if (a.Transformed is not null)
        {
            text += $" Means {w.Be(true)} reported back-transformed.";
        }

        return text;
    }

    /// <summary>
    /// Brief: what the automatic rules decided. When the checks were told before (an assumptions
    /// block), the decision refers to them; otherwise the check the rule read is cited here, once.
    /// </summary>
    private static IEnumerable<string> BriefDecisions(MethodsSection s, MethodsWriter w)
    {
        var a = s.Anova;
        var opts = a.Block.OptionsOf<AnovaKind.Options>();
        var data = a.Data!;
        if (data.Factors.Count != 1 || !s.Covered)
        {
            yield break;
        }

        var bf = s.Review.GetValueOrDefault(TestName.BrownForsythe);
        var sentences = new List<string>();
        if (opts.Welch == "yes")
        {
            sentences.Add(w.Active
                ? $"We also {w.T("computed", "compute")} Welch's F test, which does not assume equal variances, as requested"
                : $"Welch's F test, which does not assume equal variances, {w.Be(false)} computed as well, as requested");
        }
        else if (opts.Welch == "auto" && bf is not null)
        {
            var told = w.Told(MethodsWriter.VariancesFact(s));
            if (!bf[Stat.P].Value.IsDefined)
            {
                sentences.Add($"Equal variances could not be checked, so the ordinary F test {w.T("was", "is")} kept");
            }
            else if (a.Review.UnequalVariances)
            {
                sentences.Add((told ? "Welch's F test therefore " : $"Because the Brown–Forsythe test {w.T("found", "finds")} unequal variances ({ReportStyle.PPhrase(bf[Stat.P])}), Welch's F test ")
                    + $"{w.T("replaced", "replaces")} the ordinary F test");
            }
            else
            {
                sentences.Add(told
                    ? $"The ordinary F test {w.T("was", "is")} therefore kept"
                    : $"The Brown–Forsythe test {w.T("found", "finds")} no evidence of unequal variances ({ReportStyle.PPhrase(bf[Stat.P])}), so the ordinary F test {w.T("was", "is")} kept");
            }

            w.Tell(MethodsWriter.VariancesFact(s));
        }

        if (opts.Welch == "auto" && a.Review.WantsRankTest && s.Review.GetValueOrDefault(TestName.ShapiroWilk) is { } sw)
        {
            // The group sizes were given with the design; the smallest is cited only when they differ.
            var smallest = s.Cells.OrderBy(c => c.N.Value.IsDefined ? c.N.Value.Value : double.MaxValue).First();
            var small = s.Cells.Select(c => c.N.Value.IsDefined ? c.N.Value.Value : -1).Distinct().Count() == 1 && w.Has("design")
                ? "in small groups"
                : $"in small groups (smallest n = {MethodsWriter.Df(smallest.N)})";
            var added = w.Active ? $"we also {w.T("ran", "run")} the Kruskal–Wallis test" : $"the Kruskal–Wallis test {w.Be(false)} added";
            if (w.Told(MethodsWriter.NormalityFact(s)))
            {
                var clause = $"{added} for the non-normal residuals {small}";
                if (sentences.Count > 0)
                {
                    sentences[^1] += ", and " + clause;
                }
                else
                {
                    sentences.Add(MethodsWriter.Cap(clause));
                }
            }
            else
            {
                sentences.Add($"Because the residuals {w.T("departed", "depart")} from normality (Shapiro–Wilk {ReportStyle.PPhrase(sw[Stat.P])}) {small}, {added}");
            }

            w.Tell(MethodsWriter.NormalityFact(s));
        }

        foreach (var sentence in sentences)
        {
            yield return sentence + ".";
        }
    }

    private static string MethodsDesign(MethodsSection s, MethodsWriter w)
    {
        var a = s.Anova;
        var block = a.Block;
        var response = MethodsWriter.E(a.ResponseLabel);
        var sb = $"The analysis {w.T("used", "uses")} {MethodsWriter.Df(s.Total!)} observations of {response}";
        if (block.Where.Count > 0)
        {
            sb += ", restricted to rows where " + MethodsWriter.List(block.Where.Select(w => MethodsWriter.E(w.Factor.Display) + " is " + (w.Levels.Count == 1 ? MethodsWriter.E(w.Levels[0]) : "one of " + MethodsWriter.List(w.Levels.Select(MethodsWriter.E)))));
        }

        sb += ".";
        if (!MethodsWriter.Is(s.Dropped, 0))
        {
            var one = MethodsWriter.Is(s.Dropped, 1);
            sb += $" {MethodsWriter.Df(s.Dropped!)} {(one ? "row" : "rows")} with a missing response or factor value {w.Be(!one)} left out.";
        }

        var factors = MethodsFactorLevels(a);
        var sizes = s.Cells.Select(c => c.N.Value.IsDefined ? c.N.Value.Value : -1).Distinct().Count();
        var levelText = MethodsWriter.List(factors.Select(f => MethodsWriter.E(f.Display) + " (" + MethodsWriter.List(f.Levels.Select(MethodsWriter.E)) + ")"));
        if (factors.Count == 1)
        {
            sb += $" The groups {w.Be(true)} the {MethodsWriter.Words(factors[0].Levels.Count)} levels of {levelText}";
        }
        else
        {
            sb += $" The groups {w.Be(true)} the cells of the crossed factors {levelText}";
        }

        sb += sizes == 1
            ? $", with {MethodsWriter.Df(s.Cells[0].N)} observations in each."
            : $"; the group sizes {w.Be(true)} unequal: {string.Join(", ", s.Cells.Select(c => MethodsWriter.E(c.Label) + " " + MethodsWriter.Df(c.N)))}.";
        if (!a.RowsAvailable)
        {
            sb += $" The rows {w.Be(true)} not read: the database aggregated them into per-cell counts, means and sums of squares (aggregate: true), and every result below {w.T("was", "is")} computed from these.";
        }

        return sb;
    }

    private static string MethodsModel(MethodsSection s, MethodsWriter w)
    {
        var a = s.Anova;
        var opts = a.Block.OptionsOf<AnovaKind.Options>();
        var k = a.Factors.Count;
        var way = k switch { 1 => "a one-way", 2 => "a two-way", 3 => "a three-way", _ => "a factorial" };
        var subject = $"{way} fixed-effects analysis of variance";
        var rest = a.RowsAvailable ? " by least squares" : " by weighted least squares on the cell means, with the cell counts as weights";
        if (k > 1)
        {
            var interaction = opts.Interaction ? (k == 2 ? " and their interaction," : " and their interactions,") : ", without interactions,";
            rest += $" with the factors {MethodsWriter.List(a.Factors.Select(f => MethodsWriter.E(f.Display)))}{interaction}";
            rest += a.Fit!.SsType switch
            {
                Statistics.Anova.SumOfSquaresType.Sequential => " using sequential (type 1) sums of squares",
                Statistics.Anova.SumOfSquaresType.Hierarchical => " using hierarchical (type 2) sums of squares",
                _ => " using marginal (type 3) sums of squares with sum-to-zero coding",
            };
        }

        if (a.Transformed is { } t)
        {
            rest += t.Kind switch
            {
                Statistics.Anova.TransformKind.Log => $", on the natural logarithm of {MethodsWriter.E(a.ResponseLabel)}",
                Statistics.Anova.TransformKind.Log10 => $", on the common logarithm of {MethodsWriter.E(a.ResponseLabel)}",
                Statistics.Anova.TransformKind.Sqrt => $", on the square root of {MethodsWriter.E(a.ResponseLabel)}",
                Statistics.Anova.TransformKind.Reciprocal => $", on the reciprocal of {MethodsWriter.E(a.ResponseLabel)}",
                _ => $", on the Box–Cox transform of {MethodsWriter.E(a.ResponseLabel)} with the maximum-likelihood λ = {MethodsWriter.S2(a.BoxCox[Stat.Lambda])}"
                    + (a.BoxCox[Stat.LambdaLow].Value.IsDefined && a.BoxCox[Stat.LambdaHigh].Value.IsDefined
                        ? $" (profile-likelihood interval {MethodsWriter.S2(a.BoxCox[Stat.LambdaLow])} to {MethodsWriter.S2(a.BoxCox[Stat.LambdaHigh])})"
                        : string.Empty),
            };
        }

        var text = w.Did(subject, false, "fitted", "fitted", "fit", rest + ".");
        if (a.Transformed is not null)
        {
            text += $" Sums of squares and tests {w.Be(true)} on the transformed scale; level means {w.Be(true)} reported back-transformed.";
        }

        if (w.Has("effects"))
        {
            text += $" Effect sizes {w.Be(true)} partial η² with {w.Confidence}% confidence intervals from the noncentral F distribution.";
        }

        return text;
    }

    private static IEnumerable<string> MethodsDecisions(MethodsSection s, MethodsWriter w)
    {
        var a = s.Anova;
        var opts = a.Block.OptionsOf<AnovaKind.Options>();
        if (!a.RowsAvailable)
        {
            foreach (var d in MethodsCellsDecisions(s, w))
            {
                yield return d;
            }

            yield break;
        }

        var data = a.Data!;
        if (data.Factors.Count == 1 && s.Covered)
        {
            var factor = MethodsWriter.E(data.Factors[0].Spec.Display);
            var bf = s.Review.GetValueOrDefault(TestName.BrownForsythe);
            if (opts.Welch == "yes")
            {
                yield return w.Active
                    ? $"We also {w.T("computed", "compute")} Welch's F test, which does not assume equal variances, as the study requests."
                    : $"Welch's F test, which does not assume equal variances, {w.Be(false)} computed as well, as the study requests.";
            }
            else if (opts.Welch == "auto" && bf is not null)
            {
                var bfText = $"F({MethodsWriter.Df(bf[Stat.Df1])}, {MethodsWriter.Df(bf[Stat.Df2])}) = {MethodsWriter.S2(bf[Stat.F])}, {ReportStyle.PPhrase(bf[Stat.P])}";
                if (a.Review.UnequalVariances)
                {
                    yield return $"Because the Brown–Forsythe test {w.T("indicated", "indicates")} unequal group variances ({bfText}), "
                        + (w.Active ? $"we {w.T("used", "use")} Welch's F test, which does not assume equal variances, for {factor} in place of the ordinary F test." : $"Welch's F test, which does not assume equal variances, {w.Be(false)} used for {factor} in place of the ordinary F test.");
                }
                else if (bf[Stat.P].Value.IsDefined)
                {
                    yield return $"The Brown–Forsythe test {w.T("gave", "gives")} no indication of unequal group variances ({bfText}), so the ordinary F test {w.T("was", "is")} kept.";
                }
                else
                {
                    yield return $"Equal variances could not be checked, so the ordinary F test {w.T("was", "is")} kept.";
                }
            }

            if (opts.Welch == "auto" && a.Review.WantsRankTest && s.Review.GetValueOrDefault(TestName.ShapiroWilk) is { } sw)
            {
                var smallest = s.Cells.OrderBy(c => c.N.Value.IsDefined ? c.N.Value.Value : double.MaxValue).First();
                yield return $"Because the residuals {w.T("departed", "depart")} from normality (Shapiro–Wilk, W = {MethodsWriter.Fr(sw[Stat.W])}, {ReportStyle.PPhrase(sw[Stat.P])}) and the smallest group {w.T("had", "has")} only {MethodsWriter.Df(smallest.N)} observations, "
                    + (w.Active ? $"we also {w.T("ran", "run")} the Kruskal–Wallis rank test, which does not assume normality." : $"the Kruskal–Wallis rank test, which does not assume normality, {w.Be(false)} run as well.");
            }
        }
    }

    /// <summary>Cells route: the automatic rules read Bartlett's test on the cell variances instead of Brown–Forsythe.</summary>
    private static IEnumerable<string> MethodsCellsDecisions(MethodsSection s, MethodsWriter w)
    {
        var a = s.Anova;
        var opts = a.Block.OptionsOf<AnovaKind.Options>();
        if (a.Factors.Count == 1 && s.Covered)
        {
            var factor = MethodsWriter.E(a.Factors[0].Display);
            var bt = s.Review.GetValueOrDefault(TestName.Bartlett);
            if (opts.Welch == "yes")
            {
                yield return w.Active
                    ? $"We also {w.T("computed", "compute")} Welch's F test, which does not assume equal variances, as the study requests."
                    : $"Welch's F test, which does not assume equal variances, {w.Be(false)} computed as well, as the study requests.";
            }
            else if (opts.Welch == "auto" && bt is not null)
            {
                var btText = $"Bartlett's test on the group variances, χ²({MethodsWriter.Df(bt[Stat.Df])}) = {MethodsWriter.S2(bt[Stat.Statistic])}, {ReportStyle.PPhrase(bt[Stat.P])}, used because the Brown–Forsythe test needs the rows";
                if (a.ReadWelch)
                {
                    yield return $"Because {btText}, {w.T("indicated", "indicates")} unequal group variances, "
                        + (w.Active ? $"we {w.T("used", "use")} Welch's F test, which does not assume equal variances, for {factor} in place of the ordinary F test." : $"Welch's F test, which does not assume equal variances, {w.Be(false)} used for {factor} in place of the ordinary F test.")
                        + " Bartlett's test is sensitive to non-normality, which could not be checked.";
                }
                else if (bt[Stat.P].Value.IsDefined)
                {
                    yield return $"{MethodsWriter.Cap(btText)}, {w.T("gave", "gives")} no indication of unequal group variances, so the ordinary F test {w.T("was", "is")} kept.";
                }
                else
                {
                    yield return $"Equal variances could not be checked, so the ordinary F test {w.T("was", "is")} kept.";
                }
            }
        }
    }

    private static IEnumerable<string> MethodsEffects(MethodsSection s, MethodsWriter w)
    {
        var a = s.Anova;
        var label = (Statistics.Anova.AnovaTerm t) => MethodsWriter.List(t.Factors.Select(n => MethodsWriter.E(a.Factors.First(f => f.Name == n).Display)));
        foreach (var (term, v) in a.Terms)
        {
            var interaction = term.Factors.Count > 1;
            var name = interaction ? $"the {string.Join(" × ", term.Factors.Select(n => MethodsWriter.E(a.Factors.First(f => f.Name == n).Display)))} interaction" : label(term);
            var sentence = MethodsTerm(a, v, w);
            if (!term.P.IsDefined)
            {
                yield return $"For {name}, the F test is not defined ({MethodsWriter.E(term.P.Reason)}).";
                continue;
            }

            var rejected = term.P.Value < w.Outcome.Alpha;
            var hypothesis = interaction ? "no interaction" : "equal means across its levels";
            if (!interaction && a.ReadWelch && a.Welch is { } welch)
            {
                var wRejected = welch[Stat.P].Value.IsDefined && welch[Stat.P].Value.Value < w.Outcome.Alpha;
                yield return $"For {name}, Welch's test {(wRejected ? w.T("rejected", "rejects") : w.T("did not reject", "does not reject"))} the hypothesis of {hypothesis}, "
                    + $"Welch's F({MethodsWriter.Df(welch[Stat.Df1])}, {MethodsWriter.Df(welch[Stat.Df2])}) = {MethodsWriter.S2(welch[Stat.F])}, {ReportStyle.PPhrase(welch[Stat.P])}; the ordinary F test, which assumes equal variances, {w.T("gave", "gives")} {sentence}."
                    + (wRejected ? string.Empty : " This is not evidence that the means are equal.");
            }
            else
            {
                yield return $"For {name}, the F test {(rejected ? w.T("rejected", "rejects") : w.T("did not reject", "does not reject"))} the hypothesis of {hypothesis}, {sentence}."
                    + (rejected
                        ? (interaction ? $" The effect of one factor {w.T("depended", "depends")} on the level of the other, so the main effects are best read level by level." : string.Empty)
                        : (interaction ? " This is not evidence that the factors act independently." : " This is not evidence that the means are equal."));
                if (!interaction && a.Welch is { } w2)
                {
                    yield return $"Welch's test {w.T("gave", "gives")} F({MethodsWriter.Df(w2[Stat.Df1])}, {MethodsWriter.Df(w2[Stat.Df2])}) = {MethodsWriter.S2(w2[Stat.F])}, {ReportStyle.PPhrase(w2[Stat.P])}.";
                }
            }
        }

        if (a.Ranks is { } r)
        {
            var rejected = r[Stat.P].Value.IsDefined && r[Stat.P].Value.Value < w.Outcome.Alpha;
            yield return $"The Kruskal–Wallis rank test {(rejected ? w.T("rejected", "rejects") : w.T("did not reject", "does not reject"))} the hypothesis that the groups come from one distribution, H({MethodsWriter.Df(r[Stat.Df])}) = {MethodsWriter.S2(r[Stat.H])}, {ReportStyle.PPhrase(r[Stat.P])}.";
        }
    }

    private static string MethodsTerm(AnovaOutcome a, IReadOnlyDictionary<string, ResultValue> v, MethodsWriter w)
    {
        var text = $"F({MethodsWriter.Df(v[Stat.Df])}, {MethodsWriter.Df(a.Residual[Stat.Df])}) = {MethodsWriter.S2(v[Stat.F])}, {ReportStyle.PPhrase(v[Stat.P])}, partial η² = {MethodsWriter.Fr(v[Stat.PartialEta2])}";
        return text + $", {w.Confidence}% CI [{MethodsWriter.Fr(v[Stat.PartialEta2CiLow])}, {MethodsWriter.Fr(v[Stat.PartialEta2CiHigh])}]";
    }

    /// <summary>The model's factors with the levels present (rows route: the selected rows' levels; cells route: the cells').</summary>
    private static List<(string Display, IReadOnlyList<string> Levels)> MethodsFactorLevels(AnovaOutcome a) => a.Data is { } data
        ? [.. data.Factors.Select(f => (f.Spec.Display, f.Levels))]
        : [.. a.Factors.Select((f, k) => (f.Display, a.Cells!.Levels[k]))];

    /// <summary>Cells route: what was not computed, because the rows were not read.</summary>
    private static string MethodsNotComputed(MethodsWriter w) =>
        $"The model's assumptions {w.Be(true)} not checked, and no rank test or least-squares means {w.Be(true)} computed: the checks of the residuals' normality, of equal variances by Brown–Forsythe or Levene, of outliers and of run order, the Kruskal–Wallis test and least-squares means need the rows.";

    /// <summary>Welch's test of the one factor, on either route (the source label is the route's).</summary>
    private static void WriteWelch(HtmlWriter html, AnovaOutcome o, string source, RenderContext context)
    {
        if (o.Welch is not { } w)
        {
            return;
        }

        string V(IReadOnlyDictionary<string, ResultValue> values, string stat) => HtmlWriter.ValueHtml(values[stat], context);
        var welch = new HtmlTable("welch", "Welch's test (unequal variances allowed)", ["Source", "F", "df1", "df2", "p"]);
        welch.Row(source, [V(w, Stat.F), V(w, Stat.Df1), V(w, Stat.Df2), V(w, Stat.P)]);
        welch.WriteTo(html);
    }

    /// <summary>The automatic rules' decisions, worded (<see cref="Decisions"/>).</summary>
    private static void WriteDecisions(HtmlWriter html, AnovaOutcome o, RenderContext context)
    {
        foreach (var d in o.Decisions)
        {
            html.Raw("<p class=\"decision\">").Text(Decisions.Text(d, context.AlphaText)).Raw("</p>");
        }
    }

        public override IEnumerable<string> Warnings(BlockOutcome outcome, RenderContext context)
    {
        if (outcome is AnovaOutcome { Design: { } d } design)
        {
            foreach (var warning in DesignRendering.Warnings(design, d))
            {
                yield return warning;
            }

            yield break;
        }

        if (outcome is not AnovaOutcome { Cautions: { } c } a)
        {
            yield break;
        }

        if (a.Ancova is { } covariance)
        {
            foreach (var warning in CovariateRendering.Warnings(covariance))
            {
                yield return warning;
            }
        }

        if (a.Route == AnovaRoute.Cells)
        {
            if (c.SingleGroups.Count > 0)
            {
                yield return "Some groups have a single observation. They add nothing to the residual variance, and no check of their spread is possible.";
            }

            if (c.SmallGroups.Count > 0)
            {
                yield return "Some groups have fewer than 5 observations: the test has little power to detect differences.";
            }

            if (c.Unbalanced)
            {
                yield return "The design is unbalanced: the sums of squares depend on the SS type chosen.";
            }

            yield break;
        }

        if (c.SingleGroups.Count > 0)
        {
            yield return $"Single-observation {NumberText.Noun(c.SingleGroups.Count, "group")}: {string.Join(", ", c.SingleGroups)}. They add nothing to the residual variance, and no check of their spread is possible.";
        }

        if (c.SmallGroups.Count > 0)
        {
            yield return $"Small {NumberText.Noun(c.SmallGroups.Count, "group")} (fewer than 5 observations): {string.Join(", ", c.SmallGroups.Select(StudyPress.Charts.BidiText.Isolate))}. The test has little power to detect differences, and normality and equal variances cannot be judged well from so few values.";
        }

        if (c.Unbalanced)
        {
            yield return c.Interaction
                ? "The design is unbalanced and includes interactions: the sums of squares depend on the SS type, and a main effect is hard to interpret on its own when its factor interacts with another."
                : "The design is unbalanced: the sums of squares depend on the SS type chosen.";
        }
    }

    public override IEnumerable<string> Notes(BlockOutcome outcome, RenderContext context)
    {
        if (outcome is not AnovaOutcome { Cautions: { } c } a)
        {
            yield break;
        }

        if (a.Design is { } d)
        {
            foreach (var note in DesignRendering.Notes(a, d))
            {
                yield return note;
            }
        }

        if (a.Route == AnovaRoute.Cells)
        {
            yield return CellsMethodNote;
        }

        if (a.Ancova is { } covariance)
        {
            foreach (var note in CovariateRendering.Notes(covariance))
            {
                yield return note;
            }
        }

        if (c.DroppedMissing > 0)
        {
            yield return string.Create(CultureInfo.InvariantCulture, $"{NumberText.Count(c.DroppedMissing, "row")} with a missing value {(c.DroppedMissing == 1 ? "was" : "were")} left out of this analysis.");
        }

        if (c.EmptyGroups.Count > 0)
        {
            yield return $"{MethodsWriter.Cap(NumberText.Noun(c.EmptyGroups.Count, "group"))} without any observed response ({string.Join(", ", c.EmptyGroups)}): every response is missing, so {(c.EmptyGroups.Count == 1 ? "it is" : "they are")} not part of this analysis, its comparisons or its figures.";
        }
    }

    public override void Render(HtmlWriter html, BlockOutcome outcome, RenderContext context)
    {
        var o = (AnovaOutcome)outcome;
        if (o.Design is { } design)
        {
            DesignRendering.Render(html, o, design, context);
            return;
        }

        if (o.Ancova is { } covariance)
        {
            CovariateRendering.Render(html, o, covariance, context);
            return;
        }

        if (o.Route == AnovaRoute.Cells)
        {
            RenderCells(html, o, context);
            return;
        }

        if (o.Result is null || o.Data is null)
        {
            return;
        }

        var responseText = o.Transformed is null ? o.Data.ResponseLabel : TransformLabel(o) + " of " + o.Data.ResponseLabel;
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
            // The power in the Box–Cox formula is set as a superscript, not a literal '^'.
            html.Raw("<p class=\"method\">").Raw(HtmlWriter.Escape(TransformText(tr)).Replace("y^λ", "y<sup>λ</sup>", StringComparison.Ordinal)).Raw("</p>");
        }

        var effects = new HtmlTable("effects", "Rejection threshold and effect sizes", ["Term", "F threshold (α = " + context.AlphaText + ")", "η²", "partial η²", context.ConfidenceText + "% CI of partial η²", "ω²", "Cohen's f"]);
        foreach (var (term, v) in o.Terms)
        {
            effects.Row(Label(term, o), [V(v, "f_crit"), V(v, "eta2"), V(v, "partial_eta2"), V(v, "partial_eta2_ci_low") + " – " + V(v, "partial_eta2_ci_high"), V(v, "omega2"), V(v, "cohen_f")]);
        }

        effects.WriteTo(html);
        RenderMeans(html, o, context);

        WriteWelch(html, o, Label(o.Terms[0].Term, o), context);

        if (o.Ranks is { } r)
        {
            var ranks = new HtmlTable("ranks", "Kruskal–Wallis rank test (normality not assumed)", ["Source", "H", "df", "p"]);
            ranks.Row(Label(o.Terms[0].Term, o), [V(r, "h"), V(r, "df"), V(r, "p")]);
            ranks.WriteTo(html);
        }

        html.Raw("<div class=\"reading\">");
        WriteDecisions(html, o, context);

        foreach (var (term, v) in o.Terms)
        {
            html.Raw("<p>").Raw(Interpret(term, v, o, context)).Raw("</p>");
        }

        html.Raw("</div>");
        string V(IReadOnlyDictionary<string, ResultValue> values, string stat) => HtmlWriter.ValueHtml(values[stat], context);
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
        WriteWelch(html, o, CellsLabel(o.Terms[0].Term, o), context);

        if (o.Bartlett is { } b)
        {
            var bt = new HtmlTable("bartlett", "Bartlett's test of equal variances (from the cell variances)", ["Source", "χ²", "df", "p"]);
            bt.Row(CellsLabel(o.Terms[0].Term, o), [V(b, "statistic"), V(b, "df"), V(b, "p")]);
            bt.WriteTo(html);
        }

        html.Raw("<div class=\"reading\">");
        WriteDecisions(html, o, context);

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
        string V(IReadOnlyDictionary<string, ResultValue> values, string stat) => HtmlWriter.ValueHtml(values[stat], context);
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

    private static string TransformLabel(AnovaOutcome o) => o.Block.OptionsOf<AnovaKind.Options>().TransformName switch
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
            _ => $"Box–Cox power (y^λ − 1)/λ with the maximum-likelihood λ = {NumberFormat.Current.General(t.BoxCox!.Lambda)}"
                + (t.BoxCox!.LambdaLow.IsDefined && t.BoxCox.LambdaHigh.IsDefined
                    ? string.Create(CultureInfo.InvariantCulture, $" ({t.BoxCox.ConfidenceLevel * 100:0.#}% profile-likelihood interval {NumberFormat.Current.General(t.BoxCox.LambdaLow.Value)} to {NumberFormat.Current.General(t.BoxCox.LambdaHigh.Value)})")
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

    private static string Interpret(AnovaTerm term, IReadOnlyDictionary<string, ResultValue> v, AnovaOutcome o, RenderContext context)
    {
        var label = HtmlWriter.Escape(Label(term, o));
        if (!term.F.IsDefined || !term.P.IsDefined)
        {
            return $"{label}: the F test is not defined here ({HtmlWriter.Escape(term.F.Reason ?? term.P.Reason)}).";
        }

        var stat = $"F({HtmlWriter.ValueHtml(v[Stat.Df], context)}, {HtmlWriter.ValueHtml(o.Residual[Stat.Df], context)}) = {HtmlWriter.ValueHtml(v[Stat.F], context)}, p {PText(v[Stat.P], context)}";
        var isInteraction = term.Factors.Count > 1;
        var response = HtmlWriter.Escape(o.Data!.ResponseLabel);
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

    /// <inheritdoc/>
    public override IReadOnlyList<string> PhrasedTests => ["anova", "welch", "means"];

    /// <inheritdoc/>
    public override string? ResultSentence(ResultValue member, IReadOnlyDictionary<string, ResultValue> group, ResultSet all, double alpha, out string? why)
    {
        why = null;
        ResultValue? Get(string stat) => group.GetValueOrDefault(stat);
        switch (member.Test)
        {
            case "anova" when member.Term is "residual" or "total":
                why = $"the {member.Term} row of an ANOVA table has no test";
                return null;
            case "anova":
                {
                    var resDf = all.Values.FirstOrDefault(v => v.Block == member.Block && v.Test == "anova" && v.Term == "residual" && v.Stat == "df");
                    if (Get("f") is not { } f || Get("p") is not { } p || Get("df") is not { } df || resDf is null)
                    {
                        return null;
                    }

                    var text = Sentences.FTest(df, resDf, f, p);
                    if (Get("partial_eta2") is { } pe)
                    {
                        text += $", partial η² = {ReportStyle.Number(pe)}";
                        if (Get("partial_eta2_ci_low") is { } lo && Get("partial_eta2_ci_high") is { } hi)
                        {
                            text += $", {Sentences.ConfidenceText(alpha)}% CI [{ReportStyle.Number(lo)}, {ReportStyle.Number(hi)}]";
                        }
                    }

                    return text;
                }

            case "welch":
                return Get("f") is { } wf && Get("df1") is { } d1 && Get("df2") is { } d2 && Get("p") is { } wp ? Sentences.FTest(d1, d2, wf, wp) : null;
            case "means":
                return Get("mean") is { } mm && Get("n") is { } mcount ? $"mean = {ReportStyle.Number(mm)}, n = {ReportStyle.Number(mcount)}" : null;
            default:
                return null;
        }
    }

    /// <inheritdoc/>
    public override IReadOnlyDictionary<string, string> DiffEffectTests { get; } = new Dictionary<string, string>(StringComparer.Ordinal)
    {
        ["anova"] = "F test",
        ["welch"] = "Welch's F",
    }.AsReadOnly();

    /// <inheritdoc/>
    public override IReadOnlyDictionary<string, string> ProcedureNames { get; } = new Dictionary<string, string>(StringComparer.Ordinal)
    {
        ["welch"] = "Welch's F",
    }.AsReadOnly();

    /// <summary>Welch's F, chosen by the rule (welch: auto) or the study.</summary>
    public override IReadOnlyList<string> DiffProcedureTests => ["welch"];
}
