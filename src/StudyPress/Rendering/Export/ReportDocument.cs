using System.Text;
using AngleSharp.Dom;
using AngleSharp.Html.Parser;

namespace StudyPress.Rendering.Export;

/// <summary>How a run of text looks.</summary>
[Flags]
public enum RunStyle
{
    None = 0,
    Bold = 1,
    Italic = 2,
    Code = 4,
    Superscript = 8,
    Subscript = 16,
}

/// <summary>What a paragraph is in the report (the HTML element and class it came from).</summary>
public enum ParagraphRole
{
    Body,
    Title,
    Authors,
    StudyLine,
    BlockLabel,
    Method,
    Decision,
    Reading,
    Warning,
    Note,
    Quote,
    ListItem,
    Code,
    MethodsText,
}

/// <summary>A piece of a paragraph: text, a traced number or a line break.</summary>
public abstract record ExportInline;

public sealed record TextRun(string Text, RunStyle Style) : ExportInline;

/// <summary>A traced number (<c>data-v</c>): its manifest id, the text the report shows, and whether a reference styled it (<c>data-style</c>).</summary>
public sealed record NumberRun(string Id, string Text, bool Styled, RunStyle Style) : ExportInline;

public sealed record LineBreakRun : ExportInline;

/// <summary>A piece of the report's flow.</summary>
public abstract record ExportBlock;

public sealed record ExportHeading(int Level, IReadOnlyList<ExportInline> Content) : ExportBlock;

/// <param name="Block">The analysis block it belongs to, or null for prose.</param>
/// <param name="Source">The HTML class that named it (<c>methods-results</c>), or null.</param>
public sealed record ExportParagraph(ParagraphRole Role, IReadOnlyList<ExportInline> Content, string? Block, string? Source) : ExportBlock;

public sealed record ExportCell(bool Head, int Span, IReadOnlyList<ExportInline> Content);

public sealed record ExportRow(bool Header, IReadOnlyList<ExportCell> Cells);

/// <param name="Block">The analysis block, or null for a table in the prose or the data section.</param>
/// <param name="Kind">The table's class in the report (<c>anova</c>, <c>pairs</c>, …), or "table".</param>
public sealed record ExportTable(string? Block, string Kind, IReadOnlyList<ExportInline> Caption, IReadOnlyList<ExportRow> Rows) : ExportBlock
{
    public int Columns => Rows.Count == 0 ? 0 : Rows.Max(r => r.Cells.Sum(c => c.Span));
}

/// <param name="Index">The figure's place among the report's figures (0-based), which is its place in the compilation's figure list.</param>
public sealed record ExportFigure(string? Block, string Type, IReadOnlyList<ExportInline> Caption, int Index) : ExportBlock;

/// <summary>
/// The built report read back from its own HTML: the page header, the body in order (headings,
/// paragraphs, tables, figures) and the data and caution sections. The Word and LaTeX outputs
/// are views of this, so they say what the HTML says with the same numbers and ids.
/// </summary>
public sealed class ReportDocument
{
    public required IReadOnlyList<ExportBlock> Blocks { get; init; }

    public required string Title { get; init; }

    /// <summary>Every traced number in the order it appears.</summary>
    public IEnumerable<NumberRun> Numbers => Blocks.SelectMany(InlinesOf).OfType<NumberRun>();

    public static IEnumerable<ExportInline> InlinesOf(ExportBlock block) => block switch
    {
        ExportHeading h => h.Content,
        ExportParagraph p => p.Content,
        ExportTable t => t.Caption.Concat(t.Rows.SelectMany(r => r.Cells).SelectMany(c => c.Content)),
        ExportFigure f => f.Caption,
        _ => [],
    };

    /// <summary>Reads a report written by this compiler (see ReportRenderer and templates/report.sbn-html).</summary>
    public static ReportDocument Read(string html)
    {
        var dom = new HtmlParser().ParseDocument(html);
        var reader = new Reader();
        var title = string.Empty;
        if (dom.QuerySelector("header.study-head") is { } head)
        {
            foreach (var e in head.Children)
            {
                switch (e.ClassName)
                {
                    case "study-title":
                        title = e.TextContent;
                        reader.Add(new ExportParagraph(ParagraphRole.Title, reader.Inlines(e), null, null));
                        break;
                    case "study-authors":
                        reader.Add(new ExportParagraph(ParagraphRole.Authors, reader.Inlines(e), null, null));
                        break;
                    case "study-id":
                        reader.Add(new ExportParagraph(ParagraphRole.StudyLine, reader.Inlines(e), null, null));
                        break;

                    // The trace hint is about hovering in a browser; it has no meaning on paper.
                }
            }
        }

        if (dom.QuerySelector("main.study-body") is { } main)
        {
            reader.Flow(main, new Place(null, ParagraphRole.Body, 0));
        }

        if (dom.QuerySelector("section.inputs") is { } inputs)
        {
            reader.Flow(inputs, new Place(null, ParagraphRole.Body, -1));
        }

        if (dom.QuerySelector("footer.caution") is { } caution)
        {
            reader.Flow(caution, new Place(null, ParagraphRole.Body, -1));
        }

        return new ReportDocument { Blocks = reader.Blocks, Title = title };
    }

    private readonly record struct Place(string? Block, ParagraphRole Role, int HeadingShift);

    private sealed class Reader
    {
        private int figures;

        public List<ExportBlock> Blocks { get; } = [];

        public void Add(ExportBlock b) => Blocks.Add(b);

        public void Flow(IElement parent, Place place)
        {
            var loose = new List<INode>();
            foreach (var node in parent.ChildNodes)
            {
                if (node is IElement e && IsBlockElement(e))
                {
                    Loose(loose, place);
                    Element(e, place);
                }
                else
                {
                    loose.Add(node);
                }
            }

            Loose(loose, place);
        }

        /// <summary>Text and inline elements directly in a block container become one paragraph.</summary>
        private void Loose(List<INode> nodes, Place place)
        {
            if (nodes.Count == 0)
            {
                return;
            }

            var content = new List<ExportInline>();
            foreach (var n in nodes)
            {
                Inline(n, RunStyle.None, content, preserve: false);
            }

            nodes.Clear();
            var tidy = Tidy(content);
            if (tidy.Count > 0)
            {
                Add(new ExportParagraph(place.Role, tidy, place.Block, null));
            }
        }

        private static bool IsBlockElement(IElement e) => e.LocalName is "p" or "h1" or "h2" or "h3" or "h4" or "h5" or "h6" or "div" or "section"
            or "table" or "figure" or "blockquote" or "ul" or "ol" or "pre" or "hr" or "header" or "footer" or "main" or "aside" or "dl" or "script" or "style";

        private void Element(IElement e, Place place)
        {
            switch (e.LocalName)
            {
                case "h1" or "h2" or "h3" or "h4" or "h5" or "h6":
                    var level = Math.Clamp(e.LocalName[1] - '0' + place.HeadingShift, 1, 6);
                    Add(new ExportHeading(level, Inlines(e)));
                    break;
                case "p":
                    Paragraph(e, place);
                    break;
                case "section":
                    var id = e.Id is { } sid && sid.StartsWith("block-", StringComparison.Ordinal) ? sid["block-".Length..] : place.Block;
                    Flow(e, place with { Block = id });
                    break;
                case "div":
                    var role = e.ClassList.Contains("reading") ? ParagraphRole.Reading
                        : e.ClassList.Contains("warnings") ? ParagraphRole.Warning
                        : e.ClassList.Contains("notes") ? ParagraphRole.Note
                        : place.Role;
                    Flow(e, place with { Role = role });
                    break;
                case "blockquote":
                    Flow(e, place with { Role = ParagraphRole.Quote });
                    break;
                case "ul" or "ol":
                    var n = 0;
                    foreach (var li in e.Children.Where(c => c.LocalName == "li"))
                    {
                        n++;
                        var marker = e.LocalName == "ol" ? n.ToString(System.Globalization.CultureInfo.InvariantCulture) + ". " : "\u2022 ";
                        var content = new List<ExportInline> { new TextRun(marker, RunStyle.None) };
                        var nested = new List<IElement>();
                        foreach (var child in li.ChildNodes)
                        {
                            if (child is IElement ce && IsBlockElement(ce) && ce.LocalName != "p")
                            {
                                nested.Add(ce);
                            }
                            else
                            {
                                Inline(child, RunStyle.None, content, preserve: false);
                            }
                        }

                        Add(new ExportParagraph(ParagraphRole.ListItem, Tidy(content), place.Block, null));
                        foreach (var ce in nested)
                        {
                            Element(ce, place);
                        }
                    }

                    break;
                case "pre":
                    var code = new List<ExportInline>();
                    Inline(e, RunStyle.Code, code, preserve: true);
                    Add(new ExportParagraph(ParagraphRole.Code, code, place.Block, null));
                    break;
                case "table":
                    Add(Table(e, place));
                    break;
                case "figure":
                    var type = e.ClassList.FirstOrDefault(c => c.StartsWith("chart-", StringComparison.Ordinal))?["chart-".Length..] ?? "figure";
                    var caption = e.QuerySelector("figcaption") is { } fc ? Inlines(fc) : [];
                    if (e.QuerySelector("svg") is not null)
                    {
                        Add(new ExportFigure(place.Block, type, caption, figures++));
                    }
                    else if (caption.Count > 0)
                    {
                        Add(new ExportParagraph(place.Role, caption, place.Block, null));
                    }

                    break;
                case "hr" or "script" or "style":
                    break;
                default:
                    Flow(e, place);
                    break;
            }
        }

        private void Paragraph(IElement e, Place place)
        {
            var cls = e.ClassName ?? string.Empty;
            var role = cls switch
            {
                "block-title" => ParagraphRole.BlockLabel,
                "method" => ParagraphRole.Method,
                "decision" => ParagraphRole.Decision,
                _ when cls.StartsWith("methods-", StringComparison.Ordinal) => ParagraphRole.MethodsText,
                _ => place.Role,
            };
            var content = Inlines(e);
            if (content.Count > 0)
            {
                Add(new ExportParagraph(role, content, place.Block, cls.Length == 0 ? null : cls));
            }
        }

        private ExportTable Table(IElement table, Place place)
        {
            var caption = table.QuerySelector("caption") is { } c ? Inlines(c) : [];
            var rows = new List<ExportRow>();
            foreach (var tr in table.QuerySelectorAll("tr"))
            {
                var header = tr.ParentElement?.LocalName == "thead";
                var cells = new List<ExportCell>();
                foreach (var cell in tr.Children.Where(x => x.LocalName is "th" or "td"))
                {
                    var span = int.TryParse(cell.GetAttribute("colspan"), System.Globalization.NumberStyles.None, System.Globalization.CultureInfo.InvariantCulture, out var s) && s is > 1 and < 1000 ? s : 1;
                    cells.Add(new ExportCell(cell.LocalName == "th", span, Inlines(cell)));
                }

                rows.Add(new ExportRow(header, cells));
            }

            var kind = table.ClassList.Length > 0 ? table.ClassList[0] : "table";
            return new ExportTable(place.Block, kind, caption, rows);
        }

        public List<ExportInline> Inlines(IElement e)
        {
            var content = new List<ExportInline>();
            foreach (var n in e.ChildNodes)
            {
                Inline(n, RunStyle.None, content, preserve: false);
            }

            return Tidy(content);
        }

        private static void Inline(INode node, RunStyle style, List<ExportInline> into, bool preserve)
        {
            if (node is IText text)
            {
                into.Add(new TextRun(preserve ? text.Data : Collapse(text.Data), style));
                return;
            }

            if (node is not IElement e)
            {
                return;
            }

            if (e.GetAttribute("data-v") is { } id)
            {
                into.Add(new NumberRun(id, e.TextContent, e.HasAttribute("data-style"), style));
                return;
            }

            var inner = e.LocalName switch
            {
                "strong" or "b" => style | RunStyle.Bold,
                "em" or "i" => style | RunStyle.Italic,
                "code" or "kbd" or "samp" => style | RunStyle.Code,
                "sup" => style | RunStyle.Superscript,
                "sub" => style | RunStyle.Subscript,
                _ => style,
            };
            switch (e.LocalName)
            {
                case "br":
                    into.Add(new LineBreakRun());
                    return;
                case "svg" or "script" or "style":
                    return;
                case "img":
                    if (e.GetAttribute("alt") is { Length: > 0 } alt)
                    {
                        into.Add(new TextRun(alt, style));
                    }

                    return;
            }

            foreach (var child in e.ChildNodes)
            {
                Inline(child, inner, into, preserve);
            }
        }

        private static string Collapse(string s)
        {
            var sb = new StringBuilder(s.Length);
            var space = false;
            foreach (var ch in s)
            {
                if (ch is ' ' or '\n' or '\r' or '\t' or '\f')
                {
                    space = true;
                    continue;
                }

                if (space)
                {
                    sb.Append(' ');
                    space = false;
                }

                sb.Append(ch);
            }

            if (space)
            {
                sb.Append(' ');
            }

            return sb.ToString();
        }

        /// <summary>Joins neighbouring text of one style, drops doubled spaces between runs and trims the ends.</summary>
        private static List<ExportInline> Tidy(List<ExportInline> content)
        {
            var result = new List<ExportInline>();
            foreach (var item in content)
            {
                if (item is TextRun t && result.Count > 0 && result[^1] is TextRun last && last.Style == t.Style)
                {
                    result[^1] = last with { Text = last.Text + t.Text };
                }
                else if (item is not TextRun { Text.Length: 0 })
                {
                    result.Add(item);
                }
            }

            // A space at the end of one run and the start of the next is one space in HTML.
            for (var i = 1; i < result.Count; i++)
            {
                if (result[i] is TextRun { Text: [' ', ..] } t && EndsWithSpace(result[i - 1]))
                {
                    result[i] = t with { Text = t.Text[1..] };
                }
            }

            if (result.Count > 0 && result[0] is TextRun first && first.Style.HasFlag(RunStyle.Code) is false)
            {
                result[0] = first with { Text = first.Text.TrimStart(' ') };
            }

            if (result.Count > 0 && result[^1] is TextRun end && end.Style.HasFlag(RunStyle.Code) is false)
            {
                result[^1] = end with { Text = end.Text.TrimEnd(' ') };
            }

            result.RemoveAll(x => x is TextRun { Text.Length: 0 });
            return result;
        }

        private static bool EndsWithSpace(ExportInline i) => i is TextRun { Text: [.., ' '] } or LineBreakRun;
    }
}
