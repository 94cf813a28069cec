using StudyPress.Binding;
using StudyPress.Binding.Kinds;
using StudyPress.Diagnostics;
using StudyPress.Statistics;
using StudyPress.Statistics.Designs;
using StudyPress.Statistics.FollowUp;

namespace StudyPress.Evaluation.Kinds;

public sealed partial class MarginalMeansEvaluator
{
    /// <summary>
    /// The marginal means of a design fitted as a mixed model (REML): each mean l'β̂ of the fit's
    /// fixed effects (equal weights over the other treatments' levels), its SE √(l'Cov(β̂)l) and
    /// Satterthwaite df (<see cref="RemlFixedEffects"/>); with <c>at</c>, the simple effects as Wald
    /// F tests of the k − 1 differences within each level (Satterthwaite df) and Holm-adjusted pairs,
    /// each pair on its own df. Unlike the strata, no single error is needed: the covariance of the
    /// fixed effects carries every variance component a mean or difference depends on.
    /// </summary>
    private static MarginalMeansOutcome EvaluateReml(EvaluationContext context, BoundBlock block, MarginalMeansKind.Options options, AnovaOutcome anova, DesignFit design, List<BlockFactor> treatments, SourceLocation at, DiagnosticBag diagnostics)
    {
        var data = anova.Data!;
        var labels = new Dictionary<string, string>(StringComparer.Ordinal);
        foreach (var f in data.Factors)
        {
            labels[f.Spec.Name] = f.Spec.Display;
        }

        var tables = new List<MarginalMeansTable>();
        var simpleEffects = new List<MarginalSimpleEffect>();
        string? byLabel = null, atLabel = null, atName = null;
        var fe = design.Reml!.FixedEffects!;
        var alpha = context.Header.Alpha;
        var factors = treatments.Select(f => f.Spec.Name).ToList();
        IReadOnlyList<string> LevelsOf(string name) => [.. data.Factors.First(f => f.Spec.Name == name).Levels.Where(l => fe.Levels(name).Contains(l))];
        List<IReadOnlyList<string>> terms = options.At is { } atFactor
            ? [Ordered(factors, [options.By[0].Name, atFactor.Name])]
            : options.By.Count > 0 ? [Ordered(factors, [.. options.By.Select(b => b.Name)])] : [.. factors.Select(f => (IReadOnlyList<string>)[f])];
        var inputs = context.Inputs(block);
        foreach (var term in terms)
        {
            var count = term.Aggregate(1L, (c, f) => c * LevelsOf(f).Count);
            if (count > MaxMeans)
            {
                diagnostics.MarginalMeansTooMany(at, string.Join(" × ", term.Select(f => labels[f])), count, MaxMeans);
                return new MarginalMeansOutcome(block) { Reml = true };
            }

            var termName = string.Join(":", term);
            var rows = new List<MarginalMeansRow>();
            var cells = new List<(IReadOnlyList<string> Levels, double[] Row)>();
            foreach (var cell in Cells([.. term.Select(LevelsOf)]))
            {
                var row = fe.MeanRow(term, cell);
                // The response was centred by the compiler (data.Centre) before the fit: added back.
                var (mean, lowC, highC) = fe.Mean(row, alpha);
                var value = mean.Estimate + data.Centre;
                var low = lowC.Map(x => x + data.Centre);
                var high = highC.Map(x => x + data.Centre);
                var m = new MarginalMean(cell, Quantity.Of(value), mean.Se, mean.Df, low, high, Quantity.Of(value), low, high);
                rows.Add(new MarginalMeansRow(cell, m, RecordMean(context, block, termName, m, inputs)));
                cells.Add((cell, row));
            }

            var hints = options.At is null ? Interactions(anova, term, alpha, labels) : [];
            tables.Add(new MarginalMeansTable(termName, term, [.. term.Select(f => labels[f])], null, rows.AsReadOnly(), hints));
            if (options.At is not { } a)
            {
                continue;
            }

            var by = options.By[0].Name;
            var bi = term.ToList().IndexOf(by);
            var ai = term.ToList().IndexOf(a.Name);
            byLabel = labels[by];
            atLabel = labels[a.Name];
            atName = a.Name;
            foreach (var atLevel in LevelsOf(a.Name))
            {
                var within = cells.Where(c => c.Levels[ai] == atLevel).ToList();
                var level = a.Name + " " + atLevel;
                var wald = fe.Wald([.. within.Skip(1).Select(c => (IReadOnlyList<double>)RemlComparisons.Difference(c.Row, within[0].Row))]);
                var test = new Dictionary<string, ResultValue>(StringComparer.Ordinal);
                void Put(string stat, Quantity q) => test[stat] = context.Results.Add(block.Id, TestName.SimpleEffects, by, level, null, stat, q, inputs);
                Put(Stat.Df, Quantity.Of(wald.NumeratorDf));
                Put(Stat.F, wald.F);
                Put(Stat.DfDen, wald.DfDenominator);
                Put(Stat.P, wald.P);
                var pairs = new List<SimpleEffectPair>();
                foreach (var e in RemlComparisons.Pairwise(fe, [.. within.Select(c => c.Levels[bi])], [.. within.Select(c => c.Row)], RemlPairAdjustment.Holm, alpha))
                {
                    string[] pair = [e.LevelA, e.LevelB];
                    var v = new Dictionary<string, ResultValue>(StringComparer.Ordinal);
                    void P(string stat, Quantity q) => v[stat] = context.Results.Add(block.Id, TestName.Holm, by, level, pair, stat, q, inputs);
                    P(Stat.Diff, Quantity.Of(e.Diff));
                    P(Stat.Se, e.Se);
                    P(Stat.Statistic, e.T);
                    P(Stat.Df, e.Df);
                    P(Stat.P, e.P);
                    P(Stat.PAdj, e.PAdjusted);
                    P(Stat.CiLow, e.CiLow);
                    P(Stat.CiHigh, e.CiHigh);
                    pairs.Add(new SimpleEffectPair(pair[0], pair[1], e.PAdjusted, v.AsReadOnly()));
                }

                simpleEffects.Add(new MarginalSimpleEffect(atLevel, test.AsReadOnly(), pairs.AsReadOnly()));
            }
        }

        return new MarginalMeansOutcome(block)
        {
            Reml = true,
            Design = true,
            Labels = labels.AsReadOnly(),
            Tables = tables.AsReadOnly(),
            SimpleEffects = simpleEffects.AsReadOnly(),
            ByLabel = byLabel,
            AtLabel = atLabel,
            AtName = atName,
        };
    }

    /// <summary>Every combination of the levels, the last factor fastest.</summary>
    private static IEnumerable<IReadOnlyList<string>> Cells(IReadOnlyList<IReadOnlyList<string>> levels)
    {
        IEnumerable<IReadOnlyList<string>> acc = [[]];
        foreach (var l in levels)
        {
            acc = acc.SelectMany(prefix => l.Select(x => (IReadOnlyList<string>)[.. prefix, x])).ToList();
        }

        return acc;
    }
}
