using System.Runtime.CompilerServices;
using StudyPress.Binding.Kinds;
using StudyPress.Binding;
using StudyPress.Diagnostics;
using StudyPress.Evaluation;
using StudyPress.Statistics.Descriptive;

namespace StudyPress.Evaluation.Kinds;

/// <summary>A summary block evaluated: each group's statistics, from the rows or from the database's cells.</summary>
public sealed class SummaryOutcome(BoundBlock block) : BlockOutcome(block)
{
    private readonly string responseLabel = string.Empty;

    public IReadOnlyList<(string Label, int N, IReadOnlyDictionary<string, ResultValue> Values)> Groups { get; init; } = [];

    public string Term { get; init; } = string.Empty;

    public string ResponseName { get; init; } = string.Empty;

    /// <summary>The response as readers see it (label and unit from the header, else the column name).</summary>
    public string ResponseLabel { get => responseLabel.Length > 0 ? responseLabel : ResponseName; init => responseLabel = value; }

    /// <summary>The selected rows (rows route only).</summary>
    public BlockData? Data { get; init; }

    /// <summary>Whether the statistics came from the rows or from the database's cell statistics.</summary>
    public AnovaRoute Route { get; init; } = AnovaRoute.Rows;

    /// <summary>Rows left out because the response or a factor was missing.</summary>
    public long DroppedMissing { get; init; }

    /// <summary>Cells route: whether the database computed the quantiles (SQLite computes none).</summary>
    public bool DatabaseQuantiles { get; init; }
}

/// <summary>Evaluates <c>summary</c> blocks into values (no HTML, no report text).</summary>
public sealed partial class SummaryEvaluator : KindEvaluator
{
    /// <summary>Registers this part of the kind (see DEVELOPERS.md, "Adding an analysis kind").</summary>
    [ModuleInitializer]
    internal static void Register() => KindEvaluators.Register(new SummaryEvaluator());

    public override string Kind => "summary";

    public override BlockOutcome Evaluate(EvaluationContext context, BoundBlock block, DiagnosticBag diagnostics)
    {
        if (Model.StudyModels.ReadsAggregate(block, context.Datasets))
        {
            return EvaluateCells(context, block, diagnostics);
        }

        var data = context.Select(block, diagnostics);
        if (data is null)
        {
            return new SummaryOutcome(block);
        }

        var groups = new List<(string Label, int N, IReadOnlyDictionary<string, ResultValue> Values)>();
        var inputs = context.Inputs(block);
        var term = data.Factors.Count == 0 ? null : string.Join(":", data.Factors.Select(f => f.Spec.Name));
        var missing = MissingByCell(context, block, data);
        var cells = data.Factors.Count == 0 ? [("all", Array.Empty<int>(), data.Response, Enumerable.Range(0, data.Rows.Length).ToArray())] : data.Cells();
        var alpha = context.Header.Alpha;
        if (data.Factors.Count > 0)
        {
            Figures.SortAllCells(data);
        }

        foreach (var (label, _, values, positions) in cells)
        {
            var s = data.Factors.Count == 0
                ? Descriptives.ComputeSorted(values, Figures.SortedValues(data, positions), data.Centre, alpha, data.ExactMean(positions))
                : data.CellSummary(values, positions, alpha);
            var level = data.Factors.Count == 0 ? null : label;
            var map = new Dictionary<string, ResultValue>(StringComparer.Ordinal);
            void Add(string stat, Statistics.Quantity q) => map[stat] = context.Results.Add(block.Id, TestName.Summary, term, level, null, stat, q, inputs);
            Add(Stat.N, Statistics.Quantity.Of(s.N));
            Add(Stat.Missing, Statistics.Quantity.Of(missing.GetValueOrDefault(label).Count));
            Add(Stat.Mean, Statistics.Quantity.Of(s.Mean));
            Add(Stat.Sd, s.Sd);
            Add(Stat.Se, s.Se);
            Add(Stat.CiLow, s.CiLow);
            Add(Stat.CiHigh, s.CiHigh);
            Add(Stat.Median, Statistics.Quantity.Of(s.Median));
            Add(Stat.Q1, Statistics.Quantity.Of(s.Q1));
            Add(Stat.Q3, Statistics.Quantity.Of(s.Q3));
            Add(Stat.Min, Statistics.Quantity.Of(s.Min));
            Add(Stat.Max, Statistics.Quantity.Of(s.Max));
            groups.Add((label, s.N, map.AsReadOnly()));
        }

        // Groups whose every response is missing have no rows in the data, but they are part of
        // the study: they are shown with n = 0 and their missing count (in the factor's level order).
        if (data.Factors.Count > 0)
        {
            var shown = groups.Select(g => g.Label).ToHashSet(StringComparer.Ordinal);
            foreach (var (label, count) in missing.Where(m => !shown.Contains(m.Key)).OrderBy(m => m.Value.Order, OrderComparer).Select(m => (m.Key, m.Value.Count)))
            {
                var map = new Dictionary<string, ResultValue>(StringComparer.Ordinal);
                var none = Statistics.Quantity.Undefined(NoObservations);
                void Add(string stat, Statistics.Quantity q) => map[stat] = context.Results.Add(block.Id, TestName.Summary, term, label, null, stat, q, inputs);
                Add(Stat.N, Statistics.Quantity.Of(0));
                Add(Stat.Missing, Statistics.Quantity.Of(count));
                foreach (var stat in new[] { "mean", "sd", "se", "ci_low", "ci_high", "median", "q1", "q3", "min", "max" })
                {
                    Add(stat, none);
                }

                groups.Add((label, 0, map.AsReadOnly()));
            }
        }

        var figures = new List<FigurePlan>();
        if (context.Header.Report.Figures && data.Factors.Count > 0 && Figures.Box(data) is { } box)
        {
            figures.Add(box);
        }

        return new SummaryOutcome(block)
        {
            ResponseName = data.ResponseName,
            ResponseLabel = data.ResponseLabel,
            Data = data,
            Term = term ?? string.Empty,
            Groups = groups.AsReadOnly(),
            DroppedMissing = data.DroppedMissing,
            Figures = figures.AsReadOnly(),
        };
    }

    /// <summary>Why the statistics of a group without observations are not defined.</summary>
    public const string NoObservations = "the group has no observations: every response in it is missing";

    private static readonly Comparer<int[]> OrderComparer = Comparer<int[]>.Create((a, b) =>
    {
        for (var i = 0; i < Math.Min(a.Length, b.Length); i++)
        {
            if (a[i] != b[i])
            {
                return a[i].CompareTo(b[i]);
            }
        }

        return a.Length.CompareTo(b.Length);
    });

    /// <summary>
    /// The groups (labels as the summary shows them) whose every response is missing among the
    /// rows the block selects, as "factor = 'level'" texts, for the notes of the other kinds.
    /// </summary>
    public static IReadOnlyList<string> EmptyGroups(EvaluationContext context, BoundBlock block, BlockData data)
    {
        if (data.Factors.Count == 0)
        {
            return [];
        }

        var shown = data.Cells().Select(c => c.Label).ToHashSet(StringComparer.Ordinal);
        return [.. MissingByCell(context, block, data).Where(m => !shown.Contains(m.Key)).OrderBy(m => m.Value.Order, OrderComparer).Select(m => m.Key)];
    }

    /// <summary>Rows whose response is missing, by the group their factors put them in (with the group's level codes, for ordering).</summary>
    private static Dictionary<string, (int Count, int[] Order)> MissingByCell(EvaluationContext context, BoundBlock block, BlockData data)
    {
        var result = new Dictionary<string, (int Count, int[] Order)>(StringComparer.Ordinal);
        var ds = data.Dataset;
        var response = ds.Numeric[data.ResponseName];
        if (EvaluationContext.NoneMissing(response))
        {
            return result; // no row's response is missing
        }

        for (var r = 0; r < ds.Rows; r++)
        {
            if (!response.IsMissing(r))
            {
                continue;
            }

            var labels = new List<string>();
            var codes = new List<int>();
            var ok = true;
            foreach (var f in block.Factors)
            {
                var col = ds.Factors[f.Name];
                if (col.Codes[r] < 0)
                {
                    ok = false;
                    break;
                }

                labels.Add(col.Levels[col.Codes[r]]);
                codes.Add(col.Codes[r]);
            }

            foreach (var w in block.Where)
            {
                var col = ds.Factors[w.Factor.Name];
                ok &= col.Codes[r] >= 0 && w.Levels.Contains(col.Levels[col.Codes[r]]);
            }

            if (ok)
            {
                var key = labels.Count == 0 ? "all" : string.Join(" / ", labels);
                result[key] = (result.GetValueOrDefault(key).Count + 1, [.. codes]);
            }
        }

        _ = context;
        return result;
    }
}
