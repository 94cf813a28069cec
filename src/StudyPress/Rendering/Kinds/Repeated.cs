using System.Globalization;
using System.Runtime.CompilerServices;
using StudyPress.Charts;
using StudyPress.Evaluation;
using StudyPress.Evaluation.Kinds;
using StudyPress.Statistics.Repeated;

namespace StudyPress.Rendering.Kinds;

/// <summary>
/// Writes the HTML of <c>repeated</c> blocks: the table by strata with the sphericity corrections,
/// Mauchly's tests, which correction is read and why, subjects left out, the mixed-model route,
/// paired comparisons and simple effects; method and reading; methods sentences.
/// </summary>
public sealed class RepeatedRenderer : KindRenderer
{
    /// <summary>Registers this part of the kind (see DEVELOPERS.md, "Adding an analysis kind").</summary>
    [ModuleInitializer]
    internal static void Register() => KindRenderers.Register(new RepeatedRenderer());

    public override string Kind => "repeated";

    /// <summary>The correction's name as the report prints it.</summary>
    public static string CorrectionName(SphericityCorrection c) => c switch
    {
        SphericityCorrection.GreenhouseGeisser => "Greenhouse–Geisser",
        SphericityCorrection.HuynhFeldt => "Huynh–Feldt",
        _ => "uncorrected",
    };

    /// <summary>Why a correction is read, in words (the typed decision worded here).</summary>
    public static string Why(SphericityReading r, string alphaText)
    {
        if (r.Rule is not { } rule)
        {
            return r.Levels == 2
                ? "two levels: one contrast, so sphericity holds and no correction applies"
                : $"{CorrectionName(r.Correction)} as the block asks ('correction')";
        }

        var mauchly = rule.MauchlyP.IsDefined ? "Mauchly's p " + (NumberFormat.Current.P(rule.MauchlyP.Value) is var mp && mp.StartsWith('<') ? mp : "= " + mp) : "Mauchly's test not defined (fewer subjects than contrasts)";
        var gg = rule.EpsilonGreenhouseGeisser.IsDefined ? NumberFormat.Current.General(rule.EpsilonGreenhouseGeisser.Value) : "not defined";
        return rule.Basis switch
        {
            SphericityBasis.TwoLevels => "two levels: one contrast, so sphericity holds and no correction applies",
            SphericityBasis.MauchlyNotSignificant => $"{mauchly}, not below α = {alphaText}: sphericity is not rejected, so the uncorrected test is read",
            SphericityBasis.EpsilonBelowThreshold => $"{mauchly}; Greenhouse–Geisser ε = {gg} is below {SphericityDecision.GirdenThreshold.ToString("0.00", CultureInfo.InvariantCulture)}, so the Greenhouse–Geisser correction is read (Huynh–Feldt is liberal when sphericity is strongly violated)",
            SphericityBasis.EpsilonAtOrAboveThreshold => $"{mauchly}; Greenhouse–Geisser ε = {gg} is at or above {SphericityDecision.GirdenThreshold.ToString("0.00", CultureInfo.InvariantCulture)}, so the Huynh–Feldt correction is read (Greenhouse–Geisser is conservative when the violation is mild)",
            SphericityBasis.HuynhFeldtNotDefined => $"{mauchly}; the rule points to Huynh–Feldt, whose estimate is not defined with so few subjects, so Greenhouse–Geisser is read",
            _ => "the epsilons are not defined (no within-subject error), so nothing can be corrected",
        };
    }

    /// <summary>
    /// A term as the report prints it: each factor name replaced by its label (the header's
    /// <c>label</c>, else the name) and ':' written as ' × '; an error term keeps its form
    /// ("B × subject(A)" with labels in place of B, subject and A).
    /// </summary>
    private static string Term(RepeatedOutcome o, string term)
    {
        var labels = new Dictionary<string, string>(StringComparer.Ordinal) { [o.SubjectName] = o.SubjectLabel };
        foreach (var (name, label) in o.Within.Concat(o.Between))
        {
            labels[name] = label;
        }

        var sb = new System.Text.StringBuilder();
        var start = 0;
        for (var i = 0; i <= term.Length; i++)
        {
            var ch = i < term.Length ? term[i] : '\0';
            if (ch is not (':' or '(' or ')' or ',' or '\0'))
            {
                continue;
            }

            var name = term[start..i];
            sb.Append(labels.TryGetValue(name, out var label) ? label : name);
            sb.Append(ch switch { ':' => " × ", '\0' => string.Empty, _ => ch.ToString() });
            start = i + 1;
        }

        return sb.ToString();
    }

    public override IEnumerable<string> Methods(MethodsPart part, MethodsSection? section, BlockOutcome outcome, MethodsWriter w)
    {
        if (part != MethodsPart.Results || !w.Has("effects") || outcome is not RepeatedOutcome o)
        {
            yield break;
        }

        var within = MethodsWriter.List(o.Within.Select(x => MethodsWriter.E(x.Label)));
        var between = o.Between.Count == 0 ? string.Empty : " and " + MethodsWriter.List(o.Between.Select(x => MethodsWriter.E(x.Label))) + " between subjects";
        var n = o.Subjects![Stat.N];
        var dropped = o.Subjects[Stat.SubjectsDropped];
        var design = $"a repeated-measures analysis of variance with {within} within subjects{between} ({MethodsWriter.E(o.SubjectLabel)}, {MethodsWriter.Df(n)} complete subjects analysed"
            + (o.Dropped.Count > 0 ? $", {MethodsWriter.Df(dropped)} incomplete left out" : string.Empty) + ")";
        if (o.Rows is not null)
        {
            yield return w.Did(design, false, "run", "ran", "run", ".");
            var corrected = o.Readings.Where(r => r.Levels > 2).ToList();
            if (corrected.Count > 0)
            {
                var rule = o.CorrectionAsked == "auto"
                    ? $"Sphericity {w.T("was", "is")} checked with Mauchly's test for each within-subject term with more than two levels; where it {w.T("was", "is")} rejected at α = {w.AlphaText}, the Greenhouse–Geisser correction {w.T("was", "is")} read when its ε {w.T("was", "is")} below 0.75 and the Huynh–Feldt correction otherwise"
                    : $"The {CorrectionName(corrected[0].Correction)} correction {w.T("was", "is")} read for every within-subject term with more than two levels, as asked";
                var read = string.Join("; ", corrected.Select(r => $"{MethodsWriter.E(Term(o, r.Term))}: {CorrectionName(r.Correction)}"));
                yield return $"{rule} ({read}).";
            }
        }
        else
        {
            yield return w.Did($"a repeated-measures analysis with {within} within subjects{between}, fitted as a linear mixed model by REML with Satterthwaite df on every measurement ({MethodsWriter.Df(o.MixedCounts![Stat.N])} subjects of {MethodsWriter.E(o.SubjectLabel)})", false, "run", "ran", "run", ".");
        }

        if (o.Mixed is not null && o.Rows is not null)
        {
            yield return $"Because incomplete subjects were left out of the classical analysis, the mixed model (REML, Satterthwaite df) that keeps them {w.T("was", "is")} also reported.";
        }

        if (o.Friedman is not null)
        {
            var why = o.RankReason == RankRouteReason.NormalityFailed
                ? $"Because the residuals {w.T("departed", "depart")} from normality (Shapiro–Wilk, {ReportStyle.PPhrase(o.Normality![Stat.P])}), the"
                : "The";
            yield return $"{why} Friedman rank test of {MethodsWriter.E(o.Within[0].Label)} with the Iman–Davenport F {w.T("was", "is")} also run (subjects as blocks)" + (o.RankPairs.Count > 0 ? ", with Conover's comparisons of mean ranks (Holm-adjusted)." : ".");
        }

        if (w.Has("comparisons") && (o.Pairs.Count > 0 || o.RemlPairs.Count > 0))
        {
            var how = MethodsWriter.List(new[]
            {
                o.Pairs.Count > 0 ? "by paired t tests on the complete subjects" : null,
                o.RemlPairs.Count > 0 ? "from the mixed model's estimated marginal means (Satterthwaite df), which keep every measurement" : null,
            }.OfType<string>());
            var adjusted = (o.Pairs.Count > 0 ? o.PairTest == TestName.Holm : o.RemlPairTest == TestName.HolmReml) ? "Holm" : "Bonferroni";
            yield return w.Did($"the levels of {MethodsWriter.E(o.CompareLabel)}", true, "compared", "compared", "compare", $" pairwise {how}, with {adjusted}-adjusted p-values.");
        }
    }

    public override IEnumerable<string> Warnings(BlockOutcome outcome, RenderContext context)
    {
        if (outcome is not RepeatedOutcome o)
        {
            yield break;
        }

        if (o.Mixed is not null && o.Rows is not null && o.Mixed.Any(m => SameDecision(o, m, context.Alpha) == false))
        {
            yield return $"At α = {context.AlphaText} the classical and mixed-model routes reach different decisions for " + string.Join(", ", o.Mixed.Where(m => SameDecision(o, m, context.Alpha) == false).Select(m => BidiText.Isolate(Term(o, m.Term)))) + ": read both tables; the mixed model uses every measurement of the incomplete subjects, the classical route only the complete subjects.";
        }

        if (o.Pairs.Count > 0 && o.RemlPairs.Count > 0 && o.RemlPairs.Any(r => SamePairDecision(o, r, context.Alpha) == false))
        {
            yield return $"At α = {context.AlphaText} the paired comparisons (complete subjects) and the mixed model's comparisons (every measurement) of {BidiText.Isolate(o.CompareLabel ?? string.Empty)} reach different decisions for " + string.Join(", ", o.RemlPairs.Where(r => SamePairDecision(o, r, context.Alpha) == false).Select(r => BidiText.Isolate(r.A) + " − " + BidiText.Isolate(r.B))) + ": read both tables; the mixed model also uses the incomplete subjects' measurements.";
        }

        if (o.RankReason == RankRouteReason.NormalityFailedNoRankForm)
        {
            yield return "The residuals depart from a normal distribution (Shapiro–Wilk p below α), so the F tests' p-values may be off. The Friedman rank test has no form for this layout (between-subject groups or several within factors): consider a transformation of the response, and judge the size of the departure with qualified review.";
        }

        if (o.RankReason == RankRouteReason.NormalityFailed)
        {
            yield return "The residuals depart from a normal distribution (Shapiro–Wilk p below α), so the F test's p-value may be off; the Friedman rank test, which does not assume normality, is shown with it ('ranks: auto'). It tests whether the subjects rank the levels alike, not whether the means differ; where the two tests disagree, neither settles the question alone.";
        }

        if (o.MixedSingular)
        {
            yield return "A variance of the mixed model is estimated at zero (on the boundary), so its tests pool that stratum with its error.";
        }
    }

    public override IEnumerable<string> Notes(BlockOutcome outcome, RenderContext context)
    {
        if (outcome is not RepeatedOutcome o)
        {
            yield break;
        }

        foreach (var d in o.Dropped.Take(10))
        {
            yield return $"{BidiText.Isolate(o.SubjectLabel)} {BidiText.Isolate(d.Subject)} was dropped from the classical analysis: {d.Reason}." + (o.Mixed is not null && d.Measurements > 0 ? " The mixed-model route keeps its measurements." : string.Empty);
        }

        if (o.Dropped.Count > 10)
        {
            yield return string.Create(CultureInfo.InvariantCulture, $"… and {o.Dropped.Count - 10} more incomplete {NumberText.Noun(o.Dropped.Count - 10, "subject")} dropped from the classical analysis.");
        }

        if (o.ReplicatedCells > 0)
        {
            yield return string.Create(CultureInfo.InvariantCulture, $"{NumberText.Count(o.ReplicatedCells, "subject × cell combination")} {(o.ReplicatedCells == 1 ? "was" : "were")} measured more than once; their mean was analysed.");
        }

        if (o.DroppedMissing > 0)
        {
            yield return string.Create(CultureInfo.InvariantCulture, $"{NumberText.Count(o.DroppedMissing, "row")} with a missing value {(o.DroppedMissing == 1 ? "was" : "were")} left out.");
        }

        if (o.RemlPairsNotComputed is { } notComputed)
        {
            yield return $"The mixed model's comparisons of {BidiText.Isolate(o.CompareLabel ?? string.Empty)} were not computed: {notComputed}.";
        }

        if (o.RankReason == RankRouteReason.NormalityNotTested && o.Normality is null)
        {
            yield return string.Create(CultureInfo.InvariantCulture, $"Shapiro–Wilk is computed for 3 to {Statistics.Assumptions.ShapiroWilk.MaximumN} residuals; this analysis has {o.NormalityN}, so normality was not tested and the rank route was not considered.");
        }

        if (o.Mixed is not null && o.Rows is not null && o.Mixed.Any(m => m.Agrees == false) && o.Mixed.All(m => SameDecision(o, m, context.Alpha) != false))
        {
            yield return $"The mixed model's F and p differ from the classical ones (it keeps the incomplete subjects' measurements), but every term gets the same decision at α = {context.AlphaText}.";
        }

        if (o.MixedNotFitted is { } why)
        {
            yield return "The mixed-model route was not fitted: " + why + ".";
        }
    }

    public override void Render(HtmlWriter html, BlockOutcome outcome, RenderContext context)
    {
        if (outcome is not RepeatedOutcome o)
        {
            return;
        }

        string V(ResultValue v) => HtmlWriter.ValueHtml(v, context);
        string Opt(IReadOnlyDictionary<string, ResultValue> d, string stat) => d.TryGetValue(stat, out var v) ? V(v) : string.Empty;
        if (o.Rows is { } rows)
        {
            var t = new HtmlTable(
                "repeated",
                o.Block.Caption ?? $"Repeated-measures analysis of variance ({o.Subjects![Stat.N].Value.Value.ToString(CultureInfo.InvariantCulture)} complete subjects)",
                ["Source", "SS", "df", "MS", "F", "p", "ε GG", "p (GG)", "ε HF", "p (HF)", "partial η²", "generalized η²"]);
            string? stratum = null;
            foreach (var r in rows)
            {
                if (r.Stratum != stratum)
                {
                    stratum = r.Stratum;
                    t.Row(r.IsWithin ? "Within subjects: " + Term(o, r.Stratum) : "Between subjects", [.. Enumerable.Repeat(string.Empty, 11)], "stratum");
                }

                var v = r.Values;
                var name = r.IsEffect ? Term(o, r.Term) : "Error: " + Term(o, r.Term);
                t.Row(name, [V(v[Stat.Ss]), V(v[Stat.Df]), V(v[Stat.Ms]), Opt(v, Stat.F), Opt(v, Stat.P), Opt(v, Stat.EpsilonGg), Opt(v, Stat.PGg), Opt(v, Stat.EpsilonHf), Opt(v, Stat.PHf), Opt(v, Stat.PartialEta2), Opt(v, Stat.GeneralizedEta2)], r.IsEffect ? null : "error");
            }

            t.Row("Total", [V(o.Total![Stat.Ss]), V(o.Total[Stat.Df]), .. Enumerable.Repeat(string.Empty, 9)]);
            t.WriteTo(html);

            if (o.Mauchly.Count > 0)
            {
                var m = new HtmlTable("mauchly", "Mauchly's test of sphericity", ["Within term", "W", "χ²", "df", "p"]);
                foreach (var s in o.Mauchly)
                {
                    m.Row(Term(o, s.Term), [V(s.Values[Stat.W]), V(s.Values[Stat.Chi2]), V(s.Values[Stat.Df]), V(s.Values[Stat.P])]);
                }

                m.WriteTo(html);
            }

            html.Raw("<ul class=\"decisions\">");
            foreach (var r in o.Readings)
            {
                html.Raw("<li>").Text($"{Term(o, r.Term)}: {CorrectionName(r.Correction)} test read — {Why(r, context.AlphaText)}.").Raw("</li>");
            }

            if (o.Normality is { } sw)
            {
                var verdict = !sw[Stat.P].Value.IsDefined ? "not defined"
                    : sw[Stat.P].Value.Value < context.Alpha ? "departs from normality" : "consistent with normality";
                var next = o.RankReason switch
                {
                    RankRouteReason.NormalityFailed => "; the Friedman rank test is shown below",
                    RankRouteReason.NormalityFailedNoRankForm => "; no rank test exists for this layout",
                    RankRouteReason.Asked => "; the Friedman rank test is shown below, as asked ('ranks: always')",
                    _ => string.Empty,
                };
                html.Raw("<li>").Text("Residuals (subject × cell, after subjects and group × cell means): Shapiro–Wilk W = ").Raw(V(sw[Stat.W])).Text(", p" + (sw[Stat.P].Value.IsDefined ? ReportStyle.PJoin(context.Format.Format(Stat.P, sw[Stat.P].Value.Value)) : " = ")).Raw(V(sw[Stat.P]))
                    .Text($" — {verdict}{next}.").Raw("</li>");
            }

            html.Raw("</ul>");
        }

        if (o.Friedman is { } fr)
        {
            var within = o.Within[0].Label;
            var f = new HtmlTable("repeated-friedman", $"Friedman rank test of {within} (subjects as blocks, {fr[Stat.NBlocks].Value.Value.ToString(CultureInfo.InvariantCulture)} complete subjects)", ["Test", "statistic", "df", "p", "Kendall's W"]);
            f.Row("Friedman χ²", [V(fr[Stat.Chi2]), V(fr[Stat.Df]), V(fr[Stat.P]), V(fr[Stat.KendallW])]);
            f.Row("Iman–Davenport F", [V(fr[Stat.FImanDavenport]), V(fr[Stat.Df1ImanDavenport]) + ", " + V(fr[Stat.Df2ImanDavenport]), V(fr[Stat.PImanDavenport]), string.Empty]);
            f.WriteTo(html);
            var ranks = new HtmlTable("repeated-mean-ranks", $"Mean rank of each level of {within} within subjects", ["Level", "mean rank"]);
            foreach (var (level, rank) in o.MeanRanks)
            {
                ranks.Row(BidiText.Isolate(level), [V(rank)]);
            }

            ranks.WriteTo(html);
            if (o.RankPairs.Count > 0)
            {
                var cp = new HtmlTable("repeated-rank-pairs", $"Conover's comparisons of mean ranks of {within} (Holm-adjusted)", ["Pair", "mean-rank difference", "SE", "t", "adjusted p"]);
                foreach (var c in o.RankPairs)
                {
                    var v = c.Values;
                    cp.Row(BidiText.Isolate(c.A) + " − " + BidiText.Isolate(c.B), [V(v[Stat.Diff]), V(v[Stat.Se]), V(v[Stat.Statistic]), V(v[Stat.PAdj])]);
                }

                cp.WriteTo(html);
            }

            html.Raw("<p class=\"method\">").Text("Friedman's test ranks each complete subject's cell means across the levels (mid-ranks for ties; tie-corrected statistic, χ² on k − 1 df); Kendall's W = χ²/(n(k − 1)) measures how alike the subjects rank the levels; the Iman–Davenport F is the analysis of variance of those ranks and is usually closer to the exact distribution with few subjects."
                + (o.RankPairs.Count > 0 ? " Conover's t compares mean ranks on the rank error term with (n − 1)(k − 1) df." : string.Empty)).Raw("</p>");
        }

        if (o.Mixed is { } mixed)
        {
            var counts = o.MixedCounts!;
            var caption = string.Create(CultureInfo.InvariantCulture, $"Mixed-model route (REML, Satterthwaite df): {counts[Stat.N].Value.Value} subjects, {counts[Stat.NTotal].Value.Value} measurements");
            var m = new HtmlTable("repeated-reml", caption, o.Rows is null ? ["Effect", "df", "F", "df (denominator)", "p"] : ["Effect", "df", "F", "df (denominator)", "p", "same numbers as classical", "same decision at α"]);
            foreach (var r in mixed)
            {
                var cells = new List<string> { V(r.Values[Stat.Df]), V(r.Values[Stat.F]), V(r.Values[Stat.DfDen]), V(r.Values[Stat.P]) };
                if (o.Rows is not null)
                {
                    cells.Add(r.Agrees switch { true => "yes", false => "no", _ => string.Empty });
                    cells.Add(SameDecision(o, r, context.Alpha) switch { true => "yes", false => "no", _ => string.Empty });
                }

                m.Row(Term(o, r.Term), cells);
            }

            m.WriteTo(html);
            if (o.MixedKeptIncomplete > 0)
            {
                html.Raw("<p class=\"note\">").Text(string.Create(CultureInfo.InvariantCulture, $"The mixed model keeps the {NumberText.Count(o.MixedKeptIncomplete, "incomplete subject")} that the classical analysis dropped.")).Raw("</p>");
            }
        }

        if (o.Pairs.Count > 0)
        {
            var holm = o.PairTest == TestName.Holm;
            var onComplete = o.RemlPairs.Count > 0 ? string.Create(CultureInfo.InvariantCulture, $"; paired t tests on the {o.Subjects![Stat.N].Value.Value} complete subjects") : string.Empty;
            var p = new HtmlTable("pairs", $"Paired comparisons of {o.CompareLabel} ({(holm ? "Holm" : "Bonferroni")}-adjusted{onComplete})", ["Pair", "mean difference", "SE", "t", "df", "p", "adjusted p", "simultaneous interval"]);
            foreach (var c in o.Pairs)
            {
                var v = c.Values;
                p.Row(BidiText.Isolate(c.A) + " − " + BidiText.Isolate(c.B), [V(v[Stat.Diff]), V(v[Stat.Se]), V(v[Stat.Statistic]), V(v[Stat.Df]), V(v[Stat.P]), V(v[Stat.PAdj]), V(v[Stat.CiLow]) + " to " + V(v[Stat.CiHigh])]);
            }

            p.WriteTo(html);
        }

        if (o.RemlPairs.Count > 0)
        {
            var counts = o.MixedCounts!;
            var holm = o.RemlPairTest == TestName.HolmReml;
            var both = o.Pairs.Count > 0;
            var caption = string.Create(CultureInfo.InvariantCulture, $"Comparisons of {o.CompareLabel} from the mixed model's marginal means (REML, Satterthwaite df; {(holm ? "Holm" : "Bonferroni")}-adjusted; {counts[Stat.N].Value.Value} subjects, {counts[Stat.NTotal].Value.Value} measurements)");
            var r = new HtmlTable("repeated-reml-pairs", caption, both
                ? ["Pair", "mean difference", "SE", "t", "df", "p", "adjusted p", "simultaneous interval", "same decision at α as the paired test"]
                : ["Pair", "mean difference", "SE", "t", "df", "p", "adjusted p", "simultaneous interval"]);
            foreach (var c in o.RemlPairs)
            {
                var v = c.Values;
                var cells = new List<string> { V(v[Stat.Diff]), V(v[Stat.Se]), V(v[Stat.Statistic]), V(v[Stat.Df]), V(v[Stat.P]), V(v[Stat.PAdj]), V(v[Stat.CiLow]) + " to " + V(v[Stat.CiHigh]) };
                if (both)
                {
                    cells.Add(SamePairDecision(o, c, context.Alpha) switch { true => "yes", false => "no", _ => string.Empty });
                }

                r.Row(BidiText.Isolate(c.A) + " − " + BidiText.Isolate(c.B), cells);
            }

            r.WriteTo(html);
        }

        if (o.Simple.Count > 0)
        {
            var s = new HtmlTable("simple-effects", "Simple effects (one-way repeated-measures analysis within each group, own error term)", ["Effect", "subjects", "df", "F", "df (denominator)", "p", "ε GG", "p (GG)", "ε HF", "p (HF)", "generalized η²", "read"]);
            foreach (var e in o.Simple)
            {
                var head = $"{Term(o, e.Within)} at {Term(o, e.Between)} {e.Level}";
                if (e.Values is not { } v)
                {
                    s.Row(head, [e.Subjects.ToString(CultureInfo.InvariantCulture), HtmlWriter.Escape("not analysed: " + e.NotAnalysed), .. Enumerable.Repeat(string.Empty, 10)]);
                    continue;
                }

                s.Row(head, [e.Subjects.ToString(CultureInfo.InvariantCulture), V(v[Stat.Df]), V(v[Stat.F]), V(v[Stat.DfDen]), V(v[Stat.P]), Opt(v, Stat.EpsilonGg), Opt(v, Stat.PGg), Opt(v, Stat.EpsilonHf), Opt(v, Stat.PHf), V(v[Stat.GeneralizedEta2]), HtmlWriter.Escape(CorrectionName(e.Reading!.Correction))]);
            }

            s.WriteTo(html);
        }

        var method = "Each subject's measurements are averaged within each within-subject cell. Every within-subject term is tested against its own interaction with subjects (within groups), between-subject terms against subjects within groups; SS of between terms are hierarchical (type 2). "
            + "Corrected tests multiply both df by the term's ε: Greenhouse–Geisser (Box's estimator) or Huynh–Feldt with Lecoutre's correction for several groups, each capped at 1. "
            + "Generalized η² (Olejnik and Algina 2003) divides an effect's SS by itself plus every error SS, so it can be compared across designs; partial η² divides by the effect's own error only."
            + (o.Mixed is null ? string.Empty : " The mixed model treats subjects (within groups) and each within term × subjects as random effects, estimated by REML, with type 3 Wald F tests on Satterthwaite df.")
            + (o.Pairs.Count == 0 ? string.Empty : " Paired comparisons are paired t tests of the subjects' differences (they do not assume sphericity), adjusted for the family; the interval is simultaneous at the Bonferroni level.")
            + (o.RemlPairs.Count == 0 ? string.Empty : " The mixed model's comparisons are differences of its estimated marginal means (generalized least squares at the REML variance estimates, so every measurement of an incomplete subject counts; each level averaged over the other within factors), t tests on Satterthwaite df adjusted for the family; the interval is simultaneous at the Bonferroni level.");
        html.Raw("<p class=\"method\">").Text(method).Raw("</p>");
        var reading = Reading(o, context);
        if (reading.Length > 0)
        {
            html.Raw("<div class=\"reading\"><p>").Text(reading).Raw("</p></div>");
        }
    }

    /// <summary>
    /// Whether the mixed model's test of a term and the classical test the sphericity decision names
    /// both reject, or both do not, at α; null when either p is not defined or the term has no
    /// classical row.
    /// </summary>
    private static bool? SameDecision(RepeatedOutcome o, MixedRowValues m, double alpha)
    {
        var row = o.Rows?.FirstOrDefault(r => r.IsEffect && string.Equals(r.Term, m.Term, StringComparison.Ordinal));
        if (row is null)
        {
            return null;
        }

        var classical = row.Values[ReadStat(o, row)].Value;
        var mixed = m.Values[Stat.P].Value;
        return classical.IsDefined && mixed.IsDefined ? (classical.Value < alpha) == (mixed.Value < alpha) : null;
    }

    /// <summary>
    /// Whether a mixed-model comparison and the paired comparison of the same pair both reject, or
    /// both do not, at α (adjusted p); null when either is missing or not defined.
    /// </summary>
    private static bool? SamePairDecision(RepeatedOutcome o, RepeatedPairValues reml, double alpha)
    {
        var paired = o.Pairs.FirstOrDefault(p => string.Equals(p.A, reml.A, StringComparison.Ordinal) && string.Equals(p.B, reml.B, StringComparison.Ordinal));
        if (paired is null)
        {
            return null;
        }

        var a = paired.Values[Stat.PAdj].Value;
        var b = reml.Values[Stat.PAdj].Value;
        return a.IsDefined && b.IsDefined ? (a.Value < alpha) == (b.Value < alpha) : null;
    }

    /// <summary>The p-value the sphericity decision names for a row: uncorrected, Greenhouse–Geisser or Huynh–Feldt.</summary>
    private static string ReadStat(RepeatedOutcome o, RepeatedRowValues r)
    {
        var reading = r.IsWithin ? o.Readings.FirstOrDefault(x => x.Term == r.Stratum) : null;
        return reading?.Correction switch
        {
            SphericityCorrection.GreenhouseGeisser when r.Values.ContainsKey(Stat.PGg) => Stat.PGg,
            SphericityCorrection.HuynhFeldt when r.Values.ContainsKey(Stat.PHf) => Stat.PHf,
            _ => Stat.P,
        };
    }

    private static string Reading(RepeatedOutcome o, RenderContext context)
    {
        if (o.Rows is null)
        {
            return string.Empty;
        }

        var parts = new List<string>();
        foreach (var r in o.Rows.Where(r => r.IsEffect))
        {
            var p = r.Values[ReadStat(o, r)].Value;
            if (!p.IsDefined)
            {
                continue;
            }

            parts.Add(p.Value < context.Alpha
                ? $"{Term(o, r.Term)} rejects the hypothesis of no effect"
                : $"{Term(o, r.Term)} does not reject it (not evidence of no effect)");
        }

        return parts.Count == 0 ? string.Empty : $"At α = {context.AlphaText}, reading the test the sphericity decision names: " + string.Join("; ", parts) + ".";
    }
}
