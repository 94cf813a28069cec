using StudyPress.Statistics.Distributions;
using StudyPress.Statistics.PostHoc;
using StudyPress.Statistics.Tests.Support;

namespace StudyPress.Statistics.Tests.Distributions;

/// <summary>
/// The Genz–Bretz quasi-Monte Carlo multivariate t (<see cref="MultivariateT"/>) against values
/// computed independently: the exact product-correlation (Dunnett) integral, and bivariate and
/// trivariate rectangle probabilities by nested Gauss–Legendre quadrature (exact hand computation
/// to about 1e-9, <see cref="NestedQuadrature"/>). The stated accuracy is an absolute error of at
/// most 2e-5 and within the returned error estimate.
/// </summary>
public class MultivariateTTests
{
    private const double Stated = 2e-5;

    private static double[,] Product(double[] lambda)
    {
        var m = lambda.Length;
        var r = new double[m, m];
        for (var i = 0; i < m; i++)
        {
            for (var j = 0; j < m; j++)
            {
                r[i, j] = i == j ? 1 : lambda[i] * lambda[j];
            }
        }

        return r;
    }

    private static void AssertClose(double expected, MultivariateTProbability actual, string what)
    {
        var diff = Math.Abs(expected - actual.Value);
        Assert.True(diff <= Stated, $"{what}: {actual.Value:R} vs {expected:R} (|diff| {diff:E2} > {Stated:E0})");
        Assert.True(diff <= Math.Max(actual.Error, 1e-7) * 2, $"{what}: |diff| {diff:E2} beyond twice the error estimate {actual.Error:E2}");
    }

    // Product correlation ρ_ij = λ_i λ_j (unequal group sizes in Dunnett's test): the exact
    // one-dimensional integral of PostHoc/Dunnett.cs, two-sided and one-sided.
    [Theory]
    [InlineData(14.0, 2.5)]
    [InlineData(5.0, 2.0)]
    [InlineData(40.0, 3.1)]
    [InlineData(double.PositiveInfinity, 2.4)]
    public void ProductCorrelation_ReproducesExactDunnett(double df, double c)
    {
        double[] lambda = [0.5, 0.6, 0.7, 0.75];
        var mvt = new MultivariateT(Product(lambda), df);
        var two = mvt.Rectangle([-c, -c, -c, -c], [c, c, c, c]);
        AssertClose(1 - Dunnett.UpperProbability(c, lambda, df), two, "two-sided");
        var inf = double.NegativeInfinity;
        var one = mvt.Rectangle([inf, inf, inf, inf], [c, c, c, c]);
        AssertClose(1 - Dunnett.UpperProbabilityOneSided(c, lambda, df), one, "one-sided");
    }

    // Equal correlations 0.5 (equal group sizes): λ = √0.5, the classical Dunnett case.
    [Fact]
    public void Equicorrelated_ReproducesExactDunnett()
    {
        var l = Math.Sqrt(0.5);
        double[] lambda = [l, l, l];
        var mvt = new MultivariateT(Product(lambda), 20);
        const double c = 2.19;
        AssertClose(1 - Dunnett.UpperProbability(c, lambda, 20), mvt.Rectangle([-c, -c, -c], [c, c, c]), "equicorrelated");
    }

    // Bivariate t, general rectangles and negative correlation (not of product form): nested quadrature.
    [Theory]
    [InlineData(-0.4, 5.0, -1.0, 2.0, -0.5, 1.5)]
    [InlineData(0.7, 10.0, -2.0, 2.0, -2.0, 2.0)]
    [InlineData(-0.8, 3.0, double.NegativeInfinity, 1.0, double.NegativeInfinity, 0.5)]
    public void Bivariate_MatchesNestedQuadrature(double rho, double df, double a1, double b1, double a2, double b2)
    {
        var r = new double[,] { { 1, rho }, { rho, 1 } };
        var expected = NestedQuadrature.T(r, df, [a1, a2], [b1, b2]);
        AssertClose(expected, new MultivariateT(r, df).Rectangle([a1, a2], [b1, b2]), "bivariate");
    }

    // Trivariate t with a general correlation matrix (mixed signs): nested quadrature.
    [Fact]
    public void Trivariate_MatchesNestedQuadrature()
    {
        var r = new double[,] { { 1, 0.3, -0.2 }, { 0.3, 1, 0.5 }, { -0.2, 0.5, 1 } };
        double[] a = [-2.1, -1.5, double.NegativeInfinity];
        double[] b = [2.1, 1.8, 1.2];
        var expected = NestedQuadrature.T(r, 8, a, b);
        AssertClose(expected, new MultivariateT(r, 8).Rectangle(a, b), "trivariate");
    }

    [Fact]
    public void FixedSeed_SameBitsEveryTime_AndOneDimensionIsTheExactT()
    {
        var r = new double[,] { { 1, 0.3, -0.2 }, { 0.3, 1, 0.5 }, { -0.2, 0.5, 1 } };
        var first = new MultivariateT(r, 8).Rectangle([-2, -2, -2], [2, 2, 2]);
        var second = new MultivariateT(r, 8).Rectangle([-2, -2, -2], [2, 2, 2]);
        Assert.Equal(first, second);
        var one = new MultivariateT(new double[,] { { 1 } }, 7).Rectangle([-2.0], [2.0]);
        Assert.Equal(1 - Probability.TTwoSided(2.0, 7), one.Value, 15);
        Assert.Equal(0, one.Error);
    }

    // Regression (issue #16): the lattice's generators came from a table of 46 primes, so more than
    // 46 coordinates (a t with 47 variables: 48 levels compared with a control) threw. The primes are
    // now computed: the first 46 are the old table (same generators, same bits below 47 coordinates),
    // and the count goes on (the 1000th prime is 7919, from memory of the standard table).
    [Fact]
    public void Primes_AreComputedForAnyDimension_AndStartWithTheOldTable()
    {
        int[] table = [2, 3, 5, 7, 11, 13, 17, 19, 23, 29, 31, 37, 41, 43, 47, 53, 59, 61, 67, 71, 73, 79, 83, 89, 97, 101, 103, 107, 109, 113, 127, 131, 137, 139, 149, 151, 157, 163, 167, 173, 179, 181, 191, 193, 197, 199];
        Assert.Equal(table, MultivariateT.Primes(46));
        var many = MultivariateT.Primes(1000);
        Assert.Equal(1000, many.Length);
        Assert.Equal(7919, many[^1]);
        foreach (var count in new[] { 1, 2, 5, 6, 7, 100 })
        {
            Assert.Equal(count, MultivariateT.Primes(count).Length);
        }
    }

    // Regression (issue #16): 59 variables (60 levels against a control) used to throw. With equal
    // correlations 0.5 the exact Dunnett integral is known; the rule, stopped by the work limit,
    // must stay within its own error estimate of it, and its cost stays bounded (the points used).
    [Theory]
    [InlineData(47, 20.0, 3.3)]
    [InlineData(59, double.PositiveInfinity, 3.4)]
    public void ManyVariables_Integrate_WithinTheErrorEstimate_AndTheWorkLimit(int m, double df, double c)
    {
        var lambda = Enumerable.Repeat(Math.Sqrt(0.5), m).ToArray();
        var result = new MultivariateT(Product(lambda), df).Rectangle(Enumerable.Repeat(-c, m).ToArray(), Enumerable.Repeat(c, m).ToArray());
        var exact = 1 - Dunnett.UpperProbability(c, lambda, df);
        Assert.InRange(result.Points, 1, MultivariateT.WorkLimit / (MultivariateT.Shifts * m));
        Assert.True(Math.Abs(exact - result.Value) <= 2 * result.Error, $"{result.Value:R} vs exact {exact:R}, error estimate {result.Error:E2}");
        Assert.True(result.Error < 2e-3, $"error estimate {result.Error:E2}");
    }

    [Fact]
    public void Domain_RefusesWhatIsNotACorrelationMatrix()
    {
        Assert.Throws<ArgumentException>(() => new MultivariateT(new double[,] { { 1, 1 }, { 1, 1 } }, 5));
        Assert.Throws<ArgumentException>(() => new MultivariateT(new double[,] { { 2, 0 }, { 0, 1 } }, 5));
        Assert.Throws<ArgumentException>(() => new MultivariateT(new double[,] { { 1, 0.2 }, { 0.3, 1 } }, 5));
        Assert.Throws<ArgumentOutOfRangeException>(() => new MultivariateT(new double[,] { { 1 } }, 0.5));
    }
}
