namespace StudyPress.Statistics.Robust;

/// <summary>One group of a trimmed-means comparison.</summary>
/// <param name="N">Values in the group.</param>
/// <param name="Trimmed">g = ⌊γ n⌋, the values trimmed from each tail.</param>
/// <param name="Effective">h = n − 2g, the values left after trimming (the effective n).</param>
/// <param name="TrimmedMean">Mean of the h middle values (not defined when h = 0).</param>
/// <param name="WinsorizedVariance">Sample variance (divisor n − 1) of the winsorized values (not defined for n &lt; 2).</param>
public sealed record TrimmedGroup(int N, int Trimmed, int Effective, Quantity TrimmedMean, Quantity WinsorizedVariance);

/// <summary>Result of the heteroscedastic comparison of trimmed means.</summary>
/// <param name="Groups">Each group's trimmed mean, winsorized variance and effective n, in group order.</param>
/// <param name="F">The Welch-type statistic on trimmed means (for two groups, Yuen's t squared).</param>
/// <param name="Df1">k − 1.</param>
/// <param name="Df2">The fractional denominator df.</param>
/// <param name="P">Upper-tail F(df1, df2) probability of F.</param>
public sealed record TrimmedMeansResult(IReadOnlyList<TrimmedGroup> Groups, Quantity F, double Df1, Quantity Df2, Quantity P);

/// <summary>
/// Heteroscedastic one-way comparison of trimmed means: Yuen's (1974) two-sample test, in its
/// k-group form (Welch's 1951 method applied to trimmed means and winsorized variances, as given
/// in Wilcox's robust-statistics texts).
/// <para>
/// For group j with n_j values and trimming proportion γ (0 ≤ γ &lt; ½): g_j = ⌊γ n_j⌋ values are
/// removed from each tail, h_j = n_j − 2g_j remain. The trimmed mean X̄_tj is the mean of the h_j
/// middle order statistics; the winsorized values replace the g_j smallest by x_(g+1) and the g_j
/// largest by x_(n−g), and s²_wj is their sample variance (divisor n_j − 1). Then
/// d_j = (n_j − 1) s²_wj / (h_j (h_j − 1)), w_j = 1/d_j, U = Σ w_j, X̃ = Σ w_j X̄_tj / U,
/// A = Σ w_j (X̄_tj − X̃)² / (k − 1), L = Σ (1 − w_j/U)² / (h_j − 1),
/// B = 2 (k − 2) L / (k² − 1), F = A / (1 + B) on df1 = k − 1 and df2 = (k² − 1) / (3 L).
/// With γ = 0 this is Welch's (1951) heteroscedastic F (<see cref="Anova.WelchAnova"/>); with two
/// groups F = t² and df2 is Yuen's df, (d₁ + d₂)² / (d₁²/(h₁ − 1) + d₂²/(h₂ − 1)).
/// </para>
/// <para>
/// g_j is computed on γ as a decimal (its 15 significant digits, as written in a study), so
/// γ = 0.29 trims 29 of 100 values; a binary product 0.29 × 100 would give 28.999… and trim 28.
/// </para>
/// <para>
/// Domain: at least two groups. A group with h_j &lt; 2 leaves no variance to estimate, and a
/// group whose winsorized variance is zero has an infinite weight: the statistic, df2 and p are
/// then not defined (with that reason); the group values stay defined where they can be computed.
/// Sources: Yuen, K. K. (1974), "The two-sample trimmed t for unequal population variances",
/// Biometrika 61, 165–170; Welch, B. L. (1951), Biometrika 38, 330–336; Wilcox, R. R.,
/// Introduction to Robust Estimation and Hypothesis Testing (the k-group form, there "t1way").
/// </para>
/// </summary>
public static class TrimmedMeans
{
    /// <summary>g = ⌊γ n⌋ with γ taken as a decimal (see the class remarks).</summary>
    public static int TrimCount(double trim, int n)
    {
        if (!(trim >= 0 && trim < 0.5))
        {
            throw new ArgumentOutOfRangeException(nameof(trim), "the trimming proportion must be in [0, 0.5)");
        }

        ArgumentOutOfRangeException.ThrowIfNegative(n);
        return (int)decimal.Floor((decimal)trim * n);
    }

    /// <summary>The trimmed mean, winsorized variance and effective n of one group.</summary>
    public static TrimmedGroup Group(ReadOnlySpan<double> values, double trim)
    {
        var n = values.Length;
        var g = TrimCount(trim, n);
        var h = n - (2 * g);
        if (n == 0)
        {
            var none = Quantity.Undefined("the group has no values");
            return new TrimmedGroup(0, 0, 0, none, none);
        }

        var sorted = FastSort.SortedCopy(values);
        var mean = h > 0 ? Quantity.Of(Statistics.Groups.Mean(sorted.AsSpan(g, h))) : Quantity.Undefined("no values are left after trimming");
        if (n < 2)
        {
            return new TrimmedGroup(n, g, h, mean, Quantity.Undefined("a group of one has no variance"));
        }

        // Winsorize in place: the g smallest become x_(g+1), the g largest x_(n−g).
        for (var i = 0; i < g; i++)
        {
            sorted[i] = sorted[g];
            sorted[n - 1 - i] = sorted[n - 1 - g];
        }

        var wm = Statistics.Groups.Mean(sorted);
        var variance = Statistics.Groups.SumOfSquares(sorted, wm) / (n - 1);
        return new TrimmedGroup(n, g, h, mean, Quantity.Of(variance));
    }

    /// <summary>The comparison of the groups' trimmed means (see the class remarks).</summary>
    public static TrimmedMeansResult Test(IReadOnlyList<double[]> groups, double trim)
    {
        Statistics.Groups.RequireGroups(groups);
        var k = groups.Count;
        var parts = new TrimmedGroup[k];
        for (var j = 0; j < k; j++)
        {
            parts[j] = Group(groups[j], trim);
        }

        TrimmedMeansResult Undefined(string reason)
        {
            var u = Quantity.Undefined(reason);
            return new TrimmedMeansResult(parts, u, k - 1, u, u);
        }

        if (parts.Any(p => p.Effective < 2))
        {
            return Undefined("a group has fewer than two values left after trimming");
        }

        if (parts.Any(p => !(p.WinsorizedVariance.Value > 0)))
        {
            return Undefined("a group's winsorized variance is zero");
        }

        // Welch's combination with weights 1/dⱼ, dⱼ = (nⱼ − 1) s²_wⱼ / (hⱼ(hⱼ − 1)), on hⱼ − 1 df.
        var w = parts.Select(p => 1 / ((p.N - 1) * p.WinsorizedVariance.Value / ((double)p.Effective * (p.Effective - 1)))).ToArray();
        var welch = Anova.WelchAnova.Combine(w, [.. parts.Select(p => p.TrimmedMean.Value)], [.. parts.Select(p => p.Effective - 1.0)]);
        return new TrimmedMeansResult(parts, welch.F, welch.Df1, welch.Df2, welch.P);
    }
}
