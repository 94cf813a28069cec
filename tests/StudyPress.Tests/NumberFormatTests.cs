using System.Globalization;
using System.IO.Compression;
using System.Net;
using System.Runtime.CompilerServices;
using System.Text;
using System.Text.RegularExpressions;
using System.Xml.Linq;
using StudyPress.Charts;
using StudyPress.Rendering;
using StudyPress.Rendering.Export;
using StudyPress.Tests.Support;

namespace StudyPress.Tests;

/// <summary>
/// One number format (docs/study-file.md, "How numbers are written"): every example and golden
/// case is built, every visible number of the HTML, the Word text and the LaTeX fragment is read
/// back and classified by what it is (p-value, count, statistic, percent, α), and each kind is
/// written one way everywhere — the same digits rule, the minus sign U+2212, one p style — plus
/// the report option <c>p-leading-zero</c> and a regression test for each inconsistency that was
/// found (leading zero of p, digits, minus, percent spacing, dashes in method names, "(s)", "^").
/// </summary>
[Collection("cli")]
public sealed partial class NumberFormatTests
{
    private static string SourceDir([CallerFilePath] string path = "") => Path.GetDirectoryName(path)!;

    private static string RepoDir => Path.GetFullPath(Path.Combine(SourceDir(), "..", ".."));

    /// <summary>Every example study and every golden case (kinds and methods), relative to the repository.</summary>
    public static TheoryData<string> Studies()
    {
        var data = new TheoryData<string>();
        var roots = new[] { Path.Combine(RepoDir, "examples"), Path.Combine(SourceDir(), "Cases", "kinds"), Path.Combine(SourceDir(), "Cases", "methods") };
        foreach (var root in roots)
        {
            foreach (var d in Directory.GetDirectories(root).Order(StringComparer.Ordinal))
            {
                if (File.Exists(Path.Combine(d, "study.md")))
                {
                    data.Add(Path.GetRelativePath(RepoDir, Path.Combine(d, "study.md")).Replace('\\', '/'));
                }
            }
        }

        return data;
    }

    private enum Kind
    {
        PValue,
        Count,
        Statistic,
    }

    private static Kind KindOf(string stat, double value) =>
        stat == "p" || stat.StartsWith("p_", StringComparison.Ordinal) ? Kind.PValue
        : StudyPress.Evaluation.Stat.Counts.Contains(stat) && value == Math.Floor(value) ? Kind.Count
        : Kind.Statistic;

    // The shapes each kind may take at the default settings (3 significant digits, p with 3 decimals
    // and its leading zero), written independently of the compiler.
    [GeneratedRegex(@"^(< 0\.001|0\.\d{3}|1\.000)$")]
    private static partial Regex PShape();

    [GeneratedRegex(@"^\d+$")]
    private static partial Regex CountShape();

    [GeneratedRegex(@"^−?(\d+|\d+\.\d+|\d\.\d{2}E[+−]\d{3})$")]
    private static partial Regex StatisticShape();

    /// <summary>Significant digits of a plain decimal number text ("0.0661" → 3, "12.0" → 3, "123" → 3).</summary>
    private static int SignificantDigits(string text)
    {
        var digits = text.TrimStart('−').Replace(".", string.Empty, StringComparison.Ordinal).TrimStart('0');
        return digits.Length;
    }

    private static void AssertShape(Kind kind, string text, string where)
    {
        switch (kind)
        {
            case Kind.PValue:
                Assert.True(PShape().IsMatch(text), $"{where}: p-value shown as '{text}'");
                break;
            case Kind.Count:
                Assert.True(CountShape().IsMatch(text), $"{where}: count shown as '{text}'");
                break;
            default:
                Assert.True(StatisticShape().IsMatch(text), $"{where}: statistic shown as '{text}'");
                if (text.Contains('.', StringComparison.Ordinal) && !text.Contains('E', StringComparison.Ordinal))
                {
                    // With a decimal point, exactly the significant digits (trailing zeros kept: "1.00").
                    Assert.True(SignificantDigits(text) == 3 || text.TrimStart('−').StartsWith("0.", StringComparison.Ordinal) && SignificantDigits(text) <= 3, $"{where}: '{text}' does not have 3 significant digits");
                }

                break;
        }
    }

    [GeneratedRegex("<span class=\"v\" data-v=\"(?<id>v[0-9]+)\"(?: data-style=\"(?<style>[^\"]*)\")? tabindex=\"0\">(?<text>[^<]*)</span>")]
    private static partial Regex TracedNumber();

    [GeneratedRegex(@"^\\newcommand\\(?<name>sp[A-Za-z]+)\{(?<body>[^\n]*)\}% (?<id>v[0-9]+) ", RegexOptions.Multiline)]
    private static partial Regex ValueMacro();

    // Text rules that hold for every visible word and number, generated or not.
    [GeneratedRegex(@"(^|[\s(\[=,;:/])-\d")]
    private static partial Regex HyphenMinus();

    [GeneratedRegex(@"\d[  ]%")]
    private static partial Regex SpacedPercent();

    [GeneratedRegex(@"\p{L}\(s\)")]
    private static partial Regex OptionalPlural();

    [GeneratedRegex(@"(Shapiro|Brown|Games|Kruskal|Durbin|Tukey|Iman|Greenhouse|Huynh|Box|Benjamini|Welch|Freedman)-(Wilk|Forsythe|Howell|Wallis|Watson|Kramer|Davenport|Geisser|Feldt|Cox|Hochberg|Satterthwaite|Diaconis)")]
    private static partial Regex HyphenatedName();

    [GeneratedRegex(@"α = (?<a>[0-9.]+)")]
    private static partial Regex AlphaShown();

    /// <summary>
    /// The text with the data's own level names that begin with a hyphen (a factor coded -1 / 1)
    /// replaced by a placeholder: they are the user's labels, shown as written, not numbers.
    /// </summary>
    private static string WithoutLevelNames(string text, byte[] manifestJson)
    {
        using var doc = System.Text.Json.JsonDocument.Parse(manifestJson);
        var names = new HashSet<string>(StringComparer.Ordinal);
        foreach (var v in doc.RootElement.GetProperty("values").EnumerateArray())
        {
            if (v.TryGetProperty("level", out var level) && level.ValueKind == System.Text.Json.JsonValueKind.String)
            {
                names.UnionWith(level.GetString()!.Split(" / "));
            }

            if (v.TryGetProperty("pair", out var pair) && pair.ValueKind == System.Text.Json.JsonValueKind.Array)
            {
                names.UnionWith(pair.EnumerateArray().Select(x => x.GetString() ?? string.Empty));
            }
        }

        foreach (var name in names.Where(n => n.StartsWith('-')).OrderByDescending(n => n.Length))
        {
            text = Regex.Replace(text, @"(?<=^|[\s(\[=,;:/])" + Regex.Escape(name) + @"(?=$|[\s)\],;:/])", "‹level›");
        }

        return text;
    }

    private static void AssertTextRules(string text, string where)
    {
        Assert.False(HyphenMinus().IsMatch(text), $"{where}: a hyphen used as a minus sign: …{Around(text, HyphenMinus())}…");
        Assert.False(SpacedPercent().IsMatch(text), $"{where}: a space before '%': …{Around(text, SpacedPercent())}…");
        Assert.False(OptionalPlural().IsMatch(text), $"{where}: a '(s)' plural: …{Around(text, OptionalPlural())}…");
        Assert.False(HyphenatedName().IsMatch(text), $"{where}: a method name with a hyphen instead of an en dash: …{Around(text, HyphenatedName())}…");
        Assert.False(text.Contains('^', StringComparison.Ordinal), $"{where}: a literal '^' in the text: …{text[Math.Max(0, text.IndexOf('^', StringComparison.Ordinal) - 40)..Math.Min(text.Length, text.IndexOf('^', StringComparison.Ordinal) + 20)]}…");
        var alphas = AlphaShown().Matches(text).Select(m => m.Groups["a"].Value.TrimEnd('.')).Distinct(StringComparer.Ordinal).ToList();
        Assert.True(alphas.Count <= 1, $"{where}: α written as {string.Join(" and ", alphas)}");
    }

    private static string Around(string text, Regex r)
    {
        var m = r.Match(text);
        return text[Math.Max(0, m.Index - 40)..Math.Min(text.Length, m.Index + m.Length + 20)];
    }

    /// <summary>The visible text of a report: no style, script, manifest or code; SVG text kept; one line per block element.</summary>
    private static string VisibleText(string html)
    {
        var s = Regex.Replace(html, "<(style|script|code|pre|title|desc)[^>]*>.*?</\\1>", " ", RegexOptions.Singleline);
        s = Regex.Replace(s, "<(p|tr|li|h[1-6]|caption|figcaption|text)[ >]", "\n$0");
        s = Regex.Replace(s, "</?(td|th|div|figure|svg|g|tspan)( [^>]*)?>", " ");
        s = Regex.Replace(s, "<[^>]+>", string.Empty);
        return WebUtility.HtmlDecode(s);
    }

    private static (CompilationResult Result, ManifestValues Manifest) Build(string study)
    {
        var result = Compilation.Compile(Path.Combine(RepoDir, study), new CompileOptions());
        Assert.True(result.Succeeded, study + ":\n" + string.Join("\n", result.Diagnostics));
        return (result, ManifestValues.Read(result.ManifestJson!));
    }

    [Theory]
    [MemberData(nameof(Studies))]
    public void EveryVisibleNumber_HasOneFormatPerKind_InHtmlWordAndLatex(string study)
    {
        var (result, manifest) = Build(study);
        var values = manifest.Values.ToDictionary(v => v.Id, StringComparer.Ordinal);

        // HTML: every traced number, by kind; the same value shows the same text wherever it is shown
        // (tables, prose, methods text, result sentences), unless a reference asked for a style in words.
        var page = result.Html![..result.Html!.IndexOf("<script type=\"application/json\"", StringComparison.Ordinal)];
        var shownAs = new Dictionary<string, string>(StringComparer.Ordinal);
        var styled = new HashSet<(string, string)>();
        var count = 0;
        foreach (Match m in TracedNumber().Matches(page))
        {
            var id = m.Groups["id"].Value;
            var text = WebUtility.HtmlDecode(m.Groups["text"].Value);
            var v = values[id];
            Assert.False(text.Contains('-', StringComparison.Ordinal), $"{study}: {id} shown with a hyphen: '{text}'");
            if (m.Groups["style"].Success)
            {
                styled.Add((id, text));
                continue; // the study's own words chose this style ("2 decimals", "no leading zero")
            }

            count++;
            AssertShape(KindOf(v.Stat, v.Value!.Value), text, $"{study}: {id} ({v.Path})");
            Assert.True(shownAs.TryAdd(id, text) || shownAs[id] == text, $"{study}: {id} ({v.Path}) shown as '{shownAs.GetValueOrDefault(id)}' and as '{text}'");
        }

        Assert.True(count > 0, study + ": no traced numbers");
        // The text rules hold for all the compiler writes: the analysis blocks (tables, readings,
        // captions, chart labels, the methods text) and the data section; the study's own prose is
        // the author's and is left out.
        var generated = string.Join("\n", Regex.Matches(page, "<section class=\"(block [^\"]*|inputs)\".*?</section>", RegexOptions.Singleline).Select(m => m.Value));
        Assert.NotEmpty(generated);
        AssertTextRules(WithoutLevelNames(VisibleText(generated), result.ManifestJson!), study + " (HTML)");

        // Word: the text of each number's bookmark is the HTML's text for that id; the whole text keeps the rules.
        var docx = ReportExports.Docx(result.Html!, result.ManifestJson!, [.. result.Figures.Select(f => (f.Figure.Type, Png: TinyPng))]);
        var (docText, numbers) = DocxText(docx);
        foreach (var (id, text) in numbers)
        {
            if (shownAs.TryGetValue(id, out var html) && !styled.Contains((id, text)))
            {
                Assert.True(html == text, $"{study}: Word shows {id} as '{text}', the HTML as '{html}'");
            }

            Assert.False(text.Contains('-', StringComparison.Ordinal), $"{study}: Word shows {id} with a hyphen: '{text}'");
        }

        Assert.NotEmpty(numbers);
        Assert.False(SpacedPercent().IsMatch(docText), $"{study} (Word): a space before '%': …{Around(docText, SpacedPercent())}…");
        Assert.False(OptionalPlural().IsMatch(docText), $"{study} (Word): a '(s)' plural: …{Around(docText, OptionalPlural())}…");
        Assert.False(HyphenatedName().IsMatch(docText), $"{study} (Word): a method name with a hyphen: …{Around(docText, HyphenatedName())}…");

        // LaTeX: each value macro is the report's text for the value, with the math minus.
        var files = ReportExports.Latex(result.Html!, result.ManifestJson!, result.NumberFormat!, [.. result.Figures.Select(f => (f.FileName, f.Figure.Type, TinyPng))]);
        var tex = Encoding.UTF8.GetString(files.Single(f => f.FileName == LatexWriter.FragmentName).Bytes);
        foreach (Match m in ValueMacro().Matches(tex))
        {
            var v = values[m.Groups["id"].Value];
            var body = m.Groups["body"].Value;
            if (v.Value is not { } x)
            {
                continue;
            }

            var text = body.Replace("\\ensuremath{-}", "−", StringComparison.Ordinal).Replace("\\textless{}", "<", StringComparison.Ordinal);
            AssertShape(KindOf(v.Stat, x), text, $"{study}: LaTeX {m.Groups["name"].Value}");
            Assert.False(Regex.IsMatch(body, @"(^|[^{])-\d"), $"{study}: LaTeX {m.Groups["name"].Value} has a text hyphen as minus: {body}");
            if (shownAs.TryGetValue(v.Id, out var html))
            {
                Assert.Equal(LatexWriter.Escape(html), body);
            }
        }

        var texText = string.Join("\n", tex.Split('\n').Where(l => !l.StartsWith('%')).Select(l => l[..(l.IndexOf("}% ", StringComparison.Ordinal) is var c and >= 0 ? c + 1 : l.Length)]));
        Assert.False(Regex.IsMatch(texText, @"\d \\%"), $"{study}: LaTeX has a space before a percent sign");
        Assert.False(texText.Contains("(s)", StringComparison.Ordinal), $"{study}: LaTeX has a '(s)' plural");
        Assert.False(Regex.IsMatch(texText, @"(^|[\s(\[=,;:])-\d"), $"{study}: LaTeX has a text hyphen as minus: …{Around(texText, new Regex(@"(^|[\s(\[=,;:])-\d"))}…");
    }

    // ---- regression tests, one per inconsistency found, on the one-way case "one-way-significant":
    // means 1, 3, 5 with n = 3 and SD 1 (exact hand computation): F = 12 on 2 and 6 df,
    // p = (1 + 2F/6)^-3 = 0.008, partial η² = 0.8; Tukey's differences A − B = B − C = −2, A − C = −4.

    private static string OneWayStudy(string report = "") => """
        ---
        title: Number formats
        data: { d: data/d.csv }
        response: y
        factors: { group: { levels: [A, B, C] } }
        """ + (report.Length > 0 ? "\n" + report : string.Empty) + """

        ---

        ```anova main
        ```

        ```assumptions
        of: main
        ```

        ```posthoc pairs
        of: main
        method: tukey
        ```

        ```methods
        ```

        """;

    /// <summary>The line of the study text that holds <paramref name="what"/> (1-based).</summary>
    private static int LineOf(string study, string what) => 1 + study[..study.IndexOf(what, StringComparison.Ordinal)].Count(c => c == '\n');

    private static StudyRun OneWay(string report = "")
    {
        var run = new StudyRun();
        run.File("data/d.csv", File.ReadAllText(Path.Combine(SourceDir(), "Cases", "methods", "one-way-significant", "data", "d.csv")));
        run.Study(OneWayStudy(report));
        return run;
    }

    private static string Compiled(StudyRun run)
    {
        var r = run.Compile();
        Assert.True(r.Succeeded, string.Join("\n", r.Diagnostics));
        return r.Html!;
    }

    private static string Text(string html) => Regex.Replace(VisibleText(html), @"\s+", " ");

    private static string MethodsText(string html) =>
        Text(Regex.Match(html, "<section class=\"block block-methods\".*?</section>", RegexOptions.Singleline).Value);

    [Fact]
    public void PValue_HasItsLeadingZero_InTablesAndInTheMethodsText()
    {
        // Was: 0.008 in the table, .008 in the methods text.
        using var run = OneWay();
        var html = Compiled(run);
        Assert.Contains("F(2, 6) = 12.0, p = 0.008", MethodsText(html), StringComparison.Ordinal);
        Assert.Contains(">0.008</span>", html, StringComparison.Ordinal);
        Assert.DoesNotContain(">.008<", html, StringComparison.Ordinal);
        Assert.Contains("α = 0.05", MethodsText(html), StringComparison.Ordinal);
        Assert.DoesNotContain("α = .05", Text(html), StringComparison.Ordinal);
    }

    [Fact]
    public void PLeadingZeroFalse_DropsTheZero_OfEveryPValueAndOfAlpha_Everywhere()
    {
        using var run = OneWay("report:\n  p-leading-zero: false");
        var html = Compiled(run);
        var methods = MethodsText(html);
        Assert.Contains("F(2, 6) = 12.0, p = .008", methods, StringComparison.Ordinal);
        Assert.Contains("α = .05", methods, StringComparison.Ordinal);
        Assert.DoesNotContain(">0.008<", html, StringComparison.Ordinal);
        Assert.Contains(">.008</span>", html, StringComparison.Ordinal);
        Assert.DoesNotContain("α = 0.05", Text(html), StringComparison.Ordinal);

        // Other values keep their zero: partial η² = 0.800 (exact hand computation 24/30).
        Assert.Contains("partial η² = 0.800", methods, StringComparison.Ordinal);

        // verify --recompute reads the report's format from the header and finds it fresh.
        Assert.Equal(0, run.Cli("build", "study.md", "--quiet").Exit);
        var (exit, output, err) = run.Cli("verify", "--recompute", "study.html");
        Assert.True(exit == 0, output + err);
    }

    [Fact]
    public void Statistic_HasTheSameDigits_InTheTableTheMethodsTextAndTheChartLabel()
    {
        // Was: F = 12.0 in the table, 12.00 in the methods text and F = 12 on the chart (4 significant digits).
        using var run = OneWay();
        var html = Compiled(run);
        Assert.Contains("F(2, 6) = 12.0,", MethodsText(html), StringComparison.Ordinal);
        Assert.Contains(">12.0</span>", html, StringComparison.Ordinal);
        var svgText = string.Join(" | ", Regex.Matches(html, "<text[^>]*>([^<]*)</text>").Select(m => WebUtility.HtmlDecode(m.Groups[1].Value)));
        Assert.Contains("F = 12.0", svgText, StringComparison.Ordinal);

        // The rejection threshold F(0.95; 2, 6) = 5.143 (published F tables) is labelled with 3 significant digits.
        Assert.Contains("rejected from F = 5.14", svgText, StringComparison.Ordinal);
    }

    [Fact]
    public void NegativeNumbers_UseTheMinusSign_InTablesTextAndCharts()
    {
        // Was: a hyphen in the methods text, U+2212 on the chart. Tukey's A − C = 1 − 5 = −4 (the pair
        // the text reports), A − B = 1 − 3 = −2 (in the table).
        using var run = OneWay();
        var html = Compiled(run);
        Assert.Contains("difference = −4.00", MethodsText(html), StringComparison.Ordinal);
        Assert.Contains(">−2.00</span>", html, StringComparison.Ordinal);
        Assert.DoesNotMatch(@">-\d", html);
    }

    [Fact]
    public void Percent_HasNoSpace_InTheChartLegendAsInTheText()
    {
        // Was: "95 % pointwise envelope" on the normal quantile plot, "95%" everywhere else.
        using var run = OneWay();
        var html = Compiled(run);
        Assert.Contains("95% pointwise envelope", html, StringComparison.Ordinal);
        Assert.DoesNotMatch(@"\d %", Text(html));
    }

    [Fact]
    public void MethodNames_TakeAnEnDash()
    {
        // Was: "Durbin-Watson", "Shapiro-Wilk", "Box-Cox", "Tukey-Kramer", "Games-Howell" in some texts.
        using var run = OneWay();
        var html = Compiled(run);
        Assert.Contains("Shapiro–Wilk", html, StringComparison.Ordinal);
        Assert.DoesNotMatch(HyphenatedName(), html);
    }

    [Fact]
    public void Counts_TakeTheirPlural_NotParentheses()
    {
        // Was: "3 of 3 comparison(s) differ" and "(1 − (1 − α)^m, …)".
        using var run = OneWay();
        var html = Compiled(run);
        var text = Text(html);
        Assert.Matches(@"\d of 3 comparisons differ", text);
        Assert.DoesNotContain("(s)", text, StringComparison.Ordinal);
        Assert.Contains("(1 − (1 − α)<sup>m</sup>, for independent tests)", html, StringComparison.Ordinal);
        Assert.Equal("1 comparison", NumberText.Count(1, "comparison"));
        Assert.Equal("0 comparisons", NumberText.Count(0, "comparison"));
        Assert.Equal("2 groups", NumberText.Count(2, "group"));
    }

    [Theory]
    [InlineData(0.0004, true, "< 0.001")]
    [InlineData(0.0004, false, "< .001")]
    [InlineData(0.0351, true, "0.035")]
    [InlineData(0.0355, false, ".036")]
    [InlineData(1.0, false, "1.000")]
    public void PValue_FollowsTheDocumentedRule(double p, bool leadingZero, string expected)
    {
        // Rule (docs/study-file.md): 3 decimals, rounded half away from zero; "< 0.001" below; the zero by p-leading-zero.
        Assert.Equal(expected, new NumberText(3, 3, leadingZero).P(p));
    }

    [Theory]
    [InlineData(-2.77, 3, "−2.77")]
    [InlineData(3.098, 3, "3.10")]
    [InlineData(-0.0004, 2, "−0.00040")]
    [InlineData(-0.0001, 1, "−0.0001")]
    [InlineData(18009.4, 3, "18009")]
    [InlineData(9.996, 3, "10.0")]
    [InlineData(0, 3, "0")]
    public void General_FollowsTheDocumentedRule(double value, int digits, string expected)
    {
        // Rule (docs/study-file.md): significant digits rounded half away from zero, whole numbers kept whole, minus U+2212.
        Assert.Equal(expected, new NumberText(digits).General(value));
    }

    [Theory]
    [InlineData(-0.001, 2, "0.00")]
    [InlineData(-0.005, 2, "−0.01")]
    public void Fixed_DropsTheSignOfAZero_AndUsesTheMinusSign(double value, int decimals, string expected) =>
        Assert.Equal(expected, NumberText.Fixed(value, decimals));

    [Theory]
    [InlineData("maybe")]
    [InlineData("0")]
    [InlineData("fasle")]
    public void PLeadingZero_BadValue_IsOneErrorAtTheValue_Exit2_NothingWritten(string value)
    {
        using var run = OneWay("report:\n  p-leading-zero: " + value);
        var line = LineOf(OneWayStudy("report:\n  p-leading-zero: " + value), "p-leading-zero");
        var d = Assert.Single(run.Compile().Diagnostics);
        Assert.Equal("SP0605", d.Code);
        Assert.Equal(line - 1, d.Location.Line); // 0-based, printed 1-based
        Assert.Equal(18, d.Location.Column);
        Assert.Equal($"'p-leading-zero' is '{value}'; write true (p-values as 0.035, < 0.001) or false (as .035, < .001)", d.Message);

        var (exit, output, err) = run.Cli("build", "study.md");
        Assert.Equal(2, exit);
        Assert.Equal($"study.md:{line}:19: error: 'p-leading-zero' is '{value}'; write true (p-values as 0.035, < 0.001) or false (as .035, < .001)\n", err.Replace("\r\n", "\n", StringComparison.Ordinal));
        Assert.False(File.Exists(run.ReportPath), output);
    }

    [Fact]
    public void PLeadingZero_Misspelt_IsOneErrorNamingTheKey()
    {
        using var run = OneWay("report:\n  p-leading-zeros: false");
        var d = Assert.Single(run.Compile().Diagnostics);
        Assert.Contains("p-leading-zero", d.Message, StringComparison.Ordinal);
        Assert.Equal(LineOf(OneWayStudy("report:\n  p-leading-zeros: false"), "p-leading-zeros") - 1, d.Location.Line);
    }

    [Theory]
    [InlineData("true", true)]
    [InlineData("false", false)]
    [InlineData("", true)]
    public void PLeadingZero_Binds(string value, bool expected)
    {
        using var run = OneWay(value.Length == 0 ? string.Empty : "report:\n  p-leading-zero: " + value);
        var r = run.Compile();
        Assert.True(r.Succeeded, string.Join("\n", r.Diagnostics));
        Assert.Equal(expected, r.NumberFormat!.PLeadingZero);
    }

    /// <summary>A 1×1 PNG: the exports embed figures but these tests read only text.</summary>
    private static readonly byte[] TinyPng = Convert.FromBase64String("iVBORw0KGgoAAAANSUhEUgAAAAEAAAABCAYAAAAfFcSJAAAADUlEQVR42mNkYPhfDwAChwGA60e6kgAAAABJRU5ErkJggg==");

    /// <summary>The Word document's visible text and the text inside each number's bookmark (by manifest id).</summary>
    private static (string Text, List<(string Id, string Text)> Numbers) DocxText(byte[] docx)
    {
        using var zip = new ZipArchive(new MemoryStream(docx));
        using var stream = zip.GetEntry("word/document.xml")!.Open();
        var doc = XDocument.Load(stream);
        XNamespace w = "http://schemas.openxmlformats.org/wordprocessingml/2006/main";
        var text = new StringBuilder();
        var numbers = new List<(string, string)>();
        var open = new Dictionary<string, (string Name, StringBuilder Text)>(StringComparer.Ordinal);
        foreach (var e in doc.Descendants())
        {
            if (e.Name == w + "p")
            {
                text.Append('\n');
            }
            else if (e.Name == w + "bookmarkStart")
            {
                open[(string)e.Attribute(w + "id")!] = ((string)e.Attribute(w + "name")!, new StringBuilder());
            }
            else if (e.Name == w + "bookmarkEnd" && open.Remove((string)e.Attribute(w + "id")!, out var b))
            {
                var name = b.Name.Split('_')[0];
                if (name.StartsWith('v'))
                {
                    numbers.Add((name, b.Text.ToString()));
                }
            }
            else if (e.Name == w + "t")
            {
                text.Append(e.Value);
                foreach (var o in open.Values)
                {
                    o.Text.Append(e.Value);
                }
            }
        }

        return (text.ToString(), numbers);
    }
}
