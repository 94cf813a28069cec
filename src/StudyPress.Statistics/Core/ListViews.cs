namespace StudyPress.Statistics;

/// <summary>
/// An array read as a list without an interface call per element: generic code constrained to a
/// struct <see cref="IReadOnlyList{T}"/> is compiled for this view, so the reads are array reads
/// (Durbin–Watson, studentized residuals).
/// </summary>
internal readonly struct ArrayView(double[] array) : IReadOnlyList<double>
{
    public double this[int index] => array[index];

    public int Count => array.Length;

    public IEnumerator<double> GetEnumerator() => ((IEnumerable<double>)array).GetEnumerator();

    System.Collections.IEnumerator System.Collections.IEnumerable.GetEnumerator() => array.GetEnumerator();
}

/// <summary>Any other list, read through its interface (the counterpart of <see cref="ArrayView"/>).</summary>
internal readonly struct ListView(IReadOnlyList<double> list) : IReadOnlyList<double>
{
    public double this[int index] => list[index];

    public int Count => list.Count;

    public IEnumerator<double> GetEnumerator() => list.GetEnumerator();

    System.Collections.IEnumerator System.Collections.IEnumerable.GetEnumerator() => list.GetEnumerator();
}
