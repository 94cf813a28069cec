using System.Globalization;
using StudyPress.Charts;
using StudyPress.Evaluation;
using StudyPress.Statistics.FollowUp;
using StudyPress.Statistics.Power;

namespace StudyPress.Evaluation.Kinds;

/// <summary>
/// A figure to draw under a block: which chart and the values it shows, computed here; no text.
/// Rendering (<c>Rendering/Figures.cs</c>) writes its title, axis labels and caption and draws it.
/// </summary>
/// <param name="Type">The chart's name (its CSS class and the end of its file name).</param>
public abstract record FigurePlan(string Type)
{
    /// <summary>What tells this figure from others of its type in the same block (an F distribution's term), or null.</summary>
    public string? Part { get; init; }

    /// <summary>The block's own caption (the study's words, a <c>figure</c> block's <c>caption</c>), shown instead of the generated one; null for the generated one.</summary>
    public string? UserCaption { get; init; }
}

/// <summary>Box plots with every observation (thinned above <see cref="Figures.MaxPoints"/>), by the block's cells.</summary>
/// <param name="By">The factors' display names (none for one group).</param>
/// <param name="Largest">The largest cell's number of observations.</param>
public sealed record BoxFigure(IReadOnlyList<GroupSample> Groups, IReadOnlyList<string> By, string Response, int Largest) : FigurePlan("box");

/// <summary>Group means with each group's own t interval at <paramref name="Alpha"/>.</summary>
public sealed record MeansFigure(IReadOnlyList<GroupMean> Means, double Alpha, IReadOnlyList<string> By, string Response) : FigurePlan("means");

/// <summary>Observed cell means of two factors (display names <paramref name="A"/> and <paramref name="B"/>), one line per level of the second.</summary>
public sealed record InteractionFigure(IReadOnlyList<string> ALevels, IReadOnlyList<string> BLevels, IReadOnlyList<CellMean> Cells, string A, string B, string Response) : FigurePlan("interaction");

/// <summary>Residuals (thinned; <paramref name="Count"/> of them in all) against normal quantiles with an envelope at <paramref name="Alpha"/>.</summary>
public sealed record QqFigure(double[] Residuals, int Count, double Alpha) : FigurePlan("qq");

/// <summary>Histogram of the residuals (thinned; <paramref name="Count"/> in all).</summary>
public sealed record HistogramFigure(double[] Residuals, int Count) : FigurePlan("residual-histogram");

/// <summary>Residuals against fitted values (every point, or an even choice in data order above <see cref="Figures.MaxPoints"/>; <paramref name="Count"/> in all).</summary>
public sealed record ResidualsFittedFigure(double[] Fitted, double[] Residuals, int Count, bool TransformedScale) : FigurePlan("residuals-fitted");

/// <summary>One term's F distribution under no effect, its rejection region at <paramref name="Alpha"/> and the observed F; <paramref name="Term"/> are the display names of its factors (or a covariate's column).</summary>
public sealed record FDistributionFigure(int Df, int ResidualDf, double F, double Alpha, IReadOnlyList<string> Term) : FigurePlan("f-distribution");

/// <summary>A pair's difference with its joint interval.</summary>
public sealed record PairInterval(string LevelA, string LevelB, double Difference, double Lower, double Upper);

/// <summary>The first post-hoc family's differences with their joint intervals at <paramref name="Alpha"/>.</summary>
public sealed record IntervalsFigure(IReadOnlyList<PairInterval> Pairs, double Alpha, PostHocFamily Family) : FigurePlan("intervals");

/// <summary>Power of the F test against n per group, with the marked design (the required or the planned n).</summary>
public sealed record PowerCurveFigure(IReadOnlyList<PowerPoint> Points, double Target, PowerPoint? Marked, int Groups, double Effect, double Alpha) : FigurePlan("power-curve");

/// <summary>An equivalence block's differences with their (1 − 2α) intervals (<paramref name="Alpha"/> = 2α) against the margin; each pair with whether its interval lies within the margin.</summary>
public sealed record EquivalenceFigure(IReadOnlyList<(PairInterval Pair, bool Shown)> Pairs, double? MarginLow, double? MarginHigh, double Alpha, bool NonInferiority, string Factor) : FigurePlan("equivalence");

/// <summary>A design treatment's means with intervals on the error mean square its F test used (term <paramref name="ErrorTerm"/>, <paramref name="ErrorDf"/> df).</summary>
public sealed record DesignMeansFigure(IReadOnlyList<GroupMean> Means, double Alpha, string Factor, string Response, string ErrorTerm, int ErrorDf) : FigurePlan("means");

/// <summary>One factor's estimated marginal means with intervals on their error mean square (back-transformed when <paramref name="Transformed"/>).</summary>
public sealed record MarginalMeansFigure(IReadOnlyList<GroupMean> Means, double Alpha, string Factor, string Response, string ErrorTerm, int ErrorDf, bool Transformed) : FigurePlan("means");

/// <summary>
/// Each subject's profile along the first within factor (<paramref name="Drawn"/>: the first ones,
/// of <paramref name="Complete"/> complete subjects) and the mean profile with 95% t intervals.
/// </summary>
public sealed record ProfilesFigure(IReadOnlyList<string> Levels, IReadOnlyList<SubjectProfile> Drawn, int Complete, string Between, IReadOnlyList<ProfilePoint> Mean, string Response, string Subject, string Within) : FigurePlan("profiles");

/// <summary>Means of the complete subjects by the first within factor and the first between factor.</summary>
public sealed record RepeatedInteractionFigure(IReadOnlyList<string> Levels, IReadOnlyList<string> BetweenLevels, IReadOnlyList<CellMean> Cells, string Between, string Within, string Response) : FigurePlan("interaction");

/// <summary>
/// Chooses and computes the report's figures from block outcomes (values only). Each kind places
/// the figures that belong to it (unless the header sets <c>report: {figures: none}</c>); the
/// <c>figure</c> block draws any of them on its own.
/// </summary>
public static class Figures
{

    /// <summary>Above this many points in one figure (or group), the figure draws a thinned set.</summary>
    internal const int MaxPoints = 5000;

    /// <summary>How many points a thinned figure draws.</summary>
    internal const int ThinnedPoints = 2000;

    /// <summary>
    /// A cell's response values (<paramref name="positions"/> into the block, as
    /// <see cref="BlockData.Cells"/> gives them) in ascending order: sorted once per cell and shared
    /// by the summary, the means figure and the box plots (<see cref="BlockData.SortedValues"/>, a
    /// memo of the block's selection, owned by the run). The array must not be changed.
    /// </summary>
    internal static IReadOnlyList<double> SortedValues(BlockData data, int[] positions) => data.SortedValues(positions);

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
    private static double[] ThinSorted(IReadOnlyList<double> sorted)
    {
        var ranks = ThinRanks(sorted.Count);
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
    internal static double[] Thin(EvaluationContext context, double[] values)
    {
        if (values.Length <= MaxPoints)
        {
            return values;
        }

        // The wanted order statistics only, not a sorted copy of all the values (same doubles).
        return context.Memo(values, v => Statistics.FastSort.OrderStatistics(v, ThinRanks(v.Length)));
    }

    /// <summary>Box plots with every observation over them, by the block's cells.</summary>
    public static FigurePlan? Box(BlockData data, string? caption = null)
    {
        var cells = data.Factors.Count == 0 ? [("all", Array.Empty<int>(), data.Response, Enumerable.Range(0, data.Rows.Length).ToArray())] : data.Cells();
        // Above the limit the thinned order statistics come from the cell's shared sorted values.
        var groups = cells.Select(c =>
        {
            var (outer, inner) = Tiers(data, c.Codes);
            return new GroupSample(
                c.Label,
                c.Positions.Length <= MaxPoints ? [.. c.Positions.Select(i => data.Values[i])] : ThinSorted(SortedValues(data, c.Positions)))
            { Outer = outer, Inner = inner };
        }).ToList();
        var largest = cells.Max(c => c.Positions.Length);
        return new BoxFigure(groups, [.. data.Factors.Select(f => f.Spec.Display)], data.ResponseLabel, largest) { UserCaption = caption };
    }

    /// <summary>
    /// A crossed cell's two axis tiers: the levels of every factor but the last, joined as in the
    /// cell's name, and the last factor's level; nulls for fewer than two factors.
    /// </summary>
    private static (string? Outer, string? Inner) Tiers(BlockData data, int[] codes) =>
        data.Factors.Count < 2 || codes.Length != data.Factors.Count
            ? (null, null)
            : (string.Join(" / ", codes[..^1].Select((c, j) => data.Factors[j].Levels[c])), data.Factors[^1].Levels[codes[^1]]);

    /// <summary>Group means with t confidence intervals.</summary>
    public static FigurePlan? Means(BlockData data, double alpha, string? caption = null)
    {
        var cells = data.Factors.Count == 0 ? [("all", Array.Empty<int>(), data.Response, Enumerable.Range(0, data.Rows.Length).ToArray())] : data.Cells();
        var means = new List<GroupMean>();
        if (data.Factors.Count > 0)
        {
            SortAllCells(data);
        }

        foreach (var (label, codes, values, positions) in cells)
        {
            var s = data.Factors.Count == 0
                ? Statistics.Descriptive.Descriptives.ComputeSorted(values, SortedValues(data, positions), data.Centre, alpha, data.ExactMean(positions))
                : data.CellSummary(values, positions, alpha);
            if (!s.CiLow.IsDefined)
            {
                continue;
            }

            var (outer, inner) = Tiers(data, codes);
            means.Add(new GroupMean(label, s.Mean, s.CiLow.Value, s.CiHigh.Value) { Outer = outer, Inner = inner });
        }

        if (means.Count == 0)
        {
            return null;
        }

        return new MeansFigure(means, alpha, [.. data.Factors.Select(f => f.Spec.Display)], data.ResponseLabel) { UserCaption = caption };
    }

    /// <summary>Cell means of the first two factors, one line per level of the second factor.</summary>
    public static FigurePlan? Interaction(AnovaOutcome anova, string? caption = null) => Interaction(anova.Input, anova.Data, caption);

    /// <summary>Cell means of the first two factors of a model fitted on <paramref name="data"/> with <paramref name="input"/> (null: none).</summary>
    internal static FigurePlan? Interaction(Statistics.Anova.AnovaInput? input, BlockData? data, string? caption = null)
    {
        if (input is null || input.Factors.Count < 2)
        {
            return null;
        }

        var a = data!.Factors[0];
        var b = data.Factors[1];
        return Interaction(data, a, b) with { UserCaption = caption };
    }

    /// <summary>Observed means over the crossing of two of the block's factors (averaging over any further factors).</summary>
    internal static InteractionFigure Interaction(BlockData data, BlockFactor a, BlockFactor b)
    {
        var cells = Enumerable.Range(0, data.Rows.Length)
            .GroupBy(i => (a.Codes[i], b.Codes[i]))
            .OrderBy(g => g.Key.Item1).ThenBy(g => g.Key.Item2)
            .Select(g => new CellMean(a.Levels[g.Key.Item1], b.Levels[g.Key.Item2], g.Average(i => data.Values[i])))
            .ToList();
        return new InteractionFigure(a.Levels, b.Levels, cells, a.Spec.Display, b.Spec.Display, data.ResponseLabel);
    }

    public static FigurePlan? Qq(EvaluationContext context, AnovaOutcome anova, string? caption = null)
    {
        if (anova.Result is null || anova.Result.Residuals.Length < 3)
        {
            return null;
        }

        return new QqFigure(Thin(context, anova.Result.Residuals), anova.Result.Residuals.Length, anova.Result.Alpha) { UserCaption = caption };
    }

    public static FigurePlan? Histogram(EvaluationContext context, AnovaOutcome anova, string? caption = null)
    {
        if (anova.Result is null || anova.Result.Residuals.Length < 3)
        {
            return null;
        }

        return new HistogramFigure(Thin(context, anova.Result.Residuals), anova.Result.Residuals.Length) { UserCaption = caption };
    }

    public static FigurePlan? ResidualsFitted(AnovaOutcome anova, string? caption = null)
    {
        if (anova.Result is null)
        {
            return null;
        }

        var n = anova.Result.Residuals.Length;
        var picks = n > MaxPoints ? [.. Enumerable.Range(0, ThinnedPoints).Select(k => (int)((long)k * n / ThinnedPoints))] : Enumerable.Range(0, n).ToArray();
        var fitted = picks.Select(i => anova.Result.Fitted[i] + anova.ResponseCentre).ToArray();
        var residuals = picks.Select(i => anova.Result.Residuals[i]).ToArray();
        return new ResidualsFittedFigure(fitted, residuals, n, anova.Transformed is not null) { UserCaption = caption };
    }

    public static IEnumerable<FigurePlan> FDistributions(AnovaOutcome anova, string? caption = null) => FDistributions(anova.Fit, anova.Factors, caption);

    /// <summary>Each term's F distribution of the table <paramref name="table"/> (null: none), its factors named by <paramref name="factors"/>.</summary>
    internal static IEnumerable<FigurePlan> FDistributions(AnovaFit? table, IReadOnlyList<Binding.FactorSpec> factors, string? caption = null)
    {
        // From the table alone, so on either route (rows or cell statistics).
        if (table is not { } fit)
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
            IReadOnlyList<string> name = [.. t.Factors.Select(n => factors.FirstOrDefault(f => f.Name == n)?.Display ?? n)];
            yield return new FDistributionFigure(t.Df, fit.ResidualDf, t.F.Value, fit.Alpha, name) { Part = string.Join("-", t.Factors), UserCaption = caption };
        }
    }

    public static FigurePlan? Intervals(IReadOnlyList<PostHocFamily> families, double alpha, string? caption = null)
    {
        var family = families.FirstOrDefault(f => f.Pairs.Any(p => p.Pair.CiLow.IsDefined));
        if (family is null)
        {
            return null;
        }

        var rows = family.Pairs
            .Where(p => p.Pair.CiLow.IsDefined && p.Pair.CiHigh.IsDefined)
            .Select(p => new PairInterval(p.Pair.LevelA, p.Pair.LevelB, p.Pair.Diff, p.Pair.CiLow.Value, p.Pair.CiHigh.Value))
            .ToList();
        if (rows.Count == 0)
        {
            // One-sided bounds (Dunnett with a direction) have an open end: no two-sided interval to draw.
            return null;
        }

        return new IntervalsFigure(rows, alpha, family) { UserCaption = caption };
    }

    public static FigurePlan? PowerCurve(PowerOutcome power, string? caption = null) =>
        PowerCurve(power.Groups, power.Effect, power.Alpha, power.Target, power.Values, power.Required, caption);

    /// <summary>The power curve of <paramref name="groups"/> groups at effect <paramref name="effect"/>, marking the required n (<paramref name="required"/>) or else the planned one (<paramref name="values"/>).</summary>
    internal static FigurePlan? PowerCurve(int groups, double effect, double alpha, double? target, IReadOnlyDictionary<string, ResultValue> values, IReadOnlyDictionary<string, ResultValue> required, string? caption = null)
    {
        if (groups < 2 || effect <= 0)
        {
            return null;
        }

        var reference = required.TryGetValue(Stat.NPerGroup, out var need) && need.Value.IsDefined ? (int)need.Value.Value : 0;
        var planned = values.TryGetValue(Stat.NPerGroup, out var n) ? (int)n.Value.Value : 0;
        var top = Math.Max(10, (int)(1.5 * Math.Max(reference, planned)) + 2);
        top = Math.Min(top, 5000);
        var step = Math.Max(1, top / 60);
        var points = new List<PowerPoint>();
        for (var k = 2; k <= top; k += step)
        {
            var p = AnovaPower.Power(effect, groups, k, alpha);
            if (p.IsDefined)
            {
                points.Add(new PowerPoint(k, p.Value));
            }
        }

        PowerPoint? marked = null;
        if (reference > 0 && required[Stat.Power].Value.IsDefined)
        {
            marked = new PowerPoint(reference, required[Stat.Power].Value.Value);
        }
        else if (planned > 0 && values[Stat.Power].Value.IsDefined)
        {
            marked = new PowerPoint(planned, values[Stat.Power].Value.Value);
        }

        return new PowerCurveFigure(points, target ?? 0.8, marked, groups, effect, alpha) { UserCaption = caption };
    }

    /// <summary>An equivalence block's (1 − 2α) intervals against its shaded margin band and the zero line.</summary>
    public static FigurePlan? Equivalence(IReadOnlyList<(EquivalenceResult Result, IReadOnlyDictionary<string, ResultValue> Values)> comparisons, bool nonInferiority, string factorLabel, string? caption = null)
    {
        var rows = comparisons
            .Where(c => c.Result.CiLow.IsDefined && c.Result.CiHigh.IsDefined)
            .Select(c => (new PairInterval(
                c.Result.LevelA,
                c.Result.LevelB,
                c.Result.Diff,
                c.Result.CiLow.Value,
                c.Result.CiHigh.Value),
                c.Result.Verdict is Statistics.FollowUp.EquivalenceVerdict.EquivalentWithinMargin or Statistics.FollowUp.EquivalenceVerdict.NonInferiorWithinMargin))
            .ToList();
        if (rows.Count == 0)
        {
            return null;
        }

        var first = comparisons[0].Result;
        return new EquivalenceFigure(rows, first.MarginLow, first.MarginHigh, 2 * first.Alpha, nonInferiority, factorLabel) { UserCaption = caption };
    }
}
