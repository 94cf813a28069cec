using StudyPress.Statistics.Anova;
using StudyPress.Statistics.Distributions;

namespace StudyPress.Statistics.Tests.Anova;

public class EffectSizeIntervalTests
{
    [Theory]
    [InlineData(5.0, 3.0, 36.0, 0.90)]
    [InlineData(9.59, 2.0, 12.0, 0.95)]
    [InlineData(2.2969, 9.0, 90.0, 0.90)]
    public void PartialEtaSquared_Limits_SolveTheDefiningEquations(double f, double df1, double df2, double level)
    {
        // Steiger (2004): P(F' <= F_obs; lambda_L) = 1 - alpha/2, P(F' <= F_obs; lambda_U) = alpha/2,
        // eta^2 = lambda / (lambda + df1 + df2 + 1), f = sqrt(lambda / (df1 + df2 + 1)).
        var ci = EffectSizeIntervals.PartialEtaSquared(Quantity.Of(f), df1, df2, level);
        var alpha = 1 - level;
        Assert.Equal(level, ci.ConfidenceLevel);
        Assert.True(ci.LambdaLow.Value > 0 && ci.LambdaHigh.Value > ci.LambdaLow.Value);
        Assert.Equal(alpha / 2, NoncentralF.Upper(f, df1, df2, ci.LambdaLow.Value), 9);
        Assert.Equal(alpha / 2, NoncentralF.Cdf(f, df1, df2, ci.LambdaHigh.Value), 9);
        var n = df1 + df2 + 1;
        Assert.Equal(ci.LambdaLow.Value / (ci.LambdaLow.Value + n), ci.PartialEtaSquaredLow.Value, 14);
        Assert.Equal(ci.LambdaHigh.Value / (ci.LambdaHigh.Value + n), ci.PartialEtaSquaredHigh.Value, 14);
        Assert.Equal(Math.Sqrt(ci.LambdaHigh.Value / n), ci.CohenFHigh.Value, 14);

        // The point estimate of partial eta^2, F df1 / (F df1 + df2), lies inside the interval.
        var eta = f * df1 / ((f * df1) + df2);
        Assert.InRange(eta, ci.PartialEtaSquaredLow.Value, ci.PartialEtaSquaredHigh.Value);
    }

    [Fact]
    public void PartialEtaSquared_LowerLimitZero_ExactlyWhenTestIsNotSignificant()
    {
        // Steiger (2004): the 1 - 2 alpha interval excludes 0 exactly when the F test at alpha
        // rejects. Just below and above the central 0.95 quantile of F(3, 36):
        var crit = Probability.FCritical(0.05, 3, 36);
        var below = EffectSizeIntervals.PartialEtaSquared(Quantity.Of(crit * 0.999), 3, 36, 0.90);
        var above = EffectSizeIntervals.PartialEtaSquared(Quantity.Of(crit * 1.001), 3, 36, 0.90);
        Assert.Equal(0.0, below.LambdaLow.Value);
        Assert.Equal(0.0, below.PartialEtaSquaredLow.Value);
        Assert.True(below.LambdaHigh.Value > 0);
        Assert.True(above.LambdaLow.Value > 0);
    }

    [Fact]
    public void PartialEtaSquared_FZeroOrTiny_BothLimitsZero()
    {
        var zero = EffectSizeIntervals.PartialEtaSquared(Quantity.Of(0), 3, 36, 0.90);
        Assert.Equal(0.0, zero.LambdaLow.Value);
        Assert.Equal(0.0, zero.LambdaHigh.Value);

        // F below the central 0.05 quantile: P(F <= F_obs; 0) < 0.05 = alpha/2 at 90 %.
        var tiny = EffectSizeIntervals.PartialEtaSquared(Quantity.Of(0.01), 3, 36, 0.90);
        Assert.Equal(0.0, tiny.LambdaHigh.Value);
    }

    [Fact]
    public void PartialEtaSquared_UndefinedF_GivesReasons()
    {
        var ci = EffectSizeIntervals.PartialEtaSquared(Quantity.Undefined("the residual variance is zero"), 3, 36, 0.95);
        Assert.False(ci.LambdaLow.IsDefined);
        Assert.False(ci.CohenFHigh.IsDefined);
        Assert.Contains("residual variance is zero", ci.PartialEtaSquaredLow.Reason, StringComparison.Ordinal);
        Assert.False(EffectSizeIntervals.PartialEtaSquared(Quantity.Of(2), 3, 0, 0.95).LambdaLow.IsDefined);
    }

    [Fact]
    public void PartialEtaSquared_WiderLevel_GivesWiderInterval()
    {
        var a = EffectSizeIntervals.PartialEtaSquared(Quantity.Of(6), 2, 27, 0.90);
        var b = EffectSizeIntervals.PartialEtaSquared(Quantity.Of(6), 2, 27, 0.99);
        Assert.True(b.PartialEtaSquaredLow.Value < a.PartialEtaSquaredLow.Value);
        Assert.True(b.PartialEtaSquaredHigh.Value > a.PartialEtaSquaredHigh.Value);
    }
}
