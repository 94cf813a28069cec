using System.Runtime.CompilerServices;
using StudyPress.Binding;
using StudyPress.Diagnostics;

namespace StudyPress.Binding.Kinds;

/// <summary>
/// <c>figure</c>: one chart drawn from an earlier block (<c>of</c>; default: the nearest block
/// above that can supply it): <c>box</c> and <c>means</c> from a summary or anova block;
/// <c>interaction</c>, <c>qq</c>, <c>residual-histogram</c>, <c>residuals-fitted</c> and
/// <c>f-distribution</c> from an anova block; <c>intervals</c> from a posthoc block;
/// <c>power-curve</c> from a power block.
/// </summary>
public sealed class FigureKind : BlockKind
{
    /// <summary>Registers this part of the kind (see DEVELOPERS.md, "Adding an analysis kind").</summary>
    [ModuleInitializer]
    internal static void Register() => BlockKinds.Register(new FigureKind());

    public static readonly string[] Types = ["box", "means", "interaction", "qq", "residual-histogram", "residuals-fitted", "f-distribution", "power-curve", "intervals"];

    /// <summary>
    /// The types drawn from a block's statistics alone (the ANOVA table, the comparisons), which
    /// exist on aggregated data (<c>aggregate: true</c>); every other type draws rows.
    /// </summary>
    public static readonly string[] DrawnFromStatistics = ["f-distribution", "intervals"];

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

        var type = keys.Choice("type", FigureKind.Types);
        if (type is null)
        {
            return null;
        }

        var kinds = Sources(type);
        var names = string.Join(" or ", kinds.Select(k => BlockKinds.All.Values.First(r => r.GetType() == k).Name));
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
}
