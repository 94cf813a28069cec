using System.Globalization;
using StudyPress.Charts;
using StudyPress.Statistics;
using StudyPress.Statistics.Designs;

namespace StudyPress.Evaluation.Kinds;

/// <summary>
/// Figures of a design anova: the means of each treatment with intervals on the error its F test
/// used (classical strata, exact denominators), and the interaction plot of the first two
/// treatments (observed cell means).
/// </summary>
internal static class DesignFigures
{
    public static IEnumerable<Figure> Of(AnovaOutcome anova, DesignFit design, double alpha)
    {
        var data = anova.Data!;
        var treatments = data.Factors.Where(f => f.Spec.Layout.Role == FactorRole.Treatment).ToList();
        var level = NumberText.Confidence(alpha);
        if (design.Strata is { } strata)
        {
            foreach (var factor in treatments)
            {
                var row = strata.Row(factor.Spec.Name);
                if (row.Denominator is not [{ Coefficient: 1.0 } error] || row.IsQuasiF || error.Df < 1)
                {
                    continue;
                }

                var t = Probability.TCritical(alpha, error.Df);
                var means = new List<GroupMean>();
                foreach (var m in design.Means.Where(m => m.Factor == factor.Spec.Name))
                {
                    var half = t * Math.Sqrt(error.MeanSquare / m.Count);
                    means.Add(new GroupMean(m.Level, m.Mean, m.Mean - half, m.Mean + half));
                }

                if (means.Count == 0)
                {
                    continue;
                }

                var errorName = error.Term == StrataAnova.ResidualName ? "the residual" : "the " + error.Term.Replace("(", " (in ", StringComparison.Ordinal);
                var chart = StatCharts.GroupMeans(means, level, new ChartLabels($"Mean {BidiText.Isolate(data.ResponseLabel)} by {BidiText.Isolate(factor.Spec.Display)}", factor.Spec.Display, data.ResponseLabel));
                yield return new Figure(
                    "means",
                    string.Create(CultureInfo.InvariantCulture, $"Means of {BidiText.Isolate(factor.Spec.Display)} with {level} intervals on {errorName} mean square ({error.Df} df), the error its F test used; each interval is for one mean, not adjusted for comparisons."),
                    chart)
                {
                    Part = factor.Spec.Name,
                };
            }
        }

        if (treatments.Count >= 2)
        {
            var a = treatments[0];
            var b = treatments[1];
            var cells = Enumerable.Range(0, data.Rows.Length)
                .GroupBy(i => (a.Codes[i], b.Codes[i]))
                .OrderBy(g => g.Key.Item1).ThenBy(g => g.Key.Item2)
                .Select(g => new CellMean(a.Levels[g.Key.Item1], b.Levels[g.Key.Item2], g.Average(i => data.Values[i])))
                .ToList();
            var chart = StatCharts.InteractionPlot(a.Levels, b.Levels, cells, b.Spec.Display, new ChartLabels($"Mean {BidiText.Isolate(data.ResponseLabel)} by {BidiText.Isolate(a.Spec.Display)} and {BidiText.Isolate(b.Spec.Display)}", a.Spec.Display, data.ResponseLabel));
            yield return new Figure("interaction", $"Observed cell means; lines that are not parallel suggest an interaction (compare with the F test of {BidiText.Isolate(a.Spec.Display)} × {BidiText.Isolate(b.Spec.Display)}).", chart);
        }
    }
}
