using MathNet.Numerics;
using MathNet.Numerics.Distributions;
using StudyPress.Statistics.Distributions;

namespace StudyPress.Statistics;

/// <summary>
/// Upper-tail probabilities computed directly from the regularized incomplete beta and gamma
/// functions, so that small p-values keep their relative accuracy (1 - CDF would cancel), and
/// their inverses (critical values) over the whole domain 0 &lt; alpha &lt; 1.
/// <para>
/// Quantiles: closed forms where they exist (Student's t with 1 df: t = cot(π α/2), the Cauchy
/// quantile; with 2 df: t = (1 − α) √(2 / (α (2 − α)))), otherwise the root of
/// ln P(tail ≥ x) = ln α in u = ln x by Brent's method, bracketed by steps that double in size
/// (so any quantile up to the largest double is reached in a few dozen evaluations) and solved
/// to a few units in the last place of u; the tail used is the upper one for α ≤ ½ and the lower
/// one otherwise, so neither end loses digits to 1 − p. A quantile beyond the largest double is
/// returned as +∞ (the caller's <see cref="Quantity"/> turns that into "not defined").
/// </para>
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

    /// <summary>P(F(d1, d2) &lt;= f) = I_{d1 f/(d2 + d1 f)}(d1/2, d2/2).</summary>
    public static double FLower(double f, double d1, double d2)
    {
        if (f <= 0)
        {
            return 0.0;
        }

        var x = d1 * f / (d2 + (d1 * f));
        return SpecialFunctions.BetaRegularized(d1 / 2.0, d2 / 2.0, x);
    }

    /// <summary>
    /// Density of F(d1, d2) at f &gt; 0, evaluated in logarithms:
    /// ln f = (d1/2) ln(d1/d2) + (d1/2 − 1) ln f − ((d1 + d2)/2) ln(1 + d1 f/d2) − ln B(d1/2, d2/2).
    /// The textbook product form raises d2 to the power d2, which overflows a double from
    /// d2 ≈ 144 onwards and turns the density into ∞/∞; the logarithmic form stays finite for any
    /// degrees of freedom. At f = 0 the density is +∞ (d1 &lt; 2), 1 (d1 = 2) or 0 (d1 &gt; 2).
    /// </summary>
    public static double FDensity(double f, double d1, double d2)
    {
        CheckDf(d1);
        CheckDf(d2);
        if (f < 0 || double.IsNaN(f))
        {
            return f < 0 ? 0.0 : double.NaN;
        }

        if (f == 0)
        {
            return d1 < 2 ? double.PositiveInfinity : d1 == 2 ? 1.0 : 0.0;
        }

        double logDensity = (0.5 * d1 * Math.Log(d1 / d2)) + (((0.5 * d1) - 1) * Math.Log(f))
            - (0.5 * (d1 + d2) * LogOnePlus(d1 * f / d2)) - LogBeta(0.5 * d1, 0.5 * d2);
        return Math.Exp(logDensity);
    }

    /// <summary>ln(1 + x) without the cancellation of ln(1 + x) for small x (Goldberg 1991, Theorem 4).</summary>
    private static double LogOnePlus(double x)
    {
        double u = 1 + x;
        return u == 1 ? x : Math.Log(u) * x / (u - 1);
    }

    /// <summary>
    /// ln B(a, b). For b ≥ 10 the difference ln Γ(b) − ln Γ(a + b) is taken from Stirling's series,
    /// −(b − ½) ln(1 + a/b) − a ln(a + b) + a + δ(b) − δ(a + b) with δ(x) = ln Γ(x) − (x − ½) ln x + x − ½ ln 2π,
    /// so no two large logarithms of gamma functions are subtracted (their difference would lose
    /// about log10(b ln b) digits); otherwise the three log-gamma values are combined directly.
    /// </summary>
    private static double LogBeta(double a, double b)
    {
        if (b < 10)
        {
            return SpecialFunctions.BetaLn(a, b);
        }

        double ab = a + b;
        double difference = (-(b - 0.5) * LogOnePlus(a / b)) - (a * Math.Log(ab)) + a + StirlingRemainder(b) - StirlingRemainder(ab);
        return SpecialFunctions.GammaLn(a) + difference;
    }

    /// <summary>δ(x) = ln Γ(x) − ((x − ½) ln x − x + ½ ln 2π) for x ≥ 10, five terms of Stirling's series (error below 1e-17).</summary>
    private static double StirlingRemainder(double x)
    {
        double r = 1 / x, r2 = r * r;
        return r * ((1.0 / 12) - (r2 * ((1.0 / 360) - (r2 * ((1.0 / 1260) - (r2 * ((1.0 / 1680) - (r2 / 1188))))))));
    }

    /// <summary>Upper alpha quantile of F(d1, d2): the f with P(F &gt;= f) = alpha.</summary>
    public static double FCritical(double alpha, double d1, double d2)
    {
        CheckAlpha(alpha);
        CheckDf(d1);
        CheckDf(d2);
        return alpha <= 0.5
            ? SolveLog(u => FUpper(Math.Exp(u), d1, d2), alpha, decreasing: true, start: 0.0)
            : SolveLog(u => FLower(Math.Exp(u), d1, d2), 1.0 - alpha, decreasing: false, start: 0.0);
    }

    /// <summary>Two-sided p-value of Student's t with df degrees of freedom.</summary>
    public static double TTwoSided(double t, double df)
    {
        var x = df / (df + (t * t));
        return SpecialFunctions.BetaRegularized(df / 2.0, 0.5, x);
    }

    /// <summary>
    /// Upper alpha/2 quantile of Student's t: the t &gt; 0 with P(|T| &gt;= t) = alpha. Closed
    /// forms at 1 and 2 df; otherwise solved on the two-sided tail (or, for alpha &gt; ½, on
    /// P(|T| &lt; t) = I_{t²/(df + t²)}(½, df/2)).
    /// </summary>
    public static double TCritical(double alpha, double df)
    {
        CheckAlpha(alpha);
        CheckDf(df);
        if (df == 1)
        {
            // Cauchy: P(|T| >= t) = 1 − (2/π) atan t, so t = tan(π(1 − α)/2) = 1/tan(π α/2).
            return 1.0 / Math.Tan(0.5 * Math.PI * alpha);
        }

        if (df == 2)
        {
            // P(|T| >= t) = 1 − t/√(2 + t²), so t² = 2(1 − α)²/(α(2 − α)).
            return (1.0 - alpha) * Math.Sqrt(2.0 / (alpha * (2.0 - alpha)));
        }

        if (double.IsPositiveInfinity(df))
        {
            return -Normal.InvCDF(0, 1, 0.5 * alpha);
        }

        if (alpha <= 0.5 && df <= MaxSeriesDf && df == Math.Floor(df))
        {
            return SolveLog(u => TTwoSidedSeries(Math.Exp(u), (int)df), alpha, decreasing: true, start: 0.0);
        }

        return alpha <= 0.5
            ? SolveLog(u => TTwoSided(Math.Exp(u), df), alpha, decreasing: true, start: 0.0)
            : SolveLog(u => TTwoSidedInner(Math.Exp(u), df), 1.0 - alpha, decreasing: false, start: 0.0);
    }

    /// <summary>Largest integer df for which <see cref="TTwoSidedSeries"/> is used (its length grows with df).</summary>
    private const int MaxSeriesDf = 1000;

    /// <summary>
    /// P(|T| &gt;= t) for an integer ν ≥ 1 as a series of positive terms, accurate to a few units
    /// in the last place (MathNet's incomplete beta loses about two digits at large ν through
    /// ln Γ differences). With c = ν/(ν + t²) = cos²θ, θ = atan(t/√ν), the classical finite
    /// series for P(|T| &lt; t) (Abramowitz and Stegun 26.7.3–4) are the first terms of
    /// expansions that sum to 1; the tail is therefore the rest of them:
    /// even ν: s Σ_{j ≥ ν/2} a_j c^j, a_j = (2j − 1)!!/(2j)!!, s = sinθ (from Σ a_j c^j = 1/s);
    /// odd ν: (2/π) s √c Σ_{j ≥ (ν − 1)/2} b_j c^j, b_j = (2j)!!/(2j + 1)!!
    /// (from arcsin(x)/(x√(1 − x²)) = Σ b_j x^(2j) at x = cosθ). ln c = −log1p(t²/ν) keeps c^j accurate.
    /// </summary>
    internal static double TTwoSidedSeries(double t, int df)
    {
        if (!(t > 0))
        {
            return 1.0;
        }

        var ratio = t * t / df;
        if (double.IsPositiveInfinity(ratio))
        {
            return 0.0;
        }

        var lnC = -Elementary.Log1P(ratio);
        var c = Math.Exp(lnC);
        var even = df % 2 == 0;
        var j0 = even ? df / 2 : (df - 1) / 2;

        // The coefficient at j0 by its recurrence, then the first term in logarithms.
        double coef = 1;
        for (var j = 1; j <= j0; j++)
        {
            coef *= even ? (2.0 * j - 1) / (2.0 * j) : 2.0 * j / (2.0 * j + 1);
        }

        // s = t/√(ν + t²); s √c = t √ν/(ν + t²) = √(ratio)/(1 + ratio).
        var prefactor = even ? Math.Sqrt(ratio / (1 + ratio)) : 2 / Math.PI * Math.Sqrt(ratio) / (1 + ratio);
        var term = Math.Exp(Math.Log(coef) + (j0 * lnC));
        if (term == 0)
        {
            return 0.0;
        }

        double sum = 0;
        for (var j = j0; j < j0 + 10_000_000; j++)
        {
            sum += term;
            if (term < sum * 1e-17)
            {
                break;
            }

            term *= c * (even ? (2.0 * j + 1) / (2.0 * j + 2) : (2.0 * j + 2) / (2.0 * j + 3));
        }

        return Math.Min(1.0, prefactor * sum);
    }

    /// <summary>P(chi-square(df) &gt;= x).</summary>
    public static double ChiSquareUpper(double x, double df) =>
        x <= 0 ? 1.0 : SpecialFunctions.GammaUpperRegularized(df / 2.0, x / 2.0);

    /// <summary>Upper alpha quantile of chi-square(df): the x with P(X &gt;= x) = alpha.</summary>
    public static double ChiSquareCritical(double alpha, double df)
    {
        CheckAlpha(alpha);
        CheckDf(df);
        return alpha <= 0.5
            ? SolveLog(u => ChiSquareUpper(Math.Exp(u), df), alpha, decreasing: true, start: Math.Log(df))
            : SolveLog(u => GammaLowerRegularized(df / 2.0, 0.5 * Math.Exp(u)), 1.0 - alpha, decreasing: false, start: Math.Log(df));
    }

    /// <summary>
    /// P(a, x), the regularized lower incomplete gamma function. For x &lt; a + 1 by its power
    /// series x^a e^(−x)/Γ(a + 1) Σ_n x^n / ((a + 1)⋯(a + n)) (Abramowitz and Stegun 6.5.29), which
    /// keeps its relative accuracy for tiny x (where MathNet's returns 0); otherwise 1 − Q(a, x).
    /// </summary>
    internal static double GammaLowerRegularized(double a, double x)
    {
        if (!(x > 0))
        {
            return 0.0;
        }

        if (x >= a + 1)
        {
            return 1.0 - SpecialFunctions.GammaUpperRegularized(a, x);
        }

        double term = 1, sum = 1;
        for (var n = 1; n < 10_000; n++)
        {
            term *= x / (a + n);
            sum += term;
            if (term < sum * 1e-17)
            {
                break;
            }
        }

        return Math.Exp((a * Math.Log(x)) - x - SpecialFunctions.GammaLn(a + 1)) * sum;
    }

    /// <summary>Two-sided p-value of a standard normal statistic.</summary>
    public static double NormalTwoSided(double z) => SpecialFunctions.Erfc(Math.Abs(z) / Math.Sqrt(2.0));

    /// <summary>P(|T| &lt; t) = I_{t²/(df + t²)}(½, df/2), accurate when it is small.</summary>
    private static double TTwoSidedInner(double t, double df)
    {
        var t2 = t * t;
        return SpecialFunctions.BetaRegularized(0.5, df / 2.0, t2 / (df + t2));
    }

    /// <summary>
    /// The x = e^u with p(u) = target, p monotone in u (decreasing or increasing), 0 &lt; target &lt; 1:
    /// Brent's method on ln p(u) − ln target, bracketed from <paramref name="start"/> by doubling
    /// steps. +∞ when the root lies beyond the largest double, 0 when below the smallest.
    /// </summary>
    private static double SolveLog(Func<double, double> p, double target, bool decreasing, double start)
    {
        var lnTarget = Math.Log(target);

        // g increases with u in both cases.
        double G(double u)
        {
            // A tail that underflows to 0 gives a large finite value, so that Brent's method
            // bisects towards the root instead of interpolating with infinities.
            var v = Math.Max(Math.Log(p(u)) - lnTarget, -1e6);
            return decreasing ? -v : v;
        }

        const double Limit = 709.0;
        double a = start, ga = G(a);
        if (ga == 0)
        {
            return Math.Exp(a);
        }

        var step = 1.0;
        var direction = ga < 0 ? 1.0 : -1.0;
        var b = a;
        var gb = ga;
        while (Math.Sign(gb) == Math.Sign(ga))
        {
            a = b;
            ga = gb;
            b = a + (direction * step);
            if (b > Limit)
            {
                return double.PositiveInfinity;
            }

            if (b < -Limit)
            {
                return 0.0;
            }

            gb = G(b);
            step *= 2;
            if (double.IsNaN(gb))
            {
                throw new InvalidOperationException("a tail probability is not a number while bracketing a quantile");
            }
        }

        var (lo, glo, hi, ghi) = a < b ? (a, ga, b, gb) : (b, gb, a, ga);
        return Math.Exp(RootFinding.Brent(G, lo, hi, glo, ghi, 1e-16));
    }

    private static void CheckAlpha(double alpha)
    {
        if (!(alpha > 0 && alpha < 1))
        {
            throw new ArgumentOutOfRangeException(nameof(alpha), "alpha must lie in (0, 1)");
        }
    }

    private static void CheckDf(double df)
    {
        if (!(df > 0))
        {
            throw new ArgumentOutOfRangeException(nameof(df), "degrees of freedom must be positive");
        }
    }
}
