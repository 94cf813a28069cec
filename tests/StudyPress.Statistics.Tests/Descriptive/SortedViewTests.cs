using MathNet.Numerics.Statistics;
using StudyPress.Statistics.Descriptive;

namespace StudyPress.Statistics.Tests.Descriptive;

/// <summary>
/// The summary's order statistics read from a sorted view (<see cref="SortedRuns"/>, no array of n
/// values) are those of the sorted array: the reference is Math.NET Numerics' own quantile of
/// definition 7 on the array, and the array overload of <see cref="Descriptives.ComputeSorted(ReadOnlySpan{double}, double[], double, double, double?)"/>
/// (bit for bit).
/// </summary>
public sealed class SortedViewTests
{
    private static long Bits(double d) => BitConverter.DoubleToInt64Bits(d);

    private static readonly double[] Taus = [0, 0.25, 0.5, 0.75, 1, 0.1, 0.9, 1.0 / 3, 0.999, 1e-9];

    [Fact]
    public void QuantileR7_SameBitsAsLibrary()
    {
        var rng = new Random(41);
        for (var n = 1; n <= 400; n++)
        {
            var sorted = Enumerable.Range(0, n).Select(_ => Math.Round((rng.NextDouble() - 0.3) * 1000, rng.Next(0, 6))).ToArray();
            Array.Sort(sorted);
            foreach (var tau in Taus)
            {
                Assert.Equal(Bits(SortedArrayStatistics.QuantileCustom(sorted, tau, QuantileDefinition.R7)), Bits(Descriptives.QuantileR7(sorted, tau)));
            }
        }

        foreach (var n in new[] { 4_097, 100_000, 1_000_001 })
        {
            var sorted = Enumerable.Range(0, n).Select(_ => rng.NextDouble() * 1e6).ToArray();
            Array.Sort(sorted);
            foreach (var tau in Taus)
            {
                Assert.Equal(Bits(SortedArrayStatistics.QuantileCustom(sorted, tau, QuantileDefinition.R7)), Bits(Descriptives.QuantileR7(sorted, tau)));
            }
        }

        Assert.True(double.IsNaN(Descriptives.QuantileR7([1.0, 2.0], 1.5)));
        Assert.True(double.IsNaN(Descriptives.QuantileR7(Array.Empty<double>(), 0.5)));
    }

    /// <summary>A sample of integers in [low, high] times 0.001, with its runs (counts per integer).</summary>
    private static (double[] Values, SortedRuns Runs) Sample(int seed, int n, int low, int high)
    {
        var rng = new Random(seed);
        var ints = Enumerable.Range(0, n).Select(_ => rng.Next(low, high + 1)).ToArray();
        var values = ints.Select(i => i / 1000.0).ToArray();
        var counts = new int[high - low + 1];
        var distinct = new double[high - low + 1];
        foreach (var i in ints)
        {
            counts[i - low]++;
            distinct[i - low] = i / 1000.0;
        }

        return (values, new SortedRuns(distinct, counts));
    }

    [Theory]
    [InlineData(1, 1, 5, 9)]
    [InlineData(2, 2, -3, 3)]
    [InlineData(3, 7, 0, 0)]
    [InlineData(4, 5_000, -400, 900)]
    [InlineData(5, 200_001, 40_000, 60_000)]
    public void SortedRuns_EveryRankAsTheSortedArray_AndTheSameSummary(int seed, int n, int low, int high)
    {
        var (values, runs) = Sample(seed, n, low, high);
        var sorted = (double[])values.Clone();
        Array.Sort(sorted);
        Assert.Equal(n, runs.Count);
        Assert.Equal(sorted.Select(Bits), Enumerable.Range(0, n).Select(r => Bits(runs[r])));
        Assert.Equal(sorted.Select(Bits), runs.ToArray().Select(Bits));
        Assert.Equal(sorted.Select(Bits), runs.Select(Bits));

        // The summary from the runs is the summary from the array, every statistic bit for bit.
        var centre = values.Average();
        var centred = values.Select(v => v - centre).ToArray();
        var fromArray = Descriptives.ComputeSorted(centred, sorted, centre, 0.05);
        var fromRuns = Descriptives.ComputeSorted(centred, (IReadOnlyList<double>)runs, centre, 0.05);
        Assert.Equal(fromArray, fromRuns);
        Assert.Equal(
            new[] { fromArray.Median, fromArray.Q1, fromArray.Q3, fromArray.Min, fromArray.Max, fromArray.Mean }.Select(Bits),
            new[] { fromRuns.Median, fromRuns.Q1, fromRuns.Q3, fromRuns.Min, fromRuns.Max, fromRuns.Mean }.Select(Bits));
    }
}
