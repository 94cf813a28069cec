using System.Text;

namespace StudyPress.Rendering;

/// <summary>
/// What remains of the study's own HTML with <c>report: {raw-html: true}</c>. The Content Security
/// Policy stops scripts, but not everything: a <c>&lt;meta http-equiv="refresh"&gt;</c> navigates
/// away, a <c>&lt;base&gt;</c> redirects links, an element carrying the manifest's id could be taken
/// for the manifest, and an unclosed raw-text element (<c>textarea</c>, <c>title</c>, a comment …)
/// would swallow the rest of the page. So, even in raw mode:
/// <list type="bullet">
/// <item>dropped with their content: script, style, iframe, object, embed, applet, frame, frameset,
/// noscript, noembed, noframes, template, textarea, title, xmp, plaintext, listing, comments and
/// other <c>&lt;!…&gt;</c> / <c>&lt;?…&gt;</c> constructs;</item>
/// <item>dropped (the tag only): meta, base, link, param, and any element whose id or name is one the
/// page shell uses (<see cref="ReservedIds"/>);</item>
/// <item>attributes dropped: <c>action</c> and <c>formaction</c>;</item>
/// <item>a tag left open at the end of a fragment, or a stray <c>&lt;</c>, becomes text.</item>
/// </list>
/// Everything else is kept, re-serialised from its parsed name and attributes.
/// </summary>
public static class RawHtmlFilter
{
    /// <summary>Ids the page shell and its script rely on; no user element may carry one.</summary>
    public static readonly string[] ReservedIds = ["study-results", "chart-font", "trace", "inputs-heading"];

    private static readonly HashSet<string> DropWithContent = new(StringComparer.Ordinal)
    {
        "script", "style", "iframe", "object", "embed", "applet", "frame", "frameset", "noscript", "noembed", "noframes",
        "template", "textarea", "title", "xmp", "plaintext", "listing",
    };

    private static readonly HashSet<string> DropTag = new(StringComparer.Ordinal) { "meta", "base", "link", "param" };

    private static readonly HashSet<string> DropAttribute = new(StringComparer.Ordinal) { "action", "formaction" };

    public static string Filter(string html)
    {
        var sb = new StringBuilder(html.Length);
        var i = 0;
        while (i < html.Length)
        {
            var lt = html.IndexOf('<', i);
            if (lt < 0)
            {
                sb.Append(html, i, html.Length - i);
                break;
            }

            sb.Append(html, i, lt - i);
            if (lt + 1 < html.Length && (html[lt + 1] is '!' or '?'))
            {
                // Comments, doctype, CDATA, processing instructions: nothing a report needs.
                var comment = string.CompareOrdinal(html, lt, "<!--", 0, 4) == 0;
                var end = comment ? html.IndexOf("-->", lt + 4, StringComparison.Ordinal) : html.IndexOf('>', lt);
                i = end < 0 ? html.Length : end + (comment ? 3 : 1);
                continue;
            }

            var tag = ParseTag(html, lt);
            if (tag is null)
            {
                sb.Append("&lt;");
                i = lt + 1;
                continue;
            }

            var (name, closing, attributes, selfClosing, next) = tag.Value;
            i = next;
            if (DropWithContent.Contains(name))
            {
                if (!closing && !selfClosing)
                {
                    var close = IndexOfClose(html, name, i);
                    i = close < 0 ? html.Length : close;
                }

                continue;
            }

            if (DropTag.Contains(name) || attributes.Any(a => (a.Name is "id" or "name") && ReservedIds.Contains(a.Value.Trim(), StringComparer.OrdinalIgnoreCase)))
            {
                continue;
            }

            sb.Append('<');
            if (closing)
            {
                sb.Append('/').Append(name).Append('>');
                continue;
            }

            sb.Append(name);
            foreach (var (an, av) in attributes.Where(a => !DropAttribute.Contains(a.Name)))
            {
                sb.Append(' ').Append(an);
                if (av.Length > 0)
                {
                    sb.Append("=\"").Append(av.Replace("&", "&amp;", StringComparison.Ordinal).Replace("\"", "&quot;", StringComparison.Ordinal)).Append('"');
                }
            }

            sb.Append(selfClosing ? " />" : ">");
        }

        return sb.ToString();
    }

    /// <summary>Where the element's closing tag ends (after its '>'), or -1 when it is not closed.</summary>
    private static int IndexOfClose(string html, string name, int from)
    {
        var at = from;
        while (true)
        {
            var close = html.IndexOf("</" + name, at, StringComparison.OrdinalIgnoreCase);
            if (close < 0)
            {
                return -1;
            }

            var after = close + 2 + name.Length;
            if (after >= html.Length || html[after] is '>' or '/' || char.IsWhiteSpace(html[after]))
            {
                var gt = html.IndexOf('>', after);
                return gt < 0 ? -1 : gt + 1;
            }

            at = after;
        }
    }

    /// <summary>A start or end tag at <paramref name="lt"/>, with attribute values decoded of their quotes (entities kept as written).</summary>
    private static (string Name, bool Closing, List<(string Name, string Value)> Attributes, bool SelfClosing, int Next)? ParseTag(string html, int lt)
    {
        var p = lt + 1;
        var closing = p < html.Length && html[p] == '/';
        if (closing)
        {
            p++;
        }

        if (p >= html.Length || !char.IsAsciiLetter(html[p]))
        {
            return null;
        }

        var start = p;
        while (p < html.Length && (char.IsAsciiLetterOrDigit(html[p]) || html[p] is '-' or ':' or '_'))
        {
            p++;
        }

        var name = html[start..p].ToLowerInvariant();
        var attributes = new List<(string, string)>();
        var selfClosing = false;
        while (true)
        {
            while (p < html.Length && char.IsWhiteSpace(html[p]))
            {
                p++;
            }

            if (p >= html.Length)
            {
                return null;
            }

            if (html[p] == '>')
            {
                return (name, closing, attributes, selfClosing, p + 1);
            }

            if (html[p] == '/')
            {
                selfClosing = true;
                p++;
                continue;
            }

            selfClosing = false;
            var an = p;
            while (p < html.Length && !char.IsWhiteSpace(html[p]) && html[p] is not ('>' or '/' or '=') )
            {
                p++;
            }

            if (p == an)
            {
                // A lone '=' or similar: skip it, as browsers do.
                p++;
                continue;
            }

            var attrName = html[an..p].ToLowerInvariant();
            while (p < html.Length && char.IsWhiteSpace(html[p]))
            {
                p++;
            }

            var value = string.Empty;
            if (p < html.Length && html[p] == '=')
            {
                p++;
                while (p < html.Length && char.IsWhiteSpace(html[p]))
                {
                    p++;
                }

                if (p < html.Length && html[p] is '"' or '\'')
                {
                    var q = html[p];
                    var end = html.IndexOf(q, p + 1);
                    if (end < 0)
                    {
                        return null;
                    }

                    value = html[(p + 1)..end];
                    p = end + 1;
                }
                else
                {
                    var vs = p;
                    while (p < html.Length && !char.IsWhiteSpace(html[p]) && html[p] != '>')
                    {
                        p++;
                    }

                    value = html[vs..p];
                }
            }

            if (attrName.All(c => char.IsAsciiLetterOrDigit(c) || c is '-' or '_' or ':' or '.'))
            {
                attributes.Add((attrName, WebUtilityDecodeQuotes(value)));
            }
        }
    }

    /// <summary>The value as the browser would read it for the id check: entities decoded.</summary>
    private static string WebUtilityDecodeQuotes(string value) => System.Net.WebUtility.HtmlDecode(value);
}
