using System.Globalization;
using FsCheck;
using FsCheck.Fluent;
using FsCheck.Xunit;
using MathNet.Numerics.Distributions;
using StudyPress.Statistics.Assumptions;

namespace StudyPress.Statistics.Tests.Assumptions;

public class ShapiroWilkTests
{
    private const string Folder = "shapiro-wilk";
    private const string Royston = "royston1992-worked-example";

    private static double[] RoystonData() => AssumptionsData.Column(Folder, Royston + ".csv");

    // Source: Royston (1992), Statistics and Computing 2, 117-119, section 4 worked example;
    // tolerance abs 1e-4 (reference README).
    [Fact]
    public void ShapiroWilk_Royston1992Example_CoefficientsMatchPublished()
    {
        var published = AssumptionsData.JsonNumbers(Folder, Royston + ".expected.json", "published", "coefficients_a_n_minus_i_plus_1");
        var r = ShapiroWilk.Test(RoystonData());
        Assert.Equal(published.Length, r.Coefficients.Count);
        for (var i = 0; i < published.Length; i++)
        {
            Assert.True(
                Math.Abs(r.Coefficients[i] - published[i]) <= 1e-4,
                string.Create(CultureInfo.InvariantCulture, $"a[{i}]: got {r.Coefficients[i]:R}, published {published[i]}"));
        }
    }

    // Source: Royston (1992), section 4 worked example: W = 0.8078 (abs 1e-4), p = 0.018 (abs 5e-4).
    [Fact]
    public void ShapiroWilk_Royston1992Example_WAndPMatchPublished()
    {
        var w = AssumptionsData.JsonNumber(Folder, Royston + ".expected.json", "published", "W");
        var p = AssumptionsData.JsonNumber(Folder, Royston + ".expected.json", "published", "p_value");
        var r = ShapiroWilk.Test(RoystonData());
        Assert.True(r.W.IsDefined && r.P.IsDefined);
        Assert.True(Math.Abs(r.W.Value - w) <= 1e-4, $"W = {r.W}");
        Assert.True(Math.Abs(r.P.Value - p) <= 5e-4, $"p = {r.P}");
    }

    // From memory, unverified (Shapiro and Wilk 1965, weights of 11 men, W = 0.79, 5 % point 0.850):
    // a loose sanity check only, not a reference assertion.
    [Fact]
    public void ShapiroWilk_Weights1965FromMemoryUnverified_LooseSanityCheck()
    {
        var r = ShapiroWilk.Test(AssumptionsData.Column(Folder, "shapiro-wilk1965-weights.csv"));
        Assert.True(Math.Abs(r.W.Value - 0.79) < 0.01, $"W = {r.W}");
        Assert.True(r.P.Value < 0.05, $"p = {r.P}");
    }

    // Hand computation: (0, 1, 2) has W = 1 and p = 1; (0, 0, 1) has W = 0.5 / (2/3) = 0.75, the
    // minimum for n = 3, where the exact p (Shapiro and Wilk 1965) is 0.
    [Theory]
    [InlineData(new[] { 0.0, 1.0, 2.0 }, 1.0, 1.0)]
    [InlineData(new[] { 0.0, 0.0, 1.0 }, 0.75, 0.0)]
    public void ShapiroWilk_ThreeValuesHandComputed_ExactWAndP(double[] x, double w, double p)
    {
        var r = ShapiroWilk.Test(x);
        Assert.Equal(w, r.W.Value, 12);
        Assert.Equal(p, r.P.Value, 7);
    }

    // Hand derivation for n = 3: P(W <= w) = (6/π)(asin √w - π/3); at (0, 1, 3):
    // a = ±√½, b = 3/√2, SS = 14/3, W = 4.5 / (14/3) = 27/28.
    [Fact]
    public void ShapiroWilk_ThreeValues_ExactNullDistribution()
    {
        var r = ShapiroWilk.Test([0.0, 1.0, 3.0]);
        Assert.Equal(27.0 / 28.0, r.W.Value, 12);
        Assert.Equal(6.0 / Math.PI * (Math.Asin(Math.Sqrt(27.0 / 28.0)) - (Math.PI / 3.0)), r.P.Value, 12);
    }

    // Property of Royston's construction: sum over all n coefficients of a_i² = 1.
    [Theory]
    [InlineData(4)]
    [InlineData(5)]
    [InlineData(6)]
    [InlineData(11)]
    [InlineData(12)]
    [InlineData(101)]
    [InlineData(5000)]
    public void ShapiroWilk_Coefficients_HaveUnitNorm(int n)
    {
        var a = ShapiroWilk.Coefficients(n);
        Assert.Equal(n / 2, a.Length);
        Assert.Equal(1.0, 2 * a.Sum(v => v * v), 12);
        for (var i = 1; i < a.Length; i++)
        {
            Assert.True(a[i] < a[i - 1], "coefficients decrease towards the middle");
        }
    }

    [Theory]
    [InlineData(-1000.0, 1.0)]
    [InlineData(1e6, 1.0)]
    [InlineData(0.0, 1e-6)]
    [InlineData(3.5, 250.0)]
    [InlineData(0.0, -2.0)]
    [InlineData(0.0, 1e300)]
    [InlineData(0.0, 1e-300)]
    public void ShapiroWilk_ShiftAndScale_WAndPUnchanged(double shift, double scale)
    {
        var x = RoystonData();
        var r0 = ShapiroWilk.Test(x);
        var r1 = ShapiroWilk.Test(x.Select(v => shift + (scale * v)).ToArray());
        Assert.Equal(r0.W.Value, r1.W.Value, 9);
        Assert.Equal(r0.P.Value, r1.P.Value, 8);
    }

    [Property(MaxTest = 200)]
    public Property ShapiroWilk_RandomSamples_InvariantUnderShiftScaleAndOrder(int[] raw, int shift, PositiveInt scale)
    {
        var x = raw.Select(v => (double)v).ToArray();
        var applicable = x.Length >= 3 && x.Distinct().Count() > 1;
        return Prop.When(applicable, () =>
        {
            var r0 = ShapiroWilk.Test(x);
            var moved = x.Reverse().Select(v => shift + (scale.Get * v)).ToArray();
            var r1 = ShapiroWilk.Test(moved);
            return r0.W.IsDefined && r0.P.IsDefined && r0.W.Value is > 0 and <= 1 &&
                   Math.Abs(r0.W.Value - r1.W.Value) < 1e-9 && Math.Abs(r0.P.Value - r1.P.Value) < 1e-8;
        });
    }

    [Fact]
    public void ShapiroWilk_TwoValues_Undefined()
    {
        var r = ShapiroWilk.Test([1.0, 2.0]);
        Assert.False(r.W.IsDefined);
        Assert.False(r.P.IsDefined);
        Assert.Contains("at least 3", r.W.Reason, StringComparison.Ordinal);
    }

    [Fact]
    public void ShapiroWilk_AllEqual_UndefinedZeroRange()
    {
        var r = ShapiroWilk.Test([4.2, 4.2, 4.2, 4.2]);
        Assert.False(r.W.IsDefined);
        Assert.Contains("zero range", r.W.Reason, StringComparison.Ordinal);
    }

    [Fact]
    public void ShapiroWilk_MoreThan5000_NotComputedWithReason()
    {
        var x = Enumerable.Range(0, 5001).Select(i => Math.Sin(i)).ToArray();
        var r = ShapiroWilk.Test(x);
        Assert.False(r.W.IsDefined);
        Assert.False(r.P.IsDefined);
        Assert.Contains("5000", r.P.Reason, StringComparison.Ordinal);
    }

    // Common practice: expected normal scores are as normal as a sample can be, so W is near 1 and
    // the test does not reject, at both ends of the domain of the n >= 12 transformation.
    [Theory]
    [InlineData(12)]
    [InlineData(50)]
    [InlineData(5000)]
    public void ShapiroWilk_NormalScores_DoesNotReject(int n)
    {
        var x = Enumerable.Range(1, n).Select(i => Normal.InvCDF(0, 1, (i - 0.375) / (n + 0.25))).ToArray();
        var r = ShapiroWilk.Test(x);
        Assert.True(r.W.Value > 0.98, $"W = {r.W}");
        Assert.True(r.P.Value > 0.5, $"p = {r.P}");
    }

    // Common practice: a strongly skewed sample (exponential scores) is rejected at n = 200.
    [Fact]
    public void ShapiroWilk_ExponentialScores_Rejects()
    {
        const int n = 200;
        var x = Enumerable.Range(1, n).Select(i => -Math.Log(1 - ((i - 0.5) / n))).ToArray();
        var r = ShapiroWilk.Test(x);
        Assert.True(r.P.Value < 1e-6, $"p = {r.P}");
    }

    // Monte Carlo (seeded, common practice): under normality the p-value is close to uniform, so the
    // rejection rate at 5 % is near 0.05 in both branches of the normalising transformation
    // (4000 replicates: binomial sd 0.0034; accepted range 0.035-0.065).
    [Theory]
    [InlineData(5, 11)]
    [InlineData(10, 12)]
    [InlineData(25, 13)]
    [InlineData(200, 14)]
    public void ShapiroWilk_NormalSamplesSeeded_RejectionRateNearNominal(int n, int seed)
    {
        const int reps = 4000;
        var random = new Random(seed);
        var rejected = 0;
        var x = new double[n];
        for (var r = 0; r < reps; r++)
        {
            Normal.Samples(random, x, 0, 1);
            if (ShapiroWilk.Test(x).P.Value < 0.05)
            {
                rejected++;
            }
        }

        Assert.InRange(rejected / (double)reps, 0.035, 0.065);
    }
}
