using System.Globalization;
using System.Text;
using System.Text.Json;
using StudyPress.Tests.Support;

namespace StudyPress.Tests;

/// <summary>
/// Datasets read from spreadsheets, SQLite and DuckDB databases and Parquet files: the same numbers
/// give the same manifest values as CSV, messages point at the cell or the query, and the manifest
/// records the query and the SHA-256 of its result.
/// </summary>
public sealed class SourcesTests
{
    private static readonly string[] Nozzles = ["flat-fan", "hollow-cone", "full-cone"];

    /// <summary>Invented data: 18 panels, 3 nozzles, thickness in µm with two decimals, a run order.</summary>
    private static List<(string Nozzle, int Run, decimal Thickness)> Panels()
    {
        var rows = new List<(string, int, decimal)>();
        for (var i = 0; i < 18; i++)
        {
            var nozzle = Nozzles[i % 3];
            var thickness = 40m + (i % 3 * 2.5m) + (((i * 7) % 11) * 0.37m) - 1.01m;
            rows.Add((nozzle, ((i * 5) % 18) + 1, thickness));
        }

        return rows;
    }

    private const string Blocks = """

        ```summary groups
        ```

        ```anova main
        factors: [nozzle]
        welch: yes
        ```

        ```assumptions checks
        of: main
        ```

        ```posthoc pairs
        of: main
        method: tukey
        ```
        """;

    private static string StudyWith(string dataEntry) => $"""
        ---
        title: Source check
        data:
          panels: {dataEntry}
        response: thickness
        factors:
          nozzle:
        order: run
        ---
        {Blocks}
        """;

    private static string ValuesOf(byte[] manifest)
    {
        using var doc = JsonDocument.Parse(manifest);
        return doc.RootElement.GetProperty("values").GetRawText();
    }

    private static JsonElement InputOf(byte[] manifest)
    {
        using var doc = JsonDocument.Parse(manifest);
        return doc.RootElement.GetProperty("inputs")[0].Clone();
    }

    private static byte[] Build(StudyRun run)
    {
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        return result.ManifestJson!;
    }

    [Fact]
    public void SameData_FromCsvXlsxSqliteDuckDbParquet_GivesIdenticalValues()
    {
        var panels = Panels();
        var csv = new StringBuilder("nozzle,run,thickness\n");
        foreach (var (n, r, t) in panels)
        {
            csv.Append(CultureInfo.InvariantCulture, $"{n},{r},{t}\n");
        }

        using var csvRun = new StudyRun().File("panels.csv", csv.ToString()).Study(StudyWith("panels.csv"));
        var reference = ValuesOf(Build(csvRun));
        Assert.Contains("\"anova\"", reference, StringComparison.Ordinal);

        // Spreadsheet: numbers as number cells, written with the Open XML SDK.
        using var xlsxRun = new StudyRun().Study(StudyWith("{ path: trial.xlsx, sheet: Plots }"));
        SourcesFixtures.WriteXlsx(Path.Combine(xlsxRun.Folder, "trial.xlsx"), "Plots", ["nozzle", "run", "thickness"], panels.Select(p => new object?[] { p.Nozzle, p.Run, p.Thickness }));
        var xlsx = Build(xlsxRun);
        Assert.Equal(reference, ValuesOf(xlsx));

        // SQLite: thickness as REAL (binary doubles), run as INTEGER.
        using var sqliteRun = new StudyRun().Study(StudyWith("{ path: results.sqlite, query: \"select nozzle, run, thickness from panels order by rowid\" }"));
        SourcesFixtures.Sqlite(
            Path.Combine(sqliteRun.Folder, "results.sqlite"),
            "create table panels (nozzle text, run integer, thickness real)",
            "insert into panels values ($p0, $p1, $p2)",
            panels.Select(p => new object?[] { p.Nozzle, p.Run, (double)p.Thickness }));
        var sqlite = Build(sqliteRun);
        Assert.Equal(reference, ValuesOf(sqlite));

        // DuckDB: thickness as DECIMAL(6,2), run as BIGINT; and a Parquet file written by DuckDB COPY.
        using var duckRun = new StudyRun().Study(StudyWith("{ path: results.duckdb, query: \"select nozzle, run, thickness from panels order by id\" }"));
        var duckPath = Path.Combine(duckRun.Folder, "results.duckdb");
        var parquetPath = Path.Combine(duckRun.Folder, "runs.parquet");
        var inserts = string.Join(", ", panels.Select((p, i) => string.Create(CultureInfo.InvariantCulture, $"({i}, '{p.Nozzle}', {p.Run}, {p.Thickness})")));
        SourcesFixtures.DuckDb(
            duckPath,
            "create table panels (id integer, nozzle varchar, run bigint, thickness decimal(6,2))",
            "insert into panels values " + inserts,
            $"copy (select nozzle, run, thickness from panels order by id) to {SourcesFixtures.Literal(parquetPath)} (format parquet)");
        var duck = Build(duckRun);
        Assert.Equal(reference, ValuesOf(duck));

        duckRun.Study(StudyWith("runs.parquet"));
        var parquet = Build(duckRun);
        Assert.Equal(reference, ValuesOf(parquet));

        duckRun.Study(StudyWith("{ path: runs.parquet, query: \"select * from source where thickness > 0\" }"));
        Assert.Equal(reference, ValuesOf(Build(duckRun)));

        // Identity: the query and a 64-hex result hash for queries, none for files read whole.
        var input = InputOf(sqlite);
        Assert.Equal("select nozzle, run, thickness from panels order by rowid", input.GetProperty("query").GetString());
        Assert.Matches("^[0-9a-f]{64}$", input.GetProperty("resultSha256").GetString()!);
        Assert.False(InputOf(xlsx).TryGetProperty("query", out _));
        Assert.False(InputOf(parquet).TryGetProperty("resultSha256", out _));
    }

    [Fact]
    public void ResultHash_SameResultSameHash_ChangedResultOtherHash()
    {
        using var run = new StudyRun().Study(StudyWith("{ path: results.sqlite, query: \"select * from panels\" }"));
        var db = Path.Combine(run.Folder, "results.sqlite");
        var panels = Panels();
        SourcesFixtures.Sqlite(db, "create table panels (nozzle text, run integer, thickness text)", "insert into panels values ($p0, $p1, $p2)", panels.Select(p => new object?[] { p.Nozzle, p.Run, p.Thickness.ToString(CultureInfo.InvariantCulture) }));
        var first = InputOf(Build(run)).GetProperty("resultSha256").GetString();
        Assert.Equal(first, InputOf(Build(run)).GetProperty("resultSha256").GetString());

        // "40.10" and "40.1" are the same number but not the same result.
        using (var c = new Microsoft.Data.Sqlite.SqliteConnection(new Microsoft.Data.Sqlite.SqliteConnectionStringBuilder { DataSource = db, Pooling = false }.ToString()))
        {
            c.Open();
            using var cmd = c.CreateCommand();
            cmd.CommandText = "update panels set thickness = thickness || '0' where rowid = 1";
            cmd.ExecuteNonQuery();
        }

        var second = InputOf(Build(run));
        Assert.NotEqual(first, second.GetProperty("resultSha256").GetString());
    }

    [Fact]
    public void Report_NotesBinaryDoubles_ForRealColumnNotForTextColumn()
    {
        using var run = new StudyRun().Study(StudyWith("{ path: results.sqlite, query: \"select * from panels\" }"));
        var db = Path.Combine(run.Folder, "results.sqlite");
        SourcesFixtures.Sqlite(db, "create table panels (nozzle text, run integer, thickness real)", "insert into panels values ($p0, $p1, $p2)", Panels().Select(p => new object?[] { p.Nozzle, p.Run, (double)p.Thickness }));
        var html = run.Compile().Html!;
        Assert.Contains("held binary doubles in column &#39;thickness&#39;", html.Replace("'", "&#39;", StringComparison.Ordinal), StringComparison.Ordinal);

        using var text = new StudyRun().Study(StudyWith("{ path: results.sqlite, query: \"select * from panels\" }"));
        SourcesFixtures.Sqlite(Path.Combine(text.Folder, "results.sqlite"), "create table panels (nozzle text, run integer, thickness text)", "insert into panels values ($p0, $p1, $p2)", Panels().Select(p => new object?[] { p.Nozzle, p.Run, p.Thickness.ToString(CultureInfo.InvariantCulture) }));
        var plain = text.Compile().Html!;
        Assert.DoesNotContain("binary doubles", plain, StringComparison.Ordinal);
        Assert.Contains("rows from the query", plain, StringComparison.Ordinal);
    }

    [Fact]
    public void ResultHash_CanonicalForm_IsTheDocumentedBytes()
    {
        using var h = new StudyPress.Data.Sources.ResultHash(["n"], ["INTEGER"]);
        h.Row([1L]);
        h.Row([null]);
        var expected = Convert.ToHexStringLower(System.Security.Cryptography.SHA256.HashData(Encoding.UTF8.GetBytes("studypress-resultset/1\nc1:ny7:INTEGER\ni1:1\nn0:\n")));
        Assert.Equal(expected, h.Finish());
    }
}
