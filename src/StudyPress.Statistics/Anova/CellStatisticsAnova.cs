namespace StudyPress.Statistics.Anova;

/// <summary>
/// The summary of one cell of a design (one combination of factor levels): the level of each
/// factor (a code into that factor's levels), the count, the mean and the within-cell sum of
/// squared deviations from the cell mean. Means are expected centred (any common centre: ANOVA
/// is shift-invariant), as for <see cref="AnovaInput"/>.
/// </summary>
public sealed record CellStatistics(int[] Levels, long Count, double Mean, double SumOfSquares)
{
    /// <summary>The unbiased within-cell variance SS/(n - 1); NaN for fewer than two observations.</summary>
    public double Variance => Count > 1 ? SumOfSquares / (Count - 1) : double.NaN;
}

/// <summary>A factor of a cell-statistics design: its name and levels (the cells' codes index them).</summary>
public sealed record CellFactor(string Name, IReadOnlyList<string> Levels);

/// <summary>Input of an ANOVA from cell statistics: the factors, one entry per non-empty cell, and the model.</summary>
public sealed record CellAnovaInput(
    IReadOnlyList<CellFactor> Factors,
    IReadOnlyList<CellStatistics> Cells,
    bool Interactions,
    SumOfSquaresType SsType,
    double Alpha);

/// <summary>
/// An ANOVA table computed from cell statistics: the same terms, residual and total rows as
/// <see cref="AnovaResult"/>, and the fitted value of each cell (in the order of the input cells)
/// instead of per-observation fitted values and residuals, which need the rows.
/// </summary>
public sealed record CellAnovaResult(
    IReadOnlyList<AnovaTerm> Terms,
    double ResidualSumOfSquares,
    int ResidualDf,
    Quantity ResidualMeanSquare,
    double TotalSumOfSquares,
    int TotalDf,
    long Count,
    double GrandMean,
    double[] FittedCellMeans,
    SumOfSquaresType SsType,
    double Alpha);

/// <summary>
/// Fixed-effects ANOVA from per-cell counts, means and within-cell sums of squares, giving exactly
/// (up to rounding) the table <see cref="FactorialAnova.Fit"/> gives on the rows themselves.
/// <para>
/// Why it is exact: every column of the sum-to-zero design (<see cref="AnovaDesign"/>) is constant
/// within a cell, so the rows' response splits into the cell means (in the column space of the
/// cell indicators) plus within-cell deviations orthogonal to every design column. Every reduction
/// in sum of squares R(t | …) therefore depends only on the cell means, and equals the reduction in
/// the weighted least-squares problem min Σ n_c (m_c − x_c'β)², which is ordinary least squares on
/// rows √n_c x_c with response √n_c m_c. That problem is solved by the Householder QR of the
/// weighted cell design (never the normal equations), exactly as the row fit is. The residual SS is
/// Σ within-cell SS + the weighted lack of fit Σ n_c (m_c − fitted_c)² (zero for the full
/// interaction model); the total SS is Σ within-cell SS + Σ n_c (m_c − grand mean)².
/// One factor: SS_between = Σ n_i (m_i − m)², SS_within = Σ within-cell SS, as
/// <see cref="OneWayAnova"/>. SS types 1, 2 and 3 as <see cref="FactorialAnova"/>.
/// (Searle 1987, Linear Models for Unbalanced Data, ch. 4 and 8.)
/// </para>
/// <para>
/// Domain: the same designs as <see cref="FactorialAnova"/> (checked by <see cref="Check(CellAnovaInput)"/>); cells
/// with count 0 are ignored; the total count must fit in an <see cref="int"/> (the tables' df).
/// </para>
/// </summary>
public static class CellStatisticsAnova
{
    /// <summary>Why the design cannot be fitted, or null. The same checks as <see cref="AnovaDesign.Check(AnovaInput)"/>.</summary>
    public static DesignProblem? Check(CellAnovaInput input) => Check(input, out _, out _, out _);

    public static CellAnovaResult Fit(CellAnovaInput input)
    {
        ArgumentNullException.ThrowIfNull(input);
        var problem = Check(input, out var cells, out var coding, out var qr);
        if (problem is not null)
        {
            throw new ArgumentException(problem.Message, nameof(input));
        }

        long nTotal = 0;
        double within = 0, weightedSum = 0;
        foreach (var c in cells)
        {
            nTotal += c.Count;
            within += c.SumOfSquares;
            weightedSum += c.Count * c.Mean;
        }

        // Grand mean with a correction pass (the means are centred, so this is small and exact enough).
        var grand = weightedSum / nTotal;
        double corr = 0;
        foreach (var c in cells)
        {
            corr += c.Count * (c.Mean - grand);
        }

        grand += corr / nTotal;
        double between = 0;
        foreach (var c in cells)
        {
            var d = c.Mean - grand;
            between += c.Count * d * d;
        }

        var ssTotal = within + between;
        var totalDf = checked((int)(nTotal - 1));
        if (input.Factors.Count == 1)
        {
            var k = cells.Count;
            var dfWithin = checked((int)(nTotal - k));
            var term = AnovaTable.Term(input.Factors[0].Name, [input.Factors[0].Name], between, k - 1, within, dfWithin, ssTotal, input.Alpha);
            return new CellAnovaResult(
                [term],
                within,
                dfWithin,
                AnovaTable.MeanSquareResidual(within, dfWithin),
                ssTotal,
                totalDf,
                nTotal,
                grand,
                [.. cells.Select(c => c.Mean)],
                input.SsType,
                input.Alpha);
        }

        var p = coding!.ColumnCount;
        var (x, y) = Weighted(coding, cells);
        var effects = qr!.Effects(y);
        double lackOfFit = 0;
        for (var i = p; i < effects.Length; i++)
        {
            lackOfFit += effects[i] * effects[i];
        }

        var ssRes = within + lackOfFit;
        var dfRes = checked((int)(nTotal - p));
        var terms = new List<AnovaTerm>(coding.Terms.Count);
        for (var t = 0; t < coding.Terms.Count; t++)
        {
            var ss = SumOfSquaresTypes.TermSumOfSquares(coding, x, t, input.SsType, effects, y);
            terms.Add(AnovaTable.Term(
                coding.TermNames[t],
                [.. coding.Terms[t].Select(f => input.Factors[f].Name)],
                ss,
                coding.TermCount[t],
                ssRes,
                dfRes,
                ssTotal,
                input.Alpha));
        }

        // Fitted cell means: Q applied to the first p effects, divided by the weight.
        var fitted = new double[effects.Length];
        Array.Copy(effects, fitted, p);
        qr.ApplyQ(fitted);
        for (var i = 0; i < fitted.Length; i++)
        {
            fitted[i] /= Math.Sqrt(cells[i].Count);
        }

        return new CellAnovaResult(
            terms,
            ssRes,
            dfRes,
            AnovaTable.MeanSquareResidual(ssRes, dfRes),
            ssTotal,
            totalDf,
            nTotal,
            grand,
            fitted,
            input.SsType,
            input.Alpha);
    }

    /// <summary>
    /// Estimated marginal means of <paramref name="terms"/> (null: every term) from cell statistics,
    /// on the residual mean square and df: the same coefficients and (X'X)⁻¹ as the fit on the rows
    /// (the weighted cell design has the rows' cross-products), so the same means, covariances and
    /// standard errors as <see cref="FollowUp.EstimatedMarginalMeans.Compute"/> on the rows. Two or more factors.
    /// </summary>
    public static FollowUp.MarginalMeansResult MarginalMeans(CellAnovaInput input, IReadOnlyList<IReadOnlyList<string>>? terms = null)
    {
        ArgumentNullException.ThrowIfNull(input);
        if (input.Factors.Count < 2)
        {
            throw new ArgumentException("with one factor the marginal means are the level means", nameof(input));
        }

        var problem = Check(input, out var cells, out var coding, out var qr);
        if (problem is not null)
        {
            throw new ArgumentException(problem.Message, nameof(input));
        }

        var p = coding!.ColumnCount;
        var (_, y) = Weighted(coding, cells);
        var effects = qr!.Effects(y);
        var rss = cells.Sum(c => c.SumOfSquares);
        for (var i = p; i < effects.Length; i++)
        {
            rss += effects[i] * effects[i];
        }

        var df = checked((int)(cells.Sum(c => c.Count) - p));
        var fit = new FollowUp.LinearFit(coding, qr.Coefficients(effects), qr.InverseCrossProduct(), rss, df);
        return fit.Means(CellInput(input, cells).Factors, fit.ResidualMeanSquare, df, input.Alpha, 0, TransformKind.None, null, terms);
    }

    private static DesignProblem? Check(CellAnovaInput input, out List<CellStatistics> cells, out DesignCoding? coding, out HouseholderQr? qr)
    {
        ArgumentNullException.ThrowIfNull(input);
        coding = null;
        qr = null;
        cells = Validate(input);
        long n = cells.Sum(c => c.Count);
        if (n > int.MaxValue)
        {
            throw new ArgumentException("the total count exceeds the largest supported number of observations", nameof(input));
        }

        var cellInput = CellInput(input, cells);
        if (input.Factors.Count == 1)
        {
            if (cells.Count < 2)
            {
                var name = input.Factors[0].Name;
                return new DesignProblem(DesignProblemKind.SingleLevel, $"factor '{name}' has only {cells.Count} level with observations; a factor needs at least two", null, name);
            }

            return null;
        }

        var problem = AnovaDesign.Check(cellInput, out coding, out var cellQr);
        if (problem is { Kind: DesignProblemKind.TooFewObservations })
        {
            var p = DesignCoding.Build(cellInput).ColumnCount;
            return n < p
                ? problem with { Message = FormattableString.Invariant($"the model has {p} parameters but there are only {n} observations") }
                : new DesignProblem(DesignProblemKind.RankDeficient, FormattableString.Invariant($"the model has {p} parameters but the data fill only {cells.Count} cells, so the effects cannot be separated (the design is rank deficient: some combinations of levels are missing)"), null, null);
        }

        if (problem is not null)
        {
            return problem;
        }

        // The rank was checked on the unweighted cell design (the same rank as the rows' design);
        // the fit uses the QR of the weighted one.
        _ = cellQr;
        var (x, _) = Weighted(coding!, cells);
        qr = HouseholderQr.Factor(x, coding!.AllColumns);
        return null;
    }

    private static List<CellStatistics> Validate(CellAnovaInput input)
    {
        ArgumentNullException.ThrowIfNull(input.Factors);
        ArgumentNullException.ThrowIfNull(input.Cells);
        if (input.Factors.Count == 0)
        {
            throw new ArgumentException("at least one factor is needed", nameof(input));
        }

        var seen = new HashSet<string>(StringComparer.Ordinal);
        var cells = new List<CellStatistics>();
        foreach (var c in input.Cells)
        {
            if (c.Levels.Length != input.Factors.Count)
            {
                throw new ArgumentException("a cell has a level for each factor", nameof(input));
            }

            for (var f = 0; f < c.Levels.Length; f++)
            {
                if (c.Levels[f] < 0 || c.Levels[f] >= input.Factors[f].Levels.Count)
                {
                    throw new ArgumentException("factor '" + input.Factors[f].Name + "' has a level code out of range", nameof(input));
                }
            }

            if (c.Count < 0 || !double.IsFinite(c.Mean) || !double.IsFinite(c.SumOfSquares) || c.SumOfSquares < 0)
            {
                throw new ArgumentException("a cell has a negative count or a non-finite mean or sum of squares", nameof(input));
            }

            if (!seen.Add(string.Join(",", c.Levels)))
            {
                throw new ArgumentException("a cell is listed twice", nameof(input));
            }

            if (c.Count > 0)
            {
                cells.Add(c);
            }
        }

        if (cells.Count == 0)
        {
            throw new ArgumentException("there are no observations", nameof(input));
        }

        return cells;
    }

    /// <summary>The cells as one pseudo-observation each, for the design coding and its checks.</summary>
    private static AnovaInput CellInput(CellAnovaInput input, List<CellStatistics> cells) => new(
        [.. cells.Select(c => c.Mean)],
        [.. input.Factors.Select((f, k) => new FactorColumn(f.Name, [.. cells.Select(c => c.Levels[k])], f.Levels))],
        input.Interactions,
        input.SsType,
        input.Alpha);

    /// <summary>Rows √n_c x_c and response √n_c m_c.</summary>
    private static (double[,] X, double[] Y) Weighted(DesignCoding coding, List<CellStatistics> cells)
    {
        var k = cells.Count;
        var p = coding.ColumnCount;
        var x = new double[k, p];
        var y = new double[k];
        for (var i = 0; i < k; i++)
        {
            var w = Math.Sqrt(cells[i].Count);
            for (var j = 0; j < p; j++)
            {
                x[i, j] = w * coding.Matrix[i, j];
            }

            y[i] = w * cells[i].Mean;
        }

        return (x, y);
    }
}
