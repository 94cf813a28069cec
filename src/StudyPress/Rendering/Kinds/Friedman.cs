using StudyPress.Charts;
using System.Globalization;
using System.Runtime.CompilerServices;
using StudyPress.Evaluation;
using StudyPress.Evaluation.Kinds;

namespace StudyPress.Rendering.Kinds;

/// <summary>Writes the HTML of <c>friedman</c> blocks: the test, mean ranks, pairwise comparisons, method and reading.</summary>
public sealed class FriedmanRenderer : KindRenderer
{
    /// <summary>Registers this part of the kind (see DEVELOPERS.md, "Adding an analysis kind").</summary>
    [ModuleInitializer]
    internal static void Register() => KindRenderers.Register(new FriedmanRenderer());

    public override string Kind => "friedman";

    /// <summary>The sentence a methods paragraph gives this test.</summary>
    public override IEnumerable<string> Methods(MethodsPart part, MethodsSection? section, BlockOutcome outcome, MethodsWriter w)
    {
        if (part != MethodsPart.Results || !w.Has("effects") || outcome is not FriedmanOutcome { Test: { } t } o)
        {
            yield break;
        }

        var rejected = t[Stat.P].Value is { IsDefined: true } p && p.Value < w.Outcome.Alpha;
        var pairs = o.PairTest == TestName.Nemenyi ? "Nemenyi's comparisons of mean ranks" : "Conover's comparisons of mean ranks (Holm-adjusted)";
        yield return w.Did($"a Friedman rank test of {MethodsWriter.E(o.TreatmentLabel)} within {MethodsWriter.Df(t[Stat.NBlocks])} complete blocks of {MethodsWriter.E(o.BlocksLabel)}, with {pairs},", false, "run", "ran", "run", ".")
            + $" It {(rejected ? w.T("rejected", "rejects") : w.T("did not reject", "does not reject"))} the hypothesis that the treatments are ranked alike within blocks, χ²({MethodsWriter.Df(t[Stat.Df])}) = {MethodsWriter.S2(t[Stat.Chi2])}, {ReportStyle.PPhrase(t[Stat.P])}, Kendall's W = {MethodsWriter.Fr(t[Stat.KendallW])}; the Iman–Davenport F({MethodsWriter.Df(t[Stat.Df1ImanDavenport])}, {MethodsWriter.Df(t[Stat.Df2ImanDavenport])}) = {MethodsWriter.S2(t[Stat.FImanDavenport])}, {ReportStyle.PPhrase(t[Stat.PImanDavenport])}."
            + (rejected ? string.Empty : " This is not evidence that the treatments act alike.");
    }

    public override IEnumerable<string> Warnings(BlockOutcome outcome, RenderContext context)
    {
        // Common practice (no single source): the chi-square approximation is poor with few blocks;
        // Iman and Davenport (1980) found their F closer to the exact distribution.
        if (outcome is FriedmanOutcome { Test: { } test } && test[Stat.NBlocks].Value is { IsDefined: true } n && n.Value < 10)
        {
            yield return string.Create(CultureInfo.InvariantCulture, $"Only {n.Value} blocks: the chi-square approximation of the Friedman statistic is rough with so few blocks (tables of its exact distribution can differ near α); the Iman–Davenport F is usually closer.");
        }
    }

    public override IEnumerable<string> Notes(BlockOutcome outcome, RenderContext context)
    {
        if (outcome is not FriedmanOutcome o)
        {
            yield break;
        }

        if (o.DroppedBlocks.Count > 0)
        {
            yield return string.Create(CultureInfo.InvariantCulture, $"{NumberText.Count(o.DroppedBlocks.Count, "block")} without a value for every treatment {(o.DroppedBlocks.Count == 1 ? "was" : "were")} left out ({string.Join(", ", o.DroppedBlocks.Take(10).Select(StudyPress.Charts.BidiText.Isolate))}{(o.DroppedBlocks.Count > 10 ? ", …" : string.Empty)}); the test uses complete blocks only.");
        }

        if (o.DroppedMissing > 0)
        {
            yield return string.Create(CultureInfo.InvariantCulture, $"{NumberText.Count(o.DroppedMissing, "row")} with a missing value {(o.DroppedMissing == 1 ? "was" : "were")} left out.");
        }
    }

    public override void Render(HtmlWriter html, BlockOutcome outcome, RenderContext context)
    {
        if (outcome is not FriedmanOutcome { Test: { } test } o)
        {
            return;
        }

        string V(ResultValue v) => HtmlWriter.ValueHtml(v, context);
        var t = new HtmlTable("friedman", o.Block.Caption ?? $"Friedman test of {o.TreatmentLabel} within {o.BlocksLabel}", ["Test", "statistic", "df", "p", "Kendall's W"]);
        t.Row("Friedman χ²", [V(test[Stat.Chi2]), V(test[Stat.Df]), V(test[Stat.P]), V(test[Stat.KendallW])]);
        t.Row("Iman–Davenport F", [V(test[Stat.FImanDavenport]), V(test[Stat.Df1ImanDavenport]) + ", " + V(test[Stat.Df2ImanDavenport]), V(test[Stat.PImanDavenport]), string.Empty]);
        t.WriteTo(html);

        var ranks = new HtmlTable("mean-ranks", string.Create(CultureInfo.InvariantCulture, $"Mean ranks within {test[Stat.NBlocks].Value.Value} blocks"), [o.TreatmentLabel, "mean rank"]);
        foreach (var (level, rank) in o.Treatments)
        {
            ranks.Row(level, [V(rank)]);
        }

        ranks.WriteTo(html);
        var nemenyi = o.PairTest == TestName.Nemenyi;
        var pairs = new HtmlTable(
            "pairs",
            nemenyi ? "Nemenyi comparisons of mean ranks" : "Conover comparisons of mean ranks (Holm-adjusted)",
            PostHocRenderer.PairHeaders(nemenyi ? "nemenyi" : "conover", "difference in mean rank", null, context)) { TextColumns = [1] };
        foreach (var (a, b, v) in o.Pairs)
        {
            pairs.Row(StudyPress.Charts.BidiText.Isolate(a) + " − " + StudyPress.Charts.BidiText.Isolate(b), [PostHocRenderer.Verdict(v[Stat.PAdj].Value, context), V(v[Stat.Diff]), V(v[Stat.Se]), V(v[Stat.Statistic]), V(v[Stat.PAdj])]);
        }

        pairs.WriteTo(html);
        if (o.CriticalDifference is { } cd)
        {
            html.Raw("<p class=\"note\">").Text("Critical difference of mean ranks at α = " + context.AlphaText + ": ").Raw(V(cd)).Text(".").Raw("</p>");
        }

        var method = "Values are ranked within each block (mid-ranks for ties)"
            + (o.HasTies ? "; χ² is corrected for ties" : string.Empty)
            + " and referred to the chi-square distribution on k − 1 df. Kendall's W = χ²/(n(k − 1)) measures how consistently the blocks rank the treatments (0: no agreement, 1: identical rankings). The Iman–Davenport F = (n − 1)χ²/(n(k − 1) − χ²) is the analysis-of-variance F of the within-block ranks. "
            + (nemenyi
                ? "Nemenyi's comparisons refer the difference of mean ranks to the studentized range with infinitely many df; adjusted p-values and the critical difference control the family-wise error rate at α = " + context.AlphaText + "."
                : "Conover's comparisons are t tests of mean-rank differences on the rank error term with (n − 1)(k − 1) df; p-values are adjusted by Holm's step-down method to control the family-wise error rate at α = " + context.AlphaText + ".");
        html.Raw("<p class=\"method\">").Text(method).Raw("</p>");
        var reading = test[Stat.P].Value is { IsDefined: true } p && p.Value < context.Alpha
            ? "At α = " + context.AlphaText + " the Friedman test rejects the hypothesis that the treatments are ranked alike within blocks: at least one treatment tends to rank higher than another within the same block. The pairwise comparisons show which pairs the data separate."
            : "At α = " + context.AlphaText + " the Friedman test does not reject the hypothesis that the treatments are ranked alike within blocks; this is not evidence that they are.";
        html.Raw("<div class=\"reading\"><p>").Text(reading).Raw("</p></div>");
    }

    /// <summary><c>studypress diff</c> reports the Friedman test's p crossing alpha as a flipped decision on the treatment effect.</summary>
    public override IReadOnlyDictionary<string, string> DiffEffectTests { get; } = new Dictionary<string, string>(StringComparer.Ordinal)
    {
        [TestName.Friedman] = "Friedman test",
    }.AsReadOnly();

    /// <summary>The comparisons of mean ranks: a pair is followed from Conover's to Nemenyi's when the method changes.</summary>
    public override IReadOnlyDictionary<string, string> DiffPairTests { get; } = new Dictionary<string, string>(StringComparer.Ordinal)
    {
        [TestName.Conover] = "ranks",
        [TestName.Nemenyi] = "ranks",
    }.AsReadOnly();

    /// <inheritdoc/>
    public override IReadOnlyDictionary<string, string> ProcedureNames { get; } = new Dictionary<string, string>(StringComparer.Ordinal)
    {
        [TestName.Conover] = "Conover",
        [TestName.Nemenyi] = "Nemenyi",
    }.AsReadOnly();
}
