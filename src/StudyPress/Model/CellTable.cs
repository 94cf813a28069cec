using System.Globalization;
using StudyPress.Binding;
using StudyPress.Data;
using StudyPress.Data.Sources;
using StudyPress.Statistics;
using StudyPress.Statistics.Anova;

namespace StudyPress.Model;

/// <summary>
/// The sufficient statistics of a block's data per cell of its factors' crossing: the levels
/// present per factor (in level order), and per non-empty cell its level codes, count, mean minus
/// <see cref="Centre"/>, and sum of squared deviations from the cell mean; plus the rows left out
/// for a missing value. Built from the rows a block selects (<see cref="FromGroups"/>) or from the
/// cells the database aggregated (<see cref="FromAggregate"/>): the ANOVA table, level means,
/// Welch's and Bartlett's tests and the post-hoc comparisons on summaries need nothing more.
/// </summary>
public sealed class CellTable
{
    private CellTable(IReadOnlyList<FactorSpec> factors, IReadOnlyList<IReadOnlyList<string>> levels, IReadOnlyList<CellStatistics> cells, double centre, long dropped, ExactCellSums? exact = null)
    {
        Factors = factors;
        Levels = levels;
        Cells = cells;
        Centre = centre;
        Dropped = dropped;
        Exact = exact;
    }

    public IReadOnlyList<FactorSpec> Factors { get; }

    /// <summary>Per factor, the levels with data; the cells' codes index these.</summary>
    public IReadOnlyList<IReadOnlyList<string>> Levels { get; }

    /// <summary>One entry per non-empty cell, ordered by codes (first factor most significant).</summary>
    public IReadOnlyList<CellStatistics> Cells { get; }

    /// <summary>The centre subtracted from every mean.</summary>
    public double Centre { get; }

    /// <summary>Rows of the selection left out for a missing response or factor.</summary>
    public long Dropped { get; }

    /// <summary>
    /// The cells' exact decimal sums (same order as <see cref="Cells"/>), when the rows' response was
    /// exact decimal text and the model has one factor; null otherwise.
    /// </summary>
    public ExactCellSums? Exact { get; }

    /// <summary>The fit's input: these cells under the model's interactions and SS type.</summary>
    public CellAnovaInput ModelInput(ModelDescription model, double alpha)
    {
        ArgumentNullException.ThrowIfNull(model);
        return new CellAnovaInput(
            [.. Factors.Select((f, k) => new CellFactor(f.Name, Levels[k]))],
            Cells,
            model.Interaction,
            model.SsType,
            alpha)
        {
            Exact = Exact,
        };
    }

    /// <summary>Total count over the cells.</summary>
    public long Count => Cells.Sum(c => c.Count);

    /// <summary>A cell's label: its levels joined by " / " (as the rows' cells are labelled).</summary>
    public string Label(CellStatistics cell) => string.Join(" / ", cell.Levels.Select((c, k) => Levels[k][c]));

    /// <summary>
    /// From the rows: each group's codes and centred values (already restricted to the levels
    /// present, in code order), summarised by <see cref="CellStatistics.Of"/> (corrected two-pass
    /// mean and sum of squares), and optionally the groups' exact decimal sums.
    /// </summary>
    public static CellTable FromGroups(IReadOnlyList<FactorSpec> factors, IReadOnlyList<IReadOnlyList<string>> levels, IEnumerable<(int[] Codes, double[] CentredValues)> groups, double centre, long dropped, ExactCellSums? exact = null)
    {
        var cells = new List<CellStatistics>();
        foreach (var (codes, values) in groups)
        {
            cells.Add(CellStatistics.Of(codes, values));
        }

        return new CellTable(factors, levels, cells, centre, dropped, exact);
    }

    /// <summary>
    /// From the database's cells (<c>aggregate: true</c>): the cells that pass the block's
    /// <c>where</c> and have its factors and response, pooled over the factors the block does not
    /// use (counts add; means and sums of squares by the parallel-axis formula). Marks the cells
    /// used in the dataset. Null when no cell has an observation.
    /// </summary>
    public static CellTable? FromAggregate(LoadedDataset ds, BoundBlock block)
    {
        var table = ds.Aggregate!;
        int Pos(string factor) => table.Factors.Select((f, i) => (f, i)).First(p => p.f.Name == factor).i;
        var factorPos = block.Factors.Select(f => Pos(f.Name)).ToArray();
        var where = block.Where.Select(w => (Pos: Pos(w.Factor.Name), w.Levels)).ToArray();
        var pooled = new SortedDictionary<string, (int[] Codes, AggregateStat Stat)>(StringComparer.Ordinal);
        long dropped = 0;
        for (var i = 0; i < table.Cells.Count; i++)
        {
            var cell = table.Cells[i];
            if (where.Any(w => cell.Codes[w.Pos] < 0 || !w.Levels.Contains(table.Levels[w.Pos][cell.Codes[w.Pos]])))
            {
                continue;
            }

            var stat = cell.Stats[block.Response!];
            if (factorPos.Any(p => cell.Codes[p] < 0))
            {
                dropped += cell.Rows;
                continue;
            }

            dropped += cell.Rows - stat.N;
            if (stat.N == 0)
            {
                continue;
            }

            ds.Used[i] = true;
            var codes = factorPos.Select(p => cell.Codes[p]).ToArray();
            var key = string.Join(",", codes.Select(c => c.ToString("D9", CultureInfo.InvariantCulture)));
            pooled[key] = pooled.TryGetValue(key, out var before) ? (codes, AggregateSource.Pool(before.Stat, stat)) : (codes, stat);
        }

        if (pooled.Count == 0)
        {
            return null;
        }

        // Keep only the levels present, as the row selection does.
        var present = factorPos.Select((_, k) => new SortedSet<int>(pooled.Values.Select(v => v.Codes[k])).ToList()).ToArray();
        var levels = factorPos.Select((p, k) => (IReadOnlyList<string>)[.. present[k].Select(c => table.Levels[p][c])]).ToList();
        var cells = pooled.Values
            .Select(v => new CellStatistics([.. v.Codes.Select((c, k) => present[k].IndexOf(c))], v.Stat.N, v.Stat.CentredMean, v.Stat.SumSquares))
            .ToList();
        return new CellTable(block.Factors, levels, cells, table.Centres[block.Response!], dropped);
    }
}
