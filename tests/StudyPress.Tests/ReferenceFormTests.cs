using System.Net;
using System.Text.RegularExpressions;
using StudyPress.Tests.Support;

namespace StudyPress.Tests;

/// <summary>
/// The inline reference form <c>[=path, words]</c>: where it is read and where it is text, the
/// brace form of earlier versions, the renamed report keys, and the examples' prose. The data are
/// a fixture (means 1, 3, 5 with n = 3 each); the numbers checked are exact hand computations:
/// F = (24 / 2) / (6 / 6) = 12 on 2 and 6 df, p = (1 + 2F/6)^-3 = 1/125 = 0.008.
/// </summary>
[Collection("cli")]
public sealed partial class ReferenceFormTests
{
    private const string Csv = "plot,dose,y\n1,a,0\n2,a,1\n3,a,2\n4,b,2\n5,b,3\n6,b,4\n7,c,4\n8,c,5\n9,c,6\n";

    private static string Study(string prose, string report = "") =>
        "---\ntitle: References\ndata: data.csv\nresponse: y\nfactors:\n  dose:\n" + report + "---\n\n```anova main\nwelch: no\n```\n\n" + prose + "\n";

    [GeneratedRegex("<[^>]+>")]
    private static partial Regex Tag();

    private static string Body(string html)
    {
        var start = html.IndexOf("<main", StringComparison.Ordinal);
        var end = html.IndexOf("</main>", StringComparison.Ordinal);
        return html[start..end];
    }

    /// <summary>The visible text of the paragraph that starts with <paramref name="first"/>.</summary>
    private static string Paragraph(string html, string first)
    {
        var m = Regex.Match(Body(html), "<p>(" + Regex.Escape(first) + ".*?)</p>", RegexOptions.Singleline);
        Assert.True(m.Success, "no paragraph starting with " + first);
        return WebUtility.HtmlDecode(Tag().Replace(m.Groups[1].Value, string.Empty));
    }

    private static CompilationResultView Build(string study)
    {
        using var run = new StudyRun().Study(study).File("data.csv", Csv);
        var r = run.Compile();
        return new CompilationResultView(r.Succeeded, r.Html, string.Join("\n", r.Diagnostics));
    }

    private sealed record CompilationResultView(bool Succeeded, string? Html, string Diagnostics);

    [Fact]
    public void Reference_IsReadInProse_ButNotWhenEscapedOrInCode()
    {
        var r = Build(Study("Read: F = [=main.dose.f] and \\[=main.dose.f] and `[=main.dose.f]` and \\{{ main.dose.f }} and `{{ x }}`.\n\n```\n[=main.dose.f]\n```\n\n~~~text\n{{ main.dose.f }}\n~~~"));
        Assert.True(r.Succeeded, r.Diagnostics);
        Assert.Equal("Read: F = 12.0 and [=main.dose.f] and [=main.dose.f] and {{ main.dose.f }} and {{ x }}.", Paragraph(r.Html!, "Read:"));
        Assert.Contains("<code>[=main.dose.f]</code>", r.Html!, StringComparison.Ordinal);
        Assert.Contains("<pre><code>[=main.dose.f]\n</code></pre>", r.Html!, StringComparison.Ordinal);
        Assert.Contains("{{ main.dose.f }}\n</code></pre>", r.Html!, StringComparison.Ordinal);
    }

    [Fact]
    public void Reference_BesideLinkAndImageSyntax_IsStillAReference()
    {
        // '![=…]' would otherwise open an image, '[=…](x)' a link, '[see [=…]](url)' a link around it.
        var r = Build(Study("Marks: ![=main.dose.f] [=main.dose.f](x) [see [=main.dose.f]](https://example.org) [label][=main.dose.f]."));
        Assert.True(r.Succeeded, r.Diagnostics);
        Assert.Equal("Marks: !12.0 12.0(x) see 12.0 [label]12.0.", Paragraph(r.Html!, "Marks:"));
        Assert.Contains("<a href=\"https://example.org\">see <span class=\"v\"", r.Html!, StringComparison.Ordinal);
    }

    [Fact]
    public void Reference_QuotedPartsAndLineBreaks_AreRead()
    {
        var r = Build(Study("Wrapped: [=main.means.\"dose\".a.mean,\n2 decimals] and [=main.dose.f ,  1 decimal ] and [=main\n.dose.p]."));
        Assert.True(r.Succeeded, r.Diagnostics);
        Assert.Equal("Wrapped: 1.00 and 12.0 and p = 0.008.", Paragraph(r.Html!, "Wrapped:").Replace("\n", " ", StringComparison.Ordinal));
    }

    [Fact]
    public void PValueReference_ReadsAsAPhrase_WithTheReportsPDecimals()
    {
        // p = 0.008 exactly; with p-decimals 2 it is below 0.01, so the phrase turns to '<'.
        var r = Build(Study("Effect ([=main.dose.p]); alone [=main.dose.p, number only].", report: "report:\n  p-decimals: 2\n  significant-digits: 4\n"));
        Assert.True(r.Succeeded, r.Diagnostics);
        Assert.Equal("Effect (p < 0.01); alone < 0.01.", Paragraph(r.Html!, "Effect"));

        var three = Build(Study("Effect ([=main.dose.p]) with F = [=main.dose.f].", report: "report:\n  significant-digits: 4\n"));
        Assert.True(three.Succeeded, three.Diagnostics);
        Assert.Equal("Effect (p = 0.008) with F = 12.00.", Paragraph(three.Html!, "Effect"));
    }

    [Fact]
    public void PValueStyles_AreReproducedByVerify_AndAnEditIsFound()
    {
        // p = 0.008 exactly: 4 decimals "0.0080"; 2 decimals without the zero, below 0.01: "< .01".
        using var run = new StudyRun().Study(Study("Styled [=main.dose.p, 4 decimals] and [=main.dose.p, 2 decimals, no leading zero].")).File("data.csv", Csv);
        Assert.Equal(0, run.Cli("build", "study.md", "--quiet").Exit);
        var html = File.ReadAllText(run.ReportPath);
        Assert.Equal("Styled p = 0.0080 and p < .01.", Paragraph(html, "Styled"));
        Assert.Contains("data-style=\"p-4\"", html, StringComparison.Ordinal);
        Assert.Contains("data-style=\"p-fraction-2\"", html, StringComparison.Ordinal);
        var (exit, output, err) = run.Cli("verify", "--recompute", "study.html");
        Assert.True(exit == 0, output + err);

        File.WriteAllText(run.ReportPath, html.Replace("tabindex=\"0\">0.0080<", "tabindex=\"0\">0.0081<", StringComparison.Ordinal));
        (exit, output, _) = run.Cli("verify", "--recompute", "study.html");
        Assert.Equal(1, exit);
        Assert.Contains("altered", output, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("{{ main.dose.f }}", "study.md:13:6: error: '{{ main.dose.f }}' is not a reference form; write [=main.dose.f]")]
    [InlineData("{{main.dose.p|p}}", "study.md:13:6: error: '{{main.dose.p|p}}' is not a reference form; write [=main.dose.p, no leading zero]")]
    [InlineData("{{ main.means.\"dose\".a.mean | digits(1) }}", "study.md:13:6: error: '{{ main.means.\"dose\".a.mean | digits(1) }}' is not a reference form; write [=main.means.dose.a.mean, 1 decimal]")]
    [InlineData("{{ main.dose.omega2 | percent(1) }}", "study.md:13:6: error: '{{ main.dose.omega2 | percent(1) }}' is not a reference form; write [=main.dose.omega2, as percent, 1 decimal]")]
    [InlineData("{{ main.dose.partial_eta2 | fraction }}", "study.md:13:6: error: '{{ main.dose.partial_eta2 | fraction }}' is not a reference form; write [=main.dose.partial_eta2, no leading zero]")]
    [InlineData("{{ main.\"a b\".f }}", "study.md:13:6: error: '{{ main.\"a b\".f }}' is not a reference form; write [=main.\"a b\".f]")]
    public void OldBraceForm_IsOneErrorNamingTheNewForm(string written, string expected)
    {
        using var run = new StudyRun().Study(Study("F is " + written + ".")).File("data.csv", Csv);
        DiagnosticsTests.AssertRejected(run, written, expected);
    }

    [Fact]
    public void OldBraceForm_EachOccurrenceIsReported_AndALoneBraceIsText()
    {
        using var run = new StudyRun().Study(Study("A {{ main.dose.f }} and {{ main.dose | result }}; a set {{ is just text.")).File("data.csv", Csv);
        DiagnosticsTests.AssertRejected(
            run,
            "two old references",
            "study.md:13:3: error: '{{ main.dose.f }}' is not a reference form; write [=main.dose.f]\n"
            + "study.md:13:25: error: '{{ main.dose | result }}' is not a reference form; write [=main.dose, result]");

        var text = Build(Study("Sets: {a, b} and {{ alone."));
        Assert.True(text.Succeeded, text.Diagnostics);
        Assert.Equal("Sets: {a, b} and {{ alone.", Paragraph(text.Html!, "Sets:"));
    }

    [Fact]
    public void OldBraceForm_VeryLong_IsShortenedInTheMessage()
    {
        var inner = new string('x', 300);
        var r = Build(Study("F {{ " + inner + " }}."));
        Assert.False(r.Succeeded);
        var line = Assert.Single(r.Diagnostics.Split('\n'));
        Assert.True(line.Length < 300, line);
        Assert.Contains("is not a reference form; write [=block.statistic]", line, StringComparison.Ordinal);
    }

    [Fact]
    public void ParagraphOfOpenings_IsReadWithABoundedScanPerOpening()
    {
        // 300,000 openings with a quote after each and no closing bracket: each opening looks at most
        // 400 characters ahead, so the paragraph is read in linear time; each is reported, up to the cap.
        var r = Build(Study("Many " + string.Concat(Enumerable.Repeat("[='", 300_000))));
        Assert.False(r.Succeeded);
        var lines = r.Diagnostics.Split('\n');
        Assert.Contains("study.md:13:6: error: a reference '[=' is not closed with ']'", lines[0], StringComparison.Ordinal);
        Assert.True(lines.Length <= Diagnostics.DiagnosticBag.MaxErrorsPerFile + 1, lines.Length.ToString(System.Globalization.CultureInfo.InvariantCulture));

        // A million braces that never close are text.
        var braces = Build(Study("Braces " + new string('{', 1_000_000) + "."));
        Assert.True(braces.Succeeded, braces.Diagnostics);
        Assert.Contains("Braces {{{{", braces.Html!, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("digits: 4", "study.md:8:3: error: 'digits' is not a report key; write 'significant-digits' (the significant digits shown for other numbers)")]
    [InlineData("p-digits: 2", "study.md:8:3: error: 'p-digits' is not a report key; write 'p-decimals' (the decimals shown for p-values)")]
    [InlineData("p-decimal: 2", "study.md:8:3: error: unknown key 'p-decimal' in 'report'; did you mean 'p-decimals'?")]
    public void OldReportKeys_AreOneErrorNamingTheNewKey(string line, string expected)
    {
        using var run = new StudyRun().Study(Study("Text.", report: "report:\n  " + line + "\n")).File("data.csv", Csv);
        DiagnosticsTests.AssertRejected(run, line, expected);
    }

    [Fact]
    public void Examples_UseOnlyTheReferenceForm_AndNoPWrittenBeforeAPValue()
    {
        var examples = Path.Combine(Repository.Root, "examples");
        foreach (var file in Directory.EnumerateFiles(examples, "*.md", SearchOption.AllDirectories).Order(StringComparer.Ordinal))
        {
            var text = File.ReadAllText(file);
            Assert.DoesNotContain("{{", text, StringComparison.Ordinal);
            Assert.DoesNotMatch(new Regex(@"\bp\s+\[=[^\]]*\.p(_adj)?\]"), text);
        }
    }

    [Fact]
    public void DocsAndMessages_CiteNoOutsideContract()
    {
        // The docs are the definition of the study file and the manifest; no page or message may
        // send the user to a contract document they do not have.
        var root = Repository.Root;
        var files = Directory.EnumerateFiles(Path.Combine(root, "docs"), "*.md")
            .Append(Path.Combine(root, "README.md"))
            .Append(Path.Combine(root, "src", "StudyPress", "Diagnostics", "DiagnosticBag.cs"))
            .Concat(Directory.EnumerateFiles(Path.Combine(root, "src", "StudyPress.Cli"), "*.cs"));
        foreach (var file in files)
        {
            var text = File.ReadAllText(file);
            Assert.True(!text.Contains("contract", StringComparison.OrdinalIgnoreCase), $"{Path.GetFileName(file)} mentions a contract");
        }
    }
}
