using MathNet.Numerics.Distributions;

namespace StudyPress.Statistics.Tests.Distributions;

/// <summary>
/// The F density, in particular with a large denominator df, where the textbook product form
/// (d2 raised to the power d2) overflows and gives ∞/∞.
/// </summary>
public class FDensityTests
{
    /// <summary>
    /// Exact hand computation: with d1 = 2 the density reduces to (1 + 2f/d2)^−(d2/2 + 1),
    /// because B(1, d2/2) = 2/d2 cancels the factor (2/d2).
    /// </summary>
    [Theory]
    [InlineData(12.0, 0.5)]
    [InlineData(12.0, 3.89)]
    [InlineData(3972.0, 0.5)]
    [InlineData(3972.0, 3.0)]
    [InlineData(1_000_000.0, 2.5)]
    public void TwoNumeratorDf_MatchesClosedForm(double d2, double f)
    {
        // For tiny r = 2f/d2, 1 + r itself rounds by up to 1e-16/r relatively, so the reference takes
        // ln(1 + r) from its alternating series (five terms: error below r⁶/6).
        double r = 2 * f / d2;
        double exact = r < 1e-3
            ? Math.Exp(-((d2 / 2) + 1) * (r - (r * r / 2) + (r * r * r / 3) - (r * r * r * r / 4) + (r * r * r * r * r / 5)))
            : Math.Pow(1 + r, -((d2 / 2) + 1));
        Assert.Equal(exact, Probability.FDensity(f, 2, d2), exact * 1e-12);
    }

    /// <summary>
    /// Exact hand computation: with d1 = 4, B(2, b) = 1/(b(b + 1)) with b = d2/2, so the density is
    /// (4/d2)² f (1 + 4f/d2)^−(d2/2 + 2) b(b + 1).
    /// </summary>
    [Theory]
    [InlineData(20.0, 1.3)]
    [InlineData(3972.0, 1.3)]
    public void FourNumeratorDf_MatchesClosedForm(double d2, double f)
    {
        double b = d2 / 2;
        double exact = (16 / (d2 * d2)) * f * Math.Pow(1 + (4 * f / d2), -(b + 2)) * b * (b + 1);
        Assert.Equal(exact, Probability.FDensity(f, 4, d2), exact * 1e-11);
    }

    /// <summary>
    /// Exact identity: if T has Student's t distribution with ν df, T² is F(1, ν), so the F(1, ν)
    /// density at f is the t density at √f divided by √f (t density from MathNet.Numerics, at
    /// moderate ν where its product form is exact to rounding).
    /// </summary>
    [Theory]
    [InlineData(5.0, 0.7)]
    [InlineData(30.0, 4.2)]
    public void OneNumeratorDf_IsSquaredT(double nu, double f)
    {
        double viaT = StudentT.PDF(0, 1, nu, Math.Sqrt(f)) / Math.Sqrt(f);
        Assert.Equal(viaT, Probability.FDensity(f, 1, nu), viaT * 1e-12);
    }

    /// <summary>
    /// A density integrates to one (Simpson's rule after the substitution f = u², which makes the
    /// integrand smooth at 0; the tail beyond f = 40 is below 1e-20 for these df; common practice).
    /// </summary>
    [Theory]
    [InlineData(3.0, 3972.0)]
    [InlineData(5.0, 250_000.0)]
    public void LargeDenominatorDf_IntegratesToOne(double d1, double d2)
    {
        const int Steps = 20_000;
        double upper = Math.Sqrt(40), h = upper / Steps, sum = 0;
        for (int k = 0; k <= Steps; k++)
        {
            double u = k * h;
            double v = 2 * u * Probability.FDensity(u * u, d1, d2);
            Assert.True(double.IsFinite(v));
            sum += (k == 0 || k == Steps ? 1 : k % 2 == 1 ? 4 : 2) * v;
        }

        Assert.Equal(1.0, sum * h / 3, 1e-10);
    }

    [Fact]
    public void AtZero_FollowsTheNumeratorDf()
    {
        Assert.Equal(double.PositiveInfinity, Probability.FDensity(0, 1, 10));
        Assert.Equal(1.0, Probability.FDensity(0, 2, 10));
        Assert.Equal(0.0, Probability.FDensity(0, 3, 10));
        Assert.Equal(0.0, Probability.FDensity(-1, 3, 10));
    }
}
