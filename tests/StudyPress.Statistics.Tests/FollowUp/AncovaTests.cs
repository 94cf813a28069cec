using FsCheck;
using FsCheck.Fluent;
using FsCheck.Xunit;
using StudyPress.Statistics.Anova;
using StudyPress.Statistics.FollowUp;
using StudyPress.Statistics.Tests.Support;

namespace StudyPress.Statistics.Tests.FollowUp;

public class AncovaTests
{
    private static FactorColumn Factor(string name, string[] labels)
    {
        var levels = labels.Distinct().ToList();
        return new FactorColumn(name, [.. labels.Select(l => levels.IndexOf(l))], levels);
    }

    private static AncovaInput Icta(SumOfSquaresType type = SumOfSquaresType.Hierarchical)
    {
        var (_, rows) = ReferenceCsv.Read("ancova", "icta-maize-stand.csv");
        return new AncovaInput(
            [.. rows.Select(r => ReferenceCsv.Number(r[3]))],
            [Factor("block", [.. rows.Select(r => r[1])]), Factor("cultivar", [.. rows.Select(r => r[0])])],
            [new CovariateColumn("plants", [.. rows.Select(r => ReferenceCsv.Number(r[2]))])],
            false,
            type,
            0.05)
        { TreatmentFactors = ["cultivar"] };
    }

    private static AncovaInput Rutherford(SumOfSquaresType type = SumOfSquaresType.Hierarchical)
    {
        var (_, rows) = ReferenceCsv.Read("ancova", "rutherford-2001-ancova.csv");
        return new AncovaInput(
            [.. rows.Select(r => ReferenceCsv.Number(r[3]))],
            [Factor("A", [.. rows.Select(r => r[1])])],
            [new CovariateColumn("cov", [.. rows.Select(r => ReferenceCsv.Number(r[2]))])],
            false,
            type,
            0.05);
    }

    // ICTA maize stand, RCBD 6 cultivars x 4 blocks, yield adjusted for plant count (data published,
    // UF00080557 Table II-2). The publication's adjusted analysis rests on a sum of products that is
    // 15.60 off the data (documented discrepancy: b 0.0636, F 2.98 follow from the misprint), so the
    // checks are against the exact recomputation from the data (exact fractions, 12 digits):
    // b = 0.0782145090682, adjusted cultivar SS 6.51037419521 on 5 df, F 4.85980835540 on 5 and 14,
    // p 0.008721619652, error (deviations) SS 3.75098078226 on 14 df.
    [Theory]
    [InlineData(SumOfSquaresType.Hierarchical)]
    [InlineData(SumOfSquaresType.Marginal)]
    public void Icta_AdjustedAnalysis_MatchesExactRecomputation(SumOfSquaresType type)
    {
        var r = Ancova.Fit(Icta(type));
        Assert.Equal(14, r.ResidualDf);
        Accuracy.AssertLre(r.ResidualSumOfSquares, 3.75098078226, 10, "residual SS");
        var cultivar = r.Terms.Single(t => t.Name == "cultivar");
        Assert.Equal(5, cultivar.Df);
        Accuracy.AssertLre(cultivar.SumOfSquares, 6.51037419521, 10, "cultivar SS");
        Accuracy.AssertLre(cultivar.F.Value, 4.85980835540, 10, "cultivar F");
        Accuracy.AssertLre(cultivar.P.Value, 0.008721619652, 9, "cultivar p");
        Accuracy.AssertLre(r.Slopes[0].Estimate, 0.0782145090682, 10, "b");

        // Library recomputation (statsmodels 0.13.5, anova_lm typ=1 with the covariate after the
        // factors): R(plants | block, cultivar) = 6.521265051073574; exact hand computation gives
        // the same as E_xy²/E_xx = 83.376667²/1066.
        var plants = r.Terms.Single(t => t.Name == "plants");
        Accuracy.AssertLre(plants.SumOfSquares, 6.521265051073574, 10, "plants SS");
        Accuracy.AssertLre(plants.SumOfSquares, 83.3766666666666667 * 83.3766666666666667 / 1066, 10, "E_xy²/E_xx");

        // Slope t² equals the covariate's F (exact identity with one df).
        Accuracy.AssertLre(r.Slopes[0].T.Value * r.Slopes[0].T.Value, plants.F.Value, 10, "t² = F");
    }

    // Adjusted means (exact recomputation: ȳ_i - b (x̄_i - x̄)) and the comparison of cultivars 1 and
    // 2 (exact recomputation: s_d² = 0.141566599143, t = 1.94634854247). The publication prints
    // 4.4981 and 3.684 and s_d² 0.2272, which follow from its misprinted sum of products.
    [Fact]
    public void Icta_AdjustedMeans_MatchExactRecomputation()
    {
        var r = Ancova.Fit(Icta());
        var cultivar = r.AdjustedMeans.Terms.Single(t => t.Term == "cultivar");
        double[] expected = [4.41428444861, 3.68196424849, 4.85723394830, 3.22687591203, 3.82544533041, 3.91169611215];
        for (var i = 0; i < 6; i++)
        {
            Assert.Equal((i + 1).ToString(System.Globalization.CultureInfo.InvariantCulture), cultivar.Means[i].Levels[0]);
            Accuracy.AssertLre(cultivar.Means[i].Mean.Value, expected[i], 10, "adjusted mean " + (i + 1).ToString(System.Globalization.CultureInfo.InvariantCulture));
        }

        var c12 = r.Comparisons.Single(c => c.LevelA == "1" && c.LevelB == "2");
        Accuracy.AssertLre(c12.Se.Value * c12.Se.Value, 0.141566599143, 10, "s_d²");
        Accuracy.AssertLre(c12.T.Value, 1.94634854247, 10, "t");
        Assert.Equal(15, r.Comparisons.Count);
        Assert.All(r.Comparisons, c => Assert.Equal("cultivar", c.Factor));
    }

    // Homogeneity of slopes, cultivar x plants added to block + cultivar + plants: library
    // recomputation (statsmodels 0.13.5): F = 5.108106210134745 on 5 and 9 df, p = 0.017008322997030045.
    [Fact]
    public void Icta_HomogeneityOfSlopes_MatchesLibraryRecomputation()
    {
        var h = Ancova.Fit(Icta()).Homogeneity;
        Assert.Equal(5, h.Df1);
        Assert.Equal(9, h.Df2);
        Assert.Equal(["cultivar"], h.Factors);
        Accuracy.AssertLre(h.F.Value, 5.108106210134745, 10, "F");
        Accuracy.AssertLre(h.P.Value, 0.017008322997030045, 9, "p");
    }

    // Rutherford (2001) one-way ANCOVA, 3 groups of 8. Exact recomputation (exact fractions,
    // 12 digits): A adjusted SS 807.816063536 (F 62.8829871228, p 2.364494784e-9), covariate SS
    // 199.536626917 (F 31.0651389773, p 1.866465491e-5), residual 128.463373083 on 20 df, pooled
    // within slope 1.64906303237, adjusted means 9.65644520159, 12.2748438387, 23.0687109597.
    [Theory]
    [InlineData(SumOfSquaresType.Hierarchical)]
    [InlineData(SumOfSquaresType.Marginal)]
    public void Rutherford_MatchesExactRecomputation(SumOfSquaresType type)
    {
        var r = Ancova.Fit(Rutherford(type));
        var a = r.Terms.Single(t => t.Name == "A");
        var cov = r.Terms.Single(t => t.Name == "cov");
        Accuracy.AssertLre(a.SumOfSquares, 807.816063536, 10, "A SS");
        Accuracy.AssertLre(a.F.Value, 62.8829871228, 10, "A F");
        Accuracy.AssertLre(a.P.Value, 2.364494784e-9, 8, "A p");
        Accuracy.AssertLre(cov.SumOfSquares, 199.536626917, 10, "cov SS");
        Accuracy.AssertLre(cov.F.Value, 31.0651389773, 10, "cov F");
        Accuracy.AssertLre(cov.P.Value, 1.866465491e-5, 8, "cov p");
        Accuracy.AssertLre(r.ResidualSumOfSquares, 128.463373083, 10, "residual");
        Assert.Equal(20, r.ResidualDf);
        Accuracy.AssertLre(r.Slopes[0].Estimate, 1.64906303237, 10, "slope");
        double[] adjusted = [9.65644520159, 12.2748438387, 23.0687109597];
        var means = r.AdjustedMeans.Terms[0].Means;
        for (var i = 0; i < 3; i++)
        {
            Accuracy.AssertLre(means[i].Mean.Value, adjusted[i], 10, "adjusted mean");
        }

        // Third-party printed values (Eelbrain's test of Rutherford 2001; not verified against the
        // book), to their printed digits.
        Accuracy.AssertRoundsTo(a.SumOfSquares, "807.82", "A SS printed");
        Accuracy.AssertRoundsTo(a.F.Value, "62.88", "A F printed");
        Accuracy.AssertRoundsTo(cov.SumOfSquares, "199.54", "cov SS printed");
        Accuracy.AssertRoundsTo(cov.F.Value, "31.07", "cov F printed");
        Accuracy.AssertRoundsTo(r.ResidualSumOfSquares, "128.46", "residual printed");
    }

    // Per-observation outputs of the common-slope model, by identities of least squares (exact):
    // fitted + residual = y; the residuals sum to the residual SS; the leverages sum to the number
    // of parameters (trace of the hat matrix; ICTA: intercept + 3 block + 5 cultivar + 1 slope = 10,
    // Rutherford: 1 + 2 + 1 = 4); the residuals are orthogonal to the covariate (normal equations).
    [Fact]
    public void Residuals_FittedAndLeverages_FollowTheLeastSquaresIdentities()
    {
        foreach (var (input, parameters) in new[] { (Icta(), 10), (Rutherford(), 4) })
        {
            var r = Ancova.Fit(input);
            var n = input.Response.Length;
            Assert.Equal(n, r.Residuals.Length);
            for (var i = 0; i < n; i++)
            {
                Assert.Equal(input.Response[i], r.Fitted[i] + r.Residuals[i], 12);
                Assert.InRange(r.Leverages[i], 0.0, 1.0);
            }

            Accuracy.AssertLre(r.Residuals.Sum(e => e * e), r.ResidualSumOfSquares, 11, "residual SS");
            Accuracy.AssertLre(r.Leverages.Sum(), parameters, 12, "trace of the hat matrix");
            var x = input.Covariates[0].Values;
            Assert.Equal(0.0, r.Residuals.Select((e, i) => e * x[i]).Sum(), 9);
        }
    }

    // Standard errors by the one-way ANCOVA formulas (Snedecor and Cochran 1989, ch. 18; exact hand
    // computation from the data): Var(adjusted mean i) = MSE (1/n_i + (x̄_i - x̄)²/E_xx) and
    // Var(difference i - j) = MSE (1/n_i + 1/n_j + (x̄_i - x̄_j)²/E_xx), with group covariate means
    // 46/8, 43/8, 44/8, grand mean 133/24, E_xx = 73.375 (exact recomputation) and
    // MSE = 128.463373083/20; df 20 and t(0.975; 20) intervals.
    [Fact]
    public void Rutherford_StandardErrors_MatchOneWayFormulas()
    {
        var r = Ancova.Fit(Rutherford());
        var mse = 128.463373083 / 20;
        double[] xbar = [46.0 / 8, 43.0 / 8, 44.0 / 8];
        var grand = 133.0 / 24;
        const double exx = 73.375;
        var means = r.AdjustedMeans.Terms[0].Means;
        var t = Probability.TCritical(0.05, 20);
        for (var i = 0; i < 3; i++)
        {
            var se = Math.Sqrt(mse * ((1.0 / 8) + ((xbar[i] - grand) * (xbar[i] - grand) / exx)));
            Accuracy.AssertLre(means[i].Se.Value, se, 9, "se adjusted mean");
            Assert.Equal(20, means[i].Df.Value);
            Accuracy.AssertLre(means[i].CiLow.Value, means[i].Mean.Value - (t * means[i].Se.Value), 12, "low");
        }

        var c13 = r.Comparisons.Single(c => c.LevelA == "1" && c.LevelB == "3");
        Accuracy.AssertLre(c13.Se.Value, Math.Sqrt(mse * ((2.0 / 8) + ((xbar[0] - xbar[2]) * (xbar[0] - xbar[2]) / exx))), 9, "se difference");
    }

    // Homogeneity of slopes: exact recomputation F = 1.60027785192 on 2 and 18, p = 0.2292595014,
    // SS 19.3935568105; third-party printed F 1.60, p .229.
    [Fact]
    public void Rutherford_HomogeneityOfSlopes()
    {
        var h = Ancova.Fit(Rutherford()).Homogeneity;
        Assert.Equal((2, 18), (h.Df1, h.Df2));
        Accuracy.AssertLre(h.SumOfSquares, 19.3935568105, 9, "SS");
        Accuracy.AssertLre(h.F.Value, 1.60027785192, 9, "F");
        Accuracy.AssertLre(h.P.Value, 0.2292595014, 9, "p");
        Accuracy.AssertRoundsTo(h.P.Value, ".229", "p printed");
    }

    // Adjusted-mean comparisons: Holm over the three pairs (definition), Tukey-Kramer style
    // p = P(Q(3, 20) >= √2 |t|); the difference of adjusted means is the difference of the means.
    [Fact]
    public void Rutherford_Comparisons_FollowTheirDefinitions()
    {
        var holm = Ancova.Fit(Rutherford());
        var tukey = Ancova.Fit(Rutherford() with { Comparisons = AdjustedMeansComparison.TukeyKramer });
        var means = holm.AdjustedMeans.Terms[0].Means;
        var raw = holm.Comparisons.Select(c => c.P.Value).ToArray();
        var expectedHolm = StudyPress.Statistics.PostHoc.PValueAdjustment.Holm(raw);
        for (var i = 0; i < 3; i++)
        {
            var c = holm.Comparisons[i];
            var a = means.Single(m => m.Levels[0] == c.LevelA).Mean.Value;
            var b = means.Single(m => m.Levels[0] == c.LevelB).Mean.Value;
            Accuracy.AssertLre(c.Diff, a - b, 12, "diff");
            Accuracy.AssertLre(c.PAdjusted.Value, expectedHolm[i], 14, "Holm");
            var q = Math.Sqrt(2) * Math.Abs(tukey.Comparisons[i].T.Value);
            Accuracy.AssertLre(tukey.Comparisons[i].PAdjusted.Value, StudyPress.Statistics.Distributions.StudentizedRange.Upper(q, 3, 20), 12, "Tukey-Kramer");
        }
    }

    // Domain: a covariate that is a function of the factor (constant within groups) cannot be
    // separated from it; a constant covariate has no slope; sequential SS are refused.
    [Fact]
    public void Check_ReportsConfoundedAndConstantCovariates()
    {
        var r = Rutherford();
        var byGroup = r.Factors[0].Codes.Select(c => (double)c * 2).ToArray();
        Assert.Contains("cannot be estimated", Ancova.Check(r with { Covariates = [new CovariateColumn("g", byGroup)] }), StringComparison.Ordinal);
        Assert.Contains("constant", Ancova.Check(r with { Covariates = [new CovariateColumn("k", [.. Enumerable.Repeat(5.0, 24)])] }), StringComparison.Ordinal);
        Assert.NotNull(Ancova.Check(r with { SsType = SumOfSquaresType.Sequential }));
        Assert.Throws<ArgumentException>(() => Ancova.Fit(r with { Covariates = [] }));
    }

    // Two covariates (invented second covariate): each slope's t² equals its own F (exact identity
    // with one df), one residual df is spent per covariate, and the homogeneity test crosses the
    // 2 treatment columns with both covariates (4 df).
    [Fact]
    public void TwoCovariates_SlopesAndDegreesOfFreedom()
    {
        var r = Rutherford();
        var z = Enumerable.Range(0, 24).Select(i => (i % 3) + (0.5 * (i % 2))).ToArray();
        var two = Ancova.Fit(r with { Covariates = [r.Covariates[0], new CovariateColumn("z", z)] });
        foreach (var s in two.Slopes)
        {
            var term = two.Terms.Single(t => t.Name == s.Covariate);
            Accuracy.AssertLre(s.T.Value * s.T.Value, term.F.Value, 10, s.Covariate);
        }

        Assert.Equal(19, two.ResidualDf);
        Assert.Equal(4, two.Homogeneity.Df1);
        Assert.Equal(15, two.Homogeneity.Df2);
    }

    // The data and the unadjusted analysis agree with the publication's sums of squares, which
    // are not affected by its sum-of-products misprint (published, UF00080557: xx blocks 372.50,
    // cultivars 561.33, error 1066.00, to the printed digits; yy blocks 10.44, cultivars 8.47,
    // error 10.26, computed there by hand with rounded intermediates (the error as 29.17 - 10.44 -
    // 8.47), so within 0.015 of the exact 10.4316, 8.4639 and 10.2722 of the exact recomputation).
    [Fact]
    public void Icta_UnadjustedSumsOfSquares_MatchPublication()
    {
        var input = Icta();
        var y = FactorialAnova.Fit(new AnovaInput(input.Response, input.Factors, false, SumOfSquaresType.Hierarchical, 0.05));
        Assert.InRange(y.Terms.Single(t => t.Name == "block").SumOfSquares, 10.44 - 0.015, 10.44 + 0.015);
        Assert.InRange(y.Terms.Single(t => t.Name == "cultivar").SumOfSquares, 8.47 - 0.015, 8.47 + 0.015);
        Assert.InRange(y.ResidualSumOfSquares, 10.26 - 0.015, 10.26 + 0.015);
        Accuracy.AssertLre(y.Terms.Single(t => t.Name == "cultivar").SumOfSquares, 8.46393750000, 10, "yy cultivars exact");
        var x = FactorialAnova.Fit(new AnovaInput(input.Covariates[0].Values, input.Factors, false, SumOfSquaresType.Hierarchical, 0.05));
        Accuracy.AssertRoundsTo(x.Terms.Single(t => t.Name == "block").SumOfSquares, "372.50", "xx blocks");
        Accuracy.AssertRoundsTo(x.Terms.Single(t => t.Name == "cultivar").SumOfSquares, "561.33", "xx cultivars");
        Accuracy.AssertRoundsTo(x.ResidualSumOfSquares, "1066.00", "xx error");
    }

    // Exact identity (two factors with interaction, unbalanced, invented data): a covariate whose
    // mean is zero within every cell is orthogonal to every factor column, so each factor term's
    // adjusted SS (types 2 and 3) equals the ANOVA's SS without the covariate, and the residual
    // SS drops by the covariate's SS.
    [Theory]
    [InlineData(SumOfSquaresType.Hierarchical)]
    [InlineData(SumOfSquaresType.Marginal)]
    public void Factorial_CovariateOrthogonalToCells_LeavesFactorSs(SumOfSquaresType type)
    {
        int[] a = [0, 0, 0, 0, 0, 0, 0, 1, 1, 1, 1, 1, 1, 1, 1, 1];
        int[] b = [0, 0, 1, 1, 1, 1, 0, 0, 0, 0, 0, 1, 1, 1, 1, 1];
        double[] y = [3.2, 4.1, 5.0, 6.2, 5.5, 4.9, 3.9, 7.1, 6.4, 6.8, 7.7, 4.2, 3.6, 5.1, 4.4, 3.0];
        double[] cov = [1, -1, 2, -1, -1, 0, 0, 3, -1, -1, -1, 2, -2, 1, -1, 0];
        var factors = new[] { new FactorColumn("A", a, ["a1", "a2"]), new FactorColumn("B", b, ["b1", "b2"]) };
        var anova = FactorialAnova.Fit(new AnovaInput(y, factors, true, type, 0.05));
        var r = Ancova.Fit(new AncovaInput(y, factors, [new CovariateColumn("x", cov)], true, type, 0.05));
        foreach (var term in anova.Terms)
        {
            Accuracy.AssertLre(r.Terms.Single(t => t.Name == term.Name).SumOfSquares, term.SumOfSquares, 10, term.Name);
        }

        var x = r.Terms.Single(t => t.Name == "x").SumOfSquares;
        Accuracy.AssertLre(r.ResidualSumOfSquares + x, anova.ResidualSumOfSquares, 11, "residual");
        Assert.Equal(anova.ResidualDf - 1, r.ResidualDf);
    }

    // Exact identity: the data repeated 200 times (4800 rows, more than one block of the row
    // reduction) have the same slope and adjusted means, and every sum of squares 200 times larger.
    [Fact]
    public void Rutherford_Replicated_SameSlopeAndMeans_ScaledSs()
    {
        var one = Rutherford();
        const int copies = 200;
        var many = one with
        {
            Response = [.. Enumerable.Repeat(one.Response, copies).SelectMany(v => v)],
            Factors = [one.Factors[0] with { Codes = [.. Enumerable.Repeat(one.Factors[0].Codes, copies).SelectMany(v => v)] }],
            Covariates = [one.Covariates[0] with { Values = [.. Enumerable.Repeat(one.Covariates[0].Values, copies).SelectMany(v => v)] }],
        };
        var a = Ancova.Fit(one);
        var b = Ancova.Fit(many);
        Accuracy.AssertLre(b.Slopes[0].Estimate, a.Slopes[0].Estimate, 10, "slope");
        for (var i = 0; i < 3; i++)
        {
            Accuracy.AssertLre(b.AdjustedMeans.Terms[0].Means[i].Mean.Value, a.AdjustedMeans.Terms[0].Means[i].Mean.Value, 10, "mean");
        }

        for (var t = 0; t < a.Terms.Count; t++)
        {
            Accuracy.AssertLre(b.Terms[t].SumOfSquares, copies * a.Terms[t].SumOfSquares, 10, a.Terms[t].Name);
        }

        Accuracy.AssertLre(b.ResidualSumOfSquares, copies * a.ResidualSumOfSquares, 10, "residual");
        Accuracy.AssertLre(b.Homogeneity.SumOfSquares, copies * a.Homogeneity.SumOfSquares, 9, "homogeneity SS");
        Assert.Equal(4800 - 4, b.ResidualDf);
    }

    /// <summary>2 to 4 groups; one covariate multiset (3 to 6 values with spread) shuffled in each group; responses.</summary>
    private static Gen<(double[] Cov, double[] Y, int[] Group)> BalancedGen =>
        Gen.Choose(2, 4).SelectMany(k =>
            Gen.Choose(3, 6).SelectMany(m =>
                Gen.Choose(0, 50).Select(v => (double)v).ArrayOf(m).SelectMany(
                    baseValues => Gen.CollectToArray(Enumerable.Range(0, k).Select(_ => Gen.Shuffle(baseValues))),
                    (baseValues, shuffled) => (baseValues, shuffled)).SelectMany(
                    b => Gen.Choose(-1000, 1000).Select(v => v / 10.0).ArrayOf(k * m),
                    (b, y) => (Cov: b.baseValues[0] == b.baseValues[1] ? [.. b.shuffled.SelectMany(s => s.Select((v, i) => v + i))] : b.shuffled.SelectMany(s => s).ToArray(), Y: y, Group: Enumerable.Range(0, k * m).Select(i => i / m).ToArray()))));

    // Property (issue #16): when every group has the same covariate mean, the adjusted means equal
    // the raw group means (ȳ_i - b (x̄_i - x̄) with x̄_i = x̄; exact identity).
    [Property]
    public Property AdjustedMeans_BalancedCovariate_EqualRawMeans()
    {
        return Prop.ForAll(BalancedGen.ToArbitrary(), d =>
        {
            var k = d.Group.Max() + 1;
            var means = Enumerable.Range(0, k).Select(g => d.Group.Select((gg, i) => (gg, i)).Where(x => x.gg == g).Average(x => d.Cov[x.i])).ToArray();
            if (means.Any(m => Math.Abs(m - means[0]) > 1e-12))
            {
                return false; // the generator keeps every group's covariate mean equal
            }

            var input = new AncovaInput(d.Y, [new FactorColumn("g", d.Group, [.. Enumerable.Range(0, k).Select(i => "L" + i.ToString(System.Globalization.CultureInfo.InvariantCulture))])], [new CovariateColumn("x", d.Cov)], false, SumOfSquaresType.Hierarchical, 0.05);
            if (Ancova.Check(input) is not null)
            {
                return true;
            }

            var adjusted = Ancova.Fit(input).AdjustedMeans.Terms[0].Means;
            return Enumerable.Range(0, k).All(g =>
            {
                var raw = d.Group.Select((gg, i) => (gg, i)).Where(x => x.gg == g).Average(x => d.Y[x.i]);
                return Math.Abs(adjusted[g].Mean.Value - raw) <= 1e-9 * Math.Max(1, Math.Abs(raw));
            });
        });
    }
}
