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
/// The input may be centred; <c>offset</c> is added back to every location statistic.
/// </summary>
public static class Descriptives
{
    public static GroupSummary Compute(ReadOnlySpan<double> centred, double offset, double alpha)
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
            lo = Quantity.Of(offset + mean - half);
            hi = Quantity.Of(offset + mean + half);
        }

        var sorted = centred.ToArray();
        Array.Sort(sorted);
        double Q(double tau) => offset + SortedArrayStatistics.QuantileCustom(sorted, tau, QuantileDefinition.R7);
        return new GroupSummary(n, offset + mean, sd, se, lo, hi, Q(0.5), Q(0.25), Q(0.75), offset + sorted[0], offset + sorted[^1]);
    }
}
