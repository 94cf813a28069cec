using StudyPress.Statistics;

namespace StudyPress.Statistics.Tests.Core;

/// <summary>
/// FastSort must give exactly the array Array.Sort gives (compared bit for bit), on every kind of
/// data: the reference is the library sort itself.
/// </summary>
public class FastSortTests
{
    private static void AssertSameAsLibrarySort(double[] values)
    {
        var expected = (double[])values.Clone();
        Array.Sort(expected);
        var actual = (double[])values.Clone();
        FastSort.Sort(actual);
        Assert.Equal(expected.Length, actual.Length);
        for (var i = 0; i < expected.Length; i++)
        {
            Assert.True(
                BitConverter.DoubleToInt64Bits(expected[i]) == BitConverter.DoubleToInt64Bits(actual[i]),
                $"position {i}: expected {expected[i]:R}, got {actual[i]:R}");
        }

        Assert.Equal(expected, FastSort.SortedCopy(values));
    }

    [Theory]
    [InlineData(1, 5_000)]
    [InlineData(2, 100_003)]
    [InlineData(3, 250_000)]
    public void Sort_NormalData_SameAsArraySort(int seed, int n)
    {
        var rng = new Random(seed);
        var values = new double[n];
        for (var i = 0; i < n; i++)
        {
            // Box–Muller normal values around 100 and around -3, with a scale spanning exponents.
            var u = 1 - rng.NextDouble();
            var z = Math.Sqrt(-2 * Math.Log(u)) * Math.Cos(2 * Math.PI * rng.NextDouble());
            values[i] = (i % 3 == 0 ? -3 : 100) + (z * Math.Pow(10, rng.Next(-6, 6)));
        }

        AssertSameAsLibrarySort(values);
    }

    [Fact]
    public void Sort_TiesRoundedValues_SameAsArraySort()
    {
        var rng = new Random(7);
        var values = Enumerable.Range(0, 60_000).Select(_ => Math.Round((rng.NextDouble() - 0.5) * 40) / 4).Where(v => v != 0).ToArray();
        AssertSameAsLibrarySort(values);
    }

    [Fact]
    public void Sort_ExtremeValues_SameAsArraySort()
    {
        var rng = new Random(11);
        var special = new[] { double.PositiveInfinity, double.NegativeInfinity, double.MaxValue, double.MinValue, double.Epsilon, -double.Epsilon, 1e-310, -1e-310, 1, -1 };
        var values = Enumerable.Range(0, 20_000).Select(i => i % 7 == 0 ? special[rng.Next(special.Length)] : (rng.NextDouble() - 0.5) * 1e300).ToArray();
        AssertSameAsLibrarySort(values);
    }

    [Fact]
    public void Sort_ConstantAndAlreadySorted_SameAsArraySort()
    {
        AssertSameAsLibrarySort(Enumerable.Repeat(2.5, 10_000).ToArray());
        AssertSameAsLibrarySort(Enumerable.Range(0, 10_000).Select(i => (double)i).ToArray());
        AssertSameAsLibrarySort(Enumerable.Range(0, 10_000).Select(i => (double)-i).ToArray());
    }

    [Fact]
    public void Sort_ZerosOfBothSignsOrNaN_LeftToArraySort()
    {
        // With −0 and +0 (or NaN) the ascending order is not unique; FastSort then runs Array.Sort itself.
        var rng = new Random(5);
        var zeros = Enumerable.Range(0, 10_000).Select(i => i % 10 == 0 ? -0.0 : i % 10 == 1 ? 0.0 : rng.NextDouble() - 0.5).ToArray();
        AssertSameAsLibrarySort(zeros);
        var nans = Enumerable.Range(0, 10_000).Select(i => i % 100 == 0 ? double.NaN : rng.NextDouble()).ToArray();
        AssertSameAsLibrarySort(nans);
    }

    [Fact]
    public void Sort_Small_SameAsArraySort()
    {
        AssertSameAsLibrarySort([]);
        AssertSameAsLibrarySort([3, 1, 2]);
    }

    /// <summary>The thinned figures' ranks: evenly spaced from the smallest to the largest, and a few more.</summary>
    private static int[] Ranks(int n) =>
        [.. Enumerable.Range(0, 2000).Select(k => (int)Math.Round((double)k * (n - 1) / 1999)).Concat([0, 1, n / 2, n - 2, n - 1])];

    private static void AssertSameOrderStatistics(double[] values)
    {
        var ranks = Ranks(values.Length);
        var sorted = (double[])values.Clone();
        Array.Sort(sorted);
        var picked = FastSort.OrderStatistics(values, ranks);
        Assert.Equal(ranks.Select(r => BitConverter.DoubleToInt64Bits(sorted[r])), picked.Select(BitConverter.DoubleToInt64Bits));
    }

    [Fact]
    public void OrderStatistics_SameAsFullSort()
    {
        var rng = new Random(3);
        // Normal values (dense middle, sparse tails), heavy ties, one far outlier (most buckets empty),
        // extremes of magnitude, zeros of both signs and NaN (left to the full sort).
        var normal = Enumerable.Range(0, 300_000).Select(_ => Math.Sqrt(-2 * Math.Log(1 - rng.NextDouble())) * Math.Cos(2 * Math.PI * rng.NextDouble())).ToArray();
        AssertSameOrderStatistics(normal);
        AssertSameOrderStatistics([.. Enumerable.Range(0, 50_000).Select(_ => Math.Round((rng.NextDouble() - 0.5) * 8) / 4)]);
        AssertSameOrderStatistics([.. normal.Take(100_000).Append(1e12)]);
        AssertSameOrderStatistics([.. Enumerable.Range(0, 20_000).Select(i => i % 9 == 0 ? double.MaxValue * (i % 2 == 0 ? 1 : -1) : rng.NextDouble())]);
        AssertSameOrderStatistics([.. Enumerable.Range(0, 20_000).Select(i => i % 10 == 0 ? -0.0 : rng.NextDouble() - 0.5)]);
        AssertSameOrderStatistics([.. Enumerable.Range(0, 20_000).Select(i => i % 100 == 0 ? double.NaN : rng.NextDouble())]);
        AssertSameOrderStatistics([.. Enumerable.Repeat(2.5, 10_000)]);
        AssertSameOrderStatistics([.. Enumerable.Range(0, 5_000).Select(i => (double)-i)]);
    }

    [Fact]
    public void TryOrderStatistics_NullExactlyWhereTheFullSortRuns()
    {
        var rng = new Random(13);
        var normal = Enumerable.Range(0, 20_000).Select(_ => Math.Sqrt(-2 * Math.Log(1 - rng.NextDouble())) * Math.Cos(2 * Math.PI * rng.NextDouble())).ToArray();
        var ranks = Ranks(normal.Length);
        var sorted = (double[])normal.Clone();
        Array.Sort(sorted);
        var picked = FastSort.TryOrderStatistics(normal, ranks);
        Assert.NotNull(picked);
        Assert.Equal(ranks.Select(r => BitConverter.DoubleToInt64Bits(sorted[r])), picked.Select(BitConverter.DoubleToInt64Bits));

        // Small, with −0, with NaN, constant: the order is left to a full sort (null here).
        Assert.Null(FastSort.TryOrderStatistics(normal.AsSpan(0, FastSort.RadixThreshold - 1), [0, 5]));
        Assert.Null(FastSort.TryOrderStatistics([.. normal.Select((v, i) => i == 17 ? -0.0 : v)], [0, 5]));
        Assert.Null(FastSort.TryOrderStatistics([.. normal.Select((v, i) => i == 17 ? double.NaN : v)], [0, 5]));
        Assert.Null(FastSort.TryOrderStatistics([.. Enumerable.Repeat(2.5, 10_000)], [0, 5]));
    }
}
