using StudyPress.Binding;
using StudyPress.Binding.Kinds;
using StudyPress.Statistics.Anova;

namespace StudyPress.Model;

/// <summary>
/// What a factor is in the model. Only <see cref="Treatment"/> exists today: a fixed factor whose
/// levels are compared. The design admits further roles without changing the type's users:
/// a blocking factor (in the model, not compared), a whole-plot factor (tested against the
/// whole-plot error), a factor nested in another (<see cref="ModelFactor"/> would name its parent)
/// and a random factor (its terms tested against other mean squares). Covariates and subjects are
/// not factors and would be listed beside <see cref="ModelDescription.Factors"/>.
/// </summary>
public enum FactorRole
{
    Treatment,
}

/// <summary>One factor of a model and its role.</summary>
public sealed record ModelFactor(FactorSpec Spec, FactorRole Role)
{
    public string Name => Spec.Name;
}

/// <summary>
/// The model an anova block states, bound once from the block (before any data is read): the
/// response, the factors with their roles, the terms in table order (main effects in factor order,
/// then interactions by degree, as <see cref="AnovaDesign.Terms(IReadOnlyList{string}, bool)"/> orders them), the SS
/// type and the response transform. The engine's fit on rows and on cell statistics, and the
/// methods text, read the model from here.
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
    /// <summary>The model of an anova block (null for any other block).</summary>
    public static ModelDescription? Of(BoundBlock block)
    {
        if (block.Options is not AnovaKind.Options options || block.Response is null)
        {
            return null;
        }

        var factors = block.Factors.Select(f => new ModelFactor(f, FactorRole.Treatment)).ToList();
        var terms = AnovaDesign.Terms([.. factors.Select(f => f.Name)], options.Interaction);
        return new ModelDescription(block.Response, factors, terms, options.Interaction, options.SsType, options.Transform, options.TransformName);
    }
}
