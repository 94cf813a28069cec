using StudyPress.Statistics.Designs;
using static StudyPress.Statistics.Tests.Designs.DesignReference;

namespace StudyPress.Statistics.Tests.Designs;

// Properties over seeded random balanced split plots (deterministic): the strata add up to the
// total, every row's df matches the layout, and where all ANOVA components are positive the REML
// route gives the classical F and df.
public class StrataPropertyTests
{
    [Fact]
    public void RandomSplitPlots_StrataAddUp_AndRemlAgreesWhenInterior()
    {
        var rnd = new Random(20261204);
        var agreed = 0;
        for (var trial = 0; trial < 25; trial++)
        {
            int nb = rnd.Next(2, 6), na = rnd.Next(2, 5), nc = rnd.Next(2, 5);
            var b = new List<string>();
            var a = new List<string>();
            var c = new List<string>();
            var y = new List<double>();
            var blockSd = rnd.NextDouble() * 5;
            var wpSd = rnd.NextDouble() * 5;
            for (var i = 0; i < nb; i++)
            {
                var be = blockSd * (rnd.NextDouble() - 0.5);
                for (var j = 0; j < na; j++)
                {
                    var we = wpSd * (rnd.NextDouble() - 0.5);
                    for (var k = 0; k < nc; k++)
                    {
                        b.Add("b" + i);
                        a.Add("a" + j);
                        c.Add("c" + k);
                        y.Add(1000 + be + we + j + (0.5 * k) + (rnd.NextDouble() - 0.5));
                    }
                }
            }

            DesignFactor[] d = [DesignFactor.Block("B"), DesignFactor.Treatment("A", PlotLevel.WholePlot), DesignFactor.Treatment("C", PlotLevel.SubPlot)];
            var data = new DesignData([.. y], [b, a, c]);
            var r = StrataAnova.Fit(d, data);
            AssertRelative(r.Rows.Sum(x => x.SumOfSquares), r.TotalSumOfSquares, 1e-10, "strata add up");
            Assert.Equal((nb - 1) * (na - 1), r.Row("whole-plot error").Df);
            Assert.Equal(nb * na * (nc - 1) - (nc - 1) - ((na - 1) * (nc - 1)), r.Row("sub-plot error").Df);
            Assert.Equal("whole-plot error", r.Row("A").Stratum);
            Assert.Equal("sub-plot error", r.Row("A:C").Stratum);

            var vc = VarianceComponents.Estimate(r);
            if (vc.Components.All(x => x.Variance > 0))
            {
                var reml = MixedModel.FitReml(d, data);
                Assert.True(reml.Converged, reml.ConvergenceNote);
                foreach (var term in new[] { "A", "C", "A:C" })
                {
                    AssertRelative(reml.Test(term).F.Value, r.Row(term).F.Value, 1e-9, "REML F " + term);
                    AssertRelative(reml.Test(term).DfDenominator.Value, r.Row(term).DfDenominator.Value, 1e-9, "REML df " + term);
                }

                agreed++;
            }
        }

        Assert.True(agreed >= 5, "too few interior cases: " + agreed);
    }
}
