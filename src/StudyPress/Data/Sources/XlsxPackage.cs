using System.Globalization;
using System.IO.Compression;
using System.Xml;

namespace StudyPress.Data.Sources;

/// <summary>One cell of a worksheet as the file stores it: its place, its type letter ('t'), its value text ('v'), the text of an inline string ('is') and its style index ('s').</summary>
internal readonly record struct XlsxCell(int Row, int Column, string? Type, string? Value, string? InlineText, uint? Style);

/// <summary>
/// The parts of an .xlsx package that reading one sheet needs, read with System.IO.Compression and
/// XmlReader (streaming, no DTDs, no resolver): the package relationships, the workbook's sheet list
/// and its relationships, the shared strings, the cell formats that show dates, and one sheet's
/// cells in document order. Part names resolve as the packaging rules say: relative to the part
/// that names them, case-insensitively.
/// </summary>
internal sealed class XlsxPackage : IDisposable
{
    public const string Main = "http://schemas.openxmlformats.org/spreadsheetml/2006/main";
    private const string PackageRelationships = "http://schemas.openxmlformats.org/package/2006/relationships";
    private const string OfficeRelationships = "http://schemas.openxmlformats.org/officeDocument/2006/relationships";

    private static readonly XmlReaderSettings Settings = new()
    {
        DtdProcessing = DtdProcessing.Prohibit,
        XmlResolver = null,
        IgnoreComments = true,
        IgnoreProcessingInstructions = true,
        CloseInput = true,
    };

    private readonly ZipArchive zip;
    private readonly Dictionary<string, ZipArchiveEntry> entries = new(StringComparer.OrdinalIgnoreCase);
    private readonly string workbookPart;
    private readonly Dictionary<string, (string Type, string Target)> workbookRelationships;

    private XlsxPackage(byte[] bytes)
    {
        zip = new ZipArchive(new MemoryStream(bytes, writable: false), ZipArchiveMode.Read);
        foreach (var e in zip.Entries)
        {
            entries.TryAdd(e.FullName, e);
        }

        if (!entries.ContainsKey("[Content_Types].xml"))
        {
            throw new InvalidDataException("the package has no [Content_Types].xml part");
        }

        var root = Relationships(string.Empty, "_rels/.rels");
        workbookPart = root.Values.FirstOrDefault(r => r.Type.EndsWith("/officeDocument", StringComparison.Ordinal)).Target
            ?? throw new InvalidDataException("the file has no workbook");
        if (!entries.ContainsKey(workbookPart))
        {
            throw new InvalidDataException("the file has no workbook");
        }

        workbookRelationships = Relationships(Folder(workbookPart), Folder(workbookPart) + "_rels/" + workbookPart[(workbookPart.LastIndexOf('/') + 1)..] + ".rels");
        Sheets = ReadSheets();
    }

    /// <summary>The workbook's sheets in order: name and relationship id.</summary>
    public IReadOnlyList<(string? Name, string? Id)> Sheets { get; }

    public static XlsxPackage Open(byte[] bytes) => new(bytes);

    public void Dispose() => zip.Dispose();

    /// <summary>The shared strings, each item's text (its runs' and phonetic runs' text joined).</summary>
    public string[] SharedStrings()
    {
        var part = PartOfType("/sharedStrings");
        if (part is null)
        {
            return [];
        }

        var result = new List<string>();
        using var reader = Reader(part);
        while (reader.Read())
        {
            if (reader.NodeType == XmlNodeType.Element && reader.LocalName == "si" && reader.Depth == 1 && reader.NamespaceURI == Main)
            {
                result.Add(reader.IsEmptyElement ? string.Empty : TextOf(reader));
            }
        }

        return [.. result];
    }

    /// <summary>Cell style indices (cellXfs) whose number format shows a date or time.</summary>
    public HashSet<uint> DateStyles(Func<string, bool> looksLikeDate)
    {
        var result = new HashSet<uint>();
        var part = PartOfType("/styles");
        if (part is null)
        {
            return result;
        }

        var custom = new Dictionary<uint, string>();
        var formats = new List<uint>();
        using (var reader = Reader(part))
        {
            var inCellFormats = false;
            var depth = -1;
            while (reader.Read())
            {
                if (reader.NodeType == XmlNodeType.EndElement && inCellFormats && reader.Depth == depth)
                {
                    inCellFormats = false;
                }

                if (reader.NodeType != XmlNodeType.Element || reader.NamespaceURI != Main)
                {
                    continue;
                }

                if (reader.LocalName == "numFmt" && reader.Depth == 2 && UInt(reader.GetAttribute("numFmtId")) is { } id)
                {
                    custom.TryAdd(id, reader.GetAttribute("formatCode") ?? string.Empty);
                }
                else if (reader.LocalName == "cellXfs" && reader.Depth == 1)
                {
                    inCellFormats = !reader.IsEmptyElement;
                    depth = reader.Depth;
                }
                else if (inCellFormats && reader.LocalName == "xf" && reader.Depth == depth + 1)
                {
                    formats.Add(UInt(reader.GetAttribute("numFmtId")) ?? 0);
                }
            }
        }

        for (var i = 0; i < formats.Count; i++)
        {
            var id = formats[i];
            if (id is (>= 14 and <= 22) or (>= 45 and <= 47) || (custom.TryGetValue(id, out var code) && looksLikeDate(code)))
            {
                result.Add((uint)i);
            }
        }

        return result;
    }

    /// <summary>The cells of the sheet with relationship id <paramref name="id"/>, in document order; a row or cell without its reference follows the one before.</summary>
    public IEnumerable<XlsxCell> Cells(string id)
    {
        if (!workbookRelationships.TryGetValue(id, out var rel) || !entries.ContainsKey(rel.Target))
        {
            throw new InvalidDataException($"the workbook names a sheet part '{id}' that the package does not have");
        }

        using var reader = Reader(rel.Target);
        var nextRow = 0;
        var rowDepth = -1;
        var nextColumn = 0;
        while (reader.Read())
        {
            if (reader.NodeType != XmlNodeType.Element || reader.NamespaceURI != Main)
            {
                continue;
            }

            if (reader.LocalName == "row")
            {
                var r = reader.GetAttribute("r");
                var rowNumber = r is null ? nextRow + 1 : (int)(UInt(r) ?? throw new InvalidDataException($"row number '{r}' is not a whole number"));
                nextRow = rowNumber;
                nextColumn = 0;
                rowDepth = reader.IsEmptyElement ? -1 : reader.Depth;
                continue;
            }

            if (reader.LocalName != "c" || rowDepth < 0 || reader.Depth != rowDepth + 1)
            {
                continue;
            }

            var reference = reader.GetAttribute("r") is { } cr ? Syntax.CellReference.Parse(cr) : null;
            var column = reference?.Column ?? nextColumn + 1;
            nextColumn = column;
            var type = reader.GetAttribute("t");
            var s = reader.GetAttribute("s");
            uint? style = s is null ? null : UInt(s) ?? throw new InvalidDataException($"style index '{s}' is not a whole number");
            string? value = null;
            string? inline = null;
            if (!reader.IsEmptyElement)
            {
                var cellDepth = reader.Depth;
                while (reader.Read() && !(reader.NodeType == XmlNodeType.EndElement && reader.Depth == cellDepth))
                {
                    if (reader.NodeType != XmlNodeType.Element || reader.Depth != cellDepth + 1 || reader.NamespaceURI != Main)
                    {
                        continue;
                    }

                    if (reader.LocalName == "v" && value is null)
                    {
                        value = reader.IsEmptyElement ? string.Empty : ContentOf(reader);
                    }
                    else if (reader.LocalName == "is" && inline is null)
                    {
                        inline = reader.IsEmptyElement ? string.Empty : TextOf(reader);
                    }
                }
            }

            yield return new XlsxCell(nextRow, column, type, value, inline, style);
        }
    }

    /// <summary>The text of the element the reader is on: every 't' element's content inside it, joined; leaves the reader on its end tag.</summary>
    private static string TextOf(XmlReader reader)
    {
        var depth = reader.Depth;
        var text = new System.Text.StringBuilder();
        while (reader.Read() && !(reader.NodeType == XmlNodeType.EndElement && reader.Depth == depth))
        {
            if (reader.NodeType == XmlNodeType.Element && reader.LocalName == "t" && reader.NamespaceURI == Main && !reader.IsEmptyElement)
            {
                text.Append(ContentOf(reader));
            }
        }

        return text.ToString();
    }

    /// <summary>The character content of a non-empty text-only element (whitespace kept); leaves the reader on its end tag.</summary>
    private static string ContentOf(XmlReader reader)
    {
        var depth = reader.Depth;
        var text = new System.Text.StringBuilder();
        while (reader.Read() && !(reader.NodeType == XmlNodeType.EndElement && reader.Depth == depth))
        {
            if (reader.NodeType is XmlNodeType.Text or XmlNodeType.CDATA or XmlNodeType.Whitespace or XmlNodeType.SignificantWhitespace)
            {
                text.Append(reader.Value);
            }
        }

        return text.ToString();
    }

    private static uint? UInt(string? text) =>
        text is not null && uint.TryParse(text.Trim(), NumberStyles.None, CultureInfo.InvariantCulture, out var v) ? v : null;

    private List<(string? Name, string? Id)> ReadSheets()
    {
        var result = new List<(string?, string?)>();
        using var reader = Reader(workbookPart);
        while (reader.Read())
        {
            if (reader.NodeType == XmlNodeType.Element && reader.LocalName == "sheet" && reader.Depth == 2 && reader.NamespaceURI == Main)
            {
                result.Add((reader.GetAttribute("name"), reader.GetAttribute("id", OfficeRelationships)));
            }
        }

        return result;
    }

    private string? PartOfType(string typeEnding)
    {
        foreach (var (_, (type, target)) in workbookRelationships.OrderBy(r => r.Key, StringComparer.Ordinal))
        {
            if (type.EndsWith(typeEnding, StringComparison.Ordinal) && entries.ContainsKey(target))
            {
                return target;
            }
        }

        return null;
    }

    /// <summary>A relationships part: id to (type, the target's part name); absent part, no relationships.</summary>
    private Dictionary<string, (string Type, string Target)> Relationships(string sourceFolder, string relsPart)
    {
        var result = new Dictionary<string, (string, string)>(StringComparer.Ordinal);
        if (!entries.ContainsKey(relsPart))
        {
            return result;
        }

        using var reader = Reader(relsPart);
        while (reader.Read())
        {
            if (reader.NodeType == XmlNodeType.Element && reader.LocalName == "Relationship" && reader.NamespaceURI == PackageRelationships &&
                !string.Equals(reader.GetAttribute("TargetMode"), "External", StringComparison.Ordinal) &&
                reader.GetAttribute("Id") is { } id && reader.GetAttribute("Type") is { } type && reader.GetAttribute("Target") is { } target)
            {
                result.TryAdd(id, (type, Resolve(sourceFolder, target)));
            }
        }

        return result;
    }

    /// <summary>A relationship's target as a zip entry name: absolute ("/xl/...") or relative to the source's folder, "." and ".." applied.</summary>
    private static string Resolve(string sourceFolder, string target)
    {
        var t = Uri.UnescapeDataString(target.Replace('\\', '/'));
        var path = t.StartsWith('/') ? t[1..] : sourceFolder + t;
        var parts = new List<string>();
        foreach (var segment in path.Split('/'))
        {
            if (segment is "" or ".")
            {
                continue;
            }

            if (segment == "..")
            {
                if (parts.Count > 0)
                {
                    parts.RemoveAt(parts.Count - 1);
                }

                continue;
            }

            parts.Add(segment);
        }

        return string.Join('/', parts);
    }

    private static string Folder(string part) => part.LastIndexOf('/') is var i and >= 0 ? part[..(i + 1)] : string.Empty;

    private XmlReader Reader(string part) => XmlReader.Create(entries[part].Open(), Settings);
}
