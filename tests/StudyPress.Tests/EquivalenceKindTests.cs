using System.Text.Json;
using StudyPress.Tests.Support;

namespace StudyPress.Tests;

/// <summary>
/// The equivalence kind through the whole pipeline: values against an exact recomputation, the
/// property p = max(p_lower, p_upper), the choice of standard error, the wording that keeps "not
/// shown equivalent" apart from "different", and each mistake (one message, at the key to edit).
/// Data: NIST/SEMATECH e-Handbook 7.4.7.1 (prc471, four levels × 5), as in the golden case.
/// </summary>
[Collection("cli")]
public sealed class EquivalenceKindTests
{
    private const string Prc471 = "level,value\n1,6.9\n1,5.4\n1,5.8\n1,4.6\n1,4.0\n2,8.3\n2,6.8\n2,7.8\n2,9.2\n2,6.5\n3,8.0\n3,10.5\n3,8.1\n3,6.9\n3,9.3\n4,5.8\n4,3.8\n4,6.1\n4,5.6\n4,6.2\n";

    private static string Study(string keys, string anova = "welch: no") => $"""
---
title: Equivalence fixture
data:
  d: d.csv
response: value
factors: [level]
---

```anova main
{anova}
```

```equivalence eq
{keys}
```
""";

    private static StudyRun Run(string keys, string csv = Prc471) => new StudyRun().File("d.csv", csv).Study(Study(keys));

    private static double Pair(ManifestView m, string block, string a, string b, string stat) =>
        Pairs(m, block, a, b, stat).Single().GetProperty("value").GetDouble();

    private static IEnumerable<JsonElement> Pairs(ManifestView m, string block, string a, string b, string stat) =>
        m.Values.Where(v => v.GetProperty("block").GetString() == block && v.GetProperty("test").GetString() == "equivalence"
            && v.GetProperty("stat").GetString() == stat && v.GetProperty("pair").ValueKind == JsonValueKind.Array
            && v.GetProperty("pair")[0].GetString() == a && v.GetProperty("pair")[1].GetString() == b);

    [Fact]
    public void Tost_MatchesScipyRecomputation_ThroughThePipeline()
    {
        // Recomputed with scipy.stats.t (Cases/kinds/equivalence/recompute.py): level 4 − level 1,
        // MSE 1.33075 on 16 df, margin ±2.
        using var run = Run("pair: [\"4\", \"1\"]\nmargin: 2");
        var m = run.Manifest();
        Assert.Equal(0.16, Pair(m, "eq", "4", "1", "diff"), 12);
        Assert.Equal(0.7295889254, Pair(m, "eq", "4", "1", "se"), 9);
        Assert.Equal(-1.113777395, Pair(m, "eq", "4", "1", "ci_low"), 8);
        Assert.Equal(1.433777395, Pair(m, "eq", "4", "1", "ci_high"), 8);
        Assert.Equal(0.004602854878, Pair(m, "eq", "4", "1", "p_lower"), 11);
        Assert.Equal(0.01132478901, Pair(m, "eq", "4", "1", "p_upper"), 11);
        Assert.Equal(0.01132478901, Pair(m, "eq", "4", "1", "p"), 11);
        Assert.Equal(-2, Pair(m, "eq", "4", "1", "margin_low"));
        Assert.Equal(2, Pair(m, "eq", "4", "1", "margin_high"));
    }

    [Fact]
    public void MethodsText_SaysHowTheTestsWereMade_Once_ForSeveralBlocks()
    {
        // The golden case has three equivalence blocks on the same error: the methods paragraph
        // says once how the tests were made (each fact once), and names each block's margin.
        var path = Path.Combine(ErrorCodeDocsTests.RepositoryRoot(), "tests", "StudyPress.Tests", "Cases", "kinds", "equivalence", "study.md");
        var result = Compilation.Compile(path, new CompileOptions());
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        var html = System.Net.WebUtility.HtmlDecode(System.Text.RegularExpressions.Regex.Replace(result.Html!, "<[^>]*>", string.Empty));
        Assert.Equal(1, CountOf(html, "the standard errors used the anova's residual mean square, as the anova assumes equal variances"));
        Assert.Equal(1, CountOf(html, "this is not evidence of a difference: the interval reached beyond the margin"));
        Assert.Contains("within the margin [−1.50, 1.50] by two one-sided t tests was tested, as above.", html, StringComparison.Ordinal);
    }

    private static int CountOf(string text, string part)
    {
        var count = 0;
        for (var i = text.IndexOf(part, StringComparison.Ordinal); i >= 0; i = text.IndexOf(part, i + part.Length, StringComparison.Ordinal))
        {
            count++;
        }

        return count;
    }

    [Fact]
    public void Reference_EveryPairHasPEqualToTheLargerOneSidedP()
    {
        // Property (Schuirmann 1987): the TOST p-value is the larger of the two one-sided p-values.
        using var run = Run("reference: \"1\"\nmargin: [-1.5, 2.5]");
        var m = run.Manifest();
        foreach (var level in new[] { "2", "3", "4" })
        {
            var pl = Pair(m, "eq", level, "1", "p_lower");
            var pu = Pair(m, "eq", level, "1", "p_upper");
            Assert.Equal(Math.Max(pl, pu), Pair(m, "eq", level, "1", "p"));
            Assert.Equal(-1.5, Pair(m, "eq", level, "1", "margin_low"));
            Assert.Equal(2.5, Pair(m, "eq", level, "1", "margin_high"));
        }
    }

    [Fact]
    public void Wording_NeverTurnsNotShownIntoEquivalentOrDifferent()
    {
        // 4 − 1 lies within ±1.5 (p 0.0425, scipy recomputation); 2 − 1 and 3 − 1 do not.
        using var run = Run("reference: \"1\"\nmargin: 1.5");
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        var html = result.Html!;
        Assert.Equal(1, Count(html, "within the margin: equivalence shown at α = 0.05"));
        Assert.Equal(2, Count(html, "not shown to be equivalent: the interval reaches beyond the margin"));
        Assert.Contains("this is not evidence that the levels differ", html, StringComparison.Ordinal);
        Assert.Contains("Equivalence is shown for 1 of 3 comparisons", html, StringComparison.Ordinal);
        Assert.Contains("the anova&#39;s residual mean square", html, StringComparison.Ordinal);
        Assert.Contains("class=\"margin-band\"", html, StringComparison.Ordinal);
    }

    [Fact]
    public void NonInferiority_HigherIsBetter_TestsTheLowerMarginOnly()
    {
        // Recomputed with scipy.stats.t: p_lower = P(T16 >= (0.16 + 1)/0.72959) = 0.0657.
        using var run = Run("pair: [\"4\", \"1\"]\nmargin: 1\ngoal: non-inferiority\nbetter: higher");
        var m = run.Manifest();
        Assert.Equal(0.06570568903, Pair(m, "eq", "4", "1", "p_lower"), 10);
        Assert.Equal(Pair(m, "eq", "4", "1", "p_lower"), Pair(m, "eq", "4", "1", "p"));
        Assert.Equal(-1, Pair(m, "eq", "4", "1", "margin_low"));
        Assert.Empty(Pairs(m, "eq", "4", "1", "p_upper"));
        Assert.Empty(Pairs(m, "eq", "4", "1", "margin_high"));
        Assert.Contains("non-inferiority not shown: the interval reaches past the margin", run.Compile().Html!, StringComparison.Ordinal);
    }

    [Fact]
    public void NonInferiority_LowerIsBetter_TestsTheUpperMargin()
    {
        // Exact hand computation: p_upper = P(T16 <= (0.16 − 3)/0.72959) is tiny; margin +3.
        using var run = Run("pair: [\"4\", \"1\"]\nmargin: 3\ngoal: non-inferiority\nbetter: lower");
        var m = run.Manifest();
        Assert.Equal(3, Pair(m, "eq", "4", "1", "margin_high"));
        Assert.Equal(Pair(m, "eq", "4", "1", "p_upper"), Pair(m, "eq", "4", "1", "p"));
        Assert.True(Pair(m, "eq", "4", "1", "p") < 0.01);
        Assert.Empty(Pairs(m, "eq", "4", "1", "p_lower"));
    }

    [Fact]
    public void UnequalVariances_UseWelch_AndSaySo()
    {
        // Level 2 spread far more than level 1 (Brown–Forsythe rejects): Welch SE = sqrt(s1²/n1 + s2²/n2),
        // exact hand computation from the data below: s1² = 0.025, s2² = 250 (n = 5 each).
        const string csv = "level,value\n1,10.0\n1,10.1\n1,10.2\n1,10.3\n1,9.9\n2,-10\n2,0\n2,10\n2,20\n2,30\n2,9.5\n3,10\n3,10.2\n3,10.1\n3,10.3\n3,9.9\n";
        using var run = Run("pair: [\"3\", \"1\"]\nmargin: 1", csv);
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        var m = new ManifestView(result.ManifestJson!);
        var se = Pair(m, "eq", "3", "1", "se");
        Assert.Equal(Math.Sqrt((0.025 / 5) + (0.025 / 5)), se, 12);
        Assert.Equal(8, Pair(m, "eq", "3", "1", "df"), 9);
        Assert.Contains("Welch", result.Html!, StringComparison.Ordinal);
    }

    [Fact]
    public void TransformedAnova_UsesWelchOnTheUntransformedValues()
    {
        // Exact hand computation from the data: s1² = 1.248, s4² = 0.96 (n = 5 each), so the Welch
        // SE of 4 − 1 is sqrt((1.248 + 0.96)/5) on the response's own scale, whatever the anova's transform.
        using var run = new StudyRun().File("d.csv", Prc471).Study(Study("pair: [\"4\", \"1\"]\nmargin: 2", "transform: log"));
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        var m = new ManifestView(result.ManifestJson!);
        Assert.Equal(Math.Sqrt((1.248 + 0.96) / 5), Pair(m, "eq", "4", "1", "se"), 12);
        Assert.Equal(0.16, Pair(m, "eq", "4", "1", "diff"), 12);
        Assert.Contains("the anova&#39;s error is on the transformed scale", result.Html!, StringComparison.Ordinal);
    }

    [Fact]
    public void DeclaredSplitPlot_UsesTheWholePlotError()
    {
        // Yates (1935) oats (shared reference split-plot/, exact recomputation): variety is tested
        // against the whole-plot error, MS 601.330555556 on 10 df, so SE = sqrt(MS (1/24 + 1/24))
        // (exact hand computation) on 10 df.
        const string header = "response: yield\nfactors:\n  block:\n    role: block\n  variety:\n    plot: whole\n  nitrogen:\n    plot: sub";
        using var run = new StudyRun().File("oats.csv", File.ReadAllText(ReferenceFiles.PathOf("split-plot", "yates-oats.csv"))).Study(
            $"---\ntitle: oats\ndata:\n  d: oats.csv\n{header}\n---\n\n```anova main\n```\n\n```equivalence eq\nfactor: variety\npair: [Marvellous, Victory]\nmargin: 10\n```\n");
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        var m = new ManifestView(result.ManifestJson!);
        Assert.Equal(Math.Sqrt(601.330555556 * 2 / 24), Pair(m, "eq", "Marvellous", "Victory", "se"), 8);
        Assert.Equal(10, Pair(m, "eq", "Marvellous", "Victory", "df"));
        Assert.Contains("whole-plot error mean square", result.Html!, StringComparison.Ordinal);
    }

    [Fact]
    public void DeclaredDesign_BlockFactor_IsRefusedAtFactor()
    {
        const string header = "response: yield\nfactors:\n  block:\n    role: block\n  variety:\n    plot: whole\n  nitrogen:\n    plot: sub";
        using var run = new StudyRun().File("oats.csv", File.ReadAllText(ReferenceFiles.PathOf("split-plot", "yates-oats.csv"))).Study(
            $"---\ntitle: oats\ndata:\n  d: oats.csv\n{header}\n---\n\n```anova main\n```\n\n```equivalence eq\nfactor: block\nreference: I\nmargin: 10\n```\n");
        var d = Assert.Single(run.Compile().Diagnostics);
        Assert.Equal("SP0397", d.Code);
    }

    [Theory]
    [InlineData("margin: 2", "SP0285", 12)]
    [InlineData("pair: [\"4\", \"1\"]\nreference: \"1\"\nmargin: 2", "SP0285", 14)]
    [InlineData("pair: [\"4\", \"1\", \"2\"]\nmargin: 2", "SP0286", 13)]
    [InlineData("pair: [\"4\", \"4\"]\nmargin: 2", "SP0286", 13)]
    [InlineData("pair: [\"4\", \"1\"]\nmargin: -1", "SP0287", 14)]
    [InlineData("pair: [\"4\", \"1\"]\nmargin: [1, 2]", "SP0287", 14)]
    [InlineData("pair: [\"4\", \"1\"]\nmargin: wide", "SP0287", 14)]
    [InlineData("pair: [\"4\", \"1\"]\nmargin: [-1, 1]\ngoal: non-inferiority\nbetter: higher", "SP0287", 14)]
    [InlineData("pair: [\"4\", \"1\"]\nmargin: 1\nbetter: higher", "SP0288", 15)]
    [InlineData("pair: [\"4\", \"1\"]", "SP0202", 12)]
    [InlineData("pair: [\"4\", \"1\"]\nmargin: 1\ngoal: non-inferiority", "SP0202", 12)]
    [InlineData("pair: [\"4\", \"5\"]\nmargin: 1", "SP0535", 13)]
    [InlineData("reference: \"one\"\nmargin: 1", "SP0535", 13)]
    [InlineData("factor: levle\nreference: \"1\"\nmargin: 1", "SP0234", 13)]
    [InlineData("reference: \"1\"\nmargin: 1\ngoal: equivalent", "SP0209", 15)]
    public void OneMistake_OneMessage_AtTheKey(string keys, string code, int line)
    {
        using var run = Run(keys);
        run.SingleError(code, line);
    }

    [Fact]
    public void AlphaOfAHalfOrMore_IsOneErrorAtTheBlock()
    {
        // The (1 − 2α) interval has no meaning for α ≥ 0.5; the engine refuses it, the binder says so.
        using var run = new StudyRun().File("d.csv", Prc471).Study(Study("pair: [\"4\", \"1\"]\nmargin: 2").Replace("title: Equivalence fixture", "title: Equivalence fixture\nalpha: 0.6", StringComparison.Ordinal));
        run.SingleError("SP0537", 13);
    }

    [Fact]
    public void Mistake_ExitsWithStatus2_AndOneLine()
    {
        using var run = Run("pair: [\"4\", \"1\"]\nmargin: -1");
        var (exit, _, err) = run.Cli("build", "study.md");
        Assert.Equal(2, exit);
        var line = Assert.Single(err.Split('\n', StringSplitOptions.RemoveEmptyEntries), l => l.Contains("error:", StringComparison.Ordinal));
        Assert.Contains("study.md:15:", line, StringComparison.Ordinal);
        Assert.Contains("error: 'margin' is a positive number", line, StringComparison.Ordinal);
        Assert.False(File.Exists(run.ReportPath));
    }

    private static int Count(string text, string what)
    {
        var n = 0;
        for (var i = text.IndexOf(what, StringComparison.Ordinal); i >= 0; i = text.IndexOf(what, i + what.Length, StringComparison.Ordinal))
        {
            n++;
        }

        return n;
    }
}
