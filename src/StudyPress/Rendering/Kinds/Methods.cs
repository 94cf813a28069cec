using System.Globalization;
using System.Runtime.CompilerServices;
using StudyPress.Binding.Kinds;
using StudyPress.Binding;
using StudyPress.Diagnostics;
using StudyPress.Evaluation.Kinds;
using StudyPress.Evaluation;
using StudyPress.Rendering;
using StudyPress.Statistics;
using StudyPress.Syntax;

namespace StudyPress.Rendering.Kinds;

/// <summary>Writes the HTML of <c>methods</c> blocks.</summary>
public sealed class MethodsRenderer : KindRenderer
{
    /// <summary>Registers this part of the kind (see DEVELOPERS.md, "Adding an analysis kind").</summary>
    [ModuleInitializer]
    internal static void Register() => KindRenderers.Register(new MethodsRenderer());

    public override string Kind => "methods";

    public override void Render(HtmlWriter html, BlockOutcome outcome, RenderContext context)
    {
        var o = (MethodsOutcome)outcome;
        var options = (MethodsKind.Options)o.Block.Options!;
        var text = new MethodsText(o, options);
        foreach (var (css, paragraph) in text.Paragraphs())
        {
            html.Raw("<p class=\"methods-").Raw(css).Raw("\">").Raw(paragraph).Raw("</p>");
        }
    }
}

/// <summary>Writes the methods text; every number goes through <see cref="ReportStyle"/> spans.</summary>
internal sealed class MethodsText(MethodsOutcome o, MethodsKind.Options options)
{
    private readonly bool past = options.Past;
    private readonly bool active = options.Active;
    private readonly string alphaText = Sentences.AlphaText(o.Alpha);
    private readonly string confidence = Sentences.ConfidenceText(o.Alpha);

    private bool Has(string part) => options.Include.Contains(part);

    private static string E(string? s) => HtmlWriter.Escape(s);

    private string T(string pastForm, string presentForm) => past ? pastForm : presentForm;

    private string Be(bool plural) => past ? (plural ? "were" : "was") : (plural ? "are" : "is");

    /// <summary>"X was fitted …" (passive) or "We fitted X …" (active); subject and rest are HTML.</summary>
    private string Did(string subject, bool plural, string participle, string pastActive, string presentActive, string rest) =>
        active
            ? "We " + (past ? pastActive : presentActive) + " " + subject + rest
            : Cap(subject) + " " + Be(plural) + " " + participle + rest;

    private static string Cap(string s) => s.Length == 0 ? s : char.ToUpperInvariant(s[0]) + s[1..];

    private static string Words(int n) => n switch
    {
        1 => "one",
        2 => "two",
        3 => "three",
        4 => "four",
        5 => "five",
        6 => "six",
        7 => "seven",
        8 => "eight",
        9 => "nine",
        10 => "ten",
        11 => "eleven",
        12 => "twelve",
        _ => "many",
    };

    private static string List(IEnumerable<string> items)
    {
        var l = items.ToList();
        return l.Count switch
        {
            0 => string.Empty,
            1 => l[0],
            2 => l[0] + " and " + l[1],
            _ => string.Join(", ", l.Take(l.Count - 1)) + " and " + l[^1],
        };
    }

    private static string Df(ResultValue v) => ReportStyle.Span(v, ReportStyle.Df);

    private static string S2(ResultValue v) => ReportStyle.Span(v, ReportStyle.Fixed(2));

    private static string Fr(ResultValue v) => ReportStyle.Span(v, ReportStyle.Fraction(2));

    private static bool Is(ResultValue? v, double x) => v is { Value.IsDefined: true } && v.Value.Value == x;

    public IEnumerable<(string Css, string Html)> Paragraphs()
    {
        var many = o.Sections.Count > 1;
        var first = true;
        foreach (var s in o.Sections)
        {
            var methods = new List<string>();
            if (first && (Has("model") || Has("effects")))
            {
                methods.Add($"Every test {T("used", "uses")} the significance level α = {alphaText}, and intervals are {confidence}% intervals.");
            }

            if (first && Has("design") && o.Summaries.Count > 0)
            {
                methods.Add(Did("descriptive statistics by group (n, mean, SD, standard error, confidence interval of the mean, median, quartiles and range)", true, "computed", "computed", "compute", "."));
            }

            first = false;
            if (s.Covered && Has("design"))
            {
                methods.Add(Design(s));
            }

            if (s.Covered && Has("model"))
            {
                methods.Add(Model(s));
            }

            if (Has("assumptions") && s.Checks is not null)
            {
                methods.AddRange(Assumptions(s));
            }

            if (Has("assumptions") && s.Covered && !s.Anova.RowsAvailable)
            {
                methods.Add(NotComputed());
            }

            if (Has("decisions"))
            {
                methods.AddRange(Decisions(s));
            }

            if (Has("comparisons"))
            {
                methods.AddRange(s.PostHocs.Select(ComparisonMethod));
            }

            var label = many ? "<span class=\"methods-of\">" + E(s.Anova.Block.Caption ?? s.Anova.Block.Id) + ".</span> " : string.Empty;
            if (methods.Count > 0)
            {
                yield return ("methods", label + string.Join(" ", methods));
            }

            var results = new List<string>();
            if (s.Covered && Has("effects"))
            {
                results.AddRange(Effects(s));
            }

            if (Has("comparisons"))
            {
                results.AddRange(s.PostHocs.SelectMany(ComparisonResults));
            }

            if (Has("effects"))
            {
                results.AddRange(s.Powers.Where(p => !p.Observed).Select(PowerSentence));
            }

            if (results.Count > 0)
            {
                yield return ("results", (methods.Count == 0 ? label : string.Empty) + string.Join(" ", results));
            }
        }

        var other = new List<string>();
        if (o.Sections.Count == 0 && o.Summaries.Count > 0 && Has("design"))
        {
            other.Add(Did("descriptive statistics by group (n, mean, SD, standard error, confidence interval of the mean, median, quartiles and range)", true, "computed", "computed", "compute", "."));
        }

        if (Has("effects"))
        {
            other.AddRange(o.Ranks.Select(RanksSentence));
            other.AddRange(o.Powers.Where(p => !p.Observed).Select(PowerSentence));
        }

        if (other.Count > 0)
        {
            yield return ("results", string.Join(" ", other));
        }

        if (Has("software"))
        {
            yield return ("software", Software());
        }

        if (Has("cautions"))
        {
            yield return ("cautions", string.Join(" ", Cautions()));
        }
    }

    private string Design(MethodsSection s)
    {
        var a = s.Anova;
        var block = a.Block;
        var response = E(a.ResponseName);
        var sb = $"The analysis {T("used", "uses")} {Df(s.Total!)} observations of {response}";
        if (block.Where.Count > 0)
        {
            sb += ", restricted to rows where " + List(block.Where.Select(w => E(w.Factor.Display) + " is " + (w.Levels.Count == 1 ? E(w.Levels[0]) : "one of " + List(w.Levels.Select(E)))));
        }

        sb += ".";
        if (!Is(s.Dropped, 0))
        {
            var one = Is(s.Dropped, 1);
            sb += $" {Df(s.Dropped!)} {(one ? "row" : "rows")} with a missing response or factor value {Be(!one)} left out.";
        }

        var factors = FactorLevels(a);
        var sizes = s.Cells.Select(c => c.N.Value.IsDefined ? c.N.Value.Value : -1).Distinct().Count();
        var levelText = List(factors.Select(f => E(f.Display) + " (" + List(f.Levels.Select(E)) + ")"));
        if (factors.Count == 1)
        {
            sb += $" The groups {Be(true)} the {Words(factors[0].Levels.Count)} levels of {levelText}";
        }
        else
        {
            sb += $" The groups {Be(true)} the cells of the crossed factors {levelText}";
        }

        sb += sizes == 1
            ? $", with {Df(s.Cells[0].N)} observations in each."
            : $"; the group sizes {Be(true)} unequal: {string.Join(", ", s.Cells.Select(c => E(c.Label) + " " + Df(c.N)))}.";
        if (!a.RowsAvailable)
        {
            sb += $" The rows {Be(true)} not read: the database aggregated them into per-cell counts, means and sums of squares (aggregate: true), and every result below {T("was", "is")} computed from these.";
        }

        return sb;
    }

    private string Model(MethodsSection s)
    {
        var a = s.Anova;
        var opts = (AnovaKind.Options)a.Block.Options!;
        var k = a.Factors.Count;
        var way = k switch { 1 => "a one-way", 2 => "a two-way", 3 => "a three-way", _ => "a factorial" };
        var subject = $"{way} fixed-effects analysis of variance";
        var rest = a.RowsAvailable ? " by least squares" : " by weighted least squares on the cell means, with the cell counts as weights";
        if (k > 1)
        {
            var interaction = opts.Interaction ? (k == 2 ? " and their interaction," : " and their interactions,") : ", without interactions,";
            rest += $" with the factors {List(a.Factors.Select(f => E(f.Display)))}{interaction}";
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
                Statistics.Anova.TransformKind.Log => $", on the natural logarithm of {E(a.ResponseName)}",
                Statistics.Anova.TransformKind.Log10 => $", on the common logarithm of {E(a.ResponseName)}",
                Statistics.Anova.TransformKind.Sqrt => $", on the square root of {E(a.ResponseName)}",
                Statistics.Anova.TransformKind.Reciprocal => $", on the reciprocal of {E(a.ResponseName)}",
                _ => $", on the Box–Cox transform of {E(a.ResponseName)} with the maximum-likelihood λ = {S2(a.BoxCox[Stat.Lambda])}"
                    + (a.BoxCox[Stat.LambdaLow].Value.IsDefined && a.BoxCox[Stat.LambdaHigh].Value.IsDefined
                        ? $" (profile-likelihood interval {S2(a.BoxCox[Stat.LambdaLow])} to {S2(a.BoxCox[Stat.LambdaHigh])})"
                        : string.Empty),
            };
        }

        var text = Did(subject, false, "fitted", "fitted", "fit", rest + ".");
        if (a.Transformed is not null)
        {
            text += $" Sums of squares and tests {Be(true)} on the transformed scale; level means {Be(true)} reported back-transformed.";
        }

        if (Has("effects"))
        {
            text += $" Effect sizes {Be(true)} partial η² with {confidence}% confidence intervals from the noncentral F distribution.";
        }

        return text;
    }

    private IEnumerable<string> Assumptions(MethodsSection s)
    {
        var r = s.Review;
        var review = s.Checks!.Review!;
        var checks = new List<string>();
        if (r.TryGetValue("shapiro_wilk", out var sw))
        {
            checks.Add($"normality of the residuals (Shapiro–Wilk, W = {Fr(sw[Stat.W])}, {ReportStyle.PPhrase(sw[Stat.P])})");
        }

        var variance = new List<string>();
        foreach (var (test, name) in new[] { ("brown_forsythe", "Brown–Forsythe"), ("levene", "mean-centred Levene") })
        {
            if (r.TryGetValue(test, out var v))
            {
                variance.Add($"{name}, F({Df(v[Stat.Df1])}, {Df(v[Stat.Df2])}) = {S2(v[Stat.F])}, {ReportStyle.PPhrase(v[Stat.P])}");
            }
        }

        if (r.TryGetValue("bartlett", out var bt))
        {
            variance.Add($"Bartlett, χ²({Df(bt[Stat.Df])}) = {S2(bt[Stat.Statistic])}, {ReportStyle.PPhrase(bt[Stat.P])}");
        }

        if (variance.Count > 0)
        {
            checks.Add($"equal variances across the groups ({string.Join("; ", variance)})");
        }

        if (r.TryGetValue("durbin_watson", out var dw))
        {
            checks.Add($"independence in run order (Durbin–Watson, d = {S2(dw[Stat.D])}, {ReportStyle.PPhrase(dw[Stat.P])})");
        }

        if (r.TryGetValue("outliers", out var ol))
        {
            checks.Add($"outlying observations (largest externally studentized residual |t| = {S2(ol[Stat.MaxAbsT])}, {ReportStyle.PPhrase(ol[Stat.PBonferroni], "Bonferroni-adjusted p")})");
        }

        yield return Did("the model's assumptions", true, "checked", "checked", "check", ": " + List(checks) + ".");
        if (review.Independence is null && review.IndependenceSkipped is not null)
        {
            yield return $"Independence in run order {Be(false)} not checked, as no run order {T("was", "is")} available.";
        }

        var failed = Failed(review);
        var otherVariance = new[] { ("levene", "mean-centred Levene"), ("bartlett", "Bartlett") }
            .Where(x => r.TryGetValue(x.Item1, out var v) && v[Stat.P].Value.IsDefined && v[Stat.P].Value.Value < o.Alpha)
            .Select(x => x.Item2)
            .ToList();
        if (otherVariance.Count > 0 && !review.UnequalVariances)
        {
            yield return $"The {List(otherVariance)} {(otherVariance.Count == 1 ? "test" : "tests")} {T("pointed", "point")} to unequal variances, but the verdict on variances follows the Brown–Forsythe test, which is less sensitive to non-normal data.";
        }

        yield return failed.Count == 0
            ? $"None of these checks {T("indicated", "indicates")} a departure at α = {alphaText}, which does not prove that the assumptions hold."
            : $"At α = {alphaText} the checks {T("indicated", "indicate")} that {List(failed)}.";
    }

    /// <summary>The model's factors with the levels present (rows route: the selected rows' levels; cells route: the cells').</summary>
    private static List<(string Display, IReadOnlyList<string> Levels)> FactorLevels(AnovaOutcome a) => a.Data is { } data
        ? [.. data.Factors.Select(f => (f.Spec.Display, f.Levels))]
        : [.. a.Factors.Select((f, k) => (f.Display, a.Cells!.Levels[k]))];

    /// <summary>Cells route: what was not computed, because the rows were not read.</summary>
    private string NotComputed() =>
        $"The model's assumptions {Be(true)} not checked, and no rank test or least-squares means {Be(true)} computed: the checks of the residuals' normality, of equal variances by Brown–Forsythe or Levene, of outliers and of run order, the Kruskal–Wallis test and least-squares means need the rows.";

    /// <summary>Cells route: the automatic rules read Bartlett's test on the cell variances instead of Brown–Forsythe.</summary>
    private IEnumerable<string> CellsDecisions(MethodsSection s)
    {
        var a = s.Anova;
        var opts = (AnovaKind.Options)a.Block.Options!;
        if (a.Factors.Count == 1 && s.Covered)
        {
            var factor = E(a.Factors[0].Display);
            var bt = s.Review.GetValueOrDefault("bartlett");
            if (opts.Welch == "yes")
            {
                yield return active
                    ? $"We also {T("computed", "compute")} Welch's F test, which does not assume equal variances, as the study requests."
                    : $"Welch's F test, which does not assume equal variances, {Be(false)} computed as well, as the study requests.";
            }
            else if (opts.Welch == "auto" && bt is not null)
            {
                var btText = $"Bartlett's test on the group variances, χ²({Df(bt[Stat.Df])}) = {S2(bt[Stat.Statistic])}, {ReportStyle.PPhrase(bt[Stat.P])}, used because the Brown–Forsythe test needs the rows";
                if (a.ReadWelch)
                {
                    yield return $"Because {btText}, {T("indicated", "indicates")} unequal group variances, "
                        + (active ? $"we {T("used", "use")} Welch's F test, which does not assume equal variances, for {factor} in place of the ordinary F test." : $"Welch's F test, which does not assume equal variances, {Be(false)} used for {factor} in place of the ordinary F test.")
                        + " Bartlett's test is sensitive to non-normality, which could not be checked.";
                }
                else if (bt[Stat.P].Value.IsDefined)
                {
                    yield return $"{Cap(btText)}, {T("gave", "gives")} no indication of unequal group variances, so the ordinary F test {T("was", "is")} kept.";
                }
                else
                {
                    yield return $"Equal variances could not be checked, so the ordinary F test {T("was", "is")} kept.";
                }
            }
        }

        foreach (var p in s.PostHocs)
        {
            var popts = (PostHocKind.Options)p.Block.Options!;
            if (popts.Method != "auto")
            {
                continue;
            }

            var method = MethodName(p.Families[0].Test, p);
            var over = a.Factors.Count == 1 ? "groups" : "cells";
            var why = p.Families[0].Test == "games_howell"
                ? $"because Bartlett's test over the {over} (used because the Brown–Forsythe test needs the rows) {T("indicated", "indicates")} unequal variances"
                : $"because Bartlett's test over the {over} (used because the Brown–Forsythe test needs the rows) {T("gave", "gives")} no indication of unequal variances";
            yield return $"For the pairwise comparisons of {E(p.FactorLabel)}, {method} {T("was", "is")} chosen {why}; Dunn's rank comparisons {T("were", "are")} not available, as they need the ranks of the rows.";
        }
    }

    private List<string> Failed(AssumptionReview review)
    {
        var failed = new List<string>();
        if (review.NonNormal)
        {
            failed.Add($"the residuals {T("departed", "depart")} from normality");
        }

        if (review.UnequalVariances)
        {
            failed.Add($"the group variances {T("differed", "differ")}");
        }

        if (review.Dependent)
        {
            failed.Add($"the residuals {Be(true)} correlated in run order");
        }

        if (review.HasOutliers)
        {
            failed.Add($"some observations {T("stood", "stand")} out as outliers");
        }

        return failed;
    }

    private IEnumerable<string> Decisions(MethodsSection s)
    {
        var a = s.Anova;
        var opts = (AnovaKind.Options)a.Block.Options!;
        if (!a.RowsAvailable)
        {
            foreach (var d in CellsDecisions(s))
            {
                yield return d;
            }

            yield break;
        }

        var data = a.Data!;
        if (data.Factors.Count == 1 && s.Covered)
        {
            var factor = E(data.Factors[0].Spec.Display);
            var bf = s.Review.GetValueOrDefault("brown_forsythe");
            if (opts.Welch == "yes")
            {
                yield return active
                    ? $"We also {T("computed", "compute")} Welch's F test, which does not assume equal variances, as the study requests."
                    : $"Welch's F test, which does not assume equal variances, {Be(false)} computed as well, as the study requests.";
            }
            else if (opts.Welch == "auto" && bf is not null)
            {
                var bfText = $"F({Df(bf[Stat.Df1])}, {Df(bf[Stat.Df2])}) = {S2(bf[Stat.F])}, {ReportStyle.PPhrase(bf[Stat.P])}";
                if (a.Review.UnequalVariances)
                {
                    yield return $"Because the Brown–Forsythe test {T("indicated", "indicates")} unequal group variances ({bfText}), "
                        + (active ? $"we {T("used", "use")} Welch's F test, which does not assume equal variances, for {factor} in place of the ordinary F test." : $"Welch's F test, which does not assume equal variances, {Be(false)} used for {factor} in place of the ordinary F test.");
                }
                else if (bf[Stat.P].Value.IsDefined)
                {
                    yield return $"The Brown–Forsythe test {T("gave", "gives")} no indication of unequal group variances ({bfText}), so the ordinary F test {T("was", "is")} kept.";
                }
                else
                {
                    yield return $"Equal variances could not be checked, so the ordinary F test {T("was", "is")} kept.";
                }
            }

            if (opts.Welch == "auto" && a.Review.WantsRankTest && s.Review.GetValueOrDefault("shapiro_wilk") is { } sw)
            {
                var smallest = s.Cells.OrderBy(c => c.N.Value.IsDefined ? c.N.Value.Value : double.MaxValue).First();
                yield return $"Because the residuals {T("departed", "depart")} from normality (Shapiro–Wilk, W = {Fr(sw[Stat.W])}, {ReportStyle.PPhrase(sw[Stat.P])}) and the smallest group {T("had", "has")} only {Df(smallest.N)} observations, "
                    + (active ? $"we also {T("ran", "run")} the Kruskal–Wallis rank test, which does not assume normality." : $"the Kruskal–Wallis rank test, which does not assume normality, {Be(false)} run as well.");
            }
        }

        foreach (var p in s.PostHocs)
        {
            var popts = (PostHocKind.Options)p.Block.Options!;
            if (popts.Method != "auto")
            {
                continue;
            }

            var method = MethodName(p.Families[0].Test, p);
            var bf = s.Review.GetValueOrDefault("brown_forsythe");
            var why = a.Review.UnequalVariances
                ? $"because the Brown–Forsythe test {T("indicated", "indicates")} unequal variances{(bf is null ? string.Empty : " (" + ReportStyle.PPhrase(bf[Stat.P]) + ")")}"
                : $"because the Brown–Forsythe test {T("gave", "gives")} no indication of unequal variances{(bf is null ? string.Empty : " (" + ReportStyle.PPhrase(bf[Stat.P]) + ")")}";
            yield return $"For the pairwise comparisons of {E(p.FactorLabel)}, {method} {T("was", "is")} chosen {why}"
                + (p.Families.Count > 1 ? $", and Dunn's rank comparisons (Holm-adjusted) {T("were", "are")} added because the residuals {T("departed", "depart")} from normality in small groups." : ".");
        }
    }

    private static string MethodName(string test, PostHocOutcome p) => test switch
    {
        "tukey_hsd" => p.Families[0].Title.StartsWith("Tukey–Kramer", StringComparison.Ordinal) ? "the Tukey–Kramer procedure (Tukey's HSD for unequal group sizes)" : "Tukey's HSD procedure",
        "games_howell" => "the Games–Howell procedure, which does not pool the variances,",
        "dunnett" => "Dunnett's comparisons with the control",
        "holm" => "pooled-variance t tests with Holm's step-down adjustment",
        "bonferroni" => "pooled-variance t tests with the Bonferroni adjustment",
        _ => "Dunn's rank comparisons with Holm's adjustment",
    };

    private string ComparisonMethod(PostHocOutcome p)
    {
        var f = p.Families[0];
        var control = ((PostHocKind.Options)p.Block.Options!).Control;
        var what = control is null
            ? $"pairwise differences between the levels of {E(p.FactorLabel)}"
            : $"the differences of each level of {E(p.FactorLabel)} from the control {E(control)}";
        var method = MethodName(f.Test, p).Replace(", which does not pool the variances,", " (variances not pooled)", StringComparison.Ordinal);
        var text = Did(what, true, "tested", "tested", "test", $" with {method}, which {T("held", "holds")} the family-wise error rate at α = {alphaText} over the {Df(p.Multiplicity[Stat.M])} comparisons");
        var hasCi = f.Pairs.Count > 0 && f.Pairs[0].Values.ContainsKey("ci_low");
        text += hasCi ? $", with simultaneous {confidence}% intervals" : string.Empty;
        text += p.Transformed ? "; differences are on the transformed scale." : ".";
        return text;
    }

    private IEnumerable<string> ComparisonResults(PostHocOutcome p)
    {
        foreach (var f in p.Families)
        {
            var differ = f.Pairs.Where(x => x.Pair.PAdjusted.IsDefined && x.Pair.PAdjusted.Value < o.Alpha).ToList();
            var name = f.Test == "dunn" ? "In Dunn's rank comparisons" : $"In the comparisons of {E(p.FactorLabel)}";
            if (differ.Count == 0)
            {
                yield return $"{name}, no pair {T("differed", "differs")} at the family-wise level α = {alphaText}; this does not show that the levels are equal.";
                continue;
            }

            var items = differ.Select(x => $"{E(x.Pair.LevelA)} − {E(x.Pair.LevelB)} ({Pair(f.Test, x.Values)})");
            var text = $"{name}, {(differ.Count == f.Pairs.Count ? "every pair " + T("differed", "differs") : "these pairs " + T("differed", "differ"))} at the family-wise level α = {alphaText}: {string.Join("; ", items)}.";
            if (differ.Count < f.Pairs.Count)
            {
                text += $" The other pairs {T("were", "are")} not distinguished, which does not show that they are equal.";
            }

            yield return text;
        }
    }

    private string Pair(string test, Dictionary<string, ResultValue> v)
    {
        var text = test == "dunn" ? $"difference in mean rank = {S2(v[Stat.Diff])}" : $"difference = {S2(v[Stat.Diff])}";
        if (v.TryGetValue("ci_low", out var lo) && v.TryGetValue("ci_high", out var hi))
        {
            text += $", {confidence}% CI [{S2(lo)}, {S2(hi)}]";
        }

        return text + ", " + ReportStyle.PPhrase(v[Stat.PAdj], "adjusted p");
    }

    private IEnumerable<string> Effects(MethodsSection s)
    {
        var a = s.Anova;
        var label = (Statistics.Anova.AnovaTerm t) => List(t.Factors.Select(n => E(a.Factors.First(f => f.Name == n).Display)));
        foreach (var (term, v) in a.Terms)
        {
            var interaction = term.Factors.Count > 1;
            var name = interaction ? $"the {string.Join(" × ", term.Factors.Select(n => E(a.Factors.First(f => f.Name == n).Display)))} interaction" : label(term);
            var sentence = TermSentence(a, v);
            if (!term.P.IsDefined)
            {
                yield return $"For {name}, the F test is not defined ({E(term.P.Reason)}).";
                continue;
            }

            var rejected = term.P.Value < o.Alpha;
            var hypothesis = interaction ? "no interaction" : "equal means across its levels";
            if (!interaction && a.ReadWelch && a.Welch is { } w)
            {
                var wRejected = w[Stat.P].Value.IsDefined && w[Stat.P].Value.Value < o.Alpha;
                yield return $"For {name}, Welch's test {(wRejected ? T("rejected", "rejects") : T("did not reject", "does not reject"))} the hypothesis of {hypothesis}, "
                    + $"Welch's F({Df(w[Stat.Df1])}, {Df(w[Stat.Df2])}) = {S2(w[Stat.F])}, {ReportStyle.PPhrase(w[Stat.P])}; the ordinary F test, which assumes equal variances, {T("gave", "gives")} {sentence}."
                    + (wRejected ? string.Empty : " This is not evidence that the means are equal.");
            }
            else
            {
                yield return $"For {name}, the F test {(rejected ? T("rejected", "rejects") : T("did not reject", "does not reject"))} the hypothesis of {hypothesis}, {sentence}."
                    + (rejected
                        ? (interaction ? $" The effect of one factor {T("depended", "depends")} on the level of the other, so the main effects are best read level by level." : string.Empty)
                        : (interaction ? " This is not evidence that the factors act independently." : " This is not evidence that the means are equal."));
                if (!interaction && a.Welch is { } w2)
                {
                    yield return $"Welch's test {T("gave", "gives")} F({Df(w2[Stat.Df1])}, {Df(w2[Stat.Df2])}) = {S2(w2[Stat.F])}, {ReportStyle.PPhrase(w2[Stat.P])}.";
                }
            }
        }

        if (a.Ranks is { } r)
        {
            var rejected = r[Stat.P].Value.IsDefined && r[Stat.P].Value.Value < o.Alpha;
            yield return $"The Kruskal–Wallis rank test {(rejected ? T("rejected", "rejects") : T("did not reject", "does not reject"))} the hypothesis that the groups come from one distribution, H({Df(r[Stat.Df])}) = {S2(r[Stat.H])}, {ReportStyle.PPhrase(r[Stat.P])}.";
        }
    }

    private string TermSentence(AnovaOutcome a, Dictionary<string, ResultValue> v)
    {
        var text = $"F({Df(v[Stat.Df])}, {Df(a.Residual[Stat.Df])}) = {S2(v[Stat.F])}, {ReportStyle.PPhrase(v[Stat.P])}, partial η² = {Fr(v[Stat.PartialEta2])}";
        return text + $", {confidence}% CI [{Fr(v[Stat.PartialEta2CiLow])}, {Fr(v[Stat.PartialEta2CiHigh])}]";
    }

    private string RanksSentence(RanksOutcome r)
    {
        var t = r.Test!;
        var rejected = t[Stat.P].Value.IsDefined && t[Stat.P].Value.Value < o.Alpha;
        return Did($"a Kruskal–Wallis rank test across the levels of {E(r.FactorLabel)}, with Dunn's pairwise comparisons (Holm-adjusted),", false, "run", "ran", "run", ".")
            + $" It {(rejected ? T("rejected", "rejects") : T("did not reject", "does not reject"))} the hypothesis that the groups come from one distribution, H({Df(t[Stat.Df])}) = {S2(t[Stat.H])}, {ReportStyle.PPhrase(t[Stat.P])}.";
    }

    private string PowerSentence(PowerOutcome p)
    {
        var text = $"For a one-way F test with {Words(p.Groups)} groups at α = {Sentences.AlphaText(p.Alpha)}";
        if (p.Values.TryGetValue("power", out var pw))
        {
            text += $" and an effect of Cohen's f = {S2(p.Values[Stat.EffectF])}, {Df(p.Values[Stat.NPerGroup])} observations per group {T("gave", "give")} a power of {Fr(pw)}";
        }

        if (p.Required.TryGetValue("n_per_group", out var need))
        {
            text += (p.Values.Count > 0 ? "; " : $" and an effect of Cohen's f = {S2(p.Required[Stat.EffectF])}, ")
                + $"{Df(need)} per group ({Df(p.Required[Stat.NTotal])} in all) would give a power of {Fr(p.Required[Stat.Power])}";
        }

        return text + ".";
    }

    private string Software()
    {
        var inputs = o.Inputs.Select(i =>
            i.Dataset.Aggregated
                ? $"<code>{E(i.Dataset.Path)}</code> (SHA-256 <code class=\"hash\">{E(i.Dataset.Sha256)}</code>; aggregated by the database into {Df(i.Rows)} cells, {Df(i.RowsUsed)} used by some analysis)"
                : $"<code>{E(i.Dataset.Path)}</code> (SHA-256 <code class=\"hash\">{E(i.Dataset.Sha256)}</code>; {Df(i.Rows)} rows read, {Df(i.RowsUsed)} used by some analysis)");
        var subject = $"the analysis";
        var text = Did(subject, false, "run", "ran", "run", $" with StudyPress <code>{E(Rendering.Tool.Version)}</code>");
        text += o.Inputs.Count == 0 ? "." : $" on {List(inputs)}.";
        return text + " The report's embedded manifest records every value with the file it came from, and this text is regenerated from those values on each build.";
    }

    private IEnumerable<string> Cautions()
    {
        foreach (var s in o.Sections)
        {
            var a = s.Anova;
            var smallest = s.Cells.Min(c => c.N.Value.IsDefined ? c.N.Value.Value : 0);
            var which = o.Sections.Count > 1 ? $" in {E(a.Block.Id)}" : string.Empty;
            if (smallest < 5)
            {
                yield return a.RowsAvailable
                    ? $"Some groups{which} have fewer than five observations, so the tests have little power to detect differences and the assumption checks can say little."
                    : $"Some groups{which} have fewer than five observations, so the tests have little power to detect differences.";
            }

            var failed = a.RowsAvailable ? Failed(a.Review) : [];
            if ((s.Checks is not null || s.Review.Count > 0) && failed.Count > 0)
            {
                var fix = a.ReadWelch && !a.Review.NonNormal && !a.Review.Dependent && !a.Review.HasOutliers
                    ? " Welch's test allows for the unequal variances; the effect sizes and pooled-variance intervals still assume them equal."
                    : " Read the results with that in mind; a transformation or a rank test may suit these data better.";
                yield return $"The checks{which} questioned the model's assumptions: {List(failed)}.{fix}";
            }

            var unbalanced = s.Cells.Select(c => c.N.Value.Value).Distinct().Count() > 1;
            var opts = (AnovaKind.Options)a.Block.Options!;
            if (unbalanced && a.Factors.Count > 1 && opts.Interaction)
            {
                yield return $"The design{which} is unbalanced and includes interactions: the main-effect tests depend on the type of sums of squares, and a main effect is hard to interpret when its factor interacts with another.";
            }

            foreach (var p in s.PostHocs)
            {
                var m = p.Multiplicity[Stat.M];
                if (m.Value.IsDefined && m.Value.Value >= 6)
                {
                    yield return $"With {Df(m)} comparisons, unadjusted tests at α = {alphaText} would carry a chance of up to {ReportStyle.Span(p.Multiplicity[Stat.FwerUnadjusted], ReportStyle.Percent(0))} of at least one false positive; the adjusted p-values and simultaneous intervals account for this.";
                }
            }

            foreach (var p in s.Powers.Where(p => p.Observed))
            {
                yield return "A power calculated from the observed effect (\"observed power\") is a function of the p-value and adds nothing to it; it is left out here. Plan power from an effect size chosen for its practical importance.";
            }
        }

        yield return "Statistical significance is not practical importance: whether a difference of the size estimated matters is a judgement for the field, and the intervals show which sizes remain compatible with the data. The reporting standards of the field apply.";
    }
}
