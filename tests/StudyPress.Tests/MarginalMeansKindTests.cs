using System.Globalization;
using System.Text.Json;
using StudyPress.Tests.Support;

namespace StudyPress.Tests;

/// <summary>
/// The marginal-means kind through the whole pipeline: the published level means of JAHANMI2
/// (NIST/SEMATECH e-Handbook 1.3.5.5, as in the kind's golden case), Yates's (1935) oats split
/// plot on its own errors (exact recomputation), back-transformation, the interaction caution, and
/// its mistakes (one message each, at the key to edit). The small three-factor data set is an
/// invented fixture.
/// </summary>
[Collection("cli")]
public sealed class MarginalMeansKindTests
{
    // Invented balanced 2 x 2 x 2 data, two replicates per cell, with a strong A × B interaction.
    private const string Fixture = "A,B,C,y\n"
        + "a1,b1,c1,10\na1,b1,c1,11\na1,b1,c2,12\na1,b1,c2,11\n"
        + "a1,b2,c1,20\na1,b2,c1,21\na1,b2,c2,22\na1,b2,c2,19\n"
        + "a2,b1,c1,20\na2,b1,c1,22\na2,b1,c2,21\na2,b1,c2,19\n"
        + "a2,b2,c1,10\na2,b2,c1,12\na2,b2,c2,11\na2,b2,c2,13\n";

    // Lines (1-based) 9 opens the anova block, 10 is its key, 13 opens the marginal-means block and
    // 14 is its first key; Location.Line counts from 0.
    private static StudyRun Run(string keys, string anovaKeys = "interaction: true", string after = "") => new StudyRun().File("d.csv", Fixture).Study($"""
---
title: Marginal means fixture
data:
  d: d.csv
response: y
factors: [A, B, C]
---

```anova fit
{anovaKeys}
```

```marginal-means mm
{keys}
```
{after}
""");

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

    // Lines (1-based) 14 opens the anova block, 15 is its key, 18 opens the marginal-means block
    // and 19 is its first key; Location.Line counts from 0.
    private static StudyRun Oats(string keys, string anovaKeys = "fit: classical") =>
        new StudyRun().File("data/oats.csv", File.ReadAllText(ReferenceFiles.PathOf("split-plot", "yates-oats.csv"))).Study($"""
---
title: Oats fixture
data: data/oats.csv
{OatsHeader}
---

```anova main
{anovaKeys}
```

```marginal-means mm
{keys}
```
""");

    private static JsonElement OatsExact() =>
        JsonDocument.Parse(File.ReadAllText(ReferenceFiles.PathOf("split-plot", "yates-oats-split-plot.expected.json"))).RootElement.GetProperty("exact_recomputation");

    private static double Num(JsonElement e, params string[] path)
    {
        foreach (var p in path)
        {
            e = e.GetProperty(p);
        }

        return double.Parse(e.GetString()!, NumberStyles.Float, CultureInfo.InvariantCulture);
    }

    private static void Relative(double actual, double expected, double tolerance, string what) =>
        Assert.True(Math.Abs(actual - expected) <= tolerance * Math.Abs(expected), $"{what}: got {actual.ToString("R", CultureInfo.InvariantCulture)}, expected {expected.ToString("R", CultureInfo.InvariantCulture)}");

    private static double Pair(ManifestView m, string block, string term, string level, string a, string b, string stat)
    {
        var hits = m.Find(block, "holm", term, stat, level).Where(v => v.GetProperty("pair")[0].GetString() == a && v.GetProperty("pair")[1].GetString() == b).ToList();
        Assert.True(hits.Count == 1, $"expected one pair value {block}/{term}/{level}/{a}-{b}/{stat}, found {hits.Count}");
        return hits[0].GetProperty("value").GetDouble();
    }

    [Fact]
    public void Jahanmi2_PublishedLevelMeans_AndSeFromTheResidual()
    {
        var dir = Path.GetFullPath(Path.Combine(AppContext.BaseDirectory, "..", "..", "..", "Cases", "kinds", "marginal-means"));
        var result = Compilation.Compile(Path.Combine(dir, "study.md"), new CompileOptions());
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        var m = new ManifestView(result.ManifestJson!);
        var published = JsonDocument.Parse(File.ReadAllText(ReferenceFiles.PathOf("nist-ehandbook", "eda355-multifactor-anova-jahanmi2.expected.json")))
            .RootElement.GetProperty("published").GetProperty("level_means");

        // Published level means (e-Handbook 1.3.5.5, single precision: compared at 2 decimals).
        var mse = m.Get("main", "anova", "residual", "ms");
        foreach (var factor in new[] { "table_speed", "down_feed_rate", "wheel_grit_size", "batch" })
        {
            foreach (var level in published.GetProperty(factor).EnumerateObject())
            {
                Accuracy.AssertRoundsTo(m.Get("means", "emmeans", factor, "mean", level.Name), double.Parse(level.Value.GetString()!, CultureInfo.InvariantCulture).ToString("F2", CultureInfo.InvariantCulture), factor + " " + level.Name);

                // Exact hand computation: SE = sqrt(MSE / 240), 240 bars per level, on the residual's 475 df.
                Relative(m.Get("means", "emmeans", factor, "se", level.Name), Math.Sqrt(mse / 240), 1e-12, "SE");
                Assert.Equal(475, m.Get("means", "emmeans", factor, "df", level.Name));
            }
        }

        // Simple effects of table speed within each batch (exact hand computation, Python
        // fractions, p by mpmath; also in the case's reference.json).
        Relative(m.Get("within", "simple_effects", "table_speed", "f", "batch 1"), 14.3462877739, 1e-10, "F in batch 1");
        Relative(m.Get("within", "simple_effects", "table_speed", "p", "batch 2"), 0.907052676512, 1e-10, "p in batch 2");
        Relative(Pair(m, "within", "table_speed", "batch 1", "-1", "1", "diff"), 30.7669166667, 1e-11, "difference in batch 1");
        Assert.Contains("Simple effects of table_speed at each level of batch", result.Html, StringComparison.Ordinal);
    }

    [Fact]
    public void Oats_VarietyMeansUseTheWholePlotError()
    {
        using var run = Oats("by: variety");
        var m = run.Manifest();
        var e = OatsExact();
        var msWholePlot = Num(e, "whole_plot_error_B:V", "ms");

        // Exact recomputation (Python fractions; t quantile by mpmath, 40 digits): variety means of
        // 24 sub-plots, SE = sqrt(MS_whole-plot / 24) on 10 df.
        foreach (var (variety, mean, low) in new[] { ("Golden.rain", 104.5, 93.3469598203), ("Marvellous", 109.791666667, 98.638626487), ("Victory", 97.625, 86.4719598203) })
        {
            Relative(m.Get("mm", "emmeans", "variety", "mean", variety), mean, 1e-11, variety + " mean");
            Relative(m.Get("mm", "emmeans", "variety", "se", variety), Math.Sqrt(msWholePlot / 24), 1e-10, variety + " SE");
            Assert.Equal(10, m.Get("mm", "emmeans", "variety", "df", variety));
            Relative(m.Get("mm", "emmeans", "variety", "ci_low", variety), low, 1e-10, variety + " interval");
        }

        Assert.Contains("whole-plot error", run.Compile().Html, StringComparison.Ordinal);
    }

    [Fact]
    public void Oats_NitrogenWithinEachVariety_OnTheSubPlotError()
    {
        using var run = Oats("by: nitrogen\nat: variety");
        var m = run.Manifest();
        var msSubPlot = Num(OatsExact(), "sub_plot_error", "ms");

        // Exact recomputation (Python fractions, p by mpmath): F = 6 Σ (cell − level mean)² / 3 / MS_sub on (3, 45).
        foreach (var (variety, f, p) in new[] { ("Golden.rain", 13.022745098, 2.96909288622e-6), ("Marvellous", 9.9528627451, 3.76931483672e-5), ("Victory", 15.3156862745, 5.25701653777e-7) })
        {
            Relative(m.Get("mm", "simple_effects", "nitrogen", "f", "variety " + variety), f, 1e-10, variety + " F");
            Relative(m.Get("mm", "simple_effects", "nitrogen", "p", "variety " + variety), p, 1e-8, variety + " p");
            Assert.Equal(3, m.Get("mm", "simple_effects", "nitrogen", "df", "variety " + variety));
            Assert.Equal(45, m.Get("mm", "simple_effects", "nitrogen", "df_den", "variety " + variety));
        }

        // Cells: SE = sqrt(MS_sub / 6); pair 0.0 − 0.6 cwt in Victory: −47, SE sqrt(2 MS_sub / 6),
        // Bonferroni interval over the 6 pairs of that variety (exact recomputation).
        Relative(m.Get("mm", "emmeans", "variety:nitrogen", "se", "Victory / 0.0cwt"), Math.Sqrt(msSubPlot / 6), 1e-10, "cell SE");
        Relative(m.Get("mm", "emmeans", "variety:nitrogen", "mean", "Victory / 0.6cwt"), 118.5, 1e-12, "cell mean");
        Relative(Pair(m, "mm", "nitrogen", "variety Victory", "0.0cwt", "0.6cwt", "diff"), -47.0, 1e-12, "difference");
        Relative(Pair(m, "mm", "nitrogen", "variety Victory", "0.0cwt", "0.6cwt", "se"), 7.68295371441, 1e-10, "SE of the difference");
        Relative(Pair(m, "mm", "nitrogen", "variety Victory", "0.0cwt", "0.6cwt", "p"), 2.08957735049e-7, 1e-8, "unadjusted p");
        Relative(Pair(m, "mm", "nitrogen", "variety Victory", "0.0cwt", "0.6cwt", "ci_low"), -68.2044094854, 1e-10, "Bonferroni interval");
    }

    [Fact]
    public void LogTransform_MeansAreBackTransformed_SeStaysOnTheLogScale()
    {
        using var run = Run("by: A", "transform: log");
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        var m = new ManifestView(result.ManifestJson!);

        // Exact hand computation (balanced): the back-transformed mean of a1 is the geometric mean
        // of its 8 values; the SE is sqrt(MS_residual / 8) on the log scale.
        var rows = Fixture.Split('\n', StringSplitOptions.RemoveEmptyEntries).Skip(1).Select(l => l.Split(',')).ToList();
        var a1 = rows.Where(r => r[0] == "a1").Select(r => Math.Log(double.Parse(r[3], CultureInfo.InvariantCulture))).ToList();
        Relative(m.Get("mm", "emmeans", "A", "mean", "a1"), Math.Exp(a1.Average()), 1e-12, "geometric mean");
        Relative(m.Get("mm", "emmeans", "A", "se", "a1"), Math.Sqrt(m.Get("fit", "anova", "residual", "ms") / 8), 1e-10, "SE on the log scale");
        Assert.True(m.Get("mm", "emmeans", "A", "ci_low", "a1") > 0, "a back-transformed limit of a log model is positive");
        Assert.Contains("SE (transformed scale)", result.Html, StringComparison.Ordinal);
        Assert.Contains("back-transformed separately", result.Html, StringComparison.Ordinal);
    }

    [Fact]
    public void SignificantInteraction_MainEffectMeansCarryTheCaution()
    {
        using var run = Run("by: A");
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        Assert.Contains("these means of A average over the levels of B", result.Html, StringComparison.Ordinal);
        Assert.Contains("&#39;by: A&#39; with &#39;at: B&#39;", result.Html, StringComparison.Ordinal);

        // No caution for a factor in no significant interaction (C), nor with 'at'.
        using var quiet = Run("by: C");
        Assert.DoesNotContain("average over the levels of", quiet.Compile().Html, StringComparison.Ordinal);
        using var simple = Run("by: A\nat: B");
        var withAt = simple.Compile();
        Assert.DoesNotContain("average over the levels of", withAt.Html, StringComparison.Ordinal);
        Assert.DoesNotContain(withAt.Figures, f => f.FileName.Contains("_mm_", StringComparison.Ordinal));
    }

    [Fact]
    public void Defaults_EachFactorOnItsOwn_WithOneMeansFigureEach()
    {
        using var run = Run(string.Empty);
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        var m = new ManifestView(result.ManifestJson!);
        Assert.Equal(3, result.Figures.Count(f => f.FileName.Contains("_mm_means", StringComparison.Ordinal)));
        foreach (var f in new[] { "A", "B", "C" })
        {
            Assert.Equal(2, m.Find("mm", "emmeans", f, "mean").Count());
        }

        // Exact hand computation: the mean of a1 is (10 + 11 + 12 + 11 + 20 + 21 + 22 + 19) / 8 = 15.75.
        Assert.Equal(15.75, m.Get("mm", "emmeans", "A", "mean", "a1"), 12);
    }

    [Fact]
    public void MethodsBlock_StatesTheSimpleEffectsWithTheirTests()
    {
        using var run = Run("by: B\nat: A", after: "\n```methods\n```");
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        Assert.Contains("estimated marginal means of", result.Html, StringComparison.Ordinal);
        Assert.Contains("with Holm-adjusted pairwise differences within each level", result.Html, StringComparison.Ordinal);
    }

    [Fact]
    public void CellsOfACrossing_AreThePredictedCellMeans()
    {
        using var run = Run("by: [B, A]");
        var m = run.Manifest();

        // Term in model order; cell a2 / b1 = (20 + 22 + 21 + 19) / 4 = 20.5 (exact hand computation).
        Assert.Equal(20.5, m.Get("mm", "emmeans", "A:B", "mean", "a2 / b1"), 12);
        Assert.Equal(4, m.Find("mm", "emmeans", "A:B", "mean").Count());
    }

    [Theory]
    [InlineData("by: [A, A]", "SP0245", 13)]
    [InlineData("by: A\nat: A", "SP0275", 14)]
    [InlineData("by: [A, B]\nat: C", "SP0276", 13)]
    [InlineData("at: C", "SP0279", 13)]
    [InlineData("by: D", "SP0234", 13)]
    [InlineData("by: A\nat: D", "SP0234", 14)]
    [InlineData("by: A\ncolour: red", "SP0201", 14)]
    [InlineData("of: nothing\nby: A", "SP0230", 13)]
    public void OneMistake_OneMessage_AtTheKey(string keys, string code, int line)
    {
        using var run = Run(keys);
        run.SingleError(code, line);
    }

    [Fact]
    public void CrossingOfMoreThan500Means_IsOneErrorAtBy()
    {
        // Invented: three factors of 8 levels in 64 rows, main effects only; their crossing has 512 means (> 500).
        var csv = new System.Text.StringBuilder("P,Q,R,y\n");
        for (var i = 0; i < 64; i++)
        {
            csv.Append(CultureInfo.InvariantCulture, $"p{i % 8},q{i / 8},r{(i + (i / 8)) % 8},{(i * 7 % 13) + (i % 8)}\n");
        }

        StudyRun Study(string by) => new StudyRun().File("d.csv", csv.ToString()).Study("---\ntitle: Many levels\ndata:\n  d: d.csv\nresponse: y\nfactors: [P, Q, R]\n---\n\n```anova fit\ninteraction: false\n```\n\n```marginal-means mm\nby: " + by + "\n```\n");
        using var run = Study("[P, Q, R]");
        var d = run.SingleError("SP0277", 13);
        Assert.Contains("would be 512", d.Message, StringComparison.Ordinal);

        // Two of them (64 means) are within the bound.
        using var two = Study("[P, Q]");
        Assert.Equal(64, two.Manifest().Find("mm", "emmeans", "P:Q", "mean").Count());
    }

    [Fact]
    public void AtWithoutTheInteraction_IsOneErrorAtAt()
    {
        using var run = Run("by: A\nat: B", "interaction: false");
        run.SingleError("SP0525", 14);
    }

    [Theory]
    [InlineData("by: block", "SP0278", 18)]
    [InlineData("by: [variety, nitrogen]", "SP0528", 18)]
    [InlineData("by: variety\nat: nitrogen", "SP0528", 19)]
    public void Oats_OneMistake_OneMessage(string keys, string code, int line)
    {
        using var run = Oats(keys);
        run.SingleError(code, line);
    }

    [Fact]
    public void Oats_MixedErrors_SuggestTheSubPlotFactorWithinTheWholePlotFactor()
    {
        using var run = Oats("by: variety\nat: nitrogen");
        var d = Assert.Single(run.Compile().Diagnostics);
        Assert.Contains("'by: nitrogen', 'at: variety'", d.Message, StringComparison.Ordinal);
    }

    // Exact recomputation (balanced oats): with 'fit: reml' the means of variety are the level
    // means the strata give, and their variance is the strata's (whole-plot error / 24) plus the
    // block variance / 6, since the mixed model's blocks are random (6 blocks; REML equals the
    // ANOVA-method components on these balanced data).
    [Fact]
    public void Oats_MixedModelFit_MeansAddTheBlockVariance()
    {
        using var reml = Oats("by: variety", "fit: reml");
        using var classical = Oats("by: variety");
        var r = reml.Manifest();
        var c = classical.Manifest();
        var block = r.Get("main", "variance_components", "block", "variance");
        foreach (var v in new[] { "Golden.rain", "Marvellous", "Victory" })
        {
            Relative(r.Get("mm", "emmeans", "variety", "mean", v), c.Get("mm", "emmeans", "variety", "mean", v), 1e-12, v);
            var cs = c.Get("mm", "emmeans", "variety", "se", v);
            Relative(Math.Pow(r.Get("mm", "emmeans", "variety", "se", v), 2), (cs * cs) + (block / 6), 1e-9, v + " variance");
        }
    }

    // Invented: a fixed factor crossed with two random factors, two replicates per cell, so that A
    // is tested by a quasi-F. Lines (1-based): 16 is the marginal-means fence, 17 its first key.
    private static StudyRun RandomFactors(string factors, string keys)
    {
        var csv = new System.Text.StringBuilder("A,R1,R2,y\n");
        var i = 0;
        foreach (var a in new[] { "a1", "a2" })
        {
            foreach (var r1 in new[] { "o1", "o2", "o3" })
            {
                foreach (var r2 in new[] { "m1", "m2", "m3" })
                {
                    for (var k = 0; k < 2; k++, i++)
                    {
                        csv.Append(CultureInfo.InvariantCulture, $"{a},{r1},{r2},{10 + (i * 7 % 10) + (a == "a2" ? 3 : 0)}\n");
                    }
                }
            }
        }

        return new StudyRun().File("q.csv", csv.ToString()).Study($"""
---
title: Random fixture
data: q.csv
response: y
factors:
{factors}
---

```anova main
```

```marginal-means mm
{keys}
```
""");
    }

    [Fact]
    public void QuasiF_HasNoSingleError_IsOneErrorAtBy()
    {
        using var run = RandomFactors("  A: {}\n  R1:\n    role: random\n  R2:\n    role: random", "by: A");
        run.SingleError("SP0527", 16);
    }

    [Fact]
    public void NoTreatmentFactor_IsOneErrorAtTheBlock()
    {
        // Two random factors and no treatment: the factors block lists two lines fewer, so the
        // marginal-means fence is line 15 (1-based).
        using var run = RandomFactors("  R1:\n    role: random\n  R2:\n    role: random", string.Empty);
        run.SingleError("SP0529", 14);
    }

    [Fact]
    public void Mistake_ThroughTheCommandLine_IsExitTwo_OneLine_NothingWritten()
    {
        using var run = Run("by: A\nat: A");
        var (exit, _, err) = run.Cli("build", "study.md");
        Assert.Equal(2, exit);
        var line = Assert.Single(err.Split('\n', StringSplitOptions.RemoveEmptyEntries));
        Assert.Matches(@"study\.md:15:\d+: error: 'at' names 'A', which 'by' names too", line);
        Assert.DoesNotContain("   at ", err, StringComparison.Ordinal);
        Assert.False(File.Exists(run.ReportPath));
    }
}
