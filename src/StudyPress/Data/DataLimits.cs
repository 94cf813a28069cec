namespace StudyPress.Data;

/// <summary>
/// Size limits on what a build reads, so an oversized input stops with a clear message instead of
/// running out of memory. The whole file is held in memory while it is read (bytes, then text), and
/// each numeric column keeps its values; see docs/errors.md for the memory a file of a given size needs.
/// </summary>
public static class DataLimits
{
    /// <summary>Largest data file read: 256 MiB.</summary>
    public const long MaxDataFileBytes = 256L * 1024 * 1024;

    /// <summary>Largest study file read: 16 MiB (a study is prose and block headers, not data).</summary>
    public const long MaxStudyFileBytes = Syntax.StudyFile.MaxBytes;

    /// <summary>
    /// Longest field of a CSV/TSV file, in UTF-8 bytes: 1 MiB. No level name or number comes near
    /// it; a longer field is a quoting mistake or not data, and refusing it before parsing keeps the
    /// reader from buffering it (a 200 MB field would otherwise be held several times over).
    /// </summary>
    public const long MaxFieldBytes = 1024L * 1024;

    /// <summary>
    /// Most levels (distinct values) of one factor: 10,000. Every level gets rows in the report's
    /// tables and figures, and pairwise comparisons grow with its square (10,000 levels are already
    /// about 50 million pairs); a column with more distinct values is an identifier or a measurement,
    /// not a factor.
    /// </summary>
    public const int MaxLevelsPerFactor = 10_000;

    /// <summary>
    /// Most bytes one part of a spreadsheet (a sheet's XML, the shared strings) may expand to: 64 MiB.
    /// Checked against the size the zip entry declares and again by counting the bytes while
    /// inflating (a declared size can lie). The reader holds a part as an XML tree, about twenty
    /// times its size.
    /// </summary>
    public const long MaxSpreadsheetPartBytes = 64L * 1024 * 1024;

    /// <summary>
    /// Most bytes all the parts of a spreadsheet together may expand to: 64 MiB, as for one part
    /// (measured: a 63 MiB sheet of 1.3 million cells peaks at 1.4 GB resident; the shared strings
    /// are held as a tree too, so the parts together get the one budget).
    /// </summary>
    public const long MaxSpreadsheetExpandedBytes = 64L * 1024 * 1024;

    /// <summary>Most non-empty cells read from one sheet (within the range read): 2 million.</summary>
    public const long MaxSpreadsheetCells = 2_000_000;

    /// <summary>Most rows a query's result may have when its rows are loaded: 5 million (use aggregate: true beyond).</summary>
    public const long MaxQueryRows = 5_000_000;

    /// <summary>Most cells (rows × columns) a query's result may have when its rows are loaded: 20 million.</summary>
    public const long MaxQueryCells = 20_000_000;

    /// <summary>Default time limit of a query, in seconds; a dataset may set its own with 'timeout'.</summary>
    public const int DefaultQueryTimeoutSeconds = 60;

    /// <summary>Largest 'timeout' a dataset may set, in seconds (one hour).</summary>
    public const int MaxQueryTimeoutSeconds = 3600;

    /// <summary>Deepest nesting of Markdown containers and inlines (block quotes, list items, emphasis, links) in a study: 64.</summary>
    public const int MaxMarkdownDepth = 64;
}
