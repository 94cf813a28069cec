using StudyPress.Statistics.Anova;
using StudyPress.Statistics.FollowUp;
using StudyPress.Statistics.Tests.Support;

namespace StudyPress.Statistics.Tests.FollowUp;

// Yates (1935) oats split-plot (Reference/split-plot/yates-oats.csv): 6 blocks, 3 varieties on
// whole plots, 4 nitrogen levels on sub-plots. Values from the exact recomputation in
// yates-oats-split-plot.expected.json (exact fractions, 12 digits; not published).
public class SplitPlotFollowUpTests
{
    private static AnovaInput Oats()
    {
        var (_, rows) = ReferenceCsv.Read("split-plot", "yates-oats.csv");
        FactorColumn Factor(string name, int col)
        {
            var levels = rows.Select(r => r[col]).Distinct().Order(StringComparer.Ordinal).ToList();
            return new FactorColumn(name, [.. rows.Select(r => levels.IndexOf(r[col]))], levels);
        }

        return new AnovaInput([.. rows.Select(r => ReferenceCsv.Number(r[3]))], [Factor("block", 0), Factor("variety", 1), Factor("nitrogen", 2)], true, SumOfSquaresType.Hierarchical, 0.05);
    }

    // Variety means on the whole-plot error (block x variety, MS 601.330555556 on 10 df): the
    // means are 104.5, 109.791666667, 97.625 (exact recomputation) and, the design being balanced,
    // SE = sqrt(601.330555556 / 24) with 24 sub-plots per variety (exact hand computation).
    [Fact]
    public void VarietyMeans_OnWholePlotError()
    {
        var r = EstimatedMarginalMeans.ComputeWithError(Oats(), 601.330555556, 10, terms: [["variety"]]);
        var means = r.Terms[0].Means;
        Assert.Equal(["Golden.rain", "Marvellous", "Victory"], means.Select(m => m.Levels[0]));
        Accuracy.AssertLre(means[0].Mean.Value, 104.5, 12, "Golden.rain");
        Accuracy.AssertLre(means[1].Mean.Value, 109.791666667, 11, "Marvellous");
        Accuracy.AssertLre(means[2].Mean.Value, 97.625, 12, "Victory");
        Assert.All(means, m => Accuracy.AssertLre(m.Se.Value, Math.Sqrt(601.330555556 / 24), 12, "se"));
        Assert.All(means, m => Assert.Equal(10, m.Df.Value));
    }

    // Nitrogen trends on the sub-plot error (MS 177.083333333 on 45 df) from the nitrogen means
    // (18 sub-plots each): linear SS 19536.4 (F 110.3232, p 1.091379962e-13), quadratic 480.5
    // (p 0.1064744984), cubic 3.6 (p 0.8872574086); they add up to the nitrogen SS 20020.5.
    [Fact]
    public void NitrogenTrends_OnSubPlotError()
    {
        var r = EstimatedMarginalMeans.ComputeWithError(Oats(), 177.083333333333333, 45, terms: [["nitrogen"]]);
        var means = r.Terms[0].Means.Select(m => m.Mean.Value).ToArray();
        var family = Contrasts.Trends([0, 0.2, 0.4, 0.6], means, [18, 18, 18, 18], 177.083333333333333, 45, 3, ContrastAdjustment.None, 0.05);
        Accuracy.AssertLre(family.Contrasts[0].SumOfSquares.Value, 19536.4, 11, "linear SS");
        Accuracy.AssertLre(family.Contrasts[0].F.Value, 110.3232, 10, "linear F");
        Accuracy.AssertLre(family.Contrasts[0].P.Value, 1.091379962e-13, 8, "linear p");
        Accuracy.AssertLre(family.Contrasts[1].SumOfSquares.Value, 480.5, 10, "quadratic SS");
        Accuracy.AssertLre(family.Contrasts[1].P.Value, 0.1064744984, 8, "quadratic p");
        Accuracy.AssertLre(family.Contrasts[2].SumOfSquares.Value, 3.6, 9, "cubic SS");
        Accuracy.AssertLre(family.Contrasts[2].P.Value, 0.8872574086, 8, "cubic p");
        Accuracy.AssertLre(family.Contrasts.Sum(c => c.SumOfSquares.Value), 20020.5, 10, "sum = nitrogen SS");
    }
}
