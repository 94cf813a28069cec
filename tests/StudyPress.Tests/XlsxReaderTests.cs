using System.IO.Compression;
using System.Text;
using DocumentFormat.OpenXml.Packaging;
using DocumentFormat.OpenXml.Spreadsheet;
using StudyPress.Data.Sources;
using StudyPress.Tests.Support;

namespace StudyPress.Tests;

/// <summary>
/// The compiler reads .xlsx parts itself (XlsxPackage: System.IO.Compression and XmlReader); the
/// Open XML SDK, a test-only dependency here, reads the same files the way the compiler used to,
/// and both must see the same sheets, shared strings, date styles and cells (place, type, value
/// text, inline text, style), which are everything SpreadsheetSource turns into values.
/// </summary>
public sealed class XlsxReaderTests
{
    private const string Main = "http://schemas.openxmlformats.org/spreadsheetml/2006/main";

    /// <summary>A workbook with what real files hold and the fixtures do not: a prefixed namespace, an absolute part name, rich and phonetic shared strings, padded and blank text, every cell type, rows and cells without references, date styles built in and custom, a differential format, a formula.</summary>
    internal static byte[] AwkwardWorkbook()
    {
        using var memory = new MemoryStream();
        using (var zip = new ZipArchive(memory, ZipArchiveMode.Create, leaveOpen: true))
        {
            void Part(string name, string text)
            {
                using var w = new StreamWriter(zip.CreateEntry(name).Open(), new UTF8Encoding(false));
                w.Write("<?xml version=\"1.0\" encoding=\"UTF-8\" standalone=\"yes\"?>\n");
                w.Write(text);
            }

            Part("[Content_Types].xml", "<Types xmlns=\"http://schemas.openxmlformats.org/package/2006/content-types\"><Default Extension=\"rels\" ContentType=\"application/vnd.openxmlformats-package.relationships+xml\"/><Default Extension=\"xml\" ContentType=\"application/xml\"/>"
                + "<Override PartName=\"/xl/workbook.xml\" ContentType=\"application/vnd.openxmlformats-officedocument.spreadsheetml.sheet.main+xml\"/>"
                + "<Override PartName=\"/xl/worksheets/sheet1.xml\" ContentType=\"application/vnd.openxmlformats-officedocument.spreadsheetml.worksheet+xml\"/>"
                + "<Override PartName=\"/xl/worksheets/sheet2.xml\" ContentType=\"application/vnd.openxmlformats-officedocument.spreadsheetml.worksheet+xml\"/>"
                + "<Override PartName=\"/xl/sharedStrings.xml\" ContentType=\"application/vnd.openxmlformats-officedocument.spreadsheetml.sharedStrings+xml\"/>"
                + "<Override PartName=\"/xl/styles.xml\" ContentType=\"application/vnd.openxmlformats-officedocument.spreadsheetml.styles+xml\"/></Types>");
            Part("_rels/.rels", "<Relationships xmlns=\"http://schemas.openxmlformats.org/package/2006/relationships\"><Relationship Id=\"rId1\" Type=\"http://schemas.openxmlformats.org/officeDocument/2006/relationships/officeDocument\" Target=\"xl/workbook.xml\"/></Relationships>");
            Part("xl/workbook.xml", "<x:workbook xmlns:x=\"" + Main + "\" xmlns:r=\"http://schemas.openxmlformats.org/officeDocument/2006/relationships\"><x:bookViews><x:workbookView/></x:bookViews><x:sheets>"
                + "<x:sheet name=\"Other\" sheetId=\"2\" r:id=\"rId2\"/><x:sheet name=\"Data\" sheetId=\"1\" r:id=\"rId1\"/></x:sheets></x:workbook>");
            Part("xl/_rels/workbook.xml.rels", "<Relationships xmlns=\"http://schemas.openxmlformats.org/package/2006/relationships\">"
                + "<Relationship Id=\"rId1\" Type=\"http://schemas.openxmlformats.org/officeDocument/2006/relationships/worksheet\" Target=\"/xl/worksheets/sheet1.xml\"/>"
                + "<Relationship Id=\"rId2\" Type=\"http://schemas.openxmlformats.org/officeDocument/2006/relationships/worksheet\" Target=\"worksheets/sheet2.xml\"/>"
                + "<Relationship Id=\"rId3\" Type=\"http://schemas.openxmlformats.org/officeDocument/2006/relationships/sharedStrings\" Target=\"sharedStrings.xml\"/>"
                + "<Relationship Id=\"rId4\" Type=\"http://schemas.openxmlformats.org/officeDocument/2006/relationships/styles\" Target=\"./styles.xml\"/></Relationships>");
            Part("xl/styles.xml", "<styleSheet xmlns=\"" + Main + "\"><numFmts count=\"2\"><numFmt numFmtId=\"164\" formatCode=\"yyyy\\-mm\\-dd\"/><numFmt numFmtId=\"165\" formatCode=\"&quot;day&quot; 0.00\"/></numFmts>"
                + "<cellStyleXfs count=\"1\"><xf numFmtId=\"14\"/></cellStyleXfs>"
                + "<cellXfs count=\"6\"><xf numFmtId=\"0\"/><xf numFmtId=\"14\" applyNumberFormat=\"1\"/><xf numFmtId=\"164\"/><xf numFmtId=\"165\"/><xf numFmtId=\"2\"/><xf numFmtId=\"166\"/></cellXfs>"
                + "<dxfs count=\"1\"><dxf><numFmt numFmtId=\"166\" formatCode=\"d\"/></dxf></dxfs></styleSheet>");
            Part("xl/sharedStrings.xml", "<sst xmlns=\"" + Main + "\" count=\"8\" uniqueCount=\"8\"><si><t>plain</t></si>"
                + "<si><r><rPr><b/></rPr><t xml:space=\"preserve\">rich </t></r><r><t>text</t></r></si>"
                + "<si><t>\u6F22\u5B57</t><rPh sb=\"0\" eb=\"2\"><t>\u30AB\u30F3\u30B8</t></rPh><phoneticPr fontId=\"1\"/></si>"
                + "<si><t xml:space=\"preserve\">  padded  </t></si><si><t/></si><si/><si><t xml:space=\"preserve\">   </t></si><si><t>a &amp; b &lt;c&gt;</t></si></sst>");
            Part("xl/worksheets/sheet1.xml", "<x:worksheet xmlns:x=\"" + Main + "\"><x:sheetPr/><x:sheetData>"
                + "<x:row r=\"1\"><x:c r=\"A1\" t=\"s\"><x:v>0</x:v></x:c><x:c r=\"B1\" t=\"inlineStr\"><x:is><x:t>inline</x:t></x:is></x:c><x:c r=\"C1\" t=\"inlineStr\"><x:is><x:r><x:t>in</x:t></x:r><x:r><x:t xml:space=\"preserve\"> runs</x:t></x:r></x:is></x:c><x:c r=\"D1\" t=\"s\"><x:v>7</x:v></x:c></x:row>"
                + "<x:row r=\"3\"><x:c r=\"A3\" t=\"s\"><x:v>1</x:v></x:c><x:c t=\"s\"><x:v>2</x:v></x:c><x:c t=\"b\"><x:v>1</x:v></x:c><x:c t=\"b\"><x:v>0</x:v></x:c><x:c r=\"F3\" t=\"e\"><x:v>#DIV/0!</x:v></x:c>"
                + "<x:c r=\"G3\" t=\"str\"><x:f>A1&amp;\"x\"</x:f><x:v>formula text</x:v></x:c><x:c r=\"H3\" t=\"d\"><x:v>2024-02-29T00:00:00</x:v></x:c><x:c r=\"I3\" t=\"n\"><x:v>-2.5E+3</x:v></x:c></x:row>"
                + "<x:row><x:c r=\"A4\" s=\"1\"><x:v>45351</x:v></x:c><x:c s=\"2\"><x:v>45351.5</x:v></x:c><x:c s=\"3\"><x:v>0.1</x:v></x:c><x:c s=\"4\"><x:v>1E-400</x:v></x:c>"
                + "<x:c s=\"5\"><x:v>0.30000000000000004</x:v></x:c><x:c><x:v></x:v></x:c><x:c/><x:c r=\"$J$4\"><x:v> 12 </x:v></x:c><x:c t=\"inlineStr\"><x:is><x:t> </x:t></x:is></x:c><x:c t=\"inlineStr\"/></x:row>"
                + "<x:row r=\"6\" spans=\"1:3\"><x:c r=\"A6\" t=\"s\"><x:v>3</x:v></x:c><x:c r=\"B6\" t=\"s\"><x:v>4</x:v></x:c><x:c r=\"C6\" t=\"s\"><x:v>5</x:v></x:c><x:c r=\"D6\" t=\"s\"><x:v>6</x:v></x:c><x:c r=\"E6\" t=\"s\"><x:v>99</x:v></x:c></x:row>"
                + "<x:row r=\"7\"/></x:sheetData><x:mergeCells count=\"1\"><x:mergeCell ref=\"A1:B1\"/></x:mergeCells></x:worksheet>");
            Part("xl/worksheets/sheet2.xml", "<worksheet xmlns=\"" + Main + "\"><sheetData><row r=\"2\"><c r=\"B2\"><v>7</v></c></row></sheetData></worksheet>");
        }

        return memory.ToArray();
    }

    public static TheoryData<string> Workbooks() => new() { "awkward", "examples/spreadsheet-trial/data/trial.xlsx", "fixture" };

    private static byte[] Bytes(string which)
    {
        switch (which)
        {
            case "awkward":
                return AwkwardWorkbook();
            case "fixture":
                var path = Path.Combine(Path.GetTempPath(), "studypress-xlsx-" + Guid.NewGuid().ToString("N") + ".xlsx");
                try
                {
                    SourcesFixtures.WriteXlsx(path, "Plots", ["nozzle", "run", "thickness"], [["flat-fan", 1m, 41.25m], ["cone", 2, 0.1], [null, 3L, "about 41"]], firstRow: 3, firstColumn: 2);
                    return File.ReadAllBytes(path);
                }
                finally
                {
                    File.Delete(path);
                }

            default:
                return File.ReadAllBytes(Path.Combine(ArchitectureRulesTests.RepoRoot(), which));
        }
    }

    [Theory]
    [MemberData(nameof(Workbooks))]
    public void ReadsWhatTheOpenXmlSdkReads(string which)
    {
        var bytes = Bytes(which);
        using var ours = XlsxPackage.Open(bytes);
        using var sdk = SpreadsheetDocument.Open(new MemoryStream(bytes, writable: false), false);
        var book = sdk.WorkbookPart!;

        var sheets = book.Workbook.Sheets!.Elements<Sheet>().Select(s => (s.Name?.Value, s.Id?.Value)).ToList();
        Assert.Equal(sheets, ours.Sheets);

        var shared = book.SharedStringTablePart?.SharedStringTable?.Elements<SharedStringItem>().Select(i => i.InnerText).ToArray() ?? [];
        Assert.Equal(shared, ours.SharedStrings());

        Assert.Equal(SdkDateStyles(book).Order(), ours.DateStyles(SpreadsheetSource.LooksLikeDate).Order());

        foreach (var (_, id) in sheets)
        {
            Assert.Equal(SdkCells((WorksheetPart)book.GetPartById(id!)), ours.Cells(id!).ToList());
        }
    }

    [Fact]
    public void AwkwardWorkbook_ReadsTheValuesWritten()
    {
        // Exact hand reading of AwkwardWorkbook: what each kind of cell holds.
        using var ours = XlsxPackage.Open(AwkwardWorkbook());
        Assert.Equal(["plain", "rich text", "\u6F22\u5B57\u30AB\u30F3\u30B8", "  padded  ", string.Empty, string.Empty, "   ", "a & b <c>"], ours.SharedStrings());
        Assert.Equal([1u, 2u], ours.DateStyles(SpreadsheetSource.LooksLikeDate).Order());
        var cells = ours.Cells("rId1").ToList();
        Assert.Contains(new XlsxCell(3, 2, "s", "2", null, null), cells);
        Assert.Contains(new XlsxCell(4, 2, null, "45351.5", null, 2u), cells);
        Assert.Contains(new XlsxCell(4, 4, null, "1E-400", null, 4u), cells);
        Assert.Contains(new XlsxCell(4, 10, null, " 12 ", null, null), cells);
        Assert.Contains(new XlsxCell(4, 11, "inlineStr", null, " ", null), cells);
        Assert.Contains(new XlsxCell(3, 7, "str", "formula text", null, null), cells);
        Assert.Contains(new XlsxCell(1, 3, "inlineStr", null, "in runs", null), cells);
    }

    [Fact]
    public void Compiler_DoesNotReferenceTheOpenXmlSdk()
    {
        // The SDK's metadata is most of what the native build expands at every start (docs/performance.md).
        Assert.DoesNotContain(typeof(SpreadsheetSource).Assembly.GetReferencedAssemblies(), a => a.Name!.StartsWith("DocumentFormat.OpenXml", StringComparison.Ordinal));
    }

    /// <summary>The cells as the compiler read them through the SDK before: every row, each row's cells, the reference or the one after the cell before.</summary>
    private static List<XlsxCell> SdkCells(WorksheetPart part)
    {
        var result = new List<XlsxCell>();
        var nextRow = 0;
        foreach (var row in part.Worksheet.Descendants<Row>())
        {
            var rowNumber = row.RowIndex?.Value is { } ri ? (int)ri : nextRow + 1;
            nextRow = rowNumber;
            var nextCol = 0;
            foreach (var cell in row.Elements<Cell>())
            {
                var rc = cell.CellReference?.Value is { } cr ? StudyPress.Syntax.CellReference.Parse(cr) : null;
                var col = rc?.Column ?? nextCol + 1;
                nextCol = col;
                result.Add(new XlsxCell(rowNumber, col, cell.DataType?.InnerText, cell.CellValue?.Text, cell.InlineString?.InnerText, cell.StyleIndex?.Value));
            }
        }

        return result;
    }

    private static HashSet<uint> SdkDateStyles(WorkbookPart book)
    {
        var result = new HashSet<uint>();
        var styles = book.WorkbookStylesPart?.Stylesheet;
        if (styles?.CellFormats is null)
        {
            return result;
        }

        var custom = styles.NumberingFormats?.Elements<NumberingFormat>()
            .Where(f => f.NumberFormatId?.Value is not null)
            .ToDictionary(f => f.NumberFormatId!.Value, f => f.FormatCode?.Value ?? string.Empty) ?? [];
        uint i = 0;
        foreach (var f in styles.CellFormats.Elements<CellFormat>())
        {
            var id = f.NumberFormatId?.Value ?? 0;
            if (id is (>= 14 and <= 22) or (>= 45 and <= 47) || (custom.TryGetValue(id, out var code) && SpreadsheetSource.LooksLikeDate(code)))
            {
                result.Add(i);
            }

            i++;
        }

        return result;
    }
}

/// <summary>Damaged workbooks: each gives one error at the data path naming what is wrong, no exception.</summary>
[Collection("cli")]
public sealed class XlsxDamageTests
{
    private const string Study = "---\ntitle: T\ndata: book.xlsx\nresponse: y\nfactors:\n  g:\n---\n\n```anova main\n```\n";
    private const string Prefix = "study.md:3:7: error: cannot read 'book.xlsx' as a spreadsheet (.xlsx): ";

    /// <summary>The awkward workbook with one part replaced (or, for null, left out).</summary>
    private static byte[] With(string part, string? text)
    {
        var original = XlsxReaderTests.AwkwardWorkbook();
        using var memory = new MemoryStream();
        using (var input = new ZipArchive(new MemoryStream(original, writable: false), ZipArchiveMode.Read))
        using (var output = new ZipArchive(memory, ZipArchiveMode.Create, leaveOpen: true))
        {
            foreach (var e in input.Entries)
            {
                if (e.FullName == part && text is null)
                {
                    continue;
                }

                using var to = output.CreateEntry(e.FullName).Open();
                if (e.FullName == part)
                {
                    to.Write(Encoding.UTF8.GetBytes(text!));
                }
                else
                {
                    using var from = e.Open();
                    from.CopyTo(to);
                }
            }
        }

        return memory.ToArray();
    }

    private static string OneError(byte[] bytes)
    {
        using var run = new StudyRun().Study(Study).Bytes("book.xlsx", bytes);
        var result = run.Compile();
        Assert.False(result.Succeeded);
        Assert.True(result.Diagnostics.Count == 1, string.Join("\n", result.Diagnostics));
        return result.Diagnostics[0].ToString().Replace(run.Folder + "/", string.Empty, StringComparison.Ordinal);
    }

    [Fact]
    public void NotAZip() => Assert.StartsWith(Prefix, OneError(Encoding.UTF8.GetBytes("g,y\na,1\n")), StringComparison.Ordinal);

    [Fact]
    public void NoWorkbookPart() => Assert.Equal(Prefix + "the file has no workbook", OneError(With("xl/workbook.xml", null)));

    [Fact]
    public void NoContentTypes() => Assert.Equal(Prefix + "the package has no [Content_Types].xml part", OneError(With("[Content_Types].xml", null)));

    [Fact]
    public void SheetPartMissing() =>
        Assert.Equal(Prefix + "the workbook names a sheet part 'rId2' that the package does not have", OneError(With("xl/worksheets/sheet2.xml", null)));

    [Fact]
    public void RowNumberNotANumber() =>
        Assert.Equal(Prefix + "row number 'two' is not a whole number", OneError(With("xl/worksheets/sheet2.xml", "<worksheet xmlns=\"http://schemas.openxmlformats.org/spreadsheetml/2006/main\"><sheetData><row r=\"two\"><c><v>1</v></c></row></sheetData></worksheet>")));

    [Fact]
    public void DocumentTypeDeclaration_IsRefused()
    {
        // An entity expansion in a sheet: XML with a DTD is refused before anything expands.
        var error = OneError(With("xl/worksheets/sheet2.xml", "<!DOCTYPE worksheet [<!ENTITY a \"aaaaaaaaaa\">]><worksheet xmlns=\"http://schemas.openxmlformats.org/spreadsheetml/2006/main\"><sheetData><row><c t=\"inlineStr\"><is><t>&a;</t></is></c></row></sheetData></worksheet>"));
        Assert.StartsWith(Prefix, error, StringComparison.Ordinal);
        Assert.Contains("DTD", error, StringComparison.Ordinal);
    }

    [Fact]
    public void MalformedSheetXml() =>
        Assert.StartsWith(Prefix, OneError(With("xl/worksheets/sheet2.xml", "<worksheet xmlns=\"http://schemas.openxmlformats.org/spreadsheetml/2006/main\"><sheetData><row>")), StringComparison.Ordinal);
}
