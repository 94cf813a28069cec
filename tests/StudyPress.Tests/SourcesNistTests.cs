using System.Globalization;
using System.Text;
using System.Text.Json;
using StudyPress.Tests.Support;

namespace StudyPress.Tests;

/// <summary>
/// NIST StRD one-way ANOVA dataset SmLs09 (https://www.itl.nist.gov/div898/strd/anova/anova.html;
/// files in Reference/nist-strd-anova) read from database columns: a SQLite TEXT column and a
/// DuckDB DECIMAL column still reach 12 correct digits (log relative error against the certified
/// values, as <see cref="NistStrdTests"/> requires of CSV), and a binary floating-point column is
/// noted in the report.
/// </summary>
public sealed class SourcesNistTests
{
    private const string Study = """
        ---
        title: NIST StRD SmLs09 from a database
        data:
          d: { path: DBFILE, query: "select treatment, response from smls09 order by id" }
        response: response
        factors:
          treatment:
        ---

        ```anova a
        welch: no
        ```
        """;

    private static List<(string Treatment, string Response)> Rows()
    {
        using var certified = JsonDocument.Parse(File.ReadAllText(ReferenceFiles.PathOf("nist-strd-anova", "certified.json")));
        var entry = certified.RootElement.GetProperty("datasets").GetProperty("SmLs09");
        var first = entry.GetProperty("data_first_line").GetInt32();
        var last = entry.GetProperty("data_last_line").GetInt32();
        Assert.Equal(61, first);
        var lines = File.ReadAllLines(ReferenceFiles.PathOf("nist-strd-anova", "SmLs09.dat"));
        var rows = new List<(string, string)>();
        for (var i = first - 1; i < last; i++)
        {
            var parts = lines[i].Split(' ', StringSplitOptions.RemoveEmptyEntries);
            rows.Add((parts[0], parts[1]));
        }

        return rows;
    }

    private static void AssertCertified(ManifestView m)
    {
        using var certified = JsonDocument.Parse(File.ReadAllText(ReferenceFiles.PathOf("nist-strd-anova", "certified.json")));
        var values = certified.RootElement.GetProperty("datasets").GetProperty("SmLs09").GetProperty("certified");
        var checks = new (string Term, string Stat, string Key)[]
        {
            ("treatment", "ss", "between_ss"),
            ("treatment", "ms", "between_ms"),
            ("treatment", "f", "f_statistic"),
            ("residual", "ss", "within_ss"),
            ("residual", "ms", "within_ms"),
            ("treatment", "eta2", "r_squared"),
        };
        foreach (var (term, stat, key) in checks)
        {
            var c = double.Parse(values.GetProperty(key).GetString()!, NumberStyles.Float, CultureInfo.InvariantCulture);
            var x = m.Get("a", "anova", term, stat);
            var lre = Accuracy.Lre(x, c);
            Assert.True(lre >= 12, $"SmLs09 {key}: got {x.ToString("R", CultureInfo.InvariantCulture)}, certified {c.ToString("R", CultureInfo.InvariantCulture)}, LRE {lre.ToString("F2", CultureInfo.InvariantCulture)}");
        }
    }

    [Fact]
    public void SmLs09_FromSqliteTextColumn_Reaches12Digits()
    {
        using var run = new StudyRun().Study(Study.Replace("DBFILE", "nist.sqlite", StringComparison.Ordinal));
        SourcesFixtures.Sqlite(
            Path.Combine(run.Folder, "nist.sqlite"),
            "create table smls09 (id integer primary key, treatment integer, response text)",
            "insert into smls09 (treatment, response) values ($p0, $p1)",
            Rows().Select(r => new object?[] { long.Parse(r.Treatment, CultureInfo.InvariantCulture), r.Response }));
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        AssertCertified(new ManifestView(result.ManifestJson!));
        Assert.DoesNotContain("binary doubles", result.Html!, StringComparison.Ordinal);
    }

    [Fact]
    public void SmLs09_FromDuckDbDecimalColumn_Reaches12Digits()
    {
        using var run = new StudyRun().Study(Study.Replace("DBFILE", "nist.duckdb", StringComparison.Ordinal));
        var csv = new StringBuilder("id,treatment,response\n");
        var i = 0;
        foreach (var (t, r) in Rows())
        {
            csv.Append(CultureInfo.InvariantCulture, $"{i++},{t},{r}\n");
        }

        var csvPath = Path.Combine(run.Folder, "load.csv");
        File.WriteAllText(csvPath, csv.ToString());
        SourcesFixtures.DuckDb(
            Path.Combine(run.Folder, "nist.duckdb"),
            "create table smls09 (id integer, treatment bigint, response decimal(18,1))",
            $"insert into smls09 select id::integer, treatment::bigint, response::decimal(18,1) from read_csv({SourcesFixtures.Literal(csvPath)}, all_varchar = true)");
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        AssertCertified(new ManifestView(result.ManifestJson!));
        Assert.DoesNotContain("binary doubles", result.Html!, StringComparison.Ordinal);
    }

    [Fact]
    public void SmLs09_FromDuckDbDoubleColumn_ReportNotesBinaryDoubles()
    {
        using var run = new StudyRun().Study(Study.Replace("DBFILE", "nist.duckdb", StringComparison.Ordinal));
        var csv = new StringBuilder("id,treatment,response\n");
        var i = 0;
        foreach (var (t, r) in Rows())
        {
            csv.Append(CultureInfo.InvariantCulture, $"{i++},{t},{r}\n");
        }

        var csvPath = Path.Combine(run.Folder, "load.csv");
        File.WriteAllText(csvPath, csv.ToString());
        SourcesFixtures.DuckDb(
            Path.Combine(run.Folder, "nist.duckdb"),
            "create table smls09 (id integer, treatment bigint, response double)",
            $"insert into smls09 select id::integer, treatment::bigint, response::double from read_csv({SourcesFixtures.Literal(csvPath)}, all_varchar = true)");
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        Assert.Contains("The database held binary doubles in column", result.Html!, StringComparison.Ordinal);
    }
}
