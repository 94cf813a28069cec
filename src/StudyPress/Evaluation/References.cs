using System.Text;
using StudyPress.Diagnostics;
using StudyPress.Syntax;

namespace StudyPress.Evaluation;

/// <summary>
/// Prose references: <c>{{ block.part.part.stat }}</c>. The first part names a block, the last a
/// statistic; the parts between pick the value by any of its manifest components in order
/// (test, term, level, pair). A part is a name (letters, digits, '_', '-') or a quoted string for
/// level names with spaces or dots: <c>{{ desc."Nozzle A".mean }}</c>. When several values match,
/// the block's main test wins (<c>{{ main.dose.f }}</c> is the ANOVA F, not Welch's).
/// Limits: 200 characters and 8 parts per reference, so a reference cannot make the build work hard.
/// </summary>
public static class References
{
    public const int MaxLength = 200;
    public const int MaxParts = 8;

    /// <summary>Splits a reference into parts; returns null and a reason when it cannot.</summary>
    public static IReadOnlyList<string>? Split(string text, out string? error)
    {
        error = null;
        if (text.Length > MaxLength)
        {
            error = $"a reference may be at most {MaxLength} characters";
            return null;
        }

        var parts = new List<string>();
        var i = 0;
        while (true)
        {
            while (i < text.Length && text[i] == ' ')
            {
                i++;
            }

            if (i >= text.Length)
            {
                error = parts.Count == 0 ? "it is empty" : "it ends with '.'";
                return null;
            }

            if (text[i] is '"' or '\'')
            {
                var quote = text[i++];
                var sb = new StringBuilder();
                while (i < text.Length && text[i] != quote)
                {
                    if (text[i] == '\\' && i + 1 < text.Length)
                    {
                        i++;
                    }

                    sb.Append(text[i++]);
                }

                if (i >= text.Length)
                {
                    error = "a quoted part is not closed";
                    return null;
                }

                i++;
                parts.Add(sb.ToString());
            }
            else
            {
                var start = i;
                while (i < text.Length && (char.IsLetterOrDigit(text[i]) || text[i] is '_' or '-' or '+'))
                {
                    i++;
                }

                if (i == start)
                {
                    error = $"unexpected '{text[i]}'; write parts as names separated by '.', and quote names with other characters";
                    return null;
                }

                parts.Add(text[start..i]);
            }

            while (i < text.Length && text[i] == ' ')
            {
                i++;
            }

            if (i >= text.Length)
            {
                break;
            }

            if (text[i] != '.')
            {
                error = $"unexpected '{text[i]}' after '{parts[^1]}'";
                return null;
            }

            i++;
            if (parts.Count >= MaxParts)
            {
                error = $"a reference has at most {MaxParts} parts";
                return null;
            }
        }

        if (parts.Count < 2)
        {
            error = "name a block and a statistic, for example {{ main.dose.f }}";
            return null;
        }

        return parts;
    }

    /// <summary>The canonical way to write a reference to a value.</summary>
    public static string PathOf(ResultValue v) =>
        string.Join(".", new[] { v.Block }.Concat(v.Components()).Append(v.Stat).Select(QuoteIfNeeded));

    private static string QuoteIfNeeded(string part) =>
        part.Length > 0 && part.All(c => char.IsLetterOrDigit(c) || c is '_' or '-' or '+')
            ? part
            : "\"" + part.Replace("\\", "\\\\", StringComparison.Ordinal).Replace("\"", "\\\"", StringComparison.Ordinal) + "\"";

    /// <summary>Resolves a reference against the values; reports and returns null on failure.</summary>
    public static ResultValue? Resolve(ReferenceInline reference, ResultSet results, IReadOnlyDictionary<string, string> primaryTests, DiagnosticBag diagnostics)
    {
        var parts = Split(reference.Text, out var error);
        if (parts is null)
        {
            diagnostics.BadReferenceSyntax(reference.Location, reference.Text, error!);
            return null;
        }

        var block = parts[0];
        if (!primaryTests.TryGetValue(block, out var primary))
        {
            diagnostics.UnknownBlockReference(reference.Location, block, DiagnosticBag.Nearest(block, primaryTests.Keys));
            return null;
        }

        var stat = parts[^1];
        var middle = parts.Skip(1).Take(parts.Count - 2).ToArray();
        var ofBlock = results.Values.Where(v => v.Block == block).ToList();
        var matches = ofBlock.Where(v => v.Stat == stat && IsSubsequence(middle, [.. v.Components()])).ToList();
        if (matches.Count > 1)
        {
            var primaryMatches = matches.Where(v => v.Test == primary).ToList();
            if (primaryMatches.Count > 0)
            {
                matches = primaryMatches;
            }
        }

        if (matches.Count == 1)
        {
            return matches[0];
        }

        if (matches.Count > 1)
        {
            diagnostics.AmbiguousReference(reference.Location, reference.Text, matches.Take(4).Select(PathOf));
            return null;
        }

        // Suggest: the same parts with the nearest statistic of the values they select, else the
        // nearest full path of the block.
        var selected = ofBlock.Where(v => IsSubsequence(middle, [.. v.Components()])).Select(v => v.Stat).Distinct().ToList();
        var nearStat = selected.Where(s => stat.StartsWith(s, StringComparison.Ordinal) || s.StartsWith(stat, StringComparison.Ordinal)).OrderByDescending(s => s.Length).FirstOrDefault()
            ?? DiagnosticBag.Nearest(stat, selected);
        var suggestion = nearStat is not null && middle.Length > 0
            ? string.Join(".", parts.Take(parts.Count - 1).Append(nearStat).Select(QuoteIfNeeded))
            : DiagnosticBag.Nearest(reference.Text.Replace(" ", string.Empty, StringComparison.Ordinal), ofBlock.Select(PathOf));
        diagnostics.UnknownReference(reference.Location, reference.Text, suggestion);
        return null;
    }

    private static bool IsSubsequence(string[] wanted, string[] components)
    {
        var j = 0;
        foreach (var c in components)
        {
            if (j < wanted.Length && wanted[j] == c)
            {
                j++;
            }
        }

        return j == wanted.Length;
    }
}
