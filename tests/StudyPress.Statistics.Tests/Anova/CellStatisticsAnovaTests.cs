using System.Globalization;
using System.Text.Json;
using StudyPress.Statistics.Anova;
using StudyPress.Statistics.Assumptions;
using StudyPress.Statistics.Tests.Support;

namespace StudyPress.Statistics.Tests.Anova;

/// <summary>
/// The ANOVA from per-cell counts, means and sums of squares must give the table the row fit gives
/// (FactorialAnova.Fit / OneWayAnova.Fit on the same data: JAHANMI2 from the NIST/SEMATECH
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

    [Fact]
    public void Fit_OneFactor_MatchesOneWayAnova()
    {
        var input = FactorialTestData.JahanmiInput(["lab"], false, SumOfSquaresType.Sequential, FactorialTestData.UnbalancedRow);
        AssertSameTable(OneWayAnova.Fit(input.Response, input.Factors[0], 0.05), CellStatisticsAnova.Fit(CellsOf(input)));
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
