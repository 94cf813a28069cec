using MathNet.Numerics;

namespace StudyPress.Statistics.Distributions;

/// <summary>A probability from <see cref="MultivariateT"/>: the estimate, its error estimate and the points per shift used.</summary>
public sealed record MultivariateTProbability(double Value, double Error, int Points);

/// <summary>
/// Rectangle probabilities P(a ≤ T ≤ b) of the central multivariate t distribution with ν degrees
/// of freedom (ν = ∞: the multivariate normal) and a general correlation matrix R, by the method of
/// Genz and Bretz (Genz, A. and Bretz, F. (2002), "Comparison of methods for the computation of
/// multivariate t probabilities", Journal of Computational and Graphical Statistics 11, 950-971;
/// Genz, A. and Bretz, F. (2009), Computation of Multivariate Normal and t Probabilities, Lecture
/// Notes in Statistics 195, Springer).
/// <para>
/// T = Z / S with Z ~ N(0, R) and S = sqrt(χ²_ν / ν) independent, so
/// P = ∫ f_S(s) P(s a ≤ Z ≤ s b) ds. With the Cholesky factor R = L L' and the separation of
/// variables (Genz 1992) the integrand becomes a product over the unit cube of dimension m (one
/// coordinate w₀ for s = sqrt(F⁻¹_χ²ν(w₀)/ν), then m − 1 for the normal variables):
/// d_i = Φ((s a_i − Σ_{j&lt;i} L_ij y_j)/L_ii), e_i = Φ((s b_i − Σ_{j&lt;i} L_ij y_j)/L_ii),
/// y_i = Φ⁻¹(d_i + w_i (e_i − d_i)), integrand Π_i (e_i − d_i).
/// </para>
/// <para>
/// The cube is integrated by a randomized quasi-Monte Carlo rule: the Kronecker (Richtmyer)
/// sequence x_j = frac(j z), z_i = frac(√p_i) over the first primes p_i (computed by a sieve, as
/// many as there are coordinates), j = 1..N, with the
/// baker's (tent) periodization x → |2x − 1|, shifted by <see cref="Shifts"/> uniform random
/// vectors. The shifts come from a SplitMix64 generator with the FIXED seed <see cref="Seed"/>, so
/// the same inputs always give the same bits. The estimate is the mean of the shifted rules; its
/// error estimate is <see cref="ErrorFactor"/> standard errors of that mean (the shifted
/// estimates are independent and unbiased). N runs through <see cref="Schedule"/> (the sequence is
/// extensible, so each stage reuses the points of the one before) until the error estimate is at
/// most <see cref="Tolerance"/>, or the schedule ends, or the next stage would exceed
/// <see cref="WorkLimit"/> (the error estimate is then returned as it is, and the caller decides
/// whether it is good enough). The cost of one rectangle is therefore at most WorkLimit
/// evaluations of Φ pairs and Φ⁻¹ (plus the m²/2 multiply-adds of each point); a rectangle
/// whose first stage alone exceeds it is not integrated (<see cref="MultivariateTProbability.Points"/> 0,
/// error 1). For the multivariate normal the s coordinate is dropped (s = 1).
/// </para>
/// <para>
/// Accuracy (tests): against the exact product-correlation (Dunnett) integral to within the error
/// estimate and below 2e-5 absolute; against bivariate and trivariate t probabilities by
/// independent nested Gauss–Legendre quadrature likewise. One dimension (m = 1) is the univariate
/// t, computed exactly instead. Domain: R symmetric with unit diagonal and positive definite; ν ≥ 1.
/// </para>
/// </summary>
public sealed class MultivariateT
{
    /// <summary>The number of random shifts of the rule.</summary>
    public const int Shifts = 12;

    /// <summary>The seed of the shifts' generator (fixed: results are deterministic).</summary>
    public const ulong Seed = 0x5DEECE66DUL;

    /// <summary>The error estimate is this many standard errors of the mean of the shifted estimates.</summary>
    public const double ErrorFactor = 3.5;

    /// <summary>The absolute error the point schedule stops at.</summary>
    public const double Tolerance = 1e-5;

    /// <summary>Points per shift, in the order tried.</summary>
    public static IReadOnlyList<int> Schedule { get; } = [1000, 2000, 4000, 8000, 16000, 32000, 64000];

    /// <summary>
    /// The most work one rectangle may take, counted as points per shift × <see cref="Shifts"/> ×
    /// variables (each a pair of Φ and one Φ⁻¹): the whole schedule for eight variables.
    /// </summary>
    public const long WorkLimit = 64000L * Shifts * 8;

    // The Cholesky factor L of the correlation, row i divided by L_ii (below the diagonal, row-major), and its diagonal.
    private readonly double[] factors;
    private readonly double[] pivots;
    private readonly int m;
    private readonly double df;
    private readonly double[] generator;
    private readonly double[][] shifts;

    // s = sqrt(χ²_ν⁻¹(w₀)/ν) for each shift and point, computed once and reused by every rectangle.
    private readonly List<double>[] scale;

    /// <summary>Prepares the distribution with correlation <paramref name="correlation"/> and ν = <paramref name="df"/> (∞ for the normal).</summary>
    public MultivariateT(double[,] correlation, double df)
    {
        ArgumentNullException.ThrowIfNull(correlation);
        m = correlation.GetLength(0);
        if (m < 1 || correlation.GetLength(1) != m)
        {
            throw new ArgumentException("the correlation matrix must be square and not empty", nameof(correlation));
        }

        if (!(df >= 1))
        {
            throw new ArgumentOutOfRangeException(nameof(df), "degrees of freedom must be at least 1");
        }

        for (var i = 0; i < m; i++)
        {
            if (Math.Abs(correlation[i, i] - 1.0) > 1e-12)
            {
                throw new ArgumentException("the correlation matrix must have a unit diagonal", nameof(correlation));
            }

            for (var j = 0; j < i; j++)
            {
                if (!double.IsFinite(correlation[i, j]) || Math.Abs(correlation[i, j] - correlation[j, i]) > 1e-12)
                {
                    throw new ArgumentException("the correlation matrix must be symmetric", nameof(correlation));
                }
            }
        }

        this.df = df;
        var chol = Cholesky(correlation, m) ?? throw new ArgumentException("the correlation matrix is not positive definite", nameof(correlation));
        factors = new double[m * m];
        pivots = new double[m];
        for (var i = 0; i < m; i++)
        {
            pivots[i] = chol[i, i];
            for (var q = 0; q < i; q++)
            {
                factors[(i * m) + q] = chol[i, q] / chol[i, i];
            }
        }
        var dims = Dimensions;
        var primes = Primes(dims);
        generator = new double[dims];
        for (var i = 0; i < dims; i++)
        {
            var root = Math.Sqrt(primes[i]);
            generator[i] = root - Math.Floor(root);
        }

        var state = Seed;
        shifts = new double[Shifts][];
        for (var k = 0; k < Shifts; k++)
        {
            shifts[k] = new double[dims];
            for (var i = 0; i < dims; i++)
            {
                shifts[k][i] = NextUniform(ref state);
            }
        }

        scale = [.. Enumerable.Range(0, Shifts).Select(_ => new List<double>())];
    }

    /// <summary>The number of variables.</summary>
    public int Count => m;

    private bool Normal => double.IsPositiveInfinity(df);

    private int Dimensions => Math.Max(1, (Normal ? 0 : 1) + m - 1);

    /// <summary>
    /// P(lower ≤ T ≤ upper), each bound finite or infinite (lower below upper), with the schedule of
    /// points (see the class summary), or exactly <paramref name="points"/> points per shift when given
    /// (then <see cref="WorkLimit"/> does not apply).
    /// </summary>
    public MultivariateTProbability Rectangle(IReadOnlyList<double> lower, IReadOnlyList<double> upper, int? points = null)
    {
        ArgumentNullException.ThrowIfNull(lower);
        ArgumentNullException.ThrowIfNull(upper);
        if (lower.Count != m || upper.Count != m)
        {
            throw new ArgumentException("one bound per variable", nameof(lower));
        }

        for (var i = 0; i < m; i++)
        {
            if (double.IsNaN(lower[i]) || double.IsNaN(upper[i]) || !(lower[i] <= upper[i]))
            {
                throw new ArgumentException("each lower bound must lie at or below its upper bound", nameof(lower));
            }
        }

        if (points is { } fixedPoints && fixedPoints < 1)
        {
            throw new ArgumentOutOfRangeException(nameof(points), "at least one point");
        }

        if (m == 1)
        {
            var value = Univariate(upper[0]) - Univariate(lower[0]);
            return new MultivariateTProbability(Math.Max(0.0, value), 0.0, 0);
        }

        IReadOnlyList<int> stages = points is { } n ? [n] : [.. Schedule.Where(p => (long)p * Shifts * m <= WorkLimit)];
        if (stages.Count == 0)
        {
            return new MultivariateTProbability(0.0, 1.0, 0);
        }

        var (low, high) = Scaled(lower, upper);
        var sums = new double[Shifts];
        var done = 0;
        var y = new double[m];
        MultivariateTProbability? result = null;
        foreach (var target in stages)
        {
            for (var k = 0; k < Shifts; k++)
            {
                EnsureScale(k, target);
                double sum = 0;
                for (var j = done; j < target; j++)
                {
                    sum += Integrand(k, j, low, high, y);
                }

                sums[k] += sum;
            }

            done = target;
            var estimates = sums.Select(s => s / target).ToArray();
            var mean = estimates.Average();
            var variance = estimates.Sum(e => (e - mean) * (e - mean)) / (Shifts * (Shifts - 1.0));
            result = new MultivariateTProbability(Math.Clamp(mean, 0.0, 1.0), ErrorFactor * Math.Sqrt(variance), target);
            if (result.Error <= Tolerance)
            {
                break;
            }
        }

        return result!;
    }

    /// <summary>The bounds divided by the Cholesky factor's diagonal (infinite bounds stay infinite), so that the integrand needs no division.</summary>
    private (double[] Lower, double[] Upper) Scaled(IReadOnlyList<double> lower, IReadOnlyList<double> upper)
    {
        var a = new double[m];
        var b = new double[m];
        for (var i = 0; i < m; i++)
        {
            a[i] = double.IsInfinity(lower[i]) ? lower[i] : lower[i] / pivots[i];
            b[i] = double.IsInfinity(upper[i]) ? upper[i] : upper[i] / pivots[i];
        }

        return (a, b);
    }

    /// <summary>The integrand of the separation of variables at point j of shift k (see the class summary).</summary>
    private double Integrand(int k, int j, double[] lower, double[] upper, double[] y)
    {
        var shift = shifts[k];
        var first = Normal ? 0 : 1;
        var s = Normal ? 1.0 : scale[k][j];
        double product = 1;
        for (var i = 0; i < m; i++)
        {
            double dot = 0;
            var row = i * m;
            for (var q = 0; q < i; q++)
            {
                dot += factors[row + q] * y[q];
            }

            var d = Phi(Shifted(lower[i], s, dot));
            var e = Phi(Shifted(upper[i], s, dot));
            var width = e - d;
            if (!(width > 0))
            {
                return 0.0;
            }

            product *= width;
            if (i < m - 1)
            {
                var w = Point(j, first + i, shift);
                y[i] = InverseNormal(d + (w * width));
            }
        }

        return product;
    }

    private static double Shifted(double bound, double s, double dot) =>
        double.IsInfinity(bound) ? bound : (s * bound) - dot;

    /// <summary>Coordinate i of point j (1-based in the sequence) of shift: the tent of frac(j z_i + u_i).</summary>
    private double Point(int j, int i, double[] shift)
    {
        var x = ((j + 1) * generator[i]) + shift[i];
        x -= Math.Floor(x);
        return Math.Abs((2.0 * x) - 1.0);
    }

    private void EnsureScale(int k, int count)
    {
        if (Normal)
        {
            return;
        }

        var list = scale[k];
        for (var j = list.Count; j < count; j++)
        {
            var w = Point(j, 0, shifts[k]);
            w = Math.Clamp(w, 1e-300, 1.0 - 1e-16);
            list.Add(Math.Sqrt(InverseChiSquare(w) / df));
        }
    }

    /// <summary>
    /// The χ²_ν quantile at p: Newton's method on the regularized incomplete gamma function (the
    /// lower tail below the median, the upper tail above it, so that each side keeps its digits),
    /// from the Wilson–Hilferty approximation, to a relative step of 1e-13.
    /// </summary>
    private double InverseChiSquare(double p)
    {
        var a = 0.5 * df;
        var z = InverseNormal(p);
        var h = 2.0 / (9.0 * df);
        var x = df * Math.Pow(Math.Max(1.0 - h + (z * Math.Sqrt(h)), 1e-3), 3);
        var upper = p > 0.5;
        var target = upper ? 1.0 - p : p;
        var logNorm = (a * Math.Log(2.0)) + SpecialFunctions.GammaLn(a);
        for (var i = 0; i < 100; i++)
        {
            var f = (upper ? SpecialFunctions.GammaUpperRegularized(a, 0.5 * x) : SpecialFunctions.GammaLowerRegularized(a, 0.5 * x)) - target;
            var density = Math.Exp(((a - 1.0) * Math.Log(x)) - (0.5 * x) - logNorm);
            if (!(density > 0))
            {
                break;
            }

            var step = (upper ? -f : f) / density;
            var next = x - step;
            if (!(next > 0))
            {
                next = 0.5 * x;
            }

            var done = Math.Abs(next - x) <= 1e-13 * x;
            x = next;
            if (done)
            {
                break;
            }
        }

        return x;
    }

    /// <summary>P(T ≤ x) for the univariate t (or normal): from the two-sided tail, each side accurate.</summary>
    private double Univariate(double x)
    {
        if (double.IsNegativeInfinity(x))
        {
            return 0.0;
        }

        if (double.IsPositiveInfinity(x))
        {
            return 1.0;
        }

        var tail = 0.5 * (Normal ? Probability.NormalTwoSided(x) : Probability.TTwoSided(x, df));
        return x >= 0 ? 1.0 - tail : tail;
    }

    private static double Phi(double x) =>
        double.IsNegativeInfinity(x) ? 0.0 : double.IsPositiveInfinity(x) ? 1.0 : 0.5 * SpecialFunctions.Erfc(-x / Constants.Sqrt2);

    private static double InverseNormal(double p)
    {
        p = Math.Clamp(p, 1e-300, 1.0 - 1e-16);
        return -Constants.Sqrt2 * SpecialFunctions.ErfcInv(2.0 * p);
    }

    private static double[,]? Cholesky(double[,] a, int n)
    {
        var l = new double[n, n];
        for (var i = 0; i < n; i++)
        {
            for (var j = 0; j <= i; j++)
            {
                var s = a[i, j];
                for (var q = 0; q < j; q++)
                {
                    s -= l[i, q] * l[j, q];
                }

                if (i == j)
                {
                    if (!(s > 1e-12))
                    {
                        return null;
                    }

                    l[i, i] = Math.Sqrt(s);
                }
                else
                {
                    l[i, j] = s / l[j, j];
                }
            }
        }

        return l;
    }

    /// <summary>The first <paramref name="count"/> primes, by the sieve of Eratosthenes (the n-th prime is below n (ln n + ln ln n) for n ≥ 6, Rosser 1941).</summary>
    public static int[] Primes(int count)
    {
        var bound = count < 6 ? 15 : (int)Math.Ceiling(count * (Math.Log(count) + Math.Log(Math.Log(count)))) + 1;
        var composite = new bool[bound + 1];
        var found = new List<int>(count);
        for (var n = 2; n <= bound && found.Count < count; n++)
        {
            if (composite[n])
            {
                continue;
            }

            found.Add(n);
            for (var multiple = (long)n * n; multiple <= bound; multiple += n)
            {
                composite[multiple] = true;
            }
        }

        return [.. found];
    }

    /// <summary>SplitMix64 (Steele, Lea and Flood 2014): a uniform double in [0, 1) from the top 53 bits.</summary>
    private static double NextUniform(ref ulong state)
    {
        state += 0x9E3779B97F4A7C15UL;
        var z = state;
        z = (z ^ (z >> 30)) * 0xBF58476D1CE4E5B9UL;
        z = (z ^ (z >> 27)) * 0x94D049BB133111EBUL;
        z ^= z >> 31;
        return (z >> 11) * (1.0 / 9007199254740992.0);
    }
}
