using System.Runtime.CompilerServices;
using StudyPress.Binding;
using StudyPress.Diagnostics;
using StudyPress.Statistics.Nonparametric;
using StudyPress.Statistics.PostHoc;
using StudyPress.Statistics;

namespace StudyPress.Binding.Kinds;

/// <summary>
/// <c>ranks</c>: the Kruskal–Wallis test (mid-ranks, tie-corrected) of one factor, with Dunn's
/// pairwise comparisons of mean ranks, Holm-adjusted. Normality is not assumed.
/// </summary>
public sealed class RanksKind : BlockKind
{
    /// <summary>Registers this part of the kind (see DEVELOPERS.md, "Adding an analysis kind").</summary>
    [ModuleInitializer]
    internal static void Register() => BlockKinds.Register(new RanksKind());

    public override string Name => "ranks";

    public override string PrimaryTest => "kruskal_wallis";

    public override IReadOnlyList<string> OwnKeys { get; } = ["factor"];

    public sealed record Options(string? Factor, SourceLocation FactorLocation);

    public override object? BindOptions(KeyReader keys, BindContext context, DiagnosticBag diagnostics)
    {
        var f = keys.Scalar("factor");
        if (f is not null && context.Header.Factor(f.Value) is null)
        {
            diagnostics.UnknownFactor(f.Location, f.Value, DiagnosticBag.Nearest(f.Value, context.Header.Factors.Select(x => x.Name)));
        }

        return new Options(f?.Value, f?.Location ?? context.Syntax.Location);
    }
}
