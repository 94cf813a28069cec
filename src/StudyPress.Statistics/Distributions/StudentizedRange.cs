using MathNet.Numerics;
using MathNet.Numerics.Distributions;

namespace StudyPress.Statistics.Distributions;

/// <summary>
/// The studentized range distribution: Q = W / S, where W is the range of k independent standard
/// normal variables and S² an independent chi-square(df)/df variable (df may be
/// <see cref="double.PositiveInfinity"/>, then S = 1).
/// <para>
/// The double integral of Copenhaver and Holland (1988), "Computation of the distribution of the
/// maximum studentized range statistic with application to multiple significance testing of simple
/// effects", J. Statist. Comput. Simul. 30, 1-15: first over the distribution of the range of k
/// normals, P(W ≤ w) = k ∫ φ(z) [Φ(z) − Φ(z − w)]^(k−1) dz, then over the distribution of
/// S = χ_df/√df, P(Q ≤ q) = ∫ f(s) P(W ≤ q s) ds. The paper evaluates both by 16-point
/// Gauss–Legendre rules on fixed panels (about 8 digits). Here both integrands are smooth
/// (analytic), unimodal and decay fast on the whole line — the inner one in z, the outer one in
/// t = ln s, where the density of ln S is exp(L − h (e^(2t) − 1 − 2t)), h = df/2, smooth for every df
/// (s^(df−1) is not, at s = 0, for a fractional df) — so both are evaluated by the trapezoidal rule
/// on the whole line, whose error for such integrands falls like exp(−2π d / step), d the half-width
/// of the strip where the integrand stays analytic and small (Trefethen and Weideman 2014, "The
/// exponentially convergent trapezoidal rule", SIAM Review 56, 385-458, section 5). The steps are
/// set from k (the spread of the largest of k normals) and from df and q (the spread of ln S, of
/// ln W, and of the Gaussian tail of W); the terms are summed outward from the integrand's peak
/// until they fall below 1e-17 of the sum. The inner grid z_j = j·step is the same for every w, so
/// Φ(z_j) and the density of the largest normal are computed once per outer integral. For df = ∞ the
/// single integral over the normal is used; for k = 2, P(W &gt; w) = erfc(w/2) in closed form.
/// </para>
/// <para>
/// The upper tail is integrated directly, with
/// P(W &gt; w) = k ∫ φ(z) Φ(z)^(k−1) [1 − (1 − Φ(z − w)/Φ(z))^(k−1)] dz
/// (using k ∫ φ Φ^(k−1) = 1), the bracket evaluated as −expm1((k−1)·log1p(−r)), so small p-values
/// keep their relative accuracy. The inner CDF uses the symmetry of Φ(z) − Φ(z − w) about z = w/2.
/// The log density of ln S keeps the Stirling remainder of Γ(h) apart and writes e^(2t) − 1 − 2t by
/// its series near t = 0, so large df does not cancel. Agrees with the previous adaptive
/// Gauss–Kronrod evaluation to 1e-12 relative for k 2..100, df 1..1000 and ∞, and upper
/// probabilities down to 1e-10 (StudentizedRangeTests), and with the k = 2 identity Q = √2 |t| and
/// the Gleason (1998) and Harter (1960) tables. About 3,000 integrand evaluations for one upper
/// probability at moderate df (the adaptive evaluation took about 47,000), more for df ≤ 3, whose
/// density of ln S has a long left tail.
/// </para>
/// </summary>
public static class StudentizedRange
{
    private const double Sqrt2 = 1.4142135623730950488;
    private const double LnSqrt2Pi = 0.91893853320467274178;

    /// <summary>A panel that adds less than this share of the running sum, on the falling side, ends the march.</summary>
    private const double Negligible = 1e-17;

    /// <summary>P(Q ≤ q) for k groups and df degrees of freedom (df ≥ 1 or +∞).</summary>
    public static double Cdf(double q, int k, double df)
    {
        Validate(q, k, df);
        if (q <= 0)
        {
            return 0.0;
        }

        if (double.IsPositiveInfinity(q))
        {
            return 1.0;
        }

        var upper = Upper(q, k, df);
        if (upper <= 0.5)
        {
            return 1.0 - upper;
        }

        if (double.IsPositiveInfinity(df))
        {
            return RangeCdf(q, k);
        }

        return Outer(q, k, df, upper: false);
    }

    /// <summary>The upper-tail probability P(Q &gt; q), computed directly (no 1 − CDF).</summary>
    public static double Upper(double q, int k, double df)
    {
        Validate(q, k, df);
        if (q <= 0)
        {
            return 1.0;
        }

        if (double.IsPositiveInfinity(q))
        {
            return 0.0;
        }

        double p;
        if (double.IsPositiveInfinity(df))
        {
            p = RangeUpper(q, k);
        }
        else
        {
            p = Outer(q, k, df, upper: true);
        }

        return Math.Clamp(p, 0.0, 1.0);
    }

    /// <summary>
    /// The upper-alpha quantile: the q with P(Q &gt; q) = alpha, 0 &lt; alpha &lt; 1. For k = 2 it is
    /// √2 t(1 − alpha/2, df) exactly. Otherwise the search starts at the Bonferroni bound
    /// q_B = √2 t(1 − alpha/(k(k−1)), df), which P(Q &gt; q_B) ≤ alpha places at or above the
    /// quantile, takes one Newton step on ln P(Q &gt; q) − ln alpha against ln q with the slope of the
    /// Bonferroni approximation k(k−1)/2 · P(|T| &gt; q/√2), whose derivative is in closed form, then
    /// secant steps until the root is bracketed and Brent's method inside the bracket. The k = 2
    /// value √2 t(1 − alpha/2, df) (a lower bound) is the fallback bracket.
    /// </summary>
    public static double UpperQuantile(double alpha, int k, double df)
    {
        Validate(1.0, k, df);
        if (!(alpha > 0 && alpha < 1))
        {
            throw new ArgumentOutOfRangeException(nameof(alpha), "alpha must be in (0, 1)");
        }

        var pairs = 0.5 * k * (k - 1.0);
        var tB = TTwoSidedQuantile(alpha / pairs, df);
        if (k == 2)
        {
            return Sqrt2 * tB;
        }

        var lnAlpha = Math.Log(alpha);
        double G(double x) => Math.Log(Upper(Math.Exp(x), k, df)) - lnAlpha;

        // Upper end: the Bonferroni bound (G ≤ 0 there, up to rounding: widened until it is).
        var hi = Math.Log(Sqrt2 * tB);
        var ghi = G(hi);
        while (ghi > 0)
        {
            hi += 0.01;
            ghi = G(hi);
        }

        if (ghi == 0)
        {
            return Math.Exp(hi);
        }

        // d ln P(|T| > t)/d ln t = −2 t f(t)/P(|T| > t) at t = t_B, where P(|T| > t_B) = alpha/pairs.
        var density = double.IsPositiveInfinity(df) ? Normal.PDF(0, 1, tB) : StudentT.PDF(0, 1, df, tB);
        var slope = -2.0 * tB * density / (alpha / pairs);
        var lo = hi - (ghi / slope);
        var glo = G(lo);
        var lowerBound = Math.Log(Sqrt2 * TTwoSidedQuantile(alpha, df));
        for (var i = 0; glo < 0 && i < 8; i++)
        {
            // Still above the root: a secant step from the two points, 10 % further, not below the
            // k = 2 bound.
            var next = lo - (1.1 * glo * (lo - hi) / (glo - ghi));
            hi = lo;
            ghi = glo;
            lo = Math.Max(next, lowerBound - 0.005);
            glo = G(lo);
        }

        while (glo < 0)
        {
            lo -= 0.1;
            glo = G(lo);
        }

        return Math.Exp(RootFinding.Brent(G, lo, hi, glo, ghi, 1e-12));
    }

    private static void Validate(double q, int k, double df)
    {
        if (double.IsNaN(q))
        {
            throw new ArgumentException("q is NaN", nameof(q));
        }

        if (k < 2)
        {
            throw new ArgumentOutOfRangeException(nameof(k), "the studentized range needs k >= 2");
        }

        if (!(df >= 1))
        {
            throw new ArgumentOutOfRangeException(nameof(df), "df must be at least 1 (or +infinity)");
        }
    }

    /// <summary>The t &gt; 0 with P(|T| &gt; t) = p2 (Student's t with df degrees of freedom, or the normal for df = ∞).</summary>
    private static double TTwoSidedQuantile(double p2, double df) => Probability.TCritical(p2, df);

    // ---- the trapezoidal rule on the whole line, laid outward from a centre -----------------

    /// <summary>
    /// h Σ f(x0 + j h) over all j, for a unimodal f ≥ 0 decaying on both sides: the terms are added
    /// outward from j = 0 on each side until a term is below <see cref="Negligible"/> of the sum
    /// while falling (or the side reaches <paramref name="jLo"/> / <paramref name="jHi"/>).
    /// </summary>
    private static double Trapezoid<T>(ref T f, int j0, int jLo, int jHi)
        where T : struct, IIntegrand
    {
        var total = 0.0;
        var terms = 0;
        Sweep(ref f, Math.Max(j0, jLo), jHi, +1, ref total, ref terms);
        Sweep(ref f, Math.Min(j0, jHi + 1) - 1, jLo, -1, ref total, ref terms);
        evaluations += terms;
        return total;
    }

    /// <summary>
    /// One side of <see cref="Trapezoid"/>: adds f(j) for j from <paramref name="from"/> towards
    /// <paramref name="to"/> (inclusive) in steps of <paramref name="step"/> into the running
    /// <paramref name="total"/>, until a term is below <see cref="Negligible"/> of it while falling.
    /// </summary>
    private static void Sweep<T>(ref T f, int from, int to, int step, ref double total, ref int terms)
        where T : struct, IIntegrand
    {
        var previous = 0.0;
        var zeros = 0;
        for (var j = from; step > 0 ? j <= to : j >= to; j += step)
        {
            terms++;
            var v = f.At(j);
            total += v;
            if (total > 0 && v <= previous && v <= Negligible * total)
            {
                return;
            }

            // Nothing but underflow from the peak outward: the integrand is unimodal and the march
            // starts at its peak, so the whole integral is below the smallest double. Without this
            // a far tail (a huge q with a large df: 1,000,000 rows) walked every point of the range.
            zeros = v == 0 && total == 0 ? zeros + 1 : 0;
            if (zeros >= ZeroRun)
            {
                return;
            }

            previous = v;
        }
    }

    /// <summary>
    /// Terms in a row that are exactly 0, with nothing added yet, that end a side of the march: the
    /// steps are at most 0.4 of the integrand's narrowest scale, so 64 of them span about 25 scales.
    /// </summary>
    private const int ZeroRun = 64;

    /// <summary>Integrand evaluations (inner and outer) made on this thread so far: for tests of the method's cost.</summary>
    internal static long EvaluationsOnThisThread => evaluations;

    [ThreadStatic]
    private static long evaluations;

    private interface IIntegrand
    {
        /// <summary>The integrand at the j-th point of the rule's grid.</summary>
        double At(int j);
    }

    // ---- the range W of k standard normals -------------------------------------------------

    /// <summary>P(W &gt; w), integrated directly.</summary>
    internal static double RangeUpper(double w, int k)
    {
        if (w <= 0)
        {
            return 1.0;
        }

        if (k == 2)
        {
            return SpecialFunctions.Erfc(0.5 * w);
        }

        var grid = new MaxGrid(k);
        return RangeUpper(w, grid);
    }

    private static double RangeUpper(double w, MaxGrid grid)
    {
        if (grid.K == 2)
        {
            return SpecialFunctions.Erfc(0.5 * w);
        }

        // P(W ≤ w) = k ∫ φ(z) [Φ(z + w) − Φ(z)]^(k−1) dz ≤ k (w/√(2π))^(k−1): below 2^−54 the
        // upper probability is 1 in double precision, and the rule is not needed (the far left of
        // the outer integral for small df, where q s is tiny).
        if (grid.LnK + (grid.M * Math.Log(w / Math.Sqrt(2.0 * Math.PI))) < -54.0 * Math.Log(2.0))
        {
            return 1.0;
        }

        var f = new RangeUpperIntegrand(w, grid);
        var centre = Math.Max(grid.Mode, 0.5 * w);
        return grid.Step * Trapezoid(ref f, (int)Math.Round(centre / grid.Step), grid.JLo, (int)Math.Ceiling((w + 40.0) / grid.Step));
    }

    /// <summary>P(W ≤ w), integrated over u = z − w/2 using the symmetry about w/2.</summary>
    internal static double RangeCdf(double w, int k)
    {
        if (w <= 0)
        {
            return 0.0;
        }

        if (k == 2)
        {
            return SpecialFunctions.Erf(0.5 * w);
        }

        // The integrand is even in u: the trapezoidal sum over the whole line is the j = 0 term
        // plus twice the terms for j > 0.
        var f = new RangeCdfIntegrand(w, k, InnerStep(k));
        var centreTerm = f.At(0);
        var right = Trapezoid(ref f, 1, 1, (int)Math.Ceiling(((0.5 * w) + 40.0) / InnerStep(k)));
        return InnerStep(k) * (centreTerm + (2.0 * right));
    }

    /// <summary>Roughly the mode of the largest of k standard normals (where the inner integrands peak for small w).</summary>
    private static double MaxMode(int k) => Math.Sqrt(2.0 * Math.Log(k)) - 1.0;

    /// <summary>The trapezoidal step in z: a fraction of the spread of the largest of k normals.</summary>
    private static double InnerStep(int k) => InnerStepFactor * Math.Min(0.75, 1.0 / Math.Sqrt(2.0 * Math.Log(k)));

    private const double InnerStepFactor = 0.4;

    /// <summary>
    /// The grid z_j = j h of the inner rule with, for each point, Φ(z_j) and the density of the
    /// largest of k normals k φ(z_j) Φ(z_j)^(k−1): the same for every w, so an outer integral
    /// computes them once.
    /// </summary>
    private sealed class MaxGrid
    {
        private double[] phi = [];
        private double[] density = [];

        public MaxGrid(int k)
        {
            K = k;
            Step = InnerStep(k);
            Mode = MaxMode(k);
            JLo = (int)Math.Ceiling(-37.0 / Step);
            M = k - 1;
            LnK = Math.Log(k);
        }

        public int K { get; }

        public double Step { get; }

        public double Mode { get; }

        public int JLo { get; }

        public double M { get; }

        public double LnK { get; }

        public double Phi(int j)
        {
            var i = Ensure(j);
            return phi[i];
        }

        public double Density(int j)
        {
            var i = Ensure(j);
            return density[i];
        }

        /// <summary>The index of z_j in the tables, its entries computed on first use (NaN until then).</summary>
        private int Ensure(int j)
        {
            var i = j - JLo;
            if (i >= phi.Length)
            {
                var old = phi.Length;
                var size = Math.Max(i + 1, Math.Max(64, 2 * old));
                Array.Resize(ref phi, size);
                Array.Resize(ref density, size);
                Array.Fill(phi, double.NaN, old, size - old);
            }

            if (double.IsNaN(phi[i]))
            {
                var z = j * Step;
                var lnPhi = LnPhi(z);
                phi[i] = Math.Exp(lnPhi);
                density[i] = Math.Exp(LnK - (0.5 * z * z) - LnSqrt2Pi + (M * lnPhi));
            }

            return i;
        }
    }

    private readonly struct RangeUpperIntegrand(double w, MaxGrid grid) : IIntegrand
    {
        public double At(int j)
        {
            var density = grid.Density(j);
            if (density == 0)
            {
                return 0.0;
            }

            // r = Φ(z − w)/Φ(z): the chance that one of the other k − 1 lies below z − w.
            var r = 0.5 * SpecialFunctions.Erfc((w - (j * grid.Step)) / Sqrt2) / grid.Phi(j);
            var bracket = -Elementary.Expm1(grid.M * Elementary.Log1P(-Math.Min(r, 1.0)));
            return bracket <= 0 ? 0.0 : density * bracket;
        }
    }

    private readonly struct RangeCdfIntegrand(double w, int k, double step) : IIntegrand
    {
        private readonly double m = k - 1;
        private readonly double half = 0.5 * w;
        private readonly double lnK = Math.Log(k);

        public double At(int j)
        {
            var u = j * step;
            var a = half + u;
            var b = u - half;
            double inside, outside;
            if (b >= 0)
            {
                inside = 0.5 * (SpecialFunctions.Erfc(b / Sqrt2) - SpecialFunctions.Erfc(a / Sqrt2));
                outside = 1.0 - inside;
            }
            else
            {
                inside = 0.5 * (SpecialFunctions.Erf(a / Sqrt2) + SpecialFunctions.Erf(-b / Sqrt2));
                outside = 0.5 * (SpecialFunctions.Erfc(a / Sqrt2) + SpecialFunctions.Erfc(-b / Sqrt2));
            }

            if (inside <= 0)
            {
                return 0.0;
            }

            var lnB = inside < 0.5 ? Math.Log(inside) : Elementary.Log1P(-outside);
            var dens = 0.5 * (Math.Exp(-0.5 * a * a) + Math.Exp(-0.5 * b * b));
            return dens * Math.Exp(lnK - LnSqrt2Pi + (m * lnB));
        }
    }

    /// <summary>ln Φ(x), accurate in both tails.</summary>
    internal static double LnPhi(double x) =>
        x < 0 ? Math.Log(0.5 * SpecialFunctions.Erfc(-x / Sqrt2)) : Elementary.Log1P(-0.5 * SpecialFunctions.Erfc(x / Sqrt2));

    // ---- the outer integral over t = ln S, S = chi(df)/sqrt(df) ------------------------------

    /// <summary>
    /// ∫ f(t) P(W ⋛ q e^t) dt over t = ln S by the trapezoidal rule: f(t) = exp(L − h (e^(2t) − 1 − 2t))
    /// is the density of ln S (h = df/2, L = ln 2 + ½ ln h − ln √(2π) − the Stirling remainder of Γ(h)).
    /// </summary>
    private static double Outer(double q, int k, double df, bool upper)
    {
        var f = new OuterIntegrand(q, k, df, upper);
        return f.Step * Trapezoid(ref f, 0, f.JLo, f.JHi);
    }

    private readonly struct OuterIntegrand : IIntegrand
    {
        private readonly double q;
        private readonly double h;
        private readonly double l0;
        private readonly bool upper;
        private readonly double centre;
        private readonly MaxGrid grid;
        private readonly int k;

        public OuterIntegrand(double q, int k, double df, bool upper)
        {
            this.q = q;
            this.k = k;
            this.upper = upper;
            h = 0.5 * df;
            l0 = Math.Log(2.0) + (0.5 * Math.Log(h)) - LnSqrt2Pi - StirlingRemainder(h);
            grid = new MaxGrid(k);

            // The density of ln S peaks at 0 with standard deviation about 1/√(2 df); a large q
            // moves the mass of the upper tail to smaller s, about where 2 df (1 − s²) = (q s)²/2
            // (the Gaussian tail of the range, ln P(W > w) ≈ −w²/4).
            var typical = 2.0 * (grid.Mode + 1.0);
            var excess = Math.Max(0.0, (q * q) - (typical * typical));
            centre = 0.5 * Math.Log(df / (df + (0.25 * excess)));
            var w = q * Math.Exp(centre);

            // The step: a fraction of the narrowest scale of the integrand in t — the density's
            // spread, the spread of ln W, and 1/w where the range is in its Gaussian tail.
            var scale = Math.Min(1.0 / Math.Sqrt(2.0 * df), Math.Min(0.5 / Math.Sqrt(2.0 * Math.Log(k)), 1.0 / Math.Max(1.0, w)));
            Step = Math.Min(OuterMaxStep, OuterStepFactor * scale);
            JLo = (int)Math.Floor((Math.Min(-40.0, -Math.Log(q) - 40.0) - centre) / Step);
            JHi = (int)Math.Ceiling((5.0 - centre) / Step);
        }

        public double Step { get; }

        public int JLo { get; }

        public int JHi { get; }

        public double At(int j)
        {
            var t = centre + (j * Step);
            var w = q * Math.Exp(t);
            var v = upper ? RangeUpper(w, grid) : RangeCdf(w, k);
            if (v == 0)
            {
                return 0.0;
            }

            return v * Math.Exp(l0 - (h * ExpM1MinusX(2.0 * t)));
        }
    }

    /// <summary>The outer step: this fraction of the narrowest scale of the integrand in t, and at most <see cref="OuterMaxStep"/>.</summary>
    private const double OuterStepFactor = 0.4;

    /// <summary>
    /// The density of ln S, exp(−h e^(2t) + …), decays only while |Im t| &lt; π/4, which bounds the
    /// trapezoidal error by about exp(−2π (π/4)/step) (Trefethen and Weideman 2014, section 5): 0.08
    /// leaves less than 1e-26 whatever df.
    /// </summary>
    private const double OuterMaxStep = 0.08;

    /// <summary>e^x − 1 − x, by its series near 0 (no cancellation).</summary>
    private static double ExpM1MinusX(double x)
    {
        if (Math.Abs(x) > 0.5)
        {
            return Elementary.Expm1(x) - x;
        }

        // x²/2! + x³/3! + ...: 30 terms leave less than 0.5^30/30! relative.
        var term = 0.5 * x * x;
        var sum = term;
        for (var n = 3; n < 32; n++)
        {
            term *= x / n;
            sum += term;
            if (Math.Abs(term) < 1e-17 * Math.Abs(sum))
            {
                break;
            }
        }

        return sum;
    }

    /// <summary>ln Γ(h) − (h − ½) ln h + h − ½ ln(2π) (the Stirling series remainder).</summary>
    internal static double StirlingRemainder(double h)
    {
        if (h < 15)
        {
            return SpecialFunctions.GammaLn(h) - ((h - 0.5) * Math.Log(h)) + h - LnSqrt2Pi;
        }

        var r = 1.0 / h;
        var r2 = r * r;
        return r * ((1.0 / 12) - (r2 * ((1.0 / 360) - (r2 * ((1.0 / 1260) - (r2 * ((1.0 / 1680) - (r2 / 1188))))))));
    }
}
