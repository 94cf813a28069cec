using System.Text.Json;
using StudyPress.Statistics;
using StudyPress.Statistics.Distributions;
using StudyPress.Tests.Support;

namespace StudyPress.Tests;

/// <summary>
/// The marginal-means kind over a repeated block, through the whole pipeline. Data: the repeated
/// golden case's copies of the shared reference files (Rutherford 2001 one-way; Doncaster and
/// Davey 2007, model 6.3). Means are exact hand computations from the data (Python fractions);
/// SEs and df follow from the published (or exactly recomputed) error mean squares by the
/// multi-stratum formulas written out beside each check; the B difference's t² must equal the
/// published F of B. Variations of the data are test fixtures. Its mistakes: one message each, at
/// the key to edit.
/// </summary>
public sealed class MarginalMeansRepeatedTests
{
    private static readonly string Reference = Path.Combine(SourceDir(), "Cases", "kinds", "repeated", "data");

    private static string SourceDir([System.Runtime.CompilerServices.CallerFilePath] string path = "") => Path.GetDirectoryName(path)!;

    private static string Csv(string name) => File.ReadAllText(Path.Combine(Reference, name));

    private static string OneWay => Csv("rutherford-2001-oneway.csv");

    private static string Mixed => Csv("doncaster-davey-model-6-3.csv");

    private const string MixedKeys = "subject: subject\nwithin: B\nbetween: A\nlabels: per-group";

    // Doncaster and Davey (2007) model 6.3, exact recomputation (shared reference): SS S(A) 84.5619456825, SS B:S(A) 139.470619622, each on 9 df
    // (published: 84.56 and 139.47).
    private const double MsS = 84.5619456825 / 9;
    private const double MsBs = 139.470619622 / 9;

    // Lines count from 0: the repeated block opens on line 8 with its keys from line 9; the
    // marginal-means block's first key follows its fence.
    private static string Study(string repeatedKeys, string keys, string extra = "") => $"""
---
title: Repeated means fixture
data:
  d: d.csv
response: y
factors: [{(repeatedKeys.Contains("condition", StringComparison.Ordinal) ? "subject, condition" : "subject, A, B")}]
---

```repeated r
{repeatedKeys}
```
{extra}
```marginal-means mm
{keys}
```
""";

    private static int FirstKeyLine(string repeatedKeys, string extra = "") => 9 + repeatedKeys.Split('\n').Length + 3 + (extra.Length == 0 ? 0 : extra.Split('\n').Length - 1);

    private static StudyRun Run(string csv, string repeatedKeys, string keys, string extra = "") => new StudyRun().File("d.csv", csv).Study(Study(repeatedKeys, keys, extra));

    private static double Satterthwaite(params (double C, double Ms, double Df)[] parts) =>
        Math.Pow(parts.Sum(p => p.C * p.Ms), 2) / parts.Sum(p => Math.Pow(p.C * p.Ms, 2) / p.Df);

    private static JsonElement Pair(ManifestView m, string test, string term, string a, string b, string stat, string? level = null) =>
        Assert.Single(m.Values, v =>
            v.GetProperty("block").GetString() == "mm" && v.GetProperty("test").GetString() == test && v.GetProperty("term").GetString() == term
            && v.GetProperty("stat").GetString() == stat && (level is null || v.GetProperty("level").GetString() == level)
            && v.TryGetProperty("pair", out var p) && p.ValueKind == JsonValueKind.Array && p[0].GetString() == a && p[1].GetString() == b);

    private static void Close(double expected, double actual, double rel = 1e-9) =>
        Assert.True(Math.Abs(expected - actual) <= rel * Math.Max(1, Math.Abs(expected)), $"expected {expected:R}, got {actual:R}");

    [Fact]
    public void Mixed_BetweenAndWithinMeans_OnTheirStrata()
    {
        using var run = Run(Mixed, MixedKeys, "of: r");
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        var m = new ManifestView(result.ManifestJson!);

        // A means, exact hand computation from the data: 3.0024375, 9.6253875, 18.011775.
        // Between stratum alone: Var = MS_S(A) / (b n) = MS_S / 8 on 9 df.
        Close(3.0024375, m.Get("mm", "emmeans", "A", "mean", "1"));
        Close(18.011775, m.Get("mm", "emmeans", "A", "mean", "3"));
        Close(Math.Sqrt(MsS / 8), m.Get("mm", "emmeans", "A", "se", "2"));
        Close(9, m.Get("mm", "emmeans", "A", "df", "2"));
        var t = Probability.TCritical(0.05, 9);
        Close(9.6253875 - (t * Math.Sqrt(MsS / 8)), m.Get("mm", "emmeans", "A", "ci_low", "2"));

        // B means (within), exact hand computation: 10.3014916667, 10.1249083333. Equal weights over
        // the 3 groups: c = 1/24 on each stratum, Var = (MS_S + MS_BS) / 24, Satterthwaite df.
        Close(123.6179 / 12, m.Get("mm", "emmeans", "B", "mean", "1"));
        Close(Math.Sqrt((MsS + MsBs) / 24), m.Get("mm", "emmeans", "B", "se", "1"));
        Close(Satterthwaite((1.0 / 24, MsS, 9), (1.0 / 24, MsBs, 9)), m.Get("mm", "emmeans", "B", "df", "1"));
        Assert.Contains("classical route of the repeated block", System.Net.WebUtility.HtmlDecode(result.Html), StringComparison.Ordinal);
        Assert.Contains("subject (in A) + B × subject (in A)", System.Net.WebUtility.HtmlDecode(result.Html), StringComparison.Ordinal);
    }

    [Fact]
    public void Mixed_CompareWithinLevels_OnTheWithinError_MatchesPublishedF()
    {
        using var run = Run(Mixed, MixedKeys, "by: B\ncompare: holm");
        var m = run.Manifest();

        // B difference averaged over A: within stratum only, Var = MS_BS / 6 (c = 3 × (2/9) / 4), 9 df.
        var diff = Pair(m, "holm", "B", "1", "2", "diff").GetProperty("value").GetDouble();
        Close((123.6179 - 121.4989) / 12, diff);
        Close(Math.Sqrt(MsBs / 6), Pair(m, "holm", "B", "1", "2", "se").GetProperty("value").GetDouble());
        Close(9, Pair(m, "holm", "B", "1", "2", "df").GetProperty("value").GetDouble());

        // t² equals the F of B: published 0.01 (p 0.915); exact recomputation F 0.0120728679600, p 0.9149182690.
        var tv = Pair(m, "holm", "B", "1", "2", "statistic").GetProperty("value").GetDouble();
        Close(0.0120728679600, tv * tv, 1e-9);
        Close(0.9149182690, Pair(m, "holm", "B", "1", "2", "p_adj").GetProperty("value").GetDouble(), 1e-9);
    }

    [Fact]
    public void Mixed_SimpleEffects_WithinFactorAtEachGroup_OnWithinError()
    {
        using var run = Run(Mixed, MixedKeys, "by: B\nat: A\ncompare: tukey");
        var m = run.Manifest();

        // Cell means, exact hand computation: group 3: B1 20.7052, B2 15.31835. The difference
        // rests on B × subject (in A) only: Var = 2 MS_BS / 4 on 9 df; F = d² / Var on (1, 9).
        var d = 20.7052 - 15.31835;
        Close(d * d / (2 * MsBs / 4), m.Get("mm", "simple_effects", "B", "f", "A 3"));
        Close(9, m.Get("mm", "simple_effects", "B", "df_den", "A 3"));
        Close(1, m.Get("mm", "simple_effects", "B", "df", "A 3"));
        var se = Math.Sqrt(2 * MsBs / 4);
        Close(se, Pair(m, "tukey_hsd", "B", "1", "2", "se", "A 3").GetProperty("value").GetDouble());

        // Two means: Tukey's p equals the t test's (q = √2 |t| on 2 means and 9 df).
        Close(Probability.TTwoSided(d / se, 9), Pair(m, "tukey_hsd", "B", "1", "2", "p_adj", "A 3").GetProperty("value").GetDouble(), 1e-7);

        // Cells A × B (pooled strata): Var = (MS_S + MS_BS) / 8.
        Close(Math.Sqrt((MsS + MsBs) / 8), m.Get("mm", "emmeans", "A:B", "se", "3 / 1"));
        Close(20.7052, m.Get("mm", "emmeans", "A:B", "mean", "3 / 1"));
    }

    [Fact]
    public void OneWay_MeansAndTukeyPairs()
    {
        using var run = Run(OneWay, "subject: subject\nwithin: condition", "compare: tukey");
        var m = run.Manifest();

        // Rutherford (2001) p. 72, published: SS(subject) 14 on 7 df, SS(A × subject) 38 on 14 df.
        // Condition means, exact hand computation: a 6, b 10, c 11. Var(mean) = (MS_S + 2 MS_AS) / 24.
        double msS = 2, msAs = 38.0 / 14;
        Close(6, m.Get("mm", "emmeans", "condition", "mean", "a"));
        Close(Math.Sqrt((msS + (2 * msAs)) / 24), m.Get("mm", "emmeans", "condition", "se", "b"));
        Close(Satterthwaite((1.0 / 24, msS, 7), (2.0 / 24, msAs, 14)), m.Get("mm", "emmeans", "condition", "df", "c"));

        // a − b on the condition × subject error: SE = √(2 MS_AS / 8), 14 df; Tukey p = P(Q(3, 14) ≥ √2 |t|).
        var se = Math.Sqrt(2 * msAs / 8);
        Close(se, Pair(m, "tukey_hsd", "condition", "a", "b", "se").GetProperty("value").GetDouble());
        Close(StudentizedRange.Upper(Math.Sqrt(2) * 4 / se, 3, 14), Pair(m, "tukey_hsd", "condition", "a", "b", "p_adj").GetProperty("value").GetDouble(), 1e-9);
        var q = StudentizedRange.UpperQuantile(0.05, 3, 14) / Math.Sqrt(2);
        Close(-4 - (q * se), Pair(m, "tukey_hsd", "condition", "a", "b", "ci_low").GetProperty("value").GetDouble(), 1e-9);
    }

    [Fact]
    public void IncompleteSubject_MeansFromTheMixedModel_AndSaysSo()
    {
        // Subject 1 of group A 3 loses its B 2 measurement: fit: auto fits the mixed model, and the means come from it.
        var csv = string.Join("\n", Mixed.Split('\n').Where(l => !string.Equals(l.TrimEnd('\r'), "1,3,2,16.4482", StringComparison.Ordinal)));
        using var run = Run(csv, MixedKeys, "by: A\ncompare: bonferroni");
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        var m = new ManifestView(result.ManifestJson!);
        Assert.Contains("mixed model (REML) of the repeated block 'r', fitted on 12 subject units, 1 of them incomplete", System.Net.WebUtility.HtmlDecode(result.Html), StringComparison.Ordinal);

        // Groups 1 and 2 are complete and balanced, and A's means average over the within cells.
        // Exact hand computation for group 1: its raw mean 3.0024375 is the GLS estimate too
        // (the group's cells are all observed and V is the same for each of its subjects).
        Close(3.0024375, m.Get("mm", "emmeans", "A", "mean", "1"), 1e-9);
        Assert.True(m.Get("mm", "emmeans", "A", "df", "3") > 0);
        var p = Pair(m, "bonferroni", "A", "1", "2", "p").GetProperty("value").GetDouble();
        Close(Math.Min(1, 3 * p), Pair(m, "bonferroni", "A", "1", "2", "p_adj").GetProperty("value").GetDouble(), 1e-12);
    }

    [Fact]
    public void ClassicalFit_WithIncompleteSubject_UsesCompleteSubjects()
    {
        var csv = string.Join("\n", Mixed.Split('\n').Where(l => !string.Equals(l.TrimEnd('\r'), "1,3,2,16.4482", StringComparison.Ordinal)));
        using var run = Run(csv, MixedKeys + "\nfit: classical", "by: A");
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        Assert.Contains("11 complete subject units; 1 incomplete left out", System.Net.WebUtility.HtmlDecode(result.Html), StringComparison.Ordinal);
        var m = new ManifestView(result.ManifestJson!);
        Close(8, m.Get("mm", "emmeans", "A", "df", "1"));
    }

    [Fact]
    public void Tukey_OnCellsThatMixStrata_IsAnError()
    {
        using var run = Run(Mixed, MixedKeys, "by: [A, B]\ncompare: tukey");
        var d = run.SingleError("SP0540", FirstKeyLine(MixedKeys) + 1);
        Assert.Contains("do not all rest on one error", d.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Tukey_OnTheMixedModel_IsAnError()
    {
        var csv = string.Join("\n", Mixed.Split('\n').Where(l => !string.Equals(l.TrimEnd('\r'), "1,3,2,16.4482", StringComparison.Ordinal)));
        using var run = Run(csv, MixedKeys, "by: B\ncompare: tukey");
        var d = run.SingleError("SP0540", FirstKeyLine(MixedKeys) + 1);
        Assert.Contains("mixed model", d.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void By_NamingTheSubject_IsAnError()
    {
        using var run = Run(Mixed, MixedKeys, "by: subject");
        var d = run.SingleError("SP0292", FirstKeyLine(MixedKeys));
        Assert.Contains("'A', 'B'", d.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void At_NamingTheSubject_IsAnError()
    {
        using var run = Run(Mixed, MixedKeys, "by: B\nat: subject");
        run.SingleError("SP0292", FirstKeyLine(MixedKeys) + 1);
    }

    [Fact]
    public void By_NamingAFactorOutsideTheRepeatedBlock_IsAnError()
    {
        using var run = Run(Mixed, MixedKeys, "by: condition");
        run.SingleError("SP0293", FirstKeyLine(MixedKeys));
    }

    [Fact]
    public void At_MisspeltFactor_IsAnError_WithSuggestion()
    {
        using var run = Run(Mixed, MixedKeys, "by: B\nat: AA");
        var d = run.SingleError("SP0293", FirstKeyLine(MixedKeys) + 1);
        Assert.Contains("did you mean 'A'", d.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Compare_MisspeltValue_IsAnError()
    {
        using var run = Run(Mixed, MixedKeys, "compare: tukee");
        var d = Assert.Single(run.Compile().Diagnostics);
        Assert.Equal(FirstKeyLine(MixedKeys), d.Location.Line);
        Assert.Contains("tukey", d.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Compare_OnAnAnovaBlock_IsAnError()
    {
        const string extra = "\n```anova fit\nfactors: [A]\n```\n";
        using var run = Run(Mixed, MixedKeys, "of: fit\ncompare: holm", extra);
        run.SingleError("SP0294", FirstKeyLine(MixedKeys, extra) + 1);
    }

    [Fact]
    public void MethodsText_NamesTheRouteAndTheAdjustment()
    {
        var csv = string.Join("\n", Mixed.Split('\n').Where(l => !string.Equals(l.TrimEnd('\r'), "1,3,2,16.4482", StringComparison.Ordinal)));
        using var run = new StudyRun().File("d.csv", csv).Study(Study(MixedKeys, "by: B\ncompare: holm") + "\n```methods text\n```\n");
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        var html = System.Net.WebUtility.HtmlDecode(result.Html);
        Assert.Contains("from the repeated-measures mixed model (REML; Satterthwaite df), which keeps incomplete subjects", html, StringComparison.Ordinal);
        Assert.Contains("Holm-adjusted p-values, each difference on its own error", html, StringComparison.Ordinal);
    }

    [Fact]
    public void Compare_OverTooManyMeans_IsAnError()
    {
        // Invented fixture: 3 subjects under 101 conditions (101 means would make 5050 pairs).
        var csv = "subject,condition,y\n" + string.Concat(Enumerable.Range(0, 3).SelectMany(s => Enumerable.Range(0, 101).Select(c => string.Create(System.Globalization.CultureInfo.InvariantCulture, $"s{s},c{c:D3},{(s * 7) + (c % 5) + ((s * c) % 3)}\n"))));
        const string keys = "subject: subject\nwithin: condition";
        using var run = Run(csv, keys, "compare: holm");
        var d = run.SingleError("SP0540", FirstKeyLine(keys));
        Assert.Contains("at most 100 means", d.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void WideData_RepeatedBlock_GivesTheSameMeans()
    {
        // The one-way data in wide form (one column per condition): no response column is loaded,
        // and the means and SEs are those of the long form (Rutherford 2001; hand computation above).
        var wide = "subject,a,b,c\n" + string.Concat(OneWay.Split('\n').Skip(1).Where(l => l.Trim().Length > 0)
            .Select(l => l.Trim().Split(','))
            .GroupBy(f => f[0], StringComparer.Ordinal)
            .Select(g => g.Key + "," + string.Join(",", g.OrderBy(f => f[1], StringComparer.Ordinal).Select(f => f[2])) + "\n"));
        const string keys = "subject: subject\nwithin: condition\ncolumns: [a, b, c]";
        var study = Study(keys, "compare: holm").Replace("factors: [subject, condition]", "factors: [subject]", StringComparison.Ordinal);
        using var run = new StudyRun().File("d.csv", wide).Study(study);
        var m = run.Manifest();
        double msS = 2, msAs = 38.0 / 14;
        Close(10, m.Get("mm", "emmeans", "condition", "mean", "b"));
        Close(Math.Sqrt((msS + (2 * msAs)) / 24), m.Get("mm", "emmeans", "condition", "se", "b"));
        Close(Math.Sqrt(2 * msAs / 8), Pair(m, "holm", "condition", "a", "c", "se").GetProperty("value").GetDouble());
    }

    [Fact]
    public void At_WithoutBy_WhenSeveralOtherFactors_IsAnError()
    {
        // Rutherford's two-way within design with an invented between factor G (subjects 1-4, 5-8): 'at: A' leaves B and G.
        var csv = "subject,A,B,G,y\n" + string.Concat(Csv("rutherford-2001-twoway.csv").Split('\n').Skip(1).Where(l => l.Trim().Length > 0)
            .Select(l => l.Trim().Split(','))
            .Select(f => $"{f[0]},{f[1]},{f[2]},{(int.Parse(f[0], System.Globalization.CultureInfo.InvariantCulture) <= 4 ? "g1" : "g2")},{f[3]}\n"));
        const string keys = "subject: subject\nwithin: [A, B]\nbetween: G";
        var study = Study(keys, "at: A").Replace("factors: [subject, A, B]", "factors: [subject, A, B, G]", StringComparison.Ordinal);
        using var run = new StudyRun().File("d.csv", csv).Study(study);
        var d = run.SingleError("SP0279", FirstKeyLine(keys));
        Assert.Contains("the repeated block 'r' has several other factors", d.Message, StringComparison.Ordinal);
    }
}
