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

/// <summary>Writes the HTML of <c>ranks</c> blocks.</summary>
public sealed class RanksRenderer : KindRenderer
{
    /// <summary>Registers this part of the kind (see DEVELOPERS.md, "Adding an analysis kind").</summary>
    [ModuleInitializer]
    internal static void Register() => KindRenderers.Register(new RanksRenderer());

    public override string Kind => "ranks";

    public override IEnumerable<string> Warnings(BlockOutcome outcome, RenderContext context)
    {
        if (outcome is RanksOutcome { SmallGroups: true })
        {
            yield return "Some groups have fewer than 5 observations: the chi-square approximation to the Kruskal–Wallis distribution is rough for groups this small, so treat p-values near α with caution.";
        }
    }

    /// <summary>The rank test's sentence in a methods paragraph.</summary>
    public override IEnumerable<string> Methods(MethodsPart part, MethodsSection? section, BlockOutcome outcome, MethodsWriter w) =>
        part == MethodsPart.Results && w.Has("effects") ? [MethodsSentence((RanksOutcome)outcome, w)] : [];

    private static string MethodsSentence(RanksOutcome r, MethodsWriter w)
    {
        var t = r.Test!;
        var rejected = t[Stat.P].Value.IsDefined && t[Stat.P].Value.Value < w.Outcome.Alpha;
        return w.Did($"a Kruskal–Wallis rank test across the levels of {MethodsWriter.E(r.FactorLabel)}, with Dunn's pairwise comparisons (Holm-adjusted),", false, "run", "ran", "run", ".")
            + $" It {(rejected ? w.T("rejected", "rejects") : w.T("did not reject", "does not reject"))} the hypothesis that the groups come from one distribution, H({MethodsWriter.Df(t[Stat.Df])}) = {MethodsWriter.S2(t[Stat.H])}, {ReportStyle.PPhrase(t[Stat.P])}.";
    }

    public override void Render(HtmlWriter html, BlockOutcome outcome, RenderContext context)
    {
        var o = (RanksOutcome)outcome;
        if (o.Test is null)
        {
            return;
        }

        var t = new HtmlTable("ranks", o.Block.Caption ?? $"Kruskal–Wallis test of {o.FactorLabel}", ["Source", "H", "df", "p"]);
        t.Row(o.FactorLabel, [HtmlWriter.ValueHtml(o.Test[Stat.H], context), HtmlWriter.ValueHtml(o.Test[Stat.Df], context), HtmlWriter.ValueHtml(o.Test[Stat.P], context)]);
        t.WriteTo(html);
        var g = new HtmlTable("mean-ranks", "Mean ranks", ["Level", "n", "mean rank"]);
        foreach (var (level, n, rank) in o.Groups)
        {
            g.Row(level, [HtmlWriter.ValueHtml(n, context), HtmlWriter.ValueHtml(rank, context)]);
        }

        g.WriteTo(html);
        var p = new HtmlTable("pairs", "Dunn's comparisons of mean ranks (Holm-adjusted)", PostHocRenderer.PairHeaders("dunn", "difference in mean rank", null, context)) { TextColumns = [1] };
        foreach (var (pair, v) in o.Pairs)
        {
            p.Row(StudyPress.Charts.BidiText.Isolate(pair.LevelA) + " − " + StudyPress.Charts.BidiText.Isolate(pair.LevelB), [PostHocRenderer.Verdict(v[Stat.PAdj].Value, context), HtmlWriter.ValueHtml(v[Stat.Diff], context), HtmlWriter.ValueHtml(v[Stat.Se], context), HtmlWriter.ValueHtml(v[Stat.Statistic], context), HtmlWriter.ValueHtml(v[Stat.PAdj], context)]);
        }

        p.WriteTo(html);
        html.Raw("<p class=\"method\">").Text("Ranks are mid-ranks for ties; H is corrected for ties and referred to the chi-square distribution. Dunn's z uses the tie-corrected variance; p-values are adjusted by Holm's step-down method to control the family-wise error rate at α = " + context.AlphaText + ".").Raw("</p>");
        var reading = o.Test[Stat.P].Value is { IsDefined: true } pv && pv.Value < context.Alpha
            ? "At α = " + context.AlphaText + " the rank test rejects the hypothesis that all groups come from the same distribution: at least one group tends to give larger or smaller values than another. Dunn's comparisons show which pairs the data separate."
            : "At α = " + context.AlphaText + " the rank test does not reject the hypothesis that all groups come from the same distribution; this is not evidence that they do.";
        html.Raw("<div class=\"reading\"><p>").Text(reading).Raw("</p></div>");
    }

    /// <inheritdoc/>
    public override IReadOnlyList<string> PhrasedTests => ["kruskal_wallis", "dunn"];

    /// <inheritdoc/>
    public override string? ResultSentence(ResultValue member, IReadOnlyDictionary<string, ResultValue> group, ResultSet all, double alpha, out string? why)
    {
        why = null;
        ResultValue? Get(string stat) => group.GetValueOrDefault(stat);
        if (member.Test == "dunn")
        {
            return Sentences.Pairwise(group, alpha, "difference in mean rank", withZ: true);
        }

        if (Get("h") is { } h && Get("df") is { } hd && Get("p") is { } hp)
        {
            return $"H({ReportStyle.Number(hd)}) = {ReportStyle.Number(h)}, {ReportStyle.PPhrase(hp)}";
        }

        return Get("mean_rank") is { } mr && Get("n") is { } mn ? $"mean rank = {ReportStyle.Number(mr)}, n = {ReportStyle.Number(mn)}" : null;
    }

    /// <inheritdoc/>
    public override IReadOnlyDictionary<string, string> DiffEffectTests { get; } = new Dictionary<string, string>(StringComparer.Ordinal)
    {
        ["kruskal_wallis"] = "Kruskal–Wallis",
    }.AsReadOnly();

    /// <inheritdoc/>
    public override IReadOnlyDictionary<string, string> ProcedureNames { get; } = new Dictionary<string, string>(StringComparer.Ordinal)
    {
        ["kruskal_wallis"] = "Kruskal–Wallis",
        ["dunn"] = "Dunn",
    }.AsReadOnly();

    /// <summary>Dunn's comparisons of mean ranks (also run by a posthoc block's rule).</summary>
    public override IReadOnlyDictionary<string, string> DiffPairTests { get; } = new Dictionary<string, string>(StringComparer.Ordinal)
    {
        ["dunn"] = "ranks",
    }.AsReadOnly();

    /// <summary>The rank test and Dunn's comparisons, also added by the anova and posthoc blocks' rules.</summary>
    public override IReadOnlyList<string> DiffProcedureTests => ["kruskal_wallis", "dunn"];
}
