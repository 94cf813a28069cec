using System.Globalization;
using StudyPress.Binding;
using StudyPress.Diagnostics;
using StudyPress.Evaluation;
using StudyPress.Rendering;
using StudyPress.Statistics;
using StudyPress.Syntax;

namespace StudyPress.Kinds;

/// <summary>
/// <c>methods</c>: a methods-and-results text generated from the blocks it covers (<c>of</c>,
/// default every analysis block of the study, above or below it): design and group sizes, model,
/// significance level, assumption checks and their outcomes, the decisions the automatic rules
/// took, multiple comparisons, test results with effect sizes and their intervals, software and
/// input hashes, and cautions. The text is rebuilt from the results on every build, so it follows
/// the data; every number in it is a traced span (see <see cref="ReportStyle"/>).
/// Numbers the manifest does not hold elsewhere (cell sizes, rows read and used, and checks that
/// no assumptions block reports) are recorded under the methods block's own id.
/// </summary>
public sealed class MethodsKind : BlockKind
{
    public override string Name => "methods";

    public override string PrimaryTest => "design";

    public override IReadOnlyList<string> OwnKeys { get; } = ["of", "tense", "voice", "include"];

    public override bool UsesData => false;

    public override bool NeedsFactors => false;

    /// <summary>The parts a methods block can include, in the order they are written.</summary>
    public static readonly string[] Parts = ["design", "model", "assumptions", "decisions", "comparisons", "effects", "software", "cautions"];

    public sealed record Options(IReadOnlyList<YScalar>? Of, bool Past, bool Active, IReadOnlySet<string> Include);

    public override object? BindOptions(KeyReader keys, BindContext context, DiagnosticBag diagnostics)
    {
        var of = keys.ScalarList("of");
        if (of is not null)
        {
            var seen = new HashSet<string>(StringComparer.Ordinal);
            foreach (var item in of.Where(i => !seen.Add(i.Value)))
            {
                diagnostics.DuplicateInList(item.Location, "of", item.Value);
            }
        }

        var tense = keys.Choice("tense", ["past", "present"]) ?? "past";
        var voice = keys.Choice("voice", ["passive", "active"]) ?? "passive";
        var include = new HashSet<string>(StringComparer.Ordinal);
        if (keys.ScalarList("include") is { } list)
        {
            foreach (var item in list)
            {
                if (!Parts.Contains(item.Value))
                {
                    diagnostics.BadChoice(item.Location, "include", item.Value, Parts, DiagnosticBag.Nearest(item.Value, Parts));
                }
                else if (!include.Add(item.Value))
                {
                    diagnostics.DuplicateInList(item.Location, "include", item.Value);
                }
            }
        }
        else
        {
            include.UnionWith(Parts);
        }

        return new Options(of, tense == "past", voice == "active", include);
    }

    /// <summary>One anova block described, with the covered blocks that work on it.</summary>
    public sealed class Section
    {
        public required AnovaKind.Outcome Anova { get; init; }

        /// <summary>Whether the anova block itself is covered (not only blocks that work on it).</summary>
        public required bool Covered { get; init; }

        public AssumptionsKind.Outcome? Checks { get; set; }

        public List<PostHocKind.Outcome> PostHocs { get; } = [];

        public List<PowerKind.Outcome> Powers { get; } = [];

        /// <summary>Cell label → traced size, in cell order.</summary>
        public List<(string Label, ResultValue N)> Cells { get; } = [];

        public ResultValue? Total { get; set; }

        public ResultValue? Dropped { get; set; }

        /// <summary>Review values by test then statistic: from an assumptions block of the anova, else recorded here.</summary>
        public Dictionary<string, Dictionary<string, ResultValue>> Review { get; } = new(StringComparer.Ordinal);
    }

    public sealed class Outcome(BoundBlock block) : BlockOutcome(block)
    {
        public List<Section> Sections { get; } = [];

        public List<SummaryKind.Outcome> Summaries { get; } = [];

        public List<RanksKind.Outcome> Ranks { get; } = [];

        /// <summary>Power blocks not tied to an anova block.</summary>
        public List<PowerKind.Outcome> Powers { get; } = [];

        /// <summary>Datasets the covered blocks read, with traced row counts.</summary>
        public List<(LoadedDatasetView Dataset, ResultValue Rows, ResultValue RowsUsed)> Inputs { get; } = [];

        public double Alpha { get; set; }
    }

    /// <summary>What the text says about an input file.</summary>
    public sealed record LoadedDatasetView(string Name, string Path, string Sha256);

    public override BlockOutcome Evaluate(EvaluationContext context, BoundBlock block, DiagnosticBag diagnostics)
    {
        var options = (Options)block.Options!;
        var outcome = new Outcome(block) { Alpha = context.Header.Alpha };
        var describable = context.Outcomes.Values
            .Where(o => o.Block.Kind is not MethodsKind and not FigureKind)
            .OrderBy(o => o.Block.Location.Line)
            .ToList();
        List<BlockOutcome> covered;
        if (options.Of is null)
        {
            covered = describable;
        }
        else
        {
            covered = [];
            foreach (var item in options.Of)
            {
                if (context.Outcomes.GetValueOrDefault(item.Value) is not { } target)
                {
                    diagnostics.UnknownMethodsOf(item.Location, item.Value, DiagnosticBag.Nearest(item.Value, describable.Select(d => d.Block.Id)));
                }
                else if (target.Block.Kind is MethodsKind or FigureKind)
                {
                    diagnostics.MethodsOfNotDescribed(item.Location, item.Value, target.Block.Kind.Name);
                }
                else if (!covered.Contains(target))
                {
                    covered.Add(target);
                }
            }

            covered = [.. covered.OrderBy(o => o.Block.Location.Line)];
        }

        // Anova sections: covered anova blocks, and the anova blocks that covered checks and comparisons work on.
        var sections = new Dictionary<string, Section>(StringComparer.Ordinal);
        Section? SectionFor(string anovaId, bool isCovered)
        {
            if (context.Outcomes.GetValueOrDefault(anovaId) is not AnovaKind.Outcome { Result: not null } anova)
            {
                return null;
            }

            if (!sections.TryGetValue(anovaId, out var s))
            {
                s = new Section { Anova = anova, Covered = isCovered };
                sections[anovaId] = s;
            }

            return s;
        }

        foreach (var o in covered.OfType<AnovaKind.Outcome>())
        {
            SectionFor(o.Block.Id, true);
        }

        foreach (var o in covered)
        {
            switch (o)
            {
                case AssumptionsKind.Outcome a when a.Review is not null && SectionFor(a.Block.Of!.Id, false) is { } s:
                    s.Checks ??= a;
                    break;
                case PostHocKind.Outcome p when p.Families.Count > 0 && SectionFor(p.Block.Of!.Id, false) is { } s:
                    s.PostHocs.Add(p);
                    break;
                case PowerKind.Outcome w when w.Values.Count + w.Required.Count > 0:
                    if (((PowerKind.Options)w.Block.Options!).Of is { } of && sections.TryGetValue(of, out var ps))
                    {
                        ps.Powers.Add(w);
                    }
                    else
                    {
                        outcome.Powers.Add(w);
                    }

                    break;
                case SummaryKind.Outcome sum when sum.Groups.Count > 0:
                    outcome.Summaries.Add(sum);
                    break;
                case RanksKind.Outcome r when r.Test is not null:
                    outcome.Ranks.Add(r);
                    break;
            }
        }

        var id = block.Id;
        foreach (var s in sections.Values.OrderBy(s => s.Anova.Block.Location.Line))
        {
            var a = s.Anova;
            var data = a.Data!;
            var inputs = context.Inputs(a.Block);
            foreach (var cell in data.Cells())
            {
                s.Cells.Add((cell.Label, context.Results.Add(id, "design", a.Block.Id, cell.Label, null, "n", cell.Values.Length, inputs)));
            }

            s.Total = context.Results.Add(id, "design", a.Block.Id, null, null, "n_total", data.Rows.Length, inputs);
            s.Dropped = context.Results.Add(id, "design", a.Block.Id, null, null, "dropped_missing", data.DroppedMissing, inputs);
            ReviewValues(context, id, s, inputs);
            outcome.Sections.Add(s);
        }

        var names = new List<string>();
        foreach (var o in covered)
        {
            var b = o.Block.Of ?? o.Block;
            if (b.Data is { } d && !names.Contains(d))
            {
                names.Add(d);
            }

            if (o is PowerKind.Outcome pw && ((PowerKind.Options)pw.Block.Options!).Of is { } pof && context.Outcomes.GetValueOrDefault(pof)?.Block.Data is { } pd && !names.Contains(pd))
            {
                names.Add(pd);
            }
        }

        foreach (var spec in context.Header.Datasets.Where(d => names.Contains(d.Name)))
        {
            if (context.Datasets.GetValueOrDefault(spec.Name) is not { } ds)
            {
                continue;
            }

            outcome.Inputs.Add((
                new LoadedDatasetView(spec.Name, ds.Path, ds.Sha256),
                context.Results.Add(id, "input", spec.Name, null, null, "rows", ds.Rows, [spec.Name]),
                context.Results.Add(id, "input", spec.Name, null, null, "rows_used", ds.RowsUsed, [spec.Name])));
        }

        return outcome;
    }

    /// <summary>The checks the text quotes: from an assumptions block of the anova if there is one, else recorded here.</summary>
    private static void ReviewValues(EvaluationContext context, string id, Section s, IReadOnlyList<string> inputs)
    {
        var a = s.Anova;
        var checks = s.Checks ?? context.Outcomes.Values.OfType<AssumptionsKind.Outcome>()
            .Where(o => o.Anova == a && o.Review is not null)
            .OrderBy(o => o.Block.Location.Line)
            .FirstOrDefault();
        if (checks is not null)
        {
            foreach (var (test, values) in checks.Values)
            {
                s.Review[test] = values;
            }

            return;
        }

        // Only the checks the automatic rules read (they ran for the anova block's choices).
        var options = (AnovaKind.Options)a.Block.Options!;
        if (a.Data!.Factors.Count != 1 || options.Welch != "auto")
        {
            return;
        }

        var review = a.Review;
        var term = a.Data.Factors[0].Spec.Name;
        var level = a.Block.Id;
        var bf = s.Review["brown_forsythe"] = new(StringComparer.Ordinal);
        bf["f"] = context.Results.Add(id, "brown_forsythe", term, level, null, "f", review.BrownForsythe.F, inputs);
        bf["df1"] = context.Results.Add(id, "brown_forsythe", term, level, null, "df1", review.BrownForsythe.Df1, inputs);
        bf["df2"] = context.Results.Add(id, "brown_forsythe", term, level, null, "df2", review.BrownForsythe.Df2, inputs);
        bf["p"] = context.Results.Add(id, "brown_forsythe", term, level, null, "p", review.BrownForsythe.P, inputs);
        if (review.WantsRankTest)
        {
            var sw = s.Review["shapiro_wilk"] = new(StringComparer.Ordinal);
            sw["w"] = context.Results.Add(id, "shapiro_wilk", "residual", level, null, "w", review.Normality.W, inputs);
            sw["p"] = context.Results.Add(id, "shapiro_wilk", "residual", level, null, "p", review.Normality.P, inputs);
        }
    }

    public override void Render(HtmlWriter html, BlockOutcome outcome, RenderContext context)
    {
        var o = (Outcome)outcome;
        var options = (Options)o.Block.Options!;
        var text = new MethodsText(o, options);
        foreach (var (css, paragraph) in text.Paragraphs())
        {
            html.Raw("<p class=\"methods-").Raw(css).Raw("\">").Raw(paragraph).Raw("</p>");
        }
    }
}

/// <summary>Writes the methods text; every number goes through <see cref="ReportStyle"/> spans.</summary>
internal sealed class MethodsText(MethodsKind.Outcome o, MethodsKind.Options options)
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

    private string Design(MethodsKind.Section s)
    {
        var a = s.Anova;
        var data = a.Data!;
        var block = a.Block;
        var response = E(data.ResponseName);
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

        var factors = data.Factors;
        var sizes = s.Cells.Select(c => c.N.Value.IsDefined ? c.N.Value.Value : -1).Distinct().Count();
        var levelText = List(factors.Select(f => E(f.Spec.Display) + " (" + List(f.Levels.Select(E)) + ")"));
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
        return sb;
    }

    private string Model(MethodsKind.Section s)
    {
        var a = s.Anova;
        var data = a.Data!;
        var opts = (AnovaKind.Options)a.Block.Options!;
        var k = data.Factors.Count;
        var way = k switch { 1 => "a one-way", 2 => "a two-way", 3 => "a three-way", _ => "a factorial" };
        var subject = $"{way} fixed-effects analysis of variance";
        var rest = " by least squares";
        if (k > 1)
        {
            var interaction = opts.Interaction ? (k == 2 ? " and their interaction," : " and their interactions,") : ", without interactions,";
            rest += $" with the factors {List(data.Factors.Select(f => E(f.Spec.Display)))}{interaction}";
            rest += a.Result!.SsType switch
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
                Statistics.Anova.TransformKind.Log => $", on the natural logarithm of {E(data.ResponseName)}",
                Statistics.Anova.TransformKind.Log10 => $", on the common logarithm of {E(data.ResponseName)}",
                Statistics.Anova.TransformKind.Sqrt => $", on the square root of {E(data.ResponseName)}",
                Statistics.Anova.TransformKind.Reciprocal => $", on the reciprocal of {E(data.ResponseName)}",
                _ => $", on the Box–Cox transform of {E(data.ResponseName)} with the maximum-likelihood λ = {S2(a.BoxCox["lambda"])}"
                    + (a.BoxCox["lambda_low"].Value.IsDefined && a.BoxCox["lambda_high"].Value.IsDefined
                        ? $" (profile-likelihood interval {S2(a.BoxCox["lambda_low"])} to {S2(a.BoxCox["lambda_high"])})"
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

    private IEnumerable<string> Assumptions(MethodsKind.Section s)
    {
        var r = s.Review;
        var review = s.Checks!.Review!;
        var checks = new List<string>();
        if (r.TryGetValue("shapiro_wilk", out var sw))
        {
            checks.Add($"normality of the residuals (Shapiro–Wilk, W = {Fr(sw["w"])}, {ReportStyle.PPhrase(sw["p"])})");
        }

        var variance = new List<string>();
        foreach (var (test, name) in new[] { ("brown_forsythe", "Brown–Forsythe"), ("levene", "mean-centred Levene") })
        {
            if (r.TryGetValue(test, out var v))
            {
                variance.Add($"{name}, F({Df(v["df1"])}, {Df(v["df2"])}) = {S2(v["f"])}, {ReportStyle.PPhrase(v["p"])}");
            }
        }

        if (r.TryGetValue("bartlett", out var bt))
        {
            variance.Add($"Bartlett, χ²({Df(bt["df"])}) = {S2(bt["statistic"])}, {ReportStyle.PPhrase(bt["p"])}");
        }

        if (variance.Count > 0)
        {
            checks.Add($"equal variances across the groups ({string.Join("; ", variance)})");
        }

        if (r.TryGetValue("durbin_watson", out var dw))
        {
            checks.Add($"independence in run order (Durbin–Watson, d = {S2(dw["d"])}, {ReportStyle.PPhrase(dw["p"])})");
        }

        if (r.TryGetValue("outliers", out var ol))
        {
            checks.Add($"outlying observations (largest externally studentized residual |t| = {S2(ol["max_abs_t"])}, {ReportStyle.PPhrase(ol["p_bonferroni"], "Bonferroni-adjusted p")})");
        }

        yield return Did("the model's assumptions", true, "checked", "checked", "check", ": " + List(checks) + ".");
        if (review.Independence is null && review.IndependenceSkipped is not null)
        {
            yield return $"Independence in run order {Be(false)} not checked, as no run order {T("was", "is")} available.";
        }

        var failed = Failed(review);
        var otherVariance = new[] { ("levene", "mean-centred Levene"), ("bartlett", "Bartlett") }
            .Where(x => r.TryGetValue(x.Item1, out var v) && v["p"].Value.IsDefined && v["p"].Value.Value < o.Alpha)
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

    private IEnumerable<string> Decisions(MethodsKind.Section s)
    {
        var a = s.Anova;
        var opts = (AnovaKind.Options)a.Block.Options!;
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
                var bfText = $"F({Df(bf["df1"])}, {Df(bf["df2"])}) = {S2(bf["f"])}, {ReportStyle.PPhrase(bf["p"])}";
                if (a.Review.UnequalVariances)
                {
                    yield return $"Because the Brown–Forsythe test {T("indicated", "indicates")} unequal group variances ({bfText}), "
                        + (active ? $"we {T("used", "use")} Welch's F test, which does not assume equal variances, for {factor} in place of the ordinary F test." : $"Welch's F test, which does not assume equal variances, {Be(false)} used for {factor} in place of the ordinary F test.");
                }
                else if (bf["p"].Value.IsDefined)
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
                yield return $"Because the residuals {T("departed", "depart")} from normality (Shapiro–Wilk, W = {Fr(sw["w"])}, {ReportStyle.PPhrase(sw["p"])}) and the smallest group {T("had", "has")} only {Df(smallest.N)} observations, "
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
                ? $"because the Brown–Forsythe test {T("indicated", "indicates")} unequal variances{(bf is null ? string.Empty : " (" + ReportStyle.PPhrase(bf["p"]) + ")")}"
                : $"because the Brown–Forsythe test {T("gave", "gives")} no indication of unequal variances{(bf is null ? string.Empty : " (" + ReportStyle.PPhrase(bf["p"]) + ")")}";
            yield return $"For the pairwise comparisons of {E(p.FactorLabel)}, {method} {T("was", "is")} chosen {why}"
                + (p.Families.Count > 1 ? $", and Dunn's rank comparisons (Holm-adjusted) {T("were", "are")} added because the residuals {T("departed", "depart")} from normality in small groups." : ".");
        }
    }

    private static string MethodName(string test, PostHocKind.Outcome p) => test switch
    {
        "tukey_hsd" => p.Families[0].Title.StartsWith("Tukey–Kramer", StringComparison.Ordinal) ? "the Tukey–Kramer procedure (Tukey's HSD for unequal group sizes)" : "Tukey's HSD procedure",
        "games_howell" => "the Games–Howell procedure, which does not pool the variances,",
        "dunnett" => "Dunnett's comparisons with the control",
        "holm" => "pooled-variance t tests with Holm's step-down adjustment",
        "bonferroni" => "pooled-variance t tests with the Bonferroni adjustment",
        _ => "Dunn's rank comparisons with Holm's adjustment",
    };

    private string ComparisonMethod(PostHocKind.Outcome p)
    {
        var f = p.Families[0];
        var control = ((PostHocKind.Options)p.Block.Options!).Control;
        var what = control is null
            ? $"pairwise differences between the levels of {E(p.FactorLabel)}"
            : $"the differences of each level of {E(p.FactorLabel)} from the control {E(control)}";
        var method = MethodName(f.Test, p).Replace(", which does not pool the variances,", " (variances not pooled)", StringComparison.Ordinal);
        var text = Did(what, true, "tested", "tested", "test", $" with {method}, which {T("held", "holds")} the family-wise error rate at α = {alphaText} over the {Df(p.Multiplicity["m"])} comparisons");
        var hasCi = f.Pairs.Count > 0 && f.Pairs[0].Values.ContainsKey("ci_low");
        text += hasCi ? $", with simultaneous {confidence}% intervals" : string.Empty;
        text += p.Transformed ? "; differences are on the transformed scale." : ".";
        return text;
    }

    private IEnumerable<string> ComparisonResults(PostHocKind.Outcome p)
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
        var text = test == "dunn" ? $"difference in mean rank = {S2(v["diff"])}" : $"difference = {S2(v["diff"])}";
        if (v.TryGetValue("ci_low", out var lo) && v.TryGetValue("ci_high", out var hi))
        {
            text += $", {confidence}% CI [{S2(lo)}, {S2(hi)}]";
        }

        return text + ", " + ReportStyle.PPhrase(v["p_adj"], "adjusted p");
    }

    private IEnumerable<string> Effects(MethodsKind.Section s)
    {
        var a = s.Anova;
        var label = (Statistics.Anova.AnovaTerm t) => List(t.Factors.Select(n => E(a.Data!.Factors.First(f => f.Spec.Name == n).Spec.Display)));
        foreach (var (term, v) in a.Terms)
        {
            var interaction = term.Factors.Count > 1;
            var name = interaction ? $"the {string.Join(" × ", term.Factors.Select(n => E(a.Data!.Factors.First(f => f.Spec.Name == n).Spec.Display)))} interaction" : label(term);
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
                var wRejected = w["p"].Value.IsDefined && w["p"].Value.Value < o.Alpha;
                yield return $"For {name}, Welch's test {(wRejected ? T("rejected", "rejects") : T("did not reject", "does not reject"))} the hypothesis of {hypothesis}, "
                    + $"Welch's F({Df(w["df1"])}, {Df(w["df2"])}) = {S2(w["f"])}, {ReportStyle.PPhrase(w["p"])}; the ordinary F test, which assumes equal variances, {T("gave", "gives")} {sentence}."
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
                    yield return $"Welch's test {T("gave", "gives")} F({Df(w2["df1"])}, {Df(w2["df2"])}) = {S2(w2["f"])}, {ReportStyle.PPhrase(w2["p"])}.";
                }
            }
        }

        if (a.Ranks is { } r)
        {
            var rejected = r["p"].Value.IsDefined && r["p"].Value.Value < o.Alpha;
            yield return $"The Kruskal–Wallis rank test {(rejected ? T("rejected", "rejects") : T("did not reject", "does not reject"))} the hypothesis that the groups come from one distribution, H({Df(r["df"])}) = {S2(r["h"])}, {ReportStyle.PPhrase(r["p"])}.";
        }
    }

    private string TermSentence(AnovaKind.Outcome a, Dictionary<string, ResultValue> v)
    {
        var text = $"F({Df(v["df"])}, {Df(a.Residual["df"])}) = {S2(v["f"])}, {ReportStyle.PPhrase(v["p"])}, partial η² = {Fr(v["partial_eta2"])}";
        return text + $", {confidence}% CI [{Fr(v["partial_eta2_ci_low"])}, {Fr(v["partial_eta2_ci_high"])}]";
    }

    private string RanksSentence(RanksKind.Outcome r)
    {
        var t = r.Test!;
        var rejected = t["p"].Value.IsDefined && t["p"].Value.Value < o.Alpha;
        return Did($"a Kruskal–Wallis rank test across the levels of {E(r.FactorLabel)}, with Dunn's pairwise comparisons (Holm-adjusted),", false, "run", "ran", "run", ".")
            + $" It {(rejected ? T("rejected", "rejects") : T("did not reject", "does not reject"))} the hypothesis that the groups come from one distribution, H({Df(t["df"])}) = {S2(t["h"])}, {ReportStyle.PPhrase(t["p"])}.";
    }

    private string PowerSentence(PowerKind.Outcome p)
    {
        var text = $"For a one-way F test with {Words(p.Groups)} groups at α = {Sentences.AlphaText(p.Alpha)}";
        if (p.Values.TryGetValue("power", out var pw))
        {
            text += $" and an effect of Cohen's f = {S2(p.Values["effect_f"])}, {Df(p.Values["n_per_group"])} observations per group {T("gave", "give")} a power of {Fr(pw)}";
        }

        if (p.Required.TryGetValue("n_per_group", out var need))
        {
            text += (p.Values.Count > 0 ? "; " : $" and an effect of Cohen's f = {S2(p.Required["effect_f"])}, ")
                + $"{Df(need)} per group ({Df(p.Required["n_total"])} in all) would give a power of {Fr(p.Required["power"])}";
        }

        return text + ".";
    }

    private string Software()
    {
        var inputs = o.Inputs.Select(i =>
            $"<code>{E(i.Dataset.Path)}</code> (SHA-256 <code class=\"hash\">{E(i.Dataset.Sha256)}</code>; {Df(i.Rows)} rows read, {Df(i.RowsUsed)} used by some analysis)");
        var subject = $"the analysis";
        var text = Did(subject, false, "run", "ran", "run", $" with StudyPress <code>{E(Compilation.ToolVersion)}</code>");
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
                yield return $"Some groups{which} have fewer than five observations, so the tests have little power to detect differences and the assumption checks can say little.";
            }

            var failed = Failed(a.Review);
            if ((s.Checks is not null || s.Review.Count > 0) && failed.Count > 0)
            {
                var fix = a.ReadWelch && !a.Review.NonNormal && !a.Review.Dependent && !a.Review.HasOutliers
                    ? " Welch's test allows for the unequal variances; the effect sizes and pooled-variance intervals still assume them equal."
                    : " Read the results with that in mind; a transformation or a rank test may suit these data better.";
                yield return $"The checks{which} questioned the model's assumptions: {List(failed)}.{fix}";
            }

            var unbalanced = s.Cells.Select(c => c.N.Value.Value).Distinct().Count() > 1;
            var opts = (AnovaKind.Options)a.Block.Options!;
            if (unbalanced && a.Data!.Factors.Count > 1 && opts.Interaction)
            {
                yield return $"The design{which} is unbalanced and includes interactions: the main-effect tests depend on the type of sums of squares, and a main effect is hard to interpret when its factor interacts with another.";
            }

            foreach (var p in s.PostHocs)
            {
                var m = p.Multiplicity["m"];
                if (m.Value.IsDefined && m.Value.Value >= 6)
                {
                    yield return $"With {Df(m)} comparisons, unadjusted tests at α = {alphaText} would carry a chance of up to {ReportStyle.Span(p.Multiplicity["fwer_unadjusted"], ReportStyle.Percent(0))} of at least one false positive; the adjusted p-values and simultaneous intervals account for this.";
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
