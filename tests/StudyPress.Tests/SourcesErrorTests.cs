using System.Globalization;
using StudyPress.Tests.Support;

namespace StudyPress.Tests;

/// <summary>Messages for spreadsheet, database and Parquet datasets: FILE:LINE:COLUMN, the cell or the query named.</summary>
[Collection("cli")]
public sealed class SourcesErrorTests
{
    private static string Study(string entry, string response = "thickness") => $"""
        ---
        title: Errors
        data:
          panels: {entry}
        response: {response}
        factors:
          nozzle:
        ---

        ```anova main
        factors: [nozzle]
        ```
        """;

    private static IEnumerable<object?[]> Rows(int n = 12) =>
        Enumerable.Range(0, n).Select(i => new object?[] { i % 2 == 0 ? "flat-fan" : "hollow-cone", i + 1, 40m + (i * 0.25m) });

    private static string Errors(StudyRun run)
    {
        var result = run.Compile();
        Assert.False(result.Succeeded);
        return string.Join("\n", result.Diagnostics);
    }

    private static StudyRun Sqlite(string entry, string response = "thickness")
    {
        var run = new StudyRun().Study(Study(entry, response));
        SourcesFixtures.Sqlite(Path.Combine(run.Folder, "results.sqlite"), "create table panels (nozzle text, run integer, thickness real)", "insert into panels values ($p0, $p1, $p2)", Rows());
        return run;
    }

    [Fact]
    public void Spreadsheet_TextInNumberColumn_PointsAtRowAndColumnAndNamesTheCell()
    {
        using var run = new StudyRun().Study(Study("{ path: trial.xlsx, sheet: Plots }"));
        var rows = Rows().ToList();
        rows[12 - 1] = ["hollow-cone", 12, "about 41"];
        SourcesFixtures.WriteXlsx(Path.Combine(run.Folder, "trial.xlsx"), "Plots", ["nozzle", "run", "thickness"], rows);
        var errors = Errors(run);

        // Header in row 1, so data row 12 is sheet row 13; thickness is column C (3).
        Assert.EndsWith("trial.xlsx:13:3: error: 'about 41' is not a number in column 'thickness' (cell Plots!C13)", errors, StringComparison.Ordinal);
    }

    [Fact]
    public void Spreadsheet_RangeAndHeaderRow_ReadOnlyThatBlock()
    {
        using var run = new StudyRun().Study(Study("{ path: trial.xlsx, sheet: Plots, range: B3:D15, header-row: 3 }"));
        var rows = Rows().ToList();
        SourcesFixtures.WriteXlsx(Path.Combine(run.Folder, "trial.xlsx"), "Plots", ["nozzle", "run", "thickness"], rows, firstRow: 3, firstColumn: 2);
        var m = run.Manifest();
        Assert.Equal(10, m.Get("main", "anova", "residual", "df"));

        run.Study(Study("{ path: trial.xlsx, sheet: Plot }"));
        Assert.Contains("has no sheet 'Plot'; did you mean 'Plots'? (sheets: Plots)", Errors(run), StringComparison.Ordinal);
    }

    [Fact]
    public void Query_SyntaxError_PointsAtTheQueryInTheStudyWithTheDatabaseMessage()
    {
        using var run = Sqlite("{ path: results.sqlite, query: \"selec nozzle from panels\" }");
        var errors = Errors(run);

        // The query's value starts on line 4, column 42 of the study file (its opening quote).
        Assert.EndsWith("study.md:4:42: error: the query of dataset 'panels' failed: near \"selec\": syntax error", errors, StringComparison.Ordinal);
    }

    [Fact]
    public void Query_UnknownColumn_NamesTheQueryColumnsWithDidYouMean()
    {
        using var run = Sqlite("{ path: results.sqlite, query: \"select nozzle, thickness as thick from panels\" }", response: "thik");
        var errors = Errors(run);
        Assert.Contains("column 'thik' is not in the result of the query of dataset 'panels'; did you mean 'thick'? (its columns: nozzle, thick)", errors, StringComparison.Ordinal);
    }

    [Fact]
    public void Database_OutsideTheStudyFolder_IsRefused_AndWithoutQueryIsAnError()
    {
        using var run = Sqlite("{ path: ../results.sqlite, query: \"select * from panels\" }");
        Assert.Contains("leads outside the study's folder", Errors(run), StringComparison.Ordinal);

        run.Study(Study("results.sqlite"));
        Assert.Contains("is a database: give the table to read as 'query'", Errors(run), StringComparison.Ordinal);

        run.Study(Study("{ path: results.sqlite, query: \"select * from panels\", sheet: One }"));
        Assert.Contains("'sheet' of dataset 'panels' applies only to a spreadsheet (.xlsx)", Errors(run), StringComparison.Ordinal);
    }

    [Fact]
    public void Query_CannotAttachOrReadOtherFiles()
    {
        using var run = Sqlite("{ path: results.sqlite, query: \"select * from panels\" }");
        File.Copy(Path.Combine(run.Folder, "results.sqlite"), Path.Combine(run.Folder, "other.sqlite"));
        run.Study(Study("{ path: results.sqlite, query: \"attach 'other.sqlite' as o\" }"));
        Assert.Contains("the query of dataset 'panels' failed: too many attached databases - max 0", Errors(run), StringComparison.Ordinal);

        using var duck = new StudyRun();
        SourcesFixtures.DuckDb(Path.Combine(duck.Folder, "r.duckdb"), "create table panels as select 'a' as nozzle, 1.5 as thickness");
        File.WriteAllText(Path.Combine(duck.Folder, "secret.csv"), "nozzle,thickness\nx,1\ny,2\n");
        duck.Study(Study("{ path: r.duckdb, query: \"select * from read_csv('secret.csv')\" }"));
        var errors = Errors(duck);
        Assert.Contains("the query of dataset 'panels' failed", errors, StringComparison.Ordinal);
        Assert.Contains("disabled", errors, StringComparison.Ordinal);
    }

    [Fact]
    public void Verify_ChangedDatabase_IsStale_ChangedResultHash_IsAltered()
    {
        using var run = Sqlite("{ path: results.sqlite, query: \"select * from panels\" }");
        var (exit, _, err) = run.Cli("build", "study.md");
        Assert.True(exit == 0, err);
        Assert.Equal((0, "study.html: fresh\n", string.Empty), run.Cli("verify", "study.html", "--recompute"));

        // A report whose recorded result hash no longer matches the query's result.
        var html = File.ReadAllText(run.ReportPath);
        var at = html.IndexOf("\"resultSha256\": \"", StringComparison.Ordinal) + "\"resultSha256\": \"".Length;
        var forged = html[..at] + (html[at] == '0' ? '1' : '0') + html[(at + 1)..];
        File.WriteAllText(run.ReportPath, forged);
        var (code, output, _) = run.Cli("verify", "study.html", "--recompute");
        Assert.Equal(1, code);
        Assert.Contains("altered (recompiling gives other values: the result of the query of dataset 'panels' changed", output, StringComparison.Ordinal);

        // A changed database file makes the report stale, without recomputing.
        File.WriteAllText(run.ReportPath, html);
        using (var c = new Microsoft.Data.Sqlite.SqliteConnection(new Microsoft.Data.Sqlite.SqliteConnectionStringBuilder { DataSource = Path.Combine(run.Folder, "results.sqlite"), Pooling = false }.ToString()))
        {
            c.Open();
            using var cmd = c.CreateCommand();
            cmd.CommandText = "update panels set thickness = thickness + 1 where rowid = 2";
            cmd.ExecuteNonQuery();
        }

        Assert.Equal((1, "study.html: stale (changed: results.sqlite)\n", string.Empty), run.Cli("verify", "study.html"));
    }

    [Fact]
    public void DateColumn_ServesAsRunOrder()
    {
        var study = """
            ---
            title: Dates
            data:
              panels: { path: results.duckdb, query: "select nozzle, day, thickness from panels" }
            response: thickness
            factors:
              nozzle:
            order: day
            ---

            ```anova main
            factors: [nozzle]
            ```

            ```assumptions checks
            of: main
            ```
            """;
        using var run = new StudyRun().Study(study);
        var values = string.Join(", ", Rows().Select((r, i) => string.Create(CultureInfo.InvariantCulture, $"('{r[0]}', date '2024-03-01' + {(i * 7) % 12}, {r[2]})")));
        SourcesFixtures.DuckDb(Path.Combine(run.Folder, "results.duckdb"), "create table panels (nozzle varchar, day date, thickness decimal(6,2))", "insert into panels values " + values);
        var withDates = run.Manifest();

        // The same rows with the day as a plain number give the same values.
        using var numbers = new StudyRun().Study(study.Replace("select nozzle, day, thickness", "select nozzle, day - date '2024-03-01' as day, thickness", StringComparison.Ordinal));
        SourcesFixtures.DuckDb(Path.Combine(numbers.Folder, "results.duckdb"), "create table panels (nozzle varchar, day date, thickness decimal(6,2))", "insert into panels values " + values);
        var plain = numbers.Manifest();
        Assert.Equal(
            plain.Values.Where(v => v.GetProperty("test").GetString() != "anova").Select(v => v.GetRawText()),
            withDates.Values.Where(v => v.GetProperty("test").GetString() != "anova").Select(v => v.GetRawText()));
        Assert.Contains(withDates.Values, v => v.GetProperty("block").GetString() == "checks");
    }
}
