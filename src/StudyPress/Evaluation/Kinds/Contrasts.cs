using System.Globalization;
using System.Runtime.CompilerServices;
using StudyPress.Binding;
using StudyPress.Binding.Kinds;
using StudyPress.Diagnostics;
using StudyPress.Statistics;
using StudyPress.Statistics.Anova;
using StudyPress.Statistics.Designs;
using StudyPress.Statistics.FollowUp;

namespace StudyPress.Evaluation.Kinds;

/// <summary>One evaluated contrast: its coefficients over the levels (level order, zeros included), the engine's estimate and its manifest values.</summary>
public sealed record ContrastRow(string Name, IReadOnlyList<(string Level, double Coefficient)> Coefficients, ContrastEstimate Estimate, IReadOnlyDictionary<string, ResultValue> Values);

/// <summary>The outcome of a <c>contrasts</c> block: the family, its adjustment, and for trends the partition of the between-level sum of squares.</summary>
public sealed class ContrastsOutcome(BoundBlock block) : BlockOutcome(block)
{
    public string FactorLabel { get; init; } = string.Empty;

    /// <summary>Whether the contrasts are polynomial trends (else named contrasts).</summary>
    public bool IsTrend { get; init; }

    /// <summary>The contrasts in the order given (trends by degree).</summary>
    public IReadOnlyList<ContrastRow> Rows { get; init; } = [];

    /// <summary>Pairwise orthogonality of named contrasts (equal-n sum Σ c d and the 1/n-weighted sum, which decides independence).</summary>
    public IReadOnlyList<ContrastOrthogonality> Orthogonality { get; init; } = [];

    public ContrastAdjustment Adjustment { get; init; }

    /// <summary>Whether <c>adjust</c> was written (else the default: Holm for several, none for one).</summary>
    public bool AdjustmentChosen { get; init; }

    /// <summary>The levels with data and their numbers (trends), in level order.</summary>
    public IReadOnlyList<(string Level, double Value, long Count)> Levels { get; init; } = [];

    /// <summary>Trends below k − 1 degrees: the sum of the higher-degree SS (ss, df, f, p).</summary>
    public IReadOnlyDictionary<string, ResultValue>? LackOfFit { get; init; }

    /// <summary>Trends: the between-level SS of the level means, Σ n_i (ȳ_i − ȳ)², and its df.</summary>
    public IReadOnlyDictionary<string, ResultValue>? BetweenLevels { get; init; }

    /// <summary>The anova's SS of the factor, when it equals the between-level SS (one factor, or means that partition it).</summary>
    public ResultValue? AnovaFactorSs { get; init; }

    /// <summary>The error mean square and df the contrasts use, and its name ("residual" or a design's error term).</summary>
    public DesignErrorTerm? Error { get; init; }

    public bool Transformed { get; init; }

    /// <summary>The anova has other factors and unequal cell counts: the level means are raw means pooled over them.</summary>
    public bool PooledUnbalanced { get; init; }

    /// <summary>The anova has other factors (the level means are pooled over them).</summary>
    public bool OtherFactors { get; init; }

    /// <summary>Levels with a single observation.</summary>
    public bool SingleObservationLevels { get; init; }

    /// <summary>A declared design fitted as a mixed model (REML): the contrasts are of its estimated marginal means, each with its own SE and Satterthwaite df (no error mean square, no sums of squares).</summary>
    public bool Reml { get; init; }

    /// <summary>
    /// The anova has other factors (fixed factorial from the rows): the contrasts are of the model's
    /// estimated marginal means of the factor (equal-weight averages of the fitted cells over the
    /// other factors), with their covariance from the model; trends use equal weights and their
    /// partition is of the joint (Wald) sum of squares of the means.
    /// </summary>
    public bool MarginalMeans { get; init; }
}

/// <summary>
/// Evaluates <c>contrasts</c> blocks into values (no HTML, no report text): the factor's level means
/// (on the anova's response scale) and counts, the error mean square of the factor's F test, the
/// named contrasts or polynomial trends through <see cref="Statistics.FollowUp.Contrasts"/>.
/// </summary>
public sealed class ContrastsEvaluator : KindEvaluator
{
    /// <summary>Registers this part of the kind (see DEVELOPERS.md, "Adding an analysis kind").</summary>
    [ModuleInitializer]
    internal static void Register() => KindEvaluators.Register(new ContrastsEvaluator());

    /// <summary>The level of the manifest values of the trends' remainder.</summary>
    public const string LackOfFitLevel = "lack of fit";

    /// <summary>The level of the manifest values of the between-level sum of squares.</summary>
    public const string BetweenLevelsLevel = "between levels";

    public override string Kind => "contrasts";

    public override BlockOutcome Evaluate(EvaluationContext context, BoundBlock block, DiagnosticBag diagnostics)
    {
        var options = block.OptionsOf<ContrastsKind.Options>();

        // The outcome's values, filled as they are found; a block that stops at a mistake returns
        // what it has found so far (Build), every outcome built once.
        var factorLabel = string.Empty;
        var isTrend = false;
        var rows = new List<ContrastRow>();
        IReadOnlyList<ContrastOrthogonality> orthogonality = [];
        var adjustmentUsed = default(ContrastAdjustment);
        var adjustmentChosen = false;
        IReadOnlyList<(string Level, double Value, long Count)> levelNumbers = [];
        IReadOnlyDictionary<string, ResultValue>? lackOfFit = null;
        IReadOnlyDictionary<string, ResultValue>? betweenLevels = null;
        ResultValue? anovaFactorSs = null;
        DesignErrorTerm? errorUsed = null;
        var transformed = false;
        var pooledUnbalanced = false;
        var otherFactors = false;
        var singleObservationLevels = false;
        var remlRoute = false;
        var onMarginalMeans = false;
        ContrastsOutcome Build() => new(block)
        {
            FactorLabel = factorLabel,
            IsTrend = isTrend,
            Rows = rows.AsReadOnly(),
            Orthogonality = orthogonality,
            Adjustment = adjustmentUsed,
            AdjustmentChosen = adjustmentChosen,
            Levels = levelNumbers,
            LackOfFit = lackOfFit,
            BetweenLevels = betweenLevels,
            AnovaFactorSs = anovaFactorSs,
            Error = errorUsed,
            Transformed = transformed,
            PooledUnbalanced = pooledUnbalanced,
            OtherFactors = otherFactors,
            SingleObservationLevels = singleObservationLevels,
            Reml = remlRoute,
            MarginalMeans = onMarginalMeans,
        };

        if (PlainAnovaOf(context, block, diagnostics) is not { } anova)
        {
            return Build();
        }

        var of = block.Of!.Id;
        string factorName;
        IReadOnlyList<string> levels;
        double[] means;
        long[] counts;
        DesignErrorTerm? error;
        MarginalMeansTerm? marginal = null;
        RemlFixedEffects? reml = null;
        var at = options.Factor is null ? block.Location : options.FactorLocation;
        if (anova.Design is { } design && anova.Data is { } designData)
        {
            var treatments = designData.Factors.Where(f => f.Spec.Layout.Role == FactorRole.Treatment).ToList();
            var factor = Choose(designData.Factors, treatments, options, of, block, diagnostics);
            if (factor is null)
            {
                return Build();
            }

            if (factor.Spec.Layout.Role != FactorRole.Treatment)
            {
                diagnostics.DesignViewUnavailable(options.FactorLocation, "contrasts", factor.Spec.Name, "it is a block or random factor, whose levels are a sample of units rather than treatments to compare; its variance component is in the anova block");
                return Build();
            }

            if (design.Method == DesignMethod.Reml)
            {
                // The mixed model's estimated marginal means, each contrast with its own SE and Satterthwaite df.
                remlRoute = true;
                factorLabel = factor.Spec.Display;
                onMarginalMeans = true;
                otherFactors = designData.Factors.Count > 1;
                reml = design.Reml!.FixedEffects!;
                factorName = factor.Spec.Name;
                levels = factor.Levels;
                (means, counts) = FromGroups(factor.Split(designData.Response));
                error = null;
            }
            else
            {
                var row = design.Strata!.Row(factor.Spec.Name);
                if (row.Denominator is not [{ Coefficient: 1.0 } part] || row.IsQuasiF)
                {
                    diagnostics.DesignViewUnavailable(at, "contrasts", of, $"{factor.Spec.Name} has no single error mean square in this design (its F test is approximate, against a combination of mean squares), so its contrasts would have no exact standard error");
                    return Build();
                }

                factorName = factor.Spec.Name;
                factorLabel = factor.Spec.Display;
                levels = factor.Levels;
                (means, counts) = FromGroups(factor.Split(designData.Response));
                error = new DesignErrorTerm(part.Term, part.MeanSquare, part.Df);
                otherFactors = designData.Factors.Count > 1;
                pooledUnbalanced = otherFactors && Unbalanced(designData.Cells().Select(c => (long)c.Values.Length));
            }
        }
        else if (anova.Route == AnovaRoute.Cells && anova.Fit is { } fit && anova.Cells is { } cells)
        {
            var factors = anova.Factors;
            var k = -1;
            if (options.Factor is { } name)
            {
                k = factors.Select((f, i) => (f, i)).FirstOrDefault(p => p.f.Name == name, (null!, -1)).Item2;
                if (k < 0)
                {
                    diagnostics.FactorNotInAnova(options.FactorLocation, name, of, DiagnosticBag.Nearest(name, factors.Select(f => f.Name)));
                    return Build();
                }
            }
            else if (factors.Count == 1)
            {
                k = 0;
            }
            else
            {
                diagnostics.FactorChoiceNeeded(block.Location, of);
                return Build();
            }

            factorName = factors[k].Name;
            factorLabel = factors[k].Display;
            levels = cells.Levels[k];
            means = new double[levels.Count];
            counts = new long[levels.Count];
            foreach (var c in cells.Cells)
            {
                counts[c.Levels[k]] += c.Count;
                means[c.Levels[k]] += c.Count * c.Mean;
            }

            for (var i = 0; i < means.Length; i++)
            {
                means[i] = counts[i] > 0 ? means[i] / counts[i] : 0;
            }

            error = new DesignErrorTerm("residual", fit.ResidualMeanSquare.IsDefined ? fit.ResidualMeanSquare.Value : double.NaN, fit.ResidualDf);
            otherFactors = factors.Count > 1;
            if (otherFactors && anova.Model is { } model)
            {
                // The model's estimated marginal means from the cell statistics (the same as from the rows).
                var cellInput = new CellAnovaInput([.. factors.Select((f, i) => new CellFactor(f.Name, cells.Levels[i]))], cells.Cells, model.Interaction, model.SsType, context.Header.Alpha);
                marginal = CellStatisticsAnova.MarginalMeans(cellInput, [[factorName]]).Terms[0];
                onMarginalMeans = true;
            }
            else
            {
                pooledUnbalanced = otherFactors && Unbalanced(cells.Cells.Select(c => c.Count));
            }
        }
        else if (anova is { Result: { } result, Data: { } data, Input: { } input })
        {
            var factor = Choose(data.Factors, data.Factors, options, of, block, diagnostics);
            if (factor is null)
            {
                return Build();
            }

            factorName = factor.Spec.Name;
            factorLabel = factor.Spec.Display;
            levels = factor.Levels;
            (means, counts) = FromGroups(factor.Split(input.Response));
            var ms = result.ResidualMeanSquare;
            error = new DesignErrorTerm("residual", ms.IsDefined ? ms.Value : double.NaN, result.ResidualDf);
            otherFactors = data.Factors.Count > 1;
            if (otherFactors)
            {
                // The model's estimated marginal means of the factor, not raw means pooled over the others.
                marginal = EstimatedMarginalMeans.Compute(input, 0, TransformKind.None, null, [[factorName]]).Terms[0];
                onMarginalMeans = true;
            }
        }
        else
        {
            return Build();
        }

        // Levels without any observation take no part (they have no mean).
        var kept = Enumerable.Range(0, levels.Count).Where(i => counts[i] > 0).ToArray();
        var names = kept.Select(i => levels[i]).ToArray();
        var m = kept.Select(i => means[i]).ToArray();
        var n = kept.Select(i => counts[i]).ToArray();
        errorUsed = error;
        transformed = anova.Transformed is not null;
        singleObservationLevels = n.Any(x => x < 2);
        if (names.Length < 2)
        {
            return Build();
        }

        // Estimated marginal means (several factors): the means of the kept levels and their unit covariance, in that order.
        double[]? em = null;
        double[,]? cov = null;
        var remlRows = reml is null ? null : names.Select(l => reml.MeanRow([factorName], [l])).ToArray();
        if (reml is not null)
        {
            em = [.. remlRows!.Select(r => reml.Combination(r).Estimate + reml.Shift)];
        }
        else if (marginal is not null)
        {
            var index = names.Select(l => marginal.Means.Select((x, i) => (x, i)).First(p => p.x.Levels[0] == l).i).ToArray();
            em = [.. index.Select(i => marginal.Means[i].Mean.Value)];
            cov = new double[index.Length, index.Length];
            for (var a = 0; a < index.Length; a++)
            {
                for (var b = 0; b < index.Length; b++)
                {
                    cov[a, b] = marginal.UnitCovariance[index[a], index[b]];
                }
            }
        }

        ContrastFamily Family(IReadOnlyList<ContrastSpec> specs, ContrastAdjustment adjustment) => reml is not null
            ? RemlComparisons.Contrasts(reml, remlRows!, specs, adjustment, context.Header.Alpha)
            : em is null
            ? Statistics.FollowUp.Contrasts.OnGroupMeans(m, n, error!.MeanSquare, error.Df, specs, adjustment, context.Header.Alpha)
            : Statistics.FollowUp.Contrasts.Evaluate(em, cov!, error!.MeanSquare, error.Df, specs, adjustment, context.Header.Alpha);

        var alpha = context.Header.Alpha;
        var inputs = context.Inputs(block);
        if (options.Compare is { } compare)
        {
            var specs = new List<ContrastSpec>();
            foreach (var c in compare)
            {
                var coefficients = new double[names.Length];
                foreach (var x in c.Coefficients)
                {
                    var i = Array.IndexOf(names, x.Level);
                    if (i < 0)
                    {
                        diagnostics.ContrastUnknownLevel(x.At, x.Level, factorName, DiagnosticBag.Nearest(x.Level, names));
                        return Build();
                    }

                    coefficients[i] = x.Value;
                }

                specs.Add(new ContrastSpec(c.Name, coefficients));
            }

            var adjustment = ContrastsKind.AdjustmentFor(options.Adjust, specs.Count);
            var family = Family(specs, adjustment);
            adjustmentUsed = Record(context, block, rows, factorName, names, family, false, inputs);
            adjustmentChosen = options.Adjust is not null;
            orthogonality = family.Orthogonality;
            levelNumbers = [.. names.Select((l, i) => (l, double.NaN, n[i]))];
            return Build();
        }

        // Polynomial trends: the levels' numbers, from 'values' or from the level names.
        if (names.Length > ContrastsKind.MaxTrendLevels)
        {
            diagnostics.TrendTooManyLevels(options.TrendLocation, factorName, names.Length, ContrastsKind.MaxTrendLevels);
            return Build();
        }

        var numbers = new double[names.Length];
        if (options.Values is { } given)
        {
            foreach (var v in given)
            {
                if (Array.IndexOf(names, v.Level) < 0)
                {
                    diagnostics.ContrastUnknownLevel(v.At, v.Level, factorName, DiagnosticBag.Nearest(v.Level, names));
                    return Build();
                }
            }

            for (var i = 0; i < names.Length; i++)
            {
                if (given.FirstOrDefault(v => v.Level == names[i]) is not { } v)
                {
                    diagnostics.TrendLevelWithoutNumber(options.ValuesLocation, factorName, names[i]);
                    return Build();
                }

                numbers[i] = v.Value;
            }
        }
        else
        {
            for (var i = 0; i < names.Length; i++)
            {
                if (!double.TryParse(names[i], NumberStyles.Float, CultureInfo.InvariantCulture, out numbers[i]) || !double.IsFinite(numbers[i]))
                {
                    diagnostics.TrendLevelWithoutNumber(options.TrendLocation, factorName, names[i]);
                    return Build();
                }
            }
        }

        // The trends depend on the numbers only up to a shift and a scale: scaled by the power of
        // two below the largest size they lie within ±2 (no overflow in the engine's centring),
        // and a power of two scales without rounding, so ordinary numbers give the same results
        // as unscaled ones. Numbers closer than a billionth of their range cannot be told apart
        // by polynomials of any use.
        var largest = numbers.Max(Math.Abs);
        var exponent = largest > 0 ? Math.ILogB(largest) : 0;
        var scaled = numbers.Select(v => Math.ScaleB(v, -exponent)).ToArray();
        var range = scaled.Max() - scaled.Min();
        for (var i = 0; i < names.Length; i++)
        {
            for (var j = 0; j < i; j++)
            {
                if (!(Math.Abs(scaled[i] - scaled[j]) > 1e-9 * range))
                {
                    var where = options.Values?.First(v => v.Level == names[i]).At ?? options.TrendLocation;
                    diagnostics.TrendValuesRepeat(where, factorName, names[i], names[j], numbers[i].ToString("R", CultureInfo.InvariantCulture), numbers[j].ToString("R", CultureInfo.InvariantCulture));
                    return Build();
                }
            }
        }

        var top = names.Length - 1;
        var degree = options.TrendDegree is 0 or null ? top : options.TrendDegree.Value;
        if (degree > top)
        {
            diagnostics.TrendDegreeTooHigh(options.TrendLocation, degree, factorName, names.Length);
            return Build();
        }

        isTrend = true;
        levelNumbers = [.. names.Select((l, i) => (l, numbers[i], n[i]))];
        // Estimated marginal means weigh each level once: equal weights for the polynomials.
        var all = Statistics.FollowUp.Contrasts.PolynomialTrends(scaled, em is null ? n : [.. n.Select(_ => 1L)], top);
        var asked = all.Take(degree).ToList();
        var trendAdjustment = ContrastsKind.AdjustmentFor(options.Adjust, asked.Count);
        var trends = Family(asked, trendAdjustment);
        adjustmentUsed = Record(context, block, rows, factorName, names, trends, true, inputs);
        adjustmentChosen = options.Adjust is not null;

        // The partition: Σ n_i (ȳ_i − ȳ)² on k − 1 df, and the higher degrees' SS as the lack of fit.
        double total = 0, grand = 0;
        for (var i = 0; i < m.Length; i++)
        {
            total += n[i];
            grand += n[i] * m[i];
        }

        grand /= total;
        double between = 0;
        for (var i = 0; i < m.Length; i++)
        {
            between += n[i] * (m[i] - grand) * (m[i] - grand);
        }

        IReadOnlyDictionary<string, ResultValue> Values(string level, params (string Stat, Quantity Value)[] values) =>
            values.ToDictionary(v => v.Stat, v => context.Results.Add(block.Id, TestName.Contrast, factorName, level, null, v.Stat, v.Value, inputs), StringComparer.Ordinal).AsReadOnly();

        if (reml is not null)
        {
            // A mixed model has no sums of squares: the higher degrees are tested jointly by the Wald F
            // of their contrasts, on Satterthwaite's denominator df.
            if (degree < top)
            {
                var higher = all.Skip(degree).Select(c => (IReadOnlyList<double>)remlRows![0].Select((_, j) => c.Coefficients.Select((x, i) => x * remlRows[i][j]).Sum()).ToArray()).ToList();
                var wald = reml.Wald(higher);
                lackOfFit = Values(LackOfFitLevel, (Stat.Df, Quantity.Of(wald.NumeratorDf)), (Stat.F, wald.F), (Stat.DfDen, wald.DfDenominator), (Stat.P, wald.P));
            }

            return Build();
        }

        // Estimated marginal means: the joint sum of squares of all k − 1 trends (the hypothesis of equal means).
        if (em is not null)
        {
            between = Statistics.FollowUp.Contrasts.JointSumOfSquares(em, cov!, all);
        }

        if (degree < top)
        {
            var higher = all.Skip(degree).ToList();
            var ss = em is null
                ? Statistics.FollowUp.Contrasts.OnGroupMeans(m, n, error!.MeanSquare, error.Df, higher, ContrastAdjustment.None, alpha).Contrasts.Sum(c => c.SumOfSquares.Value)
                : Statistics.FollowUp.Contrasts.JointSumOfSquares(em, cov!, higher);
            var df = top - degree;
            var defined = error!.Df >= 1 && error.MeanSquare > 0 && double.IsFinite(error.MeanSquare);
            var f = defined ? Quantity.Of(ss / df / error.MeanSquare) : Quantity.Undefined("the error mean square is not defined");
            var p = f.IsDefined ? Quantity.Of(Probability.FUpper(f.Value, df, error.Df)) : f;
            lackOfFit = Values(LackOfFitLevel, (Stat.Ss, Quantity.Of(ss)), (Stat.Df, Quantity.Of(df)), (Stat.F, f), (Stat.P, p));
        }

        betweenLevels = Values(BetweenLevelsLevel, (Stat.Ss, Quantity.Of(between)), (Stat.Df, Quantity.Of(top)));
        if (anova.Terms.FirstOrDefault(t => t.Term.Name == factorName) is { Values: { } tv } && tv.TryGetValue(Stat.Ss, out var anovaSs)
            && anovaSs.Value.IsDefined && Math.Abs(anovaSs.Value.Value - between) <= 1e-9 * Math.Max(Math.Abs(between), 1e-300))
        {
            anovaFactorSs = anovaSs;
        }

        return Build();
    }

    private static BlockFactor? Choose(IReadOnlyList<BlockFactor> factors, IReadOnlyList<BlockFactor> candidates, ContrastsKind.Options options, string of, BoundBlock block, DiagnosticBag diagnostics)
    {
        if (options.Factor is { } name)
        {
            var factor = factors.FirstOrDefault(f => f.Spec.Name == name);
            if (factor is null)
            {
                diagnostics.FactorNotInAnova(options.FactorLocation, name, of, DiagnosticBag.Nearest(name, candidates.Select(f => f.Spec.Name)));
            }

            return factor;
        }

        if (candidates.Count == 1)
        {
            return candidates[0];
        }

        diagnostics.FactorChoiceNeeded(block.Location, of);
        return null;
    }

    private static (double[] Means, long[] Counts) FromGroups(double[][] groups) =>
        ([.. groups.Select(g => g.Length > 0 ? Groups.Mean(g) : 0)], [.. groups.Select(g => (long)g.Length)]);

    private static bool Unbalanced(IEnumerable<long> counts) => counts.Distinct().Count() > 1;

    /// <summary>Records the family's values in order, adds its rows to <paramref name="rows"/> and returns its adjustment.</summary>
    private static ContrastAdjustment Record(EvaluationContext context, BoundBlock block, List<ContrastRow> rows, string term, string[] names, ContrastFamily family, bool trend, IReadOnlyList<string> inputs)
    {
        foreach (var c in family.Contrasts)
        {
            var values = new Dictionary<string, ResultValue>(StringComparer.Ordinal);
            void Add(string stat, Quantity q) => values[stat] = context.Results.Add(block.Id, TestName.Contrast, term, c.Name, null, stat, q, inputs);
            Add(Stat.Estimate, Quantity.Of(c.Estimate));
            Add(Stat.Se, c.Se);
            Add(Stat.Df, double.IsFinite(c.Df) ? Quantity.Of(c.Df) : Quantity.Undefined(c.T.Reason ?? "the df are not defined"));
            Add(Stat.Statistic, c.T);
            Add(Stat.P, c.P);
            Add(Stat.PAdj, c.PAdjusted);
            Add(Stat.CiLow, c.CiLow);
            Add(Stat.CiHigh, c.CiHigh);
            if (trend)
            {
                Add(Stat.Ss, c.SumOfSquares);
            }

            rows.Add(new ContrastRow(c.Name, [.. names.Select((l, i) => (l, c.Coefficients[i]))], c, values.AsReadOnly()));
        }

        return family.Adjustment;
    }
}
