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
/// it: the random term with the most levels has a diagonal block, so its levels are eliminated one
/// by one through A₁ = (I + γ Z_big Z_big')⁻¹ (block diagonal over its levels: I − γ/(1 + γ n_j) 11'),
/// leaving a dense Cholesky factor of S = R̃'A₁R̃ + diag(I, 0), R̃ = [Z_rest Λ_rest, X], whose order
/// is the fixed-effect columns plus the other terms' levels (<see cref="MaxDenseColumns"/>).
/// Then σ²_e P = A₁ − U S⁻¹U' with U = A₁R̃; log|M| = Σ log(1 + γ n_j) + log|S|;
/// Cov(β̂) = σ²_e [S⁻¹]_XX. Every trace the scores and information need is written with
/// T'A₁ᵏT (T = [Z_rest X y]; k = 1, 2, 3) and weighted sums over the big term's levels, so no
/// n × n matrix and no matrix over the big term's levels is formed; these cross-products are
/// accumulated as within-level sums plus positive level terms, so nothing near-equal is subtracted.
/// On the designs checked (the tests' and sets of unbalanced nested, split-plot and crossed
/// layouts) the results equal those of a dense QR of the whole augmented matrix, the previous
/// implementation, to 1e-9.
/// </para>
/// <para>
/// Estimation by Fisher scoring on (σ²_r, σ²_e) (Harville 1977, "Maximum likelihood approaches to
/// variance component estimation", JASA 72, 320-338): score ½(y'PV_rPy − tr PV_r), expected
/// information ½ tr(PV_rPV_s), with step halving so the restricted likelihood never falls, and
/// components that would go negative held at zero while the score points below zero (a boundary
/// estimate, reported as a singular fit). Start: the residual mean square of the fixed-effects fit
/// split equally. Converged when no component changes by more than 1e-12 of the largest and the
/// free scores are below 1e-9 of their scale; otherwise the result says it did not converge.
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
    /// random term except the one with the most levels (which is absorbed level by level, see
    /// <see cref="FitReml"/>). Each iteration factorizes and multiplies matrices of that order, so
    /// time grows with its cube and memory with its square (about 15 such matrices: 120 MB at the
    /// bound). Larger models are refused with a <see cref="DesignIssueKind.TooLarge"/> issue.
    /// </summary>
    public const int MaxDenseColumns = 1000;

    /// <summary>
    /// Most work of absorbing the largest random term, counted as Σ_j w_j² over its levels j (w_j
    /// the dense columns that level's rows touch); each iteration does this a few times, so time
    /// and the stored level sums stay bounded. Larger models are refused with a <see cref="DesignIssueKind.TooLarge"/> issue.
    /// </summary>
    public const long MaxAbsorbWork = 200_000_000;

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
        var random = new List<(string, TermKind, int[], int)>();
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
        // The same choice as Arrange: the random term with the most levels (the first on ties) is absorbed.
        var big = -1;
        for (var t = 0; t < random.Count; t++)
        {
            if (big < 0 || random[t].Item4 > random[big].Item4)
            {
                big = t;
            }
        }

        var others = random.Where((_, i) => i != big).ToList();
        var dense = p + others.Sum(r => r.Item4);
        if (dense > MaxDenseColumns)
        {
            return new DesignIssue(
                DesignIssueKind.TooLarge,
                string.Create(CultureInfo.InvariantCulture, $"the mixed model of these data keeps {dense} columns dense ({p} fixed-effect columns and {string.Join(", ", others.Select(r => r.Item4 + " levels of " + r.Item1))}; the {random[big].Item4} levels of {random[big].Item1} are absorbed), more than the {MaxDenseColumns} this version fits: its time grows with the cube of that number"),
                [.. others.OrderByDescending(r => r.Item4).Take(1).Select(r => r.Item1)]);
        }

        if (big >= 0)
        {
            var perCell = new int[random[big].Item4];
            foreach (var c in random[big].Item3)
            {
                perCell[c]++;
            }

            var qr = dense - p;
            var work = perCell.Sum(c => Math.Pow(Math.Min((long)c * (random.Count - 1), qr) + p + 1, 2));
            if (work > MaxAbsorbWork)
            {
                return new DesignIssue(
                    DesignIssueKind.TooLarge,
                    string.Create(CultureInfo.InvariantCulture, $"the mixed model of these data absorbs {random[big].Item4} levels of {random[big].Item1} against {dense} dense columns ({p} fixed-effect columns), about {work:0.#e0} operations per step, more than the {MaxAbsorbWork:0.#e0} this version does"),
                    [random[big].Item1]);
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

        setup = new Setup { X = x, FixedTerms = fixedTerms, Random = random, Levels = levelsOf, TermFactors = termFactors };
        return null;
    }

    /// <summary>
    /// The fixed cross-products of the data, arranged for the fit. The random term with the most
    /// levels ("big") is absorbed cell by cell; every other column (the levels of the other random
    /// terms, the fixed-effect columns and the response: T = [Z_rest X y], width w) is kept dense.
    /// </summary>
    private sealed class Layout
    {
        public required int N { get; init; }
        public required int P { get; init; }
        public required int Big { get; init; }                 // index into Setup.Random, or −1
        public required int[] Rest { get; init; }              // the other random terms, in order
        public required int[] RestStart { get; init; }         // first z-column of each (by Setup.Random index)
        public required int Qr { get; init; }                  // z-columns kept dense
        public required int W { get; init; }                   // Qr + P + 1
        public required double[] Within { get; init; }         // T'T − Σ_j (T'1_j)(T'1_j)'/n_j, W × W row-major
        public required int[] BigCount { get; init; }          // rows in each big cell
        public required int[][] SIdx { get; init; }            // T'1_j: column indices (ascending) ...
        public required double[][] SVal { get; init; }         // ... and values, per big cell j
        public required double[] Y { get; init; }              // centred response
    }

    private static Layout Arrange(Setup s, double[] y)
    {
        var x = s.X;
        var n = x.RowCount;
        var p = x.ColumnCount;
        var m = s.Random.Count;
        var big = -1;
        for (var r = 0; r < m; r++)
        {
            if (big < 0 || s.Random[r].Cells > s.Random[big].Cells)
            {
                big = r;
            }
        }

        var rest = Enumerable.Range(0, m).Where(r => r != big).ToArray();
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

        // Σ_i (t_i − t̄_j)(t_i − t̄_j)' over the rows (t̄_j the mean of the row's big cell, or 0
        // without a big term): the within-cell cross-products, a sum of outer products, so that
        // absorbing the big cells later adds positive terms instead of subtracting near-equal ones.
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

        return new Layout
        {
            N = n,
            P = p,
            Big = big,
            Rest = rest,
            RestStart = restStart,
            Qr = qr,
            W = w,
            Within = within,
            BigCount = count,
            SIdx = sIdx,
            SVal = sVal,
            Y = y,
        };
    }

    /// <summary>Σ_j weight_j (T'1_j)(T'1_j)', added to the within-cell cross-products when <paramref name="within"/>.</summary>
    private static double[] Absorb(Layout l, double[] weight, bool within)
    {
        var w = l.W;
        var res = within ? (double[])l.Within.Clone() : new double[(long)w * w];
        for (var j = 0; j < l.SIdx.Length; j++)
        {
            var wj = weight[j];
            if (wj == 0)
            {
                continue;
            }

            var idx = l.SIdx[j];
            var val = l.SVal[j];
            for (var a = 0; a < idx.Length; a++)
            {
                var va = wj * val[a];
                var baseA = (long)idx[a] * w;
                for (var b = 0; b < idx.Length; b++)
                {
                    res[baseA + idx[b]] += va * val[b];
                }
            }
        }

        return res;
    }

    private sealed class State
    {
        public required double LogLik { get; init; }
        public required double[] Phi { get; init; }
        public required double[] Scale { get; init; }          // d: λ of each dense z-column, 1 for X and y
        public required double[] X1 { get; init; }            // 1 / (1 + γ_big n_j)
        public required double[] A1 { get; init; }            // γ_big / (1 + γ_big n_j)
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

        var y = Vector<double>.Build.DenseOfArray(yc);
        var l = Arrange(s, yc);
        var qr = l.Qr;
        var k = qr + p;
        var w = l.W;
        var big = l.Big;
        var cells = l.BigCount.Length;
        var xr = x.ToRowArrays();

        Matrix<double> Block(double[] flat, int r0, int rows, int c0, int cols, double[]? dr, double[]? dc) =>
            Matrix<double>.Build.Dense(rows, cols, (i, j) => flat[((long)(r0 + i) * w) + c0 + j] * (dr is null ? 1 : dr[r0 + i]) * (dc is null ? 1 : dc[c0 + j]));

        // With V = σ²_e (I + Σ γ_r Z_r Z_r') and A₁ = (I + γ_big Z_big Z_big')⁻¹ (block diagonal over
        // the big cells: I − a_j 11' in cell j), the penalized system of Bates et al. (2015) reduces,
        // by eliminating the big levels (a diagonal block), to S = R̃'A₁R̃ + diag(I, 0) over
        // R̃ = [Z_rest Λ_rest, X]; σ²_e P = A₁ − U S⁻¹ U' with U = A₁R̃.
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

            var gBig = big < 0 ? 0 : phi[big] / se;
            var lamBig = Math.Sqrt(gBig);
            var x1 = new double[cells];
            var a1 = new double[cells];
            var logH = 0.0;
            for (var j = 0; j < cells; j++)
            {
                var d = 1 + (gBig * l.BigCount[j]);
                x1[j] = 1 / d;
                a1[j] = gBig / d;
                logH += Math.Log(d);
            }

            var k1 = Absorb(l, [.. x1.Select((v, j) => v / l.BigCount[j])], within: true); // T'T − Σ a_j s_j s_j' = within + Σ (x_j/n_j) s_j s_j'
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

            // b_big = λ_big (1 + γ n_j)⁻¹ Z_big'(y − R̃θ), cell by cell.
            var bBig = new double[cells];
            for (var j = 0; j < cells; j++)
            {
                var idx = l.SIdx[j];
                var val = l.SVal[j];
                var sum = 0.0;
                for (var a = 0; a < idx.Length; a++)
                {
                    sum += idx[a] == k ? val[a] : -val[a] * scale[idx[a]] * theta[idx[a]];
                }

                bBig[j] = lamBig * x1[j] * sum;
            }

            var e = new double[n];
            var prss = 0.0;
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

                if (big >= 0)
                {
                    v -= lamBig * bBig[s.Random[big].CellOf[i]];
                }

                e[i] = v;
                prss += v * v;
            }

            for (var c = 0; c < qr; c++)
            {
                prss += theta[c] * theta[c];
            }

            foreach (var b in bBig)
            {
                prss += b * b;
            }

            var ll = -0.5 * (((n - p) * Math.Log(2 * Math.PI * se)) + logH + (prss / se));
            return new State { LogLik = ll, Phi = phi, Scale = scale, X1 = x1, A1 = a1, K1 = k1, Chol = chol, Theta = theta, Residual = e };
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
        // Z_r'(σ²_e P)Z_s and traces of S⁻¹ against small cross-product matrices: no n × n or
        // big × big matrix is formed.
        (double[] G, Matrix<double> Info) ScoreInfo(State st)
        {
            var phi = st.Phi;
            var se = phi[m];
            var d = st.Scale;
            var py = st.Residual.Select(v => v / se).ToArray();
            var g = new double[m + 1];
            var info = Matrix<double>.Build.Dense(m + 1, m + 1);
            var x1 = st.X1;
            var c2 = new double[cells]; // A₁² = I − Σ (1 − x_j²)/n_j 1_j1_j': T'A₁²T = within + Σ (x_j²/n_j) s_j s_j'
            var c3 = new double[cells];
            var wx2 = new double[cells];
            var wx3 = new double[cells];
            var wnx3 = new double[cells];
            double trA1 = big < 0 ? n : 0, normA1 = big < 0 ? n : 0, bigTrace = 0, bigNorm = 0, bigNorm2 = 0;
            for (var j = 0; j < cells; j++)
            {
                var nj = l.BigCount[j];
                var xj = x1[j];
                c2[j] = xj * xj / nj;
                c3[j] = xj * xj * xj / nj;
                wx2[j] = xj * xj;
                wx3[j] = xj * xj * xj;
                wnx3[j] = nj * wx3[j];
                trA1 += nj - 1 + xj; // cell block I − a_j 11': trace n_j − a_j n_j, squared norm n_j − 2a_j n_j + a_j² n_j²
                normA1 += nj - 1 + (xj * xj);
                bigTrace += nj * xj;
                bigNorm += nj * xj * nj * xj;
                bigNorm2 += nj * xj * xj;
            }

            var k2 = Absorb(l, c2, within: true);
            var k3 = Absorb(l, c3, within: true);
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

            if (big >= 0)
            {
                // Z_big'(σ²P)Z_big = Δ − G S⁻¹G', Δ = diag(n_j x_j), G = diag(x) Z_big'R̃.
                var wt2 = Absorb(l, wx2, within: false);
                var w2 = Block(wt2, 0, k, 0, k, d, d);
                var w3 = Block(Absorb(l, wx3, within: false), 0, k, 0, k, d, d);
                var wn3 = Block(Absorb(l, wnx3, within: false), 0, k, 0, k, d, d);
                var p2 = sinv * w2;
                var zpy = CellSums(big, py);
                g[big] = 0.5 * (Dot(zpy) - ((bigTrace - p2.Trace()) / se));
                info[big, big] = 0.5 * (bigNorm - (2 * TrProd(sinv, wn3)) + TrProd(p2, p2)) / (se * se);
                info[big, m] = info[m, big] = 0.5 * (bigNorm2 - (2 * TrProd(sinv, w3)) + TrProd(p1, p2)) / (se * se);
                if (qr > 0)
                {
                    var w2h = w2 * h!;
                    foreach (var t in l.Rest)
                    {
                        // ||Z_big'(σ²P)Z_t||² = ||diag(x)(Z_big'Z_t − Z_big'R̃ H_t)||².
                        var t0 = l.RestStart[t];
                        var v = 0.0;
                        for (var c = t0; c < t0 + s.Random[t].Cells; c++)
                        {
                            v += wt2[((long)c * w) + c];
                            for (var a = 0; a < k; a++)
                            {
                                v += (h![a, c] * w2h[a, c]) - (2 * d[a] * wt2[((long)a * w) + c] * h[a, c]);
                            }
                        }

                        info[big, t] = info[t, big] = 0.5 * v / (se * se);
                    }
                }
            }

            return (g, info);
        }

        // Start: residual mean square of the fixed-effects fit, split equally.
        var ols = x.QR(MathNet.Numerics.LinearAlgebra.Factorization.QRMethod.Thin);
        var olsRes = y - (x * ols.Solve(y));
        var s2 = Math.Max(olsRes.DotProduct(olsRes) / (n - p), 1e-300);
        var phi = Enumerable.Repeat(s2 / (m + 1), m + 1).ToArray();
        var state = Eval(phi) ?? throw new InvalidOperationException("the starting values of the REML fit cannot be factorized");
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

            var change = Enumerable.Range(0, m + 1).Max(i => Math.Abs(next[i] - phi[i]));
            phi = next;
            state = nextState;
            if (change <= 1e-12 * phi.Max() && small)
            {
                converged = true;
                iterations++;
                break;
            }
        }

        // Final quantities.
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

            components.Add(new RemlComponent(name, kind, phi[r], phi[r] == 0, Quantity.Of(Math.Sqrt(phi[r])), se, nu, lo, hi));
        }

        // Cov(β̂) = σ²_e [S⁻¹]_XX = σ²_e (L_XX L_XX')⁻¹ (L the Cholesky factor of S, X columns last).
        var sig = phi[m];
        var lxxInv = state.Chol.Factor.SubMatrix(qr, p, qr, p).Inverse();
        var cb = lxxInv.TransposeThisAndMultiply(lxxInv) * sig;
        var beta = Vector<double>.Build.Dense(p, i => state.Theta[qr + i]);

        // V⁻¹X v = σ⁻²(A₁ − A₁Z̃(Z̃'A₁Z̃ + I)⁻¹Z̃'A₁)Xv, Z̃ = Z_rest Λ: S's leading block is Z̃'A₁Z̃ + I.
        var bigCellOf = big >= 0 ? s.Random[big].CellOf : null;
        var lzz = qr > 0 ? state.Chol.Factor.SubMatrix(0, qr, 0, qr).ToArray() : null;
        double[] ApplyA1(double[] f)
        {
            if (bigCellOf is null)
            {
                return f;
            }

            var sums = CellSums(big, f);
            return [.. f.Select((v, i) => v - (state.A1[bigCellOf[i]] * sums[bigCellOf[i]]))];
        }

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
            ? string.Create(System.Globalization.CultureInfo.InvariantCulture, $"converged after {iterations} Fisher-scoring iterations (changes below 1e-12 of the largest component)")
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
        var fixedEffects = new RemlFixedEffects(
            [.. beta],
            cb.ToArray(),
            cov.ToArray(),
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
        return new RemlResult(components, tests, state.LogLik, converged, iterations, singular, note, state.Residual) { FixedEffects = fixedEffects };
    }
}
