namespace StudyPress.Statistics;

/// <summary>Small helpers shared by the procedures that work on groups of observations.</summary>
public static class Groups
{
    /// <summary>Total number of observations over all groups.</summary>
    public static int Count(IReadOnlyList<double[]> groups)
    {
        var n = 0;
        foreach (var g in groups)
        {
            n += g.Length;
        }

        return n;
    }

    /// <summary>
    /// Mean by two passes (the second pass corrects the first for rounding), as in
    /// Chan, Golub and LeVeque (1983), "Algorithms for computing the sample variance".
    /// </summary>
    public static double Mean(ReadOnlySpan<double> x)
    {
        if (x.Length == 0)
        {
            throw new ArgumentException("empty sample", nameof(x));
        }

        double s = 0;
        var first = x[0];
        var constant = true;
        foreach (var v in x)
        {
            s += v;
            constant &= v == first;
        }

        // A constant sample's mean is its value exactly (the sum could round).
        if (constant)
        {
            return first;
        }

        var m = s / x.Length;
        double c = 0;
        foreach (var v in x)
        {
            c += v - m;
        }

        return m + (c / x.Length);
    }

    /// <summary>
    /// Sum of squared deviations from the mean (corrected two-pass algorithm). Exactly 0 when all
    /// values are equal, decided on the values themselves (never from a rounded difference), so a
    /// zero variance is recognised exactly.
    /// </summary>
    public static double SumOfSquares(ReadOnlySpan<double> x, double mean)
    {
        if (IsConstant(x))
        {
            return 0.0;
        }

        double ss = 0, c = 0;
        foreach (var v in x)
        {
            var d = v - mean;
            ss += d * d;
            c += d;
        }

        return ss - (c * c / x.Length);
    }

    /// <summary>True when all values are equal (an empty or one-value sample is constant).</summary>
    public static bool IsConstant(ReadOnlySpan<double> x)
    {
        for (var i = 1; i < x.Length; i++)
        {
            if (x[i] != x[0])
            {
                return false;
            }
        }

        return true;
    }

    /// <summary>Throws when fewer than two groups or an empty group is given.</summary>
    public static void RequireGroups(IReadOnlyList<double[]> groups, int minGroups = 2)
    {
        if (groups.Count < minGroups)
        {
            throw new ArgumentException($"at least {minGroups} groups are needed", nameof(groups));
        }

        foreach (var g in groups)
        {
            if (g.Length == 0)
            {
                throw new ArgumentException("a group is empty", nameof(groups));
            }
        }
    }
}
