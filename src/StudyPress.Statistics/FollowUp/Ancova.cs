using System.Globalization;
using StudyPress.Statistics.Anova;
using StudyPress.Statistics.Distributions;
using StudyPress.Statistics.PostHoc;

namespace StudyPress.Statistics.FollowUp;

/// <summary>A numeric covariate: one value per observation, in the order of the response (uncentred; the fit centres it).</summary>
public sealed record CovariateColumn(string Name, double[] Values);

/// <summary>How the pairwise comparisons of adjusted means are adjusted for multiplicity.</summary>
public enum AdjustedMeansComparison
{
    /// <summary>
    /// Default. Holm (1979) step-down over the pairs of each factor, on t tests of the adjusted
    /// differences; intervals at the Bonferroni level. Controls the family-wise error rate under
    /// any correlation, which the covariate makes irregular.
    /// </summary>
    Holm = 0,

    /// <summary>
    /// Tukey–Kramer style: p = P(Q_k,df &gt;= √2 |t|), intervals diff ± q(1 - alpha; k, df)/√2 · SE,
    /// with each pair's own SE from (X'X)⁻¹. With covariates this is an approximation (the
    /// adjusted means are not equally correlated; Hochberg and Tamhane 1987, ch. 3).
    /// </summary>
    TukeyKramer = 1,

    /// <summary>
    /// Bonferroni: the t tests of the adjusted differences with p × m (capped at 1), m the pairs of
    /// the factor; intervals at the Bonferroni level (the same as Holm's).
    /// </summary>
    Bonferroni = 2,
}

/// <summary>
/// Input of an analysis of covariance: the response, the factors (fixed, sum-to-zero coded as in
/// <see cref="AnovaInput"/>), one or more covariates with a common slope each, whether the factors
/// interact, the SS type (hierarchical or marginal) and alpha.
/// </summary>
public sealed record AncovaInput(
    double[] Response,
    IReadOnlyList<FactorColumn> Factors,
    IReadOnlyList<CovariateColumn> Covariates,
    bool Interactions,
    SumOfSquaresType SsType,
    double Alpha)
{
    /// <summary>
    /// The treatment factors (names): their terms are crossed with each covariate in the
    /// homogeneity-of-slopes test, and their adjusted means are compared pairwise. Null: every factor
    /// (in a randomized block design name only the treatment, not the blocks).
    /// </summary>
    public IReadOnlyList<string>? TreatmentFactors { get; init; }

    /// <summary>Added to every adjusted mean and limit (the compiler centres the response before the fit).</summary>
    public double ResponseCentre { get; init; }

    /// <summary>Adjustment of the pairwise comparisons of adjusted means (default Holm).</summary>
    public AdjustedMeansComparison Comparisons { get; init; } = AdjustedMeansComparison.Holm;
}

/// <summary>A covariate's common slope (the same in every group) with its SE, t and two-sided p on the residual df.</summary>
public sealed record CovariateSlope(string Covariate, double Mean, double Estimate, Quantity Se, Quantity T, Quantity P, int Df);

/// <summary>
/// The homogeneity-of-slopes test: F for the treatment-term × covariate columns added to the
/// common-slope model, on Df1 and Df2 (the separate-slopes residual df).
/// </summary>
public sealed record SlopesHomogeneity(IReadOnlyList<string> Factors, double SumOfSquares, int Df1, int Df2, Quantity F, Quantity P);

/// <summary>A pairwise comparison of two adjusted means of one factor: Diff = A - B, its SE, t, raw and adjusted p, and the interval of the family's method.</summary>
public sealed record AdjustedMeanComparison(string Factor, string LevelA, string LevelB, double Diff, Quantity Se, Quantity T, Quantity P, Quantity PAdjusted, Quantity CiLow, Quantity CiHigh, int Df);

/// <summary>
/// The ANCOVA: table rows (factor terms adjusted for the covariates, then each covariate adjusted
/// for everything else), residual, slopes, homogeneity of slopes, adjusted means (every model
/// term, covariates at their means) and pairwise comparisons of the treatment factors' adjusted means.
/// </summary>
public sealed record AncovaResult(
    IReadOnlyList<AnovaTerm> Terms,
    double ResidualSumOfSquares,
    int ResidualDf,
    Quantity ResidualMeanSquare,
    double TotalSumOfSquares,
    int TotalDf,
    IReadOnlyList<CovariateSlope> Slopes,
    SlopesHomogeneity Homogeneity,
    MarginalMeansResult AdjustedMeans,
    IReadOnlyList<AdjustedMeanComparison> Comparisons,
    string ComparisonMethod,
    SumOfSquaresType SsType,
    double Alpha)
{
    /// <summary>Fitted values of the common-slope model, per observation, on the scale of <see cref="AncovaInput.Response"/> (centred when the response was).</summary>
    public double[] Fitted { get; init; } = [];

    /// <summary>Residuals y - fitted of the common-slope model, per observation.</summary>
    public double[] Residuals { get; init; } = [];

    /// <summary>Leverages h_i = x_i' (X'X)⁻¹ x_i of the common-slope model (covariates centred), per observation.</summary>
    public double[] Leverages { get; init; } = [];

    /// <summary>
    /// The adjusted means of each treatment factor from this one fit, with their covariance and
    /// the error df: every comparison of them (<see cref="AdjustedComparisons"/>) is computed from
    /// these, without fitting the model again.
    /// </summary>
    public IReadOnlyList<AdjustedMeansFamily> Families { get; init; } = [];

    /// <summary>The adjusted means of treatment factor <paramref name="factor"/>.</summary>
    public AdjustedMeansFamily Family(string factor) =>
        Families.FirstOrDefault(f => string.Equals(f.Factor, factor, StringComparison.Ordinal))
        ?? throw new ArgumentException("'" + factor + "' is not a treatment factor of the analysis of covariance", nameof(factor));
}

/// <summary>
/// Analysis of covariance with one or more numeric covariates and one or more fixed factors, fitted
/// by least squares through Householder QR (never the normal equations; the n rows are reduced to
/// a small triangular factor in one pass over blocks of rows, see <c>Prepared</c>)
/// (Snedecor and Cochran 1989, Statistical Methods, 8th ed., ch. 18; Milliken and Johnson 2002,
/// Analysis of Messy Data vol. 3: Analysis of Covariance; Searle 1987, ch. 4 and 8, for the SS types).
/// <para>
/// Design: the intercept and the sum-to-zero factor columns of <see cref="AnovaDesign"/>, then one
/// column per covariate, centred at its mean (so that the intercept and the factor effects are at
/// the covariate means; the slopes are unchanged by centring).
/// Sums of squares, with the existing <see cref="FactorialAnova"/> convention: hierarchical (type 2)
/// R(t | intercept, every term not containing t, all covariates) for a factor term, marginal (type 3)
/// R(t | every other column); for a covariate both are R(covariate | every other column). Each
/// reduction is the sum of the squared effects Q'y of the term's columns placed last in a QR of the
/// reordered columns. Sequential SS are not offered (the covariate-first and covariate-last
/// orders answer different questions; hierarchical SS adjust the treatment for the covariate).
/// </para>
/// <para>
/// Slope of covariate c: b_c from R b = Q'y, SE = sqrt(MSE [(X'X)⁻¹]_cc), t = b/SE, two-sided p on
/// the residual df n - p. Homogeneity of slopes: the columns of every treatment term (terms made
/// only of treatment factors) multiplied by each centred covariate are added;
/// F = [(RSS_common - RSS_separate)/df1] / [RSS_separate/df2], df1 = the added columns, df2 = n - p - df1
/// (the treatment × covariate interaction test; when it is significant the common slope, and so the
/// adjusted means, are questionable: the treatment effect then depends on the covariate).
/// Adjusted means: <see cref="EstimatedMarginalMeans"/> with the covariates at their means (for one
/// factor, ȳ_i - Σ_c b_c (x̄_ic - x̄_c)), SE from (X'X)⁻¹ and the residual mean square.
/// Pairwise comparisons of adjusted means: see <see cref="AdjustedMeansComparison"/>.
/// </para>
/// <para>
/// Domain: <see cref="Check"/> (the factors' design as for the ANOVA; finite covariates of the
/// response's length, distinct names; the covariates not constant nor confounded with the factors;
/// more observations than parameters). <see cref="Fit"/> throws <see cref="ArgumentException"/> with
/// the same message. A separate-slopes model that cannot be fitted (rank deficient or no residual
/// df) leaves the homogeneity test undefined with a reason.
/// </para>
/// </summary>
public static class Ancova
{
    /// <summary>Null when the model can be fitted; otherwise what is wrong, in words.</summary>
    public static string? Check(AncovaInput input)
    {
        Prepare(input, out var problem);
        return problem;
    }

    /// <summary>Fits the analysis of covariance (see the class summary).</summary>
    public static AncovaResult Fit(AncovaInput input)
    {
        var model = Prepare(input, out var problem);
        if (problem is not null || model is null)
        {
            throw new ArgumentException(problem ?? "the model cannot be fitted", nameof(input));
        }

        var y = input.Response;
        var n = y.Length;
        var coding = model.Coding;
        var r = model.R;
        var ry = model.ResponseColumn;
        var pf = coding.ColumnCount;
        var q = input.Covariates.Count;
        var p = pf + q;
        var all = Enumerable.Range(0, p).ToArray();
        var qr = HouseholderQr.Factor(r, all);
        var effects = qr.Effects(ry);
        var rss = 0.0;
        for (var i = p; i < effects.Length; i++)
        {
            rss += effects[i] * effects[i];
        }

        var dfRes = n - p;
        var mse = rss / dfRes;
        var ssTotal = Groups.SumOfSquares(y, Groups.Mean(y));
        var covariateColumns = Enumerable.Range(pf, q).ToList();
        var terms = new List<AnovaTerm>(coding.Terms.Count + q);
        for (var t = 0; t < coding.Terms.Count; t++)
        {
            var columns = SumOfSquaresTypes.AdjustedFor(coding, t, input.SsType);
            columns.AddRange(covariateColumns);
            var ss = LastColumnsSs(r, ry, columns, [.. coding.ColumnsOf(t)]);
            terms.Add(AnovaTable.Term(coding.TermNames[t], [.. coding.Terms[t].Select(f => input.Factors[f].Name)], ss, coding.TermCount[t], rss, dfRes, ssTotal, input.Alpha));
        }

        for (var c = 0; c < q; c++)
        {
            var columns = all.Where(j => j != pf + c).ToList();
            var ss = LastColumnsSs(r, ry, columns, [pf + c]);
            terms.Add(AnovaTable.Term(input.Covariates[c].Name, [input.Covariates[c].Name], ss, 1, rss, dfRes, ssTotal, input.Alpha));
        }

        var b = qr.Coefficients(effects);
        var inverse = qr.InverseCrossProduct();
        var slopes = new List<CovariateSlope>(q);
        for (var c = 0; c < q; c++)
        {
            var j = pf + c;
            var se = Quantity.Of(Math.Sqrt(mse * inverse[j, j]));
            var tq = se.IsDefined && se.Value > 0 ? Quantity.Of(b[j] / se.Value) : Quantity.Undefined("the residual mean square is zero, so the slope has no standard error");
            slopes.Add(new CovariateSlope(input.Covariates[c].Name, model.CovariateMeans[c], b[j], se, tq, tq.Map(v => Probability.TTwoSided(v, dfRes)), dfRes));
        }

        var homogeneity = Homogeneity(input, model, n, rss);
        var fit = new LinearFit(coding, b, inverse, rss, dfRes);
        var means = fit.Means(input.Factors, mse, dfRes, input.Alpha, input.ResponseCentre, TransformKind.None, null, null);
        var families = model.Treatment.Select(f => AdjustedMeansFamily.Of(fit, input.Factors, f, mse, dfRes, input.ResponseCentre)).ToList();
        var comparisons = new List<AdjustedMeanComparison>();
        foreach (var family in families)
        {
            comparisons.AddRange(AdjustedComparisons.Pairwise(family, input.Comparisons, input.Alpha));
        }

        var method = AdjustedComparisons.Describe(input.Comparisons);
        var (fitted, residuals, leverages) = PerObservation(input, model, b, inverse);
        return new AncovaResult(terms, rss, dfRes, AnovaTable.MeanSquareResidual(rss, dfRes), ssTotal, n - 1, slopes, homogeneity, means, comparisons, method, input.SsType, input.Alpha)
        {
            Fitted = fitted,
            Residuals = residuals,
            Leverages = leverages,
            Families = families,
        };
    }

    /// <summary>Fitted values x_i b, residuals y_i - x_i b and leverages x_i' (X'X)⁻¹ x_i, one pass over the rows (O(n p²)).</summary>
    private static (double[] Fitted, double[] Residuals, double[] Leverages) PerObservation(AncovaInput input, Prepared model, double[] b, double[,] inverse)
    {
        var n = input.Response.Length;
        var pf = model.Coding.ColumnCount;
        var q = input.Covariates.Count;
        var p = pf + q;
        var fitted = new double[n];
        var residuals = new double[n];
        var leverages = new double[n];
        var x = new double[p];
        for (var i = 0; i < n; i++)
        {
            var cell = model.Coding.CellOf[i];
            for (var j = 0; j < pf; j++)
            {
                x[j] = model.Coding.CellRows[cell, j];
            }

            for (var c = 0; c < q; c++)
            {
                x[pf + c] = input.Covariates[c].Values[i] - model.CovariateMeans[c];
            }

            double f = 0, h = 0;
            for (var j = 0; j < p; j++)
            {
                f += x[j] * b[j];
                double row = 0;
                for (var k = 0; k < p; k++)
                {
                    row += inverse[j, k] * x[k];
                }

                h += x[j] * row;
            }

            fitted[i] = f;
            residuals[i] = input.Response[i] - f;
            leverages[i] = h;
        }

        return (fitted, residuals, leverages);
    }

    /// <summary>
    /// The reduced problem: the triangular factor R of the QR of the augmented n x m matrix
    /// [factor coding | centred covariates | treatment-term x covariate products | y]. Every fit
    /// below (the common-slope model, each SS reduction, the separate-slopes model) regresses the last
    /// column on a subset of the others, and [X y] = Q R with orthonormal Q preserves every inner
    /// product, so a QR of the same columns of R gives the same effects, coefficients, residual sums
    /// of squares and (X'X)⁻¹ as a QR of the n-row matrix. R is computed in one pass over blocks of
    /// rows, each block stacked under the R of the rows before it and factorised by Householder QR
    /// (a tall-skinny QR; Demmel, Grigori, Hoemmen and Langou 2012, SIAM J. Sci. Comput. 34,
    /// A206-A239), so the memory is O(block x m) rather than O(n x m), and no normal equations are formed.
    /// </summary>
    private sealed record Prepared(DesignCoding Coding, double[] CovariateMeans, int[] Treatment, List<(int Column, int Covariate)> Extra, double[,] R, double[] ResponseColumn);

    private const int BlockRows = 4096;

    private static Prepared? Prepare(AncovaInput input, out string? problem)
    {
        ArgumentNullException.ThrowIfNull(input);
        ArgumentNullException.ThrowIfNull(input.Covariates);
        problem = Validate(input);
        if (problem is not null)
        {
            return null;
        }

        var anova = new AnovaInput(input.Response, input.Factors, input.Interactions, input.SsType, input.Alpha);
        var design = AnovaDesign.Check(anova);
        if (design is not null)
        {
            problem = design.Message;
            return null;
        }

        var coding = DesignCoding.Build(anova);
        var n = input.Response.Length;
        var pf = coding.ColumnCount;
        var q = input.Covariates.Count;
        var p = pf + q;
        if (n <= p)
        {
            problem = string.Create(CultureInfo.InvariantCulture, $"the model has {p} parameters but there are only {n} observations; an analysis of covariance needs more observations than parameters");
            return null;
        }

        var means = input.Covariates.Select(c => Groups.Mean(c.Values)).ToArray();
        var treatment = input.TreatmentFactors is null
            ? [.. Enumerable.Range(0, input.Factors.Count)]
            : Enumerable.Range(0, input.Factors.Count).Where(f => input.TreatmentFactors.Contains(input.Factors[f].Name, StringComparer.Ordinal)).ToArray();
        var extra = new List<(int Column, int Covariate)>();
        for (var t = 0; t < coding.Terms.Count; t++)
        {
            if (coding.Terms[t].All(treatment.Contains))
            {
                for (var c = 0; c < q; c++)
                {
                    extra.AddRange(coding.ColumnsOf(t).Select(j => (j, c)));
                }
            }
        }

        var r = Reduce(input, coding, means, extra);
        var m = r.GetLength(1);
        var ry = new double[m];
        for (var i = 0; i < m; i++)
        {
            ry[i] = r[i, m - 1];
        }

        var qr = HouseholderQr.Factor(r, [.. Enumerable.Range(0, p)]);
        if (!qr.IsFullRank)
        {
            var j = qr.FirstAliasedColumn;
            problem = j >= pf
                ? "covariate '" + input.Covariates[j - pf].Name + "' is constant, or a combination of the factors and earlier covariates, so its slope cannot be estimated"
                : "the factors' effects cannot be separated (the design is rank deficient)";
            return null;
        }

        return new Prepared(coding, means, treatment, extra, r, ry);
    }

    private static string? Validate(AncovaInput input)
    {
        if (input.Covariates.Count == 0)
        {
            return "an analysis of covariance needs at least one covariate";
        }

        if (input.SsType == SumOfSquaresType.Sequential)
        {
            return "the analysis of covariance reports hierarchical (type 2) or marginal (type 3) sums of squares";
        }

        var names = new HashSet<string>(input.Factors.Select(f => f.Name), StringComparer.Ordinal);
        foreach (var c in input.Covariates)
        {
            if (c.Values.Length != input.Response.Length)
            {
                return "covariate '" + c.Name + "' and the response differ in length";
            }

            if (c.Values.Any(v => !double.IsFinite(v)))
            {
                return "covariate '" + c.Name + "' has a value that is not a finite number";
            }

            if (!names.Add(c.Name))
            {
                return "the name '" + c.Name + "' is used twice among the factors and covariates";
            }
        }

        foreach (var t in input.TreatmentFactors ?? [])
        {
            if (!input.Factors.Any(f => string.Equals(f.Name, t, StringComparison.Ordinal)))
            {
                return "'" + t + "' is not a factor of the model";
            }
        }

        return input.Response.Any(v => !double.IsFinite(v)) ? "the response has a value that is not a finite number" : null;
    }

    /// <summary>The m x m triangular factor of [coding | centred covariates | products | y], block by block (see <see cref="Prepared"/>).</summary>
    private static double[,] Reduce(AncovaInput input, DesignCoding coding, double[] means, List<(int Column, int Covariate)> extra)
    {
        var n = input.Response.Length;
        var pf = coding.ColumnCount;
        var q = input.Covariates.Count;
        var m = pf + q + extra.Count + 1;
        var columns = Enumerable.Range(0, m).ToArray();
        var block = Math.Max(BlockRows, 2 * m);
        double[,]? r = null;
        var row = new double[m];
        var column = Array.Empty<double>();
        for (var start = 0; start < n; start += block)
        {
            var rows = Math.Min(block, n - start);
            var top = r is null ? 0 : m;
            var stacked = new double[Math.Max(top + rows, m), m];
            for (var i = 0; i < top; i++)
            {
                for (var j = i; j < m; j++)
                {
                    stacked[i, j] = r![i, j];
                }
            }

            for (var k = 0; k < rows; k++)
            {
                var i = start + k;
                var cell = coding.CellOf[i];
                for (var j = 0; j < pf; j++)
                {
                    row[j] = coding.CellRows[cell, j];
                }

                for (var c = 0; c < q; c++)
                {
                    row[pf + c] = input.Covariates[c].Values[i] - means[c];
                }

                for (var e = 0; e < extra.Count; e++)
                {
                    row[pf + q + e] = row[extra[e].Column] * row[pf + extra[e].Covariate];
                }

                row[m - 1] = input.Response[i];
                for (var j = 0; j < m; j++)
                {
                    stacked[top + k, j] = row[j];
                }
            }

            // R = the first m rows of Q'M, column by column (the rows below are zero).
            var qr = HouseholderQr.Factor(stacked, columns);
            var height = stacked.GetLength(0);
            if (column.Length != height)
            {
                column = new double[height];
            }

            r = new double[m, m];
            for (var j = 0; j < m; j++)
            {
                for (var i = 0; i < height; i++)
                {
                    column[i] = stacked[i, j];
                }

                qr.ApplyQTranspose(column);
                for (var i = 0; i <= j; i++)
                {
                    r[i, j] = column[i];
                }
            }
        }

        return r!;
    }

    /// <summary>R(last | first): the squared effects of <paramref name="last"/> placed after <paramref name="first"/> in a QR.</summary>
    private static double LastColumnsSs(double[,] x, double[] y, List<int> first, int[] last)
    {
        var before = first.Count;
        var columns = new List<int>(first);
        columns.AddRange(last);
        var e = HouseholderQr.Factor(x, columns).Effects(y);
        double s = 0;
        for (var j = before; j < before + last.Length; j++)
        {
            s += e[j] * e[j];
        }

        return s;
    }

    private static SlopesHomogeneity Homogeneity(AncovaInput input, Prepared model, int n, double rssCommon)
    {
        var p = model.Coding.ColumnCount + input.Covariates.Count;
        var names = model.Treatment.Select(f => input.Factors[f].Name).ToArray();
        var df1 = model.Extra.Count;
        var df2 = n - p - df1;
        if (df1 == 0)
        {
            var none = Quantity.Undefined("there is no treatment factor to cross with the covariates");
            return new SlopesHomogeneity(names, 0, 0, Math.Max(df2, 0), none, none);
        }

        if (df2 < 1)
        {
            var none = Quantity.Undefined("the separate-slopes model leaves no residual degrees of freedom");
            return new SlopesHomogeneity(names, 0, df1, 0, none, none);
        }

        var qr = HouseholderQr.Factor(model.R, [.. Enumerable.Range(0, p + df1)]);
        if (!qr.IsFullRank)
        {
            var none = Quantity.Undefined("the separate slopes cannot all be estimated (a group has too little spread in a covariate)");
            return new SlopesHomogeneity(names, 0, df1, df2, none, none);
        }

        var rssSeparate = qr.ResidualSumOfSquares(model.ResponseColumn);
        var ss = Math.Max(0, rssCommon - rssSeparate);
        if (!(rssSeparate > 0))
        {
            var none = Quantity.Undefined("the separate-slopes model fits exactly, so F is not defined");
            return new SlopesHomogeneity(names, ss, df1, df2, none, none);
        }

        var f = ss / df1 / (rssSeparate / df2);
        return new SlopesHomogeneity(names, ss, df1, df2, Quantity.Of(f), Quantity.Of(Probability.FUpper(f, df1, df2)));
    }
}
