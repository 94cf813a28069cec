using System.Data.Common;
using DuckDB.NET.Data;
using Microsoft.Data.Sqlite;
using StudyPress.Binding;
using StudyPress.Diagnostics;
using StudyPress.Syntax;

namespace StudyPress.Data.Sources;

/// <summary>
/// Runs a dataset's query against a SQLite or DuckDB database file, or against a Parquet file through
/// DuckDB, and reads the result as the dataset's table. The database is opened read-only; the query
/// may read nothing but that one file (SQLite: no ATTACH; DuckDB: no access to other files). The
/// result's SHA-256 in the canonical form of <see cref="ResultHash"/> is recorded with the query.
/// </summary>
public static class DatabaseSource
{
    /// <summary>DuckDB's memory limit for a query (a runaway query fails inside the engine instead of exhausting memory).</summary>
    internal const string DuckDbMemoryLimit = "1GB";

    /// <summary>Test hook (this thread): a smaller row limit, so a test of the limit stays short.</summary>
    [ThreadStatic]
    internal static long? MaxRowsForTests;

    /// <summary>In a Parquet dataset's query, the file is this table.</summary>
    public const string ParquetTable = "source";

    public static LoadedDataset? Load(DatasetSpec spec, string fullPath, string sha256, string displayPath, DatasetNeeds needs, DiagnosticBag diagnostics)
    {
        var queryAt = spec.QueryLocation ?? spec.PathLocation;
        if (spec.Aggregate)
        {
            return AggregateSource.Load(spec, fullPath, sha256, needs, diagnostics);
        }

        var query = spec.Query ?? "select * from " + ParquetTable;
        List<string> names;
        var rows = new List<object?[]>();
        string resultSha;
        QueryClock? clock = null;
        try
        {
            using var connection = Open(spec, fullPath, diagnostics);
            if (connection is null)
            {
                return null;
            }

            using var command = connection.CreateCommand();
            command.CommandText = query;
            clock = QueryClock.Start(command, spec.TimeoutSeconds);
            using var reader = command.ExecuteReader();
            names = [.. Enumerable.Range(0, reader.FieldCount).Select(reader.GetName)];
            var types = Enumerable.Range(0, reader.FieldCount).Select(i => SafeTypeName(reader, i)).ToList();
            var dup = names.GroupBy(n => n, StringComparer.Ordinal).FirstOrDefault(g => g.Count() > 1);
            if (dup is not null)
            {
                diagnostics.QueryDuplicateColumn(queryAt, spec.Name, dup.Key);
                return null;
            }

            using var hash = new ResultHash(names, types);
            var maxRows = MaxRowsForTests ?? Math.Min(DataLimits.MaxQueryRows, DataLimits.MaxQueryCells / Math.Max(1, reader.FieldCount));
            while (reader.Read())
            {
                if (rows.Count == maxRows)
                {
                    diagnostics.QueryTooManyRows(queryAt, spec.Name, maxRows);
                    return null;
                }

                var values = new object?[reader.FieldCount];
                for (var i = 0; i < values.Length; i++)
                {
                    values[i] = Value(reader, i);
                }

                hash.Row(values);
                rows.Add(values);
            }

            resultSha = hash.Finish();
        }
        catch (Exception e) when (clock is { Expired: true } && e is DbException or InvalidOperationException or OperationCanceledException)
        {
            diagnostics.QueryTimedOut(queryAt, spec.Name, spec.TimeoutSeconds);
            return null;
        }
        catch (SqliteException e) when (e.SqliteErrorCode is 26 or 11)
        {
            diagnostics.DatabaseUnreadable(spec.PathLocation, spec.Path, Message(e));
            return null;
        }
        catch (Exception e) when (e is DbException or InvalidOperationException or OverflowException or NotSupportedException or InvalidCastException)
        {
            diagnostics.QueryFailed(queryAt, spec.Name, Message(e));
            return null;
        }
        finally
        {
            clock?.Dispose();
        }

        var table = new SourceTable
        {
            Names = names,
            Rows = rows,
            Lines = [.. Enumerable.Range(1, rows.Count)],
            At = (_, _) => queryAt,
            Where = (r, _) => string.Create(System.Globalization.CultureInfo.InvariantCulture, $"row {r + 1} of the query result"),
            SourceWords = spec.Format == DataFormat.Parquet ? "The Parquet file" : "The database",
        };
        var ds = TableColumns.Build(
            spec,
            table,
            sha256,
            needs,
            diagnostics,
            (at, col, near) => diagnostics.UnknownQueryColumn(at, col, spec.Name, names, near),
            queryAt);
        if (ds is null)
        {
            return null;
        }

        return spec.Query is null ? ds : ds with { Query = spec.Query, ResultSha256 = resultSha };
    }

    /// <summary>
    /// One cell of a result. SQLite text is taken from its bytes: TEXT may hold bytes that are not
    /// UTF-8, which the provider would decode with replacement characters (so that different texts
    /// read as one); they are kept as <see cref="InvalidText"/>, to be reported.
    /// </summary>
    internal static object? Value(DbDataReader reader, int i)
    {
        if (reader.IsDBNull(i))
        {
            return null;
        }

        var v = reader.GetValue(i);
        return v is string && reader is SqliteDataReader ? InvalidText.Decode(reader.GetFieldValue<byte[]>(i)) : v;
    }

    /// <summary>
    /// Opens the connection, read-only and confined to the one file; null after reporting.
    /// <paramref name="fullPath"/> is the real path (<see cref="PathGuard.Locate"/>) that was hashed;
    /// it reaches each provider as a value of its connection-string builder or as an SQL string
    /// literal, never pasted into connection-string text.
    /// </summary>
    internal static DbConnection? Open(DatasetSpec spec, string fullPath, DiagnosticBag diagnostics)
    {
        if (spec.Format == DataFormat.Parquet && fullPath.IndexOfAny(PatternCharacters) is var p && p >= 0)
        {
            diagnostics.PathPatternCharacter(spec.PathLocation, spec.Path, fullPath[p]);
            return null;
        }

        // A write-ahead log beside the database would be read with it, but only the database file is hashed.
        foreach (var side in spec.Format switch { DataFormat.Sqlite => new[] { "-wal" }, DataFormat.DuckDb => [".wal"], _ => [] })
        {
            var kind = FileKinds.Lstat(fullPath + side);
            if (kind != FileKind.Missing && !(kind == FileKind.Regular && new FileInfo(fullPath + side).Length == 0))
            {
                diagnostics.DatabaseSideFile(spec.PathLocation, spec.Path, Path.GetFileName(fullPath) + side);
                return null;
            }
        }

        try
        {
            switch (spec.Format)
            {
                case DataFormat.Sqlite:
                    {
                        var builder = new SqliteConnectionStringBuilder { DataSource = fullPath, Mode = SqliteOpenMode.ReadOnly, Pooling = false };
                        var c = new SqliteConnection(builder.ToString());
                        c.Open();
                        SQLitePCL.raw.sqlite3_limit(c.Handle, SQLitePCL.raw.SQLITE_LIMIT_ATTACHED, 0);
                        return c;
                    }

                case DataFormat.DuckDb:
                    {
                        var c = new DuckDBConnection(DuckDbConnectionString(fullPath));
                        c.Open();
                        Execute(c, $"SET enable_external_access = false; SET memory_limit = '{DuckDbMemoryLimit}'; SET lock_configuration = true;");
                        return c;
                    }

                default:
                    {
                        var c = new DuckDBConnection("Data Source=:memory:");
                        c.Open();
                        var literal = "'" + fullPath.Replace("'", "''", StringComparison.Ordinal) + "'";
                        Execute(c, $"CREATE VIEW {ParquetTable} AS SELECT * FROM read_parquet({literal}); SET allowed_paths = [{literal}]; SET enable_external_access = false; SET memory_limit = '{DuckDbMemoryLimit}'; SET lock_configuration = true;");
                        return c;
                    }
            }
        }
        catch (Exception e) when (e is DbException or InvalidOperationException or ArgumentException)
        {
            if (spec.Format == DataFormat.Parquet)
            {
                diagnostics.ParquetUnreadable(spec.PathLocation, spec.Path, Message(e));
            }
            else
            {
                diagnostics.DatabaseUnreadable(spec.PathLocation, spec.Path, Message(e));
            }

            return null;
        }
    }

    /// <summary>Characters DuckDB's file readers take as a pattern (glob) in a path.</summary>
    internal static readonly char[] PatternCharacters = ['*', '?', '['];

    /// <summary>A read-only DuckDB connection string for one database file, built by the provider's builder (values quoted as needed).</summary>
    internal static string DuckDbConnectionString(string fullPath)
    {
        var builder = new DuckDBConnectionStringBuilder { DataSource = fullPath };
        builder["ACCESS_MODE"] = "READ_ONLY";
        return builder.ConnectionString;
    }

    internal static void Execute(DbConnection c, string sql)
    {
        using var command = c.CreateCommand();
        command.CommandText = sql;
        command.ExecuteNonQuery();
    }

    internal static string Message(Exception e)
    {
        var m = e.Message.Replace("\r", string.Empty, StringComparison.Ordinal);
        var line = string.Join(" ", m.Split('\n', StringSplitOptions.RemoveEmptyEntries).Select(s => s.Trim()));
        return line.StartsWith("SQLite Error ", StringComparison.Ordinal) && line.IndexOf(": ", StringComparison.Ordinal) is var k && k > 0 ? line[(k + 2)..].TrimEnd('.').Trim('\'', ' ') : line.TrimEnd('.');
    }

    private static string SafeTypeName(DbDataReader reader, int i)
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
}
