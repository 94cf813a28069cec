using System.Globalization;
using System.Runtime.CompilerServices;
using StudyPress.Binding.Kinds;
using StudyPress.Binding;
using StudyPress.Diagnostics;
using StudyPress.Evaluation;
using StudyPress.Model;
using StudyPress.Statistics.Anova;
using StudyPress.Statistics.Nonparametric;
using StudyPress.Statistics;

namespace StudyPress.Evaluation.Kinds;

/// <summary>
/// Where an anova block's numbers come from. <see cref="Rows"/>: the rows were loaded, and the
/// fit has per-observation fitted values and residuals (assumption checks, rank tests, figures).
/// <see cref="Cells"/>: the database aggregated the dataset (<c>aggregate: true</c>), and only the
/// per-cell counts, means and sums of squares exist; what needs the rows was not computed.
/// </summary>
public enum AnovaRoute
{
    Rows,
    Cells,
}

/// <summary>
/// The ANOVA table of a fitted model, whichever route computed it (rows or cell statistics):
/// what every consumer of the table (post-hoc comparisons, methods text, references) reads.
/// </summary>
public sealed record AnovaFit(
    IReadOnlyList<AnovaTerm> Terms,
    double ResidualSumOfSquares,
    int ResidualDf,
    Quantity ResidualMeanSquare,
    double TotalSumOfSquares,
    int TotalDf,
    SumOfSquaresType SsType,
    double Alpha)
{
    public static AnovaFit Of(AnovaResult r) => new(r.Terms, r.ResidualSumOfSquares, r.ResidualDf, r.ResidualMeanSquare, r.TotalSumOfSquares, r.TotalDf, r.SsType, r.Alpha);

    public static AnovaFit Of(CellAnovaResult r) => new(r.Terms, r.ResidualSumOfSquares, r.ResidualDf, r.ResidualMeanSquare, r.TotalSumOfSquares, r.TotalDf, r.SsType, r.Alpha);
}

/// <summary>
/// What an anova block's cautions rest on: groups of one, small groups (labels on the rows route),
/// an unbalanced layout, rows left out, groups without any response.
/// </summary>
public sealed record AnovaCautions(
    IReadOnlyList<string> SingleGroups,
    IReadOnlyList<string> SmallGroups,
    bool Unbalanced,
    bool Interaction,
    long DroppedMissing,
    IReadOnlyList<string> EmptyGroups);

/// <summary>
/// One anova block evaluated, on either route (<see cref="AnovaRoute"/>): the table
/// (<see cref="Fit"/>) and its manifest values always; the rows' data, per-observation fit and
/// assumption review only when <see cref="RowsAvailable"/>; the cells and Bartlett's test only on
/// the cells route.
/// </summary>
public sealed class AnovaOutcome(BoundBlock block) : BlockOutcome(block)
{
    private AssumptionReview? review;

    /// <summary>Which data the numbers come from.</summary>
    public AnovaRoute Route { get; init; } = AnovaRoute.Rows;

    /// <summary>The facts the block's cautions and notes are written from (set once the model is fitted).</summary>
    public AnovaCautions? Cautions { get; set; }

    /// <summary>Whether the rows were read (residuals, rank tests and figures exist only then).</summary>
    public bool RowsAvailable => Route == AnovaRoute.Rows;

    /// <summary>The ANOVA table (both routes); null when the block failed.</summary>
    public AnovaFit? Fit { get; set; }

    /// <summary>The fit on the rows, with fitted values and residuals per observation (rows route only).</summary>
    public AnovaResult? Result { get; set; }

    /// <summary>The model's factors, in the block's order (both routes).</summary>
    public IReadOnlyList<FactorSpec> Factors { get; set; } = [];

    /// <summary>The response column's name (both routes).</summary>
    public string ResponseName { get; set; } = string.Empty;

    /// <summary>The response as readers see it (label and unit from the header, else the column name).</summary>
    public string ResponseLabel { get => responseLabel.Length > 0 ? responseLabel : ResponseName; set => responseLabel = value; }

    private string responseLabel = string.Empty;

    /// <summary>The selected rows (rows route only).</summary>
    public BlockData? Data { get; set; }

    /// <summary>The model the block states (bound once, before evaluation).</summary>
    public ModelDescription? Model { get; init; }

    /// <summary>
    /// The per-cell sufficient statistics: from the database's cells (cells route), or from the
    /// selected rows (rows route). Set when the model was fitted.
    /// </summary>
    public CellTable? Cells { get; set; }

    /// <summary>The model input: the (transformed) response, centred, and the factors (rows route only).</summary>
    public AnovaInput? Input { get; set; }

    public TransformedResponse? Transformed { get; set; }

    /// <summary>Centre subtracted from the (transformed) response before fitting.</summary>
    public double ResponseCentre { get; set; }

    public List<(AnovaTerm Term, Dictionary<string, ResultValue> Values)> Terms { get; } = [];

    public Dictionary<string, ResultValue> Residual { get; } = new(StringComparer.Ordinal);

    public Dictionary<string, ResultValue> Total { get; } = new(StringComparer.Ordinal);

    public List<(string Factor, string Level, Dictionary<string, ResultValue> Values)> Means { get; } = [];

    public Dictionary<string, ResultValue>? Welch { get; set; }

    /// <summary>Bartlett's test from the cell variances (cells route, one factor).</summary>
    public Dictionary<string, ResultValue>? Bartlett { get; set; }

    /// <summary>The Box–Cox estimate's values (lambda, lambda_low, lambda_high), when that transform was used.</summary>
    public Dictionary<string, ResultValue> BoxCox { get; } = new(StringComparer.Ordinal);

    public Dictionary<string, ResultValue>? Ranks { get; set; }

    /// <summary>Which automatic rules fired, and on what evidence (the renderer words them).</summary>
    public List<RuleDecision> Decisions { get; } = [];

    /// <summary>The assumption checks of this model, computed when first needed (rows route only).</summary>
    public AssumptionReview Review => review ??= RowsAvailable
        ? AssumptionReview.Run(this)
        : throw new InvalidOperationException("the assumption checks need the rows, and this anova block ran on cell statistics");

    public bool ReadWelch { get; set; }

    /// <summary>The strata or mixed-model fit, when the header declares a layout (then <see cref="Fit"/> and <see cref="Result"/> are null).</summary>
    public DesignFit? Design { get; set; }

    /// <summary>The analysis of covariance, when the block names covariates (then <see cref="Result"/> holds its residuals).</summary>
    public CovariateAnalysis? Ancova { get; set; }
}

/// <summary>Evaluates <c>anova</c> blocks into values (no HTML, no report text).</summary>
public sealed partial class AnovaEvaluator : KindEvaluator
{
    /// <summary>Registers this part of the kind (see DEVELOPERS.md, "Adding an analysis kind").</summary>
    [ModuleInitializer]
    internal static void Register() => KindEvaluators.Register(new AnovaEvaluator());

    public override string Kind => "anova";

    public override BlockOutcome Evaluate(EvaluationContext context, BoundBlock block, DiagnosticBag diagnostics)
    {
        var options = block.OptionsOf<AnovaKind.Options>();
        var model = context.Models.Descriptions[block.Id];
        if (options.HasCovariates)
        {
            return EvaluateCovariates(context, block, options, model, diagnostics);
        }

        if (model.Route == ModelRoute.Design)
        {
            return EvaluateDesign(context, block, options, model, diagnostics);
        }

        if (StudyModels.ReadsAggregate(block, context.Datasets))
        {
            return EvaluateCells(context, block, options, diagnostics);
        }

        var outcome = new AnovaOutcome(block) { Model = model };
        var data = context.Select(block, diagnostics);
        if (data is null)
        {
            return outcome;
        }

        outcome.Data = data;
        outcome.Factors = [.. data.Factors.Select(f => f.Spec)];
        outcome.ResponseName = data.ResponseName;
        outcome.ResponseLabel = data.ResponseLabel;
        foreach (var f in data.Factors)
        {
            if (f.Levels.Count < 2)
            {
                diagnostics.TooFewGroups(block.FactorsLocation, f.Spec.Name, f.Levels.Count);
                return outcome;
            }
        }

        var cells = data.Cells();
        if (cells.All(c => c.Values.Length == 1) && (data.Factors.Count == 1 || model.Interaction))
        {
            diagnostics.NoResidualDf(block.Location);
            return outcome;
        }

        var factors = data.Factors.Select(f => f.ToColumn()).ToList();
        var response = data.Response;
        var centre = data.Centre;
        if (model.Transform != TransformKind.None)
        {
            var t = ResponseTransform.Apply(data.Values, model.Transform, factors, model.Interaction, context.Header.Alpha);
            if (t.Error is { } error)
            {
                if (error.Index is { } index)
                {
                    var line = data.Dataset.Lines[data.Rows[index]];
                    diagnostics.TransformRow(
                        new SourceLocation(DataDisplay(context, data), line - 1, 0),
                        options.TransformName,
                        data.ResponseName,
                        (error.Value ?? data.Values[index]).ToString("R", CultureInfo.InvariantCulture),
                        NeedText(model.Transform));
                }
                else
                {
                    diagnostics.TransformDomain(block.Location, options.TransformName, error.Message);
                }

                return outcome;
            }

            outcome.Transformed = t.Result;
            centre = Groups.Mean(t.Result!.Values);
            response = [.. t.Result.Values.Select(v => v - centre)];
        }

        outcome.ResponseCentre = centre;
        var input = new AnovaInput(response, factors, model.Interaction, model.SsType, context.Header.Alpha)
        {
            // Exact decimal data give exact sums of squares (one factor, untransformed response).
            Exact = model.Transform == TransformKind.None && data.Factors.Count == 1 ? data.Exact?.AsScaled() : null,
        };
        if (data.Factors.Count > 1 && AnovaDesign.Check(input) is { } problem)
        {
            if (problem.Kind == DesignProblemKind.EmptyCell && problem.Cell is { } cell)
            {
                diagnostics.EmptyCell(block.FactorsLocation, string.Join(", ", cell.Select((l, k) => $"{factors[k].Name} = '{l}'")));
            }
            else
            {
                diagnostics.DesignProblem(block.FactorsLocation, problem.Message);
            }

            return outcome;
        }

        outcome.Input = input;
        var result = FactorialAnova.Fit(input);
        outcome.Result = result;
        outcome.Fit = AnovaFit.Of(result);
        outcome.Cells = data.CellTable();
        var inputs = context.Inputs(block);
        AnovaEvaluator.RecordTable(context, block, result.Terms, result.ResidualSumOfSquares, result.ResidualDf, result.ResidualMeanSquare, result.TotalSumOfSquares, result.TotalDf, inputs, outcome.Terms, outcome.Residual, outcome.Total);

        if (outcome.Transformed?.BoxCox is { } bc)
        {
            outcome.BoxCox[Stat.Lambda] = context.Results.Add(block.Id, TestName.BoxCox, null, null, null, Stat.Lambda, bc.Lambda, inputs);
            outcome.BoxCox[Stat.LambdaLow] = context.Results.Add(block.Id, TestName.BoxCox, null, null, null, Stat.LambdaLow, bc.LambdaLow, inputs);
            outcome.BoxCox[Stat.LambdaHigh] = context.Results.Add(block.Id, TestName.BoxCox, null, null, null, Stat.LambdaHigh, bc.LambdaHigh, inputs);
        }

        AddMeans(context, block, outcome, inputs);
        if (data.Factors.Count == 1)
        {
            OneFactorChecks(context, block, outcome, options, inputs);
        }

        AddCautions(context, block, outcome, data, options);
        if (context.Header.Report.Figures)
        {
            var shape = data.Factors.Count == 1 ? Figures.Means(data, context.Header.Alpha) : Figures.Interaction(outcome);
            if (shape is not null)
            {
                outcome.Figures.Add(shape);
            }

            outcome.Figures.AddRange(Figures.FDistributions(outcome).Take(data.Factors.Count == 1 ? 1 : 3));
        }

        return outcome;
    }

    /// <summary>
    /// Records an ANOVA table in the manifest: per term SS, df, MS, F, p, critical F, effect sizes
    /// and the (1 − alpha) interval of partial eta²; residual SS, df, MS; total SS, df. Shared by
    /// fits on loaded rows and on database cell summaries, so both write the same vocabulary.
    /// </summary>
    internal static void RecordTable(
        EvaluationContext context,
        BoundBlock block,
        IReadOnlyList<AnovaTerm> terms,
        double ssResidual,
        int dfResidual,
        Quantity msResidual,
        double ssTotal,
        int dfTotal,
        IReadOnlyList<string> inputs,
        List<(AnovaTerm Term, Dictionary<string, ResultValue> Values)> termValues,
        Dictionary<string, ResultValue> residual,
        Dictionary<string, ResultValue> total)
    {
        foreach (var t in terms)
        {
            var values = new Dictionary<string, ResultValue>(StringComparer.Ordinal);
            void Add(string stat, Quantity q) => values[stat] = context.Results.Add(block.Id, TestName.Anova, t.Name, null, null, stat, q, inputs);
            Add(Stat.Ss, Quantity.Of(t.SumOfSquares));
            Add(Stat.Df, Quantity.Of(t.Df));
            Add(Stat.Ms, t.MeanSquare);
            Add(Stat.F, t.F);
            Add(Stat.DfDen, Quantity.Of(dfResidual));
            Add(Stat.P, t.P);
            Add(Stat.FCrit, t.FCritical);
            Add(Stat.Eta2, t.EtaSquared);
            Add(Stat.PartialEta2, t.PartialEtaSquared);
            Add(Stat.Omega2, t.OmegaSquared);
            Add(Stat.CohenF, t.CohenF);
            var ci = EffectSizeIntervals.PartialEtaSquared(t.F, t.Df, dfResidual, 1 - context.Header.Alpha);
            Add(Stat.PartialEta2CiLow, ci.PartialEtaSquaredLow);
            Add(Stat.PartialEta2CiHigh, ci.PartialEtaSquaredHigh);
            termValues.Add((t, values));
        }

        residual[Stat.Ss] = context.Results.Add(block.Id, TestName.Anova, "residual", null, null, Stat.Ss, ssResidual, inputs);
        residual[Stat.Df] = context.Results.Add(block.Id, TestName.Anova, "residual", null, null, Stat.Df, dfResidual, inputs);
        residual[Stat.Ms] = context.Results.Add(block.Id, TestName.Anova, "residual", null, null, Stat.Ms, msResidual, inputs);
        total[Stat.Ss] = context.Results.Add(block.Id, TestName.Anova, "total", null, null, Stat.Ss, ssTotal, inputs);
        total[Stat.Df] = context.Results.Add(block.Id, TestName.Anova, "total", null, null, Stat.Df, dfTotal, inputs);
    }

    private static string DataDisplay(EvaluationContext context, BlockData data) =>
        context.DataDisplayPaths.TryGetValue(data.Dataset.Spec.Name, out var p) ? p : data.Dataset.Path;

    private static string NeedText(TransformKind kind) => kind switch
    {
        TransformKind.Sqrt => "non-negative",
        TransformKind.Reciprocal => "non-zero",
        _ => "positive",
    };

    private static void AddMeans(EvaluationContext context, BoundBlock block, AnovaOutcome outcome, IReadOnlyList<string> inputs)
    {
        var means = AnovaMeans.Compute(outcome.Input!);
        foreach (var fm in means.Factors)
        {
            foreach (var lm in fm.Levels)
            {
                var values = new Dictionary<string, ResultValue>(StringComparer.Ordinal)
                {
                    [Stat.N] = context.Results.Add(block.Id, TestName.Means, fm.Factor, lm.Level, null, Stat.N, lm.Count, inputs),
                    [Stat.Mean] = context.Results.Add(block.Id, TestName.Means, fm.Factor, lm.Level, null, Stat.Mean, Back(outcome, lm.RawMean), inputs),
                };
                if (outcome.Input!.Factors.Count > 1)
                {
                    values[Stat.LsMean] = context.Results.Add(block.Id, TestName.Means, fm.Factor, lm.Level, null, Stat.LsMean, Back(outcome, lm.LeastSquaresMean), inputs);
                }

                outcome.Means.Add((fm.Factor, lm.Level, values));
            }
        }
    }

    /// <summary>A mean on the model scale (centred), back on the response's own scale.</summary>
    private static Quantity Back(AnovaOutcome outcome, Quantity centredMean)
    {
        if (!centredMean.IsDefined)
        {
            return centredMean;
        }

        var m = centredMean.Value + outcome.ResponseCentre;
        return outcome.Transformed is { } t ? ResponseTransform.BackTransformMean(m, t) : Quantity.Of(m);
    }

    private static void OneFactorChecks(EvaluationContext context, BoundBlock block, AnovaOutcome outcome, AnovaKind.Options options, IReadOnlyList<string> inputs)
    {
        var factor = outcome.Data!.Factors[0];
        var groups = factor.Split(outcome.Input!.Response);
        var showWelch = options.Welch == "yes";
        if (options.Welch == "yes")
        {
            outcome.Decisions.Add(new RuleDecision(DecisionRule.WelchRequested));
        }
        else if (options.Welch == "auto")
        {
            var bf = outcome.Review.BrownForsythe;
            if (outcome.Review.UnequalVariances)
            {
                showWelch = true;
                outcome.ReadWelch = true;
                outcome.Decisions.Add(new RuleDecision(DecisionRule.WelchFired) { P = bf.P });
            }
            else
            {
                outcome.Decisions.Add(new RuleDecision(bf.P.IsDefined ? DecisionRule.WelchNotFired : DecisionRule.WelchUnchecked) { P = bf.P });
            }

            if (outcome.Review.WantsRankTest)
            {
                var kw = KruskalWallis.Test(groups);
                outcome.Ranks = new Dictionary<string, ResultValue>(StringComparer.Ordinal)
                {
                    [Stat.H] = context.Results.Add(block.Id, TestName.KruskalWallis, factor.Spec.Name, null, null, Stat.H, kw.H, inputs),
                    [Stat.Df] = context.Results.Add(block.Id, TestName.KruskalWallis, factor.Spec.Name, null, null, Stat.Df, kw.Df, inputs),
                    [Stat.P] = context.Results.Add(block.Id, TestName.KruskalWallis, factor.Spec.Name, null, null, Stat.P, kw.P, inputs),
                };
                outcome.Decisions.Add(new RuleDecision(DecisionRule.RankTestAdded) { P = outcome.Review.Normality.P, SmallestGroup = outcome.Review.SmallestGroup });
            }
        }

        if (showWelch)
        {
            var w = WelchAnova.Test(groups);
            var values = new Dictionary<string, ResultValue>(StringComparer.Ordinal);
            void AddW(string stat, Quantity q) => values[stat] = context.Results.Add(block.Id, TestName.Welch, factor.Spec.Name, null, null, stat, q, inputs);
            AddW(Stat.F, w.F);
            AddW(Stat.Df1, Quantity.Of(w.Df1));
            AddW(Stat.Df2, w.Df2);
            AddW(Stat.P, w.P);
            outcome.Welch = values;
        }
    }


    private static void AddCautions(EvaluationContext context, BoundBlock block, AnovaOutcome outcome, BlockData data, AnovaKind.Options options)
    {
        var cells = data.Cells();
        outcome.Cautions = new AnovaCautions(
            [.. cells.Where(c => c.Values.Length == 1).Select(c => c.Label)],
            [.. cells.Where(c => c.Values.Length is > 1 and < 5).Select(c => c.Label)],
            cells.Select(c => c.Values.Length).Distinct().Count() > 1 && data.Factors.Count > 1,
            options.Interaction,
            data.DroppedMissing,
            SummaryEvaluator.EmptyGroups(context, block, data));
    }
}
