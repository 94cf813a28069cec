using System.Globalization;
using System.Text.Json;
using StudyPress.Tests.Support;

namespace StudyPress.Tests;

/// <summary>
/// <c>summary</c> and <c>posthoc</c> blocks on an aggregated dataset: the same study on the loaded
/// rows of the same table (block names r…) and with <c>aggregate: true</c> (a…) must give the same
/// values: summaries to 1e-10 relative (DuckDB quantiles included; SQLite computes no quantiles and
/// leaves them undefined with the reason), and every post-hoc method's values to 1e-10 relative.
/// </summary>
public sealed class SourcesAggregate2Tests
{
    private const string Study = """
        ---
        title: Aggregated and loaded, summary and posthoc
        data:
          raw: { path: DBFILE, query: "select plot, fert, soil, y from t order by plot" }
          agg: { path: DBFILE, query: "select plot, fert, soil, y from t order by plot", aggregate: true }
        response: y
        factors:
          fert:
          soil:
        report:
          figures: none
        ---

        ```summary rs1
        data: raw
        by: [fert]
        ```

        ```summary as1
        data: agg
        by: [fert]
        ```

        ```summary rs2
        data: raw
        by: [fert, soil]
        ```

        ```summary as2
        data: agg
        by: [fert, soil]
        ```

        ```summary rs3
        data: raw
        by: [soil]
        where:
          fert: [low, high]
        ```

        ```summary as3
        data: agg
        by: [soil]
        where:
          fert: [low, high]
        ```

        ```anova r1
        data: raw
        factors: [fert]
        ```

        ```anova a1
        data: agg
        factors: [fert]
        ```

        ```anova r2
        data: raw
        factors: [fert, soil]
        ```

        ```anova a2
        data: agg
        factors: [fert, soil]
        ```

        POSTHOCS
        """;

    private static readonly (string Id, string Of, string Keys)[] PostHocs =
    [
        ("tukey", "1", "method: tukey"),
        ("gh", "1", "method: games-howell"),
        ("holm", "1", "method: holm"),
        ("bonf", "1", "method: bonferroni"),
        ("dunnett", "1", "method: tukey\ncontrol: mid"),
        ("ghc", "1", "method: games-howell\ncontrol: mid"),
        ("holmc", "1", "method: holm\ncontrol: low"),
        ("ftukey", "2", "factor: soil\nmethod: tukey"),
        ("fholm", "2", "factor: fert\nmethod: holm"),
    ];

    private static string StudyText(string db)
    {
        var blocks = string.Join("\n", PostHocs.SelectMany(p => new[] { ("r", p), ("a", p) }).Select(x =>
            $"```posthoc {x.Item1}p_{x.p.Id}\nof: {x.Item1}{x.p.Of}\n{x.p.Keys}\n```\n"));
        return Study.Replace("DBFILE", db, StringComparison.Ordinal).Replace("POSTHOCS", blocks, StringComparison.Ordinal);
    }

    private static (StudyRun Run, CompileResultView Result) Build(string db, string? extra = null)
    {
        var file = db == "sqlite" ? "t.sqlite" : "t.duckdb";
        var run = new StudyRun().Study(StudyText(file) + (extra ?? string.Empty));
        var path = Path.Combine(run.Folder, file);
        switch (db)
        {
            case "sqlite":
                SourcesAggregateTests.SqliteDb(path);
                break;
            case "duckdb-decimal":
                SourcesAggregateTests.DuckDb(path, "decimal(10,2)");
                break;
            default:
                SourcesAggregateTests.DuckDb(path, "double");
                break;
        }

        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        return (run, new CompileResultView(new ManifestView(result.ManifestJson!), result.Html!));
    }

    private sealed record CompileResultView(ManifestView Manifest, string Html);

    private static string Key(JsonElement v) => string.Join(
        "|",
        v.GetProperty("test").GetString(),
        v.GetProperty("term").ToString(),
        v.GetProperty("level").ToString(),
        v.TryGetProperty("pair", out var p) ? p.ToString() : string.Empty,
        v.GetProperty("stat").GetString());

    /// <summary>Compares every value of block <paramref name="raw"/> with block <paramref name="agg"/>; returns the number compared.</summary>
    private static int Compare(ManifestView m, string raw, string agg, string db, Func<JsonElement, bool>? skip = null)
    {
        var a = m.Values.Where(v => v.GetProperty("block").GetString() == agg).ToDictionary(Key, v => v, StringComparer.Ordinal);
        var n = 0;
        foreach (var v in m.Values.Where(v => v.GetProperty("block").GetString() == raw))
        {
            if (skip?.Invoke(v) == true)
            {
                continue;
            }

            var key = Key(v);
            Assert.True(a.TryGetValue(key, out var w), $"{db} {agg}: no value {key}");
            var e = v.GetProperty("value");
            var x = w.GetProperty("value");
            Assert.Equal(e.ValueKind, x.ValueKind);
            if (e.ValueKind == JsonValueKind.Number)
            {
                var expected = e.GetDouble();
                var actual = x.GetDouble();
                Assert.True(Math.Abs(actual - expected) <= 1e-10 * Math.Abs(expected) + 1e-300, $"{db} {agg} {key}: loaded {expected:R}, aggregated {actual:R}");
            }

            n++;
        }

        Assert.Equal(n + (skip is null ? 0 : m.Values.Count(v => v.GetProperty("block").GetString() == raw && skip(v))), a.Count);
        return n;
    }

    private static bool IsQuantile(JsonElement v) => v.GetProperty("test").GetString() == "summary" && v.GetProperty("stat").GetString() is "median" or "q1" or "q3";

    [Theory]
    [InlineData("duckdb-decimal")]
    [InlineData("duckdb-double")]
    [InlineData("sqlite")]
    public void Summary_GivesTheValuesOfTheLoadedRows(string db)
    {
        var (run, r) = Build(db);
        using var _ = run;
        var sqlite = db == "sqlite";
        var n = 0;
        foreach (var (raw, agg) in new[] { ("rs1", "as1"), ("rs2", "as2"), ("rs3", "as3") })
        {
            n += Compare(r.Manifest, raw, agg, db, sqlite ? IsQuantile : null);
        }

        // 3 + 6 + 2 groups of 12 values (9 without quantiles on SQLite).
        Assert.Equal(sqlite ? 11 * 9 : 11 * 12, n);
        var missing = r.Manifest.Values.Where(v => v.GetProperty("block").GetString() == "as1" && v.GetProperty("stat").GetString() == "missing").Sum(v => v.GetProperty("value").GetDouble());
        Assert.Equal(1, missing); // plot 5 has no response
        if (sqlite)
        {
            var median = r.Manifest.Find("as1", "summary", "fert", "median", "low").Single();
            Assert.NotEqual(JsonValueKind.Number, median.GetProperty("value").ValueKind);
            Assert.Contains("the database computes no quantiles; SQLite", median.ToString(), StringComparison.Ordinal);
        }
    }

    [Theory]
    [InlineData("duckdb-decimal")]
    [InlineData("duckdb-double")]
    [InlineData("sqlite")]
    public void PostHoc_EveryMethodGivesTheValuesOfTheLoadedRows(string db)
    {
        var (run, r) = Build(db);
        using var _ = run;
        foreach (var p in PostHocs)
        {
            var n = Compare(r.Manifest, "rp_" + p.Id, "ap_" + p.Id, db);
            Assert.True(n >= 8, $"{p.Id}: compared {n.ToString(CultureInfo.InvariantCulture)}");
        }

        Assert.Contains("computed from per-level counts, means and sums of squares computed by the database", r.Html, StringComparison.Ordinal);
    }

    [Fact]
    public void PostHoc_Auto_DecidesByBartlettAndSaysDunnIsUnavailable()
    {
        var (run, r) = Build("duckdb-double", "```posthoc aauto\nof: a1\n```\n");
        using var _ = run;
        Assert.Contains("Method chosen (method: auto): Tukey's HSD, since Bartlett's test over the groups, used on aggregated data", r.Html.Replace("&#39;", "'", StringComparison.Ordinal), StringComparison.Ordinal);
        Assert.Contains("Dunn's rank comparisons are not available on aggregated data", r.Html.Replace("&#39;", "'", StringComparison.Ordinal), StringComparison.Ordinal);
        Assert.Contains(r.Manifest.Values, v => v.GetProperty("block").GetString() == "aauto" && v.GetProperty("test").GetString() == "tukey_hsd");
    }
}
