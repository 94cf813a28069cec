using System.Globalization;
using System.Text;

namespace StudyPress.Statistics.Designs;

/// <summary>What a row of the strata table is.</summary>
public enum TermKind
{
    /// <summary>A fixed treatment term (main effect or interaction of treatments).</summary>
    Treatment,

    /// <summary>A blocking factor (random).</summary>
    Block,

    /// <summary>A random term: a random factor, a factor nested in others, or an interaction with a random factor.</summary>
    Random,

    /// <summary>The error of a plot level of a split plot: blocks x the treatments applied at or above that level (pooled).</summary>
    PlotError,

    /// <summary>What is left within the finest cells of the model.</summary>
    Residual,
}

/// <summary>
/// One component of an expected mean square: <paramref name="Coefficient"/> times the variance of
/// the random term <paramref name="Term"/> (σ²), or, when <paramref name="IsFixed"/>, times the
/// fixed-effect quantity θ = Σ effect² / df of the fixed term itself.
/// </summary>
public sealed record EmsComponent(string Term, double Coefficient, bool IsFixed);

/// <summary>One mean square in a term's error: <paramref name="Coefficient"/> x MS(<paramref name="Term"/>).</summary>
public sealed record DenominatorPart(string Term, double Coefficient, double MeanSquare, int Df);

/// <summary>
/// One row of the strata ANOVA. <paramref name="Stratum"/> is the name of the error it is tested
/// against (for an error term, its own name). <paramref name="Denominator"/> is the linear
/// combination of mean squares whose expectation equals this row's expected mean square without
/// its own component: one part with coefficient 1 for an exact F test, several for a quasi-F
/// (<paramref name="IsQuasiF"/>), none when the design leaves no error for this term (then F is
/// not defined and <see cref="Quantity.Reason"/> says why). <paramref name="DfDenominator"/> is
/// the denominator's df, fractional (Satterthwaite) for a quasi-F.
/// </summary>
public sealed record StrataRow(
    string Term,
    IReadOnlyList<string> Factors,
    TermKind Kind,
    PlotLevel Plot,
    bool IsRandom,
    string Stratum,
    double SumOfSquares,
    int Df,
    Quantity MeanSquare,
    IReadOnlyList<EmsComponent> ExpectedMeanSquare,
    IReadOnlyList<DenominatorPart> Denominator,
    bool IsQuasiF,
    Quantity DenominatorMeanSquare,
    Quantity DfDenominator,
    Quantity F,
    Quantity P);

/// <summary>An error stratum: its error row and the rows tested against it, in table order.</summary>
public sealed record DesignStratum(string Name, TermKind ErrorKind, IReadOnlyList<string> Terms);

/// <summary>
/// The strata ANOVA of a balanced design. <c>Residuals</c> are the finest stratum's residuals per
/// observation: what is left after all terms, or, when the finest error is a term with one
/// observation per cell (a sub-plot error, an unreplicated interaction), that term's effects.
/// </summary>
public sealed record StrataAnovaResult(
    IReadOnlyList<StrataRow> Rows,
    IReadOnlyList<DesignStratum> Strata,
    double TotalSumOfSquares,
    int TotalDf,
    int Observations,
    double GrandMean,
    double[] Residuals)
{
    /// <summary>
    /// The residuals of each error stratum other than the residual: for every random term (blocks,
    /// random and nested terms, plot errors) its estimated effect in each of its cells (the unit
    /// of that stratum: a whole plot, a pen), in order of the cells' first appearance in the data,
    /// with <see cref="StratumCellOf"/> giving each observation's cell. Count-weighted sums of
    /// squares of these effects are the rows' sums of squares. Assumption checks of a stratum use
    /// these; <see cref="Residuals"/> are the finest stratum's.
    /// </summary>
    public IReadOnlyDictionary<string, double[]> StratumEffects { get; init; } = new Dictionary<string, double[]>(StringComparer.Ordinal);

    /// <summary>For each entry of <see cref="StratumEffects"/>, the cell of every observation.</summary>
    public IReadOnlyDictionary<string, int[]> StratumCellOf { get; init; } = new Dictionary<string, int[]>(StringComparer.Ordinal);

    /// <summary>The row named <paramref name="term"/>.</summary>
    public StrataRow Row(string term) =>
        Rows.FirstOrDefault(r => string.Equals(r.Term, term, StringComparison.Ordinal))
        ?? throw new KeyNotFoundException("no row " + term);
}

/// <summary>
/// Classical ANOVA of a balanced design by error strata, derived from the roles of its factors
/// (<see cref="DesignFactor"/>), never from a formula.
/// <para>
/// Terms. Treatments and random factors are crossed, all interactions included, except that a
/// factor nested in others appears only together with them (B nested in A gives the term B(A), no
/// B main effect). Blocks are additive (no block x treatment or block x block term: that
/// variation is the error). In a split plot (treatments given plot levels) each plot level except
/// the finest gets an error term: blocks x all treatments applied at or above that level, pooled
/// (e.g. whole-plot error = blocks x whole-plot treatments); the finest level's error is blocks x
/// all treatments, which is the residual when each sub-plot has one observation.
/// </para>
/// <para>
/// Sums of squares by Wilkinson's sweep (Wilkinson 1970, "A general recursive procedure for
/// analysis of variance", Biometrika 57, 19-46): terms in order of size, each term's effects are
/// the cell means of the current residuals over the term's cells, then removed. For an orthogonal
/// (balanced or proportional) design this is the orthogonal projection on each term's space, the
/// strata decomposition of Nelder (1965, "The analysis of randomized experiments with orthogonal
/// block structure", Proc. R. Soc. A 283, 147-178); df_T = cells(T) - 1 - Σ df of the model terms
/// marginal to T. Balance is checked first (<see cref="Check"/>): for every pair of terms S, T every
/// cell of S ∪ T must occur, with n(S∪T) n(S∩T) = n(S) n(T).
/// </para>
/// <para>
/// Expected mean squares by the rules for balanced designs in the unrestricted mixed model
/// (Searle, Casella and McCulloch 1992, Variance Components, Wiley; Hicks and Turner 1999,
/// Fundamental Concepts in the Design of Experiments, 5th ed., Oxford): E MS(T) = σ² + Σ over random terms
/// U whose factors include T's of (n / cells(U)) σ²(U), plus (n / cells(T)) θ(T) for a fixed T.
/// The error of T is the combination of mean squares whose expectation is E MS(T) without T's own
/// component, found by a triangular solve over the random terms; when it is a single mean square
/// the F test is exact, otherwise it is a quasi-F with denominator df by Satterthwaite (1946,
/// "An approximate distribution of estimates of variance components", Biometrics Bulletin 2,
/// 110-114): df = (Σ c_i MS_i)² / Σ (c_i MS_i)² / df_i.
/// </para>
/// </summary>
public static class StrataAnova
{
    private const int MaxFactors = 8; // terms grow as 2^k and the balance check as 4^k
    private const double Zero = 1e-12;

    /// <summary>The name of the residual row.</summary>
    public const string ResidualName = "residual";

    /// <summary>The first problem with the declaration or the data, or null when the design can be analysed.</summary>
    public static DesignIssue? Check(IReadOnlyList<DesignFactor> factors, DesignData data)
    {
        ArgumentNullException.ThrowIfNull(factors);
        ArgumentNullException.ThrowIfNull(data);
        return Build(factors, data, requireBalance: true, out _);
    }

    /// <summary>
    /// For studies whose nested factors use labels that are unique across parents (batch codes
    /// B1..B8 rather than 1, 2 within each supplier): the first label of a nested factor that occurs
    /// under two level combinations of its parents, or null. Under the "labels repeat within each
    /// parent" convention the same label under two parents is simply two levels, so this check is
    /// the caller's choice.
    /// </summary>
    public static DesignIssue? FindContradictoryNesting(IReadOnlyList<DesignFactor> factors, DesignData data)
    {
        ArgumentNullException.ThrowIfNull(factors);
        ArgumentNullException.ThrowIfNull(data);
        var n = data.Response.Length;
        for (var f = 0; f < factors.Count; f++)
        {
            if (factors[f].NestedIn.Count == 0)
            {
                continue;
            }

            var parents = factors[f].NestedIn.Select(pn => IndexOf(factors, pn)).Where(i => i >= 0).ToArray();
            var first = new Dictionary<string, int>(StringComparer.Ordinal);
            for (var i = 0; i < n; i++)
            {
                var label = data.Labels[f][i];
                if (!first.TryGetValue(label, out var i0))
                {
                    first.Add(label, i);
                    continue;
                }

                if (parents.Any(pi => !string.Equals(data.Labels[pi][i0], data.Labels[pi][i], StringComparison.Ordinal)))
                {
                    string Where(int row) => string.Join(", ", parents.Select(pi => factors[pi].Name + " " + data.Labels[pi][row]));
                    return new DesignIssue(
                        DesignIssueKind.ContradictoryNesting,
                        factors[f].Name + " " + label + " appears under " + Where(i0) + " and under " + Where(i) + ", but " + factors[f].Name + " is declared nested in " + string.Join(" and ", parents.Select(pi => factors[pi].Name)),
                        [factors[f].Name, .. parents.Select(pi => factors[pi].Name)]);
                }
            }
        }

        return null;
    }

    /// <summary>Fits the strata ANOVA; throws <see cref="ArgumentException"/> when <see cref="Check"/> finds a problem.</summary>
    public static StrataAnovaResult Fit(IReadOnlyList<DesignFactor> factors, DesignData data)
    {
        ArgumentNullException.ThrowIfNull(factors);
        ArgumentNullException.ThrowIfNull(data);
        var issue = Build(factors, data, requireBalance: true, out var model);
        if (issue is not null)
        {
            throw new ArgumentException(issue.Message, nameof(data));
        }

        return Analyse(model!, data.Response);
    }

    internal sealed class TermSpec
    {
        public required string Name { get; init; }
        public required int[] Factors { get; init; }
        public required TermKind Kind { get; init; }
        public PlotLevel Plot { get; init; }
        public bool IsRandom => Kind != TermKind.Treatment;
        public int[] CellOf { get; set; } = [];
        public int Cells { get; set; }
        public int[] CellCounts { get; set; } = [];
        public int Df { get; set; }
        public double Ss { get; set; }
        public double[] Effects { get; set; } = [];
    }

    internal sealed class Model
    {
        public required IReadOnlyList<DesignFactor> Factors { get; init; }
        public required List<TermSpec> Terms { get; init; }
        public required int N { get; init; }
    }

    /// <summary>
    /// Checks the declaration and builds the model's terms (with their cells); with
    /// <paramref name="requireBalance"/> also checks completeness and equal replication.
    /// </summary>
    internal static DesignIssue? Build(IReadOnlyList<DesignFactor> factors, DesignData data, bool requireBalance, out Model? model)
    {
        model = null;
        var k = factors.Count;
        var n = data.Response.Length;
        if (k == 0 || k > MaxFactors)
        {
            return new DesignIssue(DesignIssueKind.Declaration, string.Create(CultureInfo.InvariantCulture, $"a design needs between 1 and {MaxFactors} factors"), []);
        }

        if (data.Labels.Count != k)
        {
            throw new ArgumentException("one label column per factor is required", nameof(data));
        }

        var index = new Dictionary<string, int>(StringComparer.Ordinal);
        for (var f = 0; f < k; f++)
        {
            if (data.Labels[f].Count != n)
            {
                throw new ArgumentException("every label column must have one label per observation", nameof(data));
            }

            if (!index.TryAdd(factors[f].Name, f))
            {
                return new DesignIssue(DesignIssueKind.Declaration, "the factor " + factors[f].Name + " is declared twice", [factors[f].Name]);
            }
        }

        // Ancestors (transitive parents), with cycle detection.
        var parents = new int[k][];
        for (var f = 0; f < k; f++)
        {
            var list = new List<int>();
            foreach (var p in factors[f].NestedIn)
            {
                if (!index.TryGetValue(p, out var pi) || pi == f)
                {
                    return new DesignIssue(DesignIssueKind.Declaration, factors[f].Name + " is declared nested in " + p + ", which is not another factor of the design", [factors[f].Name]);
                }

                list.Add(pi);
            }

            parents[f] = [.. list];
        }

        var ancestors = new int[k]; // bit masks
        for (var f = 0; f < k; f++)
        {
            var mask = 0;
            var stack = new Stack<int>(parents[f]);
            while (stack.Count > 0)
            {
                var p = stack.Pop();
                if (p == f)
                {
                    return new DesignIssue(DesignIssueKind.Declaration, "the nesting of " + factors[f].Name + " goes round in a circle", [factors[f].Name]);
                }

                if ((mask & (1 << p)) == 0)
                {
                    mask |= 1 << p;
                    foreach (var q in parents[p])
                    {
                        stack.Push(q);
                    }
                }
            }

            ancestors[f] = mask;
        }

        if (n < 2)
        {
            return new DesignIssue(DesignIssueKind.TooFewObservations, "at least two observations are needed", []);
        }

        // Level codes.
        var codes = new int[k][];
        for (var f = 0; f < k; f++)
        {
            var map = new Dictionary<string, int>(StringComparer.Ordinal);
            var c = new int[n];
            for (var i = 0; i < n; i++)
            {
                var label = data.Labels[f][i];
                if (!map.TryGetValue(label, out var code))
                {
                    code = map.Count;
                    map.Add(label, code);
                }

                c[i] = code;
            }

            codes[f] = c;
            if (map.Count < 2 && factors[f].NestedIn.Count == 0)
            {
                var what = factors[f].IsRandom ? "its variance cannot be estimated" : "it has no contrast to test";
                return new DesignIssue(DesignIssueKind.SingleLevel, factors[f].Name + " has a single level in the data, so " + what, [factors[f].Name]);
            }
        }

        var plotLevels = factors.Where(f => f.Role == FactorRole.Treatment && f.Plot != PlotLevel.Unit).Select(f => f.Plot).Distinct().Order().ToList();
        var blocksMask = 0;
        for (var f = 0; f < k; f++)
        {
            if (factors[f].Role == FactorRole.Block)
            {
                blocksMask |= 1 << f;
            }
        }

        if (plotLevels.Count > 0)
        {
            var unsplit = factors.FirstOrDefault(f => f.Role == FactorRole.Treatment && f.Plot == PlotLevel.Unit);
            if (unsplit is not null)
            {
                return new DesignIssue(DesignIssueKind.Declaration, "in a split plot every treatment must say which plot level it is applied to; " + unsplit.Name + " does not", [unsplit.Name]);
            }

            var random = factors.FirstOrDefault(f => f.Role == FactorRole.Random);
            if (random is not null && requireBalance)
            {
                return new DesignIssue(DesignIssueKind.Declaration, "a split plot with the random factor " + random.Name + " besides its blocks has no classical strata; analyse it with the mixed model", [random.Name]);
            }

            if (blocksMask == 0)
            {
                var first = factors.First(f => f.Plot != PlotLevel.Unit);
                return new DesignIssue(DesignIssueKind.SplitPlotWithoutBlocks, "a split plot needs its blocks declared: without them the whole plots cannot be told apart from the treatments", [first.Name]);
            }
        }

        // Candidate terms: subsets closed under nesting; blocks additive.
        var specs = new List<TermSpec>();
        for (var mask = 1; mask < (1 << k); mask++)
        {
            if (!Closed(mask, ancestors, k) || !BlocksAdditive(mask, blocksMask, ancestors, k))
            {
                continue;
            }

            var members = Members(mask, k);
            var kind = members.Any(f => factors[f].Role == FactorRole.Block) ? TermKind.Block
                : members.Any(f => factors[f].Role == FactorRole.Random) ? TermKind.Random
                : TermKind.Treatment;
            specs.Add(new TermSpec { Name = TermName(members, factors, ancestors), Factors = members, Kind = kind });
        }

        foreach (var level in plotLevels)
        {
            var mask = blocksMask;
            for (var f = 0; f < k; f++)
            {
                if (factors[f].Role == FactorRole.Treatment && factors[f].Plot <= level)
                {
                    mask |= 1 << f | ancestors[f];
                }
            }

            if (specs.Any(s => MaskOf(s.Factors) == mask))
            {
                continue;
            }

            specs.Add(new TermSpec { Name = PlotErrorName(level), Factors = Members(mask, k), Kind = TermKind.PlotError, Plot = level });
        }

        specs = [.. specs.OrderBy(s => s.Factors.Length).ThenBy(s => Key(s.Factors), StringComparer.Ordinal)];

        // Cells of each term.
        foreach (var s in specs)
        {
            s.CellOf = CellIds(s.Factors, codes, n, out var cells);
            s.Cells = cells;
            var counts = new int[cells];
            foreach (var c in s.CellOf)
            {
                counts[c]++;
            }

            s.CellCounts = counts;
        }

        if (!requireBalance)
        {
            model = new Model { Factors = factors, Terms = specs, N = n };
            return null;
        }

        // Completeness first (a missing combination is the clearer message), then equal replication,
        // finest cells first: every pair of terms complete, every cell of every union equally replicated.
        for (var a = 0; a < specs.Count; a++)
        {
            for (var b = a + 1; b < specs.Count; b++)
            {
                var sa = specs[a];
                var sb = specs[b];
                var union = MaskOf(sa.Factors) | MaskOf(sb.Factors);
                var inter = MaskOf(sa.Factors) & MaskOf(sb.Factors);
                _ = CellIds(Members(union, k), codes, n, out var unionCells);
                _ = CellIds(Members(inter, k), codes, n, out var interCells);

                // Complete: cells(S ∪ T) = cells(S) cells(T) / cells(S ∩ T).
                var expected = (long)sa.Cells * sb.Cells;
                if (expected % interCells != 0 || unionCells != expected / interCells)
                {
                    var issue = MissingCombination(sa, sb, Members(union, k), factors, data, codes);
                    if (issue is not null)
                    {
                        return issue;
                    }
                }
            }
        }

        var unions = new HashSet<int>();
        foreach (var sa in specs)
        {
            foreach (var sb in specs)
            {
                unions.Add(MaskOf(sa.Factors) | MaskOf(sb.Factors));
            }
        }

        foreach (var mask in unions.OrderByDescending(m => System.Numerics.BitOperations.PopCount((uint)m)).ThenBy(m => m))
        {
            var members = Members(mask, k);
            var ids = CellIds(members, codes, n, out var cells);
            var counts = new int[cells];
            foreach (var c in ids)
            {
                counts[c]++;
            }

            if (counts.Any(c => c != counts[0]))
            {
                return Unbalanced(members, TermName(members, factors, ancestors), factors, data, codes);
            }
        }

        model = new Model { Factors = factors, Terms = specs, N = n };
        return null;
    }

    private static StrataAnovaResult Analyse(Model model, double[] y)
    {
        var n = model.N;
        var mean = Groups.Mean(y);
        var r = new double[n];
        for (var i = 0; i < n; i++)
        {
            r[i] = y[i] - mean;
        }

        var totalSs = r.Sum(v => v * v);

        // Wilkinson sweep in order of term size.
        var kept = new List<TermSpec>();
        foreach (var t in model.Terms)
        {
            var mask = MaskOf(t.Factors);
            var df = t.Cells - 1;
            foreach (var u in kept)
            {
                var um = MaskOf(u.Factors);
                if ((um & mask) == um && um != mask)
                {
                    df -= u.Df;
                }
            }

            t.Df = df;
            if (df <= 0)
            {
                continue;
            }

            var sums = new double[t.Cells];
            foreach (var (c, i) in t.CellOf.Select((c, i) => (c, i)))
            {
                sums[c] += r[i];
            }

            var means = new double[t.Cells];
            for (var c = 0; c < t.Cells; c++)
            {
                means[c] = sums[c] / t.CellCounts[c];
            }

            // Second pass (corrected means, as in Groups.Mean).
            var corr = new double[t.Cells];
            for (var i = 0; i < n; i++)
            {
                corr[t.CellOf[i]] += r[i] - means[t.CellOf[i]];
            }

            double ss = 0;
            for (var c = 0; c < t.Cells; c++)
            {
                means[c] += corr[c] / t.CellCounts[c];
                ss += t.CellCounts[c] * means[c] * means[c];
            }

            for (var i = 0; i < n; i++)
            {
                r[i] -= means[t.CellOf[i]];
            }

            t.Ss = ss;
            t.Effects = means;
            kept.Add(t);
        }

        var dfRes = n - 1 - kept.Sum(t => t.Df);
        var ssRes = r.Sum(v => v * v);
        var hasResidual = dfRes > 0;

        var ms = kept.ToDictionary(t => t.Name, t => t.Ss / t.Df, StringComparer.Ordinal);
        var randoms = kept.Where(t => t.IsRandom).ToList();

        // Expected mean squares.
        List<EmsComponent> Ems(TermSpec t)
        {
            var list = new List<EmsComponent>();
            if (hasResidual)
            {
                list.Add(new EmsComponent(ResidualName, 1, false));
            }

            var m = MaskOf(t.Factors);
            foreach (var u in randoms.AsEnumerable().Reverse())
            {
                var um = MaskOf(u.Factors);
                if ((um & m) == m)
                {
                    list.Add(new EmsComponent(u.Name, (double)n / u.Cells, false));
                }
            }

            if (!t.IsRandom)
            {
                list.Add(new EmsComponent(t.Name, (double)n / t.Cells, true));
            }

            return list;
        }

        var rows = new List<StrataRow>();
        foreach (var t in kept)
        {
            var ems = Ems(t);
            var tm = MaskOf(t.Factors);

            // Null expectation: σ² components other than the term's own.
            double NullCoef(TermSpec v) => !ReferenceEquals(v, t) && (MaskOf(v.Factors) & tm) == tm ? (double)n / v.Cells : 0;

            var c = new Dictionary<TermSpec, double>();
            foreach (var v in randoms)
            {
                var vm = MaskOf(v.Factors);
                var below = c.Where(kv => (MaskOf(kv.Key.Factors) & vm) == MaskOf(kv.Key.Factors)).Sum(kv => kv.Value);
                c[v] = (NullCoef(v) / ((double)n / v.Cells)) - below;
            }

            var parts = new List<DenominatorPart>();
            foreach (var v in randoms)
            {
                if (Math.Abs(c[v]) > Zero)
                {
                    parts.Add(new DenominatorPart(v.Name, Clean(c[v]), ms[v.Name], v.Df));
                }
            }

            if (hasResidual)
            {
                var cRes = 1 - c.Values.Sum();
                if (Math.Abs(cRes) > Zero)
                {
                    parts.Add(new DenominatorPart(ResidualName, Clean(cRes), ssRes / dfRes, dfRes));
                }
            }

            var noError = parts.Count == 0
                ? "no mean square of this design has the expectation this term would have without its own effect (its cells hold one observation each), so it cannot be tested"
                : null;
            rows.Add(MakeRow(t.Name, t.Factors, t.Kind, t.Plot, t.IsRandom, t.Ss, t.Df, ems, parts, noError, model.Factors));
        }

        if (hasResidual)
        {
            rows.Add(new StrataRow(
                ResidualName, [.. model.Factors.Select(f => f.Name)], TermKind.Residual, PlotLevel.Unit, true, ResidualName,
                ssRes, dfRes, Quantity.Of(ssRes / dfRes), [new EmsComponent(ResidualName, 1, false)], [], false,
                Quantity.Undefined("the residual is not tested"), Quantity.Undefined("the residual is not tested"),
                Quantity.Undefined("the residual is not tested"), Quantity.Undefined("the residual is not tested")));
        }

        // Strata: each random row (and the residual) is a stratum; fixed rows join their exact error.
        var strata = new List<DesignStratum>();
        foreach (var row in rows.Where(r => r.IsRandom))
        {
            var members = rows.Where(x => !x.IsRandom && !x.IsQuasiF && x.Denominator.Count == 1
                                          && string.Equals(x.Denominator[0].Term, row.Term, StringComparison.Ordinal))
                .Select(x => x.Term).Append(row.Term).ToList();
            strata.Add(new DesignStratum(row.Term, row.Kind, members));
        }

        // Without a residual row the finest error term (one observation per cell) holds the
        // finest stratum's residuals: hand those out as the residuals.
        var residuals = r;
        var unitTerm = hasResidual ? null : kept.LastOrDefault(t => t.IsRandom && t.Cells == n);
        if (unitTerm is not null)
        {
            residuals = [.. unitTerm.CellOf.Select(c => unitTerm.Effects[c])];
        }
        return new StrataAnovaResult(rows, strata, totalSs, n - 1, n, mean, residuals)
        {
            StratumEffects = kept.Where(t => t.IsRandom).ToDictionary(t => t.Name, t => t.Effects, StringComparer.Ordinal),
            StratumCellOf = kept.Where(t => t.IsRandom).ToDictionary(t => t.Name, t => t.CellOf, StringComparer.Ordinal),
        };
    }

    private static StrataRow MakeRow(
        string name, int[] factors, TermKind kind, PlotLevel plot, bool random, double ss, int df,
        List<EmsComponent> ems, List<DenominatorPart> parts, string? noError, IReadOnlyList<DesignFactor> all)
    {
        var msValue = ss / df;
        var msT = Quantity.Of(msValue);
        Quantity denMs, denDf, f, p;
        var quasi = false;
        string stratum;
        if (parts.Count == 0)
        {
            var reason = noError ?? "no error term exists for this term in this design";
            denMs = denDf = f = p = Quantity.Undefined(reason);
            stratum = name;
        }
        else
        {
            quasi = parts.Count > 1 || Math.Abs(parts[0].Coefficient - 1) > Zero;
            var den = parts.Sum(x => x.Coefficient * x.MeanSquare);
            double satDen = 0;
            foreach (var x in parts)
            {
                var term = x.Coefficient * x.MeanSquare;
                satDen += term * term / x.Df;
            }

            denMs = Quantity.Of(den);
            denDf = quasi
                ? (den > 0 && satDen > 0 ? Quantity.Of(den * den / satDen) : Quantity.Undefined("the quasi-F error mean square is not positive, so its Satterthwaite df is not defined"))
                : Quantity.Of(parts[0].Df);
            stratum = quasi ? DescribeDenominator(parts) : parts[0].Term;
            if (!(den > 0))
            {
                f = p = Quantity.Undefined(quasi
                    ? "the combination of mean squares that forms the error is not positive"
                    : "the error mean square is zero");
            }
            else
            {
                f = Quantity.Of(msValue / den);
                p = denDf.IsDefined ? Quantity.Of(Probability.FUpper(f.Value, df, denDf.Value)) : Quantity.Undefined(denDf.Reason!);
            }
        }

        if (random)
        {
            stratum = name;
        }

        return new StrataRow(name, [.. factors.Select(i => all[i].Name)], kind, plot, random, stratum, ss, df, msT, ems, parts, quasi, denMs, denDf, f, p);
    }

    /// <summary>A mean-square combination in words, e.g. "A:S + B:S − A:B:S"; <paramref name="name"/> writes a term's name (default: as it is).</summary>
    public static string DescribeDenominator(IReadOnlyList<DenominatorPart> parts, Func<string, string>? name = null)
    {
        ArgumentNullException.ThrowIfNull(parts);
        var sb = new StringBuilder();
        foreach (var x in parts)
        {
            var neg = x.Coefficient < 0;
            if (sb.Length > 0)
            {
                sb.Append(neg ? " − " : " + ");
            }
            else if (neg)
            {
                sb.Append('−');
            }

            var a = Math.Abs(x.Coefficient);
            if (Math.Abs(a - 1) > Zero)
            {
                sb.Append(a.ToString("G6", CultureInfo.InvariantCulture)).Append(' ');
            }

            sb.Append("MS(").Append(name is null ? x.Term : name(x.Term)).Append(')');
        }

        return sb.ToString();
    }

    /// <summary>An expected mean square in words, e.g. "σ² + 2 σ²(whole-plot error) + 8 θ(A)"; <paramref name="name"/> writes a term's name (default: as it is).</summary>
    public static string DescribeEms(IReadOnlyList<EmsComponent> ems, Func<string, string>? name = null)
    {
        ArgumentNullException.ThrowIfNull(ems);
        name ??= t => t;
        return string.Join(" + ", ems.Select(e =>
        {
            var sym = e.IsFixed ? "θ(" + name(e.Term) + ")" : string.Equals(e.Term, ResidualName, StringComparison.Ordinal) ? "σ²" : "σ²(" + name(e.Term) + ")";
            return Math.Abs(e.Coefficient - 1) <= Zero ? sym : e.Coefficient.ToString("G6", CultureInfo.InvariantCulture) + " " + sym;
        }));
    }

    private static double Clean(double c)
    {
        var r = Math.Round(c);
        return Math.Abs(c - r) < 1e-9 ? r : c;
    }

    private static string PlotErrorName(PlotLevel level) => level switch
    {
        PlotLevel.WholePlot => "whole-plot error",
        PlotLevel.SubPlot => "sub-plot error",
        PlotLevel.SubSubPlot => "sub-sub-plot error",
        _ => "plot error",
    };

    private static bool Closed(int mask, int[] ancestors, int k)
    {
        for (var f = 0; f < k; f++)
        {
            if ((mask & (1 << f)) != 0 && (mask & ancestors[f]) != ancestors[f])
            {
                return false;
            }
        }

        return true;
    }

    private static bool BlocksAdditive(int mask, int blocksMask, int[] ancestors, int k)
    {
        for (var b = 0; b < k; b++)
        {
            if ((mask & blocksMask & (1 << b)) == 0)
            {
                continue;
            }

            for (var f = 0; f < k; f++)
            {
                if (f == b || (mask & (1 << f)) == 0)
                {
                    continue;
                }

                var related = (ancestors[b] & (1 << f)) != 0 || (ancestors[f] & (1 << b)) != 0;
                if (!related)
                {
                    return false;
                }
            }
        }

        return true;
    }

    private static int[] Members(int mask, int k) => [.. Enumerable.Range(0, k).Where(f => (mask & (1 << f)) != 0)];

    private static int MaskOf(int[] members) => members.Aggregate(0, (m, f) => m | (1 << f));

    private static string Key(int[] members) => string.Join(",", members.Select(f => f.ToString("D2", CultureInfo.InvariantCulture)));

    /// <summary>Leaves joined by ':', each with its ancestry in brackets: C(B(A)), O:B(S).</summary>
    private static string TermName(int[] members, IReadOnlyList<DesignFactor> factors, int[] ancestors)
    {
        var mask = MaskOf(members);
        var leaves = members.Where(f => !members.Any(g => g != f && (ancestors[g] & (1 << f)) != 0)).ToList();
        return string.Join(":", leaves.Select(f => Nested(f, factors, mask)));
    }

    private static string Nested(int f, IReadOnlyList<DesignFactor> factors, int mask)
    {
        var parents = factors[f].NestedIn;
        if (parents.Count == 0)
        {
            return factors[f].Name;
        }

        var names = parents.Select(p => Nested(IndexOf(factors, p), factors, mask));
        return factors[f].Name + "(" + string.Join(":", names) + ")";
    }

    private static int IndexOf(IReadOnlyList<DesignFactor> factors, string name)
    {
        for (var i = 0; i < factors.Count; i++)
        {
            if (string.Equals(factors[i].Name, name, StringComparison.Ordinal))
            {
                return i;
            }
        }

        return -1;
    }

    /// <summary>Compact cell ids (0 .. cells - 1, in order of first appearance) of a factor set.</summary>
    private static int[] CellIds(int[] members, int[][] codes, int n, out int cells)
    {
        var ids = new int[n];
        cells = 1;
        foreach (var f in members)
        {
            var map = new Dictionary<long, int>();
            for (var i = 0; i < n; i++)
            {
                var key = ((long)ids[i] << 32) | (uint)codes[f][i];
                if (!map.TryGetValue(key, out var id))
                {
                    id = map.Count;
                    map.Add(key, id);
                }

                ids[i] = id;
            }

            cells = map.Count;
        }

        if (members.Length == 0)
        {
            cells = 1;
        }

        return ids;
    }

    private static DesignIssue Unbalanced(int[] members, string name, IReadOnlyList<DesignFactor> factors, DesignData data, int[][] codes)
    {
        var n = data.Response.Length;
        var ids = CellIds(members, codes, n, out var cells);
        var counts = new int[cells];
        var firstRow = new int[cells];
        for (var i = n - 1; i >= 0; i--)
        {
            firstRow[ids[i]] = i;
        }

        foreach (var c in ids)
        {
            counts[c]++;
        }

        var most = counts.Max();
        var odd = Enumerable.Range(0, cells).First(c => counts[c] != most);
        var labels = string.Join(", ", members.Select(f => factors[f].Name + " " + data.Labels[f][firstRow[odd]]));
        return new DesignIssue(
            DesignIssueKind.Unbalanced,
            string.Create(CultureInfo.InvariantCulture, $"the design is not balanced: {labels} has {counts[odd]} observation(s) where other cells of {name} have {most}; the classical strata need equal replication (the mixed model handles unequal numbers)"),
            [.. members.Select(f => factors[f].Name)]);
    }

    private static DesignIssue? MissingCombination(
        TermSpec sa, TermSpec sb, int[] union, IReadOnlyList<DesignFactor> factors, DesignData data, int[][] codes)
    {
        // Find a level of sa and a level of sb, agreeing on their shared factors, that never occur together.
        var n = data.Response.Length;
        var seen = new HashSet<(int, int)>();
        for (var i = 0; i < n; i++)
        {
            seen.Add((sa.CellOf[i], sb.CellOf[i]));
        }

        var shared = sa.Factors.Intersect(sb.Factors).ToArray();
        var rowOfA = new Dictionary<int, int>();
        var rowOfB = new Dictionary<int, int>();
        for (var i = 0; i < n; i++)
        {
            rowOfA.TryAdd(sa.CellOf[i], i);
            rowOfB.TryAdd(sb.CellOf[i], i);
        }

        foreach (var (ca, ia) in rowOfA)
        {
            foreach (var (cb, ib) in rowOfB)
            {
                if (seen.Contains((ca, cb)) || shared.Any(f => codes[f][ia] != codes[f][ib]))
                {
                    continue;
                }

                string Describe(TermSpec s, int row) => string.Join(", ", s.Factors.Select(f => factors[f].Name + " " + data.Labels[f][row]));
                return new DesignIssue(
                    DesignIssueKind.MissingCombination,
                    "the design is incomplete: no observation has " + Describe(sa, ia) + " together with " + Describe(sb, ib) + "; the classical strata need every combination (the mixed model handles missing plots)",
                    [.. union.Select(f => factors[f].Name)]);
            }
        }

        return null;
    }
}
