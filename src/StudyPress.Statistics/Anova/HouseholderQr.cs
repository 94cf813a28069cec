namespace StudyPress.Statistics.Anova;

/// <summary>
/// Householder QR factorisation X = QR of an n x p design (n &gt;= p), column by column and without
/// pivoting, so that column order is preserved: the squared entries of the "effects" vector Q'y
/// for the columns of a term are the sequential (type 1) reduction in residual SS due to that term.
/// Rank is checked column by column: a column whose part orthogonal to the earlier columns has a
/// norm below <see cref="RankTolerance"/> times its own norm is aliased (linearly dependent).
/// Sources: Householder (1958), J. ACM 5, 339-342; Golub and Van Loan, Matrix Computations,
/// 4th ed., sections 5.1.2 and 5.2.1; for the effects vector in ANOVA, Chambers (1977),
/// Computational Methods for Data Analysis, ch. 5.
/// </summary>
internal sealed class HouseholderQr
{
    /// <summary>Relative size below which a column counts as a linear combination of earlier ones.</summary>
    public const double RankTolerance = 1e-9;

    private readonly double[][] _v; // Householder vectors, v[j] has entries for rows j..n-1
    private readonly double[] _beta;
    private readonly double[,] _r;

    private HouseholderQr(int n, int p, double[][] v, double[] beta, double[,] r, int firstAliased)
    {
        Rows = n;
        Columns = p;
        _v = v;
        _beta = beta;
        _r = r;
        FirstAliasedColumn = firstAliased;
    }

    public int Rows { get; }

    public int Columns { get; }

    /// <summary>Index of the first column that is (numerically) a combination of earlier columns; -1 if full rank.</summary>
    public int FirstAliasedColumn { get; }

    public bool IsFullRank => FirstAliasedColumn < 0;

    /// <summary>Factorises the columns <paramref name="columns"/> of <paramref name="x"/>, in that order.</summary>
    public static HouseholderQr Factor(double[,] x, IReadOnlyList<int> columns)
    {
        var n = x.GetLength(0);
        var p = columns.Count;
        if (p > n)
        {
            throw new ArgumentException("more columns than rows", nameof(columns));
        }

        // Work in column-major copies for locality.
        var a = new double[p][];
        var norms = new double[p];
        for (var j = 0; j < p; j++)
        {
            var col = new double[n];
            double s = 0;
            for (var i = 0; i < n; i++)
            {
                col[i] = x[i, columns[j]];
                s += col[i] * col[i];
            }

            a[j] = col;
            norms[j] = Math.Sqrt(s);
        }

        var v = new double[p][];
        var beta = new double[p];
        var r = new double[p, p];
        var firstAliased = -1;
        for (var k = 0; k < p; k++)
        {
            var col = a[k];
            double scale = 0;
            for (var i = k; i < n; i++)
            {
                scale = Math.Max(scale, Math.Abs(col[i]));
            }

            double sigma = 0;
            if (scale > 0)
            {
                for (var i = k; i < n; i++)
                {
                    var t = col[i] / scale;
                    sigma += t * t;
                }
            }

            var alpha = scale * Math.Sqrt(sigma);
            if (firstAliased < 0 && !(alpha > RankTolerance * norms[k]))
            {
                firstAliased = k;
            }

            var vk = new double[n - k];
            if (alpha == 0)
            {
                beta[k] = 0;
                v[k] = vk;
                for (var j = 0; j < k; j++)
                {
                    r[j, k] = col[j];
                }

                continue;
            }

            // v = x - s e1 with s = -sign(x1) ||x|| (no cancellation); H = I - beta v v'.
            var s1 = col[k] >= 0 ? -alpha : alpha;
            for (var i = k; i < n; i++)
            {
                vk[i - k] = col[i];
            }

            vk[0] -= s1;
            var vtv = 2.0 * ((alpha * alpha) - (col[k] * s1)); // ||x - s e1||² = 2(alpha² - x1 s)
            beta[k] = 2.0 / vtv;
            v[k] = vk;
            for (var j = 0; j < k; j++)
            {
                r[j, k] = col[j];
            }

            r[k, k] = s1;
            for (var j = k + 1; j < p; j++)
            {
                Reflect(vk, beta[k], k, a[j]);
            }
        }

        return new HouseholderQr(n, p, v, beta, r, firstAliased);
    }

    /// <summary>Overwrites y (length n) with Q'y, the effects vector.</summary>
    public void ApplyQTranspose(double[] y)
    {
        for (var k = 0; k < Columns; k++)
        {
            Reflect(_v[k], _beta[k], k, y);
        }
    }

    /// <summary>Overwrites z with Qz (the inverse of <see cref="ApplyQTranspose"/>).</summary>
    public void ApplyQ(double[] z)
    {
        for (var k = Columns - 1; k >= 0; k--)
        {
            Reflect(_v[k], _beta[k], k, z);
        }
    }

    /// <summary>Returns Q'y for a copy of y.</summary>
    public double[] Effects(ReadOnlySpan<double> y)
    {
        var e = y.ToArray();
        ApplyQTranspose(e);
        return e;
    }

    /// <summary>Residual sum of squares of y on the factorised columns: the sum of squared effects beyond p.</summary>
    public double ResidualSumOfSquares(ReadOnlySpan<double> y)
    {
        var e = Effects(y);
        double s = 0;
        for (var i = Columns; i < Rows; i++)
        {
            s += e[i] * e[i];
        }

        return s;
    }

    /// <summary>Solves R b = (Q'y)[0..p) by back-substitution (requires full rank).</summary>
    public double[] Coefficients(double[] effects)
    {
        var p = Columns;
        var b = new double[p];
        for (var i = p - 1; i >= 0; i--)
        {
            var s = effects[i];
            for (var j = i + 1; j < p; j++)
            {
                s -= _r[i, j] * b[j];
            }

            b[i] = s / _r[i, i];
        }

        return b;
    }

    /// <summary>Diagonal of the hat matrix, h_i = sum_j Q[i, j]² over the first p columns of Q.</summary>
    public double[] HatDiagonal()
    {
        var h = new double[Rows];
        var e = new double[Rows];
        for (var j = 0; j < Columns; j++)
        {
            Array.Clear(e);
            e[j] = 1;
            ApplyQ(e);
            for (var i = 0; i < Rows; i++)
            {
                h[i] += e[i] * e[i];
            }
        }

        return h;
    }

    /// <summary>(R'R)^{-1} = (X'X)^{-1} from R, for Wald tests and standard errors (requires full rank).</summary>
    public double[,] InverseCrossProduct()
    {
        var p = Columns;
        var rinv = new double[p, p];
        for (var j = 0; j < p; j++)
        {
            rinv[j, j] = 1.0 / _r[j, j];
            for (var i = j - 1; i >= 0; i--)
            {
                double s = 0;
                for (var k = i + 1; k <= j; k++)
                {
                    s += _r[i, k] * rinv[k, j];
                }

                rinv[i, j] = -s / _r[i, i];
            }
        }

        var c = new double[p, p];
        for (var i = 0; i < p; i++)
        {
            for (var j = i; j < p; j++)
            {
                double s = 0;
                for (var k = j; k < p; k++)
                {
                    s += rinv[i, k] * rinv[j, k];
                }

                c[i, j] = s;
                c[j, i] = s;
            }
        }

        return c;
    }

    private static void Reflect(double[] v, double beta, int k, double[] y)
    {
        if (beta == 0)
        {
            return;
        }

        ReadOnlySpan<double> vs = v;
        var ys = y.AsSpan(k, v.Length);
        double s = 0;
        for (var i = 0; i < vs.Length; i++)
        {
            s += vs[i] * ys[i];
        }

        s *= beta;
        for (var i = 0; i < vs.Length; i++)
        {
            ys[i] -= s * vs[i];
        }
    }
}
