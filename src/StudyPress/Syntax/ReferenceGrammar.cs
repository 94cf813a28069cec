using System.Text;

namespace StudyPress.Syntax;

/// <summary>
/// Prose references: <c>{{ block.part.part.stat }}</c>. The first part names a block, the last a
/// statistic; the parts between pick the value by any of its manifest components in order
/// (test, term, level, pair). A part is a name (letters, digits, '_', '-') or a quoted string for
/// level names with spaces or dots: <c>{{ desc."Nozzle A".mean }}</c>. When several values match,
/// the block's main test wins (<c>{{ main.dose.f }}</c> is the ANOVA F, not Welch's).
/// Limits: 200 characters and 8 parts per reference, so a reference cannot make the build work hard.
/// </summary>
public static class ReferenceGrammar
{
    public const int MaxLength = 200;
    public const int MaxParts = 8;

    /// <summary>The most decimals a formatting function may ask for.</summary>
    public const int MaxDigits = 10;

    /// <summary>Splits a reference into the parts of its path; returns null and a reason when it cannot.</summary>
    public static IReadOnlyList<string>? Split(string text, out string? error) => Parse(text, out error)?.Parts;

    /// <summary>
    /// Reads a reference: its path and an optional formatting function after '|'
    /// (<c>{{ main.dose.p | p }}</c>, <c>{{ main.dose.f | digits(1) }}</c>, <c>{{ main.dose | result }}</c>).
    /// Only the syntax is checked here; <c>References.Resolve</c> (Rendering) checks that the function exists and applies.
    /// </summary>
    public static ReferenceExpression? Parse(string text, out string? error)
    {
        error = null;
        if (text.Length > MaxLength)
        {
            error = $"a reference may be at most {MaxLength} characters";
            return null;
        }

        var bar = TopLevelBar(text);
        ReferenceFunction? function = null;
        if (bar >= 0)
        {
            function = ParseFunction(text[(bar + 1)..].Trim(), out error);
            if (function is null)
            {
                return null;
            }

            text = text[..bar].TrimEnd();
        }

        var parts = SplitPath(text, function?.Name == "result" ? 1 : 2, out error);
        return parts is null ? null : new ReferenceExpression(parts, function);
    }

    /// <summary>The first '|' outside quotes, or -1.</summary>
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

    private static ReferenceFunction? ParseFunction(string text, out string? error)
    {
        error = null;
        var i = 0;
        while (i < text.Length && (char.IsAsciiLetter(text[i]) || text[i] == '_'))
        {
            i++;
        }

        var name = text[..i];
        if (name.Length == 0)
        {
            error = text.Length == 0
                ? "a formatting function is missing after '|'; for example {{ main.dose.p | p }}"
                : $"unexpected '{text[0]}' after '|'; write a formatting function such as 'p' or 'digits(1)'";
            return null;
        }

        var rest = text[i..].Trim();
        if (rest.Length == 0)
        {
            return new ReferenceFunction(name, null);
        }

        if (rest[0] == '|')
        {
            error = "a reference takes one formatting function";
            return null;
        }

        if (rest[0] != '(' || rest[^1] != ')')
        {
            error = $"unexpected '{rest}' after '{name}'; write an argument in parentheses, as in digits(1)";
            return null;
        }

        var arg = rest[1..^1].Trim();
        if (arg.Length == 0 || arg.Length > 2 || !arg.All(char.IsAsciiDigit))
        {
            error = $"the argument of '{name}' must be a whole number of decimals from 0 to {MaxDigits}, not '{arg}'";
            return null;
        }

        var n = int.Parse(arg, System.Globalization.CultureInfo.InvariantCulture);
        if (n > MaxDigits)
        {
            error = $"the argument of '{name}' must be a whole number of decimals from 0 to {MaxDigits}, not '{arg}'";
            return null;
        }

        return new ReferenceFunction(name, n);
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
            error = "name a block and a statistic, for example {{ main.dose.f }}";
            return null;
        }

        return parts;
    }

    public static string QuoteIfNeeded(string part) =>
        part.Length > 0 && part.All(c => char.IsLetterOrDigit(c) || c is '_' or '-' or '+')
            ? part
            : "\"" + part.Replace("\\", "\\\\", StringComparison.Ordinal).Replace("\"", "\\\"", StringComparison.Ordinal) + "\"";

}

/// <summary>A formatting function after '|' in a reference, with its optional number of decimals.</summary>
public sealed record ReferenceFunction(string Name, int? Digits);

/// <summary>A reference as written: the path's parts and the optional formatting function.</summary>
public sealed record ReferenceExpression(IReadOnlyList<string> Parts, ReferenceFunction? Function);

