using System.Globalization;
using DocumentFormat.OpenXml;
using DocumentFormat.OpenXml.Packaging;
using DocumentFormat.OpenXml.Spreadsheet;
using DuckDB.NET.Data;
using Microsoft.Data.Sqlite;

namespace StudyPress.Tests;

/// <summary>Writes real spreadsheet, SQLite, DuckDB and Parquet files for the source tests.</summary>
internal static class SourcesFixtures
{
    /// <summary>An .xlsx with one sheet; a cell value that is a number (decimal, int, double) becomes a number cell, a string an inline string, null no cell.</summary>
    public static void WriteXlsx(string path, string sheetName, IReadOnlyList<string> header, IEnumerable<object?[]> rows, int firstRow = 1, int firstColumn = 1)
    {
        using var doc = SpreadsheetDocument.Create(path, SpreadsheetDocumentType.Workbook);
        var book = doc.AddWorkbookPart();
        book.Workbook = new Workbook();
        var sheetPart = book.AddNewPart<WorksheetPart>();
        var data = new SheetData();
        sheetPart.Worksheet = new Worksheet(data);
        var r = (uint)firstRow;
        data.Append(MakeRow(r++, firstColumn, header.Cast<object?>().ToArray()));
        foreach (var row in rows)
        {
            data.Append(MakeRow(r++, firstColumn, row));
        }

        var sheets = book.Workbook.AppendChild(new Sheets());
        sheets.Append(new Sheet { Id = book.GetIdOfPart(sheetPart), SheetId = 1, Name = sheetName });
        book.Workbook.Save();
    }

    private static Row MakeRow(uint index, int firstColumn, object?[] values)
    {
        var row = new Row { RowIndex = index };
        for (var i = 0; i < values.Length; i++)
        {
            var reference = StudyPress.Syntax.CellReference.Name(firstColumn + i, (int)index);
            switch (values[i])
            {
                case null:
                    break;
                case string s:
                    row.Append(new Cell { CellReference = reference, DataType = CellValues.InlineString, InlineString = new InlineString(new Text(s)) });
                    break;
                case double d:
                    row.Append(new Cell { CellReference = reference, CellValue = new CellValue(d.ToString("R", CultureInfo.InvariantCulture)) });
                    break;
                case IFormattable f:
                    row.Append(new Cell { CellReference = reference, CellValue = new CellValue(f.ToString(null, CultureInfo.InvariantCulture)) });
                    break;
            }
        }

        return row;
    }

    public static void Sqlite(string path, string create, string insert, IEnumerable<object?[]> rows)
    {
        using (var c = new SqliteConnection(new SqliteConnectionStringBuilder { DataSource = path, Pooling = false }.ToString()))
        {
            c.Open();
            using var tx = c.BeginTransaction();
            using (var cmd = c.CreateCommand())
            {
                cmd.CommandText = create;
                cmd.ExecuteNonQuery();
            }

            foreach (var row in rows)
            {
                using var cmd = c.CreateCommand();
                cmd.CommandText = insert;
                for (var i = 0; i < row.Length; i++)
                {
                    cmd.Parameters.AddWithValue("$p" + i.ToString(CultureInfo.InvariantCulture), row[i] ?? DBNull.Value);
                }

                cmd.ExecuteNonQuery();
            }

            tx.Commit();
        }
    }

    /// <summary>Runs SQL statements against a DuckDB file (created if absent).</summary>
    public static void DuckDb(string path, params string[] statements)
    {
        using var c = new DuckDBConnection("Data Source=" + path);
        c.Open();
        foreach (var sql in statements)
        {
            using var cmd = c.CreateCommand();
            cmd.CommandText = sql;
            cmd.ExecuteNonQuery();
        }
    }

    public static string Literal(string path) => "'" + path.Replace("'", "''", StringComparison.Ordinal) + "'";
}
