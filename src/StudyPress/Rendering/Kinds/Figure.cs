using System.Runtime.CompilerServices;
using StudyPress.Binding.Kinds;
using StudyPress.Binding;
using StudyPress.Diagnostics;
using StudyPress.Evaluation.Kinds;
using StudyPress.Evaluation;
using StudyPress.Rendering;

namespace StudyPress.Rendering.Kinds;

/// <summary>Writes the HTML of <c>figure</c> blocks.</summary>
public sealed class FigureRenderer : KindRenderer
{
    /// <summary>Registers this part of the kind (see DEVELOPERS.md, "Adding an analysis kind").</summary>
    [ModuleInitializer]
    internal static void Register() => KindRenderers.Register(new FigureRenderer());

    public override string Kind => "figure";

    public override void Render(HtmlWriter html, BlockOutcome outcome, RenderContext context)
    {
    }

    public override IEnumerable<string> Notes(BlockOutcome outcome, RenderContext context)
    {
        if (outcome is FigureOutcome { NotDrawn: true } && outcome.Block.Options is FigureKind.Options options)
        {
            yield return $"The {options.Type} figure cannot be drawn from block '{options.Source.Id}' (too few values, or the statistics it needs are not defined).";
        }
    }
}
