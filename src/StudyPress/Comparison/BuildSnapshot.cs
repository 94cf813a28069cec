using System.Globalization;
using System.Text;

namespace StudyPress.Comparison;

/// <summary>What a build is compared from: a report, a results manifest, or a study compiled in memory.</summary>
public enum SnapshotSource
{
    Report,
    Manifest,
    Study,
}

/// <summary>
/// One manifest value with its identity path (block, test, term, level, pair, stat) and what the
/// report showed for it: display text per style (<c>""</c> for the report's ordinary format,
/// otherwise the <c>data-style</c> rule). An empty display map means the value is not shown.
/// </summary>
public sealed record SnapshotValue(
    string Block,
    string Test,
    string? Term,
    string? Level,
    IReadOnlyList<string>? Pair,
    string Stat,
    double? Value,
    string? Reason,
    IReadOnlyDictionary<string, string> Display)
{
    /// <summary>The identity of a value across builds: its path, never its position or id.</summary>
    public string Key => PathKey(Block, Test, Term, Level, Pair, Stat);

    /// <summary>The text shown first for the value (the ordinary format when shown that way).</summary>
    public string? Shown => Display.TryGetValue(string.Empty, out var plain) ? plain : Display.Count > 0 ? Display.OrderBy(d => d.Key, StringComparer.Ordinal).First().Value : null;

    /// <summary>The path as a reader writes it: block › test › term › level › A vs B › stat.</summary>
    public string PathText()
    {
        var sb = new StringBuilder(Block).Append(" › ").Append(Test);
        if (Term is not null)
        {
            sb.Append(" › ").Append(Term);
        }

        if (Level is not null)
        {
            sb.Append(" › ").Append(Level);
        }

        if (Pair is not null)
        {
            sb.Append(" › ").Append(string.Join(" vs ", Pair));
        }

        return sb.Append(" › ").Append(Stat).ToString();
    }

    /// <summary>The value as text: the displayed text, or the full-precision value when not shown.</summary>
    public string Text() => Value is null ? "n/d" : Shown ?? Full(Value.Value);

    public static string Full(double v) => v.ToString("R", CultureInfo.InvariantCulture);

    internal static string PathKey(string block, string test, string? term, string? level, IReadOnlyList<string>? pair, string stat) =>
        string.Join('\u001f', block, test, term ?? "\u0000", level ?? "\u0000", pair is null ? "\u0000" : string.Join('\u001e', pair), stat);
}

/// <summary>One input file as a build recorded it, with a readable copy of its bytes when one is at hand.</summary>
public sealed record SnapshotInput(string Name, string Path, string Sha256, long? Rows, long? RowsUsed)
{
    /// <summary>A local file with exactly the recorded bytes (hash checked), or null when unavailable.</summary>
    public string? LocalFile { get; init; }
}

/// <summary>Everything of one build the comparison reads.</summary>
public sealed record BuildSnapshot
{
    /// <summary>How the user named this side (a path, or REV:path).</summary>
    public required string Label { get; init; }

    public required SnapshotSource Source { get; init; }

    public required string StudyPath { get; init; }

    public required string StudySha256 { get; init; }

    public required string ToolVersion { get; init; }

    /// <summary>The study's significance level; null when it could not be established.</summary>
    public required double? Alpha { get; init; }

    /// <summary>Where <see cref="Alpha"/> came from (for the output).</summary>
    public required string AlphaSource { get; init; }

    public required IReadOnlyList<SnapshotInput> Inputs { get; init; }

    public required IReadOnlyList<SnapshotValue> Values { get; init; }

    /// <summary>Block ids in document order with their kind ("" when only the manifest names the block).</summary>
    public required IReadOnlyList<(string Id, string Kind)> Blocks { get; init; }

    /// <summary>The sentences of each methods block (null for a manifest: the text is only in the report).</summary>
    public required IReadOnlyDictionary<string, IReadOnlyList<string>>? MethodsSentences { get; init; }
}
