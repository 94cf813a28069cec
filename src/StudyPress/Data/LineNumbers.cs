using System.Collections;

namespace StudyPress.Data;

/// <summary>
/// The 1-based line of the data file where each row starts. Most files have no blank lines, so
/// row r starts on line first + r: then only the first line is kept instead of one number per row
/// (40 MB at 10,000,000 rows); otherwise the array itself.
/// </summary>
public sealed class LineNumbers : IReadOnlyList<int>
{
    private readonly int[]? lines;
    private readonly int first;
    private readonly int count;

    private LineNumbers(int[]? lines, int first, int count)
    {
        this.lines = lines;
        this.first = first;
        this.count = count;
    }

    /// <summary>The lines given, kept as first + row when they run on one by one.</summary>
    public static LineNumbers From(int[] lines)
    {
        ArgumentNullException.ThrowIfNull(lines);
        if (lines.Length == 0)
        {
            return new LineNumbers(null, 1, 0);
        }

        var start = lines[0];
        for (var i = 1; i < lines.Length; i++)
        {
            if (lines[i] != start + i)
            {
                return new LineNumbers(lines, 0, lines.Length);
            }
        }

        return new LineNumbers(null, start, lines.Length);
    }

    /// <summary>Rows on lines first, first + 1, …</summary>
    public static LineNumbers Sequential(int first, int count) => new(null, first, count);

    public static implicit operator LineNumbers(int[] lines) => From(lines);

    public int this[int row] => lines is not null ? lines[row] : (uint)row < (uint)count ? first + row : throw new ArgumentOutOfRangeException(nameof(row));

    public int Count => count;

    public IEnumerator<int> GetEnumerator()
    {
        for (var r = 0; r < count; r++)
        {
            yield return this[r];
        }
    }

    IEnumerator IEnumerable.GetEnumerator() => GetEnumerator();
}
