namespace StudyPress.Statistics.PostHoc;

/// <summary>How a family of p-values is adjusted for multiplicity.</summary>
public enum PValueAdjustmentMethod
{
    /// <summary>Holm (1979) sequentially rejective (step-down) Bonferroni procedure.</summary>
    Holm = 0,

    /// <summary>Bonferroni: each p-value times the number of tests, capped at 1.</summary>
    Bonferroni = 1,
}

/// <summary>
/// Multiplicity adjustments of a family of m p-values. Both control the family-wise error rate
/// (the probability of at least one false rejection) at alpha under any dependence among the tests.
/// <list type="bullet">
/// <item>Bonferroni: p̃_i = min(1, m p_i).</item>
/// <item>Holm (1979), "A simple sequentially rejective multiple test procedure", Scandinavian
/// Journal of Statistics 6, 65-70: with the p-values sorted ascending, p_(1) &lt;= ... &lt;= p_(m),
/// p̃_(j) = max over i &lt;= j of min(1, (m - i + 1) p_(i)). The running maximum makes the adjusted
/// values monotone in the order of the raw ones, so that "reject when p̃ &lt;= alpha" is exactly
/// Holm's step-down rule. Holm's adjusted values never exceed Bonferroni's.</item>
/// </list>
/// Tied raw p-values receive equal adjusted values.
/// </summary>
public static class PValueAdjustment
{
    /// <summary>Adjusts by the given method.</summary>
    public static double[] Adjust(IReadOnlyList<double> p, PValueAdjustmentMethod method) => method switch
    {
        PValueAdjustmentMethod.Holm => Holm(p),
        PValueAdjustmentMethod.Bonferroni => Bonferroni(p),
        _ => throw new ArgumentOutOfRangeException(nameof(method)),
    };

    /// <summary>
    /// Adjusts a family of p-values that may contain undefined entries. An undefined p-value means
    /// the family cannot be adjusted (its size and ordering are unknown), so every adjusted value is
    /// then undefined, with the reason of the first undefined entry.
    /// </summary>
    public static Quantity[] Adjust(IReadOnlyList<Quantity> p, PValueAdjustmentMethod method)
    {
        ArgumentNullException.ThrowIfNull(p);
        foreach (var q in p)
        {
            if (!q.IsDefined)
            {
                var reason = q.Reason!;
                return [.. p.Select(_ => Quantity.Undefined(reason))];
            }
        }

        return [.. Adjust([.. p.Select(q => q.Value)], method).Select(Quantity.Of)];
    }

    /// <summary>Bonferroni adjustment: min(1, m p_i).</summary>
    public static double[] Bonferroni(IReadOnlyList<double> p)
    {
        Validate(p);
        var m = p.Count;
        var adjusted = new double[m];
        for (var i = 0; i < m; i++)
        {
            adjusted[i] = Math.Min(1.0, m * p[i]);
        }

        return adjusted;
    }

    /// <summary>Holm (1979) step-down adjustment (see the class summary), in the input order.</summary>
    public static double[] Holm(IReadOnlyList<double> p)
    {
        Validate(p);
        var m = p.Count;
        var order = Enumerable.Range(0, m).ToArray();

        // Stable sort on the value: ties keep their input order, and the running maximum then
        // gives them the same adjusted value.
        Array.Sort(order, (a, b) =>
        {
            var c = p[a].CompareTo(p[b]);
            return c != 0 ? c : a.CompareTo(b);
        });

        var adjusted = new double[m];
        var running = 0.0;
        for (var j = 0; j < m; j++)
        {
            var i = order[j];
            var step = Math.Min(1.0, (m - j) * p[i]);
            running = Math.Max(running, step);
            adjusted[i] = running;
        }

        return adjusted;
    }

    /// <summary>
    /// Family-wise error rate of m unadjusted tests each at level alpha, 1 - (1 - alpha)^m,
    /// computed as -expm1(m log1p(-alpha)) to keep small rates accurate. This is exact only for
    /// independent tests. Pairwise comparisons of group means share groups and the variance
    /// estimate, so they are correlated and the value is then an approximation (for two-sided
    /// tests on normal data the true rate does not exceed it, by Šidák's inequality, and never exceeds m alpha).
    /// </summary>
    public static double FamilyWiseErrorRate(int m, double alpha)
    {
        if (m < 0)
        {
            throw new ArgumentOutOfRangeException(nameof(m), "the number of tests is negative");
        }

        if (!(alpha >= 0 && alpha <= 1))
        {
            throw new ArgumentOutOfRangeException(nameof(alpha), "alpha must lie in [0, 1]");
        }

        if (alpha == 1)
        {
            return m == 0 ? 0.0 : 1.0;
        }

        return -Elementary.Expm1(m * Elementary.Log1P(-alpha));
    }

    private static void Validate(IReadOnlyList<double> p)
    {
        ArgumentNullException.ThrowIfNull(p);
        foreach (var v in p)
        {
            if (!(v >= 0 && v <= 1))
            {
                throw new ArgumentException("a p-value is not in [0, 1]", nameof(p));
            }
        }
    }
}
