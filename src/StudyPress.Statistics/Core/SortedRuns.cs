using System.Collections;

namespace StudyPress.Statistics;

/// <summary>
/// A sorted sample kept as runs of equal values: <c>this[rank]</c> is the value of that 0-based
/// rank in ascending order, read by a binary search over the runs' cumulative counts, without the
/// array of n values. Built by counting when a sample has few distinct values (for example a
/// response of decimals with three digits: a cell of two million rows has about 100,000 distinct
/// values), so that the order statistics a summary and a box plot read cost no sorted copy.
/// </summary>
public sealed class SortedRuns : IReadOnlyList<double>
{
    private readonly double[] values;
    private readonly int[] ends;

    /// <param name="values">Each run's value, ascending (no NaN; runs of count 0 are allowed and never read).</param>
    /// <param name="counts">Each run's number of values (not negative); changed in place into the runs' cumulative ends.</param>
    public SortedRuns(double[] values, int[] counts)
    {
        ArgumentNullException.ThrowIfNull(values);
        ArgumentNullException.ThrowIfNull(counts);
        if (values.Length != counts.Length)
        {
            throw new ArgumentException("values and counts differ in length", nameof(counts));
        }

        long total = 0;
        for (var k = 0; k < counts.Length; k++)
        {
            ArgumentOutOfRangeException.ThrowIfNegative(counts[k]);
            total += counts[k];
            counts[k] = checked((int)total);
        }

        this.values = values;
        ends = counts;
        Count = (int)total;
    }

    public int Count { get; }

    /// <summary>The value of 0-based rank <paramref name="index"/> in ascending order.</summary>
    public double this[int index]
    {
        get
        {
            if ((uint)index >= (uint)Count)
            {
                throw new ArgumentOutOfRangeException(nameof(index));
            }

            // The first run whose end lies beyond the rank.
            int lo = 0, hi = ends.Length - 1;
            while (lo < hi)
            {
                var mid = lo + ((hi - lo) / 2);
                if (ends[mid] > index)
                {
                    hi = mid;
                }
                else
                {
                    lo = mid + 1;
                }
            }

            return values[lo];
        }
    }

    /// <summary>Every value in ascending order (n values: for tests and small samples).</summary>
    public double[] ToArray()
    {
        var result = new double[Count];
        var at = 0;
        for (var k = 0; k < ends.Length; k++)
        {
            var end = ends[k];
            result.AsSpan(at, end - at).Fill(values[k]);
            at = end;
        }

        return result;
    }

    public IEnumerator<double> GetEnumerator()
    {
        var at = 0;
        for (var k = 0; k < ends.Length; k++)
        {
            for (; at < ends[k]; at++)
            {
                yield return values[k];
            }
        }
    }

    IEnumerator IEnumerable.GetEnumerator() => GetEnumerator();
}
