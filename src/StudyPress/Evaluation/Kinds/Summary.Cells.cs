using System.Data.Common;
using System.Globalization;
using StudyPress.Binding;
using StudyPress.Data.Sources;
using StudyPress.Diagnostics;
using StudyPress.Evaluation;
using StudyPress.Statistics;
using StudyPress.Statistics.Anova;
using StudyPress.Statistics.Descriptive;

namespace StudyPress.Evaluation.Kinds;

/// <summary>
/// A <c>summary</c> block on a dataset the database aggregated (<c>aggregate: true</c>). n, mean,
/// SD, SE and the interval of the mean come from the cells (pooled into the block's groups by the
/// parallel-axis formula, <see cref="DescriptivesFromSummaries"/>); the missing counts are the
/// cells' rows minus their non-missing responses. Min and max, and on DuckDB the median and
/// quartiles (<c>quantile_cont</c>, linear interpolation between order statistics, the definition
/// the loaded rows use), come from one query per group over the group's rows. SQLite has no
/// quantile function: median and quartiles are not defined, with that reason.
/// Manifest values and rendering are those of the rows route (one <see cref="SummaryOutcome"/>,
/// with <see cref="AnovaRoute.Cells"/>).
/// </summary>
public sealed partial class SummaryEvaluator
{
    public const string SqliteQuantiles = "the database computes no quantiles; SQLite";

    private static SummaryOutcome EvaluateCells(EvaluationContext context, BoundBlock block, DiagnosticBag diagnostics)
    {
        var outcome = new SummaryOutcome(block) { Route = AnovaRoute.Cells };
        var ds = context.Datasets[block.Data!];
        var table = ds.Aggregate!;
        var response = block.Response!;
        int Pos(string factor) => table.Factors.Select((f, i) => (f, i)).First(p => p.f.Name == factor).i;
        var factorPos = block.Factors.Select(f => Pos(f.Name)).ToArray();
        var where = block.Where.Select(w => (Pos: Pos(w.Factor.Name), w.Levels)).ToArray();
        var keyPos = factorPos.Concat(where.Select(w => w.Pos)).Distinct().ToArray();
        var groups = new SortedDictionary<string, (int[] Codes, GroupStatistics Stat, long Missing, HashSet<string> Seen, List<object?[]> Keys)>(StringComparer.Ordinal);
        long dropped = 0;
        for (var i = 0; i < table.Cells.Count; i++)
        {
            var cell = table.Cells[i];
            if (where.Any(w => cell.Codes[w.Pos] < 0 || !w.Levels.Contains(table.Levels[w.Pos][cell.Codes[w.Pos]])))
            {
                continue;
            }

            var stat = cell.Stats[response];
            if (factorPos.Any(p => cell.Codes[p] < 0))
            {
                dropped += cell.Rows;
                continue;
            }

            dropped += cell.Rows - stat.N;
            var codes = factorPos.Select(p => cell.Codes[p]).ToArray();
            var key = string.Join(",", codes.Select(c => c.ToString("D9", CultureInfo.InvariantCulture)));
            if (!groups.TryGetValue(key, out var g))
            {
                g = (codes, new GroupStatistics(0, 0, 0), 0, new HashSet<string>(StringComparer.Ordinal), []);
            }

            foreach (var raw in cell.RawKeys)
            {
                var tuple = keyPos.Select(p => raw[p]).ToArray();
                if (g.Seen.Add(string.Join("\u001f", tuple.Select(v => Convert.ToString(v, CultureInfo.InvariantCulture) + "|" + v?.GetType().Name))))
                {
                    g.Keys.Add(tuple);
                }
            }

            var pooled = DescriptivesFromSummaries.Pool([g.Stat, new GroupStatistics(stat.N, stat.CentredMean, stat.SumSquares)]);
            groups[key] = (codes, pooled, g.Missing + (cell.Rows - stat.N), g.Seen, g.Keys);
            if (stat.N > 0)
            {
                ds.Used[i] = true;
            }
        }

        var present = groups.Values.Where(g => g.Stat.Count > 0).ToList();
        if (present.Count == 0)
        {
            diagnostics.NoRowsSelected(block.Location);
            return outcome;
        }

        outcome.ResponseName = response;
        var term = block.Factors.Count == 0 ? null : string.Join(":", block.Factors.Select(f => f.Name));
        outcome.Term = term ?? string.Empty;
        var inputs = context.Inputs(block);
        var alpha = context.Header.Alpha;
        var centre = table.Centres[response];
        var keyColumns = keyPos.Select(p => table.Factors[p].Column).ToArray();
        var orders = OrderStatistics(ds.Spec, table, response, keyColumns, present.Select(g => g.Keys).ToList(), block, diagnostics);
        if (orders is null)
        {
            return outcome;
        }

        for (var gi = 0; gi < present.Count; gi++)
        {
            var g = present[gi];
            var label = block.Factors.Count == 0 ? "all" : string.Join(" / ", g.Codes.Select((c, k) => table.Levels[factorPos[k]][c]));
            var s = DescriptivesFromSummaries.Compute(g.Stat, centre, alpha);
            var o = orders[gi];
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
            outcome.Groups.Add((label, (int)Math.Min(s.N, int.MaxValue), map));
            if (s.N < 2)
            {
                outcome.Warnings.Add($"Group '{label}' has a single observation: its spread and interval are not defined.");
            }
        }

        var small = outcome.Groups.Where(g => g.N is >= 2 and < 5).Select(g => g.Label).ToList();
        if (small.Count > 0)
        {
            outcome.Warnings.Add($"Groups with fewer than 5 observations ({string.Join(", ", small.Select(StudyPress.Charts.BidiText.Isolate))}): their means and intervals are imprecise, and quartiles of so few values say little.");
        }

        outcome.Notes.Add(table.Duck || ds.Spec.Format == DataFormat.Postgres
            ? "n, mean, SD, SE and the interval were computed from per-cell counts, means and sums of squares computed by the database (aggregate: true); median, quartiles, min and max by the database over each group's rows (quantile_cont or percentile_cont, linear interpolation). The box plot was not drawn: the rows were not loaded."
            : "n, mean, SD, SE and the interval were computed from per-cell counts, means and sums of squares computed by the database (aggregate: true); min and max by the database over each group's rows. SQLite computes no quantiles, so the median and quartiles are not defined. The box plot was not drawn: the rows were not loaded.");
        if (dropped > 0)
        {
            outcome.Notes.Add(string.Create(CultureInfo.InvariantCulture, $"{dropped} row(s) with a missing value were left out."));
        }

        return outcome;
    }

    private sealed record Orders(Quantity Median, Quantity Q1, Quantity Q3, Quantity Min, Quantity Max);

    /// <summary>Min, max and (DuckDB) quartiles of each group's rows, one query per group; null after a reported error.</summary>
    private static List<Orders>? OrderStatistics(DatasetSpec spec, AggregateTable table, string response, string[] keyColumns, List<List<object?[]>> groups, BoundBlock block, DiagnosticBag diagnostics)
    {
        var y = Q(response);
        var pg = spec.Format == DataFormat.Postgres;
        var select = pg
            ? $"min({y}), max({y}), percentile_cont(0.5) WITHIN GROUP (ORDER BY {y}::float8), percentile_cont(0.25) WITHIN GROUP (ORDER BY {y}::float8), percentile_cont(0.75) WITHIN GROUP (ORDER BY {y}::float8)"
            : table.Duck
            ? $"min({y}), max({y}), quantile_cont(CAST({y} AS DOUBLE), 0.5), quantile_cont(CAST({y} AS DOUBLE), 0.25), quantile_cont(CAST({y} AS DOUBLE), 0.75)"
            : $"min({y}), max({y})";
        var result = new List<Orders>();
        QueryClock? clock = null;
        try
        {
            using DbConnection? connection = pg ? PostgresSource.Open(spec, diagnostics) : DatabaseSource.Open(spec, table.FullPath, diagnostics);
            if (connection is null)
            {
                return null;
            }

            foreach (var keys in groups)
            {
                using var command = connection.CreateCommand();
                var p = 0;
                var ors = new List<string>();
                foreach (var tuple in keys)
                {
                    var ands = new List<string>();
                    for (var c = 0; c < keyColumns.Length; c++)
                    {
                        var name = "p" + p.ToString(CultureInfo.InvariantCulture);
                        p++;
                        ands.Add($"{Q(keyColumns[c])} = {(pg ? "@" : "$")}{name}");
                        var parameter = command.CreateParameter();
                        parameter.ParameterName = table.Duck || pg ? name : "$" + name;
                        parameter.Value = tuple[c] ?? DBNull.Value;
                        command.Parameters.Add(parameter);
                    }

                    ors.Add(ands.Count == 0 ? "TRUE" : "(" + string.Join(" AND ", ands) + ")");
                }

                var filter = ors.Count == 0 ? string.Empty : " WHERE " + string.Join(" OR ", ors);
                command.CommandText = $"SELECT {select} FROM ({table.UserQuery}) AS src{filter}";
                clock?.Dispose();
                clock = QueryClock.Start(command, spec.TimeoutSeconds);
                using var reader = command.ExecuteReader();
                reader.Read();
                Quantity V(int i) => reader.IsDBNull(i) ? Quantity.Undefined("the group has no values") : Quantity.Of(Convert.ToDouble(reader.GetValue(i), CultureInfo.InvariantCulture));
                var none = Quantity.Undefined(SqliteQuantiles);
                result.Add(table.Duck || pg ? new Orders(V(2), V(3), V(4), V(0), V(1)) : new Orders(none, none, none, V(0), V(1)));
            }
        }
        catch (Exception e) when (clock is { Expired: true } && e is DbException or InvalidOperationException or OperationCanceledException)
        {
            diagnostics.QueryTimedOut(block.Location, spec.Name, spec.TimeoutSeconds);
            return null;
        }
        catch (Exception e) when (e is DbException or InvalidOperationException or InvalidCastException or FormatException or OverflowException)
        {
            diagnostics.QueryFailed(block.Location, spec.Name, DatabaseSource.Message(e));
            return null;
        }
        finally
        {
            clock?.Dispose();
        }

        return result;
    }

    private static string Q(string name) => "\"" + name.Replace("\"", "\"\"", StringComparison.Ordinal) + "\"";
}
