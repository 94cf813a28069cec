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

    /// <summary>
    /// The statistics of one cell's values (centred): the mean by a corrected two-pass sum (the
    /// second pass adds the mean of the first pass's deviations) and the sum of squared deviations
    /// from it, less the square of their sum over n (zero in exact arithmetic; it removes what
    /// rounding left in the mean). The one summary of rows that the fits use.
    /// </summary>
    public static CellStatistics Of(int[] levels, ReadOnlySpan<double> values)
    {
        ArgumentNullException.ThrowIfNull(levels);
        var n = values.Length;
        if (n == 0)
        {
            return new CellStatistics([.. levels], 0, 0, 0);
        }

        double sum = 0;
        foreach (var v in values)
        {
            sum += v;
        }

        var mean = sum / n;
        double corr = 0;
        foreach (var v in values)
        {
            corr += v - mean;
        }

        mean += corr / n;
        double ss = 0, dev = 0;
        foreach (var v in values)
        {
            var d = v - mean;
            ss += d * d;
            dev += d;
        }

        return new CellStatistics([.. levels], n, mean, Math.Max(ss - (dev * dev / n), 0));
    }
}

/// <summary>A factor of a cell-statistics design: its name and levels (the cells' codes index them).</summary>
public sealed record CellFactor(string Name, IReadOnlyList<string> Levels);

/// <summary>Input of an ANOVA from cell statistics: the factors, one entry per non-empty cell, and the model.</summary>
public sealed record CellAnovaInput(
    IReadOnlyList<CellFactor> Factors,
    IReadOnlyList<CellStatistics> Cells,
    bool Interactions,
    SumOfSquaresType SsType,
    double Alpha)
{
    /// <summary>
    /// The cells' exact decimal sums (one entry per cell of <see cref="Cells"/>, same order), when
    /// the response was exact decimal text: a one-factor model then computes its three sums of
    /// squares exactly and rounds them once (<see cref="ExactSums.OneWay(ExactCellSums)"/>).
    /// Ignored with two or more factors.
    /// </summary>
    public ExactCellSums? Exact { get; init; }
}

/// <summary>
/// An ANOVA table computed from cell statistics: the same terms, residual and total rows as
/// <see cref="AnovaResult"/>, and the fitted value and leverage (hat-matrix diagonal of one of its
/// observations) of each cell with observations, in the order of the input cells, instead of
/// per-observation fitted values and residuals, which need the rows
/// (<see cref="CellStatisticsAnova.OnRows"/> gives those).
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
    double[] CellLeverages,
    SumOfSquaresType SsType,
    double Alpha);

/// <summary>
/// Fixed-effects ANOVA from per-cell counts, means and within-cell sums of squares: the one fit of
/// every fixed-effects table without covariates, whether the cells were summarised from rows
/// (<see cref="FactorialAnova.Fit"/>, the compiler's rows route) or computed by a database
/// (<c>aggregate: true</c>). What needs the rows (residuals) follows from the fitted cells
/// (<see cref="OnRows"/>); the fit itself costs O(cells × p²), whatever the number of rows.
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
/// One factor: SS_between = Σ n_i (m_i − m)², SS_within = Σ within-cell SS (the numerically best
/// route for one factor: centred means by corrected two-pass sums; NIST/SEMATECH e-Handbook of
/// Statistical Methods, section 7.4.3); with the cells' exact decimal sums
/// (<see cref="CellAnovaInput.Exact"/>) the three sums of squares are exact, rounded once, and
/// reach every certified digit of the NIST StRD ANOVA sets. SS types 1, 2 and 3: <see cref="SumOfSquaresTypes"/>.
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
            if (input.Exact is { } exact && ExactSums.OneWay(exact) is { } sums)
            {
                between = sums.Between;
                within = sums.Within;
                ssTotal = sums.Total;
            }

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
                [.. cells.Select(c => 1.0 / c.Count)],
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

        // Fitted cell means: Q applied to the first p effects, divided by the weight. Leverages: the
        // weighted rows' hat diagonal is n_c x_c'(X'X)⁻¹x_c (their X'X is the rows'), so one
        // observation's is that over n_c.
        var fitted = new double[effects.Length];
        Array.Copy(effects, fitted, p);
        qr.ApplyQ(fitted);
        var hat = qr.HatDiagonal();
        var leverages = new double[cells.Count];
        for (var i = 0; i < cells.Count; i++)
        {
            fitted[i] /= Math.Sqrt(cells[i].Count);
            leverages[i] = hat[i] / cells[i].Count;
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
            leverages,
            input.SsType,
            input.Alpha);
    }

    /// <summary>
    /// The fit on the rows it summarises: per-observation fitted values and leverages (their cell's,
    /// read through <paramref name="cellOf"/>, not stored per observation) and residuals
    /// y − fitted, in the order of <paramref name="response"/>. <paramref name="cellOf"/>[i] is the
    /// position of observation i's cell among the cells with observations, in input order (the
    /// order of <see cref="CellAnovaResult.FittedCellMeans"/>); <paramref name="response"/> is on
    /// the cells' (centred) scale.
    /// </summary>
    public static AnovaResult OnRows(CellAnovaResult fit, double[] response, int[] cellOf)
    {
        ArgumentNullException.ThrowIfNull(fit);
        ArgumentNullException.ThrowIfNull(response);
        ArgumentNullException.ThrowIfNull(cellOf);
        if (cellOf.Length != response.Length || response.Length != fit.Count)
        {
            throw new ArgumentException("the rows are not those the cells summarise", nameof(response));
        }

        var means = fit.FittedCellMeans;
        var residuals = new double[response.Length];
        for (var i = 0; i < response.Length; i++)
        {
            residuals[i] = response[i] - means[cellOf[i]];
        }

        return new AnovaResult(
            fit.Terms,
            fit.ResidualSumOfSquares,
            fit.ResidualDf,
            fit.ResidualMeanSquare,
            fit.TotalSumOfSquares,
            fit.TotalDf,
            new CodedValues(means, cellOf),
            residuals,
            new CodedValues(fit.CellLeverages, cellOf),
            fit.SsType,
            fit.Alpha);
    }

    /// <summary>
    /// Every factor's level means from the cells, in level order: the count, the raw mean (the
    /// level's cells pooled, Σ n_c m_c / Σ n_c with a correction pass, as the grand mean) and the
    /// least-squares mean μ + α_l from the fit's coefficients under sum-to-zero coding, as
    /// <see cref="AnovaMeans"/> defines it (for one factor the raw mean). A level without cells
    /// has count 0 and undefined means; a design that cannot be fitted leaves the least-squares
    /// means undefined with the reason.
    /// </summary>
    public static IReadOnlyList<FactorMeans> LevelMeans(CellAnovaInput input)
    {
        ArgumentNullException.ThrowIfNull(input);
        var problem = Check(input, out var cells, out var coding, out var qr);
        double[]? b = null;
        if (problem is null && coding is not null)
        {
            var (_, y) = Weighted(coding, cells);
            b = qr!.Coefficients(qr.Effects(y));
        }

        var notFitted = Quantity.Undefined(problem?.Message ?? "the model could not be fitted");
        var none = Quantity.Undefined("the level has no observations");
        var factors = new List<FactorMeans>(input.Factors.Count);
        for (var f = 0; f < input.Factors.Count; f++)
        {
            var factor = input.Factors[f];
            var levels = new List<LevelMean>(factor.Levels.Count);
            for (var l = 0; l < factor.Levels.Count; l++)
            {
                long n = 0;
                double sum = 0;
                foreach (var c in cells)
                {
                    if (c.Levels[f] == l)
                    {
                        n += c.Count;
                        sum += c.Count * c.Mean;
                    }
                }

                if (n == 0)
                {
                    levels.Add(new LevelMean(factor.Levels[l], 0, none, none));
                    continue;
                }

                var mean = sum / n;
                double corr = 0;
                foreach (var c in cells)
                {
                    if (c.Levels[f] == l)
                    {
                        corr += c.Count * (c.Mean - mean);
                    }
                }

                var raw = Quantity.Of(mean + (corr / n));
                Quantity ls;
                if (problem is not null)
                {
                    ls = notFitted;
                }
                else if (b is null)
                {
                    ls = raw;
                }
                else
                {
                    ls = Quantity.Of(b[0] + AnovaMeans.MainEffect(coding!, b, f, coding!.UsedIndexOf[f][l], coding.Used[f].Length));
                }

                levels.Add(new LevelMean(factor.Levels[l], checked((int)n), raw, ls));
            }

            factors.Add(new FactorMeans(factor.Name, levels));
        }

        return factors;
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
            // Fewer cells than parameters: too few observations when n < p, as on the rows; else the
            // rank decision the rows' QR makes (the weighted cell rows padded to p rows).
            var full = DesignCoding.Build(cellInput);
            var p = full.ColumnCount;
            if (n < p)
            {
                return problem with { Message = FormattableString.Invariant($"the model has {p} parameters but there are only {n} observations") };
            }

            var (weighted, _) = Weighted(full, cells);
            var padded = new double[p, p];
            for (var i = 0; i < cells.Count; i++)
            {
                for (var j = 0; j < p; j++)
                {
                    padded[i, j] = weighted[i, j];
                }
            }

            return AnovaDesign.RankDeficient(full, HouseholderQr.Factor(padded, full.AllColumns));
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
