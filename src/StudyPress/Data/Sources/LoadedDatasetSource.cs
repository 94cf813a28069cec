namespace StudyPress.Data;

/// <summary>What a dataset read from a spreadsheet, database or Parquet file adds to its identity.</summary>
public sealed partial record LoadedDataset
{
    /// <summary>The query whose result is the table, as written in the study; null for files read whole.</summary>
    public string? Query { get; init; }

    /// <summary>SHA-256 of the query's result in the canonical form (see <see cref="Sources.ResultHash"/>).</summary>
    public string? ResultSha256 { get; init; }

    /// <summary>A note for the report's data section (e.g. that the source held binary doubles); null for none.</summary>
    public string? SourceNote { get; init; }

    /// <summary>Per-cell summaries when the database aggregated the table (<c>aggregate: true</c>); null otherwise.</summary>
    public Sources.AggregateTable? Aggregate { get; init; }
}
