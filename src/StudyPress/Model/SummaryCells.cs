using System.Data.Common;
using System.Globalization;
using StudyPress.Binding;
using StudyPress.Data;
using StudyPress.Data.Sources;
using StudyPress.Diagnostics;
using StudyPress.Statistics;
using StudyPress.Statistics.Anova;
using StudyPress.Statistics.Descriptive;

namespace StudyPress.Model;

/// <summary>A group's order statistics, computed by the database over the group's rows.</summary>
public sealed record OrderStatistics(Quantity Median, Quantity Q1, Quantity Q3, Quantity Min, Quantity Max);

/// <summary>One group of a summary block on aggregated data: its label, pooled statistics (centred mean), missing count and order statistics.</summary>
public sealed record SummaryGroup(string Label, GroupStatistics Stat, long Missing, OrderStatistics Orders);

/// <summary>
/// A <c>summary</c> block's groups on a dataset the database aggregated (<c>aggregate: true</c>),
/// prepared before evaluation because the order statistics need the database: per group (the
/// crossing of the block's factors, after <c>where</c>) the cells pooled exactly
/// (<see cref="DescriptivesFromSummaries"/>), the missing count (rows minus non-missing responses),
/// and min and max, and on DuckDB and PostgreSQL the median and quartiles (<c>quantile_cont</c> /
/// <c>percentile_cont</c>, linear interpolation between order statistics, the definition the loaded
/// rows use), from one query per group over the group's rows. SQLite has no quantile function:
/// median and quartiles are not defined, with that reason.
/// </summary>
public sealed class SummaryCells
{
    public const string SqliteQuantiles = "the database computes no quantiles; SQLite";

    /// <summary>The groups with an observation, in code order; empty when none has one.</summary>
    public required IReadOnlyList<SummaryGroup> Groups { get; init; }

    /// <summary>Whether a query failed (reported): the block cannot be evaluated.</summary>
    public required bool Failed { get; init; }

    public required long Dropped { get; init; }

    public required double Centre { get; init; }

    /// <summary>Whether the database computed quantiles (DuckDB, Parquet, PostgreSQL).</summary>
    public required bool Quantiles { get; init; }

    /// <summary>Pools the block's cells into groups and asks the database for each group's order statistics.</summary>
    public static SummaryCells Build(LoadedDataset ds, BoundBlock block, DiagnosticBag diagnostics)
    {
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
        var centre = table.Centres[response];
        var quantiles = table.Duck || ds.Spec.Format == DataFormat.Postgres;
        if (present.Count == 0)
        {
            return new SummaryCells { Groups = [], Failed = false, Dropped = dropped, Centre = centre, Quantiles = quantiles };
        }

        var keyColumns = keyPos.Select(p => table.Factors[p].Column).ToArray();
        var orders = Query(ds.Spec, table, response, keyColumns, present.Select(g => g.Keys).ToList(), block, diagnostics);
        var result = new List<SummaryGroup>();
        for (var gi = 0; orders is not null && gi < present.Count; gi++)
        {
            var g = present[gi];
            var label = block.Factors.Count == 0 ? "all" : string.Join(" / ", g.Codes.Select((c, k) => table.Levels[factorPos[k]][c]));
            result.Add(new SummaryGroup(label, g.Stat, g.Missing, orders[gi]));
        }

        return new SummaryCells { Groups = result, Failed = orders is null, Dropped = dropped, Centre = centre, Quantiles = quantiles };
    }

    /// <summary>Min, max and (DuckDB) quartiles of each group's rows, one query per group; null after a reported error.</summary>
    private static List<OrderStatistics>? Query(DatasetSpec spec, AggregateTable table, string response, string[] keyColumns, List<List<object?[]>> groups, BoundBlock block, DiagnosticBag diagnostics)
    {
        var y = Q(response);
        var pg = spec.Format == DataFormat.Postgres;
        var select = pg
            ? $"min({y}), max({y}), percentile_cont(0.5) WITHIN GROUP (ORDER BY {y}::float8), percentile_cont(0.25) WITHIN GROUP (ORDER BY {y}::float8), percentile_cont(0.75) WITHIN GROUP (ORDER BY {y}::float8)"
            : table.Duck
            ? $"min({y}), max({y}), quantile_cont(CAST({y} AS DOUBLE), 0.5), quantile_cont(CAST({y} AS DOUBLE), 0.25), quantile_cont(CAST({y} AS DOUBLE), 0.75)"
            : $"min({y}), max({y})";
        var result = new List<OrderStatistics>();
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
                result.Add(table.Duck || pg ? new OrderStatistics(V(2), V(3), V(4), V(0), V(1)) : new OrderStatistics(none, none, none, V(0), V(1)));
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
