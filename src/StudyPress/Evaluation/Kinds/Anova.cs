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
    private readonly AssumptionReview? review;

    private readonly string responseLabel = string.Empty;

    /// <summary>Which data the numbers come from.</summary>
    public AnovaRoute Route { get; init; } = AnovaRoute.Rows;

    /// <summary>The facts the block's cautions and notes are written from (null when the model was not fitted).</summary>
    public AnovaCautions? Cautions { get; init; }

    /// <summary>Whether the rows were read (residuals, rank tests and figures exist only then).</summary>
    public bool RowsAvailable => Route == AnovaRoute.Rows;

    /// <summary>The ANOVA table (both routes); null when the block failed.</summary>
    public AnovaFit? Fit { get; init; }

    /// <summary>The fit on the rows, with fitted values and residuals per observation (rows route only).</summary>
    public AnovaResult? Result { get; init; }

    /// <summary>The model's factors, in the block's order (both routes).</summary>
    public IReadOnlyList<FactorSpec> Factors { get; init; } = [];

    /// <summary>The response column's name (both routes).</summary>
    public string ResponseName { get; init; } = string.Empty;

    /// <summary>The response as readers see it (label and unit from the header, else the column name).</summary>
    public string ResponseLabel { get => responseLabel.Length > 0 ? responseLabel : ResponseName; init => responseLabel = value; }

    /// <summary>The selected rows (rows route only).</summary>
    public BlockData? Data { get; init; }

    /// <summary>The model the block states (bound once, before evaluation).</summary>
    public ModelDescription? Model { get; init; }

    /// <summary>
    /// The per-cell sufficient statistics: from the database's cells (cells route), or from the
    /// selected rows (rows route). Present when the model was fitted.
    /// </summary>
    public CellTable? Cells { get; init; }

    /// <summary>The model input: the (transformed) response, centred, and the factors (rows route only).</summary>
    public AnovaInput? Input { get; init; }

    public TransformedResponse? Transformed { get; init; }

    /// <summary>Centre subtracted from the (transformed) response before fitting.</summary>
    public double ResponseCentre { get; init; }

    public IReadOnlyList<(AnovaTerm Term, IReadOnlyDictionary<string, ResultValue> Values)> Terms { get; init; } = [];

    public IReadOnlyDictionary<string, ResultValue> Residual { get; init; } = NoValues;

    public IReadOnlyDictionary<string, ResultValue> Total { get; init; } = NoValues;

    public IReadOnlyList<(string Factor, string Level, IReadOnlyDictionary<string, ResultValue> Values)> Means { get; init; } = [];

    public IReadOnlyDictionary<string, ResultValue>? Welch { get; init; }

    /// <summary>Bartlett's test from the cell variances (cells route, one factor).</summary>
    public IReadOnlyDictionary<string, ResultValue>? Bartlett { get; init; }

    /// <summary>The Box–Cox estimate's values (lambda, lambda_low, lambda_high), when that transform was used.</summary>
    public IReadOnlyDictionary<string, ResultValue> BoxCox { get; init; } = NoValues;

    public IReadOnlyDictionary<string, ResultValue>? Ranks { get; init; }

    /// <summary>Which automatic rules fired, and on what evidence (the renderer words them).</summary>
    public IReadOnlyList<RuleDecision> Decisions { get; init; } = [];

    /// <summary>
    /// The assumption checks of this model, computed with the fit on the rows route (plain and
    /// covariance models; a declared layout has its own checks, <see cref="DesignChecks"/>).
    /// </summary>
    public AssumptionReview Review
    {
        get => review ?? throw new InvalidOperationException(RowsAvailable
            ? "the assumption checks need a fit on the rows and a block that reads them (AssumptionReview.Needed), and this anova block has none"
            : "the assumption checks need the rows, and this anova block ran on cell statistics");
        init => review = value;
    }

    public bool ReadWelch { get; init; }

    /// <summary>The strata or mixed-model fit, when the header declares a layout (then <see cref="Fit"/> and <see cref="Result"/> are null).</summary>
    public DesignFit? Design { get; init; }

    /// <summary>The analysis of covariance, when the block names covariates (then <see cref="Result"/> holds its residuals).</summary>
    public CovariateAnalysis? Ancova { get; init; }

    /// <summary>No values (a table part the block did not compute).</summary>
    internal static readonly IReadOnlyDictionary<string, ResultValue> NoValues = new Dictionary<string, ResultValue>(StringComparer.Ordinal).AsReadOnly();
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

        var data = context.Select(block, diagnostics);
        if (data is null)
        {
            return new AnovaOutcome(block) { Model = model };
        }

        // What a block that stops at a mistake hands on: its selection, nothing fitted.
        AnovaOutcome Stopped(TransformedResponse? transformed = null, double centre = 0) => new(block)
        {
            Model = model,
            Data = data,
            Factors = [.. data.Factors.Select(f => f.Spec)],
            ResponseName = data.ResponseName,
            ResponseLabel = data.ResponseLabel,
            Transformed = transformed,
            ResponseCentre = centre,
        };

        foreach (var f in data.Factors)
        {
            if (f.Levels.Count < 2)
            {
                diagnostics.TooFewGroups(block.FactorsLocation, f.Spec.Name, f.Levels.Count);
                return Stopped();
            }
        }

        var cells = data.Cells();
        if (cells.All(c => c.Values.Length == 1) && (data.Factors.Count == 1 || model.Interaction))
        {
            diagnostics.NoResidualDf(block.Location);
            return Stopped();
        }

        var factors = data.Factors.Select(f => f.ToColumn()).ToList();
        var response = data.Response;
        var centre = data.Centre;
        TransformedResponse? transformed = null;
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

                return Stopped();
            }

            transformed = t.Result;
            centre = Groups.Mean(t.Result!.Values);
            response = [.. t.Result.Values.Select(v => v - centre)];
        }

        var input = new AnovaInput(response, factors, model.Interaction, model.SsType, context.Header.Alpha);

        // The fit works from the cells' sufficient statistics, as on the cells route: the rows'
        // cells (of the transformed response when there is a transform), each row's cell for the
        // residuals, and for one factor on exact decimal data the cells' exact sums.
        var cellOf = CellOf(data, cells);

        var exact = model.Transform == TransformKind.None && data.Factors.Count == 1 && data.Exact?.AsScaled() is { } scaled
            ? ExactSums.Cells(scaled, cellOf, cells.Count)
            : null;
        var table = CellTable.FromGroups(
            [.. data.Factors.Select(f => f.Spec)],
            [.. data.Factors.Select(f => f.Levels)],
            cells.Select(c => (c.Codes, transformed is null ? c.Values : Gather(response, c.Positions))),
            centre,
            data.DroppedMissing,
            exact);
        var cellInput = table.ModelInput(model, context.Header.Alpha);
        if (CellStatisticsAnova.Check(cellInput) is { } problem)
        {
            if (problem.Kind == DesignProblemKind.EmptyCell && problem.Cell is { } cell)
            {
                diagnostics.EmptyCell(block.FactorsLocation, string.Join(", ", cell.Select((l, k) => $"{factors[k].Name} = '{l}'")));
            }
            else
            {
                diagnostics.DesignProblem(block.FactorsLocation, problem.Message);
            }

            return Stopped(transformed, centre);
        }

        var cellFit = CellStatisticsAnova.Fit(cellInput);
        var result = CellStatisticsAnova.OnRows(cellFit, response, cellOf);
        var fit = AnovaFit.Of(cellFit);
        var specs = data.Factors.Select(f => f.Spec).ToList();
        var inputs = context.Inputs(block);
        var (terms, residual, total) = RecordTable(context, block, result.Terms, result.ResidualSumOfSquares, result.ResidualDf, result.ResidualMeanSquare, result.TotalSumOfSquares, result.TotalDf, inputs);

        var boxCox = new Dictionary<string, ResultValue>(StringComparer.Ordinal);
        if (transformed?.BoxCox is { } bc)
        {
            boxCox[Stat.Lambda] = context.Results.Add(block.Id, TestName.BoxCox, null, null, null, Stat.Lambda, bc.Lambda, inputs);
            boxCox[Stat.LambdaLow] = context.Results.Add(block.Id, TestName.BoxCox, null, null, null, Stat.LambdaLow, bc.LambdaLow, inputs);
            boxCox[Stat.LambdaHigh] = context.Results.Add(block.Id, TestName.BoxCox, null, null, null, Stat.LambdaHigh, bc.LambdaHigh, inputs);
        }

        var means = Means(context, block, cellInput, centre, transformed, inputs);
        // The whole review only when a block reads it; the block's own rule (welch: auto, one factor) reads only its rules' checks.
        var review = AssumptionReview.Needed(block, context.Blocks) ? AssumptionReview.Run(result, data, input, null) : null;
        var decisions = new List<RuleDecision>();
        var (welch, ranks, readWelch) = data.Factors.Count == 1
            ? OneFactorChecks(context, block, data, input, () => review?.Rules ?? AssumptionReview.RunRules(result, data, input), options, decisions, inputs)
            : (null, null, false);

        var cautions = Cautions(context, block, data, options);
        var figures = new List<FigurePlan>();
        if (context.Header.Report.Figures)
        {
            var shape = data.Factors.Count == 1 ? Figures.Means(data, context.Header.Alpha) : Figures.Interaction(input, data);
            if (shape is not null)
            {
                figures.Add(shape);
            }

            figures.AddRange(Figures.FDistributions(fit, specs).Take(data.Factors.Count == 1 ? 1 : 3));
        }

        return new AnovaOutcome(block)
        {
            Model = model,
            Data = data,
            Factors = specs.AsReadOnly(),
            ResponseName = data.ResponseName,
            ResponseLabel = data.ResponseLabel,
            Transformed = transformed,
            ResponseCentre = centre,
            Input = input,
            Result = result,
            Fit = fit,
            Cells = table,
            Terms = terms,
            Residual = residual,
            Total = total,
            BoxCox = boxCox.AsReadOnly(),
            Means = means.AsReadOnly(),
            Review = review!, // null when no block reads it: reading it then throws
            Decisions = decisions.AsReadOnly(),
            Welch = welch,
            Ranks = ranks,
            ReadWelch = readWelch,
            Cautions = cautions,
            Figures = figures.AsReadOnly(),
        };
    }

    /// <summary>
    /// Records an ANOVA table in the manifest: per term SS, df, MS, F, p, critical F, effect sizes
    /// and the (1 − alpha) interval of partial eta²; residual SS, df, MS; total SS, df. Shared by
    /// fits on loaded rows and on database cell summaries, so both write the same vocabulary.
    /// </summary>
    internal static (IReadOnlyList<(AnovaTerm Term, IReadOnlyDictionary<string, ResultValue> Values)> Terms, IReadOnlyDictionary<string, ResultValue> Residual, IReadOnlyDictionary<string, ResultValue> Total) RecordTable(
        EvaluationContext context,
        BoundBlock block,
        IReadOnlyList<AnovaTerm> terms,
        double ssResidual,
        int dfResidual,
        Quantity msResidual,
        double ssTotal,
        int dfTotal,
        IReadOnlyList<string> inputs)
    {
        var termValues = new List<(AnovaTerm Term, IReadOnlyDictionary<string, ResultValue> Values)>(terms.Count);
        var residual = new Dictionary<string, ResultValue>(StringComparer.Ordinal);
        var total = new Dictionary<string, ResultValue>(StringComparer.Ordinal);
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
            termValues.Add((t, values.AsReadOnly()));
        }

        residual[Stat.Ss] = context.Results.Add(block.Id, TestName.Anova, "residual", null, null, Stat.Ss, ssResidual, inputs);
        residual[Stat.Df] = context.Results.Add(block.Id, TestName.Anova, "residual", null, null, Stat.Df, dfResidual, inputs);
        residual[Stat.Ms] = context.Results.Add(block.Id, TestName.Anova, "residual", null, null, Stat.Ms, msResidual, inputs);
        total[Stat.Ss] = context.Results.Add(block.Id, TestName.Anova, "total", null, null, Stat.Ss, ssTotal, inputs);
        total[Stat.Df] = context.Results.Add(block.Id, TestName.Anova, "total", null, null, Stat.Df, dfTotal, inputs);
        return (termValues.AsReadOnly(), residual.AsReadOnly(), total.AsReadOnly());
    }

    /// <summary>
    /// Each selected row's cell (its position in <paramref name="cells"/>). One factor with every
    /// level present: the cells are the levels in code order, so the factor's codes are the cells.
    /// </summary>
    private static int[] CellOf(BlockData data, IReadOnlyList<(string Label, int[] Codes, double[] Values, int[] Positions)> cells)
    {
        if (data.Factors.Count == 1 && cells.Count == data.Factors[0].Levels.Count)
        {
            return data.Factors[0].Codes;
        }

        var cellOf = new int[data.Rows.Length];
        for (var c = 0; c < cells.Count; c++)
        {
            foreach (var i in cells[c].Positions)
            {
                cellOf[i] = c;
            }
        }

        return cellOf;
    }

    /// <summary>The values at <paramref name="positions"/>.</summary>
    private static double[] Gather(double[] values, int[] positions)
    {
        var g = new double[positions.Length];
        for (var j = 0; j < g.Length; j++)
        {
            g[j] = values[positions[j]];
        }

        return g;
    }

    private static string DataDisplay(EvaluationContext context, BlockData data) =>
        context.DataDisplayPaths.TryGetValue(data.Dataset.Spec.Name, out var p) ? p : data.Dataset.Path;

    private static string NeedText(TransformKind kind) => kind switch
    {
        TransformKind.Sqrt => "non-negative",
        TransformKind.Reciprocal => "non-zero",
        _ => "positive",
    };

    /// <summary>The level means (and with several factors the least-squares means), from the cells the model was fitted from.</summary>
    private static List<(string Factor, string Level, IReadOnlyDictionary<string, ResultValue> Values)> Means(EvaluationContext context, BoundBlock block, CellAnovaInput input, double centre, TransformedResponse? transformed, IReadOnlyList<string> inputs)
    {
        var rows = new List<(string Factor, string Level, IReadOnlyDictionary<string, ResultValue> Values)>();
        foreach (var fm in CellStatisticsAnova.LevelMeans(input))
        {
            foreach (var lm in fm.Levels)
            {
                var values = new Dictionary<string, ResultValue>(StringComparer.Ordinal)
                {
                    [Stat.N] = context.Results.Add(block.Id, TestName.Means, fm.Factor, lm.Level, null, Stat.N, lm.Count, inputs),
                    [Stat.Mean] = context.Results.Add(block.Id, TestName.Means, fm.Factor, lm.Level, null, Stat.Mean, Back(lm.RawMean, centre, transformed), inputs),
                };
                if (input.Factors.Count > 1)
                {
                    values[Stat.LsMean] = context.Results.Add(block.Id, TestName.Means, fm.Factor, lm.Level, null, Stat.LsMean, Back(lm.LeastSquaresMean, centre, transformed), inputs);
                }

                rows.Add((fm.Factor, lm.Level, values.AsReadOnly()));
            }
        }

        return rows;
    }

    /// <summary>A mean on the model scale (centred), back on the response's own scale.</summary>
    private static Quantity Back(Quantity centredMean, double centre, TransformedResponse? transformed)
    {
        if (!centredMean.IsDefined)
        {
            return centredMean;
        }

        var m = centredMean.Value + centre;
        return transformed is { } t ? ResponseTransform.BackTransformMean(m, t) : Quantity.Of(m);
    }

    /// <summary>Welch's F and the rank test of one factor, by the block's <c>welch</c> choice and the review; the rules' decisions go to <paramref name="decisions"/>.</summary>
    private static (IReadOnlyDictionary<string, ResultValue>? Welch, IReadOnlyDictionary<string, ResultValue>? Ranks, bool ReadWelch) OneFactorChecks(
        EvaluationContext context, BoundBlock block, BlockData data, AnovaInput input, Func<AssumptionRules> rules, AnovaKind.Options options, List<RuleDecision> decisions, IReadOnlyList<string> inputs)
    {
        var factor = data.Factors[0];
        var groups = factor.Split(input.Response);
        var showWelch = options.Welch == "yes";
        var readWelch = false;
        IReadOnlyDictionary<string, ResultValue>? ranks = null;
        if (options.Welch == "yes")
        {
            decisions.Add(new RuleDecision(DecisionRule.WelchRequested));
        }
        else if (options.Welch == "auto")
        {
            var review = rules();
            var bf = review.BrownForsythe;
            if (review.UnequalVariances)
            {
                showWelch = true;
                readWelch = true;
                decisions.Add(new RuleDecision(DecisionRule.WelchFired) { P = bf.P });
            }
            else
            {
                decisions.Add(new RuleDecision(bf.P.IsDefined ? DecisionRule.WelchNotFired : DecisionRule.WelchUnchecked) { P = bf.P });
            }

            if (review.WantsRankTest)
            {
                var kw = KruskalWallis.Test(groups);
                ranks = new Dictionary<string, ResultValue>(StringComparer.Ordinal)
                {
                    [Stat.H] = context.Results.Add(block.Id, TestName.KruskalWallis, factor.Spec.Name, null, null, Stat.H, kw.H, inputs),
                    [Stat.Df] = context.Results.Add(block.Id, TestName.KruskalWallis, factor.Spec.Name, null, null, Stat.Df, kw.Df, inputs),
                    [Stat.P] = context.Results.Add(block.Id, TestName.KruskalWallis, factor.Spec.Name, null, null, Stat.P, kw.P, inputs),
                }.AsReadOnly();
                decisions.Add(new RuleDecision(DecisionRule.RankTestAdded) { P = review.Normality.P, SmallestGroup = review.SmallestGroup });
            }
        }

        if (!showWelch)
        {
            return (null, ranks, readWelch);
        }

        var w = WelchAnova.Test(groups);
        var values = new Dictionary<string, ResultValue>(StringComparer.Ordinal);
        void AddW(string stat, Quantity q) => values[stat] = context.Results.Add(block.Id, TestName.Welch, factor.Spec.Name, null, null, stat, q, inputs);
        AddW(Stat.F, w.F);
        AddW(Stat.Df1, Quantity.Of(w.Df1));
        AddW(Stat.Df2, w.Df2);
        AddW(Stat.P, w.P);
        return (values.AsReadOnly(), ranks, readWelch);
    }

    private static AnovaCautions Cautions(EvaluationContext context, BoundBlock block, BlockData data, AnovaKind.Options options)
    {
        var cells = data.Cells();
        return new AnovaCautions(
            [.. cells.Where(c => c.Values.Length == 1).Select(c => c.Label)],
            [.. cells.Where(c => c.Values.Length is > 1 and < 5).Select(c => c.Label)],
            cells.Select(c => c.Values.Length).Distinct().Count() > 1 && data.Factors.Count > 1,
            options.Interaction,
            data.DroppedMissing,
            SummaryEvaluator.EmptyGroups(context, block, data));
    }
}
