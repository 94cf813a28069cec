using System.Globalization;
using System.IO.Compression;
using DocumentFormat.OpenXml;
using DocumentFormat.OpenXml.Packaging;
using DocumentFormat.OpenXml.Wordprocessing;
using A = DocumentFormat.OpenXml.Drawing;
using DW = DocumentFormat.OpenXml.Drawing.Wordprocessing;
using PIC = DocumentFormat.OpenXml.Drawing.Pictures;

namespace StudyPress.Rendering.Export;

/// <summary>
/// The report as a Word document (<c>build --docx</c>): headings, prose, the methods and results
/// text, tables as Word tables, figures as PNG images with their captions. Every traced number is
/// a bookmark named after its manifest id (<c>v52</c>; later places of the same value
/// <c>v52_2</c>, <c>v52_3</c>, … since Word bookmark names are unique), so a later build can be
/// matched value by value. Deterministic: explicit relationship ids, no document properties (no
/// dates, no author), and the zip rewritten with a fixed entry time in a fixed order.
/// </summary>
public static class DocxWriter
{
    /// <summary>The zip entries' time: the earliest a zip can hold (no clock).</summary>
    private static readonly DateTimeOffset EntryTime = new(1980, 1, 1, 0, 0, 0, TimeSpan.Zero);

    private const long EmuPerInch = 914400;

    /// <summary>The widest a figure is drawn: the text width of an A4 page with 1-inch margins, rounded down to 6 inches.</summary>
    private const long MaxFigureWidth = 6 * EmuPerInch;

    /// <summary>The namespace of the custom XML part that carries the results manifest.</summary>
    public const string ManifestNamespace = "urn:studypress:results-manifest";

    /// <param name="figures">Each figure's PNG bytes, in the report's figure order.</param>
    /// <param name="manifest">The results manifest (JSON), kept in the document as a custom XML part so the document can be compared with a later build on its own.</param>
    public static byte[] Write(ReportDocument report, IReadOnlyList<byte[]> figures, byte[]? manifest = null)
    {
        using var package = new MemoryStream();
        using (var doc = WordprocessingDocument.Create(package, WordprocessingDocumentType.Document, autoSave: true))
        {
            var main = doc.AddNewPart<MainDocumentPart>("application/vnd.openxmlformats-officedocument.wordprocessingml.document.main+xml", "rId1");
            var styles = main.AddNewPart<StyleDefinitionsPart>("rIdStyles");
            styles.Styles = Styles();
            var state = new State(main, figures);
            var body = new Body();
            foreach (var block in report.Blocks)
            {
                foreach (var element in state.Convert(block))
                {
                    body.Append(element);
                }
            }

            body.Append(new SectionProperties(
                new PageSize { Width = 11906U, Height = 16838U },
                new PageMargin { Top = 1440, Right = 1440U, Bottom = 1440, Left = 1440U, Header = 708U, Footer = 708U, Gutter = 0U }));
            main.Document = new Document(body);
            if (manifest is not null)
            {
                var custom = main.AddNewPart<CustomXmlPart>("application/xml", "rIdManifest");
                var xml = new System.Xml.Linq.XDocument(new System.Xml.Linq.XElement(
                    System.Xml.Linq.XName.Get("manifest", ManifestNamespace),
                    new System.Xml.Linq.XAttribute("format", "application/json"),
                    System.Text.Encoding.UTF8.GetString(manifest)));
                using var stream = custom.GetStream(FileMode.Create, FileAccess.Write);
                using var writer = System.Xml.XmlWriter.Create(stream, new System.Xml.XmlWriterSettings { Encoding = new System.Text.UTF8Encoding(false), NewLineChars = "\n" });
                xml.Save(writer);
            }
        }

        return Normalize(package.ToArray());
    }

    private sealed class State(MainDocumentPart main, IReadOnlyList<byte[]> figures)
    {
        private readonly Dictionary<string, int> seen = new(StringComparer.Ordinal);
        private int bookmarkId;
        private uint drawingId;

        public IEnumerable<OpenXmlElement> Convert(ExportBlock block)
        {
            switch (block)
            {
                case ExportHeading h:
                    yield return MakeParagraph("Heading" + h.Level.ToString(CultureInfo.InvariantCulture), h.Content);
                    break;
                case ExportParagraph p:
                    yield return MakeParagraph(StyleOf(p.Role), p.Content);
                    break;
                case ExportTable t:
                    if (t.Caption.Count > 0)
                    {
                        var caption = MakeParagraph("Caption", t.Caption);
                        caption.ParagraphProperties!.Append(new KeepNext());
                        yield return caption;
                    }

                    yield return MakeTable(t);

                    // Word joins two tables that touch; a paragraph keeps them apart.
                    yield return new Paragraph(new ParagraphProperties(new ParagraphStyleId { Val = "TableEnd" }));
                    break;
                case ExportFigure f:
                    if (f.Index >= figures.Count)
                    {
                        throw new InvalidOperationException("the report shows more figures than the compilation produced");
                    }

                    yield return Picture(figures[f.Index], f);
                    yield return MakeParagraph("Caption", f.Caption);
                    break;
            }
        }

        private static string StyleOf(ParagraphRole role) => role switch
        {
            ParagraphRole.Title => "Title",
            ParagraphRole.Authors => "Subtitle",
            ParagraphRole.StudyLine => "StudyLine",
            ParagraphRole.BlockLabel => "BlockLabel",
            ParagraphRole.Method => "MethodNote",
            ParagraphRole.Decision or ParagraphRole.Reading => "Reading",
            ParagraphRole.Warning => "Warning",
            ParagraphRole.Note => "MethodNote",
            ParagraphRole.Quote => "Quote",
            ParagraphRole.ListItem => "ListItem",
            ParagraphRole.Code => "CodeBlock",
            _ => "Normal",
        };

        private Paragraph MakeParagraph(string style, IReadOnlyList<ExportInline> content, JustificationValues? align = null)
        {
            var props = new ParagraphProperties(new ParagraphStyleId { Val = style });
            if (align is { } a)
            {
                props.Append(new Justification { Val = a });
            }

            var p = new Paragraph(props);
            foreach (var item in content)
            {
                switch (item)
                {
                    case TextRun t:
                        AppendText(p, t.Text, t.Style);
                        break;
                    case LineBreakRun:
                        p.Append(new Run(new Break()));
                        break;
                    case NumberRun n:
                        // One bookmark per place: the first keeps the id itself, later places add _2, _3, ...
                        var count = seen[n.Id] = seen.GetValueOrDefault(n.Id) + 1;
                        var name = count == 1 ? n.Id : n.Id + "_" + count.ToString(CultureInfo.InvariantCulture);
                        var id = (bookmarkId++).ToString(CultureInfo.InvariantCulture);
                        p.Append(new BookmarkStart { Name = name, Id = id });
                        AppendText(p, n.Text, n.Style);
                        p.Append(new BookmarkEnd { Id = id });
                        break;
                }
            }

            return p;
        }

        private static void AppendText(Paragraph p, string text, RunStyle style)
        {
            var lines = text.Split('\n');
            for (var i = 0; i < lines.Length; i++)
            {
                var run = new Run();
                if (RunProperties(style) is { } rp)
                {
                    run.Append(rp);
                }

                if (i > 0)
                {
                    run.Append(new Break());
                }

                run.Append(new Text(lines[i]) { Space = SpaceProcessingModeValues.Preserve });
                p.Append(run);
            }
        }

        private static RunProperties? RunProperties(RunStyle style)
        {
            if (style == RunStyle.None)
            {
                return null;
            }

            var rp = new RunProperties();
            if (style.HasFlag(RunStyle.Code))
            {
                rp.Append(new DocumentFormat.OpenXml.Wordprocessing.RunStyle { Val = "CodeChar" });
            }

            if (style.HasFlag(RunStyle.Bold))
            {
                rp.Append(new Bold());
            }

            if (style.HasFlag(RunStyle.Italic))
            {
                rp.Append(new Italic());
            }

            if (style.HasFlag(RunStyle.Superscript) || style.HasFlag(RunStyle.Subscript))
            {
                rp.Append(new VerticalTextAlignment { Val = style.HasFlag(RunStyle.Superscript) ? VerticalPositionValues.Superscript : VerticalPositionValues.Subscript });
            }

            return rp;
        }

        private Table MakeTable(ExportTable t)
        {
            var columns = Math.Max(1, t.Columns);
            var table = new Table(new TableProperties(
                new TableStyle { Val = "ReportTable" },
                new TableWidth { Width = "0", Type = TableWidthUnitValues.Auto },
                new TableLook { Val = "04A0", FirstRow = true, FirstColumn = true, LastRow = false, LastColumn = false, NoHorizontalBand = true, NoVerticalBand = true }));
            var grid = new TableGrid();
            for (var i = 0; i < columns; i++)
            {
                grid.Append(new GridColumn { Width = (9026 / columns).ToString(CultureInfo.InvariantCulture) });
            }

            table.Append(grid);
            var lastHeader = t.Rows.ToList().FindLastIndex(r => r.Header);
            for (var r = 0; r < t.Rows.Count; r++)
            {
                var row = t.Rows[r];
                var tr = new TableRow();
                if (row.Header)
                {
                    tr.Append(new TableRowProperties(new TableHeader(), new CantSplit()));
                }

                var used = 0;
                foreach (var cell in row.Cells)
                {
                    tr.Append(Cell(cell, row.Header, r == lastHeader, r == t.Rows.Count - 1));
                    used += cell.Span;
                }

                // Rows shorter than the table are filled so that every row has the grid's columns.
                for (; used < columns; used++)
                {
                    tr.Append(Cell(new ExportCell(false, 1, []), row.Header, r == lastHeader, r == t.Rows.Count - 1));
                }

                table.Append(tr);
            }

            return table;
        }

        private TableCell Cell(ExportCell cell, bool header, bool lastHeader, bool lastRow)
        {
            var props = new TableCellProperties(new TableCellWidth { Width = "0", Type = TableWidthUnitValues.Auto });
            if (cell.Span > 1)
            {
                props.Append(new GridSpan { Val = cell.Span });
            }

            if (lastHeader || lastRow)
            {
                var borders = new TableCellBorders();
                if (lastHeader)
                {
                    borders.Append(new BottomBorder { Val = BorderValues.Single, Size = 4U, Space = 0U, Color = "000000" });
                }
                else
                {
                    borders.Append(new BottomBorder { Val = BorderValues.Single, Size = 8U, Space = 0U, Color = "000000" });
                }

                props.Append(borders);
            }

            var numeric = !cell.Head && IsNumeric(cell.Content);
            var p = MakeParagraph(header ? "TableHeading" : "TableText", cell.Content, numeric ? JustificationValues.Right : null);
            return new TableCell(props, p);
        }

        /// <summary>A cell of numbers and the punctuation between them (intervals, pairs of df) is set flush right.</summary>
        private static bool IsNumeric(IReadOnlyList<ExportInline> content) =>
            content.OfType<NumberRun>().Any() && content.OfType<TextRun>().All(t => t.Text.All(c => !char.IsLetter(c)) || t.Text.Trim() is "to");

        private Paragraph Picture(byte[] png, ExportFigure f)
        {
            drawingId++;
            var relId = "rIdFig" + drawingId.ToString(CultureInfo.InvariantCulture);
            var part = main.AddNewPart<ImagePart>("image/png", relId);
            using (var s = new MemoryStream(png, writable: false))
            {
                part.FeedData(s);
            }

            var (pw, ph) = PngSize(png);
            var cx = Math.Min(MaxFigureWidth, pw * EmuPerInch / 192);
            var cy = ph * cx / Math.Max(1, pw);
            var name = "Figure " + drawingId.ToString(CultureInfo.InvariantCulture);
            var description = string.Concat(f.Caption.Select(i => i switch { TextRun t => t.Text, NumberRun n => n.Text, _ => " " }));
            var inline = new DW.Inline(
                new DW.Extent { Cx = cx, Cy = cy },
                new DW.EffectExtent { LeftEdge = 0L, TopEdge = 0L, RightEdge = 0L, BottomEdge = 0L },
                new DW.DocProperties { Id = drawingId, Name = name, Description = description },
                new DW.NonVisualGraphicFrameDrawingProperties(new A.GraphicFrameLocks { NoChangeAspect = true }),
                new A.Graphic(new A.GraphicData(
                    new PIC.Picture(
                        new PIC.NonVisualPictureProperties(
                            new PIC.NonVisualDrawingProperties { Id = 0U, Name = f.Type + ".png" },
                            new PIC.NonVisualPictureDrawingProperties()),
                        new PIC.BlipFill(new A.Blip { Embed = relId }, new A.Stretch(new A.FillRectangle())),
                        new PIC.ShapeProperties(
                            new A.Transform2D(new A.Offset { X = 0L, Y = 0L }, new A.Extents { Cx = cx, Cy = cy }),
                            new A.PresetGeometry(new A.AdjustValueList()) { Preset = A.ShapeTypeValues.Rectangle })))
                { Uri = "http://schemas.openxmlformats.org/drawingml/2006/picture" }))
            {
                DistanceFromTop = 0U,
                DistanceFromBottom = 0U,
                DistanceFromLeft = 0U,
                DistanceFromRight = 0U,
            };
            return new Paragraph(
                new ParagraphProperties(new ParagraphStyleId { Val = "FigureImage" }, new KeepNext()),
                new Run(new Drawing(inline)));
        }
    }

    /// <summary>A PNG's pixel size from its IHDR chunk.</summary>
    internal static (long Width, long Height) PngSize(byte[] png)
    {
        if (png.Length < 24 || png[12] != 'I' || png[13] != 'H' || png[14] != 'D' || png[15] != 'R')
        {
            throw new InvalidOperationException("a figure is not a PNG image");
        }

        return (System.Buffers.Binary.BinaryPrimitives.ReadUInt32BigEndian(png.AsSpan(16)), System.Buffers.Binary.BinaryPrimitives.ReadUInt32BigEndian(png.AsSpan(20)));
    }

    private static Styles Styles()
    {
        var styles = new Styles(new DocDefaults(
            new RunPropertiesDefault(new RunPropertiesBaseStyle(
                new RunFonts { Ascii = "Calibri", HighAnsi = "Calibri", ComplexScript = "Calibri", EastAsia = "Calibri" },
                new FontSize { Val = "22" },
                new FontSizeComplexScript { Val = "22" },
                new Languages { Val = "en-GB" })),
            new ParagraphPropertiesDefault(new ParagraphPropertiesBaseStyle(new SpacingBetweenLines { After = "120", Line = "264", LineRule = LineSpacingRuleValues.Auto }))));
        styles.Append(ParagraphStyle("Normal", "Normal", null, isDefault: true));
        styles.Append(ParagraphStyle("Title", "Title", new RunProperties(new Bold(), new FontSize { Val = "40" }), new ParagraphProperties(new SpacingBetweenLines { After = "160" })));
        styles.Append(ParagraphStyle("Subtitle", "Subtitle", new RunProperties(new FontSize { Val = "24" })));
        styles.Append(ParagraphStyle("StudyLine", "Study line", new RunProperties(new Color { Val = "404040" }, new FontSize { Val = "18" })));
        for (var level = 1; level <= 6; level++)
        {
            var size = level switch { 1 => "32", 2 => "28", 3 => "24", _ => "22" };
            styles.Append(ParagraphStyle(
                "Heading" + level.ToString(CultureInfo.InvariantCulture),
                "heading " + level.ToString(CultureInfo.InvariantCulture),
                new RunProperties(new Bold(), new FontSize { Val = size }),
                new ParagraphProperties(new KeepNext(), new SpacingBetweenLines { Before = "240", After = "120" }, new OutlineLevel { Val = level - 1 })));
        }

        styles.Append(ParagraphStyle("Caption", "caption", new RunProperties(new Italic(), new FontSize { Val = "20" })));
        styles.Append(ParagraphStyle("BlockLabel", "Block label", new RunProperties(new Color { Val = "505050" }, new FontSize { Val = "16" }), new ParagraphProperties(new KeepNext())));
        styles.Append(ParagraphStyle("MethodNote", "Method note", new RunProperties(new FontSize { Val = "18" })));
        styles.Append(ParagraphStyle("Reading", "Reading", null, new ParagraphProperties(new Indentation { Left = "284" })));
        styles.Append(ParagraphStyle("Warning", "Warning", new RunProperties(new Bold())));
        styles.Append(ParagraphStyle("Quote", "Quote", new RunProperties(new Italic()), new ParagraphProperties(new Indentation { Left = "567" })));
        styles.Append(ParagraphStyle("ListItem", "List item", null, new ParagraphProperties(new Indentation { Left = "567", Hanging = "283" })));
        styles.Append(ParagraphStyle("CodeBlock", "Code block", new RunProperties(new RunFonts { Ascii = "Consolas", HighAnsi = "Consolas", ComplexScript = "Consolas" }, new FontSize { Val = "18" })));
        styles.Append(ParagraphStyle("TableText", "Table text", null, new ParagraphProperties(new SpacingBetweenLines { Before = "20", After = "20" })));
        styles.Append(ParagraphStyle("TableHeading", "Table heading", new RunProperties(new Bold()), new ParagraphProperties(new SpacingBetweenLines { Before = "20", After = "20" })));
        styles.Append(ParagraphStyle("TableEnd", "Table end", new RunProperties(new FontSize { Val = "8" }), new ParagraphProperties(new SpacingBetweenLines { Before = "0", After = "0" })));
        styles.Append(ParagraphStyle("FigureImage", "Figure image", null, new ParagraphProperties(new Justification { Val = JustificationValues.Center })));
        styles.Append(new Style(
            new StyleName { Val = "Code" },
            new StyleRunProperties(new RunFonts { Ascii = "Consolas", HighAnsi = "Consolas", ComplexScript = "Consolas" }))
        { Type = StyleValues.Character, StyleId = "CodeChar" });
        styles.Append(new Style(
            new StyleName { Val = "Report table" },
            new StyleTableProperties(
                new TableBorders(
                    new TopBorder { Val = BorderValues.Single, Size = 8U, Space = 0U, Color = "000000" },
                    new BottomBorder { Val = BorderValues.Single, Size = 8U, Space = 0U, Color = "000000" }),
                new TableCellMarginDefault(
                    new TopMargin { Width = "0", Type = TableWidthUnitValues.Dxa },
                    new TableCellLeftMargin { Width = 108, Type = TableWidthValues.Dxa },
                    new BottomMargin { Width = "0", Type = TableWidthUnitValues.Dxa },
                    new TableCellRightMargin { Width = 108, Type = TableWidthValues.Dxa })))
        { Type = StyleValues.Table, StyleId = "ReportTable" });
        return styles;
    }

    private static Style ParagraphStyle(string id, string name, RunProperties? run, ParagraphProperties? paragraph = null, bool isDefault = false)
    {
        var style = new Style(new StyleName { Val = name }) { Type = StyleValues.Paragraph, StyleId = id };
        if (isDefault)
        {
            style.Default = true;
        }
        else
        {
            style.Append(new BasedOn { Val = "Normal" });
            style.Append(new PrimaryStyle());
        }

        if (paragraph is not null)
        {
            style.Append(new StyleParagraphProperties(paragraph.ChildElements.Select(c => c.CloneNode(true))));
        }

        if (run is not null)
        {
            style.Append(new StyleRunProperties(run.ChildElements.Select(c => c.CloneNode(true))));
        }

        return style;
    }

    /// <summary>
    /// Rewrites the package's zip with every entry at one fixed time, <c>[Content_Types].xml</c>
    /// first and the rest in the order written, so the same report gives the same bytes.
    /// </summary>
    internal static byte[] Normalize(byte[] package)
    {
        var entries = new List<(string Name, byte[] Bytes)>();
        using (var input = new ZipArchive(new MemoryStream(package, writable: false), ZipArchiveMode.Read))
        {
            foreach (var e in input.Entries)
            {
                using var s = e.Open();
                using var copy = new MemoryStream();
                s.CopyTo(copy);
                entries.Add((e.FullName, copy.ToArray()));
            }
        }

        var ordered = entries.Where(e => e.Name == "[Content_Types].xml")
            .Concat(entries.Where(e => e.Name == "_rels/.rels"))
            .Concat(entries.Where(e => e.Name is not "[Content_Types].xml" and not "_rels/.rels"));
        using var output = new MemoryStream();
        using (var zip = new ZipArchive(output, ZipArchiveMode.Create, leaveOpen: true))
        {
            foreach (var (name, bytes) in ordered)
            {
                var entry = zip.CreateEntry(name, CompressionLevel.Optimal);
                entry.LastWriteTime = EntryTime;
                using var s = entry.Open();
                s.Write(bytes);
            }
        }

        return output.ToArray();
    }
}
