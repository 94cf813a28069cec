namespace StudyPress.Statistics.PostHoc;

/// <summary>
/// exp(x) - 1 and log(1 + x) accurate to a few ulps for small |x|, by the rounding-error
/// compensation of Kahan (see Goldberg 1991, "What every computer scientist should know about
/// floating-point arithmetic", ACM Computing Surveys 23, theorem 4). MathNet.Numerics 5.0.0's
/// Expm1 truncates its series (relative error near 1e-10 at x = 0.01), too coarse for tail sums.
/// </summary>
internal static class ExpLog
{
    /// <summary>exp(x) - 1.</summary>
    public static double Expm1(double x)
    {
        if (double.IsNegativeInfinity(x))
        {
            return -1.0;
        }

        var u = Math.Exp(x);
        if (u == 1.0)
        {
            return x;
        }

        var um1 = u - 1.0;
        if (um1 == -1.0 || double.IsPositiveInfinity(u))
        {
            return um1;
        }

        return um1 * x / Math.Log(u);
    }

    /// <summary>log(1 + x) for x &gt;= -1.</summary>
    public static double Log1p(double x)
    {
        var u = 1.0 + x;
        if (u == 1.0)
        {
            return x;
        }

        if (u == 0.0 || double.IsPositiveInfinity(u))
        {
            return Math.Log(u);
        }

        return Math.Log(u) * x / (u - 1.0);
    }
}
