using FsCheck;
using FsCheck.Fluent;
using FsCheck.Xunit;
using StudyPress.Statistics.Anova;
using StudyPress.Statistics.FollowUp;
using StudyPress.Statistics.Tests.Support;

namespace StudyPress.Statistics.Tests.FollowUp;

public class EquivalenceTests
{
    private static GroupStatistics Stats(params double[] v)
    {
        var m = v.Average();
        return new GroupStatistics(v.Length, m, v.Sum(x => (x - m) * (x - m)));
    }

    // Exact hand computation: a = {10, 12, 14} (mean 12, SS 8), b = {9, 11, 13} (mean 11, SS 8);
    // pooled s² = 16/4 = 4, SE = sqrt(8/3), df 4; margins ±3: t_lower = 4/SE = sqrt 6,
    // t_upper = -2/SE = -sqrt 1.5. For 4 df the t distribution function has the closed form
    // F(t) = 1/2 + (3/8) (t/sqrt(1 + t²/4)) (1 - t²/(12 (1 + t²/4))) (from memory; it gives 1 as t → ∞):
    // p_lower = 1/2 - 0.3 sqrt(2.4), p_upper = 1/2 - (3.75/11) sqrt(12/11). Welch gives the same
    // SE and df here (equal n and SS: df = 4).
    [Theory]
    [InlineData(EquivalenceVariance.Pooled)]
    [InlineData(EquivalenceVariance.Welch)]
    public void Tost_HandComputed(EquivalenceVariance variance)
    {
        var r = Equivalence.Tost("a", Stats(10, 12, 14), "b", Stats(9, 11, 13), -3, 3, 0.05, variance);
        var pLower = 0.5 - (0.3 * Math.Sqrt(2.4));
        var pUpper = 0.5 - (3.75 / 11 * Math.Sqrt(12.0 / 11));
        Accuracy.AssertLre(r.Diff, 1, 15, "diff");
        Accuracy.AssertLre(r.Se.Value, Math.Sqrt(8.0 / 3), 14, "se");
        Accuracy.AssertLre(r.Df.Value, 4, 13, "df");
        Accuracy.AssertLre(r.TLower.Value, Math.Sqrt(6), 14, "t lower");
        Accuracy.AssertLre(r.TUpper.Value, -Math.Sqrt(1.5), 14, "t upper");
        Accuracy.AssertLre(r.PLower.Value, pLower, 12, "p lower");
        Accuracy.AssertLre(r.PUpper.Value, pUpper, 12, "p upper");
        Accuracy.AssertLre(r.P.Value, Math.Max(pLower, pUpper), 12, "p");
        Assert.Equal(EquivalenceVerdict.NotShownEquivalent, r.Verdict);

        // The difference test is not significant either (p about 0.58): "not different" and
        // "not shown equivalent" at once, kept apart.
        Assert.True(r.PDifference.Value > 0.5);
    }

    // The (1 - 2 alpha) interval is Diff ± t(1 - alpha; df) SE (Schuirmann 1987), and equivalence
    // at alpha holds exactly when it lies inside the margins.
    [Fact]
    public void Tost_IntervalAndVerdict_Agree()
    {
        var a = Stats(20.1, 20.3, 19.9, 20.0, 20.2, 20.1, 19.8, 20.4);
        var b = Stats(20.0, 20.2, 20.1, 19.9, 20.3, 20.0, 19.9, 20.2);
        var wide = Equivalence.Tost("a", a, "b", b, -0.5, 0.5, 0.05);
        Assert.Equal(EquivalenceVerdict.EquivalentWithinMargin, wide.Verdict);
        Assert.True(wide.CiLow.Value > -0.5 && wide.CiHigh.Value < 0.5);
        var half = Probability.TCritical(0.10, wide.Df.Value) * wide.Se.Value;
        Accuracy.AssertLre(wide.CiLow.Value, wide.Diff - half, 13, "low");
        var narrow = Equivalence.Tost("a", a, "b", b, -0.05, 0.05, 0.05);
        Assert.Equal(EquivalenceVerdict.NotShownEquivalent, narrow.Verdict);
    }

    // Non-inferiority with one margin: p is the one-sided p of that margin; the other side is
    // undefined (not given). Exact hand computation as in Tost_HandComputed.
    [Fact]
    public void NonInferiority_LowerMargin()
    {
        var r = Equivalence.NonInferiority("a", Stats(10, 12, 14), "b", Stats(9, 11, 13), -3, null, 0.05, EquivalenceVariance.Pooled);
        Accuracy.AssertLre(r.P.Value, 0.5 - (0.3 * Math.Sqrt(2.4)), 12, "p");
        Assert.False(r.PUpper.IsDefined);
        Assert.Equal(EquivalenceVerdict.NonInferiorWithinMargin, r.Verdict);
        Assert.Throws<ArgumentException>(() => Equivalence.NonInferiority("a", Stats(1, 2), "b", Stats(1, 3), -1, 1, 0.05));
    }

    // With a model's error mean square (pooled): SE² = MSE (1/n_a + 1/n_b) on the model's df.
    [Fact]
    public void Tost_ModelError()
    {
        var r = Equivalence.Tost("a", Stats(10, 12, 14), "b", Stats(9, 11, 13), -3, 3, 0.05, 2.0, 12);
        Accuracy.AssertLre(r.Se.Value, Math.Sqrt(2.0 * 2 / 3), 14, "se");
        Assert.Equal(12, r.Df.Value);
        Assert.Equal(EquivalenceVariance.Pooled, r.Variance);
    }

    // Welch–Satterthwaite df by hand: a = {1, 2, 3} (s² = 1, n 3), b = {0, 4} (s² = 8, n 2):
    // va = 1/3, vb = 4, df = (13/3)² / ((1/9)/2 + 16/1) = (169/9)/(289/18) = 338/289.
    [Fact]
    public void Welch_HandComputedDf()
    {
        var r = Equivalence.Tost("a", Stats(1, 2, 3), "b", Stats(0, 4), -10, 10, 0.05);
        Accuracy.AssertLre(r.Df.Value, 338.0 / 289, 14, "df");
        Accuracy.AssertLre(r.Se.Value, Math.Sqrt(13.0 / 3), 14, "se");
    }

    private static Gen<(double[] A, double[] B, double Low, double High)> CaseGen =>
        Gen.Choose(2, 8).SelectMany(na =>
            Gen.Choose(2, 8).SelectMany(nb =>
                Gen.Choose(-300, 300).Select(v => v / 100.0).ArrayOf(na).SelectMany(
                    a => Gen.Choose(-300, 300).Select(v => v / 100.0).ArrayOf(nb).SelectMany(
                        b => Gen.Choose(1, 400).SelectMany(lo => Gen.Choose(1, 400), (lo, hi) => (-lo / 100.0, hi / 100.0)),
                        (b, m) => (a, b, m.Item1, m.Item2)))));

    // Property (issue #16): the TOST p equals the larger of the two one-sided p-values, and the
    // verdict "equivalent" holds exactly when the (1 - 2 alpha) interval lies inside the margins.
    [Property]
    public Property Tost_PIsLargerOneSidedP()
    {
        return Prop.ForAll(CaseGen.ToArbitrary(), d =>
        {
            var a = Stats(d.A);
            var b = Stats(d.B);
            if (a.SumOfSquares + b.SumOfSquares == 0)
            {
                return true;
            }

            return new[] { EquivalenceVariance.Pooled, EquivalenceVariance.Welch }.All(v =>
            {
                var r = Equivalence.Tost("a", a, "b", b, d.Low, d.High, 0.05, v);
                if (!r.P.IsDefined)
                {
                    return r.Verdict == EquivalenceVerdict.NotShownEquivalent;
                }

                var inside = r.CiLow.Value >= d.Low && r.CiHigh.Value <= d.High;
                var equivalent = r.Verdict == EquivalenceVerdict.EquivalentWithinMargin;
                var boundary = Math.Abs(r.P.Value - 0.05) < 1e-9;
                return r.P.Value == Math.Max(r.PLower.Value, r.PUpper.Value) && (boundary || inside == equivalent);
            });
        });
    }
}
