using StudyPress.Binding;
using StudyPress.Binding.Kinds;
using StudyPress.Data;
using StudyPress.Diagnostics;

namespace StudyPress.Model;

/// <summary>
/// The model stage's product, made after the data are loaded and before evaluation, so that
/// evaluation computes from values and does no I/O: the model each anova block states, the cell
/// tables of anova blocks on datasets the database aggregated (<c>aggregate: true</c>), and the
/// groups (with the database's order statistics) of summary blocks on such datasets.
/// </summary>
public sealed class StudyModels
{
    /// <summary>Per anova block id, its model.</summary>
    public Dictionary<string, ModelDescription> Descriptions { get; } = new(StringComparer.Ordinal);

    /// <summary>Per anova block id on an aggregated dataset, its cells (null: no cell has an observation).</summary>
    public Dictionary<string, CellTable?> AggregatedCells { get; } = new(StringComparer.Ordinal);

    /// <summary>Per summary block id on an aggregated dataset, its groups.</summary>
    public Dictionary<string, SummaryCells> Summaries { get; } = new(StringComparer.Ordinal);

    /// <summary>Whether the block reads a dataset the database aggregated.</summary>
    public static bool ReadsAggregate(BoundBlock block, IReadOnlyDictionary<string, LoadedDataset> datasets) =>
        block.Data is not null && datasets.TryGetValue(block.Data, out var d) && d.Aggregate is not null;

    /// <summary>Binds every anova block's model and prepares what the aggregated datasets give each block.</summary>
    public static StudyModels Prepare(IReadOnlyList<BoundBlock> blocks, IReadOnlyDictionary<string, LoadedDataset> datasets, DiagnosticBag diagnostics)
    {
        var models = new StudyModels();
        foreach (var block in blocks)
        {
            if (block.Kind is AnovaKind && ModelDescription.Of(block) is { } description)
            {
                models.Descriptions[block.Id] = description;
                if (ReadsAggregate(block, datasets))
                {
                    models.AggregatedCells[block.Id] = CellTable.FromAggregate(datasets[block.Data!], block);
                }
            }
            else if (block.Kind is SummaryKind && ReadsAggregate(block, datasets))
            {
                models.Summaries[block.Id] = SummaryCells.Build(datasets[block.Data!], block, diagnostics);
            }
        }

        return models;
    }
}
