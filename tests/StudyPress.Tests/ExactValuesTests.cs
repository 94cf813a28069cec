using StudyPress.Data;

namespace StudyPress.Tests;

/// <summary>
/// The exact-value helpers of the big-data path give the same bits as the decimal arithmetic they
/// stand in for (exact hand computation is not needed: the decimal conversion is the reference).
/// </summary>
public sealed class ExactValuesTests
{
    private static long Bits(double d) => BitConverter.DoubleToInt64Bits(d);

    [Fact]
    public void ToDouble_SameBitsAsDecimalConversion()
    {
        var rng = new Random(20261204);
        var mantissas = new List<Int128>
        {
            0, 1, -1, 9, 10, 99_999, -54_676, (1L << 53) - 1, 1L << 53, (1L << 53) + 1, -((1L << 53) + 3),
            999_999_999_999_999_999, -999_999_999_999_999_999, long.MaxValue, -long.MaxValue,
            (Int128)ulong.MaxValue, (Int128)ulong.MaxValue + 1, -((Int128)1 << 70) - 12345,
            ((Int128)1 << 96) - 1, -(((Int128)1 << 96) - 1),
        };
        for (var k = 0; k < 20_000; k++)
        {
            // Every magnitude from 1 to 96 bits, both signs.
            var bitsWanted = 1 + rng.Next(96);
            Int128 m = 0;
            for (var b = 0; b < bitsWanted; b += 30)
            {
                m = (m << 30) | (uint)rng.Next(1 << 30);
            }

            m &= ((Int128)1 << bitsWanted) - 1;
            mantissas.Add(rng.Next(2) == 0 ? m : -m);
        }

        foreach (var m in mantissas)
        {
            for (byte scale = 0; scale <= 28; scale++)
            {
                var expected = (double)ExactValues.Decimal(m, scale);
                Assert.Equal(Bits(expected), Bits(ExactValues.ToDouble(m, scale)));
                if (m >= -long.MaxValue && m <= long.MaxValue)
                {
                    Assert.Equal(Bits(expected), Bits(ExactValues.ToDouble((long)m, scale)));
                }
            }
        }
    }

    [Theory]
    [InlineData(3, 40_000, 1_000)]
    [InlineData(0, 10_000, 7)]
    [InlineData(2, 20_000, 2_400)]
    public void CountingSorted_SameArrayAsSort(int scale, int n, int spread)
    {
        // Integers in a narrow range around zero (ties, negatives, zero), their doubles as the
        // loader makes them, and every other position of the column.
        var rng = new Random(n + spread);
        var m = new long[n];
        var values = new double[n];
        for (var i = 0; i < n; i++)
        {
            m[i] = rng.Next(-spread / 2, spread / 2 + 1);
            values[i] = (double)ExactValues.Decimal(m[i], (byte)scale);
        }

        var positions = Enumerable.Range(0, n).Where(i => i % 2 == 1).ToArray();
        var expected = positions.Select(p => values[p]).ToArray();
        Array.Sort(expected);
        var counted = ExactValues.Scaled(m, scale).CountingSorted(values, positions);
        Assert.NotNull(counted);
        Assert.Equal(expected.Select(Bits), counted.Select(Bits));

        // The runs the summary and the box plots read: the sorted array's value at every rank.
        var runs = ExactValues.Scaled(m, scale).CountingOrder(values, positions);
        Assert.NotNull(runs);
        Assert.Equal(expected.Length, runs.Count);
        Assert.Equal(expected.Select(Bits), Enumerable.Range(0, runs.Count).Select(r => Bits(runs[r])));
        Assert.Equal(expected.Select(Bits), runs.Select(Bits));
    }

    [Fact]
    public void CountingOrder_DeclinesWhereCountingSortedDeclines()
    {
        var m = new long[] { 5, 3, 4, 3, 5, 4, 3, 5 };
        var values = m.Select(v => (double)v).ToArray();
        var all = Enumerable.Range(0, m.Length).ToArray();
        var exact = ExactValues.Scaled(m, 0);
        var other = (double[])values.Clone();
        other[3] = 3.5;
        Assert.Null(exact.CountingOrder(other, all));
        Assert.Null(exact.CountingOrder(m.Select(v => (double)-v).ToArray(), all));
        Assert.Null(ExactValues.Scaled([0, 1000, 7, 3], 0).CountingOrder([0, 1000, 7, 3], [0, 1, 2, 3]));
        Assert.Null(ExactValues.Of([1m, 2m, 1m, 2m]).CountingOrder([1, 2, 1, 2], [0, 1, 2, 3]));

        // A gap in the integers (a run of count 0) is never read: ranks 0-2 are 3, 3-7 are 5.
        var gap = new long[] { 5, 3, 5, 3, 5, 3, 5, 5 };
        var runs = ExactValues.Scaled(gap, 0).CountingOrder(gap.Select(v => (double)v).ToArray(), all);
        Assert.NotNull(runs);
        Assert.Equal(new double[] { 3, 3, 3, 5, 5, 5, 5, 5 }, Enumerable.Range(0, 8).Select(r => runs[r]));
        Assert.Throws<ArgumentOutOfRangeException>(() => runs[8]);
    }

    [Fact]
    public void CountingSorted_DeclinesWhatItCannotProve()
    {
        var m = new long[] { 5, 3, 4, 3, 5, 4, 3, 5 };
        var values = m.Select(v => (double)v).ToArray();
        var all = Enumerable.Range(0, m.Length).ToArray();
        var exact = ExactValues.Scaled(m, 0);
        Assert.Equal(new double[] { 3, 3, 3, 4, 4, 5, 5, 5 }, exact.CountingSorted(values, all));

        // The same integer with two different doubles: not the column's doubles, so no counting.
        var other = (double[])values.Clone();
        other[3] = 3.5;
        Assert.Null(exact.CountingSorted(other, all));

        // Doubles that fall while the integers rise: not an order-preserving column.
        var falling = m.Select(v => (double)-v).ToArray();
        Assert.Null(exact.CountingSorted(falling, all));

        // A range wider than half the count: sorted the ordinary way.
        var wide = ExactValues.Scaled([0, 1000, 7, 3], 0);
        Assert.Null(wide.CountingSorted([0, 1000, 7, 3], [0, 1, 2, 3]));

        // Decimals (no common scale): not counted.
        Assert.Null(ExactValues.Of([1m, 2m, 1m, 2m]).CountingSorted([1, 2, 1, 2], [0, 1, 2, 3]));
    }
}
