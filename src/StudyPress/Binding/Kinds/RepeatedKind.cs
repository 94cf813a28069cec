using System.Runtime.CompilerServices;
using StudyPress.Diagnostics;
using StudyPress.Syntax;

namespace StudyPress.Binding.Kinds;

/// <summary>
/// <c>repeated</c>: repeated-measures analysis of variance. Each subject (the unit measured
/// repeatedly: a plant, a patient, a machine) is measured at every combination of the within-subject
/// factors and belongs to one combination of the between-subject factors. The classical univariate
/// route (complete subjects; Mauchly's test, Greenhouse–Geisser and Huynh–Feldt corrections, chosen
/// by a rule) and the mixed-model route (REML, Satterthwaite df; keeps incomplete subjects), paired
/// comparisons of a within factor's levels (and the same comparisons from the mixed model's
/// marginal means when it is fitted) and simple effects at each level of a between factor.
/// </summary>
public sealed class RepeatedKind : BlockKind
{
    /// <summary>Registers this part of the kind (see DEVELOPERS.md, "Adding an analysis kind").</summary>
    [ModuleInitializer]
    internal static void Register() => BlockKinds.Register(new RepeatedKind());

    /// <summary>Values of <c>correction</c>: the rule, or one correction for every within term.</summary>
    public static readonly string[] Corrections = ["auto", "gg", "hf", "none"];

    /// <summary>Values of <c>fit</c>.</summary>
    public static readonly string[] Fits = ["auto", "classical", "reml"];

    /// <summary>Values of <c>adjust</c> (the paired comparisons' family-wise adjustment).</summary>
    public static readonly string[] Adjustments = ["holm", "bonferroni"];

    /// <summary>Values of <c>simple</c>: simple effects when the interaction is significant, always, or never.</summary>
    public static readonly string[] SimpleChoices = ["auto", "always", "never"];

    /// <summary>Values of <c>labels</c>: subject labels unique across the study, or numbered again within each group.</summary>
    public static readonly string[] LabelChoices = ["unique", "per-group"];

    public override string Name => "repeated";

    public override string PrimaryTest => "anova";

    public override IReadOnlyList<string> OwnKeys { get; } = ["subject", "within", "between", "correction", "fit", "compare", "adjust", "simple", "labels", "columns", "ranks"];

    /// <summary>Values of <c>ranks</c>: the Friedman test when the residuals depart from normality, always, or never.</summary>
    public static readonly string[] RanksChoices = ["auto", "always", "never"];

    /// <summary>The block's factors come from <c>subject</c>, <c>within</c> and <c>between</c>, not from <c>factors</c>.</summary>
    public override bool NeedsFactors => false;

    public override bool NamesOwnFactors => true;

    /// <summary>One factor named by the block, with where it is named.</summary>
    public sealed record Named(FactorSpec Spec, SourceLocation Location);

    /// <summary>One measurement column of wide data and the level of the within factor it holds.</summary>
    public sealed record WideColumn(string Column, string Level, SourceLocation Location);

    /// <summary>The bound keys of a <c>repeated</c> block; <paramref name="Wide"/> lists the measurement columns of wide data (null: long data).</summary>
    public sealed record Options(
        Named Subject,
        IReadOnlyList<Named> Within,
        SourceLocation WithinLocation,
        IReadOnlyList<Named> Between,
        string Correction,
        string Fit,
        SourceLocation FitLocation,
        Named? Compare,
        string Adjust,
        string Simple,
        bool LabelsPerGroup,
        IReadOnlyList<WideColumn>? Wide = null,
        string Ranks = "auto")
    {
        /// <summary>Every factor column the block reads: subject, within (long data only), between.</summary>
        public IEnumerable<FactorSpec> Factors => new[] { Subject }.Concat(Wide is null ? Within : []).Concat(Between).Select(n => n.Spec);

        /// <summary>Where the user names <paramref name="factor"/> in the block (its entry in subject, within or between).</summary>
        public SourceLocation Where(string factor, SourceLocation fallback) =>
            new[] { Subject }.Concat(Within).Concat(Between).FirstOrDefault(n => n.Spec.Name == factor)?.Location ?? fallback;
    }

    public override IEnumerable<FactorSpec> FactorsRead(object? options) =>
        options is Options o ? o.Factors : [];

    public override IEnumerable<(string Column, SourceLocation At)> NumericRead(object? options) =>
        options is Options { Wide: { } wide } ? wide.Select(w => (w.Column, w.Location)) : [];

    public override bool LoadsResponse(object? options) => options is not Options { Wide: not null };

    public override object? BindOptions(KeyReader keys, BindContext context, DiagnosticBag diagnostics)
    {
        var before = diagnostics.Items.Count;
        var names = context.Header.Factors.Select(x => x.Name).ToList();
        if (keys.Has("factors"))
        {
            diagnostics.RepeatedFactorsKey(keys.KeyLocation("factors"));
        }

        Named? Resolve(YScalar v)
        {
            if (context.Header.Factor(v.Value) is { } spec)
            {
                return new Named(spec, v.Location);
            }

            if (context.ReportedNames.Add("factor:" + v.Value))
            {
                diagnostics.UnknownFactor(v.Location, v.Value, DiagnosticBag.Nearest(v.Value, names));
            }
            else
            {
                context.FailQuietly();
            }

            return null;
        }

        List<Named> List(string key)
        {
            var list = new List<Named>();
            foreach (var v in keys.ScalarList(key) ?? [])
            {
                if (Resolve(v) is { } n)
                {
                    list.Add(n);
                }
            }

            return list;
        }

        var subject = keys.Scalar("subject") is { } s ? Resolve(s) : null;
        var wide = keys.Has("columns") ? WideColumns(keys, diagnostics) : null;
        List<Named> within;
        if (keys.Has("columns"))
        {
            // Wide data: 'within' names the factor the measurement columns form, not a column.
            within = [];
            var withinNames = keys.ScalarList("within") ?? [];
            if (withinNames.Count > 1)
            {
                diagnostics.RepeatedWideOneWithin(withinNames[1].Location);
            }
            else if (withinNames.Count == 1)
            {
                var w = withinNames[0];
                var header = context.Header.Factor(w.Value);
                within.Add(new Named(new FactorSpec(w.Value, w.Value, null, [], header?.Label, w.Location), w.Location));
            }
        }
        else
        {
            within = List("within");
        }

        var between = List("between");
        var correction = keys.Choice("correction", Corrections) ?? "auto";
        var fit = keys.Choice("fit", Fits) ?? "auto";
        var adjust = keys.Choice("adjust", Adjustments) ?? "holm";
        var simple = keys.Choice("simple", SimpleChoices) ?? "auto";
        var labels = keys.Choice("labels", LabelChoices) ?? "unique";
        var ranks = keys.Choice("ranks", RanksChoices) ?? "auto";
        var compareNode = keys.Scalar("compare");
        if (diagnostics.Items.Count > before || context.FailedQuietly)
        {
            return null;
        }

        if (subject is null)
        {
            diagnostics.MissingKey(context.Syntax.Location, "subject", "a repeated block (the factor naming the unit measured repeatedly)");
            return null;
        }

        if (within.Count == 0)
        {
            diagnostics.MissingKey(context.Syntax.Location, "within", "a repeated block (the factor or factors whose levels each subject is measured under)");
            return null;
        }

        // Subject, within and between name distinct factors: report the second naming, where it is written.
        var seen = new Dictionary<string, string>(StringComparer.Ordinal) { [subject.Spec.Name] = "subject" };
        foreach (var (named, role) in within.Select(w => (w, "within")).Concat(between.Select(b => (b, "between"))))
        {
            if (!seen.TryAdd(named.Spec.Name, role))
            {
                diagnostics.RepeatedFactorTwice(named.Location, named.Spec.Name, seen[named.Spec.Name], role);
                return null;
            }
        }

        Named? compare = null;
        if (compareNode is not null)
        {
            compare = within.FirstOrDefault(w => w.Spec.Name == compareNode.Value) is { } w ? w with { Location = compareNode.Location } : null;
            if (compare is null)
            {
                diagnostics.RepeatedCompareNotWithin(compareNode.Location, compareNode.Value, DiagnosticBag.Nearest(compareNode.Value, within.Select(x => x.Spec.Name)));
                return null;
            }
        }

        // The Friedman test ranks each subject's measurements across the levels of one within factor:
        // it has no form for between-subject groups or crossed within factors, and it needs the
        // classical route's complete subjects.
        if (ranks == "always" && (within.Count > 1 || between.Count > 0 || fit == "reml"))
        {
            diagnostics.RepeatedRanksLayout(keys.KeyLocation("ranks"), fit == "reml"
                ? "'fit: reml' fits no classical route, whose complete subjects the rank test uses"
                : within.Count > 1 ? "the block has more than one within factor" : "the block has between-subject factors");
            return null;
        }

        if (compare is null && keys.Has("adjust"))
        {
            diagnostics.RepeatedAdjustWithoutCompare(keys.KeyLocation("adjust"));
            return null;
        }

        return new Options(
            subject,
            within,
            keys.KeyLocation("within"),
            between,
            correction,
            fit,
            keys.Has("fit") ? keys.KeyLocation("fit") : context.Syntax.Location,
            compare,
            adjust,
            simple,
            labels == "per-group",
            wide,
            ranks);
    }

    /// <summary>The <c>columns</c> key: a list of columns (each column's name is its level) or a mapping column → level.</summary>
    private static List<WideColumn>? WideColumns(KeyReader keys, DiagnosticBag diagnostics)
    {
        var list = new List<WideColumn>();
        switch (keys.Node("columns"))
        {
            case YMapping map:
                foreach (var e in map.Entries)
                {
                    if (e.Value is YScalar v)
                    {
                        list.Add(new WideColumn(e.Key.Value, v.Value, e.Key.Location));
                    }
                    else
                    {
                        diagnostics.ExpectedScalar(e.Value.Location, "the level of column '" + e.Key.Value + "' in 'columns'");
                        return null;
                    }
                }

                break;
            default:
                foreach (var c in keys.ScalarList("columns") ?? [])
                {
                    list.Add(new WideColumn(c.Value, c.Value, c.Location));
                }

                break;
        }

        var columns = new HashSet<string>(StringComparer.Ordinal);
        var levels = new HashSet<string>(StringComparer.Ordinal);
        foreach (var c in list)
        {
            if (!columns.Add(c.Column) || !levels.Add(c.Level))
            {
                diagnostics.RepeatedWideColumns(c.Location, string.Create(System.Globalization.CultureInfo.InvariantCulture, $"'{c.Column}' repeats a column or a level already listed"));
                return null;
            }
        }

        if (list.Count < 2)
        {
            diagnostics.RepeatedWideColumns(keys.KeyLocation("columns"), "list at least two measurement columns, one per level of the within factor");
            return null;
        }

        return list;
    }
}
