using System.Text.RegularExpressions;

namespace StudyPress.Rendering;

/// <summary>
/// The shape every complete report has, checked before a report is committed to disk and again by
/// <c>studypress verify</c>: it ends with <c>&lt;/html&gt;</c>, and its last elements are, in this
/// order and nowhere else, the results manifest and the page script. The page script finds the
/// manifest by that position (the element just before itself), and the
/// verifier reads the one manifest element placed there, so no element of the study's own prose
/// can stand in for it.
/// </summary>
public static partial class ReportIntegrity
{
    /// <summary>Null when <paramref name="html"/> is a complete report; otherwise what is wrong.</summary>
    public static string? Problem(string html)
    {
        if (!html.EndsWith("</html>\n", StringComparison.Ordinal))
        {
            return "it does not end with </html>";
        }

        var first = html.IndexOf(ReportManifest.ElementStart, StringComparison.Ordinal);
        if (first < 0)
        {
            return "it holds no results manifest";
        }

        var last = html.LastIndexOf(ReportManifest.ElementStart, StringComparison.Ordinal);
        if (first != last)
        {
            return "it holds more than one results manifest element";
        }

        var close = html.IndexOf("</script>", last, StringComparison.Ordinal);
        if (close < 0 || !Tail().IsMatch(html.AsSpan(close)))
        {
            return "the results manifest is not the page's last data element (before the page script)";
        }

        if (ReportManifest.FromHtml(html, out var problem) is null)
        {
            return problem;
        }

        return null;
    }

    /// <summary>What follows the manifest's JSON in every report, to the end of the file.</summary>
    [GeneratedRegex("\\A</script>\n<script>(?:(?!</script)[\\s\\S])*</script>\n</body>\n</html>\n\\z", RegexOptions.CultureInvariant)]
    private static partial Regex Tail();
}
