using MathNet.Numerics;

namespace StudyPress.Statistics.Distributions;

/// <summary>
/// The noncentral F distribution F'(d1, d2, λ): (χ'²(d1, λ)/d1) / (χ²(d2)/d2), λ ≥ 0.
/// <para>
/// Poisson mixture of central beta variables (Patnaik 1949; Tiku 1965): with x = d1 f / (d1 f + d2),
/// y = 1 − x = d2 / (d1 f + d2) (both formed directly), a = d1/2, b = d2/2, μ = λ/2 and Poisson
/// weights w_j = e^(−μ) μ^j / j!,
/// P(F' ≤ f) = Σ_j w_j I_x(a + j, b) and P(F' &gt; f) = Σ_j w_j I_y(b, a + j).
/// As in Ding (1992, Applied Statistics 41, AS 275) and Frick's remarks on AS 226 (AS R84, 1990),
/// the series is not started at j = 0 (whose weight underflows for large λ) but near the Poisson
/// mode, and successive beta values follow from
/// I_x(a + j, b) − I_x(a + j + 1, b) = t_j = Γ(a + b + j) / (Γ(a + j + 1) Γ(b)) x^(a + j) y^b,
/// always run in the direction in which the terms are added (downwards for the CDF, upwards for
/// the upper tail), so no cancellation occurs; weights and t_j are carried in logarithms. The
/// truncation is bounded by the geometric tail bound of the Poisson weights: the CDF starts
/// where P(J &gt; j) &lt; 1e-18 and the upper tail where P(J &lt; j) &lt; 1e-18, and each sum stops
/// when the remaining weight is below 1e-17 of the sum. Relative accuracy is about that of the
/// incomplete beta function used for the first term (about 1e-13 for moderate parameters).
/// </para>
/// </summary>
public static class NoncentralF
{
    private const double StartTail = 1e-18;
    private const double StopRel = 1e-17;
    private const int MaxTerms = 10_000_000;

    /// <summary>P(F' ≤ f; d1, d2, λ).</summary>
    public static double Cdf(double f, double d1, double d2, double lambda)
    {
        Validate(f, d1, d2, lambda);
        if (f <= 0)
        {
            return 0.0;
        }

        if (double.IsPositiveInfinity(f))
        {
            return 1.0;
        }

        var (x, y) = Arguments(f, d1, d2);
        var a = 0.5 * d1;
        var b = 0.5 * d2;
        var mu = 0.5 * lambda;
        if (mu == 0)
        {
            return SpecialFunctions.BetaRegularized(a, b, x);
        }

        // Start above the mode where the remaining Poisson weight is negligible, then add downwards.
        var mode = Math.Floor(mu);
        var j = mode;
        var lnW = LnPoisson(j, mu);
        while (true)
        {
            var r = mu / (j + 1);
            if (r < 1 && lnW + Math.Log(r / (1 - r)) < Math.Log(StartTail))
            {
                break;
            }

            lnW += Math.Log(mu / (j + 1));
            j++;
        }

        var c = SpecialFunctions.BetaRegularized(a + j, b, x);
        // ln t_{j-1}
        var lnT = LnTerm(a, b, j - 1, x, y);
        double sum = 0;
        for (var n = 0; n < MaxTerms; n++)
        {
            sum += Math.Exp(lnW) * c;
            if (j == 0)
            {
                break;
            }

            if (j < mu)
            {
                var r = j / mu;
                if (lnW + Math.Log(r / (1 - r)) < Math.Log(StopRel * sum))
                {
                    break;
                }
            }

            c += Math.Exp(lnT);
            lnW += Math.Log(j / mu);
            j--;
            if (j > 0)
            {
                lnT += Math.Log((a + j) / ((a + b + j - 1) * x));
            }
        }

        return Math.Min(sum, 1.0);
    }

    /// <summary>P(F' &gt; f; d1, d2, λ), summed directly (no 1 − CDF).</summary>
    public static double Upper(double f, double d1, double d2, double lambda)
    {
        Validate(f, d1, d2, lambda);
        if (f <= 0)
        {
            return 1.0;
        }

        if (double.IsPositiveInfinity(f))
        {
            return 0.0;
        }

        var (x, y) = Arguments(f, d1, d2);
        var a = 0.5 * d1;
        var b = 0.5 * d2;
        var mu = 0.5 * lambda;
        if (mu == 0)
        {
            return SpecialFunctions.BetaRegularized(b, a, y);
        }

        // Start below the mode where the Poisson weight below is negligible, then add upwards.
        var j = Math.Floor(mu);
        var lnW = LnPoisson(j, mu);
        while (j > 0)
        {
            var r = j / mu;
            if (lnW + Math.Log(r / (1 - r)) < Math.Log(StartTail))
            {
                break;
            }

            lnW += Math.Log(j / mu);
            j--;
        }

        var u = SpecialFunctions.BetaRegularized(b, a + j, y);
        var lnT = LnTerm(a, b, j, x, y);
        double sum = 0;
        for (var n = 0; n < MaxTerms; n++)
        {
            sum += Math.Exp(lnW) * u;
            var r = mu / (j + 1);
            if (r < 1 && sum == 0 && lnW < -800)
            {
                break;
            }

            if (r < 1 && sum > 0 && lnW + Math.Log(r / (1 - r)) < Math.Log(StopRel * sum))
            {
                break;
            }

            u += Math.Exp(lnT);
            lnT += Math.Log(x * (a + b + j) / (a + j + 1));
            lnW += Math.Log(r);
            j++;
        }

        return Math.Min(sum, 1.0);
    }

    /// <summary>
    /// The noncentrality λ ≥ 0 with P(F' ≤ f; d1, d2, λ) = <paramref name="cdf"/>, for confidence
    /// intervals of λ by inverting the distribution (Steiger and Fouladi 1997; Steiger 2004). The
    /// CDF decreases strictly in λ, so the root is unique; when already P(F ≤ f; λ = 0) ≤ cdf no
    /// λ ≥ 0 reaches the target and 0 is returned (the interval is cut at 0). Solved by Brent's
    /// method on the upper tail when cdf &gt; 0.5 (so targets near 1 keep their accuracy), to a
    /// relative tolerance of 1e-10.
    /// </summary>
    public static double SolveNoncentrality(double f, double d1, double d2, double cdf)
    {
        Validate(f, d1, d2, 0);
        if (!(cdf > 0 && cdf < 1))
        {
            throw new ArgumentOutOfRangeException(nameof(cdf), "the target probability must be in (0, 1)");
        }

        if (!(f > 0) || double.IsPositiveInfinity(f))
        {
            throw new ArgumentOutOfRangeException(nameof(f), "f must be positive and finite");
        }

        var useUpper = cdf > 0.5;
        var target = useUpper ? 1.0 - cdf : cdf;

        // g increases with λ in both forms.
        double G(double lambda) => useUpper ? Upper(f, d1, d2, lambda) - target : target - Cdf(f, d1, d2, lambda);

        var g0 = G(0);
        if (g0 >= 0)
        {
            return 0.0;
        }

        var hi = Math.Max(1.0, 2.0 * d1 * f);
        var ghi = G(hi);
        var lo = 0.0;
        var glo = g0;
        while (ghi < 0)
        {
            lo = hi;
            glo = ghi;
            hi *= 2;
            ghi = G(hi);
        }

        return RootFinding.Brent(G, lo, hi, glo, ghi, 1e-10 * Math.Max(1.0, lo));
    }

    private static void Validate(double f, double d1, double d2, double lambda)
    {
        if (double.IsNaN(f))
        {
            throw new ArgumentException("f is NaN", nameof(f));
        }

        if (!(d1 > 0) || !double.IsFinite(d1))
        {
            throw new ArgumentOutOfRangeException(nameof(d1), "d1 must be positive and finite");
        }

        if (!(d2 > 0) || !double.IsFinite(d2))
        {
            throw new ArgumentOutOfRangeException(nameof(d2), "d2 must be positive and finite");
        }

        if (!(lambda >= 0) || !double.IsFinite(lambda))
        {
            throw new ArgumentOutOfRangeException(nameof(lambda), "lambda must be finite and non-negative");
        }
    }

    private static (double X, double Y) Arguments(double f, double d1, double d2)
    {
        var num = d1 * f;
        var den = num + d2;
        return (num / den, d2 / den);
    }

    /// <summary>
    /// ln of the Poisson probability μ^j e^(−μ) / j!, in the saddle-point form of Loader (2000),
    /// "Fast and accurate computation of binomial probabilities": −stirlerr(j) − bd0(j, μ) −
    /// ½ ln(2πj), which avoids the cancellation of j ln μ − μ − ln j! for large j.
    /// </summary>
    private static double LnPoisson(double j, double mu) =>
        j == 0 ? -mu : -StudentizedRange.StirlingRemainder(j) - Bd0(j, mu) - (0.5 * Math.Log(2 * Math.PI * j));

    /// <summary>
    /// ln t_j, t_j = Γ(a + b + j) / (Γ(a + j + 1) Γ(b)) x^(a + j) y^b. With A = a + j, B = b,
    /// n = A + B this is (B/n) times the binomial-type density Γ(n + 1)/(Γ(A + 1)Γ(B + 1)) x^A y^B,
    /// evaluated in Loader's (2000) saddle-point form.
    /// </summary>
    private static double LnTerm(double a, double b, double j, double x, double y)
    {
        var aa = a + j;
        var n = aa + b;
        if (x == 0 || y == 0)
        {
            return double.NegativeInfinity;
        }

        return Math.Log(b / n) + StudentizedRange.StirlingRemainder(n) - StudentizedRange.StirlingRemainder(aa)
            - StudentizedRange.StirlingRemainder(b) - Bd0(aa, n * x) - Bd0(b, n * y)
            + (0.5 * Math.Log(n / (2 * Math.PI * aa * b)));
    }

    /// <summary>bd0(x, m) = x ln(x/m) + m − x, by its series when x is near m (Loader 2000).</summary>
    private static double Bd0(double x, double m)
    {
        if (Math.Abs(x - m) < 0.1 * (x + m))
        {
            var v = (x - m) / (x + m);
            var s = (x - m) * v;
            var ej = 2 * x * v;
            var v2 = v * v;
            for (var i = 1; i < 1000; i++)
            {
                ej *= v2;
                var s1 = s + (ej / ((2 * i) + 1));
                if (s1 == s)
                {
                    return s1;
                }

                s = s1;
            }

            return s;
        }

        return (x * Math.Log(x / m)) + m - x;
    }
}
