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
    public static IEnumerable<FigurePlan> Of(BlockData data, DesignFit design, double alpha)
    {
        var treatments = data.Factors.Where(f => f.Spec.Layout.Role == FactorRole.Treatment).ToList();
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

                yield return new DesignMeansFigure(means, alpha, factor.Spec.Display, data.ResponseLabel, error.Term, error.Df) { Part = factor.Spec.Name };
            }
        }

        if (treatments.Count >= 2)
        {
            yield return Figures.Interaction(data, treatments[0], treatments[1]);
        }
    }
}
