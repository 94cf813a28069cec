using System.Data.Common;
using System.Globalization;
using System.Numerics;
using System.Text;
using System.Text.RegularExpressions;
using StudyPress.Binding;
using StudyPress.Diagnostics;
using StudyPress.Syntax;

namespace StudyPress.Data.Sources;

/// <summary>One numeric column's summary in one cell: count of non-missing values, mean and the sum of squared deviations from that mean.</summary>
/// <param name="CentredMean">The mean minus the column's centre (<see cref="AggregateTable.Centres"/>).</param>
public readonly record struct AggregateStat(long N, double CentredMean, double SumSquares);

/// <summary>
/// One cell of the database's grouping by every factor the study uses: a level code per factor
/// (-1 = missing), the number of rows and each numeric column's summary.
/// </summary>
public sealed record AggregateCell(int[] Codes, long Rows, IReadOnlyDictionary<string, AggregateStat> Stats)
{
    /// <summary>The factor values as the database returned them, one tuple per database group pooled into this cell (for follow-up queries on the cell's rows).</summary>
    public IReadOnlyList<object?[]> RawKeys { get; init; } = [];
}

/// <summary>The aggregated table of one dataset (<c>aggregate: true</c>).</summary>
/// <param name="Factors">The factors grouped by, in the order of <see cref="AggregateCell.Codes"/>.</param>
/// <param name="Levels">Each factor's levels (declared order, else the loader's order).</param>
/// <param name="Centres">Each numeric column's centre (subtracted before summing).</param>
/// <param name="Exact">The numeric columns summed exactly as scaled integers (DuckDB DECIMAL/integer columns).</param>
/// <param name="SourceRows">Rows of the query's result that the database aggregated.</param>
public sealed record AggregateTable(
    IReadOnlyList<FactorSpec> Factors,
    IReadOnlyList<IReadOnlyList<string>> Levels,
    IReadOnlyDictionary<string, double> Centres,
    IReadOnlyList<string> Exact,
    IReadOnlyList<AggregateCell> Cells,
    long SourceRows)
{
    /// <summary>The database file, to run follow-up queries (quantiles, min and max for summary blocks).</summary>
    public string FullPath { get; init; } = string.Empty;

    /// <summary>The user's query (the rows the cells summarise).</summary>
    public string UserQuery { get; init; } = string.Empty;

    /// <summary>Whether the database is DuckDB (also Parquet); otherwise SQLite.</summary>
    public bool Duck { get; init; }
}

/// <summary>
/// <c>aggregate: true</c>: instead of loading the query's rows, asks the database for per-cell
/// summaries of every numeric column the study uses, grouped by every factor it uses.
/// <para>
/// Pass 1 computes each column's average, used as a centre c. Pass 2 (one statement, the one
/// recorded as the dataset's query) groups by the factor columns and, per numeric column:
/// for DuckDB DECIMAL and integer columns, exact integer sums of d = y·10^s − round(c·10^s)
/// (s the column's scale) and of d², as HUGEINT, from which the cell mean and
/// SS = (n Σd² − (Σd)²)/(n 10^2s) follow exactly and are rounded once; for other columns
/// (SQLite, DuckDB DOUBLE) a two-pass computation in double: the cell's count and avg(y − c), then,
/// joined back to the rows, Σ(y − c − m) (a correction of the mean) and Σ(y − c − m)².
/// </para>
/// <para>
/// The recorded result hash is over pass 2's result in the canonical form of <see cref="ResultHash"/>.
/// </para>
/// </summary>
public static partial class AggregateSource
{
    public static LoadedDataset? Load(DatasetSpec spec, string fullPath, string sha256, DatasetNeeds needs, DiagnosticBag diagnostics)
    {
        var queryAt = spec.QueryLocation ?? spec.PathLocation;
        var userQuery = spec.Query ?? "select * from " + DatabaseSource.ParquetTable;
        var duck = spec.Format != DataFormat.Sqlite;
        var clocks = new List<QueryClock>(); // one time limit per query
        try
        {
            using var connection = DatabaseSource.Open(spec, fullPath, diagnostics);
            if (connection is null)
            {
                return null;
            }

            // Probe the result's columns and types.
            var src = "(" + userQuery + ") AS src";
            List<string> names;
            List<string> types;
            List<Type> clr;
            using (var probe = connection.CreateCommand())
            {
                probe.CommandText = "SELECT * FROM " + src + " LIMIT 0";
                clocks.Add(QueryClock.Start(probe, spec.TimeoutSeconds));
                using var reader = probe.ExecuteReader();
                names = [.. Enumerable.Range(0, reader.FieldCount).Select(reader.GetName)];
                types = [.. Enumerable.Range(0, reader.FieldCount).Select(i => TypeName(reader, i))];
                clr = [.. Enumerable.Range(0, reader.FieldCount).Select(i => reader.GetFieldType(i))];
            }

            if (!ColumnsPresent(names, spec, needs, diagnostics))
            {
                return null;
            }

            var numeric = needs.Numeric.Keys.Where(c => c != needs.Order).ToList();
            var factors = needs.Factors.Values.Select(v => v.Spec).ToList();
            var scale = new Dictionary<string, int>(StringComparer.Ordinal);
            foreach (var col in numeric)
            {
                var i = names.IndexOf(col);
                if (duck && clr[i] == typeof(decimal))
                {
                    // The driver names the type only "Decimal"; ask the database for width and scale.
                    types[i] = Scalars(connection, clocks, spec.TimeoutSeconds, $"SELECT typeof({Q(col)}) FROM {src} LIMIT 1")[0] as string ?? types[i];
                }

                if (duck && ExactScale(clr[i], types[i]) is { } s)
                {
                    scale[col] = s;
                }
                else if (duck && !IsNumeric(clr[i]))
                {
                    diagnostics.AggregateProblem(queryAt, spec.Name, $"column '{col}' of the query result is {types[i]}, not a number; the database can only aggregate numeric columns (cast it in the query)");
                    return null;
                }
            }

            if (!duck && numeric.Count > 0)
            {
                // SQLite would silently read non-numeric text as 0: refuse text storage instead.
                var check = string.Join(", ", numeric.Select(c => $"sum(CASE WHEN typeof({Q(c)}) IN ('integer', 'real', 'null') THEN 0 ELSE 1 END)"));
                var bad = Scalars(connection, clocks, spec.TimeoutSeconds, $"SELECT {check} FROM {src}");
                for (var j = 0; j < numeric.Count; j++)
                {
                    if (bad[j] is not null and not DBNull && Convert.ToInt64(bad[j], CultureInfo.InvariantCulture) > 0)
                    {
                        diagnostics.AggregateProblem(queryAt, spec.Name, $"column '{numeric[j]}' holds text (or other non-numeric values) in {StudyPress.Charts.NumberText.Count(Convert.ToInt64(bad[j], CultureInfo.InvariantCulture), "row")} of the query result; to aggregate, return numbers (e.g. 'cast({numeric[j]} as real)', missing values as NULL)");
                        return null;
                    }
                }
            }

            // Pass 1: centres.
            var centres = new Dictionary<string, double>(StringComparer.Ordinal);
            var intCentre = new Dictionary<string, BigInteger>(StringComparer.Ordinal);
            if (numeric.Count > 0)
            {
                var avgs = Scalars(connection, clocks, spec.TimeoutSeconds, "SELECT " + string.Join(", ", numeric.Select(c => $"avg({Q(c)})")) + " FROM " + src);
                for (var j = 0; j < numeric.Count; j++)
                {
                    var a = avgs[j] is null or DBNull ? 0.0 : Convert.ToDouble(avgs[j], CultureInfo.InvariantCulture);
                    if (scale.TryGetValue(numeric[j], out var s))
                    {
                        var ci = new BigInteger(Math.Round(a * Math.Pow(10, s)));
                        intCentre[numeric[j]] = ci;
                        centres[numeric[j]] = (double)((decimal)ci / Pow10Decimal(s));
                    }
                    else
                    {
                        centres[numeric[j]] = a;
                    }
                }
            }

            // Pass 2: per-cell summaries.
            var sql = CellQuery(userQuery, factors, numeric, scale, intCentre, centres);
            var cells = new List<(object?[] Keys, long Rows, Dictionary<string, AggregateStat> Stats)>();
            string resultSha;
            long sourceRows = 0;
            using (var command = connection.CreateCommand())
            {
                command.CommandText = sql;
                clocks.Add(QueryClock.Start(command, spec.TimeoutSeconds));
                using var reader = command.ExecuteReader();
                var rnames = Enumerable.Range(0, reader.FieldCount).Select(reader.GetName).ToList();
                var rtypes = Enumerable.Range(0, reader.FieldCount).Select(i => TypeName(reader, i)).ToList();
                using var hash = new ResultHash(rnames, rtypes);
                var k = factors.Count;
                while (reader.Read())
                {
                    // One row per cell of the factors' crossing: the query row limit bounds them too.
                    if (cells.Count == DataLimits.MaxQueryRows)
                    {
                        diagnostics.QueryTooManyRows(queryAt, spec.Name, DataLimits.MaxQueryRows);
                        return null;
                    }

                    var values = new object?[reader.FieldCount];
                    for (var i = 0; i < values.Length; i++)
                    {
                        values[i] = DatabaseSource.Value(reader, i);
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
                            stats[col] = ExactStat(values[at], values[at + 1], values[at + 2], s);
                            at += 3;
                        }
                        else
                        {
                            stats[col] = DoubleStat(values[at], values[at + 1], values[at + 2], values[at + 3]);
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

            return Build(spec, sha256, names, factors, numeric, scale, centres, cells, sourceRows, sql, resultSha, diagnostics, (fullPath, userQuery, duck));
        }
        catch (Exception e) when (clocks.Exists(c => c.Expired) && e is DbException or InvalidOperationException or OperationCanceledException)
        {
            diagnostics.QueryTimedOut(queryAt, spec.Name, spec.TimeoutSeconds);
            return null;
        }
        catch (Exception e) when (e is DbException or InvalidOperationException or OverflowException or NotSupportedException or InvalidCastException or FormatException)
        {
            diagnostics.QueryFailed(queryAt, spec.Name, DatabaseSource.Message(e));
            return null;
        }
        finally
        {
            foreach (var clock in clocks)
            {
                clock.Dispose();
            }
        }
    }

    internal static LoadedDataset? Build(
        DatasetSpec spec,
        string sha256,
        List<string> names,
        List<FactorSpec> factors,
        List<string> numeric,
        Dictionary<string, int> scale,
        Dictionary<string, double> centres,
        List<(object?[] Keys, long Rows, Dictionary<string, AggregateStat> Stats)> raw,
        long sourceRows,
        string sql,
        string resultSha,
        DiagnosticBag diagnostics,
        (string FullPath, string UserQuery, bool Duck) source)
    {
        var missing = new HashSet<string>(spec.Missing, StringComparer.Ordinal);
        var errors = diagnostics.Items.Count;
        // Levels compared in NFC, without invisible characters, at most DataLimits.MaxLevelsPerFactor (LevelText).
        var at = spec.QueryLocation ?? spec.PathLocation;
        foreach (var cell in raw)
        {
            for (var f = 0; f < factors.Count; f++)
            {
                _ = LevelText.CheckUtf8(cell.Keys[f], factors[f].Column, at, "a group of the database's result", diagnostics);
            }
        }

        if (diagnostics.Items.Count > errors)
        {
            return null;
        }

        var text = raw.Select(c => c.Keys.Select(v => TableColumns.Text(v)?.Trim() is { } t && !missing.Contains(t) ? LevelText.Normal(t) : null).ToArray()).ToList();
        var levels = new List<IReadOnlyList<string>>();
        for (var f = 0; f < factors.Count; f++)
        {
            var seen = text.Select(t => t[f]).Where(t => t is not null).Select(t => t!).Distinct(StringComparer.Ordinal).ToList();
            if (seen.Count > DataLimits.MaxLevelsPerFactor)
            {
                diagnostics.TooManyLevels(at, factors[f].Name, factors[f].Column, DataLimits.MaxLevelsPerFactor);
                return null;
            }

            foreach (var t in seen)
            {
                if (!LevelText.Check(t, at, factors[f].Name, diagnostics))
                {
                    break;
                }
            }

            if (factors[f].Levels is { } declared)
            {
                var present = seen.Select(t => LevelRules.IndexOf(declared, t)).Where(k => k >= 0).ToHashSet();
                var strays = seen.Where(t => LevelRules.IndexOf(declared, t) < 0).Select(t => new LevelRules.Stray(t, factors[f].Location)).ToList();
                if (strays.Count > 0)
                {
                    LevelRules.Report(factors[f], strays, present, diagnostics);
                    continue;
                }

                for (var k = 0; k < declared.Count; k++)
                {
                    if (!present.Contains(k))
                    {
                        diagnostics.AbsentLevel(factors[f].LevelLocations.Count > k ? factors[f].LevelLocations[k] : factors[f].Location, declared[k], factors[f].Name, spec.Path);
                    }
                }
            }

            levels.Add(factors[f].Levels ?? CsvLoader.OrderLevels(seen));
        }

        if (diagnostics.Items.Count > errors)
        {
            return null;
        }

        // Pool database groups that read as the same levels (e.g. text differing only in blanks).
        var pooled = new Dictionary<string, AggregateCell>(StringComparer.Ordinal);
        var order = new List<string>();
        for (var i = 0; i < raw.Count; i++)
        {
            var codes = text[i].Select((t, f) => t is null ? -1 : LevelRules.IndexOf(levels[f], t)).ToArray();
            var key = string.Join(",", codes);
            var cell = new AggregateCell(codes, raw[i].Rows, raw[i].Stats) { RawKeys = [raw[i].Keys] };
            if (pooled.TryGetValue(key, out var before))
            {
                cell = new AggregateCell(codes, before.Rows + cell.Rows, numeric.ToDictionary(c => c, c => Pool(before.Stats[c], cell.Stats[c]), StringComparer.Ordinal)) { RawKeys = [.. before.RawKeys, raw[i].Keys] };
            }
            else
            {
                order.Add(key);
            }

            pooled[key] = cell;
        }

        var cells = order.Select(k => pooled[k]).ToList();
        var exact = numeric.Where(scale.ContainsKey).ToList();
        var inexact = numeric.Where(c => !scale.ContainsKey(c)).ToList();
        var note = new StringBuilder(string.Create(CultureInfo.InvariantCulture, $"The database aggregated the query's {StudyPress.Charts.NumberText.Count(sourceRows, "row")} into {StudyPress.Charts.NumberText.Count(cells.Count, "cell")} of {(factors.Count == 0 ? "the whole table" : string.Join(" × ", factors.Select(f => f.Column)))} (count, mean and centred sum of squares per cell); the rows themselves were not loaded."));
        if (exact.Count > 0)
        {
            note.Append(" " + (exact.Count == 1 ? "Column " : "Columns ") + string.Join(", ", exact.Select(c => "'" + c + "'")) + (exact.Count == 1 ? " was" : " were") + " summed exactly as scaled integers.");
        }

        if (inexact.Count > 0)
        {
            note.Append(" " + (inexact.Count == 1 ? "Column " : "Columns ") + string.Join(", ", inexact.Select(c => "'" + c + "'")) + (inexact.Count == 1 ? " was" : " were") + " summed by the database in binary double arithmetic (centred, two passes).");
        }

        return new LoadedDataset
        {
            Spec = spec,
            Path = spec.Path.Replace('\\', '/'),
            Sha256 = sha256,
            Rows = cells.Count,
            Lines = LineNumbers.Sequential(1, cells.Count),
            ColumnNames = names,
            Numeric = new Dictionary<string, NumericColumn>(StringComparer.Ordinal),
            Factors = new Dictionary<string, CategoricalColumn>(StringComparer.Ordinal),
            Used = new bool[cells.Count],
            Query = sql,
            ResultSha256 = resultSha,
            SourceNote = note.ToString(),
            Aggregate = new AggregateTable(factors, levels, centres, exact, cells, sourceRows) { FullPath = source.FullPath, UserQuery = source.UserQuery, Duck = source.Duck },
        };
    }

    /// <summary>Pools two summaries of the same column: n = n1 + n2, mean and SS by the update of Chan, Golub and LeVeque (1979).</summary>
    public static AggregateStat Pool(AggregateStat a, AggregateStat b)
    {
        if (a.N == 0)
        {
            return b;
        }

        if (b.N == 0)
        {
            return a;
        }

        var n = a.N + b.N;
        var delta = b.CentredMean - a.CentredMean;
        return new AggregateStat(n, a.CentredMean + (delta * b.N / n), a.SumSquares + b.SumSquares + (delta * delta * ((double)a.N * b.N / n)));
    }

    private static string CellQuery(
        string userQuery,
        List<FactorSpec> factors,
        List<string> numeric,
        Dictionary<string, int> scale,
        Dictionary<string, BigInteger> intCentre,
        Dictionary<string, double> centres)
    {
        var keys = factors.Select((f, k) => (Expr: Q(f.Column), Alias: "k" + k.ToString(CultureInfo.InvariantCulture))).ToList();
        var inner = new List<string>();
        var carried = new List<string>();
        inner.AddRange(keys.Select(k => $"{k.Expr} AS {k.Alias}"));
        carried.AddRange(keys.Select(k => "cells." + k.Alias));
        inner.Add("count(*) AS n_rows");
        carried.Add("cells.n_rows");
        var doubles = new List<(string Col, string C, string M)>();
        for (var j = 0; j < numeric.Count; j++)
        {
            var col = numeric[j];
            var y = Q(col);
            var tag = j.ToString(CultureInfo.InvariantCulture);
            if (scale.TryGetValue(col, out var s))
            {
                var d = $"(CAST({y} * {Pow10Text(s)} AS HUGEINT) - CAST({intCentre[col].ToString(CultureInfo.InvariantCulture)} AS HUGEINT))";
                inner.Add($"count({y}) AS n_{tag}");
                inner.Add($"sum({d}) AS s1_{tag}");
                inner.Add($"sum({d} * {d}) AS s2_{tag}");
                carried.AddRange([$"cells.n_{tag}", $"cells.s1_{tag}", $"cells.s2_{tag}"]);
            }
            else
            {
                var c = centres[col].ToString("R", CultureInfo.InvariantCulture);
                if (!c.Contains('.', StringComparison.Ordinal) && !c.Contains('E', StringComparison.Ordinal))
                {
                    c += ".0";
                }

                inner.Add($"count({y}) AS n_{tag}");
                inner.Add($"avg({y} - {c}) AS m_{tag}");
                carried.AddRange([$"cells.n_{tag}", $"cells.m_{tag}"]);
                doubles.Add((col, c, tag));
            }
        }

        var groupBy = keys.Count == 0 ? string.Empty : " GROUP BY " + string.Join(", ", keys.Select(k => k.Expr));
        var cellsCte = $"WITH src AS ({userQuery}), cells AS (SELECT {string.Join(", ", inner)} FROM src{groupBy})";
        var orderBy = keys.Count == 0 ? string.Empty : " ORDER BY " + string.Join(", ", keys.Select(k => "cells." + k.Alias));
        if (doubles.Count == 0)
        {
            return $"{cellsCte} SELECT {string.Join(", ", carried)} FROM cells{orderBy}";
        }

        // Keep the per-column outputs together: n, m, e1, e2 for a double column.
        var select = new List<string>();
        select.AddRange(keys.Select(k => "cells." + k.Alias));
        select.Add("cells.n_rows");
        for (var j = 0; j < numeric.Count; j++)
        {
            var tag = j.ToString(CultureInfo.InvariantCulture);
            if (scale.ContainsKey(numeric[j]))
            {
                select.AddRange([$"cells.n_{tag}", $"cells.s1_{tag}", $"cells.s2_{tag}"]);
            }
            else
            {
                var e = $"(src.{Q(numeric[j])} - {doubles.First(d => d.M == tag).C} - cells.m_{tag})";
                select.AddRange([$"cells.n_{tag}", $"cells.m_{tag}", $"sum({e}) AS e1_{tag}", $"sum({e} * {e}) AS e2_{tag}"]);
            }
        }

        var on = keys.Count == 0 ? "1 = 1" : string.Join(" AND ", keys.Select((k, i) => $"src.{Q(factors[i].Column)} IS NOT DISTINCT FROM cells.{k.Alias}"));
        return $"{cellsCte} SELECT {string.Join(", ", select)} FROM cells JOIN src ON {on} GROUP BY {string.Join(", ", carried)}{orderBy}";
    }

    internal static AggregateStat ExactStat(object? n, object? s1, object? s2, int scale)
    {
        var count = n is null ? 0 : Convert.ToInt64(n, CultureInfo.InvariantCulture);
        if (count == 0)
        {
            return new AggregateStat(0, 0, 0);
        }

        var a = Big(s1);
        var b = Big(s2);
        var p = BigInteger.Pow(10, scale);
        var mean = Ratio(a, count * p);
        var ss = Ratio((count * b) - (a * a), count * p * p);
        return new AggregateStat(count, mean, Math.Max(ss, 0));
    }

    internal static AggregateStat DoubleStat(object? n, object? m, object? e1, object? e2)
    {
        var count = n is null ? 0 : Convert.ToInt64(n, CultureInfo.InvariantCulture);
        if (count == 0)
        {
            return new AggregateStat(0, 0, 0);
        }

        var mean = Convert.ToDouble(m, CultureInfo.InvariantCulture);
        var c1 = e1 is null ? 0 : Convert.ToDouble(e1, CultureInfo.InvariantCulture);
        var c2 = e2 is null ? 0 : Convert.ToDouble(e2, CultureInfo.InvariantCulture);
        return new AggregateStat(count, mean + (c1 / count), Math.Max(c2 - (c1 * c1 / count), 0));
    }

    private static BigInteger Big(object? v) => v switch
    {
        null => BigInteger.Zero,
        BigInteger b => b,
        decimal m => new BigInteger(m),
        long l => l,
        int i => i,
        ulong u => u,
        _ => BigInteger.Parse(Convert.ToString(v, CultureInfo.InvariantCulture)!, CultureInfo.InvariantCulture),
    };

    /// <summary>num/den as the nearest double (to within an ulp or so), without overflow for large integers.</summary>
    private static double Ratio(BigInteger num, BigInteger den)
    {
        if (num.IsZero)
        {
            return 0;
        }

        // Scale so the quotient carries 64 significant bits, then convert.
        var shift = (int)(den.GetBitLength() - num.GetBitLength()) + 64;
        var q = shift >= 0 ? (num << shift) / den : num / (den << -shift);
        return (double)q * Math.Pow(2, -shift);
    }

    private static decimal Pow10Decimal(int s)
    {
        decimal p = 1;
        for (var i = 0; i < s; i++)
        {
            p *= 10;
        }

        return p;
    }

    private static string Pow10Text(int s) => "1" + new string('0', s);

    /// <summary>The scale of a DuckDB DECIMAL or integer column (0 for integers); null for other types.</summary>
    private static int? ExactScale(Type clr, string typeName)
    {
        if (clr == typeof(long) || clr == typeof(int) || clr == typeof(short) || clr == typeof(sbyte) || clr == typeof(byte)
            || clr == typeof(ushort) || clr == typeof(uint) || clr == typeof(ulong) || clr == typeof(BigInteger))
        {
            return 0;
        }

        if (clr == typeof(decimal) && DecimalType().Match(typeName) is { Success: true } m)
        {
            return int.Parse(m.Groups[2].Value, CultureInfo.InvariantCulture);
        }

        return null;
    }

    private static bool IsNumeric(Type clr) => clr == typeof(double) || clr == typeof(float) || clr == typeof(decimal);

    private static object?[] Scalars(DbConnection c, List<QueryClock> clocks, int seconds, string sql)
    {
        using var command = c.CreateCommand();
        command.CommandText = sql;
        clocks.Add(QueryClock.Start(command, seconds));
        using var reader = command.ExecuteReader();
        if (!reader.Read())
        {
            return new object?[reader.FieldCount];
        }

        var values = new object?[reader.FieldCount];
        for (var i = 0; i < values.Length; i++)
        {
            values[i] = reader.IsDBNull(i) ? null : reader.GetValue(i);
        }

        return values;
    }

    /// <summary>Whether a query's result has every column the blocks need; each missing one is reported.</summary>
    internal static bool ColumnsPresent(IReadOnlyList<string> names, DatasetSpec spec, DatasetNeeds needs, DiagnosticBag diagnostics)
    {
        var present = true;
        foreach (var (col, at) in needs.Numeric.Select(n => (n.Key, n.Value)).Concat(needs.Factors.Values.Select(f => (f.Spec.Column, f.At))))
        {
            if (!names.Contains(col, StringComparer.Ordinal))
            {
                diagnostics.UnknownQueryColumn(at, col, spec.Name, names, DiagnosticBag.Nearest(col, names));
                present = false;
            }
        }

        return present;
    }

    private static string TypeName(DbDataReader reader, int i)
    {
        try
        {
            return reader.GetDataTypeName(i);
        }
        catch (Exception e) when (e is InvalidOperationException or NotSupportedException or IndexOutOfRangeException)
        {
            return string.Empty;
        }
    }

    /// <summary>A quoted SQL identifier.</summary>
    private static string Q(string name) => "\"" + name.Replace("\"", "\"\"", StringComparison.Ordinal) + "\"";

    [GeneratedRegex(@"^DECIMAL\((\d+),\s*(\d+)\)$", RegexOptions.IgnoreCase | RegexOptions.CultureInvariant)]
    private static partial Regex DecimalType();
}
