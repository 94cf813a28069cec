using StudyPress.Statistics.Anova;
using StudyPress.Statistics.FollowUp;
using StudyPress.Statistics.PostHoc;
using StudyPress.Statistics.Tests.Support;

namespace StudyPress.Statistics.Tests.FollowUp;

/// <summary>
/// Comparisons of adjusted means from ONE fitted analysis of covariance (<see cref="AdjustedMeansFamily"/>,
/// <see cref="AdjustedComparisons"/>): the same bits as fitting again with each method, the
/// family's covariance against the adjusted means' own, and Dunnett-type comparisons with a control
/// against the exact product-correlation Dunnett (balanced covariate) and nested quadrature
/// (Rutherford 2001, correlations by exact hand formulas).
/// </summary>
public class AdjustedComparisonsTests
{
    private static FactorColumn Factor(string name, string[] labels)
    {
        var levels = labels.Distinct().ToList();
        return new FactorColumn(name, [.. labels.Select(l => levels.IndexOf(l))], levels);
    }

    private static (AncovaInput Input, string[][] Rows) Rutherford()
    {
        var (_, rows) = ReferenceCsv.Read("ancova", "rutherford-2001-ancova.csv");
        var input = new AncovaInput(
            [.. rows.Select(r => ReferenceCsv.Number(r[3]))],
            [Factor("A", [.. rows.Select(r => r[1])])],
            [new CovariateColumn("cov", [.. rows.Select(r => ReferenceCsv.Number(r[2]))])],
            false,
            SumOfSquaresType.Hierarchical,
            0.05);
        return (input, [.. rows]);
    }

    private static AncovaInput Icta()
    {
        var (_, rows) = ReferenceCsv.Read("ancova", "icta-maize-stand.csv");
        return new AncovaInput(
            [.. rows.Select(r => ReferenceCsv.Number(r[3]))],
            [Factor("block", [.. rows.Select(r => r[1])]), Factor("cultivar", [.. rows.Select(r => r[0])])],
            [new CovariateColumn("plants", [.. rows.Select(r => ReferenceCsv.Number(r[2]))])],
            false,
            SumOfSquaresType.Hierarchical,
            0.05)
        { TreatmentFactors = ["cultivar"] };
    }

    // Regression: the posthoc of an ANCOVA used to fit the model again for Tukey; every method from
    // the one fit gives exactly the comparisons of a fit made with that method.
    [Theory]
    [InlineData(AdjustedMeansComparison.Holm)]
    [InlineData(AdjustedMeansComparison.TukeyKramer)]
    [InlineData(AdjustedMeansComparison.Bonferroni)]
    public void EveryMethod_FromOneFit_SameBitsAsAFitWithThatMethod(AdjustedMeansComparison method)
    {
        foreach (var (input, factor) in new[] { (Rutherford().Input, "A"), (Icta(), "cultivar") })
        {
            var once = Ancova.Fit(input);
            var refit = Ancova.Fit(input with { Comparisons = method });
            Assert.Equal(refit.Comparisons, AdjustedComparisons.Pairwise(once.Family(factor), method, input.Alpha));
        }
    }

    [Fact]
    public void Family_MeansAndCovariance_AreTheAdjustedMeansOwn()
    {
        var fit = Ancova.Fit(Icta());
        var family = fit.Family("cultivar");
        var term = fit.AdjustedMeans.Terms.Single(t => t.Term == "cultivar");
        Assert.Equal(term.Means.Select(m => m.Mean.Value), family.Means);
        Assert.Equal(14, family.ErrorDf);
        var cov = family.Covariance;
        for (var a = 0; a < family.Count; a++)
        {
            Assert.Equal(term.Means[a].Se.Value * term.Means[a].Se.Value, cov[a, a], 12);
            for (var b = 0; b < family.Count; b++)
            {
                Assert.Equal(fit.AdjustedMeans.ErrorMeanSquare * term.UnitCovariance[a, b], cov[a, b], 14);
                if (a != b)
                {
                    // Var(mean a − mean b) = C_aa + C_bb − 2 C_ab (exact in arithmetic).
                    var v = family.ErrorMeanSquare * family.DifferenceUnitVariance(a, b);
                    Assert.Equal(cov[a, a] + cov[b, b] - (2 * cov[a, b]), v, 12);
                    Assert.Equal(family.Means[a] - family.Means[b], family.Difference(a, b), 12);
                }
            }
        }

        Assert.Throws<ArgumentException>(() => fit.Family("block"));
    }

    // A covariate with the same mean in every group leaves the adjusted means uncorrelated with
    // variances σ²/n_i (Var = σ² (1/n_i + (x̄_i − x̄)²/E_xx)), so the comparisons with a control have
    // Dunnett's product correlation: the quasi-Monte Carlo result must equal the exact Dunnett
    // integral (PostHoc/Dunnett.cs) on the same means, MSE and df, to the stated accuracy.
    [Theory]
    [InlineData(DunnettAlternative.TwoSided)]
    [InlineData(DunnettAlternative.Greater)]
    [InlineData(DunnettAlternative.Less)]
    public void BalancedCovariate_ControlComparisons_EqualExactDunnett(DunnettAlternative direction)
    {
        int[] sizes = [4, 5, 6, 7];
        var y = new List<double>();
        var x = new List<double>();
        var g = new List<string>();
        double[] shift = [10, 12.5, 9, 13];
        for (var k = 0; k < sizes.Length; k++)
        {
            for (var i = 0; i < sizes[k]; i++)
            {
                // Covariate symmetric about 20 in every group (same mean); response with a slope and noise-like wiggle.
                var xi = 20 + (i - ((sizes[k] - 1) / 2.0));
                x.Add(xi);
                y.Add(shift[k] + (0.4 * xi) + (((i * 7) + (k * 3)) % 5 * 0.6));
                g.Add("g" + k.ToString(System.Globalization.CultureInfo.InvariantCulture));
            }
        }

        var input = new AncovaInput([.. y], [Factor("g", [.. g])], [new CovariateColumn("x", [.. x])], false, SumOfSquaresType.Hierarchical, 0.05);
        var fit = Ancova.Fit(input);
        var family = fit.Family("g");
        var result = AdjustedComparisons.WithControl(family, "g0", direction, 0.05);
        var summaries = Enumerable.Range(0, 4).Select(k => new GroupStatistics(sizes[k], family.Means[k], 0)).ToList();
        var exact = Dunnett.CompareFromSummaries(family.Levels, summaries, family.ErrorMeanSquare, family.ErrorDf, 0.05, "g0", direction);
        Assert.Equal(3, result.Comparisons.Count);
        for (var i = 0; i < 3; i++)
        {
            var ours = result.Comparisons[i];
            var theirs = exact.Comparisons[i];
            Assert.Equal(theirs.LevelA, ours.LevelA);
            Assert.Equal(theirs.Diff, ours.Diff, 10);
            Assert.Equal(theirs.Se.Value, ours.Se.Value, 10);
            Assert.True(Math.Abs(theirs.PAdjusted.Value - ours.PAdjusted.Value) <= 2e-5, $"p {ours.PAdjusted.Value} vs exact {theirs.PAdjusted.Value}");
        }

        Assert.True(Math.Abs(exact.CriticalValue.Value - result.CriticalValue.Value) <= 2e-4 * exact.CriticalValue.Value, $"critical {result.CriticalValue.Value} vs exact {exact.CriticalValue.Value}");
        Assert.True(result.Error <= 1e-4);
    }

    // Rutherford (2001) one-way ANCOVA, control level 1: the two comparisons' correlation by the
    // exact hand formula Cov(d_1, d_2) = σ² (1/n_0 + (x̄_1 − x̄_0)(x̄_2 − x̄_0)/E_xx),
    // Var(d_i) = σ² (1/n_i + 1/n_0 + (x̄_i − x̄_0)²/E_xx) (E_xx the pooled within-group SS of the
    // covariate), and the adjusted p-values and critical value by nested quadrature of the bivariate t.
    [Fact]
    public void Rutherford_ControlComparisons_MatchNestedQuadrature()
    {
        var (input, rows) = Rutherford();
        var fit = Ancova.Fit(input);
        var family = fit.Family("A");
        var result = AdjustedComparisons.WithControl(family, "1", DunnettAlternative.TwoSided, 0.05);
        var groups = rows.GroupBy(r => r[1]).OrderBy(x => x.Key, StringComparer.Ordinal).Select(x => x.Select(r => ReferenceCsv.Number(r[2])).ToArray()).ToArray();
        var means = groups.Select(a => a.Average()).ToArray();
        var exx = groups.Sum(a => a.Sum(v => (v - a.Average()) * (v - a.Average())));
        double V(int i) => (1.0 / groups[i].Length) + (1.0 / groups[0].Length) + ((means[i] - means[0]) * (means[i] - means[0]) / exx);
        var cov12 = (1.0 / groups[0].Length) + ((means[1] - means[0]) * (means[2] - means[0]) / exx);
        var rho = cov12 / Math.Sqrt(V(1) * V(2));
        var r = new double[,] { { 1, rho }, { rho, 1 } };
        Assert.Equal(rho, AdjustedComparisons.ControlCorrelation(family, 0)[0, 1], 12);
        foreach (var c in result.Comparisons)
        {
            var h = Math.Abs(c.T.Value);
            var expected = 1 - NestedQuadrature.T(r, 20, [-h, -h], [h, h]);
            var exact = Math.Clamp(expected, Probability.TTwoSided(h, 20), 2 * Probability.TTwoSided(h, 20));
            Assert.True(Math.Abs(exact - c.PAdjusted.Value) <= 2e-5, $"{c.LevelA}: p {c.PAdjusted.Value} vs quadrature {exact}");
        }

        var cv = result.CriticalValue.Value;
        Assert.Equal(0.05, 1 - NestedQuadrature.T(r, 20, [-cv, -cv], [cv, cv]), 4);
    }

    private static AdjustedMeansFamily ManyLevels(int k)
    {
        // Three observations per level; the covariate's level means differ, so the correlations are general.
        var y = new List<double>();
        var x = new List<double>();
        var g = new List<string>();
        for (var a = 0; a < k; a++)
        {
            for (var i = 0; i < 3; i++)
            {
                var xi = 10 + (a % 7 * 0.4) + (i * 0.9) + ((((a * 13) + (i * 7)) % 11) * 0.05);
                x.Add(xi);
                y.Add(5 + (a % 4 * 0.3) + (0.5 * xi) + ((((a * 5) + (i * 3)) % 7) * 0.4));
                g.Add("L" + a.ToString("D2", System.Globalization.CultureInfo.InvariantCulture));
            }
        }

        var input = new AncovaInput([.. y], [Factor("g", [.. g])], [new CovariateColumn("x", [.. x])], false, SumOfSquaresType.Hierarchical, 0.05);
        return Ancova.Fit(input).Family("g");
    }

    // Regression (issue #16): 48 levels ended in an internal error (46 lattice generators), and
    // without that limit the integration ran for many minutes (47 p-values and the critical value's
    // search, each up to 64,000 points per shift of a 47-dimensional integrand). Now every
    // rectangle is bounded by MultivariateT.WorkLimit, and when the first one (at the Bonferroni
    // quantile) cannot reach the required accuracy nothing more is integrated: the result says so.
    [Theory]
    [InlineData(48, DunnettAlternative.TwoSided)]
    [InlineData(60, DunnettAlternative.TwoSided)]
    [InlineData(48, DunnettAlternative.Greater)]
    public void ManyLevels_StopWithinTheWorkLimit_AndSayTheAccuracyWasMissed(int k, DunnettAlternative direction)
    {
        var result = AdjustedComparisons.WithControl(ManyLevels(k), "L00", direction, 0.05);
        Assert.False(result.Accurate);
        Assert.Empty(result.Comparisons);
        Assert.False(result.CriticalValue.IsDefined);
        Assert.True(result.Error > AdjustedComparisons.RequiredAccuracy, $"error {result.Error:E2}");
    }

    // A family small enough for the work limit reaches the required accuracy and says so.
    [Fact]
    public void FewLevels_ReachTheRequiredAccuracy()
    {
        var result = AdjustedComparisons.WithControl(ManyLevels(5), "L00", DunnettAlternative.TwoSided, 0.05);
        Assert.True(result.Accurate);
        Assert.Equal(4, result.Comparisons.Count);
        Assert.InRange(result.Error, 0, AdjustedComparisons.RequiredAccuracy);
    }
}
