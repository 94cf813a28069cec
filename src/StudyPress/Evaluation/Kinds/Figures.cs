using System.Globalization;
using StudyPress.Charts;
using StudyPress.Evaluation;
using StudyPress.Statistics.Power;

namespace StudyPress.Evaluation.Kinds;

/// <summary>A chart placed in the report, with the caption shown under it.</summary>
public sealed record Figure(string Type, string Caption, Chart Chart)
{
    /// <summary>What tells this figure from others of its type in the same block (an F distribution's term), or null.</summary>
    public string? Part { get; init; }
}

/// <summary>
/// Builds the report's figures from block outcomes. Each kind places the figures that belong to it
/// (unless the header sets <c>report: {figures: none}</c>); the <c>figure</c> block draws any of
/// them on its own.
/// </summary>
public static class Figures
{

    /// <summary>Above this many points in one figure (or group), the figure draws a thinned set.</summary>
    internal const int MaxPoints = 5000;

    /// <summary>How many points a thinned figure draws.</summary>
    internal const int ThinnedPoints = 2000;

    private static readonly System.Runtime.CompilerServices.ConditionalWeakTable<double[], double[]> Thinned = new();

    private static readonly System.Runtime.CompilerServices.ConditionalWeakTable<int[], double[]> SortedCells = new();

    /// <summary>
    /// A cell's response values (<paramref name="positions"/> into the block, as
    /// <see cref="BlockData.Cells"/> gives them) in ascending order: sorted once per cell and shared
    /// by the summary, the means figure and the box plots. The array must not be changed. Exact
    /// values in a narrow range are sorted by counting (<see cref="Data.ExactValues.CountingSorted"/>,
    /// the same array), others by <see cref="Statistics.FastSort"/>.
    /// </summary>
    internal static double[] SortedValues(BlockData data, int[] positions) => SortedCells.GetValue(positions, p =>
    {
        if (data.Exact?.CountingSorted(data.Values, p) is { } counted)
        {
            return counted;
        }

        var v = new double[p.Length];
        for (var k = 0; k < p.Length; k++)
        {
            v[k] = data.Values[p[k]];
        }

        Statistics.FastSort.Sort(v);
        return v;
    });

    /// <summary>
    /// Sorts every cell of the block at once (<see cref="SortedValues"/>), the cells spread over the
    /// processor's cores; each cell's sorted values are the same whichever thread sorts them.
    /// </summary>
    internal static void SortAllCells(BlockData data)
    {
        var cells = data.Cells();
        if (cells.Count < 2 || data.Rows.Length < 2 * MaxPoints)
        {
            return;
        }

        Parallel.For(0, cells.Count, c => SortedValues(data, cells[c].Positions));
    }

    /// <summary>Evenly spaced order statistics of sorted values (see <see cref="Thin"/>).</summary>
    private static double[] ThinSorted(double[] sorted)
    {
        var ranks = ThinRanks(sorted.Length);
        var r = new double[ThinnedPoints];
        for (var k = 0; k < ThinnedPoints; k++)
        {
            r[k] = sorted[ranks[k]];
        }

        return r;
    }

    /// <summary>The 0-based ranks of the <see cref="ThinnedPoints"/> evenly spaced order statistics of n values.</summary>
    private static int[] ThinRanks(int n)
    {
        var ranks = new int[ThinnedPoints];
        for (var k = 0; k < ThinnedPoints; k++)
        {
            ranks[k] = (int)Math.Round((double)k * (n - 1) / (ThinnedPoints - 1));
        }

        return ranks;
    }

    /// <summary>
    /// The values themselves up to <see cref="MaxPoints"/>; above, <see cref="ThinnedPoints"/> evenly
    /// spaced order statistics (the smallest and largest included), so a figure of millions of
    /// points stays small and quick while its shape is kept.
    /// </summary>
    internal static double[] Thin(double[] values)
    {
        if (values.Length <= MaxPoints)
        {
            return values;
        }

        // The wanted order statistics only, not a sorted copy of all the values (same doubles).
        return Thinned.GetValue(values, v => Statistics.FastSort.OrderStatistics(v, ThinRanks(v.Length)));
    }

    private static string ThinNote(int n) => n > MaxPoints
        ? string.Create(CultureInfo.InvariantCulture, $" With {n:N0} observations, the figure draws {ThinnedPoints:N0} evenly spaced order statistics instead of every point.")
        : string.Empty;

    /// <summary>Box plots with every observation over them, by the block's cells.</summary>
    /// <summary>A user-supplied name set inside generated text: isolated on its own, so that numbers beside it keep their order.</summary>
    private static string Name(string name) => StudyPress.Charts.BidiText.Isolate(name);

    public static Figure? Box(BlockData data, string? caption = null)
    {
        var cells = data.Factors.Count == 0 ? [("all", Array.Empty<int>(), data.Response, Enumerable.Range(0, data.Rows.Length).ToArray())] : data.Cells();
        // Above the limit the thinned order statistics come from the cell's shared sorted values.
        var groups = cells.Select(c => new GroupSample(
            c.Label,
            c.Positions.Length <= MaxPoints ? [.. c.Positions.Select(i => data.Values[i])] : ThinSorted(SortedValues(data, c.Positions)))).ToList();
        var by = string.Join(" and ", data.Factors.Select(f => f.Spec.Display));
        var chart = StatCharts.GroupDistributions(groups, new ChartLabels($"Distribution of {Name(data.ResponseLabel)}" + (by.Length > 0 ? " by " + Name(by) : string.Empty), by, data.ResponseLabel));
        var largest = cells.Max(c => c.Positions.Length);
        return new Figure("box", caption ?? $"Each group's box spans the quartiles with the median marked; whiskers reach the most extreme values within 1.5 IQR of the box; every observation is drawn as a point." + ThinNote(largest), chart);
    }

    /// <summary>Group means with t confidence intervals.</summary>
    public static Figure? Means(BlockData data, double alpha, string? caption = null)
    {
        var cells = data.Factors.Count == 0 ? [("all", Array.Empty<int>(), data.Response, Enumerable.Range(0, data.Rows.Length).ToArray())] : data.Cells();
        var means = new List<GroupMean>();
        if (data.Factors.Count > 0)
        {
            SortAllCells(data);
        }

        foreach (var (label, _, values, positions) in cells)
        {
            var s = Statistics.Descriptive.Descriptives.ComputeSorted(values, SortedValues(data, positions), data.Centre, alpha, data.ExactMean(positions));
            if (!s.CiLow.IsDefined)
            {
                continue;
            }

            means.Add(new GroupMean(label, s.Mean, s.CiLow.Value, s.CiHigh.Value));
        }

        if (means.Count == 0)
        {
            return null;
        }

        var level = Confidence(alpha);
        var by = string.Join(" and ", data.Factors.Select(f => f.Spec.Display));
        var chart = StatCharts.GroupMeans(means, level, new ChartLabels($"Mean {Name(data.ResponseLabel)} with {level} intervals", by, data.ResponseLabel));
        return new Figure("means", caption ?? $"Group means with {level} confidence intervals (each group's own t interval, not adjusted for multiple comparisons).", chart);
    }

    /// <summary>Cell means of the first two factors, one line per level of the second factor.</summary>
    public static Figure? Interaction(AnovaOutcome anova, string? caption = null)
    {
        if (anova.Input is null || anova.Input.Factors.Count < 2)
        {
            return null;
        }

        var a = anova.Data!.Factors[0];
        var b = anova.Data.Factors[1];
        // Means over the crossing of the first two factors (averaging over any further factors).
        var cells = Enumerable.Range(0, anova.Data.Rows.Length)
            .GroupBy(i => (a.Codes[i], b.Codes[i]))
            .OrderBy(g => g.Key.Item1).ThenBy(g => g.Key.Item2)
            .Select(g => new CellMean(a.Levels[g.Key.Item1], b.Levels[g.Key.Item2], g.Average(i => anova.Data.Values[i])))
            .ToList();

        var chart = StatCharts.InteractionPlot(a.Levels, b.Levels, cells, b.Spec.Display, new ChartLabels($"Mean {Name(anova.Data.ResponseLabel)} by {Name(a.Spec.Display)} and {Name(b.Spec.Display)}", a.Spec.Display, anova.Data.ResponseLabel));
        return new Figure("interaction", caption ?? $"Observed cell means; lines that are not parallel suggest an interaction (compare with the F test of {Name(a.Spec.Display)} × {Name(b.Spec.Display)}).", chart);
    }

    public static Figure? Qq(AnovaOutcome anova, string? caption = null)
    {
        if (anova.Result is null || anova.Result.Residuals.Length < 3)
        {
            return null;
        }

        var level = Confidence(anova.Result.Alpha);
        var chart = StatCharts.NormalQuantilePlot(Thin(anova.Result.Residuals), new ChartLabels("Normal quantile plot of the residuals", "standard normal quantile", "residual"), 1 - anova.Result.Alpha);
        return new Figure("qq", caption ?? $"Residuals against normal quantiles (Blom plotting positions), with a line through the quartiles and a pointwise {level} envelope from the order statistics' beta distributions; points along the line are what normal residuals look like." + ThinNote(anova.Result.Residuals.Length), chart);
    }

    public static Figure? Histogram(AnovaOutcome anova, string? caption = null)
    {
        if (anova.Result is null || anova.Result.Residuals.Length < 3)
        {
            return null;
        }

        var chart = StatCharts.ResidualHistogram(Thin(anova.Result.Residuals), new ChartLabels("Distribution of the residuals", "residual", "count"));
        return new Figure("residual-histogram", caption ?? "Histogram of the residuals (Freedman–Diaconis bins) with the fitted normal density and a kernel density estimate (Silverman's bandwidth)." + ThinNote(anova.Result.Residuals.Length), chart);
    }

    public static Figure? ResidualsFitted(AnovaOutcome anova, string? caption = null)
    {
        if (anova.Result is null)
        {
            return null;
        }

        var n = anova.Result.Residuals.Length;
        var picks = n > MaxPoints ? [.. Enumerable.Range(0, ThinnedPoints).Select(k => (int)((long)k * n / ThinnedPoints))] : Enumerable.Range(0, n).ToArray();
        var fitted = picks.Select(i => anova.Result.Fitted[i] + anova.ResponseCentre).ToArray();
        var residuals = picks.Select(i => anova.Result.Residuals[i]).ToArray();
        var chart = StatCharts.ResidualsVersusFitted(fitted, residuals, new ChartLabels("Residuals against fitted values", "fitted value" + (anova.Transformed is null ? string.Empty : " (transformed scale)"), "residual"));
        return new Figure("residuals-fitted", caption ?? "A funnel shape (spread growing with the fitted value) suggests unequal variances; curvature suggests a missing term or a needed transformation." + (n > MaxPoints ? string.Create(CultureInfo.InvariantCulture, $" With {n:N0} observations, every {Math.Max(1, n / ThinnedPoints):N0}th one in data order is drawn ({ThinnedPoints:N0} points).") : string.Empty), chart);
    }

    public static IEnumerable<Figure> FDistributions(AnovaOutcome anova, string? caption = null)
    {
        // From the table alone, so on either route (rows or cell statistics).
        if (anova.Fit is not { } fit)
        {
            yield break;
        }

        foreach (var t in fit.Terms)
        {
            if (!t.F.IsDefined || t.Df <= 0 || fit.ResidualDf <= 0)
            {
                continue;
            }

            // A covariate's row (analysis of covariance) is named by its column.
            var name = string.Join(" × ", t.Factors.Select(n => Name(anova.Factors.FirstOrDefault(f => f.Name == n)?.Display ?? n)));
            var chart = StatCharts.FDistribution(t.Df, fit.ResidualDf, t.F.Value, fit.Alpha, new ChartLabels(string.Create(CultureInfo.InvariantCulture, $"F({t.Df}, {fit.ResidualDf}) distribution: {name}"), "F", "density"));
            yield return new Figure("f-distribution", caption ?? string.Create(CultureInfo.InvariantCulture, $"The F distribution under no effect of {name}; the shaded region is the rejection region at α = {NumberText.Current.Level(fit.Alpha)} and the line marks the observed F."), chart) { Part = string.Join("-", t.Factors) };
        }
    }

    public static Figure? Intervals(PostHocOutcome posthoc, double alpha, string? caption = null)
    {
        var family = posthoc.Families.FirstOrDefault(f => f.Pairs.Any(p => p.Pair.CiLow.IsDefined));
        if (family is null)
        {
            return null;
        }

        var rows = family.Pairs
            .Where(p => p.Pair.CiLow.IsDefined && p.Pair.CiHigh.IsDefined)
            .Select(p => new IntervalComparison(StudyPress.Charts.BidiText.Isolate(p.Pair.LevelA) + " − " + StudyPress.Charts.BidiText.Isolate(p.Pair.LevelB), p.Pair.Diff, p.Pair.CiLow.Value, p.Pair.CiHigh.Value))
            .ToList();
        if (rows.Count == 0)
        {
            // One-sided bounds (Dunnett with a direction) have an open end: no two-sided interval to draw.
            return null;
        }

        var level = Confidence(alpha);
        var chart = StatCharts.SimultaneousIntervals(rows, level, new ChartLabels($"{family.Title}: differences with {level} joint intervals", "difference", string.Empty));
        return new Figure("intervals", caption ?? $"Each difference with its {level} joint interval (the intervals cover all the pairs together); intervals that exclude zero (solid, diamond) are the pairs the procedure separates.", chart);
    }

    public static Figure? PowerCurve(PowerOutcome power, string? caption = null)
    {
        if (power.Groups < 2 || power.Effect <= 0)
        {
            return null;
        }

        var reference = power.Required.TryGetValue(Stat.NPerGroup, out var need) && need.Value.IsDefined ? (int)need.Value.Value : 0;
        var planned = power.Values.TryGetValue(Stat.NPerGroup, out var n) ? (int)n.Value.Value : 0;
        var top = Math.Max(10, (int)(1.5 * Math.Max(reference, planned)) + 2);
        top = Math.Min(top, 5000);
        var step = Math.Max(1, top / 60);
        var points = new List<PowerPoint>();
        for (var k = 2; k <= top; k += step)
        {
            var p = AnovaPower.Power(power.Effect, power.Groups, k, power.Alpha);
            if (p.IsDefined)
            {
                points.Add(new PowerPoint(k, p.Value));
            }
        }

        PowerPoint? marked = null;
        if (reference > 0 && power.Required[Stat.Power].Value.IsDefined)
        {
            marked = new PowerPoint(reference, power.Required[Stat.Power].Value.Value);
        }
        else if (planned > 0 && power.Values[Stat.Power].Value.IsDefined)
        {
            marked = new PowerPoint(planned, power.Values[Stat.Power].Value.Value);
        }

        var chart = StatCharts.PowerCurve(points, power.Target ?? 0.8, marked, new ChartLabels(string.Create(CultureInfo.InvariantCulture, $"Power against n per group (k = {power.Groups}, f = {power.Effect:0.###}, α = {NumberText.Current.Level(power.Alpha)})"), "n per group", "power"));
        return new Figure("power-curve", caption ?? "Power of the F test as the group size grows; the horizontal line is the target power.", chart);
    }

    /// <summary>An equivalence block's (1 − 2α) intervals against its shaded margin band and the zero line.</summary>
    public static Figure? Equivalence(EquivalenceOutcome outcome, string? caption = null)
    {
        var rows = outcome.Comparisons
            .Where(c => c.Result.CiLow.IsDefined && c.Result.CiHigh.IsDefined)
            .Select(c => new EquivalenceInterval(
                StudyPress.Charts.BidiText.Isolate(c.Result.LevelA) + " − " + StudyPress.Charts.BidiText.Isolate(c.Result.LevelB),
                c.Result.Diff,
                c.Result.CiLow.Value,
                c.Result.CiHigh.Value,
                c.Result.Verdict is Statistics.FollowUp.EquivalenceVerdict.EquivalentWithinMargin or Statistics.FollowUp.EquivalenceVerdict.NonInferiorWithinMargin))
            .ToList();
        if (rows.Count == 0)
        {
            return null;
        }

        var first = outcome.Comparisons[0].Result;
        var level = Confidence(2 * first.Alpha);
        var what = outcome.NonInferiority ? "non-inferiority margin" : "equivalence margin";
        var chart = StatCharts.EquivalenceIntervals(rows, first.MarginLow, first.MarginHigh, level + " intervals",
            new ChartLabels($"Differences of {outcome.FactorLabel} with {level} intervals against the {what}", "difference", string.Empty));
        return new Figure("equivalence", caption ?? (outcome.NonInferiority
            ? $"Each difference with its {level} interval; the shaded region is the side of the margin that counts as not inferior. Non-inferiority is shown where the whole interval lies in it (solid, diamond); an interval reaching past the margin does not show it."
            : $"Each difference with its {level} interval; the shaded band is the equivalence margin. Equivalence is shown where the whole interval lies inside the band (solid, diamond); an interval reaching beyond it does not show equivalence, even when it covers zero (finding no difference is not showing equivalence)."), chart);
    }

    private static string Confidence(double alpha) => NumberText.Confidence(alpha);
}
