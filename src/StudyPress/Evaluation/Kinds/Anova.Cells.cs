using System.Globalization;
using StudyPress.Binding;
using StudyPress.Data.Sources;
using StudyPress.Model;
using StudyPress.Diagnostics;
using StudyPress.Evaluation;
using StudyPress.Statistics;
using StudyPress.Statistics.Anova;
using StudyPress.Binding.Kinds;

namespace StudyPress.Evaluation.Kinds;

/// <summary>
/// An <c>anova</c> block on a dataset the database aggregated (<c>aggregate: true</c>): the table,
/// the level means, Welch's F and Bartlett's test come from the per-cell counts, means and sums of
/// squares (<see cref="CellStatisticsAnova"/>, <see cref="GroupStatisticsTests"/>); what needs the
/// rows (residual checks, rank tests, figures) is not run, and the block says so.
/// The manifest values have the same names as those of a block on loaded rows; the outcome is the
/// same <see cref="AnovaOutcome"/>, with <see cref="AnovaRoute.Cells"/>.
/// </summary>
public sealed partial class AnovaEvaluator
{
    private static AnovaOutcome EvaluateCells(EvaluationContext context, BoundBlock block, AnovaKind.Options options, DiagnosticBag diagnostics)
    {
        var model = context.Models.Descriptions[block.Id];
        var outcome = new AnovaOutcome(block) { Route = AnovaRoute.Cells, Model = model };
        var ds = context.Datasets[block.Data!];
        if (model.Transform != TransformKind.None)
        {
            diagnostics.AggregateProblem(block.Location, ds.Spec.Name, $"'transform: {options.TransformName}' needs the rows, and the database aggregated them (aggregate: true); transform the column in the query instead");
            return outcome;
        }

        if (context.Models.AggregatedCells.GetValueOrDefault(block.Id) is not { } selected)
        {
            diagnostics.NoRowsSelected(block.Location);
            return outcome;
        }

        var levels = selected.Levels;
        var cells = selected.Cells;
        var dropped = selected.Dropped;
        for (var k = 0; k < block.Factors.Count; k++)
        {
            if (levels[k].Count < 2)
            {
                diagnostics.TooFewGroups(block.FactorsLocation, block.Factors[k].Name, levels[k].Count);
                return outcome;
            }
        }

        if (cells.All(c => c.Count == 1) && (block.Factors.Count == 1 || model.Interaction))
        {
            diagnostics.NoResidualDf(block.Location);
            return outcome;
        }

        var input = new CellAnovaInput(
            [.. block.Factors.Select((f, k) => new CellFactor(f.Name, levels[k]))],
            cells,
            model.Interaction,
            model.SsType,
            context.Header.Alpha);
        if (CellStatisticsAnova.Check(input) is { } problem)
        {
            if (problem.Kind == DesignProblemKind.EmptyCell && problem.Cell is { } cell)
            {
                diagnostics.EmptyCell(block.FactorsLocation, string.Join(", ", cell.Select((l, k) => $"{block.Factors[k].Name} = '{l}'")));
            }
            else
            {
                diagnostics.DesignProblem(block.FactorsLocation, problem.Message);
            }

            return outcome;
        }

        var result = CellStatisticsAnova.Fit(input);
        outcome.Fit = AnovaFit.Of(result);
        outcome.Cells = selected;
        outcome.Factors = block.Factors;
        outcome.ResponseCentre = selected.Centre;
        outcome.ResponseName = block.Response!;
        outcome.ResponseLabel = context.Header.ResponseDisplay(block.Response);
        var inputs = context.Inputs(block);
        var centre = selected.Centre;
        RecordTable(context, block, result.Terms, result.ResidualSumOfSquares, result.ResidualDf, result.ResidualMeanSquare, result.TotalSumOfSquares, result.TotalDf, inputs, outcome.Terms, outcome.Residual, outcome.Total);

        // Level means (each factor's levels, pooled over the other factors).
        for (var k = 0; k < block.Factors.Count; k++)
        {
            for (var l = 0; l < levels[k].Count; l++)
            {
                var of = cells.Where(c => c.Levels[k] == l).Select(c => new AggregateStat(c.Count, c.Mean, c.SumOfSquares)).Aggregate(AggregateSource.Pool);
                var name = block.Factors[k].Name;
                var values = new Dictionary<string, ResultValue>(StringComparer.Ordinal)
                {
                    [Stat.N] = context.Results.Add(block.Id, TestName.Means, name, levels[k][l], null, Stat.N, of.N, inputs),
                    [Stat.Mean] = context.Results.Add(block.Id, TestName.Means, name, levels[k][l], null, Stat.Mean, of.CentredMean + centre, inputs),
                };
                outcome.Means.Add((name, levels[k][l], values));
            }
        }

        if (block.Factors.Count == 1)
        {
            OneFactorCells(context, block, outcome, options, cells, inputs);
        }

        // The cells route names no groups in its cautions (the labels are the database's cells).
        outcome.Cautions = new AnovaCautions(
            cells.Any(c => c.Count == 1) ? ["*"] : [],
            cells.Any(c => c.Count is > 1 and < 5) ? ["*"] : [],
            block.Factors.Count > 1 && cells.Select(c => c.Count).Distinct().Count() > 1,
            false,
            dropped,
            []);

        return outcome;
    }

    private static void OneFactorCells(EvaluationContext context, BoundBlock block, AnovaOutcome outcome, AnovaKind.Options options, IReadOnlyList<CellStatistics> cells, IReadOnlyList<string> inputs)
    {
        var groups = cells.Select(c => new GroupStatistics(c.Count, c.Mean, c.SumOfSquares)).ToList();
        var name = block.Factors[0].Name;
        var bt = GroupStatisticsTests.Bartlett(groups);
        outcome.Bartlett = new Dictionary<string, ResultValue>(StringComparer.Ordinal)
        {
            [Stat.Statistic] = context.Results.Add(block.Id, TestName.Bartlett, name, null, null, Stat.Statistic, bt.Statistic, inputs),
            [Stat.Df] = context.Results.Add(block.Id, TestName.Bartlett, name, null, null, Stat.Df, bt.Df, inputs),
            [Stat.P] = context.Results.Add(block.Id, TestName.Bartlett, name, null, null, Stat.P, bt.P, inputs),
        };
        var alpha = context.Header.Alpha;
        var show = options.Welch == "yes";
        if (options.Welch == "yes")
        {
            outcome.Decisions.Add(new RuleDecision(DecisionRule.WelchRequested, Cells: true));
        }
        else if (options.Welch == "auto")
        {
            if (bt.P.IsDefined && bt.P.Value < alpha)
            {
                show = true;
                outcome.ReadWelch = true;
                outcome.Decisions.Add(new RuleDecision(DecisionRule.WelchFired, Cells: true) { P = bt.P });
            }
            else
            {
                outcome.Decisions.Add(new RuleDecision(bt.P.IsDefined ? DecisionRule.WelchNotFired : DecisionRule.WelchUnchecked, Cells: true) { P = bt.P });
            }
        }

        if (show)
        {
            var w = GroupStatisticsTests.Welch(groups);
            var values = new Dictionary<string, ResultValue>(StringComparer.Ordinal);
            void AddW(string stat, Quantity q) => values[stat] = context.Results.Add(block.Id, TestName.Welch, name, null, null, stat, q, inputs);
            AddW(Stat.F, w.F);
            AddW(Stat.Df1, Quantity.Of(w.Df1));
            AddW(Stat.Df2, w.Df2);
            AddW(Stat.P, w.P);
            outcome.Welch = values;
        }
    }


}
