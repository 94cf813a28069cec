using System.Globalization;
using StudyPress.Statistics.Distributions;
using StudyPress.Statistics.Nonparametric;
using StudyPress.Statistics.PostHoc;
using StudyPress.Statistics.Tests.Support;

namespace StudyPress.Statistics.Tests.Nonparametric;

// Nemenyi and Conover comparisons after a Friedman test. No source prints pairwise values for these
// data; the pairwise values below are this project's exact recomputation (Reference/friedman/
// recompute-pairwise.py, output in recompute-pairwise.out.txt: exact fractions for the ranks,
// 40-digit mpmath for the probabilities), 20 digits shown.
public class FriedmanPostHocTests
{
    // ---- Nemenyi -----------------------------------------------------------------------------

    // Demsar (2006) data, k = 4, n = 14, alpha 0.05.
    // Published table (Gleason 1998, Reference/studentized-range/gleason1998-p0.95.csv): q(0.05; 4, inf) = 3.633.
    // Collection file ("CD", computed with df = 1e6, so compared at relative 1e-6): CD = 1.253559.
    // Exact recomputation (recompute-pairwise.py): q = 3.633159574902629049, CD = 1.2535591471176062948.
    // (Demsar's printed CD of 1.25 is recorded only from memory, so it is not asserted.)
    [Fact]
    public void Nemenyi_Demsar_CriticalDifference()
    {
        var (treatments, blocks) = FriedmanData.Load("demsar-2006-auc.csv");
        var r = FriedmanNemenyi.Compare(treatments, blocks, 0.05);
        var gleason = ReferenceFiles.ReadAllText("studentized-range", "gleason1998-p0.95.csv")
            .Split('\n').Single(l => l.StartsWith("0.05,inf,4,", StringComparison.Ordinal)).Split(',')[3].Trim();
        Accuracy.AssertRoundsTo(r.QCritical, gleason, "q(0.05; 4, inf) (Gleason 1998)");
        var e = FriedmanData.Expected("demsar-2006-auc.expected.json");
        FriedmanData.AssertRelative(r.CriticalDifference, FriedmanData.Number(e, "exact_recomputation", "nemenyi", "CD"), 1e-6, "CD (file, df 1e6)");
        FriedmanData.AssertRelative(
            r.QCritical / Math.Sqrt(2), FriedmanData.Number(e, "exact_recomputation", "nemenyi", "q_alpha_over_sqrt2_k4_inf_df"), 1e-6, "q/sqrt2 (file, df 1e6)");
        Accuracy.AssertLre(r.QCritical, 3.633159574902629049, 10, "q (recompute-pairwise.py)");
        Accuracy.AssertLre(r.CriticalDifference, 1.2535591471176062948, 10, "CD (recompute-pairwise.py)");
        Assert.Equal(0.05, r.Alpha);
    }

    // Exact recomputation (recompute-pairwise.py), Demsar data: mean-rank differences (exact
    // fractions), q^2 = d^2 / (k(k+1)/(12n)), studentized-range p (adjusted) and normal p (raw).
    [Fact]
    public void Nemenyi_Demsar_PairwiseValues()
    {
        var (treatments, blocks) = FriedmanData.Load("demsar-2006-auc.csv");
        var r = FriedmanNemenyi.Compare(treatments, blocks, 0.05);
        (string A, string B, double D, double Q2, double PAdj, double P)[] expected =
        [
            ("C4.5", "C4.5+m", -8.0 / 7, 384.0 / 35, 0.088672709288882579494, 0.019172484755223096623),
            ("C4.5", "C4.5+cf", -1.0 / 4, 21.0 / 40, 0.95617717522181015691, 0.60840780023299836113),
            ("C4.5", "C4.5+m+cf", -33.0 / 28, 3267.0 / 280, 0.0741847950687441666, 0.015719980210024596397),
            ("C4.5+m", "C4.5+cf", 25.0 / 28, 375.0 / 56, 0.2592280701547283638, 0.067277960538348970955),
            ("C4.5+m", "C4.5+m+cf", -1.0 / 28, 3.0 / 280, 0.99985944938513299368, 0.94165293016103591973),
            ("C4.5+cf", "C4.5+m+cf", -13.0 / 14, 507.0 / 70, 0.22669688602641524714, 0.05703987424905554667),
        ];
        Assert.Equal(expected.Length, r.Comparisons.Count);
        for (var i = 0; i < expected.Length; i++)
        {
            var (c, x) = (r.Comparisons[i], expected[i]);
            Assert.Equal((x.A, x.B), (c.TreatmentA, c.TreatmentB));
            Accuracy.AssertLre(c.MeanRankDiff, x.D, 15, "d " + x.A + "|" + x.B);
            Accuracy.AssertLre(c.Statistic.Value, Math.Sqrt(x.Q2), 14, "q " + x.A + "|" + x.B);
            Accuracy.AssertLre(c.Se.Value, Math.Sqrt(20.0 / 84), 15, "se = sqrt(k(k+1)/(6n))");
            Accuracy.AssertLre(c.PAdjusted.Value, x.PAdj, 9, "Nemenyi p " + x.A + "|" + x.B);
            Accuracy.AssertLre(c.P.Value, x.P, 13, "raw p " + x.A + "|" + x.B);
        }
    }

    // Exact recomputation (recompute-pairwise.py), Bioestadistica data (ties; Nemenyi uses the untied
    // variance): the two smallest adjusted p-values, 1|2 and 2|4, and CD = 1.3539986304310862384.
    [Fact]
    public void Nemenyi_Bioestadistica_SmallPValues()
    {
        var (treatments, blocks) = FriedmanData.Load("bioestadistica-12x4.csv");
        var r = FriedmanNemenyi.Compare(treatments, blocks, 0.05);
        Accuracy.AssertLre(r.Comparisons[0].PAdjusted.Value, 0.0021198008688987150712, 9, "1|2");
        Accuracy.AssertLre(r.Comparisons[4].PAdjusted.Value, 0.0028364652687631116607, 9, "2|4");
        Accuracy.AssertLre(r.Comparisons[0].P.Value, 0.00037431224710860172238, 13, "1|2 raw");
        Accuracy.AssertLre(r.CriticalDifference, 1.3539986304310862384, 10, "CD");
    }

    // Exact identity, k = 2: Q(2, inf) = sqrt 2 |Z|, so the Nemenyi p equals the two-sided normal p of
    // z = q / sqrt 2 (the raw p), and q(alpha; 2, inf) = sqrt 2 z(1 - alpha/2).
    [Fact]
    public void Nemenyi_TwoTreatments_EqualsNormalTest()
    {
        var r = FriedmanNemenyi.Compare(["a", "b"], [[1, 2], [3, 4], [6, 5], [7, 8], [2, 9]], 0.05);
        var c = Assert.Single(r.Comparisons);
        Accuracy.AssertLre(c.PAdjusted.Value, c.P.Value, 9, "k = 2: studentized range p = normal p");
        Accuracy.AssertLre(r.QCritical, Math.Sqrt(2) * 1.959963984540054, 10, "sqrt 2 z(0.975)");
    }

    // Definition: |d| > CD exactly when the Nemenyi p < alpha (checked on all three data sets, at
    // two levels, away from the boundary).
    [Theory]
    [InlineData("zar-example-12-6.csv", 0.05)]
    [InlineData("zar-example-12-6.csv", 0.1)]
    [InlineData("demsar-2006-auc.csv", 0.05)]
    [InlineData("demsar-2006-auc.csv", 0.1)]
    [InlineData("bioestadistica-12x4.csv", 0.05)]
    [InlineData("bioestadistica-12x4.csv", 0.01)]
    public void Nemenyi_CriticalDifference_AgreesWithPValues(string file, double alpha)
    {
        var (treatments, blocks) = FriedmanData.Load(file);
        var r = FriedmanNemenyi.Compare(treatments, blocks, alpha);
        foreach (var c in r.Comparisons)
        {
            Assert.Equal(Math.Abs(c.MeanRankDiff) > r.CriticalDifference, c.PAdjusted.Value < alpha);
        }

        // The formula CD = q / sqrt 2 * sqrt(k (k + 1) / (6 n)) with the engine's quantile.
        var k = treatments.Length;
        var q = StudentizedRange.UpperQuantile(alpha, k, double.PositiveInfinity);
        Accuracy.AssertLre(r.CriticalDifference, q / Math.Sqrt(2) * Math.Sqrt(k * (k + 1.0) / (6.0 * blocks.Length)), 14, "CD formula");
    }

    [Fact]
    public void Nemenyi_AllTied_DefinedZeroDifferences()
    {
        var r = FriedmanNemenyi.Compare(["a", "b", "c"], [[1, 1, 1], [2, 2, 2]], 0.05);
        Assert.All(r.Comparisons, c =>
        {
            Assert.Equal(0.0, c.MeanRankDiff);
            Assert.Equal(1.0, c.PAdjusted.Value);
            Assert.Equal(1.0, c.P.Value);
        });
    }

    // ---- Conover -----------------------------------------------------------------------------

    // Exact recomputation (recompute-pairwise.py), Zar data (no ties): MSE = 3/5 on 12 df,
    // Se^2 = 2 MSE / n = 6/25; t^2 and two-sided p per pair; Holm over the six.
    [Fact]
    public void Conover_Zar_PairwiseValuesAndHolm()
    {
        var (treatments, blocks) = FriedmanData.Load("zar-example-12-6.csv");
        var r = FriedmanConover.Compare(treatments, blocks);
        Assert.Equal(12, r.Df);
        Assert.Equal(PValueAdjustmentMethod.Holm, r.Adjustment);
        Accuracy.AssertLre(r.ErrorMeanSquare.Value, 0.6, 15, "MSE = 3/5");
        (double D, double T2, double P, double Holm)[] expected =
        [
            (11.0 / 5, 121.0 / 6, 0.00073847838041789340892, 0.0044308702825073604535),
            (11.0 / 5, 121.0 / 6, 0.00073847838041789340892, 0.0044308702825073604535),
            (4.0 / 5, 8.0 / 3, 0.12841550544162870142, 0.25683101088325740284),
            (0, 0, 1, 1),
            (-7.0 / 5, 49.0 / 6, 0.014414235573304457069, 0.057656942293217828275),
            (-7.0 / 5, 49.0 / 6, 0.014414235573304457069, 0.057656942293217828275),
        ];
        AssertConover(r, expected);
        Assert.All(r.Comparisons, c => Accuracy.AssertLre(c.Se.Value, Math.Sqrt(6.0 / 25), 15, "se"));
    }

    // Exact recomputation (recompute-pairwise.py), Bioestadistica data (ties: the error term uses the
    // actual mid-ranks): MSE = 199/264 on 33 df.
    [Fact]
    public void Conover_Bioestadistica_TiesInErrorTerm()
    {
        var (treatments, blocks) = FriedmanData.Load("bioestadistica-12x4.csv");
        var r = FriedmanConover.Compare(treatments, blocks);
        Assert.Equal(33, r.Df);
        Accuracy.AssertLre(r.ErrorMeanSquare.Value, 199.0 / 264, 15, "MSE = 199/264");
        (double D, double T2, double P, double Holm)[] expected =
        [
            (15.0 / 8, 22275.0 / 796, 7.8411950844933254611e-6, 0.000047047170506959952767),
            (3.0 / 4, 891.0 / 199, 0.041976692682510524595, 0.12593007804753157378),
            (1.0 / 24, 11.0 / 796, 0.90713313177852895755, 0.90713313177852895755),
            (-9.0 / 8, 8019.0 / 796, 0.003248327735554293004, 0.012993310942217172016),
            (-11.0 / 6, 5324.0 / 199, 0.000011095078168629579085, 0.000055475390843147895424),
            (-17.0 / 24, 3179.0 / 796, 0.053964368267481410904, 0.12593007804753157378),
        ];
        AssertConover(r, expected);
    }

    // Exact recomputation (recompute-pairwise.py), Demsar data: MSE = 1345/1092 on 39 df.
    [Fact]
    public void Conover_Demsar_PairwiseValuesAndHolm()
    {
        var (treatments, blocks) = FriedmanData.Load("demsar-2006-auc.csv");
        var r = FriedmanConover.Compare(treatments, blocks);
        Assert.Equal(39, r.Df);
        Accuracy.AssertLre(r.ErrorMeanSquare.Value, 1345.0 / 1092, 15, "MSE");
        (double D, double T2, double P, double Holm)[] expected =
        [
            (-8.0 / 7, 9984.0 / 1345, 0.0095881544222767892801, 0.0479407721113839464),
            (-1.0 / 4, 1911.0 / 5380, 0.55462519077158197574, 1),
            (-33.0 / 28, 42471.0 / 5380, 0.0077133873399296314343, 0.046280324039577788606),
            (25.0 / 28, 4875.0 / 1076, 0.039664771655891601308, 0.13107109358169238805),
            (-1.0 / 28, 39.0 / 5380, 0.93258450457395344139, 1),
            (-13.0 / 14, 6591.0 / 1345, 0.032767773395423097013, 0.13107109358169238805),
        ];
        AssertConover(r, expected);
    }

    // Definition: Bonferroni multiplies each raw p by m = 6, capped at 1.
    [Fact]
    public void Conover_Bonferroni_TimesSix()
    {
        var (treatments, blocks) = FriedmanData.Load("zar-example-12-6.csv");
        var r = FriedmanConover.Compare(treatments, blocks, PValueAdjustmentMethod.Bonferroni);
        Assert.Equal(PValueAdjustmentMethod.Bonferroni, r.Adjustment);
        Assert.All(r.Comparisons, c => Assert.Equal(Math.Min(1, 6 * c.P.Value), c.PAdjusted.Value));
    }

    // Exact hand computation, perfect concordance with ties (every block ranks a, b, c as 1.5, 1.5, 3):
    // SS_error = 0. a|b: d = 0, t = 0/0 not defined, p = 1 (limit); a|c and b|c: d = -1.5, t infinite
    // (not defined), p = 0 (limit). Holm: 0, 0 and then max(0, 1 * 1) = 1.
    [Fact]
    public void Conover_PerfectConcordance_LimitsZeroAndOne()
    {
        var r = FriedmanConover.Compare(["a", "b", "c"], [[1, 1, 2], [5, 5, 9], [0, 0, 3]]);
        var (ab, ac, bc) = (r.Comparisons[0], r.Comparisons[1], r.Comparisons[2]);
        Assert.Equal(0.0, r.ErrorMeanSquare.Value);
        Assert.False(ab.Statistic.IsDefined);
        Assert.StartsWith("0/0", ab.Statistic.Reason, StringComparison.Ordinal);
        Assert.Equal(1.0, ab.P.Value);
        Assert.Equal(1.0, ab.PAdjusted.Value);
        foreach (var c in new[] { ac, bc })
        {
            Assert.Equal(-1.5, c.MeanRankDiff);
            Assert.False(c.Statistic.IsDefined);
            Assert.StartsWith("infinite", c.Statistic.Reason, StringComparison.Ordinal);
            Assert.Equal(0.0, c.P.Value);
            Assert.Equal(0.0, c.PAdjusted.Value);
        }
    }

    [Fact]
    public void Conover_AllTied_Undefined()
    {
        var r = FriedmanConover.Compare(["a", "b"], [[3, 3], [4, 4]]);
        var c = Assert.Single(r.Comparisons);
        Assert.False(c.Statistic.IsDefined);
        Assert.False(c.P.IsDefined);
        Assert.False(c.PAdjusted.IsDefined);
        Assert.Contains("tied", c.PAdjusted.Reason, StringComparison.Ordinal);
    }

    [Fact]
    public void Validation_TreatmentNamesAndAlpha()
    {
        double[][] blocks = [[1, 2, 3], [3, 1, 2]];
        var count = Assert.Throws<ArgumentException>(() => FriedmanConover.Compare(["a", "b"], blocks));
        Assert.Contains("2 treatment name(s) for blocks of 3 value(s)", count.Message, StringComparison.Ordinal);
        var twice = Assert.Throws<ArgumentException>(() => FriedmanNemenyi.Compare(["a", "b", "a"], blocks, 0.05));
        Assert.Contains("'a' is given twice", twice.Message, StringComparison.Ordinal);
        Assert.Throws<ArgumentOutOfRangeException>(() => FriedmanNemenyi.Compare(["a", "b", "c"], blocks, 1.0));
        Assert.Throws<ArgumentOutOfRangeException>(() => FriedmanNemenyi.Compare(["a", "b", "c"], blocks, 0.0));
        var ragged = Assert.Throws<ArgumentException>(() => FriedmanNemenyi.Compare(["a", "b", "c"], [[1, 2, 3], [1, 2]], 0.05));
        Assert.Equal("blocks", ragged.ParamName);
    }

    private static void AssertConover(FriedmanConoverResult r, (double D, double T2, double P, double Holm)[] expected)
    {
        Assert.Equal(expected.Length, r.Comparisons.Count);
        for (var i = 0; i < expected.Length; i++)
        {
            var (c, x) = (r.Comparisons[i], expected[i]);
            var what = string.Create(CultureInfo.InvariantCulture, $"{c.TreatmentA}|{c.TreatmentB}");
            if (x.D == 0)
            {
                Assert.Equal(0.0, c.MeanRankDiff);
                Assert.Equal(0.0, c.Statistic.Value);
            }
            else
            {
                Accuracy.AssertLre(c.MeanRankDiff, x.D, 15, "d " + what);
                Accuracy.AssertLre(c.Statistic.Value, Math.Sign(x.D) * Math.Sqrt(x.T2), 14, "t " + what);
                Accuracy.AssertLre(c.Se.Value, x.D / (Math.Sign(x.D) * Math.Sqrt(x.T2)), 14, "se = d / t " + what);
            }

            Accuracy.AssertLre(c.P.Value, x.P, 12, "p " + what);
            Accuracy.AssertLre(c.PAdjusted.Value, x.Holm, 12, "Holm p " + what);
        }
    }
}
