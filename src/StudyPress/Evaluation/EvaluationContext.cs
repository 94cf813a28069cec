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

    /// <summary>Row indices into the dataset, in file order.</summary>
    public required int[] Rows { get; init; }

    /// <summary>Centred response for <see cref="Rows"/>.</summary>
    public required double[] Response { get; init; }

    public required double Centre { get; init; }

    /// <summary>The response values themselves for <see cref="Rows"/> (not centred).</summary>
    public required double[] Values { get; init; }

    /// <summary>The exact decimal values for <see cref="Rows"/>, when the column had only decimal text.</summary>
    public decimal[]? Exact { get; init; }

    /// <summary>Exact mean of the given positions (decimal arithmetic), or null when not available.</summary>
    public double? ExactMean(IReadOnlyList<int> positions)
    {
        if (Exact is null || positions.Count == 0)
        {
            return null;
        }

        try
        {
            decimal sum = 0;
            foreach (var i in positions)
            {
                sum += Exact[i];
            }

            return (double)(sum / positions.Count);
        }
        catch (OverflowException)
        {
            return null;
        }
    }

    public required IReadOnlyList<BlockFactor> Factors { get; init; }

    /// <summary>Rows dropped because the response or a factor was missing.</summary>
    public required int DroppedMissing { get; init; }

    /// <summary>Groups by the crossing of all block factors: level label, codes, centred values, row positions.</summary>
    public IReadOnlyList<(string Label, int[] Codes, double[] Values, int[] Positions)> Cells()
    {
        // One pass: each row's cell is the mixed-radix number of its codes (first factor most
        // significant), so ordering by it is ordering by the codes, as the labels' keys were.
        var k = Factors.Count;
        var radix = Factors.Select(f => (long)Math.Max(1, f.Levels.Count)).ToArray();
        var keys = new long[Rows.Length];
        var map = new Dictionary<long, int>();
        var sizes = new List<int>();
        for (var i = 0; i < Rows.Length; i++)
        {
            long key = 0;
            for (var f = 0; f < k; f++)
            {
                key = (key * radix[f]) + Factors[f].Codes[i];
            }

            keys[i] = key;
            if (!map.TryGetValue(key, out var slot))
            {
                slot = sizes.Count;
                map[key] = slot;
                sizes.Add(0);
            }

            sizes[slot]++;
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
            var slot = map[keys[i]];
            var at = fill[slot]++;
            cells[slot].Values[at] = Response[i];
            cells[slot].Positions[at] = i;
        }

        var order = map.OrderBy(p => p.Key).Select(p => p.Value);
        return [.. order.Select(slot => cells[slot])];
    }
}

/// <summary>A factor within a block: codes per selected row into the levels present there.</summary>
public sealed record BlockFactor(FactorSpec Spec, int[] Codes, IReadOnlyList<string> Levels)
{
    public Statistics.Anova.FactorColumn ToColumn() => new(Spec.Name, Codes, Levels);

    public double[][] Split(double[] values)
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

    public ResultSet Results { get; } = new();

    /// <summary>How each dataset's path is printed in messages (relative to the working folder).</summary>
    public IReadOnlyDictionary<string, string> DataDisplayPaths { get; init; } = new Dictionary<string, string>(StringComparer.Ordinal);

    public Dictionary<string, Kinds.BlockOutcome> Outcomes { get; } = new(StringComparer.Ordinal);

    /// <summary>
    /// Selects a block's rows: the response and every block factor present, and the 'where'
    /// filter satisfied. Levels without rows in the selection are dropped from the block's factors.
    /// </summary>
    public BlockData? Select(BoundBlock block, DiagnosticBag diagnostics, bool requireResponse = true)
    {
        var ds = Datasets[block.Data!];
        var response = block.Response is null ? null : ds.Numeric[block.Response];
        var factorCols = block.Factors.Select(f => ds.Factors[f.Name]).ToArray();
        var rows = new List<int>();
        var dropped = 0;
        for (var r = 0; r < ds.Rows; r++)
        {
            var pass = true;
            foreach (var w in block.Where)
            {
                var col = ds.Factors[w.Factor.Name];
                var code = col.Codes[r];
                if (code < 0 || !w.Levels.Contains(col.Levels[code]))
                {
                    pass = false;
                    break;
                }
            }

            if (!pass)
            {
                continue;
            }

            if ((response is not null && response.IsMissing(r)) || factorCols.Any(f => f.Codes[r] < 0))
            {
                dropped++;
                continue;
            }

            rows.Add(r);
        }

        if (rows.Count == 0)
        {
            diagnostics.NoRowsSelected(block.Location);
            return null;
        }

        foreach (var r in rows)
        {
            ds.Used[r] = true;
        }

        var factors = new List<BlockFactor>();
        for (var k = 0; k < factorCols.Length; k++)
        {
            var col = factorCols[k];
            var present = new SortedSet<int>(rows.Select(r => col.Codes[r]));
            var remap = present.Select((code, i) => (code, i)).ToDictionary(p => p.code, p => p.i);
            factors.Add(new BlockFactor(
                block.Factors[k],
                [.. rows.Select(r => remap[col.Codes[r]])],
                [.. present.Select(c => col.Levels[c])]));
        }

        return new BlockData
        {
            Dataset = ds,
            ResponseName = block.Response ?? string.Empty,
            Rows = [.. rows],
            Response = response is null ? [] : [.. rows.Select(r => response.Centred[r])],
            Centre = response?.Centre ?? 0,
            Values = response is null ? [] : [.. rows.Select(r => response.Values[r])],
            Exact = response?.Exact is { } exact ? [.. rows.Select(r => exact[r])] : null,
            Factors = factors,
            DroppedMissing = dropped,
        };
    }

    public IReadOnlyList<string> Inputs(BoundBlock block) => block.Data is null ? [] : [block.Data];
}
