using System.Globalization;
using System.Runtime.CompilerServices;
using StudyPress.Binding.Kinds;
using StudyPress.Binding;
using StudyPress.Diagnostics;
using StudyPress.Evaluation.Kinds;
using StudyPress.Evaluation;
using StudyPress.Rendering;
using StudyPress.Statistics.Power;
using StudyPress.Statistics;

namespace StudyPress.Rendering.Kinds;

/// <summary>Writes the HTML of <c>power</c> blocks.</summary>
public sealed class PowerRenderer : KindRenderer
{
    /// <summary>Registers this part of the kind (see DEVELOPERS.md, "Adding an analysis kind").</summary>
    [ModuleInitializer]
    internal static void Register() => KindRenderers.Register(new PowerRenderer());

    public override string Kind => "power";

    public override IEnumerable<string> Warnings(BlockOutcome outcome, RenderContext context)
    {
        if (outcome is PowerOutcome { Observed: true })
        {
            yield return "This is \"observed\" (post-hoc) power: the effect size was estimated from the same data. Observed power is a fixed function of the test's p-value, so it adds no information, and a low observed power does not show that a non-significant result is inconclusive for the effect you care about. Plan power from an effect size chosen for its practical importance instead.";
        }
    }

    /// <summary>The power calculation's sentence in a methods paragraph; observed power only as a caution.</summary>
    public override IEnumerable<string> Methods(MethodsPart part, MethodsSection? section, BlockOutcome outcome, MethodsWriter w)
    {
        var p = (PowerOutcome)outcome;
        return part switch
        {
            MethodsPart.Results when w.Has("effects") && !p.Observed => [MethodsSentence(p, w)],
            MethodsPart.Cautions when section is not null => MethodsObserved(p),
            _ => [],
        };
    }

    private static IEnumerable<string> MethodsObserved(PowerOutcome p)
    {
        foreach (var _ in new[] { p }.Where(p => p.Observed))
        {
            yield return "A power calculated from the observed effect (\"observed power\") is a function of the p-value and adds nothing to it; it is left out here. Plan power from an effect size chosen for its practical importance.";
        }
    }

    private static string MethodsSentence(PowerOutcome p, MethodsWriter w)
    {
        var text = $"For a one-way F test with {MethodsWriter.Words(p.Groups)} groups at α = {Sentences.AlphaText(p.Alpha)}";
        if (p.Values.TryGetValue(Stat.Power, out var pw))
        {
            text += $" and an effect of Cohen's f = {MethodsWriter.S2(p.Values[Stat.EffectF])}, {MethodsWriter.Df(p.Values[Stat.NPerGroup])} observations per group {w.T("gave", "give")} a power of {MethodsWriter.Fr(pw)}";
        }

        if (p.Required.TryGetValue(Stat.NPerGroup, out var need))
        {
            text += (p.Values.Count > 0 ? "; " : $" and an effect of Cohen's f = {MethodsWriter.S2(p.Required[Stat.EffectF])}, ")
                + $"{MethodsWriter.Df(need)} per group ({MethodsWriter.Df(p.Required[Stat.NTotal])} in all) would give a power of {MethodsWriter.Fr(p.Required[Stat.Power])}";
        }

        return text + ".";
    }

    public override void Render(HtmlWriter html, BlockOutcome outcome, RenderContext context)
    {
        var o = (PowerOutcome)outcome;
        var alpha = context.Format.Level(o.Alpha);
        var f = string.Create(CultureInfo.InvariantCulture, $"{o.Effect:0.###}");
        if (o.Values.Count > 0)
        {
            var t = new HtmlTable("power", o.Block.Caption ?? "Power of the F test", ["Groups", "n per group", "total n", "Cohen's f", "α", "power"]);
            t.Row(o.Groups.ToString(CultureInfo.InvariantCulture), [V(o.Values, Stat.NPerGroup), V(o.Values, Stat.NTotal), V(o.Values, Stat.EffectF), HtmlWriter.Escape(alpha), V(o.Values, Stat.Power)]);
            t.WriteTo(html);
        }

        if (o.Required.Count > 0)
        {
            var t = new HtmlTable("power", "Sample size for a target power", ["Groups", "Cohen's f", "α", "target power", "n per group", "total n", "power reached"]);
            t.Row(o.Groups.ToString(CultureInfo.InvariantCulture), [V(o.Required, Stat.EffectF), HtmlWriter.Escape(alpha), HtmlWriter.Escape(o.Target!.Value.ToString("R", CultureInfo.InvariantCulture)), V(o.Required, Stat.NPerGroup), V(o.Required, Stat.NTotal), V(o.Required, Stat.Power)]);
            t.WriteTo(html);
        }

        html.Raw("<p class=\"method\">").Text($"One-way fixed-effects F test with {o.Groups} equal groups: the noncentrality is λ = f² × k × n and the power is the probability that F′ exceeds the rejection threshold of F, under the noncentral F distribution (Cohen's f = {f}: 0.10, 0.25 and 0.40 are Cohen's conventional small, medium and large effects, but your field's own benchmarks should decide).").Raw("</p>");
        string V(IReadOnlyDictionary<string, ResultValue> values, string stat) => HtmlWriter.ValueHtml(values[stat], context);
    }

    /// <inheritdoc/>
    public override IReadOnlyList<string> PhrasedTests => ["power"];

    /// <inheritdoc/>
    public override string? ResultSentence(ResultValue member, IReadOnlyDictionary<string, ResultValue> group, ResultSet all, double alpha, out string? why)
    {
        why = null;
        return group.GetValueOrDefault("power") is { } pw && group.GetValueOrDefault("n_per_group") is { } npg && group.GetValueOrDefault("effect_f") is { } ef
            ? $"power = {ReportStyle.Number(pw)} with n = {ReportStyle.Number(npg)} per group for Cohen's f = {ReportStyle.Number(ef)}"
            : null;
    }
}
