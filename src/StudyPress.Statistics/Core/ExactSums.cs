using System.Numerics;

namespace StudyPress.Statistics;

/// <summary>
/// Exact values of a response as integers with one decimal scale: value i is
/// <c>Mantissas[i] × 10^-Scale</c> (the compiler has them for data written as decimal text).
/// </summary>
/// <param name="Mantissas">The integers m_i, in the order of the response.</param>
/// <param name="Scale">The number of decimal places s, 0 to 28.</param>
public sealed record ScaledIntegers(long[] Mantissas, int Scale);

/// <summary>
/// The exact sufficient statistics of the cells of a layout whose response is exact decimal text:
/// per cell the count n_c, S_c = Σ m and Q_c = Σ m² of the integer mantissas (value = m × 10^-Scale).
/// A cell view of the data (as the cells' counts, means and sums of squares are), from which the
/// one-way sums of squares follow exactly (<see cref="ExactSums.OneWay(ExactCellSums)"/>).
/// </summary>
public sealed record ExactCellSums(long[] Counts, BigInteger[] Sums, BigInteger[] Squares, int Scale);

/// <summary>The three sums of squares of a one-way layout, each the exact value rounded once to double.</summary>
public readonly record struct OneWaySums(double Between, double Within, double Total);

/// <summary>
/// Sums of squares of exact decimal data computed exactly, then rounded once. With integer
/// mantissas m (value = m × 10^-s), per group g: S_g = Σ m, Q_g = Σ m² (128-bit integers while
/// they cannot overflow, BigInteger otherwise), and
/// SS_total = Q − S²/N, SS_within = Q − Σ S_g²/n_g, SS_between = Σ S_g²/n_g − S²/N,
/// each an exact rational (denominators the least common multiple of the group sizes) divided by
/// 10^(2s) and rounded to the nearest double (ties to even). So every certified digit of data such
/// as the NIST StRD ANOVA sets is reached, whatever their conditioning.
/// </summary>
public static class ExactSums
{
    /// <summary>Denominators beyond this many bits (very many groups of different sizes) are not worth it.</summary>
    private const int MaxDenominatorBits = 4096;

    /// <summary>
    /// The one-way sums of squares of <paramref name="values"/> grouped by <paramref name="codes"/>
    /// (0 .. groups − 1; groups without observations are ignored), or null when the exact route does
    /// not apply (lengths differ, or the denominators would be too large).
    /// </summary>
    public static OneWaySums? OneWay(ScaledIntegers values, int[] codes, int groups) =>
        Cells(values, codes, groups) is { } cells ? OneWay(cells) : null;

    /// <summary>
    /// Each group's exact count, sum and sum of squares of the mantissas of <paramref name="values"/>
    /// grouped by <paramref name="codes"/> (0 .. groups − 1), or null when the lengths differ or the
    /// scale is out of range.
    /// </summary>
    public static ExactCellSums? Cells(ScaledIntegers values, int[] codes, int groups)
    {
        ArgumentNullException.ThrowIfNull(values);
        ArgumentNullException.ThrowIfNull(codes);
        var m = values.Mantissas;
        if (m.Length != codes.Length || m.Length == 0 || values.Scale is < 0 or > 28)
        {
            return null;
        }

        var counts = new long[groups];
        var sums = new BigInteger[groups];
        var squares = new BigInteger[groups];

        // Fast path: |m| < 2^40 keeps every square below 2^80 and a group's sum of squares below
        // 2^111 (fewer than 2^31 rows), so 128-bit integers suffice without a BigInteger per row.
        long max = 0;
        foreach (var v in m)
        {
            max = Math.Max(max, v == long.MinValue ? long.MaxValue : Math.Abs(v));
        }

        if (max < 1L << 40)
        {
            // Sums in 64 bits (|m| < 2^40 and fewer than 2^23 rows per flush), squares as a
            // 128-bit (high, low) pair with the carry by hand: a few integer operations a row.
            var s = new long[groups];
            var hiQ = new ulong[groups];
            var loQ = new ulong[groups];
            var pending = 0;
            for (var i = 0; i < m.Length; i++)
            {
                var g = codes[i];
                var v = m[i];
                counts[g]++;
                s[g] += v;
                var a = (ulong)Math.Abs(v);
                var high = Math.BigMul(a, a, out var low);
                var sumLow = loQ[g] + low;
                hiQ[g] += high + (sumLow < low ? 1UL : 0UL);
                loQ[g] = sumLow;
                if (++pending == 1 << 23)
                {
                    pending = 0;
                    for (var k = 0; k < groups; k++)
                    {
                        sums[k] += s[k];
                        s[k] = 0;
                    }
                }
            }

            for (var g = 0; g < groups; g++)
            {
                sums[g] += s[g];
                squares[g] = ((BigInteger)hiQ[g] << 64) + loQ[g];
            }
        }
        else
        {
            for (var i = 0; i < m.Length; i++)
            {
                var g = codes[i];
                counts[g]++;
                sums[g] += m[i];
                squares[g] += (BigInteger)m[i] * m[i];
            }
        }

        return new ExactCellSums(counts, sums, squares, values.Scale);
    }

    /// <summary>
    /// The one-way sums of squares of the cells' exact sums (cells without observations are
    /// ignored), or null when the denominators would be too large.
    /// </summary>
    public static OneWaySums? OneWay(ExactCellSums cells)
    {
        ArgumentNullException.ThrowIfNull(cells);
        var counts = cells.Counts;
        var sums = cells.Sums;
        var squares = cells.Squares;
        var groups = counts.Length;
        if (sums.Length != groups || squares.Length != groups || cells.Scale is < 0 or > 28)
        {
            throw new ArgumentException("the cells' counts, sums and squares differ in length", nameof(cells));
        }

        BigInteger total = 0, totalSquares = 0;
        long n = 0;

        // B = Σ S_g²/n_g as num/den, den the lcm of the group sizes.
        BigInteger bNum = 0, bDen = 1;
        for (var g = 0; g < groups; g++)
        {
            if (counts[g] == 0)
            {
                continue;
            }

            n += counts[g];
            total += sums[g];
            totalSquares += squares[g];
            var ng = new BigInteger(counts[g]);
            var gcd = BigInteger.GreatestCommonDivisor(bDen, ng);
            var lcm = bDen / gcd * ng;
            bNum = (bNum * (lcm / bDen)) + (sums[g] * sums[g] * (lcm / ng));
            bDen = lcm;
            if (bDen.GetBitLength() > MaxDenominatorBits)
            {
                return null;
            }
        }

        if (n == 0)
        {
            return null;
        }

        var unit = BigInteger.Pow(10, 2 * cells.Scale);

        // SS_within = Q − B = (Q·den − num)/den; SS_between = B − S²/N; SS_total = Q − S²/N.
        var within = ToDouble((totalSquares * bDen) - bNum, bDen * unit);
        var nBig = new BigInteger(n);
        var cDen = bDen * nBig / BigInteger.GreatestCommonDivisor(bDen, nBig);
        var between = ToDouble((bNum * (cDen / bDen)) - (total * total * (cDen / nBig)), cDen * unit);
        var totalSs = ToDouble((totalSquares * nBig) - (total * total), nBig * unit);
        return new OneWaySums(between, within, totalSs);
    }

    /// <summary>The rational num/den (den &gt; 0) rounded to the nearest double, ties to even.</summary>
    public static double ToDouble(BigInteger num, BigInteger den)
    {
        if (den.Sign <= 0)
        {
            throw new ArgumentOutOfRangeException(nameof(den), "the denominator must be positive");
        }

        if (num.IsZero)
        {
            return 0.0;
        }

        var negative = num.Sign < 0;
        var a = BigInteger.Abs(num);

        // q = ⌊a 2^shift / den⌋ with 66 or 67 bits, and a sticky bit for a non-zero remainder.
        var shift = 66 - (int)(a.GetBitLength() - den.GetBitLength());
        var q = shift >= 0
            ? BigInteger.DivRem(a << shift, den, out var rem)
            : BigInteger.DivRem(a, den << -shift, out rem);
        if (!rem.IsZero)
        {
            q |= BigInteger.One;
        }

        var drop = (int)q.GetBitLength() - 53;
        var mantissa = q >> drop;
        var rest = q - (mantissa << drop);
        var half = BigInteger.One << (drop - 1);
        if (rest > half || (rest == half && !mantissa.IsEven))
        {
            mantissa += 1;
        }

        var value = Math.ScaleB((double)mantissa, drop - shift);
        return negative ? -value : value;
    }
}
