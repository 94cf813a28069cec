namespace StudyPress.Data;

/// <summary>
/// A numeric column, centred: <c>Centred[i] = value[i] - Centre</c> computed in exact decimal
/// arithmetic before the conversion to double, so that values such as 1000000000000.4 keep every
/// digit that matters for variances. Missing cells are NaN here and nowhere else.
/// </summary>
/// <see cref="Values"/> holds each value itself (the double nearest to its decimal text), for
/// order statistics and transformations.
/// <see cref="Exact"/> keeps the decimal values when every cell was exact decimal text, so
/// that means can be computed exactly.
public sealed record NumericColumn(string Name, double[] Centred, double[] Values, double Centre, int Missing, decimal[]? Exact)
{
    public bool IsMissing(int row) => double.IsNaN(Centred[row]);
}

/// <summary>A categorical column as level codes (-1 = missing) into <see cref="Levels"/>.</summary>
public sealed record CategoricalColumn(string Name, int[] Codes, IReadOnlyList<string> Levels, int[] Counts);

/// <summary>One loaded input with its identity (path as written, SHA-256) and the columns the study needs.</summary>
public sealed partial class LoadedDataset
{
    public required Binding.DatasetSpec Spec { get; init; }

    /// <summary>Path relative to the study file, with '/' separators.</summary>
    public required string Path { get; init; }

    public required string Sha256 { get; init; }

    public required int Rows { get; init; }

    /// <summary>The 1-based line of the data file where each row starts (for messages and tables).</summary>
    public required int[] Lines { get; init; }

    /// <summary>Run or measurement order per row (the header's <c>order</c> column), when the file has it.</summary>
    public NumericColumn? Order { get; init; }

    public required IReadOnlyList<string> ColumnNames { get; init; }

    public required IReadOnlyDictionary<string, NumericColumn> Numeric { get; init; }

    /// <summary>Categorical columns by factor name.</summary>
    public required IReadOnlyDictionary<string, CategoricalColumn> Factors { get; init; }

    /// <summary>Rows used by at least one block; filled in by evaluation.</summary>
    public required bool[] Used { get; init; }

    public int RowsUsed => Used.Count(u => u);
}
