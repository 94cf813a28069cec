using System.Globalization;
using System.Runtime.CompilerServices;
using StudyPress.Binding;
using StudyPress.Binding.Kinds;
using StudyPress.Charts;
using StudyPress.Diagnostics;
using StudyPress.Statistics;
using StudyPress.Statistics.Anova;
using StudyPress.Statistics.Designs;
using StudyPress.Statistics.FollowUp;

namespace StudyPress.Evaluation.Kinds;

/// <summary>The error a table of marginal means uses: its name (the engine's, or "residual"), mean square and df.</summary>
public sealed record MarginalMeansError(string Term, double MeanSquare, int Df)
{
    /// <summary>The anova block's traced values of this error's mean square and df (null when it has none).</summary>
    public ResultValue? Ms { get; init; }

    public ResultValue? DfValue { get; init; }
}

/// <summary>A significant interaction a main-effect table averages over: its term, the other factors' labels and the anova's p.</summary>
public sealed record InteractionHint(string Term, IReadOnlyList<string> Others, IReadOnlyList<string> OtherNames, ResultValue P);

/// <summary>One marginal mean with its manifest values (<c>mean</c>, <c>se</c>, <c>df</c>, <c>ci_low</c>, <c>ci_high</c>).</summary>
public sealed record MarginalMeansRow(IReadOnlyList<string> Levels, MarginalMean Mean, IReadOnlyDictionary<string, ResultValue> Values);

/// <summary>The means of one term (a factor, or the cells of a crossing) on one error.</summary>
/// <param name="Error">The single error mean square the means use (null on a mixed-model fit: each mean has its own SE and Satterthwaite df).</param>
public sealed record MarginalMeansTable(
    string Term,
    IReadOnlyList<string> Factors,
    IReadOnlyList<string> Labels,
    MarginalMeansError? Error,
    IReadOnlyList<MarginalMeansRow> Rows,
    IReadOnlyList<InteractionHint> Interactions);

/// <summary>One pairwise difference within a level of the <c>at</c> factor, with its manifest values.</summary>
public sealed record SimpleEffectPair(string LevelA, string LevelB, Quantity PAdjusted, IReadOnlyDictionary<string, ResultValue> Values);

/// <summary>The simple effect at one level of the <c>at</c> factor: its F test values and its pairs.</summary>
public sealed record MarginalSimpleEffect(string AtLevel, IReadOnlyDictionary<string, ResultValue> Test, IReadOnlyList<SimpleEffectPair> Pairs);

public sealed class MarginalMeansOutcome(BoundBlock block) : BlockOutcome(block)
{
    public IReadOnlyList<MarginalMeansTable> Tables { get; init; } = [];

    /// <summary>The simple effects of the <c>by</c> factor at each level of <c>at</c> (empty without <c>at</c>).</summary>
    public IReadOnlyList<MarginalSimpleEffect> SimpleEffects { get; init; } = [];

    /// <summary>The factor whose simple effects are tested, and the factor at whose levels (labels), when <c>at</c> is given.</summary>
    public string? ByLabel { get; init; }

    public string? AtLabel { get; init; }

    /// <summary>The <c>at</c> factor's name (the manifest level of a simple effect is "NAME level").</summary>
    public string? AtName { get; init; }

    /// <summary>The anova's transformation (none: means on the response's scale).</summary>
    public TransformKind Transform { get; init; } = TransformKind.None;

    /// <summary>What a back-transformed mean is, in words (from the engine).</summary>
    public string BackTransformation { get; init; } = string.Empty;

    /// <summary>Whether the anova is a declared design (the errors are its strata's).</summary>
    public bool Design { get; init; }

    /// <summary>The factors' display labels, by name.</summary>
    public IReadOnlyDictionary<string, string> Labels { get; init; } = new Dictionary<string, string>(StringComparer.Ordinal).AsReadOnly();

    /// <summary>A declared design fitted as a mixed model (REML): means, SEs and df from its fixed effects (Satterthwaite df).</summary>
    public bool Reml { get; init; }
}

/// <summary>Evaluates <c>marginal-means</c> blocks into values (no HTML, no report text).</summary>
public sealed partial class MarginalMeansEvaluator : KindEvaluator
{
    /// <summary>Registers this part of the kind (see DEVELOPERS.md, "Adding an analysis kind").</summary>
    [ModuleInitializer]
    internal static void Register() => KindEvaluators.Register(new MarginalMeansEvaluator());

    public override string Kind => "marginal-means";

    /// <summary>The most means one table holds (a 500 × 500 covariance is 2 MB; a simple effect's pairs stay under about 62,500).</summary>
    public const int MaxMeans = 500;

    public override BlockOutcome Evaluate(EvaluationContext context, BoundBlock block, DiagnosticBag diagnostics)
    {
        var options = block.OptionsOf<MarginalMeansKind.Options>();
        if (block.Of!.Kind is RepeatedKind)
        {
            return EvaluateRepeated(context, block, options, diagnostics);
        }

        // The outcome's values, filled in recording order; a block that stops at a mistake returns
        // what it has found so far (Build), every outcome built once.
        var labels = new Dictionary<string, string>(StringComparer.Ordinal);
        var tables = new List<MarginalMeansTable>();
        var simpleEffects = new List<MarginalSimpleEffect>();
        var figures = new List<FigurePlan>();
        string? byLabel = null, atLabel = null, atName = null;
        var transform = TransformKind.None;
        var backTransformation = string.Empty;
        var isDesign = false;
        MarginalMeansOutcome Build() => new(block)
        {
            Tables = tables.AsReadOnly(),
            SimpleEffects = simpleEffects.AsReadOnly(),
            ByLabel = byLabel,
            AtLabel = atLabel,
            AtName = atName,
            Transform = transform,
            BackTransformation = backTransformation,
            Design = isDesign,
            Labels = labels.AsReadOnly(),
            Figures = figures.AsReadOnly(),
        };

        if (PlainAnovaOf(context, block, diagnostics) is not { Data: { } data } anova)
        {
            return Build();
        }

        var of = block.Of!.Id;
        var alpha = context.Header.Alpha;
        foreach (var f in data.Factors)
        {
            labels[f.Spec.Name] = f.Spec.Display;
        }

        // Where a refusal points: the key that asked for the view, else the block.
        var at = options.At?.Location ?? (options.By.Count > 0 ? options.By[0].Location : block.Location);
        AnovaInput input;
        double centre;
        Func<IReadOnlyList<string>, MarginalMeansError?> errorOf;
        List<string> factors;
        if (anova.Design is { } design)
        {
            var treatments = data.Factors.Where(f => f.Spec.Layout.Role == FactorRole.Treatment).ToList();
            if (treatments.Count == 0)
            {
                diagnostics.MarginalMeansNoTreatment(block.Location, of);
                return Build();
            }

            if (design.Method == DesignMethod.Reml || design.Strata is null)
            {
                return EvaluateReml(context, block, options, anova, design, treatments, at, diagnostics);
            }

            isDesign = true;
            factors = [.. treatments.Select(f => f.Spec.Name)];
            input = new AnovaInput(data.Response, [.. treatments.Select(f => f.ToColumn())], true, SumOfSquaresType.Hierarchical, alpha);
            centre = data.Centre;
            errorOf = set => DesignError(design.Strata, set, options, labels, of, at, diagnostics) is { } e
                ? e with
                {
                    Ms = design.Rows.FirstOrDefault(r => r.Term == DesignFit.TermName(e.Term))?.Values.GetValueOrDefault(Stat.Ms),
                    DfValue = design.Rows.FirstOrDefault(r => r.Term == DesignFit.TermName(e.Term))?.Values.GetValueOrDefault(Stat.Df),
                }
                : null;
        }
        else if (anova.Input is { } fixedInput && anova.Fit is { ResidualMeanSquare.IsDefined: true } fit)
        {
            factors = [.. data.Factors.Select(f => f.Spec.Name)];
            input = fixedInput;
            centre = anova.ResponseCentre;
            var residual = new MarginalMeansError("residual", fit.ResidualMeanSquare.Value, fit.ResidualDf)
            {
                Ms = anova.Residual.GetValueOrDefault(Stat.Ms),
                DfValue = anova.Residual.GetValueOrDefault(Stat.Df),
            };
            errorOf = _ => residual;
            transform = anova.Model?.Transform ?? TransformKind.None;
        }
        else
        {
            // The anova block failed, or has no residual mean square (its own message says why).
            return Build();
        }

        var lambda = anova.Transformed?.BoxCox?.Lambda;
        List<IReadOnlyList<string>> terms = options.At is { } atFactor
            ? [Ordered(factors, [options.By[0].Name, atFactor.Name])]
            : options.By.Count > 0 ? [Ordered(factors, [.. options.By.Select(b => b.Name)])] : [.. factors.Select(f => (IReadOnlyList<string>)[f])];
        var inputs = context.Inputs(block);
        foreach (var term in terms)
        {
            // The means' covariance is k × k and the pairs of a simple effect grow with k²: bound k.
            var count = term.Aggregate(1L, (c, f) => c * data.Factors.First(x => x.Spec.Name == f).Levels.Count);
            if (count > MaxMeans)
            {
                diagnostics.MarginalMeansTooMany(at, string.Join(" × ", term.Select(f => labels[f])), count, MaxMeans);
                return Build();
            }

            if (errorOf(term) is not { } error)
            {
                return Build();
            }

            var result = EstimatedMarginalMeans.ComputeWithError(input, error.MeanSquare, error.Df, centre, transform, lambda, [term]);
            backTransformation = result.BackTransformation;
            var t = result.Terms[0];
            var rows = new List<MarginalMeansRow>();
            foreach (var m in t.Means)
            {
                rows.Add(new MarginalMeansRow(m.Levels, m, RecordMean(context, block, t.Term, m, inputs)));
            }

            var hints = options.At is null ? Interactions(anova, t.Factors, alpha, labels) : [];
            tables.Add(new MarginalMeansTable(t.Term, t.Factors, [.. t.Factors.Select(f => labels[f])], error, rows.AsReadOnly(), hints));
            if (context.Header.Report.Figures && t.Factors.Count == 1 && MeansFigure(rows, labels[t.Factors[0]], data.ResponseName, error, transform != TransformKind.None, alpha) is { } figure)
            {
                figures.Add(figure with { Part = t.Factors[0] });
            }

            if (options.At is { } a)
            {
                var by = options.By[0].Name;
                byLabel = labels[by];
                atLabel = labels[a.Name];
                atName = a.Name;
                foreach (var se in SimpleEffects.Compute(t, by, a.Name, error.MeanSquare, error.Df, ContrastAdjustment.Holm, alpha))
                {
                    var level = a.Name + " " + se.AtLevel;
                    var test = new Dictionary<string, ResultValue>(StringComparer.Ordinal);
                    void Put(string stat, Quantity q) => test[stat] = context.Results.Add(block.Id, TestName.SimpleEffects, by, level, null, stat, q, inputs);
                    Put(Stat.Df, Quantity.Of(se.Df1));
                    Put(Stat.F, se.F);
                    Put(Stat.DfDen, Quantity.Of(se.Df2));
                    Put(Stat.P, se.P);
                    var pairs = new List<SimpleEffectPair>();
                    var c = 0;
                    var fi = t.Factors.ToList().IndexOf(by);
                    for (var i = 0; i < se.Means.Count; i++)
                    {
                        for (var j = i + 1; j < se.Means.Count; j++)
                        {
                            var e = se.Pairs.Contrasts[c++];
                            string[] pair = [se.Means[i].Levels[fi], se.Means[j].Levels[fi]];
                            var v = new Dictionary<string, ResultValue>(StringComparer.Ordinal);
                            void P(string stat, Quantity q) => v[stat] = context.Results.Add(block.Id, TestName.Holm, by, level, pair, stat, q, inputs);
                            P(Stat.Diff, Quantity.Of(e.Estimate));
                            P(Stat.Se, e.Se);
                            P(Stat.Statistic, e.T);
                            P(Stat.Df, Quantity.Of(e.Df));
                            P(Stat.P, e.P);
                            P(Stat.PAdj, e.PAdjusted);
                            P(Stat.CiLow, e.CiLow);
                            P(Stat.CiHigh, e.CiHigh);
                            pairs.Add(new SimpleEffectPair(pair[0], pair[1], e.PAdjusted, v.AsReadOnly()));
                        }
                    }

                    simpleEffects.Add(new MarginalSimpleEffect(se.AtLevel, test.AsReadOnly(), pairs.AsReadOnly()));
                }
            }
        }

        return Build();
    }

    /// <summary>
    /// The means of one factor with their intervals (back-transformed when the anova used a
    /// transformation); null when a mean or a limit is not defined.
    /// </summary>
    private static MarginalMeansFigure? MeansFigure(List<MarginalMeansRow> rows, string factor, string response, MarginalMeansError error, bool transformed, double alpha)
    {
        var means = new List<GroupMean>();
        foreach (var r in rows)
        {
            if (r.Mean.BackTransformedMean is not { IsDefined: true } m || r.Mean.BackTransformedLow is not { IsDefined: true } lo || r.Mean.BackTransformedHigh is not { IsDefined: true } hi)
            {
                return null;
            }

            means.Add(new GroupMean(r.Levels[0], m.Value, lo.Value, hi.Value));
        }

        return new MarginalMeansFigure(means, alpha, factor, response, error.Term, error.Df, transformed);
    }

    /// <summary>The names in the model's factor order (the engine's term order).</summary>
    private static List<string> Ordered(List<string> factors, IEnumerable<string> names)
    {
        var set = names.ToHashSet(StringComparer.Ordinal);
        return [.. factors.Where(set.Contains)];
    }

    /// <summary>
    /// Significant interactions of the anova that involve a factor of <paramref name="term"/> and a
    /// factor outside it: the means average over those other factors' levels.
    /// </summary>
    /// <summary>
    /// Records one estimated marginal mean under test <c>emmeans</c> (level = its levels joined by
    /// " / "): the mean and interval limits back-transformed, SE and df on the model's scale. Used by
    /// this kind and by an anova block with covariates (its adjusted means).
    /// </summary>
    internal static Dictionary<string, ResultValue> RecordMean(EvaluationContext context, BoundBlock block, string term, MarginalMean m, IReadOnlyList<string> inputs)
    {
        var level = string.Join(" / ", m.Levels);
        var values = new Dictionary<string, ResultValue>(StringComparer.Ordinal);
        void Add(string stat, Quantity q) => values[stat] = context.Results.Add(block.Id, TestName.Emmeans, term, level, null, stat, q, inputs);
        Add(Stat.Mean, m.BackTransformedMean);
        Add(Stat.Se, m.Se);
        Add(Stat.Df, m.Df);
        Add(Stat.CiLow, m.BackTransformedLow);
        Add(Stat.CiHigh, m.BackTransformedHigh);
        return values;
    }

    private static List<InteractionHint> Interactions(AnovaOutcome anova, IReadOnlyList<string> term, double alpha, IReadOnlyDictionary<string, string> labels)
    {
        var rows = anova.Design is { } d
            ? d.Rows.Where(r => r.TreatmentFactors is not null).Select(r => (r.Term, Factors: r.TreatmentFactors!, r.Values))
            : anova.Terms.Select(t => (Term: t.Term.Name, Factors: t.Term.Factors, Values: (IReadOnlyDictionary<string, ResultValue>)t.Values));
        return Hints(rows.Select(r => (r.Term, r.Factors, r.Values.GetValueOrDefault(Stat.P))), term, alpha, labels);
    }

    /// <summary>
    /// The interactions among <paramref name="rows"/> (term, its factors, its p-value) significant at
    /// <paramref name="alpha"/> that involve a factor of <paramref name="term"/> and one outside it:
    /// one rule for every route (fixed, design, mixed model, repeated).
    /// </summary>
    private static List<InteractionHint> Hints(IEnumerable<(string Term, IReadOnlyList<string> Factors, ResultValue? P)> rows, IReadOnlyList<string> term, double alpha, IReadOnlyDictionary<string, string> labels)
    {
        var hints = new List<InteractionHint>();
        foreach (var (name, factors, p) in rows)
        {
            if (factors.Count < 2 || !factors.Any(term.Contains) || factors.All(term.Contains) || p is null)
            {
                continue;
            }

            if (p.Value is { IsDefined: true } pv && pv.Value < alpha)
            {
                var others = factors.Where(f => !term.Contains(f)).ToList();
                hints.Add(new InteractionHint(name, [.. others.Select(f => labels.GetValueOrDefault(f, f))], others, p));
            }
        }

        return hints;
    }

    /// <summary>
    /// The single error of a design's term set: every treatment row the means rest on (for simple
    /// effects, the rows that contain the <c>by</c> factor) tested against one mean square. Null,
    /// with one message at <paramref name="at"/>, for a quasi-F or for rows on different errors.
    /// </summary>
    private static MarginalMeansError? DesignError(StrataAnovaResult strata, IReadOnlyList<string> set, MarginalMeansKind.Options options, IReadOnlyDictionary<string, string> labels, string of, SourceLocation at, DiagnosticBag diagnostics)
    {
        string Label(IEnumerable<string> names) => string.Join(" × ", names.Select(n => labels.GetValueOrDefault(n, n)));
        var by = options.At is null ? null : options.By[0].Name;
        var (error, quasi, mixed) = FindError(strata, set, by);
        if (error is not null)
        {
            return error;
        }

        if (quasi is { } q)
        {
            diagnostics.MarginalMeansNoSingleError(at, Label(q.Factors), of);
            return null;
        }

        var (first, second) = mixed!.Value;
        string what, suggestion;
        if (options.At is { } a)
        {
            what = $"the simple effects of {Label([by!])} at each level of {Label([a.Name])}";
            suggestion = FindError(strata, set, a.Name).Error is not null
                ? $"the simple effects of {Label([a.Name])} at each level of {Label([by!])} ('by: {a.Name}', 'at: {by}') rest on a single error"
                : "ask for the means of each factor on its own (leave out 'by' and 'at')";
        }
        else
        {
            what = $"the means of the cells of {Label(set)}";
            var single = set.Count == 2 ? set.FirstOrDefault(f => FindError(strata, set, f).Error is not null) : null;
            suggestion = single is not null
                ? $"'by: {single}' with 'at: {set.First(f => f != single)}' gives the means and simple effects of {Label([single])} within each level of {Label(set.Where(f => f != single))} on a single error"
                : "ask for the means of each factor on its own (leave out 'by')";
        }

        diagnostics.MarginalMeansMixedErrors(at, what, "the " + first, "the " + second, suggestion);
        return null;
    }

    private static (MarginalMeansError? Error, StrataRow? Quasi, (string First, string Second)? Mixed) FindError(StrataAnovaResult strata, IReadOnlyList<string> set, string? by)
    {
        MarginalMeansError? error = null;
        foreach (var r in strata.Rows)
        {
            if (r.Kind != TermKind.Treatment || r.Factors.Count == 0 || !r.Factors.All(set.Contains) || (by is not null && !r.Factors.Contains(by)))
            {
                continue;
            }

            if (r.Denominator is not [{ Coefficient: 1.0 } part] || r.IsQuasiF)
            {
                return (null, r, null);
            }

            if (error is null)
            {
                error = new MarginalMeansError(part.Term, part.MeanSquare, part.Df);
            }
            else if (!string.Equals(error.Term, part.Term, StringComparison.Ordinal))
            {
                return (null, null, (error.Term, part.Term));
            }
        }

        return (error, null, null);
    }
}
