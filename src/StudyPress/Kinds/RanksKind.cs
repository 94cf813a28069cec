using StudyPress.Binding;
using StudyPress.Diagnostics;
using StudyPress.Evaluation;
using StudyPress.Rendering;
using StudyPress.Statistics;
using StudyPress.Statistics.Nonparametric;
using StudyPress.Statistics.PostHoc;

namespace StudyPress.Kinds;

/// <summary>
/// <c>ranks</c>: the Kruskal–Wallis test (mid-ranks, tie-corrected) of one factor, with Dunn's
/// pairwise comparisons of mean ranks, Holm-adjusted. Normality is not assumed.
/// </summary>
public sealed class RanksKind : BlockKind
{
    public override string Name => "ranks";

    public override string PrimaryTest => "kruskal_wallis";

    public override IReadOnlyList<string> OwnKeys { get; } = ["factor"];

    public sealed record Options(string? Factor, SourceLocation FactorLocation);

    public override object? BindOptions(KeyReader keys, BindContext context, DiagnosticBag diagnostics)
    {
        var f = keys.Scalar("factor");
        if (f is not null && context.Header.Factor(f.Value) is null)
        {
            diagnostics.UnknownFactor(f.Location, f.Value, DiagnosticBag.Nearest(f.Value, context.Header.Factors.Select(x => x.Name)));
        }

        return new Options(f?.Value, f?.Location ?? context.Syntax.Location);
    }

    public sealed class Outcome(BoundBlock block) : BlockOutcome(block)
    {
        public string FactorLabel { get; set; } = string.Empty;

        public Dictionary<string, ResultValue>? Test { get; set; }

        public List<(string Level, ResultValue N, ResultValue MeanRank)> Groups { get; } = [];

        public List<(PairwiseComparison Pair, Dictionary<string, ResultValue> Values)> Pairs { get; } = [];
    }

    public override BlockOutcome Evaluate(EvaluationContext context, BoundBlock block, DiagnosticBag diagnostics)
    {
        var options = (Options)block.Options!;
        var outcome = new Outcome(block);
        var name = options.Factor ?? (block.Factors.Count == 1 ? block.Factors[0].Name : null);
        if (name is null)
        {
            diagnostics.OneFactorOnly(block.Location, Name);
            return outcome;
        }

        var spec = context.Header.Factor(name)!;
        var one = new BoundBlock
        {
            Id = block.Id,
            Kind = block.Kind,
            Syntax = block.Syntax,
            Data = block.Data,
            Response = block.Response,
            ResponseLocation = block.ResponseLocation,
            Factors = [spec],
            FactorsLocation = options.FactorLocation,
            Where = block.Where,
            Caption = block.Caption,
            Options = block.Options,
        };
        var data = context.Select(one, diagnostics);
        if (data is null)
        {
            return outcome;
        }

        var factor = data.Factors[0];
        if (factor.Levels.Count < 2)
        {
            diagnostics.TooFewGroups(options.FactorLocation, name, factor.Levels.Count);
            return outcome;
        }

        outcome.FactorLabel = spec.Display;
        var groups = factor.Split(data.Response);
        var kw = KruskalWallis.Test(groups);
        var inputs = context.Inputs(block);
        outcome.Test = new Dictionary<string, ResultValue>(StringComparer.Ordinal)
        {
            ["h"] = context.Results.Add(block.Id, "kruskal_wallis", name, null, null, "h", kw.H, inputs),
            ["df"] = context.Results.Add(block.Id, "kruskal_wallis", name, null, null, "df", kw.Df, inputs),
            ["p"] = context.Results.Add(block.Id, "kruskal_wallis", name, null, null, "p", kw.P, inputs),
        };
        for (var g = 0; g < factor.Levels.Count; g++)
        {
            outcome.Groups.Add((
                factor.Levels[g],
                context.Results.Add(block.Id, "kruskal_wallis", name, factor.Levels[g], null, "n", kw.Counts[g], inputs),
                context.Results.Add(block.Id, "kruskal_wallis", name, factor.Levels[g], null, "mean_rank", kw.MeanRanks[g], inputs)));
        }

        var dunn = Dunn.Compare(factor.Levels, groups, context.Header.Alpha, PValueAdjustmentMethod.Holm);
        foreach (var c in dunn.Comparisons)
        {
            string[] pair = [c.LevelA, c.LevelB];
            var values = new Dictionary<string, ResultValue>(StringComparer.Ordinal)
            {
                ["diff"] = context.Results.Add(block.Id, "dunn", name, null, pair, "diff", c.Diff, inputs),
                ["se"] = context.Results.Add(block.Id, "dunn", name, null, pair, "se", c.Se, inputs),
                ["statistic"] = context.Results.Add(block.Id, "dunn", name, null, pair, "statistic", c.Statistic, inputs),
                ["p_adj"] = context.Results.Add(block.Id, "dunn", name, null, pair, "p_adj", c.PAdjusted, inputs),
            };
            outcome.Pairs.Add((c, values));
        }

        if (kw.Counts.Any(n => n < 5))
        {
            outcome.Warnings.Add("Some groups have fewer than 5 observations: the chi-square approximation to the Kruskal–Wallis distribution is rough for groups this small, so treat p-values near α with caution.");
        }

        return outcome;
    }

    public override void Render(HtmlWriter html, BlockOutcome outcome, RenderContext context)
    {
        var o = (Outcome)outcome;
        if (o.Test is null)
        {
            return;
        }

        var t = new HtmlTable("ranks", o.Block.Caption ?? $"Kruskal–Wallis test of {o.FactorLabel}", ["Source", "H", "df", "p"]);
        t.Row(o.FactorLabel, [HtmlWriter.ValueHtml(o.Test["h"], context), HtmlWriter.ValueHtml(o.Test["df"], context), HtmlWriter.ValueHtml(o.Test["p"], context)]);
        t.WriteTo(html);
        var g = new HtmlTable("mean-ranks", "Mean ranks", ["Level", "n", "mean rank"]);
        foreach (var (level, n, rank) in o.Groups)
        {
            g.Row(level, [HtmlWriter.ValueHtml(n, context), HtmlWriter.ValueHtml(rank, context)]);
        }

        g.WriteTo(html);
        var p = new HtmlTable("pairs", "Dunn's comparisons of mean ranks (Holm-adjusted)", ["Pair", "difference in mean rank", "SE", "z", "adjusted p"]);
        foreach (var (pair, v) in o.Pairs)
        {
            p.Row(StudyPress.Charts.BidiText.Isolate(pair.LevelA) + " − " + StudyPress.Charts.BidiText.Isolate(pair.LevelB), [HtmlWriter.ValueHtml(v["diff"], context), HtmlWriter.ValueHtml(v["se"], context), HtmlWriter.ValueHtml(v["statistic"], context), HtmlWriter.ValueHtml(v["p_adj"], context)]);
        }

        p.WriteTo(html);
        html.Raw("<p class=\"method\">").Text("Ranks are mid-ranks for ties; H is corrected for ties and referred to the chi-square distribution. Dunn's z uses the tie-corrected variance; p-values are adjusted by Holm's step-down method to control the family-wise error rate at α = " + context.AlphaText + ".").Raw("</p>");
        var reading = o.Test["p"].Value is { IsDefined: true } pv && pv.Value < context.Alpha
            ? "At α = " + context.AlphaText + " the rank test rejects the hypothesis that all groups come from the same distribution: at least one group tends to give larger or smaller values than another. Dunn's comparisons show which pairs the data separate."
            : "At α = " + context.AlphaText + " the rank test does not reject the hypothesis that all groups come from the same distribution; this is not evidence that they do.";
        html.Raw("<div class=\"reading\"><p>").Text(reading).Raw("</p></div>");
    }
}
