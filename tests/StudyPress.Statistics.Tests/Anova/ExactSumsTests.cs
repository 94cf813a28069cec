namespace StudyPress.Statistics.Tests.Anova;

public class ExactSumsTests
{
    [Fact]
    public void OneWay_SmallExample_EqualsHandComputation()
    {
        // Exact hand computation: groups {1.1, 1.3} and {2.0, 2.4, 2.9}; in tenths the group sums
        // are 24 and 73, the sums of squares 290 and 1817, N = 5, S = 97, Q = 2107.
        // SS_total = (2107 − 97²/5)/100 = (2107 − 1881.8)/100 = 2.252;
        // SS_within = (290 − 24²/2 + 1817 − 73²/3)/100 = (2 + 40.666…)/100 = 1.28/3;
        // SS_between = 2.252 − 1.28/3 = 5.476/3.
        var v = new ScaledIntegers([11, 13, 20, 24, 29], 1);
        var r = ExactSums.OneWay(v, [0, 0, 1, 1, 1], 2)!.Value;
        Assert.Equal(2.252, r.Total);
        Assert.Equal(1.28 / 3.0, r.Within, 15);
        Assert.Equal(5.476 / 3.0, r.Between, 15);
    }

    [Fact]
    public void OneWay_WideMantissas_TakeTheBigIntegerPath_WithTheSameResult()
    {
        // The same data shifted by 10^15 (exactly representable shift): sums of squares unchanged.
        long shift = 1_000_000_000_000_000;
        var small = ExactSums.OneWay(new ScaledIntegers([11, 13, 20, 24, 29], 1), [0, 0, 1, 1, 1], 2)!.Value;
        var wide = ExactSums.OneWay(new ScaledIntegers([11 + shift, 13 + shift, 20 + shift, 24 + shift, 29 + shift], 1), [0, 0, 1, 1, 1], 2)!.Value;
        Assert.Equal(small, wide);
    }

    [Fact]
    public void ToDouble_RoundsToNearestEven()
    {
        // Exact hand computation: 1/3, 2^53 + 1 (a tie, to even: 2^53), 2^53 + 3 (tie, to 2^53 + 4).
        Assert.Equal(1.0 / 3.0, ExactSums.ToDouble(1, 3));
        Assert.Equal(9007199254740992.0, ExactSums.ToDouble((System.Numerics.BigInteger.One << 53) + 1, 1));
        Assert.Equal(9007199254740996.0, ExactSums.ToDouble((System.Numerics.BigInteger.One << 53) + 3, 1));
        Assert.Equal(-0.1, ExactSums.ToDouble(-1, 10));
    }
}
