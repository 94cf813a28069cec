using StudyPress.Binding;
using StudyPress.Data;
using StudyPress.Diagnostics;
using StudyPress.Statistics;

namespace StudyPress.Evaluation;

/// <summary>The rows one block works on: response (centred) and factor codes restricted to levels with data.</summary>
public sealed class BlockData
{
    public required LoadedDataset Dataset { get; init; }

    public required string ResponseName { get; init; }

    /// <summary>The response as readers see it: the header's label and unit, else the column name (<see cref="StudyHeader.ResponseDisplay"/>).</summary>
    public string ResponseLabel { get => responseLabel.Length > 0 ? responseLabel : ResponseName; init => responseLabel = value; }

    private readonly string responseLabel = string.Empty;

    /// <summary>Row indices into the dataset, in file order.</summary>
    public required int[] Rows { get; init; }

    /// <summary>Centred response for <see cref="Rows"/>.</summary>
    public required double[] Response { get; init; }

    public required double Centre { get; init; }

    /// <summary>The response values themselves for <see cref="Rows"/> (not centred).</summary>
    public required double[] Values { get; init; }

    /// <summary>The exact values for <see cref="Rows"/>, when the column had only decimal text.</summary>
    public ExactValues? Exact { get; init; }

    /// <summary>Exact mean of the given positions (decimal arithmetic), or null when not available.</summary>
    public double? ExactMean(IReadOnlyList<int> positions) => Exact?.Mean(positions);

    public required IReadOnlyList<BlockFactor> Factors { get; init; }

    /// <summary>Rows dropped because the response or a factor was missing.</summary>
    public required int DroppedMissing { get; init; }

    private IReadOnlyList<(string Label, int[] Codes, double[] Values, int[] Positions)>? _cells;

    /// <summary>Each cell's sorted values, by the cell's positions array: a memo of this selection (one run's), filled by <see cref="SortedValues"/>.</summary>
    private readonly System.Collections.Concurrent.ConcurrentDictionary<int[], IReadOnlyList<double>> sortedCells = new(ReferenceEqualityComparer.Instance);

    /// <summary>
    /// A cell's response values (<paramref name="positions"/> as <see cref="Cells"/> gives them) in
    /// ascending order, sorted once per cell (whichever thread asks first; the result is the same)
    /// and shared by every caller: an array must not be changed. Exact values in a narrow range are
    /// counted and kept as runs (<see cref="Data.ExactValues.CountingOrder"/>: the value of every rank
    /// is the sorted array's, without that array of n values), others sorted by
    /// <see cref="Statistics.FastSort"/>.
    /// </summary>
    internal IReadOnlyList<double> SortedValues(int[] positions) => sortedCells.GetOrAdd(positions, p =>
    {
        // Exact values in a narrow range are counted (the same value at every rank), others sorted by FastSort.
        if (Exact?.CountingOrder(Values, p) is { } counted)
        {
            return counted;
        }

        var v = new double[p.Length];
        for (var k = 0; k < p.Length; k++)
        {
            v[k] = Values[p[k]];
        }

        Statistics.FastSort.Sort(v);
        return v;
    });

    private readonly System.Collections.Concurrent.ConcurrentDictionary<(int[] Positions, double Alpha), Statistics.Descriptive.GroupSummary> cellSummaries = new(CellAlphaComparer.Instance);

    /// <summary>
    /// A cell's descriptive statistics at <paramref name="alpha"/> (<see cref="Statistics.Descriptive.Descriptives.ComputeSorted(ReadOnlySpan{double}, IReadOnlyList{double}, double, double, double?)"/>
    /// of its centred values, its <see cref="SortedValues"/>, the block's centre and its exact mean),
    /// computed once per cell and alpha and shared: the summary and the means figure ask the same
    /// question of the same cell, and the answer is a pure function of it.
    /// </summary>
    internal Statistics.Descriptive.GroupSummary CellSummary(double[] values, int[] positions, double alpha) =>
        cellSummaries.GetOrAdd((positions, alpha), key => Statistics.Descriptive.Descriptives.ComputeSorted(values, SortedValues(key.Positions), Centre, key.Alpha, ExactMean(key.Positions)));

    /// <summary>Cells compared as the same positions array (the cell's identity) and the same alpha bits.</summary>
    private sealed class CellAlphaComparer : IEqualityComparer<(int[] Positions, double Alpha)>
    {
        public static readonly CellAlphaComparer Instance = new();

        public bool Equals((int[] Positions, double Alpha) x, (int[] Positions, double Alpha) y) =>
            ReferenceEquals(x.Positions, y.Positions) && BitConverter.DoubleToInt64Bits(x.Alpha) == BitConverter.DoubleToInt64Bits(y.Alpha);

        public int GetHashCode((int[] Positions, double Alpha) obj) => HashCode.Combine(System.Runtime.CompilerServices.RuntimeHelpers.GetHashCode(obj.Positions), obj.Alpha);
    }

    /// <summary>The rows' sufficient statistics per cell (centred means), the view the cells route has too.</summary>
    public Model.CellTable CellTable() => Model.CellTable.FromGroups(
        [.. Factors.Select(f => f.Spec)],
        [.. Factors.Select(f => f.Levels)],
        Cells().Select(c => (c.Codes, c.Values)),
        Centre,
        DroppedMissing);

    /// <summary>
    /// Groups by the crossing of all block factors: level label, codes, centred values, row positions.
    /// Computed once per block (the arrays are shared by every caller and must not be changed).
    /// </summary>
    public IReadOnlyList<(string Label, int[] Codes, double[] Values, int[] Positions)> Cells() => _cells ??= ComputeCells();

    private (string Label, int[] Codes, double[] Values, int[] Positions)[] ComputeCells()
    {
        // One pass: each row's cell is the mixed-radix number of its codes (first factor most
        // significant), so ordering by it is ordering by the codes, as the labels' keys were.
        var k = Factors.Count;
        var radix = Factors.Select(f => (long)Math.Max(1, f.Levels.Count)).ToArray();
        long crossing = 1;
        foreach (var r in radix)
        {
            crossing = Math.Min(crossing * r, long.MaxValue / 1024);
        }

        var factorCodes = Factors.Select(f => f.Codes).ToArray();
        if (crossing <= 1 << 20)
        {
            return DenseCells(k, radix, crossing, factorCodes);
        }

        // Key -> slot through a dictionary (a large crossing).
        var map = new Dictionary<long, int>();
        var slots = new int[Rows.Length];
        var sizes = new List<int>();
        for (var i = 0; i < Rows.Length; i++)
        {
            long key = 0;
            for (var f = 0; f < k; f++)
            {
                key = (key * radix[f]) + factorCodes[f][i];
            }

            if (!map.TryGetValue(key, out var slot))
            {
                slot = sizes.Count;
                map[key] = slot;
                sizes.Add(0);
            }

            slots[i] = slot;
        }

        // Sizes counted after the pass (a list indexer per row was a fifth of the pass).
        var counted = new int[sizes.Count];
        foreach (var slot in slots)
        {
            counted[slot]++;
        }

        for (var c = 0; c < counted.Length; c++)
        {
            sizes[c] = counted[c];
        }

        var cells = new (string Label, int[] Codes, double[] Values, int[] Positions)[map.Count];
        var fill = new int[map.Count];
        foreach (var (key, slot) in map)
        {
            var codes = new int[k];
            var rest = key;
            for (var f = k - 1; f >= 0; f--)
            {
                codes[f] = (int)(rest % radix[f]);
                rest /= radix[f];
            }

            cells[slot] = (string.Join(" / ", codes.Select((c, j) => Factors[j].Levels[c])), codes, new double[sizes[slot]], new int[sizes[slot]]);
        }

        for (var i = 0; i < Rows.Length; i++)
        {
            var slot = slots[i];
            var at = fill[slot]++;
            cells[slot].Values[at] = Response[i];
            cells[slot].Positions[at] = i;
        }

        var order = map.OrderBy(p => p.Key).Select(p => p.Value);
        (string Label, int[] Codes, double[] Values, int[] Positions)[] sorted = [.. order.Select(slot => cells[slot])];
        return KeepSplit(k, sorted);
    }

    /// <summary>
    /// <see cref="ComputeCells"/> for a crossing of at most 2^20 keys: each row's key counted in an
    /// array indexed by the key, then each row's response and position written into its cell; the
    /// cells in key order, as the dictionary route orders them. No per-row slot array, and the
    /// cells' arrays are written in full, so they are not zeroed first. A large selection is cut
    /// into consecutive parts (one per core) that are counted and written at the same time: each
    /// part writes its rows of a cell after the earlier parts' rows of that cell, in row order, so
    /// the cells are the same arrays whatever the number of parts.
    /// </summary>
    private (string Label, int[] Codes, double[] Values, int[] Positions)[] DenseCells(int k, long[] radix, long crossing, int[][] factorCodes)
    {
        var n = Rows.Length;
        var parts = PartsFor(n);
        var bounds = new int[parts + 1];
        for (var p = 0; p <= parts; p++)
        {
            bounds[p] = (int)((long)n * p / parts);
        }

        var partCounts = new int[parts][];
        void Count(int p)
        {
            var counts = new int[crossing];
            if (k == 1)
            {
                foreach (var code in factorCodes[0].AsSpan(bounds[p], bounds[p + 1] - bounds[p]))
                {
                    counts[code]++;
                }
            }
            else
            {
                for (var i = bounds[p]; i < bounds[p + 1]; i++)
                {
                    counts[Key(factorCodes, radix, k, i)]++;
                }
            }

            partCounts[p] = counts;
        }

        if (parts == 1)
        {
            Count(0);
        }
        else
        {
            Parallel.For(0, parts, Count);
        }

        var cells = new List<(string Label, int[] Codes, double[] Values, int[] Positions)>();
        var cellOf = new int[crossing];
        var starts = new List<int[]>(); // per cell: where each part's rows begin in it
        for (long key = 0; key < crossing; key++)
        {
            var size = 0;
            var start = new int[parts];
            for (var p = 0; p < parts; p++)
            {
                start[p] = size;
                size += partCounts[p][key];
            }

            if (size == 0)
            {
                continue;
            }

            var codes = new int[k];
            var rest = key;
            for (var f = k - 1; f >= 0; f--)
            {
                codes[f] = (int)(rest % radix[f]);
                rest /= radix[f];
            }

            cellOf[key] = cells.Count;
            starts.Add(start);
            cells.Add((string.Join(" / ", codes.Select((c, j) => Factors[j].Levels[c])), codes, GC.AllocateUninitializedArray<double>(size), GC.AllocateUninitializedArray<int>(size)));
        }

        var values = cells.Select(c => c.Values).ToArray();
        var positions = cells.Select(c => c.Positions).ToArray();
        void Fill(int p)
        {
            var fill = new int[cells.Count];
            for (var c = 0; c < fill.Length; c++)
            {
                fill[c] = starts[c][p];
            }

            for (var i = bounds[p]; i < bounds[p + 1]; i++)
            {
                var slot = cellOf[k == 1 ? factorCodes[0][i] : Key(factorCodes, radix, k, i)];
                var at = fill[slot]++;
                values[slot][at] = Response[i];
                positions[slot][at] = i;
            }
        }

        if (parts == 1)
        {
            Fill(0);
        }
        else
        {
            Parallel.For(0, parts, Fill);
        }

        return KeepSplit(k, [.. cells]);
    }

    /// <summary>Rows per part of <see cref="DenseCells"/> below which a selection is not cut (a part's start-up costs more than it saves).</summary>
    private const int RowsPerPart = 1 << 18;

    /// <summary>How many parts <see cref="DenseCells"/> cuts <paramref name="n"/> rows into (at most one per core).</summary>
    internal static int PartsFor(int n) => Math.Clamp(n / RowsPerPart, 1, Math.Max(1, Environment.ProcessorCount));

    private static long Key(int[][] factorCodes, long[] radix, int k, int i)
    {
        long key = 0;
        for (var f = 0; f < k; f++)
        {
            key = (key * radix[f]) + factorCodes[f][i];
        }

        return key;
    }

    private (string Label, int[] Codes, double[] Values, int[] Positions)[] KeepSplit(int k, (string Label, int[] Codes, double[] Values, int[] Positions)[] sorted)
    {
        // One factor: the cells are its levels in code order, so their values are the split of the
        // response by the factor (BlockFactor.Split gives these arrays instead of copying again).
        if (k == 1 && sorted.Length == Factors[0].Levels.Count)
        {
            Factors[0].KeepSplit(Response, [.. sorted.Select(c => c.Values)]);
        }

        return sorted;
    }
}

/// <summary>A factor within a block: codes per selected row into the levels present there.</summary>
public sealed record BlockFactor(FactorSpec Spec, int[] Codes, IReadOnlyList<string> Levels)
{
    public Statistics.Anova.FactorColumn ToColumn() => new(Spec.Name, Codes, Levels);

    private (double[] Of, double[][] Groups)? split;

    /// <summary>
    /// The values by level (level order, row order within a level). The last split is kept: the
    /// anova's checks, its post-hoc block and the rank test split the same response once. The
    /// arrays are shared by every caller and must not be changed.
    /// </summary>
    public double[][] Split(double[] values)
    {
        if (split is { } last && ReferenceEquals(last.Of, values))
        {
            return last.Groups;
        }

        var groups = SplitNew(values);
        split = (values, groups);
        return groups;
    }

    /// <summary>Records the split of <paramref name="values"/> computed elsewhere (the block's one-factor cells).</summary>
    internal void KeepSplit(double[] values, double[][] groups) => split = (values, groups);

    private double[][] SplitNew(double[] values)
    {
        var sizes = new int[Levels.Count];
        foreach (var c in Codes)
        {
            sizes[c]++;
        }

        var groups = sizes.Select(n => new double[n]).ToArray();
        var fill = new int[Levels.Count];
        for (var i = 0; i < Codes.Length; i++)
        {
            groups[Codes[i]][fill[Codes[i]]++] = values[i];
        }

        return groups;
    }
}

/// <summary>What evaluation stages share: header, datasets, results.</summary>
public sealed class EvaluationContext
{
    public required StudyHeader Header { get; init; }

    public required IReadOnlyDictionary<string, LoadedDataset> Datasets { get; init; }

    /// <summary>The model stage's product: models, and what aggregated datasets give each block.</summary>
    public required Model.StudyModels Models { get; init; }

    public ResultSet Results { get; } = new();

    /// <summary>
    /// Every bound block of the study, in document order: binding's record of which block reads
    /// which (<see cref="BoundBlock.Of"/>), so that a block computes nothing no block reads
    /// (<see cref="Kinds.AssumptionReview.Needed"/>). Null when not given: then everything is computed.
    /// </summary>
    public IReadOnlyList<BoundBlock>? Blocks { get; init; }

    /// <summary>How each dataset's path is printed in messages (relative to the working folder).</summary>
    public IReadOnlyDictionary<string, string> DataDisplayPaths { get; init; } = new Dictionary<string, string>(StringComparer.Ordinal);

    /// <summary>The outcomes of the blocks evaluated so far, by block id (a read-only view; <see cref="Record"/> adds one).</summary>
    public IReadOnlyDictionary<string, Kinds.BlockOutcome> Outcomes => outcomes;

    private readonly Dictionary<string, Kinds.BlockOutcome> outcomes = new(StringComparer.Ordinal);

    /// <summary>Records a block's outcome once it is evaluated (the compilation's evaluation loop).</summary>
    internal void Record(Kinds.BlockOutcome outcome) => outcomes[outcome.Block.Id] = outcome;

    /// <summary>
    /// A pure memo owned by this run: <paramref name="compute"/> of <paramref name="key"/> (an array,
    /// compared as the same object), computed once and shared (for example the thinned residuals
    /// that a normal quantile plot and a histogram both draw). The result must not be changed.
    /// </summary>
    internal double[] Memo(double[] key, Func<double[], double[]> compute) => memo.GetOrAdd(key, compute);

    private readonly System.Collections.Concurrent.ConcurrentDictionary<double[], double[]> memo = new(ReferenceEqualityComparer.Instance);

    /// <summary>
    /// Selects a block's rows: the response and every block factor present, and the 'where'
    /// filter satisfied. Levels without rows in the selection are dropped from the block's factors.
    /// </summary>
    public BlockData? Select(BoundBlock block, DiagnosticBag diagnostics, bool requireResponse = true)
    {
        // Blocks that select the same rows (same dataset, response, factors and filter) share one
        // selection, with its cells and each cell's sorted values: a summary and the anova over
        // the same factors do not copy, group and sort a large dataset twice.
        foreach (var (key, shared) in selections)
        {
            if (SameSelection(key, block))
            {
                return shared;
            }
        }

        var data = SelectRows(block, diagnostics, markUsed: true);
        if (data is not null)
        {
            selections.Add((block, data));
        }

        return data;
    }

    /// <summary>
    /// As <see cref="Select"/>, but the rows are not counted as used by the input: the caller leaves
    /// out more rows (for example those missing a covariate) and marks the rows it analyses with
    /// <see cref="MarkUsed"/>. The selection is not shared with other blocks.
    /// </summary>
    public BlockData? SelectUnmarked(BoundBlock block, DiagnosticBag diagnostics) => SelectRows(block, diagnostics, markUsed: false);

    private readonly List<(BoundBlock Block, BlockData Data)> selections = [];

    /// <summary>Whether two blocks select the same rows with the same factors (factor specifications compared as the same objects).</summary>
    internal static bool SameSelection(BoundBlock a, BoundBlock b)
    {
        if (!string.Equals(a.Data, b.Data, StringComparison.Ordinal)
            || !string.Equals(a.Response, b.Response, StringComparison.Ordinal)
            || a.Factors.Count != b.Factors.Count
            || a.Where.Count != b.Where.Count)
        {
            return false;
        }

        for (var k = 0; k < a.Factors.Count; k++)
        {
            if (!ReferenceEquals(a.Factors[k], b.Factors[k]))
            {
                return false;
            }
        }

        for (var w = 0; w < a.Where.Count; w++)
        {
            var (x, y) = (a.Where[w], b.Where[w]);
            if (!ReferenceEquals(x.Factor, y.Factor) || !x.Levels.SequenceEqual(y.Levels, StringComparer.Ordinal))
            {
                return false;
            }
        }

        return true;
    }

    /// <summary>Counts the rows of <paramref name="data"/> as used by its input (the report's "rows used").</summary>
    public static void MarkUsed(BlockData data)
    {
        foreach (var r in data.Rows)
        {
            data.Dataset.Used[r] = true;
        }
    }

    private BlockData? SelectRows(BoundBlock block, DiagnosticBag diagnostics, bool markUsed)
    {
        var ds = Datasets[block.Data!];
        var response = block.Response is null ? null : ds.Numeric[block.Response];
        var factorCols = block.Factors.Select(f => ds.Factors[f.Name]).ToArray();
        var rows = GC.AllocateUninitializedArray<int>(ds.Rows); // written up to count, the rest cut off
        var count = 0;
        var dropped = 0;
        var where = block.Where.Select(w => (Column: ds.Factors[w.Factor.Name], Pass: w.Levels)).ToArray();
        var wherePass = where.Select(w => w.Column.Levels.Select(l => w.Pass.Contains(l)).ToArray()).ToArray();
        if (where.Length == 0 && (response is null || NoneMissing(response)) && factorCols.All(c => c.Counts.Sum() == ds.Rows))
        {
            // No filter, no missing response, every factor code present (the columns' counts add up
            // to the rows): every row is selected, as the loop below would find, without reading them.
            for (var r = 0; r < ds.Rows; r++)
            {
                rows[r] = r;
            }

            count = ds.Rows;
        }

        for (var r = count; r < ds.Rows; r++)
        {
            var pass = true;
            for (var w = 0; w < where.Length; w++)
            {
                var code = where[w].Column.Codes[r];
                if (code < 0 || !wherePass[w][code])
                {
                    pass = false;
                    break;
                }
            }

            if (!pass)
            {
                continue;
            }

            var missing = response is not null && response.IsMissing(r);
            for (var f = 0; f < factorCols.Length && !missing; f++)
            {
                missing = factorCols[f].Codes[r] < 0;
            }

            if (missing)
            {
                dropped++;
                continue;
            }

            rows[count++] = r;
        }

        if (count == 0)
        {
            diagnostics.NoRowsSelected(block.Location);
            return null;
        }

        // Every row selected: the block shares the dataset's arrays instead of copying them.
        var all = count == ds.Rows;
        if (!all)
        {
            Array.Resize(ref rows, count);
        }

        if (markUsed && all)
        {
            Array.Fill(ds.Used, true);
        }
        else if (markUsed)
        {
            foreach (var r in rows)
            {
                ds.Used[r] = true;
            }
        }

        var factors = new List<BlockFactor>();
        for (var k = 0; k < factorCols.Length; k++)
        {
            var col = factorCols[k];
            var present = new bool[col.Levels.Count];
            if (all)
            {
                // Every row: the levels present are those the column counted.
                for (var c = 0; c < present.Length; c++)
                {
                    present[c] = col.Counts[c] > 0;
                }
            }
            else
            {
                foreach (var r in rows)
                {
                    present[col.Codes[r]] = true;
                }
            }

            var remap = new int[col.Levels.Count];
            var levels = new List<string>();
            for (var c = 0; c < present.Length; c++)
            {
                remap[c] = present[c] ? levels.Count : -1;
                if (present[c])
                {
                    levels.Add(col.Levels[c]);
                }
            }

            // Every row and every level: the block's codes are the column's (shared, never changed).
            int[] codes;
            if (all && levels.Count == col.Levels.Count)
            {
                codes = col.Codes;
            }
            else
            {
                codes = new int[rows.Length];
                for (var i = 0; i < rows.Length; i++)
                {
                    codes[i] = remap[col.Codes[rows[i]]];
                }
            }

            factors.Add(new BlockFactor(block.Factors[k], codes, levels));
        }

        return new BlockData
        {
            Dataset = ds,
            ResponseName = block.Response ?? string.Empty,
            ResponseLabel = Header.ResponseDisplay(block.Response),
            Rows = rows,
            Response = response is null ? [] : all ? response.Centred : Pick(response.Centred, rows),
            Centre = response?.Centre ?? 0,
            Values = response is null ? [] : all ? response.Values : Pick(response.Values, rows),
            Exact = response?.Exact is { } exact ? (all ? exact : exact.Pick(rows)) : null,
            Factors = factors,
            DroppedMissing = dropped,
        };
    }

    /// <summary>
    /// Whether no row of <paramref name="column"/> is missing (<see cref="NumericColumn.IsMissing"/>),
    /// known from its count without reading the rows: for exact decimal columns, whose centred value
    /// is NaN exactly for the missing cells the count counts. Other columns answer false (read them).
    /// </summary>
    internal static bool NoneMissing(NumericColumn column) => column.Exact is not null && column.Missing == 0;

    private static T[] Pick<T>(T[] values, int[] rows)
    {
        var picked = new T[rows.Length];
        for (var i = 0; i < rows.Length; i++)
        {
            picked[i] = values[rows[i]];
        }

        return picked;
    }

    public IReadOnlyList<string> Inputs(BoundBlock block) => block.Data is null ? [] : [block.Data];
}
