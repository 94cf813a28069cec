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

    [Theory]
    [InlineData("within: condition", "SP0202", 8)]
    [InlineData("subject: subject\nwithin: [condition, subject]", "SP0264", 10)]
    [InlineData("subject: subject\nwithin: condition\ncompare: conditon", "SP0265", 11)]
    [InlineData("subject: subject\nwithin: condition\nadjust: holm", "SP0266", 11)]
    [InlineData("subject: subject\nwithin: condition\nfactors: [condition]", "SP0263", 11)]
    [InlineData("subject: subjct\nwithin: condition", "SP0216", 9)]
    [InlineData("subject: subject\nwithin: condition\ncorrection: box", "SP0209", 11)]
    [InlineData("subject: subject\nwithin: condition\nfit: reml\ncompare: condition", "SP0269", 12)]
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
