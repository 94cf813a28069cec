namespace StudyPress.Statistics.Designs;

/// <summary>
/// The variance of one random term by the ANOVA method. <paramref name="Combination"/> is the
/// estimate as a combination of mean squares (coefficient x MS). A negative
/// <paramref name="Variance"/> is kept as estimated (never truncated): <paramref name="Note"/> then
/// says what it means; its <paramref name="Sd"/>, <paramref name="Proportion"/> and interval are
/// not defined.
/// </summary>
public sealed record VarianceComponent(
    string Term,
    TermKind Kind,
    double Variance,
    Quantity Sd,
    Quantity Proportion,
    Quantity Df,
    Quantity CiLow,
    Quantity CiHigh,
    IReadOnlyList<DenominatorPart> Combination,
    string? Note)
{
    /// <summary>True when the estimate is below zero.</summary>
    public bool IsNegative => Variance < 0;
}

/// <summary>Variance components of a design, with the interval method used.</summary>
/// <param name="Total">Sum of the non-negative components (the denominator of the proportions).</param>
/// <param name="IntervalMethod">How the intervals were formed, in words, with the source.</param>
public sealed record VarianceComponentsResult(
    IReadOnlyList<VarianceComponent> Components,
    double Total,
    double Confidence,
    string IntervalMethod)
{
    /// <summary>The component of <paramref name="term"/>.</summary>
    public VarianceComponent Of(string term) =>
        Components.FirstOrDefault(c => string.Equals(c.Term, term, StringComparison.Ordinal))
        ?? throw new KeyNotFoundException("no component " + term);
}

/// <summary>
/// Variance components by the ANOVA method (equating mean squares to their expectations; Searle,
/// Casella and McCulloch 1992, Variance Components, Wiley): for a random term U with
/// E MS(U) = k σ²(U) + E(error of U), σ̂²(U) = (MS(U) − Σ c_i MS_i) / k, where Σ c_i MS_i is the
/// error combination derived by <see cref="StrataAnova"/>; the residual's is its mean square. A
/// term whose cells hold one observation each (no residual) estimates its own variance plus the
/// measurement variance; this is noted.
/// <para>
/// Intervals: Satterthwaite's approximation (Satterthwaite 1946, Biometrics Bulletin 2, 110-114;
/// as set out in Burdick and Graybill 1992, Confidence Intervals on Variance Components, Dekker): the estimate L = Σ a_i MS_i is taken as L χ²_ν / ν with
/// ν = L² / Σ (a_i MS_i)² / df_i, giving [ν L / χ²_{ν, 1−α/2}, ν L / χ²_{ν, α/2}] (upper quantiles
/// χ²_{ν, p} with P(X ≥ χ²) = p). For the residual (one mean square) this is the exact
/// chi-square interval. When the estimate is a difference of mean squares the interval is
/// approximate and can be too short (Burdick and Graybill 1992); when the estimate is not
/// positive no interval is given, nor when Satterthwaite's ν is below 1 (the approximate interval
/// then does not even contain the estimate).
/// </para>
/// </summary>
public static class VarianceComponents
{
    /// <summary>The words used for the interval method.</summary>
    public const string SatterthwaiteMethod =
        "Satterthwaite's approximation (Satterthwaite 1946; Burdick and Graybill 1992); exact chi-square for the residual";

    /// <summary>Estimates the component of every random row of <paramref name="anova"/> (residual last).</summary>
    public static VarianceComponentsResult Estimate(StrataAnovaResult anova, double confidence = 0.95)
    {
        ArgumentNullException.ThrowIfNull(anova);
        if (!(confidence > 0 && confidence < 1))
        {
            throw new ArgumentOutOfRangeException(nameof(confidence), "confidence must be between 0 and 1");
        }

        var alpha = 1 - confidence;
        var raw = new List<(StrataRow Row, double Value, List<DenominatorPart> Parts, string? Note)>();
        foreach (var row in anova.Rows.Where(r => r.IsRandom))
        {
            var own = row.ExpectedMeanSquare.First(e => !e.IsFixed && string.Equals(e.Term, row.Term, StringComparison.Ordinal)).Coefficient;
            var parts = new List<DenominatorPart> { new(row.Term, 1 / own, row.MeanSquare.Value, row.Df) };
            parts.AddRange(row.Denominator.Select(d => d with { Coefficient = -d.Coefficient / own }));
            var value = parts.Sum(p => p.Coefficient * p.MeanSquare);
            string? note = null;
            if (row.Kind != TermKind.Residual && row.Denominator.Count == 0)
            {
                note = "each cell of this term holds one observation, so its variance includes the residual (measurement) variance";
            }

            if (value < 0)
            {
                note = (note is null ? string.Empty : note + "; ")
                       + "the estimate is negative: the mean square of this term is smaller than that of its error, which happens by chance when the true variance is zero or small; it is shown as estimated, not set to zero";
            }

            raw.Add((row, value, parts, note));
        }

        var total = raw.Where(r => r.Value > 0).Sum(r => r.Value);
        var components = new List<VarianceComponent>();
        foreach (var (row, value, parts, note) in raw)
        {
            Quantity sd, prop, df, lo, hi;
            if (value > 0)
            {
                sd = Quantity.Of(Math.Sqrt(value));
                prop = Quantity.Of(value / total);
                double s = 0;
                foreach (var p in parts)
                {
                    var t = p.Coefficient * p.MeanSquare;
                    s += t * t / p.Df;
                }

                var nu = value * value / s;
                df = Quantity.Of(nu);
                lo = Quantity.Of(nu * value / Probability.ChiSquareCritical(alpha / 2, nu));
                hi = Quantity.Of(nu * value / Probability.ChiSquareCritical(1 - (alpha / 2), nu));
                if (!(nu >= 1) || !double.IsFinite(hi.Value) || !(lo.Value <= value && value <= hi.Value))
                {
                    // With less than one degree of freedom the chi-square approximation puts the
                    // whole interval on one side of the estimate: it says nothing, so none is given.
                    lo = hi = Quantity.Undefined(string.Create(
                        System.Globalization.CultureInfo.InvariantCulture,
                        $"Satterthwaite's df is {nu:G3}, below 1: the estimate is too imprecise for an interval"));
                }
            }
            else
            {
                var why = value < 0 ? "the estimate is negative" : "the estimate is zero";
                sd = Quantity.Undefined(why);
                prop = Quantity.Undefined(why);
                df = lo = hi = Quantity.Undefined(why + ", so Satterthwaite's interval is not defined");
            }

            components.Add(new VarianceComponent(row.Term, row.Kind, value, sd, prop, df, lo, hi, parts, note));
        }

        return new VarianceComponentsResult(components, total, confidence, SatterthwaiteMethod);
    }
}
