using StudyPress.Statistics.Distributions;

namespace StudyPress.Statistics.Power;

/// <summary>The smallest per-group sample size reaching a target power, and the power it reaches.</summary>
public sealed record AnovaSampleSize(Quantity NPerGroup, Quantity TotalN, Quantity AchievedPower);

/// <summary>
/// Power of the one-way fixed-effects ANOVA F test (Cohen 1988, "Statistical Power Analysis for
/// the Behavioral Sciences", 2nd ed., ch. 8). With effect size f (Cohen's f, the standard
/// deviation of the group means over the common within-group standard deviation), k groups of n,
/// df1 = k − 1, df2 = k(n − 1) and noncentrality λ = f² k n, the power is
/// P(F'(df1, df2, λ) &gt; F_crit), where F_crit is the upper-α quantile of the central F. The power
/// is computed from the noncentral F upper tail directly (no 1 − CDF).
/// </summary>
public static class AnovaPower
{
    /// <summary>Power of the F test for effect size f, k groups, n per group, level alpha.</summary>
    public static Quantity Power(double cohenF, int groups, int nPerGroup, double alpha)
    {
        Check(cohenF, groups, alpha);
        if (nPerGroup < 2)
        {
            return Quantity.Undefined("at least two observations per group are needed for a residual variance");
        }

        var df1 = groups - 1.0;
        var df2 = groups * (nPerGroup - 1.0);
        var lambda = cohenF * cohenF * groups * nPerGroup;
        var fCrit = Probability.FCritical(alpha, df1, df2);
        return Quantity.Of(NoncentralF.Upper(fCrit, df1, df2, lambda));
    }

    /// <summary>
    /// The smallest n per group (n ≥ 2) whose power reaches <paramref name="targetPower"/>. Power
    /// increases with n, so the search doubles n until the target is reached and then bisects.
    /// Undefined when f = 0 (the power stays alpha) or when n would exceed <paramref name="maxN"/>.
    /// </summary>
    public static AnovaSampleSize SampleSize(double cohenF, int groups, double alpha, double targetPower, int maxN = 10_000_000)
    {
        Check(cohenF, groups, alpha);
        if (!(targetPower > 0 && targetPower < 1))
        {
            throw new ArgumentOutOfRangeException(nameof(targetPower), "the target power must be in (0, 1)");
        }

        double P(int n) => Power(cohenF, groups, n, alpha).Value;

        if (cohenF == 0 && P(2) < targetPower)
        {
            return Undefined("with effect size f = 0 the power equals alpha for every sample size");
        }

        var lo = 1;
        var hi = 2;
        while (P(hi) < targetPower)
        {
            lo = hi;
            if (hi > maxN / 2)
            {
                return Undefined("the target power needs more than " + maxN.ToString(System.Globalization.CultureInfo.InvariantCulture) + " per group");
            }

            hi *= 2;
        }

        // Invariant: P(lo) < target (or lo = 1, below the smallest allowed n), P(hi) >= target.
        while (hi - lo > 1)
        {
            var mid = lo + ((hi - lo) / 2);
            if (P(mid) >= targetPower)
            {
                hi = mid;
            }
            else
            {
                lo = mid;
            }
        }

        return new AnovaSampleSize(Quantity.Of(hi), Quantity.Of((double)hi * groups), Quantity.Of(P(hi)));
    }

    private static void Check(double cohenF, int groups, double alpha)
    {
        if (!(cohenF >= 0) || !double.IsFinite(cohenF))
        {
            throw new ArgumentOutOfRangeException(nameof(cohenF), "Cohen's f must be finite and non-negative");
        }

        if (groups < 2)
        {
            throw new ArgumentOutOfRangeException(nameof(groups), "at least two groups are needed");
        }

        if (!(alpha > 0 && alpha < 1))
        {
            throw new ArgumentOutOfRangeException(nameof(alpha), "alpha must be in (0, 1)");
        }
    }

    private static AnovaSampleSize Undefined(string reason)
    {
        var u = Quantity.Undefined(reason);
        return new AnovaSampleSize(u, u, u);
    }
}
