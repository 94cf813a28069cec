using System.Globalization;
using System.Text.Json;
using StudyPress.Statistics.Anova;
using StudyPress.Statistics.Assumptions;
using StudyPress.Statistics.Tests.Support;

namespace StudyPress.Statistics.Tests.Anova;

/// <summary>
/// The ANOVA from per-cell counts, means and sums of squares must give the table the row fit gives
/// (FactorialAnova.Fit on the same data: JAHANMI2 from the NIST/SEMATECH
/// e-Handbook, balanced and a deterministic unbalanced subset), and the NIST StRD certified values.
/// </summary>
public sealed class CellStatisticsAnovaTests
{
    private const double Tight = 1e-12;

    public static TheoryData<int, bool, bool> Designs()
    {
        var d = new TheoryData<int, bool, bool>();
        foreach (var type in new[] { 1, 2, 3 })
        {
            foreach (var interactions in new[] { true, false })
            {
                foreach (var unbalanced in new[] { false, true })
                {
                    d.Add(type, interactions, unbalanced);
                }
            }
        }

        return d;
    }

    [Theory]
    [MemberData(nameof(Designs))]
    public void Fit_TwoFactors_MatchesRowFit(int type, bool interactions, bool unbalanced)
    {
        var input = FactorialTestData.JahanmiInput(
            ["table_speed_x1", "batch"],
            interactions,
            (SumOfSquaresType)type,
            unbalanced ? FactorialTestData.UnbalancedRow : null);
        AssertSameTable(FactorialAnova.Fit(input), CellStatisticsAnova.Fit(CellsOf(input)));
    }

    [Theory]
    [InlineData(1)]
    [InlineData(2)]
    [InlineData(3)]
    public void Fit_ThreeFactorsUnbalanced_MatchesRowFit(int type)
    {
        var input = FactorialTestData.JahanmiInput(
            ["table_speed_x1", "down_feed_rate_x2", "batch"],
            true,
            (SumOfSquaresType)type,
            FactorialTestData.UnbalancedRow);
        AssertSameTable(FactorialAnova.Fit(input), CellStatisticsAnova.Fit(CellsOf(input)));
    }

    [Fact]
    public void Fit_MainEffectsWithEmptyCell_MatchesRowFit()
    {
        // Drop every row of one cell: the main-effects model is still estimable.
        var t = FactorialTestData.Jahanmi;
        var input = FactorialTestData.JahanmiInput(
            ["table_speed_x1", "down_feed_rate_x2"],
            false,
            SumOfSquaresType.Hierarchical,
            i => FactorialTestData.UnbalancedRow(i) && !(t["table_speed_x1"][i] == "1" && t["down_feed_rate_x2"][i] == "1"));
        var cells = CellsOf(input);
        Assert.Equal(3, cells.Cells.Count);
        AssertSameTable(FactorialAnova.Fit(input), CellStatisticsAnova.Fit(cells));
        Assert.NotNull(CellStatisticsAnova.Check(cells with { Interactions = true }));
        Assert.Equal(DesignProblemKind.EmptyCell, CellStatisticsAnova.Check(cells with { Interactions = true })!.Kind);
    }

    [Theory]
    [InlineData(0.1, 3)]
    [InlineData(0.7, 7)]
    [InlineData(1.0 / 3.0, 11)]
    [InlineData(123456789.123, 5)]
    [InlineData(1e15 + 0.25, 9)]
    [InlineData(-2.675e-9, 13)]
    public void Of_ConstantCell_MeanIsTheValueAndSumOfSquaresIsZero(double value, int n)
    {
        // Exact hand computation: a cell whose values are all equal has that value as its mean and
        // no spread. The corrected two-pass mean must give it exactly (a zero-variance cell is
        // refused or reported by the checks only when its sum of squares is exactly 0).
        var values = Enumerable.Repeat(value, n).ToArray();
        var cell = CellStatistics.Of([0], values);
        Assert.Equal(n, cell.Count);
        Assert.Equal(value, cell.Mean);
        Assert.Equal(0.0, cell.SumOfSquares);
    }

    [Fact]
    public void Fit_OneFactor_MatchesTheDefinitions()
    {
        // Exact hand computation (decimal arithmetic on the same doubles) of the one-way sums of squares.
        var input = FactorialTestData.JahanmiInput(["lab"], false, SumOfSquaresType.Sequential, FactorialTestData.UnbalancedRow);
        var r = CellStatisticsAnova.Fit(CellsOf(input));
        var f = input.Factors[0];
        var y = input.Response.Select(v => (decimal)v).ToArray();
        var grand = y.Average();
        var groups = Enumerable.Range(0, f.Levels.Count).Select(g => y.Where((_, i) => f.Codes[i] == g).ToArray()).Where(v => v.Length > 0).ToArray();
        var within = groups.Sum(v => v.Sum(x => (x - v.Average()) * (x - v.Average())));
        var between = groups.Sum(v => v.Length * (v.Average() - grand) * (v.Average() - grand));
        var total = y.Sum(x => (x - grand) * (x - grand));
        Rel((double)between, r.Terms[0].SumOfSquares, Tight, "between SS");
        Rel((double)within, r.ResidualSumOfSquares, Tight, "within SS");
        Rel((double)total, r.TotalSumOfSquares, Tight, "total SS");
        Assert.Equal(groups.Length - 1, r.Terms[0].Df);
        Assert.Equal(y.Length - groups.Length, r.ResidualDf);
    }

    /// <summary>
    /// The rows' fit is the fit of their cells (one implementation): every number of the table is
    /// the same double, for every SS type, with and without interactions, one to three factors.
    /// </summary>
    [Theory]
    [InlineData(new[] { "lab" }, false, 1)]
    [InlineData(new[] { "table_speed_x1", "batch" }, true, 1)]
    [InlineData(new[] { "table_speed_x1", "batch" }, false, 2)]
    [InlineData(new[] { "table_speed_x1", "down_feed_rate_x2", "batch" }, true, 3)]
    [InlineData(new[] { "table_speed_x1", "down_feed_rate_x2", "batch" }, false, 3)]
    public void RowFit_IsTheFitOfItsCells(string[] factors, bool interactions, int type)
    {
        var input = FactorialTestData.JahanmiInput(factors, interactions, (SumOfSquaresType)type, FactorialTestData.UnbalancedRow);
        var rows = FactorialAnova.Fit(input);
        var (cellInput, cellOf) = FactorialAnova.Cells(input);
        var cells = CellStatisticsAnova.Fit(cellInput);
        Assert.Equal(rows.Terms.Select(t => t.SumOfSquares), cells.Terms.Select(t => t.SumOfSquares));
        Assert.Equal(rows.Terms.Select(t => t.F.Value), cells.Terms.Select(t => t.F.Value));
        Assert.Equal(rows.ResidualSumOfSquares, cells.ResidualSumOfSquares);
        Assert.Equal(rows.TotalSumOfSquares, cells.TotalSumOfSquares);
        for (var i = 0; i < input.Response.Length; i++)
        {
            Assert.Equal(cells.FittedCellMeans[cellOf[i]], rows.Fitted[i]);
            Assert.Equal(input.Response[i] - cells.FittedCellMeans[cellOf[i]], rows.Residuals[i]);
            Assert.Equal(cells.CellLeverages[cellOf[i]], rows.Leverages[i]);
        }

        // The leverages sum to the number of parameters (trace of the hat matrix).
        var p = 1 + rows.Terms.Sum(t => t.Df);
        Assert.True(Math.Abs(rows.Leverages.Sum() - p) < 1e-10 * p, "trace of the hat matrix");
    }

    /// <summary>
    /// A design whose cells are fewer than its parameters (though its rows are not) gets the same
    /// message from the cells as from the rows, naming the term whose effects cannot be separated.
    /// </summary>
    [Fact]
    public void Check_FewerCellsThanParameters_SameProblemAsTheRows()
    {
        // a: 3 levels, b: 3 levels, main effects (p = 5), only the three diagonal cells filled, 2 rows each.
        double[] y = [1, 2, 3, 5, 4, 7];
        var a = new FactorColumn("a", [0, 0, 1, 1, 2, 2], ["a1", "a2", "a3"]);
        var b = new FactorColumn("b", [0, 0, 1, 1, 2, 2], ["b1", "b2", "b3"]);
        var input = new AnovaInput(y, [a, b], false, SumOfSquaresType.Hierarchical, 0.05);
        var rows = AnovaDesign.Check(input);
        var cells = CellStatisticsAnova.Check(CellsOf(input));
        Assert.NotNull(rows);
        Assert.NotNull(cells);
        Assert.Equal(DesignProblemKind.RankDeficient, rows.Kind);
        Assert.Equal(rows.Kind, cells.Kind);
        Assert.Equal(rows.Message, cells.Message);
        Assert.Equal(rows.Term, cells.Term);
    }

    [Fact]
    public void Fit_FullInteraction_FittedValuesAreCellMeans()
    {
        var input = FactorialTestData.JahanmiInput(["table_speed_x1", "batch"], true, SumOfSquaresType.Marginal, FactorialTestData.UnbalancedRow);
        var cells = CellsOf(input);
        var r = CellStatisticsAnova.Fit(cells);
        for (var i = 0; i < cells.Cells.Count; i++)
        {
            Assert.Equal(cells.Cells[i].Mean, r.FittedCellMeans[i], 1e-10);
        }

        Assert.Equal(cells.Cells.Sum(c => c.SumOfSquares), r.ResidualSumOfSquares, 1e-9);
    }

    [Fact]
    public void WelchAndBartlett_FromSummaries_MatchTheValueRoutes()
    {
        var input = FactorialTestData.JahanmiInput(["lab"], false, SumOfSquaresType.Sequential, FactorialTestData.UnbalancedRow);
        var f = input.Factors[0];
        var groups = Enumerable.Range(0, f.Levels.Count)
            .Select(g => input.Response.Where((_, i) => f.Codes[i] == g).ToArray()).ToArray();
        var summaries = groups.Select(g => new GroupStatistics(g.Length, g.Average(), g.Sum(v => (v - g.Average()) * (v - g.Average())))).ToArray();
        var w1 = WelchAnova.Test(groups);
        var w2 = GroupStatisticsTests.Welch(summaries);
        Rel(w1.F.Value, w2.F.Value, 1e-12, "Welch F");
        Rel(w1.Df2.Value, w2.Df2.Value, 1e-12, "Welch df2");
        Rel(w1.P.Value, w2.P.Value, 1e-10, "Welch p");
        var b1 = Bartlett.Test(groups);
        var b2 = GroupStatisticsTests.Bartlett(summaries);
        Rel(b1.Statistic.Value, b2.Statistic.Value, 1e-10, "Bartlett T");
        Rel(b1.P.Value, b2.P.Value, 1e-9, "Bartlett p");
    }

    public static TheoryData<string> StrdFiles => ["SiRstv", "SmLs01", "SmLs02", "SmLs04", "SmLs05", "SmLs07", "AtmWtAg"];

    /// <summary>
    /// NIST StRD one-way data, cell statistics computed exactly in decimal (as a database computes
    /// DECIMAL sums) and rounded once to double: the certified between/within SS and F to 12 digits.
    /// </summary>
    [Theory]
    [MemberData(nameof(StrdFiles))]
    public void Fit_StrdFromExactCellSums_ReachesTwelveDigits(string name)
    {
        var rows = File.ReadAllLines(ReferenceFiles.PathOf("nist-strd-anova", name + ".dat")).Skip(60)
            .Where(l => l.Trim().Length > 0)
            .Select(l => l.Split(' ', StringSplitOptions.RemoveEmptyEntries))
            .ToArray();
        var levels = rows.Select(r => r[0]).Distinct().ToList();
        var centre = decimal.Parse(rows[0][1], NumberStyles.Float, CultureInfo.InvariantCulture);
        var cells = levels.Select((level, g) =>
        {
            var d = rows.Where(r => r[0] == level).Select(r => decimal.Parse(r[1], NumberStyles.Float, CultureInfo.InvariantCulture) - centre).ToArray();
            decimal s1 = d.Sum(), s2 = d.Sum(v => v * v);
            var n = d.Length;
            return new CellStatistics([g], n, (double)(s1 / n), (double)(s2 - (s1 * s1 / n)));
        }).ToList();
        var r = CellStatisticsAnova.Fit(new CellAnovaInput([new CellFactor("group", levels)], cells, true, SumOfSquaresType.Marginal, 0.05));
        var c = JsonDocument.Parse(ReferenceFiles.ReadAllText("nist-strd-anova", "certified.json"))
            .RootElement.GetProperty("datasets").GetProperty(name).GetProperty("certified");
        double Cert(string key) => double.Parse(c.GetProperty(key).GetString()!, NumberStyles.Float, CultureInfo.InvariantCulture);
        Accuracy.AssertLre(r.Terms[0].SumOfSquares, Cert("between_ss"), 12, name + " between SS");
        Accuracy.AssertLre(r.ResidualSumOfSquares, Cert("within_ss"), 12, name + " within SS");
        Accuracy.AssertLre(r.Terms[0].F.Value, Cert("f_statistic"), 12, name + " F");
        Assert.Equal(Cert("between_df"), r.Terms[0].Df);
        Assert.Equal(Cert("within_df"), r.ResidualDf);
    }

    /// <summary>
    /// NIST StRD one-way data, the cells' exact decimal sums (<see cref="ExactCellSums"/>) beside
    /// their rounded statistics: every certified digit of the between and within SS (LRE ≥ 14.5 of the
    /// 15 printed), the "higher difficulty" SmLs07 (offset 10^12) included, as on the rows (the larger files,
    /// SmLs03, 06, 08 and 09, go through the whole pipeline in StudyPress.Tests' NistStrdTests).
    /// </summary>
    [Theory]
    [MemberData(nameof(StrdFiles))]
    public void Fit_StrdWithExactCellSums_MatchesEveryCertifiedDigit(string name)
    {
        var rows = File.ReadAllLines(ReferenceFiles.PathOf("nist-strd-anova", name + ".dat")).Skip(60)
            .Where(l => l.Trim().Length > 0)
            .Select(l => l.Split(' ', StringSplitOptions.RemoveEmptyEntries))
            .ToArray();
        var levels = rows.Select(r => r[0]).Distinct().ToList();
        var codes = rows.Select(r => levels.IndexOf(r[0])).ToArray();
        var centre = decimal.Parse(rows[0][1], NumberStyles.Float, CultureInfo.InvariantCulture);
        var values = rows.Select(r => decimal.Parse(r[1], NumberStyles.Float, CultureInfo.InvariantCulture)).ToArray();
        var scale = values.Max(v => v.Scale);
        var mantissas = values.Select(v => (long)(v * (decimal)Math.Pow(10, scale))).ToArray();
        var centred = values.Select(v => (double)(v - centre)).ToArray();
        var cells = levels.Select((_, g) => CellStatistics.Of([g], centred.Where((_, i) => codes[i] == g).ToArray())).ToList();
        var input = new CellAnovaInput([new CellFactor("group", levels)], cells, true, SumOfSquaresType.Marginal, 0.05)
        {
            Exact = ExactSums.Cells(new ScaledIntegers(mantissas, scale), codes, levels.Count),
        };
        var r = CellStatisticsAnova.Fit(input);
        var c = JsonDocument.Parse(ReferenceFiles.ReadAllText("nist-strd-anova", "certified.json"))
            .RootElement.GetProperty("datasets").GetProperty(name).GetProperty("certified");
        double Cert(string key) => double.Parse(c.GetProperty(key).GetString()!, NumberStyles.Float, CultureInfo.InvariantCulture);
        Accuracy.AssertLre(r.Terms[0].SumOfSquares, Cert("between_ss"), 14.5, name + " between SS (NIST StRD certified)");
        Accuracy.AssertLre(r.ResidualSumOfSquares, Cert("within_ss"), 14.5, name + " within SS (NIST StRD certified)");
        Accuracy.AssertLre(r.Terms[0].F.Value, Cert("f_statistic"), 14.5, name + " F (NIST StRD certified)");
    }

    /// <summary>
    /// The level means from the cells are those from the rows (<see cref="AnovaMeans.Compute"/>):
    /// counts equal, raw and least-squares means to 1e-12 relative (JAHANMI2, unbalanced subset,
    /// two and three factors, with and without interactions).
    /// </summary>
    [Theory]
    [InlineData(new[] { "lab" }, false)]
    [InlineData(new[] { "table_speed_x1", "batch" }, true)]
    [InlineData(new[] { "table_speed_x1", "batch" }, false)]
    [InlineData(new[] { "table_speed_x1", "down_feed_rate_x2", "batch" }, true)]
    public void LevelMeans_MatchTheRowMeans(string[] factors, bool interactions)
    {
        var input = FactorialTestData.JahanmiInput(factors, interactions, SumOfSquaresType.Hierarchical, FactorialTestData.UnbalancedRow);
        var rows = AnovaMeans.Compute(input).Factors;
        var cells = CellStatisticsAnova.LevelMeans(CellsOf(input));
        Assert.Equal(rows.Count, cells.Count);
        for (var f = 0; f < rows.Count; f++)
        {
            Assert.Equal(rows[f].Factor, cells[f].Factor);
            Assert.Equal(rows[f].Levels.Count, cells[f].Levels.Count);
            for (var l = 0; l < rows[f].Levels.Count; l++)
            {
                var a = rows[f].Levels[l];
                var b = cells[f].Levels[l];
                Assert.Equal(a.Level, b.Level);
                Assert.Equal(a.Count, b.Count);
                Assert.Equal(a.RawMean.IsDefined, b.RawMean.IsDefined);
                if (a.RawMean.IsDefined)
                {
                    // The means are centred near zero: compare on the scale of the response's spread.
                    Assert.True(Math.Abs(a.RawMean.Value - b.RawMean.Value) <= 1e-12 * 100, a.Level + " raw mean");
                    Assert.True(Math.Abs(a.LeastSquaresMean.Value - b.LeastSquaresMean.Value) <= 1e-12 * 100, a.Level + " least-squares mean");
                }
            }
        }
    }

    [Fact]
    public void Fit_RejectsDuplicateCells()
    {
        var f = new CellFactor("a", ["x", "y"]);
        Assert.Throws<ArgumentException>(() => CellStatisticsAnova.Fit(new CellAnovaInput([f], [new CellStatistics([0], 2, 0, 1), new CellStatistics([0], 2, 1, 1)], true, SumOfSquaresType.Marginal, 0.05)));
    }

    /// <summary>Per-cell count, mean (two-pass) and within SS of an input's rows.</summary>
    internal static CellAnovaInput CellsOf(AnovaInput input)
    {
        var k = input.Factors.Count;
        var groups = Enumerable.Range(0, input.Response.Length)
            .GroupBy(i => string.Join(",", input.Factors.Select(f => f.Codes[i])), StringComparer.Ordinal)
            .Select(g =>
            {
                var v = g.Select(i => input.Response[i]).ToArray();
                var m = v.Average();
                m += v.Sum(x => x - m) / v.Length;
                return new CellStatistics([.. input.Factors.Select(f => f.Codes[g.First()])], v.Length, m, v.Sum(x => (x - m) * (x - m)));
            })
            .OrderBy(c => string.Join(",", c.Levels), StringComparer.Ordinal)
            .ToList();
        _ = k;
        return new CellAnovaInput([.. input.Factors.Select(f => new CellFactor(f.Name, f.Levels))], groups, input.Interactions, input.SsType, input.Alpha);
    }

    private static void AssertSameTable(AnovaResult rows, CellAnovaResult cells)
    {
        Assert.Equal(rows.Terms.Count, cells.Terms.Count);
        for (var t = 0; t < rows.Terms.Count; t++)
        {
            var a = rows.Terms[t];
            var b = cells.Terms[t];
            Assert.Equal(a.Name, b.Name);
            Assert.Equal(a.Factors, b.Factors);
            Assert.Equal(a.Df, b.Df);
            Rel(a.SumOfSquares, b.SumOfSquares, Tight, a.Name + " SS");
            Rel(a.F.Value, b.F.Value, Tight, a.Name + " F");
            Rel(a.P.Value, b.P.Value, 1e-10, a.Name + " p");
            Rel(a.PartialEtaSquared.Value, b.PartialEtaSquared.Value, Tight, a.Name + " partial eta2");
            Rel(a.OmegaSquared.Value, b.OmegaSquared.Value, 1e-11, a.Name + " omega2");
        }

        Assert.Equal(rows.ResidualDf, cells.ResidualDf);
        Assert.Equal(rows.TotalDf, cells.TotalDf);
        Rel(rows.ResidualSumOfSquares, cells.ResidualSumOfSquares, Tight, "residual SS");
        Rel(rows.TotalSumOfSquares, cells.TotalSumOfSquares, Tight, "total SS");
    }

    private static void Rel(double expected, double actual, double tol, string what)
    {
        var scale = Math.Max(Math.Abs(expected), 1e-300);
        Assert.True(Math.Abs(expected - actual) <= tol * scale, string.Create(CultureInfo.InvariantCulture, $"{what}: expected {expected:R}, got {actual:R} (relative error {Math.Abs(expected - actual) / scale:E2})"));
    }
}
