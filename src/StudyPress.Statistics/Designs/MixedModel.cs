using System.Globalization;
using MathNet.Numerics.LinearAlgebra;

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
}

/// <summary>
/// Linear mixed model of a design by restricted maximum likelihood, for unbalanced data and
/// missing plots. The terms are those of <see cref="StrataAnova"/> (same roles, same derivation):
/// treatment terms are fixed (sum-to-zero coding, all interactions); blocks, random terms and plot
/// errors are random effects with one variance each; the finest term that identifies single
/// observations is the residual.
/// <para>
/// Model y = Xβ + Σ Z_r u_r + e, V = σ²_e I + Σ σ²_r Z_r Z_r'. Every quantity comes from one
/// Householder QR of the augmented matrix [Z Λ, X; I, 0] (Λ = diag √(σ²_r/σ²_e); the penalized
/// least-squares form of Bates et al. 2015, "Fitting linear mixed-effects models using lme4",
/// J. Stat. Softw. 67(1)): with Q₁ its first n rows, σ²_e P = I − Q₁Q₁'; log|H| and log|X'H⁻¹X|
/// from the diagonal of R; Cov(β̂) = σ²_e (R_XX'R_XX)⁻¹. No normal equations are formed.
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
    /// Most columns (fixed-effect columns plus random-effect levels) the REML fit takes: it
    /// factorizes a dense matrix of that many columns at every iteration, so time grows with the
    /// cube (measured on the project's 2-core machine: 290 columns about 3 s, 610 columns about
    /// 45 s in a debug build). Larger models are refused with a <see cref="DesignIssueKind.TooLarge"/> issue.
    /// </summary>
    public const int MaxColumns = 600;

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
        }

        var columns = new List<double[]> { Enumerable.Repeat(1.0, n).ToArray() };
        var fixedTerms = new List<(string, int, int)>();
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
                columns.AddRange(prod);
            }
            else if (t.Cells < n)
            {
                random.Add((t.Name, t.Kind, t.CellOf, t.Cells));
            }
        }

        var p = columns.Count;
        var width = p + random.Sum(r => r.Item4);
        if (width > MaxColumns)
        {
            return new DesignIssue(
                DesignIssueKind.TooLarge,
                string.Create(CultureInfo.InvariantCulture, $"the mixed model of these data has {width} columns ({p} fixed-effect columns and {string.Join(", ", random.Select(r => r.Item4 + " levels of " + r.Item1))}), more than the {MaxColumns} this version fits: its dense factorization grows with the cube of that number"),
                [.. random.OrderByDescending(r => r.Item4).Take(1).Select(r => r.Item1)]);
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

        setup = new Setup { X = x, FixedTerms = fixedTerms, Random = random };
        return null;
    }

    private sealed class State
    {
        public required double LogLik { get; init; }
        public required Matrix<double> Q1 { get; init; }
        public required Matrix<double> Q2 { get; init; }
        public required Matrix<double> R { get; init; }
        public required Vector<double> Py { get; init; }
        public required Vector<double> B { get; init; }
    }

    private static RemlResult Fit(Setup s, double[] yArr)
    {
        var x = s.X;
        var n = x.RowCount;
        var p = x.ColumnCount;
        var m = s.Random.Count;
        var q = s.Random.Sum(t => t.Cells);
        var yMean = Groups.Mean(yArr);
        var y = Vector<double>.Build.Dense(n, i => yArr[i] - yMean); // REML is shift-invariant (intercept in X)

        // Every quantity depends on [Z X y] only through its cross-products, so the n rows are
        // replaced once by the R factor T of its QR (T'T = [Z X y]'[Z X y]); later QRs are of size q + p + 1.
        var zStart = new int[m];
        for (var r = 1; r < m; r++)
        {
            zStart[r] = zStart[r - 1] + s.Random[r - 1].Cells;
        }

        var a0 = Matrix<double>.Build.Dense(n, q + p + 1);
        for (var r = 0; r < m; r++)
        {
            for (var i = 0; i < n; i++)
            {
                a0[i, zStart[r] + s.Random[r].CellOf[i]] = 1;
            }
        }

        a0.SetSubMatrix(0, q, x);
        a0.SetColumn(q + p, y);
        var tm = n > q + p + 1 ? a0.QR(MathNet.Numerics.LinearAlgebra.Factorization.QRMethod.Thin).R : a0;
        var rowsT = tm.RowCount;
        var tz = Enumerable.Range(0, m).Select(r => tm.SubMatrix(0, rowsT, zStart[r], s.Random[r].Cells)).ToList();
        var tx = tm.SubMatrix(0, rowsT, q, p);
        var ty = tm.Column(q + p);

        State Eval(double[] phi)
        {
            var se = phi[m];
            var a = Matrix<double>.Build.Dense(rowsT + q, q + p + 1);
            for (var r = 0; r < m; r++)
            {
                var lam = Math.Sqrt(phi[r] / se);
                a.SetSubMatrix(0, zStart[r], tz[r] * lam);
            }

            a.SetSubMatrix(0, q, tx);
            a.SetSubMatrix(0, q + p, ty.ToColumnMatrix());
            for (var j = 0; j < q; j++)
            {
                a[rowsT + j, j] = 1;
            }

            var qr = a.QR(MathNet.Numerics.LinearAlgebra.Factorization.QRMethod.Thin);
            var qm = qr.Q;
            var rm = qr.R;
            var k = q + p;
            var prss = rm[k, k] * rm[k, k];
            double logH = 0, logX = 0;
            for (var j = 0; j < q; j++)
            {
                logH += 2 * Math.Log(Math.Abs(rm[j, j]));
            }

            for (var j = q; j < k; j++)
            {
                logX += 2 * Math.Log(Math.Abs(rm[j, j]));
            }

            var ll = -0.5 * (((n - p) * Math.Log(2 * Math.PI * se)) + logH + logX + (prss / se));
            var r0 = rm.SubMatrix(0, k, 0, k);
            var qty = rm.Column(k).SubVector(0, k);
            var q1 = qm.SubMatrix(0, rowsT, 0, k);
            return new State
            {
                LogLik = ll,
                Q1 = q1,
                Q2 = qm.SubMatrix(rowsT, q, 0, k),
                R = r0,
                Py = (ty - (q1 * qty)) / se, // in T's rows: T_Z' Py = Z' P y
                B = r0.Solve(qty),
            };
        }

        // Z_r' Z_t: counts of the cell pairs (exact, from the data).
        Matrix<double> ZtZ(int r, int t)
        {
            var res = Matrix<double>.Build.Dense(s.Random[r].Cells, s.Random[t].Cells);
            for (var i = 0; i < n; i++)
            {
                res[s.Random[r].CellOf[i], s.Random[t].CellOf[i]] += 1;
            }

            return res;
        }

        var ztz = new Matrix<double>[m, m];
        for (var r = 0; r < m; r++)
        {
            for (var t = 0; t <= r; t++)
            {
                ztz[r, t] = ZtZ(r, t);
            }
        }

        // With K = Q₁Q₁' (σ²_e P = I − K) and G_r = Q₁'Z_r: σ²_e Z_r'PZ_t = Z_r'Z_t − G_r'G_t,
        // σ⁴_e ||PZ_r||² = n − 2||G_r||² + tr(G_r'(Q₁'Q₁)G_r), σ²_e tr(PV_r) = n − ||G_r||²,
        // σ⁴_e tr(P²) = n − 2||Q₁||² + ||Q₁'Q₁||², with Q₁'Q₁ = I − Q₂'Q₂ (Q₂ the last q rows of Q).
        (double[] G, Matrix<double> Info) ScoreInfo(State st, double[] phi)
        {
            var se = phi[m];
            var gmat = tz.Select(t => st.Q1.TransposeThisAndMultiply(t)).ToList(); // (q+p) x cells
            var q1q1 = Matrix<double>.Build.DenseIdentity(q + p) - st.Q2.TransposeThisAndMultiply(st.Q2);
            var g = new double[m + 1];
            var info = Matrix<double>.Build.Dense(m + 1, m + 1);
            for (var r = 0; r < m; r++)
            {
                var zpy = tz[r].TransposeThisAndMultiply(st.Py);
                var gn = gmat[r].FrobeniusNorm();
                var trPV = (n - (gn * gn)) / se;
                g[r] = 0.5 * (zpy.DotProduct(zpy) - trPV);
                for (var t = 0; t <= r; t++)
                {
                    var zpz = (ztz[r, t] - gmat[r].TransposeThisAndMultiply(gmat[t])) / se;
                    var fn = zpz.FrobeniusNorm();
                    info[r, t] = info[t, r] = 0.5 * fn * fn;
                }

                var quad = gmat[r].TransposeThisAndMultiply(q1q1 * gmat[r]).Trace();
                info[r, m] = info[m, r] = 0.5 * (n - (2 * gn * gn) + quad) / (se * se);
            }

            var qn = st.Q1.FrobeniusNorm();
            var qtq = q1q1.FrobeniusNorm();
            var trP = (n - (qn * qn)) / se;
            var trPP = (n - (2 * qn * qn) + (qtq * qtq)) / (se * se);
            g[m] = 0.5 * (st.Py.DotProduct(st.Py) - trP);
            info[m, m] = 0.5 * trPP;
            return (g, info);
        }

        // Start: residual mean square of the fixed-effects fit, split equally.
        var ols = x.QR(MathNet.Numerics.LinearAlgebra.Factorization.QRMethod.Thin);
        var olsRes = y - (x * ols.Solve(y));
        var s2 = Math.Max(olsRes.DotProduct(olsRes) / (n - p), 1e-300);
        var phi = Enumerable.Repeat(s2 / (m + 1), m + 1).ToArray();
        var state = Eval(phi);
        var converged = false;
        var iterations = 0;
        var active = new bool[m + 1]; // held at zero
        var confounded = false;
        for (; iterations < MaxIterations; iterations++)
        {
            var (g, info) = ScoreInfo(state, phi);
            for (var r = 0; r < m; r++)
            {
                active[r] = phi[r] == 0 && g[r] <= 0;
            }

            var free = Enumerable.Range(0, m + 1).Where(i => !active[i]).ToArray();
            var sub = Matrix<double>.Build.Dense(free.Length, free.Length, (i, j) => info[free[i], free[j]]);
            var gv = Vector<double>.Build.Dense(free.Length, i => g[free[i]]);
            // The information is positive definite unless two variances are confounded in these
            // data; then the minimum-norm least-squares step is taken (and reported below).
            Vector<double> step;
            try
            {
                step = sub.Cholesky().Solve(gv);
            }
            catch (ArgumentException)
            {
                confounded = true;
                step = sub.Svd().Solve(gv);
            }

            var scale = phi.Max();
            var small = free.All(i => Math.Abs(g[i]) * Math.Max(phi[i], scale * 1e-6) <= 1e-9 * Math.Max(1, Math.Abs(state.LogLik)));
            double t = 1;
            double[] next = phi;
            State? nextState = null;
            for (var h = 0; h < 60; h++)
            {
                next = (double[])phi.Clone();
                for (var i = 0; i < free.Length; i++)
                {
                    next[free[i]] = Math.Max(0, phi[free[i]] + (t * step[i]));
                }

                next[m] = Math.Max(next[m], scale * 1e-12);
                nextState = Eval(next);
                if (nextState.LogLik >= state.LogLik - (1e-13 * Math.Abs(state.LogLik)))
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
        var (_, infoF) = ScoreInfo(state, phi);
        var freeF = Enumerable.Range(0, m + 1).Where(i => i == m || phi[i] > 0).ToArray();
        var infoFree = Matrix<double>.Build.Dense(freeF.Length, freeF.Length, (i, j) => infoF[freeF[i], freeF[j]]);
        var invertible = infoFree.Svd().ConditionNumber < 1e12;
        var cov = invertible ? infoFree.Inverse() : infoFree.Svd().Solve(Matrix<double>.Build.DenseIdentity(freeF.Length));
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

        // Cov(β̂) = σ²_e (R_XX' R_XX)⁻¹ and its derivatives C X'V⁻¹ V_j V⁻¹ X C.
        var sig = phi[m];
        var rxx = state.R.SubMatrix(q, p, q, p);
        var rinv = rxx.Inverse();
        var cb = rinv * rinv.Transpose() * sig;
        var qz = state.Q1.SubMatrix(0, rowsT, 0, q);
        var vinvX = (tx - (qz * qz.TransposeThisAndMultiply(tx))) / sig;
        var w = vinvX * cb; // in T's rows
        var tests = new List<RemlFixedTest>();
        foreach (var (name, start, count) in s.FixedTerms)
        {
            var lcl = cb.SubMatrix(start, count, start, count);
            var lb = state.B.SubVector(q + start, count);
            var evd = lcl.Evd(Symmetricity.Symmetric);
            var fval = lb.DotProduct(lcl.Solve(lb)) / count;
            var nus = new double[count];
            for (var i = 0; i < count; i++)
            {
                var d = evd.EigenValues[i].Real;
                var u = evd.EigenVectors.Column(i);
                var wl = w.SubMatrix(0, rowsT, start, count) * u; // W L' u
                var grad = new double[freeF.Length];
                for (var k = 0; k < freeF.Length; k++)
                {
                    var j = freeF[k];
                    if (j == m)
                    {
                        grad[k] = wl.DotProduct(wl);
                    }
                    else
                    {
                        var zw = tz[j].TransposeThisAndMultiply(wl);
                        grad[k] = zw.DotProduct(zw);
                    }
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

        // Conditional residuals y − Xβ̂ − Zû, û_r = Λ_r b_r, in the data's rows.
        var beta = state.B.SubVector(q, p);
        var cond = y - (x * beta);
        for (var r = 0; r < m; r++)
        {
            var lam = Math.Sqrt(phi[r] / phi[m]);
            for (var i = 0; i < n; i++)
            {
                cond[i] -= lam * state.B[zStart[r] + s.Random[r].CellOf[i]];
            }
        }

        return new RemlResult(components, tests, state.LogLik, converged, iterations, singular, note, [.. cond]);
    }
}
