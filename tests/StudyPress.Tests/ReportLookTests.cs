using System.Globalization;
using System.Text.Json;
using System.Text.RegularExpressions;
using AngleSharp.Dom;
using AngleSharp.Html.Parser;
using StudyPress.Rendering;
using StudyPress.Tests.Support;

namespace StudyPress.Tests;

/// <summary>
/// The report's own look: the post-hoc table reads verdict first and its statistic follows from the
/// columns shown; the summary reads like the box plot; our own wording, greys, template name and
/// figure names; headers aligned with their columns; the chart font embedded once.
/// </summary>
public sealed partial class ReportLookTests
{
    private static readonly string[] Examples = ["spray-nozzles", "tomato-irrigation", "incubator-assay", "spreadsheet-trial", "greenhouse-sqlite"];

    private static readonly Lazy<Dictionary<string, CompilationResult>> Built = new(() =>
        Examples.ToDictionary(e => e, e =>
        {
            var r = Compilation.Compile(Path.Combine(Repository.Root, "examples", e, "study.md"), new CompileOptions());
            Assert.True(r.Succeeded, e + ": " + string.Join("\n", r.Diagnostics));
            return r;
        }, StringComparer.Ordinal));

    private static IDocument Page(string example) => new HtmlParser().ParseDocument(Built.Value[example].Html!);

    public static TheoryData<string> ExampleNames()
    {
        var data = new TheoryData<string>();
        foreach (var e in Examples)
        {
            data.Add(e);
        }

        return data;
    }

    /// <summary>A printed number and half a unit of its last printed digit.</summary>
    private static (double Value, double HalfUnit) Printed(string text)
    {
        var s = text.Trim().Replace('−', '-');
        Assert.DoesNotContain("E", s, StringComparison.Ordinal);
        var dot = s.IndexOf('.', StringComparison.Ordinal);
        var decimals = dot < 0 ? 0 : s.Length - dot - 1;
        return (double.Parse(s, NumberStyles.Float, CultureInfo.InvariantCulture), 0.5 * Math.Pow(10, -decimals));
    }

    /// <summary>Checks every post-hoc table row: verdict first, estimate with its interval in one cell, and the statistic recomputed from the shown difference and SE.</summary>
    private static int CheckPairsTables(IDocument page, double alpha)
    {
        var rows = 0;
        foreach (var table in page.QuerySelectorAll("table.pairs"))
        {
            var headers = table.QuerySelectorAll("thead th").Select(h => h.TextContent).ToList();
            Assert.Equal("Pair", headers[0]);
            Assert.StartsWith("at α = ", headers[1], StringComparison.Ordinal);
            Assert.StartsWith("difference", headers[2], StringComparison.Ordinal);
            Assert.Equal("SE of the difference", headers[3]);
            Assert.Equal("adjusted p", headers[5]);
            var formula = headers[4];
            Assert.Contains(formula, new[] { "q = √2 × |difference| / SE", "t = difference / SE", "z = difference / SE" });
            foreach (var row in table.QuerySelectorAll("tbody tr"))
            {
                var cells = row.QuerySelectorAll("td").Select(c => c.TextContent).ToList();
                var verdict = cells[0];
                Assert.Contains(verdict, new[] { "differ", "not distinguished", "not defined" });
                if (cells.Any(c => c.Contains("n/d", StringComparison.Ordinal)))
                {
                    continue;
                }

                var estimate = Estimate().Match(cells[1]);
                Assert.True(estimate.Success, "estimate cell: " + cells[1]);
                if (headers[2].Contains('['))
                {
                    Assert.True(estimate.Groups["lo"].Success, "interval expected in: " + cells[1]);
                    var lo = Printed(estimate.Groups["lo"].Value).Value;
                    var hi = Printed(estimate.Groups["hi"].Value).Value;
                    var dv = Printed(estimate.Groups["d"].Value).Value;
                    Assert.True(lo <= dv && dv <= hi, "the estimate lies in its interval: " + cells[1]);
                }

                var (d, hd) = Printed(estimate.Groups["d"].Value);
                var (se, hse) = Printed(cells[2]);
                var (stat, hstat) = Printed(cells[3]);
                var recomputed = formula.StartsWith('q') ? Math.Sqrt(2) * Math.Abs(d) / se : d / se;
                // Exact hand computation of the rounding: the printed difference and SE are each off
                // by at most half a unit of their last digit, the printed statistic by half of its own.
                var bound = hstat + (Math.Abs(recomputed) * ((hd / Math.Abs(d)) + (hse / se))) + 1e-12;
                Assert.True(Math.Abs(recomputed - stat) <= bound, $"{formula}: shown {cells[3]}, recomputed {recomputed} from {cells[1]} and {cells[2]} (bound {bound})");
                Assert.Equal(verdict == "differ", Printed(cells[4].Replace("<", string.Empty, StringComparison.Ordinal)).Value < alpha || cells[4].StartsWith('<'));
                rows++;
            }
        }

        return rows;
    }

    [GeneratedRegex(@"^(?<d>[−\-]?[0-9.]+)(?: \[(?<lo>[−\-]?[0-9.]+), (?<hi>[−\-]?[0-9.]+)\])?$")]
    private static partial Regex Estimate();

    [Theory]
    [MemberData(nameof(ExampleNames))]
    public void PostHocTable_ShownDifferenceAndSe_ReproduceTheStatisticToItsPrintedDigits(string example)
    {
        var rows = CheckPairsTables(Page(example), 0.05);
        var hasPosthoc = File.ReadAllText(Path.Combine(Repository.Root, "examples", example, "study.md")).Contains("```posthoc", StringComparison.Ordinal);
        Assert.True(!hasPosthoc || rows > 0, example + " has comparisons but none were checked");
    }

    [Fact]
    public void PostHocTable_TTests_ShowTEqualsDifferenceOverSe()
    {
        using var run = new StudyRun();
        run.File("d.csv", "g,y\na,1.1\na,2.3\na,1.9\na,2.8\nb,3.9\nb,4.4\nb,5.1\nb,4.0\nc,2.2\nc,2.9\nc,3.6\nc,2.4\n")
            .Study("---\ntitle: T\ndata:\n  d: d.csv\nresponse: y\nfactors:\n  g:\n    levels: [a, b, c]\n---\n\n```anova main\n```\n\n```posthoc pairs\nof: main\nmethod: holm\n```\n");
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        var page = new HtmlParser().ParseDocument(result.Html!);
        Assert.Equal(3, CheckPairsTables(page, 0.05));
        Assert.Equal("t = difference / SE", page.QuerySelector("table.pairs thead th:nth-child(5)")!.TextContent);
    }

    [Fact]
    public void PostHocChart_Title_UsesOurOwnWording()
    {
        var svg = Page("spray-nozzles").QuerySelector("figure.chart-intervals svg title")!.TextContent;
        Assert.Equal("Tukey HSD comparisons: differences with 95% joint intervals", svg);
        var page = Page("spray-nozzles");
        foreach (var part in page.QuerySelectorAll("figure.chart-intervals, table.pairs"))
        {
            Assert.DoesNotContain("simultaneous", part.TextContent, StringComparison.OrdinalIgnoreCase);
        }
    }

    [Fact]
    public void SummaryTable_Columns_FollowTheBoxPlot()
    {
        var headers = Page("spray-nozzles").QuerySelectorAll("table.summary thead th").Select(h => h.TextContent).ToList();
        Assert.Equal(["Group", "n", "missing", "median", "Q1 – Q3", "min – max", "mean", "SD", "SE", "95% CI of mean"], headers);
    }

    [Fact]
    public void AnovaTable_ThresholdHeader_IsOurOwnWording()
    {
        var html = Built.Value["spray-nozzles"].Html!;
        Assert.Contains(">F threshold (α = 0.05)</th>", html, StringComparison.Ordinal);
        Assert.DoesNotContain("F crit", html, StringComparison.Ordinal);
        Assert.DoesNotContain("critical F", html, StringComparison.Ordinal);
        Assert.DoesNotContain("Critical value", html, StringComparison.Ordinal);
    }

    /// <summary>Theme colours of a widely used code-hosting site (from memory), which the stylesheet must not use.</summary>
    private static readonly string[] SiteColours =
        ["#24292e", "#24292f", "#586069", "#57606a", "#6a737d", "#d0d7de", "#e1e4e8", "#f6f8fa", "#eaecef", "#c9d1d9", "#8b949e", "#30363d", "#0d1117", "#161b22", "#1f2328", "#656d76", "#d1d9e0", "#59636e"];

    private static double Luminance(string hex)
    {
        double C(int i)
        {
            var c = int.Parse(hex.AsSpan(1 + (2 * i), 2), NumberStyles.HexNumber, CultureInfo.InvariantCulture) / 255.0;
            return c <= 0.03928 ? c / 12.92 : Math.Pow((c + 0.055) / 1.055, 2.4);
        }

        return (0.2126 * C(0)) + (0.7152 * C(1)) + (0.0722 * C(2));
    }

    /// <summary>WCAG 2 contrast ratio (common practice: (L1 + 0.05) / (L2 + 0.05)).</summary>
    private static double Contrast(string a, string b)
    {
        var (la, lb) = (Luminance(a), Luminance(b));
        return (Math.Max(la, lb) + 0.05) / (Math.Min(la, lb) + 0.05);
    }

    [Fact]
    public void Stylesheet_Greys_AreOurOwnAndTextKeepsItsContrast()
    {
        var css = ReportTemplate.Css.ToLowerInvariant();
        foreach (var c in SiteColours)
        {
            Assert.DoesNotContain(c, css, StringComparison.Ordinal);
        }

        string Var(string name) => Regex.Match(css, "--" + name + @": (#[0-9a-f]{6});").Groups[1].Value;
        foreach (var text in new[] { "ink", "muted", "accent" })
        {
            foreach (var ground in new[] { "#ffffff", Var("band") })
            {
                Assert.True(Contrast(Var(text), ground) >= 4.5, $"--{text} on {ground}: {Contrast(Var(text), ground):F2}");
            }
        }
    }

    [Fact]
    public void Manifest_TemplateName_IsOurOwn()
    {
        using var doc = JsonDocument.Parse(Built.Value["spray-nozzles"].ManifestJson!);
        var name = doc.RootElement.GetProperty("template").GetProperty("name").GetString();
        Assert.Equal("studypress-report", name);
        Assert.DoesNotContain(".", name!, StringComparison.Ordinal);
    }

    [Fact]
    public void FigureFiles_AreNamedByStudyBlockAndChart()
    {
        Assert.Equal(
            [
                "spray-nozzles_groups_box.png", "spray-nozzles_main_means.png", "spray-nozzles_main_f-distribution-nozzle.png",
                "spray-nozzles_checks_qq.png", "spray-nozzles_checks_residual-histogram.png", "spray-nozzles_checks_residuals-fitted.png",
                "spray-nozzles_pairs_intervals.png", "spray-nozzles_plan_power-curve.png",
            ],
            Built.Value["spray-nozzles"].Figures.Select(f => f.FileName));
    }

    [Fact]
    public void FigureFiles_SeveralOfOneTypeAndFigureBlocks_AreUniqueAndNamed()
    {
        using var run = new StudyRun();
        var csv = new System.Text.StringBuilder("a,b,y\n");
        var k = 0;
        foreach (var a in new[] { "x", "z" })
        {
            foreach (var b in new[] { "p", "q", "r" })
            {
                for (var i = 0; i < 3; i++)
                {
                    csv.Append(CultureInfo.InvariantCulture, $"{a},{b},{(k * 7 % 11) + (a == "x" ? 2 : 0)}\n");
                    k++;
                }
            }
        }

        run.File("d.csv", csv.ToString())
            .Study("---\ntitle: T\nid: trial-7\ndata:\n  d: d.csv\nresponse: y\nfactors:\n  a:\n    levels: [x, z]\n  b:\n    levels: [p, q, r]\n---\n\n```anova fit\n```\n\n```figure\ntype: qq\nof: fit\n```\n\n```figure extra\ntype: qq\nof: fit\n```\n");
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        var names = result.Figures.Select(f => f.FileName).ToList();
        Assert.Equal(names.Count, names.Distinct(StringComparer.OrdinalIgnoreCase).Count());
        Assert.Contains("trial-7_fit_interaction.png", names);
        Assert.Contains("trial-7_fit_f-distribution-a.png", names);
        Assert.Contains("trial-7_fit_f-distribution-b.png", names);
        Assert.Contains("trial-7_fit_f-distribution-a-b.png", names);
        Assert.Contains("trial-7_figure1_qq.png", names);
        Assert.Contains("trial-7_extra_qq.png", names);
        Assert.All(names, n => Assert.Matches(@"^trial-7_[A-Za-z0-9_-]+_[a-z-]+(-[A-Za-z0-9-]+)?\.png$", n));
        Assert.DoesNotContain(names, n => Regex.IsMatch(n, @"-[0-9]+\.png$"));
    }

    [Fact]
    public void FigureFileName_TakenName_GetsASuffixAndOddCharactersBecomeDashes()
    {
        var chart = StudyPress.Charts.StatCharts.GroupMeans([new("A", 1, 0, 2)], "95%", new("t", "x", "y"));
        var taken = new HashSet<string>(StringComparer.OrdinalIgnoreCase);
        var f = new StudyPress.Rendering.Figure("f-distribution", "c", chart) { Part = "dose:Ré gime" };
        Assert.Equal("s_b_f-distribution-dose-R--gime.png", Compilation.FigureFileName("s", "b", f, taken));
        Assert.Equal("s_b_f-distribution-dose-R--gime-2.png", Compilation.FigureFileName("s", "b", f, taken));
        Assert.Equal("s_b_means.png", Compilation.FigureFileName("s", "b", new StudyPress.Rendering.Figure("means", "c", chart), taken));
    }

    [Theory]
    [MemberData(nameof(ExampleNames))]
    public void TableHeaders_AlignWithTheirColumns(string example)
    {
        foreach (var table in Page(example).QuerySelectorAll("table"))
        {
            var heads = table.QuerySelectorAll("thead th").ToList();
            foreach (var row in table.QuerySelectorAll("tbody tr"))
            {
                var cells = row.Children.ToList();
                for (var i = 1; i < Math.Min(cells.Count, heads.Count); i++)
                {
                    Assert.True(
                        heads[i].ClassList.Contains("text") == cells[i].ClassList.Contains("text"),
                        $"{example}: table '{table.QuerySelector("caption")?.TextContent}', column '{heads[i].TextContent}': header and cells aligned differently");
                }
            }
        }
    }

    [Fact]
    public void Stylesheet_TextColumns_AreLeftAlignedHeaderAndCells()
    {
        Assert.Contains("th.text, td.text { text-align: left;", ReportTemplate.Css, StringComparison.Ordinal);
    }

    [Fact]
    public void Report_ChartFont_IsEmbeddedOnce()
    {
        var html = Built.Value["spray-nozzles"].Html!;
        var font = Convert.ToBase64String(StudyPress.Charts.ChartFont.FontBytes());
        var count = 0;
        for (var at = html.IndexOf(font[..200], StringComparison.Ordinal); at >= 0; at = html.IndexOf(font[..200], at + 1, StringComparison.Ordinal))
        {
            count++;
        }

        Assert.Equal(1, count);
        Assert.Contains(font, html, StringComparison.Ordinal);
    }
}
