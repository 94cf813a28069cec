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
}
