using System.Globalization;
using System.Runtime.CompilerServices;
using StudyPress.Binding;
using StudyPress.Diagnostics;
using StudyPress.Statistics.Power;
using StudyPress.Statistics;

namespace StudyPress.Binding.Kinds;

/// <summary>
/// <c>power</c>: power of the one-way ANOVA F test for an effect size (Cohen's f), a number of
/// groups and a per-group n; or the smallest per-group n that reaches a target power. Needs no
/// data. The effect may be taken from an anova block (<c>of</c>), which is "observed power":
/// the report then says why that number says nothing beyond the p-value.
/// </summary>
public sealed class PowerKind : BlockKind
{
    /// <summary>Registers this part of the kind (see DEVELOPERS.md, "Adding an analysis kind").</summary>
    [ModuleInitializer]
    internal static void Register() => BlockKinds.Register(new PowerKind());

    public override string Name => "power";

    public override string PrimaryTest => "power";

    public override IReadOnlyList<string> OwnKeys { get; } = ["groups", "n", "effect", "target", "alpha", "of", "factor"];

    public override bool UsesData => false;

    public override bool NeedsFactors => false;

    public sealed record Options(int? Groups, int? N, double? Effect, double? Target, double Alpha, string? Of, string? Factor, SourceLocation Location);

    public override object? BindOptions(KeyReader keys, BindContext context, DiagnosticBag diagnostics)
    {
        var groups = keys.Integer("groups", 2, 10000);
        var n = keys.Integer("n", 2, 100_000_000);
        var effect = keys.Number("effect");
        if (effect is < 0 && keys.Scalar("effect") is { } e)
        {
            diagnostics.NotANumber(e.Location, "effect", e.Value + " (Cohen's f must be 0 or more)");
        }

        var target = keys.Number("target");
        if (target is not null and (<= 0 or >= 1) && keys.Scalar("target") is { } t)
        {
            diagnostics.PowerTargetRange(t.Location, t.Value);
        }

        var alpha = context.Header.Alpha;
        if (keys.Scalar("alpha") is { } a)
        {
            if (double.TryParse(a.Value, NumberStyles.Float, CultureInfo.InvariantCulture, out var av) && av > 0 && av < 1)
            {
                alpha = av;
            }
            else
            {
                diagnostics.AlphaOutOfRange(a.Location, a.Value);
            }
        }

        string? of = null;
        if (keys.Has("of"))
        {
            var anova = context.AnovaOf(keys, Name, diagnostics);
            of = anova?.Id;

            // The factor is checked here, with any other missing key, rather than after those are
            // mended; an anova with a declared layout or covariates is refused as a whole when
            // evaluated, so only plain anovas are judged.
            if (anova is not null && anova.Factors.All(f => !f.Layout.IsDeclared) && !(anova.Kind is AnovaKind && anova.OptionsOf<AnovaKind.Options>().HasCovariates))
            {
                AnovaFactorChoice.Check(anova, keys.Scalar("factor"), keys, context, diagnostics);
            }
        }

        if (effect is null && !keys.Has("of") && !keys.Misspelt.Overlaps(["effect", "of"]))
        {
            diagnostics.PowerNeeds(context.Syntax.Location, "'effect' (Cohen's f), or 'of' naming an anova block");
        }

        if (n is null && target is null && !keys.Misspelt.Overlaps(["n", "target"]))
        {
            diagnostics.PowerNeeds(context.Syntax.Location, "'n' (per group) for the power, or 'target' for the sample size");
        }

        if (groups is null && !keys.Has("of") && !keys.Misspelt.Overlaps(["groups", "of"]))
        {
            diagnostics.PowerNeeds(context.Syntax.Location, "'groups' (the number of groups)");
        }

        return new Options(groups, n, effect, target, alpha, of, keys.String("factor"), context.Syntax.Location);
    }
}
