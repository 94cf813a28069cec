using System.Globalization;
using System.Net;
using System.Runtime.CompilerServices;
using System.Text;
using System.Text.RegularExpressions;
using StudyPress.Evaluation;
using StudyPress.Tests.Support;
using StudyPress.Rendering;

namespace StudyPress.Tests;

/// <summary>
/// The methods block and report-style sentences. Golden studies live in Cases/methods/NAME/study.md
/// with the expected visible text of the methods block in Cases/methods/NAME/expected.txt; set
/// STUDYPRESS_UPDATE_GOLDEN=1 to rewrite the expected files from the current output.
/// </summary>
public sealed partial class MethodsTests
{
    private static string SourceDir([CallerFilePath] string path = "") => Path.GetDirectoryName(path)!;

    private static string CasesDir => Path.Combine(SourceDir(), "Cases", "methods");

    private static string RepoDir => Path.GetFullPath(Path.Combine(SourceDir(), "..", ".."));

    public static TheoryData<string> Cases()
    {
        var data = new TheoryData<string>();
        foreach (var d in Directory.GetDirectories(CasesDir).Order(StringComparer.Ordinal))
        {
            data.Add(Path.GetFileName(d));
        }

        return data;
    }

    [GeneratedRegex("<span class=\"(v|nd)\" data-v=\"(v\\d+)\"(?: data-style=\"([a-z0-9-]+)\")?[^>]*>([^<]*)</span>")]
    private static partial Regex SpanPattern();

    [GeneratedRegex("<section class=\"block block-methods\"[^>]*>(.*?)</section>", RegexOptions.Singleline)]
    private static partial Regex MethodsSection();

    private static CompilationResult Build(string studyPath)
    {
        var result = Compilation.Compile(studyPath, new CompileOptions());
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        return result;
    }

    private static string MethodsHtml(CompilationResult r) => MethodsSection().Match(r.Html!).Groups[1].Value;

    /// <summary>The visible text of the methods block, one line per paragraph.</summary>
    private static string VisibleText(string sectionHtml)
    {
        var sb = new StringBuilder();
        foreach (Match p in Regex.Matches(sectionHtml, "<p class=\"methods-([a-z]+)\">(.*?)</p>", RegexOptions.Singleline))
        {
            sb.Append(p.Groups[1].Value).Append(": ").Append(WebUtility.HtmlDecode(Regex.Replace(p.Groups[2].Value, "<[^>]+>", string.Empty))).Append('\n');
        }

        return sb.ToString();
    }

    /// <summary>The documented style rules, written again independently of the compiler (decimal rounding).</summary>
    private static string Expected(string style, double value)
    {
        static string Fixed(double v, int d)
        {
            var r = Math.Round((decimal)v, d, MidpointRounding.AwayFromZero);
            var s = r.ToString("F" + d.ToString(CultureInfo.InvariantCulture), CultureInfo.InvariantCulture);
            return r == 0 ? s.TrimStart('-') : s;
        }

        static string NoLead(string s) => s.StartsWith("0.", StringComparison.Ordinal) ? s[1..] : s.StartsWith("-0.", StringComparison.Ordinal) ? "-" + s[2..] : s;
        return ExpectedAscii().Replace('-', '\u2212');

        string ExpectedAscii()
        {
            if (style == "report-p")
            {
                return value < 0.001 ? "< .001" : NoLead(Fixed(value, 3));
            }

            if (style == "report-df")
            {
                return value == Math.Floor(value) ? value.ToString("0", CultureInfo.InvariantCulture) : Fixed(value, 2);
            }

            var dash = style.LastIndexOf('-');
            var n = int.Parse(style[(dash + 1)..], CultureInfo.InvariantCulture);
            return style[..dash] switch
            {
                "fixed" => Fixed(value, n),
                "fraction" => NoLead(Fixed(value, n)),
                "percent" => Fixed(value * 100, n) + "%",
                "p" => value < Math.Pow(10, -n) ? "< " + Fixed(Math.Pow(10, -n), n) : Fixed(value, n),
                "p-fraction" => value < Math.Pow(10, -n) ? "< " + NoLead(Fixed(Math.Pow(10, -n), n)) : NoLead(Fixed(value, n)),
                _ => throw new InvalidOperationException("unknown style " + style),
            };
        }
    }

    /// <summary>
    /// The report's one format at its defaults (docs/study-file.md, "How numbers are written"),
    /// written again independently of the compiler (decimal rounding of the shortest decimal form): p-values with 3 decimals and
    /// their leading zero ("&lt; 0.001" below), whole counts as integers, everything else with 3
    /// significant digits; the minus sign U+2212.
    /// </summary>
    private static string ExpectedInReportFormat(string stat, double value)
    {
        // Rounded on the value's shortest decimal form (its "R" text): 41.15 → 41.2, 4.015 → 4.02.
        decimal Exact() => decimal.Parse(value.ToString("R", CultureInfo.InvariantCulture), NumberStyles.Float, CultureInfo.InvariantCulture);
        static string Fixed(decimal r, int d)
        {
            var s = r.ToString("F" + d.ToString(CultureInfo.InvariantCulture), CultureInfo.InvariantCulture);
            return r == 0 ? s.TrimStart('-') : s;
        }

        string ascii;
        if (stat == "p" || stat.StartsWith("p_", StringComparison.Ordinal))
        {
            ascii = value < 0.001 ? "< 0.001" : Fixed(Math.Round(Exact(), 3, MidpointRounding.AwayFromZero), 3);
        }
        else if (StudyPress.Evaluation.Stat.Counts.Contains(stat) && value == Math.Floor(value))
        {
            ascii = value.ToString("0", CultureInfo.InvariantCulture);
        }
        else if (value == 0)
        {
            ascii = "0";
        }
        else if (Math.Abs(value) is < 1e-6 or >= 1e15)
        {
            ascii = value.ToString("E2", CultureInfo.InvariantCulture);
        }
        else
        {
            var magnitude = (int)Math.Floor(Math.Log10(Math.Abs(value)));
            if (magnitude >= 2)
            {
                ascii = Math.Round(Exact(), 0, MidpointRounding.AwayFromZero).ToString("0", CultureInfo.InvariantCulture);
            }
            else
            {
                var d = 2 - magnitude;
                var r = Math.Round(Exact(), d, MidpointRounding.AwayFromZero);
                if (r != 0 && (int)Math.Floor(Math.Log10((double)Math.Abs(r))) > magnitude)
                {
                    d = Math.Max(0, d - 1);
                }

                ascii = Fixed(r, d);
            }
        }

        return ascii.Replace('-', '\u2212');
    }

    /// <summary>Every number span in the html names a manifest value and shows it by its style's rule, or without a style in the report's one format; returns the count.</summary>
    private static int AssertSpansMatchManifest(string html, ManifestView manifest)
    {
        var values = manifest.Values.ToDictionary(v => v.GetProperty("id").GetString()!, v => v);
        var count = 0;
        foreach (Match m in SpanPattern().Matches(html))
        {
            count++;
            var id = m.Groups[2].Value;
            Assert.True(values.TryGetValue(id, out var entry), $"span {id} has no manifest entry");
            var text = WebUtility.HtmlDecode(m.Groups[4].Value);
            if (m.Groups[1].Value == "nd")
            {
                Assert.Equal(System.Text.Json.JsonValueKind.Null, entry.GetProperty("value").ValueKind);
                continue;
            }

            var value = entry.GetProperty("value").GetDouble();
            if (m.Groups[3].Success)
            {
                Assert.True(Expected(m.Groups[3].Value, value) == text, $"{id} ({entry.GetProperty("stat").GetString()} = {value.ToString("R", CultureInfo.InvariantCulture)}) shows '{text}' for style {m.Groups[3].Value}");
            }
            else
            {
                var stat = entry.GetProperty("stat").GetString()!;
                Assert.True(ExpectedInReportFormat(stat, value) == text, $"{id} ({stat} = {value.ToString("R", CultureInfo.InvariantCulture)}) shows '{text}', not the report's format '{ExpectedInReportFormat(stat, value)}'");
            }
        }

        return count;
    }

    [Theory]
    [MemberData(nameof(Cases))]
    public void GoldenCase_MethodsText_MatchesExpectedAndManifest(string name)
    {
        var result = Build(Path.Combine(CasesDir, name, "study.md"));
        var section = MethodsHtml(result);
        Assert.NotEmpty(section);
        var text = VisibleText(section).Replace("StudyPress " + Compilation.ToolVersion, "StudyPress {version}", StringComparison.Ordinal);
        var expectedPath = Path.Combine(CasesDir, name, "expected.txt");
        if (Environment.GetEnvironmentVariable("STUDYPRESS_UPDATE_GOLDEN") == "1")
        {
            File.WriteAllText(expectedPath, text, new UTF8Encoding(false));
        }

        // The version changes with releases; the golden text names it as {version}.
        Assert.Equal(File.ReadAllText(expectedPath).Replace("\r\n", "\n", StringComparison.Ordinal), text);
        var spans = AssertSpansMatchManifest(section, new ManifestView(result.ManifestJson!));
        Assert.True(spans > 10, $"only {spans} traced numbers");
    }

    [Fact]
    public void OneWaySignificant_Sentence_MatchesHandComputation()
    {
        // Means 1, 3, 5; SSB 24 on 2 df, SSW 6 on 6 df; F = 12; p = (1 + 2F/6)^-3 = 1/125; partial eta2 = 0.8.
        var result = Build(Path.Combine(CasesDir, "one-way-significant", "study.md"));
        var text = VisibleText(MethodsHtml(result));
        Assert.Contains("the F test rejected the hypothesis of equal means across its levels, F(2, 6) = 12.0, p = 0.008, partial η² = 0.800, 95% CI [", text, StringComparison.Ordinal);
        Assert.Contains("The Brown–Forsythe test found no evidence of unequal variances (p = 1.000), so the ordinary F test was kept.", text, StringComparison.Ordinal);
        Assert.Contains("compared by Tukey's HSD procedure, chosen because the variances were not found to differ", text, StringComparison.Ordinal);
        var m = new ManifestView(result.ManifestJson!);
        Assert.Equal(0.008, m.Get("main", "anova", "group", "p"), 12);
    }

    [Fact]
    public void OneWayNull_Sentence_MatchesHandComputation()
    {
        // Means 2, 3, 2; SSB 2 on 2 df, SSW 6 on 6 df; F = 1; p = (3/4)^3 = 0.421875; partial eta2 = 0.25.
        var result = Build(Path.Combine(CasesDir, "one-way-null", "study.md"));
        var text = VisibleText(MethodsHtml(result));
        Assert.Contains("the F test does not reject the hypothesis of equal means across its levels, F(2, 6) = 1.00, p = 0.422, partial η² = 0.250, 95% CI [0, ", text, StringComparison.Ordinal);
        Assert.Contains("This is not evidence that the means are equal.", text, StringComparison.Ordinal);
        Assert.DoesNotContain(" rejects the hypothesis of equal means", text, StringComparison.Ordinal);
    }

    [Fact]
    public void UnequalVariances_Text_StatesWelchGamesHowellAndRankTest()
    {
        var text = VisibleText(MethodsHtml(Build(Path.Combine(CasesDir, "unequal-variances", "study.md"))));
        Assert.Contains("the variances differed (Brown–Forsythe p = 0.002, mean-centred Levene p < 0.001, Bartlett p < 0.001)", text, StringComparison.Ordinal);
        Assert.Contains("Welch's F test therefore replaced the ordinary F test, and we also ran the Kruskal–Wallis test", text, StringComparison.Ordinal);
        Assert.Contains("by the Games–Howell procedure, chosen because the variances differed", text, StringComparison.Ordinal);
        Assert.Contains("Welch's F(3, 12.0) = 12.0, p < 0.001", text, StringComparison.Ordinal);
    }

    [Fact]
    public void Manifest_AnovaTerms_CarryPartialEtaSquaredIntervals()
    {
        var m = new ManifestView(Build(Path.Combine(CasesDir, "two-factor-unbalanced", "study.md")).ManifestJson!);
        foreach (var term in new[] { "schedule", "variety", "schedule:variety" })
        {
            var lo = m.Get("model", "anova", term, "partial_eta2_ci_low");
            var pe = m.Get("model", "anova", term, "partial_eta2");
            var hi = m.Get("model", "anova", term, "partial_eta2_ci_high");
            Assert.True(lo >= 0 && lo < pe && pe < hi && hi < 1, $"{term}: [{lo}, {hi}] around {pe}");
        }
    }

    private const string FlipStudy = """
        ---
        title: Flip
        data:
          d: data/d.csv
        response: y
        factors:
          g:
            levels: [A, B, C, D]
        ---

        ```anova main
        welch: auto
        ```

        ```posthoc pairs
        method: auto
        ```

        ```methods
        include: [decisions, effects]
        ```
        """;

    private static string Rows(params double[][] groups)
    {
        var sb = new StringBuilder("g,y\n");
        for (var k = 0; k < groups.Length; k++)
        {
            foreach (var y in groups[k])
            {
                sb.Append((char)('A' + k)).Append(',').Append(y.ToString("R", CultureInfo.InvariantCulture)).Append('\n');
            }
        }

        return sb.ToString();
    }

    [Theory]
    [InlineData(6, "with group sizes A 3, B 4, C 5, D 6, E 7, F 8.")]
    [InlineData(8, "in the eight levels of g, with group sizes from 3 to 10.")]
    public void UnequalGroupSizes_ListedUpToSix_ARangeBeyond(int groups, string expected)
    {
        // Group k has k + 3 values: a long list of sizes (with long level names, each cell's name
        // and size) used to fill the sentence; beyond six groups the sizes are given as a range.
        var csv = new StringBuilder("g,y\n");
        for (var k = 0; k < groups; k++)
        {
            for (var i = 0; i < k + 3; i++)
            {
                csv.Append(CultureInfo.InvariantCulture, $"{(char)('A' + k)},{10 + k + (0.5 * i)}\n");
            }
        }

        using var run = new StudyRun();
        run.File("data/d.csv", csv.ToString());
        run.Study("---\ntitle: Sizes\ndata:\n  d: data/d.csv\nresponse: y\nfactors: [g]\n---\n\n```anova main\n```\n\n```methods\n```\n");
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        Assert.Contains(expected, VisibleText(MethodsHtml(result)), StringComparison.Ordinal);
    }

    [Fact]
    public void ChangedData_SameStudyFile_TextFollowsTheNewOutcome()
    {
        using var run = new StudyRun();
        run.Study(FlipStudy);
        double[] shape = [-2, -1, -0.5, 0, 0.5, 1, 2];
        run.File("data/d.csv", Rows([.. shape.Select(x => 10 + x)], [.. shape.Select(x => 11 + x)], [.. shape.Select(x => 12 + x)], [.. shape.Select(x => 13 + x)]));
        var before = run.Compile();
        Assert.True(before.Succeeded, string.Join("\n", before.Diagnostics));
        var textBefore = VisibleText(MethodsHtml(before));
        Assert.Contains("The Brown–Forsythe test found no evidence of unequal variances", textBefore, StringComparison.Ordinal);
        Assert.Contains("Tukey's HSD procedure was chosen", textBefore, StringComparison.Ordinal);
        Assert.DoesNotContain("Welch's F(", textBefore, StringComparison.Ordinal);

        // Same means, spreads growing 1, 3, 9, 27 times: the variances now differ.
        run.File("data/d.csv", Rows([.. shape.Select(x => 10 + x)], [.. shape.Select(x => 11 + (3 * x))], [.. shape.Select(x => 12 + (9 * x))], [.. shape.Select(x => 13 + (27 * x))]));
        var after = run.Compile();
        Assert.True(after.Succeeded, string.Join("\n", after.Diagnostics));
        var textAfter = VisibleText(MethodsHtml(after));
        Assert.Contains("Because the Brown–Forsythe test found unequal variances", textAfter, StringComparison.Ordinal);
        Assert.Contains("Welch's F test replaced the ordinary F test", textAfter, StringComparison.Ordinal);
        Assert.Contains("the Games–Howell procedure, which does not pool the variances, was chosen", textAfter, StringComparison.Ordinal);
        Assert.Contains("Welch's F(", textAfter, StringComparison.Ordinal);
        Assert.NotEqual(
            Regex.Match(textBefore, @"F\(3, 24\) = [0-9.]+").Value,
            Regex.Match(textAfter, @"F\(3, 24\) = [0-9.]+").Value);
        AssertSpansMatchManifest(MethodsHtml(after), new ManifestView(after.ManifestJson!));
    }

    [Fact]
    public void TenseVoiceInclude_ChangeTheWording()
    {
        using var run = new StudyRun();
        run.File("data/d.csv", File.ReadAllText(Path.Combine(CasesDir, "one-way-significant", "data", "d.csv")));
        run.Study("""
            ---
            title: Options
            data: { d: data/d.csv }
            response: y
            factors: { group: { levels: [A, B, C] } }
            ---

            ```anova main
            ```

            ```methods present
            tense: present
            voice: active
            ```

            ```methods results
            include: [effects]
            ```
            """);
        var r = run.Compile();
        Assert.True(r.Succeeded, string.Join("\n", r.Diagnostics));
        var sections = MethodsSection().Matches(r.Html!).Select(m => VisibleText(m.Groups[1].Value)).ToList();
        Assert.Equal(2, sections.Count);
        Assert.Contains("We fit a one-way fixed-effects analysis of variance", sections[0], StringComparison.Ordinal);
        Assert.Contains("the F test rejects the hypothesis", sections[0], StringComparison.Ordinal);
        Assert.DoesNotContain("was fitted", sections[0], StringComparison.Ordinal);
        Assert.StartsWith("methods: Every test used", sections[1], StringComparison.Ordinal);
        Assert.Contains("results: For group, the F test rejected", sections[1], StringComparison.Ordinal);
        Assert.DoesNotContain("software:", sections[1], StringComparison.Ordinal);
        Assert.DoesNotContain("cautions:", sections[1], StringComparison.Ordinal);
    }

    [Fact]
    public void Examples_MethodsBlocksAndReferences_MatchManifest()
    {
        foreach (var name in new[] { "spray-nozzles", "incubator-assay", "tomato-irrigation" })
        {
            var result = Build(Path.Combine(RepoDir, "examples", name, "study.md"));
            var manifest = new ManifestView(result.ManifestJson!);
            var section = MethodsHtml(result);
            Assert.True(AssertSpansMatchManifest(section, manifest) > 20, name);
            AssertSpansMatchManifest(result.Html!, manifest);
        }
    }

    [Theory]
    [InlineData(0.0004, "report-p", "< .001")]
    [InlineData(0.0351, "report-p", ".035")]
    [InlineData(0.0355, "report-p", ".036")]
    [InlineData(1.0, "report-p", "1.000")]
    [InlineData(0.6332, "fraction-2", ".63")]
    [InlineData(-0.049, "fraction-2", "\u2212.05")]
    [InlineData(-0.001, "fixed-2", "0.00")]
    [InlineData(11.5102, "fixed-2", "11.51")]
    [InlineData(12.03015, "report-df", "12.03")]
    [InlineData(20.0, "report-df", "20")]
    [InlineData(0.2649, "percent-0", "26%")]
    [InlineData(0.2649, "percent-1", "26.5%")]
    public void ReportStyle_Format_FollowsTheDocumentedRule(double value, string style, string expected)
    {
        Assert.Equal(expected, ReportStyle.Format(style, value));
        Assert.Equal(expected, Expected(style, value));
    }

    private static string ReferenceStudy(string prose) => """
        ---
        title: References
        data: { d: data/d.csv }
        response: y
        factors: { group: { levels: [A, B, C] } }
        ---

        ```anova main
        ```

        """ + prose + "\n";

    // One-way case "one-way-significant": means 1, 3, 5 with n = 3; exact hand computation gives
    // F = 12 on 2 and 6 df, p = (1 + 2F/6)^-3 = 1/125 = 0.008, partial η² = 24/30 = 0.8.
    [Theory]
    [InlineData("[=main.group, result]", "F(2, 6) = 12.0, p = 0.008, partial η² = 0.800, 95% CI [")]
    [InlineData("[=main.group.p, no leading zero]", "p = .008")]
    [InlineData("[=main.group.p, 4 decimals]", "p = 0.0080")]
    [InlineData("[=main.group.p, 4 decimals, no leading zero]", "p = .0080")]
    [InlineData("[=main.group.p, no leading zero, number only]", ".008")]
    [InlineData("[=main.group.f, 1 decimal]", "12.0")]
    [InlineData("[=main.group.f , 2  decimals ]", "12.00")]
    [InlineData("[=main.group.partial_eta2, 3 decimals, no leading zero]", ".800")]
    [InlineData("[=main.group.partial_eta2, no leading zero]", ".80")]
    [InlineData("[=main.group.partial_eta2, as percent]", "80%")]
    [InlineData("[=main.group.partial_eta2, as percent, 1 decimal]", "80.0%")]
    [InlineData("[=main.residual.df, as df]", "6")]
    [InlineData("[=main.means.group.A, result]", "mean = 1.00, n = 3")]
    public void Reference_WithWords_RendersStyledTracedText(string reference, string expected)
    {
        using var run = new StudyRun();
        run.File("data/d.csv", File.ReadAllText(Path.Combine(CasesDir, "one-way-significant", "data", "d.csv")));
        run.Study(ReferenceStudy("Result: " + reference + "."));
        var r = run.Compile();
        Assert.True(r.Succeeded, string.Join("\n", r.Diagnostics));
        var p = Regex.Match(r.Html!, "<p>Result: (.*?)\\.</p>", RegexOptions.Singleline).Groups[1].Value;
        Assert.Equal(expected, WebUtility.HtmlDecode(Regex.Replace(p, "<[^>]+>", string.Empty))[..expected.Length]);
        Assert.True(AssertSpansMatchManifest(p, new ManifestView(r.ManifestJson!)) >= 1);
    }

    // Same case: p = 0.008 exactly (hand computation above); the report's p-decimals default is 3.
    [Theory]
    [InlineData("[=main.group.p]", "p = 0.008")]
    [InlineData("[=main.group.p, number only]", "0.008")]
    [InlineData("[=main.group.f]", "12.0")]
    [InlineData("([=main.group.p])", "(p = 0.008)")]
    [InlineData("[=main.means.group.A.mean] and [=main.means.group.C.mean]", "1.00 and 5.00")]
    public void Reference_WithoutWords_UsesTheReportFormat_AndAPValueReadsAsAPhrase(string prose, string expected)
    {
        using var run = new StudyRun();
        run.File("data/d.csv", File.ReadAllText(Path.Combine(CasesDir, "one-way-significant", "data", "d.csv")));
        run.Study(ReferenceStudy("Result: " + prose + "."));
        var r = run.Compile();
        Assert.True(r.Succeeded, string.Join("\n", r.Diagnostics));
        var p = Regex.Match(r.Html!, "<p>Result: (.*?)\\.</p>", RegexOptions.Singleline).Groups[1].Value;
        Assert.Equal(expected, WebUtility.HtmlDecode(Regex.Replace(p, "<[^>]+>", string.Empty)));
        Assert.True(AssertSpansMatchManifest(p, new ManifestView(r.ManifestJson!)) >= 1);
    }

    [Theory]
    [InlineData("[=main.group.f, resutl]", "SP0407", "unknown formatting 'resutl'; did you mean 'result'?")]
    [InlineData("[=main.group.f, 2 digits]", "SP0407", "unknown formatting '2 digits'; did you mean '2 decimals'?")]
    [InlineData("[=main.group.p, as percent]", "SP0408", "formatting 'as percent' does not apply here: 'p' is a p-value")]
    [InlineData("[=main.group.p, 0 decimals]", "SP0408", "a p-value needs at least one decimal")]
    [InlineData("[=main.group.f, x decimals]", "SP0403", "the number of decimals must be a whole number from 0 to 10, not 'x'")]
    [InlineData("[=main.group.f, 11 decimals]", "SP0403", "the number of decimals must be a whole number from 0 to 10, not '11'")]
    [InlineData("[=main.group.f, ]", "SP0403", "a formatting word is missing after ','")]
    [InlineData("[=main.group.f, 2 decimals, 1 decimal]", "SP0403", "the number of decimals is given twice")]
    [InlineData("[=main.group.f, as percent, as percent]", "SP0403", "'as percent' is given twice")]
    [InlineData("[=main.group, result, 2 decimals]", "SP0403", "'result' writes a whole sentence")]
    [InlineData("[=main.residual.df, as df, 2 decimals]", "SP0403", "'as df' chooses its own decimals")]
    [InlineData("[=main.group.f, as percent, no leading zero]", "SP0403", "'as percent' and 'no leading zero' cannot be combined")]
    [InlineData("[=main.residual, result]", "SP0408", "the residual row of an ANOVA table has no test")]
    [InlineData("[=main.groop, result]", "SP0401", "did you mean 'main.group, result'?")]
    [InlineData("[=main.group, 2 decimals]", "SP0409", "'2 decimals' formats one value, but 'main.group' names a term; add the statistic to the path, for example [=main.")]
    [InlineData("[=main.group.f", "SP0404", "a reference '[=' is not closed with ']' (a reference is at most 200 characters)")]
    [InlineData("{{ main.group.f | digits(1) }}", "SP0121", "'{{ main.group.f | digits(1) }}' is not a reference form; write [=main.group.f, 1 decimal]")]
    [InlineData("{{ main.group.p | p }}", "SP0121", "'{{ main.group.p | p }}' is not a reference form; write [=main.group.p, no leading zero]")]
    [InlineData("{{ main.group | result }}", "SP0121", "write [=main.group, result]")]
    [InlineData("{{ main.group.partial_eta2 | fraction(3) }}", "SP0121", "write [=main.group.partial_eta2, 3 decimals, no leading zero]")]
    [InlineData("{{ main.group.partial_eta2 | percent }}", "SP0121", "write [=main.group.partial_eta2, as percent]")]
    [InlineData("{{ main.residual.df | df }}", "SP0121", "write [=main.residual.df, as df]")]
    [InlineData("{{ main.\"group\".f }}", "SP0121", "write [=main.group.f]")]
    public void Reference_BadWords_IsAnErrorAtTheReference(string reference, string code, string message)
    {
        using var run = new StudyRun();
        run.File("data/d.csv", File.ReadAllText(Path.Combine(CasesDir, "one-way-significant", "data", "d.csv")));
        run.Study(ReferenceStudy("Result: " + reference + "."));
        var r = run.Compile();
        Assert.False(r.Succeeded);
        var d = Assert.Single(r.Diagnostics);
        Assert.Equal(code, d.Code);
        Assert.Contains(message, d.Message, StringComparison.Ordinal);
        Assert.Equal(10, d.Location.Line + 1);
        Assert.Equal(9, d.Location.Column + 1);
    }

    [Theory]
    [InlineData("of: [mian]", "SP0243", "no analysis block with id 'mian' to describe; did you mean 'main'?")]
    [InlineData("include: [efects]", "SP0209", "did you mean 'effects'?")]
    [InlineData("tense: future", "SP0209", "past")]
    [InlineData("of: [main, main]", "SP0245", "'main' is listed twice in 'of'")]
    [InlineData("detail: long", "SP0209", "brief")]
    public void MethodsBlock_BadKey_IsAnError(string body, string code, string message)
    {
        using var run = new StudyRun();
        run.File("data/d.csv", File.ReadAllText(Path.Combine(CasesDir, "one-way-significant", "data", "d.csv")));
        run.Study(ReferenceStudy("```methods\n" + body + "\n```"));
        var r = run.Compile();
        Assert.False(r.Succeeded);
        var d = Assert.Single(r.Diagnostics);
        Assert.Equal(code, d.Code);
        Assert.Contains(message, d.Message, StringComparison.Ordinal);
    }
}
