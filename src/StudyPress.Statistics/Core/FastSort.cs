using System.Runtime.InteropServices;

namespace StudyPress.Statistics;

/// <summary>
/// Sorting of large arrays of doubles with exactly the result of <see cref="Array.Sort{T}(T[])"/>.
/// </summary>
/// <remarks>
/// Above <see cref="RadixThreshold"/> values, a least-significant-digit radix sort over the
/// order-preserving 64-bit image of each double (the sign bit flipped for positive numbers, every
/// bit flipped for negative ones), 11 bits a pass, skipping passes in which every value has the same
/// digit. Two doubles that compare equal have the same bits except +0 and −0, so without NaN and −0
/// the ascending order is unique and the radix sort gives the same array, bit for bit, as
/// <see cref="Array.Sort{T}(T[])"/>; when a NaN or a −0 is present (or the array is small) the
/// library sort runs instead. Time O(n) (at most six passes) against O(n log n); extra memory one
/// array of n 64-bit keys.
/// </remarks>
public static class FastSort
{
    /// <summary>Below this length the library sort is used (the radix passes do not pay off).</summary>
    public const int RadixThreshold = 4096;

    private const int DigitBits = 11;
    private const int Buckets = 1 << DigitBits;
    private const int Passes = (64 + DigitBits - 1) / DigitBits;

    /// <summary>Sorts <paramref name="values"/> ascending in place, exactly as <see cref="Array.Sort{T}(T[])"/> does.</summary>
    public static void Sort(double[] values)
    {
        ArgumentNullException.ThrowIfNull(values);
        if (values.Length < RadixThreshold || !RadixSafe(values))
        {
            Array.Sort(values);
            return;
        }

        var keys = MemoryMarshal.Cast<double, ulong>(values.AsSpan());
        for (var i = 0; i < keys.Length; i++)
        {
            var b = keys[i];
            keys[i] = (b & 0x8000_0000_0000_0000UL) != 0 ? ~b : b | 0x8000_0000_0000_0000UL;
        }

        // One pass counts every digit of every key.
        var counts = new int[Passes * Buckets];
        foreach (var k in keys)
        {
            for (var p = 0; p < Passes; p++)
            {
                counts[(p * Buckets) + (int)((k >> (p * DigitBits)) & (Buckets - 1))]++;
            }
        }

        var buffer = new ulong[keys.Length];
        Span<ulong> from = keys;
        Span<ulong> to = buffer;
        var offsets = new int[Buckets];
        for (var p = 0; p < Passes; p++)
        {
            var c = counts.AsSpan(p * Buckets, Buckets);
            if (c[(int)((from[0] >> (p * DigitBits)) & (Buckets - 1))] == from.Length)
            {
                continue; // every key has this digit: the pass would not move anything
            }

            var sum = 0;
            for (var d = 0; d < Buckets; d++)
            {
                offsets[d] = sum;
                sum += c[d];
            }

            var shift = p * DigitBits;
            foreach (var k in from)
            {
                to[offsets[(int)((k >> shift) & (Buckets - 1))]++] = k;
            }

            var t = from;
            from = to;
            to = t;
        }

        if (from != keys)
        {
            from.CopyTo(keys);
        }

        for (var i = 0; i < keys.Length; i++)
        {
            var k = keys[i];
            keys[i] = (k & 0x8000_0000_0000_0000UL) != 0 ? k & 0x7FFF_FFFF_FFFF_FFFFUL : ~k;
        }
    }

    /// <summary>A sorted copy of <paramref name="values"/> (see <see cref="Sort(double[])"/>).</summary>
    public static double[] SortedCopy(ReadOnlySpan<double> values)
    {
        var copy = values.ToArray();
        Sort(copy);
        return copy;
    }

    /// <summary>
    /// The order statistics <c>SortedCopy(values)[ranks[k]]</c> (0-based ranks) without sorting all
    /// the values: one pass counts the values into 65,536 equal-width buckets between the smallest
    /// and the largest (the bucket index does not decrease as the value grows, so each bucket holds
    /// a run of the sorted order); a second pass copies out only the buckets that hold a wanted rank,
    /// and each of those is sorted on its own. The same doubles, bit for bit, as the full sort when
    /// there is no NaN and no −0 (the ascending order is then unique); otherwise, or for fewer than
    /// <see cref="RadixThreshold"/> values, the full sort runs. Extra memory: the counts and the
    /// wanted buckets' values (a few per cent of n for thinned figures) instead of two copies of n.
    /// </summary>
    public static double[] OrderStatistics(ReadOnlySpan<double> values, IReadOnlyList<int> ranks)
    {
        if (TryOrderStatistics(values, ranks) is { } selected)
        {
            return selected;
        }

        var sorted = SortedCopy(values);
        return [.. ranks.Select(r => sorted[r])];
    }

    /// <summary>
    /// <see cref="OrderStatistics"/> by bucket selection only: null, without sorting, when it cannot
    /// be sure of the same doubles as the full sort (fewer than <see cref="RadixThreshold"/> values,
    /// a NaN, a −0, or no finite positive range). When not null, each entry is the value of that rank
    /// in ascending order, which is then unique (a selection such as a quickselect finds the same value).
    /// </summary>
    public static double[]? TryOrderStatistics(ReadOnlySpan<double> values, IReadOnlyList<int> ranks)
    {
        ArgumentNullException.ThrowIfNull(ranks);
        var n = values.Length;
        foreach (var r in ranks)
        {
            ArgumentOutOfRangeException.ThrowIfNegative(r);
            ArgumentOutOfRangeException.ThrowIfGreaterThanOrEqual(r, n);
        }

        if (n < RadixThreshold)
        {
            return null; // the full sort is cheaper than the buckets' passes
        }

        var min = double.PositiveInfinity;
        var max = double.NegativeInfinity;
        var safe = true;
        foreach (var v in values)
        {
            if (double.IsNaN(v) || (v == 0 && double.IsNegative(v)))
            {
                safe = false;
                break;
            }

            min = Math.Min(min, v);
            max = Math.Max(max, v);
        }

        const int BucketCount = 1 << 16;
        var width = max - min;
        var scale = BucketCount / width;
        if (!safe || !double.IsFinite(width) || !(width > 0) || !double.IsFinite(scale) || !(scale > 0))
        {
            return null;
        }

        int Bucket(double v) => Math.Min(BucketCount - 1, (int)((v - min) * scale));

        var counts = new int[BucketCount + 1];
        foreach (var v in values)
        {
            counts[Bucket(v) + 1]++;
        }

        // counts[b] becomes the rank of bucket b's first value.
        for (var b = 1; b <= BucketCount; b++)
        {
            counts[b] += counts[b - 1];
        }

        int BucketOf(int rank)
        {
            var at = Array.BinarySearch(counts, 0, BucketCount + 1, rank);
            if (at >= 0)
            {
                while (at < BucketCount && counts[at + 1] == rank)
                {
                    at++; // skip empty buckets: the rank is the first value of the next non-empty one
                }

                return at;
            }

            return ~at - 1;
        }

        // Slots of the wanted buckets in one array, in bucket order.
        var wanted = new int[BucketCount];
        Array.Fill(wanted, -1);
        var size = 0;
        var order = new List<int>();
        foreach (var r in ranks)
        {
            var b = BucketOf(r);
            if (wanted[b] < 0)
            {
                order.Add(b);
                wanted[b] = 0;
            }
        }

        order.Sort();
        foreach (var b in order)
        {
            wanted[b] = size;
            size += counts[b + 1] - counts[b];
        }

        var picked = new double[size];
        var fill = new int[BucketCount];
        foreach (var v in values)
        {
            var b = Bucket(v);
            if (wanted[b] >= 0)
            {
                picked[wanted[b] + fill[b]++] = v;
            }
        }

        foreach (var b in order)
        {
            Array.Sort(picked, wanted[b], counts[b + 1] - counts[b]);
        }

        var result = new double[ranks.Count];
        for (var k = 0; k < result.Length; k++)
        {
            var b = BucketOf(ranks[k]);
            result[k] = picked[wanted[b] + (ranks[k] - counts[b])];
        }

        return result;
    }

    /// <summary>No NaN and no negative zero: the ascending order of the values is unique.</summary>
    private static bool RadixSafe(double[] values)
    {
        foreach (var v in values)
        {
            if (double.IsNaN(v) || (v == 0 && double.IsNegative(v)))
            {
                return false;
            }
        }

        return true;
    }
}
