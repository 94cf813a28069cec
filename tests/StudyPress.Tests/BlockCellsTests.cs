using StudyPress.Binding;
using StudyPress.Data;
using StudyPress.Diagnostics;
using StudyPress.Evaluation;

namespace StudyPress.Tests;

/// <summary>
/// A block's cells (<see cref="BlockData.Cells"/>) of a large selection, which is cut into parts
/// counted and written on several cores, are the cells of the rule written out directly (exact
/// hand computation of the rule: cells in key order, first factor slowest; in each cell the rows'
/// centred values and positions in row order).
/// </summary>
public sealed class BlockCellsTests
{
    private static readonly SourceLocation Nowhere = new("t.md", 0, 0);

    private static BlockData Block(int n, int[][] codes, string[][] levels, double[] response)
    {
        var spec = new DatasetSpec("d", "d.csv", null, ',', '.', [], Nowhere, Nowhere, null);
        var dataset = new LoadedDataset
        {
            Spec = spec,
            Path = "d.csv",
            Sha256 = string.Empty,
            Rows = n,
            Lines = LineNumbers.Sequential(2, n),
            ColumnNames = [],
            Numeric = new Dictionary<string, NumericColumn>(StringComparer.Ordinal),
            Factors = new Dictionary<string, CategoricalColumn>(StringComparer.Ordinal),
            Used = new bool[n],
        };
        var factors = codes.Select((c, f) => new BlockFactor(new FactorSpec("f" + f, "f" + f, levels[f], [], null, Nowhere), c, levels[f])).ToList();
        return new BlockData
        {
            Dataset = dataset,
            ResponseName = "y",
            Rows = [.. Enumerable.Range(0, n)],
            Response = response,
            Centre = 0,
            Values = response,
            Factors = factors,
            DroppedMissing = 0,
        };
    }

    [Theory]
    [InlineData(1, 600_001)]
    [InlineData(2, 700_000)]
    [InlineData(2, 1_000)]
    public void Cells_OfALargeSelection_AreTheRuleWrittenOut(int factorCount, int n)
    {
        var rng = new Random(factorCount + n);
        string[][] levels = [["a", "b", "c", "d", "e"], ["x", "y", "z"]];
        levels = levels[..factorCount];
        // Every level present; some cells rare, so that parts hold very different shares of them.
        var codes = levels.Select((l, f) => Enumerable.Range(0, n).Select(i => i < l.Length ? i : rng.Next(100) < 3 ? 0 : rng.Next(l.Length)).ToArray()).ToArray();
        var response = Enumerable.Range(0, n).Select(_ => rng.NextDouble()).ToArray();
        var data = Block(n, codes, levels, response);

        var expected = Enumerable.Range(0, n)
            .GroupBy(i => codes.Aggregate(0L, (key, c) => (key * 10) + c[i]))
            .OrderBy(g => g.Key)
            .Select(g => (Label: string.Join(" / ", codes.Select((c, f) => levels[f][c[g.First()]])), Positions: g.ToArray()))
            .ToList();
        var cells = data.Cells();
        Assert.Equal(expected.Select(e => e.Label), cells.Select(c => c.Label));
        for (var c = 0; c < cells.Count; c++)
        {
            Assert.Equal(expected[c].Positions, cells[c].Positions);
            Assert.Equal(expected[c].Positions.Select(i => response[i]), cells[c].Values);
            Assert.Equal(codes.Select(f => f[expected[c].Positions[0]]), cells[c].Codes);
        }

        if (n >= 600_000 && Environment.ProcessorCount >= 2)
        {
            Assert.True(BlockData.PartsFor(n) >= 2, "a selection this large is cut into parts on a machine of several cores");
        }
    }
}
