using System.Globalization;
using FsCheck;
using FsCheck.Fluent;
using FsCheck.Xunit;
using StudyPress.Statistics.PostHoc;

namespace StudyPress.Statistics.Tests.PostHoc;

/// <summary>
/// Dunnett's p-value against its Bonferroni bounds (Bonferroni inequality; Hochberg and Tamhane
/// 1987, ch. 2): with p1 = P(|T| &gt;= t) the two-sided t tail of one comparison,
/// p1 &lt;= P(max_i |T_i| &gt;= t) &lt;= m p1.
/// </summary>
public class DunnettTailTests
{
    [Property(MaxTest = 40)]
    public Property UpperProbability_LiesWithinItsBonferroniBounds()
    {
        var gen =
            from t in Gen.Choose(5, 400).Select(v => v / 10.0)
            from df in Gen.Elements(1, 2, 3, 7, 20, 60, 200, 597, 1000)
            from n0 in Gen.Choose(2, 30)
            from ns in Gen.Choose(2, 30).ArrayOf().Where(a => a.Length is >= 1 and <= 5)
            select (t, df, n0, ns);
        return Prop.ForAll(gen.ToArbitrary(), c =>
        {
            var lambdas = c.ns.Select(n => Math.Sqrt(n / (double)(n + c.n0))).ToArray();
            var p = Dunnett.UpperProbability(c.t, lambdas, c.df);
            var p1 = Probability.TTwoSided(c.t, c.df);
            return (p >= p1 && p <= Math.Min(1.0, lambdas.Length * p1))
                .Label(string.Create(CultureInfo.InvariantCulture, $"t {c.t} df {c.df} m {lambdas.Length}: p {p:R} outside [{p1:R}, {lambdas.Length * p1:R}]"));
        });
    }

    [Theory]
    [InlineData(25.0, 597.0)]
    [InlineData(30.0, 1000.0)]
    [InlineData(26.0, 300.0)]
    public void FarTail_LargeDf_IsCloseToTheUpperBonferroniBound(double t, double df)
    {
        // Two comparisons with equal groups (λ² = ½, correlation ½): far in the tail the chance that
        // both exceed t is negligible beside the chance that one does, so p ≈ 2 p1 (Bonferroni;
        // common practice). The old quadrature cut off the part of s where this tail lives and
        // returned far less (0 at df 597), below even the lower bound p1.
        double[] lambdas = [Math.Sqrt(0.5), Math.Sqrt(0.5)];
        var p = Dunnett.UpperProbability(t, lambdas, df);
        var p1 = Probability.TTwoSided(t, df);
        Assert.True(p1 > 0);
        Assert.InRange(p / (2 * p1), 0.9, 1.0);
    }
}
