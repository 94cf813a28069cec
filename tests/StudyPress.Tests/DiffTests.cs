using System.Diagnostics;
using System.Globalization;
using System.Text.Json;
using StudyPress.Cli;
using StudyPress.Comparison;
using StudyPress.Diagnostics;
using StudyPress.Tests.Support;

namespace StudyPress.Tests;

/// <summary>
/// <c>studypress diff</c>: the spray-nozzle example copied twice (old and new), the new copy edited
/// the ways users edit data, both compiled in memory, and the comparison checked. The expected
/// display texts below are what the report itself shows for those values (read from the report,
/// not from a statistics reference): these tests check the comparison, not the statistics.
/// </summary>
[Collection("cli")]
public sealed class DiffTests
{
    private const string Csv = "data/coating.csv";

    /// <summary>A run folder holding old/ and new/ copies of the spray-nozzle example.</summary>
    private static StudyRun Pair()
    {
        var run = new StudyRun();
        var example = Path.Combine(Repository.Root, "examples", "spray-nozzles");
        foreach (var side in new[] { "old", "new" })
        {
            run.File(side + "/study.md", File.ReadAllText(Path.Combine(example, "study.md")));
            run.File(side + "/" + Csv, File.ReadAllText(Path.Combine(example, "data", "coating.csv")));
        }

        return run;
    }

    private static string NewCsv(StudyRun run) => Path.Combine(run.Folder, "new", Csv);

    private static void EditRows(StudyRun run, Func<string[], string[]?> edit)
    {
        var lines = File.ReadAllLines(NewCsv(run));
        var result = new List<string> { lines[0] };
        foreach (var line in lines.Skip(1))
        {
            if (edit(line.Split(',')) is { } fields)
            {
                result.Add(string.Join(',', fields));
            }
        }

        File.WriteAllText(NewCsv(run), string.Join('\n', result) + "\n");
    }

    private static ComparisonResult Compare(StudyRun run, string old = "old/study.md", string @new = "new/study.md")
    {
        var bag = new DiagnosticBag();
        var a = SnapshotReader.Read(Path.Combine(run.Folder, old), new CompileOptions(), bag);
        var b = SnapshotReader.Read(Path.Combine(run.Folder, @new), new CompileOptions(), bag);
        Assert.True(a is not null && b is not null, string.Join("\n", bag.Items));
        return BuildComparison.Compare(a, b);
    }

    private static string Line(ValueChange c) => $"{c.New.PathText()}: {c.Old.Text()} -> {c.New.Text()}";

    [Fact]
    public void CorrectedValue_ListsExactlyTheValuesThatDependOnIt_AndThePairsThatFlipped()
    {
        using var run = Pair();
        // P05 (an air-induction panel) corrected from 41.8 to 48.8.
        EditRows(run, f => f[0] == "P05" ? [f[0], f[1], f[2], "48.8"] : f);
        var r = Compare(run);

        Assert.Equal(
            [
                "pairs › nozzle › flat-fan vs hollow-cone: separated → not separated (adjusted p 0.035 → 0.088)",
                "pairs › nozzle › full-cone vs air-induction: separated → not separated (adjusted p 0.002 → 0.072)",
            ],
            r.Decisions.Select(d => d.Description));
        Assert.All(r.Decisions, d => Assert.Equal(DecisionKinds.Pair, d.Kind));

        // Exact list: the air-induction group's summary, the ANOVA terms that pool it, the checks,
        // and every pair statistic that involves the pooled error or the air-induction mean.
        // Not listed, because their shown text is the same: counts, df, the other groups, the
        // flat-fan vs full-cone difference and its adjusted p ("< 0.001" both times), power.
        var changed = r.Changed.Select(Line).ToList();
        Assert.Equal(68, changed.Count);
        Assert.Equal(10, changed.Count(c => c.StartsWith("groups › summary › nozzle › air-induction › ", StringComparison.Ordinal)));
        Assert.DoesNotContain(changed, c => c.StartsWith("groups", StringComparison.Ordinal) && !c.Contains("air-induction", StringComparison.Ordinal));
        Assert.Contains("main › anova › nozzle › f: 11.5 -> 7.33", changed);
        Assert.Contains("main › anova › nozzle › p: < 0.001 -> 0.002", changed);
        Assert.Contains("main › means › nozzle › air-induction › mean: 43.3 -> 44.4", changed);
        Assert.Contains("pairs › tukey_hsd › nozzle › flat-fan vs hollow-cone › p_adj: 0.035 -> 0.088", changed);
        Assert.DoesNotContain(changed, c => c.Contains("› df", StringComparison.Ordinal) || c.Contains("› n:", StringComparison.Ordinal) || c.StartsWith("plan", StringComparison.Ordinal));
        Assert.DoesNotContain(changed, c => c.StartsWith("pairs › tukey_hsd › nozzle › flat-fan vs full-cone › p_adj", StringComparison.Ordinal));
        Assert.Empty(r.Added);
        Assert.Empty(r.Removed);

        var input = Assert.Single(r.Inputs);
        Assert.Equal(("coating", "changed"), (input.Name, input.Status));
        Assert.Equal((24L, 24L, 0L, 0L, 1L), (input.Rows!.OldRows, input.Rows.NewRows, input.Rows.Added, input.Rows.Removed, input.Rows.Changed));
        Assert.Equal(new ChangedRow(6, "P05,5,air-induction,41.8", 6, "P05,5,air-induction,48.8"), Assert.Single(input.Rows.ChangedExamples));

        // The methods text moves with the data: the comparisons sentence now names one pair.
        var methods = Assert.Single(r.Sentences);
        Assert.Contains(methods.Added, s => s.StartsWith("In the comparisons of Nozzle type, these pairs differed at the family-wise level α = 0.05: flat-fan − full-cone", StringComparison.Ordinal) && !s.Contains("hollow-cone", StringComparison.Ordinal));
        Assert.Equal(3, r.ExitCode(FailOn.Values));
    }

    [Fact]
    public void TenRowsAdded_CountsRowsAndChangesCounts()
    {
        using var run = Pair();
        var extra = string.Concat(Enumerable.Range(25, 10).Select(i => string.Create(CultureInfo.InvariantCulture, $"P{i},{i},{(i % 2 == 0 ? "flat-fan" : "hollow-cone")},{40 + (i % 5)}.5\n")));
        File.AppendAllText(NewCsv(run), extra);
        var r = Compare(run);

        var rows = Assert.Single(r.Inputs).Rows!;
        Assert.Equal((24L, 34L, 10L, 0L, 0L), (rows.OldRows, rows.NewRows, rows.Added, rows.Removed, rows.Changed));
        Assert.Equal(new RowExample(26, "P25,25,hollow-cone,40.5"), rows.AddedExamples[0]);
        var changed = r.Changed.Select(Line).ToList();
        Assert.Contains("groups › summary › nozzle › flat-fan › n: 6 -> 11", changed);
        Assert.Contains("groups › summary › nozzle › hollow-cone › n: 6 -> 11", changed);
        Assert.Contains("main › anova › residual › df: 20 -> 30", changed);
        Assert.Contains("methods1 › input › coating › rows: 24 -> 34", changed);
        Assert.DoesNotContain(changed, c => c.StartsWith("groups › summary › nozzle › full-cone", StringComparison.Ordinal));
        Assert.Empty(r.Added);
        Assert.Empty(r.Removed);
    }

    [Fact]
    public void RowRemoved_IsOneRemovedRow()
    {
        using var run = Pair();
        EditRows(run, f => f[0] == "P24" ? null : f);
        var r = Compare(run);

        var rows = Assert.Single(r.Inputs).Rows!;
        Assert.Equal((24L, 23L, 0L, 1L, 0L), (rows.OldRows, rows.NewRows, rows.Added, rows.Removed, rows.Changed));
        Assert.Equal(new RowExample(25, "P24,24,flat-fan,41.1"), Assert.Single(rows.RemovedExamples));
        Assert.Contains("groups › summary › nozzle › flat-fan › n: 6 -> 5", r.Changed.Select(Line));
    }

    [Fact]
    public void LevelRenamed_IsReportedAsValuesRemovedAndAdded_NeverMatchedByPosition()
    {
        using var run = Pair();
        EditRows(run, f => f[2] == "air-induction" ? [f[0], f[1], "air-assist", f[3]] : f);
        var study = Path.Combine(run.Folder, "new", "study.md");
        File.WriteAllText(study, File.ReadAllText(study).Replace("air-induction]", "air-assist]", StringComparison.Ordinal));
        var r = Compare(run);

        // Same numbers under a new name: nothing "changed", no conclusion moved.
        Assert.Empty(r.Changed);
        Assert.Empty(r.Decisions);
        Assert.Equal(r.Removed.Count, r.Added.Count);
        Assert.All(r.Removed, v => Assert.True(v.Level == "air-induction" || v.Pair!.Contains("air-induction"), v.PathText()));
        Assert.All(r.Added, v => Assert.True(v.Level == "air-assist" || v.Pair!.Contains("air-assist"), v.PathText()));
        // Summary 12 + means 2 + three pairs × 6 + the methods design count 1.
        Assert.Equal(33, r.Removed.Count);
        var rows = Assert.Single(r.Inputs).Rows!;
        Assert.Equal((0L, 0L, 6L), (rows.Added, rows.Removed, rows.Changed));
        Assert.Equal(1, r.ExitCode(FailOn.Values));
        Assert.Equal(0, r.ExitCode(FailOn.Decisions));
    }

    [Fact]
    public void PValueMovedAcrossAlpha_IsAFlippedDecision()
    {
        using var run = Pair();
        // Constructed to pull the group means together: full-cone 4.6 µm and hollow-cone 2.0 µm lower.
        EditRows(run, f => f[2] switch
        {
            "full-cone" => [f[0], f[1], f[2], (decimal.Parse(f[3], CultureInfo.InvariantCulture) - 4.6m).ToString(CultureInfo.InvariantCulture)],
            "hollow-cone" => [f[0], f[1], f[2], (decimal.Parse(f[3], CultureInfo.InvariantCulture) - 2.0m).ToString(CultureInfo.InvariantCulture)],
            _ => f,
        });
        var r = Compare(run);

        // Both p-values, read from the builds themselves, lie on opposite sides of alpha = 0.05.
        var before = r.Old.Values.Single(v => v.Key == SnapshotValue.PathKey("main", "anova", "nozzle", null, null, "p")).Value!.Value;
        var after = r.New.Values.Single(v => v.Key == SnapshotValue.PathKey("main", "anova", "nozzle", null, null, "p")).Value!.Value;
        Assert.True(before < 0.05 && after >= 0.05, $"{before} {after}");

        var effect = Assert.Single(r.Decisions, d => d.Kind == DecisionKinds.Effect);
        Assert.Equal(("main", "anova", "nozzle", "rejects", "does not reject"), (effect.Block, effect.Test, effect.Term, effect.Old, effect.New));
        Assert.Equal("main › F test › nozzle: rejects → does not reject the hypothesis of no effect (p < 0.001 → 0.700)", effect.Description);
        Assert.Equal(3, r.Decisions.Count(d => d.Kind == DecisionKinds.Pair));
        Assert.Equal(3, r.ExitCode(FailOn.Values));
        Assert.Equal(3, r.ExitCode(FailOn.Decisions));
        Assert.Equal(0, r.ExitCode(FailOn.Never));
    }

    // The Friedman test's verdict is an effect decision too (it was left out of diff before). Six
    // blocks ranking the treatments alike (rank sums 6, 12, 18: χ² = 12, p = e^−6 ≈ 0.0025, exact
    // hand computation) against six blocks whose rankings cancel (rank sums 12, 12, 12: χ² = 0,
    // p = 1). Invented scores.
    [Fact]
    public void FriedmanVerdictFlip_IsAFlippedDecision()
    {
        static string Study() => """
---
title: Ranked scores
data: data/scores.csv
response: score
factors: [panel, recipe]
---

```friedman f
factor: recipe
blocks: panel
```
""";
        var alike = new System.Text.StringBuilder("panel,recipe,score\n");
        var cancel = new System.Text.StringBuilder("panel,recipe,score\n");
        string[][] orders = [["a", "b", "c"], ["b", "c", "a"], ["c", "a", "b"]];
        for (var b = 0; b < 6; b++)
        {
            for (var j = 0; j < 3; j++)
            {
                alike.Append(CultureInfo.InvariantCulture, $"P{b},{"abc"[j]},{j + 1 + (b * 0.1)}\n");
                cancel.Append(CultureInfo.InvariantCulture, $"P{b},{orders[b % 3][j]},{j + 1 + (b * 0.1)}\n");
            }
        }

        using var run = new StudyRun()
            .File("old/study.md", Study()).File("old/data/scores.csv", alike.ToString())
            .File("new/study.md", Study()).File("new/data/scores.csv", cancel.ToString());
        var r = Compare(run);
        var before = r.Old.Values.Single(v => v.Key == SnapshotValue.PathKey("f", "friedman", "recipe", null, null, "p")).Value!.Value;
        var after = r.New.Values.Single(v => v.Key == SnapshotValue.PathKey("f", "friedman", "recipe", null, null, "p")).Value!.Value;
        Assert.Equal(Math.Exp(-6), before, 12);
        Assert.Equal(1.0, after, 12);
        var effect = Assert.Single(r.Decisions, d => d.Kind == DecisionKinds.Effect);
        Assert.Equal(("f", "friedman", "recipe", "rejects", "does not reject"), (effect.Block, effect.Test, effect.Term, effect.Old, effect.New));
        Assert.StartsWith("f › Friedman test › recipe: rejects → does not reject", effect.Description, StringComparison.Ordinal);
    }

    // Conover's pairwise comparisons after a Friedman test are pairs for diff too (they were left out
    // before each kind declared its pairwise tests). Old: five blocks rank a < b < c and one
    // b < a < c (mean ranks 7/6, 11/6, 3); new: rankings that cancel (every mean rank 2). Invented
    // scores; the adjusted p-values are read from the builds themselves.
    [Fact]
    public void FriedmanPairFlip_IsAFlippedPairDecision()
    {
        static string Study() => """
---
title: Ranked scores
data: data/scores.csv
response: score
factors: [panel, recipe]
---

```friedman f
factor: recipe
blocks: panel
```
""";
        var ordered = new System.Text.StringBuilder("panel,recipe,score\n");
        var cancel = new System.Text.StringBuilder("panel,recipe,score\n");
        string[][] orders = [["a", "b", "c"], ["b", "c", "a"], ["c", "a", "b"]];
        for (var b = 0; b < 6; b++)
        {
            for (var j = 0; j < 3; j++)
            {
                var recipe = b == 5 ? "bac"[j] : "abc"[j];
                ordered.Append(CultureInfo.InvariantCulture, $"P{b},{recipe},{j + 1 + (b * 0.1)}\n");
                cancel.Append(CultureInfo.InvariantCulture, $"P{b},{orders[b % 3][j]},{j + 1 + (b * 0.1)}\n");
            }
        }

        using var run = new StudyRun()
            .File("old/study.md", Study()).File("old/data/scores.csv", ordered.ToString())
            .File("new/study.md", Study()).File("new/data/scores.csv", cancel.ToString());
        var r = Compare(run);
        var key = SnapshotValue.PathKey("f", "conover", "recipe", null, ["a", "c"], "p_adj");
        var before = r.Old.Values.Single(v => v.Key == key).Value!.Value;
        var after = r.New.Values.Single(v => v.Key == key).Value!.Value;
        Assert.True(before < 0.05 && after >= 0.05, $"{before} {after}");

        var pair = Assert.Single(r.Decisions, d => d.Kind == DecisionKinds.Pair && d.Pair!.SequenceEqual(["a", "c"]));
        Assert.Equal(("f", "conover", "recipe", "separated", "not separated"), (pair.Block, pair.Test, pair.Term, pair.Old, pair.New));
        Assert.StartsWith("f › recipe › a vs c: separated → not separated (adjusted p ", pair.Description, StringComparison.Ordinal);
        Assert.Contains(BuildComparison.Decisions(r.Old), l => l == "f › recipe › a vs c: separated (Conover)");
    }

    [Fact]
    public void UnequalSpreads_SwitchProcedures_AndVerdicts()
    {
        using var run = Pair();
        var spread = new Queue<string>(["39.0", "55.0", "43.0", "53.0", "45.0", "49.0"]);
        EditRows(run, f => f[2] == "full-cone" ? [f[0], f[1], f[2], spread.Dequeue()] : f);
        var r = Compare(run);

        var procedures = r.Decisions.Where(d => d.Kind == DecisionKinds.Procedure).Select(d => d.Description).ToList();
        Assert.Equal(["main › nozzle: Welch's F added", "pairs › nozzle: Tukey replaced by Games–Howell"], procedures);
        Assert.Equal(
            ["brown_forsythe", "levene", "bartlett"],
            r.Decisions.Where(d => d.Kind == DecisionKinds.Assumption).Select(d => d.Test));
        Assert.All(r.Decisions.Where(d => d.Kind == DecisionKinds.Assumption), d => Assert.Equal("variances differ", d.New));
        // A pair keeps its identity across the procedures: Tukey's adjusted p against Games–Howell's.
        Assert.Contains(r.Decisions, d => d.Kind == DecisionKinds.Pair && d.OldTest == "tukey_hsd" && d.Test == "games_howell" && d.Pair!.SequenceEqual(["flat-fan", "full-cone"]));
        // Decisions are listed first: procedures, then verdicts.
        Assert.Equal(DecisionKinds.Procedure, r.Decisions[0].Kind);
    }

    [Fact]
    public void ChangeBelowTheDisplayedRounding_IsNoChangedNumber()
    {
        using var run = Pair();
        EditRows(run, f => f[0] == "P05" ? [f[0], f[1], f[2], "41.8000001"] : f);
        var r = Compare(run);

        Assert.Empty(r.Changed);
        Assert.Empty(r.Decisions);
        Assert.Equal(1, Assert.Single(r.Inputs).Rows!.Changed);
        Assert.Equal(0, r.ExitCode(FailOn.Values));
        // The full values did move: shown text, not a tolerance, decided.
        var mean = SnapshotValue.PathKey("groups", "summary", "nozzle", "air-induction", null, "mean");
        Assert.NotEqual(r.Old.Values.Single(v => v.Key == mean).Value, r.New.Values.Single(v => v.Key == mean).Value);
    }

    [Fact]
    public void RenamedBlock_IsRemovedAndAdded_WithNoDecisionAcrossIt()
    {
        using var run = Pair();
        var study = Path.Combine(run.Folder, "new", "study.md");
        File.WriteAllText(study, File.ReadAllText(study)
            .Replace("```posthoc pairs", "```posthoc comparisons", StringComparison.Ordinal)
            .Replace("[=pairs.", "[=comparisons.", StringComparison.Ordinal));
        EditRows(run, f => f[0] == "P05" ? [f[0], f[1], f[2], "48.8"] : f);
        var r = Compare(run);

        Assert.Equal(["comparisons"], r.BlocksAdded);
        Assert.Equal(["pairs"], r.BlocksRemoved);
        Assert.All(r.Removed, v => Assert.Equal("pairs", v.Block));
        Assert.All(r.Added, v => Assert.Equal("comparisons", v.Block));
        Assert.Equal(38, r.Added.Count); // 6 pairs × 6 statistics + the family's 2
        // The pairs that flipped in place are not matched across a renamed block.
        Assert.DoesNotContain(r.Decisions, d => d.Kind == DecisionKinds.Pair);
        var text = ComparisonText.Write(r, colour: false);
        Assert.Contains("  + block comparisons: 38 values\n", text, StringComparison.Ordinal);
        Assert.Contains("  - pairs (posthoc)\n", text, StringComparison.Ordinal);
        Assert.Equal(1, r.ExitCode(FailOn.Values));
    }

    [Fact]
    public void ReportAwayFromItsStudy_TakesAlphaFromItsText_NotFromAPowerBlock()
    {
        using var run = Pair();
        // The power block states its own alpha, and comes first; the study's alpha is 0.1.
        var study = Path.Combine(run.Folder, "new", "study.md");
        var text = File.ReadAllText(study).Replace("alpha: 0.05", "alpha: 0.1", StringComparison.Ordinal)
            .Replace("```summary groups", "```power early\ngroups: 4\neffect: 0.4\nn: 6\nalpha: 0.01\n```\n\n```summary groups", StringComparison.Ordinal);
        File.WriteAllText(study, text);
        Assert.Equal(0, run.Cli("build", "new/study.md").Exit);
        File.Move(Path.Combine(run.Folder, "new", "study.html"), Path.Combine(run.Folder, "moved.html"));
        var snapshot = SnapshotReader.Read(Path.Combine(run.Folder, "moved.html"), new CompileOptions(), new DiagnosticBag());
        Assert.Equal((0.1, "report text"), (snapshot!.Alpha, snapshot.AlphaSource));
    }

    [Fact]
    public void ValuesWithoutDisplay_UseTheRelativeTolerance()
    {
        var shown = new Dictionary<string, string>(StringComparer.Ordinal);
        SnapshotValue V(double x) => new("b", "t", null, null, null, "s", x, null, shown);
        Assert.Null(BuildComparison.Differs(V(1.0), V(1.0 + 1e-13)));
        Assert.Equal("tolerance", BuildComparison.Differs(V(1.0), V(1.0 + 1e-11)));
        var a = new SnapshotValue("b", "t", null, null, null, "s", 1.0, null, new Dictionary<string, string>(StringComparer.Ordinal) { [""] = "1.00" });
        var b = a with { Value = 1.004 };
        Assert.Null(BuildComparison.Differs(a, b));
        Assert.Equal("display", BuildComparison.Differs(a, b with { Display = new Dictionary<string, string>(StringComparer.Ordinal) { [""] = "1.01" } }));
        Assert.Equal("defined", BuildComparison.Differs(a, b with { Value = null }));
    }

    [Fact]
    public void Cli_ExitCodes_FailOn_AndPlainOutputWhenRedirected()
    {
        using var run = Pair();
        Assert.Equal(0, run.Cli("diff", "old/study.md", "new/study.md").Exit);
        EditRows(run, f => f[0] == "P05" ? [f[0], f[1], f[2], "42.3"] : f);
        var (exit, output, error) = run.Cli("diff", "old/study.md", "new/study.md");
        Assert.Equal((1, string.Empty), (exit, error));
        Assert.Contains("Decisions flipped: 0", output, StringComparison.Ordinal);
        Assert.Matches("Summary: 0 decisions flipped, [0-9]+ values? changed, ", output);
        Assert.DoesNotContain("(s)", output, StringComparison.Ordinal);
        Assert.DoesNotContain('\u001b', output);
        Assert.Equal(0, run.Cli("diff", "old/study.md", "new/study.md", "--fail-on", "decisions").Exit);

        EditRows(run, f => f[0] == "P05" ? [f[0], f[1], f[2], "48.8"] : f);
        Assert.Equal(3, run.Cli("diff", "old/study.md", "new/study.md").Exit);
        Assert.Equal(3, run.Cli("diff", "old/study.md", "new/study.md", "--fail-on", "decisions").Exit);
        Assert.Equal(0, run.Cli("diff", "old/study.md", "new/study.md", "--fail-on", "never").Exit);
        Assert.Equal(64, run.Cli("diff", "old/study.md", "new/study.md", "--fail-on", "sometimes").Exit);

        // Reports and manifests as written by build compare like the studies.
        Assert.Equal(0, run.Cli("build", "old/study.md", "--json", "old.json").Exit);
        Assert.Equal(0, run.Cli("build", "new/study.md", "--json", "new.json").Exit);
        Assert.Equal(3, run.Cli("diff", "old/study.html", "new/study.html").Exit);
        // A manifest written outside the report's folder does not lead to its study: alpha is
        // unknown, so only procedure choices are compared until --alpha says it.
        var fromManifests = run.Cli("diff", "old.json", "new.json");
        Assert.Equal(1, fromManifests.Exit);
        Assert.Contains("note: alpha could not be established for old.json", fromManifests.Out, StringComparison.Ordinal);
        Assert.Contains("note: methods text not compared", fromManifests.Out, StringComparison.Ordinal);
        Assert.Equal(3, run.Cli("diff", "old.json", "new.json", "--alpha", "0.05").Exit);
        Assert.Equal(64, run.Cli("diff", "old.json", "new.json", "--alpha", "5%").Exit);
    }

    [Fact]
    public void Cli_Help_DocumentsTheExitCodesAndFailOn()
    {
        using var run = new StudyRun();
        var (exit, output, _) = run.Cli("diff", "--help");
        Assert.Equal(0, exit);
        Assert.Contains("Exit 0 no number changed; 1 numbers changed but no decision flipped; 3 a decision flipped; 2 study or input errors; 64 usage errors", output, StringComparison.Ordinal);
        Assert.Contains("--fail-on <decisions|never|values>", output, StringComparison.Ordinal);
        Assert.Contains("--rev <REV>", output, StringComparison.Ordinal);
    }

    [Fact]
    public void Cli_Errors_AreOneLineAtTheFile_Exit2()
    {
        using var run = Pair();
        Assert.Equal((2, string.Empty, "missing.html:1:1: error: file 'missing.html' not found\n"), run.Cli("diff", "missing.html", "new/study.md"));
        run.File("notes.txt", "hello");
        Assert.Equal((2, string.Empty, "notes.txt:1:1: error: cannot compare 'notes.txt': name a report (.html), a results manifest (.json) or a study file (.md)\n"), run.Cli("diff", "notes.txt", "new/study.md"));
        run.File("page.html", "<html><body>hello</body></html>");
        Assert.Equal((2, string.Empty, "page.html:1:1: error: cannot compare 'page.html': no results manifest found; is this a studypress report?\n"), run.Cli("diff", "page.html", "new/study.md"));
        Assert.Equal((64, string.Empty, "studypress: error: name two builds to compare (studypress diff OLD NEW), or one study with --rev REV\n"), run.Cli("diff", "new/study.md"));

        // A broken new study: its own diagnostic, exit 2, nothing written.
        File.WriteAllText(Path.Combine(run.Folder, "new", "study.md"), File.ReadAllText(Path.Combine(run.Folder, "new", "study.md")).Replace("alpha: 0.05", "alfa: 0.05", StringComparison.Ordinal));
        var (exit, output, error) = run.Cli("diff", "old/study.md", "new/study.md", "--json", "d.json");
        Assert.Equal((2, string.Empty), (exit, output));
        Assert.StartsWith("new/study.md:4:1: error: unknown key 'alfa'", error, StringComparison.Ordinal);
        Assert.False(File.Exists(Path.Combine(run.Folder, "d.json")));
    }

    [Fact]
    public void Json_HasTheDocumentedShape()
    {
        using var run = Pair();
        EditRows(run, f => f[0] == "P05" ? [f[0], f[1], f[2], "48.8"] : f);
        Assert.Equal(3, run.Cli("diff", "old/study.md", "new/study.md", "--json", "d.json").Exit);
        using var doc = JsonDocument.Parse(File.ReadAllBytes(Path.Combine(run.Folder, "d.json")));
        var root = doc.RootElement;
        Assert.Equal("studypress-diff/1", root.GetProperty("format").GetString());
        Assert.Equal(3, root.GetProperty("exit").GetInt32());
        Assert.Equal(0.05, root.GetProperty("old").GetProperty("alpha").GetDouble());
        Assert.Equal("study", root.GetProperty("new").GetProperty("source").GetString());
        Assert.Equal(2, root.GetProperty("summary").GetProperty("decisionsFlipped").GetInt32());
        Assert.Equal(68, root.GetProperty("summary").GetProperty("valuesChanged").GetInt32());
        var d = root.GetProperty("decisions")[0];
        Assert.Equal(["kind", "block", "test", "oldTest", "term", "pair", "stat", "old", "new", "oldValue", "newValue", "oldText", "newText", "description"], d.EnumerateObject().Select(p => p.Name));
        Assert.Equal(["flat-fan", "hollow-cone"], d.GetProperty("pair").EnumerateArray().Select(p => p.GetString()));
        Assert.Equal("0.088", d.GetProperty("newText").GetString());
        var c = root.GetProperty("changed")[0];
        Assert.Equal(["block", "test", "term", "level", "pair", "stat", "old", "new", "oldText", "newText", "basis"], c.EnumerateObject().Select(p => p.Name));
        var rows = root.GetProperty("inputs")[0].GetProperty("rows");
        Assert.Equal(1, rows.GetProperty("changed").GetInt32());
        Assert.Equal(6, rows.GetProperty("changedExamples")[0].GetProperty("oldLine").GetInt32());
        foreach (var name in new[] { "added", "removed", "sentences", "notes" })
        {
            Assert.Equal(JsonValueKind.Array, root.GetProperty(name).ValueKind);
        }
    }

    [Fact]
    public void Html_IsOneSelfContainedFile_WithEveryStringEscaped()
    {
        using var run = Pair();
        // A level name with markup, renamed in the data and the header.
        EditRows(run, f => f[2] == "air-induction" ? [f[0], f[1], "air<b>x</b>&", f[3]] : f);
        var study = Path.Combine(run.Folder, "new", "study.md");
        File.WriteAllText(study, File.ReadAllText(study).Replace("air-induction]", "\"air<b>x</b>&\"]", StringComparison.Ordinal));
        EditRows(run, f => f[0] == "P01" ? [f[0], f[1], f[2], "47.6"] : f);
        var (exit, _, error) = run.Cli("diff", "old/study.md", "new/study.md", "--html", "d.html");
        Assert.True(exit is 1 or 3, error);
        var html = File.ReadAllText(Path.Combine(run.Folder, "d.html"));
        Assert.Single(Directory.GetFiles(run.Folder, "d.*"));
        Assert.Contains("<meta http-equiv=\"Content-Security-Policy\" content=\"default-src &#39;none&#39;; style-src &#39;sha256-", html, StringComparison.Ordinal);
        // The one style element is allowed by its hash, and nothing else is allowed.
        var style = html[(html.IndexOf("<style>", StringComparison.Ordinal) + 7)..html.IndexOf("</style>", StringComparison.Ordinal)];
        var hash = Convert.ToBase64String(System.Security.Cryptography.SHA256.HashData(System.Text.Encoding.UTF8.GetBytes(style)));
        Assert.Contains("style-src &#39;sha256-" + hash + "&#39;;", html, StringComparison.Ordinal);
        Assert.Equal(1, html.Split("<style>").Length - 1);
        Assert.DoesNotContain("http://", html, StringComparison.Ordinal);
        Assert.DoesNotContain("https://", html, StringComparison.Ordinal);
        Assert.DoesNotContain(" src=", html, StringComparison.Ordinal);
        Assert.DoesNotContain(" href=", html, StringComparison.Ordinal);
        Assert.DoesNotContain("<script", html, StringComparison.Ordinal);
        Assert.DoesNotContain("<b>x</b>", html, StringComparison.Ordinal);
        Assert.Contains("air&lt;b&gt;x&lt;/b&gt;&amp;", html, StringComparison.Ordinal);
        // Flipped decisions come before the values.
        Assert.True(html.IndexOf("id=\"decisions\"", StringComparison.Ordinal) < html.IndexOf("id=\"inputs\"", StringComparison.Ordinal));
    }

    [Fact]
    public void TextOf_ShowsValuesAsDisplayedAndTheDecisions()
    {
        using var run = Pair();
        var (exit, output, _) = run.Cli("diff", "--text-of", "old/study.md");
        Assert.Equal(0, exit);
        Assert.Contains("value main › anova › nozzle › f = 11.5\n", output, StringComparison.Ordinal);
        Assert.Contains("decision main › F test › nozzle: rejects\n", output, StringComparison.Ordinal);
        Assert.Contains("decision pairs › nozzle › flat-fan vs hollow-cone: separated (Tukey)\n", output, StringComparison.Ordinal);
        Assert.Contains("methods methods1: ", output, StringComparison.Ordinal);
    }

    [Fact]
    public void Terminal_IsColouredOnlyForATerminal()
    {
        using var run = Pair();
        EditRows(run, f => f[0] == "P05" ? [f[0], f[1], f[2], "48.8"] : f);
        var o = new StringWriter(CultureInfo.InvariantCulture);
        var e = new StringWriter(CultureInfo.InvariantCulture);
        var exit = DiffCommand.Run(new DiffRequest([Path.Combine(run.Folder, "old/study.md"), Path.Combine(run.Folder, "new/study.md")]) { Colour = true }, o, e);
        Assert.Equal(3, exit);
        Assert.Contains("\u001b[33m! pairs › nozzle › flat-fan vs hollow-cone", o.ToString(), StringComparison.Ordinal);
        var plain = ComparisonText.Write(Compare(run), colour: false);
        Assert.DoesNotContain('\u001b', plain);
    }

    [Fact]
    public void TableDiff_InPartitions_AgreesWithOnePass()
    {
        using var run = Pair();
        File.AppendAllText(NewCsv(run), "P25,25,flat-fan,41.5\nP26,26,full-cone,47.0\n");
        EditRows(run, f => f[0] switch { "P03" => null, "P07" => [f[0], f[1], f[2], "42.9"], _ => f });
        var old = Path.Combine(run.Folder, "old", Csv);
        var one = TableDiff.Compare(old, NewCsv(run));
        var many = TableDiff.Compare(old, NewCsv(run), partitionBytes: 64);
        Assert.Equal((2L, 1L, 1L), (one.Added, one.Removed, one.Changed));
        Assert.Equal((one.Added, one.Removed, one.Changed, one.OldRows, one.NewRows), (many.Added, many.Removed, many.Changed, many.OldRows, many.NewRows));
        Assert.Equal(one.AddedExamples, many.AddedExamples);
        Assert.Equal(one.ChangedExamples, many.ChangedExamples);
    }

    [GitFact]
    public void Rev_ComparesTheCommittedStudyWithTheWorkingTree()
    {
        using var run = Pair();
        var repo = Path.Combine(run.Folder, "new");
        Git(repo, "init", "-q");
        Git(repo, "add", ".");
        Git(repo, "-c", "user.name=StudyPress tests", "-c", "user.email=tests@example.invalid", "commit", "-q", "-m", "first");
        EditRows(run, f => f[0] == "P05" ? [f[0], f[1], f[2], "48.8"] : f);
        var before = Directory.GetDirectories(Path.GetTempPath(), "studypress-diff-*").Length;

        var (exit, output, error) = run.Cli("diff", "--rev", "HEAD", "new/study.md");
        Assert.True(exit == 3, error);
        Assert.StartsWith("studypress diff: HEAD:study.md → new/study.md\n", output, StringComparison.Ordinal);
        Assert.Contains("! pairs › nozzle › full-cone vs air-induction: separated → not separated", output, StringComparison.Ordinal);
        Assert.Contains("~ line 6: P05,5,air-induction,41.8  →  line 6: P05,5,air-induction,48.8", output, StringComparison.Ordinal);
        // The working tree is untouched and the temporary checkout is gone.
        Assert.Contains("P05,5,air-induction,48.8", File.ReadAllText(NewCsv(run)), StringComparison.Ordinal);
        Assert.Equal(before, Directory.GetDirectories(Path.GetTempPath(), "studypress-diff-*").Length);

        Assert.Equal(
            (2, string.Empty, "new/study.md:1:1: error: revision 'nosuch' has no 'study.md' (no such revision in this repository)\n"),
            run.Cli("diff", "--rev", "nosuch", "new/study.md"));
        Assert.Equal(
            (2, string.Empty, "old/study.md:1:1: error: 'old/study.md' is not inside a git repository, so --rev has nothing to read the older study from\n"),
            run.Cli("diff", "--rev", "HEAD", "old/study.md"));
    }

    [GitFact]
    public void Rev_DataFileNotCommitted_IsAnErrorAtTheOlderHeader()
    {
        using var run = Pair();
        var repo = Path.Combine(run.Folder, "new");
        Git(repo, "init", "-q");
        Git(repo, "add", "study.md");
        Git(repo, "-c", "user.name=StudyPress tests", "-c", "user.email=tests@example.invalid", "commit", "-q", "-m", "study only");
        var (exit, output, error) = run.Cli("diff", "--rev", "HEAD", "new/study.md");
        Assert.Equal((2, string.Empty), (exit, output));
        Assert.Equal("HEAD:study.md:6:12: error: data file 'data/coating.csv' does not exist at revision 'HEAD'\n", error);
    }

    private static void Git(string folder, params string[] args)
    {
        var info = new ProcessStartInfo("git") { WorkingDirectory = folder, RedirectStandardOutput = true, RedirectStandardError = true };
        foreach (var a in args)
        {
            info.ArgumentList.Add(a);
        }

        using var p = Process.Start(info)!;
        var err = p.StandardError.ReadToEnd();
        p.StandardOutput.ReadToEnd();
        p.WaitForExit();
        Assert.True(p.ExitCode == 0, "git " + string.Join(' ', args) + ": " + err);
    }
}

/// <summary>A fact that needs git on the PATH; skipped (with the reason) where there is none.</summary>
public sealed class GitFactAttribute : FactAttribute
{
    public GitFactAttribute()
    {
        if (!GitAvailable.Value)
        {
            Skip = "git is not installed on this machine";
        }
    }

    private static readonly Lazy<bool> GitAvailable = new(() =>
    {
        try
        {
            using var p = Process.Start(new ProcessStartInfo("git", "--version") { RedirectStandardOutput = true, RedirectStandardError = true })!;
            p.WaitForExit();
            return p.ExitCode == 0;
        }
        catch (System.ComponentModel.Win32Exception)
        {
            return false;
        }
    });
}
