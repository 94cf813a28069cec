using System.Globalization;
using StudyPress.Tests.Support;

namespace StudyPress.Tests;

/// <summary>
/// The friedman kind through the whole pipeline: its mistakes (one message each, at the key to
/// edit), incomplete blocks, and the published value. Data: Zar, Biostatistical Analysis, Example
/// 12.6 (5 blocks × 4 treatments), as in the kind's golden case; variations of it are test fixtures.
/// </summary>
public sealed class FriedmanKindTests
{
    private const string Zar = "block,treatment,y\n1,1,7.0\n1,2,5.3\n1,3,4.9\n1,4,8.8\n2,1,9.9\n2,2,5.7\n2,3,7.6\n2,4,8.9\n3,1,8.5\n3,2,4.7\n3,3,5.5\n3,4,8.1\n4,1,5.1\n4,2,3.5\n4,3,2.8\n4,4,3.3\n5,1,10.3\n5,2,7.7\n5,3,8.4\n5,4,9.1\n";

    private static string Study(string keys) => $"""
---
title: Friedman fixture
data:
  zar: zar.csv
response: y
factors: [treatment, block]
---

```friedman ranks
{keys}
```
""";

    private static StudyRun Run(string keys, string csv = Zar) => new StudyRun().File("zar.csv", csv).Study(Study(keys));

    [Fact]
    public void PublishedChiSquare_ThroughThePipeline()
    {
        // Zar, Example 12.6: chi-square = 10.68 (published, two decimals).
        using var run = Run("factor: treatment\nblocks: block");
        var m = run.Manifest();
        Assert.Equal(10.68, m.Get("ranks", "friedman", "treatment", "chi2"), 2);
    }

    [Fact]
    public void ImanDavenport_OnTheFriedmanRow()
    {
        // Zar, Example 12.6; Iman–Davenport F, df and p: shared reference collection, exact
        // recomputation (friedman/zar-example-12-6.expected.json: F 9.88888888889 on (3, 12), p 0.001451880229).
        using var run = Run("factor: treatment\nblocks: block");
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        var m = new ManifestView(result.ManifestJson!);
        Assert.Equal(9.88888888889, m.Get("ranks", "friedman", "treatment", "f_iman_davenport"), 10);
        Assert.Equal(3, m.Get("ranks", "friedman", "treatment", "df1_iman_davenport"));
        Assert.Equal(12, m.Get("ranks", "friedman", "treatment", "df2_iman_davenport"));
        Assert.Equal(0.001451880229, m.Get("ranks", "friedman", "treatment", "p_iman_davenport"), 11);
        Assert.DoesNotContain(m.Values, v => v.GetProperty("test").GetString() == "iman_davenport");
        Assert.Contains("Iman–Davenport F", result.Html, StringComparison.Ordinal);
    }

    [Theory]
    [InlineData("[=ranks.iman_davenport.f]", "ranks.f_iman_davenport")]
    [InlineData("[=ranks.iman_davenport.treatment.p]", "ranks.treatment.p_iman_davenport")]
    [InlineData("[=ranks.iman_davenport.df2]", "ranks.df2_iman_davenport")]
    public void OldImanDavenportReference_IsUnknown_AndPointsToTheNewStat(string reference, string suggestion)
    {
        using var run = new StudyRun().File("zar.csv", Zar).Study(Study("factor: treatment\nblocks: block") + "\n\nThe F was " + reference + ".\n");
        var d = run.SingleError("SP0401", 13);
        Assert.Contains($"did you mean '{suggestion}'", d.Message, StringComparison.Ordinal);

        // The suggested path reads.
        using var fixedRun = new StudyRun().File("zar.csv", Zar).Study(Study("factor: treatment\nblocks: block") + "\n\nThe F was [=" + suggestion + "].\n");
        Assert.True(fixedRun.Compile().Succeeded);
    }

    /// <summary>A copy of the shared reference collection's friedman/ file, as the engine tests hold it.</summary>
    private static string SharedCopy(string name, [System.Runtime.CompilerServices.CallerFilePath] string path = "") =>
        File.ReadAllText(Path.Combine(Path.GetDirectoryName(path)!, "..", "StudyPress.Statistics.Tests", "Reference", "friedman", name));

    private static StudyRun RunOn(string csv, string response, string treatment, string blocks, string keys) => new StudyRun().File("d.csv", csv).Study($"""
---
title: Friedman reference fixture
data:
  d: d.csv
response: {response}
factors: [{treatment}, {blocks}]
---

```friedman ranks
factor: {treatment}
blocks: {blocks}
{keys}
```
""");

    [Fact]
    public void Demsar2006_TieCorrectedChiSquare_ImanDavenport_AndNemenyiCd_ThroughThePipeline()
    {
        // Demšar (2006), AUC of 4 classifiers on 14 data sets (ties in 6 blocks); shared reference
        // collection friedman/demsar-2006-auc.expected.json. The published χ²_F = 9.28 is the form
        // without tie correction (checked in the engine tests); the report gives the tie-corrected one.
        using var run = RunOn(SharedCopy("demsar-2006-auc.csv"), "auc", "classifier", "dataset", "method: nemenyi");
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        var m = new ManifestView(result.ManifestJson!);

        // Exact recomputation (shared reference): tie-corrected χ² 10.2283464567 (= 1299/127), p 0.01672158033, mean ranks.
        Assert.Equal(10.2283464567, m.Get("ranks", "friedman", "classifier", "chi2"), 9);
        Assert.Equal(0.01672158033, m.Get("ranks", "friedman", "classifier", "p"), 10);
        Assert.Equal(14, m.Get("ranks", "friedman", "classifier", "n_blocks"));
        foreach (var (level, rank) in new[] { ("C4.5", 1.85714285714), ("C4.5+m", 3.0), ("C4.5+cf", 2.10714285714), ("C4.5+m+cf", 3.03571428571) })
        {
            Assert.Equal(rank, m.Get("ranks", "friedman", "classifier", "mean_rank", level), 10);
        }

        // Exact hand computation from that χ²: the Iman–Davenport F of the within-block (mid-)ranks,
        // (n − 1)χ²/(n(k − 1) − χ²) = 13 (1299/127) / (42 − 1299/127) = 16887/4035, on (3, 39) df.
        Assert.Equal(16887.0 / 4035, m.Get("ranks", "friedman", "classifier", "f_iman_davenport"), 10);
        Assert.Equal(3, m.Get("ranks", "friedman", "classifier", "df1_iman_davenport"));
        Assert.Equal(39, m.Get("ranks", "friedman", "classifier", "df2_iman_davenport"));

        // Exact recomputation (shared reference): Nemenyi CD = q(0.05; 4, ∞)/√2 · √(k(k + 1)/(6n)) = 1.253559
        // (computed there with df 1e6 for ∞, so compared at 1e-6 relative).
        var cd = Assert.Single(m.Find("ranks", "nemenyi", "classifier", "cd")).GetProperty("value").GetDouble();
        Assert.True(Math.Abs(cd - 1.253559) <= 1e-6 * 1.253559, $"CD {cd}");
        Assert.Contains("χ&#178; is corrected for ties", result.Html, StringComparison.Ordinal);
    }

    [Fact]
    public void TiedScores_PublishedChiSquare_ThroughThePipeline()
    {
        // Bioestadística para las ciencias de la salud, 12 blocks × 4 treatments with many ties; shared
        // reference collection friedman/bioestadistica-12x4.expected.json. Published χ²_r = 18.95, p < 0.001
        // (the exact tie-corrected value 18.9428571429 = 663/35 rounds to 18.94: the collection notes the
        // discrepancy and a tolerance of 0.01).
        using var run = RunOn(SharedCopy("bioestadistica-12x4.csv"), "y", "treatment", "block", string.Empty);
        var m = run.Manifest();
        Assert.True(Math.Abs(m.Get("ranks", "friedman", "treatment", "chi2") - 18.95) <= 0.01);
        Assert.True(m.Get("ranks", "friedman", "treatment", "p") < 0.001);

        // Exact recomputation (shared reference): χ² 18.9428571429, p 0.0002809383752, mean ranks.
        Assert.Equal(18.9428571429, m.Get("ranks", "friedman", "treatment", "chi2"), 9);
        Assert.Equal(0.0002809383752, m.Get("ranks", "friedman", "treatment", "p"), 12);
        foreach (var (level, rank) in new[] { ("1", 3.16666666667), ("2", 1.29166666667), ("3", 2.41666666667), ("4", 3.125) })
        {
            Assert.Equal(rank, m.Get("ranks", "friedman", "treatment", "mean_rank", level), 10);
        }

        // Exact hand computation: Iman–Davenport F of the mid-ranks, 11 (663/35) / (36 − 663/35) = 7293/597 on (3, 33) df.
        Assert.Equal(7293.0 / 597, m.Get("ranks", "friedman", "treatment", "f_iman_davenport"), 10);
        Assert.Equal(33, m.Get("ranks", "friedman", "treatment", "df2_iman_davenport"));
    }

    [Fact]
    public void TreatmentDefaultsToTheOtherFactor()
    {
        using var run = Run("blocks: block");
        Assert.Equal(10.68, run.Manifest().Get("ranks", "friedman", "treatment", "chi2"), 2);
    }

    [Theory]
    [InlineData("factor: treatment", "SP0202", 8)]
    [InlineData("factor: treatment\nblocks: treatment", "SP0249", 10)]
    [InlineData("factor: treatment\nblocks: blok", "SP0216", 10)]
    [InlineData("factor: treatment\nblocks: block\nmethod: tukey", "SP0209", 11)]
    public void OneMistake_OneMessage_AtTheKey(string keys, string code, int line)
    {
        using var run = Run(keys);
        run.SingleError(code, line);
    }

    [Fact]
    public void ReplicatedCell_IsOneErrorAtBlocks()
    {
        using var run = Run("factor: treatment\nblocks: block", Zar + "2,3,7.7\n");
        var d = run.SingleError("SP0509", 10);
        Assert.Contains("block '2' has 2 values for treatment '3'", d.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void IncompleteBlock_IsLeftOutAndSaidSo()
    {
        // Block 6 lacks treatments 3 and 4: the test runs on Zar's five complete blocks.
        using var run = Run("factor: treatment\nblocks: block", Zar + "6,1,4.0\n6,2,3.0\n");
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        var m = new ManifestView(result.ManifestJson!);
        Assert.Equal(10.68, m.Get("ranks", "friedman", "treatment", "chi2"), 2);
        Assert.Equal(1, m.Get("ranks", "friedman", "treatment", "blocks_dropped"));
        Assert.Contains("1 block without a value for every treatment was left out", result.Html, StringComparison.Ordinal);
    }

    [Fact]
    public void TooFewCompleteBlocks_IsOneError()
    {
        var csv = string.Join("\n", Zar.Split('\n').Where(l => !l.StartsWith("2,", StringComparison.Ordinal) && !l.StartsWith("3,", StringComparison.Ordinal) && !l.StartsWith("4,", StringComparison.Ordinal) && !l.StartsWith("5,1", StringComparison.Ordinal)));
        using var run = Run("factor: treatment\nblocks: block", csv);
        var d = Assert.Single(run.Compile().Diagnostics);
        Assert.Equal("SP0510", d.Code);
        Assert.Contains(string.Create(CultureInfo.InvariantCulture, $"block has 1 complete and 1 incomplete"), d.Message, StringComparison.Ordinal);
    }
}
