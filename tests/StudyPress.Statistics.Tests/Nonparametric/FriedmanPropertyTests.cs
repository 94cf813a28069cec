using FsCheck;
using FsCheck.Fluent;
using FsCheck.Xunit;
using StudyPress.Statistics.Nonparametric;

namespace StudyPress.Statistics.Tests.Nonparametric;

// Invariances and identities of the Friedman statistics (definitions, no outside values): they
// depend only on the within-block ranks, so they are unchanged by reordering the blocks and by any
// strictly increasing transform applied within a block (a different one in each block), and they
// follow the treatments when the treatments are relabelled. The rank sums are exact integers in
// the engine, so these invariances hold bit for bit.
public class FriedmanPropertyTests
{
    /// <summary>2 to 8 blocks of 2 to 5 treatments, small integers 0..6 (ties are common).</summary>
    private static Gen<double[][]> DesignGen =>
        Gen.Choose(2, 5).SelectMany(k =>
            Gen.Choose(2, 8).SelectMany(n => Gen.Choose(0, 6).Select(v => (double)v).ArrayOf(k).ArrayOf(n)));

    private static bool Same(FriedmanResult a, FriedmanResult b) =>
        a.ChiSquare == b.ChiSquare
        && a.ChiSquareUncorrected == b.ChiSquareUncorrected
        && a.TieCorrection == b.TieCorrection
        && a.P == b.P
        && a.KendallW == b.KendallW
        && a.ImanDavenportF == b.ImanDavenportF
        && a.ImanDavenportFUncorrected == b.ImanDavenportFUncorrected
        && a.ImanDavenportP == b.ImanDavenportP
        && a.PerfectConcordance == b.PerfectConcordance
        && a.RankSums.SequenceEqual(b.RankSums);

    [Property]
    public Property Test_PermutingBlocks_SameResult()
    {
        var gen = DesignGen.SelectMany(d => Gen.Shuffle(d), (d, shuffled) => (Original: d, Shuffled: shuffled));
        return Prop.ForAll(gen.ToArbitrary(), d => Same(Friedman.Test(d.Original), Friedman.Test(d.Shuffled)));
    }

    [Property]
    public Property Test_IncreasingTransformWithinEachBlock_SameResult()
    {
        return Prop.ForAll(DesignGen.ToArbitrary(), d =>
        {
            // Block i: v -> (i + 1) exp(v/4) + v^3 - 5 i, strictly increasing in v, different per block.
            var t = d.Select((row, i) => row.Select(v => ((i + 1) * Math.Exp(v / 4)) + (v * v * v) - (5.0 * i)).ToArray()).ToArray();
            return Same(Friedman.Test(d), Friedman.Test(t));
        });
    }

    [Property]
    public Property Test_RelabellingTreatments_StatisticsSameRankSumsFollow()
    {
        var gen = DesignGen.SelectMany(
            d => Gen.Shuffle(Enumerable.Range(0, d[0].Length).ToArray()),
            (d, perm) => (Original: d, Permuted: d.Select(row => perm.Select(j => row[j]).ToArray()).ToArray(), Perm: perm));
        return Prop.ForAll(gen.ToArbitrary(), d =>
        {
            var a = Friedman.Test(d.Original);
            var b = Friedman.Test(d.Permuted);
            var follow = d.Perm.Select((src, j) => b.RankSums[j] == a.RankSums[src]).All(x => x);
            return follow && a.ChiSquare == b.ChiSquare && a.KendallW == b.KendallW && a.ImanDavenportF == b.ImanDavenportF;
        });
    }

    // 0 <= chi2_0 <= chi2 <= n (k - 1), 0 <= W <= 1 with W = chi2 / (n (k - 1)), the corrected F at
    // least the uncorrected one, rank sums adding to n k (k + 1)/2.
    [Property]
    public Property Test_Bounds()
    {
        return Prop.ForAll(DesignGen.ToArbitrary(), d =>
        {
            var r = Friedman.Test(d);
            double n = r.Blocks, k = r.Treatments;
            var total = r.RankSums.Sum() == n * k * (k + 1) / 2;
            if (!r.ChiSquare.IsDefined)
            {
                return total && r.ChiSquareUncorrected.Value == 0;
            }

            var max = n * (k - 1);
            var chi = r.ChiSquare.Value;
            var ok = r.ChiSquareUncorrected.Value >= 0
                && r.ChiSquareUncorrected.Value <= chi * (1 + 1e-14)
                && chi <= max * (1 + 1e-14)
                && r.KendallW.Value >= 0 && r.KendallW.Value <= 1
                && Math.Abs((r.KendallW.Value * max) - chi) <= 1e-13 * Math.Max(1, chi);
            if (r.ImanDavenportF.IsDefined && r.ImanDavenportFUncorrected.IsDefined)
            {
                ok &= r.ImanDavenportF.Value >= r.ImanDavenportFUncorrected.Value * (1 - 1e-14);
            }

            return total && ok && r.PerfectConcordance == !r.ImanDavenportF.IsDefined;
        });
    }

    // Identity: the tie-corrected Iman-Davenport F is the two-way analysis-of-variance F for
    // treatments on the within-block mid-ranks, (n - 1) SS_treatment / SS_error (blocks have equal
    // rank sums, so SS_blocks = 0). The ranks and sums of squares are computed here independently.
    [Property]
    public Property Test_ImanDavenport_IsAnovaFOnRanks()
    {
        return Prop.ForAll(DesignGen.ToArbitrary(), d =>
        {
            var r = Friedman.Test(d);
            int n = d.Length, k = d[0].Length;
            var ranks = d.Select(row => row.Select(v => row.Count(u => u < v) + ((row.Count(u => u == v) + 1) / 2.0)).ToArray()).ToArray();
            var centre = (k + 1) / 2.0;
            var ssTotal = ranks.Sum(row => row.Sum(x => (x - centre) * (x - centre)));
            var ssTreat = Enumerable.Range(0, k).Sum(j =>
            {
                var m = ranks.Average(row => row[j]) - centre;
                return n * m * m;
            });
            var ssError = ssTotal - ssTreat;
            if (ssTotal == 0)
            {
                return !r.ImanDavenportF.IsDefined;
            }

            if (ssError < 1e-9)
            {
                return r.PerfectConcordance;
            }

            var f = (n - 1) * ssTreat / ssError;
            return Math.Abs(r.ImanDavenportF.Value - f) <= 1e-10 * Math.Max(1, f);
        });
    }

    // Identity, k = 2: there is one pair, and Conover's t^2 equals the tie-corrected Iman-Davenport
    // F (both are the rank ANOVA on (1, n - 1) df), with the same p-value.
    [Property]
    public Property Conover_TwoTreatments_TSquaredIsImanDavenportF()
    {
        var gen = Gen.Choose(2, 12).SelectMany(n => Gen.Choose(0, 4).Select(v => (double)v).ArrayOf(2).ArrayOf(n));
        return Prop.ForAll(gen.ToArbitrary(), d =>
        {
            var f = Friedman.Test(d);
            var c = Assert.Single(FriedmanConover.Compare(["a", "b"], d).Comparisons);
            if (!f.ImanDavenportF.IsDefined)
            {
                return !c.Statistic.IsDefined && (!f.ImanDavenportP.IsDefined || f.ImanDavenportP == c.P);
            }

            var t2 = c.Statistic.Value * c.Statistic.Value;
            return Math.Abs(t2 - f.ImanDavenportF.Value) <= 1e-12 * Math.Max(1, t2)
                && Math.Abs(c.P.Value - f.ImanDavenportP.Value) <= 1e-12 * Math.Max(1e-300, c.P.Value) + 1e-15;
        });
    }
}
