using StudyPress.Statistics.Distributions;

namespace StudyPress.Statistics.PostHoc;

/// <summary>
/// The Games–Howell procedure (Games and Howell 1976, "Pairwise multiple comparison procedures
/// with unequal n's and/or variances: a Monte Carlo study", J. Educational Statistics 1, 113-125):
/// Tukey's studentized range comparison with each pair's own variance estimate and
/// Welch–Satterthwaite degrees of freedom, for unequal variances.
/// <para>
/// For levels i &lt; j with sample variances v_i, v_j (divisor n − 1): Diff = mean_i − mean_j,
/// Se = √(v_i/n_i + v_j/n_j), df = Se⁴ / ((v_i/n_i)²/(n_i − 1) + (v_j/n_j)²/(n_j − 1)),
/// q = √2 |Diff| / Se (= √2 |t_Welch|), p = P(Q_{k, df} &gt; q) and the interval
/// Diff ± q_crit(α; k, df)/√2 · Se. For k = 2 this is Welch's t test. Since df differs per pair
/// there is no single critical value (<see cref="PostHocResult.CriticalValue"/> is undefined).
/// </para>
/// <para>
/// Edge cases: a group of one has no variance, and a pair whose groups both have zero variance
/// has Se = 0; such pairs get undefined statistics with a reason (Diff stays defined).
/// </para>
/// </summary>
public static class GamesHowell
{
    private const double Sqrt2 = 1.4142135623730950488;

    public static PostHocResult Compare(IReadOnlyList<string> levels, IReadOnlyList<double[]> groups, double alpha)
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
        var varOverN = new double[k];
        for (var i = 0; i < k; i++)
        {
            var g = groups[i];
            means[i] = Groups.Mean(g);
            varOverN[i] = g.Length > 1 ? Groups.SumOfSquares(g, means[i]) / (g.Length - 1) / g.Length : double.NaN;
        }

        var comparisons = new List<PairwiseComparison>(k * (k - 1) / 2);
        for (var i = 0; i < k; i++)
        {
            for (var j = i + 1; j < k; j++)
            {
                var diff = means[i] - means[j];
                string? reason = null;
                if (groups[i].Length < 2 || groups[j].Length < 2)
                {
                    var one = groups[i].Length < 2 ? levels[i] : levels[j];
                    reason = "group '" + one + "' has one observation, so its variance is not defined";
                }
                else if (!(varOverN[i] + varOverN[j] > 0))
                {
                    reason = "both groups have zero variance, so the standard error is zero";
                }

                if (reason is not null)
                {
                    var u = Quantity.Undefined(reason);
                    comparisons.Add(new PairwiseComparison(levels[i], levels[j], diff, u, u, u, u, u, u));
                    continue;
                }

                var a = varOverN[i];
                var b = varOverN[j];
                var se2 = a + b;
                var se = Math.Sqrt(se2);
                var df = se2 * se2 / ((a * a / (groups[i].Length - 1)) + (b * b / (groups[j].Length - 1)));

                // Mathematically df >= min(n_i, n_j) - 1 >= 1; guard against rounding just below 1.
                df = Math.Max(df, 1.0);
                var q = Sqrt2 * Math.Abs(diff) / se;
                var qCrit = StudentizedRange.UpperQuantile(alpha, k, df);
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

        return new PostHocResult(
            "Games-Howell",
            alpha,
            comparisons,
            Quantity.Undefined("the critical value differs per pair (Welch-Satterthwaite degrees of freedom)"));
    }
}
