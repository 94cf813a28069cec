using System.Runtime.CompilerServices;
using StudyPress.Binding;
using StudyPress.Diagnostics;

namespace StudyPress.Evaluation.Kinds;

/// <summary>
/// The evaluation of one analysis kind: computes a block into values (the manifest's results and
/// a typed outcome for rendering). Registered by name; see DEVELOPERS.md, "Adding an analysis kind".
/// </summary>
public abstract class KindEvaluator
{
    /// <summary>The kind's name, as in <see cref="Binding.Kinds.BlockKind.Name"/>.</summary>
    public abstract string Kind { get; }

    /// <summary>Computes the block, adding values to the result set, and returns what to render.</summary>
    public abstract BlockOutcome Evaluate(EvaluationContext context, BoundBlock block, DiagnosticBag diagnostics);

    /// <summary>
    /// The plain anova outcome a view block (<c>of</c>) reads: null when that block gave no anova
    /// outcome (its own mistakes are already reported), or when it adjusts for covariates, which a
    /// view of raw level means cannot follow (one error, SP0538, at this block).
    /// </summary>
    protected AnovaOutcome? PlainAnovaOf(EvaluationContext context, BoundBlock block, DiagnosticBag diagnostics)
    {
        if (context.Outcomes.GetValueOrDefault(block.Of!.Id) is not AnovaOutcome anova)
        {
            return null;
        }

        if (anova.Ancova is not null)
        {
            diagnostics.CovariateViewUnavailable(block.Location, Kind, block.Of.Id);
            return null;
        }

        return anova;
    }
}

/// <summary>
/// What a block produced: its values and the facts its renderer needs. No report text: cautions
/// and notes are written by the kind's renderer from these facts.
/// </summary>
public class BlockOutcome(BoundBlock block)
{
    public BoundBlock Block { get; } = block;

    /// <summary>
    /// Charts to show under the block: what each shows (Rendering draws them, with their words).
    /// Given at construction (init), read-only.
    /// </summary>
    public IReadOnlyList<FigurePlan> Figures { get; init; } = [];
}


/// <summary>Every kind's evaluation, by kind name.</summary>
public static class KindEvaluators
{
    private static readonly Dictionary<string, KindEvaluator> Registered = new(StringComparer.Ordinal);

    /// <summary>Called once per kind, by the evaluator's own registration (a module initializer).</summary>
    public static void Register(KindEvaluator evaluator)
    {
        lock (Registered)
        {
            if (!Registered.TryAdd(evaluator.Kind, evaluator))
            {
                throw new InvalidOperationException($"two evaluators for the kind '{evaluator.Kind}'");
            }
        }
    }

    public static IReadOnlyDictionary<string, KindEvaluator> All => Registered;

    public static KindEvaluator For(BoundBlock block) => Registered[block.Kind.Name];
}
