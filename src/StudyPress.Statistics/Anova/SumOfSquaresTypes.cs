namespace StudyPress.Statistics.Anova;

/// <summary>
/// The reduction in sum of squares R(t | …) that each SS type attributes to a term, for the one
/// fixed-effects fit (<see cref="CellStatisticsAnova"/>, which <see cref="FactorialAnova"/> uses for
/// rows): least squares on count-weighted cell rows.
/// <para>
/// Sequential (type 1): R(t | terms before t), the squared entries of the full model's effects
/// vector Q'y for t's columns (columns in term order). Hierarchical (type 2): R(t | the intercept
/// and every term whose factors do not include all of t's). Marginal (type 3): R(t | every other
/// term), under sum-to-zero coding. For types 2 and 3 the columns are reordered so that t comes
/// last after the terms it is adjusted for, and the squared effects of t's columns in that QR give
/// the reduction without subtracting two residual sums of squares (Searle 1987, Linear Models for
/// Unbalanced Data, ch. 4 and 8; Chambers 1977, Computational Methods for Data Analysis, ch. 5).
/// </para>
/// </summary>
internal static class SumOfSquaresTypes
{
    /// <summary>
    /// R(t | …) for term <paramref name="t"/> of <paramref name="coding"/> under <paramref name="type"/>.
    /// </summary>
    /// <param name="x">The weighted design rows (one per cell, √n_c times the cell's coded row).</param>
    /// <param name="fullEffects">Q'y of the full model's QR (used by the sequential type).</param>
    /// <param name="y">The weighted cell response the effects were computed from.</param>
    public static double TermSumOfSquares(DesignCoding coding, double[,] x, int t, SumOfSquaresType type, double[] fullEffects, double[] y)
    {
        if (type == SumOfSquaresType.Sequential)
        {
            return SumOfSquaredEffects(fullEffects, coding.TermStart[t], coding.TermCount[t]);
        }

        var columns = AdjustedFor(coding, t, type);
        var before = columns.Count;
        columns.AddRange(coding.ColumnsOf(t));
        var e = HouseholderQr.Factor(x, columns).Effects(y);
        return SumOfSquaredEffects(e, before, coding.TermCount[t]);
    }

    /// <summary>
    /// The columns term <paramref name="t"/> is adjusted for under a hierarchical or marginal type:
    /// the intercept, then in term order every other term's columns (hierarchical: only the terms
    /// that do not contain t).
    /// </summary>
    public static List<int> AdjustedFor(DesignCoding coding, int t, SumOfSquaresType type)
    {
        var term = coding.Terms[t];
        var columns = new List<int> { 0 };
        for (var s = 0; s < coding.Terms.Count; s++)
        {
            if (s == t)
            {
                continue;
            }

            if (type == SumOfSquaresType.Marginal || !Contains(coding.Terms[s], term))
            {
                columns.AddRange(coding.ColumnsOf(s));
            }
        }

        return columns;
    }

    /// <summary>True when the factor set <paramref name="outer"/> includes every factor of <paramref name="inner"/>.</summary>
    private static bool Contains(int[] outer, int[] inner) => inner.All(outer.Contains);

    private static double SumOfSquaredEffects(double[] e, int start, int count)
    {
        double s = 0;
        for (var j = start; j < start + count; j++)
        {
            s += e[j] * e[j];
        }

        return s;
    }
}
