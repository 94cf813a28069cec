using System.Globalization;
using System.Text.Json;
using StudyPress.Tests.Support;

namespace StudyPress.Tests;

/// <summary>
/// Views over a declared design fitted as a mixed model (REML) through the whole pipeline:
/// posthoc, marginal-means, contrasts and equivalence over the Yates oats split plot with four
/// sub-plots removed (unbalanced), against a library recomputation
/// (Reference/mixed-model/oats-missing-plots-emm.*: statsmodels 0.13.5 REML estimates, Cov(β̂) =
/// (X'V⁻¹X)⁻¹ by numpy; means and SEs agree to about 1e-10, compared at 1e-7), and the same views
/// on the balanced oats with 'fit: reml' against the classical strata views (to 1e-9).
/// </summary>
public sealed class RemlViewsPipelineTests
{
    private const string OatsHeader = """
response: yield
factors:
  block:
    role: block
  variety:
    plot: whole
  nitrogen:
    plot: sub
""";

    private static readonly JsonElement Library =
        JsonDocument.Parse(File.ReadAllText(ReferenceFiles.PathOf("mixed-model", "oats-missing-plots-emm.out.json"))).RootElement;

    private static string Csv(bool unbalanced)
    {
        var lines = File.ReadAllText(ReferenceFiles.PathOf("split-plot", "yates-oats.csv")).Split('\n', StringSplitOptions.RemoveEmptyEntries);
        var removed = unbalanced ? Library.GetProperty("removed_rows_0_based").EnumerateArray().Select(x => x.GetInt32()).ToHashSet() : [];
        return lines[0] + "\n" + string.Join("\n", lines.Skip(1).Where((_, i) => !removed.Contains(i))) + "\n";
    }

    private static StudyRun Study(string anovaKeys, string blocks, bool unbalanced = true) =>
        new StudyRun().File("data/oats.csv", Csv(unbalanced)).Study($"""
---
title: REML views fixture
data: data/oats.csv
{OatsHeader}
---

```anova main
{anovaKeys}
```

{blocks}
""");

    private static (ManifestView Manifest, string Html) Built(StudyRun run)
    {
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        return (new ManifestView(result.ManifestJson!), result.Html!);
    }

    private static double Lib(string section, string name, string stat) =>
        double.Parse(Library.GetProperty(section).GetProperty(name).GetProperty(stat).GetString()!, NumberStyles.Float, CultureInfo.InvariantCulture);

    private static void Relative(double actual, double expected, double tolerance, string what) =>
        Assert.True(Math.Abs(actual - expected) <= tolerance * Math.Abs(expected), $"{what}: got {actual.ToString("R", CultureInfo.InvariantCulture)}, expected {expected.ToString("R", CultureInfo.InvariantCulture)}");

    /// <summary>The value of a pair (a, b) in either order, with the sign of a − b for differences.</summary>
    private static double Pair(ManifestView m, string block, string test, string term, string stat, string a, string b, string? level = null)
    {
        foreach (var v in m.Values)
        {
            if (v.GetProperty("block").GetString() != block || v.GetProperty("test").GetString() != test || v.GetProperty("term").GetString() != term
                || v.GetProperty("stat").GetString() != stat || !v.TryGetProperty("pair", out var pair) || (level is not null && v.GetProperty("level").GetString() != level))
            {
                continue;
            }

            var p = pair.EnumerateArray().Select(x => x.GetString()).ToArray();
            var sign = stat is "diff" or "estimate" or "statistic" ? -1 : 1;
            if (p[0] == a && p[1] == b)
            {
                return v.GetProperty("value").GetDouble();
            }

            if (p[0] == b && p[1] == a)
            {
                return sign * v.GetProperty("value").GetDouble();
            }
        }

        throw new InvalidOperationException($"no pair {a}, {b} for {block}/{test}/{term}/{stat}");
    }

    private static readonly string[] Varieties = ["Golden.rain", "Marvellous", "Victory"];

    private static readonly string[] Nitrogen = ["0.0cwt", "0.2cwt", "0.4cwt", "0.6cwt"];

    [Fact]
    public void Posthoc_Tukey_OnUnbalancedSplitPlot_DifferencesAndSesMatchTheLibrary()
    {
        using var run = Study(string.Empty, "```posthoc ph\nof: main\nfactor: variety\n```");
        var (m, html) = Built(run);
        for (var i = 0; i < Varieties.Length; i++)
        {
            for (var j = i + 1; j < Varieties.Length; j++)
            {
                var (a, b) = (Varieties[i], Varieties[j]);
                var name = $"variety {a} - {b}";
                Relative(Pair(m, "ph", "tukey_hsd", "variety", "diff", a, b), Lib("differences", name, "diff"), 1e-7, name);
                Relative(Pair(m, "ph", "tukey_hsd", "variety", "se", a, b), Lib("differences", name, "se"), 1e-7, name + " se");
                var df = Pair(m, "ph", "tukey_hsd", "variety", "df", a, b);
                Assert.InRange(df, 5, 15); // whole-plot comparisons: near the 10 whole-plot error df, fractional
                Assert.NotEqual(Math.Round(df), df);
            }
        }

        Assert.Contains("mixed model by REML", html, StringComparison.Ordinal);
        Assert.Contains("df (Satterthwaite)", html, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("holm", "holm")]
    [InlineData("bonferroni", "bonferroni")]
    public void Posthoc_PooledMethods_AdjustTheRawTTests(string method, string test)
    {
        using var run = Study(string.Empty, $"```posthoc ph\nof: main\nfactor: nitrogen\nmethod: {method}\n```");
        var (m, _) = Built(run);
        var pAdj = m.Find("ph", test, "nitrogen", "p_adj").Select(v => v.GetProperty("value").GetDouble()).ToList();
        Assert.Equal(6, pAdj.Count);
        // Exact hand computation: each adjusted p is at least the two-sided t p of its own t and df.
        foreach (var (a, b) in new[] { ("0.0cwt", "0.2cwt"), ("0.4cwt", "0.6cwt") })
        {
            var t = Pair(m, "ph", test, "nitrogen", "statistic", a, b);
            var df = Pair(m, "ph", test, "nitrogen", "df", a, b);
            var raw = Statistics.Probability.TTwoSided(t, df);
            Assert.True(Pair(m, "ph", test, "nitrogen", "p_adj", a, b) >= raw * (1 - 1e-12));
            Relative(Pair(m, "ph", test, "nitrogen", "se", a, b), Lib("differences", $"nitrogen {a} - {b}", "se"), 1e-7, a + b);
        }
    }

    [Fact]
    public void Posthoc_Control_OneSided_UsesTheModelsDifferences()
    {
        using var run = Study(string.Empty, "```posthoc ph\nof: main\nfactor: nitrogen\ncontrol: 0.0cwt\ndirection: higher\n```");
        var (m, html) = Built(run);
        foreach (var level in Nitrogen.Skip(1))
        {
            Relative(Pair(m, "ph", "dunnett", "nitrogen", "diff", level, "0.0cwt"), -Lib("differences", $"nitrogen 0.0cwt - {level}", "diff"), 1e-7, level);
            Relative(Pair(m, "ph", "dunnett", "nitrogen", "se", level, "0.0cwt"), Lib("differences", $"nitrogen 0.0cwt - {level}", "se"), 1e-7, level + " se");
        }

        Assert.Contains("smallest of their Satterthwaite df", html, StringComparison.Ordinal);
    }

    [Fact]
    public void MarginalMeans_OnUnbalancedSplitPlot_MatchTheLibrary_WithSimpleEffects()
    {
        using var run = Study(string.Empty, "```marginal-means mm\nof: main\n```\n\n```marginal-means se\nof: main\nby: variety\nat: nitrogen\n```");
        var (m, html) = Built(run);
        foreach (var (factor, levels) in new[] { ("variety", Varieties), ("nitrogen", Nitrogen) })
        {
            foreach (var l in levels)
            {
                Relative(m.Get("mm", "emmeans", factor, "mean", l), Lib("emmeans", factor + " " + l, "mean"), 1e-7, l);
                Relative(m.Get("mm", "emmeans", factor, "se", l), Lib("emmeans", factor + " " + l, "se"), 1e-7, l + " se");
                var low = m.Get("mm", "emmeans", factor, "ci_low", l);
                var high = m.Get("mm", "emmeans", factor, "ci_high", l);
                var df = m.Get("mm", "emmeans", factor, "df", l);
                // Exact hand computation: the interval is mean ± t(0.975; df) × SE.
                Relative(high - low, 2 * Statistics.Probability.TCritical(0.05, df) * m.Get("mm", "emmeans", factor, "se", l), 1e-12, l + " width");
            }
        }

        // Simple effects of variety within each nitrogen level (the classical strata refuse these:
        // they mix the whole-plot and sub-plot errors); F with a fractional Satterthwaite df.
        Assert.Equal(4, m.Find("se", "simple_effects", "variety", "f").Count());
        var dfDen = m.Get("se", "simple_effects", "variety", "df_den", "nitrogen 0.0cwt");
        Assert.NotEqual(Math.Round(dfDen), dfDen);
        Assert.Equal(12, m.Find("se", "holm", "variety", "p_adj").Count());
        Assert.Equal(12, m.Find("se", "holm", "variety", "df").Count());
        Assert.Contains("df (Satterthwaite)", html, StringComparison.Ordinal); // each pair's own df, shown in the pairs table
        Assert.Contains("linear mixed model by REML", html, StringComparison.Ordinal);
    }

    [Fact]
    public void Contrasts_And_Trends_OnUnbalancedSplitPlot()
    {
        using var run = Study(string.Empty, """
```contrasts c
of: main
factor: nitrogen
compare:
  top vs none: {0.6cwt: 1, 0.0cwt: -1}
  some vs none: {0.2cwt: 1, 0.4cwt: 1, 0.6cwt: 1, 0.0cwt: -3}
```

```contrasts t
of: main
factor: nitrogen
trend: 1
values: {0.0cwt: 0, 0.2cwt: 0.2, 0.4cwt: 0.4, 0.6cwt: 0.6}
```
""");
        var (m, html) = Built(run);
        Relative(m.Get("c", "contrast", "nitrogen", "estimate", "top vs none"), -Lib("differences", "nitrogen 0.0cwt - 0.6cwt", "diff"), 1e-7, "estimate");
        Relative(m.Get("c", "contrast", "nitrogen", "se", "top vs none"), Lib("differences", "nitrogen 0.0cwt - 0.6cwt", "se"), 1e-7, "se");
        // Exact hand computation from the library's means: Σ cᵢ mᵢ.
        var some = Nitrogen.Skip(1).Sum(l => Lib("emmeans", "nitrogen " + l, "mean")) - (3 * Lib("emmeans", "nitrogen 0.0cwt", "mean"));
        Relative(m.Get("c", "contrast", "nitrogen", "estimate", "some vs none"), some, 1e-7, "some vs none");
        Assert.InRange(m.Get("t", "contrast", "nitrogen", "df", "linear"), 30, 60);
        Assert.Equal(2, (int)m.Get("t", "contrast", ContrastsLackOfFitTerm, "df", "lack of fit")); // degrees 2 and 3
        Assert.Contains("no single error mean square", html, StringComparison.Ordinal);
    }

    private const string ContrastsLackOfFitTerm = "nitrogen";

    [Fact]
    public void Equivalence_OnUnbalancedSplitPlot_IsTostOnTheModelsDifference()
    {
        using var run = Study(string.Empty, "```equivalence e\nof: main\nfactor: variety\npair: [Marvellous, Golden.rain]\nmargin: 20\n```");
        var (m, html) = Built(run);
        Relative(Pair(m, "e", "equivalence", "variety", "diff", "Marvellous", "Golden.rain"), -Lib("differences", "variety Golden.rain - Marvellous", "diff"), 1e-7, "diff");
        Relative(Pair(m, "e", "equivalence", "variety", "se", "Marvellous", "Golden.rain"), Lib("differences", "variety Golden.rain - Marvellous", "se"), 1e-7, "se");
        // TOST p is the larger of the two one-sided p-values (property).
        var p = Pair(m, "e", "equivalence", "variety", "p", "Marvellous", "Golden.rain");
        Assert.Equal(Math.Max(Pair(m, "e", "equivalence", "variety", "p_lower", "Marvellous", "Golden.rain"), Pair(m, "e", "equivalence", "variety", "p_upper", "Marvellous", "Golden.rain")), p);
        Assert.Contains("mixed model the anova block fitted by REML", html, StringComparison.Ordinal);
    }

    // Invented change of the unbalanced oats: Victory at 0.6 cwt raised by 60 makes the variety ×
    // nitrogen interaction significant in the mixed model; a posthoc of nitrogen then carries the
    // caution that its comparisons average over the varieties.
    [Fact]
    public void Posthoc_SignificantInteractionOfTheMixedModel_IsCautioned()
    {
        var lines = Csv(unbalanced: true).Split('\n', StringSplitOptions.RemoveEmptyEntries);
        var csv = string.Join("\n", lines.Select(l =>
        {
            var f = l.Split(',');
            return f[1] == "Victory" && f[2] == "0.6cwt" ? $"{f[0]},{f[1]},{f[2]},{int.Parse(f[3], CultureInfo.InvariantCulture) + 60}" : l;
        })) + "\n";
        using var run = new StudyRun().File("data/oats.csv", csv).Study($"---\ntitle: Interaction\ndata: data/oats.csv\n{OatsHeader}\n---\n\n```anova main\n```\n\n```posthoc ph\nfactor: nitrogen\n```\n");
        var (m, html) = Built(run);
        Assert.True(m.Get("main", "anova", "variety:nitrogen", "p") < 0.05);
        Assert.Contains("The anova found the interaction variety × nitrogen at α = 0.05 (p ", System.Net.WebUtility.HtmlDecode(html), StringComparison.Ordinal);
    }

    // Balanced oats, 'fit: reml' against 'fit: classical' (exact recomputation behind the strata):
    // the pairwise differences, SEs, adjusted p and intervals of the views are the same to 1e-9.
    [Theory]
    [InlineData("variety", "holm")]
    [InlineData("nitrogen", "tukey")]
    public void Balanced_RemlPosthocEqualsTheStrata(string factor, string method)
    {
        var block = $"```posthoc ph\nof: main\nfactor: {factor}\nmethod: {method}\n```";
        using var reml = Study("fit: reml", block, unbalanced: false);
        using var classical = Study("fit: classical", block, unbalanced: false);
        var (r, _) = Built(reml);
        var (c, _) = Built(classical);
        var test = method == "tukey" ? "tukey_hsd" : method;
        var levels = factor == "variety" ? Varieties : Nitrogen;
        foreach (var stat in new[] { "diff", "se", "statistic", "p_adj", "ci_low", "ci_high" })
        {
            for (var i = 0; i < levels.Length; i++)
            {
                for (var j = i + 1; j < levels.Length; j++)
                {
                    var expected = Pair(c, "ph", test, factor, stat, levels[i], levels[j]);
                    var actual = Pair(r, "ph", test, factor, stat, levels[i], levels[j]);
                    Assert.True(Math.Abs(actual - expected) <= 1e-9 * Math.Max(1, Math.Abs(expected)), $"{stat} {levels[i]}-{levels[j]}: {actual} vs {expected}");
                }
            }
        }
    }

    [Fact]
    public void Balanced_RemlContrastsAndEquivalenceEqualTheStrata()
    {
        const string Blocks = "```contrasts c\nof: main\nfactor: nitrogen\ncompare:\n  top: {0.6cwt: 1, 0.0cwt: -1}\n```\n\n```equivalence e\nof: main\nfactor: variety\npair: [Marvellous, Victory]\nmargin: 15\n```\n\n```marginal-means s\nof: main\nby: nitrogen\nat: variety\n```";
        using var reml = Study("fit: reml", Blocks, unbalanced: false);
        using var classical = Study("fit: classical", Blocks, unbalanced: false);
        var (r, _) = Built(reml);
        var (c, _) = Built(classical);
        foreach (var stat in new[] { "estimate", "se", "df", "p", "ci_low", "ci_high" })
        {
            Relative(r.Get("c", "contrast", "nitrogen", stat, "top"), c.Get("c", "contrast", "nitrogen", stat, "top"), 1e-9, "contrast " + stat);
        }

        foreach (var stat in new[] { "diff", "se", "df", "ci_low", "ci_high", "p_lower", "p_upper", "p" })
        {
            Relative(Pair(r, "e", "equivalence", "variety", stat, "Marvellous", "Victory"), Pair(c, "e", "equivalence", "variety", stat, "Marvellous", "Victory"), 1e-9, "equivalence " + stat);
        }

        // Simple effects of nitrogen within each variety: on the sub-plot error (45 df) in both.
        foreach (var v in Varieties)
        {
            foreach (var stat in new[] { "f", "df_den", "p" })
            {
                Relative(r.Get("s", "simple_effects", "nitrogen", stat, "variety " + v), c.Get("s", "simple_effects", "nitrogen", stat, "variety " + v), 1e-9, "simple effect " + stat);
            }
        }
    }

    // Dunnett over a mixed model shares the many-to-one probabilities of the adjusted means
    // (AdjustedComparisons.ManyToOne): with 48 treatments in 4 random blocks the 47-dimensional
    // multivariate t cannot reach the required accuracy within the work limit, so the block gets one
    // SP0541 at 'control' (not minutes of integration); Holm with the same control is the way out
    // the message names, and gives the 47 comparisons with the control. Invented layout (a test of
    // the bound, not of values).
    [Fact]
    public void ManyLevels_Control_OneErrorAtControl_HolmWithTheSameControlWorks()
    {
        var csv = new System.Text.StringBuilder("block,treatment,y\n");
        for (var b = 0; b < 4; b++)
        {
            for (var t = 0; t < 48; t++)
            {
                if (b == 0 && t == 5)
                {
                    continue; // one missing plot: the mixed model
                }

                csv.Append(CultureInfo.InvariantCulture, $"B{b},T{t:D2},{10 + b + (t % 5 * 0.3) + ((b * 7 + t * 3) % 11 * 0.2):R}\n");
            }
        }

        string StudyText(string posthoc) => $"""
---
title: Many treatments in blocks
data: data/trial.csv
response: y
factors:
  block:
    role: block
  treatment:
---

```anova main
fit: reml
```

```posthoc p
of: main
{posthoc}
```
""";
        var dunnett = StudyText("control: T00");
        using var run = new StudyRun().File("data/trial.csv", csv.ToString()).Study(dunnett);
        var d = run.SingleError("SP0541", Array.FindIndex(dunnett.Split('\n'), l => l.StartsWith("control:", StringComparison.Ordinal)));
        Assert.Contains("comparing 47 marginal means of the mixed model with control 'T00'", d.Message, StringComparison.Ordinal);

        using var holm = new StudyRun().File("data/trial.csv", csv.ToString()).Study(StudyText("method: holm\ncontrol: T00"));
        var (m, _) = Built(holm);
        Assert.Equal(47, m.Values.Count(v => v.GetProperty("block").GetString() == "p" && v.GetProperty("stat").GetString() == "p_adj"));
    }
}
