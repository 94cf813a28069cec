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
        // What the block hands on when it stops at a mistake: nothing fitted.
        var stopped = new AnovaOutcome(block) { Route = AnovaRoute.Cells, Model = model };
        var ds = context.Datasets[block.Data!];
        if (model.Transform != TransformKind.None)
        {
            diagnostics.AggregateProblem(block.Location, ds.Spec.Name, $"'transform: {options.TransformName}' needs the rows, and the database aggregated them (aggregate: true); transform the column in the query instead");
            return stopped;
        }

        if (context.Models.AggregatedCells.GetValueOrDefault(block.Id) is not { } selected)
        {
            diagnostics.NoRowsSelected(block.Location);
            return stopped;
        }

        var levels = selected.Levels;
        var cells = selected.Cells;
        var dropped = selected.Dropped;
        for (var k = 0; k < block.Factors.Count; k++)
        {
            if (levels[k].Count < 2)
            {
                diagnostics.TooFewGroups(block.FactorsLocation, block.Factors[k].Name, levels[k].Count);
                return stopped;
            }
        }

        if (cells.All(c => c.Count == 1) && (block.Factors.Count == 1 || model.Interaction))
        {
            diagnostics.NoResidualDf(block.Location);
            return stopped;
        }

        var input = selected.ModelInput(model, context.Header.Alpha);
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

            return stopped;
        }

        var result = CellStatisticsAnova.Fit(input);
        var inputs = context.Inputs(block);
        var centre = selected.Centre;
        var (terms, residual, total) = RecordTable(context, block, result.Terms, result.ResidualSumOfSquares, result.ResidualDf, result.ResidualMeanSquare, result.TotalSumOfSquares, result.TotalDf, inputs);

        // Level means (each factor's levels, pooled over the other factors).
        var means = new List<(string Factor, string Level, IReadOnlyDictionary<string, ResultValue> Values)>();
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
                means.Add((name, levels[k][l], values.AsReadOnly()));
            }
        }

        var decisions = new List<RuleDecision>();
        var (bartlett, welch, readWelch) = block.Factors.Count == 1
            ? OneFactorCells(context, block, options, cells, decisions, inputs)
            : (null, null, false);

        return new AnovaOutcome(block)
        {
            Route = AnovaRoute.Cells,
            Model = model,
            Fit = AnovaFit.Of(result),
            Cells = selected,
            Factors = block.Factors,
            ResponseCentre = selected.Centre,
            ResponseName = block.Response!,
            ResponseLabel = context.Header.ResponseDisplay(block.Response),
            Terms = terms,
            Residual = residual,
            Total = total,
            Means = means.AsReadOnly(),
            Bartlett = bartlett,
            Welch = welch,
            ReadWelch = readWelch,
            Decisions = decisions.AsReadOnly(),

            // The cells route names no groups in its cautions (the labels are the database's cells).
            Cautions = new AnovaCautions(
                cells.Any(c => c.Count == 1) ? ["*"] : [],
                cells.Any(c => c.Count is > 1 and < 5) ? ["*"] : [],
                block.Factors.Count > 1 && cells.Select(c => c.Count).Distinct().Count() > 1,
                false,
                dropped,
                []),
        };
    }

    /// <summary>Bartlett's test and Welch's F of one factor from the cells, by the block's <c>welch</c> choice; the rules' decisions go to <paramref name="decisions"/>.</summary>
    private static (IReadOnlyDictionary<string, ResultValue> Bartlett, IReadOnlyDictionary<string, ResultValue>? Welch, bool ReadWelch) OneFactorCells(
        EvaluationContext context, BoundBlock block, AnovaKind.Options options, IReadOnlyList<CellStatistics> cells, List<RuleDecision> decisions, IReadOnlyList<string> inputs)
    {
        var groups = cells.Select(c => new GroupStatistics(c.Count, c.Mean, c.SumOfSquares)).ToList();
        var name = block.Factors[0].Name;
        var bt = GroupStatisticsTests.Bartlett(groups);
        var bartlett = new Dictionary<string, ResultValue>(StringComparer.Ordinal)
        {
            [Stat.Statistic] = context.Results.Add(block.Id, TestName.Bartlett, name, null, null, Stat.Statistic, bt.Statistic, inputs),
            [Stat.Df] = context.Results.Add(block.Id, TestName.Bartlett, name, null, null, Stat.Df, bt.Df, inputs),
            [Stat.P] = context.Results.Add(block.Id, TestName.Bartlett, name, null, null, Stat.P, bt.P, inputs),
        }.AsReadOnly();
        var alpha = context.Header.Alpha;
        var show = options.Welch == "yes";
        var readWelch = false;
        if (options.Welch == "yes")
        {
            decisions.Add(new RuleDecision(DecisionRule.WelchRequested, Cells: true));
        }
        else if (options.Welch == "auto")
        {
            if (bt.P.IsDefined && bt.P.Value < alpha)
            {
                show = true;
                readWelch = true;
                decisions.Add(new RuleDecision(DecisionRule.WelchFired, Cells: true) { P = bt.P });
            }
            else
            {
                decisions.Add(new RuleDecision(bt.P.IsDefined ? DecisionRule.WelchNotFired : DecisionRule.WelchUnchecked, Cells: true) { P = bt.P });
            }
        }

        if (!show)
        {
            return (bartlett, null, readWelch);
        }

        var w = GroupStatisticsTests.Welch(groups);
        var values = new Dictionary<string, ResultValue>(StringComparer.Ordinal);
        void AddW(string stat, Quantity q) => values[stat] = context.Results.Add(block.Id, TestName.Welch, name, null, null, stat, q, inputs);
        AddW(Stat.F, w.F);
        AddW(Stat.Df1, Quantity.Of(w.Df1));
        AddW(Stat.Df2, w.Df2);
        AddW(Stat.P, w.P);
        return (bartlett, values.AsReadOnly(), readWelch);
    }
}
