using StudyPress.Statistics.Power;

namespace StudyPress.Statistics.Tests.Power;

public class AnovaPowerTests
{
    [Theory]
    [InlineData(4, 45)]
    [InlineData(2, 64)]
    public void SampleSize_MediumEffect_MatchesCohenTable(int groups, int cohenN)
    {
        // From memory, unverified: Cohen (1988), Statistical Power Analysis, ch. 8 (table 8.4.4),
        // f = 0.25, alpha 0.05, power 0.80: n = 45 per group for u = 3 (k = 4), n = 64 for u = 1
        // (k = 2; also d = 0.5 in ch. 2). Cohen's tables were computed by approximation, so +/- 1.
        var s = AnovaPower.SampleSize(0.25, groups, 0.05, 0.80);
        Assert.InRange(s.NPerGroup.Value, cohenN - 1, cohenN + 1);
        Assert.Equal(groups * s.NPerGroup.Value, s.TotalN.Value);
    }

    [Theory]
    [InlineData(0.10, 3, 0.05, 0.80)]
    [InlineData(0.25, 4, 0.05, 0.80)]
    [InlineData(0.40, 5, 0.01, 0.90)]
    [InlineData(1.50, 2, 0.05, 0.80)]
    public void SampleSize_IsSmallestNReachingTarget(double f, int k, double alpha, double target)
    {
        var s = AnovaPower.SampleSize(f, k, alpha, target);
        var n = (int)s.NPerGroup.Value;
        Assert.True(s.AchievedPower.Value >= target);
        Assert.Equal(AnovaPower.Power(f, k, n, alpha).Value, s.AchievedPower.Value);
        if (n > 2)
        {
            Assert.True(AnovaPower.Power(f, k, n - 1, alpha).Value < target);
        }
    }

    [Fact]
    public void Power_IncreasesWithNAndF()
    {
        var previous = 0.0;
        foreach (var n in new[] { 2, 3, 5, 10, 20, 50 })
        {
            var p = AnovaPower.Power(0.25, 4, n, 0.05).Value;
            Assert.True(p > previous, $"n {n}");
            previous = p;
        }

        Assert.True(AnovaPower.Power(0.4, 4, 10, 0.05).Value > AnovaPower.Power(0.25, 4, 10, 0.05).Value);
    }

    [Theory]
    [InlineData(3, 10, 0.05)]
    [InlineData(6, 4, 0.01)]
    public void Power_ZeroEffect_EqualsAlpha(int k, int n, double alpha)
    {
        // With lambda = 0 the rejection rate is the level itself.
        Assert.Equal(alpha, AnovaPower.Power(0, k, n, alpha).Value, 10);
    }

    [Fact]
    public void Undefined_Cases_GiveReasons()
    {
        Assert.False(AnovaPower.Power(0.25, 3, 1, 0.05).IsDefined);
        var s = AnovaPower.SampleSize(0, 3, 0.05, 0.8);
        Assert.False(s.NPerGroup.IsDefined);
        Assert.Contains("f = 0", s.NPerGroup.Reason, StringComparison.Ordinal);
    }
}
