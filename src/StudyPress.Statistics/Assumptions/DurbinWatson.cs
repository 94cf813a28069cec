using MathNet.Numerics;
using MathNet.Numerics.LinearAlgebra;
using MathNet.Numerics.LinearAlgebra.Factorization;

namespace StudyPress.Statistics.Assumptions;

/// <summary>How the null distribution of the Durbin-Watson statistic is evaluated.</summary>
public enum DurbinWatsonMethod
{
    /// <summary>Exact (Imhof) for n &lt;= <see cref="DurbinWatson.ExactLimit"/>, beta approximation above.</summary>
    Automatic = 0,

    /// <summary>Exact distribution from the eigenvalues, by Imhof's inversion formula.</summary>
    Exact = 1,

    /// <summary>Beta distribution on [0, 4] with the exact mean and variance of d.</summary>
    BetaApproximation = 2,
}

/// <summary>Result of the Durbin-Watson test for first-order serial correlation of residuals.</summary>
/// <param name="Statistic">d = sum (e_t - e_(t-1))² / sum e_t² (about 2 without autocorrelation).</param>
/// <param name="P">
/// p-value for positive serial correlation (H1: ρ &gt; 0), P(d &lt;= d_obs) under H0: the one practitioners
/// usually want for residuals in run order.
/// </param>
/// <param name="PNegative">p-value for negative serial correlation (H1: ρ &lt; 0), P(d &gt;= d_obs).</param>
/// <param name="PTwoSided">Two-sided p-value, min(1, 2 min(P, PNegative)).</param>
/// <param name="N">Number of residuals.</param>
/// <param name="Parameters">Number of columns of the design matrix (p).</param>
/// <param name="Method">Which method gave the p-values (exact Imhof or beta approximation), in words.</param>
public sealed record DurbinWatsonResult(
    Quantity Statistic,
    Quantity P,
    Quantity PNegative,
    Quantity PTwoSided,
    int N,
    int Parameters,
    string Method);

/// <summary>
/// The Durbin-Watson test. Under H0 (independent normal errors) and residuals e = M y,
/// M = I - X(X'X)⁻¹X', the statistic d = e'Ae / e'e (A the first-difference matrix, A = D'D with
/// (Dv)_t = v_(t+1) - v_t) is distributed as sum ν_i z_i² / sum z_i² with z_i independent standard
/// normal and ν_1..ν_(n-p) the nonzero eigenvalues of MAM.
/// <para>
/// Exact method (n &lt;= 300 by default): a full QR decomposition X = [Q1 Q2] R gives an orthonormal
/// basis Q2 of the residual space; the ν_i are the eigenvalues of the (n-p) x (n-p) symmetric matrix
/// (D Q2)'(D Q2) = Q2' A Q2, which has the same nonzero spectrum as MAM without the p structural zeros.
/// P(d &lt;= x) = P(sum (ν_i - x) z_i² &lt;= 0) is computed by Imhof's (1961) inversion formula,
/// P(Q &lt;= 0) = 1/2 - (1/π) ∫_0^∞ sin θ(u) / (u ρ(u)) du, θ(u) = ½ sum atan(λ_i u),
/// ρ(u) = prod (1 + λ_i² u²)^¼, integrated after the substitution u = e^s by the trapezoidal rule
/// with the step halved from 1/2 until two levels agree to 1e-12; the rule converges geometrically for
/// this integrand, which is analytic in the strip |Im s| &lt; π/2 and decays exponentially at both ends.
/// The tail probabilities are accurate in absolute terms (about 1e-12, checked against closed forms);
/// far in a tail they are clamped to [0, 1] and may print as 0. The full QR and the eigenvalue problem
/// cost O(n³), which is why <see cref="DurbinWatsonMethod.Automatic"/> switches to the beta approximation
/// above n = 300.
/// Source: Imhof, J. P. (1961), Computing the distribution of quadratic forms in normal variables,
/// Biometrika 48, 419-426; Durbin, J. and Watson, G. S. (1950, 1951), Testing for serial correlation in
/// least squares regression I, II, Biometrika 37, 409-428 and 38, 159-178.
/// </para>
/// <para>
/// Beta approximation (n &gt; 300 by default): d/4 is taken as Beta(a, b) with the exact mean and
/// variance of d, E d = P/m and Var d = 2 (Q - P²/m) / (m (m + 2)), m = n - p, P = tr(MA),
/// Q = tr((MA)²), where with the thin QR factor Q1: P = 2(n - 1) - ||D Q1||², Q = (6n - 8) -
/// 2 ||A Q1||² + ||Q1'AQ1||² (Frobenius norms), all O(n p²) without n x n matrices.
/// Source: Durbin, J. and Watson, G. S. (1971), Testing for serial correlation in least squares
/// regression III, Biometrika 58, 1-19.
/// </para>
/// <para>
/// Domain: residuals in run order, design n x p of full column rank in the same order, including the
/// intercept or the cell-mean indicators. Fewer than 3 residuals or all residuals zero: d undefined.
/// Fewer than 2 residual degrees of freedom (d does not vary) or a rank-deficient design: p-values
/// undefined with a reason.
/// </para>
/// </summary>
public static class DurbinWatson
{
    /// <summary>Largest n for which <see cref="DurbinWatsonMethod.Automatic"/> uses the exact method.</summary>
    public const int ExactLimit = 300;

    /// <summary>d = sum_(t=2..n) (e_t - e_(t-1))² / sum_(t=1..n) e_t², for residuals in run order.</summary>
    public static Quantity Statistic(IReadOnlyList<double> residuals)
    {
        ArgumentNullException.ThrowIfNull(residuals);
        return residuals is double[] array ? Statistic(new ArrayView(array)) : Statistic(new ListView(residuals));
    }

    /// <summary>
    /// <see cref="Statistic(IReadOnlyList{double})"/> over a view specialised for its type (the same
    /// operations in the same order; the generic code is compiled per struct view, so an array's
    /// elements are read without an interface call).
    /// </summary>
    private static Quantity Statistic<TView>(TView residuals)
        where TView : struct, IReadOnlyList<double>
    {
        var n = residuals.Count;
        if (n < 3)
        {
            return Quantity.Undefined("the Durbin–Watson statistic needs at least 3 residuals");
        }

        // Scale by the largest |e| so that squares neither overflow nor underflow.
        double big = 0;
        for (var t = 0; t < n; t++)
        {
            var e = residuals[t];
            if (!double.IsFinite(e))
            {
                throw new ArgumentException("a residual is not finite", nameof(residuals));
            }

            big = Math.Max(big, Math.Abs(e));
        }

        if (big == 0)
        {
            return Quantity.Undefined("all residuals are zero, so the Durbin–Watson statistic is not defined");
        }

        double num = 0, den = 0;
        for (var t = 0; t < n; t++)
        {
            var e = residuals[t] / big;
            den += e * e;
            if (t > 0)
            {
                var diff = e - (residuals[t - 1] / big);
                num += diff * diff;
            }
        }

        return Quantity.Of(num / den);
    }

    /// <summary>
    /// Durbin-Watson statistic and its p-values for the residuals of a least-squares fit on
    /// <paramref name="design"/> (n x p, same run order as the residuals).
    /// </summary>
    public static DurbinWatsonResult Test(double[] residuals, double[,] design, DurbinWatsonMethod method = DurbinWatsonMethod.Automatic)
    {
        ArgumentNullException.ThrowIfNull(residuals);
        ArgumentNullException.ThrowIfNull(design);
        var n = residuals.Length;
        var p = design.GetLength(1);
        if (design.GetLength(0) != n)
        {
            throw new ArgumentException("the design matrix must have one row per residual", nameof(design));
        }

        var d = Statistic(residuals);
        if (!d.IsDefined)
        {
            return new DurbinWatsonResult(d, d, d, d, n, p, "not computed");
        }

        var (dist, reason) = TryBuild(design, method);
        if (dist is null)
        {
            var u = Quantity.Undefined(reason!);
            return new DurbinWatsonResult(d, u, u, u, n, p, "not computed");
        }

        var lower = dist.Lower(d.Value);
        var upper = dist.Upper(d.Value);
        var two = Math.Min(1.0, 2 * Math.Min(lower, upper));
        return new DurbinWatsonResult(d, Quantity.Of(lower), Quantity.Of(upper), Quantity.Of(two), n, p, dist.Method);
    }

    /// <summary>
    /// The same test for a design given by its distinct rows: row t of the n x p design is
    /// <paramref name="cellRows"/>[<paramref name="cellOfRow"/>[t], ·] (for example the coding row of
    /// each observation's cell in an ANOVA). Above 100,000 rows the beta moments' cross products are
    /// accumulated from counts of consecutive (previous, current, next) cells instead of row by row,
    /// so no n x p matrix is formed; with integer-valued rows (ANOVA codings are 0 and ±1) every
    /// sum is an exact integer and the result is identical to <see cref="Test(double[], double[,], DurbinWatsonMethod)"/>
    /// on the dense design. Up to 100,000 rows the dense design is built and tested as before.
    /// </summary>
    public static DurbinWatsonResult Test(double[] residuals, double[,] cellRows, int[] cellOfRow, DurbinWatsonMethod method = DurbinWatsonMethod.Automatic)
    {
        ArgumentNullException.ThrowIfNull(residuals);
        ArgumentNullException.ThrowIfNull(cellRows);
        ArgumentNullException.ThrowIfNull(cellOfRow);
        var n = residuals.Length;
        var cells = cellRows.GetLength(0);
        var p = cellRows.GetLength(1);
        if (cellOfRow.Length != n)
        {
            throw new ArgumentException("the design must have one row per residual", nameof(cellOfRow));
        }

        foreach (var c in cellOfRow)
        {
            if ((uint)c >= (uint)cells)
            {
                throw new ArgumentException("a row refers to a cell that does not exist", nameof(cellOfRow));
            }
        }

        var exact = method == DurbinWatsonMethod.Exact || (method == DurbinWatsonMethod.Automatic && n <= ExactLimit);
        if (exact || n <= StreamingLimit || p < 1 || (long)(cells + 1) * (cells + 1) * cells > CellTripleLimit)
        {
            var dense = new double[n, p];
            for (var t = 0; t < n; t++)
            {
                for (var j = 0; j < p; j++)
                {
                    dense[t, j] = cellRows[cellOfRow[t], j];
                }
            }

            return Test(residuals, dense, method);
        }

        var d = Statistic(residuals);
        if (!d.IsDefined)
        {
            return new DurbinWatsonResult(d, d, d, d, n, p, "not computed");
        }

        foreach (var v in cellRows)
        {
            if (!double.IsFinite(v))
            {
                throw new ArgumentException("the design matrix contains a value that is not finite", nameof(cellRows));
            }
        }

        var m = n - p;
        var (dist, reason) = m < 2
            ? (null, "the Durbin–Watson test needs at least 2 residual degrees of freedom (with fewer, d does not vary under the null hypothesis)")
            : StreamingMoments(new CellTriples(cellRows, cellOfRow), n, p, m);
        if (dist is null)
        {
            var u = Quantity.Undefined(reason!);
            return new DurbinWatsonResult(d, u, u, u, n, p, "not computed");
        }

        var lower = dist.Lower(d.Value);
        var upper = dist.Upper(d.Value);
        var two = Math.Min(1.0, 2 * Math.Min(lower, upper));
        return new DurbinWatsonResult(d, Quantity.Of(lower), Quantity.Of(upper), Quantity.Of(two), n, p, dist.Method);
    }

    /// <summary>Largest (cells + 1)² × cells table of consecutive-cell counts for the structured route.</summary>
    private const long CellTripleLimit = 1 << 22;

    /// <summary>The null distribution of d for residuals of a fit on <paramref name="design"/>.</summary>
    /// <exception cref="ArgumentException">The design is rank deficient or leaves fewer than 2 residual df.</exception>
    public static DurbinWatsonNullDistribution NullDistribution(double[,] design, DurbinWatsonMethod method = DurbinWatsonMethod.Automatic)
    {
        ArgumentNullException.ThrowIfNull(design);
        var (dist, reason) = TryBuild(design, method);
        return dist ?? throw new ArgumentException(reason, nameof(design));
    }

    private static (DurbinWatsonNullDistribution? Distribution, string? Reason) TryBuild(double[,] design, DurbinWatsonMethod method)
    {
        var n = design.GetLength(0);
        var p = design.GetLength(1);
        if (p < 1)
        {
            throw new ArgumentException("the design matrix has no columns", nameof(design));
        }

        foreach (var v in design)
        {
            if (!double.IsFinite(v))
            {
                throw new ArgumentException("the design matrix contains a value that is not finite", nameof(design));
            }
        }

        var m = n - p;
        if (m < 2)
        {
            return (null, "the Durbin–Watson test needs at least 2 residual degrees of freedom (with fewer, d does not vary under the null hypothesis)");
        }

        var exact = method == DurbinWatsonMethod.Exact || (method == DurbinWatsonMethod.Automatic && n <= ExactLimit);
        if (!exact && n > StreamingLimit)
        {
            return StreamingMoments(design, n, p, m);
        }

        var x = Matrix<double>.Build.DenseOfArray(design);
        var qr = x.QR(exact ? QRMethod.Full : QRMethod.Thin);
        if (!FullRank(x, qr.R))
        {
            return (null, "the design matrix is not of full column rank");
        }

        if (exact)
        {
            var q2 = qr.Q.SubMatrix(0, n, p, m);
            var c = Difference(q2);
            var s = c.TransposeThisAndMultiply(c);
            s = (s + s.Transpose()) * 0.5;
            var evd = s.Evd(Symmetricity.Symmetric);
            var nu = new double[m];
            for (var i = 0; i < m; i++)
            {
                nu[i] = Math.Max(0.0, evd.EigenValues[i].Real);
            }

            return (DurbinWatsonNullDistribution.FromEigenvalues(nu), null);
        }

        var q1 = qr.Q.SubMatrix(0, n, 0, p);
        var dq = Difference(q1);
        var aq = TransposeDifference(dq);
        var sp = dq.TransposeThisAndMultiply(dq);
        var traceMA = (2.0 * (n - 1)) - Frobenius2(dq);
        var traceMA2 = ((6.0 * n) - 8.0) - (2.0 * Frobenius2(aq)) + Frobenius2(sp);
        var mean = traceMA / m;
        var variance = 2.0 * (traceMA2 - (traceMA * mean)) / (m * (m + 2.0));
        if (!(variance > 0))
        {
            return (null, "the Durbin–Watson statistic has zero variance for this design");
        }

        return (DurbinWatsonNullDistribution.BetaFromMoments(mean, variance), null);
    }

    /// <summary>Above this many rows the beta moments come from p × p cross products, streamed.</summary>
    private const int StreamingLimit = 100_000;

    /// <summary>
    /// The same moments as the QR route without any n × p matrix: with G = X'X, B = (DX)'(DX) and
    /// C = (AX)'(AX), A = D'D, the projection on the columns of X gives trace(MA) = 2(n-1) - tr(G⁻¹B)
    /// and trace((MA)²) = 6n - 8 - 2 tr(G⁻¹C) + tr((G⁻¹B)²). One pass over the rows; memory p².
    /// </summary>
    private static (DurbinWatsonNullDistribution? Distribution, string? Reason) StreamingMoments(double[,] design, int n, int p, int m)
    {
        var g = new double[p, p];
        var b = new double[p, p];
        var c = new double[p, p];
        var dPrev = new double[p];
        var dCur = new double[p];
        var a = new double[p];
        for (var t = 0; t < n; t++)
        {
            // (DX)_t = x_(t+1) - x_t for t < n-1; (AX)_t = (DX)_(t-1) - (DX)_t with zeros outside.
            for (var j = 0; j < p; j++)
            {
                dCur[j] = t < n - 1 ? design[t + 1, j] - design[t, j] : 0.0;
                a[j] = (t > 0 ? dPrev[j] : 0.0) - dCur[j];
            }

            Accumulate(g, b, c, p, t, design, dCur, a, 1.0);
            (dPrev, dCur) = (dCur, dPrev);
        }

        return MomentsFromCrossProducts(g, b, c, n, p, m);
    }

    /// <summary>Adds weight × (x xᵀ, d dᵀ, a aᵀ) to the lower triangles of g, b, c, x = row t of rows.</summary>
    private static void Accumulate(double[,] g, double[,] b, double[,] c, int p, int t, double[,] rows, double[] dCur, double[] a, double weight)
    {
        for (var i = 0; i < p; i++)
        {
            var xi = rows[t, i] * weight;
            var di = dCur[i] * weight;
            var ai = a[i] * weight;
            for (var j = 0; j <= i; j++)
            {
                g[i, j] += xi * rows[t, j];
                b[i, j] += di * dCur[j];
                c[i, j] += ai * a[j];
            }
        }
    }

    /// <summary>Rows given by cells: the cross products from counts of (previous, current, next) cells.</summary>
    private readonly record struct CellTriples(double[,] CellRows, int[] CellOfRow);

    private static (DurbinWatsonNullDistribution? Distribution, string? Reason) StreamingMoments(CellTriples design, int n, int p, int m)
    {
        var rows = design.CellRows;
        var of = design.CellOfRow;
        var cells = rows.GetLength(0);
        var side = cells + 1; // index 0 = no neighbour (before the first or after the last row)
        var counts = new long[side * side * cells];
        for (var t = 0; t < n; t++)
        {
            var prev = t > 0 ? of[t - 1] + 1 : 0;
            var next = t < n - 1 ? of[t + 1] + 1 : 0;
            counts[(((prev * side) + next) * cells) + of[t]]++;
        }

        var g = new double[p, p];
        var b = new double[p, p];
        var c = new double[p, p];
        var dPrev = new double[p];
        var dCur = new double[p];
        var a = new double[p];
        for (var prev = 0; prev < side; prev++)
        {
            for (var next = 0; next < side; next++)
            {
                for (var cur = 0; cur < cells; cur++)
                {
                    var w = counts[(((prev * side) + next) * cells) + cur];
                    if (w == 0)
                    {
                        continue;
                    }

                    for (var j = 0; j < p; j++)
                    {
                        dPrev[j] = prev > 0 ? rows[cur, j] - rows[prev - 1, j] : 0.0;
                        dCur[j] = next > 0 ? rows[next - 1, j] - rows[cur, j] : 0.0;
                        a[j] = dPrev[j] - dCur[j];
                    }

                    Accumulate(g, b, c, p, cur, rows, dCur, a, w);
                }
            }
        }

        return MomentsFromCrossProducts(g, b, c, n, p, m);
    }

    private static (DurbinWatsonNullDistribution? Distribution, string? Reason) MomentsFromCrossProducts(double[,] g, double[,] b, double[,] c, int n, int p, int m)
    {
        var gm = Matrix<double>.Build.Dense(p, p);
        var bm = Matrix<double>.Build.Dense(p, p);
        var cm = Matrix<double>.Build.Dense(p, p);
        for (var i = 0; i < p; i++)
        {
            for (var j = 0; j <= i; j++)
            {
                gm[i, j] = gm[j, i] = g[i, j];
                bm[i, j] = bm[j, i] = b[i, j];
                cm[i, j] = cm[j, i] = c[i, j];
            }
        }

        // Rank as in the QR route: the Cholesky diagonal of G equals |R_jj|.
        for (var j = 0; j < p; j++)
        {
            if (!(g[j, j] > 0))
            {
                return (null, "the design matrix is not of full column rank");
            }
        }

        MathNet.Numerics.LinearAlgebra.Factorization.Cholesky<double> chol;
        try
        {
            chol = gm.Cholesky();
        }
        catch (ArgumentException)
        {
            return (null, "the design matrix is not of full column rank");
        }

        for (var j = 0; j < p; j++)
        {
            if (!(Math.Abs(chol.Factor[j, j]) > 1e-10 * Math.Sqrt(g[j, j])))
            {
                return (null, "the design matrix is not of full column rank");
            }
        }

        var gb = chol.Solve(bm);
        var gc = chol.Solve(cm);
        var traceMA = (2.0 * (n - 1)) - gb.Trace();
        var traceMA2 = ((6.0 * n) - 8.0) - (2.0 * gc.Trace()) + (gb * gb).Trace();
        var mean = traceMA / m;
        var variance = 2.0 * (traceMA2 - (traceMA * mean)) / (m * (m + 2.0));
        if (!(variance > 0))
        {
            return (null, "the Durbin–Watson statistic has zero variance for this design");
        }

        return (DurbinWatsonNullDistribution.BetaFromMoments(mean, variance), null);
    }

    private static bool FullRank(Matrix<double> x, Matrix<double> r)
    {
        var p = x.ColumnCount;
        for (var j = 0; j < p; j++)
        {
            var norm = x.Column(j).L2Norm();
            if (!(norm > 0) || !(Math.Abs(r[j, j]) > 1e-10 * norm))
            {
                return false;
            }
        }

        return true;
    }

    /// <summary>D v for each column: (n - 1) rows, row t = v_(t+1) - v_t.</summary>
    private static Matrix<double> Difference(Matrix<double> v)
    {
        var n = v.RowCount;
        var r = Matrix<double>.Build.Dense(n - 1, v.ColumnCount);
        for (var j = 0; j < v.ColumnCount; j++)
        {
            for (var t = 0; t < n - 1; t++)
            {
                r[t, j] = v[t + 1, j] - v[t, j];
            }
        }

        return r;
    }

    /// <summary>D' w for each column: n rows, (D'w)_t = w_(t-1) - w_t with w_(-1) = w_(n-1) = 0.</summary>
    private static Matrix<double> TransposeDifference(Matrix<double> w)
    {
        var n = w.RowCount + 1;
        var r = Matrix<double>.Build.Dense(n, w.ColumnCount);
        for (var j = 0; j < w.ColumnCount; j++)
        {
            for (var t = 0; t < n; t++)
            {
                var prev = t > 0 ? w[t - 1, j] : 0.0;
                var cur = t < n - 1 ? w[t, j] : 0.0;
                r[t, j] = prev - cur;
            }
        }

        return r;
    }

    /// <summary>Sum of squared entries, in one pass (the library's norm forms A Aᵀ: quadratic in rows).</summary>
    private static double Frobenius2(Matrix<double> a)
    {
        double sum = 0;
        foreach (var v in a.Storage.Enumerate())
        {
            sum += v * v;
        }

        return sum;
    }
}

/// <summary>
/// Null distribution of the Durbin-Watson statistic for one design: exact from the eigenvalues
/// ν_i of MAM (Imhof's formula), or a beta approximation from the exact first two moments.
/// See <see cref="DurbinWatson"/> for the formulas and sources.
/// </summary>
public sealed class DurbinWatsonNullDistribution
{
    private const double StartStep = 0.5;
    private const double MinConvergedStep = 0.25;
    private const int MaxHalvings = 8;
    private readonly double[]? nu;
    private readonly double betaA;
    private readonly double betaB;

    private DurbinWatsonNullDistribution(double[]? nu, double a, double b, double mean, double variance, string method)
    {
        this.nu = nu;
        betaA = a;
        betaB = b;
        Mean = mean;
        Variance = variance;
        Method = method;
    }

    /// <summary>E(d) under the null hypothesis (exact for both methods).</summary>
    public double Mean { get; }

    /// <summary>Var(d) under the null hypothesis (exact for both methods).</summary>
    public double Variance { get; }

    /// <summary>Which method this distribution uses, in words suitable for a report.</summary>
    public string Method { get; }

    /// <summary>Smallest possible value of d (the smallest ν for the exact method, 0 for the beta).</summary>
    public double Minimum => nu is null ? 0.0 : nu[0];

    /// <summary>Largest possible value of d (the largest ν for the exact method, 4 for the beta).</summary>
    public double Maximum => nu is null ? 4.0 : nu[^1];

    /// <summary>The nonzero eigenvalues of MAM in ascending order (empty for the beta approximation).</summary>
    public IReadOnlyList<double> Eigenvalues => nu ?? [];

    /// <summary>
    /// Exact distribution of sum ν_i z_i² / sum z_i² for the given weights (at least two, not all equal),
    /// for example the eigenvalues of MAM.
    /// </summary>
    public static DurbinWatsonNullDistribution FromEigenvalues(IReadOnlyList<double> eigenvalues)
    {
        ArgumentNullException.ThrowIfNull(eigenvalues);
        var v = eigenvalues.ToArray();
        if (v.Length < 2 || v.Any(e => !double.IsFinite(e)))
        {
            throw new ArgumentException("at least two finite eigenvalues are needed", nameof(eigenvalues));
        }

        Array.Sort(v);
        if (!(v[^1] > v[0]))
        {
            throw new ArgumentException("the eigenvalues are all equal, so the ratio does not vary", nameof(eigenvalues));
        }

        // E d = sum ν / m, Var d = 2 (m sum ν² - (sum ν)²) / (m² (m + 2)), with ν centred for accuracy.
        var m = v.Length;
        var mean = v.Average();
        var centred = v.Sum(e => (e - mean) * (e - mean));
        var variance = 2.0 * centred / (m * (m + 2.0));
        return new DurbinWatsonNullDistribution(
            v,
            0,
            0,
            mean,
            variance,
            "exact distribution (Imhof 1961 numerical inversion over the nonzero eigenvalues of MAM)");
    }

    internal static DurbinWatsonNullDistribution BetaFromMoments(double mean, double variance)
    {
        var mu = mean / 4.0;
        var s2 = variance / 16.0;
        var sum = (mu * (1 - mu) / s2) - 1;
        return new DurbinWatsonNullDistribution(
            null,
            mu * sum,
            (1 - mu) * sum,
            mean,
            variance,
            "beta approximation on [0, 4] with the exact mean and variance of d (Durbin and Watson 1971)");
    }

    /// <summary>P(d &lt;= x) under the null hypothesis.</summary>
    public double Lower(double x) => Tail(x, lower: true);

    /// <summary>P(d &gt;= x) under the null hypothesis (computed directly, not as 1 - Lower).</summary>
    public double Upper(double x) => Tail(x, lower: false);

    /// <summary>The lower alpha-quantile d_α with P(d &lt;= d_α) = α, 0 &lt; α &lt; 1 (bisection to 1e-10).</summary>
    public double Quantile(double alpha)
    {
        if (!(alpha > 0 && alpha < 1))
        {
            throw new ArgumentOutOfRangeException(nameof(alpha), "alpha must lie between 0 and 1");
        }

        double lo = Minimum, hi = Maximum;
        while (hi - lo > 1e-10)
        {
            var mid = 0.5 * (lo + hi);
            if (Lower(mid) < alpha)
            {
                lo = mid;
            }
            else
            {
                hi = mid;
            }
        }

        return 0.5 * (lo + hi);
    }

    private double Tail(double x, bool lower)
    {
        if (!double.IsFinite(x))
        {
            throw new ArgumentException("x is not finite", nameof(x));
        }

        if (nu is null)
        {
            var y = Math.Clamp(x / 4.0, 0.0, 1.0);
            return lower
                ? SpecialFunctions.BetaRegularized(betaA, betaB, y)
                : SpecialFunctions.BetaRegularized(betaB, betaA, 1.0 - y);
        }

        if (x <= nu[0])
        {
            return lower ? 0.0 : 1.0;
        }

        if (x >= nu[^1])
        {
            return lower ? 1.0 : 0.0;
        }

        var integral = Imhof(nu, x);
        var r = lower ? 0.5 - (integral / Math.PI) : 0.5 + (integral / Math.PI);
        return Math.Clamp(r, 0.0, 1.0);
    }

    /// <summary>
    /// ∫_0^∞ sin θ(u) / (u ρ(u)) du for λ_i = ν_i - x, by the trapezoidal rule in s = ln u.
    /// The weights are scaled to max |λ| = 1 (the integral is scale-free).
    /// </summary>
    private static double Imhof(double[] nu, double x)
    {
        var m = nu.Length;
        var lambda = new double[m];
        double big = 0;
        for (var i = 0; i < m; i++)
        {
            lambda[i] = nu[i] - x;
            big = Math.Max(big, Math.Abs(lambda[i]));
        }

        for (var i = 0; i < m; i++)
        {
            lambda[i] /= big;
        }

        // Below s0 the integrand is at most (m/2) e^s, so the omitted part is below 1e-16.
        var s0 = Math.Log(1e-16 / m);
        double Integrand(double s)
        {
            var u = Math.Exp(s);
            double theta = 0, logRho = 0;
            for (var i = 0; i < lambda.Length; i++)
            {
                var lu = lambda[i] * u;
                theta += Math.Atan(lu);
                logRho += Math.Log(1 + (lu * lu));
            }

            return Math.Sin(0.5 * theta) * Math.Exp(-0.25 * logRho);
        }

        // Upper end: for u >= 1 the factor with |λ| = 1 makes ρ grow at least like √u, so the rest
        // of the integral beyond s is below 2^(5/4) / ρ(e^s) <= 2.4 |f|-bound; stop when that is < 1e-16.
        var h = StartStep;
        double sum = 0;
        var count = 0;
        for (; ; count++)
        {
            var s = s0 + (count * h);
            var u = Math.Exp(s);
            double logRho = 0;
            for (var i = 0; i < m; i++)
            {
                var lu = lambda[i] * u;
                logRho += Math.Log(1 + (lu * lu));
            }

            sum += Integrand(s);
            if (s >= 0 && 2.4 * Math.Exp(-0.25 * logRho) < 1e-16)
            {
                break;
            }
        }

        // Halve the step until two levels agree: the trapezoidal rule converges geometrically here
        // (the integrand is analytic in |Im s| < π/2), so the finer level is far more accurate.
        var estimate = sum * h;
        for (var level = 0; level < MaxHalvings; level++)
        {
            h /= 2;
            for (var j = 0; j < count; j++)
            {
                sum += Integrand(s0 + (((2 * j) + 1) * h));
            }

            count *= 2;
            var next = sum * h;
            var change = Math.Abs(next - estimate);
            estimate = next;
            if (h <= MinConvergedStep && change < 1e-12)
            {
                break;
            }
        }

        return estimate;
    }
}
