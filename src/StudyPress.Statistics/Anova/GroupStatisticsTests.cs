using StudyPress.Statistics.Assumptions;

namespace StudyPress.Statistics.Anova;

/// <summary>One group's count, mean and within-group sum of squared deviations from its mean.</summary>
public readonly record struct GroupStatistics(long Count, double Mean, double SumOfSquares)
{
    public double Variance => Count > 1 ? SumOfSquares / (Count - 1) : double.NaN;
}

/// <summary>
/// Tests that need only each group's count, mean and variance, computed from those summaries
/// (for data aggregated by a database): the same formulas as <see cref="WelchAnova.Test"/> and
/// <see cref="Bartlett.Test"/>, which take the groups' values.
/// </summary>
public static class GroupStatisticsTests
{
    /// <summary>Welch's (1951) heteroscedastic one-way test; formulas in <see cref="WelchAnova"/>.</summary>
    public static WelchResult Welch(IReadOnlyList<GroupStatistics> groups)
    {
        ArgumentNullException.ThrowIfNull(groups);
        if (groups.Count < 2)
        {
            throw new ArgumentException("at least two groups are needed", nameof(groups));
        }

        var k = groups.Count;
        if (groups.Any(g => g.Count < 2))
        {
            var u = Quantity.Undefined("a group has fewer than two observations");
            return new WelchResult(u, k - 1, u, u);
        }

        if (groups.Any(g => !(g.Variance > 0)))
        {
            var u = Quantity.Undefined("a group has zero variance");
            return new WelchResult(u, k - 1, u, u);
        }

        var w = groups.Select(g => g.Count / g.Variance).ToArray();
        var sw = w.Sum();
        double m = 0;
        for (var i = 0; i < k; i++)
        {
            m += w[i] * groups[i].Mean;
        }

        m /= sw;
        double a = 0, l = 0;
        for (var i = 0; i < k; i++)
        {
            var d = groups[i].Mean - m;
            a += w[i] * d * d;
            var r = 1 - (w[i] / sw);
            l += r * r / (groups[i].Count - 1);
        }

        a /= k - 1;
        var b = 1 + (2.0 * (k - 2) * l / ((k * k) - 1.0));
        var f = a / b;
        var df2 = ((k * k) - 1.0) / (3.0 * l);
        return new WelchResult(Quantity.Of(f), k - 1, Quantity.Of(df2), Quantity.Of(Probability.FUpper(f, k - 1, df2)));
    }

    /// <summary>Bartlett's (1937) test of equal variances; formulas in <see cref="Assumptions.Bartlett"/>.</summary>
    public static BartlettResult Bartlett(IReadOnlyList<GroupStatistics> groups)
    {
        ArgumentNullException.ThrowIfNull(groups);
        if (groups.Count < 2)
        {
            throw new ArgumentException("at least two groups are needed", nameof(groups));
        }

        var k = groups.Count;
        var df = k - 1;
        if (groups.Any(g => g.Count < 2))
        {
            var u = Quantity.Undefined("Bartlett's test needs at least two observations in every group");
            return new BartlettResult(u, df, u);
        }

        if (groups.Any(g => !(g.SumOfSquares > 0)))
        {
            var u = Quantity.Undefined("a group has zero variance, so Bartlett's statistic is not defined");
            return new BartlettResult(u, df, u);
        }

        double pooledSs = 0, invSum = 0;
        long n = 0;
        foreach (var g in groups)
        {
            pooledSs += g.SumOfSquares;
            invSum += 1.0 / (g.Count - 1);
            n += g.Count;
        }

        double dfPooled = n - k;
        var pooled = pooledSs / dfPooled;
        double numerator = 0;
        foreach (var g in groups)
        {
            numerator += (g.Count - 1) * Math.Log(pooled / g.Variance);
        }

        var correction = 1 + ((invSum - (1.0 / dfPooled)) / (3.0 * (k - 1)));
        var t = Math.Max(0.0, numerator / correction);
        return new BartlettResult(Quantity.Of(t), df, Quantity.Of(Probability.ChiSquareUpper(t, df)));
    }
}
