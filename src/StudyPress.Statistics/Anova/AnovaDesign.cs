using System.Globalization;

namespace StudyPress.Statistics.Anova;

/// <summary>What is wrong with a design that cannot be fitted.</summary>
public enum DesignProblemKind
{
    /// <summary>A factor has fewer than two levels with observations.</summary>
    SingleLevel,

    /// <summary>Interactions were requested and a cell of the full crossing has no observations.</summary>
    EmptyCell,

    /// <summary>Fewer observations than model parameters.</summary>
    TooFewObservations,

    /// <summary>The coding is rank deficient: a term's columns are combinations of earlier columns.</summary>
    RankDeficient,
}

/// <summary>
/// Why a design cannot be fitted, in words a user can act on. <paramref name="Cell"/> holds the
/// level names of the empty cell (one per factor) for <see cref="DesignProblemKind.EmptyCell"/>;
/// <paramref name="Term"/> names the factor or term concerned where there is one.
/// </summary>
public sealed record DesignProblem(DesignProblemKind Kind, string Message, IReadOnlyList<string>? Cell, string? Term);

/// <summary>A model term: its name (factor names joined by ':') and its factors, in factor order.</summary>
public sealed record ModelTerm(string Name, IReadOnlyList<string> Factors);

/// <summary>
/// The model of a fixed-effects factorial ANOVA: its terms, its design matrix and the checks that
/// it can be fitted. Terms are the main effects in factor order, then (with interactions) every
/// interaction, by degree and then in lexicographic order of the factor positions
/// (a:b, a:c, b:c, a:b:c). Only levels that occur in the data are coded (the binder reports
/// unused levels). Coding is sum-to-zero (effect) coding: for a factor with k used levels,
/// column c (c = 0 .. k-2) is 1 for level c, -1 for the last used level and 0 otherwise;
/// interaction columns are products of the main-effect columns of their factors. The intercept is
/// the first column. This coding is full rank whenever the design is estimable, and it is the
/// coding under which marginal (type 3) sums of squares test the usual unweighted hypotheses
/// (Searle, Linear Models for Unbalanced Data, 1987, ch. 4 and 8).
/// </summary>
public static class AnovaDesign
{
    /// <summary>The model's terms in table order.</summary>
    public static IReadOnlyList<ModelTerm> Terms(AnovaInput input)
    {
        ArgumentNullException.ThrowIfNull(input);
        return [.. DesignCoding.TermFactorSets(input.Factors.Count, input.Interactions)
            .Select(t => new ModelTerm(DesignCoding.TermName(input.Factors, t), [.. t.Select(f => input.Factors[f].Name)]))];
    }

    /// <summary>The terms, in table order, of the model on these factors (before any data is seen).</summary>
    public static IReadOnlyList<ModelTerm> Terms(IReadOnlyList<string> factors, bool interactions)
    {
        ArgumentNullException.ThrowIfNull(factors);
        return [.. DesignCoding.TermFactorSets(factors.Count, interactions)
            .Select(t => new ModelTerm(string.Join(":", t.Select(f => factors[f])), [.. t.Select(f => factors[f])]))];
    }

    /// <summary>
    /// The level names (one per factor) of the first empty cell of the full crossing of the used
    /// levels, in the order of the crossing with the first factor varying slowest; null when no
    /// interactions are requested or every cell has an observation.
    /// </summary>
    public static IReadOnlyList<string>? FindEmptyCell(AnovaInput input)
    {
        ArgumentNullException.ThrowIfNull(input);
        if (!input.Interactions || input.Factors.Count < 2)
        {
            return null;
        }

        var used = DesignCoding.UsedLevels(input);
        var k = input.Factors.Count;
        var radix = used.Select(u => u.Length).ToArray();
        var seen = new HashSet<long>();
        var n = input.Response.Length;
        var cellIndex = new int[k];
        var usedIndex = DesignCoding.UsedIndex(input, used);
        for (var i = 0; i < n; i++)
        {
            for (var f = 0; f < k; f++)
            {
                cellIndex[f] = usedIndex[f][input.Factors[f].Codes[i]];
            }

            seen.Add(DesignCoding.CellKey(cellIndex, radix));
        }

        foreach (var cell in DesignCoding.Crossing(radix))
        {
            if (!seen.Contains(DesignCoding.CellKey(cell, radix)))
            {
                return [.. Enumerable.Range(0, k).Select(f => input.Factors[f].Levels[used[f][cell[f]]])];
            }
        }

        return null;
    }

    /// <summary>
    /// Checks that the model can be fitted: every factor has two used levels, no cell is empty when
    /// interactions are requested, there are at least as many observations as parameters, and the
    /// coding is of full column rank (checked by the Householder QR that the fit uses). Returns
    /// null when the design is fine. A main-effects model with empty cells is allowed when it is
    /// still full rank.
    /// </summary>
    public static DesignProblem? Check(AnovaInput input) => Check(input, out _, out _);

    /// <summary>The check, handing back the coding and its QR when the design is fine (reused by the fit).</summary>
    internal static DesignProblem? Check(AnovaInput input, out DesignCoding? fittedCoding, out HouseholderQr? fittedQr)
    {
        ArgumentNullException.ThrowIfNull(input);
        fittedCoding = null;
        fittedQr = null;
        DesignCoding.Validate(input);
        var used = DesignCoding.UsedLevels(input);
        for (var f = 0; f < used.Length; f++)
        {
            if (used[f].Length < 2)
            {
                var name = input.Factors[f].Name;
                return new DesignProblem(
                    DesignProblemKind.SingleLevel,
                    string.Create(CultureInfo.InvariantCulture, $"factor '{name}' has only {used[f].Length} level with observations; a factor needs at least two"),
                    null,
                    name);
            }
        }

        var empty = FindEmptyCell(input);
        if (empty is not null)
        {
            var cell = string.Join(", ", input.Factors.Select((fc, f) => fc.Name + " = " + empty[f]));
            return new DesignProblem(
                DesignProblemKind.EmptyCell,
                "the cell (" + cell + ") has no observations, so the interactions cannot be estimated; fit main effects only or add data for that cell",
                empty,
                null);
        }

        var coding = DesignCoding.Build(input);
        if (coding.Rows < coding.ColumnCount)
        {
            return new DesignProblem(
                DesignProblemKind.TooFewObservations,
                string.Create(CultureInfo.InvariantCulture, $"the model has {coding.ColumnCount} parameters but there are only {coding.Rows} observations"),
                null,
                null);
        }

        var qr = HouseholderQr.Factor(coding.WeightedCellRows, coding.AllColumns);
        if (!qr.IsFullRank)
        {
            return RankDeficient(coding, qr);
        }

        fittedCoding = coding;
        fittedQr = qr;
        return null;
    }

    /// <summary>The problem of a rank-deficient coding: the first term whose columns its QR found aliased.</summary>
    internal static DesignProblem RankDeficient(DesignCoding coding, HouseholderQr qr)
    {
        var t = coding.TermOfColumn(qr.FirstAliasedColumn);
        var name = t < 0 ? "the intercept" : coding.TermNames[t];
        return new DesignProblem(
            DesignProblemKind.RankDeficient,
            "the effects of '" + name + "' cannot be separated from those of the terms before it (the design is rank deficient: some combinations of levels are missing or confounded)",
            null,
            t < 0 ? null : coding.TermNames[t]);
    }

    /// <summary>
    /// The full-rank design matrix used by the fit, n x p, rows in input order: the intercept column
    /// followed by each term's sum-to-zero columns in term order (see the class remarks).
    /// </summary>
    public static double[,] ModelMatrix(AnovaInput input)
    {
        ArgumentNullException.ThrowIfNull(input);
        DesignCoding.Validate(input);
        return (double[,])DesignCoding.Build(input).Matrix.Clone();
    }

    /// <summary>
    /// The model matrix in structured form, without its n x p expansion: the distinct rows (one per
    /// cell with observations, in order of first occurrence) and each observation's row.
    /// <see cref="ModelMatrix"/>[i, j] = CellRows[CellOf[i], j].
    /// </summary>
    public static (double[,] CellRows, int[] CellOf) CellModelMatrix(AnovaInput input)
    {
        ArgumentNullException.ThrowIfNull(input);
        DesignCoding.Validate(input);
        var coding = DesignCoding.Build(input);
        return ((double[,])coding.CellRows.Clone(), coding.CellOf);
    }
}

/// <summary>Internal description of the coded design shared by the fit, the means and Box-Cox.</summary>
internal sealed class DesignCoding
{
    private DesignCoding(
        int rows,
        int[][] used,
        int[][] usedIndex,
        IReadOnlyList<int[]> terms,
        IReadOnlyList<string> termNames,
        int[] termStart,
        int[] termCount,
        double[,] cellRows,
        int[] cellOf,
        int[] cellCounts,
        int[][] cellLevels)
    {
        Rows = rows;
        Used = used;
        UsedIndexOf = usedIndex;
        Terms = terms;
        TermNames = termNames;
        TermStart = termStart;
        TermCount = termCount;
        CellRows = cellRows;
        CellOf = cellOf;
        CellCounts = cellCounts;
        CellLevels = cellLevels;
        ColumnCount = cellRows.GetLength(1);
        AllColumns = [.. Enumerable.Range(0, ColumnCount)];
    }

    private double[,]? _matrix;

    public int Rows { get; }

    /// <summary>Used[f] = original level codes of factor f that occur, ascending.</summary>
    public int[][] Used { get; }

    /// <summary>UsedIndexOf[f][code] = position of the code among the used levels, or -1.</summary>
    public int[][] UsedIndexOf { get; }

    public IReadOnlyList<int[]> Terms { get; }

    public IReadOnlyList<string> TermNames { get; }

    public int[] TermStart { get; }

    public int[] TermCount { get; }

    /// <summary>The n x p design matrix (built on first use from <see cref="CellRows"/> and <see cref="CellOf"/>).</summary>
    public double[,] Matrix => _matrix ??= Expand();

    /// <summary>The distinct coding rows, one per cell with observations, in order of first occurrence.</summary>
    public double[,] CellRows { get; }

    /// <summary>The cell (row of <see cref="CellRows"/>) of each observation.</summary>
    public int[] CellOf { get; }

    /// <summary>Observations per cell.</summary>
    public int[] CellCounts { get; }

    /// <summary>Used-level positions (one per factor) of each cell.</summary>
    public int[][] CellLevels { get; }

    public int ColumnCount { get; }

    public int[] AllColumns { get; }

    public static void Validate(AnovaInput input)
    {
        ArgumentNullException.ThrowIfNull(input.Response);
        ArgumentNullException.ThrowIfNull(input.Factors);
        if (input.Factors.Count == 0)
        {
            throw new ArgumentException("at least one factor is needed", nameof(input));
        }

        if (input.Response.Length == 0)
        {
            throw new ArgumentException("the response is empty", nameof(input));
        }

        foreach (var f in input.Factors)
        {
            if (f.Codes.Length != input.Response.Length)
            {
                throw new ArgumentException("factor '" + f.Name + "' and the response differ in length", nameof(input));
            }

            foreach (var c in f.Codes)
            {
                if (c < 0 || c >= f.Levels.Count)
                {
                    throw new ArgumentException("factor '" + f.Name + "' has a level code out of range", nameof(input));
                }
            }
        }
    }

    /// <summary>Main effects in factor order, then interactions by degree, lexicographic within a degree.</summary>
    public static List<int[]> TermFactorSets(int factorCount, bool interactions)
    {
        var terms = new List<int[]>();
        var maxDegree = interactions ? factorCount : 1;
        for (var d = 1; d <= maxDegree; d++)
        {
            AddCombinations(terms, factorCount, d, 0, []);
        }

        return terms;
    }

    public static string TermName(IReadOnlyList<FactorColumn> factors, int[] term) =>
        string.Join(":", term.Select(f => factors[f].Name));

    public static int[][] UsedLevels(AnovaInput input)
    {
        var used = new int[input.Factors.Count][];
        for (var f = 0; f < used.Length; f++)
        {
            var fc = input.Factors[f];
            var present = new bool[fc.Levels.Count];
            foreach (var c in fc.Codes)
            {
                present[c] = true;
            }

            used[f] = [.. Enumerable.Range(0, present.Length).Where(l => present[l])];
        }

        return used;
    }

    public static int[][] UsedIndex(AnovaInput input, int[][] used)
    {
        var idx = new int[used.Length][];
        for (var f = 0; f < used.Length; f++)
        {
            idx[f] = Enumerable.Repeat(-1, input.Factors[f].Levels.Count).ToArray();
            for (var u = 0; u < used[f].Length; u++)
            {
                idx[f][used[f][u]] = u;
            }
        }

        return idx;
    }

    public static long CellKey(int[] cell, int[] radix)
    {
        long key = 0;
        for (var f = 0; f < cell.Length; f++)
        {
            key = (key * radix[f]) + cell[f];
        }

        return key;
    }

    /// <summary>All cells of the crossing, first factor slowest. The yielded array is reused.</summary>
    public static IEnumerable<int[]> Crossing(int[] radix)
    {
        if (radix.Any(r => r == 0))
        {
            yield break;
        }

        var cell = new int[radix.Length];
        while (true)
        {
            yield return cell;
            var f = radix.Length - 1;
            while (f >= 0)
            {
                cell[f]++;
                if (cell[f] < radix[f])
                {
                    break;
                }

                cell[f] = 0;
                f--;
            }

            if (f < 0)
            {
                yield break;
            }
        }
    }

    public static DesignCoding Build(AnovaInput input)
    {
        var n = input.Response.Length;
        var used = UsedLevels(input);
        var usedIndex = UsedIndex(input, used);
        var terms = TermFactorSets(input.Factors.Count, input.Interactions);
        var names = terms.Select(t => TermName(input.Factors, t)).ToArray();
        var start = new int[terms.Count];
        var count = new int[terms.Count];
        var p = 1;
        for (var t = 0; t < terms.Count; t++)
        {
            start[t] = p;
            var c = 1;
            foreach (var f in terms[t])
            {
                c *= Math.Max(used[f].Length - 1, 0);
            }

            count[t] = c;
            p += c;
        }

        // Every observation of a cell has the same coding row: code each cell once.
        var k = input.Factors.Count;
        var radix = used.Select(u => u.Length).ToArray();
        long cellsInCrossing = 1;
        foreach (var r in radix)
        {
            cellsInCrossing = Math.Min(cellsInCrossing * Math.Max(r, 1), long.MaxValue / 1024);
        }

        if (k == 1)
        {
            var (oneCellOf, oneCounts, oneLevels) = OneFactorCells(input.Factors[0].Codes, usedIndex[0], used[0].Length);
            var oneRows = new double[oneCounts.Length, p];
            var oneRow = new double[p];
            for (var c = 0; c < oneCounts.Length; c++)
            {
                FillRow(oneRow, oneLevels[c], used, terms, start);
                for (var j = 0; j < p; j++)
                {
                    oneRows[c, j] = oneRow[j];
                }
            }

            return new DesignCoding(n, used, usedIndex, terms, names, start, count, oneRows, oneCellOf, oneCounts, oneLevels);
        }

        var dense = cellsInCrossing <= 1 << 20 ? new int[cellsInCrossing] : null; // key -> slot + 1
        var sparse = dense is null ? new Dictionary<long, int>() : null;
        var cellOf = new int[n];
        var counts = new List<int>();
        var cellLevels = new List<int[]>();
        var levels = new int[k];
        for (var i = 0; i < n; i++)
        {
            for (var f = 0; f < k; f++)
            {
                levels[f] = usedIndex[f][input.Factors[f].Codes[i]];
            }

            var key = CellKey(levels, radix);
            int slot;
            if (dense is not null)
            {
                slot = dense[key] - 1;
                if (slot < 0)
                {
                    slot = counts.Count;
                    dense[key] = slot + 1;
                    counts.Add(0);
                    cellLevels.Add((int[])levels.Clone());
                }
            }
            else if (!sparse!.TryGetValue(key, out slot))
            {
                slot = counts.Count;
                sparse[key] = slot;
                counts.Add(0);
                cellLevels.Add((int[])levels.Clone());
            }

            counts[slot]++;
            cellOf[i] = slot;
        }

        var cellRows = new double[counts.Count, p];
        var row = new double[p];
        for (var c = 0; c < counts.Count; c++)
        {
            FillRow(row, cellLevels[c], used, terms, start);
            for (var j = 0; j < p; j++)
            {
                cellRows[c, j] = row[j];
            }
        }

        return new DesignCoding(n, used, usedIndex, terms, names, start, count, cellRows, cellOf, [.. counts], [.. cellLevels]);
    }

    /// <summary>
    /// The cells of one factor as <see cref="Build"/>'s general loop makes them (a cell per used
    /// level, numbered in order of first occurrence; each observation's cell; the counts; each
    /// cell's used-level position), from one pass over the codes that counts each code and notes
    /// the order in which codes first occur. When every level is used and they first occur in code
    /// order, each observation's cell is its code, and the codes array itself is returned as the
    /// cells (shared, never changed: no array of n is written); otherwise a second pass writes it.
    /// </summary>
    internal static (int[] CellOf, int[] Counts, int[][] Levels) OneFactorCells(int[] codes, int[] usedIndex, int usedCount)
    {
        var perCode = new int[usedIndex.Length];
        var slotOfCode = new int[usedIndex.Length];
        Array.Fill(slotOfCode, -1);
        var firstSeen = new List<int>(usedCount);
        foreach (var code in codes)
        {
            if (perCode[code]++ == 0)
            {
                slotOfCode[code] = firstSeen.Count;
                firstSeen.Add(code);
            }
        }

        var counts = new int[firstSeen.Count];
        var levels = new int[firstSeen.Count][];
        var identity = usedIndex.Length == firstSeen.Count;
        for (var slot = 0; slot < firstSeen.Count; slot++)
        {
            var code = firstSeen[slot];
            counts[slot] = perCode[code];
            levels[slot] = [usedIndex[code]];
            identity &= code == slot && usedIndex[code] == slot;
        }

        if (identity)
        {
            return (codes, counts, levels);
        }

        var cellOf = new int[codes.Length];
        for (var i = 0; i < codes.Length; i++)
        {
            cellOf[i] = slotOfCode[codes[i]];
        }

        return (cellOf, counts, levels);
    }

    private double[,]? _weighted;

    /// <summary>
    /// The cell rows scaled by the square root of their counts (zero rows added up to p rows):
    /// A'A = X'X for the n x p design X, so its QR has the same R (up to the signs of its rows),
    /// the same rank decisions and, with the response <see cref="CellResponse"/>, the same first p
    /// effects (squared) as the QR of X and y. The fit then costs O(cells x p²) instead of O(n x p²).
    /// </summary>
    public double[,] WeightedCellRows => _weighted ??= Weigh();

    /// <summary>
    /// The aggregated response: z_c = sqrt(n_c) · mean of cell c (corrected two-pass means, zeros
    /// for padding rows), and the within-cell sum of squares (corrected two-pass, per cell), so that
    /// RSS(model) = SS_within + RSS of z on <see cref="WeightedCellRows"/>.
    /// </summary>
    public (double[] Z, double SsWithin) CellResponse(double[] y)
    {
        var cells = CellCounts.Length;
        var rows = WeightedCellRows.GetLength(0);
        var sums = new double[cells];
        for (var i = 0; i < y.Length; i++)
        {
            sums[CellOf[i]] += y[i];
        }

        var means = new double[cells];
        for (var c = 0; c < cells; c++)
        {
            means[c] = sums[c] / CellCounts[c];
        }

        var corr = new double[cells];
        for (var i = 0; i < y.Length; i++)
        {
            corr[CellOf[i]] += y[i] - means[CellOf[i]];
        }

        for (var c = 0; c < cells; c++)
        {
            means[c] += corr[c] / CellCounts[c];
        }

        var ss = new double[cells];
        var dev = new double[cells];
        for (var i = 0; i < y.Length; i++)
        {
            var c = CellOf[i];
            var d = y[i] - means[c];
            ss[c] += d * d;
            dev[c] += d;
        }

        double within = 0;
        var z = new double[rows];
        for (var c = 0; c < cells; c++)
        {
            within += ss[c] - (dev[c] * dev[c] / CellCounts[c]);
            z[c] = Math.Sqrt(CellCounts[c]) * means[c];
        }

        return (z, within);
    }

    private double[,] Weigh()
    {
        var p = ColumnCount;
        var cells = CellCounts.Length;
        var a = new double[Math.Max(cells, p), p];
        for (var c = 0; c < cells; c++)
        {
            var w = Math.Sqrt(CellCounts[c]);
            for (var j = 0; j < p; j++)
            {
                a[c, j] = w * CellRows[c, j];
            }
        }

        return a;
    }

    private double[,] Expand()
    {
        var p = ColumnCount;
        var x = new double[Rows, p];
        for (var i = 0; i < Rows; i++)
        {
            var c = CellOf[i];
            for (var j = 0; j < p; j++)
            {
                x[i, j] = CellRows[c, j];
            }
        }

        return x;
    }

    /// <summary>Coding row for a cell given by used-level positions (one per factor).</summary>
    public double[] CodingRow(int[] usedLevelPositions)
    {
        var row = new double[ColumnCount];
        FillRow(row, usedLevelPositions, Used, Terms, TermStart);
        return row;
    }

    /// <summary>Index of the term owning column j; -1 for the intercept.</summary>
    public int TermOfColumn(int j)
    {
        for (var t = 0; t < Terms.Count; t++)
        {
            if (j >= TermStart[t] && j < TermStart[t] + TermCount[t])
            {
                return t;
            }
        }

        return -1;
    }

    public IEnumerable<int> ColumnsOf(int t) => Enumerable.Range(TermStart[t], TermCount[t]);

    private static void FillRow(double[] row, int[] levels, int[][] used, IReadOnlyList<int[]> terms, int[] start)
    {
        row[0] = 1;
        for (var t = 0; t < terms.Count; t++)
        {
            var term = terms[t];
            var j = start[t];

            // Product of the factors' effect-coded columns, first factor varying slowest. A factor at
            // its last used level contributes -1 to each of its columns; at used level u < last it
            // contributes 1 to column u and 0 elsewhere. So the row is non-zero only on the columns
            // picked per factor (all columns when at the last level, else column u).
            var count = 1;
            var stride = new int[term.Length];
            for (var q = term.Length - 1; q >= 0; q--)
            {
                stride[q] = count;
                count *= used[term[q]].Length - 1;
            }

            for (var c = 0; c < count; c++)
            {
                double v = 1;
                for (var q = 0; q < term.Length && v != 0; q++)
                {
                    var f = term[q];
                    var last = used[f].Length - 1;
                    var combo = c / stride[q] % last;
                    var u = levels[f];
                    v *= u == combo ? 1.0 : u == last ? -1.0 : 0.0;
                }

                row[j + c] = v;
            }
        }
    }

    private static void AddCombinations(List<int[]> terms, int n, int d, int from, List<int> prefix)
    {
        if (prefix.Count == d)
        {
            terms.Add([.. prefix]);
            return;
        }

        for (var f = from; f < n; f++)
        {
            prefix.Add(f);
            AddCombinations(terms, n, d, f + 1, prefix);
            prefix.RemoveAt(prefix.Count - 1);
        }
    }
}
