using StudyPress.Statistics.Distributions;

namespace StudyPress.Statistics.PostHoc;

/// <summary>
/// Tukey's honestly significant difference (Tukey 1953) for all pairwise differences of k group
/// means, with the Tukey–Kramer form for unequal group sizes (Kramer 1956). NIST/SEMATECH
/// e-Handbook of Statistical Methods, section 7.4.7.1.
/// <para>
/// For levels i &lt; j: Diff = mean_i − mean_j; Se = √(MS_res (1/n_i + 1/n_j)) is the standard error
/// of the difference; the statistic q = |Diff| / √(MS_res/2 · (1/n_i + 1/n_j)) = √2 |Diff| / Se is
/// referred to the studentized range with k groups and df_res degrees of freedom:
/// p = P(Q_{k, df} &gt; q) (the simultaneous, multiplicity-adjusted p-value). The simultaneous
/// 1 − α intervals are Diff ± q_crit/√2 · Se with q_crit the upper-α quantile of Q_{k, df}; for
/// unequal sizes they are conservative (Hayter 1984).
/// </para>
/// <para>
/// Edge cases: no residual degrees of freedom or a residual mean square that is zero or not finite
/// make every statistic undefined with a reason (Diff stays defined). Groups must be non-empty;
/// a group of one is allowed (the pooled MS_res carries the variance).
/// </para>
/// </summary>
public static class TukeyHsd
{
    private const double Sqrt2 = 1.4142135623730950488;

    public static PostHocResult Compare(
        IReadOnlyList<string> levels,
        IReadOnlyList<double[]> groups,
        double msResidual,
        int dfResidual,
        double alpha)
    {
        ArgumentNullException.ThrowIfNull(levels);
        ArgumentNullException.ThrowIfNull(groups);
        Groups.RequireGroups(groups);
        if (levels.Count != groups.Count)
        {
            throw new ArgumentException("levels and groups differ in length", nameof(levels));
        }

        if (!(alpha > 0 && alpha < 1))
        {
            throw new ArgumentOutOfRangeException(nameof(alpha), "alpha must be in (0, 1)");
        }

        var k = groups.Count;
        var means = new double[k];
        var equal = true;
        for (var i = 0; i < k; i++)
        {
            means[i] = Groups.Mean(groups[i]);
            equal &= groups[i].Length == groups[0].Length;
        }

        string? reason = null;
        if (dfResidual < 1)
        {
            reason = "there are no residual degrees of freedom";
        }
        else if (!(msResidual > 0) || !double.IsFinite(msResidual))
        {
            reason = msResidual == 0
                ? "the residual mean square is zero, so the standard errors are zero"
                : "the residual mean square is not a positive finite number";
        }

        var method = equal ? "Tukey HSD" : "Tukey-Kramer";
        var comparisons = new List<PairwiseComparison>(k * (k - 1) / 2);
        if (reason is not null)
        {
            var u = Quantity.Undefined(reason);
            for (var i = 0; i < k; i++)
            {
                for (var j = i + 1; j < k; j++)
                {
                    comparisons.Add(new PairwiseComparison(levels[i], levels[j], means[i] - means[j], u, u, u, u, u, dfResidual >= 1 ? Quantity.Of(dfResidual) : u));
                }
            }

            return new PostHocResult(method, alpha, comparisons, u);
        }

        double df = dfResidual;
        var qCrit = StudentizedRange.UpperQuantile(alpha, k, df);
        for (var i = 0; i < k; i++)
        {
            for (var j = i + 1; j < k; j++)
            {
                var diff = means[i] - means[j];
                var se = Math.Sqrt(msResidual * ((1.0 / groups[i].Length) + (1.0 / groups[j].Length)));
                var q = Sqrt2 * Math.Abs(diff) / se;
                var half = qCrit / Sqrt2 * se;
                comparisons.Add(new PairwiseComparison(
                    levels[i],
                    levels[j],
                    diff,
                    Quantity.Of(se),
                    Quantity.Of(q),
                    Quantity.Of(diff - half),
                    Quantity.Of(diff + half),
                    Quantity.Of(StudentizedRange.Upper(q, k, df)),
                    Quantity.Of(df)));
            }
        }

        return new PostHocResult(method, alpha, comparisons, Quantity.Of(qCrit));
    }
}
