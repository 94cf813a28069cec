namespace StudyPress.Statistics.Assumptions;

/// <summary>Externally studentized residual of one observation.</summary>
/// <param name="Index">Zero-based index of the observation (in the order given).</param>
/// <param name="T">t_i; undefined when h_i = 1 or the deleted fit is exact.</param>
/// <param name="P">Two-sided p-value of t_i on <see cref="StudentizedResidualsResult.Df"/> degrees of freedom.</param>
/// <param name="BonferroniP">min(1, n p_i), n the number of observations.</param>
public sealed record StudentizedResidual(int Index, Quantity T, Quantity P, Quantity BonferroniP);

/// <summary>Outlier screen by externally studentized residuals.</summary>
/// <param name="Residuals">One entry per observation, in input order.</param>
/// <param name="Df">Degrees of freedom of each t_i: residual df - 1.</param>
/// <param name="Alpha">Significance level used for <see cref="Flagged"/>.</param>
/// <param name="Flagged">Indices whose Bonferroni-adjusted p is below <see cref="Alpha"/>, ascending.</param>
/// <param name="Reason">Why no residual could be studentized (null when the screen ran).</param>
public sealed record StudentizedResidualsResult(
    IReadOnlyList<StudentizedResidual> Residuals,
    int Df,
    double Alpha,
    IReadOnlyList<int> Flagged,
    string? Reason);

/// <summary>
/// Externally studentized (deleted, "R-student") residuals of a linear model:
/// t_i = e_i / sqrt(MSE_(i) (1 - h_i)), MSE_(i) = (SSE - e_i² / (1 - h_i)) / (df_res - 1),
/// where MSE_(i) is the residual mean square of the fit without observation i (computed by the
/// deletion identity, without refitting). Under the model t_i follows Student's t on df_res - 1 degrees
/// of freedom; the outlier screen uses the two-sided p and its Bonferroni adjustment min(1, n p).
/// Source: Cook, R. D. and Weisberg, S. (1982), Residuals and Influence in Regression, section 2.2.
/// Domain: residuals and leverages of equal length; df_res &gt;= 2 (otherwise every t_i is undefined).
/// An observation with h_i = 1 (numerically, 1 - h_i &lt;= 1e-10) is fitted exactly and its residual
/// cannot be studentized; the same holds when the fit without observation i is exact (MSE_(i) = 0).
/// Those observations get undefined values with a reason and are never flagged.
/// </summary>
public static class StudentizedResiduals
{
    private const double LeverageTolerance = 1e-10;

    public static StudentizedResidualsResult Compute(
        IReadOnlyList<double> residuals,
        IReadOnlyList<double> leverages,
        int residualDf,
        double alpha)
    {
        ArgumentNullException.ThrowIfNull(residuals);
        ArgumentNullException.ThrowIfNull(leverages);
        if (residuals.Count != leverages.Count)
        {
            throw new ArgumentException("residuals and leverages differ in length", nameof(leverages));
        }

        if (!(alpha > 0 && alpha < 1))
        {
            throw new ArgumentOutOfRangeException(nameof(alpha), "alpha must lie between 0 and 1");
        }

        var n = residuals.Count;
        var df = residualDf - 1;
        var list = new StudentizedResidual[n];
        if (residualDf < 2)
        {
            const string why = "studentized residuals need at least 2 residual degrees of freedom";
            var u = Quantity.Undefined(why);
            for (var i = 0; i < n; i++)
            {
                list[i] = new StudentizedResidual(i, u, u, u);
            }

            return new StudentizedResidualsResult(list, df, alpha, [], why);
        }

        double sse = 0;
        for (var i = 0; i < n; i++)
        {
            sse += residuals[i] * residuals[i];
        }

        if (!(sse > 0))
        {
            const string why = "all residuals are zero (the model fits exactly), so no residual can be studentized";
            var u = Quantity.Undefined(why);
            for (var i = 0; i < n; i++)
            {
                list[i] = new StudentizedResidual(i, u, u, u);
            }

            return new StudentizedResidualsResult(list, df, alpha, [], why);
        }

        var flagged = new List<int>();
        for (var i = 0; i < n; i++)
        {
            var e = residuals[i];
            var h = leverages[i];
            if (!(h >= 0 && h <= 1 + LeverageTolerance))
            {
                throw new ArgumentException("leverages must lie between 0 and 1", nameof(leverages));
            }

            var oneMinusH = 1 - h;
            if (oneMinusH <= LeverageTolerance)
            {
                var u = Quantity.Undefined("the observation has leverage 1 (it is fitted exactly), so its residual cannot be studentized");
                list[i] = new StudentizedResidual(i, u, u, u);
                continue;
            }

            var mseDeleted = (sse - (e * e / oneMinusH)) / df;

            // Relative guard: the subtraction leaves rounding of order 1e-15 SSE.
            if (!(mseDeleted > 1e-13 * sse / df))
            {
                var u = Quantity.Undefined("the model without this observation fits exactly, so its residual cannot be studentized");
                list[i] = new StudentizedResidual(i, u, u, u);
                continue;
            }

            var t = e / Math.Sqrt(mseDeleted * oneMinusH);
            var p = Probability.TTwoSided(t, df);
            var pb = Math.Min(1.0, n * p);
            list[i] = new StudentizedResidual(i, Quantity.Of(t), Quantity.Of(p), Quantity.Of(pb));
            if (pb < alpha)
            {
                flagged.Add(i);
            }
        }

        return new StudentizedResidualsResult(list, df, alpha, flagged, null);
    }
}
