using StudyPress.Binding;
using StudyPress.Binding.Kinds;
using StudyPress.Statistics.Anova;
using StudyPress.Statistics.Designs;

namespace StudyPress.Model;

/// <summary>One factor of a model and its place in the layout (from the header's factor entry).</summary>
public sealed record ModelFactor(FactorSpec Spec)
{
    public string Name => Spec.Name;

    public FactorRole Role => Spec.Layout.Role;

    public PlotLevel Plot => Spec.Layout.Plot;
}

/// <summary>How an anova block's model is fitted.</summary>
public enum ModelRoute
{
    /// <summary>Every factor is a fixed treatment, applied to the experimental unit: least squares.</summary>
    FixedEffects,

    /// <summary>The header declares a layout (blocks, plots, random or nested factors): strata or REML.</summary>
    Design,
}

/// <summary>
/// The model an anova block states, bound once from the block (before any data is read): the
/// response, the factors with their layout, the terms in table order (main effects in factor order,
/// then interactions by degree, as <see cref="AnovaDesign.Terms(IReadOnlyList{string}, bool)"/> orders them), the SS
/// type and the response transform. The engine's fit on rows and on cell statistics, and the
/// methods text, read the model from here. With a declared layout (<see cref="Route"/> =
/// <see cref="ModelRoute.Design"/>) the terms, strata and error terms are derived from the roles
/// by the design engine (<see cref="DesignFactors"/>), not from <see cref="Terms"/>.
/// </summary>
public sealed record ModelDescription(
    string Response,
    IReadOnlyList<ModelFactor> Factors,
    IReadOnlyList<ModelTerm> Terms,
    bool Interaction,
    SumOfSquaresType SsType,
    TransformKind Transform,
    string TransformName)
{
    /// <summary>Fixed effects by least squares, or a design with strata.</summary>
    public ModelRoute Route => Factors.Any(f => f.Spec.Layout.IsDeclared) ? ModelRoute.Design : ModelRoute.FixedEffects;

    /// <summary>The factors as the design engine takes them, nesting restricted to the model's factors.</summary>
    public IReadOnlyList<DesignFactor> DesignFactors =>
        [.. Factors.Select(f => f.Spec.Layout.ToDesignFactor(f.Name))];

    /// <summary>The model of an anova block (null for any other block).</summary>
    public static ModelDescription? Of(BoundBlock block)
    {
        if (block.Options is not AnovaKind.Options options || block.Response is null)
        {
            return null;
        }

        var factors = block.Factors.Select(f => new ModelFactor(f)).ToList();
        var terms = AnovaDesign.Terms([.. factors.Select(f => f.Name)], options.Interaction);
        return new ModelDescription(block.Response, factors, terms, options.Interaction, options.SsType, options.Transform, options.TransformName);
    }
}
