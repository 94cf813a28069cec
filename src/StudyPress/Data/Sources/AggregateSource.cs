using StudyPress.Binding;
using StudyPress.Diagnostics;

namespace StudyPress.Data.Sources;

/// <summary>Per-cell summaries computed by the database: count, mean and centred sum of squares per factor level.</summary>
public sealed record AggregateCell(string Level, long N, double Mean, double SumSquares);

/// <summary>The aggregated table of one dataset: the response, the factor and one row per level.</summary>
public sealed record AggregateTable(string Response, string Factor, IReadOnlyList<AggregateCell> Cells, long Rows);

public static class AggregateSource
{
    public static LoadedDataset? Load(DatasetSpec spec, string fullPath, string sha256, DatasetNeeds needs, DiagnosticBag diagnostics)
    {
        diagnostics.AggregateNeedsOneWay(spec.AggregateLocation ?? spec.PathLocation, spec.Name, "'aggregate: true' is reserved for per-cell summaries computed by the database, which this version does not compute yet; remove it to load the rows");
        _ = (fullPath, sha256, needs);
        return null;
    }
}
