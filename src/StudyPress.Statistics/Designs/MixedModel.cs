using System.Globalization;
using MathNet.Numerics.LinearAlgebra;
using MathNet.Numerics.LinearAlgebra.Factorization;

namespace StudyPress.Statistics.Designs;

/// <summary>
/// A REML variance component. <paramref name="AtBoundary"/>: the estimate is zero because the
/// likelihood is largest there (a singular fit). <paramref name="StandardError"/> from the inverse
/// expected information (not defined at the boundary). The interval is Satterthwaite's: the
/// estimate taken as σ² χ²_ν / ν with ν = 2 σ̂⁴ / Var(σ̂²) (<paramref name="Df"/>), giving
/// [ν σ̂² / χ²_{ν, α/2}, ν σ̂² / χ²_{ν, 1−α/2}] at 95 % (upper quantiles; Satterthwaite 1946).
/// On balanced data with all estimates positive this is the interval of the ANOVA method.
/// </summary>
public sealed record RemlComponent(
    string Term,
    TermKind Kind,
    double Variance,
    bool AtBoundary,
    Quantity Sd,
    Quantity StandardError,
    Quantity Df,
    Quantity CiLow,
    Quantity CiHigh);

/// <summary>
/// The F test of a fixed treatment term: Wald F of its sum-to-zero coefficients (the type 3
/// hypothesis) with Satterthwaite denominator df.
/// </summary>
public sealed record RemlFixedTest(string Term, int NumeratorDf, Quantity F, Quantity DfDenominator, Quantity P);

/// <summary>The REML fit of a design's linear mixed model.</summary>
/// <param name="LogLikelihood">The restricted log-likelihood at the estimates, with its 2π constant.</param>
/// <param name="Converged">Whether the iterations met the convergence rule (<see cref="ConvergenceNote"/> says which).</param>
/// <param name="Singular">True when a variance component is estimated at zero.</param>
/// <param name="ConditionalResiduals">y − Xβ̂ − Zû, in input order.</param>
public sealed record RemlResult(
    IReadOnlyList<RemlComponent> Components,
    IReadOnlyList<RemlFixedTest> Tests,
    double LogLikelihood,
    bool Converged,
    int Iterations,
    bool Singular,
    string ConvergenceNote,
    double[] ConditionalResiduals)
{
    /// <summary>The component of <paramref name="term"/> (or <see cref="StrataAnova.ResidualName"/>).</summary>
    public RemlComponent Component(string term) =>
        Components.FirstOrDefault(c => string.Equals(c.Term, term, StringComparison.Ordinal))
        ?? throw new KeyNotFoundException("no component " + term);

    /// <summary>The test of the fixed term <paramref name="term"/>.</summary>
    public RemlFixedTest Test(string term) =>
        Tests.FirstOrDefault(c => string.Equals(c.Term, term, StringComparison.Ordinal))
        ?? throw new KeyNotFoundException("no test " + term);

    /// <summary>The fixed-effect estimates, their covariance and Satterthwaite df of any combination (null only for results built outside <see cref="MixedModel"/>).</summary>
    public RemlFixedEffects? FixedEffects { get; init; }
}

/// <summary>
/// Linear mixed model of a design by restricted maximum likelihood, for unbalanced data and
/// missing plots. The terms are those of <see cref="StrataAnova"/> (same roles, same derivation):
/// treatment terms are fixed (sum-to-zero coding, all interactions); blocks, random terms and plot
/// errors are random effects with one variance each; the finest term that identifies single
/// observations is the residual.
/// <para>
/// Model y = Xβ + Σ Z_r u_r + e, V = σ²_e I + Σ σ²_r Z_r Z_r'. The penalized least-squares
/// system of Bates et al. (2015, "Fitting linear mixed-effects models using lme4", J. Stat. Softw.
/// 67(1)), M = [ΛZ'ZΛ + I, ΛZ'X; X'ZΛ, X'X] with Λ = diag √(σ²_r/σ²_e), is solved without forming
/// it. The random term with the most levels (the "cells") is eliminated together with every random
/// term its cells are nested in (batch × operator cells in batches, sub-plots in whole plots in
/// blocks), taken in order of decreasing levels while the groups of cells they join hold at most
/// <see cref="MaxGroupCells"/> cells; their block of M is then block diagonal over these groups.
/// In a group (cells c with n_c rows, B their indicators, N = diag n_c) every eliminated Z_e is
/// B E_e, so A₁ = (I + Σ_E γ_e Z_e Z_e')⁻¹ = (I − BN⁻¹B') + B N^−½ W N^−½ B' with
/// W = (I + N^½ K N^½)⁻¹, K = Σ_E γ_e E_e E_e' (a small dense matrix per group; for one eliminated
/// term W = diag 1/(1 + γ n_c)). What remains is a dense Cholesky factor of
/// S = R̃'A₁R̃ + diag(I, 0), R̃ = [Z_rest Λ_rest, X], whose order is the fixed-effect columns plus
/// the levels of the terms not eliminated (the crossed ones; <see cref="MaxDenseColumns"/>).
/// Then σ²_e P = A₁ − U S⁻¹U' with U = A₁R̃; log|M| = Σ_g log|I + N^½KN^½| + log|S|;
/// Cov(β̂) = σ²_e [S⁻¹]_XX. Every trace the scores and information need is written with
/// T'A₁ᵏT (T = [Z_rest X y]; k = 1, 2, 3) and, per eliminated term, T'A₁Z_eZ_e'A₁T,
/// T'A₁²Z_eZ_e'A₁T and T'A₁Z_fZ_f'A₁Z_eZ_e'A₁T, all sums over the groups of products of their small
/// matrices, so no n × n matrix and no matrix over the eliminated levels is formed; T'A₁ᵏT is
/// accumulated as within-cell sums plus Gram matrices of the groups' terms (W = L⁻ᵀL⁻¹), so
/// nothing near-equal is subtracted. On the designs checked (the tests' unbalanced nested,
/// sub-sampled split-plot and crossed layouts) the results equal those of the previous
/// implementations (a dense QR of the whole augmented matrix; one term eliminated) to 1e-9.
/// </para>
/// <para>
/// Estimation by Fisher scoring on (σ²_r, σ²_e) (Harville 1977, "Maximum likelihood approaches to
/// variance component estimation", JASA 72, 320-338): score ½(y'PV_rPy − tr PV_r), expected
/// information ½ tr(PV_rPV_s), with step halving so the restricted likelihood never falls, and
/// components that would go negative held at zero while the score points below zero (a boundary
/// estimate, reported as a singular fit; the held set is re-checked at every iteration, so a
/// component leaves zero as soon as its score turns positive). Start: the residual mean square of
/// the fixed-effects fit split equally. Converged when the free scores are below 1e-9 of their
/// scale and no component's step exceeds 1e-10 of the component (or 1e-12 of the largest, for a
/// component below 1e-2 of it); otherwise the result says it did not converge. (The earlier rule,
/// every step below 1e-12 of the largest component, asked for more than the rounding of the scores
/// allows: once converged, the steps of a weakly determined variance wander at 1e-11 to 1e-10 of
/// it, and the fit went on until one step happened to be smaller, 26 to 65 iterations instead of
/// 6 on the nested benchmark. The boundary was not the cause: a variance held at zero does not move.)
/// </para>
/// <para>
/// Fixed-effect F tests: F = (Lβ̂)'(L Cov(β̂) L')⁻¹(Lβ̂)/q for the coefficients of a term;
/// denominator df by Satterthwaite's method as set out for mixed models by Fai and Cornelius
/// (1996, J. Statist. Comput. Simul. 54, 363-378) and Kuznetsova, Brockhoff and Christensen (2017,
/// "lmerTest package", J. Stat. Softw. 82(13)): with L Cov L' = U D U', ν_i = 2 d_i² / (g_i' A g_i),
/// g_i the gradient of u_i' L Cov(β̂) L' u_i in the variance parameters and A the inverse expected
/// information (here; lmerTest uses the observed Hessian), E = Σ ν_i/(ν_i − 2),
/// ν = 2E/(E − q). On balanced data with estimates inside the parameter space these F and df are
/// those of the classical strata.
/// </para>
/// </summary>
public static class MixedModel
{
    private const int MaxIterations = 500;

    /// <summary>
    /// Most columns the REML fit keeps dense: the fixed-effect columns plus the levels of every
    /// random term that is not eliminated (the one with the most levels and those it is nested in
    /// are absorbed group by group, see <see cref="MixedModel"/>). Each iteration factorizes and multiplies matrices of that order, so
    /// time grows with its cube and memory with its square (about 15 such matrices: 120 MB at the
    /// bound). Larger models are refused with a <see cref="DesignIssueKind.TooLarge"/> issue.
    /// </summary>
    public const int MaxDenseColumns = 1000;

    /// <summary>
    /// Most work of absorbing the eliminated random terms, counted as Σ_g c_g (w_g + c_g)² over the
    /// groups g (c_g the levels of the largest term in the group, w_g the dense columns its rows
    /// touch); each iteration does this a few times, so time and the stored sums stay bounded. Larger models are refused with a <see cref="DesignIssueKind.TooLarge"/> issue.
    /// </summary>
    public const long MaxAbsorbWork = 200_000_000;

    /// <summary>
    /// Most levels of the largest random term in one group of the elimination: a random term in
    /// whose levels those of the largest are nested is absorbed with it only while no group of
    /// levels joined through the absorbed terms grows beyond this (each group's matrices are dense
    /// over its levels).
    /// </summary>
    public const int MaxGroupCells = 64;

    /// <summary>The first problem with the declaration or data for the mixed model, or null.</summary>
    public static DesignIssue? Check(IReadOnlyList<DesignFactor> factors, DesignData data)
    {
        ArgumentNullException.ThrowIfNull(factors);
        ArgumentNullException.ThrowIfNull(data);
        return Prepare(factors, data, out _);
    }

    /// <summary>Fits the model by REML; throws <see cref="ArgumentException"/> when <see cref="Check"/> finds a problem.</summary>
    public static RemlResult FitReml(IReadOnlyList<DesignFactor> factors, DesignData data)
    {
        ArgumentNullException.ThrowIfNull(factors);
        ArgumentNullException.ThrowIfNull(data);
        var issue = Prepare(factors, data, out var setup);
        if (issue is not null)
        {
            throw new ArgumentException(issue.Message, nameof(data));
        }

        return Fit(setup!, data.Response);
    }

    private sealed class Setup
    {
        public required Matrix<double> X { get; init; }
        public required List<(string Name, int Start, int Count)> FixedTerms { get; init; }
        public required List<(string Name, TermKind Kind, int[] CellOf, int Cells)> Random { get; init; }
        public required Elimination? Elimination { get; init; }

        /// <summary>Each treatment factor's levels in coding order (by factor name), and each fixed term's factors (for <see cref="RemlFixedEffects"/>).</summary>
        public Dictionary<string, string[]> Levels { get; init; } = new(StringComparer.Ordinal);

        public List<string[]> TermFactors { get; init; } = [];
    }

    private static DesignIssue? Prepare(IReadOnlyList<DesignFactor> factors, DesignData data, out Setup? setup)
    {
        setup = null;
        var issue = StrataAnova.Build(factors, data, requireBalance: false, out var model);
        if (issue is not null)
        {
            return issue;
        }

        var n = model!.N;
        var nested = factors.FirstOrDefault(f => f.Role == FactorRole.Treatment && f.NestedIn.Count > 0);
        if (nested is not null)
        {
            return new DesignIssue(DesignIssueKind.Declaration, "a treatment nested in another factor (" + nested.Name + ") is not supported by the mixed model", [nested.Name]);
        }

        // Fixed part: intercept and every treatment term in sum-to-zero coding.
        var mainCols = new Dictionary<int, double[][]>();
        var levelsOf = new Dictionary<string, string[]>(StringComparer.Ordinal);
        for (var f = 0; f < factors.Count; f++)
        {
            if (factors[f].Role != FactorRole.Treatment)
            {
                continue;
            }

            var labels = data.Labels[f];
            var levels = new List<string>();
            var seen = new HashSet<string>(StringComparer.Ordinal);
            foreach (var l in labels)
            {
                if (seen.Add(l))
                {
                    levels.Add(l);
                }
            }

            var cols = new double[levels.Count - 1][];
            for (var c = 0; c < cols.Length; c++)
            {
                cols[c] = new double[n];
            }

            for (var i = 0; i < n; i++)
            {
                var li = levels.IndexOf(labels[i]);
                for (var c = 0; c < cols.Length; c++)
                {
                    cols[c][i] = li == c ? 1 : li == levels.Count - 1 ? -1 : 0;
                }
            }

            mainCols[f] = cols;
            levelsOf[factors[f].Name] = [.. levels];
        }

        var columns = new List<double[]> { Enumerable.Repeat(1.0, n).ToArray() };
        var fixedTerms = new List<(string, int, int)>();
        var termFactors = new List<string[]>();
        var random = new List<(string Name, TermKind Kind, int[] CellOf, int Cells)>();
        foreach (var t in model.Terms)
        {
            if (t.Kind == TermKind.Treatment)
            {
                var prod = new List<double[]> { Enumerable.Repeat(1.0, n).ToArray() };
                foreach (var f in t.Factors)
                {
                    var next = new List<double[]>();
                    foreach (var a in prod)
                    {
                        foreach (var b in mainCols[f])
                        {
                            var v = new double[n];
                            for (var i = 0; i < n; i++)
                            {
                                v[i] = a[i] * b[i];
                            }

                            next.Add(v);
                        }
                    }

                    prod = next;
                }

                fixedTerms.Add((t.Name, columns.Count, prod.Count));
                termFactors.Add([.. t.Factors.Select(f => factors[f].Name)]);
                columns.AddRange(prod);
            }
            else if (t.Cells < n)
            {
                random.Add((t.Name, t.Kind, t.CellOf, t.Cells));
            }
        }

        var p = columns.Count;
        var elim = Eliminate(random);
        var eliminated = elim?.Terms ?? [];
        var others = random.Where((_, i) => !eliminated.Contains(i)).ToList();
        var dense = p + others.Sum(r => r.Cells);
        if (dense > MaxDenseColumns)
        {
            return new DesignIssue(
                DesignIssueKind.TooLarge,
                string.Create(CultureInfo.InvariantCulture, $"the mixed model of these data keeps {dense} columns dense ({p} fixed-effect columns and {string.Join(", ", others.Select(r => r.Cells + " levels of " + r.Name))}; the {string.Join(", ", eliminated.Select(e => random[e].Cells + " levels of " + random[e].Name))} are absorbed), more than the {MaxDenseColumns} this version fits: its time grows with the cube of that number"),
                [.. others.OrderByDescending(r => r.Cells).Take(1).Select(r => r.Name)]);
        }

        if (elim is not null)
        {
            // Σ_g c_g (w_g + c_g)² over the groups: c_g cells, w_g the dense columns their rows touch.
            var big = random[elim.Terms[0]];
            var cellsIn = new long[elim.Groups];
            var rowsIn = new long[elim.Groups];
            var seenCell = new bool[big.Cells];
            foreach (var c in big.CellOf)
            {
                rowsIn[elim.GroupOf[c]]++;
                if (!seenCell[c])
                {
                    seenCell[c] = true;
                    cellsIn[elim.GroupOf[c]]++;
                }
            }

            var qr = dense - p;
            var work = 0.0;
            for (var g = 0; g < elim.Groups; g++)
            {
                work += cellsIn[g] * Math.Pow(Math.Min(rowsIn[g] * others.Count, qr) + p + 1 + cellsIn[g], 2);
            }

            if (work > MaxAbsorbWork)
            {
                return new DesignIssue(
                    DesignIssueKind.TooLarge,
                    string.Create(CultureInfo.InvariantCulture, $"the mixed model of these data absorbs {big.Cells} levels of {big.Name} against {dense} dense columns ({p} fixed-effect columns), about {work:0.#e0} operations per step, more than the {MaxAbsorbWork:0.#e0} this version does"),
                    [big.Name]);
            }
        }

        if (n - p < 1)
        {
            return new DesignIssue(DesignIssueKind.TooFewObservations, "there are fewer observations than fixed effects to estimate", []);
        }

        var x = Matrix<double>.Build.Dense(n, p, (i, j) => columns[j][i]);
        var yv = Vector<double>.Build.DenseOfArray(data.Response);
        var fit = x.QR(MathNet.Numerics.LinearAlgebra.Factorization.QRMethod.Thin).Solve(yv);
        var rss = (yv - (x * fit)).L2Norm();
        if (!(rss > 1e-13 * Math.Max(yv.L2Norm(), double.Epsilon)))
        {
            return new DesignIssue(DesignIssueKind.NoVariation, "the response does not vary around the treatment means, so no variance can be estimated", []);
        }

        var r = x.QR(MathNet.Numerics.LinearAlgebra.Factorization.QRMethod.Thin).R;
        var norms = Enumerable.Range(0, p).Select(j => x.Column(j).L2Norm()).ToArray();
        for (var j = 0; j < p; j++)
        {
            if (Math.Abs(r[j, j]) <= 1e-9 * norms[j])
            {
                var term = fixedTerms.FirstOrDefault(ft => j >= ft.Item2 && j < ft.Item2 + ft.Item3).Item1 ?? "the intercept";
                return new DesignIssue(DesignIssueKind.MissingCombination, "the treatment combinations observed do not allow " + term + " to be estimated: a whole combination of treatment levels has no observations", []);
            }
        }

        // The fixed-effects starting point of the fit needs X'X factorized (a rank within rounding).
        try
        {
            _ = x.TransposeThisAndMultiply(x).Cholesky();
        }
        catch (ArgumentException)
        {
            return new DesignIssue(DesignIssueKind.MissingCombination, "the treatment combinations observed are too close to not allowing every fixed effect to be estimated (their columns are collinear within rounding)", []);
        }

        setup = new Setup { X = x, FixedTerms = fixedTerms, Random = random, Elimination = elim, Levels = levelsOf, TermFactors = termFactors };
        return null;
    }

    /// <summary>
    /// Which random terms the fit eliminates level by level: the term with the most levels (the
    /// first on ties; its levels are the "cells"), then, in order of decreasing levels, every other
    /// random term in which those cells are nested (each cell inside one of its levels) as long as
    /// the groups stay small: a group is a set of cells joined by sharing a level of an eliminated
    /// term, and no group may hold more than <see cref="MaxGroupCells"/> cells. The eliminated
    /// block of the mixed-model equations is then block diagonal over the groups.
    /// </summary>
    private sealed class Elimination
    {
        public required int[] Terms { get; init; }     // into Setup.Random; Terms[0] the finest (most levels)
        public required int[] GroupOf { get; init; }   // cell of Terms[0] → group
        public required int Groups { get; init; }
    }

    private static Elimination? Eliminate(List<(string Name, TermKind Kind, int[] CellOf, int Cells)> random)
    {
        var big = -1;
        for (var t = 0; t < random.Count; t++)
        {
            if (big < 0 || random[t].Cells > random[big].Cells)
            {
                big = t;
            }
        }

        if (big < 0)
        {
            return null;
        }

        static int Find(int[] par, int a)
        {
            while (par[a] != a)
            {
                par[a] = par[par[a]];
                a = par[a];
            }

            return a;
        }

        var cells = random[big].Cells;
        var bigOf = random[big].CellOf;
        var parent = Enumerable.Range(0, cells).ToArray();
        var terms = new List<int> { big };
        foreach (var t in Enumerable.Range(0, random.Count).Where(t => t != big).OrderByDescending(t => random[t].Cells))
        {
            var levelOf = new int[cells];
            Array.Fill(levelOf, -1);
            var nested = true;
            for (var i = 0; i < bigOf.Length && nested; i++)
            {
                var c = bigOf[i];
                var lv = random[t].CellOf[i];
                if (levelOf[c] < 0)
                {
                    levelOf[c] = lv;
                }
                else
                {
                    nested = levelOf[c] == lv;
                }
            }

            if (!nested)
            {
                continue;
            }

            var trial = (int[])parent.Clone();
            var first = new int[random[t].Cells];
            Array.Fill(first, -1);
            for (var c = 0; c < cells; c++)
            {
                var lv = levelOf[c];
                if (first[lv] < 0)
                {
                    first[lv] = c;
                }
                else
                {
                    var ra = Find(trial, c);
                    var rb = Find(trial, first[lv]);
                    if (ra != rb)
                    {
                        trial[ra] = rb;
                    }
                }
            }

            var size = new int[cells];
            var most = 0;
            for (var c = 0; c < cells; c++)
            {
                most = Math.Max(most, ++size[Find(trial, c)]);
            }

            if (most <= MaxGroupCells)
            {
                parent = trial;
                terms.Add(t);
            }
        }

        var groupOf = new int[cells];
        var id = new Dictionary<int, int>();
        for (var c = 0; c < cells; c++)
        {
            var root = Find(parent, c);
            if (!id.TryGetValue(root, out var g))
            {
                g = id.Count;
                id[root] = g;
            }

            groupOf[c] = g;
        }

        return new Elimination { Terms = [.. terms], GroupOf = groupOf, Groups = id.Count };
    }

    /// <summary>One group of the elimination: its cells, the dense columns its rows touch and the cell sums of T over them.</summary>
    private sealed class Group
    {
        public required int Rows { get; init; }
        public required int[] Cells { get; init; }         // global cell ids, ascending
        public required double[] Root { get; init; }       // √n_c per local cell
        public required int[] Cols { get; init; }          // dense columns of T touched (ascending), width wg
        public required double[] SHat { get; init; }       // N^−½ B'T_g: C × wg, row-major
        public required int[][] Level { get; init; }       // per eliminated term: local level of each local cell
        public required int[] Levels { get; init; }        // per eliminated term: its levels in this group
    }

    /// <summary>
    /// The fixed cross-products of the data, arranged for the fit. The eliminated terms
    /// (<see cref="Elimination"/>) are absorbed group by group; every other column (the levels of
    /// the other random terms, the fixed-effect columns and the response: T = [Z_rest X y], width
    /// w) is kept dense.
    /// </summary>
    private sealed class Layout
    {
        public required int N { get; init; }
        public required int P { get; init; }
        public required int[] Elim { get; init; }              // eliminated terms (Setup.Random indices), finest first; empty without random terms
        public required int[] Rest { get; init; }              // the other random terms, in order
        public required int[] RestStart { get; init; }         // first z-column of each (by Setup.Random index)
        public required int Qr { get; init; }                  // z-columns kept dense
        public required int W { get; init; }                   // Qr + P + 1
        public required double[] Within { get; init; }         // T'T − Σ_c (T'1_c)(T'1_c)'/n_c over the finest cells, W × W row-major
        public required int[]? CellOf { get; init; }           // finest cell of each row
        public required int[] CellGroup { get; init; }         // cell → group
        public required int[] CellLocal { get; init; }         // cell → index in its group
        public required Group[] Groups { get; init; }
        public required double[] Y { get; init; }              // centred response
    }

    private static Layout Arrange(Setup s, double[] y)
    {
        var x = s.X;
        var n = x.RowCount;
        var p = x.ColumnCount;
        var m = s.Random.Count;
        var elim = s.Elimination;
        var big = elim is null ? -1 : elim.Terms[0];
        var rest = Enumerable.Range(0, m).Where(r => elim is null || !elim.Terms.Contains(r)).ToArray();
        var restStart = new int[m];
        var qr = 0;
        foreach (var r in rest)
        {
            restStart[r] = qr;
            qr += s.Random[r].Cells;
        }

        var w = qr + p + 1;
        var xr = x.ToRowArrays();
        var cells = big < 0 ? 0 : s.Random[big].Cells;
        var count = new int[cells];
        var zs = new SortedDictionary<int, double>[cells];
        var dense = new double[cells][];
        for (var j = 0; j < cells; j++)
        {
            zs[j] = [];
            dense[j] = new double[p + 1];
        }

        for (var i = 0; i < n && big >= 0; i++)
        {
            var j = s.Random[big].CellOf[i];
            count[j]++;
            foreach (var r in rest)
            {
                var col = restStart[r] + s.Random[r].CellOf[i];
                zs[j][col] = zs[j].GetValueOrDefault(col) + 1;
            }

            for (var c = 0; c < p; c++)
            {
                dense[j][c] += xr[i][c];
            }

            dense[j][p] += y[i];
        }

        var sIdx = new int[cells][];
        var sVal = new double[cells][];
        for (var j = 0; j < cells; j++)
        {
            sIdx[j] = [.. zs[j].Keys, .. Enumerable.Range(qr, p + 1)];
            sVal[j] = [.. zs[j].Values, .. dense[j]];
        }

        // Σ_i (t_i − t̄_c)(t_i − t̄_c)' over the rows (t̄_c the mean of the row's finest cell, or 0
        // without random terms): the within-cell cross-products, a sum of outer products, so that
        // absorbing the cells later adds positive terms instead of subtracting near-equal ones.
        var within = new double[(long)w * w];
        var zRow = new int[rest.Length];
        for (var i = 0; i < n; i++)
        {
            for (var t = 0; t < rest.Length; t++)
            {
                zRow[t] = restStart[rest[t]] + s.Random[rest[t]].CellOf[i];
            }

            int[] idx;
            double[] dev;
            if (big >= 0)
            {
                var j = s.Random[big].CellOf[i];
                idx = sIdx[j];
                dev = [.. sVal[j].Select(v => -v / count[j])];
                foreach (var col in zRow)
                {
                    dev[Array.BinarySearch(idx, 0, idx.Length - p - 1, col)] += 1;
                }

                for (var c = 0; c < p; c++)
                {
                    dev[idx.Length - p - 1 + c] += xr[i][c];
                }

                dev[idx.Length - 1] += y[i];
            }
            else
            {
                idx = [.. zRow, .. Enumerable.Range(qr, p + 1)];
                dev = [.. zRow.Select(_ => 1.0), .. xr[i], y[i]];
            }

            for (var a = 0; a < idx.Length; a++)
            {
                var baseA = (long)idx[a] * w;
                for (var b = 0; b < idx.Length; b++)
                {
                    within[baseA + idx[b]] += dev[a] * dev[b];
                }
            }
        }

        // The groups: their cells, the columns they touch and N^−½ B'T (cell sums over √n_c).
        var groupCount = elim?.Groups ?? 0;
        var members = new List<int>[groupCount];
        for (var g = 0; g < groupCount; g++)
        {
            members[g] = [];
        }

        var cellLocal = new int[cells];
        for (var c = 0; c < cells; c++)
        {
            var list = members[elim!.GroupOf[c]];
            cellLocal[c] = list.Count;
            list.Add(c);
        }

        // The cell → level map of every eliminated term (nested: one level per cell).
        var ne = elim?.Terms.Length ?? 0;
        var levelOfCell = new int[ne][];
        for (var e = 0; e < ne; e++)
        {
            levelOfCell[e] = new int[cells];
            var of = s.Random[elim!.Terms[e]].CellOf;
            for (var i = 0; i < n; i++)
            {
                levelOfCell[e][s.Random[big].CellOf[i]] = of[i];
            }
        }

        var groups = new Group[groupCount];
        for (var g = 0; g < groupCount; g++)
        {
            var gc = members[g].ToArray();
            var cols = new SortedSet<int>();
            var rows = 0;
            foreach (var c in gc)
            {
                cols.UnionWith(sIdx[c]);
                rows += count[c];
            }

            var colArr = cols.ToArray();
            var pos = new Dictionary<int, int>();
            for (var a = 0; a < colArr.Length; a++)
            {
                pos[colArr[a]] = a;
            }

            var wg = colArr.Length;
            var shat = new double[gc.Length * wg];
            var root = new double[gc.Length];
            for (var a = 0; a < gc.Length; a++)
            {
                var c = gc[a];
                root[a] = Math.Sqrt(count[c]);
                for (var b = 0; b < sIdx[c].Length; b++)
                {
                    shat[(a * wg) + pos[sIdx[c][b]]] = sVal[c][b] / root[a];
                }
            }

            var level = new int[ne][];
            var levels = new int[ne];
            for (var e = 0; e < ne; e++)
            {
                var map = new Dictionary<int, int>();
                level[e] = new int[gc.Length];
                for (var a = 0; a < gc.Length; a++)
                {
                    var lv = levelOfCell[e][gc[a]];
                    if (!map.TryGetValue(lv, out var local))
                    {
                        local = map.Count;
                        map[lv] = local;
                    }

                    level[e][a] = local;
                }

                levels[e] = map.Count;
            }

            groups[g] = new Group { Rows = rows, Cells = gc, Root = root, Cols = colArr, SHat = shat, Level = level, Levels = levels };
        }

        return new Layout
        {
            N = n,
            P = p,
            Elim = elim?.Terms ?? [],
            Rest = rest,
            RestStart = restStart,
            Qr = qr,
            W = w,
            Within = within,
            CellOf = big >= 0 ? s.Random[big].CellOf : null,
            CellGroup = elim?.GroupOf ?? [],
            CellLocal = cellLocal,
            Groups = groups,
            Y = y,
        };
    }

    // Small dense helpers over row-major arrays (the groups' matrices, at most MaxGroupCells square).

    /// <summary>Lower Cholesky factor of the c × c matrix a, in place; false when not positive definite.</summary>
    private static bool CholeskyInPlace(double[] a, int c)
    {
        for (var j = 0; j < c; j++)
        {
            var d = a[(j * c) + j];
            for (var k = 0; k < j; k++)
            {
                d -= a[(j * c) + k] * a[(j * c) + k];
            }

            if (!(d > 0) || !double.IsFinite(d))
            {
                return false;
            }

            d = Math.Sqrt(d);
            a[(j * c) + j] = d;
            for (var i = j + 1; i < c; i++)
            {
                var v = a[(i * c) + j];
                for (var k = 0; k < j; k++)
                {
                    v -= a[(i * c) + k] * a[(j * c) + k];
                }

                a[(i * c) + j] = v / d;
            }

            for (var i = 0; i < j; i++)
            {
                a[(i * c) + j] = 0;
            }
        }

        return true;
    }

    /// <summary>L⁻¹B for the lower factor L (c × c) and B (c × cols), returned new.</summary>
    private static double[] Forward(double[] l, int c, double[] b, int cols)
    {
        var res = (double[])b.Clone();
        for (var i = 0; i < c; i++)
        {
            for (var k = 0; k < i; k++)
            {
                var lik = l[(i * c) + k];
                if (lik == 0)
                {
                    continue;
                }

                for (var j = 0; j < cols; j++)
                {
                    res[(i * cols) + j] -= lik * res[(k * cols) + j];
                }
            }

            var inv = 1 / l[(i * c) + i];
            for (var j = 0; j < cols; j++)
            {
                res[(i * cols) + j] *= inv;
            }
        }

        return res;
    }

    /// <summary>A B for A (r × k) and B (k × cols).</summary>
    private static double[] Mul(double[] a, int r, int k, double[] b, int cols)
    {
        var res = new double[r * cols];
        for (var i = 0; i < r; i++)
        {
            for (var t = 0; t < k; t++)
            {
                var v = a[(i * k) + t];
                if (v == 0)
                {
                    continue;
                }

                for (var j = 0; j < cols; j++)
                {
                    res[(i * cols) + j] += v * b[(t * cols) + j];
                }
            }
        }

        return res;
    }

    /// <summary>F_e'M: the rows of M (c × cols) summed over the cells of each level of an eliminated term, weighted by √n_c.</summary>
    private static double[] LevelSums(Group gr, int e, double[] mat, int cols)
    {
        var res = new double[gr.Levels[e] * cols];
        for (var a = 0; a < gr.Cells.Length; a++)
        {
            var baseR = gr.Level[e][a] * cols;
            var rt = gr.Root[a];
            for (var j = 0; j < cols; j++)
            {
                res[baseR + j] += rt * mat[(a * cols) + j];
            }
        }

        return res;
    }

    /// <summary>Adds A'B (A, B: rows × the group's columns) into the W × W matrix res at the group's columns.</summary>
    private static void AddCross(double[] res, int w, int[] cols, double[] a, double[] b, int rows)
    {
        var wg = cols.Length;
        for (var r = 0; r < rows; r++)
        {
            var ar = r * wg;
            for (var i = 0; i < wg; i++)
            {
                var v = a[ar + i];
                if (v == 0)
                {
                    continue;
                }

                var baseI = (long)cols[i] * w;
                for (var j = 0; j < wg; j++)
                {
                    res[baseI + cols[j]] += v * b[ar + j];
                }
            }
        }
    }

    private static double[] IdentityFlat(int c)
    {
        var res = new double[c * c];
        for (var a = 0; a < c; a++)
        {
            res[(a * c) + a] = 1;
        }

        return res;
    }

    private static double[] Transpose(double[] a, int c)
    {
        var res = new double[c * c];
        for (var i = 0; i < c; i++)
        {
            for (var j = 0; j < c; j++)
            {
                res[(j * c) + i] = a[(i * c) + j];
            }
        }

        return res;
    }

    private sealed class State
    {
        public required double LogLik { get; init; }
        public required double[] Phi { get; init; }
        public required double[] Scale { get; init; }          // d: λ of each dense z-column, 1 for X and y
        public required double[][] GroupL { get; init; }       // per group: Cholesky factor of I + N^½ K N^½
        public required double[][] GroupW { get; init; }       // per group: its inverse W_g
        public required double[] K1 { get; init; }            // T'A₁T (unscaled)
        public required Cholesky<double> Chol { get; init; }   // of S = d K1 d + diag(I_z, 0) over the first k columns
        public required double[] Theta { get; init; }         // [b_rest; β]
        public required double[] Residual { get; init; }      // y − Xβ̂ − Zû (σ²_e P y)
    }

    private static RemlResult Fit(Setup s, double[] yArr)
    {
        var x = s.X;
        var n = x.RowCount;
        var p = x.ColumnCount;
        var m = s.Random.Count;
        var yMean = Groups.Mean(yArr);
        var yc = new double[n];
        for (var i = 0; i < n; i++)
        {
            yc[i] = yArr[i] - yMean; // REML is shift-invariant (intercept in X)
        }

        // REML is scale-equivariant: a response of extreme magnitude (whose squares and variances
        // would overflow or vanish, so that no starting value could be factorized) is fitted
        // divided by a power of two c (exact), and the variances (× c²), their intervals and
        // standard errors (× c²), the residuals (× c) and the log-likelihood (− (n − p) ln c) are
        // scaled back; F, df and p do not depend on c. Ordinary responses are fitted as they are.
        var magnitude = yc.Max(Math.Abs);
        var c2 = 1.0;
        var logC = 0.0;
        if (magnitude > Math.ScaleB(1.0, 64) || magnitude < Math.ScaleB(1.0, -64))
        {
            var exponent = Math.ILogB(magnitude);
            var inv = Math.ScaleB(1.0, -exponent);
            for (var i = 0; i < n; i++)
            {
                yc[i] *= inv;
            }

            c2 = Math.ScaleB(1.0, 2 * exponent);
            logC = exponent * Math.Log(2);
        }

        var y = Vector<double>.Build.DenseOfArray(yc);
        var l = Arrange(s, yc);
        var qr = l.Qr;
        var k = qr + p;
        var w = l.W;
        var elim = l.Elim;
        var ne = elim.Length;
        var cells = l.CellLocal.Length;
        var xr = x.ToRowArrays();

        Matrix<double> Block(double[] flat, int r0, int rows, int c0, int cols, double[]? dr, double[]? dc) =>
            Matrix<double>.Build.Dense(rows, cols, (i, j) => flat[((long)(r0 + i) * w) + c0 + j] * (dr is null ? 1 : dr[r0 + i]) * (dc is null ? 1 : dc[c0 + j]));

        // Cell sums of a row vector over the finest cells, as N^−½ B'v per group.
        double[][] GroupSums(double[] v)
        {
            var sums = new double[cells];
            for (var i = 0; i < n; i++)
            {
                sums[l.CellOf![i]] += v[i];
            }

            var res = new double[l.Groups.Length][];
            for (var g = 0; g < res.Length; g++)
            {
                var gr = l.Groups[g];
                res[g] = new double[gr.Cells.Length];
                for (var a = 0; a < gr.Cells.Length; a++)
                {
                    res[g][a] = sums[gr.Cells[a]] / gr.Root[a];
                }
            }

            return res;
        }

        // A₁v = v − B N^−½ (I − W) N^−½ B'v, group by group; also W N^−½ B'v per group.
        (double[] Av, double[][] Wv) ApplyA(double[][] gw, double[] v)
        {
            if (l.CellOf is null)
            {
                return ((double[])v.Clone(), []);
            }

            var sh = GroupSums(v);
            var wv = new double[sh.Length][];
            var corr = new double[cells];
            for (var g = 0; g < sh.Length; g++)
            {
                var gr = l.Groups[g];
                var c = gr.Cells.Length;
                wv[g] = Mul(gw[g], c, c, sh[g], 1);
                for (var a = 0; a < c; a++)
                {
                    corr[gr.Cells[a]] = (sh[g][a] - wv[g][a]) / gr.Root[a];
                }
            }

            var av = new double[n];
            for (var i = 0; i < n; i++)
            {
                av[i] = v[i] - corr[l.CellOf[i]];
            }

            return (av, wv);
        }

        // With V = σ²_e (I + Σ γ_r Z_r Z_r') and A₁ = (I + Σ_E γ_e Z_e Z_e')⁻¹ over the eliminated
        // terms E (block diagonal over the groups), the penalized system of Bates et al. (2015)
        // reduces, by eliminating E's levels, to S = R̃'A₁R̃ + diag(I, 0) over R̃ = [Z_rest Λ_rest, X];
        // σ²_e P = A₁ − U S⁻¹ U' with U = A₁R̃. In a group with cells c (finest eliminated levels,
        // n_c rows, B the cell indicators, N = diag n_c) every Z_e is B E_e, so
        // A₁ = (I − B N⁻¹B') + B N^−½ W N^−½ B' with W = (I + N^½ K N^½)⁻¹, K = Σ_E γ_e E_e E_e'.
        State? Eval(double[] phi)
        {
            if (!phi.All(double.IsFinite))
            {
                return null;
            }

            var se = phi[m];
            var scale = new double[w];
            foreach (var r in l.Rest)
            {
                var lam = Math.Sqrt(phi[r] / se);
                for (var c = 0; c < s.Random[r].Cells; c++)
                {
                    scale[l.RestStart[r] + c] = lam;
                }
            }

            for (var c = qr; c < w; c++)
            {
                scale[c] = 1;
            }

            var gamma = elim.Select(e => phi[e] / se).ToArray();
            var logH = 0.0;
            var k1 = (double[])l.Within.Clone();
            var gl = new double[l.Groups.Length][];
            var gw = new double[l.Groups.Length][];
            for (var g = 0; g < l.Groups.Length; g++)
            {
                var gr = l.Groups[g];
                var c = gr.Cells.Length;
                var mg = new double[c * c];
                for (var a = 0; a < c; a++)
                {
                    for (var b = 0; b < c; b++)
                    {
                        var kab = 0.0;
                        for (var e = 0; e < ne; e++)
                        {
                            if (gr.Level[e][a] == gr.Level[e][b])
                            {
                                kab += gamma[e];
                            }
                        }

                        mg[(a * c) + b] = (a == b ? 1 : 0) + (gr.Root[a] * gr.Root[b] * kab);
                    }
                }

                if (!CholeskyInPlace(mg, c))
                {
                    return null;
                }

                for (var a = 0; a < c; a++)
                {
                    logH += 2 * Math.Log(mg[(a * c) + a]);
                }

                var linv = Forward(mg, c, IdentityFlat(c), c);
                gl[g] = mg;
                gw[g] = Mul(Transpose(linv, c), c, c, linv, c); // W = L⁻ᵀL⁻¹
                var gsh = Forward(mg, c, gr.SHat, gr.Cols.Length);
                AddCross(k1, w, gr.Cols, gsh, gsh, c); // T'A₁T = within + Σ_g (L⁻¹ŝ)'(L⁻¹ŝ)
            }

            var sm = Block(k1, 0, k, 0, k, scale, scale);
            for (var c = 0; c < qr; c++)
            {
                sm[c, c] += 1;
            }

            Cholesky<double> chol;
            try
            {
                chol = sm.Cholesky();
            }
            catch (ArgumentException)
            {
                return null; // a trial point too extreme to factorize (an infinite or huge step): rejected, the step is halved
            }

            var rhs = Vector<double>.Build.Dense(k, i => scale[i] * k1[((long)i * w) + k]);
            var theta = chol.Solve(rhs).ToArray();
            for (var c = 0; c < k; c++)
            {
                logH += 2 * Math.Log(chol.Factor[c, c]);
            }

            // r = y − R̃θ; e = A₁r; the eliminated effects b_e = Λ_e Z_e'A₁r = λ_e F_e'W N^−½B'r.
            var rv = new double[n];
            for (var i = 0; i < n; i++)
            {
                var v = yc[i];
                for (var c = 0; c < p; c++)
                {
                    v -= xr[i][c] * theta[qr + c];
                }

                foreach (var r in l.Rest)
                {
                    var col = l.RestStart[r] + s.Random[r].CellOf[i];
                    v -= scale[col] * theta[col];
                }

                rv[i] = v;
            }

            var (ev, wr) = ApplyA(gw, rv);
            var prss = 0.0;
            foreach (var v in ev)
            {
                prss += v * v;
            }

            for (var c = 0; c < qr; c++)
            {
                prss += theta[c] * theta[c];
            }

            for (var g = 0; g < wr.Length; g++)
            {
                for (var e = 0; e < ne; e++)
                {
                    var lam2 = gamma[e];
                    foreach (var b in LevelSums(l.Groups[g], e, wr[g], 1))
                    {
                        prss += lam2 * b * b;
                    }
                }
            }

            var ll = -0.5 * (((n - p) * Math.Log(2 * Math.PI * se)) + logH + (prss / se));
            return new State { LogLik = ll, Phi = phi, Scale = scale, GroupL = gl, GroupW = gw, K1 = k1, Chol = chol, Theta = theta, Residual = ev };
        }

        double[] CellSums(int r, double[] v)
        {
            var sums = new double[s.Random[r].Cells];
            var cellOf = s.Random[r].CellOf;
            for (var i = 0; i < n; i++)
            {
                sums[cellOf[i]] += v[i];
            }

            return sums;
        }

        static double Dot(double[] a) => a.Sum(v => v * v);

        // tr(A B) of square matrices.
        static double TrProd(Matrix<double> a, Matrix<double> b)
        {
            var t = 0.0;
            for (var i = 0; i < a.RowCount; i++)
            {
                for (var j = 0; j < a.ColumnCount; j++)
                {
                    t += a[i, j] * b[j, i];
                }
            }

            return t;
        }

        // Score ½(y'PV_rPy − tr PV_r) and expected information ½ tr(PV_rPV_s) (V_e = I), from
        // Z_r'(σ²_e P)Z_s and traces of S⁻¹ against small cross-product matrices: no n × n matrix
        // and no matrix over the eliminated levels is formed. Per group, with ŝ = N^−½B'T,
        // A_e = F_e'Wŝ (F_e = N^½E_e) and C_fe = F_f'WF_e: T'A₁ᵏT = within + Σ ŝ'Wᵏŝ,
        // Y_e = T'A₁Z_eZ_e'A₁T = Σ A_e'A_e, X_e = T'A₁²Z_eZ_e'A₁T, H_ef = T'A₁Z_fZ_f'A₁Z_eZ_e'A₁T = Σ A_f'C_feA_e.
        (double[] G, Matrix<double> Info) ScoreInfo(State st)
        {
            var phi = st.Phi;
            var se = phi[m];
            var d = st.Scale;
            var py = st.Residual.Select(v => v / se).ToArray();
            var g = new double[m + 1];
            var info = Matrix<double>.Build.Dense(m + 1, m + 1);
            var k2 = (double[])l.Within.Clone();
            var k3 = (double[])l.Within.Clone();
            var ye = new double[ne][];
            var xe = new double[ne][];
            var he = new double[ne, ne][];
            var trC = new double[ne];
            var normWF = new double[ne];
            var normC = new double[ne, ne];
            for (var e = 0; e < ne; e++)
            {
                ye[e] = new double[(long)w * w];
                xe[e] = new double[(long)w * w];
                for (var f = e; f < ne; f++)
                {
                    he[e, f] = new double[(long)w * w];
                }
            }

            double trA1 = l.CellOf is null ? n : 0, normA1 = l.CellOf is null ? n : 0;
            for (var gi = 0; gi < l.Groups.Length; gi++)
            {
                var gr = l.Groups[gi];
                var c = gr.Cells.Length;
                var wg = gr.Cols.Length;
                var wm = st.GroupW[gi];
                var v = Mul(wm, c, c, gr.SHat, wg);            // Wŝ
                AddCross(k2, w, gr.Cols, v, v, c);             // ŝ'W²ŝ
                var lv = Forward(st.GroupL[gi], c, v, wg);     // L⁻¹Wŝ
                AddCross(k3, w, gr.Cols, lv, lv, c);           // ŝ'W³ŝ
                var wv = Mul(wm, c, c, v, wg);                 // W²ŝ
                trA1 += gr.Rows - c;
                normA1 += gr.Rows - c;
                for (var a = 0; a < c; a++)
                {
                    trA1 += wm[(a * c) + a];
                    for (var b = 0; b < c; b++)
                    {
                        normA1 += wm[(a * c) + b] * wm[(a * c) + b];
                    }
                }

                var ae = new double[ne][];
                var wf = new double[ne][];
                for (var e = 0; e < ne; e++)
                {
                    var q = gr.Levels[e];
                    ae[e] = LevelSums(gr, e, v, wg);
                    AddCross(ye[e], w, gr.Cols, ae[e], ae[e], q);
                    AddCross(xe[e], w, gr.Cols, LevelSums(gr, e, wv, wg), ae[e], q);

                    // W F_e (c × q), column l = Σ_{cells of level l} √n_c W[:, cell].
                    wf[e] = new double[c * q];
                    for (var a = 0; a < c; a++)
                    {
                        for (var b = 0; b < c; b++)
                        {
                            wf[e][(a * q) + gr.Level[e][b]] += wm[(a * c) + b] * gr.Root[b];
                        }
                    }

                    normWF[e] += Dot(wf[e]);
                }

                for (var e = 0; e < ne; e++)
                {
                    for (var f = e; f < ne; f++)
                    {
                        var qf = gr.Levels[f];
                        var qe = gr.Levels[e];
                        var cfe = LevelSums(gr, f, wf[e], qe); // F_f'WF_e: q_f × q_e
                        normC[e, f] += Dot(cfe);
                        if (e == f)
                        {
                            for (var a = 0; a < qe; a++)
                            {
                                trC[e] += cfe[(a * qe) + a];
                            }
                        }

                        AddCross(he[e, f], w, gr.Cols, ae[f], Mul(cfe, qf, qe, ae[e], wg), qf);
                    }
                }
            }

            var uu = Block(k2, 0, k, 0, k, d, d);
            var ua1u = Block(k3, 0, k, 0, k, d, d);
            var sinv = st.Chol.Solve(Matrix<double>.Build.DenseIdentity(k));
            var p1 = sinv * uu;

            // Residual: σ²tr P = tr A₁ − tr(S⁻¹U'U); σ⁴||P||² = ||A₁||² − 2 tr(S⁻¹U'A₁U) + tr((S⁻¹U'U)²).
            var trP = trA1 - p1.Trace();
            var normP = normA1 - (2 * TrProd(sinv, ua1u)) + TrProd(p1, p1);
            g[m] = 0.5 * (Dot(py) - (trP / se));
            info[m, m] = 0.5 * normP / (se * se);

            // Dense random terms: Z_r'(σ²P)Z_s = K1[r,s] − E_r'S⁻¹E_s, E = d K1[R, z].
            Matrix<double>? h = null, uuh = null;
            if (qr > 0)
            {
                var e1 = Block(st.K1, 0, k, 0, qr, d, null);
                h = st.Chol.Solve(e1);
                uuh = uu * h;
                var qzz = Block(st.K1, 0, qr, 0, qr, null, null) - e1.TransposeThisAndMultiply(h);
                foreach (var r in l.Rest)
                {
                    var r0 = l.RestStart[r];
                    var rc = s.Random[r].Cells;
                    var zpy = CellSums(r, py);
                    var tr = 0.0;
                    for (var c = r0; c < r0 + rc; c++)
                    {
                        tr += qzz[c, c];
                    }

                    g[r] = 0.5 * (Dot(zpy) - (tr / se));
                    foreach (var t in l.Rest)
                    {
                        var t0 = l.RestStart[t];
                        var fn = 0.0;
                        for (var a = r0; a < r0 + rc; a++)
                        {
                            for (var b = t0; b < t0 + s.Random[t].Cells; b++)
                            {
                                fn += qzz[a, b] * qzz[a, b];
                            }
                        }

                        info[r, t] = 0.5 * fn / (se * se);
                    }

                    // σ⁴||PZ_r||² = tr K2[r,r] − 2 tr(K2[r,R] d H_r) + tr(H_r'U'U H_r).
                    var v = 0.0;
                    for (var c = r0; c < r0 + rc; c++)
                    {
                        v += k2[((long)c * w) + c];
                        for (var a = 0; a < k; a++)
                        {
                            v += (h[a, c] * uuh[a, c]) - (2 * k2[((long)c * w) + a] * d[a] * h[a, c]);
                        }
                    }

                    info[r, m] = info[m, r] = 0.5 * v / (se * se);
                }
            }

            // Eliminated terms: Z_e'(σ²P)Z_f = Z_e'A₁Z_f − Z_e'A₁R̃ S⁻¹ R̃'A₁Z_f.
            var pe = new Matrix<double>[ne];
            for (var e = 0; e < ne; e++)
            {
                var r = elim[e];
                var w2 = Block(ye[e], 0, k, 0, k, d, d);
                pe[e] = sinv * w2;
                g[r] = 0.5 * (Dot(CellSums(r, py)) - ((trC[e] - pe[e].Trace()) / se));
                info[r, m] = info[m, r] = 0.5 * (normWF[e] - (2 * TrProd(sinv, Block(xe[e], 0, k, 0, k, d, d))) + TrProd(p1, pe[e])) / (se * se);
                if (qr > 0)
                {
                    var w2h = w2 * h!;
                    foreach (var t in l.Rest)
                    {
                        // ||Z_e'(σ²P)Z_t||² = ||Z_e'A₁T (J_t − d H_t)||².
                        var t0 = l.RestStart[t];
                        var v = 0.0;
                        for (var c = t0; c < t0 + s.Random[t].Cells; c++)
                        {
                            v += ye[e][((long)c * w) + c];
                            for (var a = 0; a < k; a++)
                            {
                                v += (h![a, c] * w2h[a, c]) - (2 * d[a] * ye[e][((long)a * w) + c] * h[a, c]);
                            }
                        }

                        info[r, t] = info[t, r] = 0.5 * v / (se * se);
                    }
                }
            }

            for (var e = 0; e < ne; e++)
            {
                for (var f = e; f < ne; f++)
                {
                    // ||Z_e'(σ²P)Z_f||² = ||Z_e'A₁Z_f||² − 2 tr(S⁻¹ d H_ef d) + tr(S⁻¹Y_e S⁻¹Y_f).
                    var v = normC[e, f] - (2 * TrProd(sinv, Block(he[e, f], 0, k, 0, k, d, d))) + TrProd(pe[e], pe[f]);
                    info[elim[e], elim[f]] = info[elim[f], elim[e]] = 0.5 * v / (se * se);
                }
            }

            return (g, info);
        }

        // Start: residual mean square of the fixed-effects fit, split equally.
        var ols = x.QR(MathNet.Numerics.LinearAlgebra.Factorization.QRMethod.Thin);
        var olsRes = y - (x * ols.Solve(y));
        var s2 = Math.Max(olsRes.DotProduct(olsRes) / (n - p), 1e-300);
        var phi = Enumerable.Repeat(s2 / (m + 1), m + 1).ToArray();
        // If the equal split cannot be factorized, the fit starts from the fixed-effects point
        // (every random variance zero: S = diag(I, X'X)), which Prepare has checked can be
        // factorized (Check reports a design issue otherwise).
        var state = Eval(phi);
        if (state is null)
        {
            phi = [.. Enumerable.Repeat(0.0, m), s2];
            state = Eval(phi) ?? throw new InvalidOperationException("the fixed-effects starting point of the REML fit cannot be factorized although Check found X'X positive definite");
        }
        var converged = false;
        var iterations = 0;
        var active = new bool[m + 1]; // held at zero
        var confounded = false;
        for (; iterations < MaxIterations; iterations++)
        {
            var (g, info) = ScoreInfo(state);
            for (var r = 0; r < m; r++)
            {
                active[r] = phi[r] == 0 && g[r] <= 0;
            }

            var free = Enumerable.Range(0, m + 1).Where(i => !active[i]).ToArray();
            var sub = Matrix<double>.Build.Dense(free.Length, free.Length, (i, j) => info[free[i], free[j]]);
            var gv = Vector<double>.Build.Dense(free.Length, i => g[free[i]]);
            // The information is positive definite unless two variances are confounded in these
            // data; then the minimum-norm least-squares step is taken (the pseudo-inverse, singular
            // values below rounding treated as zero; reported below).
            Vector<double> step;
            try
            {
                step = sub.Cholesky().Solve(gv);
            }
            catch (ArgumentException)
            {
                confounded = true;
                step = sub.PseudoInverse() * gv;
            }

            var scale = phi.Max();
            var small = free.All(i => Math.Abs(g[i]) * Math.Max(phi[i], scale * 1e-6) <= 1e-9 * Math.Max(1, Math.Abs(state.LogLik)));
            double t = 1;
            double[] next = phi;
            State? nextState = null;
            for (var hv = 0; hv < 60; hv++)
            {
                next = (double[])phi.Clone();
                for (var i = 0; i < free.Length; i++)
                {
                    next[free[i]] = Math.Max(0, phi[free[i]] + (t * step[i]));
                }

                next[m] = Math.Max(next[m], scale * 1e-12);
                nextState = Eval(next);
                if (nextState is not null && nextState.LogLik >= state.LogLik - (1e-13 * Math.Abs(state.LogLik)))
                {
                    break;
                }

                t /= 2;
                nextState = null;
            }

            if (nextState is null)
            {
                converged = small;
                break;
            }

            // Each component's step within 1e-10 of itself, or of 1e-2 of the largest for one near
            // zero (at most 1e-12 of the largest, the earlier rule, is always enough): closer than
            // this the steps only follow the rounding of the scores (about 1e-8 of their scale).
            var top = Math.Max(phi.Max(), next.Max());
            var settled = Enumerable.Range(0, m + 1).All(i => Math.Abs(next[i] - phi[i]) <= 1e-10 * Math.Max(Math.Max(phi[i], next[i]), 1e-2 * top));
            phi = next;
            state = nextState;
            if (settled && small)
            {
                converged = true;
                iterations++;
                break;
            }
        }

        // Final quantities.
        Quantity Scaled(Quantity q) => q.IsDefined ? Quantity.Of(q.Value * c2) : q;
        var (_, infoF) = ScoreInfo(state);
        var freeF = Enumerable.Range(0, m + 1).Where(i => i == m || phi[i] > 0).ToArray();
        var infoFree = Matrix<double>.Build.Dense(freeF.Length, freeF.Length, (i, j) => infoF[freeF[i], freeF[j]]);
        var invertible = infoFree.Svd().ConditionNumber < 1e12;
        var cov = invertible ? infoFree.Inverse() : infoFree.PseudoInverse();
        confounded |= !invertible;
        var components = new List<RemlComponent>();
        for (var r = 0; r <= m; r++)
        {
            var name = r < m ? s.Random[r].Name : StrataAnova.ResidualName;
            var kind = r < m ? s.Random[r].Kind : TermKind.Residual;
            var at = Array.IndexOf(freeF, r);
            var se = at < 0 ? Quantity.Undefined("the estimate is on the boundary (zero)")
                : !invertible ? Quantity.Undefined("the variances cannot be told apart in these data (their information is singular)")
                : Quantity.Of(Math.Sqrt(cov[at, at]));
            Quantity nu, lo, hi;
            if (se.IsDefined && se.Value > 0 && phi[r] > 0)
            {
                var v = 2 * phi[r] * phi[r] / (se.Value * se.Value);
                nu = Quantity.Of(v);
                lo = Quantity.Of(v * phi[r] / Probability.ChiSquareCritical(0.025, v));
                hi = Quantity.Of(v * phi[r] / Probability.ChiSquareCritical(0.975, v));
            }
            else
            {
                nu = lo = hi = Quantity.Undefined(se.IsDefined ? "the estimate is zero" : se.Reason!);
            }

            components.Add(new RemlComponent(name, kind, phi[r] * c2, phi[r] == 0, Quantity.Of(Math.Sqrt(phi[r] * c2)), Scaled(se), nu, Scaled(lo), Scaled(hi)));
        }

        // Cov(β̂) = σ²_e [S⁻¹]_XX = σ²_e (L_XX L_XX')⁻¹ (L the Cholesky factor of S, X columns last).
        var sig = phi[m];
        var lxxInv = state.Chol.Factor.SubMatrix(qr, p, qr, p).Inverse();
        var cb = lxxInv.TransposeThisAndMultiply(lxxInv) * sig;
        var beta = Vector<double>.Build.Dense(p, i => state.Theta[qr + i]);

        // V⁻¹X v = σ⁻²(A₁ − A₁Z̃(Z̃'A₁Z̃ + I)⁻¹Z̃'A₁)Xv, Z̃ = Z_rest Λ: S's leading block is Z̃'A₁Z̃ + I.
        var lzz = qr > 0 ? state.Chol.Factor.SubMatrix(0, qr, 0, qr).ToArray() : null;
        double[] ApplyA1(double[] f) => ApplyA(state.GroupW, f).Av;

        double[] VinvXv(Vector<double> v)
        {
            var gA = ApplyA1([.. x * v]);
            if (lzz is null)
            {
                return [.. gA.Select(a => a / sig)];
            }

            var tv = Vector<double>.Build.Dense(qr);
            foreach (var r in l.Rest)
            {
                var sums = CellSums(r, gA);
                for (var c = 0; c < sums.Length; c++)
                {
                    tv[l.RestStart[r] + c] = state.Scale[l.RestStart[r] + c] * sums[c];
                }
            }

            var b = new double[qr]; // L_zz L_zz' b = t: forward, then back substitution
            for (var i = 0; i < qr; i++)
            {
                var acc = tv[i];
                for (var j = 0; j < i; j++)
                {
                    acc -= lzz[i, j] * b[j];
                }

                b[i] = acc / lzz[i, i];
            }

            for (var i = qr - 1; i >= 0; i--)
            {
                var acc = b[i];
                for (var j = i + 1; j < qr; j++)
                {
                    acc -= lzz[j, i] * b[j];
                }

                b[i] = acc / lzz[i, i];
            }

            var zb = new double[n];
            for (var i = 0; i < n; i++)
            {
                foreach (var r in l.Rest)
                {
                    var col = l.RestStart[r] + s.Random[r].CellOf[i];
                    zb[i] += state.Scale[col] * b[col];
                }
            }

            var az = ApplyA1(zb);
            return [.. gA.Select((a, i) => (a - az[i]) / sig)];
        }

        var tests = new List<RemlFixedTest>();
        foreach (var (name, start, count) in s.FixedTerms)
        {
            var lcl = cb.SubMatrix(start, count, start, count);
            var lb = beta.SubVector(start, count);
            var evd = lcl.Evd(Symmetricity.Symmetric);
            var fval = lb.DotProduct(lcl.Solve(lb)) / count;
            var nus = new double[count];
            for (var i = 0; i < count; i++)
            {
                var d = evd.EigenValues[i].Real;
                var u = evd.EigenVectors.Column(i);
                var wl = VinvXv(cb.SubMatrix(0, p, start, count) * u); // V⁻¹X Cov L'u
                var grad = new double[freeF.Length];
                for (var kk = 0; kk < freeF.Length; kk++)
                {
                    var j = freeF[kk];
                    grad[kk] = j == m ? Dot(wl) : Dot(CellSums(j, wl));
                }

                var gvec = Vector<double>.Build.DenseOfArray(grad);
                nus[i] = 2 * d * d / gvec.DotProduct(cov * gvec);
            }

            // One direction, or all directions with the same df (balanced data): that df, which is
            // also the limit of 2E/(E − q) as the ν_i become equal, even at ν ≤ 2 where E is infinite.
            Quantity df;
            if (nus.All(v => double.IsFinite(v) && v > 0) && (count == 1 || nus.Max() - nus.Min() <= 1e-9 * nus.Max()))
            {
                df = Quantity.Of(nus.Average());
            }
            else
            {
                var e = nus.Where(v => v > 2).Sum(v => v / (v - 2));
                df = nus.All(v => v > 2) && e > count
                    ? Quantity.Of(2 * e / (e - count))
                    : Quantity.Undefined("the Satterthwaite df is not defined for this term (a direction of its hypothesis has 2 df or fewer)");
            }

            var fq = Quantity.Of(fval);
            var pq = df.IsDefined && fq.IsDefined ? Quantity.Of(Probability.FUpper(fval, count, df.Value)) : Quantity.Undefined(df.Reason ?? "F is not defined");
            tests.Add(new RemlFixedTest(name, count, fq, df, pq));
        }

        var singular = components.Any(c => c.AtBoundary);
        var note = converged
            ? string.Create(System.Globalization.CultureInfo.InvariantCulture, $"converged after {iterations} Fisher-scoring iterations (changes below 1e-10 of each component)")
            : string.Create(System.Globalization.CultureInfo.InvariantCulture, $"did not converge within {iterations} iterations; the estimates are the last iterate");
        if (confounded)
        {
            note += "; the information matrix is singular: some variances cannot be told apart in these data";
        }

        if (singular)
        {
            note += "; singular fit: " + string.Join(", ", components.Where(c => c.AtBoundary).Select(c => c.Term)) + " estimated at zero";
        }

        // The fixed effects for views over the fit (marginal means, comparisons, contrasts): β̂,
        // Cov(β̂), the inverse information of the free variance parameters and the gradient of
        // l'Cov(β̂)l in them (w'V_j w with w = V⁻¹X Cov(β̂) l, as for the F tests above).
        // A response fitted divided by c (extreme magnitudes, above): β̂ × c, Cov(β̂) × c², the
        // parameters' covariance × c⁴; the gradient of l'Cov(β̂)l in the variances does not depend on c.
        var fixedEffects = new RemlFixedEffects(
            c2 == 1 ? [.. beta] : [.. beta.Select(b => b * Math.Sqrt(c2))],
            (cb * c2).ToArray(),
            (cov * (c2 * c2)).ToArray(),
            [.. freeF.Select(j => j == m ? StrataAnova.ResidualName : s.Random[j].Name)],
            yMean,
            [.. s.FixedTerms.Select((t, i) => new RemlFixedTerm(t.Name, s.TermFactors[i], t.Start, t.Count))],
            s.Levels,
            lv =>
            {
                var wl = VinvXv(cb * Vector<double>.Build.DenseOfArray(lv));
                return [.. freeF.Select(j => j == m ? Dot(wl) : Dot(CellSums(j, wl)))];
            });

        // Conditional residuals y − Xβ̂ − Zû, in the data's rows.
        var residuals = c2 == 1 ? state.Residual : [.. state.Residual.Select(v => v * Math.Sqrt(c2))];
        return new RemlResult(components, tests, state.LogLik - ((n - p) * logC), converged, iterations, singular, note, residuals) { FixedEffects = fixedEffects };
    }
}
