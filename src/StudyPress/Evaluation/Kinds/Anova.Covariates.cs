using StudyPress.Binding;
using StudyPress.Binding.Kinds;
using StudyPress.Diagnostics;
using StudyPress.Model;
using StudyPress.Statistics;
using StudyPress.Statistics.Anova;
using StudyPress.Statistics.Designs;
using StudyPress.Statistics.FollowUp;

namespace StudyPress.Evaluation.Kinds;

/// <summary>One adjusted (estimated marginal) mean of an analysis of covariance with its manifest values, and the raw mean beside it.</summary>
public sealed record AdjustedMeanRow(string Term, string Level, MarginalMean Mean, IReadOnlyDictionary<string, ResultValue> Values, ResultValue? RawMean, ResultValue? RawN);

/// <summary>
/// An anova block with covariates (an analysis of covariance): the engine's fit and its input,
/// the covariates, the blocks (factors with role block, taken additively and not compared), and
/// the manifest values of the slopes, the homogeneity-of-slopes test and the adjusted means.
/// </summary>
public sealed class CovariateAnalysis
{
    public required AncovaResult Result { get; init; }

    public required AncovaInput Input { get; init; }

    /// <summary>The covariates' names, in the block's order.</summary>
    public required IReadOnlyList<string> Covariates { get; init; }

    /// <summary>Each covariate's mean over the analysed rows (the value the adjusted means are at).</summary>
    public required IReadOnlyList<double> CovariateMeans { get; init; }

    /// <summary>Factors declared as blocks: fitted additively, not crossed with the covariates, not compared.</summary>
    public required IReadOnlyList<string> Blocks { get; init; }

    /// <summary>Treatment factors: crossed with each covariate in the homogeneity-of-slopes test.</summary>
    public required IReadOnlyList<string> Treatments { get; init; }

    /// <summary>Rows left out because a covariate was missing (their response and factors were present).</summary>
    public required int DroppedCovariate { get; init; }

    public required IReadOnlyList<(CovariateSlope Slope, IReadOnlyDictionary<string, ResultValue> Values)> Slopes { get; init; }

    public required IReadOnlyDictionary<string, ResultValue> Homogeneity { get; init; }

    public required IReadOnlyList<AdjustedMeanRow> Means { get; init; }

    /// <summary>Whether the slopes test rejects parallel slopes at alpha.</summary>
    public bool SlopesDiffer => Result.Homogeneity.P.IsDefined && Result.Homogeneity.P.Value < Result.Alpha;
}

public sealed partial class AnovaEvaluator
{
    /// <summary>
    /// An anova block with <c>covariates</c>: rows with a missing covariate are left out (counted with
    /// the rows missing a response); the analysis of covariance by <see cref="Ancova.Fit"/> with the
    /// block's SS type (factor terms adjusted for the covariates, each covariate for everything
    /// else), blocks additive; the slopes, the homogeneity-of-slopes test over the treatment terms,
    /// adjusted means at the covariate means with raw means beside them. The fit's residuals stand
    /// in <see cref="AnovaOutcome.Result"/> so that an assumptions block checks the covariance model.
    /// </summary>
    private static AnovaOutcome EvaluateCovariates(EvaluationContext context, BoundBlock block, AnovaKind.Options options, ModelDescription model, DiagnosticBag diagnostics)
    {
        // Rows missing a covariate are left out below, so only the rows analysed count as used.
        var selected = context.SelectUnmarked(block, diagnostics);
        if (selected is null)
        {
            return new AnovaOutcome(block) { Model = model };
        }

        var ds = selected.Dataset;
        var columns = options.Covariates.Select(c => ds.Numeric[c.Column]).ToArray();
        var keep = new List<int>(selected.Rows.Length);
        for (var i = 0; i < selected.Rows.Length; i++)
        {
            var r = selected.Rows[i];
            if (columns.All(c => !double.IsNaN(c.Centred[r])))
            {
                keep.Add(i);
            }
        }

        if (keep.Count == 0)
        {
            var first = options.Covariates.First(c => selected.Rows.All(r => double.IsNaN(ds.Numeric[c.Column].Centred[r])));
            diagnostics.AncovaCovariateMissing(first.At, first.Column);
            return new AnovaOutcome(block) { Model = model };
        }

        var dropped = selected.Rows.Length - keep.Count;
        var data = dropped == 0 ? selected : Subset(selected, [.. keep]);
        EvaluationContext.MarkUsed(data);
        var specs = data.Factors.Select(f => f.Spec).ToList().AsReadOnly();

        // What the block hands on when it stops at a mistake: its selection, nothing fitted.
        var stopped = new AnovaOutcome(block) { Model = model, Data = data, Factors = specs, ResponseName = data.ResponseName };
        foreach (var f in data.Factors)
        {
            if (f.Levels.Count < 2)
            {
                diagnostics.TooFewGroups(block.FactorsLocation, f.Spec.Name, f.Levels.Count);
                return stopped;
            }
        }

        var blocks = data.Factors.Where(f => f.Spec.Layout.Role == FactorRole.Block).Select(f => f.Spec.Name).ToList();
        var treatments = data.Factors.Where(f => f.Spec.Layout.Role != FactorRole.Block).Select(f => f.Spec.Name).ToList();
        var interactions = model.Interaction && blocks.Count == 0;
        var factors = data.Factors.Select(f => f.ToColumn()).ToList();
        var alpha = context.Header.Alpha;
        var anovaInput = new AnovaInput(data.Response, factors, interactions, model.SsType, alpha);
        if (data.Factors.Count > 1 && AnovaDesign.Check(anovaInput) is { } problem)
        {
            if (problem.Kind == DesignProblemKind.EmptyCell && problem.Cell is { } cell)
            {
                diagnostics.EmptyCell(block.FactorsLocation, string.Join(", ", cell.Select((l, k) => $"{factors[k].Name} = '{l}'")));
            }
            else
            {
                diagnostics.DesignProblem(block.FactorsLocation, problem.Message);
            }

            return stopped;
        }

        var covariates = new List<CovariateColumn>(columns.Length);
        foreach (var c in columns)
        {
            covariates.Add(new CovariateColumn(c.Name, data.Rows.Length == ds.Rows ? c.Centred : [.. data.Rows.Select(r => c.Centred[r])]));
        }

        var input = new AncovaInput(data.Response, factors, covariates, interactions, model.SsType, alpha)
        {
            TreatmentFactors = treatments.Count > 0 ? treatments : null,
            ResponseCentre = data.Centre,
        };
        if (Ancova.Check(input) is { } reason)
        {
            diagnostics.AncovaCannotFit(options.CovariatesLocation, reason);
            return stopped;
        }

        var result = Ancova.Fit(input);
        var fitted = new AnovaResult(result.Terms, result.ResidualSumOfSquares, result.ResidualDf, result.ResidualMeanSquare, result.TotalSumOfSquares, result.TotalDf, result.Fitted, result.Residuals, result.Leverages, result.SsType, alpha);
        var inputs = context.Inputs(block);
        var (terms, residual, total) = RecordTable(context, block, result.Terms, result.ResidualSumOfSquares, result.ResidualDf, result.ResidualMeanSquare, result.TotalSumOfSquares, result.TotalDf, inputs);

        var slopes = new List<(CovariateSlope Slope, IReadOnlyDictionary<string, ResultValue> Values)>(result.Slopes.Count);
        foreach (var s in result.Slopes)
        {
            var v = new Dictionary<string, ResultValue>(StringComparer.Ordinal);
            void AddS(string stat, Quantity q) => v[stat] = context.Results.Add(block.Id, TestName.CovariateSlope, s.Covariate, null, null, stat, q, inputs);
            AddS(Stat.Estimate, Quantity.Of(s.Estimate));
            AddS(Stat.Se, s.Se);
            AddS(Stat.Df, Quantity.Of(s.Df));
            AddS(Stat.Statistic, s.T);
            AddS(Stat.P, s.P);
            slopes.Add((s, v.AsReadOnly()));
        }

        var h = result.Homogeneity;
        var homogeneity = new Dictionary<string, ResultValue>(StringComparer.Ordinal);
        void AddH(string stat, Quantity q) => homogeneity[stat] = context.Results.Add(block.Id, TestName.SlopesHomogeneity, null, null, null, stat, q, inputs);
        AddH(Stat.F, h.F);
        AddH(Stat.Df1, Quantity.Of(h.Df1));
        AddH(Stat.Df2, Quantity.Of(h.Df2));
        AddH(Stat.P, h.P);

        // Raw means (the block's own level means) beside the adjusted ones: one factor's levels only.
        var means = new List<(string Factor, string Level, IReadOnlyDictionary<string, ResultValue> Values)>();
        var raw = new Dictionary<(string Factor, string Level), (ResultValue N, ResultValue Mean)>();
        foreach (var f in data.Factors)
        {
            var groups = f.Split(data.Response);
            for (var l = 0; l < f.Levels.Count; l++)
            {
                var values = new Dictionary<string, ResultValue>(StringComparer.Ordinal)
                {
                    [Stat.N] = context.Results.Add(block.Id, TestName.Means, f.Spec.Name, f.Levels[l], null, Stat.N, groups[l].Length, inputs),
                    [Stat.Mean] = context.Results.Add(block.Id, TestName.Means, f.Spec.Name, f.Levels[l], null, Stat.Mean, Groups.Mean(groups[l]) + data.Centre, inputs),
                };
                means.Add((f.Spec.Name, f.Levels[l], values.AsReadOnly()));
                raw[(f.Spec.Name, f.Levels[l])] = (values[Stat.N], values[Stat.Mean]);
            }
        }

        var adjusted = new List<AdjustedMeanRow>();
        foreach (var term in result.AdjustedMeans.Terms)
        {
            foreach (var m in term.Means)
            {
                var level = string.Join(" / ", m.Levels);
                var v = MarginalMeansEvaluator.RecordMean(context, block, term.Term, m, inputs);
                var rawValues = term.Factors.Count == 1 && raw.TryGetValue((term.Factors[0], m.Levels[0]), out var rv) ? rv : default;
                adjusted.Add(new AdjustedMeanRow(term.Term, level, m, v.AsReadOnly(), rawValues.Mean, rawValues.N));
            }
        }

        var analysis = new CovariateAnalysis
        {
            Result = result,
            Input = input,
            Covariates = [.. columns.Select(c => c.Name)],
            CovariateMeans = [.. result.Slopes.Select((s, k) => s.Mean + columns[k].Centre)],
            Blocks = blocks,
            Treatments = treatments,
            DroppedCovariate = dropped,
            Slopes = slopes.AsReadOnly(),
            Homogeneity = homogeneity.AsReadOnly(),
            Means = adjusted.AsReadOnly(),
        };

        // Cautions over the treatment groups (the crossing of the treatment factors): blocks are
        // additive, so the cells of blocks x treatments are not groups of this model.
        var groupSizes = data.Rows.Select((_, i) => string.Join(" / ", data.Factors.Where(f => f.Spec.Layout.Role != FactorRole.Block).Select(f => f.Levels[f.Codes[i]])))
            .GroupBy(label => label, StringComparer.Ordinal)
            .OrderBy(g => g.Key, StringComparer.Ordinal)
            .Select(g => (Label: g.Key, Count: g.Count()))
            .ToList();
        var cautions = new AnovaCautions(
            [.. groupSizes.Where(g => g.Count == 1).Select(g => g.Label)],
            [.. groupSizes.Where(g => g.Count is > 1 and < 5).Select(g => g.Label)],
            groupSizes.Select(g => g.Count).Distinct().Count() > 1 && data.Factors.Count > 1,
            interactions,
            data.DroppedMissing,
            SummaryEvaluator.EmptyGroups(context, block, selected));
        return new AnovaOutcome(block)
        {
            Model = model,
            Data = data,
            Factors = specs,
            ResponseName = data.ResponseName,
            Input = anovaInput,
            ResponseCentre = data.Centre,
            Result = fitted,
            Fit = AnovaFit.Of(fitted),
            Cells = data.CellTable(),
            Ancova = analysis,
            Terms = terms,
            Residual = residual,
            Total = total,
            Means = means.AsReadOnly(),
            Review = AssumptionReview.Run(fitted, data, anovaInput, analysis),
            Cautions = cautions,
        };
    }

    /// <summary>The rows of <paramref name="data"/> at <paramref name="positions"/>, with the levels that keep rows (a new selection; the shared one is not changed).</summary>
    private static BlockData Subset(BlockData data, int[] positions)
    {
        T[] Pick<T>(T[] values) => [.. positions.Select(i => values[i])];
        var factors = new List<BlockFactor>(data.Factors.Count);
        foreach (var f in data.Factors)
        {
            var present = new bool[f.Levels.Count];
            foreach (var i in positions)
            {
                present[f.Codes[i]] = true;
            }

            var remap = new int[present.Length];
            var levels = new List<string>();
            for (var c = 0; c < present.Length; c++)
            {
                remap[c] = present[c] ? levels.Count : -1;
                if (present[c])
                {
                    levels.Add(f.Levels[c]);
                }
            }

            factors.Add(new BlockFactor(f.Spec, [.. positions.Select(i => remap[f.Codes[i]])], levels));
        }

        return new BlockData
        {
            Dataset = data.Dataset,
            ResponseName = data.ResponseName,
            Rows = Pick(data.Rows),
            Response = Pick(data.Response),
            Centre = data.Centre,
            Values = Pick(data.Values),
            Exact = data.Exact?.Pick(positions),
            Factors = factors,
            DroppedMissing = data.DroppedMissing + (data.Rows.Length - positions.Length),
        };
    }
}
