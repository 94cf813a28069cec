using StudyPress.Evaluation.Kinds;

namespace StudyPress.Rendering.Kinds;

/// <summary>
/// The HTML of one analysis kind: tables, notes and figures of its outcome. Registered by name;
/// see DEVELOPERS.md, "Adding an analysis kind".
/// </summary>
public abstract class KindRenderer
{
    /// <summary>The kind's name, as in <see cref="Binding.Kinds.BlockKind.Name"/>.</summary>
    public abstract string Kind { get; }

    /// <summary>Writes the block's HTML (tables, notes) into the writer.</summary>
    public abstract void Render(HtmlWriter html, BlockOutcome outcome, RenderContext context);

    /// <summary>
    /// Cautions shown under the block's figures, written from the outcome's typed facts
    /// (evaluation holds no report text).
    /// </summary>
    public virtual IEnumerable<string> Warnings(BlockOutcome outcome, RenderContext context) => [];

    /// <summary>
    /// The sentences this kind contributes to one part of a methods paragraph (HTML, numbers as
    /// traced spans). <paramref name="section"/> is the anova section the block belongs to, or null
    /// for blocks outside one. The methods renderer orders the contributions; see
    /// docs/methods-and-sentences.md.
    /// </summary>
    public virtual IEnumerable<string> Methods(MethodsPart part, MethodsSection? section, BlockOutcome outcome, MethodsWriter w) => [];

    /// <summary>Plain notes shown after the cautions (rows left out and the like); see <see cref="Warnings"/>.</summary>
    public virtual IEnumerable<string> Notes(BlockOutcome outcome, RenderContext context) => [];
}

/// <summary>Every kind's renderer, by kind name.</summary>
public static class KindRenderers
{
    private static readonly Dictionary<string, KindRenderer> Registered = new(StringComparer.Ordinal);

    /// <summary>Called once per kind, by the renderer's own registration (a module initializer).</summary>
    public static void Register(KindRenderer renderer)
    {
        lock (Registered)
        {
            if (!Registered.TryAdd(renderer.Kind, renderer))
            {
                throw new InvalidOperationException($"two renderers for the kind '{renderer.Kind}'");
            }
        }
    }

    public static IReadOnlyDictionary<string, KindRenderer> All => Registered;

    public static KindRenderer For(BlockOutcome outcome) => Registered[outcome.Block.Kind.Name];
}
