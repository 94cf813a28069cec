using System.Globalization;
using System.Security.Cryptography;
using System.Text;
using StudyPress.Rendering;

namespace StudyPress.Comparison;

/// <summary>
/// The comparison as one self-contained HTML page in the report's style: the report's stylesheet
/// inline (allowed by its hash in a strict CSP), no script, no external request; every string
/// that came from a study or a data file escaped. Flipped decisions come first, then the two
/// values side by side.
/// </summary>
public static class ComparisonHtml
{
    private const string ExtraCss = """
        .diff-old { color: #8a1c1c; }
        .diff-new { color: #1c6b2a; }
        .diff-flip { border-left-color: var(--warn); background: var(--warn-bg); }
        .diff-flip li { margin: 0.25rem 0; }
        table.diff td { text-align: left; white-space: normal; }
        table.diff td.num { text-align: right; white-space: nowrap; }
        code.row { white-space: pre-wrap; word-break: break-all; }
        """;

    public static string Write(ComparisonResult r, FailOn failOn)
    {
        var css = ReportTemplate.Css + "\n" + ExtraCss;
        var csp = "default-src 'none'; style-src 'sha256-" + Convert.ToBase64String(SHA256.HashData(Encoding.UTF8.GetBytes(css))) + "'; img-src 'none'; base-uri 'none'; form-action 'none'";
        var sb = new StringBuilder();
        sb.Append("<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n")
            .Append("<meta http-equiv=\"Content-Security-Policy\" content=\"").Append(E(csp)).Append("\">\n")
            .Append("<meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n")
            .Append("<meta name=\"generator\" content=\"studypress ").Append(E(Rendering.Tool.Version)).Append("\">\n")
            .Append("<title>Comparison: ").Append(E(r.Old.Label)).Append(" → ").Append(E(r.New.Label)).Append("</title>\n")
            .Append("<style>").Append(css).Append("</style>\n</head>\n<body>\n");
        sb.Append("<header class=\"study-head\">\n<h1 class=\"study-title\">What changed between two builds</h1>\n")
            .Append("<p class=\"study-id\">Old: <code>").Append(E(r.Old.Label)).Append("</code> (").Append(E(r.Old.Source.ToString().ToLowerInvariant())).Append(", α ").Append(E(ComparisonText.Alpha(r.Old))).Append(")<br>")
            .Append("New: <code>").Append(E(r.New.Label)).Append("</code> (").Append(E(r.New.Source.ToString().ToLowerInvariant())).Append(", α ").Append(E(ComparisonText.Alpha(r.New))).Append(")</p>\n")
            .Append("<p class=\"trace-hint\">").Append(E(ComparisonText.Summary(r))).Append(" Exit status ").Append(r.ExitCode(failOn).ToString(CultureInfo.InvariantCulture)).Append(" (fail on ").Append(E(failOn.ToString().ToLowerInvariant())).Append(").</p>\n</header>\n<main class=\"study-body\">\n");

        sb.Append("<section class=\"block diff-flip\" id=\"decisions\">\n<h2>Decisions flipped (").Append(r.Decisions.Count.ToString(CultureInfo.InvariantCulture)).Append(")</h2>\n");
        if (r.Decisions.Count == 0)
        {
            sb.Append("<p>No conclusion changed.</p>\n");
        }
        else
        {
            sb.Append("<div class=\"table-wrap\"><table class=\"diff\"><thead><tr><th scope=\"col\">Where</th><th scope=\"col\">Kind</th><th scope=\"col\">Old</th><th scope=\"col\">New</th><th scope=\"col\">Detail</th></tr></thead><tbody>\n");
            foreach (var d in r.Decisions)
            {
                var where = d.Block + " › " + (d.Term ?? d.Test) + (d.Pair is null ? string.Empty : " › " + string.Join(" vs ", d.Pair));
                sb.Append("<tr><th scope=\"row\">").Append(E(where)).Append("</th><td>").Append(E(d.Kind)).Append("</td><td class=\"diff-old\">")
                    .Append(E(d.Old)).Append("</td><td class=\"diff-new\">").Append(E(d.New)).Append("</td><td>").Append(E(d.Description)).Append("</td></tr>\n");
            }

            sb.Append("</tbody></table></div>\n");
        }

        sb.Append("</section>\n");

        if (r.Inputs.Count > 0)
        {
            sb.Append("<section class=\"block\" id=\"inputs\">\n<h2>Inputs changed (").Append(r.Inputs.Count.ToString(CultureInfo.InvariantCulture)).Append(")</h2>\n");
            foreach (var i in r.Inputs)
            {
                sb.Append("<h3>").Append(E(i.Name)).Append(" <code>").Append(E(i.New?.Path ?? i.Old!.Path)).Append("</code>: ").Append(E(i.Status)).Append("</h3>\n");
                if (i.Old is not null && i.New is not null)
                {
                    sb.Append("<p>SHA-256 <code class=\"hash diff-old\">").Append(E(i.Old.Sha256)).Append("</code> → <code class=\"hash diff-new\">").Append(E(i.New.Sha256)).Append("</code></p>\n");
                }

                if (i.Rows is { } t)
                {
                    sb.Append("<p>").Append(E(string.Create(CultureInfo.InvariantCulture, $"Rows {t.OldRows} → {t.NewRows}: {t.Added} added, {t.Removed} removed, {t.Changed} changed."))).Append("</p>\n<ul>\n");
                    if (t.HeaderChanged)
                    {
                        sb.Append("<li>header <code class=\"row diff-old\">").Append(E(t.OldHeader)).Append("</code> → <code class=\"row diff-new\">").Append(E(t.NewHeader)).Append("</code></li>\n");
                    }

                    foreach (var c in t.ChangedExamples)
                    {
                        sb.Append("<li>changed: line ").Append(c.OldLine.ToString(CultureInfo.InvariantCulture)).Append(" <code class=\"row diff-old\">").Append(E(c.Old)).Append("</code> → line ")
                            .Append(c.NewLine.ToString(CultureInfo.InvariantCulture)).Append(" <code class=\"row diff-new\">").Append(E(c.New)).Append("</code></li>\n");
                    }

                    foreach (var a in t.AddedExamples)
                    {
                        sb.Append("<li>added: line ").Append(a.Line.ToString(CultureInfo.InvariantCulture)).Append(" <code class=\"row diff-new\">").Append(E(a.Text)).Append("</code></li>\n");
                    }

                    foreach (var a in t.RemovedExamples)
                    {
                        sb.Append("<li>removed: line ").Append(a.Line.ToString(CultureInfo.InvariantCulture)).Append(" <code class=\"row diff-old\">").Append(E(a.Text)).Append("</code></li>\n");
                    }

                    sb.Append("</ul>\n");
                }
                else if (i.RowsNote is not null)
                {
                    sb.Append("<p>Rows not compared: ").Append(E(i.RowsNote)).Append("</p>\n");
                }
            }

            sb.Append("</section>\n");
        }

        if (r.Changed.Count > 0)
        {
            sb.Append("<section class=\"block\" id=\"values\">\n<h2>Values changed (").Append(r.Changed.Count.ToString(CultureInfo.InvariantCulture)).Append(")</h2>\n");
            foreach (var group in r.Changed.GroupBy(c => c.New.Block + " › " + c.New.Test))
            {
                sb.Append("<div class=\"table-wrap\"><table class=\"diff\"><caption>").Append(E(group.Key)).Append("</caption><thead><tr><th scope=\"col\">Value</th><th scope=\"col\">Old</th><th scope=\"col\">New</th></tr></thead><tbody>\n");
                foreach (var c in group)
                {
                    sb.Append("<tr><th scope=\"row\">").Append(E(ComparisonText.Where(c.New))).Append("</th><td class=\"num diff-old\">").Append(E(c.Old.Text()))
                        .Append("</td><td class=\"num diff-new\">").Append(E(c.New.Text())).Append("</td></tr>\n");
                }

                sb.Append("</tbody></table></div>\n");
            }

            sb.Append("</section>\n");
        }

        OneSided(sb, "added", "Values added", r.Added, "diff-new");
        OneSided(sb, "removed", "Values removed", r.Removed, "diff-old");

        if (r.Sentences.Count > 0)
        {
            sb.Append("<section class=\"block\" id=\"methods\">\n<h2>Methods text changed</h2>\n");
            foreach (var s in r.Sentences)
            {
                sb.Append("<h3>").Append(E(s.Block)).Append("</h3>\n<ul>\n");
                foreach (var x in s.Removed)
                {
                    sb.Append("<li class=\"diff-old\"><del>").Append(E(x)).Append("</del></li>\n");
                }

                foreach (var x in s.Added)
                {
                    sb.Append("<li class=\"diff-new\"><ins>").Append(E(x)).Append("</ins></li>\n");
                }

                sb.Append("</ul>\n");
            }

            sb.Append("</section>\n");
        }

        if (r.BlocksAdded.Count + r.BlocksRemoved.Count > 0)
        {
            sb.Append("<section class=\"block\" id=\"blocks\">\n<h2>Blocks</h2>\n<ul>\n");
            foreach (var b in r.BlocksAdded)
            {
                sb.Append("<li class=\"diff-new\">added: <code>").Append(E(b)).Append("</code></li>\n");
            }

            foreach (var b in r.BlocksRemoved)
            {
                sb.Append("<li class=\"diff-old\">removed: <code>").Append(E(b)).Append("</code></li>\n");
            }

            sb.Append("</ul>\n</section>\n");
        }

        if (r.Notes.Count > 0)
        {
            sb.Append("<section class=\"warnings\">\n");
            foreach (var n in r.Notes)
            {
                sb.Append("<p>").Append(E(n)).Append("</p>\n");
            }

            sb.Append("</section>\n");
        }

        sb.Append("</main>\n</body>\n</html>\n");
        return sb.ToString();
    }

    private static void OneSided(StringBuilder sb, string id, string title, IReadOnlyList<SnapshotValue> values, string css)
    {
        if (values.Count == 0)
        {
            return;
        }

        sb.Append("<section class=\"block\" id=\"").Append(id).Append("\">\n<h2>").Append(title).Append(" (").Append(values.Count.ToString(CultureInfo.InvariantCulture)).Append(")</h2>\n")
            .Append("<div class=\"table-wrap\"><table class=\"diff\"><thead><tr><th scope=\"col\">Value</th><th scope=\"col\">Shown</th></tr></thead><tbody>\n");
        foreach (var v in values)
        {
            sb.Append("<tr><th scope=\"row\">").Append(E(v.PathText())).Append("</th><td class=\"num ").Append(css).Append("\">").Append(E(v.Text())).Append("</td></tr>\n");
        }

        sb.Append("</tbody></table></div>\n</section>\n");
    }

    private static string E(string? s) => HtmlWriter.Escape(s);
}
