using System.Globalization;
using System.Runtime.CompilerServices;
using StudyPress.Binding;
using StudyPress.Diagnostics;
using StudyPress.Statistics.Assumptions;
using StudyPress.Statistics;

namespace StudyPress.Binding.Kinds;

/// <summary>
/// <c>assumptions</c>: checks of an anova block's residuals (Shapiro–Wilk), of equal variances
/// across its cells (Brown–Forsythe, mean-centred Levene, Bartlett), of independence in the
/// header's run order (Durbin–Watson) and of outlying observations (externally studentized
/// residuals with a Bonferroni bound), each with a plain-language verdict and what it means.
/// </summary>
public sealed class AssumptionsKind : BlockKind
{
    /// <summary>Registers this part of the kind (see DEVELOPERS.md, "Adding an analysis kind").</summary>
    [ModuleInitializer]
    internal static void Register() => BlockKinds.Register(new AssumptionsKind());

    public override string Name => "assumptions";

    public override string PrimaryTest => "shapiro_wilk";

    public override IReadOnlyList<string> OwnKeys { get; } = ["of"];

    public override bool AnalysesAnovaBlock => true;

    public override object? BindOptions(KeyReader keys, BindContext context, DiagnosticBag diagnostics) => null;
}
