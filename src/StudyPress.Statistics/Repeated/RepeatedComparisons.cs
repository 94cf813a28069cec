using StudyPress.Statistics.Designs;
using StudyPress.Statistics.PostHoc;

namespace StudyPress.Statistics.Repeated;

/// <summary>
/// A paired comparison of two levels of a within-subject factor. <paramref name="Estimate"/> is the
/// mean over subjects of (mean at A − mean at B); <paramref name="CiLow"/>/<paramref name="CiHigh"/>
/// is the 1 − α interval of that one comparison; the simultaneous interval uses the Bonferroni
/// level α/m (m comparisons), the interval that goes with both adjustments (Holm's procedure has
/// no interval of its own, and Bonferroni's is never shorter than it would need to be).
/// </summary>
public sealed record PairedComparison(
    string LevelA,
    string LevelB,
    double Estimate,
    Quantity Se,
    Quantity T,
    int Df,
    Quantity P,
    Quantity PAdjusted,
    Quantity CiLow,
    Quantity CiHigh,
    Quantity SimultaneousCiLow,
    Quantity SimultaneousCiHigh);

/// <summary>The paired comparisons of one within factor's levels.</summary>
public sealed record PairedComparisonsResult(
    string Factor,
    PValueAdjustmentMethod Method,
    double Alpha,
    int Subjects,
    IReadOnlyList<PairedComparison> Comparisons);

/// <summary>
/// The simple effect of a within factor at one level of a between factor: a one-way
/// repeated-measures ANOVA of the subjects of that level, with its own error term and its own
/// sphericity test; <paramref name="Anova"/> is null and <paramref name="Issue"/> says why when that
/// group cannot be analysed (e.g. a single subject).
/// </summary>
public sealed record SimpleEffect(
    string BetweenFactor,
    string Level,
    int Subjects,
    RepeatedMeasuresResult? Anova,
    DesignIssue? Issue)
{
    /// <summary>The row of the within factor in <see cref="Anova"/>.</summary>
    public RepeatedRow? Row => Anova?.Rows.First(r => r.Kind == RepeatedRowKind.Effect);
}

/// <summary>
/// Follow-up tests of a repeated-measures analysis, on the complete subjects of a
/// <see cref="RepeatedMeasuresResult"/>.
/// <para>
/// Pairwise comparisons: each subject's mean at each level of the within factor (over the other
/// within factors' cells); for every pair of levels (in level order) the paired t test of the
/// subjects' differences d: estimate d̄, SE = s_d/√N, t = d̄/SE on N − 1 df, two-sided p (Student
/// 1908; e.g. Maxwell and Delaney 2004, ch. 11, separate-variance paired tests, which do not
/// assume sphericity). The p-values of the family of k(k − 1)/2 pairs are adjusted by Holm (1979)
/// or Bonferroni (<see cref="PValueAdjustment"/>). With between factors the comparisons pool all
/// subjects (the groups' means weighted by their sizes); per group they come from
/// <see cref="SimpleEffects"/>' analyses.
/// </para>
/// <para>
/// Simple effects: for each level of a between factor, a one-way repeated-measures ANOVA of the
/// within factor on the subjects of that level only, each subject's cells averaged over the other
/// within factors; each has its own error term (the within factor × subjects of that group), not
/// the pooled one of the full analysis, so it does not assume equal error variances across groups,
/// and its own Mauchly test and epsilons. Other between factors are ignored (pooled) there.
/// </para>
/// </summary>
public static class RepeatedComparisons
{
    /// <summary>Pairwise paired t tests of the levels of <paramref name="withinFactor"/>.</summary>
    public static PairedComparisonsResult Pairwise(
        RepeatedMeasuresResult fit, string withinFactor, PValueAdjustmentMethod method, double alpha = 0.05)
    {
        ArgumentNullException.ThrowIfNull(fit);
        if (!(alpha > 0 && alpha < 1))
        {
            throw new ArgumentOutOfRangeException(nameof(alpha), "alpha must lie in (0, 1)");
        }

        var f = IndexOf(fit.Design.Within, withinFactor);
        var marginal = Marginal(fit, f);
        var levels = fit.WithinLevels[f];
        var n = marginal.Length;
        var df = n - 1;
        var pairs = new List<(int A, int B)>();
        for (var a = 0; a < levels.Count; a++)
        {
            for (var b = a + 1; b < levels.Count; b++)
            {
                pairs.Add((a, b));
            }
        }

        var m = pairs.Count;
        var tCrit = df > 0 ? Probability.TCritical(alpha, df) : double.NaN;
        var tSim = df > 0 ? Probability.TCritical(alpha / m, df) : double.NaN;
        var raw = new List<(double Est, Quantity Se, Quantity T, Quantity P)>();
        foreach (var (a, b) in pairs)
        {
            var d = marginal.Select(r => r[a] - r[b]).ToArray();
            var est = Groups.Mean(d);
            Quantity se, t, p;
            if (df < 1)
            {
                se = t = p = Quantity.Undefined("a paired comparison needs at least two subjects");
            }
            else
            {
                var ss = d.Sum(v => (v - est) * (v - est));
                var s = Math.Sqrt(ss / df);
                se = Quantity.Of(s / Math.Sqrt(n));
                if (se.Value > 0)
                {
                    t = Quantity.Of(est / se.Value);
                    p = Quantity.Of(Probability.TTwoSided(t.Value, df));
                }
                else
                {
                    t = p = Quantity.Undefined("every subject shows the same difference, so its standard error is zero");
                }
            }

            raw.Add((est, se, t, p));
        }

        var adjusted = PValueAdjustment.Adjust([.. raw.Select(r => r.P)], method);
        var list = new List<PairedComparison>();
        for (var i = 0; i < m; i++)
        {
            var (est, se, t, p) = raw[i];
            Quantity lo, hi, slo, shi;
            if (se.IsDefined)
            {
                lo = Quantity.Of(est - (tCrit * se.Value));
                hi = Quantity.Of(est + (tCrit * se.Value));
                slo = Quantity.Of(est - (tSim * se.Value));
                shi = Quantity.Of(est + (tSim * se.Value));
            }
            else
            {
                lo = hi = slo = shi = se;
            }

            list.Add(new PairedComparison(levels[pairs[i].A], levels[pairs[i].B], est, se, t, df, p, adjusted[i], lo, hi, slo, shi));
        }

        return new PairedComparisonsResult(withinFactor, method, alpha, n, list);
    }

    /// <summary>The simple effects of <paramref name="withinFactor"/> at each level of <paramref name="betweenFactor"/>.</summary>
    public static IReadOnlyList<SimpleEffect> SimpleEffects(RepeatedMeasuresResult fit, string withinFactor, string betweenFactor)
    {
        ArgumentNullException.ThrowIfNull(fit);
        var f = IndexOf(fit.Design.Within, withinFactor);
        var b = IndexOf(fit.Design.Between, betweenFactor);
        var marginal = Marginal(fit, f);
        var levels = fit.WithinLevels[f];
        var design = new RepeatedMeasuresDesign(fit.Design.Subject, [withinFactor], []);
        var result = new List<SimpleEffect>();
        for (var level = 0; level < fit.BetweenLevels[b].Count; level++)
        {
            var members = Enumerable.Range(0, marginal.Length).Where(s => fit.SubjectBetween[s][b] == level).ToList();
            var y = new List<double>();
            var subject = new List<string>();
            var within = new List<string>();
            foreach (var s in members)
            {
                for (var l = 0; l < levels.Count; l++)
                {
                    y.Add(marginal[s][l]);
                    subject.Add(fit.Subjects[s]);
                    within.Add(levels[l]);
                }
            }

            var data = new RepeatedMeasuresData([.. y], subject, [within], []);
            var issue = RepeatedMeasuresAnova.Check(design, data);
            var anova = issue is null ? RepeatedMeasuresAnova.Fit(design, data, fit.SsType) : null;
            result.Add(new SimpleEffect(betweenFactor, fit.BetweenLevels[b][level], members.Count, anova, issue));
        }

        return result;
    }

    /// <summary>Each subject's mean at each level of within factor <paramref name="f"/>.</summary>
    private static double[][] Marginal(RepeatedMeasuresResult fit, int f)
    {
        var k = fit.WithinLevels[f].Count;
        var w = fit.Cells;
        var perLevel = w / k;
        var result = new double[fit.CellMeans.Count][];
        for (var s = 0; s < result.Length; s++)
        {
            var sums = new double[k];
            for (var c = 0; c < w; c++)
            {
                sums[fit.LevelOf(c, f)] += fit.CellMeans[s][c];
            }

            result[s] = [.. sums.Select(v => v / perLevel)];
        }

        return result;
    }

    private static int IndexOf(IReadOnlyList<string> names, string name)
    {
        for (var i = 0; i < names.Count; i++)
        {
            if (string.Equals(names[i], name, StringComparison.Ordinal))
            {
                return i;
            }
        }

        throw new ArgumentException("the design has no factor " + name + " of that kind", nameof(name));
    }
}
