using StudyPress.Diagnostics;

namespace StudyPress.Data.Sources;

/// <summary>A number cell of a spreadsheet: the text stored in the file (a binary double written out).</summary>
public readonly record struct SheetNumber(string Text);

/// <summary>A spreadsheet error cell such as <c>#DIV/0!</c>.</summary>
public readonly record struct SheetError(string Text);

/// <summary>
/// A table read from a spreadsheet, a query or a Parquet file, before the study's columns are
/// taken from it: column names, rows of cell values as the source gave them (null = missing),
/// and how to point at a cell in messages.
/// </summary>
public sealed class SourceTable
{
    public required IReadOnlyList<string> Names { get; init; }

    public required IReadOnlyList<object?[]> Rows { get; init; }

    /// <summary>The 1-based line (sheet row, or result row) of each row, for <see cref="LoadedDataset.Lines"/>.</summary>
    public required int[] Lines { get; init; }

    /// <summary>Where a message about a cell (row index, column index) points.</summary>
    public required Func<int, int, SourceLocation> At { get; init; }

    /// <summary>The cell named in words, e.g. "Plots!C14" or "row 5 of the query result".</summary>
    public required Func<int, int, string> Where { get; init; }

    /// <summary>Words for the kind of source, for the note on binary doubles ("the spreadsheet", "the database").</summary>
    public required string SourceWords { get; init; }
}
