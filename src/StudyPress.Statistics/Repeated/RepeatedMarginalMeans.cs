using System.Globalization;
using MathNet.Numerics.LinearAlgebra;
using StudyPress.Statistics.Designs;
using StudyPress.Statistics.Distributions;
using StudyPress.Statistics.PostHoc;

namespace StudyPress.Statistics.Repeated;

/// <summary>Which fit the marginal means of a repeated-measures design come from.</summary>
public enum RepeatedMeansRoute
{
    /// <summary>The classical route (complete subjects): the strata's error mean squares, Satterthwaite df.</summary>
    Strata = 0,

    /// <summary>The REML mixed model (keeps incomplete subjects): the fit's covariance, Satterthwaite df.</summary>
    Reml = 1,
}

/// <summary>How a family of pairwise differences of repeated-measures means is adjusted.</summary>
public enum RepeatedPairAdjustment
{
    /// <summary>Holm's step-down p-values; intervals at the Bonferroni level.</summary>
    Holm = 0,

    /// <summary>Bonferroni: p times m (capped at 1); intervals at alpha/m.</summary>
    Bonferroni = 1,

    /// <summary>Tukey–Kramer: studentized range of k means on the one error every pair rests on.</summary>
    Tukey = 2,
}

/// <summary>
/// One estimate (a mean or a difference of means): value, SE, Satterthwaite df, interval, and the
/// error terms its variance rests on (<see cref="RepeatedCellMeans.Route"/> Strata: names of the
/// error rows of the classical table; Reml: the variance components with a part in it).
/// </summary>
public sealed record RepeatedEstimate(double Value, Quantity Se, Quantity Df, Quantity CiLow, Quantity CiHigh, IReadOnlyList<string> Errors);

/// <summary>One marginal mean: its levels (one per factor of the term, in the term's order) and its estimate.</summary>
public sealed record RepeatedMean(IReadOnlyList<string> Levels, RepeatedEstimate Estimate);

/// <summary>One pairwise difference (first minus second) with t, raw and adjusted p and its (adjusted) interval.</summary>
public sealed record RepeatedPair(IReadOnlyList<string> LevelsA, IReadOnlyList<string> LevelsB, RepeatedEstimate Difference, Quantity T, Quantity P, Quantity PAdjusted);

/// <summary>
/// The simple effect of a factor at one level of another: the Wald F of its k − 1 differences from
/// the first level, on (k − 1, <paramref name="DfDen"/>) df, and its pairs.
/// </summary>
public sealed record RepeatedSimpleEffect(string AtLevel, int Df, Quantity DfDen, Quantity F, Quantity P, IReadOnlyList<string> Errors, IReadOnlyList<RepeatedPair> Pairs);

/// <summary>
/// Estimated marginal means of a repeated-measures design, their pairwise differences and simple
/// effects, on the error the design gives each of them.
/// <para>
/// Every quantity is a linear function l′μ̂ of the estimated cell means μ̂ (one per combination of
/// a between-subject group and a within-subject cell). A marginal mean of a set of factors is the
/// equal-weight average of the cell means over the groups and cells that have its levels (the
/// population marginal mean of Searle, Speed and Milliken 1980); a difference is the difference of
/// two such coefficient vectors.
/// </para>
/// <para>
/// Classical route (<see cref="FromStrata"/>, complete subjects). μ̂ are the groups' cell means. A
/// subject's vector of w cell means has the covariance of the multi-stratum model,
/// Σ = ξ₀ P₀ + Σ_T ξ_T P_T, with P₀ = J/w (the subject's mean: between stratum) and P_T the
/// projector on the contrasts of within term T (⊗ over the within factors of I − J/k for a factor
/// in T, J/k for one not in T); ξ₀ is estimated by the error mean square of the between stratum
/// (subjects within groups) and ξ_T by that of the T × subjects stratum, each on its df, as the
/// classical table's rows are built (O'Brien and Kaiser 1985; the univariate mixed model of Winer,
/// Brown and Michels 1991, ch. 7, under sphericity). Groups are independent, so
/// Var(l′μ̂) = Σ_k MS_k c_k with c_k = Σ_g |P_k l_g|² / n_g, a combination of mean squares with
/// non-negative weights, and its df are Satterthwaite's (1946):
/// ν = (Σ_k c_k MS_k)² / Σ_k (c_k MS_k)² / df_k. A contrast that lives in one stratum (two levels of
/// a within factor averaged over the others: only that factor's stratum; two between levels: only
/// the between stratum) takes exactly that stratum's error and df; a mean, or a difference across
/// strata (cells of a between × within crossing), pools the strata.
/// </para>
/// <para>
/// Mixed-model route (<see cref="FromReml"/>, incomplete subjects kept). μ̂ = C X′V⁻¹y by
/// generalized least squares at the REML variance estimates of <see cref="RepeatedMeasuresMixedModel"/>
/// (the fit's own β̂ in cell-mean coding), C = (X′V⁻¹X)⁻¹, computed subject by subject (V is block
/// diagonal by subject). The df are Satterthwaite's for mixed models (Fai and Cornelius 1996;
/// Kuznetsova et al. 2017): ν = 2 (l′Cl)² / (g′Ag) with g_r = l′C X′V⁻¹V_rV⁻¹X C l and A the
/// inverse expected information of the variance parameters not at zero, the same rule as
/// <see cref="MixedModel"/>'s F tests. On complete balanced data with every estimate inside the
/// parameter space this equals the classical route (tested).
/// </para>
/// <para>
/// Tests of k − 1 differences (simple effects): F = (Lμ̂)′(LCL′)⁻¹(Lμ̂)/(k − 1); df from the
/// eigen-directions of LCL′ (ν_i as above, E = Σ ν_i/(ν_i − 2), ν = 2E/(E − q); one stratum, or
/// equal ν_i: that df), as in <see cref="MixedModel"/>. Pairs: t = d/SE on the pair's own df;
/// Holm or Bonferroni over the family, intervals at the Bonferroni level; Tukey–Kramer (studentized
/// range of the k means) only where every pair rests on the same single error (<see cref="SingleError"/>).
/// </para>
/// </summary>
public sealed class RepeatedCellMeans
{
    private readonly int kb;
    private readonly int kw;
    private readonly int[] withinCounts;
    private readonly int[] strides;
    private readonly int[][] groups; // between codes of each group
    private readonly double[][] mu; // [group][cell]
    private readonly string[] parameters; // strata error names, or REML components
    private readonly double[] theta;
    private readonly Matrix<double> thetaCov;
    private readonly Func<double[][], double[][], double> total;
    private readonly Func<double[][], double[][], double[]> parts; // a′D_k b for every variance parameter k
    private readonly double[]? strataDf; // strata route: each stratum's error df

    private RepeatedCellMeans(
        RepeatedMeansRoute route,
        RepeatedMeasuresDesign design,
        IReadOnlyList<IReadOnlyList<string>> betweenLevels,
        IReadOnlyList<IReadOnlyList<string>> withinLevels,
        int[][] groups,
        double[][] mu,
        string[] parameters,
        double[] theta,
        Matrix<double> thetaCov,
        Func<double[][], double[][], double>? total,
        Func<double[][], double[][], double[]> parts,
        double[]? strataDf)
    {
        Route = route;
        Design = design;
        BetweenLevels = betweenLevels;
        WithinLevels = withinLevels;
        kb = design.Between.Count;
        kw = design.Within.Count;
        withinCounts = [.. withinLevels.Select(l => l.Count)];
        strides = new int[kw];
        var s = 1;
        for (var f = kw - 1; f >= 0; f--)
        {
            strides[f] = s;
            s *= withinCounts[f];
        }

        Cells = s;
        this.groups = groups;
        this.mu = mu;
        this.parameters = parameters;
        this.theta = theta;
        this.thetaCov = thetaCov;
        this.parts = parts;
        this.total = total ?? ((a, b) =>
        {
            var d = parts(a, b);
            return Enumerable.Range(0, theta.Length).Sum(k => theta[k] * d[k]);
        });
        this.strataDf = strataDf;
    }

    public RepeatedMeansRoute Route { get; }

    public RepeatedMeasuresDesign Design { get; }

    public IReadOnlyList<IReadOnlyList<string>> BetweenLevels { get; }

    public IReadOnlyList<IReadOnlyList<string>> WithinLevels { get; }

    /// <summary>Number of within-subject cells.</summary>
    public int Cells { get; }

    /// <summary>Most cell means (groups × cells) the mixed-model route handles (its matrices are per group, cells × cells).</summary>
    public const int MaxCellMeans = 20_000;

    /// <summary>Most numbers the mixed-model route's per-group matrices may hold (2^24, 128 MiB): 2m + 2 matrices of cells × cells per group for m variance parameters.</summary>
    public const long MaxWorkingNumbers = 1L << 24;

    /// <summary>The classical route from the classical fit (complete subjects).</summary>
    public static RepeatedCellMeans FromStrata(RepeatedMeasuresResult fit)
    {
        ArgumentNullException.ThrowIfNull(fit);
        var design = fit.Design;
        var kb = design.Between.Count;
        var kw = design.Within.Count;
        var w = fit.Cells;
        var groupIndex = new Dictionary<string, int>(StringComparer.Ordinal);
        var groupCodes = new List<int[]>();
        var groupOf = new int[fit.Subjects.Count];
        foreach (var combo in RepeatedLayoutBuilder.Combinations([.. fit.BetweenLevels.Select(l => l.Count)]))
        {
            groupIndex.Add(Key(combo), groupCodes.Count);
            groupCodes.Add(combo);
        }

        var sizes = new int[groupCodes.Count];
        var mu = groupCodes.Select(_ => new double[w]).ToArray();
        for (var s = 0; s < fit.Subjects.Count; s++)
        {
            var g = groupIndex[Key([.. fit.SubjectBetween[s]])];
            groupOf[s] = g;
            sizes[g]++;
        }

        // Two-pass cell means per group.
        for (var g = 0; g < mu.Length; g++)
        {
            for (var c = 0; c < w; c++)
            {
                double sum = 0;
                for (var s = 0; s < groupOf.Length; s++)
                {
                    if (groupOf[s] == g)
                    {
                        sum += fit.CellMeans[s][c];
                    }
                }

                var m = sum / sizes[g];
                double corr = 0;
                for (var s = 0; s < groupOf.Length; s++)
                {
                    if (groupOf[s] == g)
                    {
                        corr += fit.CellMeans[s][c] - m;
                    }
                }

                mu[g][c] = m + (corr / sizes[g]);
            }
        }

        // Strata: the between stratum, then each within term (bitmask over the within factors).
        var names = new List<string>();
        var ms = new List<double>();
        var dfs = new List<double>();
        var masks = new List<int>();
        var between = fit.Rows.First(r => r.Kind == RepeatedRowKind.Error && !r.IsWithin);
        names.Add(between.Term);
        ms.Add(between.MeanSquare.Value);
        dfs.Add(between.Df);
        masks.Add(0);
        for (var mask = 1; mask < 1 << kw; mask++)
        {
            var term = string.Join(":", Enumerable.Range(0, kw).Where(f => (mask & (1 << f)) != 0).Select(f => design.Within[f]));
            var row = fit.Rows.First(r => r.Kind == RepeatedRowKind.Error && string.Equals(r.Stratum, term, StringComparison.Ordinal));
            names.Add(row.Term);
            ms.Add(row.MeanSquare.Value);
            dfs.Add(row.Df);
            masks.Add(mask);
        }

        // Each stratum's part of a′b: transform both along every within factor by an orthonormal
        // Helmert basis (first row the mean direction); the cells whose transformed codes are
        // non-zero exactly on the factors of term T carry P_T, those with all codes zero P₀.
        var counts = fit.WithinLevels.Select(l => l.Count).ToArray();
        var helmert = counts.Select(Helmert).ToArray();
        var cellMask = new int[w];
        var strideOf = new int[kw];
        var st = 1;
        for (var f = kw - 1; f >= 0; f--)
        {
            strideOf[f] = st;
            st *= counts[f];
        }

        for (var c = 0; c < w; c++)
        {
            for (var f = 0; f < kw; f++)
            {
                if ((c / strideOf[f]) % counts[f] != 0)
                {
                    cellMask[c] |= 1 << f;
                }
            }
        }

        var paramOfMask = new int[1 << kw];
        for (var k = 0; k < masks.Count; k++)
        {
            paramOfMask[masks[k]] = k;
        }

        double[] Parts(double[][] a, double[][] b)
        {
            var acc = new double[masks.Count];
            for (var g = 0; g < a.Length; g++)
            {
                if (a[g] is null || b[g] is null)
                {
                    continue;
                }

                var ta = Transform(a[g], counts, helmert);
                var tb = ReferenceEquals(a[g], b[g]) ? ta : Transform(b[g], counts, helmert);
                for (var c = 0; c < w; c++)
                {
                    acc[paramOfMask[cellMask[c]]] += ta[c] * tb[c] / sizes[g];
                }
            }

            return acc;
        }

        var theta = ms.ToArray();
        var cov = Matrix<double>.Build.Dense(theta.Length, theta.Length);
        for (var k = 0; k < theta.Length; k++)
        {
            cov[k, k] = 2 * theta[k] * theta[k] / dfs[k];
        }

        return new RepeatedCellMeans(RepeatedMeansRoute.Strata, design, fit.BetweenLevels, fit.WithinLevels, [.. groupCodes], mu, [.. names], theta, cov, null, Parts, [.. dfs]);
    }

    /// <summary>
    /// The mixed-model route from the REML fit; null with <paramref name="issue"/> when the cell
    /// means cannot be estimated this way (too many, or the variance parameters cannot be told apart).
    /// </summary>
    public static RepeatedCellMeans? FromReml(RepeatedMeasuresDesign design, RepeatedMixedResult mixed, out string? issue)
    {
        ArgumentNullException.ThrowIfNull(design);
        ArgumentNullException.ThrowIfNull(mixed);
        issue = null;
        var d = mixed.Design;
        var reml = mixed.Reml;
        var kb = design.Between.Count;
        var kw = design.Within.Count;
        var buildIssue = StrataAnova.Build(d.Factors, d.Data, requireBalance: false, out var model);
        if (buildIssue is not null)
        {
            issue = buildIssue.Message;
            return null;
        }

        var n = model!.N;
        var y = d.Data.Response;

        // Levels in order of first appearance; groups are every combination of the between levels.
        IReadOnlyList<string> LevelsOf(IReadOnlyList<string> labels) => [.. labels.Distinct(StringComparer.Ordinal)];
        var betweenLevels = Enumerable.Range(0, kb).Select(b => LevelsOf(d.Data.Labels[b])).ToArray();
        var withinLevels = Enumerable.Range(0, kw).Select(f => LevelsOf(d.Data.Labels[kb + f])).ToArray();
        var counts = withinLevels.Select(l => l.Count).ToArray();
        var w = counts.Aggregate(1, (a, c) => a * c);
        var groupCodes = RepeatedLayoutBuilder.Combinations([.. betweenLevels.Select(l => l.Count)]).ToArray();
        if ((long)groupCodes.Length * w > MaxCellMeans)
        {
            issue = string.Create(CultureInfo.InvariantCulture, $"the mixed model has {(long)groupCodes.Length * w} cell means (groups × within-subject cells), more than the {MaxCellMeans} this version estimates marginal means from");
            return null;
        }

        var groupIndex = new Dictionary<string, int>(StringComparer.Ordinal);
        for (var g = 0; g < groupCodes.Length; g++)
        {
            groupIndex.Add(Key(groupCodes[g]), g);
        }

        var betweenMaps = betweenLevels.Select(l => l.Select((x, i) => (x, i)).ToDictionary(t => t.x, t => t.i, StringComparer.Ordinal)).ToArray();
        var withinMaps = withinLevels.Select(l => l.Select((x, i) => (x, i)).ToDictionary(t => t.x, t => t.i, StringComparer.Ordinal)).ToArray();
        var strides = new int[kw];
        var st = 1;
        for (var f = kw - 1; f >= 0; f--)
        {
            strides[f] = st;
            st *= counts[f];
        }

        var groupOfRow = new int[n];
        var cellOfRow = new int[n];
        for (var i = 0; i < n; i++)
        {
            groupOfRow[i] = groupIndex[Key([.. Enumerable.Range(0, kb).Select(b => betweenMaps[b][d.Data.Labels[b][i]])])];
            var c = 0;
            for (var f = 0; f < kw; f++)
            {
                c += withinMaps[f][d.Data.Labels[kb + f][i]] * strides[f];
            }

            cellOfRow[i] = c;
        }

        // Variance parameters: the random terms the fit estimated (not the residual's twin), then the residual.
        var random = model.Terms.Where(t => t.IsRandom && t.Cells < n).ToList();
        var subjectTerm = random.OrderBy(t => t.Cells).First();
        var comps = random.Select(t => reml.Component(t.Name)).ToList();
        var residual = reml.Component(StrataAnova.ResidualName).Variance;
        var free = Enumerable.Range(0, random.Count).Where(r => comps[r].Variance > 0).ToList();
        var names = free.Select(r => random[r].Name).Append(StrataAnova.ResidualName).ToArray();
        var m = names.Length;

        // Rows of each subject (V is block diagonal by subject).
        var blocks = new List<int>[subjectTerm.Cells];
        for (var i = 0; i < n; i++)
        {
            (blocks[subjectTerm.CellOf[i]] ??= []).Add(i);
        }

        var gCount = groupCodes.Length;
        if ((2L * m + 2) * gCount * w * w > MaxWorkingNumbers)
        {
            issue = string.Create(CultureInfo.InvariantCulture, $"its {m} variance parameters over {gCount} groups of {w} within-subject cells need {(2L * m + 2) * gCount * w * w} working numbers, more than the {MaxWorkingNumbers} this version holds for marginal means");
            return null;
        }

        Matrix<double> Zero() => Matrix<double>.Build.Dense(w, w);
        var mg = Enumerable.Range(0, gCount).Select(_ => Zero()).ToArray();
        var ug = Enumerable.Range(0, gCount).Select(_ => new double[w]).ToArray();
        var kg = new Matrix<double>[m, gCount];
        for (var r = 0; r < m; r++)
        {
            for (var g = 0; g < gCount; g++)
            {
                kg[r, g] = Zero();
            }
        }

        // ∂V/∂θ_k within one subject's rows: same level of the random term (or the identity for the residual).
        Matrix<double>[] Derivatives(List<int> rows)
        {
            var mb = rows.Count;
            var vr = new Matrix<double>[m];
            for (var k = 0; k < m; k++)
            {
                var term = k == m - 1 ? null : random[free[k]];
                vr[k] = term is null
                    ? Matrix<double>.Build.DenseIdentity(mb)
                    : Matrix<double>.Build.Dense(mb, mb, (i, j) => term.CellOf[rows[i]] == term.CellOf[rows[j]] ? 1 : 0);
            }

            return vr;
        }

        // First pass: V⁻¹ of each subject, X′V⁻¹X and X′V⁻¹y per group, K_r = X′V⁻¹V_rV⁻¹X per group.
        var subjects = blocks.Where(b => b is not null).ToList();
        var inverses = new List<Matrix<double>>(subjects.Count);
        foreach (var rows in subjects)
        {
            var mb = rows.Count;
            var g = groupOfRow[rows[0]];
            var vr = Derivatives(rows);
            var v = Matrix<double>.Build.DenseIdentity(mb) * residual;
            for (var r = 0; r < random.Count; r++)
            {
                if (comps[r].Variance > 0)
                {
                    var term = random[r];
                    var sigma = comps[r].Variance;
                    v += Matrix<double>.Build.Dense(mb, mb, (i, j) => term.CellOf[rows[i]] == term.CellOf[rows[j]] ? sigma : 0);
                }
            }

            var wb = v.Cholesky().Solve(Matrix<double>.Build.DenseIdentity(mb));
            inverses.Add(wb);
            var yb = Vector<double>.Build.Dense(mb, i => y[rows[i]]);
            var wy = wb * yb;
            for (var i = 0; i < mb; i++)
            {
                ug[g][cellOfRow[rows[i]]] += wy[i];
                for (var j = 0; j < mb; j++)
                {
                    mg[g][cellOfRow[rows[i]], cellOfRow[rows[j]]] += wb[i, j];
                }
            }

            for (var r = 0; r < m; r++)
            {
                AddCells(kg[r, g], wb * vr[r] * wb, rows, cellOfRow);
            }
        }

        var cg = new Matrix<double>[gCount];
        var mu = new double[gCount][];
        for (var g = 0; g < gCount; g++)
        {
            cg[g] = mg[g].Inverse();
            mu[g] = [.. cg[g] * Vector<double>.Build.DenseOfArray(ug[g])];
        }

        // Second pass: tr(PV_rPV_s) = tr(WV_rWV_s) − 2 tr(C X′WV_rWV_sWX) + tr(C K_r C K_s), W = V⁻¹.
        var info = Matrix<double>.Build.Dense(m, m);
        for (var b = 0; b < subjects.Count; b++)
        {
            var rows = subjects[b];
            var g = groupOfRow[rows[0]];
            var wb = inverses[b];
            var vr = Derivatives(rows);
            var a = vr.Select(x => wb * x * wb).ToArray();
            for (var r = 0; r < m; r++)
            {
                for (var t = 0; t < m; t++)
                {
                    var avw = a[r] * vr[t];
                    var first = avw.Trace();
                    avw *= wb;
                    double cross = 0;
                    for (var i = 0; i < rows.Count; i++)
                    {
                        for (var j = 0; j < rows.Count; j++)
                        {
                            cross += avw[i, j] * cg[g][cellOfRow[rows[j]], cellOfRow[rows[i]]];
                        }
                    }

                    info[r, t] += 0.5 * (first - (2 * cross));
                }
            }
        }

        for (var r = 0; r < m; r++)
        {
            for (var t = 0; t < m; t++)
            {
                double v = 0;
                for (var g = 0; g < gCount; g++)
                {
                    v += (cg[g] * kg[r, g] * cg[g] * kg[t, g]).Trace();
                }

                info[r, t] += 0.5 * v;
            }
        }

        info = (info + info.Transpose()) / 2;
        if (info.Svd().ConditionNumber >= 1e12)
        {
            issue = "the variances of the mixed model cannot be told apart in these data (their information is singular), so the df of its marginal means are not defined";
            return null;
        }

        var thetaCov = info.Inverse();

        // D_r = ∂C/∂θ_r = −C K_r C per group.
        var dg = new Matrix<double>[m, gCount];
        for (var r = 0; r < m; r++)
        {
            for (var g = 0; g < gCount; g++)
            {
                dg[r, g] = -(cg[g] * kg[r, g] * cg[g]);
            }
        }

        static double Quad(Matrix<double> mat, double[] a, double[] b)
        {
            double acc = 0;
            for (var i = 0; i < a.Length; i++)
            {
                if (a[i] == 0)
                {
                    continue;
                }

                for (var j = 0; j < b.Length; j++)
                {
                    acc += a[i] * mat[i, j] * b[j];
                }
            }

            return acc;
        }

        double Total(double[][] a, double[][] b)
        {
            double acc = 0;
            for (var g = 0; g < gCount; g++)
            {
                if (a[g] is not null && b[g] is not null)
                {
                    acc += Quad(cg[g], a[g], b[g]);
                }
            }

            return acc;
        }

        double[] Parts(double[][] a, double[][] b)
        {
            var acc = new double[m];
            for (var r = 0; r < m; r++)
            {
                for (var g = 0; g < gCount; g++)
                {
                    if (a[g] is not null && b[g] is not null)
                    {
                        acc[r] += Quad(dg[r, g], a[g], b[g]);
                    }
                }
            }

            return acc;
        }

        var theta = free.Select(r => comps[r].Variance).Append(residual).ToArray();
        return new RepeatedCellMeans(RepeatedMeansRoute.Reml, design, betweenLevels, withinLevels, groupCodes, mu, names, theta, thetaCov, Total, Parts, null);
    }

    /// <summary>Index of a factor of the design: between factors first, then within factors; −1 when not a factor of it.</summary>
    private int FactorIndex(string factor)
    {
        var b = Design.Between.ToList().IndexOf(factor);
        if (b >= 0)
        {
            return b;
        }

        var f = Design.Within.ToList().IndexOf(factor);
        return f >= 0 ? kb + f : -1;
    }

    /// <summary>The levels of a factor of the design.</summary>
    public IReadOnlyList<string> LevelsOf(string factor)
    {
        var i = FactorIndex(factor);
        return i < 0 ? throw new ArgumentException("not a factor of the design: " + factor, nameof(factor)) : i < kb ? BetweenLevels[i] : WithinLevels[i - kb];
    }

    /// <summary>Coefficients (per group, per cell) of the mean at the given level codes of the given factors.</summary>
    private double[][] Coefficients(int[] factors, int[] codes)
    {
        var a = new double[groups.Length][];
        var gMatch = new List<int>();
        for (var g = 0; g < groups.Length; g++)
        {
            if (factors.Select((f, i) => f >= kb || groups[g][f] == codes[i]).All(x => x))
            {
                gMatch.Add(g);
            }
        }

        var cMatch = new List<int>();
        for (var c = 0; c < Cells; c++)
        {
            var ok = true;
            for (var i = 0; i < factors.Length && ok; i++)
            {
                if (factors[i] >= kb)
                {
                    var f = factors[i] - kb;
                    ok = (c / strides[f]) % withinCounts[f] == codes[i];
                }
            }

            if (ok)
            {
                cMatch.Add(c);
            }
        }

        var weight = 1.0 / (gMatch.Count * cMatch.Count);
        foreach (var g in gMatch)
        {
            a[g] = new double[Cells];
            foreach (var c in cMatch)
            {
                a[g][c] = weight;
            }
        }

        return a;
    }

    private static double[][] Minus(double[][] a, double[][] b)
    {
        var r = new double[a.Length][];
        for (var g = 0; g < a.Length; g++)
        {
            if (a[g] is null && b[g] is null)
            {
                continue;
            }

            var len = (a[g] ?? b[g]).Length;
            r[g] = new double[len];
            for (var c = 0; c < len; c++)
            {
                r[g][c] = (a[g]?[c] ?? 0) - (b[g]?[c] ?? 0);
            }
        }

        return r;
    }

    private double Value(double[][] a)
    {
        double acc = 0;
        for (var g = 0; g < a.Length; g++)
        {
            if (a[g] is null)
            {
                continue;
            }

            for (var c = 0; c < a[g].Length; c++)
            {
                acc += a[g][c] * mu[g][c];
            }
        }

        return acc;
    }

    /// <summary>Variance, the gradient in the variance parameters, and its Satterthwaite df.</summary>
    private (double Var, double[] Grad, Quantity Df) Variance(double[][] a)
    {
        var grad = parts(a, a);

        var v = total(a, a);
        var gv = Vector<double>.Build.DenseOfArray(grad);
        var den = gv.DotProduct(thetaCov * gv);
        var df = v > 0 && den > 0 ? Quantity.Of(2 * v * v / den) : Quantity.Undefined("the variance of this estimate is zero");
        if (df.IsDefined && OneStratum(grad) is { } only)
        {
            // One stratum: Satterthwaite's formula gives its df; take it exactly (no rounding residue).
            df = Quantity.Of(strataDf![only]);
        }

        return (v, grad, df);
    }

    /// <summary>The one stratum an estimate's variance rests on (strata route), or null.</summary>
    private int? OneStratum(double[] grad)
    {
        if (strataDf is null)
        {
            return null;
        }

        var scale = grad.Select((g, k) => Math.Abs(g * theta[k])).DefaultIfEmpty(0).Max();
        var used = Enumerable.Range(0, grad.Length).Where(k => Math.Abs(grad[k] * theta[k]) > 1e-10 * scale && scale > 0).ToList();
        return used.Count == 1 ? used[0] : null;
    }

    private string[] ErrorsOf(double[] grad)
    {
        var scale = grad.Select((g, k) => Math.Abs(g * theta[k])).DefaultIfEmpty(0).Max();
        return [.. Enumerable.Range(0, grad.Length).Where(k => Math.Abs(grad[k] * theta[k]) > 1e-10 * scale && scale > 0).Select(k => parameters[k])];
    }

    private RepeatedEstimate Estimate(double[][] a, double tCritAlpha, int family)
    {
        var value = Value(a);
        var (v, grad, df) = Variance(a);
        var errors = ErrorsOf(grad);
        if (!(v > 0) || !df.IsDefined)
        {
            var u = Quantity.Undefined("the variance of this estimate is zero");
            return new RepeatedEstimate(value, v > 0 ? Quantity.Of(Math.Sqrt(v)) : u, df, u, u, errors);
        }

        var se = Math.Sqrt(v);
        var t = Probability.TCritical(tCritAlpha / family, df.Value);
        return new RepeatedEstimate(value, Quantity.Of(se), df, Quantity.Of(value - (t * se)), Quantity.Of(value + (t * se)), errors);
    }

    /// <summary>The marginal means of the crossing of <paramref name="factors"/> (design factors, between or within), levels varying last factor fastest.</summary>
    public IReadOnlyList<RepeatedMean> Means(IReadOnlyList<string> factors, double alpha)
    {
        ArgumentNullException.ThrowIfNull(factors);
        var idx = factors.Select(FactorIndex).ToArray();
        if (idx.Any(i => i < 0))
        {
            throw new ArgumentException("a factor is not part of the design", nameof(factors));
        }

        var list = new List<RepeatedMean>();
        foreach (var codes in RepeatedLayoutBuilder.Combinations([.. factors.Select(f => LevelsOf(f).Count)]))
        {
            var a = Coefficients(idx, codes);
            list.Add(new RepeatedMean([.. codes.Select((c, i) => LevelsOf(factors[i])[c])], Estimate(a, alpha, 1)));
        }

        return list;
    }

    /// <summary>
    /// True when every pairwise difference of the means of <paramref name="factors"/> rests on one
    /// and the same error stratum (classical route): the condition for Tukey's studentized range.
    /// </summary>
    public bool SingleError(IReadOnlyList<string> factors)
    {
        ArgumentNullException.ThrowIfNull(factors);
        if (Route != RepeatedMeansRoute.Strata)
        {
            return false;
        }

        var idx = factors.Select(FactorIndex).ToArray();
        var combos = RepeatedLayoutBuilder.Combinations([.. factors.Select(f => LevelsOf(f).Count)]).ToList();
        string? only = null;
        for (var i = 0; i < combos.Count; i++)
        {
            for (var j = i + 1; j < combos.Count; j++)
            {
                var (_, grad, _) = Variance(Minus(Coefficients(idx, combos[i]), Coefficients(idx, combos[j])));
                var errors = ErrorsOf(grad);
                if (errors.Length != 1 || (only is not null && !string.Equals(only, errors[0], StringComparison.Ordinal)))
                {
                    return false;
                }

                only = errors[0];
            }
        }

        return true;
    }

    /// <summary>Every pairwise difference of the means of <paramref name="factors"/>, adjusted as one family.</summary>
    public IReadOnlyList<RepeatedPair> Pairs(IReadOnlyList<string> factors, RepeatedPairAdjustment adjustment, double alpha)
    {
        ArgumentNullException.ThrowIfNull(factors);
        var idx = factors.Select(FactorIndex).ToArray();
        var combos = RepeatedLayoutBuilder.Combinations([.. factors.Select(f => LevelsOf(f).Count)]).ToList();
        var coef = combos.Select(c => Coefficients(idx, c)).ToList();
        var labels = combos.Select(c => (IReadOnlyList<string>)[.. c.Select((x, i) => LevelsOf(factors[i])[x])]).ToList();
        var pairs = new List<(int I, int J)>();
        for (var i = 0; i < combos.Count; i++)
        {
            for (var j = i + 1; j < combos.Count; j++)
            {
                pairs.Add((i, j));
            }
        }

        return Family(pairs.Select(p => (labels[p.I], labels[p.J], Minus(coef[p.I], coef[p.J]))).ToList(), combos.Count, adjustment, alpha);
    }

    private List<RepeatedPair> Family(List<(IReadOnlyList<string> A, IReadOnlyList<string> B, double[][] Coef)> list, int k, RepeatedPairAdjustment adjustment, double alpha)
    {
        var m = list.Count;
        var raw = new List<(double Est, double Var, Quantity Df, string[] Errors, Quantity T, Quantity P)>();
        foreach (var (_, _, c) in list)
        {
            var est = Value(c);
            var (v, grad, df) = Variance(c);
            var t = v > 0 ? Quantity.Of(est / Math.Sqrt(v)) : Quantity.Undefined("the variance of this difference is zero");
            var p = t.IsDefined && df.IsDefined ? Quantity.Of(Probability.TTwoSided(t.Value, df.Value)) : Quantity.Undefined(t.Reason ?? df.Reason!);
            raw.Add((est, v, df, ErrorsOf(grad), t, p));
        }

        Quantity[] adjusted = adjustment switch
        {
            RepeatedPairAdjustment.Holm => PValueAdjustment.Adjust([.. raw.Select(r => r.P)], PValueAdjustmentMethod.Holm),
            RepeatedPairAdjustment.Bonferroni => PValueAdjustment.Adjust([.. raw.Select(r => r.P)], PValueAdjustmentMethod.Bonferroni),
            _ => [.. raw.Select(r => r.T.IsDefined && r.Df.IsDefined ? Quantity.Of(StudentizedRange.Upper(Math.Abs(r.T.Value) * Math.Sqrt(2), k, r.Df.Value)) : r.P)],
        };

        var result = new List<RepeatedPair>();
        for (var i = 0; i < m; i++)
        {
            var r = raw[i];
            Quantity se = r.Var > 0 ? Quantity.Of(Math.Sqrt(r.Var)) : Quantity.Undefined("the variance of this difference is zero");
            Quantity lo, hi;
            if (se.IsDefined && r.Df.IsDefined)
            {
                var crit = adjustment == RepeatedPairAdjustment.Tukey
                    ? StudentizedRange.UpperQuantile(alpha, k, r.Df.Value) / Math.Sqrt(2)
                    : Probability.TCritical(alpha / m, r.Df.Value);
                lo = Quantity.Of(r.Est - (crit * se.Value));
                hi = Quantity.Of(r.Est + (crit * se.Value));
            }
            else
            {
                lo = hi = Quantity.Undefined(se.Reason ?? r.Df.Reason!);
            }

            result.Add(new RepeatedPair(list[i].A, list[i].B, new RepeatedEstimate(r.Est, se, r.Df, lo, hi, r.Errors), r.T, r.P, adjusted[i]));
        }

        return result;
    }

    /// <summary>
    /// The simple effects of <paramref name="by"/> at each level of <paramref name="at"/>: the F test
    /// of the by means at that level and their pairs (one family per level).
    /// </summary>
    public IReadOnlyList<RepeatedSimpleEffect> SimpleEffects(string by, string at, RepeatedPairAdjustment adjustment, double alpha)
    {
        var bi = FactorIndex(by);
        var ai = FactorIndex(at);
        var byLevels = LevelsOf(by);
        var atLevels = LevelsOf(at);
        var k = byLevels.Count;
        var list = new List<RepeatedSimpleEffect>();
        for (var l = 0; l < atLevels.Count; l++)
        {
            var coef = Enumerable.Range(0, k).Select(b => Coefficients([bi, ai], [b, l])).ToList();
            var rows = Enumerable.Range(1, k - 1).Select(b => Minus(coef[b], coef[0])).ToList();
            var (f, df, errors) = WaldF(rows);
            var p = f.IsDefined && df.IsDefined ? Quantity.Of(Probability.FUpper(f.Value, k - 1, df.Value)) : Quantity.Undefined(f.Reason ?? df.Reason!);
            var pairs = new List<(IReadOnlyList<string>, IReadOnlyList<string>, double[][])>();
            for (var i = 0; i < k; i++)
            {
                for (var j = i + 1; j < k; j++)
                {
                    pairs.Add(([byLevels[i]], [byLevels[j]], Minus(coef[i], coef[j])));
                }
            }

            list.Add(new RepeatedSimpleEffect(atLevels[l], k - 1, df, f, p, errors, Family(pairs, k, adjustment, alpha)));
        }

        return list;
    }

    /// <summary>Wald F of the rows (q contrasts) with the multi-direction Satterthwaite df.</summary>
    private (Quantity F, Quantity Df, string[] Errors) WaldF(List<double[][]> rows)
    {
        var q = rows.Count;
        var s = Matrix<double>.Build.Dense(q, q, (i, j) => total(rows[i], rows[j]));
        var partMats = Enumerable.Range(0, theta.Length).Select(_ => Matrix<double>.Build.Dense(q, q)).ToArray();
        var diagonal = new List<double[]>();
        for (var i = 0; i < q; i++)
        {
            for (var j = 0; j < q; j++)
            {
                var d = parts(rows[i], rows[j]);
                for (var r = 0; r < theta.Length; r++)
                {
                    partMats[r][i, j] = d[r];
                }

                if (i == j)
                {
                    diagonal.Add(d);
                }
            }
        }

        var lm = Vector<double>.Build.Dense(q, i => Value(rows[i]));
        var errorsSet = new SortedSet<string>(StringComparer.Ordinal);
        foreach (var d in diagonal)
        {
            foreach (var e in ErrorsOf(d))
            {
                errorsSet.Add(e);
            }
        }

        var errors = parameters.Where(errorsSet.Contains).ToArray();
        var evd = s.Evd(Symmetricity.Symmetric);
        if (evd.EigenValues.Any(e => !(e.Real > 1e-12 * Math.Max(1, s.Diagonal().AbsoluteMaximum()))))
        {
            var u = Quantity.Undefined("the differences have no variance to test them against");
            return (u, u, errors);
        }

        var f = lm.DotProduct(s.Solve(lm)) / q;
        var nus = new double[q];
        for (var i = 0; i < q; i++)
        {
            var d = evd.EigenValues[i].Real;
            var uvec = evd.EigenVectors.Column(i);
            var g = Vector<double>.Build.Dense(theta.Length, r => uvec.DotProduct(partMats[r] * uvec));
            nus[i] = 2 * d * d / g.DotProduct(thetaCov * g);
        }

        Quantity df;
        if (strataDf is not null && errors.Length == 1)
        {
            df = Quantity.Of(strataDf[Array.IndexOf(parameters, errors[0])]);
        }
        else if (nus.All(v => double.IsFinite(v) && v > 0) && (q == 1 || nus.Max() - nus.Min() <= 1e-9 * nus.Max()))
        {
            df = Quantity.Of(nus.Average());
        }
        else
        {
            var e = nus.Where(v => v > 2).Sum(v => v / (v - 2));
            df = nus.All(v => v > 2) && e > q
                ? Quantity.Of(2 * e / (e - q))
                : Quantity.Undefined("the Satterthwaite df is not defined for this test (a direction of it has 2 df or fewer)");
        }

        return (Quantity.Of(f), df, errors);
    }

    /// <summary>The orthonormal Helmert basis of k levels (rows): the mean direction 1/√k, then the Helmert contrasts.</summary>
    private static double[,] Helmert(int k)
    {
        var h = new double[k, k];
        for (var i = 0; i < k; i++)
        {
            h[0, i] = 1 / Math.Sqrt(k);
        }

        for (var j = 1; j < k; j++)
        {
            var norm = Math.Sqrt(j * (j + 1.0));
            for (var i = 0; i < j; i++)
            {
                h[j, i] = 1 / norm;
            }

            h[j, j] = -j / norm;
        }

        return h;
    }

    /// <summary>(⊗ H_f) a: the Helmert basis applied along every within factor (last factor fastest).</summary>
    private static double[] Transform(double[] a, int[] counts, double[][,] helmert)
    {
        var v = (double[])a.Clone();
        var w = v.Length;
        var stride = 1;
        var fibre = new double[counts.Length == 0 ? 0 : counts.Max()];
        for (var f = counts.Length - 1; f >= 0; f--)
        {
            var k = counts[f];
            var h = helmert[f];
            var block = stride * k;
            for (var start = 0; start < w; start += block)
            {
                for (var off = 0; off < stride; off++)
                {
                    for (var l = 0; l < k; l++)
                    {
                        fibre[l] = v[start + off + (l * stride)];
                    }

                    for (var r = 0; r < k; r++)
                    {
                        double acc = 0;
                        for (var l = 0; l < k; l++)
                        {
                            acc += h[r, l] * fibre[l];
                        }

                        v[start + off + (r * stride)] = acc;
                    }
                }
            }

            stride = block;
        }

        return v;
    }

    private static void AddCells(Matrix<double> target, Matrix<double> local, List<int> rows, int[] cellOf)
    {
        for (var i = 0; i < rows.Count; i++)
        {
            for (var j = 0; j < rows.Count; j++)
            {
                target[cellOf[rows[i]], cellOf[rows[j]]] += local[i, j];
            }
        }
    }

    private static string Key(int[] codes) => string.Join(",", codes.Select(c => c.ToString(CultureInfo.InvariantCulture)));

}
