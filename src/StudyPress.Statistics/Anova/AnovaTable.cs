namespace StudyPress.Statistics.Anova;

/// <summary>Builds the derived columns of an ANOVA table row (MS, F, p, critical F, effect sizes).</summary>
public static class AnovaTable
{
    /// <summary>
    /// Completes a term's row. Formulas: MS = SS/df; F = MS/MS_res; p = P(F(df, df_res) &gt;= F);
    /// eta² = SS/SS_total; partial eta² = SS/(SS + SS_res);
    /// omega² = (SS - df MS_res)/(SS_total + MS_res) (Hays 1963; for one factor the usual omega²);
    /// Cohen's f = sqrt(partial eta²/(1 - partial eta²)) (Cohen 1988, ch. 8), computed as sqrt(SS/SS_res).
    /// </summary>
    public static AnovaTerm Term(
        string name,
        IReadOnlyList<string> factors,
        double ss,
        int df,
        double ssResidual,
        int dfResidual,
        double ssTotal,
        double alpha)
    {
        if (ss < 0)
        {
            // Rounding can leave a tiny negative SS for a term that explains nothing.
            ss = 0;
        }

        var ms = df > 0 ? Quantity.Of(ss / df) : Quantity.Undefined("the term has no degrees of freedom");
        Quantity msRes = MeanSquareResidual(ssResidual, dfResidual);
        Quantity f, p, fCrit;
        if (df <= 0)
        {
            f = p = fCrit = Quantity.Undefined("the term has no degrees of freedom");
        }
        else if (dfResidual <= 0)
        {
            f = p = fCrit = Quantity.Undefined("there are no residual degrees of freedom (no replication)");
        }
        else
        {
            fCrit = Quantity.Of(Probability.FCritical(alpha, df, dfResidual));
            if (!(msRes.Value > 0))
            {
                f = p = Quantity.Undefined("the residual variance is zero");
            }
            else
            {
                f = Quantity.Of(ms.Value / msRes.Value);
                p = Quantity.Of(Probability.FUpper(f.Value, df, dfResidual));
            }
        }

        var eta2 = ssTotal > 0 ? Quantity.Of(ss / ssTotal) : Quantity.Undefined("the response does not vary");
        var partial = ss + ssResidual > 0
            ? Quantity.Of(ss / (ss + ssResidual))
            : Quantity.Undefined("the response does not vary");
        var omega2 = msRes.IsDefined && ssTotal + msRes.Value > 0
            ? Quantity.Of((ss - (df * msRes.Value)) / (ssTotal + msRes.Value))
            : Quantity.Undefined(msRes.Reason ?? "the response does not vary");
        Quantity cohenF;
        if (!partial.IsDefined)
        {
            cohenF = partial;
        }
        else if (!(ssResidual > 0))
        {
            cohenF = Quantity.Undefined("the residual variance is zero");
        }
        else
        {
            // √(SS/SS_res) equals √(η²p/(1 − η²p)) but keeps its digits when η²p is near 1,
            // where 1 − η²p cancels.
            cohenF = Quantity.Of(Math.Sqrt(ss / ssResidual));
        }

        return new AnovaTerm(name, factors, ss, df, ms, f, p, fCrit, eta2, partial, omega2, cohenF);
    }

    /// <summary>MS_res = SS_res / df_res, undefined without residual degrees of freedom.</summary>
    public static Quantity MeanSquareResidual(double ssResidual, int dfResidual) =>
        dfResidual > 0
            ? Quantity.Of(Math.Max(ssResidual, 0) / dfResidual)
            : Quantity.Undefined("there are no residual degrees of freedom (no replication)");
}
