using System.Globalization;
using System.Runtime.CompilerServices;
using StudyPress.Diagnostics;
using StudyPress.Statistics.FollowUp;
using StudyPress.Syntax;

namespace StudyPress.Binding.Kinds;

/// <summary>
/// <c>contrasts</c>: planned comparisons of one factor's level means in an anova block, either
/// named contrasts given as coefficients over the levels (<c>compare</c>) or orthogonal polynomial
/// trends over numeric levels (<c>trend</c>, with <c>values</c> when the level names are not
/// numbers), each with its estimate, standard error, t test, interval and a family-wise adjustment
/// (<c>adjust</c>). The error term is the anova's residual, or on a declared layout the error of
/// the factor's own F test.
/// </summary>
public sealed class ContrastsKind : BlockKind
{
    /// <summary>Registers this part of the kind (see DEVELOPERS.md, "Adding an analysis kind").</summary>
    [ModuleInitializer]
    internal static void Register() => BlockKinds.Register(new ContrastsKind());

    /// <summary>The most named contrasts one block holds (their orthogonality is reported pair by pair).</summary>
    public const int MaxContrasts = 100;

    /// <summary>The most levels a trend is fitted over (k − 1 orthogonal polynomials are built, at O(k³)).</summary>
    public const int MaxTrendLevels = 100;

    /// <summary>The adjustments <c>adjust</c> accepts.</summary>
    public static readonly string[] Adjustments = ["holm", "bonferroni", "scheffe", "none"];

    public override string Name => "contrasts";

    public override string PrimaryTest => "contrast";

    public override bool NeedsRows => false;

    public override IReadOnlyList<string> OwnKeys { get; } = ["of", "factor", "compare", "trend", "values", "adjust"];

    public override bool AnalysesAnovaBlock => true;

    /// <summary>One coefficient of a named contrast, where its level was written.</summary>
    public sealed record Coefficient(string Level, SourceLocation At, double Value);

    /// <summary>A named contrast: its coefficients over the levels it lists (unlisted levels have 0).</summary>
    public sealed record NamedContrast(string Name, SourceLocation At, IReadOnlyList<Coefficient> Coefficients);

    /// <summary>A level's number for a trend, where it was written.</summary>
    public sealed record LevelValue(string Level, SourceLocation At, double Value);

    /// <summary>
    /// The block's options: the factor (null: the anova's only factor), the named contrasts
    /// (null when the block asks for trends), the highest trend degree (0: every degree the levels
    /// allow; null: no trend), the levels' numbers (null: read from the level names), and the
    /// adjustment (null: Holm when several contrasts, none for one).
    /// </summary>
    public sealed record Options(
        string? Factor,
        SourceLocation FactorLocation,
        IReadOnlyList<NamedContrast>? Compare,
        int? TrendDegree,
        SourceLocation TrendLocation,
        IReadOnlyList<LevelValue>? Values,
        SourceLocation ValuesLocation,
        string? Adjust);

    /// <summary>The engine's adjustment for the block, given how many contrasts it holds.</summary>
    public static ContrastAdjustment AdjustmentFor(string? adjust, int count) => adjust switch
    {
        "holm" => ContrastAdjustment.Holm,
        "bonferroni" => ContrastAdjustment.Bonferroni,
        "scheffe" => ContrastAdjustment.Scheffe,
        "none" => ContrastAdjustment.None,
        _ => count > 1 ? ContrastAdjustment.Holm : ContrastAdjustment.None,
    };

    public override object? BindOptions(KeyReader keys, BindContext context, DiagnosticBag diagnostics)
    {
        var f = keys.Scalar("factor");
        AnovaFactorChoice.Check(context.AnovaOf(keys, Name, new DiagnosticBag()), f, keys, context, diagnostics);
        var adjust = keys.Choice("adjust", Adjustments);
        var hasCompare = keys.Has("compare");
        var hasTrend = keys.Has("trend");
        var hasValues = keys.Has("values");
        if (!hasCompare && !hasTrend)
        {
            if (!keys.Misspelt.Contains("compare") && !keys.Misspelt.Contains("trend"))
            {
                diagnostics.ContrastsOneFamily(hasValues ? keys.KeyLocation("values") : context.Syntax.Location);
            }

            return null;
        }

        if (hasCompare && (hasTrend || hasValues))
        {
            diagnostics.ContrastsOneFamily(keys.KeyLocation(hasTrend ? "trend" : "values"));
            return null;
        }

        IReadOnlyList<NamedContrast>? compare = null;
        int? degree = null;
        IReadOnlyList<LevelValue>? values = null;
        if (hasCompare)
        {
            compare = ReadCompare(keys.Node("compare")!, diagnostics);
            if (compare is null)
            {
                return null;
            }
        }
        else
        {
            degree = ReadTrend(keys, diagnostics);
            if (degree is null)
            {
                return null;
            }

            if (hasValues)
            {
                values = ReadValues(keys.Node("values")!, diagnostics);
                if (values is null)
                {
                    return null;
                }
            }
        }

        return new Options(
            f?.Value,
            f?.Location ?? context.Syntax.Location,
            compare,
            degree,
            hasTrend ? keys.Scalar("trend")?.Location ?? keys.KeyLocation("trend") : context.Syntax.Location,
            values,
            hasValues ? keys.KeyLocation("values") : context.Syntax.Location,
            adjust);
    }

    /// <summary><c>trend: true</c> (0: every degree) or a whole number from 1.</summary>
    private static int? ReadTrend(KeyReader keys, DiagnosticBag diagnostics)
    {
        var s = keys.Scalar("trend");
        if (s is null)
        {
            return null;
        }

        if (s.Value is "true" or "True" or "yes")
        {
            return 0;
        }

        if (int.TryParse(s.Value, NumberStyles.None, CultureInfo.InvariantCulture, out var d) && d >= 1)
        {
            return d;
        }

        diagnostics.TrendDegreeText(s.Location, s.Value);
        return null;
    }

    private static List<NamedContrast>? ReadCompare(YNode node, DiagnosticBag diagnostics)
    {
        if (node is not YMapping map || map.Entries.Count == 0)
        {
            diagnostics.ExpectedMapping(node.Location, "'compare' (each contrast's name, then a map of level to coefficient)");
            return null;
        }

        if (map.Entries.Count > MaxContrasts)
        {
            diagnostics.TooManyContrasts(map.Entries[MaxContrasts].Key.Location, map.Entries.Count, MaxContrasts);
            return null;
        }

        var list = new List<NamedContrast>();
        var ok = true;
        foreach (var e in map.Entries)
        {
            if (e.Value is not YMapping levels || levels.Entries.Count == 0)
            {
                diagnostics.ExpectedMapping(e.Value.Location, $"contrast '{e.Key.Value}' (each level's coefficient, e.g. 'A: 1, B: 1, C: -2')");
                ok = false;
                continue;
            }

            var coefficients = new List<Coefficient>();
            decimal exactSum = 0;
            var exact = true;
            var good = true;
            foreach (var c in levels.Entries)
            {
                if (c.Value is not YScalar s || s.IsNull)
                {
                    diagnostics.ExpectedScalar(c.Value.Location, $"the coefficient of level '{c.Key.Value}'");
                    good = false;
                    continue;
                }

                if (!double.TryParse(s.Value, NumberStyles.Float, CultureInfo.InvariantCulture, out var v) || !double.IsFinite(v) || NumberRules.IsUnderflow(s.Value, v))
                {
                    diagnostics.NotANumber(s.Location, c.Key.Value, s.Value);
                    good = false;
                    continue;
                }

                if (exact && decimal.TryParse(s.Value, NumberStyles.Float, CultureInfo.InvariantCulture, out var dv))
                {
                    exactSum += dv;
                }
                else
                {
                    exact = false;
                }

                coefficients.Add(new Coefficient(c.Key.Value, c.Key.Location, v));
            }

            if (!good)
            {
                ok = false;
                continue;
            }

            var values = coefficients.Select(c => c.Value).ToList();
            if (values.All(v => v == 0))
            {
                diagnostics.ContrastCoefficientRange(e.Key.Location, e.Key.Value, "0");
                ok = false;
                continue;
            }

            // Sizes far from 1 would overflow or vanish in Σ c²/n; they carry no meaning beyond the ratios.
            if (levels.Entries.Zip(values).FirstOrDefault(x => x.Second != 0 && !(Math.Abs(x.Second) >= 1e-6 && Math.Abs(x.Second) <= 1e6)) is { First: { } bad })
            {
                diagnostics.ContrastCoefficientRange(bad.Value.Location, e.Key.Value, ((YScalar)bad.Value).Value);
                ok = false;
                continue;
            }

            if (!Contrasts.SumsToZero(values))
            {
                var sum = exact ? exactSum.ToString(CultureInfo.InvariantCulture) : values.Sum().ToString("R", CultureInfo.InvariantCulture);
                diagnostics.ContrastSumNotZero(e.Key.Location, e.Key.Value, sum);
                ok = false;
                continue;
            }

            list.Add(new NamedContrast(e.Key.Value, e.Key.Location, coefficients));
        }

        return ok ? list : null;
    }

    private static List<LevelValue>? ReadValues(YNode node, DiagnosticBag diagnostics)
    {
        if (node is not YMapping map || map.Entries.Count == 0)
        {
            diagnostics.ExpectedMapping(node.Location, "'values' (each level's number, e.g. 'low: 10, mid: 20, high: 40')");
            return null;
        }

        var list = new List<LevelValue>();
        var ok = true;
        foreach (var e in map.Entries)
        {
            if (e.Value is not YScalar s || s.IsNull)
            {
                diagnostics.ExpectedScalar(e.Value.Location, $"the number of level '{e.Key.Value}'");
                ok = false;
                continue;
            }

            if (!double.TryParse(s.Value, NumberStyles.Float, CultureInfo.InvariantCulture, out var v) || !double.IsFinite(v) || NumberRules.IsUnderflow(s.Value, v))
            {
                diagnostics.NotANumber(s.Location, e.Key.Value, s.Value);
                ok = false;
                continue;
            }

            list.Add(new LevelValue(e.Key.Value, e.Key.Location, v));
        }

        return ok ? list : null;
    }
}
