using System.Globalization;
using System.IO.Compression;
using System.Text;
using StudyPress.Data;
using StudyPress.Data.Sources;
using StudyPress.Tests.Support;
using StudyPress.Syntax;

namespace StudyPress.Tests;

/// <summary>
/// Limits on every input: CSV quoting and field sizes, levels per factor, numbers that underflow,
/// level text (Unicode normalisation, invisible characters). Each oversized input is built on the
/// fly and must be refused with one FILE:LINE:COLUMN message, exit 2, nothing written.
/// </summary>
[Collection("cli")]
public sealed class InputLimitsTests
{
    private const string Hdr = "---\ntitle: T\ndata: data.csv\nresponse: y\nfactors:\n  g:\n---\n\n```anova main\n```\n";

    private static string HdrWith(string factorBody) => "---\ntitle: T\ndata: data.csv\nresponse: y\nfactors:\n  g:\n" + factorBody + "---\n\n```anova main\n```\n";

    /// <summary>Runs the check once with the reader's usual choice and once forcing the general reader.</summary>
    private static void BothReaders(Action check)
    {
        check();
        CsvLoader.ForceGeneralPath = true;
        try
        {
            check();
        }
        finally
        {
            CsvLoader.ForceGeneralPath = false;
        }
    }

    private static string OneError(StudyRun run)
    {
        var result = run.Compile();
        Assert.False(result.Succeeded);
        Assert.True(result.Diagnostics.Count == 1, string.Join("\n", result.Diagnostics));
        return result.Diagnostics[0].ToString().Replace(run.Folder + "/", string.Empty, StringComparison.Ordinal);
    }

    // ---- 1. quotes ----

    [Fact]
    public void Csv_QuoteInsideUnquotedField_IsAnErrorAtTheQuoteNotAMergedRow()
    {
        using var run = new StudyRun().Study(Hdr).File("data.csv", "g,y\na\"b,1\na\"b,2\nb,3\nb,4\n");
        DiagnosticsTests.AssertRejected(run, "stray quote", "data.csv:2:2: error: a quote inside an unquoted field; quote the whole field and double the quote (\"a\"\"b\")");
    }

    [Fact]
    public void Csv_QuotedFieldWithDoubledQuote_KeepsEveryRow()
    {
        using var run = new StudyRun().Study(Hdr).File("data.csv", "g,y\n\"a\"\"b\",1\n\"a\"\"b\",2\nb,3\nb,4.5\n");
        var m = run.Manifest();
        Assert.Equal(1, m.Get("main", "anova", "g", "df")); // exact hand computation: 2 levels, 4 rows
        Assert.Equal(2, m.Get("main", "anova", "residual", "df"));
    }

    [Fact]
    public void Csv_UnclosedQuote_IsAnErrorAtTheOpeningQuote()
    {
        using var run = new StudyRun().Study(Hdr).File("data.csv", "g,y\na,1\n\"b,2\nb,3\na,4\n");
        BothReaders(() => Assert.Equal("data.csv:3:1: error: a quoted field is not closed", OneError(run)));
    }

    [Fact]
    public void Csv_TextAfterClosingQuote_IsAnErrorWhereTheTextStarts()
    {
        using var run = new StudyRun().Study(Hdr).File("data.csv", "g,y\na,1\n\"b\"x,2\nb,3\na,4\n");
        Assert.Equal("data.csv:3:4: error: text after the closing quote of a quoted field; double a quote inside a quoted field (\"\")", OneError(run));
    }

    [Fact]
    public void Csv_QuotedFieldAcrossLines_PositionsLaterErrorsOnTheRightLine()
    {
        using var run = new StudyRun().Study(Hdr).File("data.csv", "g,y\n\"a\nb\",1\na\nb,2\nb,3\nb,4\n");
        Assert.Equal("data.csv:4:2: error: a quote inside an unquoted field; quote the whole field and double the quote (\"a\"\"b\")", OneError(run.File("data.csv", "g,y\n\"a\nb\",1\nx\"y,2\nb,3\nb,4\n")));
    }

    // ---- 2. field length and levels per factor ----

    [Fact]
    public void Csv_FieldLongerThanTheLimit_IsAnErrorAtTheCell()
    {
        var csv = new StringBuilder("g,note,y\na,x,1\nb,");
        csv.Append('z', (int)DataLimits.MaxFieldBytes + 1).Append(",2\na,x,3\nb,x,4\n");
        using var run = new StudyRun().Study(Hdr).File("data.csv", csv.ToString());
        BothReaders(() => Assert.Equal("data.csv:3:3: error: this field is longer than 1048576 bytes (1 MiB), the most a cell may hold", OneError(run)));
    }

    [Fact]
    public void Csv_QuotedFieldLongerThanTheLimit_IsAnErrorAtItsOpeningQuote()
    {
        var csv = new StringBuilder("g,note,y\na,x,1\nb,\"");
        csv.Append('z', (int)DataLimits.MaxFieldBytes).Append("\",2\na,x,3\nb,x,4\n");
        using var run = new StudyRun().Study(Hdr).File("data.csv", csv.ToString());
        Assert.Equal("data.csv:3:3: error: this field is longer than 1048576 bytes (1 MiB), the most a cell may hold", OneError(run));
    }

    [Fact]
    public void Csv_FieldAtTheLimit_IsRead()
    {
        var csv = new StringBuilder("g,note,y\na,x,1\nb,");
        csv.Append('z', (int)DataLimits.MaxFieldBytes).Append(",2\na,x,3\nb,x,4\n");
        using var run = new StudyRun().Study(Hdr).File("data.csv", csv.ToString());
        BothReaders(() => Assert.True(run.Compile().Succeeded));
    }

    [Fact]
    public void Csv_MoreLevelsThanTheLimit_IsAnErrorAtTheFirstCellOverIt()
    {
        var csv = new StringBuilder("g,y\n");
        for (var i = 0; i <= DataLimits.MaxLevelsPerFactor; i++)
        {
            csv.Append(CultureInfo.InvariantCulture, $"L{i},{i % 7}\n");
        }

        using var run = new StudyRun().Study(Hdr).File("data.csv", csv.ToString());
        var line = DataLimits.MaxLevelsPerFactor + 2;
        BothReaders(() => Assert.Equal(
            string.Create(CultureInfo.InvariantCulture, $"data.csv:{line}:1: error: factor 'g' has more than 10000 levels (distinct values of column 'g'), the most a factor may have; is the column an identifier or a measurement?"),
            OneError(run)));
    }

    [Fact]
    public void Csv_LargeFileWithBlankLines_BadCellLateInTheFile_IsOneErrorAtItsLineAndColumn()
    {
        // 200,000 rows (over 1 MB, so the byte-level reader starts and the hash runs beside it),
        // blank lines in the first half, one bad cell in the second: one message at the cell.
        var csv = new StringBuilder("g,y\n");
        var line = 1;
        var badLine = 0;
        for (var i = 0; i < 200_000; i++)
        {
            if (i is 10 or 50_000)
            {
                csv.Append('\n');
                line++;
            }

            line++;
            if (i == 170_000)
            {
                badLine = line;
                csv.Append("b, 12x.5\n");
                continue;
            }

            csv.Append(CultureInfo.InvariantCulture, $"{(i % 2 == 0 ? "a" : "b")},{i % 97}.5\n");
        }

        using var run = new StudyRun().Study(Hdr).File("data.csv", csv.ToString());
        Assert.Equal(170_004, badLine); // exact hand computation: header, two blank lines, row 170,000 (0-based)
        BothReaders(() => Assert.Equal(
            string.Create(CultureInfo.InvariantCulture, $"data.csv:{badLine}:4: error: '12x.5' is not a number in column 'y'"),
            OneError(run)));
    }

    [Fact]
    public void Header_MoreDeclaredLevelsThanTheLimit_IsAnErrorAtTheFirstOneOverIt()
    {
        var levels = string.Join(", ", Enumerable.Range(0, DataLimits.MaxLevelsPerFactor + 1).Select(i => "L" + i.ToString(CultureInfo.InvariantCulture)));
        using var run = new StudyRun().Study(HdrWith("    levels: [" + levels + "]\n")).File("data.csv", "g,y\nL0,1\nL1,2\n");
        var error = OneError(run);
        var column = 14 + string.Join(", ", Enumerable.Range(0, DataLimits.MaxLevelsPerFactor).Select(i => "L" + i.ToString(CultureInfo.InvariantCulture))).Length + 2;
        Assert.Equal(string.Create(CultureInfo.InvariantCulture, $"study.md:7:{column}: error: factor 'g' has more than 10000 levels (distinct values of column 'g'), the most a factor may have; is the column an identifier or a measurement?"), error);
    }

    [Fact]
    public void Sqlite_MoreLevelsThanTheLimit_IsAnErrorAtTheQuery()
    {
        using var run = new StudyRun().Study(Hdr.Replace("data: data.csv", "data:\n  d: { path: d.sqlite, query: \"select g, y from t\" }", StringComparison.Ordinal));
        SourcesFixtures.Sqlite(Path.Combine(run.Folder, "d.sqlite"), "create table t (g text, y real)", "insert into t values ($p0, $p1)", Enumerable.Range(0, DataLimits.MaxLevelsPerFactor + 1).Select(i => new object?[] { "L" + i.ToString(CultureInfo.InvariantCulture), (double)(i % 7) }));
        Assert.Equal("study.md:4:31: error: factor 'g' has more than 10000 levels (distinct values of column 'g'), the most a factor may have; is the column an identifier or a measurement?", OneError(run));
    }

    // ---- 6. numbers that underflow ----

    [Theory]
    [InlineData("1e-400")]
    [InlineData("-2.5E-999")]
    [InlineData("1e-310")]
    public void Csv_NumberThatUnderflows_IsRefusedLikeOneThatOverflows(string cell)
    {
        using var run = new StudyRun().Study(Hdr).File("data.csv", $"g,y\na,1\na,{cell}\nb,3\nb,4\n");
        Assert.Equal($"data.csv:3:3: error: '{cell}' in column 'y' is too close to zero to compute with (nearer to 0 than 1e-300, it would be read as 0); rescale the column", OneError(run));
    }

    [Theory]
    [InlineData("0e-400")]
    [InlineData("-0.000e-999")]
    [InlineData("1e-30")]
    public void Csv_ZeroWithAnyExponentAndSmallNumbers_AreRead(string cell)
    {
        using var run = new StudyRun().Study(Hdr).File("data.csv", $"g,y\na,1\na,{cell}\nb,3\nb,4\n");
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
    }

    [Fact]
    public void Sqlite_TextNumberThatUnderflows_IsRefused()
    {
        using var run = new StudyRun().Study(Hdr.Replace("data: data.csv", "data:\n  d: { path: d.sqlite, query: \"select g, y from t\" }", StringComparison.Ordinal));
        SourcesFixtures.Sqlite(Path.Combine(run.Folder, "d.sqlite"), "create table t (g text, y text)", "insert into t values ($p0, $p1)", [["a", "1"], ["a", "1e-400"], ["b", "3"], ["b", "4"]]);
        Assert.Equal("study.md:4:31: error: '1e-400' in column 'y' (row 2 of the query result) is too close to zero to compute with (nearer to 0 than 1e-300, it would be read as 0); rescale the column", OneError(run));
    }

    [Fact]
    public void Xlsx_NumberCellThatUnderflows_IsRefused()
    {
        using var run = new StudyRun().Study(Hdr.Replace("data: data.csv", "data: d.xlsx", StringComparison.Ordinal));
        SourcesFixtures.WriteXlsx(Path.Combine(run.Folder, "d.xlsx"), "S", ["g", "y"], [["a", 1m], ["a", new RawNumber("1E-400")], ["b", 3m], ["b", 4m]]);
        Assert.Equal("d.xlsx:3:2: error: '1E-400' in column 'y' (cell S!B3) is too close to zero to compute with (nearer to 0 than 1e-300, it would be read as 0); rescale the column", OneError(run));
    }

    [Fact]
    public void Header_NumberThatUnderflows_IsRefused()
    {
        using var run = new StudyRun().Study("---\ntitle: T\ndata: data.csv\nresponse: y\nfactors:\n  g:\n---\n\n```power p\ngroups: 3\neffect: 1e-400\nn: 5\n```\n").File("data.csv", "g,y\na,1\nb,2\n");
        var result = run.Compile();
        Assert.Contains(result.Diagnostics, d => d.ToString().EndsWith("study.md:11:9: error: 'effect' is '1e-400', too close to zero to compute with (nearer to 0 than 1e-300, it would be read as 0)", StringComparison.Ordinal));
    }

    // ---- 7. level text ----

    [Fact]
    public void Csv_LevelsInNfcAndNfd_AreOneLevel()
    {
        const string Nfc = "caf\u00E9";
        const string Nfd = "cafe\u0301";
        using var run = new StudyRun().Study(Hdr).File("data.csv", $"g,y\n{Nfc},1\n{Nfd},2\n{Nfc},2.5\nb,3\nb,4.5\nb,4\n");
        BothReaders(() =>
        {
            var m = run.Manifest();
            Assert.Equal(1, m.Get("main", "anova", "g", "df")); // exact hand computation: 2 levels, not 3
            Assert.Equal(4, m.Get("main", "anova", "residual", "df"));
        });
    }

    [Fact]
    public void Csv_DeclaredLevelInNfc_MatchesDataInNfd()
    {
        using var run = new StudyRun().Study(HdrWith("    levels: [\"caf\u00E9\", b]\n")).File("data.csv", "g,y\ncafe\u0301,1\ncafe\u0301,2\nb,3\nb,4.5\n");
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
    }

    [Theory]
    [InlineData("\u200B", "U+200B (zero width space)")]
    [InlineData("\u200D", "U+200D (zero width joiner)")]
    [InlineData("\uFEFF", "U+FEFF (byte order mark)")]
    [InlineData("\u00AD", "U+00AD (soft hyphen)")]
    public void Csv_LevelWithInvisibleCharacter_IsAnErrorNamingIt(string invisible, string named)
    {
        using var run = new StudyRun().Study(Hdr).File("data.csv", $"g,y\nab,1\nab,2\nx,3\na{invisible}b,4\nx,5\n");
        BothReaders(() => Assert.Equal($"data.csv:5:1: error: level 'a<U+{(int)invisible[0]:X4}>b' of factor 'g' contains the invisible character {named}; remove it, or two levels could look the same", OneError(run)));
    }

    [Fact]
    public void Sqlite_LevelWithInvisibleCharacter_IsAnError()
    {
        using var run = new StudyRun().Study(Hdr.Replace("data: data.csv", "data:\n  d: { path: d.sqlite, query: \"select g, y from t\" }", StringComparison.Ordinal));
        SourcesFixtures.Sqlite(Path.Combine(run.Folder, "d.sqlite"), "create table t (g text, y real)", "insert into t values ($p0, $p1)", [["a", 1.0], ["a\u200Bb", 2.0], ["b", 3.0], ["b", 4.0]]);
        Assert.Equal("study.md:4:31: error: level 'a<U+200B>b' of factor 'g' contains the invisible character U+200B (zero width space); remove it, or two levels could look the same", OneError(run));
    }

    [Fact]
    public void Header_DeclaredLevelWithInvisibleCharacter_IsAnErrorAtTheDeclaration()
    {
        using var run = new StudyRun().Study(HdrWith("    levels: [a, \"b\u200B\"]\n")).File("data.csv", "g,y\na,1\na,2\nb,3\nb,4\n");
        var result = run.Compile();
        Assert.False(result.Succeeded);
        Assert.Equal("study.md:7:17: error: declared level 'b<U+200B>' of factor 'g' contains the invisible character U+200B (zero width space); remove it", result.Diagnostics[0].ToString().Replace(run.Folder + "/", string.Empty, StringComparison.Ordinal));
    }
}

/// <summary>A spreadsheet number cell written with exactly this text.</summary>
internal sealed record RawNumber(string Text) : IFormattable
{
    public string ToString(string? format, IFormatProvider? formatProvider) => Text;
}

/// <summary>Nesting depth of the study's Markdown and YAML: an error at the line, never a stack overflow or a long wait.</summary>
[Collection("cli")]
public sealed class NestingLimitsTests
{
    private const string Hdr = "---\ntitle: T\ndata: data.csv\nresponse: y\nfactors:\n  g:\n---\n\n```anova main\n```\n\n";

    private const string Csv = "g,y\na,1\na,2\nb,3\nb,4.5\n";

    [Fact]
    public void Markdown_TenThousandNestedQuotesOnOneLine_IsAnErrorAtThatLine()
    {
        using var run = new StudyRun().Study(Hdr + "Intro.\n\n" + new string('>', 10_000) + " deep\n").File("data.csv", Csv);
        DiagnosticsTests.AssertRejected(run, "nested quotes", "study.md:14:1: error: the text is nested more than 64 levels deep here (block quotes, lists, emphasis or links inside each other); flatten it");
    }

    [Fact]
    public void Markdown_AThousandQuoteLinesEachDeeper_IsAnErrorAtTheFirstLineTooDeep()
    {
        var body = new StringBuilder();
        for (var i = 1; i <= 1_000; i++)
        {
            body.Append('>', i).Append(" q\n");
        }

        using var run = new StudyRun().Study(Hdr + body).File("data.csv", Csv);
        var error = run.Compile().Diagnostics.Single().ToString();
        Assert.EndsWith("study.md:" + (12 + 63).ToString(CultureInfo.InvariantCulture) + ":1: error: the text is nested more than 64 levels deep here (block quotes, lists, emphasis or links inside each other); flatten it", error, StringComparison.Ordinal);
    }

    [Fact]
    public void Markdown_TwoThousandListItemsEachIndentedDeeper_IsAnErrorAtTheFirstLineTooDeep()
    {
        var body = new StringBuilder();
        for (var i = 0; i < 2_000; i++)
        {
            body.Append(' ', 2 * i).Append("- item\n");
        }

        using var run = new StudyRun().Study(Hdr + body).File("data.csv", Csv);
        var error = run.Compile().Diagnostics.Single().ToString();
        Assert.Equal("study.md:42:1: error: the text is nested more than 64 levels deep here (block quotes, lists, emphasis or links inside each other); flatten it", error[error.IndexOf("study.md", StringComparison.Ordinal)..]);
    }

    [Fact]
    public void Markdown_TenThousandListMarkersOnOneLine_IsAnErrorAtThatLine()
    {
        var line = string.Concat(Enumerable.Repeat("- ", 10_000)) + "x\n";
        using var run = new StudyRun().Study(Hdr + line).File("data.csv", Csv);
        Assert.EndsWith("study.md:12:1: error: the text is nested more than 64 levels deep here (block quotes, lists, emphasis or links inside each other); flatten it", run.Compile().Diagnostics.Single().ToString(), StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("*")]
    [InlineData("[")]
    [InlineData("`")]
    [InlineData("<")]
    public void Markdown_TenThousandInlineOpeners_AreRefusedOrBuiltButNeverCrash(string opener)
    {
        using var run = new StudyRun().Study(Hdr + "Text " + string.Concat(Enumerable.Repeat(opener + "a", 10_000)) + " end.\n").File("data.csv", Csv);
        var result = run.Compile();
        Assert.True(result.Succeeded || result.Diagnostics.Single().ToString().EndsWith("study.md:12:1: error: the text is nested more than 64 levels deep here (block quotes, lists, emphasis or links inside each other); flatten it", StringComparison.Ordinal), string.Join("\n", result.Diagnostics));
    }

    [Fact]
    public void Markdown_NestingWithinTheLimit_Builds()
    {
        using var run = new StudyRun().Study(Hdr + new string('>', 20) + " twenty deep\n").File("data.csv", Csv);
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
    }

    [Fact]
    public void Yaml_TenThousandNestedFlowSequences_IsAnErrorNotACrash()
    {
        var study = "---\ntitle: T\ndata: data.csv\nresponse: y\nnote: " + new string('[', 10_000) + new string(']', 10_000) + "\nfactors:\n  g:\n---\n\n```anova main\n```\n";
        using var run = new StudyRun().Study(study).File("data.csv", Csv);
        var result = run.Compile();
        Assert.False(result.Succeeded);
        Assert.Contains(result.Diagnostics, d => d.ToString().Contains("study.md:5:", StringComparison.Ordinal) && d.ToString().Contains("nested too deeply", StringComparison.Ordinal));
    }

    [Fact]
    public void Yaml_ThreeThousandNestedBlockMappings_IsAnErrorNotACrash()
    {
        var yaml = new StringBuilder("---\ntitle: T\ndata: data.csv\nresponse: y\nfactors:\n  g:\nnote:\n");
        for (var i = 1; i <= 3_000; i++)
        {
            yaml.Append(' ', i).Append("k:\n");
        }

        using var run = new StudyRun().Study(yaml + "---\n\n```anova main\n```\n").File("data.csv", Csv);
        var result = run.Compile();
        Assert.False(result.Succeeded);
        Assert.Contains(result.Diagnostics, d => d.ToString().Contains("nested too deeply", StringComparison.Ordinal));
    }
}

/// <summary>Queries that never end or return too much: a time limit and a row limit, errors at the query.</summary>
[Collection("cli")]
public sealed class QueryLimitsTests
{
    private const string Endless = "WITH RECURSIVE r(x) AS (SELECT 1 UNION ALL SELECT x + 1 FROM r)";

    private static string Study(string file, string query, string extra = "") =>
        "---\ntitle: T\ndata:\n  d: { path: " + file + ", query: \"" + query + "\"" + extra + " }\nresponse: y\nfactors:\n  g:\n---\n\n```anova main\n```\n";

    private static StudyRun Sqlite(string query, string extra = "")
    {
        var run = new StudyRun().Study(Study("d.sqlite", query, extra));
        SourcesFixtures.Sqlite(Path.Combine(run.Folder, "d.sqlite"), "create table t (g text, y real)", "insert into t values ($p0, $p1)", [["a", 1.0], ["a", 2.0], ["b", 3.0], ["b", 4.5]]);
        return run;
    }

    private static StudyRun DuckDb(string query, string extra = "")
    {
        var run = new StudyRun().Study(Study("d.duckdb", query, extra));
        SourcesFixtures.DuckDb(Path.Combine(run.Folder, "d.duckdb"), "create table t (g varchar, y double)", "insert into t values ('a', 1), ('a', 2), ('b', 3), ('b', 4.5)");
        return run;
    }

    private static string OneError(StudyRun run)
    {
        var result = run.Compile();
        Assert.False(result.Succeeded);
        Assert.True(result.Diagnostics.Count == 1, string.Join("\n", result.Diagnostics));
        return result.Diagnostics[0].ToString().Replace(run.Folder + "/", string.Empty, StringComparison.Ordinal);
    }

    [Fact]
    public void Sqlite_EndlessRecursiveQuery_StopsAtTheTimeLimitWithAnErrorAtTheQuery()
    {
        using var run = Sqlite(Endless + " SELECT 'a' AS g, count(*) AS y FROM r", ", timeout: 1");
        var started = DateTime.UtcNow;
        Assert.Equal("study.md:4:31: error: the query of dataset 'd' ran longer than 1 s and was stopped; simplify it, or raise the dataset's 'timeout' (seconds)", OneError(run));
        Assert.True(DateTime.UtcNow - started < TimeSpan.FromSeconds(30), "the interrupt came late");
    }

    [Fact]
    public void Sqlite_EndlessRecursiveQueryAggregated_StopsAtTheTimeLimit()
    {
        using var run = Sqlite(Endless + " SELECT CASE WHEN x % 2 = 0 THEN 'a' ELSE 'b' END AS g, x AS y FROM r", ", timeout: 1, aggregate: true");
        Assert.Equal("study.md:4:31: error: the query of dataset 'd' ran longer than 1 s and was stopped; simplify it, or raise the dataset's 'timeout' (seconds)", OneError(run));
    }

    [Fact]
    public void DuckDb_EndlessRecursiveQuery_StopsAtTheTimeLimitWithAnErrorAtTheQuery()
    {
        using var run = DuckDb(Endless + " SELECT 'a' AS g, count(*) AS y FROM r", ", timeout: 1");
        var error = OneError(run);
        Assert.Equal("study.md:4:31: error: the query of dataset 'd' ran longer than 1 s and was stopped; simplify it, or raise the dataset's 'timeout' (seconds)", error);
    }

    [Fact]
    public void Sqlite_EndlessRowsFromAWideQuery_StopAtTheCellLimit()
    {
        // 1000 columns: the 20 million cell limit allows 20,000 rows.
        var columns = string.Join(", ", Enumerable.Range(0, 998).Select(i => "x AS c" + i.ToString(CultureInfo.InvariantCulture)));
        using var run = Sqlite(Endless + " SELECT 'a' AS g, x AS y, " + columns + " FROM r", ", timeout: 1");
        Assert.Matches("^study.md:4:31: error: the query of dataset 'd' (returns more than 20000 rows|ran longer than 1 s)", OneError(run));
    }

    [Theory]
    [InlineData("sqlite")]
    [InlineData("duckdb")]
    public void EndlessRows_StopAtTheRowLimitOrTheTimeLimit(string engine)
    {
        DatabaseSource.MaxRowsForTests = 1000;
        try
        {
            // SQLite streams the rows of a recursive query (the row limit stops it); DuckDB computes
            // the whole recursion before the first row (the time limit stops it).
            var query = Endless + " SELECT CASE WHEN x % 2 = 0 THEN 'a' ELSE 'b' END AS g, x AS y FROM r";
            using var run = engine == "sqlite" ? Sqlite(query) : DuckDb(query, ", timeout: 1");
            Assert.Equal(
                engine == "sqlite"
                    ? "study.md:4:31: error: the query of dataset 'd' returns more than 1000 rows, the most this version loads; aggregate in the query or use 'aggregate: true'"
                    : "study.md:4:31: error: the query of dataset 'd' ran longer than 1 s and was stopped; simplify it, or raise the dataset's 'timeout' (seconds)",
                OneError(run));
        }
        finally
        {
            DatabaseSource.MaxRowsForTests = null;
        }
    }

    [Fact]
    public void Timeout_OnACsvDataset_IsAnError()
    {
        using var run = new StudyRun().Study("---\ntitle: T\ndata:\n  d: { path: data.csv, timeout: 5 }\nresponse: y\nfactors:\n  g:\n---\n\n```anova main\n```\n").File("data.csv", "g,y\na,1\na,2\nb,3\nb,4\n");
        Assert.StartsWith("study.md:4:", OneError(run), StringComparison.Ordinal);
    }
}

/// <summary>Spreadsheets: the file size limit, what the zip expands to (declared and counted), the number of cells.</summary>
[Collection("cli")]
public sealed class SpreadsheetLimitsTests
{
    private const string Study = "---\ntitle: T\ndata: book.xlsx\nresponse: y\nfactors:\n  g:\n---\n\n```anova main\n```\n";

    /// <summary>A minimal workbook built with System.IO.Compression; the sheet's XML is written by <paramref name="sheetData"/> (the rows inside sheetData).</summary>
    private static byte[] Workbook(Action<StreamWriter> sheetData, CompressionLevel level = CompressionLevel.Fastest)
    {
        using var memory = new MemoryStream();
        using (var zip = new ZipArchive(memory, ZipArchiveMode.Create, leaveOpen: true))
        {
            void Part(string name, string text)
            {
                using var w = new StreamWriter(zip.CreateEntry(name, level).Open(), new UTF8Encoding(false));
                w.Write(text);
            }

            Part("[Content_Types].xml", "<?xml version=\"1.0\" encoding=\"UTF-8\"?><Types xmlns=\"http://schemas.openxmlformats.org/package/2006/content-types\"><Default Extension=\"rels\" ContentType=\"application/vnd.openxmlformats-package.relationships+xml\"/><Default Extension=\"xml\" ContentType=\"application/xml\"/><Override PartName=\"/xl/workbook.xml\" ContentType=\"application/vnd.openxmlformats-officedocument.spreadsheetml.sheet.main+xml\"/><Override PartName=\"/xl/worksheets/sheet1.xml\" ContentType=\"application/vnd.openxmlformats-officedocument.spreadsheetml.worksheet+xml\"/></Types>");
            Part("_rels/.rels", "<?xml version=\"1.0\" encoding=\"UTF-8\"?><Relationships xmlns=\"http://schemas.openxmlformats.org/package/2006/relationships\"><Relationship Id=\"rId1\" Type=\"http://schemas.openxmlformats.org/officeDocument/2006/relationships/officeDocument\" Target=\"xl/workbook.xml\"/></Relationships>");
            Part("xl/workbook.xml", "<?xml version=\"1.0\" encoding=\"UTF-8\"?><workbook xmlns=\"http://schemas.openxmlformats.org/spreadsheetml/2006/main\" xmlns:r=\"http://schemas.openxmlformats.org/officeDocument/2006/relationships\"><sheets><sheet name=\"S\" sheetId=\"1\" r:id=\"rId1\"/></sheets></workbook>");
            Part("xl/_rels/workbook.xml.rels", "<?xml version=\"1.0\" encoding=\"UTF-8\"?><Relationships xmlns=\"http://schemas.openxmlformats.org/package/2006/relationships\"><Relationship Id=\"rId1\" Type=\"http://schemas.openxmlformats.org/officeDocument/2006/relationships/worksheet\" Target=\"worksheets/sheet1.xml\"/></Relationships>");
            using var sheet = new StreamWriter(zip.CreateEntry("xl/worksheets/sheet1.xml", level).Open(), new UTF8Encoding(false));
            sheet.Write("<?xml version=\"1.0\" encoding=\"UTF-8\"?><worksheet xmlns=\"http://schemas.openxmlformats.org/spreadsheetml/2006/main\"><sheetData>");
            sheetData(sheet);
            sheet.Write("</sheetData></worksheet>");
        }

        return memory.ToArray();
    }

    private static void Rows(StreamWriter w, int rows)
    {
        w.Write("<row r=\"1\"><c r=\"A1\" t=\"inlineStr\"><is><t>g</t></is></c><c r=\"B1\" t=\"inlineStr\"><is><t>y</t></is></c></row>");
        for (var i = 2; i <= rows + 1; i++)
        {
            w.Write(string.Create(CultureInfo.InvariantCulture, $"<row r=\"{i}\"><c r=\"A{i}\" t=\"inlineStr\"><is><t>{(i % 2 == 0 ? "a" : "b")}</t></is></c><c r=\"B{i}\"><v>{i % 7}</v></c></row>"));
        }
    }

    private static string OneError(StudyRun run)
    {
        var result = run.Compile();
        Assert.False(result.Succeeded);
        Assert.True(result.Diagnostics.Count == 1, string.Join("\n", result.Diagnostics));
        return result.Diagnostics[0].ToString().Replace(run.Folder + "/", string.Empty, StringComparison.Ordinal);
    }

    [Fact]
    public void Xlsx_SmallWorkbookBuiltHere_IsRead()
    {
        using var run = new StudyRun().Study(Study).Bytes("book.xlsx", Workbook(w => Rows(w, 20)));
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
    }

    [Fact]
    public void Xlsx_FileOverTheDataSizeLimit_IsRefusedBeforeReading()
    {
        using var run = new StudyRun().Study(Study);
        using (var f = File.Create(Path.Combine(run.Folder, "book.xlsx")))
        {
            f.SetLength(DataLimits.MaxDataFileBytes + 1); // sparse: nothing is written
        }

        Assert.Equal("study.md:3:7: error: data file 'book.xlsx' is 268435457 bytes; this version reads at most 268435456 bytes (256 MiB)", OneError(run));
    }

    [Fact]
    public void Xlsx_SheetThatExpandsPastThePartLimit_IsRefusedAtTheDataPath()
    {
        // 700,000 rows: a few MB deflated, over 64 MiB of XML.
        var bytes = Workbook(w => Rows(w, 700_000), CompressionLevel.Optimal);
        Assert.True(bytes.Length < 16 * 1024 * 1024);
        using var run = new StudyRun().Study(Study).Bytes("book.xlsx", bytes);
        DiagnosticsTests.AssertRejected(run, "xlsx bomb", "study.md:3:7: error: 'book.xlsx' expands to more than 67108864 bytes (64 MiB) by its part 'xl/worksheets/sheet1.xml', the most this version reads from a spreadsheet");
    }

    [Fact]
    public void Xlsx_MoreCellsThanTheLimit_IsAnErrorAtTheFirstCellOverIt()
    {
        // Rows of 10 short number cells (no references: each follows the one before).
        const string Ten = "<c><v>1</v></c><c><v>2</v></c><c><v>3</v></c><c><v>4</v></c><c><v>5</v></c><c><v>6</v></c><c><v>7</v></c><c><v>8</v></c><c><v>9</v></c><c><v>0</v></c>";
        const int Limit = 1000; // the real limit (2 million) takes half a minute to reach here
        const int Rows = Limit / 10;
        var bytes = Workbook(w =>
        {
            w.Write("<row><c t=\"inlineStr\"><is><t>g</t></is></c><c t=\"inlineStr\"><is><t>y</t></is></c></row>");
            for (var i = 0; i < Rows; i++)
            {
                w.Write("<row>");
                w.Write(Ten);
                w.Write("</row>");
            }
        });
        using var run = new StudyRun().Study(Study).Bytes("book.xlsx", bytes);
        SpreadsheetSource.MaxCellsForTests = Limit;
        try
        {
            // 2 header cells, then the 10-cell rows: the cell past the limit is in sheet row Rows + 1, column 9.
            Assert.Equal(string.Create(CultureInfo.InvariantCulture, $"book.xlsx:{Rows + 1}:9: error: sheet 'S' of 'book.xlsx' has more than 1000 cells with values, the most this version reads from a spreadsheet; give a 'range'"), OneError(run));
        }
        finally
        {
            SpreadsheetSource.MaxCellsForTests = null;
        }
    }

    [Fact]
    public void Xlsx_SheetWhoseDeclaredSizeLies_IsRefusedAtTheDataPath()
    {
        var bytes = Workbook(w => Rows(w, 700_000), CompressionLevel.Optimal);

        // Declare 1000 bytes for every entry, in the local headers and the central directory.
        for (var i = 0; i + 30 < bytes.Length; i++)
        {
            if (bytes[i] == 0x50 && bytes[i + 1] == 0x4B && bytes[i + 2] == 0x03 && bytes[i + 3] == 0x04)
            {
                BitConverter.TryWriteBytes(bytes.AsSpan(i + 22, 4), 1000u);
            }
            else if (bytes[i] == 0x50 && bytes[i + 1] == 0x4B && bytes[i + 2] == 0x01 && bytes[i + 3] == 0x02)
            {
                BitConverter.TryWriteBytes(bytes.AsSpan(i + 24, 4), 1000u);
            }
        }

        using var run = new StudyRun().Study(Study).Bytes("book.xlsx", bytes);
        var error = OneError(run);
        Assert.StartsWith("study.md:3:7: error: ", error, StringComparison.Ordinal);
        Assert.Matches("expands to more than|cannot read 'book.xlsx' as a spreadsheet", error);
    }
}

/// <summary>The NFC used to compare levels (the compiler runs with invariant globalization, where string.Normalize does nothing).</summary>
public sealed class UnicodeNfcTests
{
    // Expected forms checked against Python's unicodedata.normalize('NFC', ...) (Unicode 14.0).
    [Theory]
    [InlineData("e\u0301", "\u00E9")] // combining acute composes
    [InlineData("\u1100\u1161\u11A8", "\uAC01")] // Hangul L V T, arithmetic composition
    [InlineData("A\u030A", "\u00C5")]
    [InlineData("\u212B", "\u00C5")] // singleton: ANGSTROM SIGN becomes A WITH RING
    [InlineData("a\u0328\u0301", "\u0105\u0301")] // ogonek composes first, acute stays
    [InlineData("\u0344", "\u0308\u0301")] // composition exclusion
    [InlineData("q\u0307\u0323", "q\u0323\u0307")] // canonical ordering, nothing composes
    [InlineData("\u1E0B\u0323", "\u1E0D\u0307")] // reordered, then composed the other way
    [InlineData("\u0301e", "\u0301e")] // a leading non-starter blocks nothing after it but composes with nothing
    [InlineData("plain ascii", "plain ascii")]
    [InlineData("caf\u00E9", "caf\u00E9")]
    public void Normalize_GivesNfc(string text, string nfc) => Assert.Equal(nfc, UnicodeNfc.Normalize(text));
}
