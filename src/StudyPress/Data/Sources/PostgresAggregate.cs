using System.Globalization;
using Npgsql;
using StudyPress.Binding;
using StudyPress.Diagnostics;

namespace StudyPress.Data.Sources;

/// <summary>
/// <c>aggregate: true</c> on a PostgreSQL server: the same per-cell summaries as
/// <see cref="AggregateSource"/>, computed by the server so that no row leaves it.
/// <para>
/// Pass 1 asks, per numeric column, for its centre: for <c>integer</c>, <c>bigint</c>,
/// <c>smallint</c> and <c>numeric</c> columns the largest scale s of its values and the integer
/// C = round(avg(y)·10^s) in PostgreSQL's exact numeric arithmetic; for <c>double precision</c> and
/// <c>real</c> columns avg(y). Pass 2 (one statement, recorded as the dataset's query) groups by the
/// factor columns and returns, for exact columns, count(y), Σd and Σd² with d = y·10^s − C summed in
/// numeric (no rounding, no overflow) and sent as text; for binary columns the two-pass double
/// computation of <see cref="AggregateSource"/> (count, avg(y − c), then Σ(y − c − m) and Σ(y − c − m)²).
/// </para>
/// </summary>
internal static class PostgresAggregate
{
    public static LoadedDataset? Load(DatasetSpec spec, string userQuery, DatasetNeeds needs, DiagnosticBag diagnostics)
    {
        var queryAt = spec.QueryLocation ?? spec.PathLocation;
        using var connection = PostgresSource.Open(spec, diagnostics);
        if (connection is null)
        {
            return null;
        }

        var sql = "SELECT * FROM (" + userQuery + ") AS src LIMIT 0";
        try
        {
            List<string> names;
            List<string> types;
            using (var probe = PostgresSource.Command(connection, sql))
            using (var reader = probe.ExecuteReader())
            {
                names = [.. Enumerable.Range(0, reader.FieldCount).Select(reader.GetName)];
                types = [.. Enumerable.Range(0, reader.FieldCount).Select(reader.GetDataTypeName)];
            }

            if (!AggregateSource.ColumnsPresent(names, spec, needs, diagnostics))
            {
                return null;
            }

            var numeric = needs.Numeric.Keys.Where(c => c != needs.Order).ToList();
            var factors = needs.Factors.Values.Select(v => v.Spec).ToList();
            var exact = new HashSet<string>(StringComparer.Ordinal);
            foreach (var col in numeric)
            {
                var type = types[names.IndexOf(col)];
                if (IsExact(type))
                {
                    exact.Add(col);
                }
                else if (type is not ("double precision" or "real"))
                {
                    diagnostics.AggregateProblem(queryAt, spec.Name, $"column '{col}' of the query result is {type}, not a number; the server can only aggregate numeric columns (cast it in the query)");
                    return null;
                }
            }

            // Pass 1: scales and centres.
            var scale = new Dictionary<string, int>(StringComparer.Ordinal);
            var intCentre = new Dictionary<string, System.Numerics.BigInteger>(StringComparer.Ordinal);
            var centres = new Dictionary<string, double>(StringComparer.Ordinal);
            if (numeric.Count > 0)
            {
                var items = new List<string>();
                foreach (var col in numeric)
                {
                    var y = Q(col);
                    if (exact.Contains(col))
                    {
                        items.Add($"coalesce(max(scale({y}::numeric)), 0)");
                        items.Add($"coalesce(round(avg({y}::numeric) * power(10::numeric, coalesce(max(scale({y}::numeric)), 0))), 0)::text");
                    }
                    else
                    {
                        items.Add($"coalesce(avg({y}), 0)::float8");
                    }
                }

                sql = $"WITH src AS ({userQuery}) SELECT {string.Join(", ", items)} FROM src";
                var row = Scalars(connection, sql);
                var at = 0;
                foreach (var col in numeric)
                {
                    if (exact.Contains(col))
                    {
                        var s = Convert.ToInt32(row[at], CultureInfo.InvariantCulture);
                        var c = System.Numerics.BigInteger.Parse((string)row[at + 1]!, CultureInfo.InvariantCulture);
                        scale[col] = s;
                        intCentre[col] = c;
                        centres[col] = (double)c / Math.Pow(10, s);
                        at += 2;
                    }
                    else
                    {
                        centres[col] = Convert.ToDouble(row[at], CultureInfo.InvariantCulture);
                        at++;
                    }
                }
            }

            // Pass 2: per-cell summaries.
            sql = CellQuery(userQuery, factors, numeric, scale, intCentre, centres);
            var cells = new List<(object?[] Keys, long Rows, Dictionary<string, AggregateStat> Stats)>();
            string resultSha;
            long sourceRows = 0;
            using (var command = PostgresSource.Command(connection, sql))
            using (var reader = command.ExecuteReader())
            {
                var rnames = Enumerable.Range(0, reader.FieldCount).Select(reader.GetName).ToList();
                var rtypes = Enumerable.Range(0, reader.FieldCount).Select(reader.GetDataTypeName).ToList();
                using var hash = new ResultHash(rnames, rtypes);
                var k = factors.Count;
                while (reader.Read())
                {
                    // One row per cell of the factors' crossing: bounded as for the other databases.
                    if (cells.Count == DataLimits.MaxQueryRows)
                    {
                        diagnostics.QueryTooManyRows(queryAt, spec.Name, DataLimits.MaxQueryRows);
                        return null;
                    }

                    var values = new object?[reader.FieldCount];
                    for (var i = 0; i < values.Length; i++)
                    {
                        values[i] = reader.IsDBNull(i) ? null : reader.GetValue(i);
                    }

                    hash.Row(values);
                    var rows = Convert.ToInt64(values[k], CultureInfo.InvariantCulture);
                    sourceRows += rows;
                    var stats = new Dictionary<string, AggregateStat>(StringComparer.Ordinal);
                    var at = k + 1;
                    foreach (var col in numeric)
                    {
                        if (scale.TryGetValue(col, out var s))
                        {
                            stats[col] = AggregateSource.ExactStat(values[at], values[at + 1], values[at + 2], s);
                            at += 3;
                        }
                        else
                        {
                            stats[col] = AggregateSource.DoubleStat(values[at], values[at + 1], values[at + 2], values[at + 3]);
                            at += 4;
                        }
                    }

                    cells.Add((values[..k], rows, stats));
                }

                resultSha = hash.Finish();
            }

            if (sourceRows == 0)
            {
                diagnostics.QueryNoRows(queryAt, spec.Name);
                return null;
            }

            var ds = AggregateSource.Build(spec, resultSha, names, factors, numeric, scale, centres, cells, sourceRows, sql, resultSha, diagnostics, (spec.Path, userQuery, false));
            return ds;
        }
        catch (Exception e) when (PostgresSource.IsQueryError(e))
        {
            PostgresSource.ReportQueryError(spec, e, sql, userQuery, diagnostics);
            return null;
        }
    }

    /// <summary>Types summed exactly in numeric arithmetic.</summary>
    internal static bool IsExact(string type) =>
        type is "integer" or "bigint" or "smallint" or "numeric" || type.StartsWith("numeric(", StringComparison.Ordinal);

    private static string CellQuery(
        string userQuery,
        List<FactorSpec> factors,
        List<string> numeric,
        Dictionary<string, int> scale,
        Dictionary<string, System.Numerics.BigInteger> intCentre,
        Dictionary<string, double> centres)
    {
        var keys = factors.Select((f, k) => (Expr: Q(f.Column), Alias: "k" + k.ToString(CultureInfo.InvariantCulture))).ToList();
        var inner = new List<string>();
        inner.AddRange(keys.Select(k => $"{k.Expr} AS {k.Alias}"));
        inner.Add("count(*) AS n_rows");
        var select = new List<string>();
        select.AddRange(keys.Select(k => "cells." + k.Alias));
        select.Add("cells.n_rows");
        var carried = new List<string>(select);
        var anyDouble = false;
        for (var j = 0; j < numeric.Count; j++)
        {
            var col = numeric[j];
            var y = Q(col);
            var tag = j.ToString(CultureInfo.InvariantCulture);
            if (scale.TryGetValue(col, out var s))
            {
                var d = $"({y}::numeric * {"1" + new string('0', s)} - {intCentre[col].ToString(CultureInfo.InvariantCulture)})";
                inner.Add($"count({y}) AS n_{tag}");
                inner.Add($"round(sum({d}))::text AS s1_{tag}");
                inner.Add($"round(sum({d} * {d}))::text AS s2_{tag}");
                select.AddRange([$"cells.n_{tag}", $"cells.s1_{tag}", $"cells.s2_{tag}"]);
                carried.AddRange([$"cells.n_{tag}", $"cells.s1_{tag}", $"cells.s2_{tag}"]);
            }
            else
            {
                var c = centres[col].ToString("R", CultureInfo.InvariantCulture) + "::float8";
                inner.Add($"count({y}) AS n_{tag}");
                inner.Add($"avg({y}::float8 - {c}) AS m_{tag}");
                var e = $"(src.{y}::float8 - {c} - cells.m_{tag})";
                select.AddRange([$"cells.n_{tag}", $"cells.m_{tag}", $"sum({e}) AS e1_{tag}", $"sum({e} * {e}) AS e2_{tag}"]);
                carried.AddRange([$"cells.n_{tag}", $"cells.m_{tag}"]);
                anyDouble = true;
            }
        }

        var groupBy = keys.Count == 0 ? string.Empty : " GROUP BY " + string.Join(", ", keys.Select(k => k.Expr));
        var cellsCte = $"WITH src AS ({userQuery}), cells AS (SELECT {string.Join(", ", inner)} FROM src{groupBy})";
        var orderBy = keys.Count == 0 ? string.Empty : " ORDER BY " + string.Join(", ", keys.Select(k => "cells." + k.Alias));
        if (!anyDouble)
        {
            return $"{cellsCte} SELECT {string.Join(", ", select)} FROM cells{orderBy}";
        }

        var on = keys.Count == 0 ? "TRUE" : string.Join(" AND ", keys.Select((k, i) => $"src.{Q(factors[i].Column)} IS NOT DISTINCT FROM cells.{k.Alias}"));
        return $"{cellsCte} SELECT {string.Join(", ", select)} FROM cells JOIN src ON {on} GROUP BY {string.Join(", ", carried)}{orderBy}";
    }

    private static object?[] Scalars(NpgsqlConnection c, string sql)
    {
        using var command = PostgresSource.Command(c, sql);
        using var reader = command.ExecuteReader();
        var values = new object?[reader.FieldCount];
        if (reader.Read())
        {
            for (var i = 0; i < values.Length; i++)
            {
                values[i] = reader.IsDBNull(i) ? null : reader.GetValue(i);
            }
        }

        return values;
    }

    private static string Q(string name) => "\"" + name.Replace("\"", "\"\"", StringComparison.Ordinal) + "\"";
}
