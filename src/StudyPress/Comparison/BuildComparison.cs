using System.Globalization;
using StudyPress.Rendering.Kinds;

namespace StudyPress.Comparison;

/// <summary>What kind of conclusion flipped.</summary>
public static class DecisionKinds
{
    /// <summary>A test of an effect (ANOVA term, Welch, Kruskal–Wallis) crossed alpha.</summary>
    public const string Effect = "effect";

    /// <summary>An assumption check's verdict changed (its p crossed alpha).</summary>
    public const string Assumption = "assumption";

    /// <summary>A pair of levels became separated or stopped being separated (adjusted p crossed alpha).</summary>
    public const string Pair = "pair";

    /// <summary>The automatic rules (or the study) chose another procedure for a term.</summary>
    public const string Procedure = "procedure";
}

/// <summary>One conclusion that differs between the builds. <see cref="Old"/>/<see cref="New"/> are verdict words.</summary>
public sealed record FlippedDecision(
    string Kind,
    string Block,
    string Test,
    string? Term,
    IReadOnlyList<string>? Pair,
    string Old,
    string New,
    string Description)
{
    public string? Stat { get; init; }

    public string? OldTest { get; init; }

    public double? OldValue { get; init; }

    public double? NewValue { get; init; }

    public string? OldText { get; init; }

    public string? NewText { get; init; }
}

/// <summary>An input file that differs (by name): changed, added or removed, with its rows compared where possible.</summary>
public sealed record InputChange(string Name, string Status, SnapshotInput? Old, SnapshotInput? New, TableChanges? Rows, string? RowsNote);

/// <summary>The sentences of one methods block that only one build has.</summary>
public sealed record SentenceChange(string Block, IReadOnlyList<string> Removed, IReadOnlyList<string> Added);

/// <summary>A value present in both builds whose shown text (or full value, when not shown) differs.</summary>
public sealed record ValueChange(SnapshotValue Old, SnapshotValue New, string Basis);

/// <summary>The outcome of comparing two builds.</summary>
public sealed class ComparisonResult
{
    public required BuildSnapshot Old { get; init; }

    public required BuildSnapshot New { get; init; }

    public required IReadOnlyList<FlippedDecision> Decisions { get; init; }

    public required IReadOnlyList<InputChange> Inputs { get; init; }

    public required IReadOnlyList<ValueChange> Changed { get; init; }

    public required IReadOnlyList<SnapshotValue> Added { get; init; }

    public required IReadOnlyList<SnapshotValue> Removed { get; init; }

    public required IReadOnlyList<SentenceChange> Sentences { get; init; }

    public required IReadOnlyList<string> BlocksAdded { get; init; }

    public required IReadOnlyList<string> BlocksRemoved { get; init; }

    /// <summary>Remarks on what could not be compared, or settings that changed.</summary>
    public required IReadOnlyList<string> Notes { get; init; }

    public bool StudyChanged => !string.Equals(Old.StudySha256, New.StudySha256, StringComparison.Ordinal);

    /// <summary>
    /// A reported number differs: a value changed, appeared or disappeared, or a block was added or
    /// removed. Input files, the study text and the methods wording alone do not count (the
    /// methods text names the input hashes, so it changes with every edit of the data).
    /// </summary>
    public bool ResultsChanged => Changed.Count + Added.Count + Removed.Count + BlocksAdded.Count + BlocksRemoved.Count > 0;

    /// <summary>The exit status for a CI gate (see docs/comparing-builds.md).</summary>
    public int ExitCode(FailOn failOn) => failOn switch
    {
        FailOn.Never => 0,
        FailOn.Decisions => Decisions.Count > 0 ? 3 : 0,
        _ => Decisions.Count > 0 ? 3 : ResultsChanged ? 1 : 0,
    };
}

/// <summary>What makes <c>studypress diff</c> exit non-zero.</summary>
public enum FailOn
{
    Values,
    Decisions,
    Never,
}

/// <summary>
/// Compares two builds of a study. Values are matched by their path (block, test, term, level,
/// pair, stat), never by position or id. A value "changed" when the text the report shows for it
/// differs (for each display style both builds show); a value neither build shows is compared at a
/// relative tolerance of 1e-12. Decisions are re-derived from the values at each build's alpha.
/// </summary>
public static class BuildComparison
{
    public const double Tolerance = 1e-12;

    /// <summary>Tests whose p crossing alpha is a flipped decision on an effect, with their names in the decision lines: each kind's <see cref="KindRenderer.DiffEffectTests"/>.</summary>
    private static readonly Dictionary<string, string> EffectTests = KindRenderers.All.Values.SelectMany(r => r.DiffEffectTests).ToDictionary(StringComparer.Ordinal);

    /// <summary>Pairwise tests, with the family a pair is followed in across procedures: each kind's <see cref="KindRenderer.DiffPairTests"/>.</summary>
    private static readonly Dictionary<string, string> PairTests = KindRenderers.All.Values.SelectMany(r => r.DiffPairTests).ToDictionary(StringComparer.Ordinal);

    /// <summary>Tests whose presence on a term is a chosen procedure: each kind's <see cref="KindRenderer.DiffProcedureTests"/>.</summary>
    private static readonly HashSet<string> ProcedureTests = KindRenderers.All.Values.SelectMany(r => r.DiffProcedureTests).ToHashSet(StringComparer.Ordinal);

    /// <summary>Assumption checks with the words of their verdicts: each kind's <see cref="KindRenderer.DiffChecks"/>.</summary>
    private static readonly Dictionary<string, DiffCheck> Checks = KindRenderers.All.Values.SelectMany(r => r.DiffChecks).ToDictionary(StringComparer.Ordinal);

    /// <summary>Names of procedures in the comparison's lines: each kind's <see cref="KindRenderer.ProcedureNames"/>.</summary>
    private static readonly Dictionary<string, string> ProcedureNames = KindRenderers.All.Values.SelectMany(r => r.ProcedureNames).ToDictionary(StringComparer.Ordinal);

    public static ComparisonResult Compare(BuildSnapshot old, BuildSnapshot @new)
    {
        var notes = new List<string>();
        var oldValues = Index(old.Values);
        var newValues = Index(@new.Values);

        var changed = new List<ValueChange>();
        var added = new List<SnapshotValue>();
        foreach (var (key, n) in newValues)
        {
            if (!oldValues.TryGetValue(key, out var o))
            {
                added.Add(n);
            }
            else if (Differs(o, n) is { } basis)
            {
                changed.Add(new ValueChange(o, n, basis));
            }
        }

        var removed = oldValues.Where(kv => !newValues.ContainsKey(kv.Key)).Select(kv => kv.Value).ToList();

        var oldBlocks = old.Blocks.Select(b => b.Id).ToHashSet(StringComparer.Ordinal);
        var newBlocks = @new.Blocks.Select(b => b.Id).ToHashSet(StringComparer.Ordinal);
        var blocksAdded = @new.Blocks.Select(b => b.Id).Where(b => !oldBlocks.Contains(b)).ToList();
        var blocksRemoved = old.Blocks.Select(b => b.Id).Where(b => !newBlocks.Contains(b)).ToList();

        if (old.Alpha is { } a0 && @new.Alpha is { } a1 && a0 != a1)
        {
            notes.Add($"alpha changed: {Num(a0)} → {Num(a1)}");
        }

        if (old.Alpha is null || @new.Alpha is null)
        {
            notes.Add("alpha could not be established for " + (old.Alpha is null ? old.Label : @new.Label) + "; decisions that depend on it were not compared (give --alpha)");
        }

        var decisions = new List<FlippedDecision>();
        decisions.AddRange(Procedures(old, @new, oldBlocks));
        if (old.Alpha is { } oldAlpha && @new.Alpha is { } newAlpha)
        {
            decisions.AddRange(Verdicts(oldValues, newValues, oldAlpha, newAlpha));
        }

        var sentences = new List<SentenceChange>();
        if (old.MethodsSentences is null || @new.MethodsSentences is null)
        {
            notes.Add("methods text not compared: a results manifest does not hold the report's text");
        }
        else
        {
            foreach (var (block, newText) in @new.MethodsSentences)
            {
                if (old.MethodsSentences.TryGetValue(block, out var oldText))
                {
                    var (gone, come) = SentenceDiff(oldText, newText);
                    if (gone.Count + come.Count > 0)
                    {
                        sentences.Add(new SentenceChange(block, gone, come));
                    }
                }
            }
        }

        return new ComparisonResult
        {
            Old = old,
            New = @new,
            Decisions = decisions,
            Inputs = Inputs(old, @new),
            Changed = changed,
            Added = added,
            Removed = removed,
            Sentences = sentences,
            BlocksAdded = blocksAdded,
            BlocksRemoved = blocksRemoved,
            Notes = notes,
        };
    }

    /// <summary>Why two values of the same path count as changed, or null when they do not.</summary>
    public static string? Differs(SnapshotValue o, SnapshotValue n)
    {
        if (o.Value is null || n.Value is null)
        {
            return o.Value is null && n.Value is null ? null : "defined";
        }

        var styles = o.Display.Keys.Where(n.Display.ContainsKey).ToList();
        if (styles.Count > 0)
        {
            return styles.Any(s => !string.Equals(o.Display[s], n.Display[s], StringComparison.Ordinal)) ? "display" : null;
        }

        var x = o.Value.Value;
        var y = n.Value.Value;
        return x == y || Math.Abs(x - y) <= Tolerance * Math.Max(Math.Abs(x), Math.Abs(y)) ? null : "tolerance";
    }

    private static Dictionary<string, SnapshotValue> Index(IReadOnlyList<SnapshotValue> values)
    {
        // Insertion order is document order; a repeated path (not written by this version) keeps its occurrence number.
        var index = new Dictionary<string, SnapshotValue>(StringComparer.Ordinal);
        foreach (var v in values)
        {
            var key = v.Key;
            for (var k = 2; index.ContainsKey(key); k++)
            {
                key = v.Key + "\u001f#" + k.ToString(CultureInfo.InvariantCulture);
            }

            index[key] = v;
        }

        return index;
    }

    private static Dictionary<(string Block, string Term), SortedSet<string>> Chosen(BuildSnapshot s)
    {
        var map = new Dictionary<(string, string), SortedSet<string>>();
        // A check's values do not make their term one whose procedures are followed.
        foreach (var v in s.Values.Where(v => v.Term is not null && !Checks.ContainsKey(v.Test)))
        {
            var key = (v.Block, v.Term!);
            if (!map.TryGetValue(key, out var set))
            {
                map[key] = set = new SortedSet<string>(StringComparer.Ordinal);
            }

            if (ProcedureTests.Contains(v.Test))
            {
                set.Add(v.Test);
            }
        }

        return map;
    }

    /// <summary>
    /// The decisions of one build as lines, verdicts only (the p-values are among the values), so
    /// that a line of the text rendering changes exactly when its decision flips.
    /// </summary>
    public static IEnumerable<string> Decisions(BuildSnapshot s)
    {
        foreach (var ((block, term), set) in Chosen(s).Where(c => c.Value.Count > 0))
        {
            yield return $"{block} › {term}: {string.Join(", ", set.Select(Name))}";
        }

        if (s.Alpha is not { } alpha)
        {
            yield break;
        }

        foreach (var v in s.Values)
        {
            if (v.Value is not { } p)
            {
                continue;
            }

            var below = p < alpha;
            if (PairTests.ContainsKey(v.Test) && v.Stat == "p_adj" && v.Pair is not null)
            {
                yield return $"{v.Block} › {v.Term} › {string.Join(" vs ", v.Pair)}: {(below ? "separated" : "not separated")} ({Name(v.Test)})";
            }
            else if (EffectTests.TryGetValue(v.Test, out var effect) && v.Stat == "p" && v.Level is null)
            {
                yield return $"{v.Block} › {effect} › {v.Term}: {(below ? "rejects" : "does not reject")}";
            }
            else if (Checks.TryGetValue(v.Test, out var words) && v.Stat is "p" or "p_bonferroni" && (!words.WholeTestOnly || v.Level is null))
            {
                yield return $"{v.Block} › {v.Test}{(v.Term is null ? string.Empty : " › " + v.Term)}{(v.Level is null ? string.Empty : " (" + v.Level + ")")}: {(below ? words.Below : words.Above)}";
            }
        }
    }

    private static IEnumerable<FlippedDecision> Procedures(BuildSnapshot old, BuildSnapshot @new, HashSet<string> oldBlocks)
    {
        var before = Chosen(old);
        var after = Chosen(@new);
        foreach (var ((block, term), now) in after)
        {
            if (!oldBlocks.Contains(block) || !before.TryGetValue((block, term), out var then) || then.SetEquals(now))
            {
                continue;
            }

            var gone = then.Except(now).ToList();
            var come = now.Except(then).ToList();
            string what;
            if (gone.Count == 1 && come.Count == 1)
            {
                what = $"{Name(gone[0])} replaced by {Name(come[0])}";
            }
            else
            {
                var parts = new List<string>();
                if (come.Count > 0)
                {
                    parts.Add(string.Join(", ", come.Select(Name)) + " added");
                }

                if (gone.Count > 0)
                {
                    parts.Add(string.Join(", ", gone.Select(Name)) + " dropped");
                }

                what = string.Join("; ", parts);
            }

            yield return new FlippedDecision(
                DecisionKinds.Procedure,
                block,
                string.Join("+", now),
                term,
                null,
                then.Count == 0 ? "(none)" : string.Join(", ", then.Select(Name)),
                now.Count == 0 ? "(none)" : string.Join(", ", now.Select(Name)),
                $"{block} › {term}: {what}")
            {
                OldTest = string.Join("+", then),
            };
        }
    }

    private static IEnumerable<FlippedDecision> Verdicts(Dictionary<string, SnapshotValue> oldValues, Dictionary<string, SnapshotValue> newValues, double oldAlpha, double newAlpha)
    {
        // Pairs are matched across procedures of one family (means or ranks): Tukey → Games–Howell keeps the pair.
        static string? PairKey(SnapshotValue v) =>
            PairTests.TryGetValue(v.Test, out var family) && v.Stat == "p_adj" && v.Pair is not null
                ? string.Join('\u001f', v.Block, family, v.Term ?? string.Empty, string.Join('\u001e', v.Pair))
                : null;

        var oldPairs = new Dictionary<string, SnapshotValue>(StringComparer.Ordinal);
        foreach (var v in oldValues.Values)
        {
            if (PairKey(v) is { } k)
            {
                oldPairs.TryAdd(k, v);
            }
        }

        foreach (var n in newValues.Values)
        {
            if (PairKey(n) is { } pk)
            {
                if (oldPairs.TryGetValue(pk, out var op) && Flip(op, n, oldAlpha, newAlpha) is { } pf)
                {
                    var (was, now) = pf ? ("separated", "not separated") : ("not separated", "separated");
                    yield return Decision(DecisionKinds.Pair, op, n, was, now, $"{n.Block} › {n.Term} › {string.Join(" vs ", n.Pair!)}: {was} → {now} (adjusted p {op.Text()} → {n.Text()}{Procedure(op, n)})");
                }

                continue;
            }

            if (!oldValues.TryGetValue(n.Key, out var o))
            {
                continue;
            }

            if (EffectTests.TryGetValue(n.Test, out var test) && n.Stat == "p" && n.Level is null && Flip(o, n, oldAlpha, newAlpha) is { } ef)
            {
                var (was, now) = ef ? ("rejects", "does not reject") : ("does not reject", "rejects");
                yield return Decision(DecisionKinds.Effect, o, n, was, now, $"{n.Block} › {test} › {n.Term}: {was} → {now} the hypothesis of no effect (p {o.Text()} → {n.Text()})");
            }
            else if (Checks.TryGetValue(n.Test, out var words) && n.Stat is "p" or "p_bonferroni" && (!words.WholeTestOnly || n.Level is null) && Flip(o, n, oldAlpha, newAlpha) is { } af)
            {
                var (was, now) = af ? (words.Below, words.Above) : (words.Above, words.Below);
                yield return Decision(DecisionKinds.Assumption, o, n, was, now, $"{n.Block} › {n.Test}{(n.Term is null ? string.Empty : " › " + n.Term)}{(n.Level is null ? string.Empty : " (" + n.Level + ")")}: {was} → {now} (p {o.Text()} → {n.Text()})");
            }
        }
    }

    private static string Procedure(SnapshotValue o, SnapshotValue n) =>
        o.Test == n.Test ? string.Empty : $"; {Name(o.Test)} → {Name(n.Test)}";

    /// <summary>True when the old value was below its alpha and the new is not, false for the reverse, null when no flip.</summary>
    private static bool? Flip(SnapshotValue o, SnapshotValue n, double oldAlpha, double newAlpha)
    {
        if (o.Value is not { } x || n.Value is not { } y)
        {
            return null;
        }

        var before = x < oldAlpha;
        var after = y < newAlpha;
        return before == after ? null : before;
    }

    private static FlippedDecision Decision(string kind, SnapshotValue o, SnapshotValue n, string was, string now, string description) =>
        new(kind, n.Block, n.Test, n.Term, n.Pair, was, now, description)
        {
            Stat = n.Stat,
            OldTest = o.Test,
            OldValue = o.Value,
            NewValue = n.Value,
            OldText = o.Text(),
            NewText = n.Text(),
        };

    private static string Name(string test) => ProcedureNames.GetValueOrDefault(test, test);

    private static string Num(double v) => v.ToString("R", CultureInfo.InvariantCulture);

    private static List<InputChange> Inputs(BuildSnapshot old, BuildSnapshot @new)
    {
        var result = new List<InputChange>();
        foreach (var n in @new.Inputs)
        {
            var o = old.Inputs.FirstOrDefault(i => i.Name == n.Name);
            if (o is null)
            {
                result.Add(new InputChange(n.Name, "added", null, n, null, null));
                continue;
            }

            if (o.Sha256 == n.Sha256 && o.Path == n.Path)
            {
                continue;
            }

            TableChanges? rows = null;
            string? why = null;
            if (o.Sha256 == n.Sha256)
            {
                why = "same bytes at another path";
            }
            else if (!TableDiff.IsTabular(n.Path) || !TableDiff.IsTabular(o.Path))
            {
                why = "not a CSV/TSV file; compared by hash only";
            }
            else if (o.LocalFile is null || n.LocalFile is null)
            {
                why = "the bytes of " + (o.LocalFile is null ? "the old" : "the new") + " file are not at hand (the file on disk has another hash); compared by hash only";
            }
            else
            {
                try
                {
                    rows = TableDiff.Compare(o.LocalFile, n.LocalFile);
                }
                catch (Exception e) when (e is IOException or UnauthorizedAccessException)
                {
                    why = "cannot read the files to compare rows: " + e.Message;
                }
            }

            result.Add(new InputChange(n.Name, "changed", o, n, rows, why));
        }

        foreach (var o in old.Inputs.Where(o => @new.Inputs.All(i => i.Name != o.Name)))
        {
            result.Add(new InputChange(o.Name, "removed", o, null, null, null));
        }
        return result;
    }

    /// <summary>Sentences only in the old text and only in the new, by a longest-common-subsequence alignment.</summary>
    public static (List<string> Removed, List<string> Added) SentenceDiff(IReadOnlyList<string> a, IReadOnlyList<string> b)
    {
        var n = a.Count;
        var m = b.Count;
        var lcs = new int[n + 1, m + 1];
        for (var i = n - 1; i >= 0; i--)
        {
            for (var j = m - 1; j >= 0; j--)
            {
                lcs[i, j] = string.Equals(a[i], b[j], StringComparison.Ordinal) ? lcs[i + 1, j + 1] + 1 : Math.Max(lcs[i + 1, j], lcs[i, j + 1]);
            }
        }

        var removed = new List<string>();
        var added = new List<string>();
        int x = 0, y = 0;
        while (x < n && y < m)
        {
            if (string.Equals(a[x], b[y], StringComparison.Ordinal))
            {
                x++;
                y++;
            }
            else if (lcs[x + 1, y] >= lcs[x, y + 1])
            {
                removed.Add(a[x++]);
            }
            else
            {
                added.Add(b[y++]);
            }
        }

        removed.AddRange(a.Skip(x));
        added.AddRange(b.Skip(y));
        return (removed, added);
    }
}
