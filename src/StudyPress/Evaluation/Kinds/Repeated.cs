using System.Runtime.CompilerServices;
using StudyPress.Binding;
using StudyPress.Binding.Kinds;
using StudyPress.Charts;
using StudyPress.Diagnostics;
using StudyPress.Statistics;
using StudyPress.Statistics.Assumptions;
using StudyPress.Statistics.Designs;
using StudyPress.Statistics.Nonparametric;
using StudyPress.Statistics.PostHoc;
using StudyPress.Statistics.Repeated;

namespace StudyPress.Evaluation.Kinds;

/// <summary>One row of the classical repeated-measures table with its manifest values.</summary>
/// <param name="Values">ss, df, ms; for effects f, df_den, p, partial_eta2, generalized_eta2 and, within, epsilon_gg, epsilon_hf, p_gg, p_hf.</param>
public sealed record RepeatedRowValues(string Term, bool IsEffect, bool IsWithin, string Stratum, string? ErrorTerm, IReadOnlyDictionary<string, ResultValue> Values);

/// <summary>
/// Which test of a within-subject term is read: the rule's decision (<see cref="Rule"/>, for
/// <c>correction: auto</c>) or the correction the block asked for (<see cref="Rule"/> null).
/// </summary>
public sealed record SphericityReading(string Term, int Levels, SphericityCorrection Correction, SphericityDecision? Rule);

/// <summary>Mauchly's test of one within term (more than two levels): w, chi2, df, p.</summary>
public sealed record MauchlyValues(string Term, IReadOnlyDictionary<string, ResultValue> Values);

/// <summary>One effect of the mixed-model route: df, f, df_den, p; <paramref name="Agrees"/> says whether the classical route gives the same test.</summary>
public sealed record MixedRowValues(string Term, IReadOnlyDictionary<string, ResultValue> Values, bool? Agrees);

/// <summary>A paired comparison: diff, se, statistic, p, p_adj, ci_low, ci_high (simultaneous, Bonferroni level).</summary>
public sealed record RepeatedPairValues(string A, string B, IReadOnlyDictionary<string, ResultValue> Values);

/// <summary>The simple effect of a within factor at one level of a between factor (null values with the reason when it cannot be analysed).</summary>
public sealed record SimpleEffectValues(string Within, string Between, string Level, int Subjects, IReadOnlyDictionary<string, ResultValue>? Values, SphericityReading? Reading, string? NotAnalysed);

/// <summary>Why the mixed-model route was fitted.</summary>
public enum MixedRouteReason
{
    /// <summary>Not fitted.</summary>
    None,

    /// <summary><c>fit: reml</c>.</summary>
    Asked,

    /// <summary><c>fit: auto</c> and the classical route dropped incomplete subjects.</summary>
    SubjectsDropped,

    /// <summary><c>fit: auto</c> and the classical route could not be fitted at all.</summary>
    ClassicalImpossible,
}

/// <summary>What a <c>repeated</c> block computed: manifest values and the facts its text needs.</summary>
/// <summary>Whether the Friedman test of a <c>repeated</c> block is shown, and why.</summary>
public enum RankRouteReason
{
    /// <summary>No classical route, or <c>ranks: never</c>.</summary>
    None,

    /// <summary><c>ranks: auto</c>; Shapiro–Wilk did not reject normal residuals.</summary>
    NormalityHeld,

    /// <summary><c>ranks: auto</c>; Shapiro–Wilk rejected normal residuals, so the Friedman test is shown.</summary>
    NormalityFailed,

    /// <summary><c>ranks: auto</c>; Shapiro–Wilk rejected normal residuals, but the layout has no Friedman form (several within factors, or between-subject groups).</summary>
    NormalityFailedNoRankForm,

    /// <summary><c>ranks: auto</c>; normality could not be tested (too many residuals, or the test is not defined).</summary>
    NormalityNotTested,

    /// <summary><c>ranks: always</c>.</summary>
    Asked,
}

public sealed class RepeatedOutcome(BoundBlock block) : BlockOutcome(block)
{
    /// <summary>Shapiro–Wilk of the classical route's residuals (<c>w</c>, <c>p</c>); null without the classical route or with more than 5000 residuals.</summary>
    public IReadOnlyDictionary<string, ResultValue>? Normality { get; init; }

    /// <summary>How many residuals the normality check saw (subjects × cells).</summary>
    public int NormalityN { get; init; }

    /// <summary>Whether the Friedman test is shown, and why.</summary>
    public RankRouteReason RankReason { get; init; }

    /// <summary>The Friedman test over the within factor's levels (<c>chi2</c>, <c>df</c>, <c>p</c>, <c>kendall_w</c>, the Iman–Davenport <c>f_iman_davenport</c>, <c>df1_iman_davenport</c>, <c>df2_iman_davenport</c>, <c>p_iman_davenport</c>, <c>n_blocks</c>, <c>blocks_dropped</c>), when shown.</summary>
    public IReadOnlyDictionary<string, ResultValue>? Friedman { get; init; }

    /// <summary>Mean rank of each level of the within factor, with the Friedman test.</summary>
    public IReadOnlyList<(string Level, ResultValue MeanRank)> MeanRanks { get; init; } = [];

    /// <summary>Conover's comparisons of mean ranks (Holm), with the Friedman test and <c>compare</c>.</summary>
    public IReadOnlyList<RepeatedPairValues> RankPairs { get; init; } = [];

    public string SubjectLabel { get; init; } = string.Empty;

    /// <summary>The subject factor's name (terms such as <c>B:subject(A)</c> use it).</summary>
    public string SubjectName { get; init; } = string.Empty;

    /// <summary>Within factors (name, display label), in the block's order.</summary>
    public IReadOnlyList<(string Name, string Label)> Within { get; init; } = [];

    /// <summary>Between factors (name, display label), in the block's order.</summary>
    public IReadOnlyList<(string Name, string Label)> Between { get; init; } = [];

    /// <summary>The requested correction (auto, gg, hf, none).</summary>
    public string CorrectionAsked { get; init; } = "auto";

    /// <summary>The classical table (null when that route was not fitted).</summary>
    public IReadOnlyList<RepeatedRowValues>? Rows { get; init; }

    /// <summary>The classical total row: ss, df.</summary>
    public IReadOnlyDictionary<string, ResultValue>? Total { get; init; }

    public IReadOnlyList<MauchlyValues> Mauchly { get; init; } = [];

    /// <summary>The test read for each within term (in the table's order).</summary>
    public IReadOnlyList<SphericityReading> Readings { get; init; } = [];

    /// <summary>subjects: n (analysed by the classical route), subjects_dropped.</summary>
    public IReadOnlyDictionary<string, ResultValue>? Subjects { get; init; }

    /// <summary>Subjects the classical route left out, with the cells they miss.</summary>
    public IReadOnlyList<DroppedSubject> Dropped { get; init; } = [];

    /// <summary>Subject × cell combinations measured more than once (their mean was analysed).</summary>
    public int ReplicatedCells { get; init; }

    /// <summary>Rows left out because the response or a factor was missing.</summary>
    public int DroppedMissing { get; init; }

    public MixedRouteReason MixedReason { get; init; }

    /// <summary>The mixed route's tests (null when not fitted).</summary>
    public IReadOnlyList<MixedRowValues>? Mixed { get; init; }

    /// <summary>anova_reml: n (subjects kept), n_total (measurements used).</summary>
    public IReadOnlyDictionary<string, ResultValue>? MixedCounts { get; init; }

    /// <summary>Incomplete subjects the mixed route kept.</summary>
    public int MixedKeptIncomplete { get; init; }

    /// <summary>True when a REML variance estimate is on the boundary (zero).</summary>
    public bool MixedSingular { get; init; }

    /// <summary>The mixed route could not be fitted in <c>fit: auto</c> (the reason), or null.</summary>
    public string? MixedNotFitted { get; init; }

    /// <summary>The within factor compared (label) and its comparisons; null when none asked.</summary>
    public string? CompareLabel { get; init; }

    public string PairTest { get; init; } = TestName.Holm;

    public IReadOnlyList<RepeatedPairValues> Pairs { get; init; } = [];

    /// <summary>
    /// Comparisons of the <c>compare</c> factor's levels from the mixed model's marginal means
    /// (REML, Satterthwaite df; diff, se, statistic, df, p, p_adj, ci_low, ci_high), whenever the
    /// mixed model was fitted: alone with <c>fit: reml</c>, beside <see cref="Pairs"/> when
    /// <c>fit: auto</c> fitted both routes.
    /// </summary>
    public IReadOnlyList<RepeatedPairValues> RemlPairs { get; init; } = [];

    /// <summary>The manifest test of <see cref="RemlPairs"/>: <c>holm_reml</c> or <c>bonferroni_reml</c>.</summary>
    public string RemlPairTest { get; init; } = TestName.HolmReml;

    /// <summary>Why the mixed model's marginal means, and so its comparisons, could not be estimated (the engine's reason), or null.</summary>
    public string? RemlPairsNotComputed { get; init; }

    /// <summary>Simple effects, when computed; <see cref="SimpleAsked"/> says whether asked for (else: interaction significant).</summary>
    public IReadOnlyList<SimpleEffectValues> Simple { get; init; } = [];

    public bool SimpleAsked { get; init; }

    /// <summary>Number of levels per within factor (block order).</summary>
    public IReadOnlyList<int> WithinLevelCounts { get; init; } = [];

    /// <summary>The design analysed, and the fits of its two routes (null when not fitted): a marginal-means block reads them.</summary>
    public RepeatedMeasuresDesign? Design { get; init; }

    public RepeatedMeasuresResult? ClassicalFit { get; init; }

    public RepeatedMixedResult? MixedFit { get; init; }
}

/// <summary>Evaluates <c>repeated</c> blocks: classical route, mixed-model route, comparisons, simple effects, figures.</summary>
public sealed class RepeatedEvaluator : KindEvaluator
{
    /// <summary>Registers this part of the kind (see DEVELOPERS.md, "Adding an analysis kind").</summary>
    [ModuleInitializer]
    internal static void Register() => KindEvaluators.Register(new RepeatedEvaluator());

    public override string Kind => "repeated";

    public override BlockOutcome Evaluate(EvaluationContext context, BoundBlock block, DiagnosticBag diagnostics)
    {
        var o = block.OptionsOf<RepeatedKind.Options>();
        var all = o.Factors.ToList();
        var kw = o.Within.Count;
        var kb = o.Between.Count;
        BlockData? data;
        string[] Labels(BlockFactor f) => [.. f.Codes.Select(c => f.Levels[c])];
        double[] values;
        string[] subjectCol;
        List<IReadOnlyList<string>> withinCols;
        List<IReadOnlyList<string>> betweenCols;
        int droppedMissing;
        if (o.Wide is { } wide)
        {
            // Wide data: one row per subject, one column per level of the within factor; each
            // present cell is a measurement, an empty cell a missing one.
            data = context.Select(NoResponse(block, all), diagnostics, requireResponse: false);
            if (data is null)
            {
                return new BlockOutcome(block);
            }

            var columns = wide.Select(w => data.Dataset.Numeric[w.Column]).ToArray();
            var v = new List<double>();
            var subj = new List<string>();
            var lev = new List<string>();
            var btw = Enumerable.Range(0, kb).Select(_ => new List<string>()).ToList();
            droppedMissing = data.DroppedMissing;
            for (var i = 0; i < data.Rows.Length; i++)
            {
                var r = data.Rows[i];
                for (var j = 0; j < columns.Length; j++)
                {
                    if (columns[j].IsMissing(r))
                    {
                        droppedMissing++;
                        continue;
                    }

                    v.Add(columns[j].Values[r]);
                    subj.Add(data.Factors[0].Levels[data.Factors[0].Codes[i]]);
                    lev.Add(wide[j].Level);
                    for (var b = 0; b < kb; b++)
                    {
                        btw[b].Add(data.Factors[1 + b].Levels[data.Factors[1 + b].Codes[i]]);
                    }
                }
            }

            values = [.. v];
            subjectCol = [.. subj];
            withinCols = [lev];
            betweenCols = [.. btw.Select(c => (IReadOnlyList<string>)c)];
        }
        else
        {
            data = context.Select(block.WithFactors(all, block.Location), diagnostics);
            if (data is null)
            {
                return new BlockOutcome(block);
            }

            values = data.Values;
            subjectCol = Labels(data.Factors[0]);
            withinCols = [.. Enumerable.Range(1, kw).Select(i => (IReadOnlyList<string>)Labels(data.Factors[i]))];
            betweenCols = [.. Enumerable.Range(1 + kw, kb).Select(i => (IReadOnlyList<string>)Labels(data.Factors[i]))];
            droppedMissing = data.DroppedMissing;
        }
        var design = new RepeatedMeasuresDesign(
            o.Subject.Spec.Name,
            [.. o.Within.Select(w => w.Spec.Name)],
            [.. o.Between.Select(b => b.Spec.Name)],
            o.LabelsPerGroup ? SubjectLabels.NumberedWithinGroups : SubjectLabels.UniqueAcrossGroups);
        var rm = new RepeatedMeasuresData(values, subjectCol, withinCols, betweenCols);

        // A within factor that no subject is measured under twice is a between factor declared as within.
        for (var f = 0; f < kw && o.Wide is null; f++)
        {
            if (data.Factors[1 + f].Levels.Count > 1 && !VariesWithinSomeSubject(data.Factors[0].Codes, data.Factors[1 + f].Codes, betweenCols, o.LabelsPerGroup))
            {
                diagnostics.RepeatedWithinDoesNotVary(o.Within[f].Location, o.Within[f].Spec.Name, o.Subject.Spec.Name);
                return new BlockOutcome(block);
            }
        }

        var completeness = RepeatedMeasuresAnova.Completeness(design, rm, out var layoutIssue);
        if (layoutIssue is not null || completeness is null)
        {
            Report(layoutIssue!, o, block, diagnostics);
            return new BlockOutcome(block);
        }

        var alpha = context.Header.Alpha;
        var classicalIssue = o.Fit == "reml" ? null : RepeatedMeasuresAnova.Check(design, rm);
        var (complete, dropped) = completeness.Value;
        var reason = MixedRouteReason.None;
        if (o.Fit == "reml")
        {
            reason = MixedRouteReason.Asked;
        }
        else if (classicalIssue is not null)
        {
            if (o.Fit == "auto" && dropped.Count > 0 && RepeatedMeasuresMixedModel.Check(design, rm) is null)
            {
                reason = MixedRouteReason.ClassicalImpossible;
            }
            else if (dropped.Count > 0 && classicalIssue.Kind is DesignIssueKind.TooFewObservations or DesignIssueKind.MissingCombination)
            {
                diagnostics.RepeatedTooFewComplete(o.Subject.Location, o.Subject.Spec.Name, complete.Count, dropped.Count, classicalIssue.Message);
                return new BlockOutcome(block);
            }
            else
            {
                Report(classicalIssue, o, block, diagnostics);
                return new BlockOutcome(block);
            }
        }
        else if (o.Fit == "auto" && dropped.Count > 0)
        {
            reason = MixedRouteReason.SubjectsDropped;
        }

        // The mixed model's own check (its dense-column count after absorbing the subject terms), once.
        var mixedCheck = reason != MixedRouteReason.None ? RepeatedMeasuresMixedModel.Check(design, rm) : null;
        var mixedTooLarge = mixedCheck is { Kind: DesignIssueKind.TooLarge } ? mixedCheck.Message : null;
        if (reason is MixedRouteReason.Asked or MixedRouteReason.ClassicalImpossible && mixedTooLarge is not null)
        {
            diagnostics.RepeatedMixedModelProblem(o.FitLocation, mixedTooLarge);
            return new BlockOutcome(block);
        }

        if (reason == MixedRouteReason.Asked && mixedCheck is { } mixedIssue)
        {
            diagnostics.RepeatedMixedModelProblem(o.FitLocation, mixedIssue.Message);
            return new BlockOutcome(block);
        }

        var inputs = context.Inputs(block);
        ResultValue Add(string test, string? term, string? level, IReadOnlyList<string>? pair, string stat, Quantity q) =>
            context.Results.Add(block.Id, test, term, level, pair, stat, q, inputs);

        RepeatedMeasuresResult? fit = null;
        List<RepeatedRowValues>? rows = null;
        Dictionary<string, ResultValue>? total = null;
        var mauchly = new List<MauchlyValues>();
        var readings = new List<SphericityReading>();
        Dictionary<string, ResultValue>? subjects = null;
        if (reason is not (MixedRouteReason.Asked or MixedRouteReason.ClassicalImpossible))
        {
            fit = RepeatedMeasuresAnova.Fit(design, rm);
            foreach (var s in fit.Sphericity)
            {
                readings.Add(Reading(s, o.Correction, alpha));
            }

            rows = [];
            foreach (var r in fit.Rows)
            {
                var v = new Dictionary<string, ResultValue>(StringComparer.Ordinal);
                void Put(string stat, Quantity q) => v[stat] = Add(TestName.Anova, r.Term, null, null, stat, q);
                Put(Stat.Ss, Quantity.Of(r.SumOfSquares));
                Put(Stat.Df, Quantity.Of(r.Df));
                Put(Stat.Ms, r.MeanSquare);
                if (r.Kind == RepeatedRowKind.Effect)
                {
                    Put(Stat.F, r.F);
                    Put(Stat.DfDen, Quantity.Of(fit.Row(r.ErrorTerm!).Df));
                    Put(Stat.P, r.P);
                    Put(Stat.PartialEta2, r.PartialEtaSquared);
                    Put(Stat.GeneralizedEta2, r.GeneralizedEtaSquared);
                    if (r.GreenhouseGeisser is { } gg && r.HuynhFeldt is { } hf)
                    {
                        Put(Stat.EpsilonGg, gg.Epsilon);
                        Put(Stat.EpsilonHf, hf.Epsilon);
                        Put(Stat.PGg, gg.P);
                        Put(Stat.PHf, hf.P);
                    }
                }

                rows.Add(new RepeatedRowValues(r.Term, r.Kind == RepeatedRowKind.Effect, r.IsWithin, r.Stratum, r.ErrorTerm, v));
            }

            total = new Dictionary<string, ResultValue>(StringComparer.Ordinal)
            {
                [Stat.Ss] = Add(TestName.Anova, "total", null, null, Stat.Ss, Quantity.Of(fit.TotalSumOfSquares)),
                [Stat.Df] = Add(TestName.Anova, "total", null, null, Stat.Df, Quantity.Of(fit.TotalDf)),
            };
            foreach (var s in fit.Sphericity.Where(s => s.Contrasts > 1))
            {
                mauchly.Add(new MauchlyValues(s.Term, new Dictionary<string, ResultValue>(StringComparer.Ordinal)
                {
                    [Stat.W] = Add(TestName.Mauchly, s.Term, null, null, Stat.W, s.W),
                    [Stat.Chi2] = Add(TestName.Mauchly, s.Term, null, null, Stat.Chi2, s.ChiSquare),
                    [Stat.Df] = Add(TestName.Mauchly, s.Term, null, null, Stat.Df, Quantity.Of(s.ChiSquareDf)),
                    [Stat.P] = Add(TestName.Mauchly, s.Term, null, null, Stat.P, s.P),
                }));
            }
        }

        subjects = new Dictionary<string, ResultValue>(StringComparer.Ordinal)
        {
            [Stat.N] = Add(TestName.Subjects, null, null, null, Stat.N, Quantity.Of(complete.Count)),
            [Stat.SubjectsDropped] = Add(TestName.Subjects, null, null, null, Stat.SubjectsDropped, Quantity.Of(dropped.Count)),
        };

        // Mixed-model route.
        List<MixedRowValues>? mixed = null;
        Dictionary<string, ResultValue>? mixedCounts = null;
        var keptIncomplete = 0;
        RepeatedMixedResult? mixedFit = null;
        var singular = false;
        string? mixedNotFitted = null;
        if (reason != MixedRouteReason.None)
        {
            if (mixedTooLarge is not null)
            {
                mixedNotFitted = mixedTooLarge;
            }
            else if (mixedCheck is { } issue)
            {
                mixedNotFitted = issue.Message;
            }
            else
            {
                var m = RepeatedMeasuresMixedModel.Fit(design, rm);
                mixedFit = m;
                var agree = fit is null ? null : RepeatedMeasuresMixedModel.Compare(fit, m.Reml).ToDictionary(c => c.Term, c => c.Agree, StringComparer.Ordinal);
                mixed = [];
                foreach (var t in m.Reml.Tests)
                {
                    var v = new Dictionary<string, ResultValue>(StringComparer.Ordinal)
                    {
                        [Stat.Df] = Add(TestName.AnovaReml, t.Term, null, null, Stat.Df, Quantity.Of(t.NumeratorDf)),
                        [Stat.F] = Add(TestName.AnovaReml, t.Term, null, null, Stat.F, t.F),
                        [Stat.DfDen] = Add(TestName.AnovaReml, t.Term, null, null, Stat.DfDen, t.DfDenominator),
                        [Stat.P] = Add(TestName.AnovaReml, t.Term, null, null, Stat.P, t.P),
                    };
                    mixed.Add(new MixedRowValues(t.Term, v, agree is not null && agree.TryGetValue(t.Term, out var a) ? a : null));
                }

                mixedCounts = new Dictionary<string, ResultValue>(StringComparer.Ordinal)
                {
                    [Stat.N] = Add(TestName.AnovaReml, null, null, null, Stat.N, Quantity.Of(m.Design.Subjects)),
                    [Stat.NTotal] = Add(TestName.AnovaReml, null, null, null, Stat.NTotal, Quantity.Of(m.Design.Measurements)),
                };
                keptIncomplete = m.Design.IncompleteSubjects.Count;
                singular = m.Reml.Singular;
            }
        }

        // Paired comparisons of one within factor.
        var pairs = new List<RepeatedPairValues>();
        var pairTest = o.Adjust == "bonferroni" ? TestName.Bonferroni : TestName.Holm;
        if (o.Compare is { } compare && fit is not null)
        {
            var result = RepeatedComparisons.Pairwise(fit, compare.Spec.Name, o.Adjust == "bonferroni" ? PValueAdjustmentMethod.Bonferroni : PValueAdjustmentMethod.Holm, alpha);
            foreach (var c in result.Comparisons)
            {
                string[] pair = [c.LevelA, c.LevelB];
                var term = compare.Spec.Name;
                pairs.Add(new RepeatedPairValues(c.LevelA, c.LevelB, new Dictionary<string, ResultValue>(StringComparer.Ordinal)
                {
                    [Stat.Diff] = Add(pairTest, term, null, pair, Stat.Diff, Quantity.Of(c.Estimate)),
                    [Stat.Se] = Add(pairTest, term, null, pair, Stat.Se, c.Se),
                    [Stat.Statistic] = Add(pairTest, term, null, pair, Stat.Statistic, c.T),
                    [Stat.Df] = Add(pairTest, term, null, pair, Stat.Df, Quantity.Of(c.Df)),
                    [Stat.P] = Add(pairTest, term, null, pair, Stat.P, c.P),
                    [Stat.PAdj] = Add(pairTest, term, null, pair, Stat.PAdj, c.PAdjusted),
                    [Stat.CiLow] = Add(pairTest, term, null, pair, Stat.CiLow, c.SimultaneousCiLow),
                    [Stat.CiHigh] = Add(pairTest, term, null, pair, Stat.CiHigh, c.SimultaneousCiHigh),
                }));
            }
        }

        // Comparisons of the same levels from the mixed model's marginal means (incomplete subjects kept).
        var remlPairs = new List<RepeatedPairValues>();
        var remlPairTest = o.Adjust == "bonferroni" ? TestName.BonferroniReml : TestName.HolmReml;
        string? remlPairsNotComputed = null;
        if (o.Compare is { } remlCompare && mixedFit is not null)
        {
            var cm = RepeatedCellMeans.FromReml(design, mixedFit, out var cmIssue);
            if (cm is null)
            {
                remlPairsNotComputed = cmIssue;
            }
            else
            {
                var term = remlCompare.Spec.Name;
                foreach (var c in cm.Pairs([term], o.Adjust == "bonferroni" ? RepeatedPairAdjustment.Bonferroni : RepeatedPairAdjustment.Holm, alpha))
                {
                    var (a, b) = (c.LevelsA[0], c.LevelsB[0]);
                    string[] pair = [a, b];
                    remlPairs.Add(new RepeatedPairValues(a, b, new Dictionary<string, ResultValue>(StringComparer.Ordinal)
                    {
                        [Stat.Diff] = Add(remlPairTest, term, null, pair, Stat.Diff, Quantity.Of(c.Difference.Value)),
                        [Stat.Se] = Add(remlPairTest, term, null, pair, Stat.Se, c.Difference.Se),
                        [Stat.Statistic] = Add(remlPairTest, term, null, pair, Stat.Statistic, c.T),
                        [Stat.Df] = Add(remlPairTest, term, null, pair, Stat.Df, c.Difference.Df),
                        [Stat.P] = Add(remlPairTest, term, null, pair, Stat.P, c.P),
                        [Stat.PAdj] = Add(remlPairTest, term, null, pair, Stat.PAdj, c.PAdjusted),
                        [Stat.CiLow] = Add(remlPairTest, term, null, pair, Stat.CiLow, c.Difference.CiLow),
                        [Stat.CiHigh] = Add(remlPairTest, term, null, pair, Stat.CiHigh, c.Difference.CiHigh),
                    }));
                }
            }
        }

        // Simple effects of each within factor at each level of each between factor.
        var simple = new List<SimpleEffectValues>();
        if (fit is not null && o.Simple != "never")
        {
            foreach (var w in o.Within)
            {
                foreach (var b in o.Between)
                {
                    var term = b.Spec.Name + ":" + w.Spec.Name;
                    var row = fit.Rows.FirstOrDefault(r => r.Kind == RepeatedRowKind.Effect && r.Factors.Count == 2 && r.Factors.Contains(w.Spec.Name) && r.Factors.Contains(b.Spec.Name));
                    if (row is null)
                    {
                        continue;
                    }

                    var reading = readings.First(x => x.Term == row.Stratum);
                    var p = ReadP(row, reading.Correction);
                    if (o.Simple == "auto" && !(p.IsDefined && p.Value < alpha))
                    {
                        continue;
                    }

                    foreach (var se in RepeatedComparisons.SimpleEffects(fit, w.Spec.Name, b.Spec.Name))
                    {
                        if (se.Anova is null || se.Row is not { } sr)
                        {
                            simple.Add(new SimpleEffectValues(w.Spec.Name, b.Spec.Name, se.Level, se.Subjects, null, null, se.Issue?.Message ?? "not analysed"));
                            continue;
                        }

                        var sReading = Reading(se.Anova.SphericityOf(sr.Stratum), o.Correction, alpha);
                        var level = b.Spec.Name + " " + se.Level;
                        var v = new Dictionary<string, ResultValue>(StringComparer.Ordinal);
                        void Put(string stat, Quantity q) => v[stat] = Add(TestName.SimpleEffects, w.Spec.Name, level, null, stat, q);
                        Put(Stat.Df, Quantity.Of(sr.Df));
                        Put(Stat.F, sr.F);
                        Put(Stat.DfDen, Quantity.Of(se.Anova.Row(sr.ErrorTerm!).Df));
                        Put(Stat.P, sr.P);
                        if (sr.GreenhouseGeisser is { } gg && sr.HuynhFeldt is { } hf)
                        {
                            Put(Stat.EpsilonGg, gg.Epsilon);
                            Put(Stat.EpsilonHf, hf.Epsilon);
                            Put(Stat.PGg, gg.P);
                            Put(Stat.PHf, hf.P);
                        }

                        Put(Stat.GeneralizedEta2, sr.GeneralizedEtaSquared);
                        simple.Add(new SimpleEffectValues(w.Spec.Name, b.Spec.Name, se.Level, se.Subjects, v, sReading, null));
                    }
                }
            }
        }

        var ranks = fit is null ? null : RankRoute(fit, o, alpha, Add);

        var outcome = new RepeatedOutcome(block)
        {
            Normality = ranks?.Normality,
            NormalityN = ranks?.NormalityN ?? 0,
            RankReason = ranks?.Reason ?? RankRouteReason.None,
            Friedman = ranks?.Friedman,
            MeanRanks = ranks?.MeanRanks ?? [],
            RankPairs = ranks?.Pairs ?? [],
            SubjectLabel = o.Subject.Spec.Display,
            SubjectName = o.Subject.Spec.Name,
            Within = [.. o.Within.Select(w => (w.Spec.Name, w.Spec.Display))],
            Between = [.. o.Between.Select(b => (b.Spec.Name, b.Spec.Display))],
            CorrectionAsked = o.Correction,
            Rows = rows,
            Total = total,
            Mauchly = mauchly,
            Readings = readings,
            Subjects = subjects,
            Dropped = dropped,
            ReplicatedCells = fit?.ReplicatedCells ?? 0,
            DroppedMissing = droppedMissing,
            MixedReason = reason,
            Mixed = mixed,
            MixedCounts = mixedCounts,
            MixedKeptIncomplete = keptIncomplete,
            MixedSingular = singular,
            MixedNotFitted = mixedNotFitted,
            CompareLabel = o.Compare?.Spec.Display,
            PairTest = pairTest,
            Pairs = pairs,
            RemlPairs = remlPairs,
            RemlPairTest = remlPairTest,
            RemlPairsNotComputed = remlPairsNotComputed,
            Simple = simple,
            SimpleAsked = o.Simple == "always",
            WithinLevelCounts = [.. withinCols.Select(c => c.Distinct(StringComparer.Ordinal).Count())],
            Design = design,
            ClassicalFit = fit,
            MixedFit = mixedFit,
            Figures = fit is not null && context.Header.Report.Figures ? FiguresOf(fit, block.Response is null ? data.ResponseName : data.ResponseLabel, o) : [],
        };

        return outcome;
    }

    private sealed record RankValues(
        IReadOnlyDictionary<string, ResultValue>? Normality,
        int NormalityN,
        RankRouteReason Reason,
        IReadOnlyDictionary<string, ResultValue>? Friedman,
        IReadOnlyList<(string Level, ResultValue MeanRank)> MeanRanks,
        IReadOnlyList<RepeatedPairValues> Pairs);

    private delegate ResultValue AddValue(string test, string? term, string? level, IReadOnlyList<string>? pair, string stat, Quantity q);

    /// <summary>
    /// The residuals' normality check and the rank route. The residuals are those of the classical
    /// route's model: each complete subject's cell mean minus its subject mean, minus its group's cell
    /// mean, plus its group's grand mean (subjects within groups and every group × cell mean fitted).
    /// With <c>ranks: auto</c>, the Friedman test (subjects as blocks, the within factor's levels as
    /// treatments, on the cell means the classical route analyses) is shown when Shapiro–Wilk rejects
    /// normality at α and the layout has one within factor and no between factor.
    /// </summary>
    private static RankValues? RankRoute(RepeatedMeasuresResult fit, RepeatedKind.Options o, double alpha, AddValue add)
    {
        if (o.Ranks == "never")
        {
            return null;
        }

        var subjects = fit.CellMeans.Count;
        var cells = fit.Cells;
        var residuals = new double[subjects * cells];
        var groups = new Dictionary<string, List<int>>(StringComparer.Ordinal);
        for (var i = 0; i < subjects; i++)
        {
            var key = string.Join('\u001f', fit.SubjectBetween[i]);
            if (!groups.TryGetValue(key, out var members))
            {
                groups[key] = members = [];
            }

            members.Add(i);
        }

        foreach (var members in groups.Values)
        {
            var cellMean = new double[cells];
            foreach (var i in members)
            {
                for (var c = 0; c < cells; c++)
                {
                    cellMean[c] += fit.CellMeans[i][c] / members.Count;
                }
            }

            var grand = cellMean.Average();
            foreach (var i in members)
            {
                var subjectMean = fit.CellMeans[i].Average();
                for (var c = 0; c < cells; c++)
                {
                    residuals[(i * cells) + c] = fit.CellMeans[i][c] - subjectMean - cellMean[c] + grand;
                }
            }
        }

        IReadOnlyDictionary<string, ResultValue>? normality = null;
        var reason = o.Ranks == "always" ? RankRouteReason.Asked : RankRouteReason.NormalityNotTested;
        if (residuals.Length <= ShapiroWilk.MaximumN)
        {
            var sw = ShapiroWilk.Test(residuals);
            normality = new Dictionary<string, ResultValue>(StringComparer.Ordinal)
            {
                [Stat.W] = add(TestName.ShapiroWilk, "residual", null, null, Stat.W, sw.W),
                [Stat.P] = add(TestName.ShapiroWilk, "residual", null, null, Stat.P, sw.P),
            };
            if (o.Ranks == "auto" && sw.P.IsDefined)
            {
                reason = sw.P.Value >= alpha ? RankRouteReason.NormalityHeld
                    : o.Within.Count == 1 && o.Between.Count == 0 ? RankRouteReason.NormalityFailed
                    : RankRouteReason.NormalityFailedNoRankForm;
            }
        }

        if (reason is not (RankRouteReason.Asked or RankRouteReason.NormalityFailed))
        {
            return new RankValues(normality, residuals.Length, reason, null, [], []);
        }

        var levels = fit.WithinLevels[0];
        var blocks = fit.CellMeans.Select(m => m.ToArray()).ToList();
        var result = Statistics.Nonparametric.Friedman.Test(blocks);
        var term = o.Within[0].Spec.Name;
        var friedman = new Dictionary<string, ResultValue>(StringComparer.Ordinal)
        {
            [Stat.Chi2] = add(TestName.Friedman, term, null, null, Stat.Chi2, result.ChiSquare),
            [Stat.Df] = add(TestName.Friedman, term, null, null, Stat.Df, Quantity.Of(result.Df)),
            [Stat.P] = add(TestName.Friedman, term, null, null, Stat.P, result.P),
            [Stat.KendallW] = add(TestName.Friedman, term, null, null, Stat.KendallW, result.KendallW),
            [Stat.FImanDavenport] = add(TestName.Friedman, term, null, null, Stat.FImanDavenport, result.ImanDavenportF),
            [Stat.Df1ImanDavenport] = add(TestName.Friedman, term, null, null, Stat.Df1ImanDavenport, Quantity.Of(result.ImanDavenportDf1)),
            [Stat.Df2ImanDavenport] = add(TestName.Friedman, term, null, null, Stat.Df2ImanDavenport, Quantity.Of(result.ImanDavenportDf2)),
            [Stat.PImanDavenport] = add(TestName.Friedman, term, null, null, Stat.PImanDavenport, result.ImanDavenportP),
            [Stat.NBlocks] = add(TestName.Friedman, term, null, null, Stat.NBlocks, Quantity.Of(result.Blocks)),
            [Stat.BlocksDropped] = add(TestName.Friedman, term, null, null, Stat.BlocksDropped, Quantity.Of(fit.Dropped.Count)),
        };
        var meanRanks = levels.Select((level, j) => (level, add(TestName.Friedman, term, level, null, Stat.MeanRank, Quantity.Of(result.MeanRanks[j])))).ToList();
        var pairs = new List<RepeatedPairValues>();
        if (o.Compare is not null)
        {
            foreach (var c in FriedmanConover.Compare([.. levels], blocks, PValueAdjustmentMethod.Holm).Comparisons)
            {
                string[] pair = [c.TreatmentA, c.TreatmentB];
                pairs.Add(new RepeatedPairValues(c.TreatmentA, c.TreatmentB, new Dictionary<string, ResultValue>(StringComparer.Ordinal)
                {
                    [Stat.Diff] = add(TestName.Conover, term, null, pair, Stat.Diff, Quantity.Of(c.MeanRankDiff)),
                    [Stat.Se] = add(TestName.Conover, term, null, pair, Stat.Se, c.Se),
                    [Stat.Statistic] = add(TestName.Conover, term, null, pair, Stat.Statistic, c.Statistic),
                    [Stat.PAdj] = add(TestName.Conover, term, null, pair, Stat.PAdj, c.PAdjusted),
                }));
            }
        }

        return new RankValues(normality, residuals.Length, reason, friedman, meanRanks, pairs);
    }

    /// <summary>Subjects drawn as thin lines in the profile figure (the mean profile uses all).</summary>
    public const int MaxProfilesDrawn = 200;

    /// <summary>The block over its subject and between factors, without a response column (wide data).</summary>
    private static BoundBlock NoResponse(BoundBlock block, IReadOnlyList<Binding.FactorSpec> factors) => new()
    {
        Id = block.Id,
        Kind = block.Kind,
        Syntax = block.Syntax,
        Data = block.Data,
        Response = null,
        ResponseLocation = block.ResponseLocation,
        Factors = factors,
        FactorsLocation = block.Location,
        Where = block.Where,
        Caption = block.Caption,
        Options = block.Options,
    };

    /// <summary>The p-value a reading selects for a within row.</summary>
    public static Quantity ReadP(RepeatedRow row, SphericityCorrection c) => c switch
    {
        SphericityCorrection.GreenhouseGeisser when row.GreenhouseGeisser is not null => row.GreenhouseGeisser.P,
        SphericityCorrection.HuynhFeldt when row.HuynhFeldt is not null => row.HuynhFeldt.P,
        _ => row.P,
    };

    private static SphericityReading Reading(SphericityTest s, string asked, double alpha)
    {
        var levels = s.Contrasts + 1;
        if (asked == "auto")
        {
            var rule = SphericityDecision.For(s, alpha);
            return new SphericityReading(s.Term, levels, rule.Correction, rule);
        }

        // A term with one contrast needs no correction whatever was asked: its epsilons are 1.
        var c = s.Contrasts == 1 ? SphericityCorrection.None : asked switch
        {
            "gg" => SphericityCorrection.GreenhouseGeisser,
            "hf" => SphericityCorrection.HuynhFeldt,
            _ => SphericityCorrection.None,
        };
        return new SphericityReading(s.Term, levels, c, null);
    }

    private static bool VariesWithinSomeSubject(int[] subject, int[] within, IReadOnlyList<IReadOnlyList<string>> between, bool perGroup)
    {
        var first = new Dictionary<string, int>(StringComparer.Ordinal);
        for (var i = 0; i < subject.Length; i++)
        {
            var key = subject[i].ToString(System.Globalization.CultureInfo.InvariantCulture);
            if (perGroup)
            {
                foreach (var col in between)
                {
                    key += "\u001f" + col[i];
                }
            }

            if (!first.TryAdd(key, within[i]) && first[key] != within[i])
            {
                return true;
            }
        }

        return false;
    }

    private static void Report(DesignIssue issue, RepeatedKind.Options o, BoundBlock block, DiagnosticBag diagnostics)
    {
        if (issue.Kind == DesignIssueKind.ContradictoryNesting)
        {
            // The subject sits under two levels of a between factor: point at that factor's entry.
            var between = issue.Factors.FirstOrDefault(f => o.Between.Any(b => b.Spec.Name == f)) ?? o.Subject.Spec.Name;
            diagnostics.RepeatedSubjectInTwoGroups(o.Where(between, block.Location), issue.Message);
            return;
        }

        var at = issue.Factors.Count > 0 ? o.Where(issue.Factors[0], block.Location) : block.Location;
        diagnostics.RepeatedDesignProblem(at, issue.Message);
    }

    private static System.Collections.ObjectModel.ReadOnlyCollection<FigurePlan> FiguresOf(RepeatedMeasuresResult fit, string response, RepeatedKind.Options o)
    {
        var figures = new List<FigurePlan>();
        // Subject profiles along the first within factor (each subject's mean over the other within factors).
        var f0 = 0;
        var levels = fit.WithinLevels[f0];
        var profiles = new List<SubjectProfile>();
        for (var s = 0; s < fit.Subjects.Count; s++)
        {
            var means = new double[levels.Count];
            var counts = new int[levels.Count];
            for (var c = 0; c < fit.Cells; c++)
            {
                var l = fit.LevelOf(c, f0);
                means[l] += fit.CellMeans[s][c];
                counts[l]++;
            }

            var group = fit.Design.Between.Count > 0 ? fit.BetweenLevels[0][fit.SubjectBetween[s][0]] : string.Empty;
            profiles.Add(new SubjectProfile(fit.Subjects[s], group, [.. means.Select((m, i) => m / counts[i])]));
        }

        var wLabel = o.Within[f0].Spec.Display;
        var bLabel = o.Between.Count > 0 ? o.Between[0].Spec.Display : string.Empty;
        var n = profiles.Count;
        var tCrit = n > 1 ? Probability.TCritical(0.05, n - 1) : double.NaN;
        var mean = new List<ProfilePoint>();
        for (var l = 0; l < levels.Count; l++)
        {
            var values = profiles.Select(p => p.Values[l]).ToArray();
            var m = values.Average();
            var half = n > 1 ? tCrit * Math.Sqrt(values.Sum(v => (v - m) * (v - m)) / (n - 1) / n) : 0;
            mean.Add(new ProfilePoint(m, m - half, m + half));
        }

        // At most MaxProfilesDrawn thin lines (the first subjects in file order): beyond that the lines
        // hide each other and only weigh down the report; the mean profile uses every subject.
        var drawn = profiles.Count > MaxProfilesDrawn ? profiles.Take(MaxProfilesDrawn).ToList() : profiles;
        figures.Add(new ProfilesFigure(levels, drawn, profiles.Count, bLabel, mean, response, o.Subject.Spec.Display, wLabel));

        if (fit.Design.Between.Count > 0)
        {
            var between = fit.BetweenLevels[0];
            var cells = new List<CellMean>();
            for (var l = 0; l < levels.Count; l++)
            {
                for (var g = 0; g < between.Count; g++)
                {
                    var ps = profiles.Where(p => p.Group == between[g]).Select(p => p.Values[l]).ToList();
                    if (ps.Count > 0)
                    {
                        cells.Add(new CellMean(levels[l], between[g], ps.Average()));
                    }
                }
            }

            figures.Add(new RepeatedInteractionFigure(levels, between, cells, bLabel, wLabel, response));
        }

        return figures.AsReadOnly();
    }
}
