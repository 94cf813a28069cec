using StudyPress.Binding;
using StudyPress.Diagnostics;
using StudyPress.Evaluation;
using StudyPress.Rendering;

namespace StudyPress.Kinds;

/// <summary>
/// One analysis kind: its keys, how it binds, evaluates into manifest values, and renders.
/// Adding a kind means writing one subclass and registering it in <see cref="BlockKinds"/>.
/// </summary>
public abstract class BlockKind
{
    /// <summary>The word in the fenced block's info string.</summary>
    public abstract string Name { get; }

    /// <summary>The manifest <c>test</c> a prose reference means when it names none.</summary>
    public abstract string PrimaryTest { get; }

    /// <summary>Keys of this kind beyond the ones every kind accepts.</summary>
    public abstract IReadOnlyList<string> OwnKeys { get; }

    /// <summary>Whether the block reads a dataset (and so a response column).</summary>
    public virtual bool UsesData => true;

    /// <summary>Whether the block needs factors (it compares groups).</summary>
    public virtual bool NeedsFactors => true;

    /// <summary>Binds the kind's own keys; report mistakes to the bag.</summary>
    public abstract object? BindOptions(KeyReader keys, StudyHeader header, DiagnosticBag diagnostics);

    /// <summary>Computes the block, adding values to the result set, and returns what to render.</summary>
    public abstract BlockOutcome Evaluate(EvaluationContext context, BoundBlock block, DiagnosticBag diagnostics);

    /// <summary>Writes the block's HTML (tables, notes) into the writer.</summary>
    public abstract void Render(HtmlWriter html, BlockOutcome outcome, RenderContext context);
}

/// <summary>What a block produced: its values and anything it needs to render them.</summary>
public class BlockOutcome(BoundBlock block)
{
    public BoundBlock Block { get; } = block;

    /// <summary>Plain-language notes and cautions to show under the block.</summary>
    public List<string> Notes { get; } = [];

    public List<string> Warnings { get; } = [];
}

/// <summary>Every kind the compiler knows, by name.</summary>
public static class BlockKinds
{
    public static IReadOnlyDictionary<string, BlockKind> All { get; } = new BlockKind[]
    {
        new SummaryKind(),
        new AnovaKind(),
    }.ToDictionary(k => k.Name, StringComparer.Ordinal);

    public static IReadOnlySet<string> Names { get; } = new HashSet<string>(All.Keys, StringComparer.Ordinal);

    /// <summary>Keys every kind accepts.</summary>
    public static readonly string[] CommonKeys = ["data", "response", "factors", "where", "caption"];
}
