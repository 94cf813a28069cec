using System.Diagnostics;
using System.IO.Compression;
using System.Text;
using System.Text.RegularExpressions;
using AngleSharp.Html.Parser;
using DocumentFormat.OpenXml.Packaging;
using DocumentFormat.OpenXml.Validation;
using StudyPress.Rendering.Export;
using StudyPress.Tests.Support;
using W = DocumentFormat.OpenXml.Wordprocessing;

namespace StudyPress.Tests;

/// <summary>
/// <c>build --docx</c> and <c>build --latex</c>: the Word document validates and says what the HTML
/// says (methods text, table cells, a bookmark per traced number), the LaTeX fragment has a macro per
/// manifest value and booktabs tables and compiles; both are byte-identical across builds; bad
/// targets give one message, exit 2 and write nothing.
/// </summary>
[Collection("cli")]
public sealed partial class ExportTests
{
    private static string Example => Path.Combine(Repository.Root, "examples", "spray-nozzles");

    /// <summary>The spray-nozzle example built into a temporary folder with --docx and --latex.</summary>
    private sealed class Built : IDisposable
    {
        public Built(string tag)
        {
            Folder = Path.Combine(Path.GetTempPath(), "studypress-tests", "export-" + tag + "-" + Guid.NewGuid().ToString("N"));
            Directory.CreateDirectory(Folder);
            var o = new StringWriter();
            var e = new StringWriter();
            var previous = Directory.GetCurrentDirectory();
            Directory.SetCurrentDirectory(Example);
            try
            {
                Exit = StudyPress.Cli.StudyPressCommand.Run(["build", "study.md", "--out", Folder, "--json", Path.Combine(Folder, "m.json"), "--docx", Path.Combine(Folder, "r.docx"), "--latex", Path.Combine(Folder, "tex"), "--quiet"], o, e);
                Err = e.ToString();
            }
            finally
            {
                Directory.SetCurrentDirectory(previous);
            }
        }

        public string Folder { get; }

        public int Exit { get; }

        public string Err { get; }

        public string Html => File.ReadAllText(Path.Combine(Folder, "study.html"));

        public byte[] Docx => File.ReadAllBytes(Path.Combine(Folder, "r.docx"));

        public string TexFolder => Path.Combine(Folder, "tex", "study");

        public string Tex => File.ReadAllText(Path.Combine(TexFolder, "results.tex"));

        public byte[] Manifest => File.ReadAllBytes(Path.Combine(Folder, "m.json"));

        public void Dispose()
        {
            try
            {
                Directory.Delete(Folder, recursive: true);
            }
            catch (IOException)
            {
            }
        }
    }

    private static readonly Lazy<Built> First = new(() => Checked(new Built("a")));

    private static Built Checked(Built b)
    {
        Assert.True(b.Exit == 0, b.Err);
        return b;
    }

    private static string Plain(string s) => Regex.Replace(s.Replace("\u2068", string.Empty, StringComparison.Ordinal).Replace("\u2069", string.Empty, StringComparison.Ordinal), @"\s+", " ").Trim();

    // ---- Word ----

    [Fact]
    public void Docx_ValidatesWithNoErrors()
    {
        using var stream = new MemoryStream(First.Value.Docx);
        using var doc = WordprocessingDocument.Open(stream, false);
        var errors = new OpenXmlValidator(DocumentFormat.OpenXml.FileFormatVersions.Office2019).Validate(doc).ToList();
        Assert.True(errors.Count == 0, string.Join("\n", errors.Take(20).Select(e => $"{e.Path?.XPath}: {e.Description}")));
    }

    [Fact]
    public void Docx_HasTheMethodsParagraphAndEveryTableCellOfTheHtml()
    {
        var html = new HtmlParser().ParseDocument(First.Value.Html);
        using var stream = new MemoryStream(First.Value.Docx);
        using var doc = WordprocessingDocument.Open(stream, false);
        var body = doc.MainDocumentPart!.Document!.Body!;
        var paragraphs = body.Elements<W.Paragraph>().Select(p => Plain(p.InnerText)).ToList();

        var methods = Plain(html.QuerySelector("p.methods-methods")!.TextContent);
        Assert.True(methods.Length > 200, methods);
        Assert.Contains(methods, paragraphs);
        foreach (var p in html.QuerySelectorAll("p[class^=methods-]"))
        {
            Assert.Contains(Plain(p.TextContent), paragraphs);
        }

        // Tables in order, cell by cell: the same text (so the same numbers) as the HTML.
        var htmlTables = html.QuerySelectorAll("table").ToList();
        var wordTables = body.Elements<W.Table>().ToList();
        Assert.Equal(htmlTables.Count, wordTables.Count);
        for (var t = 0; t < htmlTables.Count; t++)
        {
            var expected = htmlTables[t].QuerySelectorAll("tr").Select(tr => tr.Children.Select(c => Plain(c.TextContent)).ToList()).ToList();
            var actual = wordTables[t].Elements<W.TableRow>().Select(tr => tr.Elements<W.TableCell>().Select(c => Plain(c.InnerText)).ToList()).ToList();
            Assert.Equal(expected, actual);
        }

        Assert.Contains(wordTables[1].Descendants<W.Text>(), x => x.Text == "11.5");
    }

    [Fact]
    public void Docx_BookmarksEveryTracedNumberWithItsManifestId()
    {
        var html = new HtmlParser().ParseDocument(First.Value.Html);
        var spans = html.QuerySelectorAll("main [data-v]").ToList();
        using var stream = new MemoryStream(First.Value.Docx);
        using var doc = WordprocessingDocument.Open(stream, false);
        var body = doc.MainDocumentPart!.Document!.Body!;
        var starts = body.Descendants<W.BookmarkStart>().ToList();

        // One bookmark per place, in document order: vN for the first place, vN_2, vN_3 … after.
        var seen = new Dictionary<string, int>(StringComparer.Ordinal);
        var expected = spans.Select(s =>
        {
            var id = s.GetAttribute("data-v")!;
            var n = seen[id] = seen.GetValueOrDefault(id) + 1;
            return n == 1 ? id : id + "_" + n;
        }).ToList();
        Assert.Equal(expected, starts.Select(b => b.Name!.Value!).ToList());

        // The text between each bookmark's start and end is the number the HTML shows.
        for (var i = 0; i < starts.Count; i++)
        {
            var text = new StringBuilder();
            for (var node = starts[i].NextSibling(); node is not null and not W.BookmarkEnd; node = node.NextSibling())
            {
                text.Append(node.InnerText);
            }

            Assert.Equal(spans[i].TextContent, text.ToString());
        }

        // Every manifest value shown in the body has its plain-id bookmark.
        var manifest = ManifestValues.Read(First.Value.Manifest);
        var shown = spans.Select(s => s.GetAttribute("data-v")!).ToHashSet(StringComparer.Ordinal);
        Assert.All(manifest.Values.Where(v => shown.Contains(v.Id)), v => Assert.Contains(starts, b => b.Name == v.Id));
    }

    [Fact]
    public void Docx_CarriesTheManifest()
    {
        using var stream = new MemoryStream(First.Value.Docx);
        using var doc = WordprocessingDocument.Open(stream, false);
        var part = Assert.Single(doc.MainDocumentPart!.CustomXmlParts);
        using var s = part.GetStream();
        var xml = System.Xml.Linq.XDocument.Load(s);
        Assert.Equal(System.Xml.Linq.XName.Get("manifest", DocxWriter.ManifestNamespace), xml.Root!.Name);
        Assert.Equal(Encoding.UTF8.GetString(First.Value.Manifest), xml.Root.Value);
    }

    [Fact]
    public void Docx_FiguresAreTheChartPngsWithCaptions()
    {
        using var zip = new ZipArchive(new MemoryStream(First.Value.Docx));
        var images = zip.Entries.Where(e => e.FullName.EndsWith(".png", StringComparison.Ordinal)).ToList();
        var html = new HtmlParser().ParseDocument(First.Value.Html);
        Assert.Equal(html.QuerySelectorAll("figure.chart").Length, images.Count);
        var pngs = Directory.GetFiles(First.Value.TexFolder, "*.png").Select(File.ReadAllBytes).ToList();
        foreach (var image in images)
        {
            using var s = image.Open();
            using var m = new MemoryStream();
            s.CopyTo(m);
            Assert.Contains(pngs, p => p.AsSpan().SequenceEqual(m.ToArray()));
        }

        // Every zip entry carries the same fixed time: no clock in the file.
        Assert.All(zip.Entries, e => Assert.Equal(1980, e.LastWriteTime.Year));
        Assert.Equal("[Content_Types].xml", zip.Entries[0].FullName);
    }

    [Fact]
    public void DocxAndLatex_AreByteIdenticalAcrossBuilds()
    {
        using var second = Checked(new Built("b"));
        Assert.Equal(First.Value.Docx, second.Docx);
        Assert.Equal(First.Value.Tex, second.Tex);
        var a = Directory.GetFiles(First.Value.TexFolder).Select(Path.GetFileName).Order(StringComparer.Ordinal).ToList();
        var b = Directory.GetFiles(second.TexFolder).Select(Path.GetFileName).Order(StringComparer.Ordinal).ToList();
        Assert.Equal(a, b);
        Assert.All(a, f => Assert.Equal(File.ReadAllBytes(Path.Combine(First.Value.TexFolder, f!)), File.ReadAllBytes(Path.Combine(second.TexFolder, f!))));
    }

    [Fact]
    public void DocxAndLatex_LocaleAndTimeZone_DoNotChangeABit()
    {
        // Two child processes: a German locale in India's time zone, and the C locale in UTC.
        var a = ChildBuild([("LANG", "de_DE.UTF-8"), ("LC_ALL", "de_DE.UTF-8"), ("TZ", "Asia/Kolkata")]);
        var b = ChildBuild([("LANG", "C"), ("LC_ALL", "C"), ("TZ", "UTC")]);
        try
        {
            Assert.Equal(File.ReadAllBytes(Path.Combine(a, "r.docx")), File.ReadAllBytes(Path.Combine(b, "r.docx")));
            Assert.Equal(File.ReadAllBytes(Path.Combine(a, "tex", "study", "results.tex")), File.ReadAllBytes(Path.Combine(b, "tex", "study", "results.tex")));
        }
        finally
        {
            Directory.Delete(a, recursive: true);
            Directory.Delete(b, recursive: true);
        }
    }

    private static string ChildBuild((string Name, string Value)[] environment)
    {
        // "." keeps the folder name from becoming the study id (see StudyRun): both builds are named "study".
        var folder = Path.Combine(Path.GetTempPath(), "studypress-tests", "export-child." + Guid.NewGuid().ToString("N"));
        Directory.CreateDirectory(folder);
        foreach (var file in Directory.GetFiles(Example, "*", SearchOption.AllDirectories).Where(f => f.EndsWith(".md", StringComparison.Ordinal) || f.Contains("/data/", StringComparison.Ordinal)))
        {
            var target = Path.Combine(folder, Path.GetRelativePath(Example, file));
            Directory.CreateDirectory(Path.GetDirectoryName(target)!);
            File.Copy(file, target);
        }

        var start = new ProcessStartInfo("dotnet") { WorkingDirectory = folder, RedirectStandardOutput = true, RedirectStandardError = true, UseShellExecute = false };
        foreach (var arg in new[] { Path.Combine(AppContext.BaseDirectory, "studypress.dll"), "build", "study.md", "--docx", "r.docx", "--latex", "tex", "--quiet" })
        {
            start.ArgumentList.Add(arg);
        }

        start.Environment.Remove("SOURCE_DATE_EPOCH");
        foreach (var (name, value) in environment)
        {
            start.Environment[name] = value;
        }

        using var process = Process.Start(start)!;
        var stdout = process.StandardOutput.ReadToEndAsync();
        var stderr = process.StandardError.ReadToEndAsync();
        if (!process.WaitForExit(TimeSpan.FromMinutes(2)))
        {
            process.Kill(entireProcessTree: true);
            Assert.Fail("the child build did not finish within two minutes");
        }

        Assert.True(process.ExitCode == 0, $"exit {process.ExitCode}: {stdout.Result}{stderr.Result}");
        return folder;
    }

    // ---- LaTeX ----

    [Fact]
    public void Latex_HasOneMacroPerManifestValue_ShowingWhatTheTablesShow()
    {
        var tex = First.Value.Tex;
        var manifest = ManifestValues.Read(First.Value.Manifest);
        var macros = ValueMacro().Matches(tex).ToDictionary(m => m.Groups["id"].Value, m => (Name: m.Groups["name"].Value, Body: m.Groups["body"].Value), StringComparer.Ordinal);
        Assert.Equal(manifest.Values.Select(v => v.Id).ToList(), macros.Keys.ToList());
        Assert.Equal(macros.Count, macros.Values.Select(m => m.Name).Distinct(StringComparer.Ordinal).Count());

        // A readable name from the path: block, test, term, level/pair, stat.
        Assert.Equal("spMainAnovaNozzleF", macros[manifest.Values.Single(v => v is { Block: "main", Test: "anova", Term: "nozzle", Stat: "f" }).Id].Name);

        // Each plain number the HTML shows is the macro's text (the table format).
        var html = new HtmlParser().ParseDocument(First.Value.Html);
        foreach (var span in html.QuerySelectorAll("main [data-v]:not([data-style])"))
        {
            var body = macros[span.GetAttribute("data-v")!].Body;
            Assert.Equal(LatexWriter.Escape(span.TextContent), body);
        }
    }

    [Fact]
    public void Latex_TablesAreBooktabsTablesOfTheValueMacros()
    {
        var tex = First.Value.Tex;
        var html = new HtmlParser().ParseDocument(First.Value.Html);
        var tabulars = Regex.Matches(tex, @"\\begin\{tabular\}\{[lr]+\}\n\\toprule\n(?<rows>.*?)\\bottomrule\n\\end\{tabular\}", RegexOptions.Singleline);
        Assert.Equal(html.QuerySelectorAll("table").Length, tabulars.Count);
        Assert.All(tabulars, t => Assert.Contains("\\midrule\n", t.Groups["rows"].Value, StringComparison.Ordinal));
        Assert.Contains("\\spMainAnovaNozzleF{}", tabulars[1].Value, StringComparison.Ordinal);
        Assert.Contains("\\newcommand\\spMainAnovaTableCaption{Analysis of variance of Coating thickness (", tex, StringComparison.Ordinal);
        Assert.Contains("\\newcommand\\spMethodsOneMethodsText{", tex, StringComparison.Ordinal);
        Assert.Equal(html.QuerySelectorAll("figure.chart").Length, Regex.Count(tex, @"\\includegraphics"));
    }

    [TexFact]
    public void Latex_CompilesWithPdflatex_EveryMacroUsed()
    {
        var built = First.Value;
        var paper = Path.Combine(built.Folder, "paper");
        Directory.CreateDirectory(paper);
        var body = new StringBuilder();
        foreach (Match m in Regex.Matches(built.Tex, @"\\newcommand\\(?<name>sp[A-Za-z]+)"))
        {
            var name = m.Groups["name"].Value;
            if (name.EndsWith("Caption", StringComparison.Ordinal))
            {
                continue;
            }

            if (Regex.IsMatch(name, "TableB*$"))
            {
                body.Append("\\begin{table}[htbp]\\centering\\caption{\\").Append(name).Append("Caption}\\resizebox{\\linewidth}{!}{\\").Append(name).Append("}\\end{table}\n");
            }
            else if (Regex.IsMatch(name, "FigureB*$"))
            {
                body.Append("\\begin{figure}[htbp]\\centering\\").Append(name).Append("\\caption{\\").Append(name).Append("Caption}\\end{figure}\n");
            }
            else
            {
                body.Append('\\').Append(name).Append("{}\n\n");
            }
        }

        // Read from another folder: the figures are found beside the fragment, not beside the paper.
        File.WriteAllText(
            Path.Combine(paper, "paper.tex"),
            "\\documentclass{article}\n\\usepackage{booktabs}\n\\usepackage{graphicx}\n\\input{../tex/study/results.tex}\n\\begin{document}\n" + body + "\\end{document}\n");
        var (exit, log) = TexFactAttribute.Run(paper, "paper.tex");
        Assert.True(exit == 0, log.Length > 4000 ? log[^4000..] : log);
        Assert.True(File.Exists(Path.Combine(paper, "paper.pdf")));
        Assert.DoesNotContain("LaTeX Warning: File", log, StringComparison.Ordinal);
    }

    [Fact]
    public void LatexNames_FollowTheDocumentedRule()
    {
        var names = new LatexNames();
        Assert.Equal("spMainAnovaDoseF", names.Take("main", "anova", "dose", "f"));
        Assert.Equal("spMainAnovaDoseFB", names.Take("main", "anova", "dose", "f"));
        Assert.Equal("spMainAnovaDoseFC", names.Take("main", "anova", "dose", "f"));
        Assert.Equal("spChecksLeveneDoseDfOne", names.Take("checks", "levene", "dose", "df1"));
        Assert.Equal("spMainAnovaNozzleByPressureP", names.Take("main", "anova", "nozzle:pressure", "p"));
        Assert.Equal("spCafeDoseZeroPointFiveMean", names.Take("café", "dose", "0.5", "mean"));
        Assert.Equal("X", LatexNames.Words("αβ"));
        Assert.Equal("FlatFan", LatexNames.Words("flat-fan"));
        Assert.Equal("LineOneTwo", LatexNames.Words("line 12"));
        Assert.Matches("^[A-Za-z]+$", names.Take("ü-ñ", "x_y", "3", "ω²"));
    }

    [Fact]
    public void LatexEscape_SpecialCharactersAndSymbols()
    {
        Assert.Equal("\\textless{} 0.001", LatexWriter.Escape("< 0.001"));
        Assert.Equal("\\ensuremath{-}2.77", LatexWriter.Escape("-2.77"));
        Assert.Equal("flat-fan \\ensuremath{-} air", LatexWriter.Escape("flat-fan − air"));
        Assert.Equal("50\\% \\& \\$1 \\#2 a\\_b \\{c\\} \\textbackslash{}", LatexWriter.Escape("50% & $1 #2 a_b {c} \\"));
        Assert.Equal("partial \\ensuremath{\\eta}\\textsuperscript{2}", LatexWriter.Escape("partial η²"));
        Assert.Equal("name", LatexWriter.Escape("\u2068name\u2069"));
    }

    // ---- bad targets: one message, exit 2, nothing written ----

    private const string SmallCsv = "plot,dose,y\n1,a,1.0\n2,a,2.0\n3,a,1.5\n4,b,3.5\n5,b,4.0\n6,b,4.4\n7,c,5.5\n8,c,6.0\n9,c,5.1\n";

    private const string SmallStudy = "---\ntitle: Dose trial\ndata: data.csv\nresponse: y\nfactors:\n  dose:\n---\n\nText.\n\n```summary s\n```\n\n```anova main\n```\n";

    [Theory]
    [InlineData("missing/r.docx", null, "the folder 'missing' does not exist")]
    [InlineData("r.txt", null, "must end in '.docx'")]
    [InlineData("afolder", null, "is a folder")]
    [InlineData(null, "afile", "is a file")]
    [InlineData(null, "missing/tex", "the folder 'missing' does not exist")]
    [InlineData("study.html.docx", null, null)]
    public void BadTarget_OneMessageExit2NothingWritten(string? docx, string? latex, string? message)
    {
        using var run = new StudyRun().Study(SmallStudy).File("data.csv", SmallCsv).File("afile", "x").File("afolder/keep", "x");
        var args = new List<string> { "build", "study.md" };
        if (docx is not null)
        {
            args.AddRange(["--docx", docx]);
        }

        if (latex is not null)
        {
            args.AddRange(["--latex", latex]);
        }

        var (exit, _, err) = run.Cli([.. args]);
        if (message is null)
        {
            // A good target beside the bad ones: the build works.
            Assert.True(exit == 0, err);
            Assert.True(File.Exists(Path.Combine(run.Folder, docx!)));
            return;
        }

        Assert.Equal(2, exit);
        var lines = err.Split('\n', StringSplitOptions.RemoveEmptyEntries);
        Assert.True(lines.Length == 1, err);
        Assert.Contains(message, lines[0], StringComparison.Ordinal);
        Assert.Matches(@"^[^:]+:1:1: error: ", lines[0]);
        Assert.False(File.Exists(run.ReportPath));
        Assert.False(Directory.Exists(Path.Combine(run.Folder, "missing")));
        Assert.Equal(["afile", "afolder", "data.csv", "study.md"], Directory.GetFileSystemEntries(run.Folder).Select(f => Path.GetFileName(f)!).Order(StringComparer.Ordinal).ToArray());
    }

    [Fact]
    public void DocxOnTheManifestsPath_IsRefused()
    {
        using var run = new StudyRun().Study(SmallStudy).File("data.csv", SmallCsv);
        var (exit, _, err) = run.Cli("build", "study.md", "--out", "out", "--docx", "r.docx", "--json", "r.docx");
        Assert.Equal(2, exit);
        Assert.Contains("would be written twice, as the --json manifest and as the Word document of study.md", err, StringComparison.Ordinal);
        Assert.False(Directory.Exists(Path.Combine(run.Folder, "out")));
    }

    [Fact]
    public void Batch_EachStudyGetsItsOwnDocxAndLatexFolder()
    {
        using var run = new StudyRun()
            .File("sites/north/study.md", SmallStudy).File("sites/north/data.csv", SmallCsv)
            .File("sites/south/study.md", SmallStudy).File("sites/south/data.csv", SmallCsv.Replace("4.4", "4.9", StringComparison.Ordinal));
        var (exit, _, err) = run.Cli("build", "sites", "--docx", "word", "--latex", "tex", "--figures", "tex", "--quiet");
        Assert.True(exit == 0, err);
        foreach (var site in new[] { "north", "south" })
        {
            Assert.True(File.Exists(Path.Combine(run.Folder, "word", "sites", site, "study.docx")));
            Assert.True(File.Exists(Path.Combine(run.Folder, "tex", "sites", site, "study", "results.tex")));
            Assert.NotEmpty(Directory.GetFiles(Path.Combine(run.Folder, "tex", "sites", site, "study"), "*.png"));
        }

        Assert.NotEqual(
            File.ReadAllText(Path.Combine(run.Folder, "tex", "sites", "north", "study", "results.tex")),
            File.ReadAllText(Path.Combine(run.Folder, "tex", "sites", "south", "study", "results.tex")));
    }

    [Fact]
    public void LatexFolderCannotBeWritten_LeavesReportAndDocxUntouched()
    {
        using var run = new StudyRun().Study(SmallStudy).File("data.csv", SmallCsv);
        Assert.Equal(0, run.Cli("build", "study.md", "--docx", "r.docx", "--quiet").Exit);
        var report = File.ReadAllBytes(run.ReportPath);
        var docx = File.ReadAllBytes(Path.Combine(run.Folder, "r.docx"));

        // The study's LaTeX folder is taken by a file: the fragment cannot be written, so nothing may change.
        run.File("tex/study", "not a folder");
        run.Study(SmallStudy.Replace("Text.", "Changed text.", StringComparison.Ordinal));
        var (exit, _, err) = run.Cli("build", "study.md", "--docx", "r.docx", "--latex", "tex", "--quiet");
        Assert.Equal(2, exit);
        Assert.Contains("cannot write the report", err, StringComparison.Ordinal);
        Assert.Equal(report, File.ReadAllBytes(run.ReportPath));
        Assert.Equal(docx, File.ReadAllBytes(Path.Combine(run.Folder, "r.docx")));
        Assert.Empty(Directory.GetFiles(run.Folder, "*.tmp", SearchOption.AllDirectories));
    }

    [GeneratedRegex(@"^\\newcommand\\(?<name>sp[A-Za-z]+)\{(?<body>[^\n]*)\}% (?<id>v[0-9]+) ", RegexOptions.Multiline)]
    private static partial Regex ValueMacro();
}

/// <summary>A test that compiles LaTeX: skipped where pdflatex is missing, unless CI=true (CI installs Debian's texlive packages).</summary>
public sealed class TexFactAttribute : FactAttribute
{
    public TexFactAttribute()
    {
        if (Pdflatex is null && !string.Equals(Environment.GetEnvironmentVariable("CI"), "true", StringComparison.OrdinalIgnoreCase))
        {
            Skip = "pdflatex not found: install Debian's texlive-latex-base and texlive-latex-recommended (booktabs) to run the LaTeX tests (CI always runs them)";
        }
    }

    public static string? Pdflatex =>
        (Environment.GetEnvironmentVariable("PATH") ?? string.Empty).Split(':').Select(d => Path.Combine(d, "pdflatex")).FirstOrDefault(File.Exists);

    public static (int Exit, string Log) Run(string folder, string file)
    {
        var start = new ProcessStartInfo(Pdflatex ?? "pdflatex")
        {
            WorkingDirectory = folder,
            RedirectStandardOutput = true,
            RedirectStandardError = true,
            RedirectStandardInput = true,
        };
        foreach (var a in new[] { "-interaction=nonstopmode", "-halt-on-error", "-no-shell-escape", file })
        {
            start.ArgumentList.Add(a);
        }

        using var p = Process.Start(start)!;
        p.StandardInput.Close();
        var err = p.StandardError.ReadToEndAsync();
        var output = p.StandardOutput.ReadToEnd();
        if (!p.WaitForExit(120_000))
        {
            p.Kill(entireProcessTree: true);
            return (-1, output + "\n(timed out)");
        }

        return (p.ExitCode, output + err.Result);
    }
}

/// <summary>Level names with LaTeX's special characters, accents and another script: the LaTeX still compiles and the docx still validates.</summary>
[Collection("cli")]
public sealed class ExportAwkwardNamesTests
{
    private const string Csv = "plot,dose,y\n1,a&b_1,1.0\n2,a&b_1,2.0\n3,a&b_1,1.5\n4,50%,3.5\n5,50%,4.0\n6,50%,4.4\n7,café {x} #2,5.5\n8,café {x} #2,6.0\n9,café {x} #2,5.1\n10,\\end ~^$,2.0\n11,\\end ~^$,2.5\n12,\\end ~^$,2.2\n";

    private const string Study = "---\ntitle: \"Dose & response: 100% _odd_ names\"\ndata: data.csv\nresponse: y\nfactors:\n  dose:\n---\n\n# Results & more\n\nText with 50% and a_b.\n\n```summary s\n```\n\n```anova main\n```\n\n```posthoc pairs\nof: main\n```\n\n```methods\n```\n";

    [TexFact]
    public void SpecialCharactersInNames_CompileAndValidate()
    {
        using var run = new StudyRun().Study(Study).File("data.csv", Csv);
        var (exit, _, err) = run.Cli("build", "study.md", "--docx", "r.docx", "--latex", "tex", "--quiet");
        Assert.True(exit == 0, err);

        using (var doc = WordprocessingDocument.Open(Path.Combine(run.Folder, "r.docx"), false))
        {
            var errors = new OpenXmlValidator(DocumentFormat.OpenXml.FileFormatVersions.Office2019).Validate(doc).ToList();
            Assert.True(errors.Count == 0, string.Join("\n", errors.Take(20).Select(e => $"{e.Path?.XPath}: {e.Description}")));
            Assert.Contains("a&b_1", doc.MainDocumentPart!.Document!.Body!.InnerText, StringComparison.Ordinal);
        }

        var tex = File.ReadAllText(Path.Combine(run.Folder, "tex", "study", "results.tex"));
        Assert.Contains("a\\&b\\_1", tex, StringComparison.Ordinal);
        Assert.Contains("\\newcommand\\spSSummaryDoseABOneMean{", tex, StringComparison.Ordinal);
        var body = new StringBuilder();
        foreach (Match m in Regex.Matches(tex, @"\\newcommand\\(?<name>sp[A-Za-z]+)"))
        {
            var name = m.Groups["name"].Value;
            body.Append(Regex.IsMatch(name, "TableB*$") ? "\\" + name + "\n\n" : Regex.IsMatch(name, "FigureB*$") ? string.Empty : "\\" + name + "{}\n\n");
        }

        File.WriteAllText(Path.Combine(run.Folder, "tex", "study", "paper.tex"), "\\documentclass{article}\n\\usepackage{booktabs}\n\\usepackage{graphicx}\n\\input{results.tex}\n\\begin{document}\n" + body + "\\end{document}\n");
        var (texExit, log) = TexFactAttribute.Run(Path.Combine(run.Folder, "tex", "study"), "paper.tex");
        Assert.True(texExit == 0, log.Length > 4000 ? log[^4000..] : log);
    }
}

/// <summary>Every example and every kind's golden case: the docx validates, and the LaTeX fragment, with every macro used, compiles.</summary>
[Collection("cli")]
public sealed class ExportAllStudiesTests
{
    public static TheoryData<string> Studies()
    {
        var data = new TheoryData<string>();
        foreach (var dir in Directory.GetDirectories(Path.Combine(Repository.Root, "examples")).Order(StringComparer.Ordinal))
        {
            data.Add(Path.Combine("examples", Path.GetFileName(dir)));
        }

        foreach (var dir in Directory.GetDirectories(Path.Combine(Repository.Root, "tests", "StudyPress.Tests", "Cases", "kinds")).Order(StringComparer.Ordinal))
        {
            data.Add(Path.Combine("tests", "StudyPress.Tests", "Cases", "kinds", Path.GetFileName(dir)));
        }

        data.Add(Path.Combine("tests", "StudyPress.Tests", "Cases", "ancova"));
        return data;
    }

    [Theory]
    [MemberData(nameof(Studies))]
    public void Study_DocxValidatesAndLatexCompiles(string folder)
    {
        var out_ = Path.Combine(Path.GetTempPath(), "studypress-tests", "export-all-" + Guid.NewGuid().ToString("N"));
        Directory.CreateDirectory(out_);
        var previous = Directory.GetCurrentDirectory();
        try
        {
            Directory.SetCurrentDirectory(Path.Combine(Repository.Root, folder));
            var o = new StringWriter();
            var e = new StringWriter();
            var exit = StudyPress.Cli.StudyPressCommand.Run(["build", "study.md", "--out", out_, "--docx", Path.Combine(out_, "r.docx"), "--latex", Path.Combine(out_, "tex"), "--quiet"], o, e);
            Assert.True(exit == 0, e.ToString());
        }
        finally
        {
            Directory.SetCurrentDirectory(previous);
        }

        try
        {
            using (var doc = WordprocessingDocument.Open(Path.Combine(out_, "r.docx"), false))
            {
                var errors = new OpenXmlValidator(DocumentFormat.OpenXml.FileFormatVersions.Office2019).Validate(doc).ToList();
                Assert.True(errors.Count == 0, string.Join("\n", errors.Take(20).Select(x => $"{x.Path?.XPath}: {x.Description}")));
            }

            if (TexFactAttribute.Pdflatex is null && !string.Equals(Environment.GetEnvironmentVariable("CI"), "true", StringComparison.OrdinalIgnoreCase))
            {
                return;
            }

            var dir = Path.Combine(out_, "tex", "study");
            var tex = File.ReadAllText(Path.Combine(dir, "results.tex"));
            var body = new StringBuilder();
            foreach (Match m in Regex.Matches(tex, @"\\newcommand\\(?<name>sp[A-Za-z]+)"))
            {
                var name = m.Groups["name"].Value;
                body.Append(name.EndsWith("Caption", StringComparison.Ordinal) ? string.Empty
                    : Regex.IsMatch(name, "TableB*$") ? "\\begin{table}[htbp]\\caption{\\" + name + "Caption}\\resizebox{\\linewidth}{!}{\\" + name + "}\\end{table}\n"
                    : Regex.IsMatch(name, "FigureB*$") ? "\\begin{figure}[htbp]\\" + name + "\\caption{\\" + name + "Caption}\\end{figure}\n"
                    : "\\" + name + "{}\n\n");
            }

            File.WriteAllText(Path.Combine(dir, "paper.tex"), "\\documentclass{article}\n\\usepackage{booktabs}\n\\usepackage{graphicx}\n\\input{results.tex}\n\\begin{document}\n" + body + "\\end{document}\n");
            var (texExit, log) = TexFactAttribute.Run(dir, "paper.tex");
            Assert.True(texExit == 0, log.Length > 4000 ? log[^4000..] : log);
        }
        finally
        {
            Directory.Delete(out_, recursive: true);
        }
    }
}
