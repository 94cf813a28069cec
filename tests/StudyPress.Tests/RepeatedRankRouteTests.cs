using System.Globalization;
using StudyPress.Tests.Support;

namespace StudyPress.Tests;

/// <summary>
/// The rank route of the repeated kind (<c>ranks</c>): the residuals' Shapiro–Wilk check and the
/// Friedman test beside the F test. Data: the friedman golden case's copy of Zar, Example 12.6
/// (published χ² 10.68; p, Iman–Davenport F and p by the shared reference collection's exact
/// recomputation), read as 5 subjects measured under 4 conditions; the repeated golden case's
/// copies of Rutherford (2001) and Doncaster and Davey (2007) model 6.3. Altered copies (one
/// value made extreme) are test fixtures for the rule, whose values are checked against the same
/// computations reached by another route through the pipeline (an additive anova's assumption
/// checks; a friedman block).
/// </summary>
[Collection("cli")]
public sealed class RepeatedRankRouteTests
{
    private static string SourceDir([System.Runtime.CompilerServices.CallerFilePath] string path = "") => Path.GetDirectoryName(path)!;

    private static string Zar => File.ReadAllText(Path.Combine(SourceDir(), "Cases", "kinds", "friedman", "data", "zar-12-6.csv"));

    private static string Repeated(string name) => File.ReadAllText(Path.Combine(SourceDir(), "Cases", "kinds", "repeated", "data", name));

    /// <summary>Zar's block 1, treatment 4 (8.8) made extreme, so the residuals are far from normal.</summary>
    private static string ZarOutlier
    {
        get
        {
            var csv = Zar.Replace("\n1,4,8.8", "\n1,4,88.0", StringComparison.Ordinal);
            Assert.NotEqual(Zar, csv);
            return csv;
        }
    }

    private static string Study(string factors, string blocks) => $"""
---
title: Rank route fixture
data:
  d: d.csv
response: y
factors: [{factors}]
---

{blocks}
""";

    private static StudyRun Run(string csv, string factors, string blocks) => new StudyRun().File("d.csv", csv).Study(Study(factors, blocks));

    private static double Pair(ManifestView m, string block, string stat, string a, string b) =>
        Assert.Single(m.Find(block, "conover", "treatment", stat), v =>
            v.GetProperty("pair").EnumerateArray().Select(x => x.GetString()).SequenceEqual([a, b])).GetProperty("value").GetDouble();

    private const string ZarBlocks = """
```repeated r
subject: block
within: treatment
compare: treatment
ranks: always
```

```friedman f
blocks: block
factor: treatment
```
""";

    [Fact]
    public void Always_ZarExample_PublishedChiSquare_AndSameAsFriedmanBlock()
    {
        using var run = Run(Zar, "block, treatment", ZarBlocks);
        var m = run.Manifest();

        // Zar, Example 12.6: published chi-square 10.68.
        Assert.Equal(10.68, m.Get("r", "friedman", "treatment", "chi2"), 2);

        // Shared reference collection, exact recomputation: p, Iman–Davenport F (df 3, 12) and p.
        Assert.Equal(0.01358827296, m.Get("r", "friedman", "treatment", "p"), 10);
        Assert.Equal(9.88888888889, m.Get("r", "friedman", "treatment", "f_iman_davenport"), 10);
        Assert.Equal(3, m.Get("r", "friedman", "treatment", "df1_iman_davenport"));
        Assert.Equal(12, m.Get("r", "friedman", "treatment", "df2_iman_davenport"));
        Assert.Equal(0.001451880229, m.Get("r", "friedman", "treatment", "p_iman_davenport"), 11);
        Assert.Equal(5, m.Get("r", "friedman", "treatment", "n_blocks"));

        // The same test through the friedman kind (whose golden case pins these values): identical.
        foreach (var stat in new[] { "chi2", "df", "p", "kendall_w", "f_iman_davenport", "df1_iman_davenport", "df2_iman_davenport", "p_iman_davenport" })
        {
            Assert.Equal(m.Get("f", "friedman", "treatment", stat), m.Get("r", "friedman", "treatment", stat));
        }

        foreach (var level in new[] { "1", "2", "3", "4" })
        {
            Assert.Equal(m.Get("f", "friedman", "treatment", "mean_rank", level), m.Get("r", "friedman", "treatment", "mean_rank", level));
        }

        // Conover's pairs (Holm) as in the friedman block.
        Assert.Equal(Pair(m, "f", "p_adj", "1", "2"), Pair(m, "r", "p_adj", "1", "2"));
        Assert.Equal(Pair(m, "f", "statistic", "3", "4"), Pair(m, "r", "statistic", "3", "4"));

        var html = run.Compile().Html;
        Assert.Contains("Friedman rank test of treatment (subjects as blocks, 5 complete subjects)", html, StringComparison.Ordinal);
        Assert.Contains("the Friedman rank test is shown below, as asked", html, StringComparison.Ordinal);
    }

    [Fact]
    public void Auto_NonNormalResiduals_ShowsFriedman_WithTheAdditiveModelsCheck()
    {
        // One subject × one condition value made extreme. With one within factor and no between factor
        // the residuals are exactly those of the additive two-way anova (subject + condition), so the
        // repeated block's Shapiro–Wilk must equal the assumptions block's on that anova.
        using var run = Run(ZarOutlier, "block, treatment", """
```repeated r
subject: block
within: treatment
```

```anova additive
factors: [block, treatment]
interaction: false
```

```assumptions checks
of: additive
```

```friedman f
blocks: block
factor: treatment
```
""");
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        var m = new ManifestView(result.ManifestJson!);
        Assert.Equal(m.Get("checks", "shapiro_wilk", "residual", "w"), m.Get("r", "shapiro_wilk", "residual", "w"), 12);
        Assert.Equal(m.Get("checks", "shapiro_wilk", "residual", "p"), m.Get("r", "shapiro_wilk", "residual", "p"), 12);
        Assert.True(m.Get("r", "shapiro_wilk", "residual", "p") < 0.05);
        Assert.Equal(m.Get("f", "friedman", "treatment", "chi2"), m.Get("r", "friedman", "treatment", "chi2"));
        Assert.Equal(m.Get("f", "friedman", "treatment", "p_iman_davenport"), m.Get("r", "friedman", "treatment", "p_iman_davenport"));
        Assert.Contains("the Friedman rank test is shown below", result.Html, StringComparison.Ordinal);
        Assert.Contains("It tests whether the subjects rank the levels alike, not whether the means differ", result.Html, StringComparison.Ordinal);
        Assert.True(m.Get("r", "shapiro_wilk", "residual", "p") < 0.001, "shown as '< 0.001', so the line must not read 'p = <'");
        Assert.Contains("p <span", result.Html, StringComparison.Ordinal);
        Assert.DoesNotContain("p = &lt;", result.Html, StringComparison.Ordinal);
    }

    [Fact]
    public void Auto_NormalResiduals_NoFriedman()
    {
        // Rutherford (2001) one-way repeated measures: the check runs, the rank test is not shown.
        using var run = Run(Repeated("rutherford-2001-oneway.csv"), "subject, condition", """
```repeated r
subject: subject
within: condition
```
""");
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        var m = new ManifestView(result.ManifestJson!);
        Assert.True(m.Get("r", "shapiro_wilk", "residual", "p") >= 0.05);
        Assert.DoesNotContain(m.Values, v => v.GetProperty("test").GetString() == "friedman");
        Assert.Contains("consistent with normality.", result.Html, StringComparison.Ordinal);
    }

    [Fact]
    public void Never_NoCheck_NoTest()
    {
        using var run = Run(ZarOutlier, "block, treatment", """
```repeated r
subject: block
within: treatment
ranks: never
```
""");
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        Assert.DoesNotContain("shapiro_wilk", System.Text.Encoding.UTF8.GetString(result.ManifestJson!), StringComparison.Ordinal);
        Assert.DoesNotContain("friedman", System.Text.Encoding.UTF8.GetString(result.ManifestJson!), StringComparison.Ordinal);
    }

    [Fact]
    public void Auto_BetweenFactor_NonNormal_CautionWithoutRankTest()
    {
        // Doncaster and Davey model 6.3 with one measurement made extreme.
        var csv = Repeated("doncaster-davey-model-6-3.csv");
        var lines = csv.Split('\n');
        var header = lines[0].Split(',');
        var y = Array.IndexOf(header, "y");
        Assert.True(y >= 0, "the fixture has a 'y' column");
        var first = lines[1].Split(',');
        first[y] = (double.Parse(first[y], CultureInfo.InvariantCulture) + 1000).ToString(CultureInfo.InvariantCulture);
        lines[1] = string.Join(',', first);
        using var run = Run(string.Join('\n', lines), "subject, B, A", """
```repeated r
subject: subject
within: B
between: A
labels: per-group
```
""");
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        var m = new ManifestView(result.ManifestJson!);
        Assert.True(m.Get("r", "shapiro_wilk", "residual", "p") < 0.05);
        Assert.DoesNotContain(m.Values, v => v.GetProperty("test").GetString() == "friedman");
        Assert.Contains("The Friedman rank test has no form for this layout", result.Html, StringComparison.Ordinal);
        Assert.Contains("no rank test exists for this layout", result.Html, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("between: A")]
    [InlineData("fit: reml")]
    public void Always_WithoutAFriedmanLayout_IsOneErrorAtRanks(string extra)
    {
        using var run = Run(Repeated("doncaster-davey-model-6-3.csv"), "subject, B, A", $"""
```repeated r
subject: subject
within: B
{extra}
ranks: always
```
""");
        // Fence on line 8 (0-based): subject 9, within 10, the extra key 11, ranks 12.
        var d = run.SingleError("SP0295", 12);
        Assert.Contains("'ranks: always'", d.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void UnknownRanksValue_IsOneError()
    {
        using var run = Run(Zar, "block, treatment", """
```repeated r
subject: block
within: treatment
ranks: sometimes
```
""");
        var d = Assert.Single(run.Compile().Diagnostics);
        Assert.Equal(11, d.Location.Line);
        Assert.Contains("sometimes", d.Message, StringComparison.Ordinal);
    }
}
