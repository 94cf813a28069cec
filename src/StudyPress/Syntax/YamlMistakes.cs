using System.Text.RegularExpressions;

namespace StudyPress.Syntax;

/// <summary>
/// Explains a YAML syntax error in the author's terms. The YAML library's own words ("while
/// parsing a block mapping, did not find expected key") name its parser state, often a line late;
/// this reads the lines up to where the library stopped and finds the first one a study author
/// would have to change, with the change to make.
/// </summary>
internal static partial class YamlMistakes
{
    /// <summary>A problem found: 0-based line and column within the YAML text, and the message.</summary>
    public readonly record struct Finding(int Line, int Column, string Message);

    public static Finding? Explain(string text, int errorLine)
    {
        var lines = text.Split('\n');
        var indents = new Stack<int>();
        indents.Push(0);
        var opensBlock = true; // the previous content line ended with 'key:' (or this is the first line)
        var last = Math.Min(lines.Length - 1, errorLine + 1);
        for (var i = 0; i <= last; i++)
        {
            var line = lines[i];
            var content = line.TrimStart(' ');
            if (content.Length == 0 || content.StartsWith('#'))
            {
                continue;
            }

            var indent = line.Length - content.Length;

            // A block scalar (| or >) owns the more-indented lines after it.
            if (BlockScalar().IsMatch(content))
            {
                var j = i + 1;
                while (j < lines.Length && (lines[j].Trim().Length == 0 || lines[j].Length - lines[j].TrimStart(' ').Length > indent))
                {
                    j++;
                }

                i = j - 1;
                opensBlock = false;
                continue;
            }

            if (NoSpaceAfterColon().Match(content) is { Success: true } glued && !content.Contains("://", StringComparison.Ordinal))
            {
                var key = glued.Groups["key"].Value;
                return new Finding(i, indent, $"put a space after the ':' of {Q(key)} (write '{key}: {glued.Groups["value"].Value}')");
            }

            if (KeyValue().Match(content) is { Success: true } kv)
            {
                var value = kv.Groups["value"].Value;
                var valueColumn = indent + kv.Groups["value"].Index;
                if (value.Length > 0 && value[0] is not ('"' or '\'' or '[' or '{' or '|' or '>') && StripComment(value).Contains(": ", StringComparison.Ordinal))
                {
                    return new Finding(i, valueColumn, $"quote the value of {Q(kv.Groups["key"].Value)}: it contains ': ' (write {kv.Groups["key"].Value}: \"{StripComment(value).Replace("\"", "\\\"", StringComparison.Ordinal)}\")");
                }
            }

            var isItem = content.StartsWith("- ", StringComparison.Ordinal);
            if (indent > indents.Peek())
            {
                if (!opensBlock)
                {
                    var key = KeyValue().Match(content) is { Success: true } m ? m.Groups["key"].Value : content.Split(' ')[0];
                    return new Finding(i, indent, $"{Q(key)} is indented further than the line above, which does not end with ':'; line it up with the keys above it (column {indents.Peek() + 1})");
                }

                indents.Push(indent);
            }
            else if (indent < indents.Peek())
            {
                var inner = indents.Peek();
                while (indents.Count > 1 && indent < indents.Peek())
                {
                    inner = indents.Pop();
                }

                if (indent != indents.Peek())
                {
                    var key = KeyValue().Match(content) is { Success: true } m ? m.Groups["key"].Value : content.Split(' ')[0];
                    return new Finding(i, indent, $"the indentation of {Q(key)} matches no key above it; start it in column {inner + 1} (to belong to the map above) or column {indents.Peek() + 1}");
                }
            }

            var trimmed = StripComment(content).TrimEnd();
            opensBlock = trimmed.EndsWith(':') || trimmed == "-";
            if (isItem && KeyValue().IsMatch(content[2..]))
            {
                // "- key: value" opens a map whose keys line up with 'key'.
                indents.Push(indent + 2);
            }
        }

        return null;
    }

    private static string StripComment(string value)
    {
        var at = value.IndexOf(" #", StringComparison.Ordinal);
        return at < 0 ? value : value[..at];
    }

    private static string Q(string s) => "'" + s + "'";

    [GeneratedRegex(@"^(?:-\s+)?(?<key>[A-Za-z_][A-Za-z0-9_-]*):(?<value>[^\s/].*)$", RegexOptions.CultureInvariant)]
    private static partial Regex NoSpaceAfterColon();

    [GeneratedRegex(@"^(?:-\s+)?(?<key>[^\s:#'""\[\{-][^:#]*?):(?:\s+(?<value>.*))?$", RegexOptions.CultureInvariant)]
    private static partial Regex KeyValue();

    [GeneratedRegex(@"^(?:-\s+)?[^\s:#]+:\s+[|>][+-]?[0-9]?\s*(?:#.*)?$", RegexOptions.CultureInvariant)]
    private static partial Regex BlockScalar();
}
