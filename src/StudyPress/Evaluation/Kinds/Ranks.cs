using System.Runtime.CompilerServices;
using StudyPress.Binding.Kinds;
using StudyPress.Binding;
using StudyPress.Diagnostics;
using StudyPress.Evaluation;
using StudyPress.Statistics.Nonparametric;
using StudyPress.Statistics.PostHoc;
using StudyPress.Statistics;

namespace StudyPress.Evaluation.Kinds;

public sealed class RanksOutcome(BoundBlock block) : BlockOutcome(block)
{
    public string FactorLabel { get; set; } = string.Empty;

    public Dictionary<string, ResultValue>? Test { get; set; }

    public List<(string Level, ResultValue N, ResultValue MeanRank)> Groups { get; } = [];

    public List<(PairwiseComparison Pair, Dictionary<string, ResultValue> Values)> Pairs { get; } = [];
}

/// <summary>Evaluates <c>ranks</c> blocks into values (no HTML, no report text).</summary>
public sealed class RanksEvaluator : KindEvaluator
{
    /// <summary>Registers this part of the kind (see DEVELOPERS.md, "Adding an analysis kind").</summary>
    [ModuleInitializer]
    internal static void Register() => KindEvaluators.Register(new RanksEvaluator());

    public override string Kind => "ranks";

    public override BlockOutcome Evaluate(EvaluationContext context, BoundBlock block, DiagnosticBag diagnostics)
    {
        var options = (RanksKind.Options)block.Options!;
        var outcome = new RanksOutcome(block);
        var name = options.Factor ?? (block.Factors.Count == 1 ? block.Factors[0].Name : null);
        if (name is null)
        {
            diagnostics.OneFactorOnly(block.Location, Kind);
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
}
