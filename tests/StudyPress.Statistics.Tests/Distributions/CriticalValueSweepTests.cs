using StudyPress.Statistics.Distributions;
using StudyPress.Statistics.Power;
using StudyPress.Statistics.PostHoc;
using StudyPress.Statistics.Tests.Support;

namespace StudyPress.Statistics.Tests.Distributions;

/// <summary>
/// Every quantile the engine inverts, over tiny and large alphas and 1–3 df: finite, and the
/// tail at the quantile gives back alpha (definition of the quantile).
/// </summary>
public class CriticalValueSweepTests
{
    public static TheoryData<double, double> Cases()
    {
        var data = new TheoryData<double, double>();
        foreach (var a in new[] { 1e-12, 1e-6, 0.0005, 0.05, 0.9 })
        {
            foreach (var df in new[] { 1.0, 2.0, 3.0, 12.0 })
            {
                data.Add(a, df);
            }
        }

        return data;
    }

    [Theory]
    [MemberData(nameof(Cases))]
    public void StudentizedRange_UpperQuantile_InvertsItsTail(double alpha, double df)
    {
        foreach (var k in new[] { 2, 3, 5 })
        {
            var q = StudentizedRange.UpperQuantile(alpha, k, df);
            Assert.True(double.IsFinite(q) && q > 0, $"q {alpha} {k} {df}");
            Assert.True(Accuracy.Lre(StudentizedRange.Upper(q, k, df), alpha) > 5, $"q {alpha} {k} {df}: {q}");
        }
    }

    [Theory]
    [MemberData(nameof(Cases))]
    public void Dunnett_CriticalValue_InvertsItsTail(double alpha, double df)
    {
        double[] lambdas = [Math.Sqrt(0.5), Math.Sqrt(0.5), Math.Sqrt(0.6)];
        var c = Dunnett.CriticalValue(alpha, lambdas, df);
        Assert.True(double.IsFinite(c) && c > 0);
        Assert.True(Accuracy.Lre(Dunnett.UpperProbability(c, lambdas, df), alpha) > 5, $"dunnett {alpha} {df}: {c}");
    }

    [Theory]
    [MemberData(nameof(Cases))]
    public void Power_AndNoncentralityLimits_AreDefined(double alpha, double df)
    {
        var n = (int)df + 1;
        var power = AnovaPower.Power(0.4, 3, n, alpha);
        Assert.True(power.IsDefined && power.Value is >= 0 and <= 1, $"power {alpha} {df}");
        var f = Probability.FCritical(alpha, 2, df);
        var lambda = NoncentralF.SolveNoncentrality(f, 2, df, 1 - (alpha / 2));
        Assert.True(double.IsFinite(lambda) && lambda >= 0);
    }
}
