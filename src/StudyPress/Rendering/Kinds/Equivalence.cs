using StudyPress.Charts;
using System.Globalization;
using System.Runtime.CompilerServices;
using StudyPress.Evaluation;
using StudyPress.Evaluation.Kinds;
using StudyPress.Statistics.FollowUp;

namespace StudyPress.Rendering.Kinds;

/// <summary>
/// Writes the HTML of <c>equivalence</c> blocks: the table of differences with their (1 − 2α)
/// intervals against the margin, the one-sided p-values, a verdict per pair that keeps "not shown
/// equivalent" apart from "different", the method and the reading.
/// </summary>
public sealed class EquivalenceRenderer : KindRenderer
{
    /// <summary>Registers this part of the kind (see DEVELOPERS.md, "Adding an analysis kind").</summary>
    [ModuleInitializer]
    internal static void Register() => KindRenderers.Register(new EquivalenceRenderer());

    public override string Kind => "equivalence";

    /// <summary>A pair's verdict in words: what the test shows, and why not when it does not.</summary>
    internal static string Verdict(EquivalenceResult r, string alphaText)
    {
        var shown = r.Verdict is EquivalenceVerdict.EquivalentWithinMargin or EquivalenceVerdict.NonInferiorWithinMargin;
        if (!r.P.IsDefined)
        {
            return "not defined: " + r.P.Reason;
        }

        return r.Verdict switch
        {
            EquivalenceVerdict.EquivalentWithinMargin => "within the margin: equivalence shown at α = " + alphaText,
            EquivalenceVerdict.NonInferiorWithinMargin => "within the margin: non-inferiority shown at α = " + alphaText,
            EquivalenceVerdict.NotShownNonInferior => "non-inferiority not shown: the interval reaches past the margin",
            _ when !shown => "not shown to be equivalent: the interval reaches beyond the margin",
            _ => string.Empty,
        };
    }

    /// <summary>Where the standard errors came from, in words; with <paramref name="context"/>, with the mean square and df.</summary>
    private static string SourceOfError(EquivalenceOutcome o, RenderContext? context)
    {
        string Of((double MeanSquare, double Df, string Term) p) =>
            context is null ? string.Empty : string.Create(CultureInfo.InvariantCulture, $" ({context.Format.Format(Stat.Ms, p.MeanSquare)} on {p.Df} df)");
        return o.Error switch
        {
            EquivalenceError.AnovaResidual when o.Pooled is { } p => $"the anova's residual mean square{Of(p)}, as the anova assumes equal variances",
            EquivalenceError.DesignTerm when o.Pooled is { } p => $"the {p.Term.Replace("(", " (in ", StringComparison.Ordinal)} mean square{Of(p)}, the error against which the anova tested {o.FactorLabel}",
            EquivalenceError.RemlModel => $"the mixed model the anova block fitted by REML: each difference is one of its estimated marginal means of {o.FactorLabel} minus another, with its standard error from the covariance of the fixed effects (which carries every variance component the difference depends on) and its own Satterthwaite df (Fai and Cornelius 1996)",
            EquivalenceError.WelchTransformed => "each pair's own two variances with Welch–Satterthwaite df (Welch), on the untransformed values, because the anova's error is on the transformed scale and the margin is in the response's units",
            _ => "each pair's own two variances with Welch–Satterthwaite df (Welch), because the check of the anova found the variances unequal"
                + (context is not null && o.UnequalVariancesP is { IsDefined: true } bf ? " (" + ReportStyle.PText(bf.Value, context.Format) + ")" : string.Empty),
        };
    }

    /// <summary>The block's sentences in a methods paragraph (results part): how the test was made and what it showed.</summary>
    public override IEnumerable<string> Methods(MethodsPart part, MethodsSection? section, BlockOutcome outcome, MethodsWriter w)
    {
        if (part != MethodsPart.Results || !w.Has("comparisons") || outcome is not EquivalenceOutcome { Comparisons.Count: > 0 } o)
        {
            yield break;
        }

        var level = Sentences.ConfidenceText(2 * w.Outcome.Alpha);
        var first = o.Comparisons[0];
        var margin = Margin(first.Values);
        var what = o.NonInferiority
            ? $"non-inferiority of {(o.Comparisons.Count == 1 ? "a difference" : "differences")} of {MethodsWriter.E(o.FactorLabel)} ({(o.Better == "lower" ? "lower is better" : "higher is better")}; margin {margin})"
            : $"equivalence of {(o.Comparisons.Count == 1 ? "a difference" : "differences")} of {MethodsWriter.E(o.FactorLabel)} within the margin {margin} by two one-sided t tests";
        // How the tests were made is said once per paragraph: a second block on the same error
        // only names its margin and its results (each fact once).
        var source = SourceOfError(o, null);
        yield return w.Did(what, false, "tested", "tested", "test", string.Empty)
            + (w.Tell("equivalence:" + source)
                ? $", each at α = {w.AlphaText} with its {level}% interval; the standard errors {w.T("used", "use")} {MethodsWriter.E(source)}."
                : ", as above.");
        var items = o.Comparisons.Select(c =>
        {
            var v = c.Values;
            var shown = c.Result.Verdict is EquivalenceVerdict.EquivalentWithinMargin or EquivalenceVerdict.NonInferiorWithinMargin;
            var verdict = o.NonInferiority
                ? shown ? "non-inferiority shown" : "non-inferiority not shown"
                : shown ? "equivalence shown" : "equivalence not shown";
            return $"{MethodsWriter.E(c.Result.LevelA)} − {MethodsWriter.E(c.Result.LevelB)}: difference = {MethodsWriter.S2(v[Stat.Diff])}, {level}% CI [{MethodsWriter.S2(v[Stat.CiLow])}, {MethodsWriter.S2(v[Stat.CiHigh])}], {ReportStyle.PPhrase(v[Stat.P])}, {verdict}";
        });
        var notShown = o.Comparisons.Any(c => c.Result.Verdict is EquivalenceVerdict.NotShownEquivalent or EquivalenceVerdict.NotShownNonInferior);
        yield return string.Join("; ", items) + "."
            + (notShown && w.Tell("equivalence:not-shown") ? $" Where it {w.T("was", "is")} not shown, this is not evidence of a difference: the interval {w.T("reached", "reaches")} beyond the margin." : string.Empty);
    }

    private static string Margin(IReadOnlyDictionary<string, ResultValue> v)
    {
        var low = v.TryGetValue(Stat.MarginLow, out var lo) ? "[" + MethodsWriter.S2(lo) : "(−∞";
        var high = v.TryGetValue(Stat.MarginHigh, out var hi) ? MethodsWriter.S2(hi) + "]" : "+∞)";
        return $"{low}, {high}";
    }

    public override IEnumerable<string> Notes(BlockOutcome outcome, RenderContext context)
    {
        if (outcome is EquivalenceOutcome { Comparisons.Count: > 1 } o)
        {
            yield return string.Create(CultureInfo.InvariantCulture, $"Each of the {o.Comparisons.Count} comparisons is tested at α = {context.AlphaText} without adjustment: a claim that every one of them is {(o.NonInferiority ? "non-inferior" : "equivalent")} needs every test to succeed, which keeps that claim's error rate at α; a claim about some of them picked afterwards does not have that protection.");
        }
    }

    public override void Render(HtmlWriter html, BlockOutcome outcome, RenderContext context)
    {
        if (outcome is not EquivalenceOutcome { Comparisons.Count: > 0 } o)
        {
            return;
        }

        string V(ResultValue v) => HtmlWriter.ValueHtml(v, context);
        var level = Sentences.ConfidenceText(2 * context.Alpha) + "%";
        var title = o.NonInferiority ? "Non-inferiority of " + o.FactorLabel : "Equivalence of " + o.FactorLabel + " (two one-sided tests)";
        var table = new HtmlTable("equivalence", o.Block.Caption ?? title,
            ["Pair", "at α = " + context.AlphaText, $"difference [{level} interval]", "margin", "SE (df)", "p against the lower margin", "p against the upper margin", "p (the larger)"]) { TextColumns = [1] };
        foreach (var (r, v) in o.Comparisons)
        {
            var margin = (v.TryGetValue(Stat.MarginLow, out var lo) ? "[" + V(lo) : "(−∞") + ", " + (v.TryGetValue(Stat.MarginHigh, out var hi) ? V(hi) + "]" : "+∞)");
            table.Row(
                StudyPress.Charts.BidiText.Isolate(r.LevelA) + " − " + StudyPress.Charts.BidiText.Isolate(r.LevelB),
                [
                    HtmlWriter.Escape(Verdict(r, context.AlphaText)),
                    V(v[Stat.Diff]) + " [" + V(v[Stat.CiLow]) + ", " + V(v[Stat.CiHigh]) + "]",
                    margin,
                    V(v[Stat.Se]) + " (" + V(v[Stat.Df]) + ")",
                    v.TryGetValue(Stat.PLower, out var pl) ? V(pl) : "no lower margin",
                    v.TryGetValue(Stat.PUpper, out var pu) ? V(pu) : "no upper margin",
                    V(v[Stat.P]),
                ]);
        }

        table.WriteTo(html);
        var method = o.NonInferiority
            ? $"Differences are first level minus second. The non-inferiority test is one t test of the hypothesis that the difference lies on the wrong side of the margin ({(o.Better == "lower" ? "at or above +margin, lower being better" : "at or below −margin, higher being better")}); it is rejected at α = {context.AlphaText} exactly when the {level} interval stays on the right side of the margin. "
            : $"Differences are first level minus second. Two one-sided t tests (TOST) test the hypotheses that the difference lies at or below the lower margin and at or above the upper margin; equivalence is shown at α = {context.AlphaText} when both are rejected, which is when the {level} interval (1 − 2α) lies inside the margin, and p is the larger of the two one-sided p-values. ";
        method += "The standard errors use " + SourceOfError(o, context) + ".";
        html.Raw("<p class=\"method\">").Text(method).Raw("</p>");
        var shown = o.Comparisons.Count(c => c.Result.Verdict is EquivalenceVerdict.EquivalentWithinMargin or EquivalenceVerdict.NonInferiorWithinMargin);
        var what = o.NonInferiority ? "non-inferiority" : "equivalence";
        var reading = string.Create(CultureInfo.InvariantCulture, $"{what[..1].ToUpperInvariant()}{what[1..]} is shown for {shown} of {NumberText.Count(o.Comparisons.Count, "comparison")} at α = {context.AlphaText}.")
            + (shown < o.Comparisons.Count
                ? $" Where it is not shown, the data do not rule out a difference as large as the margin; this is not evidence that the levels differ, and an ordinary test that finds no difference would not show {what} either."
                : string.Empty);
        if (!o.NonInferiority && o.Comparisons.Any(c => c.Result.Verdict == EquivalenceVerdict.EquivalentWithinMargin && c.Result.CiLow.IsDefined && (c.Result.CiLow.Value > 0 || c.Result.CiHigh.Value < 0)))
        {
            reading += " Some interval shown within the margin excludes zero: that difference is small enough to count as equivalent and yet not zero.";
        }

        html.Raw("<div class=\"reading\"><p>").Text(reading).Raw("</p></div>");
    }

    /// <summary>
    /// The main test (two one-sided tests) has a p, but a p below alpha declares equivalence, not an
    /// effect: <c>studypress diff</c> does not report its crossing alpha as an effect's flip.
    /// </summary>
    public override bool MainTestIsNotADiffEffect => true;
}
