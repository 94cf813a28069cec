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
