using System.Globalization;
using StudyPress.Statistics;
using StudyPress.Statistics.Anova;
using StudyPress.Statistics.Assumptions;

namespace StudyPress.Evaluation.Kinds;

/// <summary>
/// The checks of an ANOVA model's assumptions and their verdicts, computed once per anova block
/// and shared by the anova block's automatic choices (Welch's F, rank test), the assumptions
/// block and the post-hoc block's automatic method.
/// Verdict rules (documented in docs/analyses.md):
/// normality fails when Shapiro–Wilk p &lt; alpha; equal variances fail when Brown–Forsythe p &lt; alpha;
/// independence fails when Durbin–Watson p (positive serial correlation) &lt; alpha; an outlier is
/// an observation whose Bonferroni-adjusted externally studentized residual has p &lt; alpha.
/// </summary>
public sealed class AssumptionReview
{
    /// <summary>Below this smallest group size, non-normal residuals make the F test's p doubtful.</summary>
    public const int SmallGroup = 15;

    public required ShapiroWilkResult Normality { get; init; }

    public required LeveneResult BrownForsythe { get; init; }

    public required LeveneResult Levene { get; init; }

    public required BartlettResult Bartlett { get; init; }

    public DurbinWatsonResult? Independence { get; init; }

    /// <summary>Why the independence check was not run, or not on every observation; null when it was (the renderer words it).</summary>
    public IndependenceGap? IndependenceSkipped { get; init; }

    /// <summary>How many observations had no run order and were left out of the Durbin–Watson test (<see cref="IndependenceGap.SomeWithoutOrder"/>).</summary>
    public int WithoutRunOrder { get; init; }

    public required StudentizedResidualsResult Outliers { get; init; }

    public required int SmallestGroup { get; init; }

    public required double Alpha { get; init; }

    public bool NonNormal => Rules.NonNormal;

    public bool UnequalVariances => Rules.UnequalVariances;

    public bool Dependent => Independence is { P.IsDefined: true } d && d.P.Value < Alpha;

    public bool HasOutliers => Outliers.Flagged.Count > 0;

    /// <summary>Non-normal residuals with small groups: the rank test should be run as well.</summary>
    public bool WantsRankTest => Rules.WantsRankTest;

    /// <summary>Why normality is not checked when the model fits the data exactly.</summary>
    public const string ZeroResiduals = "every group's values are equal, so the residuals are all exactly zero and W = 0/0 is not defined";

    /// <summary>The checks the automatic rules read, from this review.</summary>
    public AssumptionRules Rules => new()
    {
        Normality = Normality,
        BrownForsythe = BrownForsythe,
        SmallestGroup = SmallestGroup,
        Alpha = Alpha,
    };

    /// <summary>
    /// Whether the whole review of <paramref name="anova"/> is needed, decided from the bound blocks
    /// (<paramref name="blocks"/>; null when they are not known, and then it is): another block
    /// analyses the anova block (<c>of:</c>, <see cref="Binding.BoundBlock.Of"/> — its assumptions
    /// block, a posthoc block's automatic method, an equivalence test; also contrasts and marginal
    /// means, which do not read it), or the study has a methods block, which may describe
    /// any anova block and its checks. Otherwise no block reads the review, and the anova block's
    /// own rules need only <see cref="Rules"/> (<see cref="RunRules"/>). The manifest records no
    /// value of the review under the anova block itself (its assumptions and methods blocks record
    /// them), so skipping it changes no output.
    /// </summary>
    public static bool Needed(Binding.BoundBlock anova, IReadOnlyList<Binding.BoundBlock>? blocks) =>
        blocks is null || blocks.Any(b => ReferenceEquals(b.Of, anova) || b.Kind is Binding.Kinds.MethodsKind);

    /// <summary>
    /// Only the checks the anova block's automatic rules read (Shapiro–Wilk of the residuals,
    /// Brown–Forsythe, the smallest group) of a model fitted on the rows without covariates: the
    /// same numbers <see cref="Run(AnovaResult, BlockData, AnovaInput, CovariateAnalysis?)"/> gives, for a block whose whole review no block reads.
    /// </summary>
    public static AssumptionRules RunRules(AnovaResult result, BlockData data, AnovaInput input)
    {
        var groups = Groups(data, input.Response);
        return new AssumptionRules
        {
            Normality = NormalityOf(input, null, result, groups),
            BrownForsythe = BrownForsytheOf(groups),
            SmallestGroup = groups.Min(g => g.Length),
            Alpha = result.Alpha,
        };
    }

    /// <summary>
    /// The checks of a model fitted on the rows: <paramref name="result"/> (its residuals) on the
    /// selection <paramref name="data"/> with model input <paramref name="input"/>; for an analysis
    /// of covariance, <paramref name="ancova"/>. Run with the fit, before the outcome is built.
    /// </summary>
    public static AssumptionReview Run(AnovaResult result, BlockData data, AnovaInput input, CovariateAnalysis? ancova)
    {
        // An analysis of covariance: the variance checks compare the groups' residuals from the
        // covariance model (the spread around each group's regression line), not the raw values.
        var response = ancova is null ? input.Response : result.Residuals;
        if (ancova is { Blocks.Count: > 0 } blocked)
        {
            // Additive blocks: the groups are the treatment cells (a block x treatment cell holds one plot).
            return Run(data, input, ancova, result, TreatmentGroups(data, blocked, result.Residuals));
        }

        return Run(data, input, ancova, result, Groups(data, response));
    }

    /// <summary>The model's response by cell.</summary>
    private static List<double[]> Groups(BlockData data, double[] response)
    {
        var cells = data.Cells();
        var groups = new List<double[]>(cells.Count);
        // The cells hold the block's centred response already: when the model's response is that
        // array (no transform), they are the groups, with no copy.
        var shared = ReferenceEquals(response, data.Response);
        foreach (var c in cells)
        {
            if (shared)
            {
                groups.Add(c.Values);
                continue;
            }

            var g = new double[c.Positions.Length];
            for (var j = 0; j < g.Length; j++)
            {
                g[j] = response[c.Positions[j]];
            }

            groups.Add(g);
        }

        return groups;
    }

    /// <summary>Shapiro–Wilk of the residuals; not defined when the model fits the data exactly.</summary>
    private static ShapiroWilkResult NormalityOf(AnovaInput input, CovariateAnalysis? ancova, AnovaResult result, List<double[]> groups)
    {
        // With every cell constant the cell-means model fits exactly: the residuals are exactly
        // zero, whatever rounding leaves in their floating-point values, and W is 0/0.
        var exactFit = ancova is null
            ? (input.Factors.Count == 1 || input.Interactions) && groups.All(g => Statistics.Groups.IsConstant(g))
            : result.Residuals.All(r => r == 0);
        return exactFit
            ? new ShapiroWilkResult(result.Residuals.Length, Quantity.Undefined(ZeroResiduals), Quantity.Undefined(ZeroResiduals), [])
            : ShapiroWilk.Test(result.Residuals);
    }

    private static readonly Quantity OneGroup = Quantity.Undefined("there is only one group");

    /// <summary>Brown–Forsythe over the groups; not defined for one group.</summary>
    private static LeveneResult BrownForsytheOf(List<double[]> groups) =>
        groups.Count >= 2 ? Statistics.Assumptions.BrownForsythe.Test(groups) : new LeveneResult(OneGroup, 0, 0, OneGroup);

    /// <summary>The residuals grouped by the crossing of the treatment factors (blocks left out), in ordinal order of the cell labels.</summary>
    private static List<double[]> TreatmentGroups(BlockData data, CovariateAnalysis ancova, double[] residuals)
    {
        var treatments = data.Factors.Where(f => ancova.Treatments.Contains(f.Spec.Name, StringComparer.Ordinal)).ToList();
        return [.. Enumerable.Range(0, residuals.Length)
            .GroupBy(i => string.Join(" / ", treatments.Select(f => f.Levels[f.Codes[i]])), StringComparer.Ordinal)
            .OrderBy(g => g.Key, StringComparer.Ordinal)
            .Select(g => g.Select(i => residuals[i]).ToArray())];
    }

    private static AssumptionReview Run(BlockData data, AnovaInput input, CovariateAnalysis? ancova, AnovaResult result, List<double[]> groups)
    {
        var alpha = result.Alpha;
        var normality = NormalityOf(input, ancova, result, groups);
        var bf = BrownForsytheOf(groups);
        LeveneResult lev;
        BartlettResult bart;
        if (groups.Count >= 2)
        {
            lev = Statistics.Assumptions.Levene.Test(groups);
            bart = Statistics.Assumptions.Bartlett.Test(groups);
        }
        else
        {
            lev = bf;
            bart = new BartlettResult(OneGroup, 0, OneGroup);
        }

        DurbinWatsonResult? dw = null;
        IndependenceGap? skipped = null;
        var missing = 0;
        var order = data.Dataset.Order;
        if (ancova is not null)
        {
            skipped = IndependenceGap.Covariates;
        }
        else if (order is null)
        {
            skipped = IndependenceGap.NoRunOrder;
        }
        else
        {
            // Null: every observation has a run order and they are already in it.
            var positions = RunOrder(order, data.Rows);
            var ordered = positions?.Length ?? data.Rows.Length;
            if (ordered < 3)
            {
                skipped = IndependenceGap.TooFewOrdered;
            }
            else
            {
                // The design in structured form (a coding row per cell), in run order.
                var (cellRows, cellOf) = AnovaDesign.CellModelMatrix(input);
                var sortedCells = cellOf;
                var sortedResiduals = result.Residuals;
                if (positions is not null)
                {
                    sortedCells = new int[positions.Length];
                    sortedResiduals = new double[positions.Length];
                    for (var r = 0; r < positions.Length; r++)
                    {
                        sortedCells[r] = cellOf[positions[r]];
                        sortedResiduals[r] = result.Residuals[positions[r]];
                    }
                }

                dw = DurbinWatson.Test(sortedResiduals, cellRows, sortedCells);
                missing = data.Rows.Length - ordered;
                if (missing > 0)
                {
                    skipped = IndependenceGap.SomeWithoutOrder;
                }
            }
        }

        var outliers = StudentizedResiduals.Compute(result.Residuals, result.Leverages, result.ResidualDf, alpha);
        return new AssumptionReview
        {
            Normality = normality,
            BrownForsythe = bf,
            Levene = lev,
            Bartlett = bart,
            Independence = dw,
            IndependenceSkipped = skipped,
            WithoutRunOrder = missing,
            Outliers = outliers,
            SmallestGroup = groups.Min(g => g.Length),
            Alpha = alpha,
        };
    }

    /// <summary>
    /// Positions (into the block's rows) that have a run order, sorted by it, ties in position order.
    /// Data usually come in run order, so an ordered run is detected in one pass without sorting;
    /// when every row has a run order and they are in it, the positions are 0, 1, … and null is
    /// returned instead (the caller uses the residuals as they are).
    /// </summary>
    private static int[]? RunOrder(Data.NumericColumn order, int[] rows)
    {
        var count = 0;
        var sorted = true;
        var last = double.NegativeInfinity;
        var values = order.Values;
        var centred = order.Centred;
        foreach (var r in rows)
        {
            if (double.IsNaN(centred[r]))
            {
                continue; // missing (NumericColumn.IsMissing)
            }

            var v = values[r];
            sorted &= v.CompareTo(last) >= 0 || count == 0;
            last = v;
            count++;
        }

        if (sorted && count == rows.Length)
        {
            return null;
        }

        var positions = new int[count];
        var keys = new double[count];
        var k = 0;
        for (var i = 0; i < rows.Length; i++)
        {
            if (!order.IsMissing(rows[i]))
            {
                positions[k] = i;
                keys[k++] = order.Values[rows[i]];
            }
        }

        if (!sorted)
        {
            // Stable: equal keys keep position order (as OrderBy(key).ThenBy(position) did).
            var items = new (double Key, int Position)[count];
            for (var j = 0; j < count; j++)
            {
                items[j] = (keys[j], positions[j]);
            }

            Array.Sort(items, static (x, y) => x.Key.CompareTo(y.Key) is var c && c != 0 ? c : x.Position.CompareTo(y.Position));
            for (var j = 0; j < count; j++)
            {
                positions[j] = items[j].Position;
            }
        }

        return positions;
    }
}

/// <summary>
/// The checks an anova block's automatic rules read (welch: auto; a posthoc block's method: auto):
/// normality of the residuals, equal variances (Brown–Forsythe) and the smallest group, with the
/// verdicts at alpha as in <see cref="AssumptionReview"/>.
/// </summary>
public sealed class AssumptionRules
{
    public required ShapiroWilkResult Normality { get; init; }

    public required LeveneResult BrownForsythe { get; init; }

    public required int SmallestGroup { get; init; }

    public required double Alpha { get; init; }

    public bool NonNormal => Normality.P.IsDefined && Normality.P.Value < Alpha;

    public bool UnequalVariances => BrownForsythe.P.IsDefined && BrownForsythe.P.Value < Alpha;

    /// <summary>Non-normal residuals with small groups: the rank test should be run as well.</summary>
    public bool WantsRankTest => NonNormal && SmallestGroup < AssumptionReview.SmallGroup;
}

/// <summary>Why the Durbin–Watson test of independence was not run, or not on every observation.</summary>
public enum IndependenceGap
{
    /// <summary>An analysis of covariance: its p-value would need the covariates' columns in the design.</summary>
    Covariates,

    /// <summary>The header names no run-order column.</summary>
    NoRunOrder,

    /// <summary>Fewer than three observations have a run order.</summary>
    TooFewOrdered,

    /// <summary>The test ran; some observations had no run order and were left out.</summary>
    SomeWithoutOrder,
}
