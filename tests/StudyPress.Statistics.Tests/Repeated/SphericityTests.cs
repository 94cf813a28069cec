using StudyPress.Statistics.Repeated;
using static StudyPress.Statistics.Tests.Repeated.RepeatedReference;

namespace StudyPress.Statistics.Tests.Repeated;

// Mauchly's test, the epsilons and the sphericity rule: properties over seeded random data
// (deterministic), a second exact formula for the Greenhouse–Geisser epsilon, and hand-built data
// with known answers.
public class SphericityTests
{
    /// <summary>Long data from a subjects x cells array (one within factor "t"), optional groups "g".</summary>
    internal static RepeatedMeasuresData FromMatrix(double[][] y, int[]? group = null)
    {
        var resp = new List<double>();
        var subj = new List<string>();
        var t = new List<string>();
        var g = new List<string>();
        for (var s = 0; s < y.Length; s++)
        {
            for (var j = 0; j < y[s].Length; j++)
            {
                resp.Add(y[s][j]);
                subj.Add("s" + s.ToString(System.Globalization.CultureInfo.InvariantCulture));
                t.Add("t" + j.ToString(System.Globalization.CultureInfo.InvariantCulture));
                g.Add("g" + (group is null ? 0 : group[s]).ToString(System.Globalization.CultureInfo.InvariantCulture));
            }
        }

        return group is null
            ? new RepeatedMeasuresData([.. resp], subj, [t], [])
            : new RepeatedMeasuresData([.. resp], subj, [t], [g]);
    }

    internal static RepeatedMeasuresDesign Design(bool groups) =>
        groups ? new("subject", ["t"], ["g"]) : new("subject", ["t"], []);

    // Property: the Greenhouse–Geisser epsilon lies in [1/(k − 1), 1] and equals Box's (1954)
    // formula on the pooled k x k covariance matrix S of the raw scores (a second exact formula,
    // Greenhouse and Geisser 1959 eq. for ε̂): k²(s̄_d − s̄)² / ((k − 1)(Σ s_jl² − 2k Σ s̄_j² + k² s̄²)).
    // The Huynh–Feldt (Lecoutre) epsilon is at most 1; W lies in (0, 1].
    [Fact]
    public void RandomData_GreenhouseGeisserInRange_AndEqualsBoxFormula()
    {
        var rnd = new Random(20261204);
        var low = 0;
        for (var trial = 0; trial < 200; trial++)
        {
            var k = rnd.Next(3, 7);
            var groups = rnd.Next(1, 4);
            var sizes = Enumerable.Range(0, groups).Select(_ => rnd.Next(2, 9)).ToArray();
            var rows = new List<double[]>();
            var groupOf = new List<int>();
            var slopeSd = rnd.NextDouble() * 4;
            var levelSd = Enumerable.Range(0, k).Select(_ => 0.1 + (rnd.NextDouble() * 3)).ToArray();
            for (var g = 0; g < groups; g++)
            {
                for (var s = 0; s < sizes[g]; s++)
                {
                    var subject = 10 * (rnd.NextDouble() - 0.5);
                    var slope = slopeSd * (rnd.NextDouble() - 0.5);
                    rows.Add([.. Enumerable.Range(0, k).Select(j => 100 + g + subject + (slope * j) + (j * 0.3) + (levelSd[j] * (rnd.NextDouble() - 0.5)))]);
                    groupOf.Add(g);
                }
            }

            var useGroups = groups > 1;
            var data = FromMatrix([.. rows], useGroups ? [.. groupOf] : null);
            var design = Design(useGroups);
            if (RepeatedMeasuresAnova.Check(design, data) is not null)
            {
                continue;
            }

            var r = RepeatedMeasuresAnova.Fit(design, data);
            var sph = r.SphericityOf("t");
            var gg = V(sph.EpsilonGreenhouseGeisser, "gg");
            Assert.InRange(gg, (1.0 / (k - 1)) - 1e-12, 1.0);
            AssertRelative(gg, Math.Min(1, BoxEpsilon([.. rows], [.. groupOf], groups)), 1e-9, "Box formula");
            if (sph.EpsilonHuynhFeldt.IsDefined)
            {
                Assert.InRange(sph.EpsilonHuynhFeldt.Value, 0, 1.0);
            }

            if (sph.W.IsDefined)
            {
                Assert.InRange(sph.W.Value, 0, 1.0 + 1e-12);
                Assert.True(sph.W.Value > 0);
            }

            low += gg < 0.75 ? 1 : 0;
        }

        Assert.True(low > 10, "the random designs should include strong violations of sphericity");
    }

    private static double BoxEpsilon(double[][] y, int[] group, int groups)
    {
        var n = y.Length;
        var k = y[0].Length;
        var s = new double[k, k];
        for (var g = 0; g < groups; g++)
        {
            var members = Enumerable.Range(0, n).Where(i => group[i] == g).ToArray();
            var mean = Enumerable.Range(0, k).Select(j => members.Average(i => y[i][j])).ToArray();
            foreach (var i in members)
            {
                for (var a = 0; a < k; a++)
                {
                    for (var b = 0; b < k; b++)
                    {
                        s[a, b] += (y[i][a] - mean[a]) * (y[i][b] - mean[b]);
                    }
                }
            }
        }

        double diag = 0, all = 0, sq = 0, rowSq = 0;
        for (var a = 0; a < k; a++)
        {
            diag += s[a, a] / k;
            double row = 0;
            for (var b = 0; b < k; b++)
            {
                all += s[a, b] / (k * k);
                sq += s[a, b] * s[a, b];
                row += s[a, b] / k;
            }

            rowSq += row * row;
        }

        return k * k * (diag - all) * (diag - all) / ((k - 1) * (sq - (2 * k * rowSq) + (k * k * all * all)));
    }

    // Exact hand computation: subjects differ only in their linear slope, so the error SSCP has
    // rank 1 and ε̂ = λ²/(p λ²) = 1/p, the lower bound; the covariance is singular, so Mauchly's
    // test is not defined (reason given, no crash).
    [Fact]
    public void RankOneError_GivesLowerBoundEpsilon_AndNoMauchly()
    {
        double[] slopes = [0.5, 1.0, 2.5, -1.0, 3.0];
        var y = slopes.Select(b => Enumerable.Range(0, 4).Select(j => 10 + (b * j)).ToArray()).ToArray();
        var r = RepeatedMeasuresAnova.Fit(Design(false), FromMatrix(y));
        var s = r.SphericityOf("t");
        AssertRelative(V(s.EpsilonGreenhouseGeisser, "gg"), 1.0 / 3, 1e-12, "GG = 1/p");
        Assert.Equal(1.0 / 3, s.EpsilonLowerBound);
        Assert.False(s.W.IsDefined);
        Assert.Contains("singular", s.W.Reason, StringComparison.Ordinal);
        Assert.False(s.P.IsDefined);
    }

    // Exact hand computation: Helmert scores (1,0), (−1,0), (0,1), (0,−1) give E = 2I: W = 1,
    // χ² = 0, p = 1, both epsilons 1. Built with orthonormal Helmert contrasts of 3 levels.
    [Fact]
    public void SphericalError_GivesWOne()
    {
        double[][] z = [[1, 0], [-1, 0], [0, 1], [0, -1]];
        var c = Contrasts.Helmert(3);
        var y = z.Select(zs => Enumerable.Range(0, 3).Select(j => 5 + (c[j, 0] * zs[0]) + (c[j, 1] * zs[1])).ToArray()).ToArray();
        var s = RepeatedMeasuresAnova.Fit(Design(false), FromMatrix(y)).SphericityOf("t");
        AssertRelative(V(s.W, "W"), 1, 1e-12, "W");
        Assert.True(Math.Abs(V(s.ChiSquare, "chi2")) < 1e-12);
        AssertRelative(V(s.P, "p"), 1, 1e-12, "p");
        AssertRelative(V(s.EpsilonGreenhouseGeisser, "gg"), 1, 1e-12, "GG");
        Assert.Equal(1.0, V(s.EpsilonHuynhFeldt, "hf"));
    }

    // Helmert contrasts are orthonormal and orthogonal to the constant (exact identities).
    [Theory]
    [InlineData(2)]
    [InlineData(3)]
    [InlineData(7)]
    public void HelmertContrasts_AreOrthonormal(int k)
    {
        var c = Contrasts.Helmert(k);
        for (var a = 0; a < k - 1; a++)
        {
            Assert.True(Math.Abs(Enumerable.Range(0, k).Sum(i => c[i, a])) < 1e-14);
            for (var b = 0; b < k - 1; b++)
            {
                var dot = Enumerable.Range(0, k).Sum(i => c[i, a] * c[i, b]);
                Assert.True(Math.Abs(dot - (a == b ? 1 : 0)) < 1e-14);
            }
        }
    }

    // Two levels: one contrast. Both epsilons are 1, Mauchly is not defined (said, no crash),
    // the rule reads the plain test.
    [Fact]
    public void TwoLevels_EpsilonsOne_MauchlyUndefined()
    {
        double[][] y = [[1, 3], [2, 2.5], [4, 9], [3, 3.5]];
        var r = RepeatedMeasuresAnova.Fit(Design(false), FromMatrix(y));
        var s = r.SphericityOf("t");
        Assert.Equal(1, s.Contrasts);
        Assert.Equal(1.0, V(s.EpsilonGreenhouseGeisser, "gg"));
        Assert.Equal(1.0, V(s.EpsilonHuynhFeldt, "hf"));
        Assert.False(s.W.IsDefined);
        Assert.False(s.ChiSquare.IsDefined);
        Assert.Contains("two levels", s.P.Reason, StringComparison.Ordinal);
        var d = SphericityDecision.For(s, 0.05);
        Assert.Equal(SphericityCorrection.None, d.Correction);
        Assert.Equal(SphericityBasis.TwoLevels, d.Basis);
        Assert.Equal(V(r.Row("t").P, "p"), V(d.PValue(r.Row("t")), "read p"));
        Assert.Equal(V(r.Row("t").P, "p"), V(r.Row("t").GreenhouseGeisser!.P, "p_gg"));
    }

    // Fewer subjects than contrasts (3 subjects, 5 levels): W not defined, GG still in range.
    [Fact]
    public void FewerSubjectsThanContrasts_NoCrash()
    {
        double[][] y = [[1, 3, 2, 5, 4], [2, 2.5, 7, 1, 0], [4, 9, 3, 3, 8]];
        var s = RepeatedMeasuresAnova.Fit(Design(false), FromMatrix(y)).SphericityOf("t");
        Assert.False(s.W.IsDefined);
        Assert.InRange(V(s.EpsilonGreenhouseGeisser, "gg"), 0.25 - 1e-12, 1);
        var d = SphericityDecision.For(s, 0.05);
        Assert.False(d.MauchlyTested);
        Assert.NotEqual(SphericityCorrection.None, d.Correction);
    }

    // The rule (Girden 1992): none when Mauchly's p ≥ alpha; else GG below 0.75, HF otherwise.
    [Theory]
    [InlineData(0.20, 0.60, 0.65, SphericityCorrection.None, SphericityBasis.MauchlyNotSignificant)]
    [InlineData(0.05, 0.60, 0.65, SphericityCorrection.None, SphericityBasis.MauchlyNotSignificant)]
    [InlineData(0.01, 0.60, 0.65, SphericityCorrection.GreenhouseGeisser, SphericityBasis.EpsilonBelowThreshold)]
    [InlineData(0.01, 0.7499, 0.80, SphericityCorrection.GreenhouseGeisser, SphericityBasis.EpsilonBelowThreshold)]
    [InlineData(0.01, 0.75, 0.80, SphericityCorrection.HuynhFeldt, SphericityBasis.EpsilonAtOrAboveThreshold)]
    [InlineData(0.001, 0.90, 1.0, SphericityCorrection.HuynhFeldt, SphericityBasis.EpsilonAtOrAboveThreshold)]
    public void Rule_FollowsMauchlyThenGirden(double p, double gg, double hf, SphericityCorrection expected, SphericityBasis basis)
    {
        var d = SphericityDecision.Decide(Quantity.Of(p), 0.05, Quantity.Of(gg), Quantity.Of(hf));
        Assert.Equal(expected, d.Correction);
        Assert.Equal(basis, d.Basis);
        Assert.True(d.MauchlyTested);
        Assert.Equal(p, d.MauchlyP.Value);
        Assert.Equal(gg, d.EpsilonGreenhouseGeisser.Value);
        Assert.Equal(0.75, d.Threshold);
    }

    [Fact]
    public void Rule_WithoutMauchlyOrHuynhFeldt_SaysWhy()
    {
        var noTest = Quantity.Undefined("not defined");
        var d1 = SphericityDecision.Decide(noTest, 0.05, Quantity.Of(0.9), Quantity.Undefined("too few"));
        Assert.Equal(SphericityCorrection.GreenhouseGeisser, d1.Correction);
        Assert.Equal(SphericityBasis.HuynhFeldtNotDefined, d1.Basis);
        Assert.False(d1.MauchlyTested);
        var d2 = SphericityDecision.Decide(noTest, 0.05, noTest, noTest);
        Assert.Equal(SphericityCorrection.None, d2.Correction);
        Assert.Equal(SphericityBasis.NotAssessable, d2.Basis);
    }

    // Applied to the reference data: one-way Mauchly p = 0.0107 < 0.05 and GG = 0.562 < 0.75,
    // so Greenhouse–Geisser (its p is the exact recomputation's p_gg); two-way A:B has
    // Mauchly p = 0.0537 ≥ 0.05, so no correction.
    [Fact]
    public void Rule_OnReferenceData()
    {
        var one = RepeatedMeasuresAnova.Fit(RepeatedMeasuresAnovaTests.OneWay, RepeatedMeasuresAnovaTests.OneWayData());
        var d = SphericityDecision.For(one.SphericityOf("condition"), 0.05);
        Assert.Equal(SphericityCorrection.GreenhouseGeisser, d.Correction);
        var pgg = Number(Json("rutherford-2001-oneway.expected.json"), "exact_recomputation", "sphericity", "p_gg");
        AssertRelative(V(d.PValue(one.Row("condition")), "read p"), pgg, 1e-8, "p read = exact p_gg");

        var two = RepeatedMeasuresAnova.Fit(RepeatedMeasuresAnovaTests.TwoWay, RepeatedMeasuresAnovaTests.TwoWayData());
        var d2 = SphericityDecision.For(two.SphericityOf("A:B"), 0.05);
        Assert.Equal(SphericityBasis.MauchlyNotSignificant, d2.Basis);
        Assert.Equal(V(two.Row("A:B").P, "p"), V(d2.PValue(two.Row("A:B")), "read p"));
    }
}
