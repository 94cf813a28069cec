using System.Globalization;
using System.Text;
using System.Text.Json;
using StudyPress.Tests.Support;

namespace StudyPress.Tests;

/// <summary>
/// <c>aggregate: true</c>: the database computes per-cell counts, means and sums of squares and the
/// anova blocks use those. The same study on the loaded rows of the same table must give the same
/// ANOVA values (to 1e-10 relative); NIST StRD SmLs09 (certified values, Reference/nist-strd-anova)
/// aggregated by DuckDB from a DECIMAL column reaches 12 digits.
/// </summary>
public sealed class SourcesAggregateTests
{
    private const string Study = """
        ---
        title: Aggregated and loaded
        data:
          raw: { path: DBFILE, query: "select plot, fert, soil, y from t order by plot" }
          agg: { path: DBFILE, query: "select plot, fert, soil, y from t order by plot", aggregate: true }
        response: y
        factors:
          fert:
          soil:
        ---

        ```anova r1
        data: raw
        factors: [fert]
        welch: yes
        ```

        ```anova a1
        data: agg
        factors: [fert]
        welch: yes
        ```

        ```anova r2
        data: raw
        factors: [fert, soil]
        ss-type: SSTYPE
        interaction: INTER
        ```

        ```anova a2
        data: agg
        factors: [fert, soil]
        ss-type: SSTYPE
        interaction: INTER
        ```
        """;

    /// <summary>An unbalanced 3 x 2 design with a missing response; values with two decimals.</summary>
    internal static List<object?[]> Rows()
    {
        var rows = new List<object?[]>();
        var plot = 0;
        string[] ferts = ["low", "mid", "high"];
        string[] soils = ["clay", "sand"];
        for (var f = 0; f < 3; f++)
        {
            for (var s = 0; s < 2; s++)
            {
                var n = 3 + ((f * 2) + s) % 4 + f;
                for (var i = 0; i < n; i++)
                {
                    // Deterministic "noise": a fixed pattern of hundredths.
                    var y = 1000m + (f * 2.5m) + (s * 1.25m) + (f * s * 0.75m) + (((plot * 37) % 23) - 11) / 10m + ((plot * 13) % 7) / 100m;
                    rows.Add([(long)plot, ferts[f], soils[s], plot == 5 ? null : y]);
                    plot++;
                }
            }
        }

        return rows;
    }

    private static string StudyText(string db, int ssType, bool interaction) => Study
        .Replace("DBFILE", db, StringComparison.Ordinal)
        .Replace("SSTYPE", ssType.ToString(CultureInfo.InvariantCulture), StringComparison.Ordinal)
        .Replace("INTER", interaction ? "true" : "false", StringComparison.Ordinal);

    internal static void SqliteDb(string path) => SourcesFixtures.Sqlite(
        path,
        "create table t (plot integer primary key, fert text, soil text, y real)",
        "insert into t (plot, fert, soil, y) values ($p0, $p1, $p2, $p3)",
        Rows().Select(r => new object?[] { r[0], r[1], r[2], r[3] is decimal d ? (double)d : null }));

    internal static void DuckDb(string path, string type)
    {
        var sb = new StringBuilder($"create table t (plot bigint, fert varchar, soil varchar, y {type}); insert into t values ");
        sb.AppendJoin(", ", Rows().Select(r => string.Create(CultureInfo.InvariantCulture, $"({r[0]}, '{r[1]}', '{r[2]}', {(r[3] is decimal d ? d.ToString(CultureInfo.InvariantCulture) : "NULL")})")));
        SourcesFixtures.DuckDb(path, sb.ToString());
    }

    public static TheoryData<string, int, bool> Cases()
    {
        var d = new TheoryData<string, int, bool>();
        foreach (var db in new[] { "sqlite", "duckdb-decimal", "duckdb-double" })
        {
            d.Add(db, 3, true);
            d.Add(db, 1, false);
            d.Add(db, 2, true);
        }

        return d;
    }

    [Theory]
    [MemberData(nameof(Cases))]
    public void Aggregate_GivesTheTableOfTheLoadedRows(string db, int ssType, bool interaction)
    {
        var file = db == "sqlite" ? "t.sqlite" : "t.duckdb";
        using var run = new StudyRun().Study(StudyText(file, ssType, interaction));
        var path = Path.Combine(run.Folder, file);
        switch (db)
        {
            case "sqlite":
                SqliteDb(path);
                break;
            case "duckdb-decimal":
                DuckDb(path, "decimal(10,2)");
                break;
            default:
                DuckDb(path, "double");
                break;
        }

        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        var m = new ManifestView(result.ManifestJson!);
        var compared = 0;
        foreach (var (raw, agg) in new[] { ("r1", "a1"), ("r2", "a2") })
        {
            foreach (var v in m.Values.Where(v => v.GetProperty("block").GetString() == raw && v.GetProperty("test").GetString() is "anova" or "welch"))
            {
                var test = v.GetProperty("test").GetString()!;
                var term = v.GetProperty("term").GetString();
                var stat = v.GetProperty("stat").GetString()!;
                if (v.GetProperty("value").ValueKind != JsonValueKind.Number)
                {
                    continue;
                }

                var expected = v.GetProperty("value").GetDouble();
                var actual = m.Get(agg, test, term, stat);
                var scale = Math.Max(Math.Abs(expected), 1e-300);
                Assert.True(Math.Abs(actual - expected) <= 1e-10 * scale, $"{db} {agg} {test} {term} {stat}: loaded {expected:R}, aggregated {actual:R}");
                compared++;
            }

            // Level means agree too.
            foreach (var v in m.Values.Where(v => v.GetProperty("block").GetString() == raw && v.GetProperty("test").GetString() == "means" && v.GetProperty("stat").GetString() is "n" or "mean"))
            {
                var expected = v.GetProperty("value").GetDouble();
                var actual = m.Get(agg, "means", v.GetProperty("term").GetString(), v.GetProperty("stat").GetString()!, v.GetProperty("level").GetString());
                Assert.True(Math.Abs(actual - expected) <= 1e-12 * Math.Abs(expected), $"{db} {agg} mean: loaded {expected:R}, aggregated {actual:R}");
            }
        }

        Assert.True(compared >= 30, "compared " + compared.ToString(CultureInfo.InvariantCulture));

        // Traceability: the aggregate query and its result hash, and the report says how the values were computed.
        var input = m.Document.RootElement.GetProperty("inputs").EnumerateArray().Single(i => i.GetProperty("name").GetString() == "agg");
        Assert.Contains("GROUP BY", input.GetProperty("query").GetString()!, StringComparison.Ordinal);
        Assert.Matches("^[0-9a-f]{64}$", input.GetProperty("resultSha256").GetString()!);
        Assert.Equal(6, input.GetProperty("rows").GetInt32());
        Assert.Contains("The database aggregated the query", result.Html!, StringComparison.Ordinal);
        Assert.Matches("aggregated the query(&#39;|')s [0-9]+ rows into [0-9]+ cells of", result.Html!);
        Assert.DoesNotContain("(s)", result.Html!, StringComparison.Ordinal);
        Assert.Contains("computed from per-cell counts, means and sums of squares computed by the database", result.Html!, StringComparison.Ordinal);
        Assert.Contains(db == "duckdb-decimal" ? "summed exactly as scaled integers" : "binary double arithmetic", result.Html!, StringComparison.Ordinal);
    }

    [Fact]
    public void Aggregate_ResultHashIsStableAndFollowsTheData()
    {
        string Hash(decimal shift)
        {
            using var run = new StudyRun().Study(StudyText("t.duckdb", 3, true));
            var path = Path.Combine(run.Folder, "t.duckdb");
            DuckDb(path, "decimal(10,2)");
            SourcesFixtures.DuckDb(path, string.Create(CultureInfo.InvariantCulture, $"update t set y = y + {shift} where plot = 0"));
            var result = run.Compile();
            Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
            return new ManifestView(result.ManifestJson!).Document.RootElement.GetProperty("inputs").EnumerateArray()
                .Single(i => i.GetProperty("name").GetString() == "agg").GetProperty("resultSha256").GetString()!;
        }

        Assert.Equal(Hash(0), Hash(0));
        Assert.NotEqual(Hash(0), Hash(0.01m));
    }

    [Fact]
    public void Aggregate_OtherBlockKinds_AreRefusedWithAReason()
    {
        using var run = new StudyRun().Study("""
            ---
            title: t
            data:
              agg: { path: t.sqlite, query: "select fert, soil, y from t", aggregate: true }
            response: y
            factors:
              fert:
            ---

            ```ranks s
            factors: [fert]
            ```
            """);
        SqliteDb(Path.Combine(run.Folder, "t.sqlite"));
        var result = run.Compile();
        Assert.False(result.Succeeded);
        Assert.Contains(result.Diagnostics, d => d.ToString().Contains("needs the rows", StringComparison.Ordinal));
    }

    [Fact]
    public void Aggregate_SqliteTextColumn_IsRefused()
    {
        using var run = new StudyRun().Study("""
            ---
            title: t
            data:
              agg: { path: t.sqlite, query: "select fert, y from t", aggregate: true }
            response: y
            factors:
              fert:
            ---

            ```anova a
            ```
            """);
        SourcesFixtures.Sqlite(Path.Combine(run.Folder, "t.sqlite"), "create table t (fert text, y text)", "insert into t values ($p0, $p1)", [["a", "1.5"], ["a", "2.5"], ["b", "about 3"], ["b", "4"]]);
        var result = run.Compile();
        Assert.False(result.Succeeded);
        Assert.Contains(result.Diagnostics, d => d.ToString().Contains("holds text", StringComparison.Ordinal));
    }

    [Fact]
    public void SmLs09_AggregatedByDuckDbFromDecimal_Reaches12Digits()
    {
        using var run = new StudyRun().Study("""
            ---
            title: NIST StRD SmLs09 aggregated by the database
            data:
              d: { path: nist.duckdb, query: "select treatment, response from smls09", aggregate: true }
            response: response
            factors:
              treatment:
            ---

            ```anova a
            welch: no
            ```
            """);
        using var certified = JsonDocument.Parse(File.ReadAllText(ReferenceFiles.PathOf("nist-strd-anova", "certified.json")));
        var entry = certified.RootElement.GetProperty("datasets").GetProperty("SmLs09");
        var lines = File.ReadAllLines(ReferenceFiles.PathOf("nist-strd-anova", "SmLs09.dat"));
        var csv = new StringBuilder("treatment,response\n");
        for (var i = entry.GetProperty("data_first_line").GetInt32() - 1; i < entry.GetProperty("data_last_line").GetInt32(); i++)
        {
            var parts = lines[i].Split(' ', StringSplitOptions.RemoveEmptyEntries);
            csv.Append(CultureInfo.InvariantCulture, $"{parts[0]},{parts[1]}\n");
        }

        var csvPath = Path.Combine(run.Folder, "load.csv");
        File.WriteAllText(csvPath, csv.ToString());
        SourcesFixtures.DuckDb(
            Path.Combine(run.Folder, "nist.duckdb"),
            "create table smls09 (treatment bigint, response decimal(18,1))",
            $"insert into smls09 select treatment::bigint, response::decimal(18,1) from read_csv({SourcesFixtures.Literal(csvPath)}, all_varchar = true)");
        File.Delete(csvPath);
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        var m = new ManifestView(result.ManifestJson!);
        var values = entry.GetProperty("certified");
        foreach (var (term, stat, key) in new[]
        {
            ("treatment", "ss", "between_ss"), ("treatment", "ms", "between_ms"), ("treatment", "f", "f_statistic"),
            ("residual", "ss", "within_ss"), ("residual", "ms", "within_ms"), ("treatment", "eta2", "r_squared"),
        })
        {
            var c = double.Parse(values.GetProperty(key).GetString()!, NumberStyles.Float, CultureInfo.InvariantCulture);
            var x = m.Get("a", "anova", term, stat);
            var lre = Accuracy.Lre(x, c);
            Assert.True(lre >= 12, $"SmLs09 {key}: got {x.ToString("R", CultureInfo.InvariantCulture)}, certified {c.ToString("R", CultureInfo.InvariantCulture)}, LRE {lre.ToString("F2", CultureInfo.InvariantCulture)}");
        }

        Assert.Equal(9, m.Document.RootElement.GetProperty("inputs")[0].GetProperty("rows").GetInt32()); // nine treatment cells
        Assert.Contains("summed exactly as scaled integers", result.Html!, StringComparison.Ordinal);
    }
}
