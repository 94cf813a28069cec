using StudyPress.Statistics.Distributions;

namespace StudyPress.Statistics.Anova;

/// <summary>
/// A confidence interval for the noncentrality of an F test and the effect sizes derived from it.
/// </summary>
/// <param name="ConfidenceLevel">The coverage, e.g. 0.90 or 0.95.</param>
/// <param name="LambdaLow">Lower limit of the noncentrality λ (0 when cut at 0).</param>
/// <param name="LambdaHigh">Upper limit of λ.</param>
/// <param name="PartialEtaSquaredLow">λ_L / (λ_L + df1 + df2 + 1).</param>
/// <param name="PartialEtaSquaredHigh">λ_U / (λ_U + df1 + df2 + 1).</param>
/// <param name="CohenFLow">√(λ_L / (df1 + df2 + 1)).</param>
/// <param name="CohenFHigh">√(λ_U / (df1 + df2 + 1)).</param>
public sealed record EffectSizeInterval(
    double ConfidenceLevel,
    Quantity LambdaLow,
    Quantity LambdaHigh,
    Quantity PartialEtaSquaredLow,
    Quantity PartialEtaSquaredHigh,
    Quantity CohenFLow,
    Quantity CohenFHigh);

/// <summary>
/// Confidence intervals for partial η² and Cohen's f by inverting the noncentral F distribution
/// (the "noncentrality interval estimation" of Steiger and Fouladi 1997; Steiger 2004,
/// "Beyond the F test", Psychological Methods 9(2), 164-182; Smithson 2003, "Confidence
/// Intervals", ch. 5).
/// <para>
/// For an observed F with df1 and df2 degrees of freedom and coverage 1 − α, the limits of the
/// noncentrality λ solve P(F' ≤ F_obs; df1, df2, λ_L) = 1 − α/2 and
/// P(F' ≤ F_obs; df1, df2, λ_U) = α/2. Since the CDF decreases in λ, each limit is cut at 0 when
/// already P(F ≤ F_obs; λ = 0) is at or below its target (λ_L = 0 when F_obs is below the central
/// 1 − α/2 quantile; both limits 0 when F_obs is below the central α/2 quantile). With
/// N = df1 + df2 + 1 (the total sample size of a one-way design), the limits map monotonically to
/// partial η² = λ / (λ + N) and to Cohen's f = √(λ / N), f² = η²/(1 − η²).
/// </para>
/// </summary>
public static class EffectSizeIntervals
{
    /// <summary>The interval for an F statistic with <paramref name="df1"/> and <paramref name="df2"/> degrees of freedom.</summary>
    public static EffectSizeInterval PartialEtaSquared(Quantity f, double df1, double df2, double confidenceLevel)
    {
        if (!(confidenceLevel > 0 && confidenceLevel < 1))
        {
            throw new ArgumentOutOfRangeException(nameof(confidenceLevel), "the confidence level must be in (0, 1)");
        }

        if (!f.IsDefined)
        {
            return Undefined(confidenceLevel, "F is not defined (" + f.Reason + ")");
        }

        if (!(df1 > 0) || !(df2 > 0) || !double.IsFinite(df1) || !double.IsFinite(df2))
        {
            return Undefined(confidenceLevel, "the F test has no degrees of freedom");
        }

        if (f.Value < 0)
        {
            return Undefined(confidenceLevel, "F is negative");
        }

        var alpha = 1.0 - confidenceLevel;
        double lambdaLow = 0, lambdaHigh = 0;
        if (f.Value > 0)
        {
            lambdaLow = NoncentralF.SolveNoncentrality(f.Value, df1, df2, 1.0 - (alpha / 2));
            lambdaHigh = NoncentralF.SolveNoncentrality(f.Value, df1, df2, alpha / 2);
        }

        var n = df1 + df2 + 1;
        return new EffectSizeInterval(
            confidenceLevel,
            Quantity.Of(lambdaLow),
            Quantity.Of(lambdaHigh),
            Quantity.Of(lambdaLow / (lambdaLow + n)),
            Quantity.Of(lambdaHigh / (lambdaHigh + n)),
            Quantity.Of(Math.Sqrt(lambdaLow / n)),
            Quantity.Of(Math.Sqrt(lambdaHigh / n)));
    }

    private static EffectSizeInterval Undefined(double level, string reason)
    {
        var u = Quantity.Undefined(reason);
        return new EffectSizeInterval(level, u, u, u, u, u, u);
    }
}
