using System.Globalization;
using StudyPress.Binding;
using StudyPress.Binding.Kinds;
using StudyPress.Diagnostics;
using StudyPress.Statistics;
using StudyPress.Statistics.FollowUp;
using StudyPress.Statistics.Repeated;

namespace StudyPress.Evaluation.Kinds;

/// <summary>One mean of a repeated block's table: its levels, the error terms its SE rests on, and its manifest values (mean, se, df, ci_low, ci_high).</summary>
public sealed record RepeatedMeansRow(IReadOnlyList<string> Levels, IReadOnlyList<string> Errors, IReadOnlyDictionary<string, ResultValue> Values);

/// <summary>One pairwise difference (levels joined by " / "), with its error terms and manifest values (diff, se, statistic, df, p, p_adj, ci_low, ci_high).</summary>
public sealed record RepeatedMeansPair(string A, string B, Quantity PAdjusted, IReadOnlyList<string> Errors, IReadOnlyDictionary<string, ResultValue> Values);

/// <summary>The means of one term of a repeated block, its pairs (with <c>compare</c>) and the interactions it averages over.</summary>
public sealed record RepeatedMeansTable(
    string Term,
    IReadOnlyList<string> Factors,
    IReadOnlyList<string> Labels,
    IReadOnlyList<RepeatedMeansRow> Rows,
    IReadOnlyList<RepeatedMeansPair> Pairs,
    IReadOnlyList<InteractionHint> Interactions);

/// <summary>The simple effect at one level of the <c>at</c> factor: its F test (df, f, df_den, p), error terms and pairs.</summary>
public sealed record RepeatedMeansSimpleEffect(string AtLevel, IReadOnlyList<string> Errors, IReadOnlyDictionary<string, ResultValue> Test, IReadOnlyList<RepeatedMeansPair> Pairs);

/// <summary>What a <c>marginal-means</c> block over a repeated block computed: the route, its tables, pairs and simple effects.</summary>
public sealed class RepeatedMarginalMeansOutcome(BoundBlock block) : BlockOutcome(block)
{
    /// <summary>The fit the means come from.</summary>
    public RepeatedMeansRoute Route { get; init; }

    /// <summary>Why the repeated block fitted its mixed model (None: classical route only).</summary>
    public MixedRouteReason MixedReason { get; init; }

    /// <summary>Subjects whose measurements the means use, and the incomplete ones among them (REML) or left out (classical).</summary>
    public int Subjects { get; init; }

    public int Incomplete { get; init; }

    public string SubjectLabel { get; init; } = string.Empty;

    /// <summary>The repeated block's id.</summary>
    public string Of { get; init; } = string.Empty;

    public IReadOnlyList<RepeatedMeansTable> Tables { get; init; } = [];

    public IReadOnlyList<RepeatedMeansSimpleEffect> SimpleEffects { get; init; } = [];

    public string? ByLabel { get; init; }

    public string? AtLabel { get; init; }

    /// <summary>The <c>compare</c> adjustment (holm, bonferroni, tukey) or null; the manifest test of the pairs.</summary>
    public string? Compare { get; init; }

    public string PairTest { get; init; } = TestName.Holm;

    /// <summary>The factors' display labels, by name (subject included).</summary>
    public IReadOnlyDictionary<string, string> Labels { get; init; } = new Dictionary<string, string>(StringComparer.Ordinal).AsReadOnly();
}

public sealed partial class MarginalMeansEvaluator
{
    /// <summary>Most means whose pairs <c>compare</c> lists (100 means make 4950 pairs).</summary>
    public const int MaxCompared = 100;

    private static BlockOutcome EvaluateRepeated(EvaluationContext context, BoundBlock block, MarginalMeansKind.Options options, DiagnosticBag diagnostics)
    {
        var of = block.Of!.Id;
        if (context.Outcomes.GetValueOrDefault(of) is not RepeatedOutcome { Design: { } design } rep)
        {
            // The repeated block failed (its own message says why).
            return new BlockOutcome(block);
        }

        var at = options.At?.Location ?? (options.By.Count > 0 ? options.By[0].Location : block.Location);
        RepeatedCellMeans? cm;
        if (rep.MixedFit is { } mixed)
        {
            cm = RepeatedCellMeans.FromReml(design, mixed, out var issue);
            if (cm is null)
            {
                diagnostics.MarginalMeansRepeatedUnavailable(at, of, issue!);
                return new BlockOutcome(block);
            }
        }
        else if (rep.ClassicalFit is { } classical)
        {
            cm = RepeatedCellMeans.FromStrata(classical);
        }
        else
        {
            diagnostics.MarginalMeansRepeatedUnavailable(at, of, rep.MixedNotFitted ?? "the repeated block fitted neither route");
            return new BlockOutcome(block);
        }

        var pairTest = options.Compare switch
        {
            "bonferroni" => TestName.Bonferroni,
            "tukey" => TestName.TukeyHsd,
            _ => TestName.Holm,
        };
        var adjustment = options.Compare switch
        {
            "bonferroni" => RepeatedPairAdjustment.Bonferroni,
            "tukey" => RepeatedPairAdjustment.Tukey,
            _ => RepeatedPairAdjustment.Holm,
        };
        var byLabel = options.At is null ? null : rep.Within.Concat(rep.Between).First(f => f.Name == options.By[0].Name).Label;
        var atLabel = options.At is null ? null : rep.Within.Concat(rep.Between).First(f => f.Name == options.At.Name).Label;
        var labels = new Dictionary<string, string>(StringComparer.Ordinal);
        foreach (var (name, label) in rep.Within.Concat(rep.Between))
        {
            labels[name] = label;
        }

        var tables = new List<RepeatedMeansTable>();
        var simpleEffects = new List<RepeatedMeansSimpleEffect>();

        // Design order: between factors, then within factors (the block's order).
        var order = design.Between.Concat(design.Within).ToList();
        List<string> Ordered(IEnumerable<string> names)
        {
            var set = names.ToHashSet(StringComparer.Ordinal);
            return [.. order.Where(set.Contains)];
        }

        List<List<string>> terms = options.At is { } atFactor
            ? [Ordered([options.By[0].Name, atFactor.Name])]
            : options.By.Count > 0 ? [Ordered(options.By.Select(b => b.Name))] : [.. order.Select(f => new List<string> { f })];
        var alpha = context.Header.Alpha;
        var inputs = context.Inputs(block);
        string Label(IEnumerable<string> names) => string.Join(" × ", names.Select(n => labels.GetValueOrDefault(n, n)));
        foreach (var term in terms)
        {
            var count = term.Aggregate(1L, (c, f) => c * cm.LevelsOf(f).Count);
            if (count > MaxMeans)
            {
                diagnostics.MarginalMeansTooMany(at, Label(term), count, MaxMeans);
                return new BlockOutcome(block);
            }

            if (options.Compare is { } compare && options.At is null)
            {
                if (count > MaxCompared)
                {
                    diagnostics.MarginalMeansCompareNotDefensible(options.CompareLocation, compare, "the means of " + Label(term), string.Create(CultureInfo.InvariantCulture, $"they are {count}, which make {count * (count - 1) / 2} pairs, and at most {MaxCompared} means are compared pairwise; name fewer factors in 'by', or use 'at' for the simple effects within each level of one factor"));
                    return new BlockOutcome(block);
                }

                if (compare == "tukey" && !cm.SingleError(term))
                {
                    diagnostics.MarginalMeansTukeyNotOneError(options.CompareLocation, "the means of " + Label(term), cm.Route == RepeatedMeansRoute.Reml);
                    return new BlockOutcome(block);
                }
            }

            var termName = string.Join(":", term);
            var rows = new List<RepeatedMeansRow>();
            foreach (var m in cm.Means(term, alpha))
            {
                var e = m.Estimate;
                var mean = new MarginalMean(m.Levels, Quantity.Of(e.Value), e.Se, e.Df, e.CiLow, e.CiHigh, Quantity.Of(e.Value), e.CiLow, e.CiHigh);
                rows.Add(new RepeatedMeansRow(m.Levels, e.Errors, RecordMean(context, block, termName, mean, inputs)));
            }

            var pairs = new List<RepeatedMeansPair>();
            if (options.Compare is not null && options.At is null)
            {
                foreach (var p in cm.Pairs(term, adjustment, alpha))
                {
                    pairs.Add(RecordPair(context, block, pairTest, termName, null, p, inputs));
                }
            }

            var hints = options.At is null ? RepeatedInteractions(rep, cm.Route, term, alpha, labels) : [];
            tables.Add(new RepeatedMeansTable(termName, term, [.. term.Select(f => labels[f])], rows.AsReadOnly(), pairs.AsReadOnly(), hints));
        }

        if (options.At is { } a)
        {
            var by = options.By[0].Name;
            if (options.Compare == "tukey" && !SimpleSingleError(cm, by, a.Name))
            {
                diagnostics.MarginalMeansTukeyNotOneError(options.CompareLocation, $"the pairs of {byLabel} within each level of {atLabel}", cm.Route == RepeatedMeansRoute.Reml);
                return new BlockOutcome(block);
            }

            foreach (var se in cm.SimpleEffects(by, a.Name, adjustment, alpha))
            {
                var level = a.Name + " " + se.AtLevel;
                var test = new Dictionary<string, ResultValue>(StringComparer.Ordinal);
                void Put(string stat, Quantity q) => test[stat] = context.Results.Add(block.Id, TestName.SimpleEffects, by, level, null, stat, q, inputs);
                Put(Stat.Df, Quantity.Of(se.Df));
                Put(Stat.F, se.F);
                Put(Stat.DfDen, se.DfDen);
                Put(Stat.P, se.P);
                var pairs = se.Pairs.Select(p => RecordPair(context, block, pairTest, by, level, p, inputs)).ToList().AsReadOnly();
                simpleEffects.Add(new RepeatedMeansSimpleEffect(se.AtLevel, se.Errors, test.AsReadOnly(), pairs));
            }
        }

        return new RepeatedMarginalMeansOutcome(block)
        {
            Route = cm.Route,
            MixedReason = rep.MixedReason,
            Subjects = cm.Route == RepeatedMeansRoute.Reml
                ? (int)(rep.MixedCounts?[Stat.N].Value.Value ?? 0)
                : (int)(rep.Subjects?[Stat.N].Value.Value ?? 0),
            Incomplete = cm.Route == RepeatedMeansRoute.Reml ? rep.MixedKeptIncomplete : rep.Dropped.Count,
            SubjectLabel = rep.SubjectLabel,
            Of = of,
            Compare = options.Compare,
            PairTest = pairTest,
            ByLabel = byLabel,
            AtLabel = atLabel,
            Labels = labels.AsReadOnly(),
            Tables = tables.AsReadOnly(),
            SimpleEffects = simpleEffects.AsReadOnly(),
        };
    }

    /// <summary>Whether the pairs of <paramref name="by"/> at every level of <paramref name="at"/> rest on one error (Tukey's condition).</summary>
    private static bool SimpleSingleError(RepeatedCellMeans cm, string by, string at)
    {
        if (cm.Route != RepeatedMeansRoute.Strata)
        {
            return false;
        }

        var errors = new HashSet<string>(StringComparer.Ordinal);
        foreach (var se in cm.SimpleEffects(by, at, RepeatedPairAdjustment.Holm, 0.05))
        {
            foreach (var p in se.Pairs)
            {
                if (p.Difference.Errors.Count != 1)
                {
                    return false;
                }

                errors.Add(p.Difference.Errors[0]);
            }
        }

        return errors.Count == 1;
    }

    private static RepeatedMeansPair RecordPair(EvaluationContext context, BoundBlock block, string test, string term, string? level, RepeatedPair p, IReadOnlyList<string> inputs)
    {
        var a = string.Join(" / ", p.LevelsA);
        var b = string.Join(" / ", p.LevelsB);
        string[] pair = [a, b];
        var v = new Dictionary<string, ResultValue>(StringComparer.Ordinal);
        void P(string stat, Quantity q) => v[stat] = context.Results.Add(block.Id, test, term, level, pair, stat, q, inputs);
        P(Stat.Diff, Quantity.Of(p.Difference.Value));
        P(Stat.Se, p.Difference.Se);
        P(Stat.Statistic, p.T);
        P(Stat.Df, p.Difference.Df);
        P(Stat.P, p.P);
        P(Stat.PAdj, p.PAdjusted);
        P(Stat.CiLow, p.Difference.CiLow);
        P(Stat.CiHigh, p.Difference.CiHigh);
        return new RepeatedMeansPair(a, b, p.PAdjusted, p.Difference.Errors, v);
    }

    /// <summary>
    /// Interactions the repeated block found at α that involve a factor of <paramref name="term"/>
    /// and a factor outside it, from the route the means come from (for a within term of the
    /// classical table, the p-value its sphericity reading selects).
    /// </summary>
    private static List<InteractionHint> RepeatedInteractions(RepeatedOutcome rep, RepeatedMeansRoute route, IReadOnlyList<string> term, double alpha, IReadOnlyDictionary<string, string> labels)
    {
        var rows = new List<(string Term, IReadOnlyList<string> Factors, ResultValue? P)>();
        if (route == RepeatedMeansRoute.Reml)
        {
            foreach (var m in rep.Mixed ?? [])
            {
                rows.Add((m.Term, m.Term.Split(':'), m.Values.GetValueOrDefault(Stat.P)));
            }
        }
        else
        {
            foreach (var r in (rep.Rows ?? []).Where(r => r.IsEffect))
            {
                var reading = r.IsWithin ? rep.Readings.FirstOrDefault(x => x.Term == r.Stratum) : null;
                var stat = reading?.Correction switch
                {
                    SphericityCorrection.GreenhouseGeisser => Stat.PGg,
                    SphericityCorrection.HuynhFeldt => Stat.PHf,
                    _ => Stat.P,
                };
                rows.Add((r.Term, r.Term.Split(':'), r.Values.GetValueOrDefault(stat) ?? r.Values.GetValueOrDefault(Stat.P)));
            }
        }

        return Hints(rows, term, alpha, labels);
    }
}
