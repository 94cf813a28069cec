using System.Runtime.CompilerServices;
using StudyPress.Diagnostics;
using StudyPress.Statistics.Designs;
using StudyPress.Syntax;

namespace StudyPress.Binding.Kinds;

/// <summary>
/// <c>marginal-means</c>: estimated marginal means of an anova block's model — each factor's levels
/// (or the cells of a crossing) averaged with equal weight over the other factors, with standard
/// errors and intervals on the error the anova tested them against — and, with <c>at</c>, the
/// simple effects of one factor at each level of another: the means, an F test within each level
/// and Holm-adjusted pairwise differences.
/// </summary>
public sealed class MarginalMeansKind : BlockKind
{
    /// <summary>Registers this part of the kind (see DEVELOPERS.md, "Adding an analysis kind").</summary>
    [ModuleInitializer]
    internal static void Register() => BlockKinds.Register(new MarginalMeansKind());

    public override string Name => "marginal-means";

    public override string PrimaryTest => "emmeans";

    public override IReadOnlyList<string> OwnKeys { get; } = ["of", "by", "at", "compare"];

    public override bool AnalysesAnovaBlock => true;

    /// <summary>'of' may name a repeated block: the means of its within- and between-subject factors.</summary>
    public override bool AnalysesRepeatedBlock => true;

    /// <summary>Values of <c>compare</c> (pairwise comparisons of a repeated block's means, and the adjustment).</summary>
    public static readonly string[] Comparisons = ["holm", "bonferroni", "tukey"];

    /// <summary>A factor named in <c>by</c> or <c>at</c>, with where it is written.</summary>
    public sealed record Named(string Name, SourceLocation Location);

    /// <summary>
    /// The bound keys. <paramref name="By"/>: the factors whose crossing's means are wanted (empty:
    /// each factor of the anova on its own); <paramref name="At"/>: the factor at whose levels the
    /// simple effects of the single <c>by</c> factor are taken (null: none).
    /// </summary>
    public sealed record Options(IReadOnlyList<Named> By, SourceLocation ByLocation, Named? At)
    {
        /// <summary>The <c>compare</c> value (holm, bonferroni, tukey; null: no pairwise comparisons) and where it is written.</summary>
        public string? Compare { get; init; }

        public SourceLocation CompareLocation { get; init; }

        /// <summary>True when 'of' names a repeated block of wide data: its measurements are columns, and there is no response column to load.</summary>
        public bool OfWideData { get; init; }
    }

    public override bool LoadsResponse(object? options) => options is not Options { OfWideData: true };

    public override object? BindOptions(KeyReader keys, BindContext context, DiagnosticBag diagnostics)
    {
        var before = diagnostics.Items.Count;

        // The anova block analysed (its own mistakes are reported by the binder, not here).
        var anova = context.AnovaOf(keys, Name, new DiagnosticBag());
        var repeated = anova?.Kind is RepeatedKind ? anova.OptionsOf<RepeatedKind.Options>() : null;
        var factors = repeated is not null
            ? [.. repeated.Between.Concat(repeated.Within).Select(f => f.Spec.Name)]
            : anova?.Factors.Select(f => f.Name).ToList();
        var ofId = anova?.Id ?? string.Empty;
        var compare = keys.Choice("compare", Comparisons);
        if (compare is not null && anova is not null && repeated is null)
        {
            diagnostics.MarginalMeansCompareNeedsRepeated(keys.KeyLocation("compare"), ofId);
        }

        Named? Check(YScalar v)
        {
            if (factors is null)
            {
                return new Named(v.Value, v.Location);
            }

            if (repeated is not null)
            {
                // A repeated block: its within- and between-subject factors, never its subject.
                if (v.Value == repeated.Subject.Spec.Name)
                {
                    diagnostics.MarginalMeansOfSubject(v.Location, v.Value, ofId, factors);
                    return null;
                }

                if (!factors.Contains(v.Value))
                {
                    diagnostics.FactorNotInRepeated(v.Location, v.Value, ofId, DiagnosticBag.Nearest(v.Value, factors));
                    return null;
                }

                return new Named(v.Value, v.Location);
            }

            if (!factors.Contains(v.Value))
            {
                diagnostics.FactorNotInAnova(v.Location, v.Value, ofId, DiagnosticBag.Nearest(v.Value, factors));
                return null;
            }

            var spec = anova!.Factors.First(f => f.Name == v.Value);
            if (spec.Layout.Role != FactorRole.Treatment)
            {
                diagnostics.MarginalMeansOfLayoutFactor(v.Location, v.Value, spec.Layout.Role == FactorRole.Block ? "a block" : "a random factor");
                return null;
            }

            return new Named(v.Value, v.Location);
        }

        var by = new List<Named>();
        foreach (var v in keys.ScalarList("by") ?? [])
        {
            if (by.Exists(b => b.Name == v.Value))
            {
                diagnostics.DuplicateInList(v.Location, "by", v.Value);
                continue;
            }

            if (Check(v) is { } n)
            {
                by.Add(n);
            }
        }

        var byLocation = keys.Has("by") ? keys.KeyLocation("by") : context.Syntax.Location;
        Named? at = null;
        if (keys.Scalar("at") is { } atNode)
        {
            at = Check(atNode);
            if (at is not null && by.Exists(b => b.Name == at.Name))
            {
                diagnostics.MarginalMeansAtIsBy(atNode.Location, at.Name);
                at = null;
            }
            else if (at is not null && by.Count > 1)
            {
                diagnostics.MarginalMeansAtWithCrossing(by[1].Location, at.Name);
                at = null;
            }
            else if (at is not null && by.Count == 0 && factors is not null && diagnostics.Items.Count == before)
            {
                // Without 'by', the simple effects are those of the one other treatment factor.
                var others = repeated is not null
                    ? [.. factors.Where(f => f != at.Name)]
                    : anova!.Factors.Where(f => f.Name != at.Name && f.Layout.Role == FactorRole.Treatment).Select(f => f.Name).ToList();
                if (others.Count != 1)
                {
                    diagnostics.MarginalMeansAtNeedsBy(atNode.Location, at.Name, ofId, repeated is null ? "anova" : "repeated");
                    at = null;
                }
                else
                {
                    by.Add(new Named(others[0], atNode.Location));
                }
            }

            if (at is not null && anova?.Options is AnovaKind.Options { Interaction: false })
            {
                diagnostics.MarginalMeansAtWithoutInteraction(atNode.Location, at.Name, ofId);
                at = null;
            }
        }

        return diagnostics.Items.Count > before
            ? null
            : new Options(by, byLocation, at) { Compare = compare, CompareLocation = keys.Has("compare") ? keys.KeyLocation("compare") : context.Syntax.Location, OfWideData = repeated?.Wide is not null };
    }
}
