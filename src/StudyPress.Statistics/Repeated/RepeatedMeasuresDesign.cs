using System.Globalization;
using StudyPress.Statistics.Designs;

namespace StudyPress.Statistics.Repeated;

/// <summary>How the subject labels of a design with between-subject factors are written.</summary>
public enum SubjectLabels
{
    /// <summary>
    /// Each subject has its own label across the whole study (P01 .. P24). A label that occurs
    /// under two combinations of the between-subject factors is a contradiction (a subject belongs
    /// to one group) and is reported as a <see cref="DesignIssueKind.ContradictoryNesting"/> issue.
    /// </summary>
    UniqueAcrossGroups = 0,

    /// <summary>
    /// Subjects are numbered within each group (1, 2, 3, 4 in every group): the subject is the
    /// label together with its between-subject levels, as for a nested factor in
    /// <see cref="StrataAnova"/>.
    /// </summary>
    NumberedWithinGroups = 1,
}

/// <summary>
/// A repeated-measures design: the subject (the unit measured repeatedly), the within-subject
/// factors (each subject is measured at every combination of their levels) and the
/// between-subject factors (each subject belongs to one combination of their levels).
/// </summary>
public sealed record RepeatedMeasuresDesign(
    string Subject,
    IReadOnlyList<string> Within,
    IReadOnlyList<string> Between,
    SubjectLabels SubjectLabels = SubjectLabels.UniqueAcrossGroups);

/// <summary>
/// Long-format data: one entry per measurement, with the subject's label, the label of every
/// within factor and every between factor (same order as in the design) and the response. A
/// response that is not finite (NaN) is a missing measurement.
/// </summary>
public sealed record RepeatedMeasuresData(
    double[] Response,
    IReadOnlyList<string> Subject,
    IReadOnlyList<IReadOnlyList<string>> Within,
    IReadOnlyList<IReadOnlyList<string>> Between);

/// <summary>
/// A subject left out of the classical (complete-subjects) analysis because it lacks a
/// measurement in at least one within-subject cell. <paramref name="MissingCells"/> names the
/// first (at most <see cref="RepeatedMeasuresAnova.MissingCellsListed"/>) missing cells, e.g.
/// "time t3, light low", in cell order; <paramref name="MissingCellCount"/> counts all of them.
/// <paramref name="NotFinite"/> counts measurements present as rows whose response was not a
/// number (treated as missing).
/// </summary>
public sealed record DroppedSubject(
    string Subject,
    IReadOnlyList<string> BetweenLevels,
    int Measurements,
    int MissingCellCount,
    IReadOnlyList<string> MissingCells,
    int NotFinite)
{
    /// <summary>Why the subject was dropped, in words a user can act on.</summary>
    public string Reason
    {
        get
        {
            var listed = string.Join("; ", MissingCells);
            var more = MissingCellCount > MissingCells.Count
                ? string.Create(CultureInfo.InvariantCulture, $" and {MissingCellCount - MissingCells.Count} more")
                : string.Empty;
            var nan = NotFinite > 0
                ? string.Create(CultureInfo.InvariantCulture, $" ({NotFinite} value(s) not a number, counted as missing)")
                : string.Empty;
            return string.Create(CultureInfo.InvariantCulture, $"incomplete: no measurement for {listed}{more}{nan}; the classical repeated-measures analysis needs every within-subject cell of every subject");
        }
    }
}

/// <summary>
/// The data of a repeated-measures design arranged by subject: levels, within-subject cells and,
/// for every complete subject, its cell means. Built once and shared by the classical analysis,
/// the comparisons and the mixed-model route.
/// </summary>
internal sealed class RepeatedLayout
{
    public required RepeatedMeasuresDesign Design { get; init; }

    /// <summary>Levels of each within factor, in order of first appearance.</summary>
    public required IReadOnlyList<string>[] WithinLevels { get; init; }

    /// <summary>Levels of each between factor among the complete subjects, in order of first appearance.</summary>
    public required IReadOnlyList<string>[] BetweenLevels { get; init; }

    /// <summary>Number of within-subject cells w = Π k_f; cell index = Σ code_f stride_f, last factor fastest.</summary>
    public required int Cells { get; init; }

    public required int[] Strides { get; init; }

    /// <summary>Complete subjects' labels (as shown), in order of first appearance.</summary>
    public required List<string> Subjects { get; init; }

    /// <summary>For each complete subject, its between-level codes (into <see cref="BetweenLevels"/>).</summary>
    public required List<int[]> SubjectBetween { get; init; }

    /// <summary>For each complete subject, the mean of its measurements in each cell.</summary>
    public required List<double[]> Means { get; init; }

    /// <summary>Subject × cell combinations with more than one measurement (averaged).</summary>
    public required int ReplicatedCells { get; init; }

    public required List<DroppedSubject> Dropped { get; init; }

    /// <summary>The cell's levels in words, e.g. "time t2, light low".</summary>
    public string CellName(int cell)
    {
        var parts = new string[Design.Within.Count];
        for (var f = 0; f < parts.Length; f++)
        {
            parts[f] = Design.Within[f] + " " + WithinLevels[f][(cell / Strides[f]) % WithinLevels[f].Count];
        }

        return string.Join(", ", parts);
    }

    /// <summary>The level code of within factor <paramref name="f"/> in <paramref name="cell"/>.</summary>
    public int LevelOf(int cell, int f) => (cell / Strides[f]) % WithinLevels[f].Count;
}

/// <summary>Builds a <see cref="RepeatedLayout"/> and reports what stops the classical analysis.</summary>
internal static class RepeatedLayoutBuilder
{
    public const int MaxFactors = 8;
    public const int MaxCells = 256; // scores cost N w² and contrast matrices are w x w at most

    /// <summary>Checks the declaration and the shape of the data; throws on a programming error (lengths).</summary>
    public static DesignIssue? CheckDeclaration(RepeatedMeasuresDesign design, RepeatedMeasuresData data)
    {
        ArgumentNullException.ThrowIfNull(design);
        ArgumentNullException.ThrowIfNull(data);
        var n = data.Response.Length;
        if (data.Subject.Count != n || data.Within.Count != design.Within.Count || data.Between.Count != design.Between.Count
            || data.Within.Any(c => c.Count != n) || data.Between.Any(c => c.Count != n))
        {
            throw new ArgumentException("the data need one subject label and one label per declared factor for every measurement", nameof(data));
        }

        if (design.Within.Count == 0)
        {
            return new DesignIssue(DesignIssueKind.Declaration, "a repeated-measures design needs at least one within-subject factor", [design.Subject]);
        }

        if (design.Within.Count + design.Between.Count > MaxFactors)
        {
            return new DesignIssue(DesignIssueKind.Declaration, string.Create(CultureInfo.InvariantCulture, $"a repeated-measures design can have at most {MaxFactors} within- and between-subject factors"), []);
        }

        var names = new HashSet<string>(StringComparer.Ordinal) { design.Subject };
        foreach (var name in design.Within.Concat(design.Between))
        {
            if (!names.Add(name))
            {
                return new DesignIssue(DesignIssueKind.Declaration, "the name " + name + " is used twice in the design (subject, within- and between-subject factors need distinct names)", [name]);
            }
        }

        return null;
    }

    public static DesignIssue? Build(RepeatedMeasuresDesign design, RepeatedMeasuresData data, out RepeatedLayout? layout)
    {
        layout = null;
        var issue = CheckDeclaration(design, data);
        if (issue is not null)
        {
            return issue;
        }

        var n = data.Response.Length;
        var kw = design.Within.Count;
        var kb = design.Between.Count;

        // Within levels over all rows (a level that appears anywhere is a cell every subject needs).
        var withinCodes = new int[kw][];
        var withinLevels = new IReadOnlyList<string>[kw];
        for (var f = 0; f < kw; f++)
        {
            withinCodes[f] = Codes(data.Within[f], out var levels);
            withinLevels[f] = levels;
            if (levels.Count < 2)
            {
                return new DesignIssue(DesignIssueKind.SingleLevel, design.Within[f] + " has a single level in the data, so it has no contrast to test", [design.Within[f]]);
            }
        }

        long cellsLong = 1;
        foreach (var l in withinLevels)
        {
            cellsLong *= l.Count;
            if (cellsLong > MaxCells)
            {
                return new DesignIssue(DesignIssueKind.Declaration, string.Create(CultureInfo.InvariantCulture, $"the within-subject factors have more than {MaxCells} level combinations; the classical repeated-measures analysis is limited to {MaxCells} measurements per subject"), [.. design.Within]);
            }
        }

        var cells = (int)cellsLong;
        var strides = new int[kw];
        var stride = 1;
        for (var f = kw - 1; f >= 0; f--)
        {
            strides[f] = stride;
            stride *= withinLevels[f].Count;
        }

        // Subjects: identity is the label (unique labels) or the label within its between levels.
        var subjectIndex = new Dictionary<string, int>(StringComparer.Ordinal);
        var subjectLabel = new List<string>();
        var subjectFirstRow = new List<int>();
        var subjectOf = new int[n];
        for (var i = 0; i < n; i++)
        {
            var key = data.Subject[i];
            if (design.SubjectLabels == SubjectLabels.NumberedWithinGroups)
            {
                for (var b = 0; b < kb; b++)
                {
                    key += "\u001f" + data.Between[b][i];
                }
            }

            if (!subjectIndex.TryGetValue(key, out var s))
            {
                s = subjectLabel.Count;
                subjectIndex.Add(key, s);
                subjectLabel.Add(design.SubjectLabels == SubjectLabels.NumberedWithinGroups && kb > 0
                    ? data.Subject[i] + " (" + string.Join(", ", Enumerable.Range(0, kb).Select(b => design.Between[b] + " " + data.Between[b][i])) + ")"
                    : data.Subject[i]);
                subjectFirstRow.Add(i);
            }
            else
            {
                var i0 = subjectFirstRow[s];
                for (var b = 0; b < kb; b++)
                {
                    if (!string.Equals(data.Between[b][i0], data.Between[b][i], StringComparison.Ordinal))
                    {
                        return new DesignIssue(
                            DesignIssueKind.ContradictoryNesting,
                            design.Subject + " " + data.Subject[i] + " appears under " + design.Between[b] + " " + data.Between[b][i0] + " and under " + design.Between[b] + " " + data.Between[b][i] + ", but a subject belongs to one level of a between-subject factor",
                            [design.Subject, design.Between[b]]);
                    }
                }
            }

            subjectOf[i] = s;
        }

        var subjects = subjectLabel.Count;

        // Aggregate by (subject, cell): sort the finite rows by key, then one pass.
        var keys = new List<(long Key, int Row)>(n);
        var notFinite = new int[subjects];
        var rows = new int[subjects];
        for (var i = 0; i < n; i++)
        {
            rows[subjectOf[i]]++;
            if (!double.IsFinite(data.Response[i]))
            {
                notFinite[subjectOf[i]]++;
                continue;
            }

            var cell = 0;
            for (var f = 0; f < kw; f++)
            {
                cell += withinCodes[f][i] * strides[f];
            }

            keys.Add(((long)subjectOf[i] * cells + cell, i));
        }

        keys.Sort((a, b) => a.Key != b.Key ? a.Key.CompareTo(b.Key) : a.Row.CompareTo(b.Row));
        var filled = new int[subjects];
        var replicated = 0;
        for (var j = 0; j < keys.Count;)
        {
            var k = j;
            while (k < keys.Count && keys[k].Key == keys[j].Key)
            {
                k++;
            }

            filled[(int)(keys[j].Key / cells)]++;
            if (k - j > 1)
            {
                replicated++;
            }

            j = k;
        }

        // Cell means of complete subjects (two-pass), in order of first appearance.
        var completeIndex = new int[subjects];
        var means = new List<double[]>();
        var kept = new List<int>();
        for (var s = 0; s < subjects; s++)
        {
            completeIndex[s] = -1;
            if (filled[s] == cells)
            {
                completeIndex[s] = kept.Count;
                kept.Add(s);
                means.Add(new double[cells]);
            }
        }

        var dropped = new List<DroppedSubject>();
        var present = new Dictionary<int, HashSet<int>>();
        for (var j = 0; j < keys.Count;)
        {
            var k = j;
            while (k < keys.Count && keys[k].Key == keys[j].Key)
            {
                k++;
            }

            var s = (int)(keys[j].Key / cells);
            var cell = (int)(keys[j].Key % cells);
            if (completeIndex[s] >= 0)
            {
                double sum = 0;
                for (var t = j; t < k; t++)
                {
                    sum += data.Response[keys[t].Row];
                }

                var m = sum / (k - j);
                double corr = 0;
                for (var t = j; t < k; t++)
                {
                    corr += data.Response[keys[t].Row] - m;
                }

                means[completeIndex[s]][cell] = m + (corr / (k - j));
            }
            else
            {
                if (!present.TryGetValue(s, out var set))
                {
                    set = [];
                    present.Add(s, set);
                }

                set.Add(cell);
            }

            j = k;
        }

        string CellName(int cell) => string.Join(", ", Enumerable.Range(0, kw).Select(f => design.Within[f] + " " + withinLevels[f][(cell / strides[f]) % withinLevels[f].Count]));

        for (var s = 0; s < subjects; s++)
        {
            if (completeIndex[s] >= 0)
            {
                continue;
            }

            var have = present.TryGetValue(s, out var set) ? set : [];
            var missing = new List<string>();
            var count = 0;
            for (var c = 0; c < cells; c++)
            {
                if (!have.Contains(c))
                {
                    count++;
                    if (missing.Count < RepeatedMeasuresAnova.MissingCellsListed)
                    {
                        missing.Add(CellName(c));
                    }
                }
            }

            var i0 = subjectFirstRow[s];
            dropped.Add(new DroppedSubject(
                subjectLabel[s],
                [.. Enumerable.Range(0, kb).Select(b => data.Between[b][i0])],
                rows[s] - notFinite[s],
                count,
                missing,
                notFinite[s]));
        }

        // Between levels among the complete subjects.
        var betweenLevels = new IReadOnlyList<string>[kb];
        var subjectBetween = kept.Select(_ => new int[kb]).ToList();
        for (var b = 0; b < kb; b++)
        {
            var map = new Dictionary<string, int>(StringComparer.Ordinal);
            var levels = new List<string>();
            for (var j = 0; j < kept.Count; j++)
            {
                var label = data.Between[b][subjectFirstRow[kept[j]]];
                if (!map.TryGetValue(label, out var code))
                {
                    code = levels.Count;
                    map.Add(label, code);
                    levels.Add(label);
                }

                subjectBetween[j][b] = code;
            }

            betweenLevels[b] = levels;
        }

        layout = new RepeatedLayout
        {
            Design = design,
            WithinLevels = withinLevels,
            BetweenLevels = betweenLevels,
            Cells = cells,
            Strides = strides,
            Subjects = [.. kept.Select(s => subjectLabel[s])],
            SubjectBetween = subjectBetween,
            Means = means,
            ReplicatedCells = replicated,
            Dropped = dropped,
        };
        return null;
    }

    /// <summary>The first problem that stops the classical analysis of a built layout, or null.</summary>
    public static DesignIssue? CheckClassical(RepeatedLayout layout, out int groups, out int[] groupOf)
    {
        var design = layout.Design;
        var kb = design.Between.Count;
        groups = 0;
        groupOf = [];
        var n = layout.Subjects.Count;
        if (n == 0)
        {
            return new DesignIssue(
                DesignIssueKind.TooFewObservations,
                string.Create(CultureInfo.InvariantCulture, $"no {design.Subject} has a measurement in every within-subject cell ({layout.Dropped.Count} incomplete), so the classical analysis is not possible; the mixed model keeps incomplete subjects"),
                [design.Subject]);
        }

        for (var b = 0; b < kb; b++)
        {
            if (layout.BetweenLevels[b].Count < 2)
            {
                return new DesignIssue(DesignIssueKind.SingleLevel, design.Between[b] + " has a single level among the complete subjects, so it has no contrast to test", [design.Between[b]]);
            }
        }

        // Groups: combinations of between levels; all must be present.
        long expected = 1;
        foreach (var l in layout.BetweenLevels)
        {
            expected *= l.Count;
        }

        var map = new Dictionary<string, int>(StringComparer.Ordinal);
        groupOf = new int[n];
        for (var s = 0; s < n; s++)
        {
            var key = string.Join(",", layout.SubjectBetween[s].Select(c => c.ToString(CultureInfo.InvariantCulture)));
            if (!map.TryGetValue(key, out var g))
            {
                g = map.Count;
                map.Add(key, g);
            }

            groupOf[s] = g;
        }

        groups = map.Count;
        if (groups != expected)
        {
            // Name one missing combination.
            foreach (var combo in Combinations(layout.BetweenLevels.Select(l => l.Count).ToArray()))
            {
                var key = string.Join(",", combo.Select(c => c.ToString(CultureInfo.InvariantCulture)));
                if (!map.ContainsKey(key))
                {
                    var words = string.Join(", ", Enumerable.Range(0, kb).Select(b => design.Between[b] + " " + layout.BetweenLevels[b][combo[b]]));
                    return new DesignIssue(
                        DesignIssueKind.MissingCombination,
                        "no complete " + design.Subject + " has " + words + "; every combination of the between-subject factors needs at least one complete subject",
                        [.. design.Between]);
                }
            }
        }

        if (n - groups < 1)
        {
            return new DesignIssue(
                DesignIssueKind.TooFewObservations,
                string.Create(CultureInfo.InvariantCulture, $"{n} complete subject(s) in {groups} group(s) leave no degrees of freedom for the error; at least one group needs two complete subjects"),
                [design.Subject]);
        }

        return null;
    }

    /// <summary>Every combination of codes for the given radices, last fastest (one empty combination for none).</summary>
    internal static IEnumerable<int[]> Combinations(int[] radix)
    {
        var c = new int[radix.Length];
        while (true)
        {
            yield return (int[])c.Clone();
            var f = radix.Length - 1;
            while (f >= 0)
            {
                if (++c[f] < radix[f])
                {
                    break;
                }

                c[f] = 0;
                f--;
            }

            if (f < 0)
            {
                yield break;
            }
        }
    }

    private static int[] Codes(IReadOnlyList<string> labels, out List<string> levels)
    {
        var map = new Dictionary<string, int>(StringComparer.Ordinal);
        levels = [];
        var codes = new int[labels.Count];
        for (var i = 0; i < labels.Count; i++)
        {
            if (!map.TryGetValue(labels[i], out var c))
            {
                c = levels.Count;
                map.Add(labels[i], c);
                levels.Add(labels[i]);
            }

            codes[i] = c;
        }

        return codes;
    }
}
