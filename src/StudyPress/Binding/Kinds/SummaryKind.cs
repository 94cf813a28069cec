using System.Runtime.CompilerServices;
using StudyPress.Binding;
using StudyPress.Diagnostics;
using StudyPress.Statistics.Descriptive;

namespace StudyPress.Binding.Kinds;

/// <summary>
/// <c>summary</c>: per-group n, missing, mean, SD, SE, confidence interval of the mean, median,
/// quartiles, min and max. Groups are the crossing of the <c>by</c> factors (default: the block's
/// factors, else the header's).
/// </summary>
public sealed class SummaryKind : BlockKind
{
    /// <summary>Registers this part of the kind (see DEVELOPERS.md, "Adding an analysis kind").</summary>
    [ModuleInitializer]
    internal static void Register() => BlockKinds.Register(new SummaryKind());

    public override string Name => "summary";

    public override bool NeedsRows => false;

    public override string PrimaryTest => "summary";

    public override IReadOnlyList<string> OwnKeys { get; } = ["by"];

    public override bool NeedsFactors => false;

    public override object? BindOptions(KeyReader keys, BindContext context, DiagnosticBag diagnostics) => null;
}
