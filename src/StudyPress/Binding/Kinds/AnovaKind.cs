using System.Globalization;
using System.Runtime.CompilerServices;
using StudyPress.Binding;
using StudyPress.Diagnostics;
using StudyPress.Statistics.Anova;
using StudyPress.Statistics.Nonparametric;
using StudyPress.Statistics;

namespace StudyPress.Binding.Kinds;

/// <summary>
/// <c>anova</c>: fixed-effects ANOVA by least squares, one-way or factorial (SS type 1, 2 or 3),
/// with an optional response transformation; ANOVA table (SS, df, MS, F, p), critical F at alpha,
/// effect sizes (eta², partial eta², omega², Cohen's f), level means, and for one factor Welch's F
/// (always with <c>welch: yes</c>; with <c>auto</c> when Brown–Forsythe finds unequal variances) and
/// Kruskal–Wallis (with <c>auto</c> when residuals are non-normal and groups small).
/// </summary>
public sealed class AnovaKind : BlockKind
{
    /// <summary>Registers this part of the kind (see DEVELOPERS.md, "Adding an analysis kind").</summary>
    [ModuleInitializer]
    internal static void Register() => BlockKinds.Register(new AnovaKind());

    public override string Name => "anova";

    public override bool NeedsRows => false;

    public override string PrimaryTest => "anova";

    public override IReadOnlyList<string> OwnKeys { get; } = ["interaction", "ss-type", "transform", "welch", "fit"];

    private static readonly Dictionary<string, TransformKind> Transforms = new(StringComparer.Ordinal)
    {
        ["none"] = TransformKind.None,
        ["log"] = TransformKind.Log,
        ["log10"] = TransformKind.Log10,
        ["sqrt"] = TransformKind.Sqrt,
        ["reciprocal"] = TransformKind.Reciprocal,
        ["box-cox"] = TransformKind.BoxCox,
    };

    /// <param name="Fit">
    /// For a study whose header declares a layout (blocks, plots, random or nested factors): <c>auto</c>
    /// (the classical strata when the data are balanced, else the mixed model by REML),
    /// <c>classical</c> (strata only; unbalanced data are an error at the key) or <c>reml</c>.
    /// </param>
    public sealed record Options(bool Interaction, SumOfSquaresType SsType, string TransformName, TransformKind Transform, string Welch, string Fit = "auto")
    {
        /// <summary>Where <c>fit</c> was written (the block's location when it was not).</summary>
        public SourceLocation? FitLocation { get; init; }
    }

    public override object? BindOptions(KeyReader keys, BindContext context, DiagnosticBag diagnostics)
    {
        var ss = keys.Integer("ss-type", 1, 3) ?? 2;
        var transform = keys.Choice("transform", [.. Transforms.Keys]) ?? "none";
        return new Options(
            keys.Boolean("interaction") ?? true,
            (SumOfSquaresType)ss,
            transform,
            Transforms[transform],
            keys.Choice("welch", ["auto", "yes", "no"]) ?? "auto",
            keys.Choice("fit", ["auto", "classical", "reml"]) ?? "auto")
        {
            FitLocation = keys.Has("fit") ? keys.KeyLocation("fit") : null,
        };
    }
}
