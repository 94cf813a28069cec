namespace StudyPress.Statistics;

/// <summary>
/// log(1 + x) and exp(x) − 1 accurate for small x (the framework's versions are computed as
/// Log(1 + x) and Exp(x) − 1 and lose the digits these tails need). Tricks from Goldberg (1991),
/// "What every computer scientist should know about floating-point arithmetic", and Kahan.
/// </summary>
internal static class Elementary
{
    public static double Log1P(double x)
    {
        var u = 1.0 + x;
        if (u == 1.0)
        {
            return x;
        }

        return Math.Log(u) * x / (u - 1.0);
    }

    public static double Expm1(double x)
    {
        if (Math.Abs(x) < 1e-5)
        {
            return x + (0.5 * x * x) + (x * x * x / 6.0);
        }

        var u = Math.Exp(x);
        if (u == 1.0)
        {
            return x;
        }

        var um1 = u - 1.0;
        if (um1 == -1.0)
        {
            return -1.0;
        }

        return double.IsPositiveInfinity(u) ? u : um1 * x / Math.Log(u);
    }
}
