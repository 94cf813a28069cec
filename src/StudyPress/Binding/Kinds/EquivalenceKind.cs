using System.Globalization;
using System.Runtime.CompilerServices;
using StudyPress.Diagnostics;
using StudyPress.Syntax;

namespace StudyPress.Binding.Kinds;

/// <summary>
/// <c>equivalence</c>: two one-sided tests (TOST) that the difference of two level means of an
/// anova block's factor lies within a margin given in response units, or the one-sided
/// non-inferiority test against one margin. <c>pair</c> compares two levels; <c>reference</c>
/// compares every other level with one. The verdict never turns "not shown to differ" into
/// "equivalent", nor "not shown equivalent" into "different".
/// </summary>
public sealed class EquivalenceKind : BlockKind
{
    /// <summary>Registers this part of the kind (see DEVELOPERS.md, "Adding an analysis kind").</summary>
    [ModuleInitializer]
    internal static void Register() => BlockKinds.Register(new EquivalenceKind());

    /// <summary>What the block sets out to show.</summary>
    public static readonly string[] Goals = ["equivalence", "non-inferiority"];

    /// <summary>Which direction of the response is better (non-inferiority).</summary>
    public static readonly string[] Betters = ["higher", "lower"];

    public override string Name => "equivalence";

    public override string PrimaryTest => "equivalence";

    public override IReadOnlyList<string> OwnKeys { get; } = ["of", "factor", "pair", "reference", "margin", "goal", "better"];

    public override bool AnalysesAnovaBlock => true;

    public override bool NeedsRows => false;

    /// <summary>
    /// The bound keys. <see cref="Pair"/> (two levels, difference first minus second) or
    /// <see cref="Reference"/> (each other level minus it) is set, never both. The margins are in
    /// response units: both for equivalence (<see cref="MarginLow"/> &lt; 0 &lt; <see cref="MarginHigh"/>);
    /// for non-inferiority only the side that matters (higher is better: <see cref="MarginLow"/> = −margin;
    /// lower is better: <see cref="MarginHigh"/> = +margin).
    /// </summary>
    public sealed record Options(
        string? Factor,
        SourceLocation FactorLocation,
        IReadOnlyList<YScalar>? Pair,
        YScalar? Reference,
        double? MarginLow,
        double? MarginHigh,
        bool NonInferiority,
        string? Better);

    public override object? BindOptions(KeyReader keys, BindContext context, DiagnosticBag diagnostics)
    {
        var before = diagnostics.Items.Count;
        var f = keys.Scalar("factor");
        AnovaFactorChoice.Check(context.AnovaOf(keys, Name, new DiagnosticBag()), f, keys, context, diagnostics);
        var goal = keys.Choice("goal", Goals) ?? "equivalence";
        var nonInferiority = goal == "non-inferiority";
        var better = keys.Choice("better", Betters);
        var reference = keys.Scalar("reference");
        IReadOnlyList<YScalar>? pair = null;
        if (keys.Has("pair"))
        {
            pair = keys.ScalarList("pair");
            if (pair is not null && (pair.Count != 2 || string.Equals(pair[0].Value, pair[1].Value, StringComparison.Ordinal)))
            {
                diagnostics.EquivalencePair(keys.Node("pair")!.Location, pair.Count);
                pair = null;
            }
        }

        if (keys.Has("pair") && reference is not null)
        {
            diagnostics.EquivalenceComparisonChoice(reference.Location, both: true);
        }
        else if (!keys.Has("pair") && !keys.Has("reference") && !keys.Misspelt.Contains("pair") && !keys.Misspelt.Contains("reference"))
        {
            diagnostics.EquivalenceComparisonChoice(context.Syntax.Location, both: false);
        }

        if (keys.Scalar("better") is { } b && !nonInferiority && better is not null)
        {
            diagnostics.EquivalenceBetterWithoutGoal(b.Location);
        }
        else if (nonInferiority && !keys.Has("better") && !keys.Misspelt.Contains("better"))
        {
            diagnostics.MissingKey(context.Syntax.Location, "better", "a non-inferiority test (which direction of the response is better: 'higher' or 'lower')");
        }

        var (low, high) = Margin(keys, context, nonInferiority, better, diagnostics);
        if (!(context.Header.Alpha < 0.5))
        {
            diagnostics.EquivalenceAlphaTooLarge(context.Syntax.Location, context.Header.Alpha);
        }

        if (diagnostics.Items.Count > before)
        {
            return null;
        }

        return new Options(f?.Value, f?.Location ?? context.Syntax.Location, pair, reference, low, high, nonInferiority, better);
    }

    private static (double? Low, double? High) Margin(KeyReader keys, BindContext context, bool nonInferiority, string? better, DiagnosticBag diagnostics)
    {
        var node = keys.Node("margin");
        switch (node)
        {
            case null or YScalar { IsNull: true }:
                if (!keys.Misspelt.Contains("margin"))
                {
                    diagnostics.MissingKey(context.Syntax.Location, "margin", "an equivalence block (the largest difference, in the response's units, that still counts as no practical difference)");
                }

                return (null, null);
            case YScalar s:
                if (!Number(s.Value, out var m) || !(m > 0))
                {
                    diagnostics.EquivalenceMargin(s.Location, s.Value, nonInferiority);
                    return (null, null);
                }

                return nonInferiority
                    ? better == "lower" ? (null, m) : (-m, null)
                    : (-m, m);
            case YSequence seq:
                if (nonInferiority)
                {
                    diagnostics.EquivalenceMargin(seq.Location, "a list", nonInferiority);
                    return (null, null);
                }

                if (seq.Items is not [YScalar a, YScalar c] || !Number(a.Value, out var lo) || !Number(c.Value, out var hi) || !(lo < 0) || !(hi > 0))
                {
                    diagnostics.EquivalenceMargin(seq.Location, "this list", nonInferiority);
                    return (null, null);
                }

                return (lo, hi);
            default:
                diagnostics.EquivalenceMargin(node.Location, "a mapping", nonInferiority);
                return (null, null);
        }
    }

    private static bool Number(string text, out double value) =>
        double.TryParse(text, NumberStyles.Float, CultureInfo.InvariantCulture, out value) && double.IsFinite(value) && !NumberRules.IsUnderflow(text, value);
}
