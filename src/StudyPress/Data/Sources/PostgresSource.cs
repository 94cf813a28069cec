using System.Data.Common;
using System.Globalization;
using System.Net.Sockets;
using Npgsql;
using StudyPress.Binding;
using StudyPress.Diagnostics;

namespace StudyPress.Data.Sources;

/// <summary>
/// A dataset read from a PostgreSQL server (<c>format: postgres</c>). The study names server, port,
/// database and query; the user name and password come from the environment (PGUSER, PGPASSWORD)
/// or the password file (PGPASSFILE, else ~/.pgpass), through Npgsql's connection-string builder,
/// and never reach the report, the manifest or a message.
/// <para>
/// Every session is read-only (<c>default_transaction_read_only</c> and an explicit
/// <c>BEGIN TRANSACTION READ ONLY</c>) with a server-side <c>statement_timeout</c> of the dataset's
/// <c>timeout</c> (default 60 s, as for the other databases); the query must be one statement; a loaded (not aggregated)
/// result may have at most <see cref="MaxLoadedRows"/> rows. With <c>aggregate: true</c> the server
/// computes the per-cell summaries (<see cref="PostgresAggregate"/>).
/// </para>
/// <para>
/// The server has no file hash: the dataset's "path" is <c>postgresql://host:port/database</c> and its
/// SHA-256 is the result's SHA-256 in the canonical form of <see cref="ResultHash"/>, also recorded as
/// <c>resultSha256</c>.
/// </para>
/// </summary>
public static class PostgresSource
{
    /// <summary>
    /// The most rows loaded from a server without <c>aggregate: true</c>: about 330 MB of memory
    /// (2 000 000 rows of three columns measured at 617 MB peak for the whole build).
    /// </summary>
    public const long MaxLoadedRows = 1_000_000;

    /// <summary>For tests: the environment the credentials are read from (null: the process environment).</summary>
    internal static readonly AsyncLocal<Func<string, string?>?> EnvironmentOverride = new();

    /// <summary>For tests: a smaller row limit (null: <see cref="MaxLoadedRows"/>).</summary>
    internal static readonly AsyncLocal<long?> RowLimitOverride = new();

    internal static long RowLimit => RowLimitOverride.Value ?? MaxLoadedRows;

    public static LoadedDataset? Load(DatasetSpec spec, DatasetNeeds needs, DiagnosticBag diagnostics)
    {
        var queryAt = spec.QueryLocation ?? spec.PathLocation;
        var userQuery = UserQuery(spec);
        if (HasSecondStatement(userQuery))
        {
            diagnostics.ServerMultipleStatements(queryAt, spec.Name);
            return null;
        }

        if (spec.Aggregate)
        {
            return PostgresAggregate.Load(spec, userQuery, needs, diagnostics);
        }

        var sql = "SELECT * FROM (" + userQuery + ") AS src LIMIT " + (MaxLoadedRows + 1).ToString(CultureInfo.InvariantCulture);
        List<string> names;
        var rows = new List<object?[]>();
        string resultSha;
        using (var connection = Open(spec, diagnostics))
        {
            if (connection is null)
            {
                return null;
            }

            try
            {
                using var command = Command(connection, sql);
                using var reader = command.ExecuteReader();
                names = [.. Enumerable.Range(0, reader.FieldCount).Select(reader.GetName)];
                var types = Enumerable.Range(0, reader.FieldCount).Select(reader.GetDataTypeName).ToList();
                var dup = names.GroupBy(n => n, StringComparer.Ordinal).FirstOrDefault(g => g.Count() > 1);
                if (dup is not null)
                {
                    diagnostics.QueryDuplicateColumn(queryAt, spec.Name, dup.Key);
                    return null;
                }

                using var hash = new ResultHash(names, types);
                while (reader.Read())
                {
                    if (rows.Count >= RowLimit)
                    {
                        diagnostics.ServerTooManyRows(queryAt, spec.Name, RowLimit);
                        return null;
                    }

                    var values = new object?[reader.FieldCount];
                    for (var i = 0; i < values.Length; i++)
                    {
                        values[i] = reader.IsDBNull(i) ? null : reader.GetValue(i);
                    }

                    hash.Row(values);
                    rows.Add(values);
                }

                resultSha = hash.Finish();
            }
            catch (Exception e) when (IsQueryError(e))
            {
                ReportQueryError(spec, e, sql, userQuery, diagnostics);
                return null;
            }
        }

        var table = new SourceTable
        {
            Names = names,
            Rows = rows,
            Lines = [.. Enumerable.Range(1, rows.Count)],
            At = (_, _) => queryAt,
            Where = (r, _) => string.Create(CultureInfo.InvariantCulture, $"row {r + 1} of the query result"),
            SourceWords = "The server",
        };
        var ds = TableColumns.Build(
            spec,
            table,
            resultSha,
            needs,
            diagnostics,
            (at, col, near) => diagnostics.UnknownQueryColumn(at, col, spec.Name, names, near),
            queryAt);
        // A server has no file: the input's hash is the result's.
        return ds is null ? null : ds with { Path = ds.Spec.Path, Sha256 = resultSha, Query = spec.Query!, ResultSha256 = resultSha };
    }

    /// <summary>The study's query without trailing blanks and semicolons.</summary>
    internal static string UserQuery(DatasetSpec spec) => (spec.Query ?? string.Empty).TrimEnd().TrimEnd(';').TrimEnd();

    /// <summary>
    /// Opens a read-only session on the dataset's server, or reports why not (at <c>server</c> or
    /// <c>database</c>) and returns null. The caller disposes it.
    /// </summary>
    internal static NpgsqlConnection? Open(DatasetSpec spec, DiagnosticBag diagnostics)
    {
        var target = spec.Server!;
        var builder = ConnectionString(target, spec.TimeoutSeconds);
        var connection = new NpgsqlConnection(builder.ConnectionString);
        try
        {
            connection.Open();
            using (var begin = Command(connection, "BEGIN TRANSACTION READ ONLY"))
            {
                begin.ExecuteNonQuery();
            }

            return connection;
        }
        catch (Exception e) when (e is NpgsqlException or InvalidOperationException or ArgumentException or TimeoutException or SocketException or IOException or UnauthorizedAccessException)
        {
            connection.Dispose();
            var server = target.Display;
            var secrets = Secrets(builder);
            switch (e)
            {
                case PostgresException { SqlState: "28P01" }:
                    diagnostics.ServerAuthenticationFailed(target.ServerLocation, server, "password authentication failed");
                    break;
                case PostgresException { SqlState: "28000" }:
                    diagnostics.ServerAuthenticationFailed(target.ServerLocation, server, "the server does not accept this user from this address");
                    break;
                case PostgresException { SqlState: "3D000" }:
                    diagnostics.ServerUnknownDatabase(target.DatabaseLocation, target.Database, server);
                    break;
                case IOException or UnauthorizedAccessException:
                    diagnostics.ServerAuthenticationFailed(target.ServerLocation, server, "the password file named by PGPASSFILE cannot be read");
                    break;
                case NpgsqlException n when n.Message.Contains("password", StringComparison.OrdinalIgnoreCase):
                    diagnostics.ServerAuthenticationFailed(target.ServerLocation, server, "no password was given, and the server asks for one");
                    break;
                case NpgsqlException n when n.InnerException is System.Security.Authentication.AuthenticationException || n.Message.Contains("SSL", StringComparison.Ordinal):
                    diagnostics.ServerTlsFailed(target.ServerLocation, server, Scrub(DatabaseSource.Message(n.InnerException ?? n), secrets));
                    break;
                default:
                    diagnostics.ServerUnreachable(target.ServerLocation, server, Reason(e, secrets));
                    break;
            }

            return null;
        }
    }

    internal static NpgsqlConnectionStringBuilder ConnectionString(PostgresTarget target, int seconds)
    {
        var builder = new NpgsqlConnectionStringBuilder
        {
            Host = target.Host,
            Port = target.Port,
            Database = target.Database,
            SslMode = target.Tls switch
            {
                "disable" => SslMode.Disable,
                "allow" => SslMode.Allow,
                "require" => SslMode.Require,
                "verify-ca" => SslMode.VerifyCA,
                "verify-full" => SslMode.VerifyFull,
                _ => SslMode.Prefer,
            },
            Pooling = false,
            Timeout = 15,
            CommandTimeout = seconds + 15,
            ApplicationName = "studypress",
            Options = string.Create(CultureInfo.InvariantCulture, $"-c default_transaction_read_only=on -c statement_timeout={seconds * 1000}"),
        };
        if (Env("PGUSER") is { Length: > 0 } user)
        {
            builder.Username = user;
        }

        if (Env("PGPASSWORD") is { Length: > 0 } password)
        {
            builder.Password = password;
        }

        if (Env("PGPASSFILE") is { Length: > 0 } passfile)
        {
            builder.Passfile = passfile;
        }

        return builder;
    }

    /// <summary>A command with the connection's client-side timeout (the server's statement_timeout acts first).</summary>
    internal static NpgsqlCommand Command(NpgsqlConnection connection, string sql) => new(sql, connection);

    internal static bool IsQueryError(Exception e) =>
        e is NpgsqlException or InvalidOperationException or OverflowException or NotSupportedException or InvalidCastException or FormatException or TimeoutException;

    /// <summary>Reports a failed query at the dataset's <c>query</c>: time limit, attempted write, or the server's message with its position in the user's query.</summary>
    internal static void ReportQueryError(DatasetSpec spec, Exception e, string sql, string userQuery, DiagnosticBag diagnostics)
    {
        var queryAt = spec.QueryLocation ?? spec.PathLocation;
        var secrets = Secrets(ConnectionString(spec.Server!, spec.TimeoutSeconds));
        switch (e)
        {
            case PostgresException { SqlState: "57014" }:
            case NpgsqlException { InnerException: TimeoutException }:
                diagnostics.ServerTimeLimit(queryAt, spec.Name, spec.TimeoutSeconds);
                return;
            case PostgresException { SqlState: "25006" } p:
                diagnostics.ServerReadOnly(queryAt, spec.Name, Scrub(p.MessageText, secrets));
                return;
            case PostgresException p:
                {
                    int? position = null;
                    var start = sql.IndexOf(userQuery, StringComparison.Ordinal);
                    if (p.Position > 0 && start >= 0 && p.Position - 1 >= start && p.Position - 1 < start + userQuery.Length)
                    {
                        position = p.Position - start;
                    }

                    diagnostics.ServerQueryFailed(queryAt, spec.Name, Scrub(p.MessageText, secrets), position);
                    return;
                }

            default:
                diagnostics.ServerQueryFailed(queryAt, spec.Name, Scrub(DatabaseSource.Message(e), secrets), null);
                return;
        }
    }

    /// <summary>Whether the query has a ';' that ends one statement and starts another (outside quotes, comments and dollar quoting).</summary>
    internal static bool HasSecondStatement(string sql)
    {
        var i = 0;
        while (i < sql.Length)
        {
            var c = sql[i];
            if (c == '\'' || c == '"')
            {
                var close = sql.IndexOf(c, i + 1);
                while (close >= 0 && close + 1 < sql.Length && sql[close + 1] == c)
                {
                    close = sql.IndexOf(c, close + 2);
                }

                i = close < 0 ? sql.Length : close + 1;
            }
            else if (c == '-' && i + 1 < sql.Length && sql[i + 1] == '-')
            {
                var end = sql.IndexOf('\n', i);
                i = end < 0 ? sql.Length : end + 1;
            }
            else if (c == '/' && i + 1 < sql.Length && sql[i + 1] == '*')
            {
                var end = sql.IndexOf("*/", i + 2, StringComparison.Ordinal);
                i = end < 0 ? sql.Length : end + 2;
            }
            else if (c == '$' && DollarTag(sql, i) is { } tag)
            {
                var end = sql.IndexOf(tag, i + tag.Length, StringComparison.Ordinal);
                i = end < 0 ? sql.Length : end + tag.Length;
            }
            else if (c == ';')
            {
                return true;
            }
            else
            {
                i++;
            }
        }

        return false;
    }

    private static string? DollarTag(string sql, int i)
    {
        if (i > 0 && (char.IsAsciiLetterOrDigit(sql[i - 1]) || sql[i - 1] == '_'))
        {
            return null;
        }

        var j = i + 1;
        while (j < sql.Length && (char.IsAsciiLetterOrDigit(sql[j]) || sql[j] == '_'))
        {
            j++;
        }

        return j < sql.Length && sql[j] == '$' && !(j > i + 1 && char.IsAsciiDigit(sql[i + 1])) ? sql[i..(j + 1)] : null;
    }

    private static string? Env(string name) => (EnvironmentOverride.Value ?? Environment.GetEnvironmentVariable)(name);

    private static string[] Secrets(NpgsqlConnectionStringBuilder builder) =>
        [.. new[] { builder.Password, builder.Username }.Where(s => !string.IsNullOrEmpty(s)).Select(s => s!)];

    /// <summary>The text with any credential replaced, so a server message that quotes the user or password does not show it.</summary>
    internal static string Scrub(string text, string[] secrets)
    {
        foreach (var s in secrets.OrderByDescending(s => s.Length))
        {
            text = text.Replace(s, "(user)", StringComparison.Ordinal);
        }

        return text;
    }

    private static string Reason(Exception e, string[] secrets)
    {
        for (var x = e; x is not null; x = x.InnerException)
        {
            if (x is SocketException s)
            {
                return s.SocketErrorCode switch
                {
                    SocketError.ConnectionRefused => "connection refused (is the server running, and listening on that port?)",
                    SocketError.HostNotFound or SocketError.NoData or SocketError.TryAgain => "unknown host name",
                    SocketError.TimedOut => "no answer (timed out)",
                    _ => Scrub(s.Message, secrets),
                };
            }

            if (x is TimeoutException)
            {
                return "no answer (timed out)";
            }
        }

        return Scrub(DatabaseSource.Message(e), secrets);
    }
}
