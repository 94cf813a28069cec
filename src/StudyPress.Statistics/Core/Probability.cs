using MathNet.Numerics;
using MathNet.Numerics.Distributions;

namespace StudyPress.Statistics;

/// <summary>
/// Upper-tail probabilities computed directly from the regularized incomplete beta and gamma
/// functions, so that small p-values keep their relative accuracy (1 - CDF would cancel).
/// </summary>
public static class Probability
{
    /// <summary>P(F(d1, d2) &gt;= f) = I_{d2/(d2 + d1 f)}(d2/2, d1/2).</summary>
    public static double FUpper(double f, double d1, double d2)
    {
        if (f <= 0)
        {
            return 1.0;
        }

        var x = d2 / (d2 + (d1 * f));
        return SpecialFunctions.BetaRegularized(d2 / 2.0, d1 / 2.0, x);
    }

    /// <summary>Upper alpha quantile of F(d1, d2).</summary>
    public static double FCritical(double alpha, double d1, double d2) =>
        FisherSnedecor.InvCDF(d1, d2, 1.0 - alpha);

    /// <summary>Two-sided p-value of Student's t with df degrees of freedom.</summary>
    public static double TTwoSided(double t, double df)
    {
        var x = df / (df + (t * t));
        return SpecialFunctions.BetaRegularized(df / 2.0, 0.5, x);
    }

    /// <summary>Upper alpha/2 quantile of Student's t.</summary>
    public static double TCritical(double alpha, double df) => StudentT.InvCDF(0, 1, df, 1.0 - (alpha / 2.0));

    /// <summary>P(chi-square(df) &gt;= x).</summary>
    public static double ChiSquareUpper(double x, double df) =>
        x <= 0 ? 1.0 : SpecialFunctions.GammaUpperRegularized(df / 2.0, x / 2.0);

    /// <summary>Two-sided p-value of a standard normal statistic.</summary>
    public static double NormalTwoSided(double z) => SpecialFunctions.Erfc(Math.Abs(z) / Math.Sqrt(2.0));
}
