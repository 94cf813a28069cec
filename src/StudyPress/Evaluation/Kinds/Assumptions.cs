using System.Globalization;
using System.Runtime.CompilerServices;
using StudyPress.Binding.Kinds;
using StudyPress.Binding;
using StudyPress.Diagnostics;
using StudyPress.Evaluation;
using StudyPress.Statistics.Assumptions;
using StudyPress.Statistics;

namespace StudyPress.Evaluation.Kinds;

/// <summary>An assumptions block evaluated: the checks of a plain or covariance model (<see cref="Review"/>), or of a design's strata (<see cref="Design"/>).</summary>
public sealed class AssumptionsOutcome(BoundBlock block) : BlockOutcome(block)
{
    public AssumptionReview? Review { get; init; }

    public AnovaOutcome? Anova { get; init; }

    /// <summary>The checks' manifest values by test, then statistic, in the order the block records them.</summary>
    public IReadOnlyDictionary<string, IReadOnlyDictionary<string, ResultValue>> Values { get; init; } = NoChecks;

    /// <summary>The observations flagged as outliers: their data line and values.</summary>
    public IReadOnlyList<(int Line, IReadOnlyDictionary<string, ResultValue> Values)> Flagged { get; init; } = [];

    /// <summary>The per-stratum checks of a design anova (then <see cref="Review"/> is null).</summary>
    public DesignChecks? Design { get; init; }

    private static readonly IReadOnlyDictionary<string, IReadOnlyDictionary<string, ResultValue>> NoChecks = new Dictionary<string, IReadOnlyDictionary<string, ResultValue>>(StringComparer.Ordinal).AsReadOnly();
}

/// <summary>Evaluates <c>assumptions</c> blocks into values (no HTML, no report text).</summary>
public sealed partial class AssumptionsEvaluator : KindEvaluator
{
    /// <summary>Registers this part of the kind (see DEVELOPERS.md, "Adding an analysis kind").</summary>
    [ModuleInitializer]
    internal static void Register() => KindEvaluators.Register(new AssumptionsEvaluator());

    public override string Kind => "assumptions";

    public override BlockOutcome Evaluate(EvaluationContext context, BoundBlock block, DiagnosticBag diagnostics)
    {
        if (context.Outcomes.GetValueOrDefault(block.Of!.Id) is AnovaOutcome { Design: { } design } designAnova)
        {
            return EvaluateDesign(context, block, designAnova, design);
        }

        if (context.Outcomes.GetValueOrDefault(block.Of!.Id) is not AnovaOutcome { Result: not null } anova)
        {
            return new AssumptionsOutcome(block);
        }

        var review = anova.Review;
        var inputs = context.Inputs(block);
        var term = anova.Ancova is { Blocks.Count: > 0 } blocked
            ? string.Join(":", blocked.Treatments)
            : string.Join(":", anova.Data!.Factors.Select(f => f.Spec.Name));
        var tests = new Dictionary<string, IReadOnlyDictionary<string, ResultValue>>(StringComparer.Ordinal);
        Dictionary<string, ResultValue> Group(string test)
        {
            var g = new Dictionary<string, ResultValue>(StringComparer.Ordinal);
            tests[test] = g.AsReadOnly();
            return g;
        }

        void Add(Dictionary<string, ResultValue> g, string test, string t, string stat, Quantity q) => g[stat] = context.Results.Add(block.Id, test, t, null, null, stat, q, inputs);

        var sw = Group(TestName.ShapiroWilk);
        Add(sw, "shapiro_wilk", "residual", "w", review.Normality.W);
        Add(sw, "shapiro_wilk", "residual", "p", review.Normality.P);
        foreach (var (name, r) in new[] { ("brown_forsythe", review.BrownForsythe), ("levene", review.Levene) })
        {
            var g = Group(name);
            Add(g, name, term, "f", r.F);
            Add(g, name, term, "df1", Quantity.Of(r.Df1));
            Add(g, name, term, "df2", Quantity.Of(r.Df2));
            Add(g, name, term, "p", r.P);
        }

        var bt = Group(TestName.Bartlett);
        Add(bt, TestName.Bartlett, term, Stat.Statistic, review.Bartlett.Statistic);
        Add(bt, TestName.Bartlett, term, Stat.Df, Quantity.Of(review.Bartlett.Df));
        Add(bt, TestName.Bartlett, term, Stat.P, review.Bartlett.P);
        if (review.Independence is { } dw)
        {
            var g = Group(TestName.DurbinWatson);
            Add(g, TestName.DurbinWatson, "residual", Stat.D, dw.Statistic);
            Add(g, TestName.DurbinWatson, "residual", Stat.P, dw.P);
        }

        var ol = Group(TestName.Outliers);
        var largest = review.Outliers.Largest;
        Add(ol, "outliers", "residual", "max_abs_t", largest is null ? Quantity.Undefined(review.Outliers.Reason ?? "no studentized residual is defined") : Quantity.Of(Math.Abs(largest.T.Value)));
        Add(ol, "outliers", "residual", "p_bonferroni", largest is null ? Quantity.Undefined(review.Outliers.Reason ?? "no studentized residual is defined") : largest.BonferroniP);
        var flagged = new List<(int Line, IReadOnlyDictionary<string, ResultValue> Values)>(review.Outliers.Flagged.Count);
        foreach (var index in review.Outliers.Flagged)
        {
            var r = review.Outliers.Residuals[index];
            var line = anova.Data!.Dataset.Lines[anova.Data.Rows[index]];
            var level = "line " + line.ToString(CultureInfo.InvariantCulture);
            flagged.Add((line, new Dictionary<string, ResultValue>(StringComparer.Ordinal)
            {
                [Stat.T] = context.Results.Add(block.Id, TestName.Outliers, "residual", level, null, Stat.T, r.T, inputs),
                [Stat.PBonferroni] = context.Results.Add(block.Id, TestName.Outliers, "residual", level, null, Stat.PBonferroni, r.BonferroniP, inputs),
            }.AsReadOnly()));
        }

        return new AssumptionsOutcome(block)
        {
            Anova = anova,
            Review = review,
            Values = tests.AsReadOnly(),
            Flagged = flagged.AsReadOnly(),
            Figures = context.Header.Report.Figures
                ? [.. new[] { Figures.Qq(context, anova), Figures.Histogram(context, anova), Figures.ResidualsFitted(anova) }.OfType<FigurePlan>()]
                : [],
        };
    }
}
