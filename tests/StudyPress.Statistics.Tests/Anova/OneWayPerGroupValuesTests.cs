using StudyPress.Statistics.Anova;

namespace StudyPress.Statistics.Tests.Anova;

/// <summary>
/// The one-way fit keeps fitted values and leverages per group (read through the codes): each
/// observation's entries are its group's mean and 1/n_g (exact hand computation on small data).
/// </summary>
public class OneWayPerGroupValuesTests
{
    [Fact]
    public void FittedAndLeverages_AreTheGroupsMeansAndInverseCounts()
    {
        // Groups: a = {1, 2, 3} (mean 2), b = {10, 14} (mean 12), in interleaved row order.
        double[] y = [1, 10, 2, 14, 3];
        int[] codes = [0, 1, 0, 1, 0];
        var r = FactorialAnova.Fit(new AnovaInput(y, [new FactorColumn("g", codes, ["a", "b"])], false, SumOfSquaresType.Sequential, 0.05));
        Assert.Equal(5, r.Fitted.Count);
        Assert.Equal(5, r.Leverages.Count);
        Assert.Equal([2.0, 12, 2, 12, 2], r.Fitted.ToArray());
        Assert.Equal([1.0 / 3, 0.5, 1.0 / 3, 0.5, 1.0 / 3], r.Leverages.ToArray());
        Assert.Equal([-1.0, -2, 0, 2, 1], r.Residuals);
        for (var i = 0; i < y.Length; i++)
        {
            Assert.Equal(y[i], r.Fitted[i] + r.Residuals[i]);
        }
    }

    [Fact]
    public void Factorial_FittedAndLeverages_ReadThroughTheCells()
    {
        // Two crossed factors with interaction: the fitted value is the cell mean, the leverage 1/n_cell.
        double[] y = [1, 3, 10, 20, 5, 7, 9, 0];
        var a = new FactorColumn("a", [0, 0, 0, 0, 1, 1, 1, 1], ["a1", "a2"]);
        var b = new FactorColumn("b", [0, 0, 1, 1, 0, 0, 1, 1], ["b1", "b2"]);
        var r = FactorialAnova.Fit(new AnovaInput(y, [a, b], true, SumOfSquaresType.Hierarchical, 0.05));
        double[] cellMeans = [2, 2, 15, 15, 6, 6, 4.5, 4.5];
        for (var i = 0; i < y.Length; i++)
        {
            Assert.Equal(cellMeans[i], r.Fitted[i], 12);
            Assert.Equal(0.5, r.Leverages[i], 12);
        }
    }
}
