using StudyPress.Statistics.Anova;

namespace StudyPress.Statistics.Descriptive;

/// <summary>The moment part of a group's description, from its count, mean and sum of squares.</summary>
public sealed record MomentSummary(long N, double Mean, Quantity Sd, Quantity Se, Quantity CiLow, Quantity CiHigh);

/// <summary>
/// Per-group n, mean, SD, SE and confidence interval of the mean from the group's count, mean and
/// within-group sum of squared deviations (for data a database aggregated): the formulas of
/// <see cref="Descriptives.Compute"/> (SD with divisor n − 1, SE = SD/√n, mean ± t(1 − α/2, n − 1) SE).
/// Order statistics (median, quartiles, min, max) need the values and are not computed here.
/// </summary>
public static class DescriptivesFromSummaries
{
    /// <param name="group">Count, mean (minus <paramref name="offset"/>) and sum of squares.</param>
    /// <param name="offset">Added back to the mean (the centre the values were summed around).</param>
    public static MomentSummary Compute(GroupStatistics group, double offset, double alpha)
    {
        if (group.Count < 1)
        {
            throw new ArgumentException("empty group", nameof(group));
        }

        if (!(alpha > 0 && alpha < 1))
        {
            throw new ArgumentOutOfRangeException(nameof(alpha), "alpha must lie in (0, 1)");
        }

        var mean = offset + group.Mean;
        if (group.Count < 2)
        {
            var u = Quantity.Undefined("a group of one has no standard deviation");
            return new MomentSummary(group.Count, mean, u, u, u, u);
        }

        var s = Math.Sqrt(group.SumOfSquares / (group.Count - 1));
        var se = s / Math.Sqrt(group.Count);
        var half = Probability.TCritical(alpha, group.Count - 1) * se;
        return new MomentSummary(group.Count, mean, Quantity.Of(s), Quantity.Of(se), Quantity.Of(mean - half), Quantity.Of(mean + half));
    }

    /// <summary>
    /// Pools groups into one by the parallel-axis formula: n = Σ n_i, mean = Σ n_i m_i / n,
    /// SS = Σ SS_i + Σ n_i (m_i − mean)², applied pairwise (Chan, Golub and LeVeque 1979).
    /// </summary>
    public static GroupStatistics Pool(IEnumerable<GroupStatistics> groups)
    {
        ArgumentNullException.ThrowIfNull(groups);
        var acc = new GroupStatistics(0, 0, 0);
        foreach (var g in groups)
        {
            if (g.Count == 0)
            {
                continue;
            }

            if (acc.Count == 0)
            {
                acc = g;
                continue;
            }

            var n = acc.Count + g.Count;
            var delta = g.Mean - acc.Mean;
            acc = new GroupStatistics(n, acc.Mean + (delta * g.Count / n), acc.SumOfSquares + g.SumOfSquares + (delta * delta * ((double)acc.Count * g.Count / n)));
        }

        return acc;
    }
}
