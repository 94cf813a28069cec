using System.Globalization;
using StudyPress.Binding;
using StudyPress.Binding.Kinds;
using StudyPress.Diagnostics;
using StudyPress.Model;
using StudyPress.Statistics;
using StudyPress.Statistics.Anova;
using StudyPress.Statistics.Designs;

namespace StudyPress.Evaluation.Kinds;

/// <summary>How a design's model was fitted.</summary>
public enum DesignMethod
{
    /// <summary>Classical ANOVA by error strata (balanced data).</summary>
    Strata,

    /// <summary>Linear mixed model by REML with Satterthwaite denominator df.</summary>
    Reml,
}

/// <summary>Why the method was chosen.</summary>
public enum DesignMethodReason
{
    /// <summary><c>fit: auto</c> and the data are balanced: the classical strata.</summary>
    Balanced,

    /// <summary><c>fit: auto</c> and the data are not balanced (missing plots, unequal replication): REML.</summary>
    Unbalanced,

    /// <summary><c>fit: auto</c> and the layout has no classical strata (a random factor besides the blocks of a split plot): REML.</summary>
    NoStrata,

    /// <summary>The block asked for the method (<c>fit: classical</c> or <c>fit: reml</c>).</summary>
    Requested,
}

/// <summary>One row of a design's ANOVA table with its manifest values.</summary>
/// <param name="Term">The row's name in the manifest (plot errors with hyphens: <c>whole-plot-error</c>).</param>
/// <param name="Row">The strata row (classical route), or null on the REML route.</param>
/// <param name="Test">The REML test of a fixed term, or null.</param>
public sealed record DesignRow(string Term, StrataRow? Row, RemlFixedTest? Test, IReadOnlyDictionary<string, ResultValue> Values)
{
    /// <summary>The factors of a treatment term's row on either route (the strata row's, or the mixed model's fixed term's); null for error, random and total rows.</summary>
    public IReadOnlyList<string>? TreatmentFactors { get; init; }
}

/// <summary>One variance component with its manifest values (either route).</summary>
/// <param name="Term">The manifest term (plot errors hyphenated).</param>
/// <param name="EngineTerm">The design engine's name of the term, which the renderer labels.</param>
public sealed record DesignComponent(string Term, string EngineTerm, TermKind Kind, double Variance, bool Negative, bool AtBoundary, string? SingleObservationNote, IReadOnlyDictionary<string, ResultValue> Values);

/// <summary>An intraclass correlation form with its manifest values.</summary>
public sealed record DesignIcc(string Form, int Model, bool OfMean, string Layout, IReadOnlyDictionary<string, ResultValue> Values);

/// <summary>The relative efficiency of one blocking factor with its manifest values.</summary>
public sealed record DesignEfficiency(BlockingEfficiency Efficiency, IReadOnlyDictionary<string, ResultValue> Values);

/// <summary>A treatment level's mean and count (raw data), for the table of means and the comparisons.</summary>
public sealed record DesignMean(string Factor, string Level, int Count, double Mean, IReadOnlyDictionary<string, ResultValue> Values);

/// <summary>
/// The fit of an anova block whose header declares a layout: the classical strata (with expected
/// mean squares and derived denominators, variance components by the ANOVA method, relative
/// efficiency of blocking, intraclass correlations) or the mixed model by REML (Satterthwaite df,
/// REML variance components, convergence), and the values recorded for each.
/// </summary>
public sealed class DesignFit
{
    public required DesignMethod Method { get; init; }

    public required DesignMethodReason Reason { get; init; }

    /// <summary>What made the data unsuitable for the classical strata (REML route chosen automatically), in words.</summary>
    public string? UnbalancedBecause { get; init; }

    public required IReadOnlyList<DesignFactor> Factors { get; init; }

    public StrataAnovaResult? Strata { get; init; }

    public VarianceComponentsResult? Components { get; init; }

    public RemlResult? Reml { get; init; }

    public required IReadOnlyList<DesignRow> Rows { get; init; }

    public required IReadOnlyList<DesignComponent> ComponentValues { get; init; }

    public IReadOnlyList<DesignIcc> Icc { get; init; } = [];

    /// <summary>The ICC layout: "one-way" (one random factor) or "raters" (targets × raters, one rating each); null when none applies.</summary>
    public string? IccLayout { get; init; }

    public IReadOnlyList<DesignEfficiency> Efficiency { get; init; } = [];

    public IReadOnlyList<DesignMean> Means { get; init; } = [];

    /// <summary>Residuals of the finest stratum (classical) or conditional residuals (REML), per selected row.</summary>
    public required double[] Residuals { get; init; }

    /// <summary>Number of observations analysed.</summary>
    public int Observations { get; init; }

    /// <summary>The manifest name of a strata row.</summary>
    public static string TermName(string engineName) => engineName.Replace(' ', '-');
}

public sealed partial class AnovaEvaluator
{
    /// <summary>Evaluates an anova block of a study with a declared layout (blocks, plots, random or nested factors).</summary>
    private static AnovaOutcome EvaluateDesign(EvaluationContext context, BoundBlock block, AnovaKind.Options options, ModelDescription model, DiagnosticBag diagnostics)
    {
        // What the block hands on when it stops at a mistake: nothing fitted (and, once selected, its rows).
        var stopped = new AnovaOutcome(block) { Model = model };
        if (StudyModels.ReadsAggregate(block, context.Datasets))
        {
            diagnostics.DesignNeedsRows(block.Location, block.Data!);
            return stopped;
        }

        if (model.Transform != TransformKind.None)
        {
            diagnostics.DesignOptionUnavailable(block.Location, "transform", "transform the response in the data (a new column) and name that column as the response");
            return stopped;
        }

        if (!model.Interaction)
        {
            diagnostics.DesignOptionUnavailable(block.Location, "interaction: false", "the strata keep every interaction of the treatments");
            return stopped;
        }

        var data = context.Select(block, diagnostics);
        if (data is null)
        {
            return stopped;
        }

        IReadOnlyList<FactorSpec> specs = data.Factors.Select(f => f.Spec).ToList().AsReadOnly();
        stopped = new AnovaOutcome(block) { Model = model, Data = data, Factors = specs, ResponseName = data.ResponseName, ResponseLabel = data.ResponseLabel };
        var factors = model.DesignFactors;
        var labels = data.Factors.Select(f => (IReadOnlyList<string>)[.. f.Codes.Select(c => f.Levels[c])]).ToList();
        var designData = new DesignData(data.Response, labels);

        if (!CheckLayoutAgainstData(context, block, model, data, designData, diagnostics))
        {
            return stopped;
        }

        var method = DesignMethod.Strata;
        var reason = options.Fit == "reml" ? DesignMethodReason.Requested : DesignMethodReason.Balanced;
        string? because = null;
        if (options.Fit == "reml")
        {
            method = DesignMethod.Reml;
        }
        else if (StrataAnova.Check(factors, designData) is { } issue)
        {
            var remlIssue = MixedModel.Check(factors, designData);
            var strataOnly = issue.Kind is DesignIssueKind.Unbalanced or DesignIssueKind.MissingCombination
                || (issue.Kind == DesignIssueKind.Declaration && remlIssue is null);
            if (!strataOnly || remlIssue is not null)
            {
                ReportDesignIssue(block, model, remlIssue ?? issue, diagnostics);
                return stopped;
            }

            if (options.Fit == "classical")
            {
                diagnostics.ClassicalNeedsBalance(options.FitLocation ?? block.Location, issue.Message);
                return stopped;
            }

            method = DesignMethod.Reml;
            reason = issue.Kind == DesignIssueKind.Declaration ? DesignMethodReason.NoStrata : DesignMethodReason.Unbalanced;
            because = issue.Message;
        }
        else if (options.Fit == "classical")
        {
            reason = DesignMethodReason.Requested;
        }

        if (method == DesignMethod.Reml && MixedModel.Check(factors, designData) is { } mixedIssue)
        {
            ReportDesignIssue(block, model, mixedIssue, diagnostics);
            return stopped;
        }

        var inputs = context.Inputs(block);
        var alpha = context.Header.Alpha;
        var means = DesignMeans(context, block, model, data, inputs);
        var design = method == DesignMethod.Strata
            ? FitStrata(context, block, factors, designData, reason, means, inputs, alpha)
            : FitReml(context, block, factors, designData, reason, because, means, inputs);
        return new AnovaOutcome(block)
        {
            Model = model,
            Data = data,
            Factors = specs,
            ResponseName = data.ResponseName,
            ResponseLabel = data.ResponseLabel,
            Design = design,
            Cautions = new AnovaCautions([], [], false, true, data.DroppedMissing, SummaryEvaluator.EmptyGroups(context, block, data)),
            Figures = context.Header.Report.Figures ? [.. DesignFigures.Of(data, design, context.Header.Alpha)] : [],
        };
    }

    /// <summary>
    /// What the data say against the declaration, each at the header line to edit: a nested code
    /// under two parents (codes unique across the study), a whole-plot treatment that varies
    /// within a whole plot, a block or random factor with a single level.
    /// </summary>
    private static bool CheckLayoutAgainstData(EvaluationContext context, BoundBlock block, ModelDescription model, BlockData data, DesignData designData, DiagnosticBag diagnostics)
    {
        var ok = true;
        for (var f = 0; f < model.Factors.Count; f++)
        {
            var spec = model.Factors[f].Spec;
            if (spec.Layout.Role != FactorRole.Treatment && spec.Layout.Within.Count == 0 && data.Factors[f].Levels.Count < 2)
            {
                diagnostics.LayoutFactorSingleLevel(spec.Layout.RoleLocation ?? spec.Location, spec.Name, spec.Layout.Role == FactorRole.Block ? "block" : "random factor", data.Factors[f].Levels.Count == 1 ? data.Factors[f].Levels[0] : string.Empty);
                ok = false;
            }
        }

        // Nested codes: unique across the study unless the entry says 'codes: restart'.
        var unique = model.Factors.Select(m => m.Spec.Layout.Within.Count > 0 && !m.Spec.Layout.CodesRestart ? m.Spec.Layout.ToDesignFactor(m.Name) : m.Spec.Layout.ToDesignFactor(m.Name) with { NestedIn = [] }).ToList();
        if (unique.Any(u => u.NestedIn.Count > 0)
            && model.Factors.All(m => m.Spec.Layout.Within.All(w => model.Factors.Any(o => o.Name == w.Value)))
            && StrataAnova.FindContradictoryNesting(unique, designData) is { } contradiction)
        {
            var child = model.Factors.First(m => m.Name == contradiction.Factors[0]).Spec;
            diagnostics.ContradictoryNesting(child.Layout.WithinLocation ?? child.Location, contradiction.Message, child.Name);
            ok = false;
        }

        if (block.WholePlots is { } plots && context.Datasets[block.Data!].Factors.TryGetValue(plots.Name, out var plotColumn))
        {
            var whole = model.Factors.Select((m, i) => (m, i)).Where(x => x.m.Plot == PlotLevel.WholePlot || x.m.Role == FactorRole.Block).ToList();
            var first = new Dictionary<int, int>();
            for (var i = 0; i < data.Rows.Length && ok; i++)
            {
                var code = plotColumn.Codes[data.Rows[i]];
                if (code < 0)
                {
                    continue;
                }

                if (!first.TryGetValue(code, out var i0))
                {
                    first.Add(code, i);
                    continue;
                }

                foreach (var (m, fi) in whole)
                {
                    if (data.Factors[fi].Codes[i] != data.Factors[fi].Codes[i0])
                    {
                        var lines = data.Dataset.Lines;
                        diagnostics.VariesWithinWholePlot(
                            m.Spec.Layout.PlotLocation ?? m.Spec.Layout.RoleLocation ?? m.Spec.Location,
                            m.Name,
                            plotColumn.Levels[code],
                            data.Factors[fi].Levels[data.Factors[fi].Codes[i0]],
                            lines[data.Rows[i0]],
                            data.Factors[fi].Levels[data.Factors[fi].Codes[i]],
                            lines[data.Rows[i]],
                            m.Role == FactorRole.Block);
                        ok = false;
                        break;
                    }
                }
            }
        }

        return ok;
    }

    private static void ReportDesignIssue(BoundBlock block, ModelDescription model, DesignIssue issue, DiagnosticBag diagnostics)
    {
        var spec = issue.Factors.Count > 0 ? model.Factors.FirstOrDefault(m => m.Name == issue.Factors[0])?.Spec : null;
        switch (issue.Kind)
        {
            case DesignIssueKind.TooLarge:
                diagnostics.MixedModelTooLarge(block.Location, issue.Message);
                break;
            case DesignIssueKind.SingleLevel when spec is not null:
                diagnostics.DesignDataProblem(spec.Layout.RoleLocation ?? spec.Location, issue.Message);
                break;
            case DesignIssueKind.ContradictoryNesting when spec is not null:
                diagnostics.ContradictoryNesting(spec.Layout.WithinLocation ?? spec.Location, issue.Message, spec.Name);
                break;
            default:
                diagnostics.DesignDataProblem(block.FactorsLocation, issue.Message);
                break;
        }
    }

    private static DesignFit FitStrata(EvaluationContext context, BoundBlock block, IReadOnlyList<DesignFactor> factors, DesignData data, DesignMethodReason reason, List<DesignMean> means, IReadOnlyList<string> inputs, double alpha)
    {
        var strata = StrataAnova.Fit(factors, data);
        var rows = new List<DesignRow>();
        foreach (var r in strata.Rows)
        {
            var term = DesignFit.TermName(r.Term);
            var values = new Dictionary<string, ResultValue>(StringComparer.Ordinal);
            void Add(string stat, Quantity q) => values[stat] = context.Results.Add(block.Id, TestName.Anova, term, null, null, stat, q, inputs);
            Add(Stat.Ss, Quantity.Of(r.SumOfSquares));
            Add(Stat.Df, Quantity.Of(r.Df));
            Add(Stat.Ms, r.MeanSquare);
            if (r.Denominator.Count > 0 || r.Kind == TermKind.Treatment)
            {
                Add(Stat.F, r.F);
                Add(Stat.DfDen, r.DfDenominator);
                Add(Stat.P, r.P);
            }

            if (r.Kind == TermKind.Treatment)
            {
                // Partial eta squared against the term's own error: SS / (SS + SS of the error),
                // with the noncentral-F interval on (df, error df); not defined for a quasi-F.
                if (r.Denominator is [{ Coefficient: 1.0 } error] && !r.IsQuasiF)
                {
                    var errorSs = error.MeanSquare * error.Df;
                    Add(Stat.PartialEta2, r.SumOfSquares + errorSs > 0 ? Quantity.Of(r.SumOfSquares / (r.SumOfSquares + errorSs)) : Quantity.Undefined("the term and its error have no variation"));
                    var ci = EffectSizeIntervals.PartialEtaSquared(r.F, r.Df, error.Df, 1 - alpha);
                    Add(Stat.PartialEta2CiLow, ci.PartialEtaSquaredLow);
                    Add(Stat.PartialEta2CiHigh, ci.PartialEtaSquaredHigh);
                }
                else
                {
                    var why = Quantity.Undefined("the term has no single error mean square (approximate F)");
                    Add(Stat.PartialEta2, why);
                    Add(Stat.PartialEta2CiLow, why);
                    Add(Stat.PartialEta2CiHigh, why);
                }
            }

            rows.Add(new DesignRow(term, r, null, values) { TreatmentFactors = r.Kind == TermKind.Treatment ? r.Factors : null });
        }

        var total = new Dictionary<string, ResultValue>(StringComparer.Ordinal)
        {
            [Stat.Ss] = context.Results.Add(block.Id, TestName.Anova, "total", null, null, Stat.Ss, strata.TotalSumOfSquares, inputs),
            [Stat.Df] = context.Results.Add(block.Id, TestName.Anova, "total", null, null, Stat.Df, strata.TotalDf, inputs),
        };
        rows.Add(new DesignRow("total", null, null, total));

        var vc = VarianceComponents.Estimate(strata, 1 - alpha);
        var components = new List<DesignComponent>();
        // Without a residual row the finest term is the residual (one observation per sub-plot, per
        // target and rater): that its variance includes the measurement error goes without saying.
        var hasResidual = strata.Rows.Any(r => r.Kind == TermKind.Residual);
        foreach (var c in vc.Components)
        {
            var term = DesignFit.TermName(c.Term);
            var values = ComponentValues(context, block, inputs, term, c.Variance, c.Sd, c.Proportion, c.CiLow, c.CiHigh);
            components.Add(new DesignComponent(term, c.Term, c.Kind, c.Variance, c.IsNegative, false, c.IsNegative || !hasResidual ? null : c.Note, values));
        }

        var efficiency = new List<DesignEfficiency>();
        var split = factors.Any(f => f.Plot != PlotLevel.Unit);
        foreach (var b in factors.Where(f => f.Role == FactorRole.Block))
        {
            var row = strata.Row(b.Name);
            if (split || !row.F.IsDefined || row.Denominator is not [{ Term: StrataAnova.ResidualName }])
            {
                continue;
            }

            var e = RelativeEfficiency.OfBlocking(strata, b.Name);
            var values = new Dictionary<string, ResultValue>(StringComparer.Ordinal);
            void Add(string stat, Quantity q) => values[stat] = context.Results.Add(block.Id, TestName.BlockingEfficiency, b.Name, null, null, stat, q, inputs);
            Add(Stat.RelativeEfficiency, e.Efficiency);
            Add(Stat.RelativeEfficiencyCorrected, e.EfficiencyDfCorrected);
            Add(Stat.EquivalentReplicates, e.EquivalentReplicates);
            efficiency.Add(new DesignEfficiency(e, values));
        }

        var (icc, layout) = Icc(context, block, factors, data, strata, inputs, alpha);
        return new DesignFit
        {
            Method = DesignMethod.Strata,
            Reason = reason,
            Factors = factors,
            Strata = strata,
            Components = vc,
            Rows = rows,
            ComponentValues = components,
            Efficiency = efficiency,
            Icc = icc,
            IccLayout = layout,
            Residuals = strata.Residuals,
            Observations = data.Response.Length,
            Means = means,
        };
    }

    /// <summary>
    /// Intraclass correlations where the layout fits: one random factor alone (ICC(1,1) and
    /// ICC(1,k) from the one-way table, k the observations per level), or two crossed random factors
    /// with one observation per cell (targets × raters, in the block's factor order: the six
    /// Shrout–Fleiss forms).
    /// </summary>
    private static (List<DesignIcc> Forms, string? Layout) Icc(EvaluationContext context, BoundBlock block, IReadOnlyList<DesignFactor> factors, DesignData data, StrataAnovaResult strata, IReadOnlyList<string> inputs, double alpha)
    {
        var forms = new List<DesignIcc>();
        IccResult? result = null;
        string? layout = null;
        string[] wanted = [];
        if (factors is [{ Role: FactorRole.Random, NestedIn.Count: 0 } one])
        {
            var between = strata.Row(one.Name);
            var within = strata.Row(StrataAnova.ResidualName);
            var k = (double)strata.Observations / (between.Df + 1);
            if (k == Math.Floor(k) && between.MeanSquare.IsDefined && within.MeanSquare.IsDefined)
            {
                result = IntraclassCorrelation.FromMeanSquares(between.Df + 1, (int)k, between.MeanSquare.Value, within.MeanSquare.Value, within.MeanSquare.Value, within.MeanSquare.Value, 1 - alpha);
                layout = "one-way";
                wanted = ["ICC(1,1)", "ICC(1," + ((int)k).ToString(CultureInfo.InvariantCulture) + ")"];
            }
        }
        else if (factors is [{ Role: FactorRole.Random, NestedIn.Count: 0 }, { Role: FactorRole.Random, NestedIn.Count: 0 }]
            && strata.Rows.FirstOrDefault(r => r.Term == StrataAnova.ResidualName) is null or { Df: 0 })
        {
            // One rating per target and rater: the interaction is the residual.
            var n = data.Labels[0].Distinct(StringComparer.Ordinal).Count();
            var k = data.Labels[1].Distinct(StringComparer.Ordinal).Count();
            if (n * k == data.Response.Length)
            {
                var ratings = new double[n][];
                var ti = data.Labels[0].Distinct(StringComparer.Ordinal).Select((l, i) => (l, i)).ToDictionary(x => x.l, x => x.i, StringComparer.Ordinal);
                var ri = data.Labels[1].Distinct(StringComparer.Ordinal).Select((l, i) => (l, i)).ToDictionary(x => x.l, x => x.i, StringComparer.Ordinal);
                for (var t = 0; t < n; t++)
                {
                    ratings[t] = new double[k];
                }

                for (var i = 0; i < data.Response.Length; i++)
                {
                    ratings[ti[data.Labels[0][i]]][ri[data.Labels[1][i]]] = data.Response[i];
                }

                result = IntraclassCorrelation.FromRatings(ratings, 1 - alpha);
                layout = "raters";
                wanted = [.. result.Forms.Select(f => f.Name)];
            }
        }

        if (result is null)
        {
            return (forms, null);
        }

        foreach (var name in wanted)
        {
            var f = result.Form(name);
            var values = new Dictionary<string, ResultValue>(StringComparer.Ordinal);
            void Add(string stat, Quantity q) => values[stat] = context.Results.Add(block.Id, TestName.Icc, null, f.Name, null, stat, q, inputs);
            Add(Stat.Icc, f.Icc);
            Add(Stat.CiLow, f.CiLow);
            Add(Stat.CiHigh, f.CiHigh);
            forms.Add(new DesignIcc(f.Name, f.Model, f.OfMean, layout!, values));
        }

        return (forms, layout);
    }

    private static DesignFit FitReml(EvaluationContext context, BoundBlock block, IReadOnlyList<DesignFactor> factors, DesignData data, DesignMethodReason reason, string? because, List<DesignMean> means, IReadOnlyList<string> inputs)
    {
        var reml = MixedModel.FitReml(factors, data);
        var rows = new List<DesignRow>();
        foreach (var t in reml.Tests)
        {
            var term = DesignFit.TermName(t.Term);
            var values = new Dictionary<string, ResultValue>(StringComparer.Ordinal);
            void Add(string stat, Quantity q) => values[stat] = context.Results.Add(block.Id, TestName.Anova, term, null, null, stat, q, inputs);
            Add(Stat.Df, Quantity.Of(t.NumeratorDf));
            Add(Stat.F, t.F);
            Add(Stat.DfDen, t.DfDenominator);
            Add(Stat.P, t.P);
            rows.Add(new DesignRow(term, null, t, values) { TreatmentFactors = reml.FixedEffects?.Terms.First(f => f.Name == t.Term).Factors });
        }

        var total = reml.Components.Where(c => c.Variance > 0).Sum(c => c.Variance);
        var components = new List<DesignComponent>();
        foreach (var c in reml.Components)
        {
            var term = DesignFit.TermName(c.Term);
            var share = total > 0 ? Quantity.Of(c.Variance / total) : Quantity.Undefined("every variance component is zero");
            var values = ComponentValues(context, block, inputs, term, c.Variance, c.Sd, share, c.CiLow, c.CiHigh);
            components.Add(new DesignComponent(term, c.Term, c.Kind, c.Variance, false, c.AtBoundary, null, values));
        }

        return new DesignFit
        {
            Method = DesignMethod.Reml,
            Reason = reason,
            UnbalancedBecause = because,
            Factors = factors,
            Reml = reml,
            Rows = rows,
            ComponentValues = components,
            Residuals = reml.ConditionalResiduals,
            Observations = data.Response.Length,
            Means = means,
        };
    }

    /// <summary>One variance component in the manifest (test <c>variance_components</c>), on either route.</summary>
    private static Dictionary<string, ResultValue> ComponentValues(EvaluationContext context, BoundBlock block, IReadOnlyList<string> inputs, string term, double variance, Quantity sd, Quantity share, Quantity low, Quantity high)
    {
        var values = new Dictionary<string, ResultValue>(StringComparer.Ordinal);
        foreach (var (stat, q) in new[] { (Stat.Variance, Quantity.Of(variance)), (Stat.Sd, sd), (Stat.Proportion, share), (Stat.CiLow, low), (Stat.CiHigh, high) })
        {
            values[stat] = context.Results.Add(block.Id, TestName.VarianceComponents, term, null, null, stat, q, inputs);
        }

        return values;
    }

    /// <summary>Raw level means of each treatment factor (test <c>means</c>: n, mean).</summary>
    private static List<DesignMean> DesignMeans(EvaluationContext context, BoundBlock block, ModelDescription model, BlockData data, IReadOnlyList<string> inputs)
    {
        var means = new List<DesignMean>();
        for (var f = 0; f < model.Factors.Count; f++)
        {
            if (model.Factors[f].Role != FactorRole.Treatment)
            {
                continue;
            }

            var bf = data.Factors[f];
            var sums = new double[bf.Levels.Count];
            var counts = new int[bf.Levels.Count];
            for (var i = 0; i < bf.Codes.Length; i++)
            {
                sums[bf.Codes[i]] += data.Values[i];
                counts[bf.Codes[i]]++;
            }

            for (var l = 0; l < bf.Levels.Count; l++)
            {
                if (counts[l] == 0)
                {
                    continue;
                }

                var mean = ExactMeanOr(data, bf, l, sums[l] / counts[l]);
                var values = new Dictionary<string, ResultValue>(StringComparer.Ordinal)
                {
                    [Stat.N] = context.Results.Add(block.Id, TestName.Means, bf.Spec.Name, bf.Levels[l], null, Stat.N, counts[l], inputs),
                    [Stat.Mean] = context.Results.Add(block.Id, TestName.Means, bf.Spec.Name, bf.Levels[l], null, Stat.Mean, mean, inputs),
                };
                means.Add(new DesignMean(bf.Spec.Name, bf.Levels[l], counts[l], mean, values));
            }
        }

        return means;
    }

    private static double ExactMeanOr(BlockData data, BlockFactor factor, int level, double fallback)
    {
        if (data.Exact is null)
        {
            return fallback;
        }

        var positions = new List<int>();
        for (var i = 0; i < factor.Codes.Length; i++)
        {
            if (factor.Codes[i] == level)
            {
                positions.Add(i);
            }
        }

        return data.ExactMean(positions) ?? fallback;
    }
}
