using System.Globalization;
using StudyPress.Statistics;
using StudyPress.Statistics.Anova;
using StudyPress.Statistics.Assumptions;

namespace StudyPress.Kinds;

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

    /// <summary>Why the independence check was not run, when it was not.</summary>
    public string? IndependenceSkipped { get; init; }

    public required StudentizedResidualsResult Outliers { get; init; }

    public required int SmallestGroup { get; init; }

    public required double Alpha { get; init; }

    public bool NonNormal => Normality.P.IsDefined && Normality.P.Value < Alpha;

    public bool UnequalVariances => BrownForsythe.P.IsDefined && BrownForsythe.P.Value < Alpha;

    public bool Dependent => Independence is { P.IsDefined: true } d && d.P.Value < Alpha;

    public bool HasOutliers => Outliers.Flagged.Count > 0;

    /// <summary>Non-normal residuals with small groups: the rank test should be run as well.</summary>
    public bool WantsRankTest => NonNormal && SmallestGroup < SmallGroup;

    public static AssumptionReview Run(AnovaKind.Outcome anova)
    {
        var result = anova.Result!;
        var alpha = result.Alpha;
        var cells = anova.Data!.Cells();
        var groups = cells.Select(c => c.Positions.Select(i => anova.Input!.Response[i]).ToArray()).ToList();
        var normality = ShapiroWilk.Test(result.Residuals);
        LeveneResult bf, lev;
        BartlettResult bart;
        if (groups.Count >= 2)
        {
            bf = Statistics.Assumptions.BrownForsythe.Test(groups);
            lev = Statistics.Assumptions.Levene.Test(groups);
            bart = Statistics.Assumptions.Bartlett.Test(groups);
        }
        else
        {
            var u = Quantity.Undefined("there is only one group");
            bf = lev = new LeveneResult(u, 0, 0, u);
            bart = new BartlettResult(u, 0, u);
        }

        DurbinWatsonResult? dw = null;
        string? skipped = null;
        var order = anova.Data.Dataset.Order;
        if (order is null)
        {
            skipped = "the header names no run-order column ('order'), so independence in time was not checked; the file's row order is not assumed to be the run order";
        }
        else
        {
            var positions = Enumerable.Range(0, anova.Data.Rows.Length)
                .Where(i => !order.IsMissing(anova.Data.Rows[i]))
                .OrderBy(i => order.Values[anova.Data.Rows[i]])
                .ThenBy(i => i)
                .ToArray();
            if (positions.Length < 3)
            {
                skipped = "fewer than three observations have a run order";
            }
            else
            {
                var design = AnovaDesign.ModelMatrix(anova.Input!);
                var p = design.GetLength(1);
                var sorted = new double[positions.Length, p];
                for (var r = 0; r < positions.Length; r++)
                {
                    for (var c = 0; c < p; c++)
                    {
                        sorted[r, c] = design[positions[r], c];
                    }
                }

                dw = DurbinWatson.Test([.. positions.Select(i => result.Residuals[i])], sorted);
                var missing = anova.Data.Rows.Length - positions.Length;
                if (missing > 0)
                {
                    skipped = string.Create(CultureInfo.InvariantCulture, $"{missing} observation(s) without a run order were left out of the Durbin–Watson test");
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
            Outliers = outliers,
            SmallestGroup = cells.Min(c => c.Values.Length),
            Alpha = alpha,
        };
    }
}
