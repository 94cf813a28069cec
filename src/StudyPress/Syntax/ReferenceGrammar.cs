using System.Globalization;
using System.Text;

namespace StudyPress.Syntax;

/// <summary>
/// Prose references: <c>[=block.part.part.stat]</c>, optionally followed by formatting named in
/// words after commas: <c>[=main.dose.f, 2 decimals]</c>, <c>[=groups.flat-fan.mean, as percent]</c>,
/// <c>[=assay.welch.incubator, result]</c>. The first part names a block, the last a statistic;
/// the parts between pick the value by any of its manifest components in order (test, term,
/// level, pair). A part is a name (letters, digits, '_', '-', '+') or a quoted string for level
/// names with spaces, dots, commas or brackets: <c>[=desc."Nozzle A".mean]</c>. When several
/// values match, the block's main test wins (<c>[=main.dose.f]</c> is the ANOVA F, not Welch's).
/// Limits: 200 characters and 8 parts per reference, so a reference cannot make the build work hard.
/// </summary>
public static class ReferenceGrammar
{
    public const int MaxLength = 200;
    public const int MaxParts = 8;

    /// <summary>The most decimals a reference may ask for.</summary>
    public const int MaxDigits = 10;

    /// <summary>The formatting words, as the docs and messages name them (N is a whole number).</summary>
    public static readonly IReadOnlyList<string> WordForms = ["result", "N decimals", "no leading zero", "as percent", "as df", "number only"];

    /// <summary>Splits a reference into the parts of its path; returns null and a reason when it cannot.</summary>
    public static IReadOnlyList<string>? Split(string text, out string? error) => Parse(text, out error)?.Parts;

    /// <summary>
    /// Reads a reference (the text between <c>[=</c> and <c>]</c>): its path and the formatting
    /// words after commas. The words are recognised here, and each may be given once; an
    /// unrecognised word is kept as <see cref="FormatWord.Unknown"/> so that
    /// <c>References.Resolve</c> (Rendering) can suggest the nearest one. Whether a word applies to
    /// the value named is checked there.
    /// </summary>
    public static ReferenceExpression? Parse(string text, out string? error)
    {
        error = null;
        if (text.Length > MaxLength)
        {
            error = $"a reference may be at most {MaxLength} characters";
            return null;
        }

        var pieces = TopLevelCommas(text);
        var words = new List<ReferenceWord>();
        foreach (var piece in pieces.Skip(1))
        {
            var word = ReadWord(piece, out error);
            if (word is null)
            {
                return null;
            }

            if (word.Kind != FormatWord.Unknown && words.Any(w => w.Kind == word.Kind))
            {
                error = word.Kind == FormatWord.Decimals ? "the number of decimals is given twice" : $"'{word.Text}' is given twice";
                return null;
            }

            words.Add(word);
        }

        if (Conflict(words) is { } conflict)
        {
            error = conflict;
            return null;
        }

        var result = words.Any(w => w.Kind == FormatWord.Result);
        var parts = SplitPath(pieces[0], result ? 1 : 2, out error);
        return parts is null ? null : new ReferenceExpression(parts, words);
    }

    /// <summary>The text split at each ',' outside quotes (the first piece is the path).</summary>
    private static List<string> TopLevelCommas(string text)
    {
        var pieces = new List<string>();
        var start = 0;
        char? quote = null;
        for (var i = 0; i < text.Length; i++)
        {
            var c = text[i];
            if (quote is { } q)
            {
                if (c == '\\')
                {
                    i++;
                }
                else if (c == q)
                {
                    quote = null;
                }
            }
            else if (c is '"' or '\'')
            {
                quote = c;
            }
            else if (c == ',')
            {
                pieces.Add(text[start..i]);
                start = i + 1;
            }
        }

        pieces.Add(text[start..]);
        return pieces;
    }

    private static ReferenceWord? ReadWord(string piece, out string? error)
    {
        error = null;
        var text = string.Join(' ', piece.Split([' ', '\t', '\n'], StringSplitOptions.RemoveEmptyEntries));
        switch (text)
        {
            case "":
                error = "a formatting word is missing after ','; for example [=main.dose.f, 2 decimals]";
                return null;
            case "result":
                return new ReferenceWord(FormatWord.Result, text, 0);
            case "no leading zero":
                return new ReferenceWord(FormatWord.NoLeadingZero, text, 0);
            case "as percent":
                return new ReferenceWord(FormatWord.AsPercent, text, 0);
            case "as df":
                return new ReferenceWord(FormatWord.AsDf, text, 0);
            case "number only":
                return new ReferenceWord(FormatWord.NumberOnly, text, 0);
        }

        var space = text.IndexOf(' ', StringComparison.Ordinal);
        var unit = space < 0 ? string.Empty : text[(space + 1)..];
        if (unit is "decimals" or "decimal")
        {
            var count = text[..space];
            if (count.Length is 0 or > 2 || !count.All(char.IsAsciiDigit) || int.Parse(count, CultureInfo.InvariantCulture) > MaxDigits)
            {
                error = $"the number of decimals must be a whole number from 0 to {MaxDigits}, not '{count}'";
                return null;
            }

            return new ReferenceWord(FormatWord.Decimals, text, int.Parse(count, CultureInfo.InvariantCulture));
        }

        return new ReferenceWord(FormatWord.Unknown, text, 0);
    }

    /// <summary>Why two of the words cannot go together, or null.</summary>
    private static string? Conflict(List<ReferenceWord> words)
    {
        bool Has(FormatWord k) => words.Any(w => w.Kind == k);
        if (Has(FormatWord.Result) && words.Count > 1)
        {
            return "'result' writes a whole sentence in the report style and takes no other formatting";
        }

        if (Has(FormatWord.AsDf) && words.FirstOrDefault(w => w.Kind is FormatWord.Decimals or FormatWord.NoLeadingZero or FormatWord.AsPercent) is { } other)
        {
            return $"'as df' chooses its own decimals (whole numbers as such, others with two) and cannot be combined with '{other.Text}'";
        }

        if (Has(FormatWord.AsPercent) && Has(FormatWord.NoLeadingZero))
        {
            return "'as percent' and 'no leading zero' cannot be combined";
        }

        return null;
    }

    private static List<string>? SplitPath(string text, int minParts, out string? error)
    {
        error = null;

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

        if (parts.Count < minParts)
        {
            error = "name a block and a statistic, for example [=main.dose.f]";
            return null;
        }

        return parts;
    }

    public static string QuoteIfNeeded(string part) =>
        part.Length > 0 && part.All(c => char.IsLetterOrDigit(c) || c is '_' or '-' or '+')
            ? part
            : "\"" + part.Replace("\\", "\\\\", StringComparison.Ordinal).Replace("\"", "\\\"", StringComparison.Ordinal) + "\"";

}

/// <summary>What a formatting word asks for.</summary>
public enum FormatWord
{
    /// <summary>A word that is not one of <see cref="ReferenceGrammar.WordForms"/>.</summary>
    Unknown,

    /// <summary><c>result</c>: the whole result of a test as a sentence in the report style.</summary>
    Result,

    /// <summary><c>N decimals</c> (or <c>1 decimal</c>).</summary>
    Decimals,

    /// <summary><c>no leading zero</c>: ".63" for values that cannot exceed 1; p-values in the report style.</summary>
    NoLeadingZero,

    /// <summary><c>as percent</c>: the value times 100 with a '%' sign.</summary>
    AsPercent,

    /// <summary><c>as df</c>: degrees of freedom, whole numbers as such, others with two decimals.</summary>
    AsDf,

    /// <summary><c>number only</c>: a p-value without the "p =" in front of it.</summary>
    NumberOnly,
}

/// <summary>One formatting word after a comma, as written (spaces collapsed), with its number of decimals.</summary>
public sealed record ReferenceWord(FormatWord Kind, string Text, int Decimals);

/// <summary>A reference as written: the path's parts and the formatting words, in order.</summary>
public sealed record ReferenceExpression(IReadOnlyList<string> Parts, IReadOnlyList<ReferenceWord> Words)
{
    /// <summary>True when the reference asks for a result sentence.</summary>
    public bool IsResult => Words.Any(w => w.Kind == FormatWord.Result);

    /// <summary>The words as written after the path: ", 2 decimals, no leading zero" (empty when none).</summary>
    public string WordsText => string.Concat(Words.Select(w => ", " + w.Text));
}

/// <summary>
/// The brace form <c>{{ path | filter }}</c> that earlier versions read: it is no longer a reference, and
/// this rewrites what was written into the form to write instead, so the message can show it.
/// </summary>
public static class OldReferenceForm
{
    /// <summary>
    /// The reference form for the inside of <c>{{ … }}</c>, for example <c>main.dose.p | p</c> →
    /// <c>[=main.dose.p, no leading zero]</c>; null when the inside is not a path the old form read.
    /// </summary>
    public static string? Rewrite(string inner)
    {
        if (inner.Length > ReferenceGrammar.MaxLength)
        {
            return null;
        }

        var bar = TopLevelBar(inner);
        var pathText = (bar < 0 ? inner : inner[..bar]).Trim();
        if (ReferenceGrammar.Parse(pathText + ", result", out _)?.Parts is not { } parts)
        {
            return null;
        }

        var path = string.Join(".", parts.Select(ReferenceGrammar.QuoteIfNeeded));
        var words = bar < 0 ? string.Empty : Words(inner[(bar + 1)..]);
        return "[=" + path + words + "]";
    }

    /// <summary>The words for an old filter ("digits(2)" → ", 2 decimals"); empty for one it did not know.</summary>
    private static string Words(string filter)
    {
        var text = string.Concat(filter.Where(c => !char.IsWhiteSpace(c)));
        var open = text.IndexOf('(', StringComparison.Ordinal);
        var name = open < 0 ? text : text[..open];
        var arg = open < 0 || !text.EndsWith(')') ? null : text[(open + 1)..^1];
        var n = arg is { Length: > 0 and <= 2 } && arg.All(char.IsAsciiDigit) ? arg : null;
        string Decimals(string count) => count + (count == "1" ? " decimal" : " decimals");
        return name switch
        {
            "result" => ", result",
            "p" => ", no leading zero",
            "digits" => n is null ? string.Empty : ", " + Decimals(n),
            "fraction" => n is null ? ", no leading zero" : ", " + Decimals(n) + ", no leading zero",
            "percent" => n is null ? ", as percent" : ", as percent, " + Decimals(n),
            "df" => ", as df",
            _ => string.Empty,
        };
    }

    private static int TopLevelBar(string text)
    {
        char? quote = null;
        for (var i = 0; i < text.Length; i++)
        {
            var c = text[i];
            if (quote is { } q)
            {
                if (c == '\\')
                {
                    i++;
                }
                else if (c == q)
                {
                    quote = null;
                }
            }
            else if (c is '"' or '\'')
            {
                quote = c;
            }
            else if (c == '|')
            {
                return i;
            }
        }

        return -1;
    }
}
