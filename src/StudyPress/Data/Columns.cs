namespace StudyPress.Data;

/// <summary>
/// A numeric column, centred: <c>Centred[i] = value[i] - Centre</c> computed in exact decimal
/// arithmetic before the conversion to double, so that values such as 1000000000000.4 keep every
/// digit that matters for variances. Missing cells are NaN here and nowhere else.
/// </summary>
/// <see cref="Values"/> holds each value itself (the double nearest to its decimal text), for
/// order statistics and transformations.
/// <see cref="Exact"/> keeps the exact values when every cell was exact decimal text, so
/// that means can be computed exactly.
public sealed record NumericColumn(string Name, double[] Centred, double[] Values, double Centre, int Missing, ExactValues? Exact)
{
    public bool IsMissing(int row) => double.IsNaN(Centred[row]);
}

/// <summary>
/// Exact values of a numeric column: either decimals, or (8 bytes a cell instead of 16) 64-bit
/// integers m with one scale s for the column, value = m × 10^-s. Every value of the scaled form
/// is the decimal with mantissa m and scale s, so means come out the same either way.
/// </summary>
public sealed class ExactValues
{
    private readonly decimal[]? _decimals;
    private readonly long[]? _scaled;
    private readonly byte _scale;

    private ExactValues(decimal[]? decimals, long[]? scaled, byte scale)
    {
        _decimals = decimals;
        _scaled = scaled;
        _scale = scale;
    }

    public static ExactValues Of(decimal[] values) => new(values, null, 0);

    /// <summary>Values m[i] × 10^-scale; every |m[i]| below 10^18 and scale at most 28.</summary>
    public static ExactValues Scaled(long[] mantissas, int scale) => new(null, mantissas, checked((byte)scale));

    public int Length => _decimals?.Length ?? _scaled!.Length;

    public decimal this[int i] => _decimals is { } d ? d[i] : Decimal(_scaled![i], _scale);

    /// <summary>The values at the given positions, in that order.</summary>
    public ExactValues Pick(int[] rows)
    {
        if (_decimals is { } d)
        {
            var picked = new decimal[rows.Length];
            for (var i = 0; i < rows.Length; i++)
            {
                picked[i] = d[rows[i]];
            }

            return Of(picked);
        }

        var m = _scaled!;
        var pm = new long[rows.Length];
        for (var i = 0; i < rows.Length; i++)
        {
            pm[i] = m[rows[i]];
        }

        return new(null, pm, _scale);
    }

    /// <summary>
    /// The values as 64-bit integers with one scale (value = m × 10^-scale), or null when they do
    /// not fit (decimals whose common scale would overflow a long).
    /// </summary>
    public Statistics.ScaledIntegers? AsScaled()
    {
        if (_scaled is { } m)
        {
            return new Statistics.ScaledIntegers(m, _scale);
        }

        var d = _decimals!;
        var scale = 0;
        foreach (var v in d)
        {
            scale = Math.Max(scale, v.Scale);
        }

        var result = new long[d.Length];
        for (var i = 0; i < d.Length; i++)
        {
            var bits = decimal.GetBits(d[i]);
            if (bits[2] != 0 || bits[1] < 0)
            {
                return null;
            }

            var mantissa = ((long)(uint)bits[1] << 32) | (uint)bits[0];
            var up = scale - d[i].Scale;
            Int128 v = mantissa;
            for (var k = 0; k < up; k++)
            {
                v *= 10;
                if (v > long.MaxValue)
                {
                    return null;
                }
            }

            result[i] = d[i] < 0 ? -(long)v : (long)v;
        }

        return new Statistics.ScaledIntegers(result, scale);
    }

    /// <summary>
    /// The values at <paramref name="positions"/> in ascending order, by counting: when the column
    /// is kept as scaled integers whose range over the positions is small (at most half their number,
    /// and at most 2^24), every position is counted under its integer, and the sorted array is each
    /// integer's double repeated as often as it occurs. O(n + range) instead of a sort. The doubles
    /// are taken from <paramref name="values"/> itself, and the result is used only when it is
    /// certainly the sorted array: every position with the same integer has the same double (bit
    /// for bit), those doubles do not decrease with the integer, and none is NaN or −0 (so the
    /// ascending order is unique, as <see cref="Statistics.FastSort"/> requires too). Otherwise, or
    /// when the range is too wide, null (sort instead). <paramref name="values"/> are the column's
    /// doubles at the same indices as these exact values.
    /// </summary>
    public double[]? CountingSorted(double[] values, int[] positions) => CountingOrder(values, positions)?.ToArray();

    /// <summary>
    /// <see cref="CountingSorted"/> without the sorted array of n values: the same counts kept as runs
    /// (<see cref="Statistics.SortedRuns"/>, one per integer of the range), whose value at each rank is
    /// the sorted array's, under the same conditions (null where <see cref="CountingSorted"/> is null).
    /// One pass over the positions and one over the range.
    /// </summary>
    public Statistics.SortedRuns? CountingOrder(double[] values, int[] positions)
    {
        if (_scaled is not { } m || positions.Length < 2)
        {
            return null;
        }

        long min = long.MaxValue, max = long.MinValue;
        foreach (var p in positions)
        {
            var v = m[p];
            min = Math.Min(min, v);
            max = Math.Max(max, v);
        }

        var range = (UInt128)(Int128)max - (UInt128)(Int128)min + 1;
        if (range > (UInt128)Math.Min(positions.Length / 2, 1 << 24))
        {
            return null;
        }

        var counts = new int[(int)range];
        var doubles = new double[(int)range];
        foreach (var p in positions)
        {
            var k = (int)(m[p] - min);
            var d = values[p];
            if (counts[k]++ == 0)
            {
                doubles[k] = d;
            }
            else if (BitConverter.DoubleToInt64Bits(doubles[k]) != BitConverter.DoubleToInt64Bits(d))
            {
                return null;
            }
        }

        var previous = double.NegativeInfinity;
        for (var k = 0; k < counts.Length; k++)
        {
            if (counts[k] == 0)
            {
                continue;
            }

            var d = doubles[k];
            if (double.IsNaN(d) || d < previous || (d == 0 && double.IsNegative(d)))
            {
                return null;
            }

            previous = d;
        }

        return new Statistics.SortedRuns(doubles, counts);
    }

    /// <summary>The mean of the given positions in decimal arithmetic, or null (none, or overflow).</summary>
    public double? Mean(IReadOnlyList<int> positions)
    {
        if (positions.Count == 0)
        {
            return null;
        }

        if (_scaled is { } m)
        {
            // Same scale throughout: the decimal sum is the integer sum at that scale, exactly
            // (at most 2^31 terms below 10^18 stay within decimal's 96 bits).
            Int128 total = 0;
            foreach (var i in positions)
            {
                total += m[i];
            }

            return (double)(Decimal(total, _scale) / positions.Count);
        }

        try
        {
            decimal sum = 0;
            foreach (var i in positions)
            {
                sum += _decimals![i];
            }

            return (double)(sum / positions.Count);
        }
        catch (OverflowException)
        {
            return null;
        }
    }

    /// <summary>
    /// <c>(double)Decimal(v, scale)</c> without forming the decimal: the runtime converts a decimal
    /// to double as (low 64 bits + high 32 bits × 2^64) / 10^scale in double arithmetic, with the
    /// sign applied last, and this does the same operations in the same order, so the result is
    /// the same bits (test ExactValuesTests.ToDouble_SameBitsAsDecimalConversion). Used by exact
    /// centring on the big-data path.
    /// </summary>
    internal static double ToDouble(Int128 v, byte scale)
    {
        var negative = v < 0;
        var a = (UInt128)(negative ? -v : v);
        var d = ((double)(ulong)a + ((double)(uint)(a >> 64) * TwoTo64)) / DoublePowers10[scale];
        return negative ? -d : d;
    }

    /// <summary><see cref="ToDouble(Int128, byte)"/> of a 64-bit mantissa (no 128-bit arithmetic).</summary>
    internal static double ToDouble(long v, byte scale)
    {
        var negative = v < 0;
        var d = (double)(negative ? (ulong)-v : (ulong)v) / DoublePowers10[scale];
        return negative ? -d : d;
    }

    private const double TwoTo64 = 1.8446744073709552e+019;

    /// <summary>10^k as doubles for decimal scales 0..28 (exact up to 10^22, the nearest double above).</summary>
    private static readonly double[] DoublePowers10 =
    [
        1e0, 1e1, 1e2, 1e3, 1e4, 1e5, 1e6, 1e7, 1e8, 1e9, 1e10, 1e11, 1e12, 1e13, 1e14,
        1e15, 1e16, 1e17, 1e18, 1e19, 1e20, 1e21, 1e22, 1e23, 1e24, 1e25, 1e26, 1e27, 1e28,
    ];

    /// <summary>The decimal with mantissa |v| (below 2^96), the sign of v and the given scale.</summary>
    internal static decimal Decimal(Int128 v, byte scale)
    {
        var negative = v < 0;
        var a = (UInt128)(negative ? -v : v);
        return new decimal((int)(uint)a, (int)(uint)(a >> 32), (int)(uint)(a >> 64), negative, scale);
    }
}

/// <summary>A categorical column as level codes (-1 = missing) into <see cref="Levels"/>.</summary>
public sealed record CategoricalColumn(string Name, int[] Codes, IReadOnlyList<string> Levels, int[] Counts);

/// <summary>One loaded input with its identity (path as written, SHA-256) and the columns the study needs.</summary>
public sealed partial record LoadedDataset
{
    public required Binding.DatasetSpec Spec { get; init; }

    /// <summary>Path relative to the study file, with '/' separators.</summary>
    public required string Path { get; init; }

    public required string Sha256 { get; init; }

    public required int Rows { get; init; }

    /// <summary>The 1-based line of the data file where each row starts (for messages and tables).</summary>
    public required LineNumbers Lines { get; init; }

    /// <summary>Run or measurement order per row (the header's <c>order</c> column), when the file has it.</summary>
    public NumericColumn? Order { get; init; }

    public required IReadOnlyList<string> ColumnNames { get; init; }

    public required IReadOnlyDictionary<string, NumericColumn> Numeric { get; init; }

    /// <summary>Categorical columns by factor name.</summary>
    public required IReadOnlyDictionary<string, CategoricalColumn> Factors { get; init; }

    /// <summary>Rows used by at least one block; filled in by evaluation.</summary>
    public required bool[] Used { get; init; }

    public int RowsUsed => Used.AsSpan().Count(true);
}
