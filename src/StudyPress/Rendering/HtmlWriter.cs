using System.Net;
using System.Text;
using StudyPress.Evaluation;

namespace StudyPress.Rendering;

/// <summary>What renderers share: number format and the values' trace.</summary>
public sealed class RenderContext(NumberFormat format, double alpha)
{
    public NumberFormat Format { get; } = format;

    public double Alpha { get; } = alpha;

    /// <summary>α as the report writes it ("0.05", or ".05" without the leading zero of p).</summary>
    public string AlphaText => Format.Level(Alpha);

    /// <summary>The confidence level that goes with alpha, as a percentage ("95").</summary>
    public string ConfidenceText => StudyPress.Charts.NumberText.ConfidenceNumber(Alpha);
}

/// <summary>
/// Builds HTML with every user-supplied string escaped. Numbers go through <see cref="Value"/>,
/// which wraps them in an element carrying the manifest id, so the page script can show the trace.
/// </summary>
public sealed class HtmlWriter
{
    private readonly StringBuilder sb = new();

    /// <summary>
    /// Escapes text for HTML content or attribute values. Text with right-to-left letters or
    /// directional controls is isolated first (<see cref="StudyPress.Charts.BidiText.Isolate"/>:
    /// U+2068 … U+2069, its own controls closed inside), so a user-supplied name cannot reorder
    /// the numbers and words around it.
    /// </summary>
    public static string Escape(string? s) => WebUtility.HtmlEncode(StudyPress.Charts.BidiText.Isolate(s));

    /// <summary>Appends trusted markup written by the compiler itself.</summary>
    public HtmlWriter Raw(string html)
    {
        sb.Append(html);
        return this;
    }

    /// <summary>Appends escaped text; text that needs isolating (see <see cref="Escape"/>) also goes in a <c>bdi</c> element.</summary>
    public HtmlWriter Text(string? text)
    {
        sb.Append(Content(text));
        return this;
    }

    /// <summary>Escaped text content: isolated in a <c>bdi</c> element when it holds right-to-left letters or directional controls.</summary>
    public static string Content(string? text) =>
        StudyPress.Charts.BidiText.IsSensitive(text) ? "<bdi>" + Escape(text) + "</bdi>" : Escape(text);

    /// <summary>Appends an element with escaped text content.</summary>
    public HtmlWriter Element(string tag, string? text, string? cssClass = null)
    {
        sb.Append('<').Append(tag);
        if (cssClass is not null)
        {
            sb.Append(" class=\"").Append(cssClass).Append('"');
        }

        sb.Append('>').Append(Content(text)).Append("</").Append(tag).Append('>');
        return this;
    }

    /// <summary>A traced number (or its "not defined" marker with the reason).</summary>
    public HtmlWriter Value(ResultValue v, RenderContext context)
    {
        sb.Append(ValueHtml(v, context));
        return this;
    }

    public static string ValueHtml(ResultValue v, RenderContext context) => ValueHtml(v, context.Format);

    /// <summary>A traced number in the given format (or its "not defined" marker with the reason).</summary>
    public static string ValueHtml(ResultValue v, NumberFormat format)
    {
        if (!v.Value.IsDefined)
        {
            return "<span class=\"nd\" data-v=\"" + v.Id + "\" tabindex=\"0\" title=\"not defined: " + Escape(v.Value.Reason) + "\">n/d</span>";
        }

        return "<span class=\"v\" data-v=\"" + v.Id + "\" tabindex=\"0\">" + Escape(format.Format(v.Stat, v.Value.Value)) + "</span>";
    }

    public override string ToString() => sb.ToString();
}

/// <summary>
/// A simple table: header cells (escaped text), rows of pre-built cell HTML. Numbers are
/// right-aligned; the columns in <see cref="TextColumns"/> (by position, the row header being 0)
/// hold words and are left-aligned, header and cells alike (class <c>text</c>).
/// </summary>
public sealed class HtmlTable(string cssClass, string caption, IReadOnlyList<string> headers)
{
    private readonly List<(string Head, IReadOnlyList<string> Cells, string? RowClass)> rows = [];

    /// <summary>Columns of words rather than numbers (0 is the row header, which is always left-aligned).</summary>
    public IReadOnlyCollection<int> TextColumns { get; init; } = [];

    /// <summary>A row; with no cells, a heading row across the table over the rows that follow.</summary>
    public void Row(string head, IReadOnlyList<string> cells, string? rowClass = null) => rows.Add((head, cells, rowClass));

    public void WriteTo(HtmlWriter html)
    {
        html.Raw("<div class=\"table-wrap\"><table class=\"").Raw(cssClass).Raw("\"><caption>").Text(caption).Raw("</caption><thead><tr>");
        for (var i = 0; i < headers.Count; i++)
        {
            html.Raw(i > 0 && TextColumns.Contains(i) ? "<th scope=\"col\" class=\"text\">" : "<th scope=\"col\">").Text(headers[i]).Raw("</th>");
        }

        html.Raw("</tr></thead><tbody>");
        foreach (var (head, cells, rowClass) in rows)
        {
            html.Raw(rowClass is null ? "<tr>" : "<tr class=\"" + rowClass + "\">");
            if (cells.Count == 0)
            {
                // A heading over the rows below it (a stratum of a design table), across the whole table.
                html.Raw("<th scope=\"rowgroup\" class=\"text\" colspan=\"").Raw(headers.Count.ToString(System.Globalization.CultureInfo.InvariantCulture)).Raw("\">").Text(head).Raw("</th></tr>");
                continue;
            }

            html.Raw("<th scope=\"row\">").Text(head).Raw("</th>");
            for (var i = 0; i < cells.Count; i++)
            {
                html.Raw(TextColumns.Contains(i + 1) ? "<td class=\"text\">" : "<td>").Raw(cells[i]).Raw("</td>");
            }

            html.Raw("</tr>");
        }

        html.Raw("</tbody></table></div>");
    }
}
