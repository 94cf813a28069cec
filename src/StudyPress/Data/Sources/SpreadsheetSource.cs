using System.Globalization;
using StudyPress.Binding;
using StudyPress.Diagnostics;
using StudyPress.Syntax;

namespace StudyPress.Data.Sources;

/// <summary>
/// Reads one sheet of an .xlsx workbook (<see cref="XlsxPackage"/>: the zip and its XML parts read directly): the row of column names (the range's first
/// row, or 'header-row'), then the data rows below it. Number cells keep the text the file stores
/// (a binary double written out) and are parsed from it as decimals; text cells behave as CSV
/// cells; date-formatted number cells become dates. Messages point at FILE:ROW:COLUMN and name the
/// cell as Sheet!C14.
/// </summary>
public static class SpreadsheetSource
{
    /// <summary>Test hook (this thread): a smaller cell limit, so a test of the limit stays short.</summary>
    [ThreadStatic]
    internal static long? MaxCellsForTests;

    public static LoadedDataset? Load(DatasetSpec spec, byte[] bytes, string sha256, string displayPath, DatasetNeeds needs, DiagnosticBag diagnostics)
    {
        var fileAt = new SourceLocation(displayPath, 0, 0);
        try
        {
            if (!ExpansionWithinLimits(bytes, spec, diagnostics))
            {
                return null;
            }

            using var book = XlsxPackage.Open(bytes);
            var sheets = book.Sheets;
            if (sheets.Count == 0)
            {
                diagnostics.NotASpreadsheet(spec.PathLocation, spec.Path, "the workbook has no sheets");
                return null;
            }

            var names = sheets.Select(s => s.Name ?? string.Empty).ToList();
            var sheet = spec.Sheet is null ? sheets[0] : sheets.FirstOrDefault(s => s.Name == spec.Sheet);
            if (sheet.Name is null && spec.Sheet is not null)
            {
                diagnostics.NoSuchSheet(spec.SheetLocation ?? spec.PathLocation, spec.Sheet!, spec.Path, names, DiagnosticBag.Nearest(spec.Sheet!, names));
                return null;
            }

            var sheetName = sheet.Name ?? "Sheet1";
            var sheetId = sheet.Id ?? throw new InvalidDataException($"sheet '{sheetName}' names no part of the workbook");
            var shared = book.SharedStrings();
            var dateStyles = book.DateStyles(LooksLikeDate);
            var range = spec.Range is null ? null : CellReference.ParseRange(spec.Range);

            // Cells by (row, column), within the range.
            var cells = new SortedDictionary<int, SortedDictionary<int, object?>>();
            long cellCount = 0;
            var maxCells = MaxCellsForTests ?? DataLimits.MaxSpreadsheetCells;
            foreach (var cell in book.Cells(sheetId))
            {
                var (rowNumber, col) = (cell.Row, cell.Column);
                if (range is { } rg && (col < rg.FirstColumn || col > rg.LastColumn || rowNumber < rg.FirstRow || rowNumber > rg.LastRow))
                {
                    continue;
                }

                var value = Value(cell, shared, dateStyles);
                if (value is null)
                {
                    continue;
                }

                if (++cellCount > maxCells)
                {
                    diagnostics.SpreadsheetTooManyCells(new SourceLocation(displayPath, rowNumber - 1, col - 1), spec.Path, sheetName, maxCells);
                    return null;
                }

                if (!cells.TryGetValue(rowNumber, out var r))
                {
                    cells[rowNumber] = r = [];
                }

                r[col] = value;
            }

            var headerRowNumber = spec.HeaderRow ?? range?.FirstRow ?? (cells.Count > 0 ? cells.Keys.First() : 1);
            if (!cells.TryGetValue(headerRowNumber, out var header) || header.Count == 0)
            {
                diagnostics.EmptySheet(new SourceLocation(displayPath, headerRowNumber - 1, 0), sheetName);
                return null;
            }

            var firstCol = range?.FirstColumn ?? header.Keys.First();
            var lastCol = range?.LastColumn ?? header.Keys.Last();
            var columns = new List<string>();
            var errorsBefore = diagnostics.Items.Count;
            var firstAt = new Dictionary<string, int>(StringComparer.Ordinal);
            for (var c = firstCol; c <= lastCol; c++)
            {
                var at = new SourceLocation(displayPath, headerRowNumber - 1, c - 1);
                var name = header.TryGetValue(c, out var v) ? TableColumns.Text(v)?.Trim() ?? string.Empty : string.Empty;
                if (name.Length == 0)
                {
                    diagnostics.SheetColumnUnnamed(at, sheetName + "!" + CellReference.Name(c, headerRowNumber));
                }
                else if (firstAt.TryGetValue(name, out var first))
                {
                    diagnostics.SheetDuplicateColumn(at, name, sheetName + "!" + CellReference.Name(c, headerRowNumber), sheetName + "!" + CellReference.Name(first, headerRowNumber));
                }
                else
                {
                    firstAt[name] = c;
                }

                columns.Add(name);
            }

            if (diagnostics.Items.Count > errorsBefore)
            {
                return null;
            }

            var rows = new List<object?[]>();
            var lines = new List<int>();
            foreach (var (rowNumber, r) in cells)
            {
                if (rowNumber <= headerRowNumber)
                {
                    continue;
                }

                var values = new object?[columns.Count];
                var any = false;
                for (var c = firstCol; c <= lastCol; c++)
                {
                    if (r.TryGetValue(c, out var v))
                    {
                        values[c - firstCol] = v;
                        any |= v is not string s || s.Trim().Length > 0;
                    }
                }

                if (any)
                {
                    rows.Add(values);
                    lines.Add(rowNumber);
                }
            }

            if (rows.Count == 0)
            {
                diagnostics.NoSheetRows(new SourceLocation(displayPath, headerRowNumber - 1, firstCol - 1), sheetName);
                return null;
            }

            var table = new SourceTable
            {
                Names = columns,
                Rows = rows,
                Lines = [.. lines],
                At = (r, c) => new SourceLocation(displayPath, lines[r] - 1, firstCol + c - 1),
                Where = (r, c) => "cell " + sheetName + "!" + CellReference.Name(firstCol + c, lines[r]),
                SourceWords = "The spreadsheet",
            };
            var where = $"{spec.Path}, sheet {sheetName}";
            return TableColumns.Build(
                spec,
                table,
                sha256,
                needs,
                diagnostics,
                (at, col, near) => diagnostics.UnknownColumn(at, col, where, near),
                fileAt);
        }
        catch (Exception e) when (e is System.Xml.XmlException or InvalidDataException or IOException or InvalidOperationException or ArgumentException or KeyNotFoundException)
        {
            diagnostics.NotASpreadsheet(spec.PathLocation, spec.Path, e.Message.Split('\n')[0].TrimEnd('.'));
            return null;
        }
    }

    /// <summary>
    /// Checks what the workbook expands to before the reader inflates it: each zip entry's declared
    /// size, then the bytes actually inflated (counted, not trusted), per part and in all.
    /// </summary>
    private static bool ExpansionWithinLimits(byte[] bytes, DatasetSpec spec, DiagnosticBag diagnostics)
    {
        using var zip = new System.IO.Compression.ZipArchive(new MemoryStream(bytes, writable: false), System.IO.Compression.ZipArchiveMode.Read);
        long total = 0;
        var buffer = new byte[81920];
        foreach (var entry in zip.Entries)
        {
            if (entry.Length > DataLimits.MaxSpreadsheetPartBytes)
            {
                diagnostics.SpreadsheetExpandsTooMuch(spec.PathLocation, spec.Path, entry.FullName, DataLimits.MaxSpreadsheetPartBytes);
                return false;
            }

            long part = 0;
            using var inflating = entry.Open();
            int n;
            while ((n = inflating.Read(buffer, 0, buffer.Length)) > 0)
            {
                part += n;
                total += n;
                if (part > DataLimits.MaxSpreadsheetPartBytes)
                {
                    diagnostics.SpreadsheetExpandsTooMuch(spec.PathLocation, spec.Path, entry.FullName, DataLimits.MaxSpreadsheetPartBytes);
                    return false;
                }

                if (total > DataLimits.MaxSpreadsheetExpandedBytes)
                {
                    // The parts together: named by the part being inflated when the limit was passed.
                    diagnostics.SpreadsheetExpandsTooMuch(spec.PathLocation, spec.Path, entry.FullName, DataLimits.MaxSpreadsheetExpandedBytes);
                    return false;
                }
            }
        }

        return true;
    }

    private static object? Value(XlsxCell cell, string[] shared, HashSet<uint> dateStyles)
    {
        var raw = cell.Value;
        switch (cell.Type)
        {
            case "s":
                return raw is not null && int.TryParse(raw, NumberStyles.None, CultureInfo.InvariantCulture, out var k) && k >= 0 && k < shared.Length ? shared[k] : null;
            case "inlineStr":
                return cell.InlineText;
            case "str":
                return raw;
            case "b":
                return raw is null ? null : raw == "1";
            case "e":
                return raw is null ? null : new SheetError(raw);
            case "d":
                return raw is not null && DateTime.TryParse(raw, CultureInfo.InvariantCulture, DateTimeStyles.RoundtripKind, out var when) ? when : raw;
        }

        if (raw is null || raw.Length == 0)
        {
            return null;
        }

        if (cell.Style is { } style && dateStyles.Contains(style) &&
            double.TryParse(raw, NumberStyles.Float, CultureInfo.InvariantCulture, out var serial) && serial is >= -657434 and <= 2958465)
        {
            return DateTime.FromOADate(serial);
        }

        return new SheetNumber(raw);
    }

    /// <summary>Whether a custom number format shows a date or time: a y, d, h or s outside quotes and brackets.</summary>
    internal static bool LooksLikeDate(string code)
    {
        var inQuote = false;
        var inBracket = false;
        foreach (var ch in code)
        {
            switch (ch)
            {
                case '"':
                    inQuote = !inQuote;
                    break;
                case '[' when !inQuote:
                    inBracket = true;
                    break;
                case ']' when !inQuote:
                    inBracket = false;
                    break;
                default:
                    if (!inQuote && !inBracket && char.ToLowerInvariant(ch) is 'y' or 'd' or 'h' or 's')
                    {
                        return true;
                    }

                    break;
            }
        }

        return false;
    }
}
