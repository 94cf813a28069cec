using StudyPress.Statistics.Anova;
using StudyPress.Statistics.Assumptions;
using StudyPress.Statistics.Tests.Support;

namespace StudyPress.Statistics.Tests.Distributions;

/// <summary>
/// Critical values over the whole domain of alpha, and the undefined cases of the variance tests.
/// Reference values marked "mpmath 1.3.0" were computed at 40 significant digits with mpmath 1.3.0
/// (root of the regularized incomplete beta/gamma function, betainc/gammainc), printed to 20 digits.
/// </summary>
public class QuantileTests
{
    [Theory]
    [InlineData(0.001, 1.0, 636.61924876871961621)] // closed form tan(π(1 − 0.0005 − ½)); mpmath 1.3.0
    [InlineData(0.05, 2.0, 4.3026527297494638523)] // closed form (1 − α)√(2/(α(2 − α))); mpmath 1.3.0
    [InlineData(0.001, 3.0, 12.923978636687483065)] // mpmath 1.3.0
    [InlineData(0.05, 5.0, 2.5705818356363155147)] // mpmath 1.3.0
    [InlineData(1e-10, 4.0, 494.9198328501158028)] // mpmath 1.3.0
    [InlineData(0.01, 30.0, 2.7499956535672253324)] // mpmath 1.3.0
    [InlineData(1e-12, 7.0, 114.85534318720376782)] // mpmath 1.3.0
    [InlineData(0.9, 10.0, 0.1288901892932737879)] // mpmath 1.3.0
    [InlineData(0.05, 1000.0, 1.962339080826408485)] // mpmath 1.3.0
    public void TCritical_MatchesHighPrecisionValues(double alpha, double df, double expected) =>
        // Every printed digit: closed forms at 1 and 2 df, the positive tail series for integer df.
        Accuracy.AssertLre(Probability.TCritical(alpha, df), expected, 15.0, $"t({alpha}, {df})");

    [Theory]
    [InlineData(0.05, 2.0, 1.0, 199.5)] // exact hand computation: F(2, 1) upper tail (1 + 2f)^(-1/2) = α gives f = (α⁻² − 1)/2
    [InlineData(0.01, 2.0, 1.0, 4999.5)] // exact hand computation, as above
    [InlineData(0.0005, 1.0, 1.0, 1621138.2716107787998)] // mpmath 1.3.0 (= t(0.0005; 1)² = cot²(π·0.00025))
    [InlineData(0.001, 3.0, 2.0, 999.16662034720789475)] // mpmath 1.3.0
    [InlineData(0.05, 4.0, 20.0, 2.8660814020156586462)] // mpmath 1.3.0
    [InlineData(0.95, 3.0, 12.0, 0.11435575671012605388)] // mpmath 1.3.0
    [InlineData(1e-8, 2.0, 3.0, 323163.70350478255826)] // mpmath 1.3.0
    public void FCritical_MatchesReferenceValues_FarIntoTheTail(double alpha, double d1, double d2, double expected) =>
        Accuracy.AssertLre(Probability.FCritical(alpha, d1, d2), expected, 13.5, $"F({alpha}, {d1}, {d2})");

    [Theory]
    [InlineData(0.05, 1.0, 3.8414588206941259584)] // mpmath 1.3.0
    [InlineData(1e-12, 1.0, 50.844127911818155546)] // mpmath 1.3.0
    [InlineData(0.01, 4.0, 13.276704135987624539)] // mpmath 1.3.0
    public void ChiSquareCritical_MatchesHighPrecisionValues(double alpha, double df, double expected) =>
        Accuracy.AssertLre(Probability.ChiSquareCritical(alpha, df), expected, 13.5, $"chi2({alpha}, {df})");

    [Fact]
    public void Quantiles_AreFiniteAndInvertTheirTails_ForEveryAlphaAndSmallDf()
    {
        // Definition: the quantile inverts the tail, P(tail >= x) = α, for α from 1e-300 to 1 − 1e-12.
        double[] alphas = [1e-300, 1e-100, 1e-30, 1e-12, 1e-6, 0.0005, 0.02, 0.5, 0.98, 1 - 1e-12];
        foreach (var a in alphas)
        {
            foreach (var df in new[] { 1.0, 2.0, 3.0, 5.0, 40.0 })
            {
                var t = Probability.TCritical(a, df);
                if (df == 1)
                {
                    // Cauchy tail (2/π) atan(1/t), exact for t beyond the range where t² overflows.
                    Assert.True(Accuracy.Lre(2 / Math.PI * Math.Atan(1 / t), a) > 13, $"t {a} {df}");
                }
                else if (double.IsFinite(t))
                {
                    Assert.True(Accuracy.Lre(Probability.TTwoSided(t, df), a) > 11, $"t {a} {df}");
                }
                else
                {
                    // Only where the quantile exceeds the largest double (df = 1 below 1e-308 etc.).
                    Assert.True(df <= 2 && a < 1e-150, $"t infinite at {a} {df}");
                }

                var f = Probability.FCritical(a, df, Math.Max(1.0, df - 1));
                if (double.IsFinite(f))
                {
                    Assert.True(Accuracy.Lre(Probability.FUpper(f, df, Math.Max(1.0, df - 1)), a) > 10, $"F {a} {df}");
                }

                var c = Probability.ChiSquareCritical(a, df);
                Assert.True(Accuracy.Lre(Probability.ChiSquareUpper(c, df), a) > 10, $"chi {a} {df}");
            }
        }
    }

    [Fact]
    public void BrownForsytheAndLevene_ConstantDeviations_AreNotDefined()
    {
        // Exact hand computation: each group is two values 0.3 apart, so every |y − centre| is 0.15
        // and F = 0/0. (The old code returned an F made of rounding noise.)
        double[][] groups = [[10.1, 10.4], [10.2, 10.5], [10.3, 10.6]];
        foreach (var r in new[] { BrownForsythe.Test(groups), Levene.Test(groups) })
        {
            Assert.False(r.F.IsDefined);
            Assert.False(r.P.IsDefined);
        }

        // Two values equally often in every group: still constant deviations.
        double[][] balanced = [[0.1, 0.1, 0.7, 0.7], [0.3, 0.9], [1.1, 1.1, 1.1]];
        Assert.False(BrownForsythe.Test(balanced).F.IsDefined);
        Assert.False(Levene.Test(balanced).F.IsDefined);

        // One group with unequal counts of two values: deviations vary, F is defined.
        double[][] unbalanced = [[0.1, 0.1, 0.7], [0.3, 0.9]];
        Assert.True(Levene.Test(unbalanced).F.IsDefined);
    }

    [Fact]
    public void ZeroVarianceGroups_AreRecognisedExactly()
    {
        // Exact hand computation: a group of three equal values (whose double sum rounds) has zero
        // variance; Bartlett's statistic and Welch's F are then not defined.
        double[][] groups = [[0.1, 0.1, 0.1], [0.2, 0.4, 0.9], [1.7, 1.9, 2.3]];
        Assert.Equal(0.0, Groups.SumOfSquares(groups[0], Groups.Mean(groups[0])));
        Assert.Equal(0.1, Groups.Mean(groups[0]));
        Assert.False(Bartlett.Test(groups).Statistic.IsDefined);
        Assert.False(WelchAnova.Test(groups).F.IsDefined);
    }

    [Fact]
    public void CohenF_KeepsItsDigits_WhenPartialEtaSquaredIsNearOne()
    {
        // Exact hand computation: SS = 1e8, SS_res = 1 gives f = √(1e8) = 1e4 exactly.
        var term = AnovaTable.Term("g", ["g"], 1e8, 2, 1.0, 10, 1e8 + 1, 0.05);
        Assert.Equal(1e4, term.CohenF.Value);
    }

    [Fact]
    public void KruskalWallis_AllTied_IsNotDefined()
    {
        // Exact hand computation: every value equal, the ranks carry no information (C = 0).
        double[][] groups = [[0.3, 0.3], [0.3, 0.3, 0.3], [0.3]];
        var r = StudyPress.Statistics.Nonparametric.KruskalWallis.Test(groups);
        Assert.False(r.H.IsDefined);
        Assert.False(r.P.IsDefined);
    }
}
