using System.Text;
using StudyPress.Tests.Support;

namespace StudyPress.Tests;

/// <summary>
/// Bad input: every case must give exactly the expected FILE:LINE:COLUMN: error: MESSAGE lines,
/// exit status 2, and write no report. Positions are 1-based as printed.
/// </summary>
[Collection("cli")]
public sealed partial class DiagnosticsTests
{
    private const string Csv = "plot,dose,y\n1,a,1.0\n2,a,2.0\n3,b,3.5\n4,b,4.0\n5,c,5.5\n6,c,6.0\n";

    private static string Study(string header = "", string body = "```anova main\n```\n") =>
        "---\ntitle: T\ndata: data.csv\nresponse: y\nfactors:\n  dose:\n" + header + "---\n\n" + body;

    public static TheoryData<string, string, string, string> Cases() => new()
    {
        // name, study, data, expected stderr (diagnostic lines)
        { "unknown header key", "---\ntitle: T\nalfa: 0.1\ndata: data.csv\nresponse: y\n---\n", Csv, "study.md:3:1: error: unknown key 'alfa' in the header; did you mean 'alpha'?" },
        { "tab indentation", "---\ntitle: T\ndata:\n\td: data.csv\n---\n", Csv, "study.md:4:1: error: a tab is used for indentation; YAML needs spaces" },
        { "duplicate key", "---\ntitle: T\ntitle: U\ndata: data.csv\n---\n", Csv, "study.md:3:1: error: duplicate key 'title' (first given on line 2)" },
        { "alpha out of range", "---\ntitle: T\nalpha: 1.5\ndata: data.csv\n---\n", Csv, "study.md:3:8: error: alpha must be a number strictly between 0 and 1, not '1.5'" },
        { "alpha not a number", "---\ntitle: T\nalpha: five\ndata: data.csv\n---\n", Csv, "study.md:3:8: error: alpha must be a number strictly between 0 and 1, not 'five'" },
        { "missing title", "---\ndata: data.csv\n---\n", Csv, "study.md:2:1: error: missing required key 'title' in the header" },
        { "no header", "# Just prose\n", Csv, "study.md:1:1: error: a study file must start with a YAML header between '---' lines" },
        { "unclosed header", "---\ntitle: T\n", Csv, "study.md:1:1: error: the YAML header is not closed; add a line '---' after it" },
        { "unclosed bracket", "---\ntitle: T\ndata: data.csv\nfactors:\n  dose:\n    levels: [a, b\n---\n", Csv, "study.md:6:13: error: invalid YAML: this '[' is not closed with ']'" },
        { "unknown factor in block", Study(body: "```anova main\nfactors: [dos]\n```\n"), Csv, "study.md:10:11: error: unknown factor 'dos'; did you mean 'dose'?" },
        { "unknown block key", Study(body: "```anova main\nwelsh: yes\n```\n"), Csv, "study.md:10:1: error: unknown key 'welsh' in the anova block; did you mean 'welch'?" },
        { "bad choice", Study(body: "```anova main\nwelch: maybe\n```\n"), Csv, "study.md:10:8: error: 'welch' must be one of auto, yes, no, not 'maybe'" },
        { "unknown column", "---\ntitle: T\ndata: data.csv\nresponse: yy\nfactors:\n  dose:\n---\n\n```anova\n```\n", Csv, "study.md:4:11: error: column 'yy' is not in 'data.csv'; did you mean 'y'?" },
        { "not a number", Study(), "plot,dose,y\n1,a,1.0\n2,a,twelve\n3,b,3\n", "data.csv:3:5: error: 'twelve' is not a number in column 'y'" },
        { "two bad cells both reported", Study(), "plot,dose,y\n1,a,x\n2,a,2\n3,b,y\n", "data.csv:2:5: error: 'x' is not a number in column 'y'\ndata.csv:4:5: error: 'y' is not a number in column 'y'" },
        { "decimal comma", Study(), "plot,dose,y\n1,a,\"1,5\"\n2,b,2\n", "data.csv:2:5: error: '1,5' is not a number in column 'y'; if the file uses decimal commas, set 'decimal: \",\"' (and a ';' delimiter) for this dataset" },
        { "NaN cell", Study(), "plot,dose,y\n1,a,NaN\n2,b,2\n", "data.csv:2:5: error: 'NaN' is not a finite number in column 'y'; mark missing values with one of the 'missing' strings" },
        { "ragged row", Study(), "plot,dose,y\n1,a,1\n2,b\n3,b,2\n", "data.csv:3:1: error: this row has 2 fields but the header line has 3" },
        { "unterminated quote", Study(), "plot,dose,y\n1,a,1\n2,\"b,2\n3,b,2\n", "data.csv:3:3: error: a quoted field is not closed" },
        { "undeclared level", "---\ntitle: T\ndata: data.csv\nresponse: y\nfactors:\n  dose:\n    levels: [a, b, c]\n---\n\n```anova\n```\n", "plot,dose,y\n1,a,1\n2,b,2\n3,cc,3\n", "study.md:7:20: error: level 'c' of factor 'dose' declared here has no rows; the data have 'cc' (1 row): correct the spelling here or in the data" },
        { "undeclared level beside a declared one", "---\ntitle: T\ndata: data.csv\nresponse: y\nfactors:\n  dose:\n    levels: [a, b, c]\n---\n\n```anova\n```\n", "plot,dose,y\n1,a,1\n2,b,2\n3,c,2\n4,cc,3\n5,cc,3\n", "data.csv:5:3: error: 'cc' is not a declared level of factor 'dose' (2 rows; the first is here); did you mean 'c'?" },
        { "absent declared level", "---\ntitle: T\ndata: data.csv\nresponse: y\nfactors:\n  dose:\n    levels: [a, b, z]\n---\n\n```anova\n```\n", "plot,dose,y\n1,a,1\n2,a,2\n3,b,3\n4,b,4\n", "study.md:7:20: error: declared level 'z' of factor 'dose' has no rows in 'data.csv'" },
        { "duplicate column", Study(), "plot,dose,y,dose\n1,a,1,a\n", "data.csv:1:13: error: column 'dose' appears twice in the header line (first at column 2)" },
        { "empty data file", Study(), "", "data.csv:1:1: error: the data file is empty; the first line must name the columns" },
        { "header only", Study(), "plot,dose,y\n", "data.csv:1:1: error: the data file has a header line but no data rows" },
        { "unknown reference", Study(body: "```anova main\n```\n\nF is [=main.dose.fstat].\n"), Csv, "study.md:12:6: error: unknown reference 'main.dose.fstat'; did you mean 'main.dose.f'?" },
        { "reference to unknown block", Study(body: "```anova main\n```\n\nF is [=mian.dose.f].\n"), Csv, "study.md:12:6: error: no block with id 'mian'; did you mean 'main'?" },
        { "unclosed reference", Study(body: "```anova main\n```\n\nF is [=main.dose.f\n"), Csv, "study.md:12:6: error: a reference '[=' is not closed with ']' (a reference is at most 200 characters)" },
        { "reference in the old brace form", Study(body: "```anova main\n```\n\nF is {{ main.dose.f }}.\n"), Csv, "study.md:12:6: error: '{{ main.dose.f }}' is not a reference form; write [=main.dose.f]" },
        { "duplicate block id", Study(body: "```anova main\n```\n\n```summary main\n```\n"), Csv, "study.md:12:12: error: duplicate block id 'main' (first used on line 9)" },
        { "data path escapes", "---\ntitle: T\ndata: ../data.csv\nresponse: y\n---\n", Csv, "study.md:3:7: error: data path '../data.csv' leads outside the study's folder" },
        { "absolute data path", "---\ntitle: T\ndata: /etc/passwd\nresponse: y\n---\n", Csv, "study.md:3:7: error: data path '/etc/passwd' must be relative to the study file" },
        { "data file missing", "---\ntitle: T\ndata: nothere.csv\nresponse: y\n---\n", Csv, "study.md:3:7: error: data file 'nothere.csv' not found" },
        { "hash mismatch", "---\ntitle: T\ndata:\n  d:\n    path: data.csv\n    sha256: 0000000000000000000000000000000000000000000000000000000000000000\nresponse: y\n---\n", Csv, "study.md:6:13: error: 'data.csv' has SHA-256 …" },
        { "single level", Study(body: "```anova main\nwhere:\n  dose: a\n```\n"), Csv, "study.md:9:1: error: factor 'dose' has 1 level with data here; a comparison needs at least 2" },
        { "groups of one only", Study(), "plot,dose,y\n1,a,1\n2,b,2\n3,c,3\n", "study.md:9:1: error: every group has a single observation, so there is no residual variance to test against" },
        { "response needed", "---\ntitle: T\ndata: data.csv\nfactors:\n  dose:\n---\n\n```anova\n```\n", Csv, "study.md:8:1: error: no response column: set 'response' in the block or in the header" },
        { "ss-type out of range", Study(body: "```anova main\nss-type: 4\n```\n"), Csv, "study.md:10:10: error: 'ss-type' must be a whole number from 1 to 3, not '4'" },
        { "bad block id", Study(body: "```anova 9lives\n```\n"), Csv, "study.md:9:10: error: block id '9lives' must start with a letter and use only letters, digits, '_' and '-'" },
        { "yaml alias", "---\ntitle: &t T\nid: *t\ndata: data.csv\n---\n", Csv, "study.md:3:5: error: YAML aliases ('*name') are not supported in study files" },
    };

    [Theory]
    [MemberData(nameof(Cases))]
    [MemberData(nameof(MoreCases))]
    public void Build_BadInput_ReportsPositionedErrorExit2AndWritesNothing(string name, string study, string data, string expected)
    {
        using var run = new StudyRun().Study(study).File("data.csv", data);
        AssertRejected(run, name, expected);
    }

    [Theory]
    [MemberData(nameof(EncodingCases))]
    public void Build_BadEncoding_ReportsPositionedErrorExit2AndWritesNothing(string name, byte[] study, byte[] data, string expected)
    {
        using var run = new StudyRun().Bytes("study.md", study).Bytes("data.csv", data);
        AssertRejected(run, name, expected);
    }

    /// <summary>
    /// Runs the build over a study whose folder already holds a report, and checks the exact
    /// diagnostic lines (an expected line ending in '…' is a prefix), exit 2, no stack trace, the
    /// earlier report byte-identical and no other file written.
    /// </summary>
    internal static void AssertRejected(StudyRun run, string name, string expected)
    {
        var sentinel = Encoding.UTF8.GetBytes("<!-- an earlier report -->\n");
        File.WriteAllBytes(run.ReportPath, sentinel);
        var filesBefore = Directory.GetFiles(run.Folder, "*", SearchOption.AllDirectories).Order(StringComparer.Ordinal).ToList();
        var (exit, _, err) = run.Cli("build", "study.md");
        Assert.True(exit == 2, $"{name}: exit {exit}\n{err}");
        var lines = err.TrimEnd('\n').Split('\n');
        var want = expected.Split('\n');
        Assert.True(lines.Length == want.Length, $"{name}: expected {want.Length} line(s), got:\n{err}");
        for (var i = 0; i < want.Length; i++)
        {
            var ok = want[i].EndsWith('…')
                ? lines[i].StartsWith(want[i][..^1], StringComparison.Ordinal)
                : lines[i] == want[i];
            Assert.True(ok, $"{name}: expected\n  {want[i]}\ngot\n  {lines[i]}");
        }

        Assert.DoesNotContain("   at ", err, StringComparison.Ordinal);
        Assert.Equal(sentinel, File.ReadAllBytes(run.ReportPath));
        Assert.Equal(filesBefore, Directory.GetFiles(run.Folder, "*", SearchOption.AllDirectories).Order(StringComparer.Ordinal).ToList());
    }

    [Fact]
    public void Build_BadInputAfterGoodBuild_LeavesEarlierReportUntouched()
    {
        using var run = new StudyRun().Study(Study()).File("data.csv", Csv);
        Assert.Equal(0, run.Cli("build", "study.md").Exit);
        var before = File.ReadAllBytes(run.ReportPath);
        run.File("data.csv", "plot,dose,y\n1,a,oops\n");
        Assert.Equal(2, run.Cli("build", "study.md").Exit);
        Assert.Equal(before, File.ReadAllBytes(run.ReportPath));
        Assert.Empty(Directory.GetFiles(run.Folder, "*.tmp"));
    }

    [Fact]
    public void Build_InvalidUtf8InData_PointsAtTheByte()
    {
        using var run = new StudyRun().Study(Study());
        run.Bytes("data.csv", [.. Encoding.ASCII.GetBytes("plot,dose,y\n1,a,"), 0xC3, 0x28, (byte)'\n']);
        var (exit, _, err) = run.Cli("build", "study.md");
        Assert.Equal(2, exit);
        Assert.StartsWith("data.csv:2:5: error: the file is not valid UTF-8 (byte 0xC3 at offset 16)", err, StringComparison.Ordinal);
    }

    [Fact]
    public void Build_Utf16Study_SaysSaveAsUtf8()
    {
        using var run = new StudyRun().File("data.csv", Csv);
        run.Bytes("study.md", Encoding.Unicode.GetPreamble().Concat(Encoding.Unicode.GetBytes(Study())).ToArray());
        var (exit, _, err) = run.Cli("build", "study.md");
        Assert.Equal(2, exit);
        Assert.StartsWith("study.md:1:1: error: the file is UTF-16; save it as UTF-8", err, StringComparison.Ordinal);
    }
}
