namespace StudyPress.Statistics.Assumptions;

/// <summary>Externally studentized residual of one observation.</summary>
/// <param name="Index">Zero-based index of the observation (in the order given).</param>
/// <param name="T">t_i; undefined when h_i = 1 or the deleted fit is exact.</param>
/// <param name="P">Two-sided p-value of t_i on <see cref="StudentizedResidualsResult.Df"/> degrees of freedom.</param>
/// <param name="BonferroniP">min(1, n p_i), n the number of observations.</param>
public sealed record StudentizedResidual(int Index, Quantity T, Quantity P, Quantity BonferroniP);

/// <summary>Outlier screen by externally studentized residuals.</summary>
/// <param name="Residuals">
/// One entry per observation, in input order. The entries are computed when read (no object per
/// observation is kept), from the residuals and leverages given to
/// <see cref="StudentizedResiduals.Compute"/>, which must not be changed afterwards.
/// </param>
/// <param name="Df">Degrees of freedom of each t_i: residual df - 1.</param>
/// <param name="Alpha">Significance level used for <see cref="Flagged"/>.</param>
/// <param name="Flagged">Indices whose Bonferroni-adjusted p is below <see cref="Alpha"/>, ascending.</param>
/// <param name="Reason">Why no residual could be studentized (null when the screen ran).</param>
public sealed record StudentizedResidualsResult(
    IReadOnlyList<StudentizedResidual> Residuals,
    int Df,
    double Alpha,
    IReadOnlyList<int> Flagged,
    string? Reason)
{
    /// <summary>
    /// The defined residual of largest |t| (the first in input order among equal ones), or null
    /// when none is defined.
    /// </summary>
    public StudentizedResidual? Largest { get; init; }
}

/// <summary>
/// Externally studentized (deleted, "R-student") residuals of a linear model:
/// t_i = e_i / sqrt(MSE_(i) (1 - h_i)), MSE_(i) = (SSE - e_i² / (1 - h_i)) / (df_res - 1),
/// where MSE_(i) is the residual mean square of the fit without observation i (computed by the
/// deletion identity, without refitting). Under the model t_i follows Student's t on df_res - 1 degrees
/// of freedom; the outlier screen uses the two-sided p and its Bonferroni adjustment min(1, n p).
/// Source: Cook, R. D. and Weisberg, S. (1982), Residuals and Influence in Regression, section 2.2.
/// Domain: residuals and leverages of equal length; df_res &gt;= 2 (otherwise every t_i is undefined).
/// An observation with h_i = 1 (numerically, 1 - h_i &lt;= 1e-10) is fitted exactly and its residual
/// cannot be studentized; the same holds when the fit without observation i is exact (MSE_(i) = 0).
/// Those observations get undefined values with a reason and are never flagged.
/// <para>
/// Cost: one pass computing t_i; the p-value (a regularized incomplete beta) is computed only for
/// |t_i| near or beyond the Bonferroni critical value, since p is decreasing in |t| and the others
/// cannot be flagged. Every other observation's p is computed when its entry is read.
/// </para>
/// </summary>
public static class StudentizedResiduals
{
    private const double LeverageTolerance = 1e-10;

    private const string LeverageOne = "the observation has leverage 1 (it is fitted exactly), so its residual cannot be studentized";

    private const string DeletedExact = "the model without this observation fits exactly, so its residual cannot be studentized";

    public static StudentizedResidualsResult Compute(
        IReadOnlyList<double> residuals,
        IReadOnlyList<double> leverages,
        int residualDf,
        double alpha)
    {
        ArgumentNullException.ThrowIfNull(residuals);
        ArgumentNullException.ThrowIfNull(leverages);
        if (residuals.Count != leverages.Count)
        {
            throw new ArgumentException("residuals and leverages differ in length", nameof(leverages));
        }

        if (!(alpha > 0 && alpha < 1))
        {
            throw new ArgumentOutOfRangeException(nameof(alpha), "alpha must lie between 0 and 1");
        }

        return residuals is double[] array && leverages is CodedValues coded
            ? Compute(new ArrayView(array), new CodedView(coded), residualDf, alpha)
            : Compute(new ListView(residuals), new ListView(leverages), residualDf, alpha);
    }

    /// <summary>
    /// <see cref="Compute(IReadOnlyList{double}, IReadOnlyList{double}, int, double)"/> over views
    /// specialised for the lists' types (compiled per struct view: an array of residuals and
    /// per-cell leverages are read without an interface call per observation); the same operations
    /// in the same order whatever the view.
    /// </summary>
    private static StudentizedResidualsResult Compute<TResiduals, TLeverages>(TResiduals residuals, TLeverages leverages, int residualDf, double alpha)
        where TResiduals : struct, IReadOnlyList<double>
        where TLeverages : struct, IReadOnlyList<double>
    {
        var n = residuals.Count;
        var df = residualDf - 1;
        if (residualDf < 2)
        {
            const string why = "studentized residuals need at least 2 residual degrees of freedom";
            return new StudentizedResidualsResult(new Uniform(n, Quantity.Undefined(why)), df, alpha, [], why);
        }

        double sse = 0;
        for (var i = 0; i < n; i++)
        {
            sse += residuals[i] * residuals[i];
        }

        if (!(sse > 0))
        {
            const string why = "all residuals are zero (the model fits exactly), so no residual can be studentized";
            return new StudentizedResidualsResult(new Uniform(n, Quantity.Undefined(why)), df, alpha, [], why);
        }

        // p_i < alpha / n exactly when |t_i| > the Bonferroni critical value; below 0.99 of it
        // (far outside the quantile's own error) p is certainly larger, so only values above
        // that bound need their p-value to decide.
        var critical = Probability.TCritical(alpha / n, df);
        var screen = double.IsFinite(critical) && critical > 0 ? 0.99 * critical : 0.0;
        var lazy = new Lazy<TResiduals, TLeverages>(residuals, leverages, sse, df, n);
        var flagged = new List<int>();
        var largest = -1;
        double largestT = -1;
        for (var i = 0; i < n; i++)
        {
            var h = leverages[i];
            if (!(h >= 0 && h <= 1 + LeverageTolerance))
            {
                throw new ArgumentException("leverages must lie between 0 and 1", nameof(leverages));
            }

            var t = lazy.T(i, out _);
            if (double.IsNaN(t))
            {
                continue;
            }

            var abs = Math.Abs(t);
            if (abs > largestT)
            {
                largestT = abs;
                largest = i;
            }

            if (abs >= screen)
            {
                var pb = Math.Min(1.0, n * Probability.TTwoSided(t, df));
                if (pb < alpha)
                {
                    flagged.Add(i);
                }
            }
        }

        return new StudentizedResidualsResult(lazy, df, alpha, flagged, null)
        {
            Largest = largest < 0 ? null : lazy[largest],
        };
    }

    /// <summary>The same undefined entry for every observation.</summary>
    private sealed class Uniform(int n, Quantity undefined) : IReadOnlyList<StudentizedResidual>
    {
        public int Count => n;

        public StudentizedResidual this[int index] =>
            (uint)index < (uint)n ? new(index, undefined, undefined, undefined) : throw new ArgumentOutOfRangeException(nameof(index));

        public IEnumerator<StudentizedResidual> GetEnumerator()
        {
            for (var i = 0; i < n; i++)
            {
                yield return this[i];
            }
        }

        System.Collections.IEnumerator System.Collections.IEnumerable.GetEnumerator() => GetEnumerator();
    }

    /// <summary>Entries computed from the residuals and leverages when read.</summary>
    private sealed class Lazy<TResiduals, TLeverages>(TResiduals residuals, TLeverages leverages, double sse, int df, int n) : IReadOnlyList<StudentizedResidual>
        where TResiduals : struct, IReadOnlyList<double>
        where TLeverages : struct, IReadOnlyList<double>
    {
        public int Count => n;

        public StudentizedResidual this[int index]
        {
            get
            {
                if ((uint)index >= (uint)n)
                {
                    throw new ArgumentOutOfRangeException(nameof(index));
                }

                var t = T(index, out var why);
                if (why is not null)
                {
                    var u = Quantity.Undefined(why);
                    return new StudentizedResidual(index, u, u, u);
                }

                var p = Probability.TTwoSided(t, df);
                var pb = Math.Min(1.0, n * p);
                return new StudentizedResidual(index, Quantity.Of(t), Quantity.Of(p), Quantity.Of(pb));
            }
        }

        /// <summary>t_i, or NaN with the reason it is undefined.</summary>
        public double T(int i, out string? why)
        {
            why = null;
            var e = residuals[i];
            var oneMinusH = 1 - leverages[i];
            if (oneMinusH <= LeverageTolerance)
            {
                why = LeverageOne;
                return double.NaN;
            }

            var mseDeleted = (sse - (e * e / oneMinusH)) / df;

            // Relative guard: the subtraction leaves rounding of order 1e-15 SSE.
            if (!(mseDeleted > 1e-13 * sse / df))
            {
                why = DeletedExact;
                return double.NaN;
            }

            return e / Math.Sqrt(mseDeleted * oneMinusH);
        }

        public IEnumerator<StudentizedResidual> GetEnumerator()
        {
            for (var i = 0; i < n; i++)
            {
                yield return this[i];
            }
        }

        System.Collections.IEnumerator System.Collections.IEnumerable.GetEnumerator() => GetEnumerator();
    }

    /// <summary>Per-cell values read through the cell codes directly (<see cref="CodedValues"/>'s entries).</summary>
    private readonly struct CodedView(CodedValues coded) : IReadOnlyList<double>
    {
        private readonly double[] perGroup = coded.PerGroup;
        private readonly int[] groupOf = coded.GroupOf;

        public double this[int index] => perGroup[groupOf[index]];

        public int Count => groupOf.Length;

        public IEnumerator<double> GetEnumerator() => coded.GetEnumerator();

        System.Collections.IEnumerator System.Collections.IEnumerable.GetEnumerator() => coded.GetEnumerator();
    }
}
