using System.Globalization;
using System.Text;
using StudyPress.Charts;

namespace StudyPress.Comparison;

/// <summary>
/// The comparison for a terminal: flipped decisions first, then inputs, values, methods text and
/// blocks, then a summary line. ANSI colour only when asked (stdout a terminal and NO_COLOR unset).
/// </summary>
public static class ComparisonText
{
    // Colours are marked with private-use characters while a line is built and become ANSI codes
    // only after the line is escaped (UnsafeText), so text from data or reports can never reach the
    // terminal as a control sequence.
    private const string Reset = "\uE000";
    private const string Bold = "\uE001";
    private const string Red = "\uE002";
    private const string Green = "\uE003";
    private const string Yellow = "\uE004";
    private static readonly string[] Codes = ["\u001b[0m", "\u001b[1m", "\u001b[31m", "\u001b[32m", "\u001b[33m"];

    /// <summary>One line for the terminal: unsafe characters escaped (\uXXXX), then the colour marks made codes.</summary>
    private static string Safe(string line)
    {
        var escaped = Diagnostics.UnsafeText.Escape(line);
        if (escaped.AsSpan().IndexOfAnyInRange('\uE000', '\uE004') < 0)
        {
            return escaped;
        }

        var sb = new StringBuilder(escaped.Length + 16);
        foreach (var ch in escaped)
        {
            sb.Append(ch is >= '\uE000' and <= '\uE004' ? Codes[ch - '\uE000'] : ch.ToString());
        }

        return sb.ToString();
    }

    public static string Write(ComparisonResult r, bool colour)
    {
        var sb = new StringBuilder();
        string C(string code, string text) => colour ? code + text + Reset : text;
        void Line(string text = "") => sb.Append(Safe(text)).Append('\n');

        Line($"studypress diff: {r.Old.Label} → {r.New.Label}");
        Line($"  alpha {Alpha(r.Old)} → {Alpha(r.New)}");
        if (r.StudyChanged)
        {
            Line($"  study file changed (sha256 {Short(r.Old.StudySha256)} → {Short(r.New.StudySha256)})");
        }

        Line();
        Line(C(Bold + Yellow, $"Decisions flipped: {r.Decisions.Count}"));
        foreach (var d in r.Decisions)
        {
            Line("  " + C(Yellow, "! " + d.Description));
        }

        if (r.Inputs.Count > 0)
        {
            Line();
            Line(C(Bold, $"Inputs changed: {r.Inputs.Count}"));
            foreach (var i in r.Inputs)
            {
                var path = i.New?.Path ?? i.Old!.Path;
                switch (i.Status)
                {
                    case "added":
                        Line("  " + C(Green, $"+ {i.Name} ({path}) added"));
                        continue;
                    case "removed":
                        Line("  " + C(Red, $"- {i.Name} ({path}) removed"));
                        continue;
                }

                Line($"  {i.Name} ({(i.Old!.Path == i.New!.Path ? path : i.Old.Path + " → " + path)}): sha256 {Short(i.Old.Sha256)} → {Short(i.New.Sha256)}");
                if (i.Rows is { } t)
                {
                    if (t.HeaderChanged)
                    {
                        Line("    " + C(Red, "- header: " + t.OldHeader));
                        Line("    " + C(Green, "+ header: " + t.NewHeader));
                    }

                    Line(string.Create(CultureInfo.InvariantCulture, $"    rows {t.OldRows} → {t.NewRows}: {t.Added} added, {t.Removed} removed, {t.Changed} changed"));
                    foreach (var c in t.ChangedExamples)
                    {
                        Line("    " + C(Yellow, string.Create(CultureInfo.InvariantCulture, $"~ line {c.OldLine}: {c.Old}  →  line {c.NewLine}: {c.New}")));
                    }

                    foreach (var a in t.AddedExamples)
                    {
                        Line("    " + C(Green, string.Create(CultureInfo.InvariantCulture, $"+ line {a.Line}: {a.Text}")));
                    }

                    foreach (var a in t.RemovedExamples)
                    {
                        Line("    " + C(Red, string.Create(CultureInfo.InvariantCulture, $"- line {a.Line}: {a.Text}")));
                    }
                }
                else if (i.RowsNote is not null)
                {
                    Line("    rows not compared: " + i.RowsNote);
                }
            }
        }

        if (r.Changed.Count > 0)
        {
            Line();
            Line(C(Bold, $"Values changed: {r.Changed.Count}"));
            foreach (var group in r.Changed.GroupBy(c => c.New.Block + " › " + c.New.Test))
            {
                Line("  " + group.Key);
                foreach (var c in group)
                {
                    Line($"    {Where(c.New)}: " + C(Red, c.Old.Text()) + " → " + C(Green, c.New.Text()));
                }
            }
        }

        ListValues(r.Added, "Values added", "+", Green, r.BlocksAdded);
        ListValues(r.Removed, "Values removed", "-", Red, r.BlocksRemoved);

        if (r.Sentences.Count > 0)
        {
            Line();
            Line(C(Bold, $"Methods text changed: {r.Sentences.Sum(s => s.Added.Count + s.Removed.Count)} sentences"));
            foreach (var s in r.Sentences)
            {
                Line("  " + s.Block);
                foreach (var x in s.Removed)
                {
                    Line("    " + C(Red, "- " + x));
                }

                foreach (var x in s.Added)
                {
                    Line("    " + C(Green, "+ " + x));
                }
            }
        }

        if (r.BlocksAdded.Count + r.BlocksRemoved.Count > 0)
        {
            Line();
            Line(C(Bold, "Blocks"));
            foreach (var b in r.BlocksAdded)
            {
                Line("  " + C(Green, "+ " + b + Kind(r.New, b)));
            }

            foreach (var b in r.BlocksRemoved)
            {
                Line("  " + C(Red, "- " + b + Kind(r.Old, b)));
            }
        }

        foreach (var n in r.Notes)
        {
            Line();
            Line("note: " + n);
        }

        Line();
        Line(Summary(r));
        return sb.ToString();

        void ListValues(IReadOnlyList<SnapshotValue> values, string title, string sign, string code, IReadOnlyList<string> wholeBlocks)
        {
            if (values.Count == 0)
            {
                return;
            }

            Line();
            Line(C(Bold, $"{title}: {values.Count}"));
            var whole = wholeBlocks.ToHashSet(StringComparer.Ordinal);
            foreach (var b in values.Where(v => whole.Contains(v.Block)).GroupBy(v => v.Block))
            {
                Line("  " + C(code, string.Create(CultureInfo.InvariantCulture, $"{sign} block {b.Key}: {b.Count()} values")));
            }

            foreach (var group in values.Where(v => !whole.Contains(v.Block)).GroupBy(v => v.Block + " › " + v.Test))
            {
                Line("  " + group.Key);
                foreach (var v in group)
                {
                    Line("    " + C(code, $"{sign} {Where(v)}: {v.Text()}"));
                }
            }
        }
    }

    /// <summary>One line: what changed, in counts.</summary>
    public static string Summary(ComparisonResult r) => string.Create(
        CultureInfo.InvariantCulture,
        $"Summary: {NumberText.Count(r.Decisions.Count, "decision")} flipped, {NumberText.Count(r.Changed.Count, "value")} changed, {r.Added.Count} added, {r.Removed.Count} removed, {NumberText.Count(r.Inputs.Count, "input")} changed, {NumberText.Count(r.Sentences.Sum(s => s.Added.Count + s.Removed.Count), "methods sentence")} changed, {NumberText.Count(r.BlocksAdded.Count, "block")} added, {r.BlocksRemoved.Count} removed.");

    /// <summary>The path below block and test: term › level › A vs B › stat.</summary>
    internal static string Where(SnapshotValue v)
    {
        var parts = new List<string>();
        if (v.Term is not null)
        {
            parts.Add(v.Term);
        }

        if (v.Level is not null)
        {
            parts.Add(v.Level);
        }

        if (v.Pair is not null)
        {
            parts.Add(string.Join(" vs ", v.Pair));
        }

        parts.Add(v.Stat);
        return string.Join(" › ", parts);
    }

    internal static string Alpha(BuildSnapshot s) =>
        s.Alpha is { } a ? a.ToString("R", CultureInfo.InvariantCulture) + " (" + s.AlphaSource + ")" : "unknown";

    internal static string Short(string sha) => sha.Length > 12 ? sha[..12] : sha;

    private static string Kind(BuildSnapshot s, string block) =>
        s.Blocks.FirstOrDefault(b => b.Id == block).Kind is { Length: > 0 } k ? " (" + k + ")" : string.Empty;

    /// <summary>
    /// A plain-text rendering of one build, line by line, for <c>git diff</c> (textconv): inputs,
    /// every value with the text the report shows, the decisions, and the methods sentences.
    /// </summary>
    public static string Of(BuildSnapshot s)
    {
        var sb = new StringBuilder();
        void Line(string text) => sb.Append(Safe(text)).Append('\n');
        Line($"study {s.StudyPath} sha256 {s.StudySha256}");
        Line("alpha " + (s.Alpha is { } a ? a.ToString("R", CultureInfo.InvariantCulture) : "unknown"));
        foreach (var i in s.Inputs)
        {
            Line(string.Create(CultureInfo.InvariantCulture, $"input {i.Name} {i.Path} sha256 {i.Sha256} rows {i.Rows?.ToString(CultureInfo.InvariantCulture) ?? "?"}"));
        }

        foreach (var (id, kind) in s.Blocks)
        {
            Line($"block {id}{(kind.Length > 0 ? " (" + kind + ")" : string.Empty)}");
        }

        foreach (var d in BuildComparison.Decisions(s))
        {
            Line("decision " + d);
        }

        foreach (var v in s.Values)
        {
            Line($"value {v.PathText()} = {v.Text()}");
        }

        foreach (var (block, sentences) in s.MethodsSentences ?? new Dictionary<string, IReadOnlyList<string>>())
        {
            foreach (var x in sentences)
            {
                Line($"methods {block}: {x}");
            }
        }

        return sb.ToString();
    }
}
