using System.Globalization;
using StudyPress.Binding;
using StudyPress.Diagnostics;
using StudyPress.Evaluation;
using StudyPress.Rendering;
using StudyPress.Statistics;
using StudyPress.Statistics.Power;

namespace StudyPress.Kinds;

/// <summary>
/// <c>power</c>: power of the one-way ANOVA F test for an effect size (Cohen's f), a number of
/// groups and a per-group n; or the smallest per-group n that reaches a target power. Needs no
/// data. The effect may be taken from an anova block (<c>of</c>), which is "observed power":
/// the report then says why that number says nothing beyond the p-value.
/// </summary>
public sealed class PowerKind : BlockKind
{
    public override string Name => "power";

    public override string PrimaryTest => "power";

    public override IReadOnlyList<string> OwnKeys { get; } = ["groups", "n", "effect", "target", "alpha", "of", "factor"];

    public override bool UsesData => false;

    public override bool NeedsFactors => false;

    public sealed record Options(int? Groups, int? N, double? Effect, double? Target, double Alpha, string? Of, string? Factor, SourceLocation Location);

    public override object? BindOptions(KeyReader keys, BindContext context, DiagnosticBag diagnostics)
    {
        var groups = keys.Integer("groups", 2, 10000);
        var n = keys.Integer("n", 2, 100_000_000);
        var effect = keys.Number("effect");
        if (effect is < 0 && keys.Scalar("effect") is { } e)
        {
            diagnostics.NotANumber(e.Location, "effect", e.Value + " (Cohen's f must be 0 or more)");
        }

        var target = keys.Number("target");
        if (target is not null and (<= 0 or >= 1) && keys.Scalar("target") is { } t)
        {
            diagnostics.PowerTargetRange(t.Location, t.Value);
        }

        var alpha = context.Header.Alpha;
        if (keys.Scalar("alpha") is { } a)
        {
            if (double.TryParse(a.Value, NumberStyles.Float, CultureInfo.InvariantCulture, out var av) && av > 0 && av < 1)
            {
                alpha = av;
            }
            else
            {
                diagnostics.AlphaOutOfRange(a.Location, a.Value);
            }
        }

        string? of = null;
        if (keys.Has("of"))
        {
            of = context.AnovaOf(keys, Name, diagnostics)?.Id;
        }

        if (effect is null && !keys.Has("of") && !keys.Misspelt.Overlaps(["effect", "of"]))
        {
            diagnostics.PowerNeeds(context.Syntax.Location, "'effect' (Cohen's f), or 'of' naming an anova block");
        }

        if (n is null && target is null && !keys.Misspelt.Overlaps(["n", "target"]))
        {
            diagnostics.PowerNeeds(context.Syntax.Location, "'n' (per group) for the power, or 'target' for the sample size");
        }

        if (groups is null && !keys.Has("of") && !keys.Misspelt.Overlaps(["groups", "of"]))
        {
            diagnostics.PowerNeeds(context.Syntax.Location, "'groups' (the number of groups)");
        }

        return new Options(groups, n, effect, target, alpha, of, keys.String("factor"), context.Syntax.Location);
    }

    public sealed class Outcome(BoundBlock block) : BlockOutcome(block)
    {
        public Dictionary<string, ResultValue> Values { get; } = new(StringComparer.Ordinal);

        public Dictionary<string, ResultValue> Required { get; } = new(StringComparer.Ordinal);

        public bool Observed { get; set; }

        public double Alpha { get; set; }

        public int Groups { get; set; }

        public double Effect { get; set; }

        public double? Target { get; set; }
    }

    public override BlockOutcome Evaluate(EvaluationContext context, BoundBlock block, DiagnosticBag diagnostics)
    {
        var o = (Options)block.Options!;
        var outcome = new Outcome(block) { Alpha = o.Alpha, Target = o.Target };
        var groups = o.Groups;
        var effect = o.Effect;
        string? term = null;
        IReadOnlyList<string> inputs = [];
        if (o.Of is { } of && context.Outcomes.GetValueOrDefault(of) is AnovaKind.Outcome { Result: not null } anova)
        {
            var factor = o.Factor is null ? anova.Data!.Factors[0] : anova.Data!.Factors.FirstOrDefault(f => f.Spec.Name == o.Factor);
            if (factor is null || (o.Factor is null && anova.Data.Factors.Count > 1))
            {
                diagnostics.FactorChoiceNeeded(o.Location, of);
                return outcome;
            }

            term = factor.Spec.Name;
            var t = anova.Result.Terms.First(x => x.Name == term);
            if (!t.CohenF.IsDefined)
            {
                diagnostics.PowerNeeds(o.Location, $"a defined Cohen's f; in '{of}' it is not defined ({t.CohenF.Reason})");
                return outcome;
            }

            effect ??= t.CohenF.Value;
            groups ??= factor.Levels.Count;
            outcome.Observed = o.Effect is null;
            inputs = [anova.Block.Data!];
        }

        if (effect is null || groups is null)
        {
            return outcome;
        }

        outcome.Groups = groups.Value;
        outcome.Effect = effect.Value;
        if (o.N is { } n)
        {
            var power = AnovaPower.Power(effect.Value, groups.Value, n, o.Alpha);
            outcome.Values["power"] = context.Results.Add(block.Id, "power", term, null, null, "power", power, inputs);
            outcome.Values["n_per_group"] = context.Results.Add(block.Id, "power", term, null, null, "n_per_group", n, inputs);
            outcome.Values["n_total"] = context.Results.Add(block.Id, "power", term, null, null, "n_total", (double)n * groups.Value, inputs);
            outcome.Values["effect_f"] = context.Results.Add(block.Id, "power", term, null, null, "effect_f", effect.Value, inputs);
        }

        if (o.Target is { } target)
        {
            var size = AnovaPower.SampleSize(effect.Value, groups.Value, o.Alpha, target);
            outcome.Required["n_per_group"] = context.Results.Add(block.Id, "power", term, "target", null, "n_per_group", size.NPerGroup, inputs);
            outcome.Required["n_total"] = context.Results.Add(block.Id, "power", term, "target", null, "n_total", size.TotalN, inputs);
            outcome.Required["power"] = context.Results.Add(block.Id, "power", term, "target", null, "power", size.AchievedPower, inputs);
            outcome.Required["effect_f"] = context.Results.Add(block.Id, "power", term, "target", null, "effect_f", effect.Value, inputs);
        }

        if (context.Header.Report.Figures && Figures.PowerCurve(outcome) is { } curve)
        {
            outcome.Figures.Add(curve);
        }

        if (outcome.Observed)
        {
            outcome.Warnings.Add("This is \"observed\" (post-hoc) power: the effect size was estimated from the same data. Observed power is a fixed function of the test's p-value, so it adds no information, and a low observed power does not show that a non-significant result is inconclusive for the effect you care about. Plan power from an effect size chosen for its practical importance instead.");
        }

        return outcome;
    }

    public override void Render(HtmlWriter html, BlockOutcome outcome, RenderContext context)
    {
        var o = (Outcome)outcome;
        var alpha = o.Alpha.ToString("R", CultureInfo.InvariantCulture);
        var f = string.Create(CultureInfo.InvariantCulture, $"{o.Effect:0.###}");
        if (o.Values.Count > 0)
        {
            var t = new HtmlTable("power", o.Block.Caption ?? "Power of the F test", ["Groups", "n per group", "total n", "Cohen's f", "α", "power"]);
            t.Row(o.Groups.ToString(CultureInfo.InvariantCulture), [V(o.Values, "n_per_group"), V(o.Values, "n_total"), V(o.Values, "effect_f"), HtmlWriter.Escape(alpha), V(o.Values, "power")]);
            t.WriteTo(html);
        }

        if (o.Required.Count > 0)
        {
            var t = new HtmlTable("power", "Sample size for a target power", ["Groups", "Cohen's f", "α", "target power", "n per group", "total n", "power reached"]);
            t.Row(o.Groups.ToString(CultureInfo.InvariantCulture), [V(o.Required, "effect_f"), HtmlWriter.Escape(alpha), HtmlWriter.Escape(o.Target!.Value.ToString("R", CultureInfo.InvariantCulture)), V(o.Required, "n_per_group"), V(o.Required, "n_total"), V(o.Required, "power")]);
            t.WriteTo(html);
        }

        html.Raw("<p class=\"method\">").Text($"One-way fixed-effects F test with {o.Groups} equal groups: the noncentrality is λ = f² × k × n and the power is the probability that F′ exceeds the rejection threshold of F, under the noncentral F distribution (Cohen's f = {f}: 0.10, 0.25 and 0.40 are Cohen's conventional small, medium and large effects, but your field's own benchmarks should decide).").Raw("</p>");
        string V(Dictionary<string, ResultValue> values, string stat) => HtmlWriter.ValueHtml(values[stat], context);
    }
}
