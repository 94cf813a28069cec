using System.Globalization;
using System.Text.Json;
using StudyPress.Statistics.Anova;
using StudyPress.Statistics.Tests.Support;

namespace StudyPress.Statistics.Tests.Anova;

/// <summary>
/// NIST/SEMATECH e-Handbook 1.3.5.5 (Multi-factor ANOVA, JAHANMI2): balanced 2x2x2x2 main-effects
/// model. Published values carry single-precision error, so the reference README's tolerances
/// apply: relative 1e-4 (LRE 4) for SS, MS and F, 1e-6 (LRE 6) for means.
/// </summary>
public sealed class FactorialAnovaJahanmi2Tests
{
    private static readonly string[] Columns = ["table_speed_x1", "down_feed_rate_x2", "wheel_grit_x3", "batch"];

    private static readonly string[] Keys = ["table_speed", "down_feed_rate", "wheel_grit_size", "batch"];

    private static JsonElement Expected =>
        JsonDocument.Parse(ReferenceFiles.ReadAllText("nist-ehandbook", "eda355-multifactor-anova-jahanmi2.expected.json")).RootElement;

    private static double Num(JsonElement e) => double.Parse(e.GetString()!, NumberStyles.Float, CultureInfo.InvariantCulture);

    public static TheoryData<SumOfSquaresType> Types => [SumOfSquaresType.Sequential, SumOfSquaresType.Hierarchical, SumOfSquaresType.Marginal];

    [Theory]
    [MemberData(nameof(Types))]
    public void Fit_Jahanmi2MainEffects_MatchesHandbookTable(SumOfSquaresType type)
    {
        var result = FactorialAnova.Fit(FactorialTestData.JahanmiInput(Columns, interactions: false, type));
        var published = Expected.GetProperty("published");
        Assert.Equal(4, result.Terms.Count);
        for (var t = 0; t < 4; t++)
        {
            var row = published.GetProperty(Keys[t]);
            var term = result.Terms[t];
            Assert.Equal(Columns[t], term.Name);
            Assert.Equal(1, term.Df);
            Accuracy.AssertLre(term.SumOfSquares, Num(row.GetProperty("ss")), 4, Keys[t] + " SS (e-Handbook 1.3.5.5)");
            Accuracy.AssertLre(term.MeanSquare.Value, Num(row.GetProperty("ms")), 4, Keys[t] + " MS (e-Handbook 1.3.5.5)");
            Accuracy.AssertLre(term.F.Value, Num(row.GetProperty("f")), 4, Keys[t] + " F (e-Handbook 1.3.5.5)");
            Accuracy.AssertRoundsTo(term.FCritical.Value, published.GetProperty("critical_F_upper_alpha_0.05_df_1_475").GetString()!, "critical F (e-Handbook 1.3.5.5)");
        }

        var res = published.GetProperty("residual");
        Assert.Equal(475, result.ResidualDf);
        Assert.Equal(479, result.TotalDf);
        Accuracy.AssertLre(result.ResidualSumOfSquares, Num(res.GetProperty("ss")), 4, "residual SS (e-Handbook 1.3.5.5)");
        Accuracy.AssertLre(result.ResidualMeanSquare.Value, Num(res.GetProperty("ms")), 4, "residual MS (e-Handbook 1.3.5.5)");
        Accuracy.AssertLre(result.TotalSumOfSquares, Num(published.GetProperty("total_corrected").GetProperty("ss")), 4, "total SS (e-Handbook 1.3.5.5)");
        Accuracy.AssertLre(Math.Sqrt(result.ResidualMeanSquare.Value), Num(published.GetProperty("residual_sd")), 4, "residual SD (e-Handbook 1.3.5.5)");

        // Conclusion printed by the handbook: table speed and batch significant at 5 %, the others not.
        Assert.True(result.Terms[0].P.Value < 0.05);
        Assert.True(result.Terms[1].P.Value > 0.05);
        Assert.True(result.Terms[2].P.Value > 0.05);
        Assert.True(result.Terms[3].P.Value < 0.05);
    }

    [Fact]
    public void Fit_Jahanmi2MainEffects_MatchesExactRecomputation()
    {
        // Not published: the collection's exact rational recomputation from the same data
        // (printed to 10-12 significant digits), which a double-precision QR should reach to ~9 digits.
        var result = FactorialAnova.Fit(FactorialTestData.JahanmiInput(Columns, interactions: false, SumOfSquaresType.Marginal));
        var exact = Expected.GetProperty("exact_recomputation");
        for (var t = 0; t < 4; t++)
        {
            var row = exact.GetProperty("factors").GetProperty(Keys[t]);
            Accuracy.AssertLre(result.Terms[t].SumOfSquares, Num(row.GetProperty("ss")), 9, Keys[t] + " SS (exact recomputation)");
            Accuracy.AssertLre(result.Terms[t].F.Value, Num(row.GetProperty("f")), 9, Keys[t] + " F (exact recomputation)");
        }

        Accuracy.AssertLre(result.ResidualSumOfSquares, Num(exact.GetProperty("residual_ss")), 9, "residual SS (exact recomputation)");
        Accuracy.AssertLre(result.TotalSumOfSquares, Num(exact.GetProperty("total_ss")), 9, "total SS (exact recomputation)");
    }

    [Fact]
    public void Means_Jahanmi2_LevelMeansMatchHandbook()
    {
        var input = FactorialTestData.JahanmiInput(Columns, interactions: false, SumOfSquaresType.Marginal);
        var means = AnovaMeans.Compute(input);
        var published = Expected.GetProperty("published").GetProperty("level_means");
        var centre = (double)FactorialTestData.JahanmiCentre;
        for (var t = 0; t < 4; t++)
        {
            var fm = means.Factors[t];
            Assert.Equal(Columns[t], fm.Factor);
            foreach (var level in fm.Levels)
            {
                var expected = Num(published.GetProperty(Keys[t]).GetProperty(level.Level));
                Assert.Equal(240, level.Count);
                Accuracy.AssertLre(level.RawMean.Value + centre, expected, 6, Keys[t] + " " + level.Level + " raw mean (e-Handbook 1.3.5.5)");

                // Balanced design: least-squares means equal the raw means.
                Accuracy.AssertLre(level.LeastSquaresMean.Value + centre, expected, 6, Keys[t] + " " + level.Level + " LS mean (e-Handbook 1.3.5.5)");
            }
        }

        Assert.Equal(16, means.Cells.Count);
        Assert.All(means.Cells, c => Assert.Equal(30, c.Count));
    }

    [Fact]
    public void LevelMeansFromCells_Jahanmi2_MatchHandbook()
    {
        // The means the compiler reports: from the cells the model is fitted from.
        var input = FactorialTestData.JahanmiInput(Columns, interactions: false, SumOfSquaresType.Marginal);
        var means = CellStatisticsAnova.LevelMeans(FactorialAnova.Cells(input).Cells);
        var published = Expected.GetProperty("published").GetProperty("level_means");
        var centre = (double)FactorialTestData.JahanmiCentre;
        for (var t = 0; t < 4; t++)
        {
            var fm = means[t];
            Assert.Equal(Columns[t], fm.Factor);
            foreach (var level in fm.Levels)
            {
                var expected = Num(published.GetProperty(Keys[t]).GetProperty(level.Level));
                Assert.Equal(240, level.Count);
                Accuracy.AssertLre(level.RawMean.Value + centre, expected, 6, Keys[t] + " " + level.Level + " raw mean (e-Handbook 1.3.5.5)");
                Accuracy.AssertLre(level.LeastSquaresMean.Value + centre, expected, 6, Keys[t] + " " + level.Level + " LS mean (e-Handbook 1.3.5.5)");
            }
        }
    }
}
