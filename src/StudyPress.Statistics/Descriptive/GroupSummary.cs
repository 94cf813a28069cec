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

    /// <summary>
    /// As <see cref="ComputeSorted(ReadOnlySpan{double}, double[], double, double, double?)"/>, with the
    /// order statistics read from any sorted view (<see cref="SortedRuns"/>: no array of n values);
    /// an array goes to that overload. The median and quartiles use <see cref="QuantileR7"/>, the
    /// same operations as the library's quantile of definition 7 on the same order statistics.
    /// </summary>
    public static GroupSummary ComputeSorted(ReadOnlySpan<double> centred, IReadOnlyList<double> sorted, double offset, double alpha, double? exactMean = null)
    {
        ArgumentNullException.ThrowIfNull(sorted);
        if (sorted is double[] array)
        {
            return ComputeSorted(centred, array, offset, alpha, exactMean);
        }

        var (n, mean, sd, se, lo, hi) = Moments(centred, offset, alpha, exactMean);
        if (sorted.Count != n)
        {
            throw new ArgumentException("centred and raw values differ in length", nameof(sorted));
        }

        return new GroupSummary(n, exactMean ?? (offset + mean), sd, se, lo, hi, QuantileR7(sorted, 0.5), QuantileR7(sorted, 0.25), QuantileR7(sorted, 0.75), sorted[0], sorted[n - 1]);
    }

    /// <summary>
    /// The tau-th quantile of sorted values by linear interpolation between order statistics
    /// (Hyndman and Fan 1996, definition 7) with the operations, in their order, of Math.NET
    /// Numerics' <c>SortedArrayStatistics.QuantileCustom(data, tau, QuantileDefinition.R7)</c>
    /// (test <c>DescriptivesTests.QuantileR7_SameBitsAsLibrary</c>), reading only the two order
    /// statistics it needs.
    /// </summary>
    public static double QuantileR7(IReadOnlyList<double> sorted, double tau)
    {
        ArgumentNullException.ThrowIfNull(sorted);
        var n = sorted.Count;
        if (tau < 0d || tau > 1d || n == 0)
        {
            return double.NaN;
        }

        if (tau == 0d || n == 1)
        {
            return sorted[0];
        }

        if (tau == 1d)
        {
            return sorted[n - 1];
        }

        var h = ((n - 1) * tau) + 1d;
        var hf = (int)h;
        var lower = sorted[Math.Max(hf - 1, 0)];
        var upper = sorted[Math.Min(hf, n - 1)];
        return lower + ((h - hf) * (upper - lower));
    }

    /// <summary>n, mean (centred), SD, SE and the interval of the mean, as <see cref="ComputeSorted(ReadOnlySpan{double}, double[], double, double, double?)"/> computes them.</summary>
    private static (int N, double Mean, Quantity Sd, Quantity Se, Quantity Low, Quantity High) Moments(ReadOnlySpan<double> centred, double offset, double alpha, double? exactMean)
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

        return (n, mean, sd, se, lo, hi);
    }

    /// <summary>As <see cref="Compute"/>, with the group's values already in ascending order (not copied).</summary>
    public static GroupSummary ComputeSorted(ReadOnlySpan<double> centred, double[] sorted, double offset, double alpha, double? exactMean = null)
    {
        var (n, mean, sd, se, lo, hi) = Moments(centred, offset, alpha, exactMean);
        if (sorted.Length != n)
        {
            throw new ArgumentException("centred and raw values differ in length", nameof(sorted));
        }

        double Q(double tau) => SortedArrayStatistics.QuantileCustom(sorted, tau, QuantileDefinition.R7);
        return new GroupSummary(n, exactMean ?? (offset + mean), sd, se, lo, hi, Q(0.5), Q(0.25), Q(0.75), sorted[0], sorted[^1]);
    }
}
