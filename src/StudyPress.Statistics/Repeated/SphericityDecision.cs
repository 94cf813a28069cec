namespace StudyPress.Statistics.Repeated;

/// <summary>Which test of a within-subject row is read.</summary>
public enum SphericityCorrection
{
    /// <summary>The uncorrected F test (sphericity assumed).</summary>
    None,

    /// <summary>df multiplied by the Greenhouse–Geisser epsilon.</summary>
    GreenhouseGeisser,

    /// <summary>df multiplied by the Huynh–Feldt (Lecoutre) epsilon.</summary>
    HuynhFeldt,
}

/// <summary>Why the rule chose its correction.</summary>
public enum SphericityBasis
{
    /// <summary>The term has two levels (one contrast): sphericity holds trivially.</summary>
    TwoLevels,

    /// <summary>Mauchly's p is at least alpha: sphericity is not rejected.</summary>
    MauchlyNotSignificant,

    /// <summary>Mauchly's p is below alpha (or the test is not defined) and the Greenhouse–Geisser epsilon is below the threshold.</summary>
    EpsilonBelowThreshold,

    /// <summary>Mauchly's p is below alpha (or the test is not defined) and the Greenhouse–Geisser epsilon is at or above the threshold.</summary>
    EpsilonAtOrAboveThreshold,

    /// <summary>The epsilon rule chose Huynh–Feldt but its estimate is not defined (too few subjects), so Greenhouse–Geisser is read.</summary>
    HuynhFeldtNotDefined,

    /// <summary>The epsilons are not defined (no within-subject error): nothing can be corrected.</summary>
    NotAssessable,
}

/// <summary>
/// The sphericity rule for one within-subject term, with its evidence. <paramref name="MauchlyTested"/>
/// is false when Mauchly's test is not defined (two levels, or fewer subjects than contrasts); the
/// epsilon rule is then applied without it (except for two levels).
/// </summary>
public sealed record SphericityDecision(
    SphericityCorrection Correction,
    SphericityBasis Basis,
    bool MauchlyTested,
    Quantity MauchlyP,
    double Alpha,
    Quantity EpsilonGreenhouseGeisser,
    Quantity EpsilonHuynhFeldt,
    double Threshold)
{
    /// <summary>The Greenhouse–Geisser epsilon below which Greenhouse–Geisser is read (Girden 1992).</summary>
    public const double GirdenThreshold = 0.75;

    /// <summary>
    /// The rule: no correction when Mauchly's p ≥ alpha. Otherwise (p &lt; alpha, or the test not
    /// defined because there are fewer subjects than contrasts) the correction follows Girden
    /// (1992, ANOVA: Repeated Measures, Sage University Paper series on Quantitative Applications in the Social Sciences 84): Greenhouse–Geisser
    /// when its epsilon is below 0.75, Huynh–Feldt otherwise (Greenhouse–Geisser is conservative
    /// when sphericity is only mildly violated, Huynh–Feldt liberal when strongly violated).
    /// When Huynh–Feldt is chosen but not defined, Greenhouse–Geisser is read and the basis says so.
    /// </summary>
    public static SphericityDecision Decide(Quantity mauchlyP, double alpha, Quantity epsilonGg, Quantity epsilonHf)
    {
        if (!(alpha > 0 && alpha < 1))
        {
            throw new ArgumentOutOfRangeException(nameof(alpha), "alpha must lie in (0, 1)");
        }

        var tested = mauchlyP.IsDefined;
        SphericityDecision Make(SphericityCorrection c, SphericityBasis b) =>
            new(c, b, tested, mauchlyP, alpha, epsilonGg, epsilonHf, GirdenThreshold);

        if (tested && mauchlyP.Value >= alpha)
        {
            return Make(SphericityCorrection.None, SphericityBasis.MauchlyNotSignificant);
        }

        if (!epsilonGg.IsDefined)
        {
            return Make(SphericityCorrection.None, SphericityBasis.NotAssessable);
        }

        if (epsilonGg.Value < GirdenThreshold)
        {
            return Make(SphericityCorrection.GreenhouseGeisser, SphericityBasis.EpsilonBelowThreshold);
        }

        return epsilonHf.IsDefined
            ? Make(SphericityCorrection.HuynhFeldt, SphericityBasis.EpsilonAtOrAboveThreshold)
            : Make(SphericityCorrection.GreenhouseGeisser, SphericityBasis.HuynhFeldtNotDefined);
    }

    /// <summary>The rule for a term's sphericity test; a term with two levels needs no correction.</summary>
    public static SphericityDecision For(SphericityTest test, double alpha)
    {
        ArgumentNullException.ThrowIfNull(test);
        if (test.Contrasts == 1)
        {
            return new SphericityDecision(SphericityCorrection.None, SphericityBasis.TwoLevels, false, test.P, alpha, test.EpsilonGreenhouseGeisser, test.EpsilonHuynhFeldt, GirdenThreshold);
        }

        return Decide(test.P, alpha, test.EpsilonGreenhouseGeisser, test.EpsilonHuynhFeldt);
    }

    /// <summary>The p-value of <paramref name="row"/> that this decision reads (the uncorrected one for between rows).</summary>
    public Quantity PValue(RepeatedRow row)
    {
        ArgumentNullException.ThrowIfNull(row);
        return Correction switch
        {
            SphericityCorrection.GreenhouseGeisser when row.GreenhouseGeisser is not null => row.GreenhouseGeisser.P,
            SphericityCorrection.HuynhFeldt when row.HuynhFeldt is not null => row.HuynhFeldt.P,
            _ => row.P,
        };
    }
}
