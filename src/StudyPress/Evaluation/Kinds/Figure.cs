using System.Runtime.CompilerServices;
using StudyPress.Binding.Kinds;
using StudyPress.Binding;
using StudyPress.Diagnostics;
using StudyPress.Evaluation;

namespace StudyPress.Evaluation.Kinds;

/// <summary>What a figure block drew; <see cref="NotDrawn"/> when its source gave nothing to draw.</summary>
public sealed class FigureOutcome(BoundBlock block) : BlockOutcome(block)
{
    public bool NotDrawn { get; init; }
}

/// <summary>Evaluates <c>figure</c> blocks into values (no HTML, no report text).</summary>
public sealed class FigureEvaluator : KindEvaluator
{
    /// <summary>Registers this part of the kind (see DEVELOPERS.md, "Adding an analysis kind").</summary>
    [ModuleInitializer]
    internal static void Register() => KindEvaluators.Register(new FigureEvaluator());

    public override string Kind => "figure";

    public override BlockOutcome Evaluate(EvaluationContext context, BoundBlock block, DiagnosticBag diagnostics)
    {
        var options = block.OptionsOf<FigureKind.Options>();
        var source = context.Outcomes.GetValueOrDefault(options.Source.Id);
        var caption = block.Caption;
        var data = source switch
        {
            SummaryOutcome s => s.Data,
            AnovaOutcome a => a.Data,
            _ => null,
        };
        var figures = new List<FigurePlan?>();
        if (source is AnovaOutcome { Design: not null } && options.Type is "interaction" or "qq" or "residual-histogram" or "residuals-fitted" or "f-distribution")
        {
            diagnostics.DesignViewUnavailable(block.Location, "figure", options.Source.Id, $"the '{options.Type}' chart is drawn from a fixed-effects fit, and this anova block's header declares a layout (blocks, plots, random or nested factors); draw 'box' or 'means' from it, and see its assumptions block for the residuals of each stratum");
            return new FigureOutcome(block);
        }

        switch (options.Type)
        {
            case "box" when data is not null:
                figures.Add(Figures.Box(data, caption));
                break;
            case "means" when data is not null:
                figures.Add(Figures.Means(data, context.Header.Alpha, caption));
                break;
            case "interaction" when source is AnovaOutcome a:
                figures.Add(Figures.Interaction(a, caption));
                break;
            case "qq" when source is AnovaOutcome a:
                figures.Add(Figures.Qq(context, a, caption));
                break;
            case "residual-histogram" when source is AnovaOutcome a:
                figures.Add(Figures.Histogram(context, a, caption));
                break;
            case "residuals-fitted" when source is AnovaOutcome a:
                figures.Add(Figures.ResidualsFitted(a, caption));
                break;
            case "f-distribution" when source is AnovaOutcome a:
                figures.AddRange(Figures.FDistributions(a, caption));
                break;
            case "intervals" when source is PostHocOutcome p:
                figures.Add(Figures.Intervals(p.Families, context.Header.Alpha, caption));
                break;
            case "power-curve" when source is PowerOutcome p:
                figures.Add(Figures.PowerCurve(p, caption));
                break;
        }

        var drawn = figures.OfType<FigurePlan>().ToList();
        return new FigureOutcome(block) { NotDrawn = drawn.Count == 0 && source is not null, Figures = drawn.AsReadOnly() };
    }
}
