using System.Globalization;
using System.IO.Compression;
using System.Text;
using System.Xml;

namespace StudyPress.Rendering.Export;

/// <summary>
/// The report as a Word document (<c>build --docx</c>): headings, prose, the methods and results
/// text, tables as Word tables, figures as PNG images with their captions. Every traced number is
/// a bookmark named after its manifest id (<c>v52</c>; later places of the same value
/// <c>v52_2</c>, <c>v52_3</c>, … since Word bookmark names are unique), so a later build can be
/// matched value by value. The WordprocessingML parts are written directly (XmlWriter into a
/// ZipArchive). Deterministic: explicit relationship ids, no document properties (no dates, no
/// author), every zip entry at one fixed time, the entries in a fixed order.
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

    private const string W = "http://schemas.openxmlformats.org/wordprocessingml/2006/main";
    private const string WP = "http://schemas.openxmlformats.org/drawingml/2006/wordprocessingDrawing";
    private const string A = "http://schemas.openxmlformats.org/drawingml/2006/main";
    private const string PIC = "http://schemas.openxmlformats.org/drawingml/2006/picture";
    private const string R = "http://schemas.openxmlformats.org/officeDocument/2006/relationships";
    private const string Relationships = "http://schemas.openxmlformats.org/package/2006/relationships";
    private const string RelationshipType = "http://schemas.openxmlformats.org/officeDocument/2006/relationships/";
    private const string XmlDeclaration = "<?xml version=\"1.0\" encoding=\"utf-8\"?>";

    private static readonly XmlWriterSettings PartSettings = new() { Encoding = new UTF8Encoding(false), CloseOutput = false };

    /// <param name="figures">Each figure's PNG bytes, in the report's figure order.</param>
    /// <param name="manifest">The results manifest (JSON), kept in the document as a custom XML part so the document can be compared with a later build on its own.</param>
    public static byte[] Write(ReportDocument report, IReadOnlyList<byte[]> figures, byte[]? manifest = null)
    {
        var state = new State(figures);
        var document = Part(w =>
        {
            w.WriteStartElement("w", "document", W);
            w.WriteStartElement("w", "body", W);
            foreach (var block in report.Blocks)
            {
                state.Write(w, block);
            }

            w.WriteStartElement("w", "sectPr", W);
            Empty(w, "pgSz", ("w", "11906"), ("h", "16838"));
            Empty(w, "pgMar", ("top", "1440"), ("right", "1440"), ("bottom", "1440"), ("left", "1440"), ("header", "708"), ("footer", "708"), ("gutter", "0"));
            w.WriteEndElement();
            w.WriteEndElement();
            w.WriteEndElement();
        });

        // The parts in the order a packaging library writes them: content types and package
        // relationships first, the main document and its styles, the images, the manifest, and
        // the main document's relationships last.
        var types = new StringBuilder(XmlDeclaration)
            .Append("<Types xmlns=\"http://schemas.openxmlformats.org/package/2006/content-types\">")
            .Append("<Default Extension=\"xml\" ContentType=\"application/vnd.openxmlformats-officedocument.wordprocessingml.document.main+xml\" />");
        if (state.Images.Count > 0)
        {
            types.Append("<Default Extension=\"png\" ContentType=\"image/png\" />");
        }

        types.Append("<Default Extension=\"rels\" ContentType=\"application/vnd.openxmlformats-package.relationships+xml\" />")
            .Append("<Override PartName=\"/word/styles.xml\" ContentType=\"application/vnd.openxmlformats-officedocument.wordprocessingml.styles+xml\" />");
        if (manifest is not null)
        {
            types.Append("<Override PartName=\"/customXml/item.xml\" ContentType=\"application/xml\" />");
        }

        types.Append("</Types>");
        var links = new List<(string Type, string Target, string Id)> { ("styles", "/word/styles.xml", "rIdStyles") };
        links.AddRange(state.Images.Select(i => ("image", "/" + i.Name, i.Id)));
        if (manifest is not null)
        {
            links.Add(("customXml", "/customXml/item.xml", "rIdManifest"));
        }

        using var output = new MemoryStream();
        using (var zip = new ZipArchive(output, ZipArchiveMode.Create, leaveOpen: true))
        {
            Entry(zip, "[Content_Types].xml", WithMark(types.ToString()));
            Entry(zip, "_rels/.rels", RelationshipsPart([("officeDocument", "/word/document.xml", "rId1")]));
            Entry(zip, "word/document.xml", document);
            Entry(zip, "word/styles.xml", Part(Styles));
            foreach (var (name, _, png) in state.Images)
            {
                Entry(zip, name, png);
            }

            if (manifest is not null)
            {
                Entry(zip, "customXml/item.xml", ManifestPart(manifest));
            }

            Entry(zip, "word/_rels/document.xml.rels", RelationshipsPart(links));
        }

        return output.ToArray();
    }

    private static void Entry(ZipArchive zip, string name, byte[] bytes)
    {
        var entry = zip.CreateEntry(name, CompressionLevel.Optimal);
        entry.LastWriteTime = EntryTime;
        using var s = entry.Open();
        s.Write(bytes);
    }

    /// <summary>An XML part written by <paramref name="write"/>: UTF-8 without a byte order mark, the declaration, no indentation.</summary>
    private static byte[] Part(Action<XmlWriter> write)
    {
        using var stream = new MemoryStream();
        using (var w = XmlWriter.Create(stream, PartSettings))
        {
            w.WriteStartDocument();
            write(w);
            w.WriteEndDocument();
        }

        return stream.ToArray();
    }

    /// <summary>The package's own parts (content types, relationships) carry a UTF-8 byte order mark.</summary>
    private static byte[] WithMark(string xml) => [.. Encoding.UTF8.GetPreamble(), .. Encoding.UTF8.GetBytes(xml)];

    private static byte[] RelationshipsPart(IEnumerable<(string Type, string Target, string Id)> links)
    {
        var text = new StringBuilder(XmlDeclaration).Append("<Relationships xmlns=\"").Append(Relationships).Append("\">");
        foreach (var (type, target, id) in links)
        {
            text.Append("<Relationship Type=\"").Append(RelationshipType).Append(type)
                .Append("\" Target=\"").Append(target).Append("\" Id=\"").Append(id).Append("\" />");
        }

        return WithMark(text.Append("</Relationships>").ToString());
    }

    private static byte[] ManifestPart(byte[] manifest)
    {
        var xml = new System.Xml.Linq.XDocument(new System.Xml.Linq.XElement(
            System.Xml.Linq.XName.Get("manifest", ManifestNamespace),
            new System.Xml.Linq.XAttribute("format", "application/json"),
            Encoding.UTF8.GetString(manifest)));
        using var stream = new MemoryStream();
        using (var writer = XmlWriter.Create(stream, new XmlWriterSettings { Encoding = new UTF8Encoding(false), NewLineChars = "\n" }))
        {
            xml.Save(writer);
        }

        return stream.ToArray();
    }

    /// <summary>An empty w: element with w: attributes.</summary>
    private static void Empty(XmlWriter w, string name, params (string Name, string Value)[] attributes)
    {
        w.WriteStartElement("w", name, W);
        foreach (var (n, v) in attributes)
        {
            w.WriteAttributeString("w", n, W, v);
        }

        w.WriteEndElement();
    }

    private sealed class State(IReadOnlyList<byte[]> figures)
    {
        private readonly Dictionary<string, int> seen = new(StringComparer.Ordinal);
        private int bookmarkId;
        private uint drawingId;

        /// <summary>The image parts so far: zip entry name, relationship id, bytes.</summary>
        public List<(string Name, string Id, byte[] Png)> Images { get; } = [];

        public void Write(XmlWriter w, ExportBlock block)
        {
            switch (block)
            {
                case ExportHeading h:
                    Paragraph(w, "Heading" + h.Level.ToString(CultureInfo.InvariantCulture), h.Content);
                    break;
                case ExportParagraph p:
                    Paragraph(w, StyleOf(p.Role), p.Content);
                    break;
                case ExportTable t:
                    if (t.Caption.Count > 0)
                    {
                        Paragraph(w, "Caption", t.Caption, keepNext: true);
                    }

                    Table(w, t);

                    // Word joins two tables that touch; a paragraph keeps them apart.
                    w.WriteStartElement("w", "p", W);
                    ParagraphProperties(w, "TableEnd", keepNext: false, right: false);
                    w.WriteEndElement();
                    break;
                case ExportFigure f:
                    if (f.Index >= figures.Count)
                    {
                        throw new InvalidOperationException("the report shows more figures than the compilation produced");
                    }

                    Picture(w, figures[f.Index], f);
                    Paragraph(w, "Caption", f.Caption);
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

        private static void ParagraphProperties(XmlWriter w, string style, bool keepNext, bool right)
        {
            w.WriteStartElement("w", "pPr", W);
            Empty(w, "pStyle", ("val", style));
            if (right)
            {
                Empty(w, "jc", ("val", "right"));
            }

            if (keepNext)
            {
                Empty(w, "keepNext");
            }

            w.WriteEndElement();
        }

        private void Paragraph(XmlWriter w, string style, IReadOnlyList<ExportInline> content, bool keepNext = false, bool right = false)
        {
            w.WriteStartElement("w", "p", W);
            ParagraphProperties(w, style, keepNext, right);
            foreach (var item in content)
            {
                switch (item)
                {
                    case TextRun t:
                        Text(w, t.Text, t.Style);
                        break;
                    case LineBreakRun:
                        w.WriteStartElement("w", "r", W);
                        Empty(w, "br");
                        w.WriteEndElement();
                        break;
                    case NumberRun n:
                        // One bookmark per place: the first keeps the id itself, later places add _2, _3, ...
                        var count = seen[n.Id] = seen.GetValueOrDefault(n.Id) + 1;
                        var name = count == 1 ? n.Id : n.Id + "_" + count.ToString(CultureInfo.InvariantCulture);
                        var id = (bookmarkId++).ToString(CultureInfo.InvariantCulture);
                        Empty(w, "bookmarkStart", ("name", name), ("id", id));
                        Text(w, n.Text, n.Style);
                        Empty(w, "bookmarkEnd", ("id", id));
                        break;
                }
            }

            w.WriteEndElement();
        }

        /// <summary>One run per line of <paramref name="text"/>; the lines after the first start with a break.</summary>
        private static void Text(XmlWriter w, string text, RunStyle style)
        {
            var lines = text.Split('\n');
            for (var i = 0; i < lines.Length; i++)
            {
                w.WriteStartElement("w", "r", W);
                RunProperties(w, style);
                if (i > 0)
                {
                    Empty(w, "br");
                }

                w.WriteStartElement("w", "t", W);
                w.WriteAttributeString("xml", "space", null, "preserve");
                w.WriteString(lines[i]);
                w.WriteEndElement();
                w.WriteEndElement();
            }
        }

        private static void RunProperties(XmlWriter w, RunStyle style)
        {
            if (style == RunStyle.None)
            {
                return;
            }

            w.WriteStartElement("w", "rPr", W);
            if (style.HasFlag(RunStyle.Code))
            {
                Empty(w, "rStyle", ("val", "CodeChar"));
            }

            if (style.HasFlag(RunStyle.Bold))
            {
                Empty(w, "b");
            }

            if (style.HasFlag(RunStyle.Italic))
            {
                Empty(w, "i");
            }

            if (style.HasFlag(RunStyle.Superscript) || style.HasFlag(RunStyle.Subscript))
            {
                Empty(w, "vertAlign", ("val", style.HasFlag(RunStyle.Superscript) ? "superscript" : "subscript"));
            }

            w.WriteEndElement();
        }

        private void Table(XmlWriter w, ExportTable t)
        {
            var columns = Math.Max(1, t.Columns);
            w.WriteStartElement("w", "tbl", W);
            w.WriteStartElement("w", "tblPr", W);
            Empty(w, "tblStyle", ("val", "ReportTable"));
            Empty(w, "tblW", ("w", "0"), ("type", "auto"));
            Empty(w, "tblLook", ("val", "04A0"), ("firstRow", "true"), ("lastRow", "false"), ("firstColumn", "true"), ("lastColumn", "false"), ("noHBand", "true"), ("noVBand", "true"));
            w.WriteEndElement();
            w.WriteStartElement("w", "tblGrid", W);
            for (var i = 0; i < columns; i++)
            {
                Empty(w, "gridCol", ("w", (9026 / columns).ToString(CultureInfo.InvariantCulture)));
            }

            w.WriteEndElement();
            var lastHeader = t.Rows.ToList().FindLastIndex(r => r.Header);
            for (var r = 0; r < t.Rows.Count; r++)
            {
                var row = t.Rows[r];
                w.WriteStartElement("w", "tr", W);
                if (row.Header)
                {
                    w.WriteStartElement("w", "trPr", W);
                    Empty(w, "tblHeader");
                    Empty(w, "cantSplit");
                    w.WriteEndElement();
                }

                var used = 0;
                foreach (var cell in row.Cells)
                {
                    Cell(w, cell, row.Header, r == lastHeader, r == t.Rows.Count - 1);
                    used += cell.Span;
                }

                // Rows shorter than the table are filled so that every row has the grid's columns.
                for (; used < columns; used++)
                {
                    Cell(w, new ExportCell(false, 1, []), row.Header, r == lastHeader, r == t.Rows.Count - 1);
                }

                w.WriteEndElement();
            }

            w.WriteEndElement();
        }

        private void Cell(XmlWriter w, ExportCell cell, bool header, bool lastHeader, bool lastRow)
        {
            w.WriteStartElement("w", "tc", W);
            w.WriteStartElement("w", "tcPr", W);
            Empty(w, "tcW", ("w", "0"), ("type", "auto"));
            if (cell.Span > 1)
            {
                Empty(w, "gridSpan", ("val", cell.Span.ToString(CultureInfo.InvariantCulture)));
            }

            if (lastHeader || lastRow)
            {
                w.WriteStartElement("w", "tcBorders", W);
                Empty(w, "bottom", ("val", "single"), ("color", "000000"), ("sz", lastHeader ? "4" : "8"), ("space", "0"));
                w.WriteEndElement();
            }

            w.WriteEndElement();
            var numeric = !cell.Head && IsNumeric(cell.Content);
            Paragraph(w, header ? "TableHeading" : "TableText", cell.Content, right: numeric);
            w.WriteEndElement();
        }

        /// <summary>A cell of numbers and the punctuation between them (intervals, pairs of df) is set flush right.</summary>
        private static bool IsNumeric(IReadOnlyList<ExportInline> content) =>
            content.OfType<NumberRun>().Any() && content.OfType<TextRun>().All(t => t.Text.All(c => !char.IsLetter(c)) || t.Text.Trim() is "to");

        private void Picture(XmlWriter w, byte[] png, ExportFigure f)
        {
            drawingId++;
            var number = drawingId.ToString(CultureInfo.InvariantCulture);
            var relId = "rIdFig" + number;
            Images.Add((drawingId == 1 ? "media/image.png" : "media/image" + number + ".png", relId, png));
            var (pw, ph) = PngSize(png);
            var cx = Math.Min(MaxFigureWidth, pw * EmuPerInch / 192);
            var cy = ph * cx / Math.Max(1, pw);
            var cxText = cx.ToString(CultureInfo.InvariantCulture);
            var cyText = cy.ToString(CultureInfo.InvariantCulture);
            var description = string.Concat(f.Caption.Select(i => i switch { TextRun t => t.Text, NumberRun n => n.Text, _ => " " }));

            w.WriteStartElement("w", "p", W);
            ParagraphProperties(w, "FigureImage", keepNext: true, right: false);
            w.WriteStartElement("w", "r", W);
            w.WriteStartElement("w", "drawing", W);
            w.WriteStartElement("wp", "inline", WP);
            w.WriteAttributeString("distT", "0");
            w.WriteAttributeString("distB", "0");
            w.WriteAttributeString("distL", "0");
            w.WriteAttributeString("distR", "0");
            Element(w, "wp", "extent", WP, ("cx", cxText), ("cy", cyText));
            Element(w, "wp", "effectExtent", WP, ("l", "0"), ("t", "0"), ("r", "0"), ("b", "0"));
            Element(w, "wp", "docPr", WP, ("id", number), ("name", "Figure " + number), ("descr", description));
            w.WriteStartElement("wp", "cNvGraphicFramePr", WP);
            Element(w, "a", "graphicFrameLocks", A, ("noChangeAspect", "1"));
            w.WriteEndElement();
            w.WriteStartElement("a", "graphic", A);
            w.WriteStartElement("a", "graphicData", A);
            w.WriteAttributeString("uri", PIC);
            w.WriteStartElement("pic", "pic", PIC);
            w.WriteStartElement("pic", "nvPicPr", PIC);
            Element(w, "pic", "cNvPr", PIC, ("id", "0"), ("name", f.Type + ".png"));
            Element(w, "pic", "cNvPicPr", PIC);
            w.WriteEndElement();
            w.WriteStartElement("pic", "blipFill", PIC);
            w.WriteStartElement("a", "blip", A);
            w.WriteAttributeString("r", "embed", R, relId);
            w.WriteEndElement();
            w.WriteStartElement("a", "stretch", A);
            Element(w, "a", "fillRect", A);
            w.WriteEndElement();
            w.WriteEndElement();
            w.WriteStartElement("pic", "spPr", PIC);
            w.WriteStartElement("a", "xfrm", A);
            Element(w, "a", "off", A, ("x", "0"), ("y", "0"));
            Element(w, "a", "ext", A, ("cx", cxText), ("cy", cyText));
            w.WriteEndElement();
            w.WriteStartElement("a", "prstGeom", A);
            w.WriteAttributeString("prst", "rect");
            Element(w, "a", "avLst", A);
            w.WriteEndElement();
            w.WriteEndElement(); // spPr
            w.WriteEndElement(); // pic
            w.WriteEndElement(); // graphicData
            w.WriteEndElement(); // graphic
            w.WriteEndElement(); // inline
            w.WriteEndElement(); // drawing
            w.WriteEndElement(); // r
            w.WriteEndElement(); // p
        }

        /// <summary>An empty element with unqualified attributes.</summary>
        private static void Element(XmlWriter w, string prefix, string name, string ns, params (string Name, string Value)[] attributes)
        {
            w.WriteStartElement(prefix, name, ns);
            foreach (var (n, v) in attributes)
            {
                w.WriteAttributeString(n, v);
            }

            w.WriteEndElement();
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

    /// <summary>A style's paragraph ('pPr') or run ('rPr') properties: each child an empty w: element with its w: attributes.</summary>
    private sealed record Props(params (string Name, (string Name, string Value)[] Attributes)[] Children);

    private static Props P(params (string Name, (string Name, string Value)[] Attributes)[] children) => new(children);

    private static (string, (string, string)[]) E(string name, params (string, string)[] attributes) => (name, attributes);

    private static void Styles(XmlWriter w)
    {
        w.WriteStartElement("w", "styles", W);
        w.WriteStartElement("w", "docDefaults", W);
        w.WriteStartElement("w", "rPrDefault", W);
        Properties(w, "rPr", P(E("rFonts", ("ascii", "Calibri"), ("hAnsi", "Calibri"), ("eastAsia", "Calibri"), ("cs", "Calibri")), E("sz", ("val", "22")), E("szCs", ("val", "22")), E("lang", ("val", "en-GB"))));
        w.WriteEndElement();
        w.WriteStartElement("w", "pPrDefault", W);
        Properties(w, "pPr", P(E("spacing", ("after", "120"), ("line", "264"), ("lineRule", "auto"))));
        w.WriteEndElement();
        w.WriteEndElement();
        ParagraphStyle(w, "Normal", "Normal", null, isDefault: true);
        ParagraphStyle(w, "Title", "Title", P(E("b"), E("sz", ("val", "40"))), P(E("spacing", ("after", "160"))));
        ParagraphStyle(w, "Subtitle", "Subtitle", P(E("sz", ("val", "24"))));
        ParagraphStyle(w, "StudyLine", "Study line", P(E("color", ("val", "404040")), E("sz", ("val", "18"))));
        for (var level = 1; level <= 6; level++)
        {
            var size = level switch { 1 => "32", 2 => "28", 3 => "24", _ => "22" };
            ParagraphStyle(
                w,
                "Heading" + level.ToString(CultureInfo.InvariantCulture),
                "heading " + level.ToString(CultureInfo.InvariantCulture),
                P(E("b"), E("sz", ("val", size))),
                P(E("keepNext"), E("spacing", ("before", "240"), ("after", "120")), E("outlineLvl", ("val", (level - 1).ToString(CultureInfo.InvariantCulture)))));
        }

        ParagraphStyle(w, "Caption", "caption", P(E("i"), E("sz", ("val", "20"))));
        ParagraphStyle(w, "BlockLabel", "Block label", P(E("color", ("val", "505050")), E("sz", ("val", "16"))), P(E("keepNext")));
        ParagraphStyle(w, "MethodNote", "Method note", P(E("sz", ("val", "18"))));
        ParagraphStyle(w, "Reading", "Reading", null, P(E("ind", ("left", "284"))));
        ParagraphStyle(w, "Warning", "Warning", P(E("b")));
        ParagraphStyle(w, "Quote", "Quote", P(E("i")), P(E("ind", ("left", "567"))));
        ParagraphStyle(w, "ListItem", "List item", null, P(E("ind", ("left", "567"), ("hanging", "283"))));
        ParagraphStyle(w, "CodeBlock", "Code block", P(E("rFonts", ("ascii", "Consolas"), ("hAnsi", "Consolas"), ("cs", "Consolas")), E("sz", ("val", "18"))));
        ParagraphStyle(w, "TableText", "Table text", null, P(E("spacing", ("before", "20"), ("after", "20"))));
        ParagraphStyle(w, "TableHeading", "Table heading", P(E("b")), P(E("spacing", ("before", "20"), ("after", "20"))));
        ParagraphStyle(w, "TableEnd", "Table end", P(E("sz", ("val", "8"))), P(E("spacing", ("before", "0"), ("after", "0"))));
        ParagraphStyle(w, "FigureImage", "Figure image", null, P(E("jc", ("val", "center"))));

        StyleStart(w, "character", "CodeChar", "Code");
        Properties(w, "rPr", P(E("rFonts", ("ascii", "Consolas"), ("hAnsi", "Consolas"), ("cs", "Consolas"))));
        w.WriteEndElement();

        StyleStart(w, "table", "ReportTable", "Report table");
        w.WriteStartElement("w", "tblPr", W);
        Properties(w, "tblBorders", P(
            E("top", ("val", "single"), ("color", "000000"), ("sz", "8"), ("space", "0")),
            E("bottom", ("val", "single"), ("color", "000000"), ("sz", "8"), ("space", "0"))));
        Properties(w, "tblCellMar", P(
            E("top", ("w", "0"), ("type", "dxa")),
            E("left", ("w", "108"), ("type", "dxa")),
            E("bottom", ("w", "0"), ("type", "dxa")),
            E("right", ("w", "108"), ("type", "dxa"))));
        w.WriteEndElement();
        w.WriteEndElement();
        w.WriteEndElement();
    }

    private static void StyleStart(XmlWriter w, string type, string id, string name, bool isDefault = false)
    {
        w.WriteStartElement("w", "style", W);
        w.WriteAttributeString("w", "type", W, type);
        w.WriteAttributeString("w", "styleId", W, id);
        if (isDefault)
        {
            w.WriteAttributeString("w", "default", W, "true");
        }

        Empty(w, "name", ("val", name));
    }

    private static void ParagraphStyle(XmlWriter w, string id, string name, Props? run, Props? paragraph = null, bool isDefault = false)
    {
        StyleStart(w, "paragraph", id, name, isDefault);
        if (!isDefault)
        {
            Empty(w, "basedOn", ("val", "Normal"));
            Empty(w, "qFormat");
        }

        if (paragraph is not null)
        {
            Properties(w, "pPr", paragraph);
        }

        if (run is not null)
        {
            Properties(w, "rPr", run);
        }

        w.WriteEndElement();
    }

    private static void Properties(XmlWriter w, string element, Props props)
    {
        w.WriteStartElement("w", element, W);
        foreach (var (name, attributes) in props.Children)
        {
            Empty(w, name, attributes);
        }

        w.WriteEndElement();
    }
}
