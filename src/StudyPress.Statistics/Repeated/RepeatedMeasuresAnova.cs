using StudyPress.Statistics.Anova;
using StudyPress.Statistics.Designs;

namespace StudyPress.Statistics.Repeated;

/// <summary>Whether a row of the repeated-measures table is an effect or an error term.</summary>
public enum RepeatedRowKind
{
    /// <summary>A between-subject effect, a within-subject term or a within × between interaction.</summary>
    Effect,

    /// <summary>The error of a stratum: subjects within groups, or a within term × subjects within groups.</summary>
    Error,
}

/// <summary>
/// Degrees of freedom and p-value of a within-subject row after multiplying both df by an epsilon.
/// </summary>
public sealed record CorrectedTest(Quantity Epsilon, Quantity Df, Quantity DfError, Quantity P);

/// <summary>
/// One row of the repeated-measures table. <paramref name="Stratum"/> is "between" for the
/// between-subject stratum or the within term whose error the row is tested against.
/// <paramref name="ErrorTerm"/> names that error row (null for error rows). For within-subject
/// effect rows <paramref name="GreenhouseGeisser"/>, <paramref name="HuynhFeldt"/> and
/// <paramref name="LowerBound"/> are the corrected tests (epsilons of the stratum's term); they are
/// null elsewhere.
/// </summary>
public sealed record RepeatedRow(
    string Term,
    IReadOnlyList<string> Factors,
    RepeatedRowKind Kind,
    string Stratum,
    double SumOfSquares,
    int Df,
    Quantity MeanSquare,
    string? ErrorTerm,
    Quantity F,
    Quantity P,
    Quantity PartialEtaSquared,
    Quantity GeneralizedEtaSquared,
    CorrectedTest? GreenhouseGeisser,
    CorrectedTest? HuynhFeldt,
    CorrectedTest? LowerBound)
{
    /// <summary>True for within-subject rows (effects and errors).</summary>
    public bool IsWithin => !string.Equals(Stratum, RepeatedMeasuresAnova.BetweenStratum, StringComparison.Ordinal);
}

/// <summary>The classical repeated-measures analysis of the complete subjects.</summary>
/// <param name="Rows">The table: between effects and their error, then each within term, its interactions with the between terms and its error.</param>
/// <param name="Sphericity">Mauchly's test and the epsilons of every within term (p = 1 terms included: epsilons 1, test not defined).</param>
/// <param name="Subjects">Labels of the complete subjects analysed, in order of first appearance.</param>
/// <param name="Dropped">The incomplete subjects left out, in order of first appearance, each with its reason.</param>
/// <param name="Groups">g, the number of between-subject groups (1 without between factors).</param>
/// <param name="ReplicatedCells">Subject × cell combinations measured more than once; their mean was analysed.</param>
/// <param name="TotalSumOfSquares">Σ (cell mean − grand mean)² over the complete subjects' cells; the rows' SS add up to it when the groups are balanced.</param>
/// <param name="SsType">The SS type of between terms and of within × between interactions (they differ only with unequal group sizes).</param>
public sealed record RepeatedMeasuresResult(
    IReadOnlyList<RepeatedRow> Rows,
    IReadOnlyList<SphericityTest> Sphericity,
    IReadOnlyList<string> Subjects,
    IReadOnlyList<DroppedSubject> Dropped,
    int Groups,
    int ReplicatedCells,
    double TotalSumOfSquares,
    int TotalDf,
    SumOfSquaresType SsType)
{
    /// <summary>The design analysed.</summary>
    public required RepeatedMeasuresDesign Design { get; init; }

    /// <summary>Levels of each within factor (design order), in order of first appearance.</summary>
    public required IReadOnlyList<IReadOnlyList<string>> WithinLevels { get; init; }

    /// <summary>Levels of each between factor among the complete subjects.</summary>
    public required IReadOnlyList<IReadOnlyList<string>> BetweenLevels { get; init; }

    /// <summary>Each complete subject's between levels (codes into <see cref="BetweenLevels"/>).</summary>
    public required IReadOnlyList<IReadOnlyList<int>> SubjectBetween { get; init; }

    /// <summary>
    /// Each complete subject's mean in each within-subject cell; cells indexed with the last
    /// within factor varying fastest (<see cref="CellName"/> says which levels a cell is).
    /// </summary>
    public required IReadOnlyList<IReadOnlyList<double>> CellMeans { get; init; }

    /// <summary>The row named <paramref name="term"/>.</summary>
    public RepeatedRow Row(string term) =>
        Rows.FirstOrDefault(r => string.Equals(r.Term, term, StringComparison.Ordinal))
        ?? throw new KeyNotFoundException("no row " + term);

    /// <summary>The sphericity test of the within term <paramref name="term"/>.</summary>
    public SphericityTest SphericityOf(string term) =>
        Sphericity.FirstOrDefault(r => string.Equals(r.Term, term, StringComparison.Ordinal))
        ?? throw new KeyNotFoundException("no within term " + term);

    /// <summary>Number of within-subject cells.</summary>
    public int Cells => CellMeans.Count > 0 ? CellMeans[0].Count : WithinLevels.Aggregate(1, (a, l) => a * l.Count);

    /// <summary>The level code (into <see cref="WithinLevels"/>) of within factor <paramref name="factor"/> in <paramref name="cell"/>.</summary>
    public int LevelOf(int cell, int factor)
    {
        var stride = 1;
        for (var f = WithinLevels.Count - 1; f > factor; f--)
        {
            stride *= WithinLevels[f].Count;
        }

        return (cell / stride) % WithinLevels[factor].Count;
    }

    /// <summary>The cell's levels in words, e.g. "time t2, light low".</summary>
    public string CellName(int cell) =>
        string.Join(", ", Enumerable.Range(0, WithinLevels.Count).Select(f => Design.Within[f] + " " + WithinLevels[f][LevelOf(cell, f)]));
}

/// <summary>
/// Classical (univariate) repeated-measures ANOVA of long-format data with within- and
/// between-subject factors, from the complete subjects only.
/// <para>
/// Subjects. A subject is complete when it has at least one finite measurement in every
/// within-subject cell (every combination of the within factors' levels seen in the data);
/// repeated measurements of a cell are averaged. Incomplete subjects are left out and listed in
/// <see cref="RepeatedMeasuresResult.Dropped"/> with the cells they miss; the mixed model
/// (<see cref="RepeatedMeasuresMixedModel"/>) keeps them.
/// </para>
/// <para>
/// Method (the univariate approach through orthonormal contrasts: O'Brien and Kaiser 1985,
/// "MANOVA method for analyzing repeated measures designs: an extensive primer", Psychological
/// Bulletin 97, 316-333; Maxwell and Delaney 2004, Designing Experiments and Analyzing Data, 2nd
/// ed., ch. 11-14). Let Y be the N × w matrix of the complete subjects' cell means. For each
/// within term T (every non-empty set of within factors) the subjects' contrast scores are
/// Z_T = Y C_T, with C_T the w × p_T orthonormal contrasts of <see cref="Contrasts"/>; the
/// between stratum uses z₀ = Y 1/√w. Then, with g groups (combinations of the between factors,
/// all of which must occur) and E_T the pooled within-group SSCP of Z_T:
/// </para>
/// <list type="bullet">
/// <item>Between stratum: each between term B (all interactions of the between factors) has the
/// SS of a factorial ANOVA of z₀ on the between factors (<see cref="FactorialAnova"/>, of the
/// requested SS type); the error is subjects within groups, SS = Σ within-group squared deviations
/// of z₀, df N − g. B is tested against it.</item>
/// <item>Within term T: SS(T) = N ‖z̄_T‖² (types 1 and 2; z̄ the mean of all subjects) or, for
/// type 3, ‖m̄‖² / (Σ_g 1/n_g / g²) with m̄ the unweighted mean of the group means; T × B has SS
/// Σ over T's contrast columns of the factorial ANOVA SS of B on that column; the error
/// T × subjects(groups) has SS tr E_T and df p_T (N − g), and T and every T × B are tested against
/// it. With equal group sizes all SS types agree and the rows add up to the total SS; this is then
/// the strata analysis of <see cref="StrataAnova"/> with the subject a random factor nested in the
/// between factors (tested).</item>
/// </list>
/// <para>
/// Per row: MS = SS/df, F = MS/MS_error, p = P(F(df, df_error) ≥ F). Partial η² = SS/(SS + SS_error).
/// Generalized η² (Olejnik and Algina 2003, "Generalized eta and omega squared statistics:
/// measures of effect size for some common research designs", Psychological Methods 8, 434-447),
/// with every factor manipulated (none merely measured): η²_G = SS_effect / (SS_effect + Σ SS of
/// every error row: subjects within groups and every within term × subjects within groups). It is
/// comparable across between- and within-subject designs, which partial η² is not.
/// </para>
/// <para>
/// Sphericity per within term (<see cref="Sphericity"/>): Mauchly's W from E_T with ν = N − g, the
/// Greenhouse–Geisser and the Huynh–Feldt–Lecoutre epsilons (each capped at 1). Each within row
/// (T and its interactions with between terms) has corrected tests with both df multiplied by the
/// epsilon of T, including the lower bound 1/p_T. <see cref="SphericityDecision"/> says which to read.
/// </para>
/// </summary>
public static class RepeatedMeasuresAnova
{
    /// <summary>The stratum name of the between-subject rows.</summary>
    public const string BetweenStratum = "between";

    /// <summary>At most this many missing cells are named for each dropped subject.</summary>
    public const int MissingCellsListed = 10;

    /// <summary>The first problem that stops the classical analysis, or null.</summary>
    public static DesignIssue? Check(RepeatedMeasuresDesign design, RepeatedMeasuresData data)
    {
        var issue = RepeatedLayoutBuilder.Build(design, data, out var layout);
        return issue ?? RepeatedLayoutBuilder.CheckClassical(layout!, out _, out _);
    }

    /// <summary>
    /// The subjects the classical analysis keeps and those it drops (with the reasons), without
    /// fitting; null with <paramref name="issue"/> set when the declaration or data are unusable.
    /// </summary>
    public static (IReadOnlyList<string> Complete, IReadOnlyList<DroppedSubject> Dropped)? Completeness(
        RepeatedMeasuresDesign design, RepeatedMeasuresData data, out DesignIssue? issue)
    {
        issue = RepeatedLayoutBuilder.Build(design, data, out var layout);
        return issue is null ? (layout!.Subjects, layout.Dropped) : null;
    }

    /// <summary>Fits the analysis; throws <see cref="ArgumentException"/> when <see cref="Check"/> finds a problem.</summary>
    public static RepeatedMeasuresResult Fit(
        RepeatedMeasuresDesign design, RepeatedMeasuresData data, SumOfSquaresType ssType = SumOfSquaresType.Hierarchical)
    {
        var issue = RepeatedLayoutBuilder.Build(design, data, out var layout)
                    ?? RepeatedLayoutBuilder.CheckClassical(layout!, out _, out _);
        if (issue is not null)
        {
            throw new ArgumentException(issue.Message, nameof(data));
        }

        return Fit(layout!, ssType);
    }

    internal static RepeatedMeasuresResult Fit(RepeatedLayout layout, SumOfSquaresType ssType)
    {
        var issue = RepeatedLayoutBuilder.CheckClassical(layout, out var g, out var groupOf);
        if (issue is not null)
        {
            throw new ArgumentException(issue.Message, nameof(layout));
        }

        var design = layout.Design;
        var n = layout.Subjects.Count;
        var w = layout.Cells;
        var kw = design.Within.Count;
        var kb = design.Between.Count;
        var nu = n - g;
        var groupSize = new int[g];
        foreach (var x in groupOf)
        {
            groupSize[x]++;
        }

        // Centre Y by its grand mean (contrasts are unaffected; the between stratum is shift-invariant).
        var grand = Groups.Mean([.. layout.Means.SelectMany(m => m)]);
        var y = layout.Means.Select(m => m.Select(v => v - grand).ToArray()).ToArray();
        var totalSs = y.Sum(r => r.Sum(v => v * v));

        var betweenTerms = Subsets(kb).ToList();
        var withinTerms = Subsets(kw).ToList();
        var withinLevelCounts = layout.WithinLevels.Select(l => l.Count).ToArray();
        var betweenColumns = Enumerable.Range(0, kb)
            .Select(b => new FactorColumn(design.Between[b], [.. layout.SubjectBetween.Select(c => c[b])], layout.BetweenLevels[b]))
            .ToList();

        string Join(IEnumerable<string> parts) => string.Join(":", parts);
        var subjectError = kb == 0 ? design.Subject : design.Subject + "(" + Join(design.Between) + ")";
        string[] BetweenNames(int[] t) => [.. t.Select(b => design.Between[b])];
        string[] WithinNames(int[] t) => [.. t.Select(f => design.Within[f])];

        // Between-term SS of one subject-level score column, by the factorial ANOVA (all SS types).
        double[] BetweenSs(double[] score)
        {
            if (kb == 0)
            {
                return [];
            }

            var fit = FactorialAnova.Fit(new AnovaInput(score, betweenColumns, Interactions: true, ssType, 0.05));
            return [.. betweenTerms.Select(t => fit.Terms.First(a => string.Equals(a.Name, Join(BetweenNames(t)), StringComparison.Ordinal)).SumOfSquares)];
        }

        // Pooled within-group SSCP of score columns (two-pass group means).
        double[,] WithinGroupSscp(double[][] z, int p)
        {
            var means = new double[g, p];
            for (var s = 0; s < n; s++)
            {
                for (var j = 0; j < p; j++)
                {
                    means[groupOf[s], j] += z[s][j];
                }
            }

            for (var x = 0; x < g; x++)
            {
                for (var j = 0; j < p; j++)
                {
                    means[x, j] /= groupSize[x];
                }
            }

            var e = new double[p, p];
            var d = new double[p];
            for (var s = 0; s < n; s++)
            {
                for (var j = 0; j < p; j++)
                {
                    d[j] = z[s][j] - means[groupOf[s], j];
                }

                for (var i = 0; i < p; i++)
                {
                    for (var j = 0; j < p; j++)
                    {
                        e[i, j] += d[i] * d[j];
                    }
                }
            }

            return e;
        }

        var pending = new List<(string Term, string[] Factors, RepeatedRowKind Kind, string Stratum, double Ss, int Df, string? Error, double ErrorSs, int ErrorDf, SphericityTest? Sph)>();

        // Between stratum.
        var z0 = new double[n][];
        var invSqrtW = 1 / Math.Sqrt(w);
        for (var s = 0; s < n; s++)
        {
            z0[s] = [y[s].Sum() * invSqrtW];
        }

        var e0 = WithinGroupSscp(z0, 1)[0, 0];
        var dfS = nu;
        var b0 = BetweenSs([.. z0.Select(r => r[0])]);
        for (var t = 0; t < betweenTerms.Count; t++)
        {
            var names = BetweenNames(betweenTerms[t]);
            pending.Add((Join(names), names, RepeatedRowKind.Effect, BetweenStratum, b0[t], Df(betweenTerms[t], layout.BetweenLevels.Select(l => l.Count).ToArray()), subjectError, e0, dfS, null));
        }

        pending.Add((subjectError, [design.Subject, .. design.Between], RepeatedRowKind.Error, BetweenStratum, e0, dfS, null, 0, 0, null));

        // Within strata.
        var sphericity = new List<SphericityTest>();
        var betweenDfs = betweenTerms.Select(t => Df(t, layout.BetweenLevels.Select(l => l.Count).ToArray())).ToArray();
        foreach (var term in withinTerms)
        {
            var inTerm = Enumerable.Range(0, kw).Select(f => term.Contains(f)).ToArray();
            var c = Contrasts.ForTerm(withinLevelCounts, inTerm);
            var p = c.GetLength(1);
            var z = new double[n][];
            for (var s = 0; s < n; s++)
            {
                var row = new double[p];
                for (var j = 0; j < p; j++)
                {
                    double acc = 0;
                    for (var cell = 0; cell < w; cell++)
                    {
                        acc += y[s][cell] * c[cell, j];
                    }

                    row[j] = acc;
                }

                z[s] = row;
            }

            var e = WithinGroupSscp(z, p);
            var errorSs = 0.0;
            for (var j = 0; j < p; j++)
            {
                errorSs += e[j, j];
            }

            var errorDf = p * nu;
            var wNames = WithinNames(term);
            var tName = Join(wNames);
            var errName = tName + ":" + subjectError;
            var sph = Sphericity.FromErrorMatrix(tName, e, nu);
            sphericity.Add(sph);

            // The term itself: the intercept of its contrast scores.
            double ssT = 0;
            for (var j = 0; j < p; j++)
            {
                if (ssType == SumOfSquaresType.Marginal && kb > 0)
                {
                    var gm = new double[g];
                    for (var s = 0; s < n; s++)
                    {
                        gm[groupOf[s]] += z[s][j];
                    }

                    double unweighted = 0, inv = 0;
                    for (var x = 0; x < g; x++)
                    {
                        unweighted += gm[x] / groupSize[x];
                        inv += 1.0 / groupSize[x];
                    }

                    unweighted /= g;
                    ssT += unweighted * unweighted / (inv / ((double)g * g));
                }
                else
                {
                    var m = Groups.Mean([.. z.Select(r => r[j])]);
                    ssT += n * m * m;
                }
            }

            pending.Add((tName, wNames, RepeatedRowKind.Effect, tName, ssT, p, errName, errorSs, errorDf, sph));

            // Interactions with the between terms.
            if (kb > 0)
            {
                var sums = new double[betweenTerms.Count];
                for (var j = 0; j < p; j++)
                {
                    var col = BetweenSs([.. z.Select(r => r[j])]);
                    for (var t = 0; t < sums.Length; t++)
                    {
                        sums[t] += col[t];
                    }
                }

                for (var t = 0; t < betweenTerms.Count; t++)
                {
                    var bNames = BetweenNames(betweenTerms[t]);
                    pending.Add((Join([.. bNames, .. wNames]), [.. bNames, .. wNames], RepeatedRowKind.Effect, tName, sums[t], p * betweenDfs[t], errName, errorSs, errorDf, sph));
                }
            }

            pending.Add((errName, [.. wNames, design.Subject, .. design.Between], RepeatedRowKind.Error, tName, errorSs, errorDf, null, 0, 0, null));
        }

        var allErrorSs = pending.Where(r => r.Kind == RepeatedRowKind.Error).Sum(r => r.Ss);
        var rows = new List<RepeatedRow>();
        foreach (var r in pending)
        {
            var ms = Quantity.Of(r.Ss / r.Df);
            if (r.Kind == RepeatedRowKind.Error)
            {
                const string NotTested = "an error row is not tested";
                var none = Quantity.Undefined(NotTested);
                rows.Add(new RepeatedRow(r.Term, r.Factors, r.Kind, r.Stratum, r.Ss, r.Df, ms, null, none, none, none, none, null, null, null));
                continue;
            }

            Quantity f, pval;
            var msE = r.ErrorSs / r.ErrorDf;
            if (!(msE > 0))
            {
                f = pval = Quantity.Undefined("the error mean square is zero");
            }
            else
            {
                f = Quantity.Of(ms.Value / msE);
                pval = Quantity.Of(Probability.FUpper(f.Value, r.Df, r.ErrorDf));
            }

            var partial = r.Ss + r.ErrorSs > 0 ? Quantity.Of(r.Ss / (r.Ss + r.ErrorSs)) : Quantity.Undefined("the response does not vary");
            var general = r.Ss + allErrorSs > 0 ? Quantity.Of(r.Ss / (r.Ss + allErrorSs)) : Quantity.Undefined("the response does not vary");
            CorrectedTest? gg = null, hf = null, lb = null;
            if (r.Sph is not null)
            {
                gg = Corrected(r.Sph.EpsilonGreenhouseGeisser, f, r.Df, r.ErrorDf);
                hf = Corrected(r.Sph.EpsilonHuynhFeldt, f, r.Df, r.ErrorDf);
                lb = Corrected(Quantity.Of(r.Sph.EpsilonLowerBound), f, r.Df, r.ErrorDf);
            }

            rows.Add(new RepeatedRow(r.Term, r.Factors, r.Kind, r.Stratum, r.Ss, r.Df, ms, r.Error, f, pval, partial, general, gg, hf, lb));
        }

        return new RepeatedMeasuresResult(rows, sphericity, layout.Subjects, layout.Dropped, g, layout.ReplicatedCells, totalSs, (n * w) - 1, ssType)
        {
            Design = design,
            WithinLevels = layout.WithinLevels,
            BetweenLevels = layout.BetweenLevels,
            SubjectBetween = layout.SubjectBetween,
            CellMeans = layout.Means,
        };
    }

    /// <summary>F tested on (ε df, ε df_error).</summary>
    private static CorrectedTest Corrected(Quantity epsilon, Quantity f, int df, int dfError)
    {
        if (!epsilon.IsDefined)
        {
            return new CorrectedTest(epsilon, epsilon, epsilon, epsilon);
        }

        var d1 = Quantity.Of(epsilon.Value * df);
        var d2 = Quantity.Of(epsilon.Value * dfError);
        var p = f.IsDefined ? Quantity.Of(Probability.FUpper(f.Value, d1.Value, d2.Value)) : f;
        return new CorrectedTest(epsilon, d1, d2, p);
    }

    /// <summary>Non-empty subsets of 0..k-1, by size, then in declared order.</summary>
    internal static IEnumerable<int[]> Subsets(int k) =>
        Enumerable.Range(1, (1 << k) - 1)
            .Select(mask => Enumerable.Range(0, k).Where(f => (mask & (1 << f)) != 0).ToArray())
            .OrderBy(s => s.Length)
            .ThenBy(s => string.Join(",", s.Select(f => f.ToString("D2", System.Globalization.CultureInfo.InvariantCulture))), StringComparer.Ordinal);

    private static int Df(int[] term, int[] levels) => term.Aggregate(1, (a, f) => a * (levels[f] - 1));
}
