using MathNet.Numerics;
using MathNet.Numerics.Distributions;
using StudyPress.Statistics.Distributions;
using StudyPress.Statistics.Tests.Support;

namespace StudyPress.Statistics.Tests.Distributions;

public class NoncentralFTests
{
    [Theory]
    [InlineData(1.0, 3.0, 20.0)]
    [InlineData(0.05, 1.0, 5.0)]
    [InlineData(4.5, 2.0, 2.0)]
    [InlineData(2.3, 9.0, 90.0)]
    [InlineData(0.7, 2.5, 7.5)]
    public void Cdf_LambdaZero_EqualsCentralF(double f, double d1, double d2)
    {
        // Definition: lambda = 0 is the central F (MathNet FisherSnedecor), to 1e-12.
        var central = FisherSnedecor.CDF(d1, d2, f);
        Assert.Equal(central, NoncentralF.Cdf(f, d1, d2, 0), 1e-12);
        Assert.Equal(1 - central, NoncentralF.Upper(f, d1, d2, 0), 1e-12);

        // The series path is continuous at lambda -> 0.
        Assert.Equal(central, NoncentralF.Cdf(f, d1, d2, 1e-9), 1e-9);
        Assert.Equal(1 - central, NoncentralF.Upper(f, d1, d2, 1e-9), 1e-9);
    }

    [Theory]
    [InlineData(2.0, 10.0, 3.0)]
    [InlineData(0.3, 5.0, 8.0)]
    [InlineData(9.0, 30.0, 0.5)]
    [InlineData(25.0, 12.0, 20.0)]
    public void Cdf_D1IsOne_EqualsSquaredNoncentralT(double f, double d2, double lambda)
    {
        // Exact identity (common practice): F'(1, d2, lambda) = T'^2 with T' = (Z + delta)/S,
        // delta = sqrt(lambda), S = chi(d2)/sqrt(d2). So P(F' <= f) = E_S[Phi(sqrt(f) S - delta) -
        // Phi(-sqrt(f) S - delta)], integrated here independently by double-exponential quadrature.
        var delta = Math.Sqrt(lambda);
        var r = Math.Sqrt(f);
        var h = d2 / 2;
        var lnC = Math.Log(2) + (h * Math.Log(h)) - SpecialFunctions.GammaLn(h);
        double Integrand(double s) =>
            s <= 0 ? 0 : Math.Exp(lnC + ((d2 - 1) * Math.Log(s)) - (h * s * s))
                * (Normal.CDF(0, 1, (r * s) - delta) - Normal.CDF(0, 1, (-r * s) - delta));
        var expected = Integrate.DoubleExponential(Integrand, 0, 12);
        Accuracy.AssertLre(NoncentralF.Cdf(f, 1, d2, lambda), expected, 9, $"P(F'(1,{d2},{lambda}) <= {f})");
    }

    [Theory]
    [InlineData(0.5, 2.0)]
    [InlineData(4.0, 9.0)]
    [InlineData(30.0, 10.0)]
    public void Cdf_D1IsOneAndLargeD2_ApproachesNoncentralChiSquare(double x, double lambda)
    {
        // Limit d2 -> infinity: d1 F' -> chi'^2(1, lambda) = (Z + sqrt(lambda))^2, whose CDF is
        // Phi(sqrt(x) - sqrt(lambda)) - Phi(-sqrt(x) - sqrt(lambda)). The gap is O(1/d2).
        var limit = Normal.CDF(0, 1, Math.Sqrt(x) - Math.Sqrt(lambda)) - Normal.CDF(0, 1, -Math.Sqrt(x) - Math.Sqrt(lambda));
        var cdf = NoncentralF.Cdf(x, 1, 1e6, lambda);
        Assert.True(Math.Abs(cdf - limit) < 1e-4 * Math.Max(limit, 1e-3), $"{cdf} vs {limit}");
    }

    [Theory]
    [InlineData(3.0, 20.0, 5.0)]
    [InlineData(4.0, 12.0, 40.0)]
    [InlineData(1.0, 9.0, 0.5)]
    [InlineData(2.0, 60.0, 300.0)]
    public void Upper_IntegratesToTheMean(double d1, double d2, double lambda)
    {
        // E[F'] = d2 (d1 + lambda) / (d1 (d2 - 2)) for d2 > 2 (common practice; moments of the
        // noncentral F), and E[F'] = integral of P(F' > f) over f > 0. Substituting f = t/(1 - t).
        var mean = d2 * (d1 + lambda) / (d1 * (d2 - 2));
        double G(double t) => t >= 1 ? 0 : NoncentralF.Upper(t / (1 - t), d1, d2, lambda) / ((1 - t) * (1 - t));
        var integral = Integrate.DoubleExponential(G, 0, 1);
        Accuracy.AssertLre(integral, mean, 7, $"mean of F'({d1},{d2},{lambda})");
    }

    [Theory]
    [InlineData(1.5, 1.0, 10.0, 200.0)]
    [InlineData(0.5, 4.0, 50.0, 1000.0)]
    [InlineData(20.0, 4.0, 50.0, 1000.0)]
    [InlineData(2.5, 3.0, 20.0, 5.0)]
    [InlineData(130.0, 5.0, 5.0, 10000.0)]
    [InlineData(1.0, 2.5, 7.5, 0.3)]
    public void Cdf_PlusUpper_IsOne_AndBothAreInRange(double f, double d1, double d2, double lambda)
    {
        var c = NoncentralF.Cdf(f, d1, d2, lambda);
        var u = NoncentralF.Upper(f, d1, d2, lambda);
        Assert.InRange(c, 0, 1);
        Assert.InRange(u, 0, 1);
        Assert.Equal(1.0, c + u, 12);
    }

    [Fact]
    public void Cdf_LargeLambdaLowerTail_KeepsRelativeAccuracy()
    {
        // Tiny lower tails far below the Poisson mode stay positive and ordered (common practice).
        var a = NoncentralF.Cdf(0.5, 4, 50, 1000);
        var b = NoncentralF.Cdf(3, 4, 50, 1000);
        Assert.InRange(a, 1e-250, 1e-150);
        Assert.InRange(b, a * 1e10, 1e-100);
    }

    [Fact]
    public void Cdf_DecreasesInLambda()
    {
        var previous = 1.0;
        foreach (var lambda in new[] { 0.0, 0.5, 1, 2, 5, 10, 20, 50, 100 })
        {
            var c = NoncentralF.Cdf(3.0, 3, 24, lambda);
            Assert.True(c < previous, $"lambda {lambda}");
            previous = c;
        }
    }

    [Theory]
    [InlineData(5.0, 3.0, 36.0, 0.975)]
    [InlineData(5.0, 3.0, 36.0, 0.025)]
    [InlineData(12.0, 1.0, 100.0, 0.995)]
    [InlineData(2.1, 6.0, 14.0, 0.3)]
    public void SolveNoncentrality_RoundTrip_RecoversTarget(double f, double d1, double d2, double target)
    {
        var lambda = NoncentralF.SolveNoncentrality(f, d1, d2, target);
        Assert.True(lambda > 0);
        var back = target > 0.5 ? 1 - NoncentralF.Upper(f, d1, d2, lambda) : NoncentralF.Cdf(f, d1, d2, lambda);
        Assert.Equal(target, back, 9);
    }

    [Fact]
    public void SolveNoncentrality_TargetNotReachable_ReturnsZero()
    {
        // P(F <= 0.5; 3, 20) is about 0.31 < 0.975: no lambda >= 0 reaches 0.975.
        Assert.Equal(0.0, NoncentralF.SolveNoncentrality(0.5, 3, 20, 0.975));
    }

    [Fact]
    public void Arguments_OutOfDomain_Throw()
    {
        Assert.Throws<ArgumentOutOfRangeException>(() => NoncentralF.Cdf(1, 0, 10, 1));
        Assert.Throws<ArgumentOutOfRangeException>(() => NoncentralF.Cdf(1, 3, 10, -1));
        Assert.Throws<ArgumentOutOfRangeException>(() => NoncentralF.SolveNoncentrality(1, 3, 10, 1));
        Assert.Equal(0.0, NoncentralF.Cdf(0, 3, 10, 2));
        Assert.Equal(1.0, NoncentralF.Upper(-1, 3, 10, 2));
    }
}
