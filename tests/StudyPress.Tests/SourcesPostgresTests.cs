using System.Globalization;
using System.Text;
using System.Text.Json;
using StudyPress.Data.Sources;
using StudyPress.Tests.Support;

namespace StudyPress.Tests;

/// <summary>
/// <c>format: postgres</c> against a real, throwaway PostgreSQL server (<see cref="PostgresServer"/>):
/// loaded and aggregated results agree with each other (1e-10 relative) and with the CSV route;
/// NIST StRD SmLs09 (certified values, Reference/nist-strd-anova) from a numeric column reaches the
/// same digits as DuckDB's DECIMAL route; credentials never appear in the report, the manifest or a
/// message; the session is read-only, has a time limit and takes one statement; connection,
/// authentication and unknown-database failures are one positioned message each.
/// </summary>
[Collection("postgres")]
public sealed class SourcesPostgresTests
{
    private readonly PostgresServer server;

    public SourcesPostgresTests(PostgresServer server)
    {
        this.server = server;
        PostgresSource.EnvironmentOverride.Value = Credentials(PostgresServer.User, PostgresServer.Password);
        PostgresSource.RowLimitOverride.Value = null;
    }

    private static Func<string, string?> Credentials(string user, string password) =>
        name => name switch { "PGUSER" => user, "PGPASSWORD" => password, _ => null };

    private string Dataset(string name, string query, bool aggregate = false, string? database = null, int? port = null) =>
        string.Create(CultureInfo.InvariantCulture, $"  {name}:\n    format: postgres\n    server: 127.0.0.1\n    port: {port ?? server.Port}\n    database: {database ?? PostgresServer.Database}\n    tls: disable\n    query: \"{query}\"\n") +
        (aggregate ? "    aggregate: true\n" : string.Empty);

    private void DesignTable(string type)
    {
        var values = string.Join(", ", SourcesAggregateTests.Rows().Select(r => string.Create(CultureInfo.InvariantCulture, $"({r[0]}, '{r[1]}', '{r[2]}', {(r[3] is decimal d ? d.ToString(CultureInfo.InvariantCulture) : "NULL")})")));
        server.Table("t", $"plot bigint, fert text, soil text, y {type}", "INSERT INTO t VALUES " + values);
    }

    private static string DesignBlocks(string prefix) => string.Join(
        "\n",
        $"```anova {prefix}1\ndata: {(prefix == "r" ? "raw" : "agg")}\nfactors: [fert]\nwelch: yes\n```\n",
        $"```anova {prefix}2\ndata: {(prefix == "r" ? "raw" : "agg")}\nfactors: [fert, soil]\n```\n",
        $"```summary {prefix}s\ndata: {(prefix == "r" ? "raw" : "agg")}\nby: [fert, soil]\n```\n",
        $"```posthoc {prefix}p\nof: {prefix}1\nmethod: tukey\n```\n",
        $"```posthoc {prefix}g\nof: {prefix}1\nmethod: games-howell\n```\n");

    private static string Key(JsonElement v) => string.Join(
        "|",
        v.GetProperty("test").GetString(),
        v.GetProperty("term").ToString(),
        v.GetProperty("level").ToString(),
        v.TryGetProperty("pair", out var p) ? p.ToString() : string.Empty,
        v.GetProperty("stat").GetString());

    /// <summary>Every number of block <paramref name="a"/> in <paramref name="ma"/> against block <paramref name="b"/> in <paramref name="mb"/>, to 1e-10 relative; returns how many.</summary>
    private static int Compare(ManifestView ma, string a, ManifestView mb, string b, string what, Func<JsonElement, bool>? skip = null)
    {
        var other = mb.Values.Where(v => v.GetProperty("block").GetString() == b).ToDictionary(Key, v => v, StringComparer.Ordinal);
        var n = 0;
        var missing = new List<string>();
        foreach (var v in ma.Values.Where(v => v.GetProperty("block").GetString() == a))
        {
            if (skip?.Invoke(v) == true)
            {
                continue;
            }

            if (!other.TryGetValue(Key(v), out var w))
            {
                missing.Add(Key(v));
                continue;
            }

            Assert.Equal(v.GetProperty("value").ValueKind, w.GetProperty("value").ValueKind);
            if (v.GetProperty("value").ValueKind == JsonValueKind.Number)
            {
                var expected = v.GetProperty("value").GetDouble();
                var actual = w.GetProperty("value").GetDouble();
                Assert.True(Math.Abs(actual - expected) <= (1e-10 * Math.Abs(expected)) + 1e-300, $"{what} {a}/{b} {Key(v)}: {expected:R} vs {actual:R}");
                n++;
            }
        }

        Assert.True(missing.Count == 0, $"{what} {b}: no values " + string.Join(", ", missing));
        return n;
    }

    [PostgresTheory]
    [InlineData("numeric(10,2)", "summed exactly as scaled integers")]
    [InlineData("double precision", "binary double arithmetic")]
    public void LoadedAndAggregated_AgreeWithEachOtherAndWithCsv(string type, string note)
    {
        DesignTable(type);
        var query = "select plot, fert, soil, y from t order by plot";
        using var run = new StudyRun().Study(
            "---\ntitle: Server\ndata:\n" + Dataset("raw", query) + Dataset("agg", query, aggregate: true) +
            "response: y\nfactors:\n  fert:\n  soil:\nreport:\n  figures: none\n---\n\n" + DesignBlocks("r") + "\n" + DesignBlocks("a"));
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        var m = new ManifestView(result.ManifestJson!);

        // The CSV route over the same rows (decimal text as written).
        var csv = new StringBuilder("plot,fert,soil,y\n");
        foreach (var r in SourcesAggregateTests.Rows())
        {
            csv.Append(CultureInfo.InvariantCulture, $"{r[0]},{r[1]},{r[2]},{(r[3] is decimal d ? d.ToString(CultureInfo.InvariantCulture) : "NA")}\n");
        }

        using var csvRun = new StudyRun().File("t.csv", csv.ToString()).Study(
            "---\ntitle: CSV\ndata:\n  raw: t.csv\nresponse: y\nfactors:\n  fert:\n  soil:\nreport:\n  figures: none\n---\n\n" + DesignBlocks("r"));
        var csvResult = csvRun.Compile();
        Assert.True(csvResult.Succeeded, string.Join("\n", csvResult.Diagnostics));
        var mc = new ManifestView(csvResult.ManifestJson!);

        // The aggregated route gives no least-squares means (as with SQLite and DuckDB); everything else is compared.
        static bool LsMean(JsonElement v) => v.GetProperty("stat").GetString() == "ls_mean";
        var compared = 0;
        foreach (var block in new[] { "1", "2", "s", "p", "g" })
        {
            compared += Compare(m, "r" + block, m, "a" + block, type, LsMean);
            compared += Compare(mc, "r" + block, m, "r" + block, "csv vs server " + type);
            compared += Compare(mc, "r" + block, m, "a" + block, "csv vs aggregated " + type, LsMean);
        }

        Assert.True(compared >= 150, "compared " + compared.ToString(CultureInfo.InvariantCulture));
        Assert.Contains(note, result.Html!, StringComparison.Ordinal);

        // Traceability: server, database and query, and a result hash; no user, no password.
        var inputs = m.Document.RootElement.GetProperty("inputs").EnumerateArray().ToList();
        var raw = inputs.Single(i => i.GetProperty("name").GetString() == "raw");
        Assert.Equal($"postgresql://127.0.0.1:{server.Port.ToString(CultureInfo.InvariantCulture)}/studies", raw.GetProperty("path").GetString());
        Assert.Equal(query, raw.GetProperty("query").GetString());
        Assert.Matches("^[0-9a-f]{64}$", raw.GetProperty("resultSha256").GetString()!);
        Assert.Equal(raw.GetProperty("resultSha256").GetString(), raw.GetProperty("sha256").GetString());
        var agg = inputs.Single(i => i.GetProperty("name").GetString() == "agg");
        Assert.Contains("GROUP BY", agg.GetProperty("query").GetString()!, StringComparison.Ordinal);
        Assert.Equal(6, agg.GetProperty("rows").GetInt32());
        AssertNoCredentials(result.Html! + Encoding.UTF8.GetString(result.ManifestJson!));
    }

    [PostgresFact]
    public void ResultHash_IsStableAndFollowsTheData()
    {
        string Hash(string study)
        {
            using var run = new StudyRun().Study(study);
            var result = run.Compile();
            Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
            return new ManifestView(result.ManifestJson!).Document.RootElement.GetProperty("inputs")[0].GetProperty("resultSha256").GetString()!;
        }

        DesignTable("numeric(10,2)");
        var study = "---\ntitle: h\ndata:\n" + Dataset("d", "select fert, y from t order by plot") + "response: y\nfactors:\n  fert:\n---\n\n```anova a\n```\n";
        var first = Hash(study);
        Assert.Equal(first, Hash(study));
        server.Admin("UPDATE t SET y = y + 0.01 WHERE plot = 0");
        Assert.NotEqual(first, Hash(study));
    }

    [PostgresFact]
    public void Verify_PlainCannotReadTheServer_RecomputeReRunsTheQuery()
    {
        DesignTable("numeric(10,2)");
        using var run = new StudyRun().Study("---\ntitle: v\ndata:\n" + Dataset("d", "select fert, y from t order by plot") + "response: y\nfactors:\n  fert:\n---\n\n```anova a\n```\n");
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        StudyPress.Rendering.AtomicFile.Write(run.ReportPath, Encoding.UTF8.GetBytes(result.Html!));
        var plain = StudyPress.Reproducibility.ReportVerifier.Verify(run.ReportPath, recompute: false);
        Assert.Equal(StudyPress.Reproducibility.Freshness.Fresh, plain.State);
        Assert.Contains("'d' was not read again; --recompute re-runs the queries", plain.Detail, StringComparison.Ordinal);
        Assert.Equal(StudyPress.Reproducibility.Freshness.Fresh, StudyPress.Reproducibility.ReportVerifier.Verify(run.ReportPath, recompute: true).State);

        server.Admin("UPDATE t SET y = y + 0.5 WHERE plot = 0");
        Assert.Equal(StudyPress.Reproducibility.Freshness.Fresh, StudyPress.Reproducibility.ReportVerifier.Verify(run.ReportPath, recompute: false).State);
        var recomputed = StudyPress.Reproducibility.ReportVerifier.Verify(run.ReportPath, recompute: true);
        Assert.Equal(StudyPress.Reproducibility.Freshness.Altered, recomputed.State);
    }

    [PostgresFact]
    public void SmLs09_FromNumericColumn_ReachesTheDigitsOfTheDuckDbDecimalRoute()
    {
        using var certified = JsonDocument.Parse(File.ReadAllText(ReferenceFiles.PathOf("nist-strd-anova", "certified.json")));
        var entry = certified.RootElement.GetProperty("datasets").GetProperty("SmLs09");
        var lines = File.ReadAllLines(ReferenceFiles.PathOf("nist-strd-anova", "SmLs09.dat"));
        var rows = new List<string>();
        for (var i = entry.GetProperty("data_first_line").GetInt32() - 1; i < entry.GetProperty("data_last_line").GetInt32(); i++)
        {
            var parts = lines[i].Split(' ', StringSplitOptions.RemoveEmptyEntries);
            rows.Add($"({parts[0]}, {parts[1]})");
        }

        server.Table("smls09", "treatment integer, response numeric", "INSERT INTO smls09 VALUES " + string.Join(", ", rows));
        using var run = new StudyRun().Study(
            "---\ntitle: NIST StRD SmLs09 from a server\ndata:\n" + Dataset("d", "select treatment, response from smls09") + Dataset("g", "select treatment, response from smls09", aggregate: true) +
            "response: response\nfactors:\n  treatment:\n---\n\n```anova a\ndata: d\nwelch: no\n```\n\n```anova b\ndata: g\nwelch: no\n```\n");

        // The DuckDB DECIMAL route over the same data, for comparison of digits.
        using var duck = new StudyRun().Study("---\ntitle: duck\ndata:\n  d: { path: nist.duckdb, query: \"select treatment, response from smls09\" }\n  g: { path: nist.duckdb, query: \"select treatment, response from smls09\", aggregate: true }\nresponse: response\nfactors:\n  treatment:\n---\n\n```anova a\ndata: d\nwelch: no\n```\n\n```anova b\ndata: g\nwelch: no\n```\n");
        SourcesFixtures.DuckDb(Path.Combine(duck.Folder, "nist.duckdb"), "create table smls09 (treatment bigint, response decimal(18,1)); insert into smls09 values " + string.Join(", ", rows));
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        var duckResult = duck.Compile();
        Assert.True(duckResult.Succeeded, string.Join("\n", duckResult.Diagnostics));
        var m = new ManifestView(result.ManifestJson!);
        var md = new ManifestView(duckResult.ManifestJson!);
        var values = entry.GetProperty("certified");
        foreach (var (term, stat, key) in new[]
        {
            ("treatment", "ss", "between_ss"), ("treatment", "ms", "between_ms"), ("treatment", "f", "f_statistic"),
            ("residual", "ss", "within_ss"), ("residual", "ms", "within_ms"), ("treatment", "eta2", "r_squared"),
        })
        {
            var c = double.Parse(values.GetProperty(key).GetString()!, NumberStyles.Float, CultureInfo.InvariantCulture);
            foreach (var block in new[] { "a", "b" })
            {
                var duckLre = Accuracy.Lre(md.Get(block, "anova", term, stat), c);
                var x = m.Get(block, "anova", term, stat);
                var lre = Accuracy.Lre(x, c);
                Assert.True(lre >= 12 && lre >= Math.Min(duckLre, 15) - 0.3, $"SmLs09 {block} {key}: got {x.ToString("R", CultureInfo.InvariantCulture)}, certified {c.ToString("R", CultureInfo.InvariantCulture)}, LRE {lre.ToString("F2", CultureInfo.InvariantCulture)} (DuckDB DECIMAL {duckLre.ToString("F2", CultureInfo.InvariantCulture)})");
            }
        }

        Assert.Contains("summed exactly as scaled integers", result.Html!, StringComparison.Ordinal);
    }

    private static CompileOutcome Fails(PostgresServer server, string datasetText, string? expectCode, string? alsoContains = null)
    {
        using var run = new StudyRun().Study("---\ntitle: f\ndata:\n" + datasetText + "response: y\nfactors:\n  fert:\n---\n\n```anova a\n```\n");
        var result = run.Compile();
        Assert.False(result.Succeeded);
        var errors = result.Diagnostics.Select(d => d.ToString()).ToList();
        Assert.True(errors.Count == 1, string.Join("\n", errors));
        if (expectCode is not null)
        {
            Assert.True(expectCode == result.Diagnostics[0].Code, expectCode + " expected: " + errors[0]);
        }

        if (alsoContains is not null)
        {
            Assert.Contains(alsoContains, errors[0], StringComparison.Ordinal);
        }

        Assert.Null(result.Html);
        AssertNoCredentials(errors[0]);
        return new CompileOutcome(errors[0]);
    }

    private sealed record CompileOutcome(string Message);

    private static void AssertNoCredentials(string text)
    {
        Assert.DoesNotContain(PostgresServer.Password, text, StringComparison.Ordinal);
        Assert.DoesNotContain(PostgresServer.User, text, StringComparison.Ordinal);
        Assert.DoesNotContain("Wrong-pw-", text, StringComparison.Ordinal);
    }

    /// <summary>The start of a message at a 1-based line and column of study.md.</summary>
    private static string At(int line, int column) => string.Create(CultureInfo.InvariantCulture, $"study.md:{line}:{column}: error:");

    [PostgresFact]
    public void WrongPassword_IsOneMessageAtServer_WithoutTheCredentials()
    {
        DesignTable("numeric(10,2)");
        PostgresSource.EnvironmentOverride.Value = Credentials(PostgresServer.User, "Wrong-pw-" + PostgresServer.Password);
        var o = Fails(server, Dataset("d", "select fert, y from t"), "SP0031", "refused the credentials");
        Assert.Contains(At(6, 13), o.Message, StringComparison.Ordinal); // 'server:' value on line 6
    }

    [PostgresFact]
    public void NoPassword_IsAnAuthenticationMessage()
    {
        PostgresSource.EnvironmentOverride.Value = name => name == "PGUSER" ? PostgresServer.User : name == "PGPASSFILE" ? "/nonexistent/pgpass" : null;
        Fails(server, Dataset("d", "select fert, y from t"), "SP0031");
    }

    [PostgresFact]
    public void UnknownDatabase_IsOneMessageAtDatabase()
    {
        var o = Fails(server, Dataset("d", "select fert, y from t", database: "nosuchdb"), "SP0032", "no database 'nosuchdb'");
        Assert.Contains(At(8, 15), o.Message, StringComparison.Ordinal);
    }

    [PostgresFact]
    public void NothingListening_IsConnectionRefused()
    {
        using var l = new System.Net.Sockets.TcpListener(System.Net.IPAddress.Loopback, 0);
        l.Start();
        var port = ((System.Net.IPEndPoint)l.LocalEndpoint).Port;
        l.Stop();
        Fails(server, Dataset("d", "select fert, y from t", port: port), "SP0030", "connection refused");
    }

    [PostgresFact]
    public void SqlError_GivesTheServersMessageAndPosition()
    {
        DesignTable("numeric(10,2)");
        var o = Fails(server, Dataset("d", "select fert, y from no_such_table"), "SP0380", "relation \"no_such_table\" does not exist");
        Assert.Contains("(at character 21 of the query)", o.Message, StringComparison.Ordinal);
        Assert.Contains(At(10, 12), o.Message, StringComparison.Ordinal);
    }

    [PostgresFact]
    public void Writes_AreRefusedByTheServer()
    {
        DesignTable("numeric(10,2)");
        server.Admin($"DROP SEQUENCE IF EXISTS counter; CREATE SEQUENCE counter; GRANT USAGE, SELECT, UPDATE ON SEQUENCE counter TO {PostgresServer.User}; GRANT INSERT, UPDATE ON t TO {PostgresServer.User}");
        Fails(server, Dataset("d", "select fert, y + nextval('counter') as y from t"), "SP0381", "read-only transaction");
        Fails(server, Dataset("d", "with w as (insert into t values (999, 'low', 'clay', 1) returning fert, y) select * from w"), "SP0380");
        Fails(server, Dataset("d", "select fert, y from t; update t set y = 0"), "SP0382");
        Fails(server, Dataset("d", "select fert, y from t; update t set y = 0", aggregate: true), "SP0382");
        Assert.Equal(0L, Convert.ToInt64(server.Scalar("SELECT count(*) FROM t WHERE plot = 999 OR y = 0"), CultureInfo.InvariantCulture));
        Assert.Equal(1L, Convert.ToInt64(server.Scalar("SELECT nextval('counter')"), CultureInfo.InvariantCulture));
    }

    [PostgresFact]
    public void SemicolonInAStringOrComment_IsOneStatement()
    {
        Assert.False(PostgresSource.HasSecondStatement("select 'a;b' as x, \"c;d\" from t -- x;y\n /* ; */ where $q$;$q$ = ';'"));
        Assert.True(PostgresSource.HasSecondStatement("select 1; select 2"));
        Assert.True(PostgresSource.HasSecondStatement("select 'it''s'; select 2"));
    }

    [PostgresFact]
    public void TooManyRows_WithoutAggregate_IsOneMessage_WithAggregate_IsFine()
    {
        DesignTable("numeric(10,2)");
        PostgresSource.RowLimitOverride.Value = 20;
        Fails(server, Dataset("d", "select fert, y from t"), "SP0383", "more than 20 rows");
        using var run = new StudyRun().Study("---\ntitle: n\ndata:\n" + Dataset("d", "select fert, y from t", aggregate: true) + "response: y\nfactors:\n  fert:\n---\n\n```anova a\n```\n");
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        PostgresSource.RowLimitOverride.Value = 31;
        using var exact = new StudyRun().Study("---\ntitle: n\ndata:\n" + Dataset("d", "select fert, y from t") + "response: y\nfactors:\n  fert:\n---\n\n```anova a\n```\n");
        Assert.Equal(31, SourcesAggregateTests.Rows().Count);
        Assert.True(exact.Compile().Succeeded);
    }

    [PostgresFact]
    public void TlsRequired_ButTheServerHasNone_IsOneMessageAtServer()
    {
        var o = Fails(server, Dataset("d", "select fert, y from t").Replace("tls: disable", "tls: require", StringComparison.Ordinal), "SP0034", "TLS");
        Assert.Contains(At(6, 13), o.Message, StringComparison.Ordinal);
    }

    [PostgresFact]
    public void NumericBeyondDecimal_IsOneMessage_NotACrash()
    {
        DesignTable("numeric(10,2)");
        var o = Fails(server, Dataset("d", "select fert, y + 0.000000000000000000000000000001 as y from t"), "SP0380");
        Assert.Contains("dataset 'd'", o.Message, StringComparison.Ordinal);
    }

    [PostgresFact]
    public void LongQuery_IsCancelledAtTheTimeLimit()
    {
        DesignTable("numeric(10,2)");
        Fails(server, Dataset("d", "select fert, y from t, pg_sleep(5)") + "    timeout: 1\n", "SP0033", "time limit of 1 s");
        Fails(server, Dataset("d", "select fert, y from t, pg_sleep(5)", aggregate: true) + "    timeout: 1\n", "SP0033");
    }

    [PostgresFact]
    public void HeaderMistakes_AreOneMessageEach()
    {
        string Code(string data)
        {
            using var run = new StudyRun().File("t.csv", "fert,y\na,1\nb,2\n").Study("---\ntitle: k\ndata:\n" + data + "response: y\nfactors:\n  fert:\n---\n\n```anova a\n```\n");
            var result = run.Compile();
            Assert.False(result.Succeeded);
            Assert.True(result.Diagnostics.Count == 1, string.Join("\n", result.Diagnostics));
            return result.Diagnostics[0].Code + " " + result.Diagnostics[0].Location.Line.ToString(CultureInfo.InvariantCulture);
        }

        Assert.Equal("SP0320 10", Code(Dataset("d", "select fert, y from t") + "    path: t.csv\n"));
        Assert.Equal("SP0320 10", Code(Dataset("d", "select fert, y from t") + "    sha256: " + new string('a', 64) + "\n"));
        Assert.Equal("SP0320 5", Code("  d:\n    path: t.csv\n    server: 127.0.0.1\n"));
        Assert.Equal("SP0202 4", Code("  d:\n    format: postgres\n    server: 127.0.0.1\n    query: \"select 1\"\n"));
    }

    [PostgresFact]
    public void Pin_LeavesTheServerDatasetAlone_AndPinsTheFiles()
    {
        using var run = new StudyRun().File("t.csv", "fert,y\na,1\nb,2\n").Study("---\ntitle: p\ndata:\n  c:\n    path: t.csv\n" + Dataset("d", "select fert, y from t") + "response: y\nfactors:\n  fert:\n---\n\n```anova a\ndata: c\n```\n");
        var bag = new StudyPress.Diagnostics.DiagnosticBag();
        Assert.True(StudyPress.Reproducibility.StudyPins.PinFile(run.StudyPath, allowOutside: false, bag), string.Join("\n", bag.Items));
        var text = File.ReadAllText(run.StudyPath);
        Assert.Single(System.Text.RegularExpressions.Regex.Matches(text, "sha256: [0-9a-f]{64}"));
        Assert.True(text.IndexOf("sha256:", StringComparison.Ordinal) < text.IndexOf("format: postgres", StringComparison.Ordinal));
    }

    [PostgresFact]
    public void PasswordKey_AndPathKey_AreNotStudyKeys()
    {
        using var run = new StudyRun().Study("---\ntitle: k\ndata:\n" + Dataset("d", "select fert, y from t") + "    password: x\nresponse: y\nfactors:\n  fert:\n---\n\n```anova a\n```\n");
        var result = run.Compile();
        Assert.False(result.Succeeded);
        Assert.Contains(result.Diagnostics, d => d.ToString().Contains("password", StringComparison.Ordinal));
    }
}

/// <summary>The theory form of <see cref="PostgresFactAttribute"/>.</summary>
public sealed class PostgresTheoryAttribute : TheoryAttribute
{
    public PostgresTheoryAttribute()
    {
        if (PostgresAvailability.SkipReason is { } reason)
        {
            Skip = reason;
        }
    }
}
