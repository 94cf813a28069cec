using System.Globalization;
using StudyPress.Charts;
using StudyPress.Evaluation.Kinds;
using StudyPress.Statistics.Designs;

namespace StudyPress.Rendering;

/// <summary>A chart placed in the report, with the caption shown under it.</summary>
public sealed record Figure(string Type, string Caption, Chart Chart)
{
    /// <summary>What tells this figure from others of its type in the same block (an F distribution's term), or null.</summary>
    public string? Part { get; init; }
}

/// <summary>
/// Draws the figures that evaluation chose (<see cref="FigurePlan"/>, values only): each chart's
/// title, axis labels and caption are written here. A block's own caption replaces the generated one.
/// </summary>
public static class FigureDrawing
{
    /// <summary>Every figure of a block, in the order evaluation placed them.</summary>
    public static IReadOnlyList<Figure> Of(BlockOutcome outcome) => [.. outcome.Figures.Select(Draw)];

    /// <summary>One figure: its chart scene and caption.</summary>
    public static Figure Draw(FigurePlan plan)
    {
        var (chart, caption) = plan switch
        {
            BoxFigure f => Box(f),
            MeansFigure f => Means(f),
            InteractionFigure f => Interaction(f),
            QqFigure f => Qq(f),
            HistogramFigure f => Histogram(f),
            ResidualsFittedFigure f => ResidualsFitted(f),
            FDistributionFigure f => FDistribution(f),
            IntervalsFigure f => Intervals(f),
            PowerCurveFigure f => PowerCurve(f),
            EquivalenceFigure f => Equivalence(f),
            DesignMeansFigure f => DesignMeans(f),
            MarginalMeansFigure f => MarginalMeans(f),
            ProfilesFigure f => Profiles(f),
            RepeatedInteractionFigure f => RepeatedInteraction(f),
            _ => throw new InvalidOperationException("no drawing for the figure " + plan.GetType().Name),
        };
        return new Figure(plan.Type, plan.UserCaption ?? caption, chart) { Part = plan.Part };
    }

    /// <summary>A user-supplied name set inside generated text: isolated on its own, so that numbers beside it keep their order.</summary>
    private static string Name(string name) => BidiText.Isolate(name);

    private static string Confidence(double alpha) => NumberText.Confidence(alpha);

    private static string ThinNote(int n) => n > Evaluation.Kinds.Figures.MaxPoints
        ? string.Create(CultureInfo.InvariantCulture, $" With {n:N0} observations, the figure draws {Evaluation.Kinds.Figures.ThinnedPoints:N0} evenly spaced order statistics instead of every point.")
        : string.Empty;

    private static (Chart, string) Box(BoxFigure f)
    {
        var by = string.Join(" and ", f.By);
        var chart = StatCharts.GroupDistributions(f.Groups, new ChartLabels($"Distribution of {Name(f.Response)}" + (by.Length > 0 ? " by " + Name(by) : string.Empty), by, f.Response));
        return (chart, $"Each group's box spans the quartiles with the median marked; whiskers reach the most extreme values within 1.5 IQR of the box; every observation is drawn as a point." + ThinNote(f.Largest));
    }

    private static (Chart, string) Means(MeansFigure f)
    {
        var level = Confidence(f.Alpha);
        var by = string.Join(" and ", f.By);
        var chart = StatCharts.GroupMeans(f.Means, level, new ChartLabels($"Mean {Name(f.Response)} with {level} intervals", by, f.Response));
        return (chart, $"Group means with {level} confidence intervals (each group's own t interval, not adjusted for multiple comparisons).");
    }

    private static (Chart, string) Interaction(InteractionFigure f)
    {
        var chart = StatCharts.InteractionPlot(f.ALevels, f.BLevels, f.Cells, f.B, new ChartLabels($"Mean {Name(f.Response)} by {Name(f.A)} and {Name(f.B)}", f.A, f.Response));
        return (chart, $"Observed cell means; lines that are not parallel suggest an interaction (compare with the F test of {Name(f.A)} × {Name(f.B)}).");
    }

    private static (Chart, string) Qq(QqFigure f)
    {
        var level = Confidence(f.Alpha);
        var chart = StatCharts.NormalQuantilePlot(f.Residuals, new ChartLabels("Normal quantile plot of the residuals", "standard normal quantile", "residual"), 1 - f.Alpha);
        return (chart, $"Residuals against normal quantiles (Blom plotting positions), with a line through the quartiles and a pointwise {level} envelope from the order statistics' beta distributions; points along the line are what normal residuals look like." + ThinNote(f.Count));
    }

    private static (Chart, string) Histogram(HistogramFigure f)
    {
        var chart = StatCharts.ResidualHistogram(f.Residuals, new ChartLabels("Distribution of the residuals", "residual", "count"));
        return (chart, "Histogram of the residuals (Freedman–Diaconis bins) with the fitted normal density and a kernel density estimate (Silverman's bandwidth)." + ThinNote(f.Count));
    }

    private static (Chart, string) ResidualsFitted(ResidualsFittedFigure f)
    {
        var n = f.Count;
        var max = Evaluation.Kinds.Figures.MaxPoints;
        var thinned = Evaluation.Kinds.Figures.ThinnedPoints;
        var chart = StatCharts.ResidualsVersusFitted(f.Fitted, f.Residuals, new ChartLabels("Residuals against fitted values", "fitted value" + (f.TransformedScale ? " (transformed scale)" : string.Empty), "residual"));
        return (chart, "A funnel shape (spread growing with the fitted value) suggests unequal variances; curvature suggests a missing term or a needed transformation." + (n > max ? string.Create(CultureInfo.InvariantCulture, $" With {n:N0} observations, {thinned:N0} of them, evenly spaced in data order, are drawn (about one in {((double)n / thinned).ToString(n >= 10 * thinned ? "N0" : "0.#", CultureInfo.InvariantCulture)}).") : string.Empty));
    }

    private static (Chart, string) FDistribution(FDistributionFigure f)
    {
        var name = string.Join(" × ", f.Term.Select(Name));
        var chart = StatCharts.FDistribution(f.Df, f.ResidualDf, f.F, f.Alpha, new ChartLabels(string.Create(CultureInfo.InvariantCulture, $"F({f.Df}, {f.ResidualDf}) distribution: {name}"), "F", "density"));
        return (chart, string.Create(CultureInfo.InvariantCulture, $"The F distribution under no effect of {name}; the shaded region is the rejection region at α = {NumberText.Current.Level(f.Alpha)} and the line marks the observed F."));
    }

    private static string PairLabel(PairInterval p) => BidiText.Isolate(p.LevelA) + " − " + BidiText.Isolate(p.LevelB);

    private static (Chart, string) Intervals(IntervalsFigure f)
    {
        var rows = f.Pairs.Select(p => new IntervalComparison(PairLabel(p), p.Difference, p.Lower, p.Upper)).ToList();
        var level = Confidence(f.Alpha);
        var chart = StatCharts.SimultaneousIntervals(rows, level, new ChartLabels($"{Kinds.PostHocRenderer.Title(f.Family)}: differences with {level} joint intervals", "difference", string.Empty));
        return (chart, $"Each difference with its {level} joint interval (the intervals cover all the pairs together); intervals that exclude zero (solid, diamond) are the pairs the procedure separates.");
    }

    private static (Chart, string) PowerCurve(PowerCurveFigure f)
    {
        var chart = StatCharts.PowerCurve(f.Points, f.Target, f.Marked, new ChartLabels(string.Create(CultureInfo.InvariantCulture, $"Power against n per group (k = {f.Groups}, f = {f.Effect:0.###}, α = {NumberText.Current.Level(f.Alpha)})"), "n per group", "power"));
        return (chart, "Power of the F test as the group size grows; the horizontal line is the target power.");
    }

    private static (Chart, string) Equivalence(EquivalenceFigure f)
    {
        var rows = f.Pairs.Select(p => new EquivalenceInterval(PairLabel(p.Pair), p.Pair.Difference, p.Pair.Lower, p.Pair.Upper, p.Shown)).ToList();
        var level = Confidence(f.Alpha);
        var what = f.NonInferiority ? "non-inferiority margin" : "equivalence margin";
        var chart = StatCharts.EquivalenceIntervals(rows, f.MarginLow, f.MarginHigh, level + " intervals",
            new ChartLabels($"Differences of {f.Factor} with {level} intervals against the {what}", "difference", string.Empty));
        return (chart, f.NonInferiority
            ? $"Each difference with its {level} interval; the shaded region is the side of the margin that counts as not inferior. Non-inferiority is shown where the whole interval lies in it (solid, diamond); an interval reaching past the margin does not show it."
            : $"Each difference with its {level} interval; the shaded band is the equivalence margin. Equivalence is shown where the whole interval lies inside the band (solid, diamond); an interval reaching beyond it does not show equivalence, even when it covers zero (finding no difference is not showing equivalence).");
    }

    private static (Chart, string) DesignMeans(DesignMeansFigure f)
    {
        var level = NumberText.Confidence(f.Alpha);
        var errorName = f.ErrorTerm == StrataAnova.ResidualName ? "the residual" : "the " + f.ErrorTerm.Replace("(", " (in ", StringComparison.Ordinal);
        var chart = StatCharts.GroupMeans(f.Means, level, new ChartLabels($"Mean {BidiText.Isolate(f.Response)} by {BidiText.Isolate(f.Factor)}", f.Factor, f.Response));
        return (chart, string.Create(CultureInfo.InvariantCulture, $"Means of {BidiText.Isolate(f.Factor)} with {level} intervals on {errorName} mean square ({f.ErrorDf} df), the error its F test used; each interval is for one mean, not adjusted for comparisons."));
    }

    private static (Chart, string) MarginalMeans(MarginalMeansFigure f)
    {
        var level = Math.Round(100 * (1 - f.Alpha), 10).ToString("R", CultureInfo.InvariantCulture) + "%";
        var errorName = f.ErrorTerm == "residual" ? "the residual" : "the " + f.ErrorTerm.Replace("(", " (in ", StringComparison.Ordinal);
        var chart = StatCharts.GroupMeans(f.Means, level, new ChartLabels($"Estimated marginal means of {BidiText.Isolate(f.Response)} by {BidiText.Isolate(f.Factor)}", f.Factor, f.Response));
        return (chart, string.Create(CultureInfo.InvariantCulture, $"Estimated marginal means of {BidiText.Isolate(f.Factor)} with {level} intervals on {errorName} mean square ({f.ErrorDf} df){(f.Transformed ? ", back-transformed to the original scale" : string.Empty)}; each interval is for one mean, not adjusted for comparisons, and overlapping intervals are not a test."));
    }

    private static (Chart, string) Profiles(ProfilesFigure f)
    {
        var chart = StatCharts.SubjectProfiles(
            f.Levels,
            f.Drawn,
            f.Between,
            f.Mean,
            "95%",
            new ChartLabels($"{f.Response} of each {f.Subject} by {f.Within}", f.Within, f.Response));
        var which = f.Drawn.Count < f.Complete
            ? string.Create(CultureInfo.InvariantCulture, $"Each thin line is one {f.Subject} (the first {f.Drawn.Count} of {f.Complete} complete subjects, in file order); ")
            : $"Each thin line is one {f.Subject} (complete subjects only); ";
        return (chart, which + $"the thick line is the mean at each level of {f.Within} with its 95% interval (t interval over subjects; it does not show the within-subject comparison).");
    }

    private static (Chart, string) RepeatedInteraction(RepeatedInteractionFigure f)
    {
        var chart = StatCharts.InteractionPlot(f.Levels, f.BetweenLevels, f.Cells, f.Between, new ChartLabels($"Mean {f.Response} by {f.Within} and {f.Between}", f.Within, f.Response));
        return (chart, $"Means of the complete subjects; lines that are not parallel suggest an interaction (compare with the F test of {f.Between} × {f.Within}).");
    }
}
