using System.Net;
using System.Text.RegularExpressions;
using StudyPress.Tests.Support;

namespace StudyPress.Tests;

/// <summary>
/// The header's <c>response</c> with a label and a unit, used instead of the column name in text,
/// captions and axis titles; its mistakes; and the default study id taken from the folder.
/// </summary>
public sealed class ResponseLabelTests
{
    private const string Csv = "g,y\nA,1\nA,2\nA,3\nB,3\nB,4\nB,5\nC,5\nC,6\nC,7\n";

    private static string Study(string response) => $"""
        ---
        title: Labels
        data: {"{"} d: data/d.csv {"}"}
        {response}
        factors: {"{"} g: {"{"} levels: [A, B, C] {"}"} {"}"}
        ---

        ```summary groups
        ```

        ```anova main
        ```

        ```methods
        ```
        """;

    private static string Visible(string html) => WebUtility.HtmlDecode(Regex.Replace(html, "<[^>]+>", string.Empty));

    [Fact]
    public void LabelAndUnit_AreUsedInTextCaptionsAndAxisTitles()
    {
        using var run = new StudyRun().File("data/d.csv", Csv).Study(Study("response: {column: y, label: Coating thickness, unit: µm}"));
        var r = run.Compile();
        Assert.True(r.Succeeded, string.Join("\n", r.Diagnostics));
        var html = r.Html!;
        var captions = Regex.Matches(html, "<caption>(.*?)</caption>").Select(m => Visible(m.Groups[1].Value)).ToList();
        Assert.Contains("Analysis of variance of Coating thickness (µm)", captions);
        Assert.Contains("Summary of Coating thickness (µm) by g", captions);
        var methods = Visible(Regex.Match(html, "<p class=\"methods-methods\">(.*?)</p>", RegexOptions.Singleline).Groups[1].Value);
        Assert.Contains("9 observations of Coating thickness (µm), 3 in each", methods, StringComparison.Ordinal);

        // The charts' axis titles (inline SVG text).
        var svgText = Regex.Matches(html, "<svg.*?</svg>", RegexOptions.Singleline).Select(m => Visible(m.Value)).ToList();
        Assert.Contains(svgText, t => t.Contains("Coating thickness (µm)", StringComparison.Ordinal));
        Assert.DoesNotContain(svgText, t => Regex.IsMatch(t, @"\by\b by g"));

        // The plain form keeps working and shows the column name.
        run.Study(Study("response: y"));
        var plain = run.Compile();
        Assert.True(plain.Succeeded, string.Join("\n", plain.Diagnostics));
        Assert.Contains("<caption>Analysis of variance of y</caption>", plain.Html!, StringComparison.Ordinal);
        Assert.DoesNotContain("Coating", plain.Html!, StringComparison.Ordinal);
    }

    [Fact]
    public void UnitWithoutLabel_FollowsTheColumnName()
    {
        using var run = new StudyRun().File("data/d.csv", Csv).Study(Study("response: {column: y, unit: mm}"));
        var r = run.Compile();
        Assert.True(r.Succeeded, string.Join("\n", r.Diagnostics));
        Assert.Contains("<caption>Analysis of variance of y (mm)</caption>", r.Html!, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("response: [y, z]", "SP0290", 4, 11, "'response' is a column name or a mapping")]
    [InlineData("response: {label: Thickness}", "SP0202", 4, 11, "missing required key 'column' in 'response'")]
    [InlineData("response: {column: y, label: \"  \"}", "SP0291", 4, 30, "the response's 'label' must not be empty")]
    [InlineData("response: {column: y, unit: \"\"}", "SP0291", 4, 29, "the response's 'unit' must not be empty")]
    [InlineData("response: {column: y, lable: Thickness}", "SP0201", 4, 23, "did you mean 'label'?")]
    [InlineData("response: {column: yy, label: Thickness}", "SP0308", 4, 20, "column 'yy' is not in")]
    public void ResponseMistake_IsOneErrorAtTheKey(string response, string code, int line, int column, string message)
    {
        using var run = new StudyRun().File("data/d.csv", Csv).Study(Study(response));
        var r = run.Compile();
        Assert.False(r.Succeeded);
        var d = Assert.Single(r.Diagnostics);
        Assert.Equal(code, d.Code);
        Assert.Contains(message, d.Message, StringComparison.Ordinal);
        Assert.Equal((line, column), (d.Location.Line + 1, d.Location.Column + 1));
    }

    [Fact]
    public void DefaultStudyId_IsTheFolderName_ForAStudyMd()
    {
        using var run = new StudyRun().File("coating-trial/data/d.csv", Csv).File("coating-trial/study.md", Study("response: y"));
        var r = Compilation.Compile(Path.Combine(run.Folder, "coating-trial", "study.md"), new CompileOptions());
        Assert.True(r.Succeeded, string.Join("\n", r.Diagnostics));
        Assert.NotEmpty(r.Figures);
        Assert.All(r.Figures, f => Assert.StartsWith("coating-trial_", f.FileName, StringComparison.Ordinal));
        Assert.Contains("<p class=\"study-id\">Study <code>coating-trial</code> · ", r.Html!, StringComparison.Ordinal);

        // A folder name that is no valid id (StudyRun's "run.…") leaves the id "study", which the header does not repeat.
        run.File("data/d.csv", Csv).Study(Study("response: y"));
        var plain = run.Compile();
        Assert.True(plain.Succeeded, string.Join("\n", plain.Diagnostics));
        Assert.All(plain.Figures, f => Assert.StartsWith("study_", f.FileName, StringComparison.Ordinal));
        Assert.DoesNotContain("Study <code>study</code>", plain.Html!, StringComparison.Ordinal);
        Assert.DoesNotContain("Study study", Visible(plain.Html!), StringComparison.Ordinal);

        // Another file name is the id, as before.
        run.File("trial.md", Study("response: y"));
        var named = Compilation.Compile(Path.Combine(run.Folder, "trial.md"), new CompileOptions());
        Assert.True(named.Succeeded, string.Join("\n", named.Diagnostics));
        Assert.All(named.Figures, f => Assert.StartsWith("trial_", f.FileName, StringComparison.Ordinal));
    }

    [Fact]
    public void Examples_ReportHeaders_NeverSayStudyStudy()
    {
        foreach (var dir in Directory.GetDirectories(Path.Combine(Repository.Root, "examples")))
        {
            var r = Compilation.Compile(Path.Combine(dir, "study.md"), new CompileOptions());
            Assert.True(r.Succeeded, string.Join("\n", r.Diagnostics));
            Assert.DoesNotContain("Study study", Visible(r.Html!), StringComparison.Ordinal);
            Assert.Contains($"Study <code>{Path.GetFileName(dir)}</code> · ", r.Html!, StringComparison.Ordinal);
        }
    }
}
