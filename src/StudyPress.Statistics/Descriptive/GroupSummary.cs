using MathNet.Numerics.Statistics;

namespace StudyPress.Statistics.Descriptive;

/// <summary>Descriptive statistics of one group.</summary>
public sealed record GroupSummary(
    int N,
    double Mean,
    Quantity Sd,
    Quantity Se,
    Quantity CiLow,
    Quantity CiHigh,
    double Median,
    double Q1,
    double Q3,
    double Min,
    double Max);

/// <summary>
/// Per-group descriptive statistics. SD with divisor n - 1; SE = SD/sqrt(n); the confidence
/// interval of the mean is mean ± t(1 - alpha/2, n - 1) SE; quartiles and median by linear
/// interpolation between order statistics (Hyndman and Fan 1996, definition 7).
/// The mean and spread come from the centred values (<c>offset</c> added back to the mean, which
/// keeps every digit of data such as 1000000000000.4); order statistics come from the values
/// themselves, so a median or minimum is exactly a datum (or an interpolation between two).
/// </summary>
public static class Descriptives
{
    /// <param name="exactMean">The mean when the caller computed it exactly (for example in decimal
    /// arithmetic from decimal text); otherwise it comes from the centred values.</param>
    public static GroupSummary Compute(ReadOnlySpan<double> centred, ReadOnlySpan<double> values, double offset, double alpha, double? exactMean = null)
    {
        if (values.Length != centred.Length)
        {
            throw new ArgumentException("centred and raw values differ in length", nameof(values));
        }

        var sorted = values.ToArray();
        Array.Sort(sorted);
        return ComputeSorted(centred, sorted, offset, alpha, exactMean);
    }

    /// <summary>As <see cref="Compute"/>, with the group's values already in ascending order (not copied).</summary>
    public static GroupSummary ComputeSorted(ReadOnlySpan<double> centred, double[] sorted, double offset, double alpha, double? exactMean = null)
    {
        var n = centred.Length;
        if (n == 0)
        {
            throw new ArgumentException("empty group", nameof(centred));
        }

        var mean = Groups.Mean(centred);
        Quantity sd, se, lo, hi;
        if (n < 2)
        {
            sd = se = lo = hi = Quantity.Undefined("a group of one has no standard deviation");
        }
        else
        {
            var s = Math.Sqrt(Groups.SumOfSquares(centred, mean) / (n - 1));
            sd = Quantity.Of(s);
            se = Quantity.Of(s / Math.Sqrt(n));
            var half = Probability.TCritical(alpha, n - 1) * se.Value;
            lo = Quantity.Of((exactMean ?? (offset + mean)) - half);
            hi = Quantity.Of((exactMean ?? (offset + mean)) + half);
        }

        if (sorted.Length != n)
        {
            throw new ArgumentException("centred and raw values differ in length", nameof(sorted));
        }

        double Q(double tau) => SortedArrayStatistics.QuantileCustom(sorted, tau, QuantileDefinition.R7);
        return new GroupSummary(n, exactMean ?? (offset + mean), sd, se, lo, hi, Q(0.5), Q(0.25), Q(0.75), sorted[0], sorted[^1]);
    }
}
