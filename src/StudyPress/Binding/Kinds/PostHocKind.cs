using System.Globalization;
using System.Runtime.CompilerServices;
using StudyPress.Binding;
using StudyPress.Diagnostics;
using StudyPress.Statistics.Nonparametric;
using StudyPress.Statistics.PostHoc;
using StudyPress.Statistics;

namespace StudyPress.Binding.Kinds;

/// <summary>
/// <c>posthoc</c>: pairwise comparisons of one factor's levels in an anova block, with family-wise
/// error control and simultaneous intervals: Tukey HSD (Tukey–Kramer for unequal n), Games–Howell,
/// Holm or Bonferroni on pooled-variance t tests; with <c>control</c>, every level against the
/// control (Dunnett's test for <c>tukey</c>). <c>method: auto</c> follows the assumption checks.
/// </summary>
public sealed class PostHocKind : BlockKind
{
    /// <summary>Registers this part of the kind (see DEVELOPERS.md, "Adding an analysis kind").</summary>
    [ModuleInitializer]
    internal static void Register() => BlockKinds.Register(new PostHocKind());

    public override string Name => "posthoc";

    public override bool NeedsRows => false;

    public override string PrimaryTest => "posthoc";

    public override IReadOnlyList<string> OwnKeys { get; } = ["of", "factor", "method", "control", "direction"];

    public override bool AnalysesAnovaBlock => true;

    private static readonly string[] Methods = ["auto", "tukey", "games-howell", "holm", "bonferroni", "dunnett"];

    /// <summary>The directions of comparisons with a control: two-sided, or every level expected higher (lower) than the control.</summary>
    public static readonly string[] Directions = ["both", "higher", "lower"];

    public sealed record Options(string? Factor, SourceLocation FactorLocation, string Method, string? Control, SourceLocation ControlLocation)
    {
        /// <summary>Where <c>method</c> was written, or null.</summary>
        public SourceLocation? MethodLocation { get; init; }

        /// <summary>Dunnett's alternative: both (two-sided, default), higher or lower than the control.</summary>
        public DunnettAlternative Direction { get; init; } = DunnettAlternative.TwoSided;

        /// <summary>Where <c>direction</c> was written (the block when absent).</summary>
        public SourceLocation DirectionLocation { get; init; }
    }

    public override object? BindOptions(KeyReader keys, BindContext context, DiagnosticBag diagnostics)
    {
        var f = keys.Scalar("factor");
        AnovaFactorChoice.Check(context.AnovaOf(keys, Name, new DiagnosticBag()), f, keys, context, diagnostics);
        var c = keys.Scalar("control");
        var method = keys.Choice("method", Methods) ?? "auto";
        var d = keys.Scalar("direction");
        var direction = keys.Choice("direction", Directions) switch
        {
            "higher" => DunnettAlternative.Greater,
            "lower" => DunnettAlternative.Less,
            _ => DunnettAlternative.TwoSided,
        };
        if (d is not null && c is null && !keys.Misspelt.Contains("control"))
        {
            diagnostics.DirectionMisplaced(d.Location, null);
        }
        else if (d is not null && direction != DunnettAlternative.TwoSided && method is not ("auto" or "tukey" or "dunnett"))
        {
            diagnostics.DirectionMisplaced(d.Location, method);
        }

        // 'dunnett' is Dunnett's many-to-one procedure: the pooled-variance method ('tukey') with a control.
        if (method == "dunnett")
        {
            if (c is null && !keys.Misspelt.Contains("control"))
            {
                diagnostics.DunnettNeedsControl(keys.Scalar("method")!.Location);
            }

            method = "tukey";
        }

        return new Options(f?.Value, f?.Location ?? context.Syntax.Location, method, c?.Value, c?.Location ?? context.Syntax.Location)
        {
            MethodLocation = keys.Scalar("method")?.Location,
            Direction = direction,
            DirectionLocation = d?.Location ?? context.Syntax.Location,
        };
    }
}
