using StudyPress.Statistics.Anova;

namespace StudyPress.Statistics.Tests.Anova;

/// <summary>
/// Design checks (empty cells, rank, single levels) and the model matrix, on JAHANMI2 data
/// (e-Handbook 1.3.5.5) with rows removed; the expectations follow from the design (common practice).
/// </summary>
public sealed class AnovaDesignTests
{
    private static readonly string[] Three = ["table_speed_x1", "wheel_grit_x3", "batch"];

    private static bool Drop(int i, string speed, string grit, string batch)
    {
        var t = FactorialTestData.Jahanmi;
        return t["table_speed_x1"][i] == speed && t["wheel_grit_x3"][i] == grit && t["batch"][i] == batch;
    }

    private static AnovaInput WithoutCells(bool interactions, params (string S, string G, string B)[] cells) =>
        FactorialTestData.JahanmiInput(Three, interactions, SumOfSquaresType.Marginal, i => !cells.Any(c => Drop(i, c.S, c.G, c.B)));

    [Theory]
    [InlineData(true)]
    [InlineData(false)]
    public void Terms_FromFactorNamesAlone_AreTheTermsOfTheFit(bool interactions)
    {
        // The model stage states the terms before any data is read; they must be the fit's, in
        // table order (main effects, then interactions by degree; exact by construction of the design).
        var input = FactorialTestData.JahanmiInput(Three, interactions, SumOfSquaresType.Hierarchical, _ => true);
        var fromNames = AnovaDesign.Terms(Three, interactions);
        Assert.Equal(AnovaDesign.Terms(input).Select(t => t.Name), fromNames.Select(t => t.Name));
        Assert.Equal(FactorialAnova.Fit(input).Terms.Select(t => t.Name), fromNames.Select(t => t.Name));
        Assert.Equal(interactions ? 7 : 3, fromNames.Count);
        Assert.Equal(["wheel_grit_x3"], fromNames[1].Factors);
        if (interactions)
        {
            Assert.Equal("table_speed_x1:wheel_grit_x3", fromNames[3].Name);
            Assert.Equal(["table_speed_x1", "wheel_grit_x3"], fromNames[3].Factors);
            Assert.Equal(Three, fromNames[6].Factors);
        }
    }

    [Fact]
    public void FindEmptyCell_TwoCellsMissing_ReturnsFirstInCrossingOrder()
    {
        var input = WithoutCells(true, ("1", "1", "1"), ("1", "-1", "2"));
        Assert.Equal(["1", "-1", "2"], AnovaDesign.FindEmptyCell(input));
    }

    [Fact]
    public void Check_EmptyCellWithInteractions_NamesTheCell()
    {
        var input = WithoutCells(true, ("-1", "1", "2"));
        var problem = AnovaDesign.Check(input);
        Assert.NotNull(problem);
        Assert.Equal(DesignProblemKind.EmptyCell, problem.Kind);
        Assert.Equal(["-1", "1", "2"], problem.Cell);
        Assert.Contains("table_speed_x1 = -1, wheel_grit_x3 = 1, batch = 2", problem.Message, StringComparison.Ordinal);
        var ex = Assert.Throws<ArgumentException>(() => FactorialAnova.Fit(input));
        Assert.Contains("has no observations", ex.Message, StringComparison.Ordinal);
    }

    [Fact]
    public void Fit_EmptyCellMainEffectsOnly_IsFullRankAndFits()
    {
        var input = WithoutCells(false, ("-1", "1", "2"));
        Assert.Null(AnovaDesign.FindEmptyCell(input));
        Assert.Null(AnovaDesign.Check(input));
        var r = FactorialAnova.Fit(input);
        Assert.Equal(3, r.Terms.Count);
        Assert.Equal(input.Response.Length - 4, r.ResidualDf);

        // The empty cell has no raw mean but a model (main-effects) prediction.
        var empty = AnovaMeans.Compute(input).Cells.Single(c => c.Count == 0);
        Assert.Equal(["-1", "1", "2"], empty.Levels);
        Assert.False(empty.RawMean.IsDefined);
        Assert.True(empty.ModelMean.IsDefined);
    }

    [Fact]
    public void Check_ConfoundedFactors_ReportsRankDeficiencyNamingTheTerm()
    {
        var t = FactorialTestData.Jahanmi;
        var speed = FactorialTestData.Factor("speed", t["table_speed_x1"]);

        // A second factor that is the same split under other names: aliased with the first.
        var copy = new FactorColumn("speed_copy", [.. speed.Codes.Select(c => 1 - c)], ["fast", "slow"]);
        var y = FactorialTestData.Centred(t["strength"], FactorialTestData.JahanmiCentre);
        var input = new AnovaInput(y, [speed, copy], false, SumOfSquaresType.Sequential, 0.05);
        var problem = AnovaDesign.Check(input);
        Assert.NotNull(problem);
        Assert.Equal(DesignProblemKind.RankDeficient, problem.Kind);
        Assert.Equal("speed_copy", problem.Term);
        Assert.Contains("rank deficient", problem.Message, StringComparison.Ordinal);
        Assert.Throws<ArgumentException>(() => FactorialAnova.Fit(input));
        Assert.False(AnovaMeans.Compute(input).Factors[0].Levels[0].LeastSquaresMean.IsDefined);
    }

    [Fact]
    public void Check_FactorWithOneObservedLevel_ReportsSingleLevel()
    {
        var input = FactorialTestData.JahanmiInput(["table_speed_x1", "batch"], true, SumOfSquaresType.Marginal, i => FactorialTestData.Jahanmi["batch"][i] == "1");
        var problem = AnovaDesign.Check(input);
        Assert.NotNull(problem);
        Assert.Equal(DesignProblemKind.SingleLevel, problem.Kind);
        Assert.Equal("batch", problem.Term);
    }

    [Fact]
    public void Fit_UnusedLevelInLevelList_IsIgnored()
    {
        var input = FactorialTestData.JahanmiInput(["table_speed_x1", "batch"], true, SumOfSquaresType.Marginal);
        var batch = input.Factors[1];
        var padded = batch with { Levels = [.. batch.Levels, "3 (no data)"] };
        var r1 = FactorialAnova.Fit(input);
        var r2 = FactorialAnova.Fit(input with { Factors = [input.Factors[0], padded] });
        Assert.Equal(r1.Terms.Select(t => t.Df), r2.Terms.Select(t => t.Df));
        Assert.Equal(r1.Terms[1].SumOfSquares, r2.Terms[1].SumOfSquares, 9);
        var level = AnovaMeans.Compute(input with { Factors = [input.Factors[0], padded] }).Factors[1].Levels[2];
        Assert.Equal(0, level.Count);
        Assert.False(level.LeastSquaresMean.IsDefined);
    }

    [Fact]
    public void Fit_OneObservationPerCellWithInteractions_HasNoResidualDfAndUndefinedF()
    {
        string[] four = ["table_speed_x1", "down_feed_rate_x2", "wheel_grit_x3", "batch"];
        var seen = new HashSet<string>(StringComparer.Ordinal);
        var t = FactorialTestData.Jahanmi;
        var input = FactorialTestData.JahanmiInput(four, true, SumOfSquaresType.Sequential, i => seen.Add(string.Join("|", four.Select(c => t[c][i]))));
        Assert.Equal(16, input.Response.Length);
        var r = FactorialAnova.Fit(input);
        Assert.Equal(0, r.ResidualDf);
        Assert.All(r.Terms, term => Assert.False(term.F.IsDefined));
        Assert.Contains("no replication", r.Terms[0].F.Reason, StringComparison.Ordinal);
    }

    [Fact]
    public void ModelMatrix_TwoByThree_HasInterceptAndSumToZeroColumnsInInputOrder()
    {
        var a = new FactorColumn("a", [0, 1, 0, 1, 0, 1], ["a1", "a2"]);
        var b = new FactorColumn("b", [0, 0, 1, 1, 2, 2], ["b1", "b2", "b3"]);
        var input = new AnovaInput(new double[6], [a, b], true, SumOfSquaresType.Marginal, 0.05);
        var x = AnovaDesign.ModelMatrix(input);
        double[,] expected =
        {
            // 1, a, b1, b2, a:b1, a:b2
            { 1, 1, 1, 0, 1, 0 },
            { 1, -1, 1, 0, -1, 0 },
            { 1, 1, 0, 1, 0, 1 },
            { 1, -1, 0, 1, 0, -1 },
            { 1, 1, -1, -1, -1, -1 },
            { 1, -1, -1, -1, 1, 1 },
        };
        Assert.Equal(expected, x);
        Assert.Equal(["a", "b", "a:b"], AnovaDesign.Terms(input).Select(t => t.Name).ToArray());
    }
    /// <summary>
    /// The general coding loop for one factor, written out (exact hand computation of its rule):
    /// cells numbered in order of first occurrence, each observation's cell, the counts and each
    /// cell's used-level position.
    /// </summary>
    private static (int[] CellOf, int[] Counts, int[][] Levels) FirstOccurrenceCells(int[] codes, int[] usedIndex)
    {
        var slotOf = new Dictionary<int, int>();
        var cellOf = new int[codes.Length];
        var counts = new List<int>();
        var levels = new List<int[]>();
        for (var i = 0; i < codes.Length; i++)
        {
            if (!slotOf.TryGetValue(codes[i], out var slot))
            {
                slot = counts.Count;
                slotOf[codes[i]] = slot;
                counts.Add(0);
                levels.Add([usedIndex[codes[i]]]);
            }

            counts[slot]++;
            cellOf[i] = slot;
        }

        return (cellOf, [.. counts], [.. levels]);
    }

    [Theory]
    [InlineData(new[] { 0, 1, 2, 0, 1, 2, 2 }, new[] { 0, 1, 2 }, true)] // every level, first seen in code order: the codes are the cells
    [InlineData(new[] { 1, 0, 2, 0, 1 }, new[] { 0, 1, 2 }, false)] // first seen out of code order
    [InlineData(new[] { 0, 2, 0, 2 }, new[] { 0, -1, 1 }, false)] // a level without data
    [InlineData(new[] { 0, 0, 0 }, new[] { 0 }, true)]
    public void OneFactorCells_SameAsTheGeneralLoop(int[] codes, int[] usedIndex, bool shared)
    {
        var used = usedIndex.Count(u => u >= 0);
        var (cellOf, counts, levels) = DesignCoding.OneFactorCells(codes, usedIndex, used);
        var expected = FirstOccurrenceCells(codes, usedIndex);
        Assert.Equal(expected.CellOf, cellOf);
        Assert.Equal(expected.Counts, counts);
        Assert.Equal(expected.Levels, levels);
        Assert.Equal(shared, ReferenceEquals(codes, cellOf));
    }

    [Fact]
    public void OneFactorDesign_CellsInOrderOfFirstOccurrence()
    {
        // Through the public structured design: level c first (cell 0), then a (1), then b (2).
        var codes = new[] { 2, 0, 1, 1, 2, 0, 0, 2 };
        var input = new AnovaInput([1, 2, 3, 4, 5, 6, 7, 8], [new FactorColumn("f", codes, ["a", "b", "c"])], false, SumOfSquaresType.Hierarchical, 0.05);
        var (cellRows, cellOf) = AnovaDesign.CellModelMatrix(input);
        Assert.Equal(new[] { 0, 1, 2, 2, 0, 1, 1, 0 }, cellOf);
        Assert.Equal(3, cellRows.GetLength(0));
        var identity = new AnovaInput([1, 2, 3, 4], [new FactorColumn("f", [0, 1, 0, 1], ["a", "b"])], false, SumOfSquaresType.Hierarchical, 0.05);
        Assert.Same(identity.Factors[0].Codes, AnovaDesign.CellModelMatrix(identity).CellOf);
    }
}
