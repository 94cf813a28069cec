namespace StudyPress.Statistics.Anova;

/// <summary>Result of Welch's heteroscedastic one-way test.</summary>
public sealed record WelchResult(Quantity F, double Df1, Quantity Df2, Quantity P);

/// <summary>
/// Welch's (1951) one-way ANOVA for unequal variances. With w_i = n_i / s_i²,
/// m = sum w_i x̄_i / sum w_i, A = sum w_i (x̄_i - m)² / (k - 1),
/// L = sum (1 - w_i / sum w)² / (n_i - 1), B = 1 + 2 (k - 2) L / (k² - 1):
/// F = A / B on df1 = k - 1 and df2 = (k² - 1) / (3 L).
/// Source: Welch, B. L. (1951), Biometrika 38, 330-336.
/// Every group needs two observations and a positive variance.
/// </summary>
public static class WelchAnova
{
    public static WelchResult Test(IReadOnlyList<double[]> groups)
    {
        Groups.RequireGroups(groups);
        var k = groups.Count;
        foreach (var g in groups)
        {
            if (g.Length < 2)
            {
                var u = Quantity.Undefined("a group has fewer than two observations");
                return new WelchResult(u, k - 1, u, u);
            }
        }

        var w = new double[k];
        var means = new double[k];
        for (var i = 0; i < k; i++)
        {
            means[i] = Groups.Mean(groups[i]);
            var variance = Groups.SumOfSquares(groups[i], means[i]) / (groups[i].Length - 1);
            if (!(variance > 0))
            {
                var u = Quantity.Undefined("a group has zero variance");
                return new WelchResult(u, k - 1, u, u);
            }

            w[i] = groups[i].Length / variance;
        }

        return Combine(w, means, [.. groups.Select(g => g.Length - 1.0)]);
    }

    /// <summary>
    /// Welch's (1951) F from each group's weight wᵢ (one over the squared standard error of its
    /// estimate), estimate and df νᵢ: the weighted centre, A = Σ wᵢ(mᵢ − m̄)² / (k − 1),
    /// Λ = Σ (1 − wᵢ/Σw)² / νᵢ, F = A / (1 + 2(k − 2)Λ / (k² − 1)) on (k − 1, (k² − 1) / (3Λ)).
    /// Shared by the means (νᵢ = nᵢ − 1) and the trimmed means (νᵢ = hᵢ − 1, weights from the
    /// winsorized variances).
    /// </summary>
    public static WelchResult Combine(IReadOnlyList<double> w, IReadOnlyList<double> means, IReadOnlyList<double> dfs)
    {
        ArgumentNullException.ThrowIfNull(w);
        ArgumentNullException.ThrowIfNull(means);
        ArgumentNullException.ThrowIfNull(dfs);
        var k = w.Count;
        double sw = 0;
        for (var i = 0; i < k; i++)
        {
            sw += w[i];
        }

        double m = 0;
        for (var i = 0; i < k; i++)
        {
            m += w[i] * means[i];
        }

        m /= sw;
        double a = 0, l = 0;
        for (var i = 0; i < k; i++)
        {
            var d = means[i] - m;
            a += w[i] * d * d;
            var r = 1 - (w[i] / sw);
            l += r * r / dfs[i];
        }

        a /= k - 1;
        var b = 1 + (2.0 * (k - 2) * l / ((k * k) - 1.0));
        var f = a / b;
        var df2 = ((k * k) - 1.0) / (3.0 * l);
        return new WelchResult(Quantity.Of(f), k - 1, Quantity.Of(df2), Quantity.Of(Probability.FUpper(f, k - 1, df2)));
    }
}
