using System.Text.Json;
using System.Text.RegularExpressions;
using StudyPress.Tests.Support;

namespace StudyPress.Tests;

/// <summary>The HTML report: self-contained, traced, escaped, deterministic.</summary>
[Collection("cli")]
public sealed partial class ReportTests
{
    private const string Csv = "plot,dose,y\n1,a,1.0\n2,a,2.0\n3,a,1.5\n4,b,3.5\n5,b,4.0\n6,b,4.4\n7,c,5.5\n8,c,6.0\n9,c,5.1\n";

    private static string Study(string title = "Dose trial", string prose = "F was [=main.dose.f] ([=main.dose.p]).") =>
        $"---\ntitle: \"{title}\"\ndata: data.csv\nresponse: y\nfactors:\n  dose:\n---\n\n```summary s\n```\n\n```anova main\nwelch: yes\n```\n\n{prose}\n";

    [GeneratedRegex("data-v=\"(v[0-9]+)\"")]
    private static partial Regex TraceId();

    [GeneratedRegex("<script type=\"application/json\" id=\"study-results\">(.*?)</script>", RegexOptions.Singleline)]
    private static partial Regex EmbeddedManifest();

    [Fact]
    public void Report_Header_ShowsTheIdOnlyWhenItSaysMoreThanTheFileName()
    {
        using var run = new StudyRun().Study(Study()).File("data.csv", Csv);
        var plain = run.Compile();
        Assert.True(plain.Succeeded, string.Join("\n", plain.Diagnostics));
        Assert.Contains("<p class=\"study-id\">compiled by studypress ", plain.Html!, StringComparison.Ordinal);
        Assert.DoesNotContain("Study <code>study</code>", plain.Html!, StringComparison.Ordinal);

        run.Study(Study().Replace("---\ntitle:", "---\nid: trial-7\ntitle:", StringComparison.Ordinal));
        var named = run.Compile();
        Assert.True(named.Succeeded, string.Join("\n", named.Diagnostics));
        Assert.Contains("<p class=\"study-id\">Study <code>trial-7</code> · compiled by studypress ", named.Html!, StringComparison.Ordinal);
    }

    [Fact]
    public void Report_EveryVisibleNumber_CarriesAManifestIdThatExists()
    {
        using var run = new StudyRun().Study(Study()).File("data.csv", Csv);
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        var ids = TraceId().Matches(result.Html!).Select(m => m.Groups[1].Value).ToList();
        var manifest = new ManifestView(result.ManifestJson!);
        var known = manifest.Values.Select(v => v.GetProperty("id").GetString()).ToHashSet();
        Assert.NotEmpty(ids);
        Assert.All(ids, id => Assert.Contains(id, known));

        // Every number in a table cell is inside a traced element.
        var main = result.Html![result.Html!.IndexOf("<main", StringComparison.Ordinal)..result.Html!.IndexOf("</main>", StringComparison.Ordinal)];
        var cells = Regex.Matches(main, "<td>(.*?)</td>").Select(m => m.Groups[1].Value);
        Assert.All(cells.Where(c => Regex.IsMatch(c, "[0-9]")), c => Assert.Contains("data-v=", c, StringComparison.Ordinal));
    }

    [Fact]
    public void Report_EmbedsTheSameManifestAsJsonOption()
    {
        using var run = new StudyRun().Study(Study()).File("data.csv", Csv);
        var (exit, _, err) = run.Cli("build", "study.md", "--json", "results.json");
        Assert.True(exit == 0, err);
        var html = File.ReadAllText(run.ReportPath);
        var embedded = EmbeddedManifest().Match(html).Groups[1].Value;
        Assert.Equal(File.ReadAllText(Path.Combine(run.Folder, "results.json")).TrimEnd('\n'), embedded);
        using var doc = JsonDocument.Parse(embedded);
        Assert.Equal("studypress-results/1", doc.RootElement.GetProperty("format").GetString());
        var input = doc.RootElement.GetProperty("inputs")[0];
        Assert.Equal("data.csv", input.GetProperty("path").GetString());
        Assert.Equal(9, input.GetProperty("rows").GetInt32());
        Assert.Equal(9, input.GetProperty("rowsUsed").GetInt32());
        Assert.Equal(64, input.GetProperty("sha256").GetString()!.Length);
    }

    [Fact]
    public void Report_IsSelfContainedWithStrictContentSecurityPolicy()
    {
        using var run = new StudyRun().Study(Study()).File("data.csv", Csv);
        // The SVG namespace name is an identifier, not a network reference.
        var html = run.Compile().Html!.Replace("xmlns=\"http://www.w3.org/2000/svg\"", string.Empty, StringComparison.Ordinal);
        Assert.Contains("<meta http-equiv=\"Content-Security-Policy\" content=\"default-src 'none'; style-src 'sha256-", html, StringComparison.Ordinal);
        Assert.DoesNotContain("http://", html, StringComparison.Ordinal);
        Assert.DoesNotContain("https://", html, StringComparison.Ordinal);
        Assert.DoesNotContain("<link", html, StringComparison.Ordinal);
        Assert.DoesNotContain(" style=\"", html, StringComparison.Ordinal);
        Assert.DoesNotContain(" src=", html, StringComparison.Ordinal);
    }

    [Fact]
    public void Report_UserStrings_AreEscaped()
    {
        using var run = new StudyRun()
            .Study(Study(title: "<script>alert(1)</script>", prose: "Prose <img src=x onerror=alert(2)> and [=main.dose.f]."))
            .File("data.csv", Csv.Replace(",a,", ",<b>a</b>,", StringComparison.Ordinal));
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        var html = result.Html!;
        Assert.DoesNotContain("<script>alert", html, StringComparison.Ordinal);
        Assert.DoesNotContain("<img", html, StringComparison.Ordinal);
        Assert.DoesNotContain("<b>a</b>", html, StringComparison.Ordinal);
        Assert.Contains("&lt;script&gt;alert(1)&lt;/script&gt;", html, StringComparison.Ordinal);
        Assert.Contains("&lt;b&gt;a&lt;/b&gt;", html, StringComparison.Ordinal);
        // In the embedded manifest the level name is JSON-escaped, so it cannot close the script element.
        Assert.Contains("\\u003Cb\\u003Ea\\u003C/b\\u003E", html, StringComparison.Ordinal);
    }

    [Fact]
    public void Report_SameStudyTwice_IsByteIdentical()
    {
        using var run = new StudyRun().Study(Study()).File("data.csv", Csv);
        Assert.Equal(0, run.Cli("build", "study.md", "--json", "a.json").Exit);
        var first = File.ReadAllBytes(run.ReportPath);
        Assert.Equal(0, run.Cli("build", "study.md", "--json", "b.json").Exit);
        Assert.Equal(first, File.ReadAllBytes(run.ReportPath));
        Assert.Equal(File.ReadAllBytes(Path.Combine(run.Folder, "a.json")), File.ReadAllBytes(Path.Combine(run.Folder, "b.json")));
    }

    [Fact]
    public void Report_ProseReferences_ShowRoundedValueWithTrace()
    {
        using var run = new StudyRun().Study(Study(prose: "F = [=main.dose.f], Welch F = [=main.welch.dose.f], mean of a = [=s.a.mean].")).File("data.csv", Csv);
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        var m = new ManifestView(result.ManifestJson!);
        var f = m.Find("main", "anova", "dose", "f").Single();
        var id = f.GetProperty("id").GetString();
        var shown = new StudyPress.Rendering.NumberFormat(3, 3).General(f.GetProperty("value").GetDouble());
        Assert.Contains($"F = <span class=\"v\" data-v=\"{id}\" tabindex=\"0\">{shown}</span>", result.Html!, StringComparison.Ordinal);
        var mean = m.Find("s", "summary", "dose", "mean", "a").Single();
        Assert.Equal(1.5, mean.GetProperty("value").GetDouble());
        Assert.Contains($"mean of a = <span class=\"v\" data-v=\"{mean.GetProperty("id").GetString()}\" tabindex=\"0\">1.50</span>", result.Html!, StringComparison.Ordinal);
    }

    [Fact]
    public void Data_MissingResponse_RowsAreDroppedAndCounted()
    {
        using var run = new StudyRun().Study(Study()).File("data.csv", Csv + "10,a,NA\n11,b,\n");
        var m = run.Manifest();
        var input = m.Document.RootElement.GetProperty("inputs")[0];
        Assert.Equal(11, input.GetProperty("rows").GetInt32());
        Assert.Equal(9, input.GetProperty("rowsUsed").GetInt32());
        Assert.Equal(1, m.Get("s", "summary", "dose", "missing", "a"));
        Assert.Equal(3, m.Get("s", "summary", "dose", "n", "a"));
        Assert.Equal(8, m.Get("main", "anova", "total", "df"));
    }

    [Fact]
    public void Data_QuotedFieldsBomCrlfSemicolonAndDecimalComma_AreRead()
    {
        var csv = "\uFEFFplot;dose;y\r\n1;\"a; first\";1,0\r\n2;\"a; first\";2,0\r\n3;\"b \"\"x\"\"\";3,5\r\n4;\"b \"\"x\"\"\";4,5\r\n";
        using var run = new StudyRun()
            .Study("---\ntitle: T\ndata:\n  d:\n    path: data.csv\n    delimiter: \";\"\n    decimal: \",\"\nresponse: y\nfactors:\n  dose:\n---\n\n```summary s\n```\n")
            .File("data.csv", csv);
        var m = run.Manifest();
        Assert.Equal(1.5, m.Get("s", "summary", "dose", "mean", "a; first"));
        Assert.Equal(4.0, m.Get("s", "summary", "dose", "mean", "b \"x\""));
    }

    [Fact]
    public void Data_ValuesNear1e12_KeepEveryDigitOfTheMean()
    {
        // Values of the kind in NIST StRD SmLs07: 13 constant leading digits.
        using var run = new StudyRun()
            .Study("---\ntitle: T\ndata: data.csv\nresponse: y\nfactors:\n  g:\n---\n\n```summary s\n```\n")
            .File("data.csv", "g,y\na,1000000000000.4\na,1000000000000.3\na,1000000000000.5\nb,1000000000000.2\nb,1000000000000.2\n");
        var m = run.Manifest();
        Assert.Equal(1000000000000.4, m.Get("s", "summary", "g", "mean", "a"));
        Assert.Equal(0.1, m.Get("s", "summary", "g", "sd", "a"), 15);
        Assert.Equal(1000000000000.2, m.Get("s", "summary", "g", "median", "b"));
    }

    [Fact]
    public void Cli_Help_ListsBuildAndExitsZero()
    {
        using var run = new StudyRun();
        var (exit, output, _) = run.Cli("build", "--help");
        Assert.Equal(0, exit);
        Assert.Contains("--out", output, StringComparison.Ordinal);
        Assert.Contains("--json", output, StringComparison.Ordinal);
    }

    [Fact]
    public void Cli_UnknownOption_IsUsageErrorExit64()
    {
        using var run = new StudyRun();
        var (exit, _, err) = run.Cli("build", "--frobnicate", "x.md");
        Assert.Equal(64, exit);
        Assert.StartsWith("studypress: error: ", err, StringComparison.Ordinal);
    }

    [Fact]
    public void Cli_OutOption_WritesReportIntoFolder()
    {
        using var run = new StudyRun().Study(Study()).File("data.csv", Csv);
        var (exit, output, err) = run.Cli("build", "study.md", "--out", "site");
        Assert.True(exit == 0, err);
        Assert.True(File.Exists(Path.Combine(run.Folder, "site", "study.html")));
        Assert.Contains("wrote site/study.html", output, StringComparison.Ordinal);
        using var doc = JsonDocument.Parse(EmbeddedManifest().Match(File.ReadAllText(Path.Combine(run.Folder, "site", "study.html"))).Groups[1].Value);
        Assert.Equal("../study.md", doc.RootElement.GetProperty("study").GetProperty("path").GetString());
    }

    [Fact]
    public void Cli_InternalErrorPath_IsNotReachedByMissingFile()
    {
        using var run = new StudyRun();
        var (exit, _, err) = run.Cli("build", "nothere.md");
        Assert.Equal(2, exit);
        Assert.Equal("nothere.md:1:1: error: no such study file or folder\n", err);
    }
}
