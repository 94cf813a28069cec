using StudyPress.Diagnostics;
using StudyPress.Tests.Support;

namespace StudyPress.Tests;

/// <summary>
/// Text from data: control and bidirectional-formatting characters never reach the terminal raw
/// (every diagnostic writes them as \uXXXX), and a factor level from any source must be valid UTF-8
/// without such characters: one rule (LevelText) for CSV, spreadsheets, SQLite, DuckDB and database groups.
/// </summary>
[Collection("cli")]
public sealed class DataTextTests
{
    private static string Study(string entry, string levels = "") =>
        $"---\ntitle: T\ndata:{(entry.StartsWith('{') ? "\n  d: " : " ")}{entry}\nresponse: y\nfactors:\n  dose:{levels}\n---\n\n```anova main\n```\n";

    private static string Errors(StudyRun run)
    {
        var result = run.Compile();
        Assert.False(result.Succeeded);
        return string.Join("\n", result.Diagnostics);
    }

    // ---- 4. what reaches the terminal ----

    [Fact]
    public void Build_LevelWithAnEscapeSequence_IsShownEscapedOnTheTerminal()
    {
        // An undeclared level "b<ESC>[2J" (clear screen), and a number cell with a right-to-left override.
        using var run = new StudyRun()
            .Study(Study("data.csv", " { levels: [a, b] }"))
            .File("data.csv", "dose,y\na,1\na,2\nb\u001B[2J,3\nb,4\nb,5\u202E1\n");
        var (exit, _, err) = run.Cli("build", "study.md");
        Assert.Equal(2, exit);
        Assert.DoesNotContain('\u001B', err);
        Assert.DoesNotContain('\u202E', err);
        Assert.Contains("data.csv:4:1: error: level 'b<U+001B>[2J' of factor 'dose' contains the invisible character U+001B (a control character)", err, StringComparison.Ordinal);
        Assert.Contains("data.csv:6:3: error: '5\\u202E1' is not a number in column 'y'", err, StringComparison.Ordinal);
    }

    [Fact]
    public void Build_StudyMessageQuotingControlCharacters_IsEscaped()
    {
        // A message built from the study's own text (an unknown factor name written with YAML escapes).
        using var run = new StudyRun().Study("---\ntitle: T\ndata: data.csv\nresponse: y\nfactors:\n  dose:\n---\n\n```anova main\nfactors: [\"do\\e]0;pwned\\ase\"]\n```\n").File("data.csv", "dose,y\na,1\na,2\nb,3\nb,4\n");
        var (exit, _, err) = run.Cli("build", "study.md");
        Assert.Equal(2, exit);
        Assert.Equal("study.md:10:11: error: unknown factor 'do\\u001B]0;pwned\\u0007se'\n", err);
    }

    [Theory]
    [InlineData("a\u001Bb", "a\\u001Bb")]
    [InlineData("tab\there", "tab\\u0009here")]
    [InlineData("line\nbreak\r", "line\\u000Abreak\\u000D")]
    [InlineData("c1\u009Bx\u007F", "c1\\u009Bx\\u007F")]
    [InlineData("bidi\u202Eevil\u2066\u200F\u061C", "bidi\\u202Eevil\\u2066\\u200F\\u061C")]
    [InlineData("kept: é 中 😀 \\u001B", "kept: é 中 😀 \\u001B")]
    public void Diagnostic_MessageAndPath_WriteUnsafeCharactersAsEscapes(string text, string shown)
    {
        var d = new Diagnostic(Severity.Error, "SP0000", "says " + text, new SourceLocation("dir" + text + "/s.md", 0, 0));
        Assert.Equal("says " + shown, d.Message);
        Assert.Equal($"dir{shown}/s.md:1:1: error: says {shown}", d.ToString());
        Assert.Equal(d.Message, (d with { Message = d.Message }).Message);
    }

    [Fact]
    public void Diff_HeaderWithAnEscapeSequence_IsShownEscaped()
    {
        // 'studypress diff' prints changed header lines of data files; one holds OSC "set window title".
        const string study = "---\ntitle: T\ndata: data.csv\nresponse: y\nfactors:\n  dose:\n---\n\n```anova main\n```\n";
        using var run = new StudyRun()
            .File("old/study.md", study).File("old/data.csv", "dose,y\na,1\na,2\nb,3\nb,4\n")
            .File("new/study.md", study).File("new/data.csv", "dose,y,note\u001B]0;pwned\u0007\na,1,x\na,2,x\nb,3,x\nb,4,x\n");
        var (_, output, err) = run.Cli("diff", "old/study.md", "new/study.md");
        Assert.Contains("+ header: dose,y,note\\u001B]0;pwned\\u0007", output, StringComparison.Ordinal);
        Assert.DoesNotContain('\u001B', output + err);
        Assert.DoesNotContain('\u0007', output + err);
    }

    [Fact]
    public void Diagnostic_UnpairedSurrogate_IsWrittenAsAnEscape()
    {
        var lone = "lone" + (char)0xD800 + "x" + (char)0xDC00;
        Assert.Equal("lone\\uD800x\\uDC00", new Diagnostic(Severity.Error, "SP0000", lone, new SourceLocation("s.md", 0, 0)).Message);
    }

    // ---- 5. one rule for level text, whatever the source ----

    [Theory]
    [InlineData("cast(x'6200' || x'63' as text)", "level 'b<U+0000>c' of factor 'dose' contains the invisible character U+0000 (a control character)")]
    [InlineData("'b' || char(27) || '[2J'", "level 'b<U+001B>[2J' of factor 'dose' contains the invisible character U+001B (a control character)")]
    [InlineData("'b' || char(8238)", "level 'b<U+202E>' of factor 'dose' contains the invisible character U+202E (a format character)")]
    [InlineData("cast(x'62ff' as text)", "the text in column 'dose' (row 3 of the query result) is not valid UTF-8 (byte 0xFF at offset 1)")]
    public void Sqlite_LevelThatBreaksTheTextRule_IsAnErrorNamingTheRowAndColumn(string third, string expected)
    {
        using var run = new StudyRun().Study(Study("{ path: data.sqlite, query: \"select dose, y from t order by rowid\" }"));
        SourcesFixtures.Sqlite(Path.Combine(run.Folder, "data.sqlite"), "create table t (dose text, y real)", "insert into t values ($p0, $p1)", [["a", 1.0], ["a", 2.0], ["b", 3.0], ["b", 4.0]]);
        RunSql(run, $"update t set dose = {third} where rowid = 3");
        var errors = Errors(run);
        Assert.True(errors.Contains("study.md:4:34: error: " + expected, StringComparison.Ordinal), errors);
    }

    [Fact]
    public void Sqlite_TwoDifferentInvalidUtf8Texts_AreNotMergedIntoOneLevel()
    {
        // Decoded with replacement characters, b\xFF and b\xFE both read as "b\uFFFD": one level made of two.
        using var run = new StudyRun().Study(Study("{ path: data.sqlite, query: \"select dose, y from t\", aggregate: true }"));
        SourcesFixtures.Sqlite(Path.Combine(run.Folder, "data.sqlite"), "create table t (dose text, y real)", "insert into t values ($p0, $p1)", [["a", 1.0], ["a", 2.0], ["b", 3.0], ["b", 4.0], ["c", 5.0], ["c", 6.0]]);
        RunSql(run, "update t set dose = cast(x'62ff' as text) where dose = 'b'", "update t set dose = cast(x'62fe' as text) where dose = 'c'");
        var errors = Errors(run);
        Assert.Contains("error: the text in column 'dose' (a group of the database's result) is not valid UTF-8 (byte 0xFF at offset 1)", errors, StringComparison.Ordinal);
        Assert.Contains("error: the text in column 'dose' (a group of the database's result) is not valid UTF-8 (byte 0xFE at offset 1)", errors, StringComparison.Ordinal);
    }

    [Fact]
    public void DuckDb_LevelWithAControlCharacter_IsAnErrorNamingTheRowAndColumn()
    {
        using var run = new StudyRun().Study(Study("{ path: data.duckdb, query: \"select dose, y from t order by y\" }"));
        SourcesFixtures.DuckDb(Path.Combine(run.Folder, "data.duckdb"), "create table t (dose varchar, y double)", "insert into t values ('a', 1), ('a', 2), ('b' || chr(27) || '[2J', 3), ('b', 4)");
        Assert.Contains("study.md:4:34: error: level 'b<U+001B>[2J' of factor 'dose' contains the invisible character U+001B (a control character)", Errors(run), StringComparison.Ordinal);
    }

    [Fact]
    public void Spreadsheet_LevelWithABidiOverride_IsAnErrorNamingTheCell()
    {
        using var run = new StudyRun().Study(Study("data.xlsx"));
        SourcesFixtures.WriteXlsx(Path.Combine(run.Folder, "data.xlsx"), "S", ["dose", "y"], [["a", 1m], ["a", 2m], ["b\u202Ea", 3m], ["b", 4m]]);
        Assert.Contains("data.xlsx:4:1: error: level 'b<U+202E>a' of factor 'dose' contains the invisible character U+202E (a format character)", Errors(run), StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("b\u0007", "level 'b<U+0007>' of factor 'dose' contains the invisible character U+0007 (a control character)")]
    [InlineData("b\u0085x", "level 'b<U+0085>x' of factor 'dose' contains the invisible character U+0085 (a control character)")]
    [InlineData("b\u2067", "level 'b<U+2067>' of factor 'dose' contains the invisible character U+2067 (a format character)")]
    public void Csv_LevelWithAControlOrBidiCharacter_IsAnErrorAtTheCell(string level, string expected)
    {
        // Both readers: a plain file (the byte-level fast path) and one with a quoted field (the general
        // reader). The value is in two rows and reported once, at its first cell.
        foreach (var quote in new[] { string.Empty, "\"" })
        {
            using var run = new StudyRun().Study(Study("data.csv")).File("data.csv", $"dose,y\na,1\na,2\n{quote}{level}{quote},3\n{quote}{level}{quote},3.5\nb,4\n");
            var (exit, _, err) = run.Cli("build", "study.md");
            Assert.Equal(2, exit);
            Assert.Equal($"data.csv:4:1: error: {expected}; remove it, or two levels could look the same\n", err);
        }
    }

    private static void RunSql(StudyRun run, params string[] statements)
    {
        using var c = new Microsoft.Data.Sqlite.SqliteConnection(new Microsoft.Data.Sqlite.SqliteConnectionStringBuilder { DataSource = Path.Combine(run.Folder, "data.sqlite"), Pooling = false }.ToString());
        c.Open();
        foreach (var sql in statements)
        {
            using var cmd = c.CreateCommand();
            cmd.CommandText = sql;
            cmd.ExecuteNonQuery();
        }
    }

    [Fact]
    public void UnsafeText_EscapingTwice_ChangesNothing()
    {
        var once = UnsafeText.Escape("x\u001B\u202E\u0000y");
        Assert.Equal("x\\u001B\\u202E\\u0000y", once);
        Assert.Equal(once, UnsafeText.Escape(once));
        Assert.Equal(-1, UnsafeText.FirstUnsafe(once));
    }
}
