using MathNet.Numerics;
using StudyPress.Statistics.Anova;
using StudyPress.Statistics.Distributions;

namespace StudyPress.Statistics.PostHoc;

/// <summary>
/// The post-hoc procedures of this folder computed from each group's count, mean and within-group
/// sum of squares (<see cref="GroupStatistics"/>) instead of its values, for data a database
/// aggregated: the same formulas, edge cases and results as <see cref="TukeyHsd"/>,
/// <see cref="GamesHowell"/>, <see cref="PooledTTests"/> and <see cref="Dunnett"/>, which take the
/// groups' values (they need nothing else: the means, the sizes and, for Games–Howell, the
/// variances SS/(n − 1)). Dunn's rank comparisons need the values and have no twin here.
/// </summary>
public static class PostHocFromSummaries
{
    /// <summary>Each group's count, two-pass mean and sum of squared deviations, as the value-based procedures use them.</summary>
    public static GroupStatistics[] Summaries(IReadOnlyList<double[]> groups)
    {
        var result = new GroupStatistics[groups.Count];
        for (var i = 0; i < groups.Count; i++)
        {
            var mean = Groups.Mean(groups[i]);
            result[i] = new GroupStatistics(groups[i].Length, mean, groups[i].Length > 1 ? Groups.SumOfSquares(groups[i], mean) : 0);
        }

        return result;
    }

    private const double Sqrt2 = 1.4142135623730950488;

    /// <summary>Tukey HSD / Tukey–Kramer; see <see cref="TukeyHsd.Compare"/>.</summary>
    public static PostHocResult CompareTukey(IReadOnlyList<string> levels, IReadOnlyList<GroupStatistics> groups, double msResidual, int dfResidual, double alpha)
    {
        Validate(levels, groups, alpha);
        var k = groups.Count;
        var equal = groups.All(g => g.Count == groups[0].Count);
        string? reason = null;
        if (dfResidual < 1)
        {
            reason = "there are no residual degrees of freedom";
        }
        else if (!(msResidual > 0) || !double.IsFinite(msResidual))
        {
            reason = msResidual == 0
                ? "the residual mean square is zero, so the standard errors are zero"
                : "the residual mean square is not a positive finite number";
        }

        var method = equal ? "Tukey HSD" : "Tukey–Kramer";
        var comparisons = new List<PairwiseComparison>(k * (k - 1) / 2);
        if (reason is not null)
        {
            var u = Quantity.Undefined(reason);
            for (var i = 0; i < k; i++)
            {
                for (var j = i + 1; j < k; j++)
                {
                    comparisons.Add(new PairwiseComparison(levels[i], levels[j], groups[i].Mean - groups[j].Mean, u, u, u, u, u, dfResidual >= 1 ? Quantity.Of(dfResidual) : u));
                }
            }

            return new PostHocResult(method, alpha, comparisons, u);
        }

        double df = dfResidual;
        var qCrit = StudentizedRange.UpperQuantile(alpha, k, df);
        for (var i = 0; i < k; i++)
        {
            for (var j = i + 1; j < k; j++)
            {
                var diff = groups[i].Mean - groups[j].Mean;
                var se = Math.Sqrt(msResidual * ((1.0 / groups[i].Count) + (1.0 / groups[j].Count)));
                var q = Sqrt2 * Math.Abs(diff) / se;
                var half = qCrit / Sqrt2 * se;
                comparisons.Add(new PairwiseComparison(
                    levels[i],
                    levels[j],
                    diff,
                    Quantity.Of(se),
                    Quantity.Of(q),
                    Quantity.Of(diff - half),
                    Quantity.Of(diff + half),
                    Quantity.Of(StudentizedRange.Upper(q, k, df)),
                    Quantity.Of(df)));
            }
        }

        return new PostHocResult(method, alpha, comparisons, Quantity.Of(qCrit));
    }

    /// <summary>Games–Howell; see <see cref="GamesHowell.Compare"/>.</summary>
    public static PostHocResult CompareGamesHowell(IReadOnlyList<string> levels, IReadOnlyList<GroupStatistics> groups, double alpha)
    {
        Validate(levels, groups, alpha);
        var k = groups.Count;
        var varOverN = groups.Select(g => g.Count > 1 ? g.SumOfSquares / (g.Count - 1) / g.Count : double.NaN).ToArray();
        var comparisons = new List<PairwiseComparison>(k * (k - 1) / 2);
        for (var i = 0; i < k; i++)
        {
            for (var j = i + 1; j < k; j++)
            {
                var diff = groups[i].Mean - groups[j].Mean;
                string? reason = null;
                if (groups[i].Count < 2 || groups[j].Count < 2)
                {
                    var one = groups[i].Count < 2 ? levels[i] : levels[j];
                    reason = "group '" + one + "' has one observation, so its variance is not defined";
                }
                else if (!(varOverN[i] + varOverN[j] > 0))
                {
                    reason = "both groups have zero variance, so the standard error is zero";
                }

                if (reason is not null)
                {
                    var u = Quantity.Undefined(reason);
                    comparisons.Add(new PairwiseComparison(levels[i], levels[j], diff, u, u, u, u, u, u));
                    continue;
                }

                var a = varOverN[i];
                var b = varOverN[j];
                var se2 = a + b;
                var se = Math.Sqrt(se2);
                var df = se2 * se2 / ((a * a / (groups[i].Count - 1)) + (b * b / (groups[j].Count - 1)));
                df = Math.Max(df, 1.0);
                var q = Sqrt2 * Math.Abs(diff) / se;
                var qCrit = StudentizedRange.UpperQuantile(alpha, k, df);
                var half = qCrit / Sqrt2 * se;
                comparisons.Add(new PairwiseComparison(
                    levels[i],
                    levels[j],
                    diff,
                    Quantity.Of(se),
                    Quantity.Of(q),
                    Quantity.Of(diff - half),
                    Quantity.Of(diff + half),
                    Quantity.Of(StudentizedRange.Upper(q, k, df)),
                    Quantity.Of(df)));
            }
        }

        return new PostHocResult(
            "Games–Howell",
            alpha,
            comparisons,
            Quantity.Undefined("the critical value differs per pair (Welch–Satterthwaite degrees of freedom)"));
    }

    /// <summary>Pooled-variance t tests with Holm or Bonferroni adjustment; see <see cref="PooledTTests.Compare"/>.</summary>
    public static PostHocResult ComparePooledT(
        IReadOnlyList<string> levels,
        IReadOnlyList<GroupStatistics> groups,
        double msResidual,
        int dfResidual,
        double alpha,
        PValueAdjustmentMethod method,
        string? control = null)
    {
        Validate(levels, groups, alpha);
        if (dfResidual < 0)
        {
            throw new ArgumentOutOfRangeException(nameof(dfResidual), "negative degrees of freedom");
        }

        var pairs = PostHocInput.Pairs(levels, control);
        var m = pairs.Count;
        var name = string.Concat(
            "Pairwise t tests on the pooled variance",
            control is null ? string.Empty : " against control " + control,
            method == PValueAdjustmentMethod.Holm ? " (Holm)" : " (Bonferroni)");
        var problem = PostHocInput.VarianceProblem(msResidual, dfResidual);
        var critical = problem is null ? Quantity.Of(Probability.TCritical(alpha / m, dfResidual)) : Quantity.Undefined(problem);
        var raw = new Quantity[m];
        var rows = new (double Diff, Quantity Se, Quantity T)[m];
        for (var c = 0; c < m; c++)
        {
            var (a, b) = pairs[c];
            var diff = groups[a].Mean - groups[b].Mean;
            if (problem is not null)
            {
                rows[c] = (diff, Quantity.Undefined(problem), Quantity.Undefined(problem));
                raw[c] = Quantity.Undefined(problem);
                continue;
            }

            var se = Math.Sqrt(msResidual * ((1.0 / groups[a].Count) + (1.0 / groups[b].Count)));
            var t = diff / se;
            rows[c] = (diff, Quantity.Of(se), Quantity.Of(t));
            raw[c] = Quantity.Of(Probability.TTwoSided(t, dfResidual));
        }

        var adjusted = PValueAdjustment.Adjust(raw, method);
        var df = problem is null ? Quantity.Of(dfResidual) : Quantity.Undefined(problem);
        var list = new PairwiseComparison[m];
        for (var c = 0; c < m; c++)
        {
            var (a, b) = pairs[c];
            var (diff, se, t) = rows[c];
            var half = critical.IsDefined && se.IsDefined ? Quantity.Of(critical.Value * se.Value) : critical;
            list[c] = new PairwiseComparison(levels[a], levels[b], diff, se, t, half.Map(h => diff - h), half.Map(h => diff + h), adjusted[c], df);
        }

        return new PostHocResult(name, alpha, list, critical);
    }

    /// <summary>Dunnett's many-to-one comparisons; see <see cref="Dunnett.Compare"/>.</summary>
    public static PostHocResult CompareDunnett(
        IReadOnlyList<string> levels,
        IReadOnlyList<GroupStatistics> groups,
        double msResidual,
        int dfResidual,
        double alpha,
        string control)
    {
        ArgumentNullException.ThrowIfNull(control);
        Validate(levels, groups, alpha);
        if (dfResidual < 0)
        {
            throw new ArgumentOutOfRangeException(nameof(dfResidual), "negative degrees of freedom");
        }

        var c0 = PostHocInput.ControlIndex(levels, control);
        var pairs = PostHocInput.Pairs(levels, control);
        var n0 = groups[c0].Count;
        var lambdas = pairs.Select(p => Math.Sqrt(groups[p.A].Count / (double)(groups[p.A].Count + n0))).ToArray();
        var name = "Dunnett many-to-one comparisons against control " + control;
        var problem = PostHocInput.VarianceProblem(msResidual, dfResidual);
        Quantity critical;
        if (problem is not null)
        {
            critical = Quantity.Undefined(problem);
        }
        else
        {
            try
            {
                critical = Quantity.Of(Dunnett.CriticalValue(alpha, lambdas, dfResidual));
            }
            catch (NonConvergenceException)
            {
                critical = Quantity.Undefined("the Dunnett critical value could not be computed (the root search did not converge)");
            }
        }

        var df = problem is null ? Quantity.Of(dfResidual) : Quantity.Undefined(problem);
        var list = new PairwiseComparison[pairs.Count];
        for (var c = 0; c < pairs.Count; c++)
        {
            var (a, b) = pairs[c];
            var diff = groups[a].Mean - groups[b].Mean;
            if (problem is not null)
            {
                var u = Quantity.Undefined(problem);
                list[c] = new PairwiseComparison(levels[a], levels[b], diff, u, u, u, u, u, u);
                continue;
            }

            var se = Math.Sqrt(msResidual * ((1.0 / groups[a].Count) + (1.0 / n0)));
            var t = diff / se;
            var p = Quantity.Of(Math.Min(1.0, Dunnett.UpperProbability(Math.Abs(t), lambdas, dfResidual)));
            var half = critical.Map(cv => cv * se);
            list[c] = new PairwiseComparison(levels[a], levels[b], diff, Quantity.Of(se), Quantity.Of(t), half.Map(h => diff - h), half.Map(h => diff + h), p, df);
        }

        return new PostHocResult(name, alpha, list, critical);
    }

    private static void Validate(IReadOnlyList<string> levels, IReadOnlyList<GroupStatistics> groups, double alpha)
    {
        ArgumentNullException.ThrowIfNull(levels);
        ArgumentNullException.ThrowIfNull(groups);
        if (groups.Count < 2)
        {
            throw new ArgumentException("at least two groups are needed", nameof(groups));
        }

        if (levels.Count != groups.Count)
        {
            throw new ArgumentException("levels and groups differ in length", nameof(levels));
        }

        foreach (var g in groups)
        {
            if (g.Count < 1)
            {
                throw new ArgumentException("a group is empty", nameof(groups));
            }

            if (!double.IsFinite(g.Mean) || !double.IsFinite(g.SumOfSquares))
            {
                throw new ArgumentException("a summary is not finite", nameof(groups));
            }
        }

        if (!(alpha > 0 && alpha < 1))
        {
            throw new ArgumentOutOfRangeException(nameof(alpha), "alpha must lie in (0, 1)");
        }
    }
}
