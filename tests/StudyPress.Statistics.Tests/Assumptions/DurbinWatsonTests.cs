using System.Globalization;
using MathNet.Numerics;
using StudyPress.Statistics.Assumptions;

namespace StudyPress.Statistics.Tests.Assumptions;

public class DurbinWatsonTests
{
    private const string Folder = "durbin-watson";

    /// <summary>Rows (alpha, n, k, dL, dU) of a Savin-White table where the bounds are printed.</summary>
    public static TheoryData<double, int, int, double, double> Table(string file, int maxN)
    {
        var data = new TheoryData<double, int, int, double, double>();
        foreach (var r in AssumptionsData.Rows(Folder, file))
        {
            if (r[3].Length == 0 || r[4].Length == 0)
            {
                continue;
            }

            var n = int.Parse(r[1], CultureInfo.InvariantCulture);
            if (n <= maxN)
            {
                data.Add(
                    AssumptionsData.Number(r[0]),
                    n,
                    int.Parse(r[2], CultureInfo.InvariantCulture),
                    AssumptionsData.Number(r[3]),
                    AssumptionsData.Number(r[4]));
            }
        }

        return data;
    }

    public static TheoryData<double, int, int, double, double> OnePercent() => Table("savin-white1977-alpha0.01.csv", 200);

    public static TheoryData<double, int, int, double, double> FivePercent() => Table("savin-white1977-alpha0.05-k1.csv", 200);

    /// <summary>Intercept plus k powers of a centred, scaled time trend (a smooth design).</summary>
    internal static double[,] PolynomialDesign(int n, int k)
    {
        var x = new double[n, k + 1];
        for (var t = 0; t < n; t++)
        {
            var s = ((2.0 * t) - (n - 1)) / (n - 1);
            x[t, 0] = 1;
            for (var j = 1; j <= k; j++)
            {
                x[t, j] = Math.Pow(s, j);
            }
        }

        return x;
    }

    /// <summary>
    /// Intercept plus k cosine regressors cos(π f (t + ½) / n), which are eigenvectors of the
    /// difference matrix A; high frequencies f = n-1, n-2, ... give the lower bounding
    /// distribution d_L of Durbin and Watson (1950), low frequencies f = 1, 2, ... the upper d_U.
    /// </summary>
    internal static double[,] CosineDesign(int n, int k, bool high)
    {
        var x = new double[n, k + 1];
        for (var t = 0; t < n; t++)
        {
            x[t, 0] = 1;
            for (var j = 1; j <= k; j++)
            {
                var f = high ? n - j : j;
                x[t, j] = Math.Cos(Math.PI * f * (t + 0.5) / n);
            }
        }

        return x;
    }

    // Source: Savin and White (1977), Econometrica 45, 1989-1996, 1 % table (k = 1-5 regressors besides
    // the intercept): the exact 1 % point of d for any such design lies in [dL, dU]; 3 decimals, ±0.001.
    [Theory]
    [MemberData(nameof(OnePercent))]
    public void DurbinWatson_SavinWhite1Percent_QuantilesWithinBounds(double alpha, int n, int k, double dL, double dU)
    {
        AssertWithinBounds(alpha, n, k, dL, dU);
    }

    // Source: Savin and White (1977) 5 % table, k = 1 (n >= 15 also Durbin and Watson 1951).
    [Theory]
    [MemberData(nameof(FivePercent))]
    public void DurbinWatson_SavinWhite5Percent_QuantilesWithinBounds(double alpha, int n, int k, double dL, double dU)
    {
        AssertWithinBounds(alpha, n, k, dL, dU);
    }

    private static void AssertWithinBounds(double alpha, int n, int k, double dL, double dU)
    {
        // The brief's tolerance for a design in between the bounds: 3 printed decimals, ±0.001.
        const double tol = 0.001;
        var trend = DurbinWatson.NullDistribution(PolynomialDesign(n, k), DurbinWatsonMethod.Exact).Quantile(alpha);
        Assert.True(
            trend >= dL - tol && trend <= dU + tol,
            string.Create(CultureInfo.InvariantCulture, $"n={n} k={k} polynomial trend: d_alpha = {trend:F5} outside [{dL}, {dU}]"));

        // The cosine designs attain the bounding distributions exactly, so their quantiles are the exact
        // dL and dU; the table's own error is up to 1.1e-3 (reference README, Durbin-Watson tolerances).
        const double tableError = 0.0011;
        var upper = DurbinWatson.NullDistribution(CosineDesign(n, k, high: false), DurbinWatsonMethod.Exact).Quantile(alpha);
        var lower = DurbinWatson.NullDistribution(CosineDesign(n, k, high: true), DurbinWatsonMethod.Exact).Quantile(alpha);
        Assert.True(
            Math.Abs(lower - dL) <= tableError,
            string.Create(CultureInfo.InvariantCulture, $"n={n} k={k}: exact lower bound {lower:F5}, tabled dL {dL}"));
        Assert.True(
            Math.Abs(upper - dU) <= tableError,
            string.Create(CultureInfo.InvariantCulture, $"n={n} k={k}: exact upper bound {upper:F5}, tabled dU {dU}"));
    }

    // Source: Savin and White (1977) 1 % and 5 % tables at the largest tabled n, where the automatic
    // method would still be exact: the beta approximation (Durbin and Watson 1971) must also fall within
    // the bounds for the trend design.
    [Theory]
    [InlineData(0.01, 150, 1)]
    [InlineData(0.01, 200, 1)]
    [InlineData(0.01, 200, 5)]
    [InlineData(0.05, 150, 1)]
    [InlineData(0.05, 200, 1)]
    public void DurbinWatson_BetaApproximationLargeN_QuantileWithinSavinWhiteBounds(double alpha, int n, int k)
    {
        var file = alpha == 0.01 ? "savin-white1977-alpha0.01.csv" : "savin-white1977-alpha0.05-k1.csv";
        var row = AssumptionsData.Rows(Folder, file)
            .Single(r => r[1] == n.ToString(CultureInfo.InvariantCulture) && r[2] == k.ToString(CultureInfo.InvariantCulture));
        var dL = AssumptionsData.Number(row[3]);
        var dU = AssumptionsData.Number(row[4]);
        var q = DurbinWatson.NullDistribution(PolynomialDesign(n, k), DurbinWatsonMethod.BetaApproximation).Quantile(alpha);
        Assert.InRange(q, dL - 0.001, dU + 0.001);
    }

    // Hand computation: e = (1, -1, 2, 0, -2) (residuals of y = 3, 1, 4, 2, 0 about their mean 2):
    // differences -2, 3, -2, -2, so d = (4 + 9 + 4 + 4) / (1 + 1 + 4 + 0 + 4) = 21 / 10.
    [Fact]
    public void DurbinWatson_HandExample_Statistic()
    {
        Assert.Equal(2.1, DurbinWatson.Statistic([1.0, -1.0, 2.0, 0.0, -2.0]).Value, 14);
        var r = DurbinWatson.Test([1.0, -1.0, 2.0, 0.0, -2.0], Intercept(5));
        Assert.Equal(2.1, r.Statistic.Value, 14);
        Assert.True(r.P.IsDefined);
        Assert.Equal(1.0, r.P.Value + r.PNegative.Value, 12);
        Assert.Equal(Math.Min(1, 2 * Math.Min(r.P.Value, r.PNegative.Value)), r.PTwoSided.Value, 15);
        Assert.StartsWith("exact", r.Method, StringComparison.Ordinal);
    }

    [Fact]
    public void DurbinWatson_StatisticScaleInvariant()
    {
        double[] e = [1.0, -1.0, 2.0, 0.0, -2.0];
        Assert.Equal(2.1, DurbinWatson.Statistic(e.Select(v => v * 1e-200).ToArray()).Value, 14);
        Assert.Equal(2.1, DurbinWatson.Statistic(e.Select(v => v * 1e200).ToArray()).Value, 14);
    }

    // Hand derivation: for the intercept-only model the ν_i are the nonzero eigenvalues of A,
    // 2 (1 - cos(π j / n)), j = 1 .. n - 1 (Durbin and Watson 1950).
    [Theory]
    [InlineData(4)]
    [InlineData(17)]
    [InlineData(60)]
    public void DurbinWatson_InterceptOnly_EigenvaluesClosedForm(int n)
    {
        var nu = DurbinWatson.NullDistribution(Intercept(n), DurbinWatsonMethod.Exact).Eigenvalues;
        Assert.Equal(n - 1, nu.Count);
        for (var j = 1; j < n; j++)
        {
            Assert.Equal(2 * (1 - Math.Cos(Math.PI * j / n)), nu[j - 1], 12);
        }
    }

    // Hand derivation: n = 3, intercept only, ν = (1, 3): d = (z1² + 3 z2²) / (z1² + z2²), so
    // P(d <= x) = P(|z2 / z1| <= √((x - 1) / (3 - x))) = (2/π) atan √((x - 1) / (3 - x)) (Cauchy ratio).
    [Theory]
    [InlineData(1.001)]
    [InlineData(1.2)]
    [InlineData(2.0)]
    [InlineData(2.7)]
    [InlineData(2.9999)]
    public void DurbinWatson_ThreeObservations_ExactCdfClosedForm(double x)
    {
        var dist = DurbinWatson.NullDistribution(Intercept(3), DurbinWatsonMethod.Exact);
        var expected = 2 / Math.PI * Math.Atan(Math.Sqrt((x - 1) / (3 - x)));
        Assert.Equal(expected, dist.Lower(x), 11);
        Assert.Equal(1 - expected, dist.Upper(x), 11);
    }

    // Hand derivation: with a weights equal to 1 and b equal to 0, the ratio is χ²_a / (χ²_a + χ²_b),
    // which is Beta(a/2, b/2); this checks the Imhof integration on many weights and both tails.
    [Theory]
    [InlineData(1, 1, 0.3)]
    [InlineData(2, 5, 0.05)]
    [InlineData(3, 40, 0.02)]
    [InlineData(10, 10, 0.5)]
    [InlineData(150, 140, 0.45)]
    [InlineData(150, 140, 0.6)]
    public void DurbinWatson_ImhofTwoPointWeights_MatchesBeta(int a, int b, double x)
    {
        var nu = Enumerable.Repeat(1.0, a).Concat(Enumerable.Repeat(0.0, b)).ToArray();
        var dist = DurbinWatsonNullDistribution.FromEigenvalues(nu);
        Assert.Equal(SpecialFunctions.BetaRegularized(a / 2.0, b / 2.0, x), dist.Lower(x), 11);
        Assert.Equal(SpecialFunctions.BetaRegularized(b / 2.0, a / 2.0, 1 - x), dist.Upper(x), 11);
    }

    // The trace formulas of the beta approximation give the exact moments: they must agree with the
    // moments from the eigenvalues.
    [Theory]
    [InlineData(20, 1)]
    [InlineData(57, 3)]
    [InlineData(120, 5)]
    public void DurbinWatson_TraceMoments_AgreeWithEigenvalueMoments(int n, int k)
    {
        var x = PolynomialDesign(n, k);
        var exact = DurbinWatson.NullDistribution(x, DurbinWatsonMethod.Exact);
        var beta = DurbinWatson.NullDistribution(x, DurbinWatsonMethod.BetaApproximation);
        Assert.Equal(exact.Mean, beta.Mean, 11);
        Assert.Equal(exact.Variance, beta.Variance, 12);
    }

    // Common practice: near n = 300 the beta approximation and the exact distribution agree closely.
    [Fact]
    public void DurbinWatson_AutomaticMethod_SwitchesToBetaAbove300AndAgreesNearTheSwitch()
    {
        var x300 = PolynomialDesign(300, 2);
        var exact = DurbinWatson.NullDistribution(x300);
        var beta = DurbinWatson.NullDistribution(x300, DurbinWatsonMethod.BetaApproximation);
        Assert.StartsWith("exact", exact.Method, StringComparison.Ordinal);
        Assert.StartsWith("beta", beta.Method, StringComparison.Ordinal);
        Assert.StartsWith("beta", DurbinWatson.NullDistribution(PolynomialDesign(301, 2)).Method, StringComparison.Ordinal);
        foreach (var d in new[] { 1.6, 1.75, 1.85, 2.0, 2.2 })
        {
            Assert.True(Math.Abs(exact.Lower(d) - beta.Lower(d)) < 2e-3, string.Create(CultureInfo.InvariantCulture, $"d = {d}"));
        }
    }

    // Monte Carlo (seeded, common practice): residuals of least-squares fits to independent normal
    // errors give p-values P(d <= d_obs) close to uniform; rejection rate at 5 % near 0.05.
    [Theory]
    [InlineData(12, 1, 21)]
    [InlineData(40, 3, 22)]
    public void DurbinWatson_IndependentNormalErrorsSeeded_RejectionRateNearNominal(int n, int k, int seed)
    {
        const int reps = 4000;
        var x = MathNet.Numerics.LinearAlgebra.Matrix<double>.Build.DenseOfArray(PolynomialDesign(n, k));
        var qr = x.QR();
        var dist = DurbinWatson.NullDistribution(PolynomialDesign(n, k));
        var random = new Random(seed);
        var y = new double[n];
        int lowRejected = 0, highRejected = 0;
        for (var r = 0; r < reps; r++)
        {
            MathNet.Numerics.Distributions.Normal.Samples(random, y, 0, 1);
            var yv = MathNet.Numerics.LinearAlgebra.Vector<double>.Build.DenseOfArray(y);
            var e = (yv - (x * qr.Solve(yv))).ToArray();
            var d = DurbinWatson.Statistic(e).Value;
            lowRejected += dist.Lower(d) < 0.05 ? 1 : 0;
            highRejected += dist.Upper(d) < 0.05 ? 1 : 0;
        }

        Assert.InRange(lowRejected / (double)reps, 0.035, 0.065);
        Assert.InRange(highRejected / (double)reps, 0.035, 0.065);
    }

    [Fact]
    public void DurbinWatson_FewerThanThreeResiduals_Undefined()
    {
        var r = DurbinWatson.Test([0.5, -0.5], Intercept(2));
        Assert.False(r.Statistic.IsDefined);
        Assert.False(r.P.IsDefined);
    }

    [Fact]
    public void DurbinWatson_AllResidualsZero_Undefined()
    {
        var r = DurbinWatson.Test(new double[6], Intercept(6));
        Assert.False(r.Statistic.IsDefined);
        Assert.Contains("zero", r.Statistic.Reason, StringComparison.Ordinal);
        Assert.False(r.P.IsDefined);
    }

    [Fact]
    public void DurbinWatson_OneResidualDf_PUndefined()
    {
        var r = DurbinWatson.Test([1.0, -2.0, 1.0], PolynomialDesign(3, 1));
        Assert.True(r.Statistic.IsDefined);
        Assert.False(r.P.IsDefined);
        Assert.Contains("degrees of freedom", r.P.Reason, StringComparison.Ordinal);
    }

    [Fact]
    public void DurbinWatson_RankDeficientDesign_PUndefined()
    {
        var x = new double[6, 3];
        for (var t = 0; t < 6; t++)
        {
            x[t, 0] = 1;
            x[t, 1] = t;
            x[t, 2] = 2 * t;
        }

        var r = DurbinWatson.Test([1.0, -1.0, 0.5, 0.5, -1.0, 0.0], x);
        Assert.False(r.P.IsDefined);
        Assert.Contains("rank", r.P.Reason, StringComparison.Ordinal);
    }

    // Common practice: residuals that alternate in sign have d near 4 and a tiny lower-tail p;
    // a slow sine wave has d near 0 and a tiny upper-tail p (p for positive correlation near 0).
    [Fact]
    public void DurbinWatson_SmoothResiduals_PositiveCorrelationDetected()
    {
        const int n = 40;
        var x = Intercept(n);
        var smooth = Enumerable.Range(0, n).Select(t => Math.Cos(Math.PI * (t + 0.5) / n)).ToArray();
        var r = DurbinWatson.Test(smooth, x);
        Assert.True(r.Statistic.Value < 0.1);
        Assert.True(r.P.Value < 1e-10);
        Assert.True(r.PNegative.Value > 0.999);

        var alternating = Enumerable.Range(0, n).Select(t => t % 2 == 0 ? 1.0 : -1.0).ToArray();
        var ra = DurbinWatson.Test(alternating, x);
        Assert.True(ra.Statistic.Value > 3.8);
        Assert.True(ra.P.Value > 0.999);
        Assert.True(ra.PNegative.Value < 1e-10);
    }

    private static double[,] Intercept(int n)
    {
        var x = new double[n, 1];
        for (var t = 0; t < n; t++)
        {
            x[t, 0] = 1;
        }

        return x;
    }

    [Fact]
    public void DurbinWatson_LargeInterceptOnlyDesign_HasTheHandComputedMoments()
    {
        // Intercept only: M A has trace 2(n-1) and M A M A trace 6n-8 (A 1 = 0), so E(d) = 2 and
        // Var(d) = 2 (6n - 8 - 4(n - 1)) / ((n - 1)(n + 1)) = 4 (n - 2) / (n² - 1). Hand computation.
        const int n = 200_001;
        var x = new double[n, 1];
        for (var i = 0; i < n; i++)
        {
            x[i, 0] = 1;
        }

        var dist = DurbinWatson.NullDistribution(x, DurbinWatsonMethod.BetaApproximation);
        Assert.Equal(2.0, dist.Mean, 1e-12);
        Assert.Equal(4.0 * (n - 2) / (((double)n * n) - 1), dist.Variance, 1e-15);
    }

    [Fact]
    public void DurbinWatson_BetaMoments_AgreeAcrossTheStreamingSwitch()
    {
        // Up to 100,000 rows the moments come from a QR factorization, above from cross products;
        // for a smooth design one row more changes them by O(1/n), far less than 1e-3.
        static (double Mean, double Variance) Moments(int n)
        {
            var x = new double[n, 3];
            for (var i = 0; i < n; i++)
            {
                x[i, 0] = 1;
                x[i, 1] = (double)i / n;
                x[i, 2] = i % 3 == 0 ? 1 : 0;
            }

            var d = DurbinWatson.NullDistribution(x, DurbinWatsonMethod.BetaApproximation);
            return (d.Mean, d.Variance);
        }

        var below = Moments(100_000);
        var above = Moments(100_001);
        Assert.Equal(below.Mean, above.Mean, 1e-3 * below.Mean);
        Assert.Equal(1.0, above.Variance / below.Variance, 1e-3);
        Assert.NotEqual(2.0, above.Mean, 1e-9);
    }

    // Exact agreement (integer-valued coding rows make every cross product an exact integer): the
    // structured route (cell rows and counts of consecutive cells) against the dense n x p design,
    // above the 100,000-row switch, for a 3 x 2 effect-coded design in a scrambled run order.
    [Theory]
    [InlineData(150_001)]
    [InlineData(1_000)]
    public void DurbinWatson_CellRows_SameAsDenseDesign(int n)
    {
        double[,] cellRows =
        {
            { 1, 1, 0, 1, 1, 0 }, { 1, 0, 1, 1, 0, 1 }, { 1, -1, -1, 1, -1, -1 },
            { 1, 1, 0, -1, -1, 0 }, { 1, 0, 1, -1, 0, -1 }, { 1, -1, -1, -1, 1, 1 },
        };
        var rng = new Random(7);
        var of = new int[n];
        var e = new double[n];
        var dense = new double[n, 6];
        for (var t = 0; t < n; t++)
        {
            of[t] = rng.Next(6);
            e[t] = rng.NextDouble() - 0.5 + (t > 0 ? 0.3 * e[t - 1] : 0);
            for (var j = 0; j < 6; j++)
            {
                dense[t, j] = cellRows[of[t], j];
            }
        }

        var a = DurbinWatson.Test(e, dense);
        var b = DurbinWatson.Test(e, cellRows, of);
        Assert.Equal(a.Statistic.Value, b.Statistic.Value);
        Assert.Equal(a.P.Value, b.P.Value);
        Assert.Equal(a.PNegative.Value, b.PNegative.Value);
        Assert.Equal(a.PTwoSided.Value, b.PTwoSided.Value);
        Assert.Equal(a.Method, b.Method);
    }

    [Fact]
    public void Statistic_ArrayAndOtherList_SameBits()
    {
        // An array is read directly, any other list through its interface: the same d, bit for bit.
        var rng = new Random(31);
        var e = Enumerable.Range(0, 10_001).Select(_ => Math.Round(rng.NextDouble() - 0.5, 4)).ToArray();
        var fromArray = DurbinWatson.Statistic(e);
        var fromList = DurbinWatson.Statistic(e.ToList());
        Assert.Equal(BitConverter.DoubleToInt64Bits(fromList.Value), BitConverter.DoubleToInt64Bits(fromArray.Value));
        Assert.Throws<ArgumentException>(() => DurbinWatson.Statistic(new[] { 1.0, double.NaN, 2.0 }));
        Assert.Throws<ArgumentException>(() => DurbinWatson.Statistic(new List<double> { 1.0, double.NaN, 2.0 }));
    }
}
