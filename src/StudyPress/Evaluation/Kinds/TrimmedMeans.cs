using System.Runtime.CompilerServices;
using StudyPress.Binding;
using StudyPress.Binding.Kinds;
using StudyPress.Diagnostics;
using StudyPress.Statistics;
using StudyPress.Statistics.Robust;

namespace StudyPress.Evaluation.Kinds;

/// <summary>What a <c>trimmed-means</c> block computed: manifest values only, and the facts its text needs.</summary>
public sealed class TrimmedMeansOutcome(BoundBlock block) : BlockOutcome(block)
{
    /// <summary>The factor as the report names it (label or column).</summary>
    public string FactorLabel { get; init; } = string.Empty;

    /// <summary>The proportion trimmed from each tail (<c>trim</c>).</summary>
    public required ResultValue Trim { get; init; }

    /// <summary><c>trimmed_means</c> values of the factor: f, df1, df2, p.</summary>
    public required IReadOnlyDictionary<string, ResultValue> Test { get; init; }

    /// <summary>Each level's n, n_effective, trimmed_mean, winsorized_variance, in level order.</summary>
    public IReadOnlyList<(string Level, IReadOnlyDictionary<string, ResultValue> Values)> Levels { get; init; } = [];

    /// <summary>Levels whose winsorized variance is zero (the test is then not defined; not every level, which is an error).</summary>
    public IReadOnlyList<string> ZeroVarianceLevels { get; init; } = [];

    /// <summary>Rows left out because the response or the factor was missing.</summary>
    public int DroppedMissing { get; init; }
}

/// <summary>Evaluates <c>trimmed-means</c> blocks into values (no HTML, no report text).</summary>
public sealed class TrimmedMeansEvaluator : KindEvaluator
{
    /// <summary>Registers this part of the kind (see DEVELOPERS.md, "Adding an analysis kind").</summary>
    [ModuleInitializer]
    internal static void Register() => KindEvaluators.Register(new TrimmedMeansEvaluator());

    public override string Kind => "trimmed-means";

    public override BlockOutcome Evaluate(EvaluationContext context, BoundBlock block, DiagnosticBag diagnostics)
    {
        var options = block.OptionsOf<TrimmedMeansKind.Options>();
        var name = options.Factor ?? (block.Factors.Count == 1 ? block.Factors[0].Name : null);
        if (name is null)
        {
            diagnostics.OneFactorOnly(block.Location, Kind);
            return new BlockOutcome(block);
        }

        var spec = context.Header.Factor(name)!;
        var data = context.Select(block.WithFactors([spec], options.FactorLocation), diagnostics);
        if (data is null)
        {
            return new BlockOutcome(block);
        }

        var factor = data.Factors[0];
        if (factor.Levels.Count < 2)
        {
            diagnostics.TooFewGroups(options.FactorLocation, name, factor.Levels.Count);
            return new BlockOutcome(block);
        }

        // The centred response (the data stage's exact centring): the statistic does not depend on
        // a shift, and the trimmed means get the centre back below.
        var groups = factor.Split(data.Response);
        for (var j = 0; j < groups.Length; j++)
        {
            var g = TrimmedMeans.TrimCount(options.Trim, groups[j].Length);
            if (groups[j].Length - (2 * g) < 2)
            {
                diagnostics.TooFewAfterTrimming(options.TrimLocation, name, factor.Levels[j], groups[j].Length, g, options.TrimWritten);
                return new BlockOutcome(block);
            }
        }

        var result = TrimmedMeans.Test(groups, options.Trim);
        if (result.Groups.All(g => g.WinsorizedVariance is { IsDefined: true, Value: 0 }))
        {
            diagnostics.ZeroWinsorizedVariance(options.TrimLocation, name, options.TrimWritten);
            return new BlockOutcome(block);
        }

        var inputs = context.Inputs(block);
        ResultValue Add(string? level, string stat, Quantity q) => context.Results.Add(block.Id, TestName.TrimmedMeans, name, level, null, stat, q, inputs);
        var trim = Add(null, Stat.Trim, Quantity.Of(options.Trim));
        var test = new Dictionary<string, ResultValue>(StringComparer.Ordinal)
        {
            [Stat.F] = Add(null, Stat.F, result.F),
            [Stat.Df1] = Add(null, Stat.Df1, Quantity.Of(result.Df1)),
            [Stat.Df2] = Add(null, Stat.Df2, result.Df2),
            [Stat.P] = Add(null, Stat.P, result.P),
        };
        var levels = new List<(string, IReadOnlyDictionary<string, ResultValue>)>(factor.Levels.Count);
        for (var j = 0; j < factor.Levels.Count; j++)
        {
            var level = factor.Levels[j];
            var g = result.Groups[j];
            levels.Add((level, new Dictionary<string, ResultValue>(StringComparer.Ordinal)
            {
                [Stat.N] = Add(level, Stat.N, Quantity.Of(g.N)),
                [Stat.NEffective] = Add(level, Stat.NEffective, Quantity.Of(g.Effective)),
                [Stat.TrimmedMean] = Add(level, Stat.TrimmedMean, g.TrimmedMean.Map(m => m + data.Centre)),
                [Stat.WinsorizedVariance] = Add(level, Stat.WinsorizedVariance, g.WinsorizedVariance),
            }));
        }

        return new TrimmedMeansOutcome(block)
        {
            FactorLabel = spec.Display,
            Trim = trim,
            Test = test,
            Levels = levels,
            ZeroVarianceLevels = [.. factor.Levels.Where((_, j) => result.Groups[j].WinsorizedVariance is { IsDefined: true, Value: 0 })],
            DroppedMissing = data.DroppedMissing,
        };
    }
}
