namespace StudyPress.Statistics.Designs;

/// <summary>
/// How much a blocking factor gained. <paramref name="ErrorWithoutBlocking"/> is the estimated
/// error mean square had the units not been blocked by this factor; <paramref name="Efficiency"/>
/// = that / the error mean square with blocking; <paramref name="EfficiencyDfCorrected"/> also
/// weighs the error df lost to blocks; <paramref name="EquivalentReplicates"/> = the corrected
/// efficiency x the replicates per treatment: how many unblocked replicates the blocks were worth.
/// </summary>
public sealed record BlockingEfficiency(
    string Block,
    double ErrorWithBlocking,
    int DfWithBlocking,
    double ErrorWithoutBlocking,
    int DfWithoutBlocking,
    Quantity Efficiency,
    Quantity EfficiencyDfCorrected,
    int Replicates,
    Quantity EquivalentReplicates);

/// <summary>
/// Relative efficiency of blocking, for a block whose F test uses the residual (randomized
/// complete blocks, the rows or columns of a Latin square). The error mean square without this
/// blocking factor is estimated as if its units had been randomized over the remaining layout
/// (Cochran and Cox 1957, Experimental Designs, 2nd ed., Wiley, ch. 4; Steel and Torrie 1980,
/// Principles and Procedures of Statistics, 2nd ed.; section numbers not checked):
/// E = (df_B MS_B + f MS_E) / (df_B + f), f = total df − Σ df of all blocking factors, so the
/// other blocks stay (for a Latin square this is (MS_rows + (t−1) MS_E) / (t MS_E) as a ratio).
/// RE = E / MS_E. The df correction is Fisher's amount of information, (f₁ + 1)/((f₁ + 3) s²)
/// (Fisher 1935, The Design of Experiments; Cochran and Cox 1957, ch. 2):
/// RE_corrected = RE (f₁ + 1)(f₂ + 3) / ((f₁ + 3)(f₂ + 1)) with f₁ the error df with blocking and
/// f₂ = f₁ + df_B the error df without.
/// </summary>
public static class RelativeEfficiency
{
    /// <summary>The efficiency of the blocking factor <paramref name="block"/> of a fitted strata ANOVA.</summary>
    public static BlockingEfficiency OfBlocking(StrataAnovaResult anova, string block)
    {
        ArgumentNullException.ThrowIfNull(anova);
        var row = anova.Row(block);
        if (row.Kind != TermKind.Block || row.Denominator.Count != 1
            || !string.Equals(row.Denominator[0].Term, StrataAnova.ResidualName, StringComparison.Ordinal) || row.IsQuasiF)
        {
            throw new ArgumentException(block + " is not a block tested against the residual (complete blocks or a Latin square)", nameof(block));
        }

        var res = anova.Row(StrataAnova.ResidualName);
        var msE = res.MeanSquare.Value;
        var f = anova.TotalDf - anova.Rows.Where(r => r.Kind == TermKind.Block).Sum(r => r.Df);
        var e = ((row.Df * row.MeanSquare.Value) + (f * msE)) / (row.Df + f);
        var f1 = res.Df;
        var f2 = f1 + row.Df;
        var reps = Replicates(anova);
        Quantity re, reC, eq;
        if (msE > 0)
        {
            re = Quantity.Of(e / msE);
            reC = re.Map(x => x * (f1 + 1.0) * (f2 + 3.0) / ((f1 + 3.0) * (f2 + 1.0)));
            eq = reC.Map(x => x * reps);
        }
        else
        {
            re = reC = eq = Quantity.Undefined("the error mean square with blocking is zero");
        }

        return new BlockingEfficiency(block, msE, f1, e, f2, re, reC, reps, eq);
    }

    /// <summary>Observations per treatment combination (per level of the block, for a design without treatments).</summary>
    private static int Replicates(StrataAnovaResult anova)
    {
        // Treatment combinations = product over treatment main effects of (df + 1) in a crossed layout.
        var combos = anova.Rows.Where(r => r.Kind == TermKind.Treatment && r.Factors.Count == 1).Aggregate(1, (p, r) => p * (r.Df + 1));
        return anova.Observations / combos;
    }
}
