using System.Globalization;
using StudyPress.Binding;
using StudyPress.Diagnostics;
using StudyPress.Evaluation;
using StudyPress.Statistics;
using StudyPress.Statistics.Descriptive;

namespace StudyPress.Evaluation.Kinds;

/// <summary>
/// A <c>summary</c> block on a dataset the database aggregated (<c>aggregate: true</c>). n, mean,
/// SD, SE and the interval of the mean come from the cells (pooled into the block's groups by the
/// parallel-axis formula, <see cref="DescriptivesFromSummaries"/>); the missing counts are the
/// cells' rows minus their non-missing responses. Min and max, and on DuckDB the median and
/// quartiles (<c>quantile_cont</c>, linear interpolation between order statistics, the definition
/// the loaded rows use), come from one query per group over the group's rows, run before evaluation
/// (<see cref="Model.SummaryCells"/>). SQLite has no
/// quantile function: median and quartiles are not defined, with that reason.
/// Manifest values and rendering are those of the rows route (one <see cref="SummaryOutcome"/>,
/// with <see cref="AnovaRoute.Cells"/>).
/// </summary>
public sealed partial class SummaryEvaluator
{
    private static SummaryOutcome EvaluateCells(EvaluationContext context, BoundBlock block, DiagnosticBag diagnostics)
    {
        var prepared = context.Models.Summaries[block.Id];
        var response = block.Response!;
        if (prepared.Groups.Count == 0)
        {
            diagnostics.NoRowsSelected(block.Location);
            return new SummaryOutcome(block) { Route = AnovaRoute.Cells };
        }

        var term = block.Factors.Count == 0 ? null : string.Join(":", block.Factors.Select(f => f.Name));
        var inputs = context.Inputs(block);
        var alpha = context.Header.Alpha;
        var centre = prepared.Centre;
        if (prepared.Failed)
        {
            // The database's query failed (reported before evaluation): the block names its response, no groups.
            return new SummaryOutcome(block)
            {
                Route = AnovaRoute.Cells,
                ResponseName = response,
                ResponseLabel = context.Header.ResponseDisplay(response),
                Term = term ?? string.Empty,
            };
        }

        var groups = new List<(string Label, int N, IReadOnlyDictionary<string, ResultValue> Values)>(prepared.Groups.Count);
        foreach (var g in prepared.Groups)
        {
            var label = g.Label;
            var s = DescriptivesFromSummaries.Compute(g.Stat, centre, alpha);
            var o = g.Orders;
            var level = block.Factors.Count == 0 ? null : label;
            var map = new Dictionary<string, ResultValue>(StringComparer.Ordinal);
            void Add(string stat, Quantity q) => map[stat] = context.Results.Add(block.Id, TestName.Summary, term, level, null, stat, q, inputs);
            Add(Stat.N, Quantity.Of(s.N));
            Add(Stat.Missing, Quantity.Of(g.Missing));
            Add(Stat.Mean, Quantity.Of(s.Mean));
            Add(Stat.Sd, s.Sd);
            Add(Stat.Se, s.Se);
            Add(Stat.CiLow, s.CiLow);
            Add(Stat.CiHigh, s.CiHigh);
            Add(Stat.Median, o.Median);
            Add(Stat.Q1, o.Q1);
            Add(Stat.Q3, o.Q3);
            Add(Stat.Min, o.Min);
            Add(Stat.Max, o.Max);
            groups.Add((label, (int)Math.Min(s.N, int.MaxValue), map.AsReadOnly()));
        }

        return new SummaryOutcome(block)
        {
            Route = AnovaRoute.Cells,
            ResponseName = response,
            ResponseLabel = context.Header.ResponseDisplay(response),
            Term = term ?? string.Empty,
            Groups = groups.AsReadOnly(),
            DatabaseQuantiles = prepared.Quantiles,
            DroppedMissing = prepared.Dropped,
        };
    }
}
