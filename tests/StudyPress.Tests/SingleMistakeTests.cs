using StudyPress.Tests.Support;

namespace StudyPress.Tests;

/// <summary>
/// One mistake, one message. Each case makes a single mistake of the kind study authors make
/// (a typo in a header key, block key, kind, factor, level, column, reference path or function;
/// an indentation or quoting slip; a file with another delimiter) in an otherwise valid study,
/// and expects exactly one diagnostic, at the place the author must edit, with the fix named.
/// The study and its data are a test fixture (not measurements); only the messages matter here.
/// </summary>
[Collection("cli")]
public sealed class SingleMistakeTests
{
    internal const string BaseStudy = """
---
title: Fertiliser and grain yield in strip plots
alpha: 0.05
data:
  trial:
    path: data/trial.csv
response: yield_kg
factors:
  fertiliser:
    levels: [control, nitrate, sulphur-plus]
    label: Fertiliser
  site:
    column: field
order: run
---

# Design

Eighteen plots, six per fertiliser, in random order.

```summary groups
factors: [fertiliser]
```

```anova main
factors: [fertiliser]
welch: auto
```

```assumptions checks
of: main
```

```posthoc pairs
of: main
method: auto
```

```power plan
groups: 3
effect: 0.4
target: 0.9
```

The fertiliser effect was F = [=main.fertiliser.f] ([=main.fertiliser, result]).

```methods
```
""";

    internal const string BaseData = """
run,field,fertiliser,yield_kg
1,north,control,4.1
2,south,nitrate,5.2
3,north,sulphur-plus,5.9
4,south,nitrate,5.6
5,north,control,4.4
6,south,sulphur-plus,6.3
7,north,sulphur-plus,5.7
8,south,control,3.9
9,north,nitrate,4.9
10,south,control,4.6
11,north,nitrate,5.4
12,south,sulphur-plus,6.1
13,north,nitrate,5.8
14,south,sulphur-plus,6.6
15,north,control,4.2
16,south,sulphur-plus,5.8
17,north,control,4.0
18,south,nitrate,5.1
""";

    /// <summary>name, file edited, text replaced (once), replacement, the one expected diagnostic.</summary>
    public static TheoryData<string, string, string, string, string> Cases() => new()
    {
        { "header key 'title' misspelt", "study.md", "title: Fertiliser", "titel: Fertiliser", "study.md:2:1: error: unknown key 'titel' in the header; did you mean 'title'?" },
        { "header key 'alpha' misspelt", "study.md", "alpha: 0.05", "alpah: 0.05", "study.md:3:1: error: unknown key 'alpah' in the header; did you mean 'alpha'?" },
        { "header key 'data' misspelt", "study.md", "data:\n  trial:", "dta:\n  trial:", "study.md:4:1: error: unknown key 'dta' in the header; did you mean 'data'?" },
        { "header key 'response' misspelt", "study.md", "response: yield_kg", "respons: yield_kg", "study.md:7:1: error: unknown key 'respons' in the header; did you mean 'response'?" },
        { "header key 'factors' misspelt", "study.md", "factors:\n  fertiliser:", "factor:\n  fertiliser:", "study.md:8:1: error: unknown key 'factor' in the header; did you mean 'factors'?" },
        { "header key 'order' misspelt", "study.md", "order: run", "oder: run", "study.md:14:1: error: unknown key 'oder' in the header; did you mean 'order'?" },
        { "dataset key 'path' misspelt", "study.md", "    path: data/trial.csv", "    pth: data/trial.csv", "study.md:6:5: error: unknown key 'pth' in dataset 'trial'; did you mean 'path'?" },
        { "factor key 'levels' misspelt", "study.md", "    levels: [control", "    level: [control", "study.md:10:5: error: unknown key 'level' in factor 'fertiliser'; did you mean 'levels'?" },
        { "factor key 'label' misspelt", "study.md", "    label: Fertiliser", "    lable: Fertiliser", "study.md:11:5: error: unknown key 'lable' in factor 'fertiliser'; did you mean 'label'?" },
        { "factor key 'column' misspelt", "study.md", "    column: field", "    colum: field", "study.md:13:5: error: unknown key 'colum' in factor 'site'; did you mean 'column'?" },
        { "alpha not a number", "study.md", "alpha: 0.05", "alpha: 5%", "study.md:3:8: error: alpha must be a number strictly between 0 and 1, not '5%'" },
        { "title with ': ' unquoted", "study.md", "title: Fertiliser and grain", "title: Fertiliser: grain", "study.md:2:8: error: quote the value of 'title': it contains ': ' (write title: \"Fertiliser: grain yield in strip plots\")" },
        { "no space after colon", "study.md", "alpha: 0.05", "alpha:0.05", "study.md:3:1: error: put a space after the ':' of 'alpha' (write 'alpha: 0.05')" },
        { "dataset not indented under data", "study.md", "  trial:\n    path: data/trial.csv", "trial:\n  path: data/trial.csv", "study.md:5:1: error: indent 'trial' under 'data:': it belongs to 'data', so it must start further right than 'data' does" },
        { "dataset path not indented under its name", "study.md", "    path: data/trial.csv", "  path: data/trial.csv", "study.md:6:3: error: indent 'path' under 'trial:': it belongs to 'trial', so it must start further right than 'trial' does" },
        { "factor levels not indented", "study.md", "    levels: [control", "  levels: [control", "study.md:11:5: error: 'label' is indented further than the line above, which does not end with ':'; line it up with the keys above it (column 3)" },
        { "key indented too far", "study.md", "order: run", "  order: run", "study.md:14:3: error: 'order' is a header key, but it is indented under 'factors:'; start it in column 1" },
        { "levels written as one text", "study.md", "levels: [control, nitrate, sulphur-plus]", "levels: \"control, nitrate, sulphur-plus\"", "study.md:10:13: error: 'levels' is a list, but this is one text; write it as [control, nitrate, sulphur-plus]" },
        { "unclosed levels bracket", "study.md", "sulphur-plus]", "sulphur-plus", "study.md:10:13: error: invalid YAML: this '[' is not closed with ']'" },
        { "unclosed quote in title", "study.md", "title: Fertiliser and grain yield in strip plots", "title: \"Fertiliser and grain yield in strip plots", "study.md:2:8: error: invalid YAML: this quoted string is not closed" },
        { "tab indentation", "study.md", "    label: Fertiliser", "\tlabel: Fertiliser", "study.md:11:1: error: a tab is used for indentation; YAML needs spaces" },
        { "duplicate header key", "study.md", "order: run", "order: run\nalpha: 0.01", "study.md:15:1: error: duplicate key 'alpha' (first given on line 3)" },
        { "data file name misspelt", "study.md", "path: data/trial.csv", "path: data/trail.csv", "study.md:6:11: error: data file 'data/trail.csv' not found" },
        { "response column misspelt", "study.md", "response: yield_kg", "response: yeild_kg", "study.md:7:11: error: column 'yeild_kg' is not in 'data/trial.csv'; did you mean 'yield_kg'?" },
        { "factor column misspelt", "study.md", "    column: field", "    column: fields", "study.md:13:13: error: column 'fields' is not in 'data/trial.csv'; did you mean 'field'?" },
        { "factor named after a missing column", "study.md", "  fertiliser:\n    levels", "  fertilizer:\n    levels", "study.md:22:11: error: unknown factor 'fertiliser'; did you mean 'fertilizer'?" },
        { "order column misspelt", "study.md", "order: run", "order: runs", "study.md:14:8: error: column 'runs' is not in 'data/trial.csv'; did you mean 'run'?" },
        { "header level misspelt", "study.md", "sulphur-plus]", "sulfur-plus]", "study.md:10:32: error: level 'sulfur-plus' of factor 'fertiliser' declared here has no rows; the data have 'sulphur-plus' (6 rows): correct the spelling here or in the data" },
        { "data level misspelt in one row", "data/trial.csv", "3,north,sulphur-plus,5.9", "3,north,sulphur-pls,5.9", "data/trial.csv:4:9: error: 'sulphur-pls' is not a declared level of factor 'fertiliser'; did you mean 'sulphur-plus'?" },
        { "semicolon-separated file", "special:semicolons", "", "", "study.md:6:11: error: the columns of dataset 'trial' are separated by semicolons (';'), not commas (','); add 'delimiter: \";\"' under the dataset" },
        { "decimal commas in a semicolon file", "special:decimalcommas", "", "", "data/trial.csv:2:17: error: '4,1' is not a number in column 'yield_kg' (18 such cells in this file); if the file uses decimal commas, set 'decimal: \",\"' (and a ';' delimiter) for this dataset" },
        { "a text column named as response", "study.md", "response: yield_kg", "response: field", "data/trial.csv:2:3: error: 'north' is not a number in column 'field'; 17 more cells in this column have the same problem" },
        { "one cell not a number", "data/trial.csv", "3,north,sulphur-plus,5.9", "3,north,sulphur-plus,5.9kg", "data/trial.csv:4:22: error: '5.9kg' is not a number in column 'yield_kg'" },
        { "block kind misspelt", "study.md", "```anova main", "```anvoa main", "study.md:25:4: error: unknown analysis kind 'anvoa'; did you mean 'anova'?" },
        { "block kind misspelt (summary)", "study.md", "```summary groups", "```sumary groups", "study.md:21:4: error: unknown analysis kind 'sumary'; did you mean 'summary'?" },
        { "block key misspelt", "study.md", "welch: auto", "welsh: auto", "study.md:27:1: error: unknown key 'welsh' in the anova block; did you mean 'welch'?" },
        { "block choice misspelt", "study.md", "method: auto", "method: tukee", "study.md:36:9: error: 'method' must be one of auto, tukey, games-howell, holm, bonferroni, dunnett, not 'tukee'; did you mean 'tukey'?" },
        { "factor misspelt in a block", "study.md", "```anova main\nfactors: [fertiliser]", "```anova main\nfactors: [fertilizer]", "study.md:26:11: error: unknown factor 'fertilizer'; did you mean 'fertiliser'?" },
        { "of names a misspelt block", "study.md", "```assumptions checks\nof: main", "```assumptions checks\nof: mian", "study.md:31:5: error: no anova block with id 'mian' above this block; did you mean 'main'?" },
        { "block body mis-indented", "study.md", "welch: auto", "  welch: auto\nss-type: 2", "study.md:27:3: error: 'welch' is indented further than the line above, which does not end with ':'; line it up with the keys above it (column 1)" },
        { "analysis fence not closed", "study.md", "welch: auto\n```", "welch: auto", "study.md:25:1: error: the anova block is not closed; add a line ``` after its body" },
        { "duplicate block id", "study.md", "```posthoc pairs", "```posthoc checks", "study.md:34:12: error: duplicate block id 'checks' (first used on line 30)" },
        { "power key misspelt", "study.md", "target: 0.9", "traget: 0.9", "study.md:42:1: error: unknown key 'traget' in the power block; did you mean 'target'?" },
        { "block factors written as text", "study.md", "```anova main\nfactors: [fertiliser]", "```anova main\nfactors: \"fertiliser, site\"", "study.md:26:10: error: 'factors' is a list, but this is one text; write it as [fertiliser, site]" },
        { "reference statistic misspelt", "study.md", "[=main.fertiliser.f]", "[=main.fertiliser.fstat]", "study.md:45:31: error: unknown reference 'main.fertiliser.fstat'; did you mean 'main.fertiliser.f'?" },
        { "reference term misspelt", "study.md", "[=main.fertiliser.f]", "[=main.fertilizer.f]", "study.md:45:31: error: unknown reference 'main.fertilizer.f'; did you mean 'main.fertiliser.f'?" },
        { "reference block misspelt", "study.md", "[=main.fertiliser.f]", "[=mian.fertiliser.f]", "study.md:45:31: error: no block with id 'mian'; did you mean 'main'?" },
        { "reference formatting misspelt", "study.md", "[=main.fertiliser, result]", "[=main.fertiliser, reslt]", "study.md:45:53: error: unknown formatting 'reslt'; did you mean 'result'? (known: result, N decimals, no leading zero, as percent, as df, number only)" },
        { "formatting applied to a term", "study.md", "[=main.fertiliser.f]", "[=main.fertiliser, 2 decimals]", "study.md:45:31: error: '2 decimals' formats one value, but 'main.fertiliser' names a term; add the statistic to the path, for example [=main.anova.fertiliser.ss, 2 decimals]" },
        { "reference not closed", "study.md", "[=main.fertiliser.f]", "[=main.fertiliser.f", "study.md:45:31: error: a reference '[=' is not closed with ']' (a reference is at most 200 characters)" },
        { "reference in the old brace form", "study.md", "[=main.fertiliser.f]", "{{ main.fertiliser.f }}", "study.md:45:31: error: '{{ main.fertiliser.f }}' is not a reference form; write [=main.fertiliser.f]" },
        { "old brace form with a filter", "study.md", "[=main.fertiliser, result]", "{{ main.fertiliser | result }}", "study.md:45:53: error: '{{ main.fertiliser | result }}' is not a reference form; write [=main.fertiliser, result]" },
        { "reference starting a line with a colon", "study.md", "The fertiliser effect was F = [=main.fertiliser.f] ([=main.fertiliser, result]).", "[=main.fertiliser.f]: fertiliser", "study.md:45:1: error: '[=main.fertiliser.f]:' at the start of a line is read as a Markdown link definition, so the line would not be shown; put a word before the reference or drop the ':' after it" },
        { "old report key digits", "study.md", "order: run\n", "order: run\nreport:\n  digits: 4\n", "study.md:16:3: error: 'digits' is not a report key; write 'significant-digits' (the significant digits shown for other numbers)" },
        { "old report key p-digits", "study.md", "order: run\n", "order: run\nreport:\n  p-digits: 4\n", "study.md:16:3: error: 'p-digits' is not a report key; write 'p-decimals' (the decimals shown for p-values)" },
    };

    [Fact]
    public void BaseStudy_Builds()
    {
        using var run = new StudyRun().Study(BaseStudy).File("data/trial.csv", BaseData);
        var (exit, _, err) = run.Cli("build", "study.md");
        Assert.True(exit == 0, err);
    }

    [Theory]
    [MemberData(nameof(Cases))]
    public void SingleMistake_GivesExactlyOneMessageAtTheFix(string name, string file, string old, string replacement, string expected)
    {
        var study = BaseStudy;
        var data = BaseData;
        switch (file)
        {
            case "special:semicolons":
                data = data.Replace(',', ';');
                break;
            case "special:decimalcommas":
                study = study.Replace("    path: data/trial.csv", "    path: data/trial.csv\n    delimiter: \";\"", StringComparison.Ordinal);
                data = data.Replace(',', ';').Replace('.', ',');
                break;
            case "study.md":
                Assert.Contains(old, study, StringComparison.Ordinal);
                study = ReplaceFirst(study, old, replacement);
                break;
            default:
                Assert.Contains(old, data, StringComparison.Ordinal);
                data = ReplaceFirst(data, old, replacement);
                break;
        }

        using var run = new StudyRun().Study(study).File("data/trial.csv", data);
        DiagnosticsTests.AssertRejected(run, name, expected);
    }

    [Fact]
    public void PowerOfATwoFactorAnova_WithoutFactorOrSize_BothMistakesAtOnce()
    {
        // Two mistakes, two messages, in one run: the power block's 'of' names an anova of two
        // factors without saying which ('factor'), and gives neither 'n' nor 'target'. The factor
        // choice used to be reported only after the missing size was mended.
        var study = BaseStudy.Replace("factors: [fertiliser]\nwelch: auto", "factors: [fertiliser, site]", StringComparison.Ordinal)
            .Replace("groups: 3\neffect: 0.4\ntarget: 0.9", "of: main", StringComparison.Ordinal)
            .Replace("method: auto", "factor: fertiliser\nmethod: auto", StringComparison.Ordinal);
        using var run = new StudyRun().Study(study).File("data/trial.csv", BaseData);
        var result = run.Compile();
        Assert.False(result.Succeeded);
        Assert.Equal(
            ["SP0235", "SP0238"],
            result.Diagnostics.Select(d => d.Code).Order(StringComparer.Ordinal).ToArray());
        Assert.All(result.Diagnostics, d => Assert.Equal(result.Diagnostics[0].Location.Line, d.Location.Line));
    }

    public static TheoryData<string, string> FollowUpBlocks() => new()
    {
        { "posthoc", "```posthoc pairs\nof: main\nmethod: auto\n```" },
        { "contrasts", "```contrasts pairs\nof: main\ncompare:\n  nitrate vs control: {nitrate: 1, control: -1}\n```" },
        { "equivalence", "```equivalence pairs\nof: main\npair: [nitrate, control]\nmargin: 0.5\n```" },
    };

    [Theory]
    [MemberData(nameof(FollowUpBlocks))]
    public void FollowUpOfATwoFactorAnova_WithoutFactor_ReportedWithAMistakeElsewhere(string kind, string block)
    {
        // Two mistakes, two messages, in one run: a follow-up block of an anova of two factors
        // does not say which factor it compares, and the power block misspells a key. The factor
        // choice used to be found only when evaluating, after the misspelt key was mended.
        var study = BaseStudy.Replace("factors: [fertiliser]\nwelch: auto", "factors: [fertiliser, site]", StringComparison.Ordinal)
            .Replace("```posthoc pairs\nof: main\nmethod: auto\n```", block, StringComparison.Ordinal)
            .Replace("target: 0.9", "traget: 0.9", StringComparison.Ordinal);
        using var run = new StudyRun().Study(study).File("data/trial.csv", BaseData);
        var result = run.Compile();
        Assert.False(result.Succeeded);
        Assert.Equal(["SP0201", "SP0235"], result.Diagnostics.Select(d => d.Code).Order(StringComparer.Ordinal).ToArray());
        var choice = result.Diagnostics.Single(d => d.Code == "SP0235");
        Assert.Equal(LineOf(study, "```" + kind + " pairs"), choice.Location.Line);
    }

    [Theory]
    [MemberData(nameof(FollowUpBlocks))]
    public void FollowUpWithAFactorTheAnovaLacks_ReportedAtTheNameWithAMistakeElsewhere(string kind, string block)
    {
        // 'factor: fertilizer' (the anova's factor is 'fertiliser') is reported at the name, with
        // the suggestion, in the same run as the power block's misspelt key.
        var study = BaseStudy.Replace("factors: [fertiliser]\nwelch: auto", "factors: [fertiliser, site]", StringComparison.Ordinal)
            .Replace("```posthoc pairs\nof: main\nmethod: auto\n```", block.Replace("of: main\n", "of: main\nfactor: fertilizer\n", StringComparison.Ordinal), StringComparison.Ordinal)
            .Replace("target: 0.9", "traget: 0.9", StringComparison.Ordinal);
        using var run = new StudyRun().Study(study).File("data/trial.csv", BaseData);
        var result = run.Compile();
        Assert.False(result.Succeeded);
        Assert.Equal(["SP0201", "SP0234"], result.Diagnostics.Select(d => d.Code).Order(StringComparer.Ordinal).ToArray());
        var name = result.Diagnostics.Single(d => d.Code == "SP0234");
        Assert.Equal(LineOf(study, "factor: fertilizer"), name.Location.Line);
        Assert.Contains("did you mean 'fertiliser'?", name.Message, StringComparison.Ordinal);
        Assert.Contains(kind, study, StringComparison.Ordinal);
    }

    [Fact]
    public void PowerWithAFactorTheAnovaLacks_IsNamedAtTheFactor()
    {
        // The power block's 'factor' naming no factor of the anova was reported as "say which
        // one" at the block; it is now the unknown name, at the name, with the suggestion.
        var study = BaseStudy.Replace("factors: [fertiliser]\nwelch: auto", "factors: [fertiliser, site]", StringComparison.Ordinal)
            .Replace("groups: 3\neffect: 0.4\ntarget: 0.9", "of: main\nfactor: fertilizer\ntarget: 0.9", StringComparison.Ordinal)
            .Replace("method: auto", "factor: fertiliser\nmethod: auto", StringComparison.Ordinal);
        using var run = new StudyRun().Study(study).File("data/trial.csv", BaseData);
        var result = run.Compile();
        var d = Assert.Single(result.Diagnostics);
        Assert.Equal("SP0234", d.Code);
        Assert.Equal(LineOf(study, "factor: fertilizer"), d.Location.Line);
        Assert.Contains("did you mean 'fertiliser'?", d.Message, StringComparison.Ordinal);
    }

    /// <summary>The 0-based line of the first line of <paramref name="text"/> starting with <paramref name="start"/>.</summary>
    private static int LineOf(string text, string start) =>
        text.Split('\n').Select((l, i) => (l, i)).First(p => p.l.StartsWith(start, StringComparison.Ordinal)).i;

    [Fact]
    public void NumericLevels_MatchCellsAsNumbers()
    {
        // Levels declared as 2.0 and 18.00 match cells 2 and 18.
        var study = ReplaceFirst(BaseStudy, "  site:\n    column: field", "  site:\n    column: field\n  plot:\n    column: run\n    levels: [1, 2.0, 3, 4, 5, 6, 7, 8, 9, 10, 11, 12, 13, 14, 15, 16, 17, 18.00]");
        using var run = new StudyRun().Study(study).File("data/trial.csv", BaseData);
        var (exit, _, err) = run.Cli("build", "study.md");
        Assert.True(exit == 0, err);
    }

    [Fact]
    public void SeveralBadReferencesOnOneLine_EachReported()
    {
        var study = ReplaceFirst(BaseStudy, "[=main.fertiliser.f] ([=main.fertiliser, result])", "[=main.fertilizer.f] ([=mian.fertiliser, result])");
        using var run = new StudyRun().Study(study).File("data/trial.csv", BaseData);
        DiagnosticsTests.AssertRejected(
            run,
            "two bad references",
            "study.md:45:31: error: unknown reference 'main.fertilizer.f'; did you mean 'main.fertiliser.f'?\nstudy.md:45:53: error: no block with id 'mian'; did you mean 'main'?");
    }

    [Fact]
    public void DraftWithoutBlocks_BuildsWithOneWarning()
    {
        var study = BaseStudy[..BaseStudy.IndexOf("```summary", StringComparison.Ordinal)];
        using var run = new StudyRun().Study(study).File("data/trial.csv", BaseData);
        var (exit, _, err) = run.Cli("build", "study.md");
        Assert.Equal(0, exit);
        Assert.Equal("study.md:15:1: warning: the study has no analysis blocks yet, so the report shows only its text and data; add one after the header, for example a fenced block ```summary```", err.Trim());
        Assert.True(File.Exists(run.ReportPath));
    }

    private static string ReplaceFirst(string text, string old, string replacement)
    {
        var at = text.IndexOf(old, StringComparison.Ordinal);
        Assert.True(at >= 0, $"fixture text not found: {old}");
        return text[..at] + replacement + text[(at + old.Length)..];
    }
}
