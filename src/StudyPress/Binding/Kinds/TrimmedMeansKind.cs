using System.Runtime.CompilerServices;
using StudyPress.Diagnostics;

namespace StudyPress.Binding.Kinds;

/// <summary>
/// <c>trimmed-means</c>: the heteroscedastic comparison of one factor's trimmed means (Yuen 1974
/// for two levels; Welch's method on trimmed means and winsorized variances for more). Equal
/// variances and normal tails are not assumed.
/// </summary>
public sealed class TrimmedMeansKind : BlockKind
{
    /// <summary>Registers this part of the kind (see DEVELOPERS.md, "Adding an analysis kind").</summary>
    [ModuleInitializer]
    internal static void Register() => BlockKinds.Register(new TrimmedMeansKind());

    /// <summary>The proportion trimmed from each tail when the block does not say (Wilcox's usual 20 %).</summary>
    public const double DefaultTrim = 0.2;

    public override string Name => "trimmed-means";

    public override string PrimaryTest => "trimmed_means";

    public override IReadOnlyList<string> OwnKeys { get; } = ["factor", "trim"];

    /// <summary>
    /// The factor (null: the block's only factor), the proportion trimmed from each tail, and where
    /// each was written (the block's fence when not); <paramref name="TrimWritten"/> is false for the default.
    /// </summary>
    public sealed record Options(string? Factor, SourceLocation FactorLocation, double Trim, SourceLocation TrimLocation, bool TrimWritten);

    public override object? BindOptions(KeyReader keys, BindContext context, DiagnosticBag diagnostics)
    {
        var f = keys.Scalar("factor");
        if (f is not null && context.Header.Factor(f.Value) is null)
        {
            diagnostics.UnknownFactor(f.Location, f.Value, DiagnosticBag.Nearest(f.Value, context.Header.Factors.Select(x => x.Name)));
            return null;
        }

        var trim = DefaultTrim;
        var t = keys.Scalar("trim");
        if (t is not null)
        {
            if (keys.Number("trim") is not { } value)
            {
                return null;
            }

            if (!(value >= 0 && value < 0.5))
            {
                diagnostics.TrimOutOfRange(t.Location, t.Value);
                return null;
            }

            trim = value;
        }

        return new Options(f?.Value, f?.Location ?? context.Syntax.Location, trim, t?.Location ?? context.Syntax.Location, t is not null);
    }
}
