namespace StudyPress.Statistics.Anova;

/// <summary>
/// Means of one level of a factor. <paramref name="RawMean"/> is the plain mean of the level's
/// observations (weighted by cell counts); <paramref name="LeastSquaresMean"/> is the
/// least-squares (estimated marginal) mean: the model's predicted cell means averaged with equal
/// weight over the levels of the other factors. In a balanced design they coincide.
/// </summary>
public sealed record LevelMean(string Level, int Count, Quantity RawMean, Quantity LeastSquaresMean);

/// <summary>Level means of one factor, in level order (levels without observations have count 0 and undefined means).</summary>
public sealed record FactorMeans(string Factor, IReadOnlyList<LevelMean> Levels);

/// <summary>
/// One cell of the full crossing of the used levels: the level names (one per factor), the count,
/// the raw cell mean (undefined for an empty cell) and the model's predicted mean (equal to the
/// raw mean in a model with all interactions; defined for empty cells of an estimable
/// main-effects model).
/// </summary>
public sealed record CellMean(IReadOnlyList<string> Levels, int Count, Quantity RawMean, Quantity ModelMean);

/// <summary>Grand mean, per-factor level means and cell means of an ANOVA's response (cells only for two or more factors).</summary>
public sealed record MeansTable(double GrandMean, IReadOnlyList<FactorMeans> Factors, IReadOnlyList<CellMean> Cells);

/// <summary>
/// Cell means and marginal means for the report. Means are on the scale of
/// <see cref="AnovaInput.Response"/>: when the compiler centred the response it adds the centre
/// back. Raw means use the corrected two-pass mean (<see cref="Groups.Mean"/>). Least-squares
/// means use the fitted sum-to-zero model: for level l of factor f, LS mean = mu + alpha_f(l),
/// because under sum-to-zero coding every interaction effect sums to zero over each of its indices,
/// so the equal-weight average of the predicted cell means over the other factors leaves only the
/// intercept and f's main effect (Searle, Speed and Milliken 1980, "Population marginal means in
/// the linear model", The American Statistician 34, 216-221). The alpha of the last used level is
/// minus the sum of the others.
/// <para>
/// The compiler's anova block takes its level means from the cells it fits
/// (<see cref="CellStatisticsAnova.LevelMeans"/>); <see cref="Compute"/> on rows stays as the
/// reference those means are tested against, with the cell means of every cell of the crossing.
/// </para>
/// </summary>
public static class AnovaMeans
{
    public static MeansTable Compute(AnovaInput input)
    {
        ArgumentNullException.ThrowIfNull(input);
        DesignCoding.Validate(input);
        var y = input.Response;
        var n = y.Length;
        var k = input.Factors.Count;
        var grand = n > 0 ? Groups.Mean(y) : double.NaN;
        if (k == 1)
        {
            return new MeansTable(grand, [OneFactor(y, input.Factors[0])], []);
        }

        var problem = AnovaDesign.Check(input, out var checkedCoding, out var qr);
        var coding = checkedCoding ?? DesignCoding.Build(input);
        double[]? b = null;
        if (problem is null && qr is not null)
        {
            b = qr.Coefficients(qr.Effects(checkedCoding!.CellResponse(y).Z));
        }

        var notFitted = Quantity.Undefined(problem?.Message ?? "the model could not be fitted");
        var factors = new List<FactorMeans>(k);
        for (var f = 0; f < k; f++)
        {
            var fc = input.Factors[f];
            var byLevel = Split(y, fc.Codes, fc.Levels.Count);
            var used = coding.Used[f];
            var levels = new List<LevelMean>(fc.Levels.Count);
            for (var l = 0; l < fc.Levels.Count; l++)
            {
                var values = byLevel[l];
                var raw = values.Length > 0 ? Quantity.Of(Groups.Mean(values)) : Quantity.Undefined("the level has no observations");
                Quantity ls;
                var u = coding.UsedIndexOf[f][l];
                if (u < 0)
                {
                    ls = Quantity.Undefined("the level has no observations");
                }
                else if (b is null)
                {
                    ls = notFitted;
                }
                else
                {
                    ls = Quantity.Of(b[0] + MainEffect(coding, b, f, u, used.Length));
                }

                levels.Add(new LevelMean(fc.Levels[l], values.Length, raw, ls));
            }

            factors.Add(new FactorMeans(fc.Name, levels));
        }

        var cells = new List<CellMean>();
        if (k > 1)
        {
            var radix = coding.Used.Select(u => u.Length).ToArray();
            var members = new Dictionary<long, List<double>>();
            var pos = new int[k];
            for (var i = 0; i < n; i++)
            {
                for (var f = 0; f < k; f++)
                {
                    pos[f] = coding.UsedIndexOf[f][input.Factors[f].Codes[i]];
                }

                var key = DesignCoding.CellKey(pos, radix);
                if (!members.TryGetValue(key, out var list))
                {
                    list = [];
                    members[key] = list;
                }

                list.Add(y[i]);
            }

            foreach (var cell in DesignCoding.Crossing(radix))
            {
                var names = Enumerable.Range(0, k).Select(f => input.Factors[f].Levels[coding.Used[f][cell[f]]]).ToArray();
                members.TryGetValue(DesignCoding.CellKey(cell, radix), out var list);
                var count = list?.Count ?? 0;
                var raw = count > 0 ? Quantity.Of(Groups.Mean(list!.ToArray())) : Quantity.Undefined("the cell has no observations");
                Quantity model = notFitted;
                if (b is not null)
                {
                    var row = coding.CodingRow(cell);
                    double s = 0;
                    for (var j = 0; j < row.Length; j++)
                    {
                        s += row[j] * b[j];
                    }

                    model = Quantity.Of(s);
                }

                cells.Add(new CellMean(names, count, raw, model));
            }
        }

        return new MeansTable(grand, factors, cells);
    }

    /// <summary>
    /// One factor in closed form: the least-squares mean of a level is its mean (mu + alpha_l of the
    /// sum-to-zero fit is the fitted value of the level). Means by the corrected two-pass sum of
    /// <see cref="Groups.Mean"/>, accumulated per level in input order (the same sums as on the
    /// level's values split out), without a design matrix or QR.
    /// </summary>
    private static FactorMeans OneFactor(double[] y, FactorColumn fc)
    {
        var levelCount = fc.Levels.Count;
        var codes = fc.Codes;
        var counts = new int[levelCount];
        var sums = new double[levelCount];
        for (var i = 0; i < y.Length; i++)
        {
            counts[codes[i]]++;
            sums[codes[i]] += y[i];
        }

        var means = new double[levelCount];
        for (var l = 0; l < levelCount; l++)
        {
            means[l] = counts[l] > 0 ? sums[l] / counts[l] : 0;
        }

        var corr = new double[levelCount];
        for (var i = 0; i < y.Length; i++)
        {
            corr[codes[i]] += y[i] - means[codes[i]];
        }

        var used = counts.Count(c => c > 0);
        var notFitted = used < 2
            ? Quantity.Undefined(string.Create(System.Globalization.CultureInfo.InvariantCulture, $"factor '{fc.Name}' has only {used} level with observations; a factor needs at least two"))
            : default(Quantity?);
        var levels = new List<LevelMean>(levelCount);
        for (var l = 0; l < levelCount; l++)
        {
            if (counts[l] == 0)
            {
                var none = Quantity.Undefined("the level has no observations");
                levels.Add(new LevelMean(fc.Levels[l], 0, none, none));
                continue;
            }

            var mean = Quantity.Of(means[l] + (corr[l] / counts[l]));
            levels.Add(new LevelMean(fc.Levels[l], counts[l], mean, notFitted ?? mean));
        }

        return new FactorMeans(fc.Name, levels);
    }

    /// <summary>α of used level <paramref name="u"/> of factor <paramref name="f"/> (the last used level: minus the sum of the others).</summary>
    internal static double MainEffect(DesignCoding coding, double[] b, int f, int u, int levels)
    {
        var start = coding.TermStart[f]; // main effects come first, in factor order
        if (u < levels - 1)
        {
            return b[start + u];
        }

        double s = 0;
        for (var j = 0; j < levels - 1; j++)
        {
            s += b[start + j];
        }

        return -s;
    }

    private static double[][] Split(double[] y, int[] codes, int levels)
    {
        var sizes = new int[levels];
        foreach (var c in codes)
        {
            sizes[c]++;
        }

        var groups = sizes.Select(s => new double[s]).ToArray();
        var fill = new int[levels];
        for (var i = 0; i < y.Length; i++)
        {
            groups[codes[i]][fill[codes[i]]++] = y[i];
        }

        return groups;
    }
}
