using StudyPress.Binding;
using StudyPress.Diagnostics;
using StudyPress.Evaluation;
using StudyPress.Rendering;

namespace StudyPress.Kinds;

/// <summary>
/// <c>figure</c>: one chart drawn from an earlier block (<c>of</c>; default: the nearest block
/// above that can supply it): <c>box</c> and <c>means</c> from a summary or anova block;
/// <c>interaction</c>, <c>qq</c>, <c>residual-histogram</c>, <c>residuals-fitted</c> and
/// <c>f-distribution</c> from an anova block; <c>intervals</c> from a posthoc block;
/// <c>power-curve</c> from a power block.
/// </summary>
public sealed class FigureKind : BlockKind
{
    public override string Name => "figure";

    public override string PrimaryTest => "figure";

    public override IReadOnlyList<string> OwnKeys { get; } = ["type", "of"];

    public override bool UsesData => false;

    public override bool NeedsFactors => false;

    public sealed record Options(string Type, BoundBlock Source);

    private static Type[] Sources(string type) => type switch
    {
        "box" or "means" => [typeof(SummaryKind), typeof(AnovaKind)],
        "intervals" => [typeof(PostHocKind)],
        "power-curve" => [typeof(PowerKind)],
        _ => [typeof(AnovaKind)],
    };

    public override object? BindOptions(KeyReader keys, BindContext context, DiagnosticBag diagnostics)
    {
        var typeNode = keys.Scalar("type");
        if (typeNode is null)
        {
            diagnostics.MissingKey(context.Syntax.Location, "type", "the figure block");
            return null;
        }

        var type = keys.Choice("type", Figures.Types);
        if (type is null)
        {
            return null;
        }

        var kinds = Sources(type);
        var names = string.Join(" or ", kinds.Select(k => ((BlockKind)Activator.CreateInstance(k)!).Name));
        BoundBlock? source;
        if (keys.Scalar("of") is { } of)
        {
            source = context.Earlier.FirstOrDefault(b => b.Id == of.Value);
            if (source is null && context.Failed.Contains(of.Value))
            {
                return null;
            }

            if (source is null)
            {
                diagnostics.UnknownBlockReference(of.Location, of.Value, DiagnosticBag.Nearest(of.Value, context.Earlier.Select(b => b.Id)));
                return null;
            }

            if (!kinds.Contains(source.Kind.GetType()))
            {
                diagnostics.FigureSource(of.Location, type, names, of.Value, source.Kind.Name);
                return null;
            }
        }
        else
        {
            source = context.Earlier.LastOrDefault(b => kinds.Contains(b.Kind.GetType()));
            if (source is null)
            {
                diagnostics.FigureNoSource(context.Syntax.Location, type, names);
                return null;
            }
        }

        return new Options(type, source);
    }

    public override BlockOutcome Evaluate(EvaluationContext context, BoundBlock block, DiagnosticBag diagnostics)
    {
        var options = (Options)block.Options!;
        var outcome = new BlockOutcome(block);
        var source = context.Outcomes.GetValueOrDefault(options.Source.Id);
        var caption = block.Caption;
        var data = source switch
        {
            SummaryKind.Outcome s => s.Data,
            AnovaKind.Outcome a => a.Data,
            _ => null,
        };
        var figures = new List<Figure?>();
        switch (options.Type)
        {
            case "box" when data is not null:
                figures.Add(Figures.Box(data, caption));
                break;
            case "means" when data is not null:
                figures.Add(Figures.Means(data, context.Header.Alpha, caption));
                break;
            case "interaction" when source is AnovaKind.Outcome a:
                figures.Add(Figures.Interaction(a, caption));
                break;
            case "qq" when source is AnovaKind.Outcome a:
                figures.Add(Figures.Qq(a, caption));
                break;
            case "residual-histogram" when source is AnovaKind.Outcome a:
                figures.Add(Figures.Histogram(a, caption));
                break;
            case "residuals-fitted" when source is AnovaKind.Outcome a:
                figures.Add(Figures.ResidualsFitted(a, caption));
                break;
            case "f-distribution" when source is AnovaKind.Outcome a:
                figures.AddRange(Figures.FDistributions(a, caption));
                break;
            case "intervals" when source is PostHocKind.Outcome p:
                figures.Add(Figures.Intervals(p, context.Header.Alpha, caption));
                break;
            case "power-curve" when source is PowerKind.Outcome p:
                figures.Add(Figures.PowerCurve(p, caption));
                break;
        }

        outcome.Figures.AddRange(figures.OfType<Figure>());
        if (outcome.Figures.Count == 0 && source is not null)
        {
            outcome.Notes.Add($"The {options.Type} figure cannot be drawn from block '{options.Source.Id}' (too few values, or the statistics it needs are not defined).");
        }

        return outcome;
    }

    public override void Render(HtmlWriter html, BlockOutcome outcome, RenderContext context)
    {
    }
}
