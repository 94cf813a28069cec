using MathNet.Numerics;
using MathNet.Numerics.Distributions;

namespace StudyPress.Statistics.Assumptions;

/// <summary>Result of the Shapiro-Wilk test.</summary>
/// <param name="N">Number of observations.</param>
/// <param name="W">The W statistic (between 0 and 1; small values indicate non-normality).</param>
/// <param name="P">P(W &lt;= observed W) under normality (the test rejects for small W).</param>
/// <param name="Coefficients">
/// Royston's approximate coefficients a_n, a_(n-1), ..., a_(n - floor(n/2) + 1) for the largest order
/// statistics (the remaining ones are their negatives, in reverse); empty when the test is not computed.
/// </param>
public sealed record ShapiroWilkResult(int N, Quantity W, Quantity P, IReadOnlyList<double> Coefficients);

/// <summary>
/// Shapiro-Wilk W test for normality of a complete sample, by Royston's approximation.
/// <para>
/// W = (sum a_i x_(i))² / sum (x_i - x̄)², with x_(i) the order statistics. The coefficients follow
/// Royston (1992): m_i = Φ⁻¹((i - 3/8)/(n + 1/4)), c = m / ||m||, u = 1/√n, and the two extreme
/// coefficients are corrected by polynomials in u:
/// a_n = c_n + 0.221157u - 0.147981u² - 2.071190u³ + 4.434685u⁴ - 2.706056u⁵,
/// a_(n-1) = c_(n-1) + 0.042981u - 0.293762u² - 1.752461u³ + 5.682633u⁴ - 3.582633u⁵ (n &gt; 5 only);
/// the others are m_i / ε with ε chosen so that sum a_i² = 1. For n = 3 the exact coefficients ±√½ are used.
/// </para>
/// <para>
/// p-value: for n = 3 the exact null distribution, P(W &lt;= w) = (6/π)(asin √w - asin √¾).
/// For 4 &lt;= n &lt;= 11, y = -ln(γ - ln(1 - W)) with γ = -2.273 + 0.459n, and y is normal with
/// mean 0.5440 - 0.39978n + 0.025054n² - 0.0006714n³ and sd exp(1.3822 - 0.77857n + 0.062767n² - 0.0020322n³).
/// For 12 &lt;= n &lt;= 5000, y = ln(1 - W) is normal with mean -1.5861 - 0.31082v - 0.083751v² + 0.0038915v³ and
/// sd exp(-0.4803 - 0.082676v + 0.0030302v²), v = ln n. p = P(Z &gt; (y - mean)/sd), an upper normal tail.
/// </para>
/// <para>
/// Sources: Royston, P. (1992), Approximating the Shapiro-Wilk W-test for non-normality, Statistics and
/// Computing 2, 117-119; Royston, P. (1995), Remark AS R94, Applied Statistics 44(4), 547-551
/// (extension to n = 5000). 1 - W is computed as ||u - (a·u) a||² with u the centred, unit-length
/// sorted sample, so W close to 1 keeps its relative accuracy.
/// </para>
/// <para>
/// Domain: 3 &lt;= n &lt;= 5000. Fewer than 3 values, more than 5000 values (the approximation is not
/// validated there) and a sample with all values equal give undefined W and p with a reason.
/// </para>
/// </summary>
public static class ShapiroWilk
{
    /// <summary>Largest sample size for which Royston's approximation is validated (AS R94).</summary>
    public const int MaximumN = 5000;

    private static readonly double[] C1 = [0.0, 0.221157, -0.147981, -2.071190, 4.434685, -2.706056];
    private static readonly double[] C2 = [0.0, 0.042981, -0.293762, -1.752461, 5.682633, -3.582633];
    private static readonly double[] G = [-2.273, 0.459];
    private static readonly double[] C3 = [0.5440, -0.39978, 0.025054, -6.714e-4];
    private static readonly double[] C4 = [1.3822, -0.77857, 0.062767, -0.0020322];
    private static readonly double[] C5 = [-1.5861, -0.31082, -0.083751, 0.0038915];
    private static readonly double[] C6 = [-0.4803, -0.082676, 0.0030302];

    /// <summary>Tests the sample <paramref name="x"/> (order does not matter) for normality.</summary>
    public static ShapiroWilkResult Test(IReadOnlyList<double> x)
    {
        ArgumentNullException.ThrowIfNull(x);
        var n = x.Count;
        foreach (var v in x)
        {
            if (!double.IsFinite(v))
            {
                throw new ArgumentException("the sample contains a value that is not finite", nameof(x));
            }
        }

        if (n < 3)
        {
            return Undefined(n, "the Shapiro–Wilk test needs at least 3 observations");
        }

        if (n > MaximumN)
        {
            return Undefined(
                n,
                "the Shapiro–Wilk test is not computed for more than 5000 observations (Royston's approximation is validated up to n = 5000)");
        }

        var sorted = x.ToArray();
        Array.Sort(sorted);
        if (sorted[0] == sorted[n - 1])
        {
            return Undefined(n, "all values are equal (zero range), so W is not defined");
        }

        var half = Coefficients(n);

        // Centred, unit-length sorted sample u; b = a·u; 1 - W = ||u - b a||². The values are first
        // divided by the largest magnitude so that squares neither overflow nor underflow.
        var big = Math.Max(Math.Abs(sorted[0]), Math.Abs(sorted[n - 1]));
        for (var i = 0; i < n; i++)
        {
            sorted[i] /= big;
        }

        var mean = Groups.Mean(sorted);
        var ss = Groups.SumOfSquares(sorted, mean);
        if (!(ss > 0))
        {
            return Undefined(n, "all values are equal (zero range), so W is not defined");
        }

        var scale = 1.0 / Math.Sqrt(ss);
        var u = new double[n];
        for (var i = 0; i < n; i++)
        {
            u[i] = (sorted[i] - mean) * scale;
        }

        var a = FullVector(half, n);
        double b = 0;
        for (var i = 0; i < n; i++)
        {
            b += a[i] * u[i];
        }

        double oneMinusW = 0;
        for (var i = 0; i < n; i++)
        {
            var r = u[i] - (b * a[i]);
            oneMinusW += r * r;
        }

        var w = Math.Min(1.0, b * b);
        var p = PValue(n, w, oneMinusW);
        return new ShapiroWilkResult(n, Quantity.Of(w), p, half);
    }

    /// <summary>
    /// Royston's coefficients for the floor(n/2) largest order statistics, largest first
    /// (a_n, a_(n-1), ...). Valid for 3 &lt;= n &lt;= 5000.
    /// </summary>
    public static double[] Coefficients(int n)
    {
        if (n < 3 || n > MaximumN)
        {
            throw new ArgumentOutOfRangeException(nameof(n), "n must be between 3 and 5000");
        }

        var nHalf = n / 2;
        var a = new double[nHalf];
        if (n == 3)
        {
            a[0] = Math.Sqrt(0.5);
            return a;
        }

        // m_i for the upper half, largest first: m[j] = Φ⁻¹((n - j - 3/8) / (n + 1/4)), j = 0 .. nHalf-1.
        // By symmetry sum m_i² over all i is twice the upper-half sum (the middle one is 0 for odd n).
        var m = new double[nHalf];
        double halfSum = 0;
        for (var j = 0; j < nHalf; j++)
        {
            var i = n - j; // rank, 1-based
            m[j] = Normal.InvCDF(0, 1, (i - 0.375) / (n + 0.25));
            halfSum += m[j] * m[j];
        }

        var summ2 = 2 * halfSum;
        var ssumm2 = Math.Sqrt(summ2);
        var rsn = 1.0 / Math.Sqrt(n);
        var a1 = Polynomial(C1, rsn) + (m[0] / ssumm2);
        int first;
        double fac;
        if (n > 5)
        {
            var a2 = Polynomial(C2, rsn) + (m[1] / ssumm2);
            fac = Math.Sqrt((summ2 - (2 * m[0] * m[0]) - (2 * m[1] * m[1])) / (1 - (2 * a1 * a1) - (2 * a2 * a2)));
            a[1] = a2;
            first = 2;
        }
        else
        {
            fac = Math.Sqrt((summ2 - (2 * m[0] * m[0])) / (1 - (2 * a1 * a1)));
            first = 1;
        }

        a[0] = a1;
        for (var j = first; j < nHalf; j++)
        {
            a[j] = m[j] / fac;
        }

        return a;
    }

    private static double[] FullVector(double[] half, int n)
    {
        // a[i] pairs with the i-th smallest value: negative for the lower half, zero in the middle.
        var a = new double[n];
        double s = 0;
        for (var j = 0; j < half.Length; j++)
        {
            a[n - 1 - j] = half[j];
            a[j] = -half[j];
            s += 2 * half[j] * half[j];
        }

        // Normalise away rounding so that ||a|| = 1 holds to the last bit used by 1 - W.
        var norm = 1.0 / Math.Sqrt(s);
        for (var i = 0; i < n; i++)
        {
            a[i] *= norm;
        }

        return a;
    }

    private static Quantity PValue(int n, double w, double oneMinusW)
    {
        if (n == 3)
        {
            // Exact: P(W <= w) = (6/π)(asin √w - π/3) for 3/4 <= w <= 1.
            var pw = 6.0 / Math.PI * (Math.Asin(Math.Sqrt(Math.Max(w, 0.75))) - (Math.PI / 3.0));
            return Quantity.Of(Math.Clamp(pw, 0.0, 1.0));
        }

        if (!(oneMinusW > 0))
        {
            return Quantity.Of(1.0);
        }

        var y = Math.Log(oneMinusW);
        double mean, sd;
        if (n <= 11)
        {
            var gamma = Polynomial(G, n);
            if (y >= gamma)
            {
                return Quantity.Undefined("W is below the range of Royston's normalising transformation (p is far below any usual significance level)");
            }

            y = -Math.Log(gamma - y);
            mean = Polynomial(C3, n);
            sd = Math.Exp(Polynomial(C4, n));
        }
        else
        {
            var v = Math.Log(n);
            mean = Polynomial(C5, v);
            sd = Math.Exp(Polynomial(C6, v));
        }

        var z = (y - mean) / sd;
        return Quantity.Of(Math.Clamp(0.5 * SpecialFunctions.Erfc(z / Math.Sqrt(2.0)), 0.0, 1.0));
    }

    private static double Polynomial(double[] c, double x)
    {
        double r = 0;
        for (var i = c.Length - 1; i >= 0; i--)
        {
            r = (r * x) + c[i];
        }

        return r;
    }

    private static ShapiroWilkResult Undefined(int n, string reason)
    {
        var u = Quantity.Undefined(reason);
        return new ShapiroWilkResult(n, u, u, []);
    }
}
