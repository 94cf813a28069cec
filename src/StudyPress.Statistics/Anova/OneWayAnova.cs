namespace StudyPress.Statistics.Anova;

/// <summary>
/// One-way fixed-effects ANOVA from group means, the numerically best route for one factor:
/// group means by corrected two-pass summation, SS_within as the sum of squared deviations from
/// each group mean, SS_between = sum n_i (mean_i - grand mean)². On centred input this reaches
/// the NIST StRD certified values to 13 or more digits; given the exact decimal values, the sums
/// of squares are exact rounded once, and every certified digit is met (tests/StudyPress.Tests,
/// NistStrdTests).
/// Reference: NIST/SEMATECH e-Handbook of Statistical Methods, section 7.4.3.
/// </summary>
public static class OneWayAnova
{
    /// <summary>Fits the model. Levels without observations are ignored (the binder reports them).</summary>
    /// <param name="response">The response (centring does not change the sums of squares).</param>
    /// <param name="factor">The factor's codes and levels.</param>
    /// <param name="alpha">The study's alpha, for the critical F.</param>
    /// <param name="exact">
    /// The response's exact decimal values, when known: the three sums of squares are then
    /// computed exactly and rounded once (<see cref="ExactSums.OneWay"/>); the means, residuals
    /// and leverages stay the floating-point ones.
    /// </param>
    public static AnovaResult Fit(double[] response, FactorColumn factor, double alpha, ScaledIntegers? exact = null)
    {
        ArgumentNullException.ThrowIfNull(response);
        var n = response.Length;
        if (factor.Codes.Length != n)
        {
            throw new ArgumentException("factor and response differ in length", nameof(factor));
        }

        var k = factor.Levels.Count;
        var counts = new int[k];
        var sums = new double[k];
        foreach (var c in factor.Codes)
        {
            counts[c]++;
        }

        for (var i = 0; i < n; i++)
        {
            sums[factor.Codes[i]] += response[i];
        }

        var means = new double[k];
        for (var g = 0; g < k; g++)
        {
            means[g] = counts[g] > 0 ? sums[g] / counts[g] : 0;
        }

        // Second pass: correct each group mean for rounding in the first.
        var corr = new double[k];
        for (var i = 0; i < n; i++)
        {
            corr[factor.Codes[i]] += response[i] - means[factor.Codes[i]];
        }

        for (var g = 0; g < k; g++)
        {
            if (counts[g] > 0)
            {
                means[g] += corr[g] / counts[g];
            }
        }

        var grand = Groups.Mean(response);
        // Fitted values and leverages are their group's (the mean, 1/n_g): read through the codes, not stored per observation.
        var groupLeverage = new double[k];
        for (var g = 0; g < k; g++)
        {
            groupLeverage[g] = 1.0 / counts[g];
        }

        var residuals = new double[n];
        double ssWithin = 0, ssTotal = 0;
        for (var i = 0; i < n; i++)
        {
            var g = factor.Codes[i];
            residuals[i] = response[i] - means[g];
            ssWithin += residuals[i] * residuals[i];
            var d = response[i] - grand;
            ssTotal += d * d;
        }

        double ssBetween = 0;
        var used = 0;
        for (var g = 0; g < k; g++)
        {
            if (counts[g] == 0)
            {
                continue;
            }

            used++;
            var d = means[g] - grand;
            ssBetween += counts[g] * d * d;
        }

        if (exact is not null && ExactSums.OneWay(exact, factor.Codes, k) is { } exactSums)
        {
            ssBetween = exactSums.Between;
            ssWithin = exactSums.Within;
            ssTotal = exactSums.Total;
        }

        var dfBetween = used - 1;
        var dfWithin = n - used;
        var term = AnovaTable.Term(factor.Name, [factor.Name], ssBetween, dfBetween, ssWithin, dfWithin, ssTotal, alpha);
        return new AnovaResult(
            [term],
            ssWithin,
            dfWithin,
            AnovaTable.MeanSquareResidual(ssWithin, dfWithin),
            ssTotal,
            n - 1,
            new CodedValues(means, factor.Codes),
            residuals,
            new CodedValues(groupLeverage, factor.Codes),
            SumOfSquaresType.Sequential,
            alpha);
    }
}
