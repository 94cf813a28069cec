using System.Globalization;
using System.Text;
using StudyPress.Diagnostics;
using StudyPress.Tests.Support;

namespace StudyPress.Tests;

/// <summary>
/// Resource limits and report safety: many blocks, many bad cells, template syntax in prose,
/// zero variance everywhere, and every user string escaped.
/// </summary>
[Collection("cli")]
public sealed class HostileLimitsTests
{
    private const string Csv = "plot,dose,y\n1,a,1.0\n2,a,2.0\n3,b,3.5\n4,b,4.0\n5,c,5.5\n6,c,6.0\n";

    private const string Hdr = "---\ntitle: T\ndata: data.csv\nresponse: y\nfactors:\n  dose:\n---\n\n";

    [Fact]
    public void Build_EightyMistakes_ReportsTheFirstFiftyInOrderThenOneTooManyLine()
    {
        // Eighty separate mistakes (unknown header keys; bad cells of one column now make one
        // message, so they no longer reach the cap).
        var header = new StringBuilder("---\ntitle: T\ndata: data.csv\nresponse: y\nfactors:\n  dose:\n");
        for (var i = 0; i < 80; i++)
        {
            header.Append(CultureInfo.InvariantCulture, $"zz{i}: 1\n");
        }

        using var run = new StudyRun().Study(header + "---\n\n```anova main\n```\n").File("data.csv", Csv);
        var expected = Enumerable.Range(0, DiagnosticBag.MaxErrorsPerFile)
            .Select(i => string.Create(CultureInfo.InvariantCulture, $"study.md:{i + 7}:1: error: unknown key 'zz{i}' in the header"))
            .Append(string.Create(CultureInfo.InvariantCulture, $"study.md:{DiagnosticBag.MaxErrorsPerFile + 7}:1: error: too many errors; only the first 50 in this file are shown"));
        DiagnosticsTests.AssertRejected(run, "80 mistakes", string.Join("\n", expected));
    }

    [Fact]
    public void Build_EightyBadCellsInOneColumn_ReportsOneMessageWithTheCount()
    {
        var csv = new StringBuilder("plot,dose,y\n");
        for (var i = 0; i < 80; i++)
        {
            csv.Append(CultureInfo.InvariantCulture, $"{i + 1},{(i % 2 == 0 ? "a" : "b")},bad{i}\n");
        }

        using var run = new StudyRun().Study(Hdr + "```anova main\n```\n").File("data.csv", csv.ToString());
        DiagnosticsTests.AssertRejected(run, "80 bad cells", "data.csv:2:5: error: 'bad0' is not a number in column 'y'; 79 more cells in this column have the same problem");
    }

    [Fact]
    public void Build_ThreeHundredBlocks_Builds()
    {
        var body = new StringBuilder();
        for (var i = 0; i < 100; i++)
        {
            body.Append(CultureInfo.InvariantCulture, $"```summary s{i}\n```\n\n```anova a{i}\nwelch: no\n```\n\n```power p{i}\ngroups: 3\neffect: 0.4\nn: 5\n```\n\nF = [=a{i}.dose.f].\n\n");
        }

        using var run = new StudyRun().Study(Hdr.Replace("---\n\n", "report:\n  figures: none\n---\n\n", StringComparison.Ordinal) + body).File("data.csv", Csv);
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        Assert.Equal(300, result.Html!.Split("<section class=\"block ", StringSplitOptions.None).Length - 1);
    }

    [Fact]
    public void Build_MoreBlocksThanTheLimit_StopsAtTheFirstBlockOverIt()
    {
        var body = new StringBuilder();
        for (var i = 0; i <= Binding.BlockBinder.MaxBlocks; i++)
        {
            body.Append("```power\ngroups: 3\neffect: 0.4\nn: 5\n```\n\n");
        }

        using var run = new StudyRun().Study(Hdr + body).File("data.csv", Csv);
        var line = 9 + (6 * Binding.BlockBinder.MaxBlocks);
        DiagnosticsTests.AssertRejected(run, "too many blocks", string.Create(CultureInfo.InvariantCulture, $"study.md:{line}:1: error: a study may hold at most {Binding.BlockBinder.MaxBlocks} analysis blocks"));
    }

    [Fact]
    public void Build_TemplateSyntaxInUserText_IsShownLiterallyAndNeverEvaluated()
    {
        // The page shell is a template; user text must never reach the template engine as source.
        var study = "---\ntitle: \"{{ csp }} {% raw %}\"\nauthors: [\"{{ for x in 1..3 }}{{ x }}{{ end }}\"]\ndata: data.csv\nresponse: y\nfactors:\n  dose:\n    label: \"{{ js }}\"\n---\n\n"
            + "```summary s\ncaption: \"{{ body }}\"\n```\n\n{% for x in y %}loop{% endfor %} and `{{ main.dose.f }}` in code.\n";
        using var run = new StudyRun().Study(study).File("data.csv", "plot,dose,y\n1,{{x}},1\n2,{{x}},2\n3,b,3\n4,b,5\n");
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        var html = result.Html!;
        Assert.Contains("<h1 class=\"study-title\">{{ csp }} {% raw %}</h1>", html, StringComparison.Ordinal);
        Assert.Contains("{{ for x in 1..3 }}{{ x }}{{ end }}", html, StringComparison.Ordinal);
        Assert.Contains("{% for x in y %}loop{% endfor %}", html, StringComparison.Ordinal);
        Assert.Contains("<code>{{ main.dose.f }}</code>", html, StringComparison.Ordinal);
        Assert.Contains("{{ body }}", html, StringComparison.Ordinal);
        Assert.Contains("{{x}}", html, StringComparison.Ordinal);
        Assert.Contains("{{ js }}", html, StringComparison.Ordinal);
        Assert.Single(html.Split("Content-Security-Policy", StringSplitOptions.None).Skip(1));
    }

    [Fact]
    public void Build_ZeroVarianceEverywhere_BuildsWithVisibleReasonsAndNoNaN()
    {
        var study = Hdr + "```summary s\n```\n\n```anova main\n```\n\n```assumptions chk\n```\n\n```posthoc ph\n```\n\n```ranks r\nfactor: dose\n```\n\n```figure\ntype: box\n```\n\n```figure\ntype: residuals-fitted\n```\n";
        using var run = new StudyRun().Study(study).File("data.csv", "plot,dose,y\n1,a,1\n2,a,1\n3,b,1\n4,b,1\n5,c,1\n6,c,1\n");
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        AssertNoNaN(result);
        Assert.Contains("title=\"not defined: the residual variance is zero\"", result.Html, StringComparison.Ordinal);
    }

    [Fact]
    public void Build_GroupsOfOneBesideLargerGroups_BuildsWithoutNaN()
    {
        var study = Hdr + "```summary s\n```\n\n```anova main\n```\n\n```assumptions chk\n```\n\n```posthoc ph\nmethod: games-howell\n```\n\n```ranks r\nfactor: dose\n```\n";
        using var run = new StudyRun().Study(study).File("data.csv", "plot,dose,y\n1,a,1\n2,a,2\n3,a,2.5\n4,b,3\n5,c,3.5\n");
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        AssertNoNaN(result);
        Assert.Contains("n/d", result.Html, StringComparison.Ordinal);
    }

    [Fact]
    public void Build_MarkupInEveryUserString_IsEscapedInHtmlAndJson()
    {
        const string P = "<q-x a=\"1\">&amp;</q-x>";
        var y = "\"" + P.Replace("\"", "\\\"", StringComparison.Ordinal) + "\"";
        var study = $"---\ntitle: {y}\nauthors: [{y}]\nid: markup-everywhere\ndata: data.csv\nresponse: {y}\nfactors:\n  dose:\n    label: {y}\n---\n\n"
            + $"Prose {P} and [link]({P}).\n\n```summary s\ncaption: {y}\n```\n\n```anova main\n```\n";
        var csvP = "\"" + P.Replace("\"", "\"\"", StringComparison.Ordinal) + "\"";
        using var run = new StudyRun().Study(study).File("data.csv", $"plot,dose,{csvP}\n1,{csvP},1\n2,{csvP},2\n3,b,3\n4,b,5\n");
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        Assert.DoesNotContain("<q-x", result.Html, StringComparison.Ordinal);
        Assert.Contains("&lt;q-x", result.Html, StringComparison.Ordinal);
        var json = Encoding.UTF8.GetString(result.ManifestJson!);
        Assert.DoesNotContain("<", json, StringComparison.Ordinal);
        Assert.Contains("\\u003Cq-x", json, StringComparison.Ordinal);
    }

    private static void AssertNoNaN(CompilationResult result)
    {
        Assert.DoesNotContain("NaN", result.Html, StringComparison.Ordinal);
        Assert.DoesNotContain("Infinity", result.Html, StringComparison.Ordinal);
        var json = Encoding.UTF8.GetString(result.ManifestJson!);
        Assert.DoesNotContain("NaN", json, StringComparison.Ordinal);
        Assert.DoesNotContain("Infinity", json, StringComparison.Ordinal);
    }
}
