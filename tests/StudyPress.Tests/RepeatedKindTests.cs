using System.Globalization;
using StudyPress.Tests.Support;

namespace StudyPress.Tests;

/// <summary>
/// The repeated kind through the whole pipeline: published tables, the sphericity values against
/// the shared reference collection's exact recomputation, a subject with a missing measurement
/// (dropped from the classical route, kept by the mixed model), and its mistakes (one message
/// each, at the key to edit). Data: the golden case's copies of the shared reference files (repeated-measures/: Rutherford
/// 2001; Doncaster and Davey 2007, model 6.3); variations of them are test fixtures.
/// </summary>
public sealed class RepeatedKindTests
{
    private static readonly string Reference = Path.Combine(SourceDir(), "Cases", "kinds", "repeated", "data");

    private static string SourceDir([System.Runtime.CompilerServices.CallerFilePath] string path = "") => Path.GetDirectoryName(path)!;

    private static string Csv(string name) => File.ReadAllText(Path.Combine(Reference, name));

    private static string OneWay => Csv("rutherford-2001-oneway.csv");

    private static string Mixed => Csv("doncaster-davey-model-6-3.csv");

    private static string Study(string factors, string keys) => $"""
---
title: Repeated fixture
data:
  d: d.csv
response: y
factors: [{factors}]
---

```repeated r
{keys}
```
""";

    // Locations are zero-based (the CLI prints them one-based): the fence is line 8, the first key line 9.
    private static StudyRun Run(string csv, string factors, string keys) => new StudyRun().File("d.csv", csv).Study(Study(factors, keys));

    private static string Without(string csv, string line) =>
        string.Join("\n", csv.Split('\n').Where(l => !string.Equals(l.TrimEnd('\r'), line, StringComparison.Ordinal)));

    [Fact]
    public void OneWay_PublishedTable_AndRecomputedSphericity()
    {
        using var run = Run(OneWay, "subject, condition", "subject: subject\nwithin: condition");
        var m = run.Manifest();

        // Rutherford (2001) p. 72, published: SS(A) 112, F 20.6316, SS(subject) 14, SS(A x subject) 38.
        Assert.Equal(112.0, m.Get("r", "anova", "condition", "ss"), 4);
        Assert.Equal(20.6316, m.Get("r", "anova", "condition", "f"), 4);
        Assert.Equal(14.0, m.Get("r", "anova", "subject", "ss"), 4);
        Assert.Equal(38.0, m.Get("r", "anova", "condition:subject", "ss"), 4);
        Assert.Equal(14, m.Get("r", "anova", "condition", "df_den"));

        // Exact hand computation from those published SS: partial η² = 112/(112 + 38); generalized η²
        // (Olejnik and Algina 2003, every factor manipulated) = 112/(112 + 14 + 38).
        Assert.Equal(112.0 / 150, m.Get("r", "anova", "condition", "partial_eta2"), 12);
        Assert.Equal(112.0 / 164, m.Get("r", "anova", "condition", "generalized_eta2"), 12);

        // Exact recomputation (shared reference, rutherford-2001-oneway.expected.json; no published epsilon).
        Assert.Equal(0.220683287165, m.Get("r", "mauchly", "condition", "w"), 10);
        Assert.Equal(9.06616017042, m.Get("r", "mauchly", "condition", "chi2"), 9);
        Assert.Equal(0.01074752176, m.Get("r", "mauchly", "condition", "p"), 10);
        Assert.Equal(0.562013492475, m.Get("r", "anova", "condition", "epsilon_gg"), 10);
        Assert.Equal(0.594983661574, m.Get("r", "anova", "condition", "epsilon_hf"), 10);
        Assert.Equal(0.001674120958, m.Get("r", "anova", "condition", "p_gg"), 11);
        Assert.Equal(0.001309873329, m.Get("r", "anova", "condition", "p_hf"), 11);
    }

    [Fact]
    public void OneWay_RuleReadsGreenhouseGeisser_AndSaysWhy()
    {
        // Mauchly p = 0.0107 < 0.05 and GG epsilon 0.562 < 0.75 (exact recomputation): the rule reads GG.
        using var run = Run(OneWay, "subject, condition", "subject: subject\nwithin: condition");
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        Assert.Contains("condition: Greenhouse–Geisser test read", result.Html, StringComparison.Ordinal);
        Assert.Contains("is below 0.75", result.Html, StringComparison.Ordinal);
    }

    [Fact]
    public void AskedCorrection_IsReadForEveryTerm()
    {
        using var run = Run(OneWay, "subject, condition", "subject: subject\nwithin: condition\ncorrection: hf");
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        Assert.Contains("condition: Huynh–Feldt test read — Huynh–Feldt as the block asks", result.Html, StringComparison.Ordinal);
    }

    [Fact]
    public void MixedDesign_PublishedTable()
    {
        // Doncaster and Davey (2007), model 6.3(i), published: A F 48.17; B F 0.01, p 0.915; B*A F 5.41, p 0.029; S(A) SS 84.56; B*S(A) SS 139.47.
        using var run = Run(Mixed, "subject, A, B", "subject: subject\nwithin: B\nbetween: A\nlabels: per-group");
        var m = run.Manifest();
        Assert.Equal(48.17, m.Get("r", "anova", "A", "f"), 2);
        Assert.Equal(9, m.Get("r", "anova", "A", "df_den"));
        Assert.Equal(84.56, m.Get("r", "anova", "subject(A)", "ss"), 2);
        Assert.Equal(0.01, m.Get("r", "anova", "B", "f"), 2);
        Assert.Equal(0.915, m.Get("r", "anova", "B", "p"), 3);
        Assert.Equal(5.41, m.Get("r", "anova", "A:B", "f"), 2);
        Assert.Equal(0.029, m.Get("r", "anova", "A:B", "p"), 3);
        Assert.Equal(139.47, m.Get("r", "anova", "B:subject(A)", "ss"), 2);
        Assert.Equal(0, m.Get("r", "subjects", null, "subjects_dropped"));
        Assert.Empty(m.Find("r", "anova_reml", "A", "f"));
    }

    [Fact]
    public void MissingMeasurement_SubjectDroppedFromClassical_MixedModelKeepsIt()
    {
        // Subject 1 of group A 3 loses its B 2 measurement.
        var csv = Without(Mixed, "1,3,2,16.4482");
        using var run = Run(csv, "subject, A, B", "subject: subject\nwithin: B\nbetween: A\nlabels: per-group");
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        var m = new ManifestView(result.ManifestJson!);
        Assert.Equal(11, m.Get("r", "subjects", null, "n"));
        Assert.Equal(1, m.Get("r", "subjects", null, "subjects_dropped"));
        Assert.Equal(8, m.Get("r", "anova", "A", "df_den"));
        Assert.Equal(12, m.Get("r", "anova_reml", null, "n"));
        Assert.Equal(23, m.Get("r", "anova_reml", null, "n_total"));
        Assert.True(m.Get("r", "anova_reml", "A", "f") > 0);
        Assert.Contains("subject 1 (A 3) was dropped from the classical analysis: incomplete: no measurement for B 2", result.Html, StringComparison.Ordinal);
        Assert.Contains("The mixed-model route keeps its measurements.", result.Html, StringComparison.Ordinal);
        Assert.Contains("The mixed model keeps the 1 incomplete subject that the classical analysis dropped.", result.Html, StringComparison.Ordinal);
    }

    [Fact]
    public void MixedDesign_Figures_SubjectProfilesWithMeanProfile_AndInteractionPlot()
    {
        using var run = Run(Mixed, "subject, A, B", "subject: subject\nwithin: B\nbetween: A\nlabels: per-group");
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        var profiles = Assert.Single(result.Figures, f => f.Figure.Type == "profiles").Figure;
        var svg = System.Xml.Linq.XElement.Parse(profiles.Chart.ToSvg());
        bool Has(System.Xml.Linq.XElement e, string cls) => ((string?)e.Attribute("class"))?.Split(' ').Contains(cls, StringComparer.Ordinal) == true;
        Assert.Equal(12, svg.Descendants().Count(e => e.Name.LocalName == "polyline" && Has(e, "subject")));
        Assert.Single(svg.Descendants(), e => e.Name.LocalName == "polyline" && Has(e, "mean-profile"));
        Assert.Equal(2, svg.Descendants().Count(e => e.Name.LocalName == "line" && Has(e, "ci")));

        // Exact hand computation from the data (Doncaster and Davey 2007, model 6.3): the mean profile is
        // the mean of the 12 subjects at each level of B with its 95% t interval over subjects,
        // mean ± t(0.975; 11) sd/√12 (B means 10.3014916667 and 10.1249083333).
        var rows = Mixed.Split('\n', StringSplitOptions.RemoveEmptyEntries).Skip(1).Select(l => l.TrimEnd('\r').Split(',')).ToList();
        var t = MathNet.Numerics.Distributions.StudentT.InvCDF(0, 1, 11, 0.975);
        var parts = new List<string>();
        foreach (var level in new[] { "1", "2" })
        {
            var y = rows.Where(r => r[2] == level).Select(r => double.Parse(r[3], CultureInfo.InvariantCulture)).ToArray();
            var mean = y.Average();
            var half = t * Math.Sqrt(y.Sum(v => (v - mean) * (v - mean)) / 11 / 12);
            var n = StudyPress.Charts.NumberText.Default;
            parts.Add($"{level} {n.General(mean)} ({n.General(mean - half)} to {n.General(mean + half)})");
        }

        Assert.Equal(10.3014916667, rows.Where(r => r[2] == "1").Average(r => double.Parse(r[3], CultureInfo.InvariantCulture)), 9);
        Assert.Contains("Mean profile: " + string.Join(", ", parts) + ".", profiles.Chart.Description, StringComparison.Ordinal);

        // With a between factor: the interaction plot of B by A, one line per group.
        var interaction = Assert.Single(result.Figures, f => f.Figure.Type == "interaction").Figure;
        Assert.Contains("compare with the F test of A × B", interaction.Caption, StringComparison.Ordinal);
    }

    [Fact]
    public void MethodsText_NamesDesign_SphericityDecision_Correction_AndSubjectsAnalysed()
    {
        static string Visible(string html) => System.Net.WebUtility.HtmlDecode(System.Text.RegularExpressions.Regex.Replace(html, "<[^>]+>", string.Empty));
        using var run = new StudyRun().File("d.csv", Without(OneWay, "8,c,12")).Study(Study("subject, condition", "subject: subject\nwithin: condition") + "\n\n```methods text\n```\n");
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        var text = Visible(result.Html!);
        Assert.Contains("A repeated-measures analysis of variance with condition within subjects (subject, 7 complete subjects analysed, 1 incomplete left out) was run.", text, StringComparison.Ordinal);
        Assert.Contains("Sphericity was checked with Mauchly's test for each within-subject term with more than two levels; where it was rejected at α = 0.05, the Greenhouse–Geisser correction was read when its ε was below 0.75 and the Huynh–Feldt correction otherwise (condition: ", text, StringComparison.Ordinal);
        Assert.Contains("the mixed model (REML, Satterthwaite df) that keeps them was also reported", text, StringComparison.Ordinal);

        // Complete data: Mauchly p 0.0107 and GG ε 0.562 < 0.75 (exact recomputation, shared reference) — the text names GG.
        using var complete = new StudyRun().File("d.csv", OneWay).Study(Study("subject, condition", "subject: subject\nwithin: condition") + "\n\n```methods text\n```\n");
        var all = Visible(complete.Compile().Html!);
        Assert.Contains("(subject, 8 complete subjects analysed) was run.", all, StringComparison.Ordinal);
        Assert.Contains("the Huynh–Feldt correction otherwise (condition: Greenhouse–Geisser).", all, StringComparison.Ordinal);
    }

    [Fact]
    public void MissingMeasurement_FitClassical_FitsNoMixedModel()
    {
        var csv = Without(OneWay, "8,c,12");
        using var run = Run(csv, "subject, condition", "subject: subject\nwithin: condition\nfit: classical");
        var m = run.Manifest();
        Assert.Equal(7, m.Get("r", "subjects", null, "n"));
        Assert.Empty(m.Find("r", "anova_reml", null, "n"));
    }

    [Fact]
    public void Compare_HolmPairs()
    {
        // Exact hand computation: subject differences a − b are 0,−8,−3,−5,−5,−2,−5,−4 (mean −4, n = 8, df 7).
        using var run = Run(OneWay, "subject, condition", "subject: subject\nwithin: condition\ncompare: condition");
        var m = run.Manifest();
        var diff = m.Values.Single(v => v.GetProperty("test").GetString() == "holm" && v.GetProperty("stat").GetString() == "diff" && v.GetProperty("pair")[1].GetString() == "b");
        Assert.Equal(-4.0, diff.GetProperty("value").GetDouble(), 12);
    }

    [Fact]
    public void SimpleEffects_WhenInteractionSignificant()
    {
        // A:B p = 0.0287 < 0.05 (published 0.029): simple effects of B in each A group.
        using var run = Run(Mixed, "subject, A, B", "subject: subject\nwithin: B\nbetween: A\nlabels: per-group");
        var m = run.Manifest();
        Assert.Equal(3, m.Values.Count(v => v.GetProperty("test").GetString() == "simple_effects" && v.GetProperty("stat").GetString() == "f"));
    }

    /// <summary>
    /// Rutherford's one-way data with 3 × subject added to each subject's scores: only the subject
    /// stratum changes (its mean square becomes large, so every REML variance estimate is inside the
    /// parameter space; on the published data MS(subject) 2 is below MS(A × subject) 38/14 and REML
    /// puts the subject variance at zero), while the condition differences and the condition × subject
    /// stratum (SS 38 on 14 df, published) stay as published.
    /// </summary>
    private static string OneWayWithSubjectOffsets(bool dropSubject8C = false) =>
        string.Join("\n", OneWay.Split('\n', StringSplitOptions.RemoveEmptyEntries).Select((l, i) =>
        {
            if (i == 0)
            {
                return l;
            }

            var p = l.TrimEnd('\r').Split(',');
            var s = int.Parse(p[0], CultureInfo.InvariantCulture);
            return dropSubject8C && s == 8 && p[1] == "c" ? null : string.Create(CultureInfo.InvariantCulture, $"{s},{p[1]},{int.Parse(p[2], CultureInfo.InvariantCulture) + (3 * s)}");
        }).OfType<string>()) + "\n";

    private static string CompareStudy(string fit) => $"""
---
title: Mixed-model comparisons fixture
data:
  d: d.csv
response: y
factors: [subject, condition]
---

```repeated r
subject: subject
within: condition
fit: {fit}
compare: condition
```

```repeated c
subject: subject
within: condition
fit: classical
```

```marginal-means mm
of: c
compare: holm
```

```methods text
```
""";

    private static System.Text.Json.JsonElement PairValue(ManifestView m, string block, string test, string a, string b, string stat) =>
        Assert.Single(m.Values, v => v.GetProperty("block").GetString() == block && v.GetProperty("test").GetString() == test && v.GetProperty("stat").GetString() == stat
            && v.GetProperty("pair").ValueKind == System.Text.Json.JsonValueKind.Array && v.GetProperty("pair")[0].GetString() == a && v.GetProperty("pair")[1].GetString() == b).GetProperty("value");

    [Fact]
    public void FitReml_Compare_EqualsTheClassicalMarginalMeansPairs_OnCompleteBalancedData()
    {
        using var run = new StudyRun().File("d.csv", OneWayWithSubjectOffsets()).Study(CompareStudy("reml"));
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        var m = new ManifestView(result.ManifestJson!);

        // The REML fit is inside the parameter space: its F of condition is the published classical F.
        // Rutherford (2001) p. 72, published: F 20.6316 (the subject offsets leave the within stratum unchanged).
        Assert.Equal(20.6316, m.Get("r", "anova_reml", "condition", "f"), 4);
        Assert.Empty(m.Find("r", "holm", "condition", "diff"));

        // Exact hand computation: condition means a 6, b 10, c 11 (each plus the mean offset 13.5);
        // a difference of two conditions rests on the condition × subject stratum only,
        // SE = √(2 MS / n) = √(2 × (38/14) / 8) on 14 df (published SS 38 on 14 df).
        var se = Math.Sqrt(2 * (38.0 / 14) / 8);
        foreach (var (a, b, diff) in new[] { ("a", "b", -4.0), ("a", "c", -5.0), ("b", "c", -1.0) })
        {
            Assert.Equal(diff, PairValue(m, "r", "holm_reml", a, b, "diff").GetDouble(), 8);
            Assert.Equal(se, PairValue(m, "r", "holm_reml", a, b, "se").GetDouble(), 7);
            Assert.Equal(14, PairValue(m, "r", "holm_reml", a, b, "df").GetDouble(), 5);
            Assert.Equal(diff / se, PairValue(m, "r", "holm_reml", a, b, "statistic").GetDouble(), 6);

            // The classical route's marginal-means comparisons on the same error: the same numbers.
            foreach (var stat in new[] { "diff", "se", "df", "statistic", "p", "p_adj", "ci_low", "ci_high" })
            {
                var classical = PairValue(m, "mm", "holm", a, b, stat).GetDouble();
                Assert.True(Math.Abs(classical - PairValue(m, "r", "holm_reml", a, b, stat).GetDouble()) <= 1e-6 * Math.Max(1, Math.Abs(classical)), $"{a} − {b} {stat}");
            }
        }

        Assert.Contains("marginal means (REML, Satterthwaite df; Holm-adjusted; 8 subjects, 24 measurements)", result.Html, StringComparison.Ordinal);
    }

    [Fact]
    public void FitAuto_OneMeasurementRemoved_MixedModelComparisonsUseAllSubjects_BesideThePairedOnes()
    {
        // Subject 8 loses its condition c measurement: the paired tests use the 7 complete subjects,
        // the mixed model's comparisons all 8 subjects (23 measurements).
        using var run = new StudyRun().File("d.csv", OneWayWithSubjectOffsets(dropSubject8C: true)).Study(CompareStudy("auto"));
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        var m = new ManifestView(result.ManifestJson!);
        Assert.Equal(7, m.Get("r", "subjects", null, "n"));
        Assert.Equal(8, m.Get("r", "anova_reml", null, "n"));
        Assert.Equal(23, m.Get("r", "anova_reml", null, "n_total"));
        using var complete = new StudyRun().File("d.csv", OneWayWithSubjectOffsets()).Study(CompareStudy("reml"));
        var full = complete.Manifest();
        foreach (var (a, b) in new[] { ("a", "b"), ("a", "c"), ("b", "c") })
        {
            var reml = PairValue(m, "r", "holm_reml", a, b, "se").GetDouble();
            Assert.NotEqual(PairValue(m, "r", "holm", a, b, "se").GetDouble(), reml, 6);
            Assert.NotEqual(PairValue(full, "r", "holm_reml", a, b, "se").GetDouble(), reml, 6);
        }

        // Exact hand computation: the paired a − b of subjects 1-7 are 0, −8, −3, −5, −5, −2, −5 (mean −4).
        Assert.Equal(-4.0, PairValue(m, "r", "holm", "a", "b", "diff").GetDouble(), 10);
        Assert.Contains("8 subjects, 23 measurements)", result.Html, StringComparison.Ordinal);
        Assert.Contains("paired t tests on the 7 complete subjects", result.Html, StringComparison.Ordinal);
        Assert.Contains("same decision at α as the paired test", result.Html, StringComparison.Ordinal);
        Assert.Contains("The levels of condition were compared pairwise by paired t tests on the complete subjects and from the mixed model's estimated marginal means", result.Html, StringComparison.Ordinal);
    }

    [Fact]
    public void FitAuto_PairDecisionsDiffer_CautionNamesThePairs()
    {
        // Six more subjects measured under a and b only, each with a − b = +7 (against −4 on average for
        // the complete ones): the paired tests (8 complete subjects) reject every pair at 0.05, the
        // mixed model (14 subjects) none of them.
        var csv = OneWayWithSubjectOffsets() + string.Concat(Enumerable.Range(9, 6).Select(s => string.Create(CultureInfo.InvariantCulture, $"{s},a,{14 + (3 * s)}\n{s},b,{7 + (3 * s)}\n")));
        using var run = Run(csv, "subject, condition", "subject: subject\nwithin: condition\ncompare: condition");
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        var m = new ManifestView(result.ManifestJson!);
        var paired = m.Find("r", "holm", "condition", "p_adj").Select(v => v.GetProperty("value").GetDouble()).ToList();
        var reml = m.Find("r", "holm_reml", "condition", "p_adj").Select(v => v.GetProperty("value").GetDouble()).ToList();
        Assert.Equal(3, paired.Count);
        Assert.Equal(3, reml.Count);
        Assert.All(paired, p => Assert.True(p < 0.05));
        Assert.All(reml, p => Assert.True(p >= 0.05));
        Assert.Equal(14, m.Get("r", "anova_reml", null, "n"));
        Assert.Contains("the mixed model’s comparisons (every measurement) of condition reach different decisions for a − b, a − c, b − c".Replace("’", "&#39;", StringComparison.Ordinal), result.Html, StringComparison.Ordinal);
    }

    [Fact]
    public void FitAuto_TooFewCompleteSubjects_ComparisonsFromTheMixedModel()
    {
        // Subjects 1-7 lack condition c: no classical route, so the comparisons come from the mixed model alone.
        var csv = string.Join("\n", OneWay.Split('\n').Where(l => !(l.Contains(",c,", StringComparison.Ordinal) && !l.StartsWith("8,", StringComparison.Ordinal))));
        using var run = Run(csv, "subject, condition", "subject: subject\nwithin: condition\ncompare: condition\nadjust: bonferroni");
        var m = run.Manifest();
        Assert.Empty(m.Find("r", "bonferroni", "condition", "diff"));
        Assert.Equal(3, m.Values.Count(v => v.GetProperty("test").GetString() == "bonferroni_reml" && v.GetProperty("stat").GetString() == "p_adj"));
    }

    [Theory]
    [InlineData("within: condition", "SP0202", 8)]
    [InlineData("subject: subject\nwithin: [condition, subject]", "SP0264", 10)]
    [InlineData("subject: subject\nwithin: condition\ncompare: conditon", "SP0265", 11)]
    [InlineData("subject: subject\nwithin: condition\nadjust: holm", "SP0266", 11)]
    [InlineData("subject: subject\nwithin: condition\nfactors: [condition]", "SP0263", 11)]
    [InlineData("subject: subjct\nwithin: condition", "SP0216", 9)]
    [InlineData("subject: subject\nwithin: condition\ncorrection: box", "SP0209", 11)]
    public void OneMistake_OneMessage_AtTheKey(string keys, string code, int line)
    {
        using var run = Run(OneWay, "subject, condition", keys);
        run.SingleError(code, line);
    }

    [Fact]
    public void SubjectUnderTwoGroups_IsOneErrorAtBetween()
    {
        // Model 6.3 numbers subjects 1-4 in every group: read as unique labels, subject 1 is in three groups.
        using var run = Run(Mixed, "subject, A, B", "subject: subject\nwithin: B\nbetween: A");
        var d = run.SingleError("SP0511", 11);
        Assert.Contains("labels: per-group", d.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void WithinFactorThatDoesNotVary_IsOneErrorAtIt()
    {
        // Unique labels (group × 10 + number): A is constant within each subject, so it is a between factor.
        var lines = Mixed.Split('\n', StringSplitOptions.RemoveEmptyEntries);
        var csv = lines[0] + "\n" + string.Join("\n", lines.Skip(1).Select(l =>
        {
            var p = l.Split(',');
            return string.Create(CultureInfo.InvariantCulture, $"{(int.Parse(p[1], CultureInfo.InvariantCulture) * 10) + int.Parse(p[0], CultureInfo.InvariantCulture)},{p[1]},{p[2]},{p[3]}");
        })) + "\n";
        using var run = Run(csv, "subject, A, B", "subject: subject\nwithin: [B, A]");
        var d = run.SingleError("SP0513", 10);
        Assert.Equal(12, d.Location.Column);
    }

    [Fact]
    public void SubjectEqualToWithinFactor_IsOneErrorAtTheSecondNaming()
    {
        using var run = Run(OneWay, "subject, condition", "subject: condition\nwithin: condition");
        var d = run.SingleError("SP0264", 10);
        Assert.Contains("already the block's 'subject'", d.Message, StringComparison.Ordinal);
    }

    /// <summary>Rutherford's one-way data written wide: one row per subject, one column per condition.</summary>
    private const string WideOneWay = "subject,a,b,c\n1,7,7,8\n2,3,11,14\n3,6,9,10\n4,6,11,11\n5,5,10,12\n6,8,10,10\n7,6,11,11\n8,7,11,12\n";

    private static StudyRun Wide(string csv, string keys) => new StudyRun().File("d.csv", csv).Study(Study("subject", keys).Replace("response: y", "response: score", StringComparison.Ordinal));

    [Fact]
    public void WideData_PublishedTable()
    {
        // Rutherford (2001) p. 72, published: SS(A) 112, F 20.6316 — the same data as long format.
        using var run = Wide(WideOneWay, "subject: subject\nwithin: condition\ncolumns: [a, b, c]");
        var m = run.Manifest();
        Assert.Equal(112.0, m.Get("r", "anova", "condition", "ss"), 4);
        Assert.Equal(20.6316, m.Get("r", "anova", "condition", "f"), 4);
        Assert.Equal(0.220683287165, m.Get("r", "mauchly", "condition", "w"), 10);
    }

    [Fact]
    public void WideData_LevelsFromAMapping_AndAnEmptyCellDropsTheSubject()
    {
        using var run = Wide(WideOneWay.Replace("8,7,11,12", "8,7,11,", StringComparison.Ordinal), "subject: subject\nwithin: condition\ncolumns: {a: first, b: second, c: third}\ncompare: condition");
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        var m = new ManifestView(result.ManifestJson!);
        Assert.Equal(1, m.Get("r", "subjects", null, "subjects_dropped"));
        Assert.Equal(8, m.Get("r", "anova_reml", null, "n"));
        Assert.Contains("subject 8 was dropped from the classical analysis: incomplete: no measurement for condition third", result.Html, StringComparison.Ordinal);
        Assert.Single(m.Values, v => v.GetProperty("test").GetString() == "holm" && v.GetProperty("stat").GetString() == "diff" && v.GetProperty("pair")[0].GetString() == "first" && v.GetProperty("pair")[1].GetString() == "second");
    }

    [Theory]
    [InlineData("subject: subject\nwithin: condition\ncolumns: [a, b, cc]", "SP0308", 11, 16)]
    [InlineData("subject: subject\nwithin: condition\ncolumns: [a]", "SP0267", 11, 0)]
    [InlineData("subject: subject\nwithin: condition\ncolumns: [a, b, a]", "SP0267", 11, 16)]
    [InlineData("subject: subject\nwithin: [condition, time]\ncolumns: [a, b, c]", "SP0268", 10, 20)]
    public void WideData_OneMistake_OneMessage_AtTheKey(string keys, string code, int line, int column)
    {
        using var run = Wide(WideOneWay, keys);
        var d = run.SingleError(code, line);
        Assert.Equal(column, d.Location.Column);
    }

    [Fact]
    public void WideData_BadCell_IsOneErrorAtTheCell()
    {
        using var run = Wide(WideOneWay.Replace("3,6,9,10", "3,6,x,10", StringComparison.Ordinal), "subject: subject\nwithin: condition\ncolumns: [a, b, c]");
        var d = Assert.Single(run.Compile().Diagnostics);
        Assert.EndsWith("d.csv", d.Location.Path, StringComparison.Ordinal);
        Assert.Equal(3, d.Location.Line);
        Assert.Contains("'x' is not a number in column 'b'", d.Message, StringComparison.Ordinal);
    }

    /// <summary>3000 subjects × 3 conditions (deterministic values), optionally without subject 1's third measurement.</summary>
    // 600 subjects × 2 × 2 conditions: the mixed model absorbs subject × A and keeps subject and
    // subject × B dense, 600 × 3 + 4 = 1804 columns, beyond its bound of 1000.
    private static string Many(bool dropOne)
    {
        var sb = new System.Text.StringBuilder("subject,a,b,y\n");
        for (var s = 1; s <= 600; s++)
        {
            for (var l = 0; l < 4; l++)
            {
                if (!(dropOne && s == 1 && l == 3))
                {
                    sb.Append(CultureInfo.InvariantCulture, $"{s},{(char)('a' + (l / 2))},{(char)('x' + (l % 2))},{((s * 7) + (l * 3)) % 11 + l}\n");
                }
            }
        }

        return sb.ToString();
    }

    [Fact]
    public void MixedModelTooLarge_Reml_IsOneErrorAtFit()
    {
        // Refused before anything is built.
        using var run = Run(Many(false), "subject, a, b", "subject: subject\nwithin: [a, b]\nfit: reml");
        var d = run.SingleError("SP0515", 11);
        Assert.Contains("keeps 1804 columns dense, more than the 1000", d.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void MixedModelTooLarge_Auto_ClassicalRouteStands_AndSaysWhy()
    {
        using var run = Run(Many(true), "subject, a, b", "subject: subject\nwithin: [a, b]");
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        var m = new ManifestView(result.ManifestJson!);
        Assert.Equal(599, m.Get("r", "subjects", null, "n"));
        Assert.Empty(m.Find("r", "anova_reml", null, "n"));
        Assert.Contains("The mixed-model route was not fitted: 2399 measurements of 600 subjects need a mixed model that keeps 1804 columns dense", result.Html, StringComparison.Ordinal);
        Assert.Contains("the first 200 of 599 complete subjects, in file order", result.Html, StringComparison.Ordinal);
    }

    // 3000 subjects × 3 conditions (9000 measurements): refused before (a dense working matrix of
    // 12000 × 3004 numbers, over 2^22); the REML fit now absorbs the subjects and keeps the 3
    // fixed-effect columns dense.
    [Fact]
    public void ThousandsOfSubjects_Reml_Fits()
    {
        var sb = new System.Text.StringBuilder("subject,condition,y\n");
        for (var s = 1; s <= 3000; s++)
        {
            for (var l = 0; l < 3; l++)
            {
                sb.Append(CultureInfo.InvariantCulture, $"{s},{(char)('a' + l)},{((s * 7) + (l * 3)) % 11 + l}\n");
            }
        }

        using var run = Run(sb.ToString(), "subject, condition", "subject: subject\nwithin: condition\nfit: reml");
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        var m = new ManifestView(result.ManifestJson!);
        Assert.Equal(3000, m.Get("r", "anova_reml", null, "n")); // subjects
    }

    [Fact]
    public void FitReml_MixedRouteOnly()
    {
        using var run = Run(OneWay, "subject, condition", "subject: subject\nwithin: condition\nfit: reml");
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        var m = new ManifestView(result.ManifestJson!);
        Assert.Equal(8, m.Get("r", "anova_reml", null, "n"));
        Assert.Equal(24, m.Get("r", "anova_reml", null, "n_total"));
        Assert.Equal(2, m.Get("r", "anova_reml", "condition", "df"));
        Assert.Empty(m.Find("r", "anova", "condition", "f"));
        Assert.Empty(m.Find("r", "mauchly", "condition", "w"));
    }

    [Fact]
    public void AutoFit_TooFewCompleteSubjects_FallsBackToTheMixedModel()
    {
        // Subjects 1-7 lack condition c: one complete subject leaves the classical route no error df.
        var csv = string.Join("\n", OneWay.Split('\n').Where(l => !(l.Contains(",c,", StringComparison.Ordinal) && !l.StartsWith("8,", StringComparison.Ordinal))));
        using var run = Run(csv, "subject, condition", "subject: subject\nwithin: condition");
        var result = run.Compile();
        Assert.True(result.Succeeded, string.Join("\n", result.Diagnostics));
        var m = new ManifestView(result.ManifestJson!);
        Assert.Equal(1, m.Get("r", "subjects", null, "n"));
        Assert.Equal(7, m.Get("r", "subjects", null, "subjects_dropped"));
        Assert.Equal(8, m.Get("r", "anova_reml", null, "n"));
        Assert.Equal(17, m.Get("r", "anova_reml", null, "n_total"));
        Assert.Empty(m.Find("r", "anova", "condition", "f"));
    }

    [Fact]
    public void FitClassical_TooFewCompleteSubjects_IsOneErrorAtSubject()
    {
        var csv = string.Join("\n", OneWay.Split('\n').Where(l => !(l.Contains(",c,", StringComparison.Ordinal) && !l.StartsWith("8,", StringComparison.Ordinal))));
        using var run = Run(csv, "subject, condition", "subject: subject\nwithin: condition\nfit: classical");
        var d = run.SingleError("SP0514", 9);
        Assert.Contains("'subject' has 1 complete and 7 incomplete", d.Message, StringComparison.Ordinal);
    }
}
