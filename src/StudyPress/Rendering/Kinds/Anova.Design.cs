using System.Globalization;
using System.Text;
using StudyPress.Binding;
using StudyPress.Evaluation;
using StudyPress.Evaluation.Kinds;
using StudyPress.Statistics.Designs;

namespace StudyPress.Rendering.Kinds;

/// <summary>
/// The HTML, cautions, notes and methods sentences of an anova block whose header declares a
/// layout (<see cref="AnovaOutcome.Design"/>): the table by error stratum with each F's error and
/// expected mean square, or the mixed model's tests; variance components; intraclass correlations;
/// relative efficiency of blocking; treatment means.
/// </summary>
internal static class DesignRendering
{
    public static void Render(HtmlWriter html, AnovaOutcome o, DesignFit d, RenderContext context)
    {
        var response = o.ResponseLabel;
        if (d.Method == DesignMethod.Strata)
        {
            RenderStrata(html, o, d, context, response);
        }
        else
        {
            RenderReml(html, o, d, context, response);
        }

        RenderComponents(html, o, d, context);
        if (d.Icc.Count > 0)
        {
            var icc = new HtmlTable("icc", d.IccLayout == "raters" ? "Intraclass correlations (Shrout and Fleiss forms; targets × raters, one rating each)" : "Intraclass correlation", ["Form", "Reads as", "ICC", context.ConfidenceText + "% interval"]) { TextColumns = [1] };
            foreach (var f in d.Icc)
            {
                icc.Row(f.Form, [HtmlWriter.Escape(IccMeaning(f)), V(f.Values, Stat.Icc), Interval(f.Values, context)]);
            }

            icc.WriteTo(html);
        }

        if (d.Means.Count > 0)
        {
            var means = new HtmlTable("means", d.Method == DesignMethod.Reml ? "Treatment means (observed; not adjusted for missing or unequal cells)" : "Treatment means (observed)", ["Factor", "Level", "n", "Mean"]) { TextColumns = [1] };
            foreach (var m in d.Means)
            {
                means.Row(Display(o, m.Factor), [HtmlWriter.Escape(m.Level), V(m.Values, Stat.N), V(m.Values, Stat.Mean)]);
            }

            means.WriteTo(html);
        }

        html.Raw("<div class=\"reading\">");
        foreach (var e in d.Efficiency)
        {
            html.Raw("<p>").Raw(EfficiencyText(o, e, context)).Raw("</p>");
        }

        foreach (var row in d.Rows.Where(r => r.Values.ContainsKey(Stat.F) && IsTreatment(r)))
        {
            html.Raw("<p>").Raw(Interpret(o, d, row, context)).Raw("</p>");
        }

        html.Raw("</div>");

        string V(IReadOnlyDictionary<string, ResultValue> values, string stat) => HtmlWriter.ValueHtml(values[stat], context);
    }

    private static bool IsTreatment(DesignRow r) => r.Test is not null || r.Row is { Kind: TermKind.Treatment };

    private static void RenderStrata(HtmlWriter html, AnovaOutcome o, DesignFit d, RenderContext context, string response)
    {
        var strata = d.Strata!;
        var caption = o.Block.Caption ?? $"Analysis of variance of {response} by error stratum";
        var table = new HtmlTable("anova strata", caption, ["Source", "SS", "df", "MS", "F", "error df", "p", "Tested against", "Expected mean square"]) { TextColumns = [7, 8] };
        var shown = new HashSet<string>(StringComparer.Ordinal);
        var inStrata = strata.Strata.SelectMany(s => s.Terms).ToHashSet(StringComparer.Ordinal);
        var approximate = strata.Rows.Where(r => !inStrata.Contains(r.Term)).ToList();
        if (approximate.Count > 0)
        {
            table.Row("Tested against a combination of mean squares", [], "stratum");
            foreach (var r in approximate)
            {
                shown.Add(r.Term);
                AddRow(r.Term);
            }
        }

        foreach (var stratum in strata.Strata)
        {
            table.Row(StratumTitle(o, stratum), [], "stratum");
            foreach (var name in stratum.Terms)
            {
                if (shown.Add(name))
                {
                    AddRow(name);
                }
            }
        }

        foreach (var r in strata.Rows.Where(r => !shown.Contains(r.Term)))
        {
            AddRow(r.Term);
        }

        var total = d.Rows.First(r => r.Term == "total");
        table.Row("Total", [V(total.Values, Stat.Ss), V(total.Values, Stat.Df), "", "", "", "", "", ""], "total");
        table.WriteTo(html);
        html.Raw("<p class=\"method\">").Text(
            "Each F is the term's mean square over the mean square (or combination of mean squares) whose expectation equals the term's own without its component: "
            + "σ² is the residual variance, σ²(X) the variance of the random term X, θ(X) the variation of the fixed term X. "
            + "A combination of several mean squares gives an approximate (quasi-)F with Satterthwaite's error df.").Raw("</p>");

        void AddRow(string engineName)
        {
            var row = d.Rows.First(r => r.Row?.Term == engineName);
            var r = row.Row!;
            var v = row.Values;
            var tested = r.Denominator.Count == 0
                ? (r.Kind != TermKind.Treatment ? string.Empty : HtmlWriter.Escape(r.F.Reason ?? "no error term"))
                : HtmlWriter.Escape((r.IsQuasiF ? "≈ " : string.Empty) + Against(o, r.Denominator));
            table.Row(
                Label(o, r),
                [
                    V(v, Stat.Ss), V(v, Stat.Df), V(v, Stat.Ms),
                    v.ContainsKey(Stat.F) ? V(v, Stat.F) : string.Empty,
                    v.ContainsKey(Stat.DfDen) ? V(v, Stat.DfDen) : string.Empty,
                    v.ContainsKey(Stat.P) ? V(v, Stat.P) : string.Empty,
                    tested,
                    HtmlWriter.Escape(Ems(o, r)),
                ],
                r.Kind is TermKind.PlotError or TermKind.Residual ? "error" : null);
        }

        string V(IReadOnlyDictionary<string, ResultValue> values, string stat) => HtmlWriter.ValueHtml(values[stat], context);
    }

    private static void RenderReml(HtmlWriter html, AnovaOutcome o, DesignFit d, RenderContext context, string response)
    {
        var caption = o.Block.Caption ?? $"Tests of the treatments on {response} (mixed model, REML)";
        var table = new HtmlTable("anova reml", caption, ["Source", "df", "error df", "F", "p"]);
        foreach (var row in d.Rows)
        {
            table.Row(TermLabel(o, row.Test!.Term), [V(row.Values, Stat.Df), V(row.Values, Stat.DfDen), V(row.Values, Stat.F), V(row.Values, Stat.P)]);
        }

        table.WriteTo(html);
        html.Raw("<p class=\"method\">").Text(
            "Wald F tests of the treatment terms (sum-to-zero coding, each term adjusted for all others) in the linear mixed model fitted by restricted maximum likelihood; "
            + "error df by Satterthwaite's approximation, so they may be fractional.").Raw("</p>");

        string V(IReadOnlyDictionary<string, ResultValue> values, string stat) => HtmlWriter.ValueHtml(values[stat], context);
    }

    private static void RenderComponents(HtmlWriter html, AnovaOutcome o, DesignFit d, RenderContext context)
    {
        if (d.ComponentValues.Count == 0)
        {
            return;
        }

        var method = d.Method == DesignMethod.Strata ? "ANOVA method" : "REML";
        var table = new HtmlTable("components", $"Variance components ({method})", ["Source", "Variance", "SD", "Share", context.ConfidenceText + "% interval"]);
        foreach (var c in d.ComponentValues)
        {
            table.Row(TermLabel(o, c.EngineTerm), [V(c.Values, Stat.Variance), V(c.Values, Stat.Sd), V(c.Values, Stat.Proportion), Interval(c.Values, context)]);
        }

        table.WriteTo(html);
        html.Raw("<p class=\"method\">").Text(d.Method == DesignMethod.Strata
            ? "Intervals by " + d.Components!.IntervalMethod + "; an interval for a difference of mean squares is approximate and may be too short."
            : "Intervals by Satterthwaite's approximation from the REML information; a component estimated at zero has none.").Raw("</p>");

        string V(IReadOnlyDictionary<string, ResultValue> values, string stat) => HtmlWriter.ValueHtml(values[stat], context);
    }

    private static string Interval(IReadOnlyDictionary<string, ResultValue> values, RenderContext context) =>
        values[Stat.CiLow].Value.IsDefined && values[Stat.CiHigh].Value.IsDefined
            ? HtmlWriter.ValueHtml(values[Stat.CiLow], context) + " to " + HtmlWriter.ValueHtml(values[Stat.CiHigh], context)
            : HtmlWriter.ValueHtml(values[Stat.CiLow], context);

    private static string EfficiencyText(AnovaOutcome o, DesignEfficiency e, RenderContext context)
    {
        var block = HtmlWriter.Escape(Display(o, e.Efficiency.Block));
        var v = e.Values;
        return $"Blocking by {block}: relative efficiency {HtmlWriter.ValueHtml(v[Stat.RelativeEfficiency], context)} "
            + $"({HtmlWriter.ValueHtml(v[Stat.RelativeEfficiencyCorrected], context)} after allowing for the error df given to the blocks). "
            + $"With {e.Efficiency.Replicates.ToString(CultureInfo.InvariantCulture)} replicates per treatment, the blocked layout was about as precise as "
            + $"{HtmlWriter.ValueHtml(v[Stat.EquivalentReplicates], context)} replicates of a completely randomized one would have been, "
            + "estimated from these data as if the blocks had not been formed.";
    }

    private static string Interpret(AnovaOutcome o, DesignFit d, DesignRow row, RenderContext context)
    {
        var v = row.Values;
        var label = HtmlWriter.Escape(row.Row is { } r ? Label(o, r) : TermLabel(o, row.Test!.Term));
        if (!v[Stat.F].Value.IsDefined || !v[Stat.P].Value.IsDefined)
        {
            return $"{label}: the F test is not defined here ({HtmlWriter.Escape(v[Stat.F].Value.Reason ?? v[Stat.P].Value.Reason)}).";
        }

        var against = row.Row is { } sr ? " against " + HtmlWriter.Escape(Against(o, sr.Denominator)) : string.Empty;
        var stat = $"F({HtmlWriter.ValueHtml(v[Stat.Df], context)}, {HtmlWriter.ValueHtml(v[Stat.DfDen], context)}) = {HtmlWriter.ValueHtml(v[Stat.F], context)}{against}, p {AnovaRenderer.PText(v[Stat.P], context)}";
        if (v.TryGetValue(Stat.PartialEta2, out var eta) && eta.Value.IsDefined)
        {
            stat += $"; partial η² against the same error {HtmlWriter.ValueHtml(eta, context)}, {context.ConfidenceText}% CI {HtmlWriter.ValueHtml(v[Stat.PartialEta2CiLow], context)} to {HtmlWriter.ValueHtml(v[Stat.PartialEta2CiHigh], context)}";
        }

        var interaction = (row.Row?.Factors.Count ?? row.Test!.Term.Count(c => c == ':') + 1) > 1;
        var response = HtmlWriter.Escape(o.ResponseLabel);
        var what = interaction
            ? $"the effect of one of {label} on {response} depends on the level of the other"
            : $"the mean {response} differs between at least two levels of {label}";
        return v[Stat.P].Value.Value < context.Alpha
            ? $"{label}: at α = {context.AlphaText} the test rejects the hypothesis of no effect ({stat}); the data indicate that {what}. It does not say which levels differ or whether the difference matters in practice."
            : $"{label}: at α = {context.AlphaText} the test does not reject the hypothesis of no effect ({stat}). This is not evidence that there is no effect: a real difference may be too small for this design to detect.";
    }

    public static IEnumerable<string> Warnings(AnovaOutcome o, DesignFit d)
    {
        foreach (var c in d.ComponentValues.Where(c => c.Negative))
        {
            yield return $"The variance component of {TermLabel(o, c.EngineTerm)} is estimated below zero. A variance cannot be negative: the estimate says that the variation between these units is smaller than chance alone would produce, which happens when the true component is zero or small, or when the units were not assigned at random. It is shown as estimated (not set to zero), without an interval or share.";
        }

        if (d.Strata is { } s && s.Rows.Any(r => r.IsQuasiF))
        {
            yield return "Some terms have no exact error mean square in this design and are tested by an approximate (quasi-)F against a combination of mean squares, with Satterthwaite's error df: treat their p-values as approximate.";
        }

        if (d.Reml is { } reml)
        {
            if (!reml.Converged)
            {
                yield return $"The mixed-model fit did not converge ({reml.ConvergenceNote}): its tests and variance components may be inaccurate.";
            }

            if (reml.Singular)
            {
                var zero = d.ComponentValues.Where(c => c.AtBoundary).Select(c => TermLabel(o, c.EngineTerm));
                yield return $"The fit is singular: the variance of {string.Join(", ", zero)} is estimated at zero (the likelihood is largest there). The data show no variation of that kind beyond the residual; the tests treat it as absent.";
            }
        }

    }

    public static IEnumerable<string> Notes(AnovaOutcome o, DesignFit d)
    {
        switch (d.Reason)
        {
            case DesignMethodReason.Unbalanced:
                yield return $"The data are not balanced ({d.UnbalancedBecause}), so the classical strata do not apply: the model was fitted as a linear mixed model by REML, which uses every observation. Write 'fit: classical' to require balanced data instead.";
                break;
            case DesignMethodReason.NoStrata:
                yield return $"This layout has no classical strata ({d.UnbalancedBecause}): the model was fitted as a linear mixed model by REML.";
                break;
        }

        foreach (var c in d.ComponentValues.Where(c => c.SingleObservationNote is not null))
        {
            yield return $"{TermLabel(o, c.EngineTerm)}: {c.SingleObservationNote}.";
        }

        if (d.Reml is { } reml && reml.Converged)
        {
            yield return $"The REML fit {reml.ConvergenceNote}; restricted log-likelihood {NumberFormat.Current.General(reml.LogLikelihood)}.";
        }
    }

    /// <summary>A design anova in the methods paragraph: the design, the model and its error terms, the tests, the cautions.</summary>
    public static IEnumerable<string> MethodsSentences(AnovaOutcome o, DesignFit d, MethodsWriter w)
    {
        if (w.Has("design"))
        {
            yield return MethodsDesign(o, d, w);
        }

        if (w.Has("model") && MethodsErrors(o, d, w) is { } errors)
        {
            yield return errors;
        }

        if (w.Has("effects"))
        {
            foreach (var row in d.Rows.Where(r => r.Values.ContainsKey(Stat.F) && IsTreatment(r)))
            {
                var v = row.Values;
                var name = MethodsWriter.E(row.Row is { } r ? Label(o, r) : TermLabel(o, row.Test!.Term));
                if (!v[Stat.P].Value.IsDefined)
                {
                    yield return $"For {name}, the F test is not defined ({MethodsWriter.E(v[Stat.P].Value.Reason)}).";
                    continue;
                }

                var rejected = v[Stat.P].Value.Value < w.Outcome.Alpha;
                var stat = $"F({MethodsWriter.Df(v[Stat.Df])}, {DfText(v[Stat.DfDen])}) = {MethodsWriter.S2(v[Stat.F])}, {ReportStyle.PPhrase(v[Stat.P])}";
                if (v.TryGetValue(Stat.PartialEta2, out var eta) && eta.Value.IsDefined)
                {
                    stat += $", partial η² = {MethodsWriter.Fr(eta)}, {w.Confidence}% CI [{MethodsWriter.Fr(v[Stat.PartialEta2CiLow])}, {MethodsWriter.Fr(v[Stat.PartialEta2CiHigh])}]";
                }

                yield return $"For {name}, the F test {(rejected ? w.T("rejected", "rejects") : w.T("did not reject", "does not reject"))} the hypothesis of no effect, {stat}."
                    + (rejected ? string.Empty : " This is not evidence that there is no effect.");
            }

            foreach (var e in d.Efficiency)
            {
                yield return $"Blocking by {MethodsWriter.E(Display(o, e.Efficiency.Block))} {w.T("had", "has")} an estimated relative efficiency of {MethodsWriter.S2(e.Values[Stat.RelativeEfficiencyCorrected])} (corrected for error df).";
            }
        }

        if (w.Has("cautions"))
        {
            foreach (var warning in Warnings(o, d))
            {
                yield return MethodsWriter.E(warning);
            }
        }
    }

    private static string DfText(ResultValue v) =>
        v.Value.IsDefined && v.Value.Value == Math.Round(v.Value.Value) ? MethodsWriter.Df(v) : MethodsWriter.S2(v);

    /// <summary>The design in one sentence for the methods paragraph.</summary>
    public static string MethodsDesign(AnovaOutcome o, DesignFit d, MethodsWriter w)
    {
        var blocks = d.Factors.Where(f => f.Role == FactorRole.Block).ToList();
        var treatments = d.Factors.Where(f => f.Role == FactorRole.Treatment).ToList();
        var random = d.Factors.Where(f => f.Role == FactorRole.Random).ToList();
        var levels = (string name) => o.Data!.Factors.First(f => f.Spec.Name == name).Levels.Count;
        string Names(IEnumerable<DesignFactor> fs) => MethodsWriter.List(fs.Select(f => MethodsWriter.E(Display(o, f.Name))));
        string design;
        var with = new List<string>();
        if (treatments.Any(t => t.Plot != PlotLevel.Unit))
        {
            var subsub = treatments.Where(t => t.Plot == PlotLevel.SubSubPlot).ToList();
            design = $"a split-plot{(subsub.Count > 0 ? "-split-plot" : string.Empty)} design in {BlockWords(blocks, o, levels)}";
            with.Add($"{Names(treatments.Where(t => t.Plot == PlotLevel.WholePlot))} on whole plots");
            with.Add($"{Names(treatments.Where(t => t.Plot == PlotLevel.SubPlot))} on sub-plots");
            if (subsub.Count > 0)
            {
                with.Add($"{Names(subsub)} on sub-sub-plots");
            }
        }
        else
        {
            design = blocks.Count switch
            {
                0 => "a design",
                1 => $"a randomized complete block design in {BlockWords(blocks, o, levels)}",
                _ => $"a row-and-column design with the blocking factors {Names(blocks)} (a Latin square when each has as many levels as there are treatments)",
            };
            if (treatments.Count > 0)
            {
                with.Add($"{Names(treatments)} as fixed {(treatments.Count == 1 ? "treatment" : "treatments")}");
            }
        }

        if (random.Count > 0)
        {
            var described = random.Select(r => MethodsWriter.E(Display(o, r.Name)) + (r.NestedIn.Count > 0 ? " (nested in " + MethodsWriter.List(r.NestedIn.Select(p => MethodsWriter.E(Display(o, p)))) + ")" : string.Empty));
            with.Add($"{MethodsWriter.List(described)} as random {(random.Count == 1 ? "factor" : "factors")}");
        }

        var fit = d.Method == DesignMethod.Strata
            ? "by error strata, each term tested against the error its expected mean square calls for"
            : "as a linear mixed model fitted by REML, with Satterthwaite's error df";
        var layout = with.Count == 0 ? design : $"{design} with {MethodsWriter.List(with)}";
        return $"The {d.Observations.ToString(CultureInfo.InvariantCulture)} observations of {MethodsWriter.E(o.ResponseLabel)} {w.Be(true)} analysed as {layout}, {fit}.";
    }

    private static string BlockWords(List<DesignFactor> blocks, AnovaOutcome o, Func<string, int> levels) =>
        MethodsWriter.List(blocks.Select(b =>
        {
            var display = Display(o, b.Name);
            var plain = display.Equals("block", StringComparison.OrdinalIgnoreCase) || display.Equals("blocks", StringComparison.OrdinalIgnoreCase);
            return MethodsWriter.Words(levels(b.Name)) + " blocks" + (plain ? string.Empty : " (" + MethodsWriter.E(display) + ")");
        }));

    /// <summary>The strata's error terms in words for the methods paragraph.</summary>
    public static string? MethodsErrors(AnovaOutcome o, DesignFit d, MethodsWriter w)
    {
        if (d.Strata is not { } s)
        {
            return null;
        }

        var tested = s.Rows.Where(r => r.Kind == TermKind.Treatment && r.Denominator.Count > 0).ToList();
        if (tested.Count == 0)
        {
            return null;
        }

        var groups = tested.GroupBy(r => Against(o, r.Denominator)).Select(g => $"{MethodsWriter.List(g.Select(r => MethodsWriter.E(Label(o, r))))} against {MethodsWriter.E(g.Key)}");
        return $"The treatment terms {w.Be(true)} tested as follows: {string.Join("; ", groups)}.";
    }

    private static string StratumTitle(AnovaOutcome o, DesignStratum s) => "Stratum: " + (s.Name switch
    {
        StrataAnova.ResidualName => "units (residual)",
        "whole-plot error" => "whole plots",
        "sub-plot error" => "sub-plots",
        "sub-sub-plot error" => "sub-sub-plots",
        _ => TermLabel(o, s.Name),
    });

    private static string Label(AnovaOutcome o, StrataRow r) => r.Kind switch
    {
        TermKind.Residual => "Residual",
        TermKind.PlotError => char.ToUpperInvariant(r.Term[0]) + r.Term[1..],
        _ => TermLabel(o, r.Term),
    };

    /// <summary>An engine term name (not the manifest's hyphenated form) in display labels: ':' as ×, nesting as "(in …)".</summary>
    internal static string TermLabel(AnovaOutcome o, string term)
    {
        if (term == StrataAnova.ResidualName)
        {
            return "Residual";
        }

        if (term.EndsWith(" error", StringComparison.Ordinal))
        {
            return char.ToUpperInvariant(term[0]) + term[1..];
        }

        var sb = new StringBuilder();
        var name = new StringBuilder();
        var depth = 0;
        void Flush()
        {
            if (name.Length > 0)
            {
                sb.Append(Display(o, name.ToString()));
                name.Clear();
            }
        }

        foreach (var c in term)
        {
            switch (c)
            {
                case ':':
                    Flush();
                    sb.Append(" × ");
                    break;
                case '(':
                    Flush();
                    sb.Append(depth++ == 0 ? " (in " : " in ");
                    break;
                case ')':
                    Flush();
                    if (--depth == 0)
                    {
                        sb.Append(')');
                    }

                    break;
                default:
                    name.Append(c);
                    break;
            }
        }

        Flush();
        return sb.ToString();
    }

    private static string Against(AnovaOutcome o, IReadOnlyList<DenominatorPart> parts) =>
        StrataAnova.DescribeDenominator(parts, t => TermLabel(o, t));

    private static string Ems(AnovaOutcome o, StrataRow r) => StrataAnova.DescribeEms(r.ExpectedMeanSquare, t => TermLabel(o, t));

    private static string Display(AnovaOutcome o, string factor) =>
        o.Factors.FirstOrDefault(f => f.Name == factor)?.Display ?? factor;

    /// <summary>What an intraclass correlation form measures, in the layout it was computed for.</summary>
    private static string IccMeaning(DesignIcc f) => (f.Model, f.OfMean, f.Layout) switch
    {
        (1, false, "one-way") => "share of the variance due to the random factor (one observation)",
        (1, true, "one-way") => "reliability of the mean of a level's observations",
        (1, false, _) => "each target rated by different raters, one rating",
        (1, true, _) => "each target rated by different raters, mean rating",
        (2, false, _) => "raters a random sample, absolute agreement, one rating",
        (2, true, _) => "raters a random sample, absolute agreement, mean rating",
        (3, false, _) => "these raters only, consistency, one rating",
        _ => "these raters only, consistency, mean rating",
    };
}
