namespace StudyPress.Syntax;

/// <summary>Spreadsheet cell references: "C14" is column 3, row 14 (both 1-based).</summary>
public static class CellReference
{
    public static (int Column, int Row)? Parse(string text)
    {
        var t = text.Trim().Replace("$", string.Empty, StringComparison.Ordinal);
        var i = 0;
        var col = 0;
        while (i < t.Length && char.IsAsciiLetter(t[i]))
        {
            col = (col * 26) + (char.ToUpperInvariant(t[i]) - 'A' + 1);
            i++;
            if (col > 16384)
            {
                return null;
            }
        }

        if (i == 0 || i == t.Length || !int.TryParse(t.AsSpan(i), System.Globalization.NumberStyles.None, System.Globalization.CultureInfo.InvariantCulture, out var row) || row < 1 || row > 1048576)
        {
            return null;
        }

        return (col, row);
    }

    /// <summary>"A1:F40" as its two corners (first column/row, last column/row), in any corner order.</summary>
    public static (int FirstColumn, int FirstRow, int LastColumn, int LastRow)? ParseRange(string text)
    {
        var parts = text.Split(':');
        if (parts.Length != 2 || Parse(parts[0]) is not { } a || Parse(parts[1]) is not { } b)
        {
            return null;
        }

        return (Math.Min(a.Column, b.Column), Math.Min(a.Row, b.Row), Math.Max(a.Column, b.Column), Math.Max(a.Row, b.Row));
    }

    public static string ColumnName(int column)
    {
        var s = string.Empty;
        while (column > 0)
        {
            var r = (column - 1) % 26;
            s = (char)('A' + r) + s;
            column = (column - 1) / 26;
        }

        return s;
    }

    public static string Name(int column, int row) => ColumnName(column) + row.ToString(System.Globalization.CultureInfo.InvariantCulture);
}
