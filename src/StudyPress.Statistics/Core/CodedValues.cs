using System.Collections;

namespace StudyPress.Statistics;

/// <summary>
/// A per-observation list whose entries are constant within a group: entry i is
/// <c>perGroup[groupOf[i]]</c>, read when asked for instead of stored (a model's fitted values and
/// leverages, which are those of the observation's cell). Memory: one entry per group, plus the
/// group codes the caller keeps anyway.
/// </summary>
public sealed class CodedValues : IReadOnlyList<double>
{
    private readonly double[] perGroup;
    private readonly int[] groupOf;

    public CodedValues(double[] perGroup, int[] groupOf)
    {
        ArgumentNullException.ThrowIfNull(perGroup);
        ArgumentNullException.ThrowIfNull(groupOf);
        this.perGroup = perGroup;
        this.groupOf = groupOf;
    }

    public double this[int index] => perGroup[groupOf[index]];

    /// <summary>The value of each group (shared, never changed).</summary>
    internal double[] PerGroup => perGroup;

    /// <summary>Each entry's group (shared, never changed).</summary>
    internal int[] GroupOf => groupOf;

    public int Count => groupOf.Length;

    public IEnumerator<double> GetEnumerator()
    {
        foreach (var g in groupOf)
        {
            yield return perGroup[g];
        }
    }

    IEnumerator IEnumerable.GetEnumerator() => GetEnumerator();
}
