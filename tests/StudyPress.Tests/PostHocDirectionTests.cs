using System.Globalization;
using System.Text;
using System.Text.Json;
using StudyPress.Tests.Support;

namespace StudyPress.Tests;

/// <summary>
/// Posthoc comparisons with a control in a stated direction (<c>direction: both|higher|lower</c>,
/// Dunnett's one-sided test) through the whole pipeline, checked against the stored Dunnett (1955)
/// reference (shared reference collection, dunnett/), and the caution on comparisons of a main
/// effect that the anova found in a significant interaction.
/// </summary>
public sealed class PostHocDirectionTests
{
    // Dunnett (1955) blood-count example, as transcribed in SciPy's tests (shared reference dunnett/).
    private const string BloodCounts = "group,count\ncontrol,7.40\ncontrol,8.50\ncontrol,7.20\ncontrol,8.24\ncontrol,9.84\ncontrol,8.32\nA,9.76\nA,8.80\nA,7.68\nA,9.36\nB,12.80\nB,9.68\nB,12.16\nB,9.20\nB,10.55\n";

    private static string Study(string keys, string alpha = "0.05", string factors = "[group]", string response = "count", string anova = "welch: no") => $"""
---
title: Dunnett direction fixture
alpha: {alpha}
data:
  d: d.csv
response: {response}
factors: {factors}
---

```anova main
{anova}
```

```posthoc pairs
{keys}
```
""";

    private static StudyRun Run(string keys, string csv = BloodCounts, string alpha = "0.05") => new StudyRun().File("d.csv", csv).Study(Study(keys, alpha));

    private static double Pair(ManifestView m, string a, string b, string stat) =>
        m.Values.Single(v => v.GetProperty("block").GetString() == "pairs" && v.GetProperty("test").GetString() == "dunnett"
            && v.GetProperty("stat").GetString() == stat && v.GetProperty("pair").ValueKind == JsonValueKind.Array
            && v.GetProperty("pair")[0].GetString() == a && v.GetProperty("pair")[1].GetString() == b).GetProperty("value").GetDouble();

    private static bool Null(ManifestView m, string a, string b, string stat) =>
        m.Values.Single(v => v.GetProperty("block").GetString() == "pairs" && v.GetProperty("test").GetString() == "dunnett"
            && v.GetProperty("stat").GetString() == stat && v.GetProperty("pair")[0].GetString() == a && v.GetProperty("pair")[1].GetString() == b)
            .GetProperty("value").ValueKind == JsonValueKind.Null;

    [Fact]
    public void Higher_MatchesTheBloodCountExample_OneSided()
    {
        // Shared reference dunnett/dunnett1955.expected.json, blood_counts_example: one-sided
        // ("greater") adjusted p 0.324978 (A) and 0.002914 (B); numerical recomputation (SciPy
        // 1.10.1 quadrature, about 1e-6 in probability), not published values.
        using var run = new StudyRun().File("d.csv", BloodCounts).Study(Study("control: control\nmethod: tukey\ndirection: higher") + "\n```methods text\n```\n");
        var m = run.Manifest();
        Assert.Equal(0.324978, Pair(m, "A", "control", "p_adj"), 2e-6);
        Assert.Equal(0.002914, Pair(m, "B", "control", "p_adj"), 2e-6);
        Assert.Equal(3.69375231124, Pair(m, "B", "control", "statistic"), 9);
        Assert.True(Null(m, "B", "control", "ci_high")); // one-sided: no upper limit
        var html = run.Compile().Html!;
        Assert.Contains("alternative: higher than the control", html, StringComparison.Ordinal);
        Assert.Contains("Alternative: every level higher than the control", html, StringComparison.Ordinal);
        Assert.Contains("higher than the control</td>", html, StringComparison.Ordinal);
        Assert.Contains("not shown higher</td>", html, StringComparison.Ordinal);
        Assert.Contains(", +∞)", html, StringComparison.Ordinal);
        Assert.Contains("these levels were shown higher than the control at the family-wise level", html, StringComparison.Ordinal);
        Assert.Contains("one-sided 95% bound [", html, StringComparison.Ordinal);
        Assert.DoesNotContain("joint interval (the intervals cover all the pairs together)", html, StringComparison.Ordinal); // no two-sided interval figure
    }

    [Fact]
    public void Both_IsTheTwoSidedTest_OfTheBloodCountExample()
    {
        // Same reference: two-sided adjusted p 0.620102 (A) and 0.005825 (B), numerical recomputation.
        using var run = Run("control: control\nmethod: tukey\ndirection: both");
        var m = run.Manifest();
        Assert.Equal(0.620102, Pair(m, "A", "control", "p_adj"), 2e-6);
        Assert.Equal(0.005825, Pair(m, "B", "control", "p_adj"), 2e-6);
    }

    [Fact]
    public void Lower_IsTheMirrorOfHigher()
    {
        // Exact symmetry of the multivariate t: P(max T >= -t) for "lower" equals the "higher"
        // p-value of the data reflected about zero; B lies far above the control, so "lower" is near 1.
        using var higher = Run("control: control\nmethod: tukey\ndirection: higher");
        var reflected = "group,count\n" + string.Join("\n", BloodCounts.Split('\n', StringSplitOptions.RemoveEmptyEntries).Skip(1)
            .Select(l => l.Split(',')).Select(p => p[0] + "," + (-double.Parse(p[1], CultureInfo.InvariantCulture)).ToString("R", CultureInfo.InvariantCulture))) + "\n";
        using var lower = Run("control: control\nmethod: tukey\ndirection: lower", reflected);
        var mh = higher.Manifest();
        var ml = lower.Manifest();
        Assert.Equal(Pair(mh, "A", "control", "p_adj"), Pair(ml, "A", "control", "p_adj"), 9);
        Assert.Equal(Pair(mh, "B", "control", "p_adj"), Pair(ml, "B", "control", "p_adj"), 9);
        Assert.True(Null(ml, "B", "control", "ci_low")); // one-sided: no lower limit
    }

    [Fact]
    public void OneSidedBound_MatchesDunnettTable_EqualGroups()
    {
        // Dunnett (1955) Table 1b (one-sided, alpha 0.01, p = 4 treatments, df = 60): d = 2.87
        // (published; exact 2.86911 by the shared collection's recomputation). Five groups of 13:
        // the bound is diff − d·SE, so d = (diff − ci_low)/SE.
        var csv = new StringBuilder("group,count\n");
        foreach (var g in new[] { "control", "t1", "t2", "t3", "t4" })
        {
            for (var i = 0; i < 13; i++)
            {
                csv.Append(g).Append(',').Append(((i * 7 % 13) + (g.Length * 0.5)).ToString(CultureInfo.InvariantCulture)).Append('\n');
            }
        }

        using var run = Run("control: control\nmethod: tukey\ndirection: higher", csv.ToString(), alpha: "0.01");
        var m = run.Manifest();
        var d = (Pair(m, "t1", "control", "diff") - Pair(m, "t1", "control", "ci_low")) / Pair(m, "t1", "control", "se");
        Assert.Equal(2.86911, d, 3);
        Assert.Equal(2.87, d, 2);
    }

    [Fact]
    public void TwoSidedBound_MatchesExactValue_NotThe1955Entry()
    {
        // Dunnett (1955) Table 2a (two-sided, alpha 0.05, p = 3, df = 20) prints 2.57, a conservative
        // approximation; the exact value is 2.54035 (shared reference dunnett/, known discrepancy).
        var csv = new StringBuilder("group,count\n");
        foreach (var g in new[] { "control", "t1", "t2", "t3" })
        {
            for (var i = 0; i < 6; i++)
            {
                csv.Append(g).Append(',').Append(((i * 5 % 6) + g.Length).ToString(CultureInfo.InvariantCulture)).Append('\n');
            }
        }

        using var run = Run("control: control\nmethod: tukey\ndirection: both", csv.ToString());
        var m = run.Manifest();
        var d = (Pair(m, "t1", "control", "ci_high") - Pair(m, "t1", "control", "diff")) / Pair(m, "t1", "control", "se");
        Assert.Equal(2.54035, d, 3);
        Assert.True(d < 2.57);
    }

    [Theory]
    [InlineData("method: tukey\ndirection: higher", "SP0289", 15)]
    [InlineData("control: control\nmethod: holm\ndirection: lower", "SP0289", 16)]
    [InlineData("control: control\ndirection: up", "SP0209", 15)]
    public void DirectionMistake_OneMessage_AtDirection(string keys, string code, int line)
    {
        using var run = Run(keys);
        run.SingleError(code, line);
    }

    [Fact]
    public void Auto_WithUnequalVariances_IsOneErrorAtDirection()
    {
        // The control's values are nearly constant, B's spread wide: Brown–Forsythe rejects, so
        // method: auto would switch to Games–Howell, which has no one-sided form here.
        const string csv = "group,count\ncontrol,10.0\ncontrol,10.1\ncontrol,10.2\ncontrol,10.1\ncontrol,10.0\ncontrol,10.1\nA,10.3\nA,10.2\nA,10.4\nA,10.3\nA,10.2\nB,-20\nB,40\nB,0\nB,30\nB,-10\nB,25\n";
        using var run = Run("control: control\ndirection: higher", csv);
        run.SingleError("SP0536", 15);
    }

    [Fact]
    public void InteractionCaution_NamesTheFactorsByTheirLabels()
    {
        // The same reversal as below, with labelled factors: the caution reads the labels, not the
        // term's column names (it used to print "a:b" and "depends on b").
        const string csv = "a,b,y\na1,b1,20\na1,b1,21\na1,b1,22\na1,b2,10\na1,b2,11\na1,b2,12\na2,b1,10\na2,b1,11\na2,b1,12\na2,b2,20\na2,b2,21\na2,b2,22\n";
        using var run = new StudyRun().File("d.csv", csv).Study(Study("factor: a\nmethod: tukey", factors: "{a: {label: Mould}, b: {label: Cure time}}", response: "y", anova: "interaction: true"));
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        Assert.Contains("The anova found the interaction Mould × Cure time at α = 0.05 (p < 0.001): the effect of Mould depends on Cure time.", System.Net.WebUtility.HtmlDecode(result.Html!), StringComparison.Ordinal);
        Assert.DoesNotContain("interaction a:b", result.Html!, StringComparison.Ordinal);
    }

    [Fact]
    public void MainEffect_InSignificantInteraction_CarriesACautionAndASuggestion()
    {
        // Crossed 2 × 2 with a reversal: a1 > a2 under b1, a1 < a2 under b2; main effect of a is zero.
        const string csv = "a,b,y\na1,b1,20\na1,b1,21\na1,b1,22\na1,b2,10\na1,b2,11\na1,b2,12\na2,b1,10\na2,b1,11\na2,b1,12\na2,b2,20\na2,b2,21\na2,b2,22\n";
        using var run = new StudyRun().File("d.csv", csv).Study(Study("factor: a\nmethod: tukey", factors: "[a, b]", response: "y", anova: "interaction: true"));
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        var html = result.Html!;
        Assert.Contains("The anova found the interaction a × b at α = 0.05 (p < 0.001)", System.Net.WebUtility.HtmlDecode(html), StringComparison.Ordinal);
        Assert.DoesNotContain("p = &lt;", html, StringComparison.Ordinal);
        Assert.Contains("These comparisons average over the levels of b", html, StringComparison.Ordinal);
        Assert.Contains("compare the levels of a within each level of b instead", html, StringComparison.Ordinal);
    }

    [Fact]
    public void DeclaredBlocks_MainEffectInSignificantInteraction_CarriesTheCaution()
    {
        // Randomized complete blocks (3 blocks) of a 2 × 2 with a reversal: the interaction's F is
        // in the design's strata rows, not the fixed-effects terms; the caution must still appear.
        var rows = new System.Text.StringBuilder("block,a,b,y\n");
        double[] noise = [0.0, 0.4, -0.3, 0.2, -0.1, 0.3, -0.4, 0.1, 0.2, -0.2, 0.5, -0.5];
        var i = 0;
        foreach (var block in new[] { "I", "II", "III" })
        {
            foreach (var (a, b, mean) in new[] { ("a1", "b1", 20.0), ("a1", "b2", 10.0), ("a2", "b1", 10.0), ("a2", "b2", 20.0) })
            {
                rows.Append(CultureInfo.InvariantCulture, $"{block},{a},{b},{mean + (block.Length * 1.5) + noise[i++]}\n");
            }
        }

        using var run = new StudyRun().File("d.csv", rows.ToString()).Study(
            "---\ntitle: blocks\ndata:\n  d: d.csv\nresponse: y\nfactors:\n  block:\n    role: block\n  a:\n  b:\n---\n\n```anova main\n```\n\n```posthoc p\nof: main\nfactor: a\n```\n");
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        Assert.Contains("The anova found the interaction", result.Html!, StringComparison.Ordinal);
        Assert.Contains("compare the levels of a within each level of b instead", result.Html!, StringComparison.Ordinal);
    }

    [Fact]
    public void MainEffect_WithoutInteraction_HasNoSuchCaution()
    {
        // Additive 2 × 2 (no interaction at all): no caution.
        const string csv = "a,b,y\na1,b1,20\na1,b1,21\na1,b1,22\na1,b2,25\na1,b2,26\na1,b2,27\na2,b1,10\na2,b1,11\na2,b1,12\na2,b2,15\na2,b2,16\na2,b2,17\n";
        using var run = new StudyRun().File("d.csv", csv).Study(Study("factor: a\nmethod: tukey", factors: "[a, b]", response: "y", anova: "interaction: true"));
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        Assert.DoesNotContain("The anova found the interaction", result.Html!, StringComparison.Ordinal);
    }
}
