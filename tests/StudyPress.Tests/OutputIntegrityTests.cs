using System.Diagnostics;
using System.Globalization;
using System.Text;
using System.Text.RegularExpressions;
using StudyPress.Cli;
using StudyPress.Rendering;
using StudyPress.Reproducibility;
using StudyPress.Tests.Support;

namespace StudyPress.Tests;

/// <summary>
/// Report output integrity: no silent truncation, outputs committed together, per-study figure
/// folders, a checked study id, raw HTML that cannot navigate or fake the manifest, and a plain
/// <c>verify</c> that looks at the page as well as the inputs.
/// </summary>
[Collection("cli")]
public sealed partial class OutputIntegrityTests
{
    private const string SmallCsv = "plot,dose,y\n1,a,1.0\n2,a,2.0\n3,a,1.5\n4,b,3.5\n5,b,4.0\n6,b,4.4\n7,c,5.5\n8,c,6.0\n9,c,5.1\n";

    private static string SmallStudy(string prose = "Text.", string extraHeader = "") =>
        $"---\ntitle: Dose trial\ndata: data.csv\nresponse: y\nfactors:\n  dose:\n{extraHeader}---\n\n{prose}\n\n```summary s\n```\n\n```anova main\n```\n";

    /// <summary>
    /// A one-way study of <paramref name="rows"/> rows in three groups with summary, anova,
    /// assumptions, posthoc and methods blocks, and two more assumptions blocks (their per-row
    /// figures make the report several MiB: about 4.4 MB for 5,000 rows).
    /// </summary>
    private static StudyRun LargeStudy(int rows)
    {
        var csv = new StringBuilder("plot,dose,y\n");
        for (var i = 1; i <= rows; i++)
        {
            // Deterministic values with spread (no randomness): group offset plus a scrambled remainder.
            var g = i % 3;
            var y = 10 + (2 * g) + ((i * 7919 % 1000) / 250.0);
            csv.Append(CultureInfo.InvariantCulture, $"{i},{(char)('a' + g)},{y:0.###}\n");
        }

        var study = "---\ntitle: Large one-way study\ndata: data.csv\nresponse: y\nfactors:\n  dose:\n---\n\n"
            + "```summary s\n```\n\n```anova main\n```\n\n```assumptions checks\n```\n\n```posthoc ph\n```\n\n```methods m\n```\n\n"
            + "```assumptions again\n```\n\n```assumptions once-more\n```\n";
        return new StudyRun().Study(study).File("data.csv", csv.ToString());
    }

    // ---- 1. no truncation; an incomplete report is never committed ----

    [Fact]
    public void Build_ReportOfSeveralMiB_IsCompleteAndVerifiesFresh()
    {
        using var run = LargeStudy(5000);
        var (exit, _, err) = run.Cli("build", "study.md", "--quiet");
        Assert.True(exit == 0, err);
        var html = File.ReadAllText(run.ReportPath);

        // Scriban's default limit cut reports at 1,048,576 characters, mid-SVG.
        Assert.True(html.Length > 3 * 1024 * 1024, $"the report has only {html.Length} characters; make the study larger");
        Assert.Equal(Regex.Count(html, "<svg[ >]"), Regex.Count(html, "</svg>"));
        Assert.EndsWith("</html>\n", html, StringComparison.Ordinal);
        Assert.Null(ReportIntegrity.Problem(html));
        Assert.NotNull(ReportManifest.FromHtml(html, out _));
        Assert.Equal((0, "study.html: fresh\n", string.Empty), run.Cli("verify", "study.html"));
    }

    [Fact]
    public void Write_IncompleteReport_IsRefusedAndNothingIsWritten()
    {
        using var run = new StudyRun().Study(SmallStudy()).File("data.csv", SmallCsv);
        var good = run.Compile();
        Assert.True(good.Succeeded);
        Assert.Null(ReportIntegrity.Problem(good.Html!));
        var figures = Path.Combine(run.Folder, "figs");
        var json = Path.Combine(run.Folder, "results.json");

        var cut = good.Html![..(good.Html!.Length / 2)];
        var noManifest = good.Html!.Replace(ReportManifest.ElementStart, "<script type=\"application/json\" id=\"other\">", StringComparison.Ordinal);
        foreach (var broken in new[] { cut, noManifest })
        {
            Assert.NotNull(ReportIntegrity.Problem(broken));
            var result = new CompilationResult
            {
                StudyPath = good.StudyPath,
                OutputPath = good.OutputPath,
                Diagnostics = [],
                Html = broken,
                ManifestJson = good.ManifestJson,
                Figures = good.Figures,
            };
            var e = Assert.Throws<InvalidOperationException>(() => StudyBuilder.Write(result, json, figures));
            Assert.Contains("incomplete report", e.Message, StringComparison.Ordinal);
            Assert.False(File.Exists(run.ReportPath));
            Assert.False(File.Exists(json));
            Assert.False(Directory.Exists(figures));
            Assert.Empty(Directory.GetFiles(run.Folder, "*.tmp", SearchOption.AllDirectories));
        }
    }

    // ---- 2. report, manifest and figures together or not at all ----

    [Fact]
    public void Build_FiguresCannotBeWritten_LeavesOldReportAndManifestUntouched()
    {
        using var run = new StudyRun().Study(SmallStudy("First version.")).File("data.csv", SmallCsv);
        Assert.Equal(0, run.Cli("build", "study.md", "--json", "results.json", "--quiet").Exit);
        var report = File.ReadAllBytes(run.ReportPath);
        var json = File.ReadAllBytes(Path.Combine(run.Folder, "results.json"));

        // The figures folder is a file: the figures cannot be written, so nothing may change.
        run.File("figs", "not a folder");
        run.Study(SmallStudy("Second version."));
        var (exit, _, err) = run.Cli("build", "study.md", "--json", "results.json", "--figures", "figs", "--quiet");
        Assert.Equal(2, exit);
        Assert.Contains("cannot write the report", err, StringComparison.Ordinal);
        Assert.Equal(report, File.ReadAllBytes(run.ReportPath));
        Assert.Equal(json, File.ReadAllBytes(Path.Combine(run.Folder, "results.json")));
        Assert.Empty(Directory.GetFiles(run.Folder, "*.tmp", SearchOption.AllDirectories));
    }

    [Fact]
    public void Build_ReportRenameFails_RestoresTheManifestAndFigures()
    {
        using var run = new StudyRun().Study(SmallStudy("First version.")).File("data.csv", SmallCsv);
        Assert.Equal(0, run.Cli("build", "study.md", "--json", "results.json", "--figures", "figs", "--quiet").Exit);
        var json = File.ReadAllBytes(Path.Combine(run.Folder, "results.json"));
        var figureFolder = Path.Combine(run.Folder, "figs", "study");
        var figures = Directory.GetFiles(figureFolder).Order(StringComparer.Ordinal).Select(File.ReadAllBytes).ToList();
        Assert.NotEmpty(figures);

        // The report's place is taken by a folder: its rename fails after the other files were renamed.
        File.Delete(run.ReportPath);
        run.File("study.html/keep.txt", "occupied");
        run.Study(SmallStudy("Second version.").Replace("```anova main\n```", "```anova main\nwelch: yes\n```", StringComparison.Ordinal));
        run.File("data.csv", SmallCsv.Replace("6.0", "7.0", StringComparison.Ordinal));
        var (exit, _, err) = run.Cli("build", "study.md", "--json", "results.json", "--figures", "figs", "--quiet");
        Assert.Equal(2, exit);
        Assert.Contains("cannot write the report", err, StringComparison.Ordinal);
        Assert.Equal(json, File.ReadAllBytes(Path.Combine(run.Folder, "results.json")));
        Assert.Equal(figures, Directory.GetFiles(figureFolder).Order(StringComparer.Ordinal).Select(File.ReadAllBytes).ToList());
        Assert.Empty(Directory.GetFiles(run.Folder, "*.tmp", SearchOption.AllDirectories));
    }

    [Fact]
    public void Build_JsonNamingTheReport_IsAUsageErrorAndNothingIsWritten()
    {
        using var run = new StudyRun().Study(SmallStudy()).File("data.csv", SmallCsv);
        Assert.Equal((64, string.Empty, "studypress: error: --json study.html names the report itself; write the manifest to another file\n"), run.Cli("build", "study.md", "--json", "study.html"));
        Assert.False(File.Exists(run.ReportPath));
    }

    // ---- 3. batch builds with figures: one folder per study, unique temporary names ----

    [Fact]
    public void Batch_SameNamedStudiesWithFiguresInParallel_KeepsEveryStudysFigures()
    {
        using var run = new StudyRun();
        var names = new[] { "north", "south", "east", "west" };
        foreach (var (name, i) in names.Select((n, i) => (n, i)))
        {
            run.File($"sites/{name}/study.md", SmallStudy())
               .File($"sites/{name}/data.csv", SmallCsv.Replace("4.4", "4." + (4 + i).ToString(CultureInfo.InvariantCulture), StringComparison.Ordinal));
        }

        var (exit, _, err) = run.Cli("build", "sites", "--figures", "figs", "--jobs", "4", "--quiet");
        Assert.True(exit == 0, err);
        foreach (var name in names)
        {
            var expected = Compilation.Compile(Path.Combine(run.Folder, "sites", name, "study.md"), new CompileOptions()).Figures;
            Assert.NotEmpty(expected);
            var folder = Path.Combine(run.Folder, "figs", "sites", name, "study");
            Assert.Equal(expected.Select(f => f.FileName).Order(StringComparer.Ordinal), Directory.GetFiles(folder).Select(Path.GetFileName).Order(StringComparer.Ordinal));
            foreach (var (file, figure) in expected)
            {
                Assert.Equal(figure.Chart.ToPng(), File.ReadAllBytes(Path.Combine(folder, file)));
            }
        }

        Assert.Empty(Directory.GetFiles(run.Folder, "*.tmp", SearchOption.AllDirectories));
    }

    [Fact]
    public void OutputSet_ParallelWritesOfOneTarget_NeverShareATemporaryFile()
    {
        using var run = new StudyRun();
        var target = Path.Combine(run.Folder, "shared.bin");
        var payloads = Enumerable.Range(0, 64).Select(i => Enumerable.Repeat((byte)i, 4096 + i).ToArray()).ToList();
        Parallel.ForEach(payloads, new ParallelOptions { MaxDegreeOfParallelism = 8 }, p => AtomicFile.Write(target, p));

        // Whichever write came last, the file is one whole payload, and no temporary file is left.
        var bytes = File.ReadAllBytes(target);
        Assert.Contains(payloads, p => p.AsSpan().SequenceEqual(bytes));
        Assert.Empty(Directory.GetFiles(run.Folder, "*.tmp"));
    }

    // ---- 4. the study id is a name; no output path leaves its folder ----

    [Theory]
    [InlineData("../../elsewhere/x")]
    [InlineData("a/b")]
    [InlineData("x.y")]
    public void Header_IdThatIsNotAName_IsAnErrorAtTheValue(string id)
    {
        using var run = new StudyRun().Study(SmallStudy().Replace("title: Dose trial\n", $"title: Dose trial\nid: {id}\n", StringComparison.Ordinal)).File("data.csv", SmallCsv);
        var (exit, _, err) = run.Cli("build", "study.md", "--figures", "figs");
        Assert.Equal(2, exit);
        Assert.Equal($"study.md:3:5: error: study id '{id}' must start with a letter and use only letters, digits, '_' and '-' (it names the study's figure files)\n", err);
        Assert.False(File.Exists(run.ReportPath));
        Assert.False(Directory.Exists(Path.Combine(run.Folder, "figs")));
    }

    [Theory]
    [InlineData("../x.png")]
    [InlineData("a/../../x.png")]
    [InlineData("/etc/x.png")]
    public void FigurePaths_PathLeavingItsFolder_IsRefused(string name)
    {
        using var run = new StudyRun();
        Assert.Throws<InvalidOperationException>(() => FigurePaths.Inside(Path.Combine(run.Folder, "figs"), name));
        Assert.Equal(Path.Combine(run.Folder, "figs", "s_main_box.png"), FigurePaths.Inside(Path.Combine(run.Folder, "figs"), "s_main_box.png"));
    }

    [Fact]
    public void FigurePaths_StudyOutsideTheCurrentFolder_StaysInsideTheFiguresFolder()
    {
        using var run = new StudyRun();
        var study = Path.Combine(Path.GetDirectoryName(run.Folder)!, "other", "study.md");
        var previous = Directory.GetCurrentDirectory();
        Directory.SetCurrentDirectory(run.Folder);
        try
        {
            Assert.Equal(Path.Combine(run.Folder, "figs", "_parent", "other", "study"), FigurePaths.FolderFor("figs", study));
        }
        finally
        {
            Directory.SetCurrentDirectory(previous);
        }
    }

    // ---- 5. raw HTML cannot navigate away or stand in for the manifest ----

    private const string HostileRawProse =
        "<meta http-equiv=\"refresh\" content=\"0;url=https://example.org/\">\n\n"
        + "<base href=\"https://example.org/\">\n\n"
        + "<script type=\"application/json\" id=\"study-results\">{\"format\":\"studypress-results/1\",\"values\":[]}</script>\n\n"
        + "<div id=\"study-results\">fake</div>\n\n"
        + "<iframe srcdoc=\"x\"></iframe>\n\n"
        + "<form action=\"https://example.org/\"><button formaction=\"https://example.org/\">go</button></form>\n\n"
        + "Inline <meta http-equiv=\"refresh\" content=\"0\"> and <span id=\"trace\">x</span> and <b>bold</b> stay; an unclosed <textarea> would swallow the page.";

    [Fact]
    public void RawHtml_NavigationAndFakeManifest_AreStrippedAndTheRealManifestIsRead()
    {
        using var run = new StudyRun().Study(SmallStudy(HostileRawProse, "report:\n  raw-html: true\n")).File("data.csv", SmallCsv);
        var (exit, _, err) = run.Cli("build", "study.md");
        Assert.True(exit == 0, err);
        var html = File.ReadAllText(run.ReportPath);
        Assert.DoesNotContain("refresh", html, StringComparison.OrdinalIgnoreCase);
        Assert.DoesNotContain("<base", html, StringComparison.OrdinalIgnoreCase);
        Assert.DoesNotContain("<iframe", html, StringComparison.OrdinalIgnoreCase);
        Assert.DoesNotContain("<textarea", html, StringComparison.OrdinalIgnoreCase);
        Assert.DoesNotContain("action=", html, StringComparison.OrdinalIgnoreCase);
        Assert.Single(Regex.Matches(html, "id=\"study-results\""));
        Assert.Single(Regex.Matches(html, "id=\"trace\""));
        Assert.Contains("<b>bold</b>", html, StringComparison.Ordinal);
        Assert.Contains("<form>", html, StringComparison.Ordinal);

        // The manifest read is the real one, by position, and the report verifies.
        var manifest = ReportManifest.FromHtml(html, out _);
        Assert.NotNull(manifest);
        Assert.NotEmpty(manifest.Values);
        Assert.Null(ReportIntegrity.Problem(html));
        Assert.Equal((0, "study.html: fresh\n", string.Empty), run.Cli("verify", "study.html"));
    }

    [Theory]
    [InlineData("<script>alert(1)</script>", "")]
    [InlineData("<SCRIPT src=x></SCRIPT>after", "after")]
    [InlineData("<meta http-equiv=refresh content=0>", "")]
    [InlineData("<p id='study-results'>x</p>", "x</p>")]
    [InlineData("<p ID=\"chart-font\">x</p>", "x</p>")]
    [InlineData("<a href=\"x\" title='a\"b'>t</a>", "<a href=\"x\" title=\"a&quot;b\">t</a>")]
    [InlineData("<!-- never closed <p>", "")]
    [InlineData("<div class=\"unclosed", "&lt;div class=\"unclosed")]
    [InlineData("<style>body{display:none}</style>ok", "ok")]
    [InlineData("<button formaction=\"https://x\">b</button>", "<button>b</button>")]
    public void RawHtmlFilter_KeepsOnlyHarmlessMarkup(string raw, string expected)
    {
        Assert.Equal(expected, RawHtmlFilter.Filter(raw));
    }

    // ---- 7. plain verify looks at the page ----

    [Fact]
    public void Verify_InjectedScript_IsAltered()
    {
        using var run = ReproducibilityVerifyTests.Built();
        var html = File.ReadAllText(run.ReportPath);
        File.WriteAllText(run.ReportPath, html.Replace("</main>", "<script>document.title='x'</script></main>", StringComparison.Ordinal));
        Assert.Equal((1, "study.html: altered (the page has 3 <script> elements; a studypress report has 2)\n", string.Empty), run.Cli("verify", "study.html"));
    }

    [Fact]
    public void Verify_FakeManifestBeforeTheRealOne_IsAltered()
    {
        using var run = ReproducibilityVerifyTests.Built();
        var html = File.ReadAllText(run.ReportPath);
        var real = html[html.IndexOf(ReportManifest.ElementStart, StringComparison.Ordinal)..];
        real = real[..(real.IndexOf("</script>", StringComparison.Ordinal) + "</script>".Length)];
        File.WriteAllText(run.ReportPath, html.Replace("<main class=\"study-body\">", "<main class=\"study-body\">" + real, StringComparison.Ordinal));
        var (exit, output, _) = run.Cli("verify", "study.html");
        Assert.Equal(1, exit);
        Assert.Equal("study.html: altered (the page is not a whole studypress report: it holds more than one results manifest element)\n", output);
    }

    [Fact]
    public void Verify_PolicyWeakened_IsAltered()
    {
        using var run = ReproducibilityVerifyTests.Built();
        var html = File.ReadAllText(run.ReportPath);
        File.WriteAllText(run.ReportPath, html.Replace("script-src '", "script-src 'unsafe-inline' '", StringComparison.Ordinal));
        Assert.Equal((1, "study.html: altered (the page's head or its Content Security Policy is not the one studypress writes)\n", string.Empty), run.Cli("verify", "study.html"));
    }

    [Fact]
    public void Verify_EmptiedInputList_IsAltered()
    {
        using var run = ReproducibilityVerifyTests.Built();
        var html = File.ReadAllText(run.ReportPath);
        var edited = Regex.Replace(html, "\"inputs\": \\[[^\\]]*\\]", "\"inputs\": []");
        Assert.NotEqual(html, edited);
        File.WriteAllText(run.ReportPath, edited);
        Assert.Equal((1, "study.html: altered (the report's manifest lists no input files, but its study reads 1)\n", string.Empty), run.Cli("verify", "study.html"));
    }

    [Fact]
    public void Verify_InputRowCountEdited_IsAltered()
    {
        using var run = ReproducibilityVerifyTests.Built();
        var html = File.ReadAllText(run.ReportPath);
        var m = Regex.Match(html, "data-field=\"rows\" tabindex=\"0\">(?<n>[0-9]+)<");
        Assert.True(m.Success);
        var g = m.Groups["n"];
        File.WriteAllText(run.ReportPath, html[..g.Index] + "1" + g.Value + html[(g.Index + g.Length)..]);
        var (exit, output, _) = run.Cli("verify", "study.html");
        Assert.Equal(1, exit);
        Assert.StartsWith($"study.html: altered (the data table shows 1{g.Value} for rows of ", output, StringComparison.Ordinal);
    }

    // ---- 8. verify hashes regular files only ----

    [Fact]
    public async Task Verify_InputIsADevice_IsAnErrorWithoutReadingIt()
    {
        using var run = ReproducibilityVerifyTests.Built();
        var html = File.ReadAllText(run.ReportPath);
        File.WriteAllText(run.ReportPath, html.Replace("\"path\": \"data/protein.csv\"", "\"path\": \"/dev/zero\"", StringComparison.Ordinal));
        var verify = Task.Run(() => run.Cli("verify", "study.html"));
        var finished = await Task.WhenAny(verify, Task.Delay(TimeSpan.FromSeconds(60)));
        Assert.True(finished == verify, "verify did not finish: it is reading the device");
        Assert.Equal((2, string.Empty, "study.html:1:1: error: the recorded file '/dev/zero' is a character device, not a regular file; verify hashes regular files only\n"), await verify);
    }

    [Fact]
    public async Task Verify_InputReplacedByAFifo_IsAnErrorWithoutBlocking()
    {
        if (!OperatingSystem.IsLinux())
        {
            return;
        }

        using var run = ReproducibilityVerifyTests.Built();
        var data = Path.Combine(run.Folder, "data", "protein.csv");
        File.Delete(data);
        using (var mkfifo = Process.Start(new ProcessStartInfo("mkfifo", [data]) { UseShellExecute = false })!)
        {
            mkfifo.WaitForExit();
            Assert.Equal(0, mkfifo.ExitCode);
        }

        var verify = Task.Run(() => run.Cli("verify", "study.html"));
        var finished = await Task.WhenAny(verify, Task.Delay(TimeSpan.FromSeconds(60)));
        Assert.True(finished == verify, "verify did not finish: it opened the FIFO");
        Assert.Equal((2, string.Empty, "study.html:1:1: error: the recorded file 'data/protein.csv' is a named pipe (FIFO), not a regular file; verify hashes regular files only\n"), await verify);
    }
}

/// <summary>Item 6: user-supplied names with directional controls cannot reorder the numbers around them.</summary>
[Collection("cli")]
public sealed class BidiIsolationTests
{
    private const string Rlo = "\u202E";

    [Theory]
    [InlineData("\u05E9\u05DC\u05D5\u05DD")]
    [InlineData("\u0645\u0646\u062E\u0641\u0636")]
    public void Report_LevelNameWithRightToLeftLetters_IsIsolatedEverywhere(string level)
    {
        var csv = new System.Text.StringBuilder("plot,dose,y\n");
        var values = new[] { ("low", new[] { 1.0, 2.0, 1.5, 1.8 }), (level, new[] { 6.5, 7.0, 6.4, 6.9 }), ("high", new[] { 5.5, 6.0, 5.1, 5.6 }) };
        var plot = 0;
        foreach (var (name, ys) in values)
        {
            foreach (var y in ys)
            {
                csv.Append(System.Globalization.CultureInfo.InvariantCulture, $"{++plot},{name},{y}\n");
            }
        }

        var study = "---\ntitle: Bidi\ndata: data.csv\nresponse: y\nfactors:\n  dose:\n---\n\n"
            + "```summary s\n```\n\n```anova main\n```\n\n```assumptions checks\n```\n\n```posthoc ph\n```\n\n```ranks r\n```\n\n"
            + "```figure f\ntype: box\n```\n\n```methods m\n```\n";
        using var run = new StudyRun().Study(study).File("data.csv", csv.ToString());
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        var html = result.Html!;
        var page = html[..ReportManifest.FromHtml(html, out _)!.ElementOffset];

        // Every occurrence of the name in the page (HTML text, attributes, SVG text and
        // descriptions) is inside an isolate that holds no digit: the numbers stay outside.
        var occurrences = AssertIsolated(page, level);
        Assert.True(occurrences >= 5, $"the name occurs only {occurrences} time(s); the test would prove little");

        // In HTML text content the isolate is also a bdi element, around the name alone.
        var isolated = "\u2068" + level + (level.Contains(Rlo, StringComparison.Ordinal) ? "\u202C" : string.Empty) + "\u2069";
        Assert.Contains("<bdi>" + isolated + "</bdi>", page, StringComparison.Ordinal);
    }

    [Fact]
    public void Data_LevelNameWithOverride_IsRefusedAtTheCell()
    {
        // Direction controls in a level could make two levels look alike; the data are refused
        // (the limits rule), so overrides reach the page only through header text.
        var study = "---\ntitle: Bidi\ndata: data.csv\nresponse: y\nfactors:\n  dose:\n---\n\n```anova main\n```\n";
        using var run = new StudyRun().Study(study).File("data.csv", "plot,dose,y\n1,low,1\n2,low,2\n3,left" + Rlo + "over,5\n4,left" + Rlo + "over,6\n");
        DiagnosticsTests.AssertRejected(run, "override in a level", "data.csv:4:3: error: level 'left<U+202E>over' of factor 'dose' contains the invisible character U+202E (a format character); remove it, or two levels could look the same");
    }

    [Fact]
    public void Report_LabelWithOverride_IsIsolatedEverywhere()
    {
        const string label = "Dose" + Rlo + "level";
        var study = "---\ntitle: Bidi label\ndata: data.csv\nresponse: y\nfactors:\n  dose:\n    label: \"" + label + "\"\n---\n\n"
            + "```summary s\n```\n\n```anova main\n```\n\n```posthoc ph\n```\n\n```methods m\n```\n";
        using var run = new StudyRun().Study(study).File("data.csv", "plot,dose,y\n1,low,1.0\n2,low,2.0\n3,low,1.5\n4,mid,4.0\n5,mid,4.4\n6,mid,3.9\n7,high,6.0\n8,high,6.5\n9,high,5.8\n");
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        var page = result.Html![..ReportManifest.FromHtml(result.Html!, out _)!.ElementOffset];
        var occurrences = AssertIsolated(page, label);
        Assert.True(occurrences >= 2, $"the label occurs only {occurrences} time(s)");
    }

    [Fact]
    public void Report_TwoWayLevelNameWithRightToLeftLetters_IsIsolatedEverywhere()
    {
        const string level = "\u05E9\u05DC\u05D5\u05DD";
        var csv = new System.Text.StringBuilder("plot,dose,site,y\n");
        var plot = 0;
        foreach (var (dose, d) in new[] { ("low", 0.0), (level, 3.0), ("high", 1.5) })
        {
            foreach (var (site, e) in new[] { ("north", 0.0), ("south", 0.7) })
            {
                foreach (var r in new[] { 0.1, 0.4, -0.2, 0.3, -0.1, 0.2 })
                {
                    csv.Append(System.Globalization.CultureInfo.InvariantCulture, $"{++plot},{dose},{site},{5 + d + e + r + (plot % 3 * 0.05)}\n");
                }
            }
        }

        var study = "---\ntitle: Bidi two-way\ndata: data.csv\nresponse: y\nfactors:\n  dose:\n  site:\n---\n\n"
            + "```summary s\n```\n\n```anova main\n```\n\n```assumptions checks\n```\n\n```posthoc ph\nfactor: dose\n```\n\n```methods m\n```\n";
        using var run = new StudyRun().Study(study).File("data.csv", csv.ToString());
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        var page = result.Html![..ReportManifest.FromHtml(result.Html!, out _)!.ElementOffset];
        var occurrences = AssertIsolated(page, level);
        Assert.True(occurrences >= 5, $"the name occurs only {occurrences} time(s)");
    }

    /// <summary>
    /// Each occurrence of <paramref name="name"/> lies inside an isolate (U+2068 … U+2069, possibly
    /// around a composed label such as a cell "a / b") whose content has no digit; a name alone in
    /// its isolate also has its own override closed right after it. Returns the number of occurrences.
    /// </summary>
    private static int AssertIsolated(string page, string name)
    {
        var bare = new List<string>();
        var occurrences = 0;
        for (var at = page.IndexOf(name, StringComparison.Ordinal); at >= 0; at = page.IndexOf(name, at + name.Length, StringComparison.Ordinal))
        {
            occurrences++;
            var open = page.LastIndexOf('\u2068', at);
            var closeBefore = page.LastIndexOf('\u2069', at);
            var close = page.IndexOf('\u2069', at + name.Length);
            var inside = open >= 0 && closeBefore < open && close > 0 && close - open < 400;
            if (!inside || page[open..close].Any(char.IsAsciiDigit) || (name.Contains(Rlo, StringComparison.Ordinal) && page[(close - 1)..close] != "\u202C"))
            {
                bare.Add("…" + page[Math.Max(0, at - 50)..Math.Min(page.Length, at + name.Length + 30)] + "…");
            }
        }

        Assert.True(bare.Count == 0, "not isolated:\n" + string.Join("\n", bare));
        return occurrences;
    }

    [Theory]
    [InlineData("plain", "plain")]
    [InlineData("a\u202Eb", "\u2068a\u202Eb\u202C\u2069")]
    [InlineData("a\u2069\u202Eb", "\u2068a\uFFFD\u202Eb\u202C\u2069")]
    [InlineData("a\u2067b\u202Cc", "\u2068a\u2067b\uFFFDc\u2069\u2069")]
    public void Isolate_ClosesWhatTheNameOpensAndNeutralisesStrayPops(string name, string expected)
    {
        Assert.Equal(expected, StudyPress.Charts.BidiText.Isolate(name));
    }
}
