using StudyPress.Statistics.Anova;

namespace StudyPress.Statistics.FollowUp;

/// <summary>
/// One estimated marginal mean: the levels (one per factor of its term, in the term's factor order),
/// the mean on the model's scale with its SE, df and (1 - alpha) interval, and the same mean and
/// limits back-transformed to the original scale (equal to them when no transform was used).
/// </summary>
public sealed record MarginalMean(
    IReadOnlyList<string> Levels,
    Quantity Mean,
    Quantity Se,
    Quantity Df,
    Quantity CiLow,
    Quantity CiHigh,
    Quantity BackTransformedMean,
    Quantity BackTransformedLow,
    Quantity BackTransformedHigh);

/// <summary>
/// The marginal means of one term (a factor, or an interaction's cells). <paramref name="UnitCovariance"/>
/// is L (X'X)⁻¹ L' for the means' coefficient rows L, so that their covariance is σ² times it:
/// hand it with <see cref="Means"/> and the error mean square to <see cref="Contrasts.Evaluate"/>.
/// </summary>
public sealed record MarginalMeansTerm(string Term, IReadOnlyList<string> Factors, IReadOnlyList<MarginalMean> Means, double[,] UnitCovariance);

/// <summary>Marginal means of the requested terms, with the error mean square and df their SE use.</summary>
public sealed record MarginalMeansResult(
    IReadOnlyList<MarginalMeansTerm> Terms,
    double ErrorMeanSquare,
    double ErrorDf,
    double Alpha,
    TransformKind Transform,
    string BackTransformation);

/// <summary>
/// Estimated marginal (least-squares, population marginal) means of a fixed-effects factorial fit
/// (Searle, Speed and Milliken 1980, "Population marginal means in the linear model: an
/// alternative to least squares means", The American Statistician 34, 216-221; Milliken and
/// Johnson 2009, Analysis of Messy Data vol. 1, 2nd ed., ch. 9).
/// <para>
/// For a term T (a set of factors) and a combination of its levels, the mean is the model's
/// predicted cell mean averaged with equal weight over every level combination of the factors not
/// in T (with covariates, if any, at their means). Under the sum-to-zero coding of
/// <see cref="AnovaDesign"/> each effect column of a factor sums to zero over that factor's levels,
/// so the average keeps exactly the intercept and the columns of the model terms whose factors all
/// belong to T: the coefficient row L is the cell's coding row with every other term's columns
/// zeroed. Mean = L b, SE = sqrt(MSE · L (X'X)⁻¹ L'), df = the error df, interval
/// mean ± t(1 - alpha/2; df) SE. b and (X'X)⁻¹ come from the Householder QR of the count-weighted
/// cell rows (the same QR as <see cref="FactorialAnova"/>; never the normal equations).
/// </para>
/// <para>
/// <see cref="ComputeWithError"/> takes an error mean square and df and uses them instead of the residual (e.g. a
/// split-plot whole-plot factor on the whole-plot error): SE = sqrt(MS_error · L (X'X)⁻¹ L'). For a
/// balanced split-plot design this is the textbook SE of a whole-plot mean; with imbalance it is an
/// approximation (the exact SE then mixes strata).
/// </para>
/// <para>
/// Back-transformation (no delta method): the mean and each interval limit are back-transformed
/// separately with the inverse transform (<see cref="ResponseTransform.BackTransformMean(double, TransformKind, double?)"/>),
/// so the back-transformed mean is a power mean (geometric for logs) and the interval is the
/// image of the interval, not mean ± something. The reciprocal reverses the order of the limits
/// and has no finite image when its interval contains 0 (the limits are then undefined); a square
/// root or Box-Cox (lambda &gt; 0) lower limit below the transform's range is set to 0, the
/// smallest original value; an upper limit beyond the range of a Box-Cox transform with
/// lambda &lt; 0 is undefined (no finite limit).
/// </para>
/// <para>
/// Means are on the scale of <see cref="AnovaInput.Response"/> plus <c>responseCentre</c> (the
/// compiler centres the response before the fit). Only used levels have means.
/// </para>
/// </summary>
public static class EstimatedMarginalMeans
{
    /// <summary>
    /// Marginal means of <paramref name="terms"/> (each a list of factor names; null: every term of
    /// the fitted model, main effects then interactions) on the residual mean square and df.
    /// </summary>
    public static MarginalMeansResult Compute(
        AnovaInput input,
        double responseCentre = 0,
        TransformKind transform = TransformKind.None,
        double? lambda = null,
        IReadOnlyList<IReadOnlyList<string>>? terms = null)
    {
        var fit = Fit(input);
        return fit.Means(input.Factors, fit.ResidualMeanSquare, fit.ResidualDf, input.Alpha, responseCentre, transform, lambda, terms);
    }

    /// <summary>
    /// Marginal means on a given error mean square and df (e.g. a split-plot's whole-plot error for
    /// the whole-plot factor) instead of the residual; see the class summary.
    /// </summary>
    public static MarginalMeansResult ComputeWithError(
        AnovaInput input,
        double errorMeanSquare,
        double errorDf,
        double responseCentre = 0,
        TransformKind transform = TransformKind.None,
        double? lambda = null,
        IReadOnlyList<IReadOnlyList<string>>? terms = null)
    {
        var fit = Fit(input);
        return fit.Means(input.Factors, errorMeanSquare, errorDf, input.Alpha, responseCentre, transform, lambda, terms);
    }

    private static LinearFit Fit(AnovaInput input)
    {
        ArgumentNullException.ThrowIfNull(input);
        var problem = AnovaDesign.Check(input, out var coding, out var qr);
        if (problem is not null || coding is null || qr is null)
        {
            throw new ArgumentException(problem?.Message ?? "the design cannot be fitted", nameof(input));
        }

        var (z, ssWithin) = coding.CellResponse(input.Response);
        var effects = qr.Effects(z);
        var rss = ssWithin;
        for (var i = coding.ColumnCount; i < effects.Length; i++)
        {
            rss += effects[i] * effects[i];
        }

        return new LinearFit(coding, qr.Coefficients(effects), qr.InverseCrossProduct(), rss, input.Response.Length - coding.ColumnCount);
    }
}

/// <summary>
/// A least-squares fit whose first columns are a <see cref="DesignCoding"/> (intercept and factor
/// terms) and whose remaining columns (covariates, centred) are held at zero for marginal means.
/// </summary>
internal sealed class LinearFit(DesignCoding coding, double[] coefficients, double[,] inverse, double residualSumOfSquares, int residualDf)
{
    public DesignCoding Coding { get; } = coding;

    public double[] Coefficients { get; } = coefficients;

    /// <summary>(X'X)⁻¹ for all columns.</summary>
    public double[,] Inverse { get; } = inverse;

    public double ResidualSumOfSquares { get; } = residualSumOfSquares;

    public int ResidualDf { get; } = residualDf;

    public double ResidualMeanSquare => ResidualDf > 0 ? ResidualSumOfSquares / ResidualDf : double.NaN;

    /// <summary>The marginal-mean rows L of a term given by factor indices: one row per used-level combination, first factor slowest.</summary>
    public (double[][] Rows, int[][] Cells) Rows(int[] factors)
    {
        var p = Coefficients.Length;
        var keep = new bool[p];
        keep[0] = true;
        for (var t = 0; t < Coding.Terms.Count; t++)
        {
            if (Coding.Terms[t].All(factors.Contains))
            {
                foreach (var j in Coding.ColumnsOf(t))
                {
                    keep[j] = true;
                }
            }
        }

        var radix = factors.Select(f => Coding.Used[f].Length).ToArray();
        var rows = new List<double[]>();
        var cells = new List<int[]>();
        var positions = new int[Coding.Used.Length];
        foreach (var combo in DesignCoding.Crossing(radix))
        {
            Array.Clear(positions);
            for (var q = 0; q < factors.Length; q++)
            {
                positions[factors[q]] = combo[q];
            }

            var coded = Coding.CodingRow(positions);
            var row = new double[p];
            for (var j = 0; j < coded.Length; j++)
            {
                row[j] = keep[j] ? coded[j] : 0;
            }

            rows.Add(row);
            cells.Add((int[])combo.Clone());
        }

        return ([.. rows], [.. cells]);
    }

    public double Estimate(double[] l)
    {
        double s = 0;
        for (var j = 0; j < l.Length; j++)
        {
            s += l[j] * Coefficients[j];
        }

        return s;
    }

    /// <summary>a' (X'X)⁻¹ b.</summary>
    public double Form(double[] a, double[] b)
    {
        var p = a.Length;
        double s = 0;
        for (var i = 0; i < p; i++)
        {
            if (a[i] == 0)
            {
                continue;
            }

            double row = 0;
            for (var j = 0; j < p; j++)
            {
                row += Inverse[i, j] * b[j];
            }

            s += a[i] * row;
        }

        return s;
    }

    public int[] FactorIndices(IReadOnlyList<FactorColumn> factors, IReadOnlyList<string> names)
    {
        if (names.Count == 0)
        {
            throw new ArgumentException("a term names at least one factor", nameof(names));
        }

        var idx = new int[names.Count];
        for (var q = 0; q < names.Count; q++)
        {
            idx[q] = -1;
            for (var f = 0; f < factors.Count; f++)
            {
                if (string.Equals(factors[f].Name, names[q], StringComparison.Ordinal))
                {
                    idx[q] = f;
                }
            }

            if (idx[q] < 0)
            {
                throw new ArgumentException("'" + names[q] + "' is not a factor of the model", nameof(names));
            }
        }

        if (idx.Distinct().Count() != idx.Length)
        {
            throw new ArgumentException("a factor is named twice in a term", nameof(names));
        }

        Array.Sort(idx);
        return idx;
    }

    public MarginalMeansResult Means(
        IReadOnlyList<FactorColumn> factors,
        double mse,
        double df,
        double alpha,
        double centre,
        TransformKind transform,
        double? lambda,
        IReadOnlyList<IReadOnlyList<string>>? terms)
    {
        if (!(alpha > 0 && alpha < 1))
        {
            throw new ArgumentOutOfRangeException(nameof(alpha), "alpha must lie in (0, 1)");
        }

        if (transform == TransformKind.BoxCox && lambda is null)
        {
            throw new ArgumentException("Box–Cox back-transformation needs lambda", nameof(lambda));
        }

        var sets = terms is null
            ? [.. Coding.Terms]
            : terms.Select(t => FactorIndices(factors, t)).ToList();
        string? problem = !(df >= 1) || !double.IsFinite(df)
            ? "there are no error degrees of freedom"
            : !(mse > 0) || !double.IsFinite(mse) ? "the error mean square is not a positive finite number" : null;
        var t = problem is null ? Probability.TCritical(alpha, df) : double.NaN;
        var result = new List<MarginalMeansTerm>(sets.Count);
        foreach (var set in sets)
        {
            var (rows, cells) = Rows(set);
            var k = rows.Length;
            var cov = new double[k, k];
            for (var a = 0; a < k; a++)
            {
                for (var b = a; b < k; b++)
                {
                    cov[a, b] = cov[b, a] = Form(rows[a], rows[b]);
                }
            }

            var means = new List<MarginalMean>(k);
            for (var c = 0; c < k; c++)
            {
                var levels = set.Select((f, q) => factors[f].Levels[Coding.Used[f][cells[c][q]]]).ToArray();
                var mean = Estimate(rows[c]) + centre;
                Quantity se, dfq, low, high;
                if (problem is null)
                {
                    var s = Math.Sqrt(mse * cov[c, c]);
                    se = Quantity.Of(s);
                    dfq = Quantity.Of(df);
                    low = Quantity.Of(mean - (t * s));
                    high = Quantity.Of(mean + (t * s));
                }
                else
                {
                    se = dfq = low = high = Quantity.Undefined(problem);
                }

                var (bm, bl, bh) = BackTransform(mean, low, high, transform, lambda);
                means.Add(new MarginalMean(levels, Quantity.Of(mean), se, dfq, low, high, bm, bl, bh));
            }

            result.Add(new MarginalMeansTerm(string.Join(":", set.Select(f => factors[f].Name)), [.. set.Select(f => factors[f].Name)], means, cov));
        }

        return new MarginalMeansResult(result, mse, df, alpha, transform, Describe(transform, lambda));
    }

    /// <summary>Back-transforms a mean and its limits separately (see <see cref="EstimatedMarginalMeans"/>).</summary>
    public static (Quantity Mean, Quantity Low, Quantity High) BackTransform(double mean, Quantity low, Quantity high, TransformKind kind, double? lambda)
    {
        var m = ResponseTransform.BackTransformMean(mean, kind, lambda);
        if (kind == TransformKind.None)
        {
            return (m, low, high);
        }

        if (!low.IsDefined || !high.IsDefined)
        {
            return (m, low, high);
        }

        if (kind == TransformKind.Reciprocal)
        {
            if (low.Value <= 0 && high.Value >= 0)
            {
                var u = Quantity.Undefined("the interval on the reciprocal scale contains zero, so it has no finite limits on the original scale");
                return (m, u, u);
            }

            return (m, Quantity.Of(1.0 / high.Value), Quantity.Of(1.0 / low.Value));
        }

        var bl = ResponseTransform.BackTransformMean(low.Value, kind, lambda);
        var bh = ResponseTransform.BackTransformMean(high.Value, kind, lambda);
        var floorsAtZero = kind == TransformKind.Sqrt || (kind == TransformKind.BoxCox && lambda > 0);
        if (!bl.IsDefined && floorsAtZero)
        {
            bl = Quantity.Of(0);
        }

        if (!bh.IsDefined)
        {
            bh = Quantity.Undefined("the upper limit lies beyond the range of the transform, so it has no finite value on the original scale");
        }

        return (m, bl, bh);
    }

    private static string Describe(TransformKind kind, double? lambda) => kind == TransformKind.None
        ? "no transformation"
        : "mean and interval limits back-transformed separately (no delta method): the mean is the " + ResponseTransform.BackTransformedMeanName(kind, lambda) + "; the interval is the image of the interval on the transformed scale";
}
