namespace StudyPress.Statistics.Assumptions;

/// <summary>Result of Bartlett's test.</summary>
/// <param name="Statistic">Bartlett's T.</param>
/// <param name="Df">Degrees of freedom of the chi-square reference, k - 1.</param>
/// <param name="P">Upper-tail probability P(chi-square(Df) &gt;= T).</param>
public sealed record BartlettResult(Quantity Statistic, int Df, Quantity P);

/// <summary>
/// Bartlett's test of equal variances for k normal samples:
/// T = [(N - k) ln s_p² - sum (n_i - 1) ln s_i²] / [1 + (sum 1/(n_i - 1) - 1/(N - k)) / (3(k - 1))],
/// s_i² the unbiased group variances, s_p² = sum (n_i - 1) s_i² / (N - k) the pooled variance;
/// T is referred to chi-square with k - 1 degrees of freedom.
/// Source: Bartlett, M. S. (1937), Properties of sufficiency and statistical tests, Proceedings of the
/// Royal Society A 160, 268-282; NIST/SEMATECH e-Handbook of Statistical Methods, section 1.3.5.7.
/// Domain: at least two groups (fewer, or an empty group, throws); every group needs n_i &gt;= 2 and a
/// positive variance (the logarithm of a zero variance is not defined), otherwise T and p are undefined
/// with a reason. The numerator is computed as sum (n_i - 1) ln(s_p² / s_i²), which is a sum of
/// terms in log-ratio form and avoids subtracting two large numbers.
/// </summary>
public static class Bartlett
{
    public static BartlettResult Test(IReadOnlyList<double[]> groups)
    {
        Groups.RequireGroups(groups);
        var k = groups.Count;
        var df = k - 1;
        var variances = new double[k];
        double pooledSs = 0, invSum = 0;
        var n = 0;
        for (var g = 0; g < k; g++)
        {
            var x = groups[g];
            if (x.Length < 2)
            {
                var u = Quantity.Undefined("Bartlett's test needs at least two observations in every group");
                return new BartlettResult(u, df, u);
            }

            var ss = Groups.SumOfSquares(x, Groups.Mean(x));
            if (!(ss > 0))
            {
                var u = Quantity.Undefined("a group has zero variance, so Bartlett's statistic is not defined");
                return new BartlettResult(u, df, u);
            }

            variances[g] = ss / (x.Length - 1);
            pooledSs += ss;
            invSum += 1.0 / (x.Length - 1);
            n += x.Length;
        }

        var dfPooled = n - k;
        var pooled = pooledSs / dfPooled;
        double numerator = 0;
        for (var g = 0; g < k; g++)
        {
            numerator += (groups[g].Length - 1) * Math.Log(pooled / variances[g]);
        }

        var correction = 1 + ((invSum - (1.0 / dfPooled)) / (3.0 * (k - 1)));
        var t = Math.Max(0.0, numerator / correction);
        return new BartlettResult(Quantity.Of(t), df, Quantity.Of(Probability.ChiSquareUpper(t, df)));
    }
}
