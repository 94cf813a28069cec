using FsCheck;
using FsCheck.Fluent;
using FsCheck.Xunit;
using StudyPress.Statistics.Nonparametric;

namespace StudyPress.Statistics.Tests.Nonparametric;

// Invariances of the rank statistic: H depends only on the ranks and on which group each rank
// falls in, so it is unchanged by reordering rows within groups, by any strictly increasing
// transform of the response (ranks, ties included, are unchanged) and by relabelling the groups.
public class KruskalWallisPropertyTests
{
    /// <summary>2 to 5 groups of 1 to 6 small integers (0..9, so ties are common).</summary>
    private static Gen<double[][]> GroupsGen =>
        Gen.Choose(2, 5).SelectMany(k =>
            Gen.Choose(1, 6).SelectMany(n => Gen.Choose(0, 9).Select(v => (double)v).ArrayOf(n)).ArrayOf(k));

    private static bool SameH(KruskalWallisResult a, KruskalWallisResult b, double tolerance)
    {
        if (!a.H.IsDefined || !b.H.IsDefined)
        {
            return a.H.IsDefined == b.H.IsDefined;
        }

        return Math.Abs(a.H.Value - b.H.Value) <= tolerance * Math.Max(1.0, Math.Abs(a.H.Value));
    }

    [Property]
    public Property Test_PermutingRowsWithinGroups_SameH()
    {
        var gen = GroupsGen.SelectMany(
            g => Gen.CollectToArray(g.Select(x => Gen.Shuffle(x))),
            (g, shuffled) => (Original: g, Shuffled: shuffled));
        return Prop.ForAll(gen.ToArbitrary(), d =>
            SameH(KruskalWallis.Test(d.Original), KruskalWallis.Test(d.Shuffled), 0));
    }

    [Property]
    public Property Test_StrictlyIncreasingTransform_SameH()
    {
        return Prop.ForAll(GroupsGen.ToArbitrary(), g =>
        {
            // exp(x/4) + x^3 - 5 is strictly increasing; 2x - 7 is affine.
            var t1 = g.Select(x => x.Select(v => Math.Exp(v / 4) + (v * v * v) - 5).ToArray()).ToArray();
            var t2 = g.Select(x => x.Select(v => (2 * v) - 7).ToArray()).ToArray();
            var h = KruskalWallis.Test(g);
            return SameH(h, KruskalWallis.Test(t1), 0) && SameH(h, KruskalWallis.Test(t2), 0);
        });
    }

    [Property]
    public Property Test_RelabellingGroups_SameH()
    {
        var gen = GroupsGen.SelectMany(
            g => Gen.Shuffle(Enumerable.Range(0, g.Length).ToArray()),
            (g, perm) => (Original: g, Permuted: perm.Select(i => g[i]).ToArray(), Perm: perm));
        return Prop.ForAll(gen.ToArbitrary(), d =>
        {
            var a = KruskalWallis.Test(d.Original);
            var b = KruskalWallis.Test(d.Permuted);
            var ranksFollow = d.Perm.Select((src, i) => b.MeanRanks[i] == a.MeanRanks[src]).All(x => x);
            return SameH(a, b, 1e-12) && ranksFollow;
        });
    }
}
