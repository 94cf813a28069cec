using StudyPress.Diagnostics;

namespace StudyPress.Syntax;

/// <summary>
/// The one place that finds a study's header: the lines between a first line '---' and the next
/// line '---' or '...'. Used by the parser and by everything that reads only the header (pins,
/// the build cache, the watcher, verify), so that all agree on where it is.
/// </summary>
public static class HeaderSplit
{
    /// <summary>Line ends as CommonMark and YAML read them: CRLF, a lone CR and LF each end a line; all become LF.</summary>
    public static string NormaliseLineEnds(string text) =>
        text.Replace("\r\n", "\n", StringComparison.Ordinal).Replace('\r', '\n');

    /// <summary>
    /// Splits text whose line ends are already normalised into lines and finds the header's
    /// closing line; null, with the mistake reported, when there is no header or it is not closed.
    /// </summary>
    public static (string[] Lines, int End)? Find(string normalised, string path, DiagnosticBag diagnostics)
    {
        var lines = normalised.Split('\n');
        if (lines.Length == 0 || lines[0].TrimEnd() != "---")
        {
            diagnostics.NoHeader(new SourceLocation(path, 0, 0));
            return null;
        }

        for (var i = 1; i < lines.Length; i++)
        {
            if (lines[i].TrimEnd() is "---" or "...")
            {
                return (lines, i);
            }
        }

        diagnostics.UnclosedHeader(new SourceLocation(path, 0, 0));
        return null;
    }
}
