namespace StudyPress.Statistics.Anova;

/// <summary>
/// Fixed-effects ANOVA for any number of factors. One factor goes through <see cref="OneWayAnova"/>
/// (group means, most accurate); several factors are fitted by least squares on the full-rank
/// sum-to-zero coding of <see cref="AnovaDesign"/>, using a Householder QR factorisation
/// (never the normal equations), which keeps the accuracy of the data's own conditioning.
/// <para>
/// Sums of squares, for a term t with columns X_t (computed by <see cref="SumOfSquaresTypes"/>,
/// shared with <see cref="CellStatisticsAnova"/>; Searle 1987, Linear Models for Unbalanced Data,
/// ch. 4 and 8; Chambers 1977, Computational Methods for Data Analysis, ch. 5):
/// Sequential (type 1): R(t | terms before t) = the squared entries of the effects vector Q'y for
/// t's columns, with the columns in term order (successive reductions in residual SS).
/// Hierarchical (type 2): R(t | every term not containing t) = RSS(M0) - RSS(M0 + t), where M0 holds
/// the intercept and every other term whose factors do not include all of t's.
/// Marginal (type 3): R(t | every other term) under sum-to-zero coding = RSS(full model without
/// t's columns) - RSS(full model).
/// Types 2 and 3 are computed from a QR of the columns reordered so that t comes last after the
/// terms it is adjusted for; the squared effects of t's columns give the reduction without
/// subtracting two residual sums of squares.
/// </para>
/// <para>
/// Every observation of a cell has the same design row, so the QR is that of the distinct rows
/// weighted by the square roots of the cell counts (a cells x p problem with the same X'X and X'y),
/// and RSS = SS_within (within-cell corrected two-pass sums) + the aggregated residual. Fitted
/// values and leverages are per cell. This is the same least-squares fit, still by QR (never the
/// normal equations), without the n x p matrix.
/// </para>
/// <para>
/// Domain: call <see cref="AnovaDesign.Check(AnovaInput)"/> first. A design it rejects (a factor with one
/// level, an empty cell with interactions, fewer observations than parameters, a rank-deficient
/// coding) makes <see cref="Fit"/> throw <see cref="ArgumentException"/> with the same message.
/// Without replication (residual df 0) the table has SS and df, and F, p are undefined.
/// </para>
/// </summary>
public static class FactorialAnova
{
    /// <summary>Fits the model and fills the ANOVA table, fitted values, residuals and leverages in input order.</summary>
    public static AnovaResult Fit(AnovaInput input)
    {
        ArgumentNullException.ThrowIfNull(input);
        if (input.Factors.Count == 1)
        {
            // For one factor the three SS types coincide; keep the requested type in the result.
            return OneWayAnova.Fit(input.Response, input.Factors[0], input.Alpha, input.Exact) with { SsType = input.SsType };
        }

        var problem = AnovaDesign.Check(input, out var checkedCoding, out var checkedQr);
        if (problem is not null || checkedCoding is null || checkedQr is null)
        {
            throw new ArgumentException(problem?.Message ?? "the design cannot be fitted", nameof(input));
        }

        var y = input.Response;
        var n = y.Length;
        var coding = checkedCoding;
        var p = coding.ColumnCount;
        var qr = checkedQr;

        // The QR is of the count-weighted cell rows (see DesignCoding.WeightedCellRows): the same
        // R and squared effects as the n x p design, at the cost of the cells.
        var (z, ssWithin) = coding.CellResponse(y);
        var effects = qr.Effects(z);
        var ssRes = ssWithin;
        for (var i = p; i < effects.Length; i++)
        {
            ssRes += effects[i] * effects[i];
        }

        var dfRes = n - p;
        var ssTotal = Groups.SumOfSquares(y, Groups.Mean(y));
        var terms = new List<AnovaTerm>(coding.Terms.Count);
        for (var t = 0; t < coding.Terms.Count; t++)
        {
            var ss = SumOfSquaresTypes.TermSumOfSquares(coding, coding.WeightedCellRows, t, input.SsType, effects, z);
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

        // Per cell: fitted value x_c'b and leverage x_c'(X'X)⁻¹x_c; per observation they are its cell's.
        var b = qr.Coefficients(effects);
        var inverse = qr.InverseCrossProduct();
        var cells = coding.CellCounts.Length;
        var cellFitted = new double[cells];
        var cellLeverage = new double[cells];
        for (var c = 0; c < cells; c++)
        {
            double f = 0, h = 0;
            for (var j = 0; j < p; j++)
            {
                var xj = coding.CellRows[c, j];
                f += xj * b[j];
                double s = 0;
                for (var l = 0; l < p; l++)
                {
                    s += inverse[j, l] * coding.CellRows[c, l];
                }

                h += xj * s;
            }

            cellFitted[c] = f;
            cellLeverage[c] = h;
        }

        // Fitted values and leverages are their cell's: read through the cell codes, not stored per observation.
        var residuals = new double[n];
        for (var i = 0; i < n; i++)
        {
            residuals[i] = y[i] - cellFitted[coding.CellOf[i]];
        }

        var fitted = new CodedValues(cellFitted, coding.CellOf);
        var leverages = new CodedValues(cellLeverage, coding.CellOf);

        return new AnovaResult(
            terms,
            ssRes,
            dfRes,
            AnovaTable.MeanSquareResidual(ssRes, dfRes),
            ssTotal,
            n - 1,
            fitted,
            residuals,
            leverages,
            input.SsType,
            input.Alpha);
    }
}
