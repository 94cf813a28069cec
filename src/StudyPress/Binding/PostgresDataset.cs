using StudyPress.Diagnostics;
using StudyPress.Syntax;

namespace StudyPress.Binding;

/// <summary>
/// Where a <c>format: postgres</c> dataset reads: server (host name or address), port, database and
/// TLS mode, with the places they are written. Never a user name or password: those come from the
/// environment or the password file (see docs/data-sources.md).
/// </summary>
public sealed record PostgresTarget(string Host, int Port, string Database, string Tls, SourceLocation ServerLocation, SourceLocation DatabaseLocation)
{
    /// <summary>The dataset's "path" in the manifest and the report: <c>postgresql://host:port/database</c> (no user, no password).</summary>
    public string Display => "postgresql://" + (Host.Contains(':', StringComparison.Ordinal) ? "[" + Host + "]" : Host) + ":" + Port.ToString(System.Globalization.CultureInfo.InvariantCulture) + "/" + Database;
}

/// <summary>Binds a dataset entry with <c>format: postgres</c>: server, port, database, tls, query, aggregate, missing.</summary>
internal static class PostgresDataset
{
    /// <summary>The keys only a PostgreSQL dataset has.</summary>
    public static readonly string[] OwnKeys = ["server", "port", "database", "tls"];

    /// <summary>The TLS modes, as libpq names them (sslmode).</summary>
    public static readonly string[] TlsModes = ["disable", "allow", "prefer", "require", "verify-ca", "verify-full"];

    /// <summary>Prefix of a manifest input path that names a server, not a file.</summary>
    public const string Scheme = "postgresql://";

    public static DatasetSpec? Bind(string name, SourceLocation location, YMapping m, KeyReader r, DiagnosticBag diagnostics)
    {
        r.Choice("format", ["postgres"]);
        foreach (var key in new[] { "path", "sha256", "delimiter", "decimal", "sheet", "range", "header-row" })
        {
            if (r.Has(key))
            {
                diagnostics.SourceKeyNotApplicable(r.KeyLocation(key), key, name, key == "sha256" ? "a file (a server has no file hash; the report records the result's SHA-256)" : "a file");
            }
        }

        var server = r.Scalar("server");
        var database = r.Scalar("database");
        var query = r.Scalar("query");
        var port = r.Integer("port", 1, 65535) ?? 5432;
        var tls = r.Choice("tls", TlsModes) ?? "prefer";
        var timeout = r.Integer("timeout", 1, Data.DataLimits.MaxQueryTimeoutSeconds) ?? Data.DataLimits.DefaultQueryTimeoutSeconds;
        var aggregateLocation = r.Has("aggregate") ? r.KeyLocation("aggregate") : (SourceLocation?)null;
        var aggregate = r.Boolean("aggregate") ?? false;
        var missing = r.ScalarList("missing");
        var ok = true;
        foreach (var (key, node) in new[] { ("server", server), ("database", database), ("query", query) })
        {
            if (node is null || node.Value.Trim().Length == 0)
            {
                diagnostics.MissingKey(node?.Location ?? m.Location, key, $"dataset '{name}' (format: postgres)");
                ok = false;
            }
        }

        if (!ok)
        {
            return null;
        }

        var target = new PostgresTarget(server!.Value.Trim(), port, database!.Value.Trim(), tls, server.Location, database.Location);
        return new DatasetSpec(name, target.Display, null, ',', '.', missing?.Select(x => x.Value).ToList() ?? ["", "NA", "N/A", "."], location, database.Location, null)
        {
            Format = DataFormat.Postgres,
            Query = query!.Value,
            QueryLocation = query.Location,
            Aggregate = aggregate,
            AggregateLocation = aggregateLocation,
            Server = target,
            TimeoutSeconds = timeout,
        };
    }
}
