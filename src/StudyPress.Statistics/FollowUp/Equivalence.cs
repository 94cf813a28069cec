using StudyPress.Statistics.Anova;

namespace StudyPress.Statistics.FollowUp;

/// <summary>Which variance the equivalence test uses for the difference of two means.</summary>
public enum EquivalenceVariance
{
    /// <summary>
    /// Default. Welch: SE² = s_a²/n_a + s_b²/n_b, Welch–Satterthwaite df; does not assume equal
    /// variances (the safer choice when nothing is known about them).
    /// </summary>
    Welch = 0,

    /// <summary>
    /// Pooled: SE² = s_p² (1/n_a + 1/n_b) with s_p² the two groups' pooled variance on
    /// n_a + n_b - 2 df, or a model's error mean square and df when given.
    /// </summary>
    Pooled = 1,
}

/// <summary>
/// What the test shows. "Not shown equivalent" is not "different", and a non-significant
/// difference test is never "equivalent": only a p at or below alpha against both margins gives
/// <see cref="EquivalentWithinMargin"/>. The ordinary difference test is reported separately
/// (<see cref="EquivalenceResult.PDifference"/>) and does not enter the verdict.
/// </summary>
public enum EquivalenceVerdict
{
    /// <summary>TOST: both one-sided nulls rejected at alpha; the (1 - 2 alpha) interval lies inside (low, high).</summary>
    EquivalentWithinMargin = 0,

    /// <summary>TOST: at least one one-sided null not rejected; equivalence is not shown (this is not evidence of a difference).</summary>
    NotShownEquivalent = 1,

    /// <summary>Non-inferiority: the one-sided null beyond the single margin rejected at alpha.</summary>
    NonInferiorWithinMargin = 2,

    /// <summary>Non-inferiority: the one-sided null not rejected; non-inferiority is not shown.</summary>
    NotShownNonInferior = 3,
}

/// <summary>
/// The result of an equivalence (TOST) or non-inferiority test of Diff = mean_a - mean_b.
/// <paramref name="MarginLow"/>/<paramref name="MarginHigh"/> are null when not given
/// (non-inferiority uses one). <paramref name="CiLow"/>/<paramref name="CiHigh"/> are the
/// (1 - 2 alpha) interval Diff ± t(1 - alpha; df) SE. <paramref name="PLower"/> tests
/// H0: Diff &lt;= low, <paramref name="PUpper"/> tests H0: Diff &gt;= high (undefined when that margin
/// is absent); <paramref name="P"/> is the larger of the two for TOST, the one given for
/// non-inferiority. <paramref name="PDifference"/> is the ordinary two-sided test of Diff = 0 on the
/// same SE and df, reported beside, never merged into the verdict.
/// </summary>
public sealed record EquivalenceResult(
    string LevelA,
    string LevelB,
    double Diff,
    Quantity Se,
    Quantity Df,
    double? MarginLow,
    double? MarginHigh,
    Quantity CiLow,
    Quantity CiHigh,
    Quantity TLower,
    Quantity TUpper,
    Quantity PLower,
    Quantity PUpper,
    Quantity P,
    Quantity PDifference,
    EquivalenceVerdict Verdict,
    EquivalenceVariance Variance,
    double Alpha);

/// <summary>
/// Two one-sided tests (TOST) for equivalence of two level means within a margin (low, high) in
/// response units, and the one-sided non-inferiority test with one margin (Schuirmann 1987,
/// "A comparison of the two one-sided tests procedure and the power approach for assessing the
/// equivalence of average bioavailability", J. Pharmacokinetics and Biopharmaceutics 15, 657-680;
/// Wellek 2010, Testing Statistical Hypotheses of Equivalence and Noninferiority, 2nd ed., ch. 6).
/// <para>
/// With Diff = ȳ_a - ȳ_b, its SE and df (Welch by default, or pooled; see
/// <see cref="EquivalenceVariance"/>): t_lower = (Diff - low)/SE, p_lower = P(T_df &gt;= t_lower)
/// (H0: Diff &lt;= low); t_upper = (Diff - high)/SE, p_upper = P(T_df &lt;= t_upper) (H0: Diff &gt;= high).
/// TOST: p = max(p_lower, p_upper); equivalence is shown at alpha exactly when p &lt;= alpha, which
/// is when the (1 - 2 alpha) interval Diff ± t(1 - alpha; df) SE lies inside [low, high].
/// Non-inferiority with only a lower margin (higher is better): p = p_lower; with only an upper
/// margin (lower is better): p = p_upper. One-sided tails are computed directly from the two-sided
/// t tail (halved, or one minus half), so small p keep their relative accuracy.
/// </para>
/// <para>
/// Domain: low &lt; high when both are given; each group needs one observation for the pooled
/// variance with a model error, two otherwise (Welch needs two in each group). SE zero or df below
/// 1 (pooled) make the statistics undefined and the verdict "not shown".
/// </para>
/// </summary>
public static class Equivalence
{
    /// <summary>TOST of Diff = a - b within [<paramref name="low"/>, <paramref name="high"/>], on the two groups alone.</summary>
    public static EquivalenceResult Tost(
        string levelA,
        GroupStatistics a,
        string levelB,
        GroupStatistics b,
        double low,
        double high,
        double alpha,
        EquivalenceVariance variance = EquivalenceVariance.Welch)
    {
        if (!(low < high))
        {
            throw new ArgumentException("the lower margin must be below the upper margin", nameof(low));
        }

        return Test(levelA, a, levelB, b, low, high, alpha, variance, null);
    }

    /// <summary>
    /// TOST with the pooled variance taken from a model: SE² = <paramref name="errorMeanSquare"/>
    /// (1/n_a + 1/n_b) on <paramref name="errorDf"/> (the ANOVA's residual, or the right error
    /// stratum of a split-plot design).
    /// </summary>
    public static EquivalenceResult Tost(
        string levelA,
        GroupStatistics a,
        string levelB,
        GroupStatistics b,
        double low,
        double high,
        double alpha,
        double errorMeanSquare,
        double errorDf)
    {
        if (!(low < high))
        {
            throw new ArgumentException("the lower margin must be below the upper margin", nameof(low));
        }

        return Test(levelA, a, levelB, b, low, high, alpha, EquivalenceVariance.Pooled, (errorMeanSquare, errorDf));
    }

    /// <summary>
    /// Non-inferiority of a against b with one margin: <paramref name="lowMargin"/> (H0: Diff &lt;= low,
    /// higher is better) or <paramref name="highMargin"/> (H0: Diff &gt;= high, lower is better);
    /// exactly one must be given.
    /// </summary>
    public static EquivalenceResult NonInferiority(
        string levelA,
        GroupStatistics a,
        string levelB,
        GroupStatistics b,
        double? lowMargin,
        double? highMargin,
        double alpha,
        EquivalenceVariance variance = EquivalenceVariance.Welch,
        (double MeanSquare, double Df)? error = null)
    {
        if (lowMargin.HasValue == highMargin.HasValue)
        {
            throw new ArgumentException("non-inferiority needs exactly one margin", nameof(lowMargin));
        }

        if (error is not null && variance != EquivalenceVariance.Pooled)
        {
            throw new ArgumentException("a model's error mean square is a pooled variance", nameof(error));
        }

        return Test(levelA, a, levelB, b, lowMargin, highMargin, alpha, variance, error);
    }

    private static EquivalenceResult Test(
        string levelA,
        GroupStatistics a,
        string levelB,
        GroupStatistics b,
        double? low,
        double? high,
        double alpha,
        EquivalenceVariance variance,
        (double MeanSquare, double Df)? error)
    {
        ArgumentNullException.ThrowIfNull(levelA);
        ArgumentNullException.ThrowIfNull(levelB);
        if (!(alpha > 0 && alpha < 0.5))
        {
            throw new ArgumentOutOfRangeException(nameof(alpha), "alpha must lie in (0, 1/2)");
        }

        if ((low is { } l && !double.IsFinite(l)) || (high is { } h && !double.IsFinite(h)))
        {
            throw new ArgumentException("a margin is not finite", nameof(low));
        }

        if (a.Count < 1 || b.Count < 1 || !double.IsFinite(a.Mean) || !double.IsFinite(b.Mean))
        {
            throw new ArgumentException("each group needs observations with a finite mean", nameof(a));
        }

        var diff = a.Mean - b.Mean;
        var tost = low.HasValue && high.HasValue;
        var (se, df, problem) = Spread(a, b, variance, error);
        if (problem is not null)
        {
            var u = Quantity.Undefined(problem);
            var none = Quantity.Undefined(problem);
            return new EquivalenceResult(levelA, levelB, diff, u, df > 0 ? Quantity.Of(df) : u, low, high, u, u, u, u, u, u, u, none,
                tost ? EquivalenceVerdict.NotShownEquivalent : EquivalenceVerdict.NotShownNonInferior, variance, alpha);
        }

        return FromEstimate(levelA, levelB, diff, Quantity.Of(se), Quantity.Of(df), low, high, alpha, variance);
    }

    /// <summary>
    /// The two one-sided tests (or non-inferiority with one margin) of a difference estimated as
    /// <paramref name="diff"/> with a defined standard error <paramref name="se"/> on
    /// <paramref name="df"/> degrees of freedom: the rule of the class remarks, shared by the
    /// two-group forms above and the mixed model's marginal means.
    /// </summary>
    public static EquivalenceResult FromEstimate(string levelA, string levelB, double diff, Quantity se, Quantity df, double? low, double? high, double alpha, EquivalenceVariance variance)
    {
        var tost = low.HasValue && high.HasValue;
        var t = Probability.TCritical(2.0 * alpha, df.Value);
        var ciLow = Quantity.Of(diff - (t * se.Value));
        var ciHigh = Quantity.Of(diff + (t * se.Value));
        var tLower = low is { } lo ? Quantity.Of((diff - lo) / se.Value) : Quantity.Undefined("no lower margin was given");
        var tUpper = high is { } hi ? Quantity.Of((diff - hi) / se.Value) : Quantity.Undefined("no upper margin was given");
        var pLower = tLower.Map(x => UpperTail(x, df.Value));
        var pUpper = tUpper.Map(x => UpperTail(-x, df.Value));
        var p = tost ? Quantity.Of(Math.Max(pLower.Value, pUpper.Value)) : low.HasValue ? pLower : pUpper;
        var pDiff = Quantity.Of(Probability.TTwoSided(diff / se.Value, df.Value));
        var shown = p.Value <= alpha;
        var verdict = tost
            ? shown ? EquivalenceVerdict.EquivalentWithinMargin : EquivalenceVerdict.NotShownEquivalent
            : shown ? EquivalenceVerdict.NonInferiorWithinMargin : EquivalenceVerdict.NotShownNonInferior;
        return new EquivalenceResult(levelA, levelB, diff, se, df, low, high, ciLow, ciHigh, tLower, tUpper, pLower, pUpper, p, pDiff, verdict, variance, alpha);
    }

    /// <summary>P(T_df &gt;= t) from the two-sided tail, accurate in both tails.</summary>
    internal static double UpperTail(double t, double df) =>
        t >= 0 ? 0.5 * Probability.TTwoSided(t, df) : 1.0 - (0.5 * Probability.TTwoSided(-t, df));

    private static (double Se, double Df, string? Problem) Spread(GroupStatistics a, GroupStatistics b, EquivalenceVariance variance, (double MeanSquare, double Df)? error)
    {
        double na = a.Count, nb = b.Count;
        if (error is { } e)
        {
            if (!(e.Df >= 1) || !double.IsFinite(e.Df))
            {
                return (0, 0, "there are no error degrees of freedom");
            }

            if (!(e.MeanSquare > 0) || !double.IsFinite(e.MeanSquare))
            {
                return (0, e.Df, "the error mean square is not a positive finite number");
            }

            return (Math.Sqrt(e.MeanSquare * ((1.0 / na) + (1.0 / nb))), e.Df, null);
        }

        if (variance == EquivalenceVariance.Pooled)
        {
            var dfp = na + nb - 2;
            if (dfp < 1)
            {
                return (0, 0, "the two groups have no degrees of freedom for a pooled variance");
            }

            var sp2 = (a.SumOfSquares + b.SumOfSquares) / dfp;
            return sp2 > 0
                ? (Math.Sqrt(sp2 * ((1.0 / na) + (1.0 / nb))), dfp, null)
                : (0, dfp, "both groups have no variation, so the standard error is zero");
        }

        if (a.Count < 2 || b.Count < 2)
        {
            return (0, 0, "the Welch standard error needs at least two observations in each group");
        }

        var va = a.SumOfSquares / (na - 1) / na;
        var vb = b.SumOfSquares / (nb - 1) / nb;
        var v = va + vb;
        if (!(v > 0))
        {
            return (0, 0, "both groups have no variation, so the standard error is zero");
        }

        // Welch–Satterthwaite: (va + vb)² / (va²/(na - 1) + vb²/(nb - 1)).
        var df = v * v / ((va * va / (na - 1)) + (vb * vb / (nb - 1)));
        return (Math.Sqrt(v), df, null);
    }
}
