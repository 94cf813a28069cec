using System.Globalization;
using System.Text;
using StudyPress.Comparison;
using StudyPress.Diagnostics;
using StudyPress.Tests.Support;

namespace StudyPress.Tests;

/// <summary>
/// The trimmed-means kind through the whole pipeline: with trim 0 it gives the anova block's Welch
/// test (Welch 1951) on the same data; its mistakes give one message each, at the place to edit;
/// a level with zero winsorized variance beside others leaves the test not defined and says so.
/// Data: the e-Handbook resistor data (3 levels × 5, section 7.4.3.3) and GEAR.DAT, as in the
/// kind's golden case; variations of them are test fixtures.
/// </summary>
public sealed class TrimmedMeansKindTests
{
    private const string Resistors = "level,value\n1,6.9\n1,5.4\n1,5.8\n1,4.6\n1,4.0\n2,8.3\n2,6.8\n2,7.8\n2,9.2\n2,6.5\n3,8.0\n3,10.5\n3,8.1\n3,6.9\n3,9.3\n";

    private static string Study(string keys, string more = "") => $"""
---
title: Trimmed-means fixture
data:
  res: res.csv
response: value
factors: [level]
---

```trimmed-means t
{keys}
```
{more}
""";

    private static StudyRun Run(string keys, string csv = Resistors, string more = "") => new StudyRun().File("res.csv", csv).Study(Study(keys, more));

    private static string GearCsv => File.ReadAllText(Path.Combine(SourceDir(), "Cases", "kinds", "trimmed-means", "data", "gear.csv"));

    private static string SourceDir([System.Runtime.CompilerServices.CallerFilePath] string path = "") => Path.GetDirectoryName(path)!;

    private static void Rel(double expected, double actual, double tolerance, string what) =>
        Assert.True(Math.Abs(actual - expected) <= tolerance * Math.Abs(expected), string.Create(CultureInfo.InvariantCulture, $"{what}: got {actual:R}, expected {expected:R}"));

    // Welch (1951), Biometrika 38, 330-336: with trim 0 the statistic is Welch's heteroscedastic F,
    // which the anova block computes with 'welch: yes' (WelchAnova); same data, same numbers.
    [Theory]
    [InlineData("gear")]
    [InlineData("resistors")]
    public void TrimZero_GivesTheAnovaBlocksWelchTest(string data)
    {
        var (csv, factor, response) = data == "gear" ? (GearCsv, "batch", "diameter") : (Resistors, "level", "value");
        var study = $"---\ntitle: Welch\ndata: d.csv\nresponse: {response}\nfactors: [{factor}]\n---\n\n```anova main\nwelch: yes\n```\n\n```trimmed-means t\ntrim: 0\n```\n";
        using var run = new StudyRun().File("d.csv", csv).Study(study);
        var m = run.Manifest();
        foreach (var stat in new[] { "f", "df1", "df2", "p" })
        {
            Rel(m.Get("main", "welch", factor, stat), m.Get("t", "trimmed_means", factor, stat), 1e-12, stat);
        }

        Assert.Equal(0, m.Get("t", "trimmed_means", factor, "trim"));
    }

    // Exact hand computation (as in the golden case): the resistors' trimmed means at trim 0.2 are
    // 79/15, 229/30 and 127/15 from 3 of 5 values each; the default trim is 0.2.
    [Fact]
    public void DefaultTrim_IsTwentyPercent()
    {
        using var run = Run(string.Empty);
        var m = run.Manifest();
        Assert.Equal(0.2, m.Get("t", "trimmed_means", "level", "trim"));
        Assert.Equal(3, m.Get("t", "trimmed_means", "level", "n_effective", "1"));
        Rel(79.0 / 15, m.Get("t", "trimmed_means", "level", "trimmed_mean", "1"), 1e-14, "trimmed mean of level 1");
    }

    // g = ⌊trim × n⌋ on the trim as written: 0.29 × 100 = 29 set aside at each end, 42 left (a
    // binary product gives 28.999… and would keep 44).
    [Fact]
    public void TrimCount_UsesTheTrimAsWritten()
    {
        var csv = new StringBuilder("level,value\n");
        for (var i = 0; i < 100; i++)
        {
            csv.Append(CultureInfo.InvariantCulture, $"1,{i}\n2,{(2 * i) + (i % 7)}\n");
        }

        using var run = Run("trim: 0.29", csv.ToString());
        Assert.Equal(42, run.Manifest().Get("t", "trimmed_means", "level", "n_effective", "2"));
    }

    [Theory]
    [InlineData("trim: 0.5", "SP0608", 9)]
    [InlineData("trim: -0.1", "SP0608", 9)]
    [InlineData("trim: 1", "SP0608", 9)]
    [InlineData("trim: lots", "SP0207", 9)]
    [InlineData("factor: levl", "SP0216", 9)]
    [InlineData("trim: 0.4", "SP0609", 9)]
    [InlineData("factor: level\nwhere:\n  level: \"2\"", "SP0501", 9)]
    [InlineData("where:\n  level: \"2\"", "SP0501", 8)]
    public void OneMistake_OneMessage_AtTheKey(string keys, string code, int line)
    {
        using var run = Run(keys);
        run.SingleError(code, line);
    }

    [Fact]
    public void TooFewLeftAfterTrimming_NamesTheLevel()
    {
        // Level 4 has one value: at the default trim nothing is set aside and 1 value is left.
        using var run = Run(string.Empty, Resistors + "4,7.0\n");
        var d = run.SingleError("SP0609", 8);
        Assert.Contains("level '4' of factor 'level' has 1 value, and trimming 0 from each tail leaves 1", d.Message, StringComparison.Ordinal);
        Assert.Contains("write a smaller 'trim'", d.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void ZeroWinsorizedVarianceInEveryLevel_IsOneError()
    {
        // 1 5 5 5 9 and 2 7 7 7 8 winsorize (g = 1) to constant values.
        using var run = Run("trim: 0.2", "level,value\n1,1\n1,5\n1,5\n1,5\n1,9\n2,2\n2,7\n2,7\n2,7\n2,8\n");
        var d = run.SingleError("SP0399", 9);
        Assert.Contains("every level of factor 'level' has zero winsorized variance", d.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void ZeroWinsorizedVarianceInOneLevel_LeavesTheTestNotDefined()
    {
        using var run = Run(string.Empty, Resistors.Replace("1,6.9\n1,5.4\n1,5.8\n1,4.6\n1,4.0\n", "1,1\n1,5\n1,5\n1,5\n1,9\n", StringComparison.Ordinal));
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        var m = new ManifestView(result.ManifestJson!);
        var f = Assert.Single(m.Find("t", "trimmed_means", "level", "f"));
        Assert.Equal(System.Text.Json.JsonValueKind.Null, f.GetProperty("value").ValueKind);
        Assert.Contains("winsorized variance is zero", f.GetProperty("reason").GetString(), StringComparison.Ordinal);
        Assert.Equal(0, m.Get("t", "trimmed_means", "level", "winsorized_variance", "1"));
        Assert.Contains("The winsorized variance of 1 is zero", result.Html, StringComparison.Ordinal);
        Assert.Contains("The test is not defined for these data", result.Html, StringComparison.Ordinal);
    }

    [Fact]
    public void Reading_SaysNoMoreThanTheTest()
    {
        using var run = Run(string.Empty, more: "\n```methods text\n```\n");
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        Assert.Contains("rejects the hypothesis that the population trimmed means of the levels of level are all equal", result.Html, StringComparison.Ordinal);
        Assert.Contains("It does not say which levels differ.", result.Html, StringComparison.Ordinal);
        Assert.Contains("It rejected the hypothesis that the levels", result.Html, StringComparison.Ordinal);
    }

    [Fact]
    public void ResultReference_WritesTheTestAndALevel()
    {
        using var run = Run(string.Empty, more: "\nThe test gave [=t.trimmed_means.level, result]; level 3 had [=t.trimmed_means.level.\"3\", result]; [=t.level.p], [=t.level.\"3\".trimmed_mean].\n");
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        var text = System.Text.RegularExpressions.Regex.Replace(result.Html!, "<[^>]+>", string.Empty);
        Assert.Contains("The test gave F(2, 3.97) = 8.52, p = 0.037;", text, StringComparison.Ordinal);
        var at = text.IndexOf("level 3 had", StringComparison.Ordinal);
        Assert.True(at >= 0, text);
        Assert.StartsWith("level 3 had trimmed mean = 8.47, 3 values after trimming; p = 0.037, 8.47.", text[at..], StringComparison.Ordinal);
    }

    [Fact]
    public void Diff_ReportsAFlippedVerdict()
    {
        // Level 3 given level 2's values: the trimmed means no longer differ at α = 0.05.
        using var run = new StudyRun()
            .File("old/res.csv", Resistors)
            .File("old/study.md", Study(string.Empty))
            .File("new/res.csv", Resistors.Replace("3,8.0\n3,10.5\n3,8.1\n3,6.9\n3,9.3\n", "3,8.3\n3,6.8\n3,7.8\n3,9.2\n3,6.5\n", StringComparison.Ordinal))
            .File("new/study.md", Study(string.Empty));
        var bag = new DiagnosticBag();
        var a = SnapshotReader.Read(Path.Combine(run.Folder, "old", "study.md"), new CompileOptions(), bag);
        var b = SnapshotReader.Read(Path.Combine(run.Folder, "new", "study.md"), new CompileOptions(), bag);
        Assert.True(a is not null && b is not null, string.Join("\n", bag.Items));
        var effect = Assert.Single(BuildComparison.Compare(a, b).Decisions, d => d.Kind == DecisionKinds.Effect);
        Assert.Equal("trimmed_means", effect.Test);
        Assert.Contains("t › trimmed means › level: rejects → does not reject", effect.Description, StringComparison.Ordinal);
    }
}
