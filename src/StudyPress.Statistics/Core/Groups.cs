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
        foreach (var v in x)
        {
            s += v;
        }

        var m = s / x.Length;
        double c = 0;
        foreach (var v in x)
        {
            c += v - m;
        }

        return m + (c / x.Length);
    }

    /// <summary>Sum of squared deviations from the mean (corrected two-pass algorithm).</summary>
    public static double SumOfSquares(ReadOnlySpan<double> x, double mean)
    {
        double ss = 0, c = 0;
        foreach (var v in x)
        {
            var d = v - mean;
            ss += d * d;
            c += d;
        }

        return ss - (c * c / x.Length);
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
