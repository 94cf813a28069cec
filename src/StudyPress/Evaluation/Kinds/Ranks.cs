using System.Runtime.CompilerServices;
using StudyPress.Binding.Kinds;
using StudyPress.Binding;
using StudyPress.Diagnostics;
using StudyPress.Evaluation;
using StudyPress.Statistics.Nonparametric;
using StudyPress.Statistics.PostHoc;
using StudyPress.Statistics;

namespace StudyPress.Evaluation.Kinds;

/// <summary>A ranks block evaluated: the Kruskal–Wallis test, each group's mean rank and Dunn's comparisons.</summary>
public sealed class RanksOutcome(BoundBlock block) : BlockOutcome(block)
{
    public string FactorLabel { get; init; } = string.Empty;

    public IReadOnlyDictionary<string, ResultValue>? Test { get; init; }

    public IReadOnlyList<(string Level, ResultValue N, ResultValue MeanRank)> Groups { get; init; } = [];

    public IReadOnlyList<(PairwiseComparison Pair, IReadOnlyDictionary<string, ResultValue> Values)> Pairs { get; init; } = [];

    /// <summary>Some group has fewer than 5 observations (the chi-square approximation is rough).</summary>
    public bool SmallGroups { get; init; }
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
        var options = block.OptionsOf<RanksKind.Options>();
        // What the block hands on when it stops at a mistake: nothing computed.
        var stopped = new RanksOutcome(block);
        var name = options.Factor ?? (block.Factors.Count == 1 ? block.Factors[0].Name : null);
        if (name is null)
        {
            diagnostics.OneFactorOnly(block.Location, Kind);
            return stopped;
        }

        var spec = context.Header.Factor(name)!;
        var one = block.WithFactors([spec], options.FactorLocation);
        var data = context.Select(one, diagnostics);
        if (data is null)
        {
            return stopped;
        }

        var factor = data.Factors[0];
        if (factor.Levels.Count < 2)
        {
            diagnostics.TooFewGroups(options.FactorLocation, name, factor.Levels.Count);
            return stopped;
        }

        var groups = factor.Split(data.Response);
        var kw = KruskalWallis.Test(groups);
        var inputs = context.Inputs(block);
        var test = new Dictionary<string, ResultValue>(StringComparer.Ordinal)
        {
            [Stat.H] = context.Results.Add(block.Id, TestName.KruskalWallis, name, null, null, Stat.H, kw.H, inputs),
            [Stat.Df] = context.Results.Add(block.Id, TestName.KruskalWallis, name, null, null, Stat.Df, kw.Df, inputs),
            [Stat.P] = context.Results.Add(block.Id, TestName.KruskalWallis, name, null, null, Stat.P, kw.P, inputs),
        }.AsReadOnly();
        var ranks = new List<(string Level, ResultValue N, ResultValue MeanRank)>(factor.Levels.Count);
        for (var g = 0; g < factor.Levels.Count; g++)
        {
            ranks.Add((
                factor.Levels[g],
                context.Results.Add(block.Id, TestName.KruskalWallis, name, factor.Levels[g], null, Stat.N, kw.Counts[g], inputs),
                context.Results.Add(block.Id, TestName.KruskalWallis, name, factor.Levels[g], null, Stat.MeanRank, kw.MeanRanks[g], inputs)));
        }

        var dunn = Dunn.Compare(factor.Levels, groups, context.Header.Alpha, PValueAdjustmentMethod.Holm);
        var pairs = new List<(PairwiseComparison Pair, IReadOnlyDictionary<string, ResultValue> Values)>(dunn.Comparisons.Count);
        foreach (var c in dunn.Comparisons)
        {
            string[] pair = [c.LevelA, c.LevelB];
            var values = new Dictionary<string, ResultValue>(StringComparer.Ordinal)
            {
                [Stat.Diff] = context.Results.Add(block.Id, TestName.Dunn, name, null, pair, Stat.Diff, c.Diff, inputs),
                [Stat.Se] = context.Results.Add(block.Id, TestName.Dunn, name, null, pair, Stat.Se, c.Se, inputs),
                [Stat.Statistic] = context.Results.Add(block.Id, TestName.Dunn, name, null, pair, Stat.Statistic, c.Statistic, inputs),
                [Stat.PAdj] = context.Results.Add(block.Id, TestName.Dunn, name, null, pair, Stat.PAdj, c.PAdjusted, inputs),
            };
            pairs.Add((c, values.AsReadOnly()));
        }

        return new RanksOutcome(block)
        {
            FactorLabel = spec.Display,
            Test = test,
            Groups = ranks.AsReadOnly(),
            Pairs = pairs.AsReadOnly(),
            SmallGroups = kw.Counts.Any(n => n < 5),
        };
    }
}
